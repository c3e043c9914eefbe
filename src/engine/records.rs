//! Long records (continuous simulation): a gauge record of years of rain
//! through the same network, with flow statistics per element and
//! flow-duration control at points.
//!
//! Memory stays bounded: each element's series is reduced to its statistics
//! as soon as it has been added to what it drains to; only the points'
//! series are kept (they are compared across conditions).

use crate::cli::output::{self, Staging};
use crate::engine::network;
use crate::engine::network::SimulationError;
use crate::error::Error;
use crate::methods::moisture;
use crate::methods::pond;
use crate::methods::stats;
use crate::methods::unit_hydrograph;
use crate::model::{ElementKind, MoistureMode, Record, Study, Target};
use crate::report::plot;
use crate::report::summary::{ComparisonOut, DurationOut, Out, PondCheckOut};
use crate::util::calendar;
use crate::util::units::{Quantity, sig};
use crate::warning::Warning;
use serde::Serialize;
use std::fmt::Write;

/// Return periods of the frequency table, years.
pub const RETURN_PERIODS: [f64; 7] = [1.5, 2.0, 5.0, 10.0, 25.0, 50.0, 100.0];
/// Exceedance fractions of the flow-duration table.
pub const EXCEEDANCES: [f64; 9] = [0.0001, 0.001, 0.01, 0.05, 0.1, 0.2, 0.3, 0.5, 0.9];

/// One year of the annual maximum series.
#[derive(Debug, Clone, Serialize)]
pub struct AnnualPeak {
    /// Calendar year.
    pub year: i32,
    /// Peak flow.
    pub peak_flow: f64,
}

/// A frequency flow.
#[derive(Debug, Clone, Serialize)]
pub struct FreqOut {
    /// Return period, years.
    pub return_period: f64,
    /// Flow.
    pub flow: f64,
}

/// A flow-duration point.
#[derive(Debug, Clone, Serialize)]
pub struct DurOut {
    /// Fraction of time equalled or exceeded.
    pub exceedance: f64,
    /// Flow.
    pub flow: f64,
}

/// A stage-duration point (ponds).
#[derive(Debug, Clone, Serialize)]
pub struct StageDurOut {
    /// Fraction of time equalled or exceeded.
    pub exceedance: f64,
    /// Stage.
    pub stage: f64,
}

/// An annual maximum stage (ponds).
#[derive(Debug, Clone, Serialize)]
pub struct AnnualStage {
    /// Calendar year.
    pub year: i32,
    /// Peak stage.
    pub peak_stage: f64,
}

/// One `records` entry of `summary.json`.
#[derive(Debug, Clone, Serialize)]
pub struct RecordOut {
    /// Record.
    pub record: String,
    /// Condition.
    pub condition: String,
    /// Element or point.
    pub element: String,
    /// catchment | pond | inflow | point.
    pub kind: &'static str,
    /// Start of the first interval.
    pub start: String,
    /// End of the last interval.
    pub end: String,
    /// Intervals between them.
    pub steps: usize,
    /// Rain over the record.
    pub rain_depth: f64,
    /// Runoff depth over the contributing area.
    pub runoff_depth: f64,
    /// Runoff or outflow volume.
    pub volume: f64,
    /// Peak flow.
    pub peak_flow: f64,
    /// When.
    pub peak_time: String,
    /// Annual maximum series (complete years).
    pub annual_peaks: Vec<AnnualPeak>,
    /// Years left out for less than 90 % coverage.
    pub incomplete_years: Vec<i32>,
    /// Years with zero peak, left out of the fit.
    pub zero_years: Vec<i32>,
    /// LP3 frequency flows.
    pub frequency: Vec<FreqOut>,
    /// LP3 fit: mean, standard deviation and skew of log10 peaks.
    pub lp3: Option<[f64; 3]>,
    /// Flow-duration curve.
    pub flow_duration: Vec<DurOut>,
    /// Number of rain events (catchments, event mode).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub events: Option<usize>,
    /// Stage duration (ponds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub stage_duration: Option<Vec<StageDurOut>>,
    /// Annual maximum stage (ponds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub annual_max_stage: Option<Vec<AnnualStage>>,
    /// Mass-balance error of the routing (ponds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub mass_balance_error: Option<f64>,
}

/// What the records produced.
#[derive(Debug, Clone, Default)]
pub struct RecordsResult {
    /// `records` entries as JSON values.
    pub json: Vec<serde_json::Value>,
    /// Typed entries.
    pub entries: Vec<RecordOut>,
    /// Flow-duration comparisons.
    pub comparisons: Vec<ComparisonOut>,
    /// Markdown section.
    pub markdown: String,
    /// Plot data per record and point.
    pub plots: Vec<(String, String, PlotData)>,
    /// Seconds spent per stage (excess, convolution, routing, statistics) and intervals simulated.
    pub timings: Timings,
    /// What the records could not see or resolve (overtopping, water left
    /// at the end, runoff lagged past the end, incomplete years, short fits,
    /// mass balance).
    pub warnings: Vec<Warning>,
    /// Overtopping checks of ponds over each record (one per pond and
    /// condition that has a top); a failure counts in the exit code.
    pub pond_checks: Vec<PondCheckOut>,
}

