//! `runnel run`: simulate, size, check, and write the results.

use crate::analysis::{self, Analysis};
use crate::error::Error;
use crate::model::{ElementKind, Study};
use crate::network;
use crate::output::{self, Staging};
use crate::report::{self, plot, summary};
use crate::units::Quantity;
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

/// Runs a scenario and writes its results.
///
/// # Errors
/// Bad input (nothing is written), or results that cannot be written (the
/// previous results stay in place).
pub fn run(scenario: &Path, out: Option<&Path>, progress: bool) -> Result<RunOutcome, Error> {
    let t0 = std::time::Instant::now();
    let mut study = crate::scenario::load(scenario)?;
    let t_load = t0.elapsed().as_secs_f64();
    check_memory(&study)?;
    let sized = crate::sizing::solve(&mut study)?;
    let a = analysis::analyse(&study);
    let t1 = std::time::Instant::now();
    let rec = crate::records::run(&study, progress)?;
    let t_records = t1.elapsed().as_secs_f64();
    let t2 = std::time::Instant::now();
    let run_date = now_utc();
    let s = summary::build(
        &study,
        &a,
        sized.outputs.clone(),
        rec.json.clone(),
        rec.comparisons.clone(),
        run_date,
    );
    let out_dir = out
        .map(Path::to_path_buf)
        .unwrap_or_else(|| default_out(scenario));
    let stage = Staging::new(&out_dir)?;
    let plots = write_plots(&study, &a, &stage)?;
    let mut all_plots = plots;
    all_plots.extend(crate::records::write_plots(&study, &rec, &stage)?);
    for st in &a.storms {
        let name = format!("storm-{}.csv", output::slug(&study.storms[st.storm].name));
        stage.write(&name, report::csv::storm_csv(&study, st).as_bytes())?;
    }
    let json = serde_json::to_string_pretty(&s).map_err(|e| Error::Write {
        path: out_dir.join("summary.json"),
        message: e.to_string(),
    })?;
    stage.write("summary.json", json.as_bytes())?;
    let md = report::markdown::render(&study, &s, &all_plots, &rec.markdown);
    stage.write("summary.md", md.as_bytes())?;
    if !study.sizing.is_empty() {
        let text = crate::sizing::sized_scenario_text(&study, &out_dir, scenario);
        stage.write("sized-scenario.toml", text.as_bytes())?;
    }
    let out_dir = stage.commit()?;
    if std::env::var_os("RUNNEL_TIMINGS").is_some() {
        let t = &rec.timings;
        let per = |s: f64| {
            if s > 0.0 {
                format!("{:.1} M intervals/s", t.intervals as f64 / s / 1e6)
            } else {
                "-".into()
            }
        };
        eprintln!(
            "timings: load and read {t_load:.3} s = {}; records {t_records:.3} s (rain {:.3} s, excess and convolution {:.3} s = {}, routing {:.3} s = {}, statistics {:.3} s = {}); report {:.3} s",
            per(t_load),
            t.rain_s,
            t.runoff_s,
            per(t.runoff_s),
            t.routing_s,
            per(t.routing_s),
            t.statistics_s,
            per(t.statistics_s),
            t2.elapsed().as_secs_f64()
        );
    }
    let o = summary::Out(study.units);
    let fu = o.unit(Quantity::Flow);
    let mut lines = Vec::new();
    for c in &s.comparisons {
        lines.push(format!(
            "{:<7} {} / {} / {}: peak {} {fu}, limit {} {fu}",
            if c.pass { "meets" } else { "EXCEEDS" },
            c.point,
            c.storm.clone().or(c.record.clone()).unwrap_or_default(),
            c.condition,
            crate::units::sig(c.peak, 4),
            crate::units::sig(c.limit, 4)
        ));
    }
    for c in s.pond_checks.iter().filter(|c| !c.pass) {
        lines.push(format!(
            "FAILS   pond {} / {} / {}: {}",
            c.pond, c.storm, c.condition, c.check
        ));
    }
    for z in s.sized.iter().filter(|z| !z.feasible) {
        lines.push(format!(
            "INFEASIBLE sizing of pond {} outlet {} {}",
            z.pond, z.outlet, z.field
        ));
    }
    Ok(RunOutcome {
        out_dir,
        failed: !s.all_pass || a.any_failure(),
        warnings: s.warnings.to_vec(),
        lines,
    })
}

/// Refuses a run whose series would not fit under the memory cap.
///
/// # Errors
/// [`Error::TooLarge`] naming the need and the cap.
pub fn check_memory(study: &Study) -> Result<(), Error> {
    let storms: u64 = (0..study.storms.len())
        .map(|s| network::estimate_bytes(study, s))
        .max()
        .unwrap_or(0)
        * rayon::current_num_threads().min(study.storms.len().max(1)) as u64;
    let records: u64 = study
        .records
        .iter()
        .map(|r| crate::records::estimate_bytes(study, r))
        .max()
        .unwrap_or(0);
    let need = storms.max(records);
    if need > study.memory_limit_bytes {
        return Err(Error::TooLarge {
            message: format!(
                "{}: this run would need about {:.1} GB for its series, over the cap of {:.1} GB; use a coarser `step`, a shorter record, or raise `memory_limit`",
                study.provenance.scenario.display(),
                need as f64 / 1e9,
                study.memory_limit_bytes as f64 / 1e9
            ),
        });
    }
    Ok(())
}

