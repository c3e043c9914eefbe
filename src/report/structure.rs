//! Outlet structures in output units: each pond's devices and its
//! stage-storage-discharge table with one column per device
//! (`summary.json` `structures`), every device's flow at each routed peak
//! (`device_peaks`), the clogged-outlet checks (`failure_checks`), and the
//! Markdown sections that show them.

use crate::engine::analysis::Analysis;
use crate::engine::structure::{self, DevicePeak, FailureResult};
use crate::methods::hydraulics::works::Governs;
use crate::methods::hydraulics::{BarrelShape, DeviceFlows, Tailwater};
use crate::model::{ElementKind, Pond, Study};
use crate::report::summary::Out;
use crate::report::table::{Column, Table};
use crate::util::units::{Quantity, sig};
use serde::Serialize;
use std::fmt::Write as _;

/// One device of a pond's outlet structure.
#[derive(Debug, Clone, Serialize)]
pub struct DeviceOut {
    /// `outlet 2 ("name")` or `barrel "name"`.
    pub label: String,
    /// `outlet` or `barrel`.
    pub kind: &'static str,
    /// The barrel an outlet drains into.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub into: Option<String>,
    /// Identical copies (outlets).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub count: Option<u32>,
    /// In words, in output units.
    pub description: String,
}

/// One stage of a structure rating.
#[derive(Debug, Clone, Serialize)]
pub struct RatingRowOut {
    /// Stage.
    pub stage: f64,
    /// Storage above the bottom.
    pub storage: f64,
    /// The structure's total outflow (the embankment not included).
    pub outflow: f64,
    /// Each device's flow, in the order of `devices` (a barrel's flow
    /// includes what its openings pass).
    pub flows: Vec<f64>,
    /// What governs each barrel: `dry`, `openings`, `inlet` or `outlet`.
    pub governs: Vec<Governs>,
    /// The tailwater elevation used.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tailwater: Option<f64>,
    /// Whether the tailwater reduces some device's flow here.
    pub tailwater_acts: bool,
}

/// A pond's outlet structure and its rating.
#[derive(Debug, Clone, Serialize)]
pub struct StructureOut {
    /// Pond.
    pub pond: String,
    /// Outlets then barrels.
    pub devices: Vec<DeviceOut>,
    /// `fixed` elevation or `table` of `[flow, elevation]`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tailwater: Option<serde_json::Value>,
    /// The regular stage step of the rating.
    pub rating_step: f64,
    /// The rating.
    pub rating: Vec<RatingRowOut>,
}

/// Every device's flow at a routed peak.
#[derive(Debug, Clone, Serialize)]
pub struct DevicePeakOut {
    /// Pond.
    pub pond: String,
    /// Storm.
    pub storm: String,
    /// Condition.
    pub condition: String,
    /// Peak stage.
    pub peak_stage: f64,
    /// Each device's flow, in the order of the pond's `devices`.
    pub flows: Vec<f64>,
    /// What governs each barrel.
    pub governs: Vec<Governs>,
    /// Tailwater elevation at the peak.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tailwater: Option<f64>,
    /// Whether the tailwater reduces some device's flow at the peak.
    pub tailwater_acts: bool,
}

