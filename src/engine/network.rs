//! The drainage network: one storm through every element of each
//! condition, upstream first, into the points.
//!
//! A catchment turns rain into excess (curve number) and excess into a
//! hydrograph (unit hydrograph); an inflow gives its hydrograph directly;
//! a pond routes the sum of what reaches it. Each element's outflow, shifted
//! by its `lag`, is added to what reaches its `to`. Every condition of a
//! storm shares one time base: values at `t = k * step`, k = 0..=n.

use crate::engine::topology::Topology;
use crate::engine::walk::{ElementSim, walk};
use crate::methods::pond::{self, PondSummary, PondTable, Routed};
use crate::methods::unit_hydrograph;
use crate::model::{ElementKind, Pond, Study};

/// Hours of simulation allowed after the last rain or inflow (contract: 7 days).
pub const TAIL_H: f64 = 7.0 * 24.0;

/// Largest number of steps one storm may run (the scenario's limit).
pub const MAX_RUN_STEPS: usize = crate::input::scenario::MAX_STEPS;

/// Why a storm could not be simulated. Each is a problem with the input
/// (exit code 2): a value the methods cannot carry to a finite answer.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SimulationError {
    /// A pond's stage-storage-discharge table cannot be built for what flows into it.
    #[error(
        "pond \"{pond}\" ({condition}, {run}): it cannot be routed: {source}; check that the stage-area table gives areas in ft2 or m2 (not acres or hectares) and that the pond can hold the water that reaches it"
    )]
    PondTable {
        /// Pond.
        pond: String,
        /// Storm or record.
        run: String,
        /// Condition.
        condition: String,
        /// Why the table failed.
        source: pond::PondError,
    },
    /// A result is NaN or infinite.
    #[error(
        "{kind} \"{element}\" ({condition}, {run}): its {what} is not a finite number ({value}); some input is too large to compute with - check the depths, areas, flows and times that reach it"
    )]
    NotFinite {
        /// catchment, pond, inflow or point.
        kind: &'static str,
        /// Element or point.
        element: String,
        /// Storm or record.
        run: String,
        /// Condition.
        condition: String,
        /// Which result (peak flow, volume, stage, storage).
        what: &'static str,
        /// The value found.
        value: f64,
    },
    /// A channel has no split with non-negative coefficients at the step
    /// (refused at load; kept for a study built in code).
    #[error(
        "channel \"{channel}\": K = {k_h} h and X = {x} cannot be routed at the step of {step_min} min with non-negative Muskingum coefficients; use a coarser step or X below 0.5"
    )]
    ChannelSplit {
        /// Channel.
        channel: String,
        /// K, h.
        k_h: f64,
        /// X.
        x: f64,
        /// The step, min.
        step_min: f64,
    },
    /// The run would be longer than runnel allows.
    #[error(
        "{run}: with its rain or inflow, the lags along the network and the {tail:.0}-h tail the run would last {hours:.3e} h, {steps:.3e} steps at the step of {step_min} min, more than runnel's limit of {limit}; shorten the `lag` or inflow times, or use a coarser `step`"
    )]
    TooLong {
        /// Storm.
        run: String,
        /// Hours the run would last.
        hours: f64,
        /// Steps it would need.
        steps: f64,
        /// The step, min.
        step_min: f64,
        /// The tail after the last rain or inflow, h.
        tail: f64,
        /// [`MAX_RUN_STEPS`].
        limit: usize,
    },
}

/// Results of one storm for the conditions simulated.
#[derive(Debug, Clone)]
pub struct StormResult {
    /// Storm index.
    pub storm: usize,
    /// Step, h.
    pub step_h: f64,
    /// Rain per step, in (`rain_in[j]` falls in `[j, j+1) * step`).
    pub rain_in: Vec<f64>,
    /// One result per simulated condition.
    pub conditions: Vec<ConditionResult>,
}

impl StormResult {
    /// Number of values in each series (steps + 1).
    pub fn len(&self) -> usize {
        self.rain_in.len() + 1
    }

