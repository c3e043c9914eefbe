//! Piecewise-linear interpolation in tables, shared by the rainfall
//! patterns, the unit hydrograph and user tables.

/// Linear interpolation in `points` (x strictly increasing). Below the first
/// x the first y is returned, above the last the last y.
pub fn linear(points: &[(f64, f64)], x: f64) -> f64 {
    let (Some(first), Some(last)) = (points.first(), points.last()) else {
        return 0.0;
    };
    if x <= first.0 {
        return first.1;
    }
    if x >= last.0 {
        return last.1;
    }
    let i = points.partition_point(|p| p.0 <= x);
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
