//! Long records (continuous simulation): a gauge record of years of rain
//! through the same network, with flow statistics per element and
//! flow-duration control at points.
//!
//! The results are typed and in internal units (cfs, ft3, in, ft, seconds
//! and interval indices); `report::records` converts them to output units,
//! JSON, Markdown and plot data. Progress goes through [`Progress`], so the
//! command layer owns the progress bar.
//!
//! Memory stays bounded: each element's series is reduced to its statistics
//! as soon as it has been added to what it drains to; only the points'
//! series are kept (they are compared across conditions).

use crate::engine::network;
use crate::engine::network::SimulationError;
use crate::engine::topology::Topology;
use crate::engine::walk::{ElementSim, walk};
use crate::error::Error;
use crate::methods::pond;
use crate::methods::stats;
use crate::methods::unit_hydrograph;
use crate::model::{Catchment, DurationControl, ElementKind, Pond, Record, Study, Target};
use crate::util::calendar;
use crate::warning::Warning;

mod excess;
mod result;
pub use result::*;

/// Return periods of the frequency table, years.
pub const RETURN_PERIODS: [f64; 9] = [1.5, 2.0, 5.0, 10.0, 25.0, 50.0, 100.0, 200.0, 500.0];
/// Exceedance fractions of the flow-duration table.
pub const EXCEEDANCES: [f64; 9] = [0.0001, 0.001, 0.01, 0.05, 0.1, 0.2, 0.3, 0.5, 0.9];
/// Number of flow levels of a duration control (evenly spaced in log).
pub const DURATION_LEVELS: usize = 100;

/// Exceedance fractions of the plotted flow-duration curves (log-spaced).
pub fn plot_exceedances() -> Vec<f64> {
    (0..60)
        .map(|k| 10f64.powf(-4.0 + 4.0 * k as f64 / 59.0))
        .collect()
}

/// Reusable zeroed series buffers.
#[derive(Default)]
struct Pool(Vec<Vec<f64>>);

impl Pool {
    /// A zeroed buffer of `len` values.
    fn take(&mut self, len: usize) -> Vec<f64> {
        match self.0.pop() {
            Some(mut v) => {
                v.clear();
                v.resize(len, 0.0);
                v
            }
            None => {
                // Written, not calloc'd: a zero page that is first read and
                // then written costs two page faults instead of one.
                let mut v = Vec::with_capacity(len);
                v.resize(len, 0.0);
                v
            }
        }
    }
    /// A buffer of `len` values whose contents are left over from its last
    /// use, for a caller that writes every value before reading any.
    fn take_overwritten(&mut self, len: usize) -> Vec<f64> {
        let mut v = self.0.pop().unwrap_or_default();
        v.resize(len, 0.0);
        v
    }
    /// Returns a buffer for reuse.
    fn give(&mut self, v: Vec<f64>) {
        if v.capacity() > 0 {
            self.0.push(v);
        }
    }
}

/// Bytes a record run needs at its peak, for the memory cap.
pub fn estimate_bytes(study: &Study, r: &Record) -> u64 {
    let n = (r.depth_in.len() as f64 * r.interval_h / r.step_h).ceil() as u64 + 1;
    // Series held at once within one condition: the gauge depths, the rain
    // at the step, the excess, the element being computed, a pond's outflow
    // and stage, one input per element that others drain to, and the
    // points (reduced before the next condition).
    let targets = study
        .elements
        .iter()
        .enumerate()
        .filter(|(j, _)| {
            study
                .elements
                .iter()
                .any(|e| matches!(e.to, Target::Element(k) if k == *j))
        })
        .count();
    n * 8 * (6 + targets + study.points.len()) as u64
}

struct Stats {
    peak: f64,
    peak_index: usize,
    volume_ft3: f64,
    /// The one pass over the series: annual maxima, and the histogram for
    /// its flow-duration ranking.
    scan: stats::SeriesScan,
}

/// Peak, volume and annual maxima of a record series in one pass over it
/// (see [`stats::scan_series`]).
fn series_stats(values: &[f64], start_s: i64, step_s: i64, step_h: f64) -> Stats {
    let scan = stats::scan_series(start_s, step_s, values);
    let (peak, peak_index) = network::floor_peak(scan.peak);
    Stats {
        peak,
        peak_index,
        volume_ft3: network::volume_from_sum_ft3(scan.sum, values, step_h),
        scan,
    }
}

/// Who a record entry is about.
struct Subject<'a> {
    condition: usize,
    element: &'a str,
    kind: SubjectKind,
    area_ac: f64,
}

/// One record's inputs as every element of it reads them.
struct RecordRun<'a> {
    study: &'a Study,
    /// The study's network, built once per record.
    topology: Topology,
    record: &'a Record,
    /// Rain per step, in.
    rain_in: std::borrow::Cow<'a, [f64]>,
    /// Rain over the record, in.
    rain_total_in: f64,
    /// Values per series (intervals plus one).
    len: usize,
    step_h: f64,
    step_s: i64,
    /// `record "NAME"`, for errors.
    run_name: String,
}

impl RecordRun<'_> {
    /// A result that is not a finite number.
    fn not_finite(
        &self,
        condition: usize,
        kind: &'static str,
        element: &str,
        what: &'static str,
        value: f64,
    ) -> Error {
        Error::Simulation(SimulationError::NotFinite {
            kind,
            element: element.to_string(),
            run: self.run_name.clone(),
            condition: self.study.conditions[condition].clone(),
            what,
            value,
        })
    }

    /// Peak, volume and annual maxima of a series of this record.
    fn stats(&self, values: &[f64]) -> Stats {
        series_stats(values, self.record.start_s, self.step_s, self.step_h)
    }
}

