//! The design storms as reported: each storm's pattern, depth, duration and
//! the tabulation behind it (`summary.json` `storms`, the "Design storms"
//! table of `summary.md`).

use crate::methods::rainfall::{self, nested};
use crate::model::{StormRain, Study};
use crate::report::summary::Out;
use crate::report::table::{Column, Table};
use crate::util::units::sig;
use serde::Serialize;
use std::fmt::Write;

/// One design storm, in output units.
#[derive(Debug, Clone, Serialize)]
pub struct StormOut {
    /// Name.
    pub name: String,
    /// Pattern key as written ("nrcs-type-ii", "nested", ...), or "gauge".
    pub pattern: String,
    /// Total depth.
    pub depth: f64,
    /// Duration of the rain, h.
    pub duration_h: f64,
    /// The tabulation or method behind the pattern.
    pub tabulation: String,
    /// Where a nested storm's largest block falls, fraction of the duration.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub peak_at: Option<f64>,
    /// What a nested storm took from its depth table at the run's step.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interpolated: Option<String>,
}

/// Every design storm of the study at the run's step.
pub fn storms_out(study: &Study) -> Vec<StormOut> {
    let o = Out(study.units);
    study
        .storms
        .iter()
        .map(|s| {
            let (pattern, tabulation, peak_at, interpolated) = match &s.rain {
                StormRain::Pattern { nrcs, key, .. } => (
                    key.clone(),
                    match (nrcs, key.as_str()) {
                        (Some(_), _) => rainfall::NRCS_TABULATION.to_string(),
                        (None, "uniform") => "uniform intensity".to_string(),
                        _ => rainfall::TABLE_TABULATION.to_string(),
                    },
                    None,
                    None,
                ),
                StormRain::Nested {
                    depths,
                    peak_at,
                    duration_h,
                    ..
                } => {
                    let (_, note) = nested::hyetograph(depths, *duration_h, *peak_at, study.step_h, 0);
                    (
                        "nested".to_string(),
                        "alternating-block method (Chow, Maidment & Mays 1988, section 14.4) on the scenario's depths, at the run's step".to_string(),
                        Some(*peak_at),
                        Some(nested_note(&note, study.step_h)),
                    )
                }
                StormRain::Gauge { .. } => (
                    "gauge".to_string(),
                    "the gauge file, rain uniform within each interval".to_string(),
                    None,
                    None,
                ),
            };
            StormOut {
                name: s.name.clone(),
                pattern,
                depth: o.depth(s.depth_in()),
                duration_h: s.rain_end_h(),
                tabulation,
                peak_at,
                interpolated,
            }
        })
        .collect()
}

/// What a nested storm's blocks took from the table, in words.
fn nested_note(n: &nested::Interpolated, step_h: f64) -> String {
    let mut s = format!(
        "{} blocks of {} min: {} durations from the table",
        n.blocks,
        crate::util::units::short(step_h * 60.0, 4),
        n.from_table
    );
    if n.log_log > 0 {
        let _ = write!(
            s,
            ", {} interpolated log-log between given durations",
            n.log_log
        );
    }
    if n.below_shortest > 0 {
        let _ = write!(
            s,
            ", {} shorter than the first given duration (at its average intensity)",
            n.below_shortest
        );
    }
    s
}

/// The "Design storms" table of `summary.md`.
pub fn markdown(m: &mut String, storms: &[StormOut], depth_unit: &str) {
    if storms.is_empty() {
        return;
    }
    let _ = writeln!(m, "## Design storms\n");
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("pattern"),
        Column::number(format!("depth [{depth_unit}]")),
        Column::number("duration [h]"),
        Column::text("tabulation"),
    ]);
    for s in storms {
        let mut tab = s.tabulation.clone();
        if let Some(p) = s.peak_at {
            let _ = write!(tab, "; peak at {} of the duration", sig(p, 3));
        }
        if let Some(i) = &s.interpolated {
            let _ = write!(tab, "; {i}");
        }
        t.row([
            crate::report::markdown::cell(&s.name),
            s.pattern.clone(),
            sig(s.depth, 4),
            sig(s.duration_h, 4),
            tab,
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}
