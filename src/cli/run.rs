//! `runnel run`: simulate, size, check, and write the results.

use crate::cli::output::{self, Staging};
use crate::engine::analysis;
use crate::engine::network;
use crate::error::Error;
use crate::model::{ElementKind, Study};
use crate::report::{self, plot, summary};
use crate::util::units::Quantity;
use rayon::prelude::*;
use std::path::{Path, PathBuf};

/// What a finished run reports back to the binary.
#[derive(Debug)]
pub struct RunOutcome {
    /// Where the results went.
    pub out_dir: PathBuf,
    /// Whether any limit failed or a pond overtopped.
    pub failed: bool,
    /// Warning messages, for stderr.
    pub warnings: Vec<String>,
    /// Lines summarising the comparisons, for stdout.
    pub lines: Vec<String>,
    /// The stage timings line, when `RUNNEL_TIMINGS` is set, for stderr.
    pub timings: Option<String>,
}

/// The default results folder: `output/<scenario stem>/`.
pub fn default_out(scenario: &Path) -> PathBuf {
    let stem = scenario
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "scenario".into());
    PathBuf::from("output").join(stem)
}

/// Current UTC time as `YYYY-MM-DDTHH:MM:SSZ`.
pub fn now_utc() -> String {
    crate::util::calendar::now_utc()
}

/// Records shorter than this many intervals run without a progress bar.
const PROGRESS_MIN_STEPS: usize = 2_000_000;

/// The long records' progress on the terminal: one bar per long record,
/// counting the elements simulated over its conditions.
struct RecordProgress {
    enabled: bool,
    bar: std::cell::RefCell<Option<indicatif::ProgressBar>>,
}

impl RecordProgress {
    fn new(enabled: bool) -> Self {
        Self {
            enabled,
            bar: std::cell::RefCell::new(None),
        }
    }
}

impl crate::engine::records::Progress for RecordProgress {
    fn start(&self, record: &str, steps: usize, elements: u64) {
        let bar = (self.enabled && steps > PROGRESS_MIN_STEPS).then(|| {
            let b = indicatif::ProgressBar::new(elements);
            b.set_message(format!("record {record}"));
            b
        });
        *self.bar.borrow_mut() = bar;
    }
    fn advance(&self) {
        if let Some(b) = self.bar.borrow().as_ref() {
            b.inc(1);
        }
    }
    fn finish(&self) {
        if let Some(b) = self.bar.borrow_mut().take() {
            b.finish_and_clear();
        }
    }
}

/// Writes the long records' plots (PNG) into the staging folder and returns
/// (caption, file) pairs.
///
/// # Errors
/// When a plot cannot be drawn or written.
fn write_record_plots(
    plots: &[report::records::RecordPlots],
    stage: &Staging,
) -> Result<Vec<(String, String)>, Error> {
    let mut out = Vec::new();
    for p in plots {
        let base = output::record_plot_base(&p.record, &p.point);
        let err = |e: plot::PlotError| Error::Write {
            path: stage.temp_dir().to_path_buf(),
            message: e.to_string(),
        };
        let duration = format!("{base}-duration.png");
        stage.write(
            &duration,
            &plot::flow_duration_png(&p.data.duration).map_err(err)?,
        )?;
        out.push((format!("{}: flow duration", p.caption), duration));
        let frequency = format!("{base}-frequency.png");
        stage.write(
            &frequency,
            &plot::frequency_png(&p.data.frequency).map_err(err)?,
        )?;
        out.push((format!("{}: annual peaks", p.caption), frequency));
        let overview = format!("{base}-overview.png");
        stage.write(
            &overview,
            &plot::overview_png(&p.data.overview).map_err(err)?,
        )?;
        out.push((format!("{}: daily maxima", p.caption), overview));
    }
    Ok(out)
}

/// Writes `report.html` into the staging folder; returns the seconds it took.
///
/// # Errors
/// When a figure cannot be drawn or the file cannot be written.
fn write_report_html(input: &report::html::HtmlInput<'_>, stage: &Staging) -> Result<f64, Error> {
    let t = std::time::Instant::now();
    let html = report::html::render(input).map_err(|e| Error::Write {
        path: stage.temp_dir().join(output::REPORT_HTML),
        message: e.to_string(),
    })?;
    stage.write(output::REPORT_HTML, html.as_bytes())?;
    Ok(t.elapsed().as_secs_f64())
}