/// The frequency and duration parts of a record entry, from the series
/// and its one-pass statistics; `flow_duration_cfs` when the caller has
/// already ranked the series at [`EXCEEDANCES`].
fn element_record(
    run: &RecordRun<'_>,
    who: Subject<'_>,
    values: &[f64],
    st: &Stats,
    flow_duration_cfs: Option<Vec<f64>>,
) -> ElementRecord {
    let mut annual_peaks_cfs = Vec::new();
    let mut incomplete_years = Vec::new();
    let mut zero_years = Vec::new();
    let mut fit_values = Vec::new();
    for a in &st.scan.annual {
        if (a.intervals as f64) < 0.9 * a.expected_intervals as f64 {
            incomplete_years.push(a.year);
            continue;
        }
        annual_peaks_cfs.push(YearMax {
            year: a.year,
            value: a.peak,
        });
        if a.peak > 0.0 {
            fit_values.push(a.peak);
        } else {
            zero_years.push(a.year);
        }
    }
    // Bulletin 17B: low-outlier test, regional skew weighting (stats::b17b).
    let frequency_analysis = stats::bulletin17b(&fit_values, run.record.regional_skew);
    let lp3 = frequency_analysis.as_ref().map(|a| a.fit);
    let frequency = match &frequency_analysis {
        Some(f) => RETURN_PERIODS
            .iter()
            .map(|&t| FrequencyFlow {
                return_period_yr: t,
                flow_cfs: f.quantile(t),
            })
            .collect(),
        None => Vec::new(),
    };
    let flow_duration_cfs =
        flow_duration_cfs.unwrap_or_else(|| st.scan.flow_duration(values, &EXCEEDANCES));
    ElementRecord {
        record: run.record.name.clone(),
        condition: who.condition,
        element: who.element.to_string(),
        kind: who.kind,
        start_s: run.record.start_s,
        step_s: run.step_s,
        steps: values.len().saturating_sub(1),
        rain_in: run.rain_total_in,
        runoff_in: if who.area_ac > 0.0 {
            st.volume_ft3 / (who.area_ac * crate::util::units::FT2_PER_AC) * 12.0
        } else {
            0.0
        },
        volume_ft3: st.volume_ft3,
        peak_cfs: st.peak,
        peak_index: st.peak_index,
        annual_peaks_cfs,
        incomplete_years,
        zero_years,
        frequency,
        lp3,
        frequency_analysis,
        flow_duration_cfs,
        events: None,
        pond: None,
        moisture: None,
    }
}

/// Largest rain (in) one step of a record may hold: no gauge anywhere has
/// recorded a thousandth of it in an interval, and much larger depths
/// overflow the runoff arithmetic.
pub const MAX_RAIN_PER_STEP_IN: f64 = 1000.0;

/// Number of steps of a record (its duration over its step).
pub fn record_steps(r: &Record) -> usize {
    (r.depth_in.len() as f64 * r.interval_h / r.step_h).round() as usize
}

/// A record's rain at its step (in per step): the gauge depths as they are
/// at the gauge interval, resampled otherwise.
///
/// `check` and `run` both call this, so a gauge that cannot be simulated is
/// refused by both.
///
/// # Errors
/// A step's rain that is not finite or above [`MAX_RAIN_PER_STEP_IN`].
pub fn rain_at_step(r: &Record) -> Result<std::borrow::Cow<'_, [f64]>, Error> {
    let n = record_steps(r);
    let rain: std::borrow::Cow<'_, [f64]> =
        if (r.step_h - r.interval_h).abs() < 1e-12 && r.depth_in.len() == n {
            std::borrow::Cow::Borrowed(&r.depth_in)
        } else {
            std::borrow::Cow::Owned(crate::methods::rainfall::resample_gauge(
                &r.depth_in,
                r.interval_h,
                r.step_h,
                n,
            ))
        };
    let max = stats::max_value(&rain);
    if !(stats::sum(&rain).is_finite() && max <= MAX_RAIN_PER_STEP_IN) {
        let k = rain
            .iter()
            .position(|v| !(v.is_finite() && *v <= MAX_RAIN_PER_STEP_IN))
            .unwrap_or(0);
        let step_s = (r.step_h * 3600.0).round() as i64;
        let when = calendar::format_timestamp(r.start_s + (k as i64 + 1) * step_s);
        return Err(crate::error::InputError::new(
            &r.path,
            format!(
                "the rain of the step ending {when} is {:.3e} in, which cannot be a rain depth",
                rain.get(k).copied().unwrap_or(f64::NAN)
            ),
        )
        .context(format!("record \"{}\", gauge", r.name))
        .expected(format!(
            "rain depths of at most {MAX_RAIN_PER_STEP_IN} in per step"
        ))
        .hint("check the depth column's unit and decimal point")
        .into());
    }
    Ok(rain)
}

/// Checks every record's gauge as [`run`] reads it, without simulating.
///
/// # Errors
/// As [`rain_at_step`].
pub fn validate(study: &Study) -> Result<(), Error> {
    for r in &study.records {
        rain_at_step(r)?;
    }
    Ok(())
}

/// Warnings about records that follow from the inputs alone: a step over
/// 0.25 Tp of a catchment, and a step coarser than the gauge interval.
pub fn input_warnings(study: &Study) -> Vec<Warning> {
    let mut out = Vec::new();
    for r in &study.records {
        if r.step_h > r.interval_h * (1.0 + 1e-9) {
            out.push(Warning::RecordStepCoarserThanGauge {
                record: r.name.clone(),
                step_h: r.step_h,
                interval_h: r.interval_h,
            });
        }
        for e in &study.elements {
            if let ElementKind::Catchment(c) = &e.kind {
                let tp = unit_hydrograph::time_to_peak_h(r.step_h, c.uh_lag_h);
                if r.step_h > 0.25 * tp {
                    out.push(Warning::RecordStepCoarse {
                        record: r.name.clone(),
                        catchment: e.name.clone(),
                        step_h: r.step_h,
                        tp_h: tp,
                    });
                }
            }
        }
    }
    out
}

