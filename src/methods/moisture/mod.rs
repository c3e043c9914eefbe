//! Excess rainfall over long rainfall records, for continuous simulation.
//!
//! The curve-number equation of USDA-SCS (1986) TR-55, eq. 2-1, is an event
//! relation: it maps the cumulative rain of one storm to its cumulative
//! runoff. To use it over a record of many storms this module splits the
//! record into events (a new event begins after a run of dry intervals) and
//! applies the equation to the cumulative rain since each event began.
//! Optionally, the curve number of each event is moved to the dry (AMC I) or
//! wet (AMC III) condition by the rain of the five days before it, with the
//! 5-day thresholds of Harper & Baker (2007) Table 4-20 (the classic SCS
//! values) and the conversion formulas of Chow, Maidment & Mays (1988) as
//! given by Harper & Baker (2007); both are used here as transcribed.
//!
//! Continuous soil-moisture accounting (the retention as a state that falls
//! with infiltration and recovers with evapotranspiration between events) is
//! in [`continuous`]; event mode is that model with the retention reset at
//! every event.
//!
//! Units: rain and excess depths in inches per interval, steps in hours.

use std::collections::VecDeque;

pub mod continuous;
pub use continuous::{
    CnAccumulator, CnRange, ContinuousParams, ContinuousTotals, IMPERVIOUS_CN, MonthRuns,
    continuous_excess_each, continuous_excess_in, infiltration_step_in, recover_retention_in,
};

use crate::methods::runoff::{Lambda, runoff_depth_in};

/// Length of the antecedent window: five days, in hours.
const ANTECEDENT_WINDOW_H: f64 = 120.0;

/// A 5-day depth this close (in) to a class threshold counts as on it, so that
/// the rounding of a sum of gauge depths (0.1 + 0.2 + ... in) cannot move an
/// event across a threshold it meets exactly. Far below any gauge resolution.
const THRESHOLD_ROUNDING_IN: f64 = 1e-9;

/// Errors of the long-record excess computations.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MoistureError {
    /// A parameter of continuous accounting is outside its range.
    #[error("{what} must be {expected}; got {value}")]
    InvalidParameter {
        /// The parameter.
        what: &'static str,
        /// What it must be.
        expected: &'static str,
        /// The value given.
        value: f64,
    },
    /// The step is not a positive, finite number of hours.
    #[error("the step must be a positive, finite number of hours; got {step_h}")]
    InvalidStep {
        /// The step that was given (h).
        step_h: f64,
    },
    /// The curve number is outside (0, 100].
    #[error("the curve number must be greater than 0 and at most 100; got {cn}")]
    InvalidCurveNumber {
        /// The curve number that was given.
        cn: f64,
    },
    /// A rain depth is negative, infinite or not a number.
    #[error("the rain of interval {index} must be a finite depth of zero or more; got {value}")]
    InvalidRain {
        /// Index of the interval (0-based).
        index: usize,
        /// The depth found there (in).
        value: f64,
    },
    /// The month function gave a value outside 1..=12.
    #[error("the month of interval {index} must be 1 to 12; got {month}")]
    InvalidMonth {
        /// Index of the interval (0-based).
        index: usize,
        /// The month that was returned.
        month: u32,
    },
    /// The output buffer does not have one value per rain interval.
    #[error(
        "the output buffer must hold {expected} values (one per rain interval); it holds {got}"
    )]
    OutputLength {
        /// The number of rain intervals.
        expected: usize,
        /// The length of the buffer given.
        got: usize,
    },
}

/// Antecedent moisture class of the curve-number method.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MoistureClass {
    /// AMC I: dry; the curve number is lowered by [`cn_dry`].
    Dry,
    /// AMC II: average; the curve number is used as given.
    Average,
    /// AMC III: wet; the curve number is raised by [`cn_wet`].
    Wet,
}

/// How the curve number of each event follows the rain of the five days before it.
///
/// The inch thresholds are those of Harper & Baker (2007) Table 4-20
/// (transcribed; the classic SCS 5-day values). A 5-day depth below the
/// `*_dry_below_in` value is AMC I, above the `*_wet_above_in` value AMC III,
/// and anything between, both ends included, AMC II. A depth within 1e-9 in
/// of a threshold counts as on it (rounding of summed gauge depths).
#[derive(Debug, Clone, PartialEq)]
pub struct AntecedentRule {
    /// Which calendar months (index 0 = January) are in the growing season.
    pub growing_months: [bool; 12],
    /// Dormant season: below this 5-day depth (in) the event is AMC I.
    pub dormant_dry_below_in: f64,
    /// Dormant season: above this 5-day depth (in) the event is AMC III.
    pub dormant_wet_above_in: f64,
    /// Growing season: below this 5-day depth (in) the event is AMC I.
    pub growing_dry_below_in: f64,
    /// Growing season: above this 5-day depth (in) the event is AMC III.
    pub growing_wet_above_in: f64,
}

impl Default for AntecedentRule {
    /// Growing season April to September (a common choice; Harper & Baker
    /// (2007) use March to September for Florida), thresholds of Harper &
    /// Baker (2007) Table 4-20: dormant 0.5 / 1.1 in, growing 1.4 / 2.1 in.
    fn default() -> Self {
        let mut growing_months = [false; 12];
        for m in growing_months.iter_mut().take(9).skip(3) {
            *m = true;
        }
        Self {
            growing_months,
            dormant_dry_below_in: 0.5,
            dormant_wet_above_in: 1.1,
            growing_dry_below_in: 1.4,
            growing_wet_above_in: 2.1,
        }
    }
}

