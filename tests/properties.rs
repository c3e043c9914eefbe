//! Property tests of physical invariants over random inputs.

use proptest::prelude::*;
use runnel::methods::rainfall::NrcsType;
use runnel::methods::runoff;
use runnel::methods::unit_hydrograph::{self, Shape};

fn run(area_ac: f64, cn: f64, tc_h: f64, depth_in: f64, pattern: NrcsType) -> (f64, f64, f64) {
    let step_h = runnel::input::scenario::default_step_h(tc_h);
    let n = ((24.0 + 6.0 * tc_h + 1.0) / step_h).ceil() as usize;
    let rain =
        runnel::methods::rainfall::hyetograph(&pattern.mass_curve(), depth_in, 24.0, step_h, n);
    let excess = runoff::excess_per_step_in(&rain, runoff::retention_in(cn), 0.2);
    let tp = unit_hydrograph::time_to_peak_h(step_h, 0.6 * tc_h);
    let uh = unit_hydrograph::ordinates_cfs_per_in(Shape::Standard, area_ac, tp, step_h);
    let q = unit_hydrograph::convolve(&excess, &uh, n + 1);
    let peak = q.iter().copied().fold(0.0, f64::max);
    (
        peak,
        runnel::engine::network::volume_ft3(&q, step_h),
        excess.iter().sum(),
    )
}

fn pattern() -> impl Strategy<Value = NrcsType> {
    prop_oneof![
        Just(NrcsType::I),
        Just(NrcsType::IA),
        Just(NrcsType::II),
        Just(NrcsType::III)
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn peak_and_volume_never_decrease_as_depth_grows(area in 1.0f64..500.0, cn in 40.0f64..99.0, tc in 0.08f64..2.0, p in 0.5f64..10.0, dp in 0.01f64..3.0, t in pattern()) {
        let (q1, v1, _) = run(area, cn, tc, p, t);
        let (q2, v2, _) = run(area, cn, tc, p + dp, t);
        prop_assert!(q2 >= q1 - 1e-9 * q1.max(1.0));
        prop_assert!(v2 >= v1 - 1e-9 * v1.max(1.0));
    }

    #[test]
    fn peak_and_volume_never_decrease_as_cn_grows(area in 1.0f64..500.0, cn in 40.0f64..95.0, dcn in 0.1f64..4.0, tc in 0.08f64..2.0, p in 0.5f64..10.0, t in pattern()) {
        let (q1, v1, _) = run(area, cn, tc, p, t);
        let (q2, v2, _) = run(area, cn + dcn, tc, p, t);
        prop_assert!(q2 >= q1 - 1e-9 * q1.max(1.0));
        prop_assert!(v2 >= v1 - 1e-9 * v1.max(1.0));
    }

    #[test]
    fn catchment_volume_is_runoff_depth_times_area(area in 1.0f64..500.0, cn in 40.0f64..99.0, tc in 0.08f64..2.0, p in 0.5f64..10.0, t in pattern()) {
        let (_, v, excess_in) = run(area, cn, tc, p, t);
        let want = excess_in / 12.0 * area * 43_560.0;
        prop_assert!((v - want).abs() <= 0.005 * want.max(1e-6));
    }
}
