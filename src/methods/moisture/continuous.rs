//! Continuous soil-moisture accounting for long records: the curve-number
//! retention S as a state that falls with the water each event infiltrates
//! and recovers with potential evapotranspiration between events.
//!
//! The model, for the part of a catchment whose moisture is accounted:
//!
//! - **Within an event** (events are split by a dry gap, as in event mode),
//!   rain becomes runoff by TR-55 (1986) eq. 2-3 applied incrementally from
//!   the event's starting retention S: rain first fills `Ia = lambda S`;
//!   after that, with F the infiltration since Ia was filled,
//!   `dF/dP = (1 - F/S)^2`, integrated exactly over each step
//!   ([`infiltration_step_in`]). The derivative of eq. 2-3 was published by
//!   Aron, Miller and Lakatos (1977); the exact step update is derived in
//!   the project's reference file (section 13a). A single event starting at
//!   S gives eq. 2-3 to rounding, whatever the step or the rain pattern.
//! - **After an event** S falls by the water that infiltrated, `P - Q` (the
//!   initial abstraction included), and never below S(CN III).
//! - **Between events** S recovers with potential evapotranspiration,
//!   `dS/dt = PET(t) exp(-c S / Smax)`, up to `Smax = S(CN I)`
//!   ([`recover_retention_in`]). This recovery law is the form attributed
//!   to Williams and LaSeur (1976) and Kannan et al. (2008), **recalled from
//!   memory**: their papers' equations were not read. Williams and LaSeur's
//!   published form is daily and subtracts `P - Q` on every rain day; here
//!   the recovery runs between events only, and the floor at S(CN III) is
//!   runnel's own choice (no source for it was found).
//!
//! The AMC I and III curve numbers come from the same conversion as event
//! mode's antecedent rule ([`super::cn_dry`], [`super::cn_wet`]). Directly
//! connected impervious cover (CN 98) is not moisture-accounted: its share
//! of the area gets eq. 2-1 per event at CN 98 with its own Ia, and the two
//! shares' excesses are added by area.
//!
//! Units: rain and excess in inches per interval, retention in inches,
//! steps in hours, PET in inches per day.

use super::{EventSplitter, MoistureClass, MoistureError, cn_dry, cn_for_class, cn_wet};
use crate::methods::runoff::{Lambda, runoff_depth_in};

/// Curve number of directly connected impervious cover (TR-55 (1986) Table 2-2a).
pub const IMPERVIOUS_CN: f64 = 98.0;

/// The calendar month of every step of a record, as runs: the first step
/// of each run and its month (1-12). Built once per record, so that the
/// recovery between events does not look up a date per step.
#[derive(Debug, Clone, PartialEq)]
pub struct MonthRuns {
    runs: Vec<(usize, u32)>,
}

impl MonthRuns {
    /// Runs from `(first step, month)` pairs: the first must start at step
    /// 0, starts must increase, and months must be 1-12.
    pub fn new(runs: Vec<(usize, u32)>) -> Result<Self, MoistureError> {
        for (k, &(start, month)) in runs.iter().enumerate() {
            if !(1..=12).contains(&month) {
                return Err(MoistureError::InvalidMonth {
                    index: start,
                    month,
                });
            }
            let ordered = match k {
                0 => start == 0,
                _ => runs[k - 1].0 < start,
            };
            if !ordered {
                return Err(MoistureError::InvalidParameter {
                    what: "the month runs",
                    expected: "increasing first steps, the first at step 0",
                    value: start as f64,
                });
            }
        }
        if runs.is_empty() {
            return Err(MoistureError::InvalidParameter {
                what: "the month runs",
                expected: "at least one run",
                value: 0.0,
            });
        }
        Ok(Self { runs })
    }

    /// One month for every step.
    pub fn constant(month: u32) -> Result<Self, MoistureError> {
        Self::new(vec![(0, month)])
    }

