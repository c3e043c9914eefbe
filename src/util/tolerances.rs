//! Every named tolerance of the computation, in one place, each with where
//! it comes from. Fractions are relative (0.001 = 0.1 %); lengths are ft,
//! times h.
//!
//! `engine::analysis`, `report` and `cli` read them here; the long-record,
//! network and sizing code still spell some of them out and are switched to
//! these names as they are reworked.

/// Pond mass-balance errors above this fraction of the inflow volume are
/// warned about: 0.1 % (common practice for storage-indication routing, no
/// published source).
pub const MASS_BALANCE_WARN: f64 = 0.001;

/// A pond has drained when its storage above the starting storage falls
/// below this fraction of its peak value: 1 % (the report's stated
/// definition of drain time; common practice, no published source).
pub const DRAIN_FRACTION: f64 = 0.01;

/// A storm's run ends once every hydrograph has fallen below this fraction
/// of its own peak: 0.1 % (run-length trimming; common practice, no
/// published source).
pub const RUN_TAIL_FRACTION: f64 = 0.001;

/// A point's draining area that differs from the baseline's by more than
/// this fraction is flagged: 5 % (issue 10, the reviewer's first check;
/// common practice, no published source).
pub const AREA_BALANCE_TOLERANCE: f64 = 0.05;

/// A hydrograph peak more than this fraction away from the TR-55 chapter 4
/// graphical peak is warned about: 25 % (the graphical method's own
/// accuracy within its limits is of that order; common practice, no
/// published source).
pub const GRAPHICAL_PEAK_TOLERANCE: f64 = 0.25;

/// Relative slack on a peak limit, so that a peak equal to its limit up to
/// rounding meets it: 1e-9 (floating-point noise, not engineering slack).
pub const LIMIT_RELATIVE_SLACK: f64 = 1e-9;

/// Absolute slack on a peak limit, cfs, for limits of zero: 1e-12
/// (floating-point noise).
pub const LIMIT_ABSOLUTE_SLACK_CFS: f64 = 1e-12;

/// Slack on a pond's freeboard (ft) and drain-time (h) limits: 1e-9
/// (floating-point noise).
pub const POND_LIMIT_SLACK: f64 = 1e-9;

/// Outlet sizing sweeps until no sized value moves by more than this
/// fraction: 0.1 % (the report states it; common practice, no published
/// source).
pub const SIZING_SWEEP_FRACTION: f64 = 0.001;

/// Outlet sizing solves a size to this fraction of its value: 0.05 %
/// (common practice, no published source).
pub const SIZING_SIZE_FRACTION: f64 = 0.0005;

/// Outlet sizing solves an elevation to this, ft: 0.001 ft = 0.3 mm
/// (common practice, no published source).
pub const SIZING_ELEVATION_FT: f64 = 0.001;

/// Whether `value` meets an upper `limit` up to floating-point noise.
pub fn within_upper_limit(value: f64, limit: f64) -> bool {
    value <= limit * (1.0 + LIMIT_RELATIVE_SLACK) + LIMIT_ABSOLUTE_SLACK_CFS
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn upper_limit_allows_rounding_noise_only() {
        // common practice, no published source: a peak equal to its limit meets it
        assert!(within_upper_limit(10.0, 10.0));
        assert!(within_upper_limit(10.0 + 1e-10, 10.0));
        assert!(!within_upper_limit(10.000_001, 10.0));
        assert!(within_upper_limit(0.0, 0.0));
        assert!(!within_upper_limit(1e-6, 0.0));
    }
}