impl AntecedentRule {
    /// Whether a calendar month (1..=12) is in the growing season; `None` for
    /// a month outside 1..=12.
    pub fn is_growing(&self, month: u32) -> Option<bool> {
        let i = usize::try_from(month).ok()?.checked_sub(1)?;
        self.growing_months.get(i).copied()
    }

    /// Moisture class for a 5-day antecedent rain depth (in) with this rule's thresholds.
    ///
    /// A depth that is not a number is classed as average.
    pub fn classify(&self, five_day_rain_in: f64, growing: bool) -> MoistureClass {
        let (dry_below, wet_above) = if growing {
            (self.growing_dry_below_in, self.growing_wet_above_in)
        } else {
            (self.dormant_dry_below_in, self.dormant_wet_above_in)
        };
        if five_day_rain_in < dry_below - THRESHOLD_ROUNDING_IN {
            MoistureClass::Dry
        } else if five_day_rain_in > wet_above + THRESHOLD_ROUNDING_IN {
            MoistureClass::Wet
        } else {
            MoistureClass::Average
        }
    }
}

/// Moisture class for a 5-day antecedent rain depth (in).
///
/// Harper & Baker (2007) Table 4-20 (transcribed): dormant season AMC I below
/// 0.5 in, AMC II 0.5 to 1.1 in, AMC III above 1.1 in; growing season AMC I
/// below 1.4 in, AMC II 1.4 to 2.1 in, AMC III above 2.1 in. A depth within
/// 1e-9 in of a threshold counts as on it; one that is not a number is
/// classed as average.
pub fn classify_antecedent(five_day_rain_in: f64, growing: bool) -> MoistureClass {
    AntecedentRule::default().classify(five_day_rain_in, growing)
}

/// Curve number for the dry condition (AMC I) from the average one (AMC II).
///
/// # Formula
/// Chow, Maidment & Mays (1988), as given by Harper & Baker (2007):
/// `CN(I) = 4.2 CN(II) / (10 - 0.058 CN(II))` (CN dimensionless, 0..=100).
pub fn cn_dry(cn2: f64) -> f64 {
    4.2 * cn2 / (10.0 - 0.058 * cn2)
}

/// Curve number for the wet condition (AMC III) from the average one (AMC II).
///
/// # Formula
/// Chow, Maidment & Mays (1988), as given by Harper & Baker (2007):
/// `CN(III) = 23 CN(II) / (10 + 0.13 CN(II))` (CN dimensionless, 0..=100).
///
/// At high curve numbers this gives lower values than the conversion table of
/// Harper & Baker (2007) Table 4-21 (after McCuen 1982), e.g. 90.2 against 94
/// for CN(II) = 80.
pub fn cn_wet(cn2: f64) -> f64 {
    23.0 * cn2 / (10.0 + 0.13 * cn2)
}

/// The curve number of a class, from the average (AMC II) curve number.
pub fn cn_for_class(cn2: f64, class: MoistureClass) -> f64 {
    match class {
        MoistureClass::Dry => cn_dry(cn2),
        MoistureClass::Average => cn2,
        MoistureClass::Wet => cn_wet(cn2),
    }
}

/// Number of intervals in the five-day antecedent window for a step (h).
///
/// `120 h / step_h`, rounded to the nearest whole interval and at least 1.
/// Returns `None` when the step is not positive and finite.
pub fn antecedent_window_steps(step_h: f64) -> Option<usize> {
    if !(step_h.is_finite() && step_h > 0.0) {
        return None;
    }
    let n = (ANTECEDENT_WINDOW_H / step_h).round().max(1.0);
    // A float-to-int `as` saturates; the window is only ever compared with indices.
    Some(n as usize)
}

/// Number of dry intervals that make a dry gap of `dry_gap_h` hours at a
/// step of `step_h` hours: the smallest whole number of intervals spanning at
/// least the gap (so 6 h at 15 min is 24, at 7 min 52). `None` when the gap
/// is negative or not finite, or the step is not positive and finite.
pub fn dry_gap_steps_for(dry_gap_h: f64, step_h: f64) -> Option<usize> {
    if !(dry_gap_h.is_finite() && dry_gap_h >= 0.0 && step_h.is_finite() && step_h > 0.0) {
        return None;
    }
    // The small allowance keeps 2.1 h / 0.3 h (= 7.000000000000001) at 7 intervals.
    let n = (dry_gap_h / step_h - 1e-9).ceil().max(0.0);
    // A float-to-int `as` saturates.
    Some(n as usize)
}

/// Options of event mode.
#[derive(Debug, Clone, PartialEq)]
pub struct EventOptions {
    /// A rainy interval preceded by at least this many dry (zero-rain)
    /// intervals begins a new event. With 0, every rainy interval is an event.
    pub dry_gap_steps: usize,
    /// Move each event's curve number by its 5-day antecedent rain; `None`
    /// uses the curve number as given (AMC II) for every event.
    pub antecedent: Option<AntecedentRule>,
}