/// The stage timings line (`RUNNEL_TIMINGS`), for stderr.
fn timings_line(
    t: &crate::engine::records::Timings,
    t_load: f64,
    t_records: f64,
    t_report: f64,
    t_html: f64,
) -> String {
    let per = |s: f64| {
        if s > 0.0 {
            format!("{:.1} M intervals/s", t.intervals as f64 / s / 1e6)
        } else {
            "-".into()
        }
    };
    format!(
        "timings: load and read {t_load:.3} s = {}; records {t_records:.3} s (rain {:.3} s, excess and convolution {:.3} s = {}, routing {:.3} s = {}, statistics {:.3} s = {}); report {:.3} s (of which report.html {t_html:.3} s)",
        per(t_load),
        t.rain_s,
        t.runoff_s,
        per(t.runoff_s),
        t.routing_s,
        per(t.routing_s),
        t.statistics_s,
        per(t.statistics_s),
        t_report
    )
}

/// Runs a scenario and writes its results.
///
/// # Errors
/// Bad input (nothing is written), or results that cannot be written (the
/// previous results stay in place).
pub fn run(scenario: &Path, out: Option<&Path>, progress: bool) -> Result<RunOutcome, Error> {
    let t0 = std::time::Instant::now();
    let mut study = crate::input::scenario::load(scenario)?;
    let t_load = t0.elapsed().as_secs_f64();
    check_memory(&study)?;
    // The results folder is judged before any work: runnel only replaces
    // what it wrote, and never a folder holding what this run reads.
    let mut inputs = vec![scenario.to_path_buf()];
    inputs.extend(study.provenance.inputs.iter().cloned());
    let out_dir = output::check_target(
        &out.map(Path::to_path_buf)
            .unwrap_or_else(|| default_out(scenario)),
        &inputs,
    )?;
    let sized = crate::engine::sizing::solve(&mut study)?;
    let a = analysis::analyse(&study)?;
    let t1 = std::time::Instant::now();
    let bar = RecordProgress::new(progress);
    let rec = crate::engine::records::run(&study, &bar)?;
    let t_records = t1.elapsed().as_secs_f64();
    let t2 = std::time::Instant::now();
    let run_date = now_utc();
    let s = summary::build(&study, &a, &sized.outputs, &rec, run_date);
    let stage = Staging::new(&out_dir, &inputs)?;
    let figures = report::figures::storm_figures(&study, &a);
    let plots = write_plots(&figures, &study, &stage)?;
    let mut all_plots = plots;
    let record_plots = report::records::plots(&study, &rec, &s.records);
    all_plots.extend(write_record_plots(&record_plots, &stage)?);
    for st in &a.storms {
        let name = output::storm_csv_name(&study.storms[st.storm].name);
        stage.write(&name, report::csv::storm_csv(&study, st).as_bytes())?;
    }
    let json = s.to_json().map_err(|e| Error::Write {
        path: out_dir.join("summary.json"),
        message: e.to_string(),
    })?;
    stage.write("summary.json", json.as_bytes())?;
    let md = report::markdown::render(&study, &s, &all_plots);
    stage.write("summary.md", md.as_bytes())?;
    let t_html = write_report_html(
        &report::html::HtmlInput {
            study: &study,
            analysis: &a,
            summary: &s,
            figures: &figures,
            record_entries: &s.records,
            record_plots: &record_plots,
        },
        &stage,
    )?;
    if !study.sizing.is_empty() {
        // Paths in the sized copy are written relative to the results
        // folder; both folders are made absolute here, once.
        let scenario_dir = match scenario.parent() {
            Some(d) if !d.as_os_str().is_empty() => d,
            _ => Path::new("."),
        };
        let absolute = |p: &Path| std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
        let text = crate::input::scenario::sized::sized_scenario_text(
            &study,
            &absolute(scenario_dir),
            &absolute(stage.target()),
        );
        stage.write("sized-scenario.toml", text.as_bytes())?;
    }
    let committed = stage.commit()?;
    let out_dir = committed.dir;
    let mut warnings = s.warnings.to_vec();
    if let Some(kept) = committed.kept_aside {
        warnings.push(format!(
            "the previous results were kept in {} because a file runnel did not write appeared in them during the run; look at it and remove that folder yourself",
            kept.display()
        ));
    }
    let timings = std::env::var_os("RUNNEL_TIMINGS").map(|_| {
        timings_line(
            &rec.timings,
            t_load,
            t_records,
            t2.elapsed().as_secs_f64(),
            t_html,
        )
    });
    let o = summary::Out(study.units);
    let fu = o.unit(Quantity::Flow);
    let mut lines = Vec::new();
    for c in &s.comparisons {
        lines.push(comparison_line(c, fu));
    }
    for c in s.pond_checks.iter().filter(|c| !c.pass) {
        lines.push(format!(
            "FAILS   {} / {} / {}: {}",
            summary::kind_and_name("pond", &c.pond),
            c.storm,
            c.condition,
            c.check.word()
        ));
    }
    for (z, d) in s.sized.iter().zip(&study.sizing) {
        let label = crate::engine::sizing::outlet_label(z.outlet, z.outlet_name.as_deref());
        let value = crate::engine::sizing::value_text(&study, d);
        if z.feasible {
            lines.push(format!(
                "sized   {}, {label} {} = {value}{}",
                summary::kind_and_name("pond", &z.pond),
                z.field,
                match (&z.governing_check, &z.governing_storm) {
                    (Some(c), Some(st)) => format!(" (governed by {c} in {st})"),
                    _ => String::new(),
                }
            ));
        } else {
            lines.push(format!(
                "INFEASIBLE sizing of {}, {label} {}: {}; results written at {value}",
                summary::kind_and_name("pond", &z.pond),
                z.field,
                z.reason.clone().unwrap_or_default()
            ));
        }
    }
    Ok(RunOutcome {
        out_dir,
        failed: !s.all_pass || a.any_failure(),
        warnings,
        lines,
        timings,
    })
}