/// Calendar years of a record's grid whose intervals are fewer than 90 %
/// of the year's: `(year, intervals in the record, intervals in the year)`.
fn incomplete_years(start_s: i64, step_s: i64, n: usize) -> Vec<(i32, usize, usize)> {
    if n == 0 || step_s <= 0 {
        return Vec::new();
    }
    let end_s = start_s + n as i64 * step_s;
    // grid indices k (any integer) whose interval starts start_s + k step_s fall in [a, b)
    let first_k = |a: i64| {
        (a - start_s).div_euclid(step_s) + i64::from((a - start_s).rem_euclid(step_s) != 0)
    };
    let (y0, _, _) = calendar::civil_from_days(start_s.div_euclid(86_400));
    let (y1, _, _) = calendar::civil_from_days((end_s - 1).div_euclid(86_400));
    let mut out = Vec::new();
    for y in [y0, y1] {
        if out.iter().any(|(x, _, _)| *x == y) {
            continue;
        }
        let (Some(a), Some(b)) = (
            calendar::day_number(y, 1, 1),
            calendar::day_number(y + 1, 1, 1),
        ) else {
            continue;
        };
        let (a, b) = (a * 86_400, b * 86_400);
        let (ka, kb) = (first_k(a), first_k(b));
        let expected = (kb - ka).max(0) as usize;
        let present = (kb.min(n as i64) - ka.max(0)).max(0) as usize;
        if (present as f64) < 0.9 * expected as f64 {
            out.push((y, present, expected));
        }
    }
    out
}

/// Volume (ft3) of `src` that [`network::add_lagged`] with `lag_h` would
/// shift past the end of a series of `len` values (the same weights).
fn lagged_past_end_ft3(src: &[f64], len: usize, lag_h: f64, step_h: f64) -> f64 {
    let shift = lag_h / step_h;
    if shift.is_nan() || shift <= 0.0 {
        return 0.0;
    }
    let whole = shift.floor();
    let frac = shift - whole;
    let whole = if whole >= len as f64 {
        len
    } else {
        whole as usize
    };
    let tail = |from: usize| stats::sum(src.get(from.min(src.len())..).unwrap_or(&[]));
    let lost = (1.0 - frac) * tail(len - whole) + frac * tail(len.saturating_sub(whole + 1));
    lost * step_h * 3600.0
}

/// A point's duration control over one record: the rule's flow range and
/// its levels, from the baseline's frequency fit.
#[derive(Debug, Clone)]
struct DurationLevels {
    from_cfs: f64,
    to_cfs: f64,
    levels_cfs: Vec<f64>,
}

/// What one record's conditions leave for its duration controls.
struct DurationCounts {
    /// Per point: the control's levels, once the baseline has been simulated.
    levels: Vec<Option<DurationLevels>>,
    /// Per condition and point: intervals above each level.
    exceedance_counts: Vec<Vec<Vec<usize>>>,
}

/// Runs every record for every condition.
///
/// # Errors
/// A gauge whose rain cannot be simulated ([`rain_at_step`]), a pond that
/// cannot be routed, or a result that is not a finite number
/// ([`SimulationError`]).
pub fn run(study: &Study, progress: &dyn Progress) -> Result<RecordsResult, Error> {
    let mut res = RecordsResult::default();
    for r in &study.records {
        run_record(study, r, progress, &mut res)?;
    }
    Ok(res)
}

/// The order in which conditions are simulated: the baseline first, so
/// that the flow levels of every point's duration control are known while
/// each condition's series is at hand (the series is then reduced to its
/// times above those levels and its daily maxima, and its buffer reused).
/// An empty baseline is not simulated.
fn condition_order(study: &Study) -> Vec<usize> {
    let nc = study.conditions.len();
    if study.baseline < nc && !study.baseline_empty {
        std::iter::once(study.baseline)
            .chain((0..nc).filter(|&c| c != study.baseline))
            .collect()
    } else {
        study.simulated_conditions()
    }
}

/// Runs one record for every condition and adds its results to `res`.
fn run_record(
    study: &Study,
    r: &Record,
    progress: &dyn Progress,
    res: &mut RecordsResult,
) -> Result<(), Error> {
    let step_h = r.step_h;
    let step_s = (step_h * 3600.0).round() as i64;
    let steps = record_steps(r);
    let record_clock = std::time::Instant::now();
    let inner_before_s = res.timings.routing_s + res.timings.runoff_s;
    let clock = std::time::Instant::now();
    // At the gauge interval the record's own depths are the rain per step.
    let rain_in = rain_at_step(r)?;
    res.timings.rain_s += clock.elapsed().as_secs_f64();
    res.timings.intervals += steps;
    let run = RecordRun {
        study,
        topology: Topology::new(study),
        record: r,
        rain_total_in: stats::sum(&rain_in),
        rain_in,
        len: steps + 1,
        step_h,
        step_s,
        run_name: format!("record \"{}\"", r.name),
    };
    progress.start(
        &r.name,
        steps,
        (study.conditions.len() * study.elements.len()) as u64,
    );
    let first_entry = res.elements.len();
    let mut durations = DurationCounts {
        levels: vec![None; study.points.len()],
        exceedance_counts: vec![vec![Vec::new(); study.points.len()]; study.conditions.len()],
    };
    // Buffers are reused between elements: fresh 80-MB vectors cost
    // more in page faults than the arithmetic on them.
    let mut pool = Pool::default();
    for c in condition_order(study) {
        let flows = simulate_condition(&run, c, &mut pool, progress, res)?;
        reduce_points(&run, c, flows, &mut durations, &mut pool, res)?;
    }
    // Entries in the order of the conditions, as for design storms.
    res.elements[first_entry..].sort_by_key(|e| e.condition);
    progress.finish();
    fit_warnings(
        study,
        r,
        steps,
        &res.elements[first_entry..],
        &mut res.warnings,
    );
    duration_comparisons(&run, &durations, &mut res.comparisons);
    let inner_s = res.timings.routing_s + res.timings.runoff_s - inner_before_s;
    res.timings.statistics_s +=
        (record_clock.elapsed().as_secs_f64() - inner_s - res.timings.rain_s).max(0.0);
    Ok(())
}