/// A plot to draw: caption, file name, and the drawing job.
type PlotJob<'a> = (
    String,
    String,
    Box<dyn Fn() -> Result<Vec<u8>, plot::PlotError> + Send + Sync + 'a>,
);
/// A drawn plot: caption, file name, PNG bytes.
type Drawn = Result<(String, String, Vec<u8>), plot::PlotError>;

fn write_plots(
    study: &Study,
    a: &Analysis,
    stage: &Staging,
) -> Result<Vec<(String, String)>, Error> {
    let o = summary::Out(study.units);
    let fu = o.unit(Quantity::Flow).replace("m3/s", "m³/s");
    let du = o.unit(Quantity::Depth).to_string();
    let lu = o.unit(Quantity::Length).to_string();
    let mut jobs: Vec<PlotJob<'_>> = Vec::new();
    for st in &a.storms {
        let storm = &study.storms[st.storm];
        for (pi, p) in study.points.iter().enumerate() {
            let file = format!(
                "storm-{}-{}.png",
                output::slug(&storm.name),
                output::slug(&p.name)
            );
            let hydrographs: Vec<plot::Series> = st
                .conditions
                .iter()
                .map(|c| plot::Series {
                    label: study.conditions[c.condition].clone(),
                    values: c.points[pi].iter().map(|v| o.flow(*v)).collect(),
                })
                .collect();
            let limit = st
                .conditions
                .iter()
                .filter(|c| c.condition != study.baseline)
                .find_map(|c| analysis::limit_cfs(study, &a.storms, pi, st.storm, c.condition))
                .map(|l| {
                    (
                        format!(
                            "limit ({})",
                            p.limit_text.get(st.storm).cloned().unwrap_or_default()
                        ),
                        o.flow(l),
                    )
                });
            let data = plot::StormPointPlot {
                title: format!(
                    "{} - {} at {}",
                    if study.title.is_empty() {
                        "runnel"
                    } else {
                        &study.title
                    },
                    storm.name,
                    p.name
                ),
                subtitle: format!(
                    "depth {} {du}, step {:.0} min; runnel {}",
                    crate::units::sig(o.depth(storm.depth_in()), 3),
                    study.step_h * 60.0,
                    env!("CARGO_PKG_VERSION")
                ),
                step_h: st.step_h,
                rain: st.rain_in.iter().map(|r| o.depth(*r)).collect(),
                rain_unit: du.clone(),
                flow_unit: fu.clone(),
                hydrographs,
                limit,
            };
            jobs.push((
                format!("{} at {}", storm.name, p.name),
                file,
                Box::new(move || plot::storm_point_png(&data)),
            ));
        }
        for c in &st.conditions {
            for (i, er) in c.elements.iter().enumerate() {
                let (Some(pr), ElementKind::Pond(pond)) = (
                    er.as_ref().and_then(|e| e.pond.as_ref()),
                    &study.elements[i].kind,
                ) else {
                    continue;
                };
                let outflow: Vec<f64> = er
                    .as_ref()
                    .map(|e| e.outflow_cfs.iter().map(|v| o.flow(*v)).collect())
                    .unwrap_or_default();
                let mut references = Vec::new();
                for (k, d) in pond.outlets.iter().enumerate() {
                    references.push((
                        format!("outlet {k} {}", kind_word(d)),
                        o.length(d.lowest_ft()),
                    ));
                }
                if let Some(t) = pond.top_ft {
                    references.push(("top of embankment".to_string(), o.length(t)));
                }
                let name = &study.elements[i].name;
                let cname = &study.conditions[c.condition];
                let file = format!(
                    "pond-{}-{}-{}.png",
                    output::slug(name),
                    output::slug(&storm.name),
                    output::slug(cname)
                );
                let data = plot::PondPlot {
                    title: format!("Pond {name} - {} ({cname})", storm.name),
                    subtitle: format!(
                        "storage-indication routing, step {:.0} min; runnel {}",
                        study.step_h * 60.0,
                        env!("CARGO_PKG_VERSION")
                    ),
                    step_h: st.step_h,
                    flow_unit: fu.clone(),
                    stage_unit: lu.clone(),
                    inflow: pr.inflow_cfs.iter().map(|v| o.flow(*v)).collect(),
                    outflow,
                    stage: pr.stage_ft.iter().map(|v| o.length(*v)).collect(),
                    peak_stage: o.length(pr.summary.peak_stage_ft),
                    references,
                };
                jobs.push((
                    format!("pond {name}, {} ({cname})", storm.name),
                    file,
                    Box::new(move || plot::pond_png(&data)),
                ));
            }
        }
    }
    let rendered: Vec<Drawn> = jobs
        .into_par_iter()
        .map(|(cap, file, job)| job().map(|b| (cap, file, b)))
        .collect();
    let mut out = Vec::new();
    for r in rendered {
        let (cap, file, bytes) = r.map_err(|e| Error::Write {
            path: stage.temp_dir().to_path_buf(),
            message: e.to_string(),
        })?;
        stage.write(&file, &bytes)?;
        out.push((cap, file));
    }
    Ok(out)
}

fn kind_word(d: &crate::hydraulics::Outlet) -> &'static str {
    use crate::hydraulics::Outlet as D;
    match d {
        D::CircularOrifice { .. } => "orifice invert",
        D::RectangularOrifice { .. } => "orifice invert",
        D::SharpCrestedWeir { .. } => "weir crest",
        D::VNotchWeir { .. } => "V-notch crest",
        D::BroadCrestedWeir { .. } => "spillway crest",
        D::Riser { .. } => "riser rim",
        D::Rating { .. } => "rating start",
    }
}