/// Start index of every event in a rain series (in per interval).
///
/// The first rainy interval of the record starts an event; after that, a
/// rainy interval preceded by at least `dry_gap_steps` dry intervals does.
/// These are the same events [`event_excess_in`] uses.
pub fn event_starts(rain_in: &[f64], dry_gap_steps: usize) -> Result<Vec<usize>, MoistureError> {
    let mut starts = Vec::new();
    let mut splitter = EventSplitter::new(dry_gap_steps);
    for (j, &r) in rain_in.iter().enumerate() {
        if splitter.feed(j, r)? == Some(true) {
            starts.push(j);
        }
    }
    Ok(starts)
}

/// Excess rainfall per interval (in) by the curve-number equation applied per event.
///
/// Events are those of [`event_starts`]. Within an event the excess of
/// interval k is `Q(P_k) - Q(P_{k-1})`, where `P_k` is the rain since the
/// event began, so an event's excess sums to the runoff of its total rain.
/// With [`EventOptions::antecedent`], the event's curve number is first moved
/// to AMC I or III by the rain of the [`antecedent_window_steps`] intervals
/// before its first interval (rain before the record counts as none), in the
/// season of `month_of_step(first interval)` (1..=12). The retention for the
/// initial-abstraction ratio `lambda` is then taken from that curve number.
///
/// # Formula
/// TR-55 (1986) eq. 2-1 and 2-4: `S = 1000/CN - 10`,
/// `Q = (P - Ia)^2 / (P - Ia + S)` for `P > Ia`, else 0, with `Ia = lambda S`
/// (P, Q, S, Ia in in); for lambda = 0.05 the retention is converted by
/// Hawkins et al. (2002) (see [`Lambda::retention_in`]).
pub fn event_excess_in(
    rain_in: &[f64],
    step_h: f64,
    cn: f64,
    lambda: Lambda,
    opts: &EventOptions,
    month_of_step: &dyn Fn(usize) -> u32,
) -> Result<Vec<f64>, MoistureError> {
    let mut out = vec![0.0; rain_in.len()];
    event_excess_into(rain_in, step_h, cn, lambda, opts, month_of_step, &mut out)?;
    Ok(out)
}

/// As [`event_excess_in`], writing the excess (in per interval) into `out`,
/// which must have the length of `rain_in`. Returns the number of events.
///
/// On an error, the contents of `out` are unspecified.
pub fn event_excess_into(
    rain_in: &[f64],
    step_h: f64,
    cn: f64,
    lambda: Lambda,
    opts: &EventOptions,
    month_of_step: &dyn Fn(usize) -> u32,
    out: &mut [f64],
) -> Result<usize, MoistureError> {
    if out.len() != rain_in.len() {
        return Err(MoistureError::OutputLength {
            expected: rain_in.len(),
            got: out.len(),
        });
    }
    out.fill(0.0);
    event_excess_each(rain_in, step_h, cn, lambda, opts, month_of_step, |j, e| {
        if let Some(slot) = out.get_mut(j) {
            *slot = e;
        }
    })
}

/// As [`event_excess_into`], handing each rainy interval's excess (in) to
/// `sink(interval, excess)` instead of storing a series (dry intervals have
/// none), so that a long record's excess can go straight into its
/// convolution. Returns the number of events.
///
/// On an error, some intervals may already have been handed over.
pub fn event_excess_each(
    rain_in: &[f64],
    step_h: f64,
    cn: f64,
    lambda: Lambda,
    opts: &EventOptions,
    month_of_step: &dyn Fn(usize) -> u32,
    sink: impl FnMut(usize, f64),
) -> Result<usize, MoistureError> {
    event_excess_each_cn(
        rain_in,
        step_h,
        cn,
        lambda,
        opts,
        month_of_step,
        |_| {},
        sink,
    )
}

/// As [`event_excess_each`], also handing each event's curve number (the
/// AMC II number, or the AMC I or III number the antecedent rule chose) to
/// `on_event` as the event begins, before its first interval's excess.
#[allow(clippy::too_many_arguments)]
pub fn event_excess_each_cn(
    rain_in: &[f64],
    step_h: f64,
    cn: f64,
    lambda: Lambda,
    opts: &EventOptions,
    month_of_step: &dyn Fn(usize) -> u32,
    mut on_event: impl FnMut(f64),
    mut sink: impl FnMut(usize, f64),
) -> Result<usize, MoistureError> {
    let window_steps =
        antecedent_window_steps(step_h).ok_or(MoistureError::InvalidStep { step_h })?;
    if !(cn.is_finite() && cn > 0.0 && cn <= 100.0) {
        return Err(MoistureError::InvalidCurveNumber { cn });
    }
    let ia_ratio = lambda.ratio();
    let s_average_in = lambda.retention_in(cn);
    let mut window = AntecedentWindow::new(window_steps);

    let mut events = 0usize;
    let mut p_in = 0.0;
    let mut q_prev_in = 0.0;
    let mut s_in = s_average_in;
    let mut event_cn = cn;

    let mut splitter = EventSplitter::new(opts.dry_gap_steps);
    for (j, &r) in rain_in.iter().enumerate() {
        let Some(starts_event) = splitter.feed(j, r)? else {
            continue;
        };
        if let Some(rule) = &opts.antecedent {
            window.forget_before(j);
            if starts_event {
                let month = month_of_step(j);
                let growing = rule
                    .is_growing(month)
                    .ok_or(MoistureError::InvalidMonth { index: j, month })?;
                let class = rule.classify(window.depth_in(), growing);
                event_cn = cn_for_class(cn, class);
                s_in = lambda.retention_in(event_cn);
            }
            window.push(j, r);
        }
        if starts_event {
            on_event(event_cn);
            events += 1;
            p_in = 0.0;
            q_prev_in = 0.0;
        }
        p_in += r;
        let q_in = runoff_depth_in(p_in, s_in, ia_ratio);
        // Q(P + r) - Q(P) lies in [0, r]; the clamp keeps rounding from leaving it.
        sink(j, (q_in - q_prev_in).max(0.0).min(r));
        q_prev_in = q_in;
    }
    Ok(events)
}