/// What one condition's elements leave at the points.
struct ConditionFlows {
    /// Flow (cfs) arriving at each point.
    points: Vec<Vec<f64>>,
    /// Runoff volume (ft3) each catchment generated over the record (for a
    /// pond, less what it lost to infiltration and evaporation).
    generated_ft3: Vec<f64>,
}

/// Simulates every element of condition `c` ([`walk`]), and returns what
/// arrives at the points and what each catchment generated.
fn simulate_condition(
    run: &RecordRun<'_>,
    c: usize,
    pool: &mut Pool,
    progress: &dyn Progress,
    res: &mut RecordsResult,
) -> Result<ConditionFlows, Error> {
    let mut sim = RecordSim {
        run,
        c,
        pool,
        progress,
        res,
        generated_ft3: vec![0.0; run.study.elements.len()],
    };
    let points = walk(
        &run.topology,
        c,
        run.study.points.len(),
        run.step_h,
        &mut sim,
    )?;
    Ok(ConditionFlows {
        points,
        generated_ft3: sim.generated_ft3,
    })
}

/// A record's [`ElementSim`]: each element reduced to its entry as soon as
/// it is simulated, its series buffers reused.
struct RecordSim<'r, 'a> {
    run: &'r RecordRun<'a>,
    c: usize,
    pool: &'r mut Pool,
    progress: &'r dyn Progress,
    res: &'r mut RecordsResult,
    /// Runoff volume (ft3) each catchment generated over the record.
    generated_ft3: Vec<f64>,
}

impl ElementSim for RecordSim<'_, '_> {
    type Error = Error;

    fn zeroed(&mut self) -> Vec<f64> {
        self.pool.take(self.run.len)
    }

    fn run_len(&self) -> usize {
        self.run.len
    }

    /// Outflows go back to the pool, so an unlagged one may be moved on.
    fn keeps_outflows(&self) -> bool {
        false
    }

    /// The one place where each element kind is simulated over a record:
    /// a new kind adds its arm here (and in [`network::StormRun::element_step`]).
    fn simulate(&mut self, i: usize, inflow_cfs: Vec<f64>) -> Result<Vec<f64>, Error> {
        let (run, c) = (self.run, self.c);
        let e = &run.study.elements[i];
        // Routing writes a pond's outflow from empty and every value of a
        // channel's; the others add into zeros.
        let mut out = match e.kind {
            ElementKind::Pond(_) => self.pool.take_overwritten(0),
            ElementKind::Channel(_) => self.pool.take_overwritten(run.len),
            _ => self.pool.take(run.len),
        };
        let entry = match &e.kind {
            ElementKind::Catchment(cat) => {
                let (entry, generated_ft3) =
                    simulate_catchment(run, c, &e.name, cat, &mut out, &mut self.res.timings)?;
                self.generated_ft3[i] = generated_ft3;
                entry
            }
            ElementKind::Inflow(_) => {
                // An inflow hydrograph belongs to design storms; over a record it adds nothing.
                let st = run.stats(&out);
                let who = Subject {
                    condition: c,
                    element: &e.name,
                    kind: SubjectKind::Inflow,
                    area_ac: 0.0,
                };
                element_record(run, who, &out, &st, None)
            }
            ElementKind::Channel(ch) => {
                route_channel(run, c, i, ch, inflow_cfs, &mut out, self.pool, self.res)?
            }
            ElementKind::Pond(p) => {
                let entry = route_pond(run, c, i, p, inflow_cfs, &mut out, self.pool, self.res)?;
                // what the pond lost to the ground and the air never reaches a point
                if let Some(lost) = entry.pond.as_ref().and_then(|pr| pr.lost) {
                    self.generated_ft3[i] = -(lost.infiltrated_ft3 + lost.evaporated_ft3);
                }
                entry
            }
        };
        self.res.elements.push(entry);
        Ok(out)
    }

    /// Warns of any volume lagged past the record's end, and returns the
    /// buffer to the pool.
    fn done(&mut self, i: usize, outflow_cfs: Vec<f64>) {
        let run = self.run;
        let e = &run.study.elements[i];
        if e.lag_h > 0.0 {
            let lost_ft3 = lagged_past_end_ft3(&outflow_cfs, run.len, e.lag_h, run.step_h);
            if lost_ft3 > 0.0 {
                self.res.warnings.push(RecordWarning::LagPastEnd {
                    record: run.record.name.clone(),
                    condition: run.study.conditions[self.c].clone(),
                    element: e.name.clone(),
                    lag_h: e.lag_h,
                    lost_ft3,
                });
            }
        }
        self.pool.give(outflow_cfs);
        self.progress.advance();
    }
}

/// A catchment's runoff over the record, added into `out` (zeroed), with
/// its entry and the runoff volume (ft3) it generated.
fn simulate_catchment(
    run: &RecordRun<'_>,
    c: usize,
    name: &str,
    cat: &Catchment,
    out: &mut [f64],
    timings: &mut Timings,
) -> Result<(ElementRecord, f64), Error> {
    let r = run.record;
    let step_h = run.step_h;
    let clock = std::time::Instant::now();
    let tp_h = unit_hydrograph::time_to_peak_h(step_h, cat.uh_lag_h);
    let uh = unit_hydrograph::ordinates_cfs_per_in(cat.shape, cat.area_ac, tp_h, step_h);
    // Each rainy interval's excess goes straight into the convolution (no
    // excess series is stored), so the two stages are timed together.
    let excess = excess::catchment_excess(run, cat, |j, excess_in| {
        unit_hydrograph::add_response(out, j, excess_in, &uh);
    })
    .map_err(|e| Error::Compute {
        message: format!("record \"{}\": catchment \"{name}\": {e}", r.name),
    })?;
    let runoff_in = excess.runoff_in;
    timings.runoff_s += clock.elapsed().as_secs_f64();
    let st = run.stats(out);
    for (what, v) in [
        ("runoff depth", runoff_in),
        ("volume", st.volume_ft3),
        ("peak flow", st.peak),
    ] {
        if !v.is_finite() {
            return Err(run.not_finite(c, "catchment", name, what, v));
        }
    }
    let generated_ft3 = runoff_in / 12.0 * cat.area_ac * crate::util::units::FT2_PER_AC;
    let who = Subject {
        condition: c,
        element: name,
        kind: SubjectKind::Catchment,
        area_ac: cat.area_ac,
    };
    let mut entry = element_record(run, who, out, &st, None);
    entry.runoff_in = runoff_in;
    entry.events = Some(excess.events);
    entry.moisture = Some(MoistureRecord {
        infiltration_in: run.rain_total_in - runoff_in,
        event_cn: excess.event_cn,
    });
    Ok((entry, generated_ft3))
}

