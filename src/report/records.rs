//! The long records in output units: the `records` entries of
//! `summary.json`, the flow-duration comparisons, the overtopping checks and
//! warnings, the Markdown section and the plot data, all from the engine's
//! typed [`RecordsResult`] (internal units).

use crate::engine::records::{
    DurationComparison, EXCEEDANCES, ElementRecord, OvertoppingCheck, RecordWarning, RecordsResult,
    plot_exceedances,
};
use crate::methods::stats;
use crate::model::{DurationControl, Study};
use crate::report::plot;
use crate::report::summary::{
    ComparisonKind, ComparisonOut, ComparisonStatus, DurationOut, Out, PondCheckOut,
};
use crate::report::table::{Column, Table};
use crate::util::calendar;
use crate::util::units::{Quantity, sig};
use crate::warning::Warning;
use serde::Serialize;
use std::fmt::Write;

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

/// One `records` entry of `summary.json`, in output units.
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
    /// LP3 fit: mean, standard deviation and skew of log10 peaks (cfs);
    /// the skew is the one used (weighted when a regional skew is given).
    pub lp3: Option<[f64; 3]>,
    /// Bulletin 17B details of the fit: the low-outlier test and the skew.
    pub frequency_method: Option<FrequencyMethodOut>,
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
    /// Volume infiltrated over the record (ponds that lose water).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub infiltrated_volume: Option<f64>,
    /// Volume evaporated over the record (ponds that lose water).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub evaporated_volume: Option<f64>,
    /// Rain less runoff over the record (catchments).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub infiltration_depth: Option<f64>,
    /// Curve numbers at the events' start (catchments with events).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub event_cn: Option<EventCnOut>,
}

/// What Bulletin 17B's low-outlier test did, in output units.
#[derive(Debug, Clone, Serialize)]
pub struct LowOutlierOut {
    /// Whether the test was applied (10 or more peaks).
    pub applied: bool,
    /// Peaks tested.
    pub n: usize,
    /// K_N used (null when not applied).
    pub kn: Option<f64>,
    /// Threshold flow (null when not applied).
    pub threshold: Option<f64>,
    /// Peaks below it, left out of the fit (flows, ascending).
    pub removed: Vec<f64>,
    /// Share of the peaks kept, applied to the exceedance probabilities.
    pub kept_share: f64,
}

/// The skew of a frequency fit.
#[derive(Debug, Clone, Serialize)]
pub struct FrequencyMethodOut {
    /// The low-outlier test.
    pub low_outliers: LowOutlierOut,
    /// Station skew of the peaks kept.
    pub station_skew: f64,
    /// Regional skew as given (null without one).
    pub regional_skew: Option<f64>,
    /// Its mean square error.
    pub regional_skew_mse: Option<f64>,
    /// Mean square error of the station skew (Bulletin 17B eq. 6).
    pub station_skew_mse: Option<f64>,
    /// The skew the flows use.
    pub skew_used: f64,
}

/// The Bulletin 17B details of one entry, in output units.
fn frequency_method(o: Out, a: &stats::FrequencyAnalysis) -> FrequencyMethodOut {
    let lo = &a.low_outliers;
    let finite = |x: f64| x.is_finite().then_some(x);
    FrequencyMethodOut {
        low_outliers: LowOutlierOut {
            applied: lo.applied,
            n: lo.n,
            kn: finite(lo.kn),
            threshold: finite(lo.threshold).map(|q| o.flow(q)),
            removed: lo.removed.iter().map(|&q| o.flow(q)).collect(),
            kept_share: a.kept_share(),
        },
        station_skew: a.station_skew,
        regional_skew: a.weighting.map(|w| w.regional.skew),
        regional_skew_mse: a.weighting.map(|w| w.regional.mse),
        station_skew_mse: a.weighting.map(|w| w.station_mse),
        skew_used: a.fit.skew,
    }
}