    /// Whether the run has no steps.
    pub fn is_empty(&self) -> bool {
        self.rain_in.is_empty()
    }

    /// The result of a condition, if simulated.
    pub fn condition(&self, c: usize) -> Option<&ConditionResult> {
        self.conditions.iter().find(|r| r.condition == c)
    }
}

/// One condition in one storm.
#[derive(Debug, Clone)]
pub struct ConditionResult {
    /// Condition index.
    pub condition: usize,
    /// Per element index; `None` when the element is not in this condition.
    pub elements: Vec<Option<ElementResult>>,
    /// Flow reaching each point, cfs.
    pub points: Vec<Vec<f64>>,
}

/// What one element produced.
#[derive(Debug, Clone)]
pub struct ElementResult {
    /// Flow leaving the element (before its lag), cfs.
    pub outflow_cfs: Vec<f64>,
    /// Catchment runoff details.
    pub runoff: Option<RunoffResult>,
    /// Pond routing details.
    pub pond: Option<PondResult>,
    /// Channel routing details.
    pub channel: Option<ChannelResult>,
}

/// A channel's routed series and how it was split.
#[derive(Debug, Clone)]
pub struct ChannelResult {
    /// Inflow, cfs.
    pub inflow_cfs: Vec<f64>,
    /// Water in the reach at each step, ft3.
    pub storage_ft3: Vec<f64>,
    /// Sub-reaches and sub-steps ([`crate::methods::channel::plan`]).
    pub plan: crate::methods::channel::Plan,
}

/// A channel's peaks, their times and volumes in one storm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ChannelSummary {
    /// Peak inflow, cfs.
    pub peak_in_cfs: f64,
    /// Time of the peak inflow, h.
    pub peak_in_h: f64,
    /// Peak outflow, cfs.
    pub peak_out_cfs: f64,
    /// Time of the peak outflow, h.
    pub peak_out_h: f64,
    /// Volume in, ft3 (trapezoidal in time).
    pub volume_in_ft3: f64,
    /// Volume out, ft3.
    pub volume_out_ft3: f64,
    /// Water still in the reach at the run's end, ft3.
    pub stored_end_ft3: f64,
}

impl ChannelSummary {
    /// `(volume in - volume out - water left in the reach) / volume in`
    /// (0 without inflow): the Muskingum recursion balances exactly, so
    /// this is rounding only.
    pub fn mass_balance_error(&self) -> f64 {
        if self.volume_in_ft3 > 0.0 {
            (self.volume_in_ft3 - self.volume_out_ft3 - self.stored_end_ft3) / self.volume_in_ft3
        } else {
            0.0
        }
    }
}

impl ChannelResult {
    /// Peaks, times and volumes of the channel, with its `outflow_cfs`.
    pub fn summary(&self, outflow_cfs: &[f64], step_h: f64) -> ChannelSummary {
        let (pi, ii) = peak(&self.inflow_cfs);
        let (po, io) = peak(outflow_cfs);
        let start = self.storage_ft3.first().copied().unwrap_or(0.0);
        ChannelSummary {
            peak_in_cfs: pi,
            peak_in_h: ii as f64 * step_h,
            peak_out_cfs: po,
            peak_out_h: io as f64 * step_h,
            volume_in_ft3: volume_ft3(&self.inflow_cfs, step_h),
            volume_out_ft3: volume_ft3(outflow_cfs, step_h),
            stored_end_ft3: self.storage_ft3.last().copied().unwrap_or(0.0) - start,
        }
    }
}

/// A catchment's event totals.
#[derive(Debug, Clone, Copy)]
pub struct RunoffResult {
    /// Rain, in.
    pub rain_in: f64,
    /// Runoff (excess), in.
    pub runoff_in: f64,
}

/// A pond's routed series and summary.
#[derive(Debug, Clone)]
pub struct PondResult {
    /// Inflow, cfs.
    pub inflow_cfs: Vec<f64>,
    /// Stage, ft.
    pub stage_ft: Vec<f64>,
    /// Storage above the lowest stage, ft3.
    pub storage_ft3: Vec<f64>,
    /// Infiltration, cfs (empty for a pond that does not infiltrate).
    pub infiltration_cfs: Vec<f64>,
    /// Peaks, volumes, freeboard, drain time.
    pub summary: PondSummary,
    /// Start stage, ft.
    pub start_ft: f64,
}