/// Routes a channel's inflow over the record into `out` (of the run's
/// length; every value is written) by the Muskingum method and returns its entry, with the
/// statistics of every element.
#[allow(clippy::too_many_arguments)]
fn route_channel(
    run: &RecordRun<'_>,
    c: usize,
    index: usize,
    ch: &crate::model::Channel,
    inflow: Vec<f64>,
    out: &mut [f64],
    pool: &mut Pool,
    res: &mut RecordsResult,
) -> Result<ElementRecord, Error> {
    let name = &run.study.elements[index].name;
    let inflow = if inflow.is_empty() {
        pool.take(run.len)
    } else {
        inflow
    };
    let total = stats::sum(&inflow);
    if !total.is_finite() {
        return Err(run.not_finite(c, "channel", name, "inflow volume", total));
    }
    let plan = network::channel_plan(name, ch, run.step_h).map_err(Error::Simulation)?;
    let clock = std::time::Instant::now();
    crate::methods::channel::route_reach_into(&inflow, ch.k_h, ch.x, run.step_h, plan, out, None);
    res.timings.routing_s += clock.elapsed().as_secs_f64();
    pool.give(inflow);
    let st = run.stats(out);
    for (what, v) in [("volume", st.volume_ft3), ("peak flow", st.peak)] {
        if !v.is_finite() {
            return Err(run.not_finite(c, "channel", name, what, v));
        }
    }
    let who = Subject {
        condition: c,
        element: name,
        kind: SubjectKind::Channel,
        area_ac: run.topology.area_to_element_ac(index, c),
    };
    Ok(element_record(run, who, out, &st, None))
}

/// Routes a pond's inflow over the record into `out` and returns its entry,
/// with its overtopping check, stage statistics and mass balance.
#[allow(clippy::too_many_arguments)]
fn route_pond(
    run: &RecordRun<'_>,
    c: usize,
    index: usize,
    p: &Pond,
    inflow: Vec<f64>,
    out: &mut Vec<f64>,
    pool: &mut Pool,
    res: &mut RecordsResult,
) -> Result<ElementRecord, Error> {
    let study = run.study;
    let name = &study.elements[index].name;
    let mut inflow = if inflow.is_empty() {
        pool.take(run.len)
    } else {
        inflow
    };
    let dt_s = run.step_h * 3600.0;
    let start_ft = network::start_stage_ft(p);
    let total = stats::sum(&inflow);
    if !total.is_finite() {
        return Err(run.not_finite(c, "pond", name, "inflow volume", total));
    }
    let max_storage_ft3 = network::storage_cap_ft3(p, start_ft, total * dt_s).min(
        network::outflow_cap_ft3(p, 2.0 * stats::max_value(&inflow))
            .max(p.storage.volume_ft3(start_ft)),
    );
    let table = network::pond_table_to(p, dt_s, max_storage_ft3).map_err(|source| {
        Error::Simulation(SimulationError::PondTable {
            pond: name.clone(),
            run: run.run_name.clone(),
            condition: study.conditions[c].clone(),
            source,
        })
    })?;
    let inflow_ft3 = network::volume_ft3(&inflow, run.step_h);
    let clock = std::time::Instant::now();
    // The inflow's buffer becomes the stage series.
    let evaporation = pond::evaporation_schedule(
        run.record.start_s,
        run.step_s,
        inflow.len(),
        &p.losses.evaporation_ft_per_day,
    );
    let (storage_first_ft3, storage_last_ft3, lost) =
        pond::route_stage_in_place_losing(&table, &mut inflow, start_ft, out, &evaporation);
    res.timings.routing_s += clock.elapsed().as_secs_f64();
    let mut stage_ft = inflow;
    let st = run.stats(out);
    let who = Subject {
        condition: c,
        element: name,
        kind: SubjectKind::Pond,
        area_ac: run.topology.area_to_element_ac(index, c),
    };
    let mut entry = element_record(run, who, out, &st, None);
    let annual_max = if stage_ft.len() > 1 {
        stats::annual_maxima(run.record.start_s, run.step_s, &stage_ft[1..])
    } else {
        Vec::new()
    };
    // The highest stage and when, from the annual maxima (NaN counts as
    // missing there, so fewer intervals than values means a NaN stage).
    let counted: usize = annual_max.iter().map(|a| a.intervals).sum();
    let (top_stage_ft, top_index) = annual_max
        .iter()
        .map(|a| (a.peak, a.peak_index + 1))
        .max_by(|x, y| x.0.total_cmp(&y.0))
        .unwrap_or((start_ft, 0));
    let stage_checked = if counted + 1 == stage_ft.len() {
        top_stage_ft
    } else {
        f64::NAN
    };
    for (what, v) in [
        ("volume", st.volume_ft3),
        ("peak flow", st.peak),
        ("stage", stage_checked),
        ("storage", storage_last_ft3),
    ] {
        if !v.is_finite() {
            return Err(run.not_finite(c, "pond", name, what, v));
        }
    }
    if let Some(top_ft) = p.top_ft {
        check_overtopping(run, c, name, top_ft, (top_stage_ft, top_index), res);
    }
    // Depths above the bottom (in place: the stages are no longer needed)
    // spread over many binary exponents, which the duration ranking
    // handles fastest.
    let bottom_ft = p.storage.bottom_ft();
    for h in stage_ft.iter_mut() {
        *h = (*h - bottom_ft).max(0.0);
    }
    let stage_duration_ft: Vec<f64> = stats::flow_duration(&stage_ft, &EXCEEDANCES)
        .into_iter()
        .map(|d| d + bottom_ft)
        .collect();
    let outflow_ft3 = network::volume_ft3(out, run.step_h);
    let stored_ft3 = storage_last_ft3 - storage_first_ft3;
    let lost_ft3 = lost.infiltrated_ft3 + lost.evaporated_ft3;
    let mass_balance_error = if inflow_ft3 > 0.0 {
        (inflow_ft3 - outflow_ft3 - lost_ft3 - stored_ft3) / inflow_ft3
    } else {
        0.0
    };
    entry.pond = Some(PondRecord {
        stage_duration_ft,
        annual_max_stage_ft: annual_max
            .iter()
            .map(|a| YearMax {
                year: a.year,
                value: a.peak,
            })
            .collect(),
        mass_balance_error,
        lost: p.losses.any().then_some(lost),
    });
    pond_balance_warnings(
        run,
        c,
        name,
        mass_balance_error,
        (inflow_ft3, stored_ft3),
        &mut res.warnings,
    );
    pool.give(stage_ft);
    Ok(entry)
}

