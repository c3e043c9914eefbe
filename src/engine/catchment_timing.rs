//! A catchment's derived timing at the run's step: each flow-path
//! segment's velocity and travel time, Tc, lag, Tp and the unit
//! hydrograph's peak, computed once by the methods the simulation uses, so
//! that reports only convert and print them.

use crate::engine::network;
use crate::methods::timing::SegmentTime;
use crate::methods::unit_hydrograph;
use crate::model::Catchment;

/// Timing values of one catchment, internal units.
#[derive(Debug, Clone, PartialEq)]
pub struct CatchmentTiming {
    /// Velocity and travel time of each flow-path segment, in the
    /// catchment's order (empty when `tc` was given directly).
    pub segments: Vec<SegmentTime>,
    /// Time of concentration, h.
    pub tc_h: f64,
    /// Lag, h (`L = 0.6 Tc`).
    pub lag_h: f64,
    /// Time to peak of the unit hydrograph at the run's step, h.
    pub tp_h: f64,
    /// Peak of the unit hydrograph at the step, cfs per in of runoff: the
    /// largest ordinate sampled at the step (what the simulation uses).
    pub uh_peak_cfs_per_in: f64,
    /// Peak by the formula `PRF A Q / Tp` (NEH 630 ch. 16; 484 A Q / Tp for
    /// the standard shape), cfs per in of runoff.
    pub uh_formula_peak_cfs_per_in: f64,
}

/// The timing of catchment `c` at `step_h` (h). `p2_in` is the study's
/// 2-year 24-hour rainfall, read by sheet-flow segments only.
///
/// A validated study always has `p2` when a flow path holds sheet flow
/// (the scenario refuses it otherwise), so `p2_in` may be missing only for
/// paths of shallow and channel segments, whose times do not depend on it.
/// Should a sheet segment ever come without it, its velocity and time are
/// NaN (printed as "-" and `null`), never a value from an assumed depth.
pub fn catchment_timing(c: &Catchment, p2_in: Option<f64>, step_h: f64) -> CatchmentTiming {
    let segments = c.segments.iter().map(|s| s.travel(p2_in)).collect();
    let lag_h = c.uh_lag_h;
    let tp_h = unit_hydrograph::time_to_peak_h(step_h, lag_h);
    let uh = network::catchment_uh(c, step_h);
    CatchmentTiming {
        segments,
        tc_h: c.tc_h,
        lag_h,
        tp_h,
        uh_peak_cfs_per_in: network::peak(&uh).0,
        uh_formula_peak_cfs_per_in: unit_hydrograph::peak_cfs_per_in(c.prf, c.area_ac, tp_h),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::methods::runoff::Lambda;
    use crate::methods::timing::Segment;
    use crate::methods::unit_hydrograph::Shape;

    fn catchment(segments: Vec<Segment>, tc_h: f64) -> Catchment {
        Catchment {
            area_ac: 100.0,
            covers: Vec::new(),
            cn: 80.0,
            lambda: Lambda::Standard,
            retention_in: 2.5,
            segments,
            tc_h,
            uh_lag_h: 0.6 * tc_h,
            timing_basis: crate::model::TimingBasis::FlowPath,
            prf: 484.0,
            shape: Shape::Standard,
            connected_fraction: 0.0,
            rest_cn: 80.0,
            separate_impervious: false,
            unconnected_reduced: false,
        }
    }

    #[test]
    fn shallow_path_needs_no_p2_and_sheet_without_p2_is_not_a_number() {
        let shallow = Segment::Shallow {
            k_fps: 16.1345,
            surface: "unpaved".into(),
            length_ft: 1400.0,
            slope: 0.01,
        };
        let t = catchment_timing(&catchment(vec![shallow.clone()], 0.5), None, 0.1);
        // TR-55 (1986) Appendix F: unpaved V = 16.1345 s^0.5 = 1.613 ft/s
        // at s = 0.01 (transcribed)
        assert!((t.segments[0].velocity_fps - 1.613_45).abs() < 1e-4);
        assert_eq!(t.segments[0], shallow.travel(Some(3.0)));
        let sheet = Segment::Sheet {
            n: 0.24,
            length_ft: 100.0,
            slope: 0.01,
        };
        let t = catchment_timing(&catchment(vec![sheet], 0.5), None, 0.1);
        assert!(t.segments[0].time_h.is_nan());
    }

    #[test]
    fn lag_and_time_to_peak_follow_tc_and_step() {
        let t = catchment_timing(&catchment(Vec::new(), 1.0), Some(3.0), 0.1);
        // NEH 630 ch. 15: L = 0.6 Tc; ch. 16: Tp = D/2 + L (transcribed)
        assert!((t.lag_h - 0.6).abs() < 1e-12);
        assert!((t.tp_h - 0.65).abs() < 1e-12);
        // NEH 630 ch. 16: qp = 484 A / Tp per in (A in mi2) (transcribed);
        // the largest ordinate at the step lies at or just below it
        let qp = 484.0 * (100.0 / 640.0) / 0.65;
        assert!(t.uh_peak_cfs_per_in <= qp * 1.000_001);
        assert!(t.uh_peak_cfs_per_in > qp * 0.95);
    }
}