/// One line per entry on what the frequency fit did: low outliers left out
/// and the skew weighting (nothing for a fit on the station skew with no
/// outlier).
fn frequency_notes(m: &mut String, entries: &[&RecordOut], fu: &str) {
    let mut lines = Vec::new();
    for e in entries {
        let Some(f) = &e.frequency_method else {
            continue;
        };
        let lo = &f.low_outliers;
        let mut parts = Vec::new();
        if !lo.removed.is_empty() {
            parts.push(format!(
                "{} low outlier{} below {} {fu} (K_N {:.3}, {} peaks) left out: {}; exceedance probabilities scaled by {:.3}",
                lo.removed.len(),
                if lo.removed.len() == 1 { "" } else { "s" },
                lo.threshold.map(|t| sig(t, 4)).unwrap_or_else(|| "-".into()),
                lo.kn.unwrap_or(f64::NAN),
                lo.n,
                lo.removed.iter().map(|q| sig(*q, 4)).collect::<Vec<_>>().join(", "),
                lo.kept_share
            ));
        }
        if let (Some(r), Some(rm), Some(sm)) =
            (f.regional_skew, f.regional_skew_mse, f.station_skew_mse)
        {
            parts.push(format!(
                "skew {:.3} weighted from station {:.3} (MSE {:.4}) and regional {:.3} (MSE {:.4})",
                f.skew_used, f.station_skew, sm, r, rm
            ));
        }
        if !parts.is_empty() {
            lines.push(format!(
                "- {}, {}: {}.",
                e.condition,
                e.element,
                parts.join("; ")
            ));
        }
    }
    let tested = entries.iter().any(|e| {
        e.frequency_method
            .as_ref()
            .is_some_and(|f| f.low_outliers.applied)
    });
    let untested = entries.iter().any(|e| {
        e.frequency_method
            .as_ref()
            .is_some_and(|f| !f.low_outliers.applied)
    });
    let _ = writeln!(
        m,
        "Bulletin 17B low-outlier test (K_N at the 10 % level): {}{}.\n",
        if tested {
            "applied to every series of 10 or more annual peaks"
        } else {
            "not applied (fewer than 10 annual peaks)"
        },
        if tested && untested {
            "; shorter series are not tested"
        } else {
            ""
        }
    );
    for l in &lines {
        let _ = writeln!(m, "{l}");
    }
    if !lines.is_empty() {
        let _ = writeln!(m);
    }
}

/// The `event_cn` of a catchment's record entry.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct EventCnOut {
    /// Smallest.
    pub min: f64,
    /// Mean over the events.
    pub mean: f64,
    /// Largest.
    pub max: f64,
}

/// Everything a record's point plots need, in output units.
#[derive(Debug, Clone)]
pub struct PlotData {
    /// Flow-duration curves.
    pub duration: plot::DurationPlot,
    /// Frequency plot.
    pub frequency: plot::FrequencyPlot,
    /// Overview of daily maxima.
    pub overview: plot::OverviewPlot,
}

/// The plots of one point over one record.
#[derive(Debug, Clone)]
pub struct RecordPlots {
    /// Caption stem ("record NAME at POINT").
    pub caption: String,
    /// Record name.
    pub record: String,
    /// Point name.
    pub point: String,
    /// What to draw.
    pub data: PlotData,
}

/// Return periods (years) of the fitted frequency curve as plotted.
const PLOTTED_RETURN_PERIODS: [f64; 13] = [
    1.01, 1.1, 1.25, 1.5, 2.0, 3.0, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0, 200.0,
];

