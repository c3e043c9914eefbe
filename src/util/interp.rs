//! Piecewise-linear interpolation in tables, shared by the rainfall
//! patterns, the unit hydrograph and user tables.

/// Where `x` falls in `points` (x increasing): `Ok(i)` with
/// `points[i - 1].0 <= x < points[i].0`, or `Err(y)` with the first y at or
/// below the first x, the last y at or above the last x (0 without points).
/// The one table lookup of every interpolation (linear here, the monotone
/// cubic of the rainfall patterns).
pub fn interval(points: &[(f64, f64)], x: f64) -> Result<usize, f64> {
    let (Some(first), Some(last)) = (points.first(), points.last()) else {
        return Err(0.0);
    };
    if x <= first.0 {
        return Err(first.1);
    }
    if x >= last.0 {
        return Err(last.1);
    }
    Ok(points.partition_point(|p| p.0 <= x))
}

/// Linear interpolation in `points` (x strictly increasing). Below the first
/// x the first y is returned, above the last the last y.
pub fn linear(points: &[(f64, f64)], x: f64) -> f64 {
    let i = match interval(points, x) {
        Ok(i) => i,
        Err(end) => return end,
    };
    let (x0, y0) = points[i - 1];
    let (x1, y1) = points[i];
    if x1 > x0 {
        y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    } else {
        y1
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interpolates_between_rows_and_holds_the_ends() {
        let t = [(0.0, 0.0), (1.0, 10.0), (3.0, 20.0)];
        assert_eq!(linear(&t, -1.0), 0.0);
        assert_eq!(linear(&t, 0.5), 5.0);
        assert_eq!(linear(&t, 2.0), 15.0);
        assert_eq!(linear(&t, 9.0), 20.0);
        assert_eq!(linear(&[], 1.0), 0.0);
    }
}
