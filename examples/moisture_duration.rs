//! The demo's flow-duration curves at its outfall with event and with
//! continuous soil moisture, in one figure: the README's comparison.
//!
//! Loads `examples/wrenfield-commons.toml` (whose record is continuous),
//! runs its record twice, once as written and once in event mode (CN II
//! at every event, the same dry gap), and draws every condition's curve of
//! both runs with runnel's own flow-duration plot into
//! `docs/moisture-duration.png`.
//!
//! `cargo run --release --example moisture_duration`

use runnel::engine::records;
use runnel::model::MoistureMode;
use runnel::report::{plot, records as report_records};
use std::path::Path;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let study = runnel::input::scenario::load(&root.join("examples/wrenfield-commons.toml"))?;
    let mut event = study.clone();
    for r in &mut event.records {
        if let MoistureMode::Continuous { dry_gap_h, .. } = r.moisture {
            r.moisture = MoistureMode::Event {
                dry_gap_h,
                antecedent: false,
                growing_months: [
                    false, false, false, true, true, true, true, true, true, false, false, false,
                ],
            };
        }
    }
    let mut curves = Vec::new();
    let mut title = String::new();
    for (label, s) in [("event", &event), ("continuous", &study)] {
        let res = records::run(s, &records::Silent)?;
        let entries = report_records::entries(s, &res);
        let plots = report_records::plots(s, &res, &entries);
        let Some(p) = plots.first() else {
            return Err("the demo has no record plot".into());
        };
        title = format!(
            "Flow duration at {} - event and continuous soil moisture",
            p.point
        );
        for (c, curve) in &p.data.duration.curves {
            curves.push((format!("{c}, {label}"), curve.clone()));
        }
        for e in entries.iter().filter(|e| e.kind == "catchment") {
            println!(
                "{label:>10} {:>8} {:<22} runoff {:7.2} in  infiltration {:7.2} in  event CN {}",
                e.condition,
                e.element,
                e.runoff_depth,
                e.infiltration_depth.unwrap_or(0.0),
                e.event_cn
                    .map(|c| format!("{:.1} / {:.1} / {:.1}", c.min, c.mean, c.max))
                    .unwrap_or_else(|| "-".into())
            );
        }
    }
    let fig = plot::DurationPlot {
        title,
        flow_unit: "cfs".into(),
        curves,
        control: None,
    };
    let png = plot::flow_duration_png(&fig)?;
    let out = root.join("docs/moisture-duration.png");
    std::fs::create_dir_all(root.join("docs"))?;
    std::fs::write(&out, png)?;
    println!("wrote {}", out.display());
    Ok(())
}