/// One record entry in output units.
pub fn entry(study: &Study, e: &ElementRecord) -> RecordOut {
    let o = Out(study.units);
    let pond = e.pond.as_ref();
    RecordOut {
        record: e.record.clone(),
        condition: study.conditions[e.condition].clone(),
        element: e.element.clone(),
        kind: e.kind.label(),
        start: calendar::format_timestamp(e.start_s),
        end: calendar::format_timestamp(e.start_s + e.steps as i64 * e.step_s),
        steps: e.steps,
        rain_depth: o.depth(e.rain_in),
        runoff_depth: o.depth(e.runoff_in),
        volume: o.volume(e.volume_ft3),
        peak_flow: o.flow(e.peak_cfs),
        peak_time: calendar::format_timestamp(e.start_s + e.peak_index as i64 * e.step_s),
        annual_peaks: e
            .annual_peaks_cfs
            .iter()
            .map(|a| AnnualPeak {
                year: a.year,
                peak_flow: o.flow(a.value),
            })
            .collect(),
        incomplete_years: e.incomplete_years.clone(),
        zero_years: e.zero_years.clone(),
        frequency: e
            .frequency
            .iter()
            .map(|f| FreqOut {
                return_period: f.return_period_yr,
                flow: o.flow(f.flow_cfs),
            })
            .collect(),
        lp3: e.lp3.map(|f| [f.mean_log10, f.std_log10, f.skew]),
        frequency_method: e
            .frequency_analysis
            .as_ref()
            .map(|a| frequency_method(o, a)),
        flow_duration: EXCEEDANCES
            .iter()
            .zip(&e.flow_duration_cfs)
            .map(|(&x, &q)| DurOut {
                exceedance: x,
                flow: o.flow(q),
            })
            .collect(),
        events: e.events,
        stage_duration: pond.map(|p| {
            EXCEEDANCES
                .iter()
                .zip(&p.stage_duration_ft)
                .map(|(&x, &s)| StageDurOut {
                    exceedance: x,
                    stage: o.length(s),
                })
                .collect()
        }),
        annual_max_stage: pond.map(|p| {
            p.annual_max_stage_ft
                .iter()
                .map(|a| AnnualStage {
                    year: a.year,
                    peak_stage: o.length(a.value),
                })
                .collect()
        }),
        mass_balance_error: pond.map(|p| p.mass_balance_error),
        infiltrated_volume: pond
            .and_then(|p| p.lost)
            .map(|l| o.volume(l.infiltrated_ft3)),
        evaporated_volume: pond
            .and_then(|p| p.lost)
            .map(|l| o.volume(l.evaporated_ft3)),
        infiltration_depth: e.moisture.as_ref().map(|m| o.depth(m.infiltration_in)),
        event_cn: e
            .moisture
            .as_ref()
            .and_then(|m| m.event_cn)
            .map(|c| EventCnOut {
                min: c.min,
                mean: c.mean,
                max: c.max,
            }),
    }
}

/// Every record entry in output units, in the engine's order.
pub fn entries(study: &Study, res: &RecordsResult) -> Vec<RecordOut> {
    res.elements.iter().map(|e| entry(study, e)).collect()
}

/// A flow-duration rule as the report states it.
fn duration_rule_text(dc: &DurationControl) -> String {
    format!("durations {} within {:.0} %", dc.text, dc.tolerance * 100.0)
}

/// One flow-duration comparison in output units.
pub fn comparison(study: &Study, d: &DurationComparison) -> ComparisonOut {
    let o = Out(study.units);
    let pt = &study.points[d.point];
    let limit_text = pt
        .durations
        .as_ref()
        .map(duration_rule_text)
        .unwrap_or_default();
    let pass = d.check.map(|c| c.pass);
    ComparisonOut {
        point: pt.name.clone(),
        storm: None,
        record: Some(d.record.clone()),
        baseline: study.conditions[study.baseline].clone(),
        condition: study.conditions[d.condition].clone(),
        check: ComparisonKind::FlowDuration,
        status: ComparisonStatus::of(pass, study.one_condition()),
        baseline_peak: None,
        peak: None,
        limit: None,
        limit_text,
        pass,
        area: o.area(d.area_ac),
        baseline_area: d.baseline_area_ac.map(|a| o.area(a)),
        duration: d.check.map(|c| DurationOut {
            from_flow: o.flow(c.from_cfs),
            to_flow: o.flow(c.to_cfs),
            levels: c.levels,
            tolerance: c.tolerance,
            worst_flow: o.flow(c.worst_flow_cfs),
            baseline_time_h: c.baseline_time_h,
            time_h: c.time_h,
            allowed_time_h: c.allowed_time_h,
            worst_relative_excess: c.worst_relative_excess,
        }),
    }
}