/// Series memory a run holds at its peak, by phase, in bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MemoryEstimate {
    /// Every design storm's results for every condition: all are held from
    /// the analysis to the end of the report (each series at the length
    /// simulated, before trimming), plus each worker thread's scratch.
    pub storms: u64,
    /// Sizing's trial results beside the storms' (0 without sizing).
    pub sizing: u64,
    /// The largest long record, run while the storms' results are held.
    pub records: u64,
    /// The plots' copies of the storms' series in output units, made
    /// while the storms' results are held.
    pub plots: u64,
}

impl MemoryEstimate {
    /// The peak: the storms' results plus the largest of what is held
    /// beside them in one phase (sizing, records, plots).
    pub fn peak(&self) -> u64 {
        self.storms + self.sizing.max(self.records).max(self.plots)
    }
}

/// Bytes of one design storm's results for every condition (see
/// `network::simulate_storm`): the rain, per condition each member
/// element's outflow (a pond's inflow, stage and storage too, a channel's
/// inflow and storage) and each
/// point's flow.
fn storm_result_bytes(study: &Study, storm: usize) -> u64 {
    let len = network::horizon_steps(study, storm).unwrap_or(usize::MAX - 1) as u64 + 1;
    let series: u64 = (0..study.conditions.len())
        .map(|c| {
            study
                .elements
                .iter()
                .filter(|e| e.conditions[c])
                .map(|e| match e.kind {
                    ElementKind::Pond(_) => 4,
                    // outflow, inflow and storage
                    ElementKind::Channel(_) => 3,
                    _ => 1,
                })
                .sum::<u64>()
                + study.points.len() as u64
        })
        .sum::<u64>()
        + 1;
    len * 8 * series
}

/// Bytes of one design storm's plot data: per point the rain and each
/// condition's flow, per pond and condition its inflow, outflow and stage.
fn storm_plot_bytes(study: &Study, storm: usize) -> u64 {
    let len = network::horizon_steps(study, storm).unwrap_or(usize::MAX - 1) as u64 + 1;
    let conditions = study.conditions.len() as u64;
    let ponds: u64 = (0..study.conditions.len())
        .map(|c| {
            study
                .elements
                .iter()
                .filter(|e| e.conditions[c] && matches!(e.kind, ElementKind::Pond(_)))
                .count() as u64
        })
        .sum();
    len * 8 * (study.points.len() as u64 * (conditions + 1) + 3 * ponds)
}

/// Estimates the series memory of a run of `study` (see [`MemoryEstimate`]).
pub fn estimate_memory(study: &Study) -> MemoryEstimate {
    let results: u64 = (0..study.storms.len())
        .map(|s| storm_result_bytes(study, s))
        .sum();
    let plots: u64 = (0..study.storms.len())
        .map(|s| storm_plot_bytes(study, s))
        .sum();
    // Each worker simulating a storm also holds a catchment's excess, its
    // convolution and the inputs of the ponds downstream.
    let longest = (0..study.storms.len())
        .map(|s| network::horizon_steps(study, s).unwrap_or(usize::MAX - 1) as u64 + 1)
        .max()
        .unwrap_or(0);
    let workers = rayon::current_num_threads().min(study.storms.len()) as u64;
    let scratch = workers * longest * 8 * 3;
    let records = study
        .records
        .iter()
        .map(|r| crate::engine::records::estimate_bytes(study, r))
        .max()
        .unwrap_or(0);
    MemoryEstimate {
        storms: results + scratch,
        sizing: if study.sizing.is_empty() { 0 } else { results },
        records,
        plots,
    }
}

/// A byte count in decimal units, as `memory_limit` reads them (1 GB = 10^9 bytes).
pub fn format_bytes(b: u64) -> String {
    let b = b as f64;
    if b >= 1e9 {
        format!("{:.2} GB", b / 1e9)
    } else if b >= 1e6 {
        format!("{:.0} MB", b / 1e6)
    } else {
        format!("{:.0} kB", (b / 1e3).ceil())
    }
}

