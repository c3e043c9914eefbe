//! Monotone piecewise-cubic (Hermite) interpolation by the method of
//! Fritsch and Carlson (1980), "Monotone piecewise cubic interpolation",
//! SIAM J. Numer. Anal. 17(2), 238-246: through every tabulated point,
//! with a continuous first derivative, and never overshooting, so a
//! cumulative rainfall curve stays non-decreasing.

/// Slopes at the points `(x, y)` (x strictly increasing, y non-decreasing
/// or non-increasing in each interval) that make the Hermite cubic monotone.
///
/// # Formula
/// Fritsch and Carlson (1980), steps 1 to 5: secants
/// `d_k = (y_{k+1} - y_k)/(x_{k+1} - x_k)`; first slopes
/// `m_k = (d_{k-1} + d_k)/2` inside (0 where the secants differ in sign),
/// `m_0 = d_0`, `m_n = d_{n-1}`; in an interval with `d_k = 0` both slopes
/// are 0; otherwise, with `a = m_k/d_k` and `b = m_{k+1}/d_k`, where
/// `a^2 + b^2 > 9` both are scaled by `3/sqrt(a^2 + b^2)` (the circle of
/// radius 3 inside their region of monotonicity).
pub fn slopes(points: &[(f64, f64)]) -> Vec<f64> {
    let n = points.len();
    if n < 2 {
        return vec![0.0; n];
    }
    let d: Vec<f64> = points
        .windows(2)
        .map(|w| (w[1].1 - w[0].1) / (w[1].0 - w[0].0))
        .collect();
    let mut m = vec![0.0; n];
    m[0] = d[0];
    m[n - 1] = d[n - 2];
    for k in 1..n - 1 {
        m[k] = if d[k - 1] * d[k] <= 0.0 {
            0.0
        } else {
            (d[k - 1] + d[k]) / 2.0
        };
    }
    for k in 0..n - 1 {
        if d[k] == 0.0 {
            m[k] = 0.0;
            m[k + 1] = 0.0;
            continue;
        }
        let a = m[k] / d[k];
        let b = m[k + 1] / d[k];
        let r = a * a + b * b;
        if r > 9.0 {
            let tau = 3.0 / r.sqrt();
            m[k] = tau * a * d[k];
            m[k + 1] = tau * b * d[k];
        }
    }
    m
}

/// The Hermite cubic through `points` with `slopes` at `x`; the first y
/// below the first x, the last above the last.
///
/// # Formula
/// With `h = x_{k+1} - x_k` and `s = (x - x_k)/h`:
/// `y = (2s^3 - 3s^2 + 1) y_k + (s^3 - 2s^2 + s) h m_k + (-2s^3 + 3s^2) y_{k+1} + (s^3 - s^2) h m_{k+1}`.
pub fn eval(points: &[(f64, f64)], slopes: &[f64], x: f64) -> f64 {
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
    let h = x1 - x0;
    if h <= 0.0 {
        return y1;
    }
    let (m0, m1) = (slopes[i - 1], slopes[i]);
    let s = (x - x0) / h;
    let s2 = s * s;
    let s3 = s2 * s;
    (2.0 * s3 - 3.0 * s2 + 1.0) * y0
        + (s3 - 2.0 * s2 + s) * h * m0
        + (-2.0 * s3 + 3.0 * s2) * y1
        + (s3 - s2) * h * m1
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn passes_through_the_points_and_keeps_flat_runs_flat() {
        // Fritsch and Carlson (1980): the interpolant passes through the data and
        // is constant where the data are (their step 3)
        let p = [(0.0, 0.0), (1.0, 1.0), (2.0, 1.0), (3.0, 4.0)];
        let m = slopes(&p);
        for &(x, y) in &p {
            assert!((eval(&p, &m, x) - y).abs() < 1e-12);
        }
        assert!((eval(&p, &m, 1.5) - 1.0).abs() < 1e-12);
        assert_eq!((m[1], m[2]), (0.0, 0.0));
    }

    #[test]
    fn reproduces_a_straight_line_and_never_overshoots_a_step() {
        // Fritsch and Carlson (1980): linear data stay linear; monotone data give a
        // monotone interpolant (the circle condition a^2 + b^2 <= 9)
        let line = [(0.0, 1.0), (2.0, 5.0), (3.0, 7.0)];
        let m = slopes(&line);
        assert!((eval(&line, &m, 2.5) - 6.0).abs() < 1e-12);
        let step = [(0.0, 0.0), (1.0, 0.01), (1.1, 0.9), (2.0, 0.91), (3.0, 1.0)];
        let m = slopes(&step);
        let mut prev = 0.0;
        for k in 0..=3000 {
            let y = eval(&step, &m, k as f64 / 1000.0);
            assert!(y >= prev - 1e-15 && y <= 1.0 + 1e-15, "at {k}: {y}");
            prev = y;
        }
    }
}