/// Every flow-duration comparison in output units.
pub fn comparisons(study: &Study, res: &RecordsResult) -> Vec<ComparisonOut> {
    res.comparisons
        .iter()
        .map(|d| comparison(study, d))
        .collect()
}

/// One overtopping check as a pond check, in output units.
pub fn pond_check(study: &Study, c: &OvertoppingCheck) -> PondCheckOut {
    let o = Out(study.units);
    PondCheckOut {
        pond: c.pond.clone(),
        storm: c.record.clone(),
        condition: c.condition.clone(),
        check: crate::engine::analysis::PondCheckKind::Overtopping,
        value: Some(o.length(c.peak_stage_ft)),
        limit: o.length(c.top_ft),
        pass: c.pass,
    }
}

/// Every overtopping check of the records, in output units.
pub fn pond_checks(study: &Study, res: &RecordsResult) -> Vec<PondCheckOut> {
    res.overtopping
        .iter()
        .map(|c| pond_check(study, c))
        .collect()
}

/// A records warning with its quantities in output units.
pub fn warning(study: &Study, w: &RecordWarning) -> Warning {
    let o = Out(study.units);
    let volume = |ft3: f64| format!("{} {}", sig(o.volume(ft3), 3), o.unit(Quantity::Volume));
    match w {
        RecordWarning::Plain(w) => w.clone(),
        RecordWarning::Overtopped {
            pond,
            record,
            condition,
            when_s,
            stage_ft,
            top_ft,
        } => {
            let lu = o.unit(Quantity::Length);
            Warning::RecordOvertopped {
                pond: pond.clone(),
                record: record.clone(),
                condition: condition.clone(),
                when: calendar::format_timestamp(*when_s),
                stage: format!("{} {lu}", sig(o.length(*stage_ft), 5)),
                above: format!("{} {lu}", sig(o.length(stage_ft - top_ft), 3)),
            }
        }
        RecordWarning::WaterLeft {
            record,
            condition,
            element,
            left_ft3,
            percent,
            what,
        } => Warning::RecordWaterLeft {
            record: record.clone(),
            condition: condition.clone(),
            element: element.clone(),
            left: volume(*left_ft3),
            percent: *percent,
            what,
        },
        RecordWarning::LagPastEnd {
            record,
            condition,
            element,
            lag_h,
            lost_ft3,
        } => Warning::RecordLagPastEnd {
            record: record.clone(),
            condition: condition.clone(),
            element: element.clone(),
            lag_h: *lag_h,
            lost: volume(*lost_ft3),
        },
    }
}

/// Every records warning, in the order found.
pub fn warnings(study: &Study, res: &RecordsResult) -> Vec<Warning> {
    res.warnings.iter().map(|w| warning(study, w)).collect()
}