/// The overtopping check of a pond with a top, and its warning when the
/// highest stage (ft, at interval index) rose above it.
fn check_overtopping(
    run: &RecordRun<'_>,
    c: usize,
    pond: &str,
    top_ft: f64,
    (peak_stage_ft, peak_index): (f64, usize),
    res: &mut RecordsResult,
) {
    let over = peak_stage_ft > top_ft;
    let condition = &run.study.conditions[c];
    res.overtopping.push(OvertoppingCheck {
        pond: pond.to_string(),
        record: run.record.name.clone(),
        condition: condition.clone(),
        peak_stage_ft,
        top_ft,
        pass: !over,
    });
    if over {
        res.warnings.push(RecordWarning::Overtopped {
            pond: pond.to_string(),
            record: run.record.name.clone(),
            condition: condition.clone(),
            when_s: run.record.start_s + peak_index as i64 * run.step_s,
            stage_ft: peak_stage_ft,
            top_ft,
        });
    }
}

/// Warnings of a pond's mass balance and of the water (ft3) still stored
/// in it at the end of the record, out of `(inflow, stored)` volumes.
fn pond_balance_warnings(
    run: &RecordRun<'_>,
    c: usize,
    pond: &str,
    mass_balance_error: f64,
    (inflow_ft3, stored_ft3): (f64, f64),
    warnings: &mut Vec<RecordWarning>,
) {
    let condition = &run.study.conditions[c];
    if mass_balance_error.abs() > crate::engine::analysis::MASS_BALANCE_WARN {
        warnings.push(RecordWarning::Plain(Warning::MassBalance {
            pond: pond.to_string(),
            run: run.run_name.clone(),
            condition: condition.clone(),
            error: mass_balance_error,
        }));
    }
    if inflow_ft3 > 0.0 && stored_ft3 > crate::engine::analysis::MASS_BALANCE_WARN * inflow_ft3 {
        warnings.push(RecordWarning::WaterLeft {
            record: run.record.name.clone(),
            condition: condition.clone(),
            element: format!("pond \"{pond}\""),
            left_ft3: stored_ft3,
            percent: 100.0 * stored_ft3 / inflow_ft3,
            what: "is still stored in it",
        });
    }
}

/// Reduces each point's series of condition `c` to its entry, its plot
/// series, and its times above its duration control's levels, and returns
/// the buffers to the pool.
fn reduce_points(
    run: &RecordRun<'_>,
    c: usize,
    flows: ConditionFlows,
    durations: &mut DurationCounts,
    pool: &mut Pool,
    res: &mut RecordsResult,
) -> Result<(), Error> {
    let study = run.study;
    let ConditionFlows {
        mut points,
        generated_ft3,
    } = flows;
    let per_day = ((24.0 / run.step_h).round() as usize).max(1);
    for (pi, p) in points.iter_mut().enumerate() {
        if p.is_empty() {
            *p = pool.take(run.len);
        }
        let st = run.stats(p);
        let pname = &study.points[pi].name;
        if !st.volume_ft3.is_finite() {
            return Err(run.not_finite(c, "point", pname, "volume", st.volume_ft3));
        }
        // Runoff generated upstream that has not reached the point when the
        // record ends (in ponds, in the falling limbs of the last storms, or
        // lagged past the end).
        let entered_ft3: f64 = (0..study.elements.len())
            .filter(|&j| run.topology.reaches(j, pi))
            .map(|j| generated_ft3[j])
            .sum();
        let missing_ft3 = entered_ft3 - st.volume_ft3;
        if entered_ft3 > 0.0
            && missing_ft3 > crate::engine::analysis::MASS_BALANCE_WARN * entered_ft3
        {
            res.warnings.push(RecordWarning::WaterLeft {
                record: run.record.name.clone(),
                condition: study.conditions[c].clone(),
                element: format!("point \"{pname}\""),
                left_ft3: missing_ft3,
                percent: 100.0 * missing_ft3 / entered_ft3,
                what: "of the runoff generated upstream has not reached it",
            });
        }
        // The table's fractions and the plot's, in one ranking.
        let mut wanted = EXCEEDANCES.to_vec();
        wanted.extend(plot_exceedances());
        let mut table_cfs = st.scan.flow_duration(p, &wanted);
        let duration_curve_cfs = table_cfs.split_off(EXCEEDANCES.len());
        let who = Subject {
            condition: c,
            element: pname,
            kind: SubjectKind::Point,
            area_ac: run.topology.area_to_point_ac(pi, c),
        };
        let entry = element_record(run, who, p, &st, Some(table_cfs));
        if let Some(dc) = &study.points[pi].durations {
            if c == study.baseline
                && let Some(fit) = &entry.lp3
            {
                durations.levels[pi] = Some(duration_levels(dc, fit));
            }
            if let Some(levels) = &durations.levels[pi] {
                durations.exceedance_counts[c][pi] =
                    stats::times_above_levels(p, &levels.levels_cfs);
            }
        }
        res.elements.push(entry);
        res.points.push(PointSeries {
            record: run.record.name.clone(),
            condition: c,
            point: pi,
            duration_curve_cfs,
            daily_max_cfs: p
                .chunks(per_day)
                .map(|ch| stats::max_value(ch).max(0.0))
                .collect(),
        });
    }
    for p in points {
        pool.give(p);
    }
    Ok(())
}