/// Seconds spent in each stage of the long records, for benchmarks.
#[derive(Debug, Clone, Copy, Default)]
pub struct Timings {
    /// Rain at the step.
    pub rain_s: f64,
    /// Excess rainfall (moisture accounting) and its unit-hydrograph
    /// convolution, computed together one rainy interval at a time (the
    /// benchmarks time each alone).
    pub runoff_s: f64,
    /// Pond routing.
    pub routing_s: f64,
    /// Statistics (annual series, frequency, durations) and plot data.
    pub statistics_s: f64,
    /// Intervals simulated (summed over records).
    pub intervals: usize,
}

/// Everything a record's point plots need.
#[derive(Debug, Clone)]
pub struct PlotData {
    /// Flow-duration curves.
    pub duration: plot::DurationPlot,
    /// Frequency plot.
    pub frequency: plot::FrequencyPlot,
    /// Overview of daily maxima.
    pub overview: plot::OverviewPlot,
}

/// (condition, point) indices.
type PointKey = (usize, usize);
/// (exceedance, flow) pairs of a plotted curve.
type Curve = Vec<(f64, f64)>;

/// Exceedance fractions of the plotted flow-duration curves (log-spaced).
fn plot_exceedances() -> Vec<f64> {
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
    let (peak, peak_index) = match scan.peak {
        Some((v, i)) if v > 0.0 => (v, i),
        _ => (0.0, 0),
    };
    Stats {
        peak,
        peak_index,
        volume_ft3: network::volume_from_sum_ft3(scan.sum, values, step_h),
        scan,
    }
}

/// Who a record entry is about.
struct Subject<'a> {
    cond: &'a str,
    element: &'a str,
    kind: &'static str,
    area_ac: f64,
}