/// One line saying what the memory estimate is, for `check`.
pub fn memory_line(study: &Study) -> String {
    let m = estimate_memory(study);
    let mut parts = vec![format!("design storms {}", format_bytes(m.storms))];
    if m.sizing > 0 {
        parts.push(format!("sizing {}", format_bytes(m.sizing)));
    }
    if m.records > 0 {
        parts.push(format!("largest record {}", format_bytes(m.records)));
    }
    parts.push(format!("plots {}", format_bytes(m.plots)));
    format!(
        "series memory at the peak of a run: about {} ({}), under the cap of {} (`memory_limit`)",
        format_bytes(m.peak()),
        parts.join(", "),
        format_bytes(study.memory_limit_bytes)
    )
}

/// Refuses a run whose series would not fit under the memory cap.
///
/// # Errors
/// A storm longer than runnel's step limit ([`network::SimulationError::TooLong`]),
/// or [`Error::TooLarge`] naming the need and the cap.
pub fn check_memory(study: &Study) -> Result<(), Error> {
    // A storm too long to run at all says why (a lag or inflow time) first.
    for s in 0..study.storms.len() {
        network::horizon_steps(study, s)?;
    }
    let m = estimate_memory(study);
    let need = m.peak();
    if need > study.memory_limit_bytes {
        let mut parts = vec![format!(
            "{} design storm(s) {}",
            study.storms.len(),
            format_bytes(m.storms)
        )];
        if m.sizing > 0 {
            parts.push(format!("sizing trials {}", format_bytes(m.sizing)));
        }
        if m.records > 0 {
            parts.push(format!("largest record {}", format_bytes(m.records)));
        }
        parts.push(format!("plots {}", format_bytes(m.plots)));
        return Err(Error::TooLarge {
            message: format!(
                "{}: this run would hold about {} of series at once ({}), over the cap of {}; use a coarser `step`, fewer storms or a shorter record per run, or raise `memory_limit`",
                study.provenance.scenario.display(),
                format_bytes(need),
                parts.join(", "),
                format_bytes(study.memory_limit_bytes)
            ),
        });
    }
    Ok(())
}

/// Draws the storm and pond figures (PNG) into the staging folder, each
/// written as soon as it is drawn so that the PNGs are never all held at
/// once, and returns (caption, file) pairs.
///
/// # Errors
/// When a plot cannot be drawn or written.
fn write_plots(
    figures: &[report::figures::StormFigure],
    study: &Study,
    stage: &Staging,
) -> Result<Vec<(String, String)>, Error> {
    figures
        .par_iter()
        .map(|f| {
            let file = storm_figure_file(study, f);
            let bytes = f.png().map_err(|e| Error::Write {
                path: stage.temp_dir().to_path_buf(),
                message: e.to_string(),
            })?;
            stage.write(&file, &bytes)?;
            Ok((f.caption.clone(), file))
        })
        .collect()
}

/// The PNG file name of a storm or pond figure.
fn storm_figure_file(study: &Study, f: &report::figures::StormFigure) -> String {
    let storm = &study.storms[f.storm].name;
    match f.subject {
        report::figures::Subject::Point(pi) => {
            output::storm_plot_name(storm, &study.points[pi].name)
        }
        report::figures::Subject::Pond { element, condition } => output::pond_plot_name(
            &study.elements[element].name,
            storm,
            &study.conditions[condition],
        ),
    }
}

/// The printed line of one check at a point.
fn comparison_line(c: &summary::ComparisonOut, fu: &str) -> String {
    use crate::util::units::sig;
    let verdict = match c.pass {
        Some(true) => "meets",
        Some(false) => "EXCEEDS",
        None => "not checked",
    };
    let when = c.storm.clone().or(c.record.clone()).unwrap_or_default();
    let head = format!("{verdict:<7} {} / {when} / {}", c.point, c.condition);
    if c.pass.is_none() {
        if c.status == summary::ComparisonStatus::OneCondition {
            return format!(
                "{head}: one condition only (\"{}\" compares conditions, and every element belongs to {})",
                c.limit_text, c.condition
            );
        }
        return format!(
            "{head}: no baseline (\"{}\" needs the {} condition, which has no element)",
            c.limit_text, c.baseline
        );
    }
    if let Some(d) = &c.duration {
        return format!(
            "{head}: flow durations ({}): at {} {fu}, {} h above against {} h allowed ({} {} h)",
            c.limit_text,
            sig(d.worst_flow, 4),
            sig(d.time_h, 4),
            sig(d.allowed_time_h, 4),
            c.baseline,
            sig(d.baseline_time_h, 4)
        );
    }
    format!(
        "{head}: peak {} {fu}, limit {} {fu}",
        c.peak.map(|v| sig(v, 4)).unwrap_or_else(|| "-".into()),
        c.limit.map(|v| sig(v, 4)).unwrap_or_else(|| "-".into())
    )
}