/// Splits a rain series into events, one interval at a time.
pub(crate) struct EventSplitter {
    dry_gap_steps: usize,
    /// Dry intervals since the last rainy one; the record start counts as a long dry spell.
    dry_run: usize,
}

impl EventSplitter {
    pub(crate) fn new(dry_gap_steps: usize) -> Self {
        Self {
            dry_gap_steps,
            dry_run: usize::MAX,
        }
    }

    /// Takes interval `index` with rain `r` (in): `None` when it is dry,
    /// `Some(true)` when it begins an event, `Some(false)` when it continues
    /// one; an error for a negative, infinite or NaN depth.
    #[inline]
    pub(crate) fn feed(&mut self, index: usize, r: f64) -> Result<Option<bool>, MoistureError> {
        if r == 0.0 {
            self.dry_run = self.dry_run.saturating_add(1);
            return Ok(None);
        }
        if !(r.is_finite() && r > 0.0) {
            return Err(MoistureError::InvalidRain { index, value: r });
        }
        let starts = self.dry_run >= self.dry_gap_steps;
        self.dry_run = 0;
        Ok(Some(starts))
    }
}

/// Running sum of the rain of the last `len` intervals, kept over rainy
/// intervals only, so dry stretches cost nothing. Compensated (TwoSum)
/// summation keeps the add-and-remove sum from drifting; it is reset to an
/// exact zero whenever the window empties.
struct AntecedentWindow {
    len: usize,
    entries: VecDeque<(usize, f64)>,
    sum: f64,
    compensation: f64,
}

impl AntecedentWindow {
    fn new(len: usize) -> Self {
        Self {
            len,
            entries: VecDeque::new(),
            sum: 0.0,
            compensation: 0.0,
        }
    }

    /// Drops every interval before `index - len`, leaving the window of the
    /// `len` intervals before `index`.
    fn forget_before(&mut self, index: usize) {
        while let Some(&(i, r)) = self.entries.front() {
            if i.saturating_add(self.len) >= index {
                break;
            }
            self.entries.pop_front();
            self.add(-r);
        }
        if self.entries.is_empty() {
            self.sum = 0.0;
            self.compensation = 0.0;
        }
    }

    fn push(&mut self, index: usize, rain_in: f64) {
        self.entries.push_back((index, rain_in));
        self.add(rain_in);
    }

    /// Adds `x` with the error-free transformation TwoSum (Knuth), keeping
    /// the rounding error of every addition in `compensation`.
    fn add(&mut self, x: f64) {
        let t = self.sum + x;
        let x_part = t - self.sum;
        let error = (self.sum - (t - x_part)) + (x - x_part);
        self.sum = t;
        self.compensation += error;
    }