/// Builds the frequency and duration parts of a record entry.
fn entry(
    r: &Record,
    who: Subject<'_>,
    values: &[f64],
    st: &Stats,
    rain_in: f64,
    o: &Out,
    fdc: Option<Vec<f64>>,
) -> RecordOut {
    let Subject {
        cond,
        element,
        kind,
        area_ac,
    } = who;
    let flow_conv = |q: f64| o.flow(q);
    let step_s = (r.step_h * 3600.0).round() as i64;
    let n = values.len().saturating_sub(1);
    let mut annual_peaks = Vec::new();
    let mut incomplete = Vec::new();
    let mut zero = Vec::new();
    let mut fit_values = Vec::new();
    for a in &st.scan.annual {
        if (a.intervals as f64) < 0.9 * a.expected_intervals as f64 {
            incomplete.push(a.year);
            continue;
        }
        annual_peaks.push(AnnualPeak {
            year: a.year,
            peak_flow: flow_conv(a.peak),
        });
        if a.peak > 0.0 {
            fit_values.push(a.peak);
        } else {
            zero.push(a.year);
        }
    }
    let fit = stats::fit_lp3(&fit_values);
    let frequency = match &fit {
        Some(f) => RETURN_PERIODS
            .iter()
            .map(|&t| FreqOut {
                return_period: t,
                flow: flow_conv(f.quantile(t)),
            })
            .collect(),
        None => Vec::new(),
    };
    let fdc = fdc.unwrap_or_else(|| st.scan.flow_duration(values, &EXCEEDANCES));
    RecordOut {
        record: r.name.clone(),
        condition: cond.to_string(),
        element: element.to_string(),
        kind,
        start: calendar::format_timestamp(r.start_s),
        end: calendar::format_timestamp(r.start_s + n as i64 * step_s),
        steps: n,
        rain_depth: o.depth(rain_in),
        runoff_depth: if area_ac > 0.0 {
            o.depth(st.volume_ft3 / (area_ac * crate::util::units::FT2_PER_AC) * 12.0)
        } else {
            0.0
        },
        volume: o.volume(st.volume_ft3),
        peak_flow: flow_conv(st.peak),
        peak_time: calendar::format_timestamp(r.start_s + st.peak_index as i64 * step_s),
        annual_peaks,
        incomplete_years: incomplete,
        zero_years: zero,
        frequency,
        lp3: fit.as_ref().map(|f| [f.mean_log10, f.std_log10, f.skew]),
        flow_duration: EXCEEDANCES
            .iter()
            .zip(fdc)
            .map(|(&e, q)| DurOut {
                exceedance: e,
                flow: flow_conv(q),
            })
            .collect(),
        events: None,
        stage_duration: None,
        annual_max_stage: None,
        mass_balance_error: None,
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
                let tp = unit_hydrograph::time_to_peak_h(
                    r.step_h,
                    crate::methods::timing::lag_h(c.tc_h),
                );
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

/// Runs every record for every condition.
///
/// # Errors
/// A gauge whose rain cannot be simulated ([`rain_at_step`]), a pond that
/// cannot be routed, or a result that is not a finite number
/// ([`SimulationError`]).
pub fn run(study: &Study, progress: bool) -> Result<RecordsResult, Error> {
    let mut res = RecordsResult::default();
    let o = Out(study.units);
    for r in &study.records {
        let step_h = r.step_h;
        let step_s = (step_h * 3600.0).round() as i64;
        let n = record_steps(r);
        let record_clock = std::time::Instant::now();
        let routing_before = res.timings.routing_s + res.timings.runoff_s;
        let clock = std::time::Instant::now();
        // At the gauge interval the record's own depths are the rain per step.
        let rain = rain_at_step(r)?;
        let run_name = format!("record \"{}\"", r.name);
        res.timings.rain_s += clock.elapsed().as_secs_f64();
        res.timings.intervals += n;
        let rain_total = stats::sum(&rain);
        let len = n + 1;
        let month_of = |k: usize| calendar::month_of(r.start_s + k as i64 * step_s);
        let bar = (progress && n > 2_000_000).then(|| {
            let b =
                indicatif::ProgressBar::new((study.conditions.len() * study.elements.len()) as u64);
            b.set_message(format!("record {}", r.name));
            b
        });
        let nc = study.conditions.len();
        let np = study.points.len();
        // The baseline goes first, so that the flow levels of every point's
        // duration control are known while each condition's series is at
        // hand; the series is then reduced to its times above those levels
        // and its daily maxima, and its buffer reused.
        // An empty baseline is not simulated.
        let order: Vec<usize> = if study.baseline < nc && !study.baseline_empty {
            std::iter::once(study.baseline)
                .chain((0..nc).filter(|&c| c != study.baseline))
                .collect()
        } else {
            study.simulated_conditions()
        };
        let first_entry = res.entries.len();
        let per_day = ((24.0 / step_h).round() as usize).max(1);
        // Per point: the duration control's flow range and its 100 levels.
        let mut control: Vec<Option<(f64, f64, Vec<f64>)>> = vec![None; np];
        // Per condition and point: intervals above each level; daily maxima.
        let mut counts: Vec<Vec<Vec<usize>>> = vec![vec![Vec::new(); np]; nc];
        let mut daily_max: Vec<Vec<Vec<f64>>> = vec![vec![Vec::new(); np]; nc];
        let mut point_curves: Vec<(PointKey, Curve)> = Vec::new();
        // Buffers are reused between elements: fresh 80-MB vectors cost
        // more in page faults than the arithmetic on them.
        let mut pool = Pool::default();
        for &c in &order {
            let cname = &study.conditions[c];
            let mut inputs: Vec<Vec<f64>> = vec![Vec::new(); study.elements.len()];
            let mut points: Vec<Vec<f64>> = vec![Vec::new(); study.points.len()];
            // Runoff volume (ft3) each catchment generated over the record.
            let mut generated_ft3 = vec![0.0f64; study.elements.len()];
            let not_finite = |kind, element: &str, what, value| {
                Error::Simulation(SimulationError::NotFinite {
                    kind,
                    element: element.to_string(),
                    run: run_name.clone(),
                    condition: cname.clone(),
                    what,
                    value,
                })
            };
            for i in network::order(&study.elements, c) {
                let e = &study.elements[i];
                // Routing writes a pond's outflow from empty; the others add into zeros.
                let mut out = if matches!(e.kind, ElementKind::Pond(_)) {
                    pool.take_overwritten(0)
                } else {
                    pool.take(len)
                };
                let mut rec_entry;
                match &e.kind {
                    ElementKind::Catchment(cat) => {
                        let clock = std::time::Instant::now();
                        let tp = unit_hydrograph::time_to_peak_h(
                            step_h,
                            crate::methods::timing::lag_h(cat.tc_h),
                        );
                        let uh = unit_hydrograph::ordinates_cfs_per_in(
                            cat.shape,
                            cat.area_ac,
                            tp,
                            step_h,
                        );
                        // Each rainy interval's excess goes straight into the
                        // convolution (no excess series is stored), so the
                        // two stages are timed together.
                        let mut runoff_in = 0.0;
                        let events = match &r.moisture {
                            MoistureMode::Event {
                                dry_gap_h,
                                antecedent,
                                growing_months,
                            } => {
                                let opts = moisture::EventOptions {
                                    dry_gap_steps: moisture::dry_gap_steps_for(*dry_gap_h, step_h)
                                        .unwrap_or(1),
                                    antecedent: antecedent.then(|| moisture::AntecedentRule {
                                        growing_months: *growing_months,
                                        ..Default::default()
                                    }),
                                };
                                moisture::event_excess_each(
                                    &rain,
                                    step_h,
                                    cat.cn,
                                    cat.lambda,
                                    &opts,
                                    &month_of,
                                    |j, e| {
                                        runoff_in += e;
                                        unit_hydrograph::add_response(&mut out, j, e, &uh);
                                    },
                                )
                                .map_err(|e| Error::Compute {
                                    message: format!("record \"{}\": {e}", r.name),
                                })?
                            }
                            MoistureMode::Continuous { .. } => {
                                return Err(Error::Compute {
                                    message: format!(
                                        "record \"{}\": {}",
                                        r.name,
                                        moisture::MoistureError::ContinuousUnavailable
                                    ),
                                });
                            }
                        };
                        res.timings.runoff_s += clock.elapsed().as_secs_f64();
                        let st = series_stats(&out, r.start_s, step_s, step_h);
                        for (what, v) in [
                            ("runoff depth", runoff_in),
                            ("volume", st.volume_ft3),
                            ("peak flow", st.peak),
                        ] {
                            if !v.is_finite() {
                                return Err(not_finite("catchment", &e.name, what, v));
                            }
                        }
                        generated_ft3[i] =
                            runoff_in / 12.0 * cat.area_ac * crate::util::units::FT2_PER_AC;
                        rec_entry = entry(
                            r,
                            Subject {
                                cond: cname,
                                element: &e.name,
                                kind: "catchment",
                                area_ac: cat.area_ac,
                            },
                            &out,
                            &st,
                            rain_total,
                            &o,
                            None,
                        );
                        rec_entry.runoff_depth = o.depth(runoff_in);
                        rec_entry.events = Some(events);
                    }
                    ElementKind::Inflow(inf) => {
                        // An inflow hydrograph belongs to design storms; over a record it adds nothing.
                        let _ = inf;
                        let st = series_stats(&out, r.start_s, step_s, step_h);
                        rec_entry = entry(
                            r,
                            Subject {
                                cond: cname,
                                element: &e.name,
                                kind: "inflow",
                                area_ac: 0.0,
                            },
                            &out,
                            &st,
                            rain_total,
                            &o,
                            None,
                        );
                    }
                    ElementKind::Pond(p) => {
                        let inflow = std::mem::take(&mut inputs[i]);
                        let mut inflow = if inflow.is_empty() {
                            pool.take(len)
                        } else {
                            inflow
                        };
                        let dt_s = step_h * 3600.0;
                        let start = network::start_stage_ft(p);
                        // Table up to the start storage plus all the water
                        // that enters: the water cannot rise above it, and
                        // the grid's spacing grows with depth far above the
                        // outlets, so the table stays small however high that is.
                        let total = stats::sum(&inflow);
                        if !total.is_finite() {
                            return Err(not_finite("pond", &e.name, "inflow volume", total));
                        }
                        let max_storage = p.storage.volume_ft3(start) + total * dt_s * 1.02 + 1.0;
                        let table =
                            network::pond_table_to(p, dt_s, max_storage).map_err(|source| {
                                Error::Simulation(SimulationError::PondTable {
                                    pond: e.name.clone(),
                                    run: run_name.clone(),
                                    condition: cname.clone(),
                                    source,
                                })
                            })?;
                        let vin = network::volume_ft3(&inflow, step_h);
                        let clock = std::time::Instant::now();
                        // The inflow's buffer becomes the stage series.
                        let (storage_first, storage_last) =
                            pond::route_stage_in_place(&table, &mut inflow, start, &mut out);
                        res.timings.routing_s += clock.elapsed().as_secs_f64();
                        let mut stage = inflow;
                        let st = series_stats(&out, r.start_s, step_s, step_h);
                        let area = crate::engine::analysis::area_to_element_ac(study, i, c);
                        rec_entry = entry(
                            r,
                            Subject {
                                cond: cname,
                                element: &e.name,
                                kind: "pond",
                                area_ac: area,
                            },
                            &out,
                            &st,
                            rain_total,
                            &o,
                            None,
                        );
                        let am = if stage.len() > 1 {
                            stats::annual_maxima(r.start_s, step_s, &stage[1..])
                        } else {
                            Vec::new()
                        };
                        // The highest stage and when, from the annual maxima
                        // (NaN counts as missing there, so fewer intervals
                        // than values means a NaN stage).
                        let counted: usize = am.iter().map(|a| a.intervals).sum();
                        let top_stage = am
                            .iter()
                            .map(|a| (a.peak, a.peak_index + 1))
                            .max_by(|x, y| x.0.total_cmp(&y.0))
                            .unwrap_or((start, 0));
                        for (what, v) in [
                            ("volume", st.volume_ft3),
                            ("peak flow", st.peak),
                            (
                                "stage",
                                if counted + 1 == stage.len() {
                                    top_stage.0
                                } else {
                                    f64::NAN
                                },
                            ),
                            ("storage", storage_last),
                        ] {
                            if !v.is_finite() {
                                return Err(not_finite("pond", &e.name, what, v));
                            }
                        }
                        if let Some(top) = p.top_ft {
                            let over = top_stage.0 > top;
                            res.pond_checks.push(PondCheckOut {
                                pond: e.name.clone(),
                                storm: r.name.clone(),
                                condition: cname.clone(),
                                check: crate::engine::analysis::PondCheckKind::Overtopping,
                                value: Some(o.length(top_stage.0)),
                                limit: o.length(top),
                                pass: !over,
                            });
                            if over {
                                let lu = o.unit(Quantity::Length);
                                res.warnings.push(Warning::RecordOvertopped {
                                    pond: e.name.clone(),
                                    record: r.name.clone(),
                                    condition: cname.clone(),
                                    when: calendar::format_timestamp(
                                        r.start_s + top_stage.1 as i64 * step_s,
                                    ),
                                    stage: format!("{} {lu}", sig(o.length(top_stage.0), 5)),
                                    above: format!("{} {lu}", sig(o.length(top_stage.0 - top), 3)),
                                });
                            }
                        }
                        // Depths above the bottom (in place: the stages are
                        // no longer needed) spread over many binary
                        // exponents, which the duration ranking handles fastest.
                        let bottom = p.storage.bottom_ft();
                        for h in stage.iter_mut() {
                            *h = (*h - bottom).max(0.0);
                        }
                        let sd: Vec<f64> = stats::flow_duration(&stage, &EXCEEDANCES)
                            .into_iter()
                            .map(|d| d + bottom)
                            .collect();
                        rec_entry.stage_duration = Some(
                            EXCEEDANCES
                                .iter()
                                .zip(sd)
                                .map(|(&x, s)| StageDurOut {
                                    exceedance: x,
                                    stage: o.length(s),
                                })
                                .collect(),
                        );
                        rec_entry.annual_max_stage = Some(
                            am.iter()
                                .map(|a| AnnualStage {
                                    year: a.year,
                                    peak_stage: o.length(a.peak),
                                })
                                .collect(),
                        );
                        let vout = network::volume_ft3(&out, step_h);
                        let ds = storage_last - storage_first;
                        let mb = if vin > 0.0 {
                            (vin - vout - ds) / vin
                        } else {
                            0.0
                        };
                        rec_entry.mass_balance_error = Some(mb);
                        if mb.abs() > crate::engine::analysis::MASS_BALANCE_WARN {
                            res.warnings.push(Warning::MassBalance {
                                pond: e.name.clone(),
                                run: run_name.clone(),
                                condition: cname.clone(),
                                error: mb,
                            });
                        }
                        if vin > 0.0 && ds > crate::engine::analysis::MASS_BALANCE_WARN * vin {
                            res.warnings.push(Warning::RecordWaterLeft {
                                record: r.name.clone(),
                                condition: cname.clone(),
                                element: format!("pond \"{}\"", e.name),
                                left: format!(
                                    "{} {}",
                                    sig(o.volume(ds), 3),
                                    o.unit(Quantity::Volume)
                                ),
                                percent: 100.0 * ds / vin,
                                what: "is still stored in it",
                            });
                        }
                        pool.give(stage);
                    }
                }
                res.entries.push(rec_entry);
                let target = match e.to {
                    Target::Point(pi) => points.get_mut(pi),
                    Target::Element(j) => inputs.get_mut(j),
                };
                if target.is_some() && e.lag_h > 0.0 {
                    let lost = lagged_past_end_ft3(&out, len, e.lag_h, step_h);
                    if lost > 0.0 {
                        res.warnings.push(Warning::RecordLagPastEnd {
                            record: r.name.clone(),
                            condition: cname.clone(),
                            element: e.name.clone(),
                            lag_h: e.lag_h,
                            lost: format!(
                                "{} {}",
                                sig(o.volume(lost), 3),
                                o.unit(Quantity::Volume)
                            ),
                        });
                    }
                }
                if let Some(target) = target {
                    if target.is_empty() && e.lag_h == 0.0 && out.len() == len {
                        // The first series into a target, unshifted: it
                        // becomes the target's sum as it is.
                        *target = out;
                    } else {
                        if target.is_empty() {
                            *target = pool.take(len);
                        }
                        network::add_lagged(target, &out, e.lag_h, step_h);
                        pool.give(out);
                    }
                } else {
                    pool.give(out);
                }
                if let Some(b) = &bar {
                    b.inc(1);
                }
            }
            for (pi, p) in points.iter_mut().enumerate() {
                if p.is_empty() {
                    *p = pool.take(len);
                }
                let st = series_stats(p, r.start_s, step_s, step_h);
                let pname = &study.points[pi].name;
                if !st.volume_ft3.is_finite() {
                    return Err(not_finite("point", pname, "volume", st.volume_ft3));
                }
                // Runoff generated upstream that has not reached the point
                // when the record ends (in ponds, in the falling limbs of
                // the last storms, or lagged past the end).
                let entered: f64 = (0..study.elements.len())
                    .filter(|&j| crate::engine::analysis::reaches(study, j, pi))
                    .map(|j| generated_ft3[j])
                    .sum();
                let missing = entered - st.volume_ft3;
                if entered > 0.0 && missing > crate::engine::analysis::MASS_BALANCE_WARN * entered {
                    res.warnings.push(Warning::RecordWaterLeft {
                        record: r.name.clone(),
                        condition: cname.clone(),
                        element: format!("point \"{pname}\""),
                        left: format!("{} {}", sig(o.volume(missing), 3), o.unit(Quantity::Volume)),
                        percent: 100.0 * missing / entered,
                        what: "of the runoff generated upstream has not reached it",
                    });
                }
                let area = crate::engine::analysis::area_to_point_ac(study, pi, c);
                // The table's fractions and the plot's, in one ranking.
                let mut wanted = EXCEEDANCES.to_vec();
                wanted.extend(plot_exceedances());
                let mut all = st.scan.flow_duration(p, &wanted);
                let curve = all.split_off(EXCEEDANCES.len());
                point_curves.push((
                    (c, pi),
                    plot_exceedances()
                        .into_iter()
                        .zip(curve.into_iter().map(|v| o.flow(v)))
                        .collect::<Vec<_>>(),
                ));
                res.entries.push(entry(
                    r,
                    Subject {
                        cond: cname,
                        element: &study.points[pi].name,
                        kind: "point",
                        area_ac: area,
                    },
                    p,
                    &st,
                    rain_total,
                    &o,
                    Some(all),
                ));
                if let Some(dc) = &study.points[pi].durations {
                    if c == study.baseline
                        && let Some(be) = res.entries.last()
                        && let Some([m, s, g]) = be.lp3
                    {
                        let fit = stats::Lp3Fit {
                            mean_log10: m,
                            std_log10: s,
                            skew: g,
                            n: be.annual_peaks.len(),
                        };
                        let from = dc.from.0 * fit.quantile(dc.from.1);
                        let to = dc.to.0 * fit.quantile(dc.to.1);
                        let (lo, hi) = (from.min(to), from.max(to));
                        let levels: Vec<f64> = (0..100)
                            .map(|k| (lo.ln() + (hi.ln() - lo.ln()) * k as f64 / 99.0).exp())
                            .collect();
                        control[pi] = Some((lo, hi, levels));
                    }
                    if let Some((_, _, levels)) = &control[pi] {
                        counts[c][pi] = stats::times_above_levels(p, levels);
                    }
                }
                daily_max[c][pi] = p
                    .chunks(per_day)
                    .map(|ch| stats::max_value(ch).max(0.0))
                    .collect();
            }
            for p in points {
                pool.give(p);
            }
        }
        // Entries in the order of the conditions, as for design storms.
        res.entries[first_entry..].sort_by_key(|e| {
            study
                .conditions
                .iter()
                .position(|c| *c == e.condition)
                .unwrap_or(usize::MAX)
        });
        if let Some(b) = bar {
            b.finish_and_clear();
        }
        let partial = incomplete_years(r.start_s, step_s, n);
        if !partial.is_empty() {
            res.warnings.push(Warning::RecordIncompleteYears {
                record: r.name.clone(),
                years: partial
                    .iter()
                    .map(|&(y, k, m)| (y, 100.0 * k as f64 / m.max(1) as f64))
                    .collect(),
            });
        }
        let complete = res.entries[first_entry..]
            .first()
            .map_or(0, |e| e.annual_peaks.len());
        if complete < 10 {
            res.warnings.push(Warning::RecordShortFit {
                record: r.name.clone(),
                element: None,
                years: complete,
            });
        } else {
            for en in &res.entries[first_entry..] {
                let fitted = en.annual_peaks.len() - en.zero_years.len();
                if en.lp3.is_some() && fitted < 10 {
                    res.warnings.push(Warning::RecordShortFit {
                        record: r.name.clone(),
                        element: Some(format!("{} \"{}\" ({})", en.kind, en.element, en.condition)),
                        years: fitted,
                    });
                }
            }
        }
        // Flow-duration control and plots per point.
        for (pi, pt) in study.points.iter().enumerate() {
            let base_entry = res
                .entries
                .iter()
                .find(|e| {
                    e.record == r.name
                        && e.kind == "point"
                        && e.element == pt.name
                        && e.condition == study.conditions[study.baseline]
                })
                .cloned();
            if let (Some(dc), Some(_)) = (&pt.durations, &base_entry)
                && let Some((lo, hi, levels)) = &control[pi]
            {
                let (lo, hi) = (*lo, *hi);
                let tb = &counts[study.baseline][pi];
                for (c, cname) in study.conditions.iter().enumerate() {
                    if c == study.baseline {
                        continue;
                    }
                    let tc = &counts[c][pi];
                    let mut worst = (f64::NEG_INFINITY, 0usize);
                    let mut pass = true;
                    for (k, (&b, &x)) in tb.iter().zip(tc.iter()).enumerate() {
                        let excess = if b == 0 {
                            if x > 0 { f64::INFINITY } else { 0.0 }
                        } else {
                            (x as f64 - b as f64) / b as f64
                        };
                        let bad = if b == 0 {
                            x > 0
                        } else {
                            x as f64 > b as f64 * (1.0 + dc.tolerance) + 1e-9
                        };
                        if bad {
                            pass = false;
                        }
                        if excess > worst.0 {
                            worst = (excess, k);
                        }
                    }
                    let wl = levels.get(worst.1).copied().unwrap_or(0.0);
                    let hours = |n: Option<&usize>| n.map(|&n| n as f64 * step_h).unwrap_or(0.0);
                    let base_h = hours(tb.get(worst.1));
                    res.comparisons.push(ComparisonOut {
                        point: pt.name.clone(),
                        storm: None,
                        record: Some(r.name.clone()),
                        baseline: study.conditions[study.baseline].clone(),
                        condition: cname.clone(),
                        check: "flow duration",
                        status: if pass { "meets" } else { "exceeds" },
                        baseline_peak: None,
                        peak: None,
                        limit: None,
                        limit_text: duration_rule_text(dc),
                        pass: Some(pass),
                        area: o.area(crate::engine::analysis::area_to_point_ac(study, pi, c)),
                        baseline_area: Some(o.area(crate::engine::analysis::area_to_point_ac(
                            study,
                            pi,
                            study.baseline,
                        ))),
                        duration: Some(DurationOut {
                            from_flow: o.flow(lo),
                            to_flow: o.flow(hi),
                            levels: levels.len(),
                            tolerance: dc.tolerance,
                            worst_flow: o.flow(wl),
                            baseline_time_h: base_h,
                            time_h: hours(tc.get(worst.1)),
                            allowed_time_h: base_h * (1.0 + dc.tolerance),
                            worst_relative_excess: worst.0.is_finite().then_some(worst.0),
                        }),
                    });
                }
            } else if let Some(dc) = &pt.durations
                && study.baseline_empty
            {
                for c in study.simulated_conditions() {
                    res.comparisons.push(ComparisonOut {
                        point: pt.name.clone(),
                        storm: None,
                        record: Some(r.name.clone()),
                        baseline: study.conditions[study.baseline].clone(),
                        condition: study.conditions[c].clone(),
                        check: "flow duration",
                        status: crate::report::summary::NOT_CHECKED_NO_BASELINE,
                        baseline_peak: None,
                        peak: None,
                        limit: None,
                        limit_text: duration_rule_text(dc),
                        pass: None,
                        area: o.area(crate::engine::analysis::area_to_point_ac(study, pi, c)),
                        baseline_area: None,
                        duration: None,
                    });
                }
            }
            // Plot data.
            let fu = o.unit(Quantity::Flow).replace("m3/s", "m³/s");
            let mut curves = Vec::new();
            let mut observed = Vec::new();
            let mut fitted = Vec::new();
            let mut daily = Vec::new();
            for c in study.simulated_conditions() {
                let cname = &study.conditions[c];
                let curve = point_curves
                    .iter()
                    .find(|(k, _)| *k == (c, pi))
                    .map(|(_, v)| v.clone())
                    .unwrap_or_default();
                curves.push((cname.clone(), curve));
                if let Some(en) = res.entries.iter().find(|e| {
                    e.record == r.name
                        && e.kind == "point"
                        && e.element == pt.name
                        && &e.condition == cname
                }) {
                    let mut peaks: Vec<f64> = en
                        .annual_peaks
                        .iter()
                        .map(|a| a.peak_flow)
                        .filter(|v| *v > 0.0)
                        .collect();
                    peaks.sort_by(|a, b| b.total_cmp(a));
                    let m = peaks.len() as f64;
                    observed.push((
                        cname.clone(),
                        peaks
                            .iter()
                            .enumerate()
                            .map(|(i, &v)| ((m + 1.0) / (i as f64 + 1.0), v))
                            .collect(),
                    ));
                    if let Some([mu, sd, g]) = en.lp3 {
                        let f = stats::Lp3Fit {
                            mean_log10: mu,
                            std_log10: sd,
                            skew: g,
                            n: peaks.len(),
                        };
                        let ts = [
                            1.01, 1.1, 1.25, 1.5, 2.0, 3.0, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0,
                            200.0,
                        ];
                        fitted.push((
                            cname.clone(),
                            ts.iter().map(|&t| (t, o.flow(f.quantile(t)))).collect(),
                        ));
                    }
                }
                daily.push((
                    cname.clone(),
                    daily_max[c][pi].iter().map(|&q| o.flow(q)).collect(),
                ));
            }
            let (y, mo, d) = calendar::civil_from_days(r.start_s.div_euclid(86_400));
            let title = format!("{} - record \"{}\"", pt.name, r.name);
            let base = output::record_plot_base(&r.name, &pt.name);
            res.plots.push((
                format!("record {} at {}", r.name, pt.name),
                base,
                PlotData {
                    duration: plot::DurationPlot {
                        title: format!("Flow duration - {title}"),
                        flow_unit: fu.clone(),
                        curves,
                    },
                    frequency: plot::FrequencyPlot {
                        title: format!("Annual peaks - {title}"),
                        flow_unit: fu.clone(),
                        observed,
                        fitted,
                    },
                    overview: plot::OverviewPlot {
                        title: format!("Daily maximum flow - {title}"),
                        flow_unit: fu.clone(),
                        day_labels_start: (y, mo, d),
                        daily_max: daily,
                    },
                },
            ));
        }
        let inner = res.timings.routing_s + res.timings.runoff_s - routing_before;
        res.timings.statistics_s +=
            (record_clock.elapsed().as_secs_f64() - inner - res.timings.rain_s).max(0.0);
    }
    res.json = res
        .entries
        .iter()
        .filter_map(|e| serde_json::to_value(e).ok())
        .collect();
    res.markdown = markdown(study, &res);
    Ok(res)
}

/// A flow-duration rule as the report states it.
fn duration_rule_text(dc: &crate::model::DurationControl) -> String {
    format!("durations {} within {:.0} %", dc.text, dc.tolerance * 100.0)
}

/// Writes the record plots and returns (caption, file) pairs.
///
/// # Errors
/// When a plot cannot be drawn or written.
pub fn write_plots(
    _study: &Study,
    res: &RecordsResult,
    stage: &Staging,
) -> Result<Vec<(String, String)>, Error> {
    let mut out = Vec::new();
    for (cap, base, p) in &res.plots {
        let err = |e: plot::PlotError| Error::Write {
            path: stage.temp_dir().to_path_buf(),
            message: e.to_string(),
        };
        let f1 = format!("{base}-duration.png");
        stage.write(&f1, &plot::flow_duration_png(&p.duration).map_err(err)?)?;
        out.push((format!("{cap}: flow duration"), f1));
        let f2 = format!("{base}-frequency.png");
        stage.write(&f2, &plot::frequency_png(&p.frequency).map_err(err)?)?;
        out.push((format!("{cap}: annual peaks"), f2));
        let f3 = format!("{base}-overview.png");
        stage.write(&f3, &plot::overview_png(&p.overview).map_err(err)?)?;
        out.push((format!("{cap}: daily maxima"), f3));
    }
    Ok(out)
}

fn markdown(study: &Study, res: &RecordsResult) -> String {
    if study.records.is_empty() {
        return String::new();
    }
    let o = Out(study.units);
    let fu = o.unit(Quantity::Flow);
    let du = o.unit(Quantity::Depth);
    let mut m = String::new();
    let _ = writeln!(m, "## Long records\n");
    let _ = writeln!(
        m,
        "Event curve-number accounting (events split by dry gaps), unit hydrographs and storage-indication over the whole record. Frequency by log-Pearson Type III fitted to log10 annual peaks by moments with the station skew (Bulletin 17B frequency factors from the gamma inverse); Weibull plotting positions; complete calendar years only (>= 90 % of intervals).\n"
    );
    for r in &study.records {
        let _ = writeln!(m, "### Record \"{}\"\n", r.name);
        let _ = writeln!(
            m,
            "| condition | element | kind | rain [{du}] | runoff [{du}] | peak [{fu}] | when | Q2 | Q10 | Q100 | 1 % time | 0.1 % time |\n|---|---|---|---:|---:|---:|---|---:|---:|---:|---:|---:|"
        );
        for e in res.entries.iter().filter(|e| e.record == r.name) {
            let q = |t: f64| {
                e.frequency
                    .iter()
                    .find(|f| (f.return_period - t).abs() < 1e-9)
                    .map(|f| sig(f.flow, 4))
                    .unwrap_or_else(|| "-".into())
            };
            let d = |x: f64| {
                e.flow_duration
                    .iter()
                    .find(|f| (f.exceedance - x).abs() < 1e-12)
                    .map(|f| sig(f.flow, 4))
                    .unwrap_or_else(|| "-".into())
            };
            let _ = writeln!(
                m,
                "| {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} | {} |",
                e.condition,
                e.element,
                e.kind,
                sig(e.rain_depth, 5),
                sig(e.runoff_depth, 5),
                sig(e.peak_flow, 4),
                e.peak_time,
                q(2.0),
                q(10.0),
                q(100.0),
                d(0.01),
                d(0.001)
            );
        }
        let _ = writeln!(m);
        if res
            .comparisons
            .iter()
            .any(|c| c.record.as_deref() == Some(&r.name))
        {
            let _ = writeln!(
                m,
                "The flow-duration control of this record is reported with the design points.\n"
            );
        }
    }
    m
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
}