/// The flow levels of a duration control, from the baseline's fit:
/// [`DURATION_LEVELS`] levels evenly spaced in log over the rule's range.
fn duration_levels(dc: &DurationControl, fit: &stats::Lp3Fit) -> DurationLevels {
    let from = dc.from.0 * fit.quantile(dc.from.1);
    let to = dc.to.0 * fit.quantile(dc.to.1);
    let (lo, hi) = (from.min(to), from.max(to));
    let last = (DURATION_LEVELS - 1) as f64;
    DurationLevels {
        from_cfs: lo,
        to_cfs: hi,
        levels_cfs: (0..DURATION_LEVELS)
            .map(|k| (lo.ln() + (hi.ln() - lo.ln()) * k as f64 / last).exp())
            .collect(),
    }
}

/// Warnings about a record's years: incomplete calendar years at its ends,
/// and frequency fits on fewer than ten years (`entries` are the record's).
fn fit_warnings(
    study: &Study,
    r: &Record,
    steps: usize,
    entries: &[ElementRecord],
    warnings: &mut Vec<RecordWarning>,
) {
    let step_s = (r.step_h * 3600.0).round() as i64;
    let partial = incomplete_years(r.start_s, step_s, steps);
    if !partial.is_empty() {
        warnings.push(RecordWarning::Plain(Warning::RecordIncompleteYears {
            record: r.name.clone(),
            years: partial
                .iter()
                .map(|&(y, k, m)| (y, 100.0 * k as f64 / m.max(1) as f64))
                .collect(),
        }));
    }
    let complete_years = entries.first().map_or(0, |e| e.annual_peaks_cfs.len());
    if complete_years < 10 {
        warnings.push(RecordWarning::Plain(Warning::RecordShortFit {
            record: r.name.clone(),
            element: None,
            years: complete_years,
        }));
        return;
    }
    for en in entries {
        let fitted = en.annual_peaks_cfs.len() - en.zero_years.len();
        if en.lp3.is_some() && fitted < 10 {
            warnings.push(RecordWarning::Plain(Warning::RecordShortFit {
                record: r.name.clone(),
                element: Some(format!(
                    "{} \"{}\" ({})",
                    en.kind.label(),
                    en.element,
                    study.conditions[en.condition]
                )),
                years: fitted,
            }));
        }
    }
}

/// How a condition's times above the control's levels compare with the
/// baseline's.
#[derive(Debug, Clone, Copy, PartialEq)]
struct LevelComparison {
    /// Whether every level is within the tolerance.
    pass: bool,
    /// The largest relative excess of the condition's count over the
    /// baseline's (infinite where the baseline's is zero and the
    /// condition's is not; negative infinity with no levels).
    worst_relative_excess: f64,
    /// The level where it occurs.
    worst_level: usize,
}

/// Compares the intervals above each level of a condition with the
/// baseline's: a level fails when the condition's count exceeds the
/// baseline's times (1 + `tolerance`), or is above zero where the
/// baseline's is zero.
fn compare_levels(
    baseline_counts: &[usize],
    condition_counts: &[usize],
    tolerance: f64,
) -> LevelComparison {
    let mut worst = (f64::NEG_INFINITY, 0usize);
    let mut pass = true;
    for (k, (&base, &cond)) in baseline_counts.iter().zip(condition_counts).enumerate() {
        let (excess, bad) = if base == 0 {
            (if cond > 0 { f64::INFINITY } else { 0.0 }, cond > 0)
        } else {
            (
                (cond as f64 - base as f64) / base as f64,
                cond as f64 > base as f64 * (1.0 + tolerance) + 1e-9,
            )
        };
        if bad {
            pass = false;
        }
        if excess > worst.0 {
            worst = (excess, k);
        }
    }
    LevelComparison {
        pass,
        worst_relative_excess: worst.0,
        worst_level: worst.1,
    }
}

