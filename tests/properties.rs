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

/// A channel's inflow: a rising and falling hydrograph from zero, cfs.
fn channel_inflow() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(0.0f64..500.0, 1..120).prop_map(|mut v| {
        v.insert(0, 0.0);
        v
    })
}

/// Trapezoidal volume of a series at step `dt` (flow x time).
fn trapezoid(s: &[f64], dt: f64) -> f64 {
    match s {
        [first, .., last] => (s.iter().sum::<f64>() - 0.5 * (first + last)) * dt,
        _ => 0.0,
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    // Muskingum channel routing (reference file section 13d); the
    // invariants are derived from the recursion: its coefficients sum to 1
    // and it is the trapezoidal storage balance with S = K [X I + (1 - X) O].

    // Routed at the run step (in one reach or several), the balance is exact
    // to rounding; at sub-steps it holds on the sub-step grid, and the
    // outflow sampled at the run step carries the sampling error that
    // `methods::channel`'s test of sub-steps measures.
    #[test]
    fn channel_volume_is_conserved(inflow in channel_inflow(), k in 0.05f64..5.0, x in 0.0f64..0.5, dt in 0.0167f64..0.5) {
        use runnel::methods::channel::{plan, route_reach};
        let p = plan(k, x, dt);
        prop_assume!(p.is_some_and(|p| p.sub_steps == 1));
        let Some(p) = p else { return Ok(()) };
        let r = route_reach(&inflow, k, x, dt, p);
        let vin = trapezoid(&inflow, dt);
        let vout = trapezoid(&r.outflow, dt);
        // rounding only: the sums run over a few hundred values
        prop_assert!((vin - vout - r.stored_end).abs() <= 1e-9 * vin.max(1.0), "{} {} {}", vin, vout, r.stored_end);
    }

    #[test]
    fn channel_outflow_is_never_negative_nor_above_the_peak_inflow(inflow in channel_inflow(), k in 0.05f64..5.0, x in 0.0f64..0.5, dt in 0.0167f64..0.5) {
        use runnel::methods::channel::{plan, route_reach};
        let p = plan(k, x, dt);
        prop_assume!(p.is_some());
        let Some(p) = p else { return Ok(()) };
        let r = route_reach(&inflow, k, x, dt, p);
        let peak_in = inflow.iter().copied().fold(0.0, f64::max);
        for &o in &r.outflow {
            prop_assert!(o >= 0.0, "negative outflow {}", o);
            // a weighted mean of values no higher than the peak inflow
            prop_assert!(o <= peak_in * (1.0 + 1e-12), "{} above {}", o, peak_in);
        }
    }

    #[test]
    fn splitting_a_channel_does_not_change_its_volume(inflow in channel_inflow(), k in 0.05f64..5.0, x in 0.0f64..0.5, dt in 0.0167f64..0.5, more_reaches in 2usize..5) {
        use runnel::methods::channel::{Plan, plan, route_reach};
        let p = plan(k, x, dt);
        prop_assume!(p.is_some_and(|p| p.sub_steps == 1));
        let Some(p) = p else { return Ok(()) };
        let finer = Plan { sub_reaches: p.sub_reaches * more_reaches, sub_steps: 1 };
        // the finer split must keep its coefficients non-negative too
        let c = runnel::methods::channel::coefficients(k / finer.sub_reaches as f64, x, dt);
        prop_assume!(c.c0 >= 0.0 && c.c2 >= 0.0);
        let a = route_reach(&inflow, k, x, dt, p);
        let b = route_reach(&inflow, k, x, dt, finer);
        // what left plus what is still in the reach is the same whatever the split
        let va = trapezoid(&a.outflow, dt) + a.stored_end;
        let vb = trapezoid(&b.outflow, dt) + b.stored_end;
        prop_assert!((va - vb).abs() <= 1e-9 * va.max(1.0), "{} {}", va, vb);
    }
}
