//! Channel routing by the Muskingum method: a reach (swale, ditch, stream)
//! whose storage is a weighted sum of its inflow and outflow, `S = K [X I +
//! (1 - X) O]`, routed with the three coefficients of the reference file,
//! section 13d (Bedient, Huber & Vieux, *Hydrology and Floodplain
//! Analysis*, 5th ed., Example 4-3, is the same equation).
//!
//! [`coefficients`] and [`route`] are the published form: any consistent
//! time unit for `K` and `dt`, any flow unit. [`plan`] and [`route_reach`]
//! are how runnel keeps every coefficient non-negative at the run's step
//! (common practice, no published source; see [`plan`]).

/// The Muskingum routing coefficients; they sum to 1.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Coefficients {
    /// Weight of the inflow at the end of the step.
    pub c0: f64,
    /// Weight of the inflow at the start of the step.
    pub c1: f64,
    /// Weight of the outflow at the start of the step.
    pub c2: f64,
}

/// The Muskingum coefficients for travel time `k`, weighting `x` and step
/// `dt` (`k` and `dt` in the same time unit).
///
/// # Formula
/// Reference file section 13d; Bedient, Huber & Vieux (5th ed.) Example 4-3:
///
/// ```text
/// D' = 2K(1 - X) + dt
/// C0 = (dt - 2KX) / D'
/// C1 = (dt + 2KX) / D'
/// C2 = (2K(1 - X) - dt) / D'
/// ```
///
/// All three are non-negative when `2KX <= dt <= 2K(1 - X)` (derived from
/// the three numerators).
pub fn coefficients(k: f64, x: f64, dt: f64) -> Coefficients {
    let d = 2.0 * k * (1.0 - x) + dt;
    Coefficients {
        c0: (dt - 2.0 * k * x) / d,
        c1: (dt + 2.0 * k * x) / d,
        c2: (2.0 * k * (1.0 - x) - dt) / d,
    }
}

/// Routes `inflow` (one value per step `dt`) through a reach of travel time
/// `k` and weighting `x`, starting from outflow `o_start`; returns the
/// outflow at the same times (the first value is `o_start`).
///
/// # Formula
/// Reference file section 13d; Bedient, Huber & Vieux (5th ed.) Example 4-3:
///
/// ```text
/// O2 = C0 I2 + C1 I1 + C2 O1
/// ```
///
/// with the coefficients of [`coefficients`].
pub fn route(inflow: &[f64], k: f64, x: f64, dt: f64, o_start: f64) -> Vec<f64> {
    let c = coefficients(k, x, dt);
    let mut out = Vec::with_capacity(inflow.len());
    if inflow.is_empty() {
        return out;
    }
    out.push(o_start);
    for w in inflow.windows(2) {
        let o1 = out[out.len() - 1];
        out.push(c.c0 * w[1] + c.c1 * w[0] + c.c2 * o1);
    }
    out
}

/// Most sub-reaches times sub-steps per run step that [`plan`] accepts: the
/// work per run step (a reach of K = 1 day at X = 0.2 and a 1-minute step
/// needs 576).
pub const MAX_PLAN_WORK: usize = 5_000;

/// How a reach is routed at a run step: `sub_reaches` reaches of `K / n` in
/// series, each routed at `sub_steps` steps per run step.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Plan {
    /// Reaches of `K / sub_reaches` in series (1: the reach as given).
    pub sub_reaches: usize,
    /// Routing steps per run step (1: the run step itself).
    pub sub_steps: usize,
}