/// Peak flow and its index, `(value, index)`: [`crate::methods::stats::max_first`]
/// (the one peak-of-a-series helper), with `(0.0, 0)` for a series that never
/// rises above zero.
pub fn peak(values: &[f64]) -> (f64, usize) {
    floor_peak(crate::methods::stats::max_first(values))
}

/// A series' highest value and its index as [`peak`] reports it: `(0.0, 0)`
/// when there is none or it is not above zero.
pub fn floor_peak(max: Option<(f64, usize)>) -> (f64, usize) {
    match max {
        Some((v, i)) if v > 0.0 => (v, i),
        _ => (0.0, 0),
    }
}

/// Volume of a hydrograph (ft3), trapezoidal in time.
pub fn volume_ft3(flow_cfs: &[f64], step_h: f64) -> f64 {
    volume_from_sum_ft3(crate::methods::stats::sum(flow_cfs), flow_cfs, step_h)
}

/// [`volume_ft3`] from the already known sum of the same `flow_cfs`.
pub fn volume_from_sum_ft3(sum_cfs: f64, flow_cfs: &[f64], step_h: f64) -> f64 {
    match flow_cfs {
        [first, .., last] => (sum_cfs - 0.5 * (first + last)) * (step_h * 3600.0),
        _ => 0.0,
    }
}

/// The starting stage of a pond: `start`, else the lowest outlet, else the bottom.
pub fn start_stage_ft(p: &Pond) -> f64 {
    let bottom = p.storage.bottom_ft();
    p.start_ft
        .unwrap_or_else(|| p.works().lowest_ft().map_or(bottom, |l| l.max(bottom)))
}

/// Adds `src` shifted later by `lag_h` into `dst` (linear interpolation
/// for shifts that are not whole steps).
pub fn add_lagged(dst: &mut [f64], src: &[f64], lag_h: f64, step_h: f64) {
    let shift = lag_h / step_h;
    let whole = shift.floor() as usize;
    let frac = shift - whole as f64;
    if frac == 0.0 {
        if let Some(d) = dst.get_mut(whole..) {
            for (d, s) in d.iter_mut().zip(src) {
                *d += s;
            }
        }
        return;
    }
    for (k, d) in dst.iter_mut().enumerate() {
        if k < whole {
            continue;
        }
        let i = k - whole;
        let a = src.get(i).copied().unwrap_or(0.0);
        let b = if i > 0 {
            src.get(i - 1).copied().unwrap_or(0.0)
        } else {
            0.0
        };
        *d += a * (1.0 - frac) + b * frac;
    }
}

/// Unit-hydrograph ordinates of a catchment at `step_h` (cfs per in).
pub fn catchment_uh(c: &crate::model::Catchment, step_h: f64) -> Vec<f64> {
    let tp = unit_hydrograph::time_to_peak_h(step_h, c.uh_lag_h);
    unit_hydrograph::ordinates_cfs_per_in(c.shape, c.area_ac, tp, step_h)
}

/// Number of steps simulated before trimming for a storm: the last rain or
/// inflow, plus the longest sum of lags from any element to its point (so
/// no lagged runoff falls off the end), plus [`TAIL_H`].
///
/// # Errors
/// [`SimulationError::TooLong`] past [`MAX_RUN_STEPS`] steps.
pub fn horizon_steps(study: &Study, storm: usize) -> Result<usize, SimulationError> {
    horizon_after_lags(
        study,
        storm,
        crate::engine::topology::max_path_lag_h(&study.elements),
    )
}

/// [`horizon_steps`] on the study's [`Topology`].
///
/// # Errors
/// [`SimulationError::TooLong`] past [`MAX_RUN_STEPS`] steps.
pub fn horizon_steps_on(
    study: &Study,
    topology: &Topology,
    storm: usize,
) -> Result<usize, SimulationError> {
    horizon_after_lags(study, storm, topology.max_path_lag_h())
}