    /// Calls `f(month, steps)` for each month's share of the steps `[a, b)`.
    fn for_each_in(&self, a: usize, b: usize, mut f: impl FnMut(u32, usize)) {
        if a >= b {
            return;
        }
        // The run holding step a: the last whose first step is <= a.
        let mut k = self
            .runs
            .partition_point(|&(s, _)| s <= a)
            .saturating_sub(1);
        let mut from = a;
        while from < b {
            let (_, month) = self.runs[k];
            let end = self.runs.get(k + 1).map_or(b, |&(s, _)| s.min(b));
            f(month, end - from);
            from = end;
            k += 1;
        }
    }
}

/// Parameters of continuous accounting for one catchment.
#[derive(Debug, Clone, PartialEq)]
pub struct ContinuousParams {
    /// Average-condition (AMC II) curve number of the moisture-accounted
    /// part (for Ia = 0.2 S, as tabulated).
    pub cn: f64,
    /// Initial-abstraction ratio (both shares).
    pub lambda: Lambda,
    /// Potential evapotranspiration per calendar month (index 0 = January), in/day.
    pub pet_in_per_day: [f64; 12],
    /// Recovery coefficient c of `exp(-c S / Smax)`.
    pub recovery: f64,
    /// Moisture class whose retention the record starts at.
    pub initial: MoistureClass,
    /// A rainy interval after at least this many dry intervals begins an event.
    pub dry_gap_steps: usize,
    /// Share (0-1) of the area that is directly connected impervious cover
    /// at CN 98, computed per event without moisture accounting.
    pub impervious_fraction: f64,
}

impl ContinuousParams {
    /// Retention (in) at the wet bound, S(CN III), with this ratio.
    pub fn s_min_in(&self) -> f64 {
        self.lambda.retention_in(cn_wet(self.cn))
    }

    /// Retention (in) at the dry bound, `Smax = S(CN I)`, with this ratio.
    pub fn s_max_in(&self) -> f64 {
        self.lambda.retention_in(cn_dry(self.cn))
    }

    /// Retention (in) the record starts at.
    pub fn s_start_in(&self) -> f64 {
        self.lambda
            .retention_in(cn_for_class(self.cn, self.initial))
    }

    fn check(&self, step_h: f64) -> Result<(), MoistureError> {
        if !(step_h.is_finite() && step_h > 0.0) {
            return Err(MoistureError::InvalidStep { step_h });
        }
        if !(self.cn.is_finite() && self.cn > 0.0 && self.cn <= 100.0) {
            return Err(MoistureError::InvalidCurveNumber { cn: self.cn });
        }
        let bad = |what, expected, value| {
            Err(MoistureError::InvalidParameter {
                what,
                expected,
                value,
            })
        };
        if !(self.recovery.is_finite() && self.recovery > 0.0) {
            return bad(
                "the recovery coefficient",
                "a positive number",
                self.recovery,
            );
        }
        if let Some(&p) = self
            .pet_in_per_day
            .iter()
            .find(|p| !(p.is_finite() && **p >= 0.0))
        {
            return bad("the potential evapotranspiration", "zero or more", p);
        }
        let f = self.impervious_fraction;
        if !(f.is_finite() && (0.0..=1.0).contains(&f)) {
            return bad("the impervious fraction", "between 0 and 1", f);
        }
        Ok(())
    }
}

/// Curve numbers of the events' starting retentions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CnRange {
    /// Smallest.
    pub min: f64,
    /// Mean over the events.
    pub mean: f64,
    /// Largest.
    pub max: f64,
}

impl CnRange {
    /// Running minimum, sum and maximum of curve numbers, as a range
    /// (`None` for no events).
    pub fn from_values(values: impl IntoIterator<Item = f64>) -> Option<Self> {
        let mut acc = CnAccumulator::default();
        values.into_iter().for_each(|v| acc.push(v));
        acc.range()
    }
}

/// Running minimum, sum and maximum of event curve numbers.
#[derive(Debug, Clone, Copy, Default)]
pub struct CnAccumulator {
    n: usize,
    sum: f64,
    min: f64,
    max: f64,
}

impl CnAccumulator {
    /// Adds one event's curve number.
    pub fn push(&mut self, cn: f64) {
        if self.n == 0 {
            self.min = cn;
            self.max = cn;
        } else {
            self.min = self.min.min(cn);
            self.max = self.max.max(cn);
        }
        self.n += 1;
        self.sum += cn;
    }