    /// Rain depth (in) in the window.
    fn depth_in(&self) -> f64 {
        (self.sum + self.compensation).max(0.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::methods::runoff::{excess_per_step_in, retention_in};
    use proptest::prelude::*;

    fn always_july(_: usize) -> u32 {
        7
    }

    fn always_january(_: usize) -> u32 {
        1
    }

    fn plain(dry_gap_steps: usize) -> EventOptions {
        EventOptions {
            dry_gap_steps,
            antecedent: None,
        }
    }

    fn with_amc(dry_gap_steps: usize) -> EventOptions {
        EventOptions {
            dry_gap_steps,
            antecedent: Some(AntecedentRule::default()),
        }
    }

    fn total(v: &[f64]) -> f64 {
        v.iter().sum()
    }

    fn q(p: f64, cn: f64) -> f64 {
        runoff_depth_in(p, retention_in(cn), 0.2)
    }

    // --- AMC conversion formulas -------------------------------------------

    #[test]
    fn cn_80_converts_to_62_7_dry_and_90_2_wet_by_the_chow_formulas() {
        // Chow, Maidment & Mays (1988) formulas via Harper & Baker (2007) (transcribed):
        // CN(I) = 4.2*80/(10 - 0.058*80) = 62.687; CN(III) = 23*80/(10 + 0.13*80) = 90.196
        // (the cases of `validation::cases`, the list `runnel validate` reports).
        crate::validation::assert_group("chow-amc");
    }

    #[test]
    fn both_conversions_keep_0_and_100_fixed() {
        // Chow, Maidment & Mays (1988) formulas via Harper & Baker (2007) (transcribed).
        for f in [cn_dry, cn_wet] {
            assert_eq!(f(0.0), 0.0);
            assert!((f(100.0) - 100.0).abs() < 1e-12);
        }
    }

    #[test]
    fn dry_formula_agrees_with_the_hb07_table_4_21_dry_column_to_about_two() {
        // Harper & Baker (2007) Table 4-21 after McCuen (1982) (transcribed), CN II -> CN I;
        // the Chow formula is a different published relation and agrees to about +-2
        // (the 19 rows are the shared published cases).
        crate::validation::assert_group("hb07-table-4-21");
    }

    #[test]
    fn wet_formula_falls_well_below_the_hb07_table_at_high_curve_numbers() {
        // Harper & Baker (2007) Table 4-21 (transcribed): CN III 94 at CN II 80, 98 at 90.
        // The Chow formula gives 90.2 and 95.4: the two published relations disagree here.
        assert!(94.0 - cn_wet(80.0) > 3.5);
        assert!(98.0 - cn_wet(90.0) > 2.5);
    }

    // --- 5-day thresholds ---------------------------------------------------

    #[test]
    fn dormant_season_thresholds_are_half_an_inch_and_1_1_inches() {
        // Harper & Baker (2007) Table 4-20 (transcribed): AMC I < 0.5, II 0.5-1.1, III > 1.1 in.
        // (the thresholds are `validation::cases::HB07_TABLE_4_20`, which `runnel validate` reports)
        crate::validation::assert_group("hb07-table-4-20");
        assert_eq!(classify_antecedent(0.0, false), MoistureClass::Dry);
        assert_eq!(classify_antecedent(0.49, false), MoistureClass::Dry);
        assert_eq!(classify_antecedent(0.5, false), MoistureClass::Average);
        assert_eq!(classify_antecedent(1.1, false), MoistureClass::Average);
        assert_eq!(classify_antecedent(1.11, false), MoistureClass::Wet);
    }

    #[test]
    fn growing_season_thresholds_are_1_4_and_2_1_inches() {
        // Harper & Baker (2007) Table 4-20 (transcribed): AMC I < 1.4, II 1.4-2.1, III > 2.1 in.
        // (the thresholds are `validation::cases::HB07_TABLE_4_20`, which `runnel validate` reports)
        crate::validation::assert_group("hb07-table-4-20");
        assert_eq!(classify_antecedent(1.39, true), MoistureClass::Dry);
        assert_eq!(classify_antecedent(1.4, true), MoistureClass::Average);
        assert_eq!(classify_antecedent(2.1, true), MoistureClass::Average);
        assert_eq!(classify_antecedent(2.11, true), MoistureClass::Wet);
    }

    #[test]
    fn a_depth_that_meets_a_threshold_but_for_rounding_counts_as_on_it() {
        // Harper & Baker (2007) Table 4-20 (transcribed): both ends of the AMC II range included.
        assert_eq!(
            classify_antecedent(0.5 - 1e-12, false),
            MoistureClass::Average
        );
        assert_eq!(
            classify_antecedent(2.1 + 1e-12, true),
            MoistureClass::Average
        );
        assert_eq!(classify_antecedent(0.5 - 1e-6, false), MoistureClass::Dry);
        assert_eq!(classify_antecedent(2.1 + 1e-6, true), MoistureClass::Wet);
    }

    #[test]
    fn fourteen_tenths_of_an_inch_over_five_days_is_average_in_the_growing_season() {
        // Harper & Baker (2007) Table 4-20 (transcribed): 1.4 in is AMC II in the growing season,
        // also after older rain has been added to and taken out of the running window.
        let cn = 80.0;
        let mut rain = vec![0.0; 141];
        rain[0] = 0.7; // leaves the 120-interval window before interval 140
        rain[100..114].fill(0.1);
        rain[140] = 2.0;
        let ex = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &with_amc(6), &always_july)
            .unwrap_or_default();
        assert!((ex[140] - q(2.0, cn)).abs() < 1e-12, "{}", ex[140]);
    }

    #[test]
    fn default_growing_season_runs_april_to_september() {
        // common practice, no published source (Harper & Baker (2007) use March-September).
        let rule = AntecedentRule::default();
        let growing: Vec<u32> = (1..=12)
            .filter(|&m| rule.is_growing(m) == Some(true))
            .collect();
        assert_eq!(growing, vec![4, 5, 6, 7, 8, 9]);
        assert_eq!(rule.is_growing(0), None);
        assert_eq!(rule.is_growing(13), None);
    }

    #[test]
    fn five_days_is_120_intervals_of_an_hour_or_480_of_15_minutes() {
        // 5 days = 120 h (definition of the 5-day antecedent rain).
        assert_eq!(antecedent_window_steps(1.0), Some(120));
        assert_eq!(antecedent_window_steps(0.25), Some(480));
        assert_eq!(antecedent_window_steps(24.0), Some(5));
        assert_eq!(antecedent_window_steps(500.0), Some(1));
        assert_eq!(antecedent_window_steps(0.0), None);
        assert_eq!(antecedent_window_steps(f64::NAN), None);
    }

    // --- event splitting ----------------------------------------------------

    #[test]
    fn a_six_hour_gap_is_6_hourly_24_quarter_hour_or_52_seven_minute_intervals() {
        // Arithmetic of the dry-gap definition (no published source needed).
        assert_eq!(dry_gap_steps_for(6.0, 1.0), Some(6));
        assert_eq!(dry_gap_steps_for(6.0, 0.25), Some(24));
        assert_eq!(dry_gap_steps_for(6.0, 0.1), Some(60));
        assert_eq!(dry_gap_steps_for(2.1, 0.3), Some(7));
        assert_eq!(dry_gap_steps_for(6.0, 7.0 / 60.0), Some(52));
        assert_eq!(dry_gap_steps_for(0.0, 1.0), Some(0));
        assert_eq!(dry_gap_steps_for(-1.0, 1.0), None);
        assert_eq!(dry_gap_steps_for(6.0, 0.0), None);
    }

    #[test]
    fn storms_farther_apart_than_the_dry_gap_run_as_two_events() {
        // TR-55 (1986) eq. 2-1 applied to each event separately.
        let mut rain = vec![0.0; 40];
        rain[2..6].copy_from_slice(&[0.4, 1.2, 0.9, 0.3]); // 2.8 in
        rain[20..23].copy_from_slice(&[0.5, 1.5, 0.7]); // 2.7 in, 14 dry intervals later
        let ex = event_excess_in(&rain, 1.0, 78.0, Lambda::Standard, &plain(6), &always_july)
            .unwrap_or_default();
        let expected = q(2.8, 78.0) + q(2.7, 78.0);
        assert!(
            (total(&ex) - expected).abs() < 1e-12,
            "{} vs {expected}",
            total(&ex)
        );
        assert_eq!(event_starts(&rain, 6), Ok(vec![2, 20]));
    }

    #[test]
    fn storms_closer_than_the_dry_gap_act_as_one_event() {
        // TR-55 (1986) eq. 2-1 applied to the combined depth.
        let mut rain = vec![0.0; 30];
        rain[2..6].copy_from_slice(&[0.4, 1.2, 0.9, 0.3]);
        rain[10..13].copy_from_slice(&[0.5, 1.5, 0.7]); // 4 dry intervals between
        let ex = event_excess_in(&rain, 1.0, 78.0, Lambda::Standard, &plain(6), &always_july)
            .unwrap_or_default();
        assert!((total(&ex) - q(5.5, 78.0)).abs() < 1e-12);
        assert_eq!(event_starts(&rain, 6), Ok(vec![2]));
    }

    #[test]
    fn exactly_dry_gap_zero_intervals_start_a_new_event_and_one_fewer_does_not() {
        // Definition of event mode (common practice, no published source).
        let gap = 6;
        let mut apart = vec![1.0];
        apart.extend(std::iter::repeat_n(0.0, gap));
        apart.push(1.0);
        assert_eq!(event_starts(&apart, gap), Ok(vec![0, gap + 1]));
        let mut close = vec![1.0];
        close.extend(std::iter::repeat_n(0.0, gap - 1));
        close.push(1.0);
        assert_eq!(event_starts(&close, gap), Ok(vec![0]));
    }

    #[test]
    fn with_no_dry_gap_every_rainy_interval_is_an_event() {
        // Definition of event mode with dry_gap_steps = 0 (common practice, no published source).
        assert_eq!(event_starts(&[0.5, 0.5, 0.0, 0.5], 0), Ok(vec![0, 1, 3]));
    }

    #[test]
    fn a_padded_storm_gives_exactly_the_excess_of_the_storm_alone() {
        // TR-55 (1986) eq. 2-1 on cumulative rain, as in runoff::excess_per_step_in.
        let storm = [0.05, 0.1, 0.0, 0.3, 1.1, 0.6, 0.0, 0.0, 0.2, 0.05];
        let lead = 37;
        let mut rain = vec![0.0; lead];
        rain.extend_from_slice(&storm);
        rain.extend(std::iter::repeat_n(0.0, 50));
        for lambda in [Lambda::Standard, Lambda::Reduced] {
            let ex = event_excess_in(&rain, 0.25, 81.5, lambda, &plain(8), &always_july)
                .unwrap_or_default();
            let alone = excess_per_step_in(&storm, lambda.retention_in(81.5), lambda.ratio());
            assert_eq!(&ex[lead..lead + storm.len()], alone.as_slice());
            assert!(
                ex[..lead]
                    .iter()
                    .chain(&ex[lead + storm.len()..])
                    .all(|&e| e == 0.0)
            );
        }
    }

    #[test]
    fn reduced_lambda_uses_the_converted_retention_and_a_0_05_ratio() {
        // Hawkins et al. (2002) conversion (from memory, corroborated) in TR-55 (1986) eq. 2-1.
        let rain = [0.0, 0.8, 1.4, 0.6, 0.0];
        let ex = event_excess_in(&rain, 1.0, 70.0, Lambda::Reduced, &plain(3), &always_july)
            .unwrap_or_default();
        let expected = runoff_depth_in(2.8, Lambda::Reduced.retention_in(70.0), 0.05);
        assert!((total(&ex) - expected).abs() < 1e-12);
    }

    #[test]
    fn a_curve_number_of_100_turns_all_rain_into_excess() {
        // TR-55 (1986) eq. 2-1 and 2-4: S = 0 and Ia = 0, so Q = P.
        let rain = [0.3, 0.0, 0.7, 0.0, 0.0, 0.0, 1.0];
        let ex = event_excess_in(&rain, 1.0, 100.0, Lambda::Standard, &plain(2), &always_july)
            .unwrap_or_default();
        for (e, r) in ex.iter().zip(rain) {
            assert!((e - r).abs() < 1e-12);
        }
    }

    // --- antecedent moisture ------------------------------------------------

    #[test]
    fn an_event_after_a_wet_five_days_uses_the_wet_curve_number() {
        // Harper & Baker (2007) Table 4-20 (transcribed): growing season, 3.0 in > 2.1 in -> AMC III;
        // Chow et al. (1988) CN(III) formula (transcribed); TR-55 (1986) eq. 2-1 per event.
        let cn = 75.0;
        let mut rain = vec![0.0; 200];
        rain[0..3].copy_from_slice(&[1.0, 1.5, 0.5]); // 3.0 in, no rain before: AMC I
        rain[50..52].copy_from_slice(&[1.2, 0.8]); // 2.0 in, 47 h later
        let ex = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &with_amc(6), &always_july)
            .unwrap_or_default();
        let first = q(3.0, cn_dry(cn));
        let second = q(2.0, cn_wet(cn));
        assert!((total(&ex[..50]) - first).abs() < 1e-12);
        assert!((total(&ex[50..]) - second).abs() < 1e-12);
    }