/// [`horizon_steps`] with the longest sum of lags down the network, h.
fn horizon_after_lags(study: &Study, storm: usize, max_lag: f64) -> Result<usize, SimulationError> {
    let s = &study.storms[storm];
    let inflow_end = study
        .elements
        .iter()
        .filter_map(|e| match &e.kind {
            ElementKind::Inflow(i) if i.storm.is_none() || i.storm == Some(storm) => {
                Some(i.end_h())
            }
            _ => None,
        })
        .fold(0.0, f64::max);
    let end = s.rain_end_h().max(inflow_end) + max_lag + TAIL_H;
    let steps = (end / study.step_h).ceil().max(1.0);
    if !(steps.is_finite() && steps <= MAX_RUN_STEPS as f64) {
        return Err(SimulationError::TooLong {
            run: format!("storm \"{}\"", s.name),
            hours: end,
            steps,
            step_min: study.step_h * 60.0,
            tail: TAIL_H,
            limit: MAX_RUN_STEPS,
        });
    }
    Ok(steps as usize)
}

/// Simulates one storm for the given conditions and trims the run to where
/// every flow has fallen below 0.1 % of its peak and every pond has drained.
///
/// # Errors
/// A run longer than [`MAX_RUN_STEPS`], a pond that cannot be routed, or
/// a result that is not a finite number ([`SimulationError`]).
pub fn simulate_storm(
    study: &Study,
    storm: usize,
    conditions: &[usize],
) -> Result<StormResult, SimulationError> {
    simulate_storm_on(study, &Topology::new(study), storm, conditions)
}

/// [`simulate_storm`] on the study's [`Topology`], built once for every storm.
///
/// # Errors
/// As [`simulate_storm`].
pub fn simulate_storm_on(
    study: &Study,
    topology: &Topology,
    storm: usize,
    conditions: &[usize],
) -> Result<StormResult, SimulationError> {
    let step_h = study.step_h;
    let n = horizon_steps_on(study, topology, storm)?;
    let len = n + 1;
    let rain = study.storms[storm].rain_at_step(step_h, n);
    let mut results: Vec<ConditionResult> = conditions
        .iter()
        .map(|&c| simulate_condition(study, topology, storm, c, &rain, len))
        .collect::<Result<_, _>>()?;
    for r in &results {
        check_finite(study, storm, r)?;
    }

    // Trim: last index where any series is at least 0.1 % of its peak.
    let rain_end = rain
        .iter()
        .rposition(|&r| r > 0.0)
        .map(|i| i + 1)
        .unwrap_or(0);
    let mut end = rain_end;
    let tail = |s: &[f64]| -> usize {
        let (p, _) = peak(s);
        if p <= 0.0 {
            return 0;
        }
        s.iter()
            .rposition(|&v| v >= crate::util::tolerances::RUN_TAIL_FRACTION * p)
            .map(|i| i + 1)
            .unwrap_or(0)
    };
    for r in &results {
        for e in r.elements.iter().flatten() {
            end = end.max(tail(&e.outflow_cfs));
            if let Some(p) = &e.pond {
                end = end.max(tail(&p.inflow_cfs));
                let storage = &p.storage_ft3;
                let peak = crate::methods::stats::max_first(storage).unwrap_or(pond::NO_PEAK);
                let drained =
                    pond::drain_index(storage, storage.first().copied().unwrap_or(0.0), peak);
                end = end.max(drained.unwrap_or(len - 1));
            }
            if let Some(ch) = &e.channel {
                // its outflow's tail is above; the water still in the reach
                // is what that recession carries out
                end = end.max(tail(&ch.inflow_cfs));
            }
        }
        for p in &r.points {
            end = end.max(tail(p));
        }
    }
    let keep = (end + 1).min(len).max(2);
    for r in &mut results {
        for e in r.elements.iter_mut().flatten() {
            e.outflow_cfs.truncate(keep);
            if let Some(p) = &mut e.pond {
                p.inflow_cfs.truncate(keep);
                p.stage_ft.truncate(keep);
                p.storage_ft3.truncate(keep);
                p.infiltration_cfs.truncate(keep);
            }
            if let Some(ch) = &mut e.channel {
                ch.inflow_cfs.truncate(keep);
                ch.storage_ft3.truncate(keep);
            }
        }
        for p in &mut r.points {
            p.truncate(keep);
        }
    }
    let mut rain = rain;
    rain.truncate(keep - 1);
    // Pond summaries on the trimmed run (drain time null if not within it).
    for r in &mut results {
        for (i, e) in r.elements.iter_mut().enumerate() {
            let Some(er) = e.as_mut() else { continue };
            let mut e_out = std::mem::take(&mut er.outflow_cfs);
            if let (Some(pr), Some(el)) = (er.pond.as_mut(), study.elements.get(i)) {
                let ElementKind::Pond(p) = &el.kind else {
                    er.outflow_cfs = e_out;
                    continue;
                };
                let routed = Routed {
                    outflow_cfs: std::mem::take(&mut e_out),
                    stage_ft: std::mem::take(&mut pr.stage_ft),
                    storage_ft3: std::mem::take(&mut pr.storage_ft3),
                    infiltration_cfs: std::mem::take(&mut pr.infiltration_cfs),
                };
                pr.summary = pond::summarize_series(
                    &pr.inflow_cfs,
                    &routed,
                    step_h * 3600.0,
                    pr.start_ft,
                    p.top_ft,
                    &p.outlets,
                );
                e_out = routed.outflow_cfs;
                pr.stage_ft = routed.stage_ft;
                pr.storage_ft3 = routed.storage_ft3;
                pr.infiltration_cfs = routed.infiltration_cfs;
            }
            er.outflow_cfs = e_out;
        }
    }
    Ok(StormResult {
        storm,
        step_h,
        rain_in: rain,
        conditions: results,
    })
}