    /// The range so far (`None` before any event).
    pub fn range(&self) -> Option<CnRange> {
        (self.n > 0).then(|| CnRange {
            min: self.min,
            mean: self.sum / self.n as f64,
            max: self.max,
        })
    }
}

/// What continuous accounting over a record gives besides the excess.
#[derive(Debug, Clone, PartialEq)]
pub struct ContinuousTotals {
    /// Number of events.
    pub events: usize,
    /// Excess over the record (in over the whole area, both shares).
    pub runoff_in: f64,
    /// Curve numbers of the events' starting retentions (moisture-accounted part).
    pub event_cn: Option<CnRange>,
    /// Retention (in) after the record's last event, before any later recovery.
    pub final_retention_in: f64,
}

/// Infiltration (in) over one step of rain `dp_in` once Ia is filled,
/// for an event that started at retention `s_in`, with `remaining_in` =
/// `S - F` before the step. Returns the infiltration of the step; the new
/// remaining retention is `remaining_in` less it.
///
/// # Formula
/// The exact integral of `dF/dP = (1 - F/S)^2` (the derivative of TR-55
/// (1986) eq. 2-3, after Aron, Miller and Lakatos 1977) over `dP`:
/// `1/(S - F1) = 1/(S - F0) + dP/S^2`, written without cancellation as
/// `F1 - F0 = (S - F0) x / (1 + x)` with `x = (S - F0) dP / S^2`
/// (all in in). The step's runoff is `dP - (F1 - F0)`.
pub fn infiltration_step_in(s_in: f64, remaining_in: f64, dp_in: f64) -> f64 {
    if s_in <= 0.0 || remaining_in <= 0.0 {
        return 0.0;
    }
    let x = remaining_in * dp_in / (s_in * s_in);
    (remaining_in * x / (1.0 + x)).clamp(0.0, dp_in)
}

/// Retention (in) after `days` of recovery at a constant potential
/// evapotranspiration `pet_in_per_day`, from `s0_in`, capped at `s_max_in`.
///
/// # Formula
/// Exact solution of `dS/dt = PET exp(-c S / Smax)` (the recovery form
/// attributed to Williams and LaSeur 1976 and Kannan et al. 2008,
/// **recalled from memory**; the solution is derived in the project's
/// reference file, section 13a):
/// `S1 = min(Smax, (Smax / c) ln(exp(c S0 / Smax) + c PET dt / Smax))`
/// (S in in, PET in in/day, dt in days).
pub fn recover_retention_in(
    s0_in: f64,
    s_max_in: f64,
    pet_in_per_day: f64,
    c: f64,
    days: f64,
) -> f64 {
    if s_max_in <= 0.0 || s0_in >= s_max_in || pet_in_per_day <= 0.0 || days <= 0.0 {
        return s0_in;
    }
    let s1 =
        s_max_in / c * ((c * s0_in / s_max_in).exp() + c * pet_in_per_day * days / s_max_in).ln();
    s1.min(s_max_in).max(s0_in)
}

/// The state of one event of the moisture-accounted part.
struct EventState {
    /// Retention at the event's start (in).
    s_in: f64,
    /// Initial abstraction still to fill (in).
    ia_left_in: f64,
    /// `S - F`, the retention not yet used since Ia was filled (in).
    remaining_in: f64,
    /// Rain (in) and runoff (in) of the event so far.
    p_in: f64,
    q_in: f64,
}

impl EventState {
    fn new(s_in: f64, ia_ratio: f64) -> Self {
        Self {
            s_in,
            ia_left_in: ia_ratio * s_in,
            remaining_in: s_in,
            p_in: 0.0,
            q_in: 0.0,
        }
    }

    /// Takes one step's rain (in) and returns its runoff (in).
    #[inline]
    fn rain(&mut self, r: f64) -> f64 {
        let fill = r.min(self.ia_left_in);
        self.ia_left_in -= fill;
        let dp = r - fill;
        let df = infiltration_step_in(self.s_in, self.remaining_in, dp);
        self.remaining_in -= df;
        let dq = dp - df;
        self.p_in += r;
        self.q_in += dq;
        dq
    }