/// One clogged-outlet check.
#[derive(Debug, Clone, Serialize)]
pub struct FailureOut {
    /// Pond.
    pub pond: String,
    /// Storm.
    pub storm: String,
    /// Condition.
    pub condition: String,
    /// Blocked devices.
    pub blocked: Vec<String>,
    /// Starting stage.
    pub start: f64,
    /// `full` (the lowest open device) or `given`.
    pub start_kind: &'static str,
    /// Peak stage (null when the pond could not be routed).
    pub peak_stage: Option<f64>,
    /// Peak outflow.
    pub peak_outflow: f64,
    /// Top of embankment.
    pub top: f64,
    /// Freeboard left.
    pub freeboard: Option<f64>,
    /// Least freeboard asked for.
    pub min_freeboard: f64,
    /// Mass-balance error of the routing.
    pub mass_balance_error: f64,
    /// Whether the freeboard left is enough.
    pub pass: bool,
    /// Why the pond could not be routed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

/// The devices of pond `p`: outlets, then barrels.
fn devices(p: &Pond, o: Out) -> Vec<DeviceOut> {
    let st = &p.structure;
    let mut v: Vec<DeviceOut> = p
        .outlets
        .iter()
        .enumerate()
        .map(|(i, d)| DeviceOut {
            label: crate::engine::sizing::outlet_label(i, p.outlet_names[i].as_deref()),
            kind: "outlet",
            into: st
                .into
                .get(i)
                .copied()
                .flatten()
                .map(|b| st.barrel_names[b].clone()),
            count: st.counts.get(i).copied().filter(|&c| c > 1),
            description: crate::report::markdown::describe_outlet(d, o),
        })
        .collect();
    for (j, b) in st.barrels.iter().enumerate() {
        let lu = o.unit(Quantity::Length);
        let l = |x: f64| sig(o.length(x), 4);
        let shape = match b.shape {
            BarrelShape::Circular { diameter_ft } => format!("{} {lu} pipe", l(diameter_ft)),
            BarrelShape::Box {
                width_ft,
                height_ft,
            } => format!("{} x {} {lu} box", l(width_ft), l(height_ft)),
        };
        v.push(DeviceOut {
            label: format!("barrel \"{}\"", st.barrel_names[j]),
            kind: "barrel",
            into: None,
            count: None,
            description: format!(
                "{shape}, {} {lu} long, inverts {} to {} {lu}, n {}, entrance {} (ke {})",
                l(b.length_ft),
                sig(o.length(b.inlet_invert_ft), 6),
                sig(o.length(b.outlet_invert_ft), 6),
                b.n,
                st.barrel_entrances[j],
                b.entrance.ke
            ),
        });
    }
    v
}

fn flows_out(f: &DeviceFlows, o: Out) -> Vec<f64> {
    f.outlets_cfs
        .iter()
        .chain(&f.barrels_cfs)
        .map(|&q| o.flow(q))
        .collect()
}

/// `structures` of `summary.json`: every pond's devices and rating.
pub fn structures_out(study: &Study) -> Vec<StructureOut> {
    let o = Out(study.units);
    let step = structure::rating_step_ft(study.units);
    study
        .elements
        .iter()
        .filter_map(|e| match &e.kind {
            ElementKind::Pond(p) => Some((e, p)),
            _ => None,
        })
        .map(|(e, p)| StructureOut {
            pond: e.name.clone(),
            devices: devices(p, o),
            tailwater: p.structure.tailwater.as_ref().map(|t| match t {
                Tailwater::Fixed(x) => serde_json::json!({ "fixed": o.length(*x) }),
                Tailwater::Table(rows) => serde_json::json!({
                    "table": rows.iter().map(|&(q, h)| [o.flow(q), o.length(h)]).collect::<Vec<_>>()
                }),
            }),
            rating_step: o.length(step),
            rating: structure::structure_rating(p, step)
                .into_iter()
                .map(|r| RatingRowOut {
                    stage: o.length(r.stage_ft),
                    storage: o.volume(r.storage_ft3),
                    outflow: o.flow(r.flows.total_cfs),
                    flows: flows_out(&r.flows, o),
                    governs: r.flows.governs.clone(),
                    tailwater: r.flows.tailwater_ft.map(|t| o.length(t)),
                    tailwater_acts: r.flows.tailwater_acts,
                })
                .collect(),
        })
        .collect()
}

/// `device_peaks` of `summary.json`.
pub fn device_peaks_out(study: &Study, a: &Analysis) -> Vec<DevicePeakOut> {
    let o = Out(study.units);
    a.device_peaks
        .iter()
        .map(|d: &DevicePeak| DevicePeakOut {
            pond: study.elements[d.element].name.clone(),
            storm: study.storms[d.storm].name.clone(),
            condition: study.conditions[d.condition].clone(),
            peak_stage: o.length(d.stage_ft),
            flows: flows_out(&d.flows, o),
            governs: d.flows.governs.clone(),
            tailwater: d.flows.tailwater_ft.map(|t| o.length(t)),
            tailwater_acts: d.flows.tailwater_acts,
        })
        .collect()
}

/// `failure_checks` of `summary.json`.
pub fn failures_out(study: &Study, a: &Analysis) -> Vec<FailureOut> {
    let o = Out(study.units);
    a.failures
        .iter()
        .map(|r: &FailureResult| FailureOut {
            pond: study.elements[r.element].name.clone(),
            storm: study.storms[r.storm].name.clone(),
            condition: study.conditions[r.condition].clone(),
            blocked: r.blocked.clone(),
            start: o.length(r.start_ft),
            start_kind: if r.start_full { "full" } else { "given" },
            peak_stage: r.peak_stage_ft.map(|h| o.length(h)),
            peak_outflow: o.flow(r.peak_outflow_cfs),
            top: o.length(r.top_ft),
            freeboard: r.freeboard_ft.map(|h| o.length(h)),
            min_freeboard: o.length(r.min_freeboard_ft),
            mass_balance_error: r.mass_balance_error,
            pass: r.pass,
            error: r.error.clone(),
        })
        .collect()
}

/// Markdown number with `d` decimals.
fn fx(v: f64, d: usize) -> String {
    format!("{v:.d$}")
}

/// How a pond's outlets discharge, in one sentence for the pond section.
pub fn structure_sentence(p: &Pond, o: Out) -> String {
    let st = &p.structure;
    let lu = o.unit(Quantity::Length);
    let mut s = if st.barrels.is_empty() {
        "outlets in parallel".to_string()
    } else {
        "outlets in parallel; an outlet that names a barrel drains into it, and the structure passes the lesser of what its openings pass and what the barrel passes (FHWA HDS-5 inlet or outlet control, whichever needs the higher headwater)".to_string()
    };
    match &st.tailwater {
        None => s.push_str(" with a free outfall (no tailwater)"),
        Some(Tailwater::Fixed(x)) => {
            let _ = write!(
                s,
                " to a tailwater fixed at {} {lu} (a submerged orifice acts on the head difference, a submerged weir is reduced by the Villemonte factor, a barrel's outlet control sees it)",
                sig(o.length(*x), 6)
            );
        }
        Some(Tailwater::Table(rows)) => {
            let _ = write!(
                s,
                " to a tailwater that rises with the pond's outflow ({} rows of flow against elevation, solved with the outflow at each stage; submerged orifices act on the head difference, submerged weirs are reduced by the Villemonte factor, barrels' outlet control sees it)",
                rows.len()
            );
        }
    }
    s
}

/// The pond's structure: barrels (if any), then the stage-storage-discharge
/// table with one column per device.
pub fn markdown_rating(
    m: &mut String,
    s: &crate::report::summary::Summary,
    escaped_name: &str,
    o: Out,
) {
    let Some(st) = s.structures.iter().find(|x| x.pond == escaped_name) else {
        return;
    };
    let (lu, fu, vu) = (
        o.unit(Quantity::Length),
        o.unit(Quantity::Flow),
        o.unit(Quantity::Volume),
    );
    if st
        .devices
        .iter()
        .any(|d| d.kind == "barrel" || d.into.is_some() || d.count.is_some())
    {
        let mut t = Table::new(vec![
            Column::text("device"),
            Column::text("drains into"),
            Column::number("count"),
            Column::text("description"),
        ]);
        for d in &st.devices {
            t.row([
                d.label.clone(),
                d.into.clone().unwrap_or_else(|| "outfall".into()),
                d.count.unwrap_or(1).to_string(),
                d.description.clone(),
            ]);
        }
        m.push_str(&t.markdown());
        let _ = writeln!(m);
    }
    let barrels: Vec<&DeviceOut> = st.devices.iter().filter(|d| d.kind == "barrel").collect();
    let has_tw = st.tailwater.is_some();
    let _ = writeln!(
        m,
        "Stage-storage-discharge table every {} {lu} and at each device's invert or crest; one column per device ({fu}){}{}.\n",
        sig(st.rating_step, 3),
        if barrels.is_empty() {
            ""
        } else {
            "; \"governs\" names what sets each barrel's flow: its openings, inlet control or outlet control"
        },
        if has_tw {
            "; * marks stages where the tailwater reduces some device's flow"
        } else {
            ""
        }
    );
    let mut cols = vec![
        Column::quantity("stage", lu),
        Column::quantity("storage", vu),
        Column::quantity("outflow", fu),
    ];
    cols.extend(st.devices.iter().map(|d| Column::number(&d.label)));
    cols.extend(
        barrels
            .iter()
            .map(|d| Column::text(format!("{} governs", d.label))),
    );
    if has_tw {
        cols.push(Column::quantity("tailwater", lu));
    }
    let mut t = Table::new(cols);
    for r in &st.rating {
        let mut row = vec![
            format!(
                "{}{}",
                fx(r.stage, 2),
                if r.tailwater_acts { "*" } else { "" }
            ),
            sig(r.storage, 5),
            sig(r.outflow, 4),
        ];
        row.extend(r.flows.iter().map(|q| sig(*q, 4)));
        row.extend(r.governs.iter().map(|g| g.word().to_string()));
        if has_tw {
            row.push(r.tailwater.map(|t| fx(t, 2)).unwrap_or_default());
        }
        t.row(row);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// Every device's flow at each routed peak, and the clogged-outlet checks.
pub fn markdown_peaks_and_failures(
    m: &mut String,
    s: &crate::report::summary::Summary,
    escaped_name: &str,
    o: Out,
) {
    let Some(st) = s.structures.iter().find(|x| x.pond == escaped_name) else {
        return;
    };
    let (lu, fu) = (o.unit(Quantity::Length), o.unit(Quantity::Flow));
    let peaks: Vec<&DevicePeakOut> = s
        .device_peaks
        .iter()
        .filter(|d| d.pond == escaped_name)
        .collect();
    if !peaks.is_empty() {
        let _ = writeln!(m, "Each device's flow at the routed peak stage ({fu}):\n");
        let barrels: Vec<&DeviceOut> = st.devices.iter().filter(|d| d.kind == "barrel").collect();
        let mut cols = vec![
            Column::text("storm"),
            Column::text("condition"),
            Column::quantity("peak stage", lu),
        ];
        cols.extend(st.devices.iter().map(|d| Column::number(&d.label)));
        cols.extend(
            barrels
                .iter()
                .map(|d| Column::text(format!("{} governs", d.label))),
        );
        if st.tailwater.is_some() {
            cols.push(Column::quantity("tailwater", lu));
            cols.push(Column::text("tailwater acts"));
        }
        let mut t = Table::new(cols);
        for d in peaks {
            let mut row = vec![d.storm.clone(), d.condition.clone(), fx(d.peak_stage, 2)];
            row.extend(d.flows.iter().map(|q| sig(*q, 4)));
            row.extend(d.governs.iter().map(|g| g.word().to_string()));
            if st.tailwater.is_some() {
                row.push(d.tailwater.map(|t| fx(t, 2)).unwrap_or_default());
                row.push(if d.tailwater_acts { "yes" } else { "no" }.into());
            }
            t.row(row);
        }
        m.push_str(&t.markdown());
        let _ = writeln!(m);
    }
    let fails: Vec<&FailureOut> = s
        .failure_checks
        .iter()
        .filter(|f| f.pond == escaped_name)
        .collect();
    if fails.is_empty() {
        return;
    }
    let _ = writeln!(
        m,
        "Clogged-outlet checks: the pond's inflow in the storm routed again with the named devices blocked, from the start shown (\"full\": the lowest device left open).\n"
    );
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("condition"),
        Column::text("blocked"),
        Column::quantity("start", lu),
        Column::quantity("peak stage", lu),
        Column::quantity("peak out", fu),
        Column::quantity("freeboard", lu),
        Column::quantity("required", lu),
        Column::text("result"),
    ]);
    for f in fails {
        t.row([
            f.storm.clone(),
            f.condition.clone(),
            f.blocked.join(", "),
            format!(
                "{}{}",
                fx(f.start, 2),
                if f.start_kind == "full" {
                    " (full)"
                } else {
                    ""
                }
            ),
            f.peak_stage.map(|h| fx(h, 2)).unwrap_or_else(|| "-".into()),
            sig(f.peak_outflow, 4),
            f.freeboard.map(|h| fx(h, 2)).unwrap_or_else(|| "-".into()),
            fx(f.min_freeboard, 2),
            if f.pass {
                "meets".into()
            } else {
                "**FAILS**".to_string()
            },
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}