/// The first value of `v` that is NaN or infinite, if any.
fn first_non_finite(v: &[f64]) -> Option<f64> {
    v.iter().copied().find(|x| !x.is_finite())
}

/// Every series of a condition's storm result must be finite: a NaN or an
/// infinity anywhere is an error naming the element, never a result.
fn check_finite(study: &Study, storm: usize, r: &ConditionResult) -> Result<(), SimulationError> {
    let err = |kind, element: &str, what, value| SimulationError::NotFinite {
        kind,
        element: element.to_string(),
        run: format!("storm \"{}\"", study.storms[storm].name),
        condition: study.conditions[r.condition].clone(),
        what,
        value,
    };
    for (i, e) in r.elements.iter().enumerate() {
        let Some(e) = e else { continue };
        let el = &study.elements[i];
        let kind = el.kind_word();
        if let Some(v) = first_non_finite(&e.outflow_cfs) {
            return Err(err(kind, &el.name, "outflow", v));
        }
        if let Some(p) = &e.pond {
            for (what, series) in [
                ("inflow", &p.inflow_cfs),
                ("stage", &p.stage_ft),
                ("storage", &p.storage_ft3),
            ] {
                if let Some(v) = first_non_finite(series) {
                    return Err(err(kind, &el.name, what, v));
                }
            }
        }
        if let Some(ch) = &e.channel {
            for (what, series) in [("inflow", &ch.inflow_cfs), ("storage", &ch.storage_ft3)] {
                if let Some(v) = first_non_finite(series) {
                    return Err(err(kind, &el.name, what, v));
                }
            }
        }
        if let Some(ro) = &e.runoff
            && !(ro.rain_in.is_finite() && ro.runoff_in.is_finite())
        {
            let v = if ro.rain_in.is_finite() {
                ro.runoff_in
            } else {
                ro.rain_in
            };
            return Err(err(kind, &el.name, "rain or runoff depth", v));
        }
        let vol = volume_ft3(&e.outflow_cfs, study.step_h);
        if !vol.is_finite() {
            return Err(err(kind, &el.name, "outflow volume", vol));
        }
    }
    for (pi, q) in r.points.iter().enumerate() {
        if let Some(v) = first_non_finite(q) {
            return Err(err("point", &study.points[pi].name, "flow", v));
        }
        let vol = volume_ft3(q, study.step_h);
        if !vol.is_finite() {
            return Err(err("point", &study.points[pi].name, "volume", vol));
        }
    }
    Ok(())
}