/// The flow-duration controls of one record's points: each condition
/// against the baseline, or "not checked" for each when the baseline is
/// empty or is the only condition.
fn duration_comparisons(
    run: &RecordRun<'_>,
    durations: &DurationCounts,
    out: &mut Vec<DurationComparison>,
) {
    let study = run.study;
    let area = |pi: usize, c: usize| run.topology.area_to_point_ac(pi, c);
    for (pi, pt) in study.points.iter().enumerate() {
        let Some(dc) = &pt.durations else { continue };
        if study.one_condition() {
            // Nothing to compare the one condition with: "not checked".
            out.push(DurationComparison {
                point: pi,
                record: run.record.name.clone(),
                condition: study.baseline,
                area_ac: area(pi, study.baseline),
                baseline_area_ac: None,
                check: None,
            });
        } else if let Some(levels) = &durations.levels[pi] {
            let baseline_counts = &durations.exceedance_counts[study.baseline][pi];
            for c in (0..study.conditions.len()).filter(|&c| c != study.baseline) {
                let condition_counts = &durations.exceedance_counts[c][pi];
                let cmp = compare_levels(baseline_counts, condition_counts, dc.tolerance);
                let hours = |n: Option<&usize>| n.map(|&n| n as f64 * run.step_h).unwrap_or(0.0);
                let baseline_time_h = hours(baseline_counts.get(cmp.worst_level));
                out.push(DurationComparison {
                    point: pi,
                    record: run.record.name.clone(),
                    condition: c,
                    area_ac: area(pi, c),
                    baseline_area_ac: Some(area(pi, study.baseline)),
                    check: Some(DurationCheck {
                        from_cfs: levels.from_cfs,
                        to_cfs: levels.to_cfs,
                        levels: levels.levels_cfs.len(),
                        tolerance: dc.tolerance,
                        worst_flow_cfs: levels
                            .levels_cfs
                            .get(cmp.worst_level)
                            .copied()
                            .unwrap_or(0.0),
                        baseline_time_h,
                        time_h: hours(condition_counts.get(cmp.worst_level)),
                        allowed_time_h: baseline_time_h * (1.0 + dc.tolerance),
                        worst_relative_excess: cmp
                            .worst_relative_excess
                            .is_finite()
                            .then_some(cmp.worst_relative_excess),
                        pass: cmp.pass,
                    }),
                });
            }
        } else if study.baseline_empty {
            for c in study.simulated_conditions() {
                out.push(DurationComparison {
                    point: pi,
                    record: run.record.name.clone(),
                    condition: c,
                    area_ac: area(pi, c),
                    baseline_area_ac: None,
                    check: None,
                });
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn incomplete_years_are_those_under_ninety_percent_of_their_intervals() {
        // contract (scenario-format.md, Long records): an interval belongs to
        // the calendar year of its start; years under 90 % of their
        // intervals are incomplete. Hourly from 1 March 2001 to 1 March
        // 2004: 2001 holds 306 of 365 days, 2004 holds 60 of 366.
        let start = calendar::day_number(2001, 3, 1).unwrap_or_default() * 86_400;
        let end = calendar::day_number(2004, 3, 1).unwrap_or_default() * 86_400;
        let n = ((end - start) / 3600) as usize;
        assert_eq!(
            incomplete_years(start, 3600, n),
            vec![(2001, 306 * 24, 365 * 24), (2004, 60 * 24, 366 * 24)]
        );
        // whole years: none
        let start = calendar::day_number(2001, 1, 1).unwrap_or_default() * 86_400;
        let end = calendar::day_number(2003, 1, 1).unwrap_or_default() * 86_400;
        assert!(incomplete_years(start, 3600, ((end - start) / 3600) as usize).is_empty());
        // 2 December to 31 December 2001 of a one-month record: 30 of 365 days
        let start = calendar::day_number(2001, 12, 2).unwrap_or_default() * 86_400;
        assert_eq!(incomplete_years(start, 86_400, 30), vec![(2001, 30, 365)]);
    }

    #[test]
    fn the_volume_lagged_past_the_end_is_what_add_lagged_drops() {
        // common practice, no published source: the volume lost is the sum
        // over the source less the sum that lands in the target.
        let src: Vec<f64> = (0..50)
            .map(|k| (k as f64 * 0.3).sin().abs() * 10.0)
            .collect();
        for lag_h in [0.0, 1.0, 2.5, 7.25, 60.0, 1e18] {
            let step_h = 0.5;
            let mut dst = vec![0.0; src.len()];
            network::add_lagged(&mut dst, &src, lag_h, step_h);
            let lost_sum = stats::sum(&src) - stats::sum(&dst);
            let got = lagged_past_end_ft3(&src, src.len(), lag_h, step_h);
            assert!(
                (got - lost_sum * step_h * 3600.0).abs() < 1e-9 * stats::sum(&src) * 1800.0,
                "lag {lag_h}: {got} vs {}",
                lost_sum * step_h * 3600.0
            );
        }
    }

    #[test]
    fn a_level_fails_above_the_baseline_count_times_one_plus_the_tolerance() {
        // contract (scenario-format.md, Long records, durations): at each
        // level the condition's time may exceed the baseline's by the
        // tolerance; where the baseline never reaches a level, any time fails.
        let baseline = [100, 50, 10, 0];
        let within = compare_levels(&baseline, &[110, 55, 11, 0], 0.1);
        assert!(within.pass);
        assert_eq!(within.worst_level, 0);
        assert!((within.worst_relative_excess - 0.1).abs() < 1e-12);
        let over = compare_levels(&baseline, &[100, 56, 10, 0], 0.1);
        assert!(!over.pass);
        assert_eq!(over.worst_level, 1);
        assert!((over.worst_relative_excess - 0.12).abs() < 1e-12);
        let new_level = compare_levels(&baseline, &[90, 40, 5, 1], 0.1);
        assert!(!new_level.pass);
        assert_eq!(new_level.worst_level, 3);
        assert!(new_level.worst_relative_excess.is_infinite());
        // fewer intervals everywhere: passes, the worst excess is negative
        let below = compare_levels(&baseline, &[50, 25, 5, 0], 0.0);
        assert!(below.pass);
        assert_eq!(below.worst_level, 3);
        assert_eq!(below.worst_relative_excess, 0.0);
    }

    #[test]
    fn duration_levels_span_the_rule_evenly_in_log() {
        // common practice, no published source: levels evenly spaced in log
        // between the two flows of the rule, in either order.
        let fit = stats::Lp3Fit {
            mean_log10: 1.0,
            std_log10: 0.0,
            skew: 0.0,
            n: 20,
        };
        let q = fit.quantile(2.0);
        assert!((q - 10.0).abs() < 1e-9, "{q}");
        let dc = DurationControl {
            from: (0.5, 2.0),
            to: (0.1, 2.0),
            tolerance: 0.1,
            text: "from 50% Q2 to 10% Q2".into(),
        };
        let d = duration_levels(&dc, &fit);
        assert!((d.from_cfs - 1.0).abs() < 1e-9 && (d.to_cfs - 5.0).abs() < 1e-9);
        assert_eq!(d.levels_cfs.len(), DURATION_LEVELS);
        assert!((d.levels_cfs[0] - 1.0).abs() < 1e-9);
        assert!((d.levels_cfs[DURATION_LEVELS - 1] - 5.0).abs() < 1e-9);
        let ratio = d.levels_cfs[1] / d.levels_cfs[0];
        for w in d.levels_cfs.windows(2) {
            assert!((w[1] / w[0] - ratio).abs() < 1e-9);
        }
    }
}