    /// The retention after the event: S less what infiltrated, at least `s_min_in`.
    fn retention_after(&self, s_min_in: f64) -> f64 {
        (self.s_in - (self.p_in - self.q_in)).max(s_min_in)
    }
}

/// Excess per rainy interval (in) by continuous soil-moisture accounting,
/// handed to `sink(interval, excess)` (dry intervals have none), with
/// `on_event(interval, retention_in)` called as each event begins with the
/// moisture-accounted part's starting retention.
///
/// `months` gives the calendar month of every step (for the monthly PET).
/// The record starts at the retention of `params.initial`; the dry steps
/// before the first event count as time between events.
///
/// # Formula
/// See the module documentation: TR-55 (1986) eq. 2-3 applied
/// incrementally within events ([`infiltration_step_in`]), `S` less
/// `P - Q` after each, recovery by [`recover_retention_in`] between
/// events, S kept within [S(CN III), S(CN I)]; the impervious share by
/// eq. 2-1 per event at CN 98.
pub fn continuous_excess_each(
    rain_in: &[f64],
    step_h: f64,
    params: &ContinuousParams,
    months: &MonthRuns,
    mut on_event: impl FnMut(usize, f64),
    mut sink: impl FnMut(usize, f64),
) -> Result<ContinuousTotals, MoistureError> {
    params.check(step_h)?;
    let ia_ratio = params.lambda.ratio();
    let (s_min, s_max) = (params.s_min_in(), params.s_max_in());
    let s_imp = params.lambda.retention_in(IMPERVIOUS_CN);
    let f_imp = params.impervious_fraction;
    let f_perv = 1.0 - f_imp;
    let step_days = step_h / 24.0;

    let mut s = params.s_start_in().clamp(s_min, s_max);
    let mut event: Option<EventState> = None;
    let (mut p_imp, mut q_imp) = (0.0, 0.0);
    let mut next_dry = 0usize; // first step after the last rainy one
    let mut events = 0usize;
    let mut runoff_in = 0.0;
    let mut cns = CnAccumulator::default();
    let mut splitter = EventSplitter::new(params.dry_gap_steps);
    for (j, &r) in rain_in.iter().enumerate() {
        let Some(starts_event) = splitter.feed(j, r)? else {
            continue;
        };
        if starts_event {
            if let Some(done) = event.take() {
                s = done.retention_after(s_min);
            }
            months.for_each_in(next_dry, j, |month, n| {
                let pet = params.pet_in_per_day[(month - 1) as usize];
                s = recover_retention_in(s, s_max, pet, params.recovery, n as f64 * step_days);
            });
            on_event(j, s);
            cns.push(params.lambda.cn_for_retention_in(s));
            events += 1;
            event = Some(EventState::new(s, ia_ratio));
            (p_imp, q_imp) = (0.0, 0.0);
        }
        next_dry = j + 1;
        let perv = match event.as_mut() {
            Some(e) => e.rain(r),
            None => 0.0,
        };
        let imp = if f_imp > 0.0 {
            p_imp += r;
            let q = runoff_depth_in(p_imp, s_imp, ia_ratio);
            let d = (q - q_imp).clamp(0.0, r);
            q_imp = q;
            d
        } else {
            0.0
        };
        let excess = (f_perv * perv + f_imp * imp).clamp(0.0, r);
        runoff_in += excess;
        sink(j, excess);
    }
    if let Some(done) = event.take() {
        s = done.retention_after(s_min);
    }
    Ok(ContinuousTotals {
        events,
        runoff_in,
        event_cn: cns.range(),
        final_retention_in: s,
    })
}

/// As [`continuous_excess_each`], returning the excess series (in per
/// interval) and the totals.
pub fn continuous_excess_in(
    rain_in: &[f64],
    step_h: f64,
    params: &ContinuousParams,
    months: &MonthRuns,
) -> Result<(Vec<f64>, ContinuousTotals), MoistureError> {
    let mut out = vec![0.0; rain_in.len()];
    let totals = continuous_excess_each(
        rain_in,
        step_h,
        params,
        months,
        |_, _| {},
        |j, e| {
            if let Some(slot) = out.get_mut(j) {
                *slot = e;
            }
        },
    )?;
    Ok((out, totals))
}

#[cfg(test)]
mod tests;