/// The split of a reach of travel time `k` and weighting `x` at run step
/// `dt` (same time unit) that keeps every Muskingum coefficient
/// non-negative, or `None` when no split within [`MAX_PLAN_WORK`] does.
///
/// The coefficients of [`coefficients`] are non-negative when `2KX <= dt <=
/// 2K(1 - X)`. A negative `C0` makes the outflow dip below zero as the
/// inflow rises; a negative `C2` makes it overshoot. So, as is common
/// practice (no published source for the rule itself):
/// - when the step is shorter than `2KX`, the reach is split into `n`
///   sub-reaches of `K / n` in series, `n` the smallest for which `dt >= 2
///   (K/n) X`;
/// - when the step is then longer than `2 (K/n)(1 - X)`, each sub-reach is
///   routed at `m` sub-steps of `dt / m`, the inflow taken linearly between
///   run steps.
///
/// The smallest `m` (then the smallest `n` for it) with `2 (K/n) X <= dt/m
/// <= 2 (K/n)(1 - X)` is chosen; with `m = 1` this is the first rule alone.
/// At `X = 0.5` the window is one point (`dt/m = K/n`, a pure translation
/// by whole sub-steps), found only when `K / dt` is a ratio of small whole
/// numbers.
pub fn plan(k: f64, x: f64, dt: f64) -> Option<Plan> {
    if !(k > 0.0 && dt > 0.0 && (0.0..=0.5).contains(&x) && k.is_finite() && dt.is_finite()) {
        return None;
    }
    // n / m must lie in [lo, hi].
    let lo = 2.0 * k * x / dt;
    let hi = 2.0 * k * (1.0 - x) / dt;
    let eps = 1e-9;
    for m in 1..=MAX_PLAN_WORK {
        let mf = m as f64;
        let n = (lo * mf * (1.0 - eps)).ceil().max(1.0);
        if n * (m as f64) > MAX_PLAN_WORK as f64 {
            return None;
        }
        if n <= hi * mf * (1.0 + eps) {
            return Some(Plan {
                sub_reaches: n as usize,
                sub_steps: m,
            });
        }
    }
    None
}

/// A reach routed by [`route_reach`].
#[derive(Debug, Clone, PartialEq)]
pub struct ReachRouting {
    /// Outflow at each run step (same unit as the inflow).
    pub outflow: Vec<f64>,
    /// Storage in the reach at the end, in the flow unit times the time
    /// unit of `k` (cfs h for cfs and hours): the sum over the sub-reaches
    /// of `(K/n) [X I + (1 - X) O]`.
    pub stored_end: f64,
}

/// Routes `inflow` (one value per run step `dt`) through a reach of travel
/// time `k` and weighting `x` split as `plan` says, from an empty reach
/// (every outflow zero at the start): [`route`] in each of
/// `plan.sub_reaches` sub-reaches of `k / n`, at `plan.sub_steps` steps per
/// run step with the inflow taken linearly between run steps.
///
/// Every coefficient of the plan is non-negative, so the outflow is never
/// negative for a non-negative inflow, and never above the highest inflow.
/// The volume balances: what enters less what leaves (both trapezoidal in
/// time) is `stored_end` less the storage at the start (`(K/n) X I0` in the
/// first sub-reach).
pub fn route_reach(inflow: &[f64], k: f64, x: f64, dt: f64, plan: Plan) -> ReachRouting {
    let mut outflow = vec![0.0; inflow.len()];
    let stored_end = route_reach_into(inflow, k, x, dt, plan, &mut outflow, None);
    ReachRouting {
        outflow,
        stored_end,
    }
}