/// One condition of a storm: every element in upstream-first order, each
/// one's outflow lagged into what it drains to ([`walk`]).
fn simulate_condition(
    study: &Study,
    topology: &Topology,
    storm: usize,
    c: usize,
    rain: &[f64],
    len: usize,
) -> Result<ConditionResult, SimulationError> {
    let mut sim = StormSim {
        run: StormRun {
            study,
            storm,
            condition: c,
            rain,
            len,
        },
        elements: vec![None; study.elements.len()],
    };
    let mut points = walk(topology, c, study.points.len(), study.step_h, &mut sim)?;
    for p in &mut points {
        if p.is_empty() {
            *p = vec![0.0; len];
        }
    }
    Ok(ConditionResult {
        condition: c,
        elements: sim.elements,
        points,
    })
}

/// A storm's [`ElementSim`]: each element's result kept whole.
struct StormSim<'a> {
    run: StormRun<'a>,
    elements: Vec<Option<ElementResult>>,
}

impl ElementSim for StormSim<'_> {
    type Error = SimulationError;

    fn zeroed(&mut self) -> Vec<f64> {
        vec![0.0; self.run.len]
    }

    fn run_len(&self) -> usize {
        self.run.len
    }

    fn simulate(&mut self, i: usize, inflow_cfs: Vec<f64>) -> Result<Vec<f64>, SimulationError> {
        let mut result = self.run.element_step(i, inflow_cfs)?;
        let outflow = std::mem::take(&mut result.outflow_cfs);
        self.elements[i] = Some(result);
        Ok(outflow)
    }

    fn done(&mut self, i: usize, outflow_cfs: Vec<f64>) {
        if let Some(result) = self.elements.get_mut(i).and_then(Option::as_mut) {
            result.outflow_cfs = outflow_cfs;
        }
    }
}

/// One storm through one condition: what every element step needs.
#[derive(Debug, Clone, Copy)]
pub struct StormRun<'a> {
    /// The study.
    pub study: &'a Study,
    /// Storm index.
    pub storm: usize,
    /// Condition index.
    pub condition: usize,
    /// Rain per step, in.
    pub rain: &'a [f64],
    /// Values in each series (steps + 1).
    pub len: usize,
}

impl StormRun<'_> {
    /// What element `i` produces in a design storm from what reaches it
    /// (`inflow_cfs`, empty when nothing does). The one place where each
    /// element kind is simulated for a storm: a new kind adds its arm here.
    ///
    /// # Errors
    /// A pond whose inflow is not finite or that cannot be routed.
    pub fn element_step(
        &self,
        i: usize,
        inflow_cfs: Vec<f64>,
    ) -> Result<ElementResult, SimulationError> {
        let (study, len, step_h) = (self.study, self.len, self.study.step_h);
        let e = &study.elements[i];
        Ok(match &e.kind {
            ElementKind::Catchment(cat) => {
                let excess = cat.storm_excess_in(self.rain);
                let uh = catchment_uh(cat, step_h);
                let q = unit_hydrograph::convolve(&excess, &uh, len);
                ElementResult {
                    outflow_cfs: q,
                    runoff: Some(RunoffResult {
                        rain_in: self.rain.iter().sum(),
                        runoff_in: excess.iter().sum(),
                    }),
                    pond: None,
                    channel: None,
                }
            }
            ElementKind::Inflow(inf) => {
                let active = inf.storm.is_none() || inf.storm == Some(self.storm);
                let q = (0..len)
                    .map(|k| {
                        if active {
                            inf.flow_at(k as f64 * step_h)
                        } else {
                            0.0
                        }
                    })
                    .collect();
                ElementResult {
                    outflow_cfs: q,
                    runoff: None,
                    pond: None,
                    channel: None,
                }
            }
            ElementKind::Channel(ch) => {
                let inflow = if inflow_cfs.is_empty() {
                    vec![0.0; len]
                } else {
                    inflow_cfs
                };
                if let Some(value) = first_non_finite(&inflow) {
                    return Err(SimulationError::NotFinite {
                        kind: "channel",
                        element: e.name.clone(),
                        run: format!("storm \"{}\"", study.storms[self.storm].name),
                        condition: study.conditions[self.condition].clone(),
                        what: "inflow",
                        value,
                    });
                }
                route_channel(&e.name, ch, inflow, step_h)?
            }
            ElementKind::Pond(p) => {
                let inflow = if inflow_cfs.is_empty() {
                    vec![0.0; len]
                } else {
                    inflow_cfs
                };
                let run = || format!("storm \"{}\"", study.storms[self.storm].name);
                let condition = || study.conditions[self.condition].clone();
                if let Some(value) = first_non_finite(&inflow) {
                    return Err(SimulationError::NotFinite {
                        kind: "pond",
                        element: e.name.clone(),
                        run: run(),
                        condition: condition(),
                        what: "inflow",
                        value,
                    });
                }
                route_pond(p, inflow, step_h).map_err(|source| SimulationError::PondTable {
                    pond: e.name.clone(),
                    run: run(),
                    condition: condition(),
                    source,
                })?
            }
        })
    }
}