/// The plot data of each record and point, in output units.
pub fn plots(study: &Study, res: &RecordsResult, entries: &[RecordOut]) -> Vec<RecordPlots> {
    let o = Out(study.units);
    let fu = o.unit(Quantity::Flow).replace("m3/s", "m³/s");
    let mut out = Vec::new();
    for r in &study.records {
        for (pi, pt) in study.points.iter().enumerate() {
            let mut curves = Vec::new();
            let mut observed = Vec::new();
            let mut fitted = Vec::new();
            let mut daily = Vec::new();
            for c in study.simulated_conditions() {
                let cname = &study.conditions[c];
                let series = res
                    .points
                    .iter()
                    .find(|s| s.record == r.name && s.point == pi && s.condition == c);
                let curve = series
                    .map(|s| {
                        plot_exceedances()
                            .into_iter()
                            .zip(s.duration_curve_cfs.iter().map(|&v| o.flow(v)))
                            .collect::<Vec<_>>()
                    })
                    .unwrap_or_default();
                curves.push((cname.clone(), curve));
                let typed = res.elements.iter().zip(entries).find(|(e, _)| {
                    e.record == r.name
                        && e.kind == crate::engine::records::SubjectKind::Point
                        && e.element == pt.name
                        && e.condition == c
                });
                if let Some((e, en)) = typed {
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
                    if let Some(a) = &e.frequency_analysis {
                        // the fitted curve as the flows use it (low outliers'
                        // conditional probability adjustment included)
                        fitted.push((
                            cname.clone(),
                            PLOTTED_RETURN_PERIODS
                                .iter()
                                .map(|&t| (t, a.quantile(t)))
                                .filter(|(_, q)| q.is_finite())
                                .map(|(t, q)| (t, o.flow(q)))
                                .collect(),
                        ));
                    }
                }
                daily.push((
                    cname.clone(),
                    series
                        .map(|s| s.daily_max_cfs.iter().map(|&q| o.flow(q)).collect())
                        .unwrap_or_default(),
                ));
            }
            let (y, mo, d) = calendar::civil_from_days(r.start_s.div_euclid(86_400));
            let title = format!("{} - record \"{}\"", pt.name, r.name);
            out.push(RecordPlots {
                caption: format!("record {} at {}", r.name, pt.name),
                record: r.name.clone(),
                point: pt.name.clone(),
                data: PlotData {
                    duration: plot::DurationPlot {
                        title: format!("Flow duration - {title}"),
                        flow_unit: fu.clone(),
                        control: duration_band(study, res, &r.name, pi),
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
            });
        }
    }
    out
}

/// The duration control of a point over a record as drawn (the baseline is the first curve:
/// curves follow `simulated_conditions`, baseline first), or `None` without a checked control.
fn duration_band(
    study: &Study,
    res: &RecordsResult,
    record: &str,
    point: usize,
) -> Option<plot::DurationBand> {
    let o = Out(study.units);
    let check = res
        .comparisons
        .iter()
        .filter(|c| c.record == record && c.point == point)
        .find_map(|c| c.check)?;
    let baseline = study
        .simulated_conditions()
        .iter()
        .position(|&c| c == study.baseline)?;
    let (lo, hi) = (check.from_cfs, check.to_cfs);
    let last = check.levels.saturating_sub(1).max(1) as f64;
    let levels = (0..check.levels)
        .map(|k| o.flow((lo.ln() + (hi.ln() - lo.ln()) * k as f64 / last).exp()))
        .collect();
    Some(plot::DurationBand {
        from_flow: o.flow(lo),
        to_flow: o.flow(hi),
        tolerance: check.tolerance,
        baseline,
        levels,
    })
}

/// The "Long records" section of `summary.md` (empty without records),
/// from the entries and the records' comparisons in output units.
pub fn markdown(study: &Study, entries: &[RecordOut], comparisons: &[ComparisonOut]) -> String {
    if study.records.is_empty() {
        return String::new();
    }
    let o = Out(study.units);
    let fu = o.unit(Quantity::Flow);
    let du = o.unit(Quantity::Depth);
    let mut m = String::new();
    let _ = writeln!(m, "## Long records\n");
    let any_continuous = study
        .records
        .iter()
        .any(|r| matches!(r.moisture, crate::model::MoistureMode::Continuous { .. }));
    let accounting = if any_continuous {
        "Curve-number accounting per event or with continuous soil moisture (each record says which; events split by dry gaps)"
    } else {
        "Event curve-number accounting (events split by dry gaps)"
    };
    let _ = writeln!(
        m,
        "{accounting}, unit hydrographs and storage-indication over the whole record. Frequency by log-Pearson Type III fitted to log10 annual peaks by moments with the station skew, or the skew weighted with the record's regional skew (Bulletin 17B eq. 5 and 6), after Bulletin 17B's low-outlier test (Bulletin 17B frequency factors from the gamma inverse); Weibull plotting positions; complete calendar years only (>= 90 % of intervals).\n"
    );
    for r in &study.records {
        let _ = writeln!(m, "### Record \"{}\"\n", r.name);
        let mut t = Table::new(vec![
            Column::text("condition"),
            Column::text("element"),
            Column::text("kind"),
            Column::quantity("rain", du),
            Column::quantity("runoff", du),
            Column::quantity("peak", fu),
            Column::text("when"),
            Column::number("Q2"),
            Column::number("Q10"),
            Column::number("Q100"),
            Column::number("1 % time"),
            Column::number("0.1 % time"),
        ]);
        for e in entries.iter().filter(|e| e.record == r.name) {
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
            t.row([
                e.condition.clone(),
                e.element.clone(),
                e.kind.to_string(),
                sig(e.rain_depth, 5),
                sig(e.runoff_depth, 5),
                sig(e.peak_flow, 4),
                e.peak_time.clone(),
                q(2.0),
                q(10.0),
                q(100.0),
                d(0.01),
                d(0.001),
            ]);
        }
        m.push_str(&t.markdown());
        let _ = writeln!(m);
        pond_losses_markdown(&mut m, o, entries.iter().filter(|e| e.record == r.name));
        let mine: Vec<&RecordOut> = entries.iter().filter(|e| e.record == r.name).collect();
        frequency_notes(&mut m, &mine, fu);
        m.push_str(&moisture_markdown(r, entries, du));
        if comparisons
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

/// The volumes ponds lost to the ground and the air over a record, as a
/// table (nothing when no pond loses water).
fn pond_losses_markdown<'a>(m: &mut String, o: Out, entries: impl Iterator<Item = &'a RecordOut>) {
    let vu = o.unit(Quantity::Volume);
    let rows: Vec<&RecordOut> = entries.filter(|e| e.infiltrated_volume.is_some()).collect();
    if rows.is_empty() {
        return;
    }
    let _ = writeln!(
        m,
        "Water the ponds lost besides their outlets (counted in their mass balance):\n\n| condition | pond | infiltrated [{vu}] | evaporated [{vu}] | outflow [{vu}] | mass balance |\n|---|---|---:|---:|---:|---:|"
    );
    for e in rows {
        let _ = writeln!(
            m,
            "| {} | {} | {} | {} | {} | {} |",
            e.condition,
            e.element,
            sig(e.infiltrated_volume.unwrap_or(0.0), 5),
            sig(e.evaporated_volume.unwrap_or(0.0), 5),
            sig(e.volume, 5),
            e.mass_balance_error
                .map(|x| format!("{:.4} %", x * 100.0))
                .unwrap_or_default()
        );
    }
    let _ = writeln!(m);
}

/// The soil-moisture table of one record in `summary.md`: how the record
/// keeps soil moisture, and per catchment the water that did not run off
/// and the curve numbers at the events' start.
fn moisture_markdown(r: &crate::model::Record, entries: &[RecordOut], du: &str) -> String {
    use crate::methods::moisture::MoistureClass;
    use crate::model::MoistureMode;
    let mut m = String::new();
    let rows: Vec<&RecordOut> = entries
        .iter()
        .filter(|e| e.record == r.name && e.infiltration_depth.is_some())
        .collect();
    if rows.is_empty() {
        return m;
    }
    match &r.moisture {
        MoistureMode::Event { antecedent, .. } => {
            let _ = writeln!(
                m,
                "Soil moisture: event mode, every event starts at {} (TR-55 eq. 2-3 per event).\n",
                if *antecedent {
                    "the AMC I, II or III curve number its 5-day rain gives"
                } else {
                    "the catchment's curve number (AMC II)"
                }
            );
        }
        MoistureMode::Continuous {
            recovery, initial, ..
        } => {
            let class = match initial {
                MoistureClass::Dry => "I",
                MoistureClass::Average => "II",
                MoistureClass::Wet => "III",
            };
            let _ = writeln!(
                m,
                "Soil moisture: continuous. The retention S starts at S(CN {class}), falls by the water each event infiltrates (TR-55 eq. 2-3 applied incrementally within events) and recovers between events by dS/dt = PET exp(-c S/Smax), c = {recovery} (a recovery law recalled from memory, attributed to Williams and LaSeur 1976 and Kannan et al. 2008), within [S(CN III), S(CN I)]; directly connected impervious cover at CN 98 is computed on its own.\n"
            );
        }
    }
    let _ = writeln!(
        m,
        "| condition | catchment | rain [{du}] | runoff [{du}] | infiltration [{du}] | events | event CN min | mean | max |\n|---|---|---:|---:|---:|---:|---:|---:|---:|"
    );
    for e in rows {
        let cn = |f: fn(&EventCnOut) -> f64| {
            e.event_cn
                .as_ref()
                .map(|c| format!("{:.1}", f(c)))
                .unwrap_or_else(|| "-".into())
        };
        let _ = writeln!(
            m,
            "| {} | {} | {} | {} | {} | {} | {} | {} | {} |",
            e.condition,
            e.element,
            sig(e.rain_depth, 5),
            sig(e.runoff_depth, 5),
            sig(e.infiltration_depth.unwrap_or(0.0), 5),
            e.events
                .map(|n| n.to_string())
                .unwrap_or_else(|| "-".into()),
            cn(|c| c.min),
            cn(|c| c.mean),
            cn(|c| c.max),
        );
    }
    let _ = writeln!(m);
    m
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::records::{
        DurationCheck, ElementRecord, FrequencyFlow, PondRecord, SubjectKind, YearMax,
    };
    use crate::util::units::UnitSystem;

    fn study(units: UnitSystem) -> Study {
        let path =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/record-check.toml");
        let mut study = crate::input::scenario::load(&path)
            .unwrap_or_else(|e| panic!("record-check.toml loads: {e}"));
        study.units = units;
        study
    }

    /// A pond's typed entry: one hour steps from 2001-01-01, round numbers.
    fn pond_entry() -> ElementRecord {
        ElementRecord {
            record: "twenty years".into(),
            condition: 0,
            element: "basin".into(),
            kind: SubjectKind::Pond,
            start_s: 978_307_200,
            step_s: 3600,
            steps: 48,
            rain_in: 2.0,
            runoff_in: 0.5,
            volume_ft3: 1000.0,
            peak_cfs: 10.0,
            peak_index: 5,
            annual_peaks_cfs: vec![YearMax {
                year: 2001,
                value: 10.0,
            }],
            incomplete_years: vec![2002],
            zero_years: Vec::new(),
            frequency: vec![FrequencyFlow {
                return_period_yr: 2.0,
                flow_cfs: 4.0,
            }],
            frequency_analysis: None,
            lp3: Some(stats::Lp3Fit {
                mean_log10: 0.5,
                std_log10: 0.2,
                skew: -0.1,
                n: 1,
            }),
            flow_duration_cfs: vec![9.0, 8.0, 7.0, 6.0, 5.0, 4.0, 3.0, 2.0, 1.0],
            events: None,
            moisture: None,
            pond: Some(PondRecord {
                stage_duration_ft: vec![3.0; EXCEEDANCES.len()],
                annual_max_stage_ft: vec![YearMax {
                    year: 2001,
                    value: 4.0,
                }],
                mass_balance_error: 1e-4,
                lost: None,
            }),
        }
    }

    #[test]
    fn a_us_entry_keeps_internal_units_and_states_times_as_timestamps() {
        let s = study(UnitSystem::Us);
        let e = entry(&s, &pond_entry());
        assert_eq!(e.kind, "pond");
        assert_eq!(e.condition, s.conditions[0]);
        assert_eq!(e.start, "2001-01-01T00:00:00");
        assert_eq!(e.end, "2001-01-03T00:00:00");
        assert_eq!(e.peak_time, "2001-01-01T05:00:00");
        assert_eq!((e.rain_depth, e.runoff_depth), (2.0, 0.5));
        assert_eq!((e.volume, e.peak_flow), (1000.0, 10.0));
        assert_eq!(e.annual_peaks[0].peak_flow, 10.0);
        assert_eq!(e.frequency[0].flow, 4.0);
        assert_eq!(e.flow_duration.len(), EXCEEDANCES.len());
        assert_eq!(e.flow_duration[0].exceedance, EXCEEDANCES[0]);
        assert_eq!(e.flow_duration[8].flow, 1.0);
        assert_eq!(e.lp3, Some([0.5, 0.2, -0.1]));
        assert_eq!(
            e.annual_max_stage.as_ref().map(|a| a[0].peak_stage),
            Some(4.0)
        );
        assert_eq!(e.mass_balance_error, Some(1e-4));
        assert!(e.events.is_none());
    }

    #[test]
    fn an_si_entry_is_in_cubic_metres_millimetres_and_metres() {
        // 1 ft = 0.3048 m and 1 in = 25.4 mm exactly (international yard
        // and pound agreement, 1959), from memory.
        let s = study(UnitSystem::Si);
        let e = entry(&s, &pond_entry());
        let m3_per_ft3 = 0.3048f64.powi(3);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs().max(1.0);
        assert!(close(e.rain_depth, 50.8));
        assert!(close(e.runoff_depth, 12.7));
        assert!(close(e.volume, 1000.0 * m3_per_ft3));
        assert!(close(e.peak_flow, 10.0 * m3_per_ft3));
        assert!(close(e.annual_peaks[0].peak_flow, 10.0 * m3_per_ft3));
        assert!(close(e.frequency[0].flow, 4.0 * m3_per_ft3));
        assert!(close(e.flow_duration[0].flow, 9.0 * m3_per_ft3));
        let stage = e.stage_duration.as_ref().map(|d| d[0].stage);
        assert!(close(stage.unwrap_or(f64::NAN), 3.0 * 0.3048));
        // the fit stays in log10 of cfs: it is not a flow
        assert_eq!(e.lp3, Some([0.5, 0.2, -0.1]));
    }

    #[test]
    fn a_water_left_warning_states_its_volume_in_output_units() {
        let s = study(UnitSystem::Si);
        let w = warning(
            &s,
            &RecordWarning::WaterLeft {
                record: "r".into(),
                condition: "c".into(),
                element: "pond \"basin\"".into(),
                left_ft3: 1000.0,
                percent: 2.0,
                what: "is still stored in it",
            },
        );
        match w {
            Warning::RecordWaterLeft { left, .. } => assert_eq!(left, "28.3 m3"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn the_markdown_section_has_the_expected_columns_and_rows() {
        let s = study(UnitSystem::Us);
        let entries = vec![entry(&s, &pond_entry())];
        let comparisons = vec![comparison(
            &s,
            &DurationComparison {
                point: 0,
                record: "twenty years".into(),
                condition: 1,
                area_ac: 10.0,
                baseline_area_ac: Some(10.0),
                check: Some(DurationCheck {
                    from_cfs: 1.0,
                    to_cfs: 5.0,
                    levels: 100,
                    tolerance: 0.1,
                    worst_flow_cfs: 2.0,
                    baseline_time_h: 10.0,
                    time_h: 10.5,
                    allowed_time_h: 11.0,
                    worst_relative_excess: Some(0.05),
                    pass: true,
                }),
            },
        )];
        assert_eq!(comparisons[0].status, ComparisonStatus::Meets);
        let md = markdown(&s, &entries, &comparisons);
        assert!(md.starts_with("## Long records\n"));
        assert!(md.contains("### Record \"twenty years\""));
        assert!(md.contains(
            "| condition | element | kind | rain [in] | runoff [in] | peak [cfs] | when | Q2 | Q10 | Q100 | 1 % time | 0.1 % time |"
        ));
        let row = md
            .lines()
            .find(|l| l.contains("| basin |"))
            .unwrap_or_else(|| panic!("a row for the pond: {md}"));
        let cells: Vec<&str> = row.trim_matches('|').split('|').map(str::trim).collect();
        assert_eq!(cells.len(), 12, "{row}");
        assert_eq!(&cells[2..4], ["pond", "2.0000"]);
        assert_eq!(cells[6], "2001-01-01T05:00:00");
        // Q2 from the frequency table; Q10 and Q100 not fitted here
        assert_eq!(&cells[7..10], ["4.000", "-", "-"]);
        // 1 % and 0.1 % of the time: the 3rd and 2nd table fractions
        assert_eq!(&cells[10..12], ["7.000", "8.000"]);
        assert!(md.contains("reported with the design points"));
    }
}