/// [`route_reach`] writing the outflow into `outflow` (as long as
/// `inflow`), and, when given, the storage in the reach at each run step
/// into `storage` (as long as `inflow`); returns the storage at the end.
/// `plan` comes from [`plan`]: a coefficient below zero by rounding is
/// taken as zero (with `C1 = 1 - C0 - C2`), which a plan that is not one
/// would turn into an error in the volume.
pub fn route_reach_into(
    inflow: &[f64],
    k: f64,
    x: f64,
    dt: f64,
    plan: Plan,
    outflow: &mut [f64],
    mut storage: Option<&mut [f64]>,
) -> f64 {
    let n = plan.sub_reaches.max(1);
    let m = plan.sub_steps.max(1);
    let kr = k / n as f64;
    let ds = dt / m as f64;
    let raw = coefficients(kr, x, ds);
    // Within the plan's tolerance a coefficient may be a rounding below zero.
    let c0 = raw.c0.max(0.0);
    let c2 = raw.c2.max(0.0);
    let c1 = 1.0 - c0 - c2;
    let Some(&first) = inflow.first() else {
        return 0.0;
    };
    // Inflow and outflow of each sub-reach at the start of the sub-step.
    let mut i_prev = vec![0.0; n];
    let mut o_prev = vec![0.0; n];
    i_prev[0] = first;
    let stored = |i_prev: &[f64], o_prev: &[f64]| -> f64 {
        i_prev
            .iter()
            .zip(o_prev)
            .map(|(i, o)| kr * (x * i + (1.0 - x) * o))
            .sum()
    };
    if let Some(o) = outflow.first_mut() {
        *o = 0.0;
    }
    if let Some(s) = storage.as_deref_mut().and_then(|s| s.first_mut()) {
        *s = stored(&i_prev, &o_prev);
    }
    for (t, w) in inflow.windows(2).enumerate() {
        let (a, b) = (w[0], w[1]);
        for s in 1..=m {
            let mut i_now = a + (b - a) * (s as f64 / m as f64);
            for j in 0..n {
                let o = c0 * i_now + c1 * i_prev[j] + c2 * o_prev[j];
                i_prev[j] = i_now;
                o_prev[j] = o;
                i_now = o;
            }
        }
        if let Some(o) = outflow.get_mut(t + 1) {
            *o = o_prev[n - 1];
        }
        if let Some(s) = storage.as_deref_mut().and_then(|s| s.get_mut(t + 1)) {
            *s = stored(&i_prev, &o_prev);
        }
    }
    stored(&i_prev, &o_prev)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Inflow of the reference file's worked Muskingum solution, m3/s at 1-h steps.
    const PONCE_INFLOW: [f64; 14] = [
        12.0, 30.0, 50.0, 100.0, 145.0, 160.0, 140.0, 75.0, 55.0, 45.0, 35.0, 25.0, 15.0, 12.0,
    ];

    #[test]
    fn worked_muskingum_solution() {
        // V. M. Ponce (SDSU), published worked solution (transcribed), reference file section 13d
        crate::validation::assert_group("ponce-muskingum");
        let c = coefficients(1.0, 0.2, 1.0);
        assert!((c.c0 - 0.231).abs() < 5e-4);
        assert!((c.c1 - 0.538).abs() < 5e-4);
        assert!((c.c2 - 0.231).abs() < 5e-4);
        let o = route(&PONCE_INFLOW, 1.0, 0.2, 1.0, PONCE_INFLOW[0]);
        let (peak, at) = crate::methods::stats::max_first(&o).unwrap_or((0.0, 0));
        assert!((peak - 150.353).abs() < 5e-4, "{peak}");
        assert_eq!(at, 6);
    }

    #[test]
    fn bedient_example_4_3() {
        // Bedient, Huber & Vieux (5th ed.) Example 4-3, reference file section 9d
        crate::validation::assert_group("bhv-example-4-3");
    }

    #[test]
    fn coefficients_sum_to_one() {
        // derived from the reference file section 13d formulas
        for &(k, x, dt) in &[(1.0, 0.2, 1.0), (2.0, 0.0, 0.5), (0.3, 0.5, 0.1)] {
            let c = coefficients(k, x, dt);
            assert!((c.c0 + c.c1 + c.c2 - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn plan_follows_the_rule() {
        // common practice, no published source: n sub-reaches when dt < 2KX,
        // sub-steps when dt > 2K(1-X)
        // K 40 min, X 0.2, dt 5 min: 2KX = 16 min -> n = 4 (2 (10) 0.2 = 4 <= 5 <= 16)
        assert_eq!(
            plan(40.0, 0.2, 5.0),
            Some(Plan {
                sub_reaches: 4,
                sub_steps: 1
            })
        );
        // K 1 h, X 0.2, dt 1 h: within the window as given
        assert_eq!(
            plan(1.0, 0.2, 1.0),
            Some(Plan {
                sub_reaches: 1,
                sub_steps: 1
            })
        );
        // K 10 min, X 0.1, dt 30 min: 2K(1-X) = 18 min -> 2 sub-steps of 15 min
        assert_eq!(
            plan(10.0, 0.1, 30.0),
            Some(Plan {
                sub_reaches: 1,
                sub_steps: 2
            })
        );
        // X 0.5, K 42 min, dt 5 min: translation, n/m = 42/5
        assert_eq!(
            plan(42.0, 0.5, 5.0),
            Some(Plan {
                sub_reaches: 42,
                sub_steps: 5
            })
        );
        assert_eq!(plan(0.0, 0.2, 1.0), None);
        assert_eq!(plan(1.0, 0.6, 1.0), None);
        // X 0.5 with K/dt = pi: no whole ratio within the work limit
        assert_eq!(plan(std::f64::consts::PI, 0.5, 1.0), None);
    }

    #[test]
    fn planned_coefficients_are_non_negative() {
        // derived from the reference file section 13d formulas
        for &(k, x, dt) in &[
            (40.0, 0.2, 5.0),
            (10.0, 0.1, 30.0),
            (0.5, 0.45, 7.0),
            (300.0, 0.3, 1.0),
        ] {
            let p = plan(k, x, dt).unwrap_or_else(|| panic!("no plan for {k} {x} {dt}"));
            let c = coefficients(k / p.sub_reaches as f64, x, dt / p.sub_steps as f64);
            assert!(c.c0 >= -1e-9 && c.c1 >= 0.0 && c.c2 >= -1e-9, "{c:?}");
        }
    }

    #[test]
    fn reach_as_given_matches_the_published_recursion() {
        // V. M. Ponce (SDSU), published worked solution (transcribed), reference
        // file section 13d, started from an empty reach: route_reach with
        // one sub-reach and one sub-step is the published recursion.
        let p = Plan {
            sub_reaches: 1,
            sub_steps: 1,
        };
        let a = route_reach(&PONCE_INFLOW, 1.0, 0.2, 1.0, p);
        let b = route(&PONCE_INFLOW, 1.0, 0.2, 1.0, 0.0);
        for (x, y) in a.outflow.iter().zip(&b) {
            assert!((x - y).abs() < 1e-12);
        }
    }

    #[test]
    fn sub_stepped_reach_keeps_the_volume_of_a_smooth_hydrograph() {
        // derived: at sub-steps the balance is exact on the sub-step grid;
        // the outflow sampled at the run step misses only the curvature
        // between samples. A triangular hydrograph (peak 100 at 3 h, base
        // 9 h) at 30-min steps through a reach of K = 3 min (10 sub-steps).
        let dt = 0.5;
        let inflow: Vec<f64> = (0..60)
            .map(|i| {
                let t = i as f64 * dt;
                if t <= 3.0 {
                    100.0 * t / 3.0
                } else {
                    (100.0 * (9.0 - t) / 6.0).max(0.0)
                }
            })
            .collect();
        let (k, x) = (0.05, 0.1);
        let p = plan(k, x, dt).unwrap_or_else(|| panic!("no plan"));
        assert!(p.sub_steps > 1, "{p:?}");
        let r = route_reach(&inflow, k, x, dt, p);
        let trap = |s: &[f64]| (s.iter().sum::<f64>() - 0.5 * (s[0] + s[s.len() - 1])) * dt;
        let (vin, vout) = (trap(&inflow), trap(&r.outflow));
        assert!(r.stored_end.abs() < 1e-9 * vin);
        // the sampling error: less than 0.1 % of the volume here
        assert!((vin - vout).abs() < 1e-3 * vin, "{vin} {vout}");
    }

    #[test]
    fn reach_volume_balances() {
        // derived: the Muskingum recursion is the trapezoidal storage balance
        let mut inflow = vec![0.0; 200];
        for (i, q) in inflow.iter_mut().enumerate().take(60) {
            *q = (i as f64 * 0.1).sin().abs() * 50.0;
        }
        let (k, x, dt) = (0.75, 0.25, 1.0 / 12.0);
        let p = plan(k, x, dt).unwrap_or_else(|| panic!("no plan"));
        let r = route_reach(&inflow, k, x, dt, p);
        let trap = |s: &[f64]| (s.iter().sum::<f64>() - 0.5 * (s[0] + s[s.len() - 1])) * dt;
        let balance = trap(&inflow) - trap(&r.outflow) - r.stored_end;
        assert!(balance.abs() < 1e-9 * trap(&inflow), "{balance}");
    }
}