/// How channel `name` is split at `step_h` ([`crate::model::Channel::plan`]).
///
/// # Errors
/// [`SimulationError::ChannelSplit`] when no split keeps the coefficients
/// non-negative (which loading refuses).
pub fn channel_plan(
    name: &str,
    ch: &crate::model::Channel,
    step_h: f64,
) -> Result<crate::methods::channel::Plan, SimulationError> {
    ch.plan(step_h)
        .ok_or_else(|| SimulationError::ChannelSplit {
            channel: name.to_string(),
            k_h: ch.k_h,
            x: ch.x,
            step_min: step_h * 60.0,
        })
}

/// Routes a channel's inflow (cfs at `step_h`) by the Muskingum method
/// ([`crate::methods::channel::route_reach_into`]), from an empty reach.
///
/// # Errors
/// [`SimulationError::ChannelSplit`] when the channel has no split at the
/// step (which loading refuses).
pub fn route_channel(
    name: &str,
    ch: &crate::model::Channel,
    inflow: Vec<f64>,
    step_h: f64,
) -> Result<ElementResult, SimulationError> {
    let plan = channel_plan(name, ch, step_h)?;
    let mut outflow = vec![0.0; inflow.len()];
    let mut storage = vec![0.0; inflow.len()];
    crate::methods::channel::route_reach_into(
        &inflow,
        ch.k_h,
        ch.x,
        step_h,
        plan,
        &mut outflow,
        Some(&mut storage),
    );
    // cfs h to ft3
    for s in &mut storage {
        *s *= 3600.0;
    }
    Ok(ElementResult {
        outflow_cfs: outflow,
        runoff: None,
        pond: None,
        channel: Some(ChannelResult {
            inflow_cfs: inflow,
            storage_ft3: storage,
            plan,
        }),
    })
}

/// Builds the pond's routing table for an inflow and routes it.
///
/// # Errors
/// When the table cannot be built for this inflow (never routed as zero
/// outflow).
pub fn route_pond(
    p: &Pond,
    inflow: Vec<f64>,
    step_h: f64,
) -> Result<ElementResult, pond::PondError> {
    let dt_s = step_h * 3600.0;
    let start = start_stage_ft(p);
    let table = pond_table(p, &inflow, dt_s, start)?;
    let routed = pond::route(&table, &inflow, start);
    let summary = pond::summarize_series(&inflow, &routed, dt_s, start, p.top_ft, &p.outlets);
    Ok(ElementResult {
        outflow_cfs: routed.outflow_cfs,
        runoff: None,
        channel: None,
        pond: Some(PondResult {
            inflow_cfs: inflow,
            stage_ft: routed.stage_ft,
            storage_ft3: routed.storage_ft3,
            infiltration_cfs: routed.infiltration_cfs,
            summary,
            start_ft: start,
        }),
    })
}