    #[test]
    fn rain_more_than_five_days_back_no_longer_counts() {
        // 5-day window of Harper & Baker (2007) Table 4-20 (transcribed): with 1-h steps the window
        // is the 120 intervals before the event; rain 121 intervals back falls outside it.
        let cn = 75.0;
        let start = 130;
        for (back, class) in [(120, MoistureClass::Wet), (121, MoistureClass::Dry)] {
            let mut rain = vec![0.0; 150];
            rain[start - back] = 2.5; // > 2.1 in, growing season
            rain[start] = 2.0;
            let ex = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &with_amc(6), &always_july)
                .unwrap_or_default();
            let expected = q(2.0, cn_for_class(cn, class));
            assert!(
                (ex[start] - expected).abs() < 1e-12,
                "back {back}: {}",
                ex[start]
            );
        }
    }

    #[test]
    fn the_month_of_the_first_interval_chooses_the_season() {
        // Harper & Baker (2007) Table 4-20 (transcribed): 0.8 in over 5 days is AMC II in the
        // dormant season and AMC I in the growing season.
        let cn = 80.0;
        let mut rain = vec![0.0; 60];
        rain[5] = 0.8;
        rain[40] = 2.5;
        let winter = event_excess_in(
            &rain,
            1.0,
            cn,
            Lambda::Standard,
            &with_amc(6),
            &always_january,
        )
        .unwrap_or_default();
        let summer = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &with_amc(6), &always_july)
            .unwrap_or_default();
        assert!((winter[40] - q(2.5, cn)).abs() < 1e-12);
        assert!((summer[40] - q(2.5, cn_dry(cn))).abs() < 1e-12);
    }

    #[test]
    fn the_window_counts_rain_of_the_current_event_only_before_it_began() {
        // Definition of the 5-day antecedent rain (rain before the event's first interval).
        let cn = 80.0;
        let rain = [3.0, 3.0, 3.0];
        let ex = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &with_amc(2), &always_july)
            .unwrap_or_default();
        // One event, no earlier rain: AMC I for all of it.
        assert!((total(&ex) - q(9.0, cn_dry(cn))).abs() < 1e-12);
    }

    #[test]
    fn a_month_outside_1_to_12_is_an_error() {
        let rain = [0.0, 1.0];
        let bad = |_: usize| 13;
        let got = event_excess_in(&rain, 1.0, 80.0, Lambda::Standard, &with_amc(2), &bad);
        assert_eq!(
            got,
            Err(MoistureError::InvalidMonth {
                index: 1,
                month: 13
            })
        );
    }

    // --- inputs, buffers, errors --------------------------------------------

    #[test]
    fn bad_rain_step_or_curve_number_are_errors_that_name_the_problem() {
        let opts = plain(2);
        let e = event_excess_in(
            &[0.0, -0.1],
            1.0,
            80.0,
            Lambda::Standard,
            &opts,
            &always_july,
        );
        assert_eq!(
            e,
            Err(MoistureError::InvalidRain {
                index: 1,
                value: -0.1
            })
        );
        let e = event_excess_in(
            &[f64::NAN],
            1.0,
            80.0,
            Lambda::Standard,
            &opts,
            &always_july,
        );
        assert!(matches!(
            e,
            Err(MoistureError::InvalidRain { index: 0, .. })
        ));
        let e = event_excess_in(
            &[f64::INFINITY],
            1.0,
            80.0,
            Lambda::Standard,
            &opts,
            &always_july,
        );
        assert!(matches!(
            e,
            Err(MoistureError::InvalidRain { index: 0, .. })
        ));
        for step_h in [0.0, -1.0, f64::INFINITY] {
            let e = event_excess_in(&[1.0], step_h, 80.0, Lambda::Standard, &opts, &always_july);
            assert!(matches!(e, Err(MoistureError::InvalidStep { .. })));
        }
        for cn in [0.0, 100.5, f64::NAN] {
            let e = event_excess_in(&[1.0], 1.0, cn, Lambda::Standard, &opts, &always_july);
            assert!(matches!(e, Err(MoistureError::InvalidCurveNumber { .. })));
        }
        let msg = MoistureError::InvalidRain {
            index: 4,
            value: -1.0,
        }
        .to_string();
        assert!(
            msg.contains("interval 4") && msg.contains("zero or more"),
            "{msg}"
        );
    }

    #[test]
    fn the_buffer_version_matches_and_counts_events() {
        // TR-55 (1986) eq. 2-1 per event, two events.
        let rain = [0.0, 1.2, 0.8, 0.0, 0.0, 0.0, 0.0, 2.0, 0.0];
        let opts = plain(3);
        let expected = event_excess_in(&rain, 1.0, 85.0, Lambda::Standard, &opts, &always_july)
            .unwrap_or_default();
        let mut out = vec![9.0; rain.len()];
        let n = event_excess_into(
            &rain,
            1.0,
            85.0,
            Lambda::Standard,
            &opts,
            &always_july,
            &mut out,
        );
        assert_eq!(n, Ok(2));
        assert_eq!(out, expected);
        let mut short = vec![0.0; 3];
        let e = event_excess_into(
            &rain,
            1.0,
            85.0,
            Lambda::Standard,
            &opts,
            &always_july,
            &mut short,
        );
        assert_eq!(
            e,
            Err(MoistureError::OutputLength {
                expected: 9,
                got: 3
            })
        );
    }

    #[test]
    fn an_empty_or_dry_record_has_no_events_and_no_excess() {
        let ex = event_excess_in(&[], 1.0, 80.0, Lambda::Standard, &with_amc(6), &always_july);
        assert_eq!(ex, Ok(vec![]));
        assert_eq!(event_starts(&[], 6), Ok(vec![]));
        let dry = vec![0.0; 100];
        let ex = event_excess_in(
            &dry,
            1.0,
            80.0,
            Lambda::Standard,
            &with_amc(6),
            &always_july,
        );
        assert_eq!(ex, Ok(dry.clone()));
        assert_eq!(event_starts(&dry, 6), Ok(vec![]));
    }

    // --- properties ---------------------------------------------------------

    fn rain_series() -> impl Strategy<Value = Vec<f64>> {
        // Mostly dry, with showers up to 3 in per interval.
        prop::collection::vec(
            prop_oneof![4 => Just(0.0), 1 => 0.0..3.0f64, 1 => 0.0..0.05f64],
            0..400,
        )
    }

    fn lambda_strategy() -> impl Strategy<Value = Lambda> {
        prop_oneof![Just(Lambda::Standard), Just(Lambda::Reduced)]
    }

    proptest! {
        #[test]
        fn excess_never_exceeds_rain_per_interval_or_in_total(
            rain in rain_series(),
            cn in 1.0..=100.0f64,
            gap in 0usize..20,
            amc in any::<bool>(),
            lambda in lambda_strategy(),
            step_h in prop_oneof![Just(0.25), Just(1.0), Just(24.0)],
        ) {
            // Mass balance of TR-55 (1986) eq. 2-1: 0 <= Q(P + r) - Q(P) <= r.
            let opts = if amc { with_amc(gap) } else { plain(gap) };
            let ex = event_excess_in(&rain, step_h, cn, lambda, &opts, &|k| (k % 12) as u32 + 1);
            prop_assert!(ex.is_ok());
            let ex = ex.unwrap_or_default();
            prop_assert_eq!(ex.len(), rain.len());
            for (e, r) in ex.iter().zip(&rain) {
                prop_assert!(*e >= 0.0 && e <= r, "excess {} rain {}", e, r);
            }
            prop_assert!(total(&ex) <= total(&rain));
        }

        #[test]
        fn each_event_yields_the_runoff_of_its_own_total(
            rain in rain_series(),
            cn in 30.0..=99.0f64,
            gap in 1usize..12,
        ) {
            // TR-55 (1986) eq. 2-1 applied to each event's total rain.
            let ex = event_excess_in(&rain, 1.0, cn, Lambda::Standard, &plain(gap), &always_july)
                .unwrap_or_default();
            let starts = event_starts(&rain, gap).unwrap_or_default();
            let mut bounds = starts.clone();
            bounds.push(rain.len());
            for w in bounds.windows(2) {
                let (a, b) = (w[0], w[1]);
                let p: f64 = rain[a..b].iter().sum();
                let got = total(&ex[a..b]);
                prop_assert!((got - q(p, cn)).abs() < 1e-9, "event at {}: {} vs {}", a, got, q(p, cn));
            }
            let before: f64 = total(&ex[..starts.first().copied().unwrap_or(rain.len())]);
            prop_assert_eq!(before, 0.0);
        }

        #[test]
        fn any_nan_free_input_returns_without_panicking(
            rain in prop::collection::vec(
                prop_oneof![Just(0.0), prop::num::f64::ANY.prop_filter("no NaN", |x| !x.is_nan())],
                0..200,
            ),
            cn in prop::num::f64::ANY.prop_filter("no NaN", |x| !x.is_nan()),
            step_h in prop::num::f64::ANY.prop_filter("no NaN", |x| !x.is_nan()),
            gap in any::<usize>(),
            month in any::<u32>(),
        ) {
            // Robustness: every outcome is a value or a typed error.
            let opts = with_amc(gap);
            let ex = event_excess_in(&rain, step_h, cn, Lambda::Standard, &opts, &|_| month);
            if let Ok(ex) = ex {
                prop_assert_eq!(ex.len(), rain.len());
            }
            let _ = event_starts(&rain, gap);
        }
    }
}