/// The stage-storage-discharge table of a pond for a given inflow.
///
/// # Errors
/// When the storage-indication relation is not strictly increasing.
pub fn pond_table(
    p: &Pond,
    inflow: &[f64],
    dt_s: f64,
    start_ft: f64,
) -> Result<PondTable, pond::PondError> {
    let inflow_volume: f64 = inflow.iter().sum::<f64>() * dt_s;
    pond_table_to(p, dt_s, storage_cap_ft3(p, start_ft, inflow_volume))
}

/// The storage a pond's routing table must reach, ft3: the starting
/// storage plus all the water that enters (ft3), with 2 % and 1 ft3 to
/// spare. The water cannot rise above it, and the table's stage spacing
/// grows with depth far above the outlets, so the table stays small
/// however high that is.
pub fn storage_cap_ft3(p: &Pond, start_ft: f64, inflow_ft3: f64) -> f64 {
    p.storage.volume_ft3(start_ft) + inflow_ft3 * 1.02 + 1.0
}

/// The storage (ft3) at the lowest stage where the pond's outflow
/// (structure and embankment) reaches `flow_cfs`, or infinity when no stage
/// within 2^40 ft of the bottom does. With `flow_cfs` twice the largest
/// inflow, the water never rises above it: there every routing step
/// releases more than any step brings. Long records bound their routing
/// table with it, since the volume bound of [`storage_cap_ft3`] (all the
/// water of the record) lies far above anything reached.
pub fn outflow_cap_ft3(p: &Pond, flow_cfs: f64) -> f64 {
    if !(flow_cfs.is_finite() && flow_cfs > 0.0) {
        return f64::INFINITY;
    }
    let works = p.works();
    let emb = p.embankment();
    let q = |h: f64| works.total_cfs(h) + emb.as_ref().map_or(0.0, |e| e.flow_cfs(h));
    let bottom = p.storage.bottom_ft();
    let (mut lo, mut hi) = (bottom, bottom + 1.0);
    let mut n = 0;
    while q(hi) < flow_cfs {
        lo = hi;
        hi = bottom + 2.0 * (hi - bottom);
        n += 1;
        if n > 40 {
            return f64::INFINITY;
        }
    }
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        if q(mid) < flow_cfs {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    p.storage.volume_ft3(hi)
}

/// The stage-storage-discharge table of a pond up to a storage, ft3.
///
/// # Errors
/// When the storage-indication relation is not strictly increasing.
pub fn pond_table_to(
    p: &Pond,
    dt_s: f64,
    max_storage_ft3: f64,
) -> Result<PondTable, pond::PondError> {
    PondTable::build_works(
        &p.storage,
        &p.works(),
        p.embankment().as_ref(),
        dt_s,
        p.grid_step_ft,
        max_storage_ft3,
        &p.losses,
    )
}

/// A readable stage-storage-discharge table of a pond: about 20 evenly
/// spaced stages from the bottom to the top (or the highest table row),
/// plus every outlet's invert, crown and crest. Rows are (stage ft,
/// storage ft3, outflow cfs).
pub fn rating_rows(p: &Pond) -> Vec<(f64, f64, f64)> {
    let (bottom, top) = crate::engine::structure::rating_range_ft(p, 0.1);
    let span = top - bottom;
    let raw = span / 20.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(raw);
    let mut stages: Vec<f64> = Vec::new();
    let mut s = (bottom / step).ceil() * step;
    stages.push(bottom);
    while s <= top + 1e-9 {
        stages.push(s);
        s += step;
    }
    let works = p.works();
    stages.extend(
        works
            .key_stages_ft()
            .into_iter()
            .filter(|k| *k >= bottom && *k <= top),
    );
    stages.push(top);
    stages.sort_by(f64::total_cmp);
    stages.dedup_by(|a, b| (*a - *b).abs() < 1e-6);
    stages
        .into_iter()
        .map(|h| (h, p.storage.volume_ft3(h), works.total_cfs(h)))
        .collect()
}
