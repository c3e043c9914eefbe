//! `runnel check` (derived parameters, writes nothing) and `runnel
//! estimate` (TR-55 chapter 6 first-cut pond storage).

use crate::engine::analysis;
use crate::engine::network;
use crate::methods::storage_estimate;
use crate::model::{ElementKind, Study, Target};
use crate::report::markdown::describe_outlet;
use crate::report::summary::{self, Out};
use crate::report::table::{Column, Table};
use crate::util::units::{Quantity, sig};
use std::fmt::Write;

/// The text `runnel check` prints for a study and its design-storm
/// analysis (with the command layer's memory estimate line), and the
/// warnings to print after it.
pub fn check_text(
    study: &Study,
    a: &analysis::Analysis,
    memory_line: &str,
) -> (String, Vec<String>) {
    let s = summary::build(
        study,
        a,
        &[],
        &crate::engine::records::RecordsResult::default(),
        String::new(),
    );
    let o = Out(study.units);
    let (fu, lu, du, au) = (
        o.unit(Quantity::Flow),
        o.unit(Quantity::Length),
        o.unit(Quantity::Depth),
        o.unit(Quantity::Area),
    );
    let mut t = String::new();
    let _ = writeln!(
        t,
        "{}: scenario is valid",
        study.provenance.scenario.display()
    );
    let _ = writeln!(
        t,
        "units {}, step {:.2} min, baseline \"{}\"{}, conditions: {}",
        s.unit_system,
        s.step_h * 60.0,
        s.baseline,
        if s.baseline_present {
            ""
        } else {
            " (no element: limits that need it are not checked)"
        },
        s.conditions.join(", ")
    );
    let _ = writeln!(t, "{memory_line}");
    let _ = writeln!(t, "\nCatchments");
    for c in &s.catchments {
        let _ = writeln!(
            t,
            "  {} ({}) {} {au} -> {}",
            c.name,
            c.condition,
            sig(c.area, 4),
            c.to
        );
        for r in &c.covers {
            let _ = writeln!(
                t,
                "    cover {:<32} CN {:>5.1}  {} {au}",
                crate::report::markdown::cover_label(&r.cover, r.unconnected),
                r.cn,
                sig(r.area, 4)
            );
        }
        let _ = writeln!(
            t,
            "    composite CN {:.2}{}",
            c.cn,
            if (c.lambda - 0.05).abs() < 1e-9 {
                format!(" (lambda 0.05: equivalent CN {:.2})", c.cn_used)
            } else {
                String::new()
            }
        );
        if let Some(imp) = &c.impervious {
            let _ = writeln!(t, "    {}", imp.sentence());
        }
        for (i, g) in c.flow_path.iter().enumerate() {
            let _ = writeln!(
                t,
                "    segment {} {:<8} {:>8.1} {lu} slope {:.4}  V {:.3} {lu}/s  Tt {:.3} h",
                i + 1,
                g.kind,
                g.length,
                g.slope,
                g.velocity,
                g.time_h
            );
        }
        timing_lines(&mut t, c, [fu, du, lu]);
        for g in s.graphical_checks.iter().filter(|g| g.catchment == c.name) {
            let _ = writeln!(
                t,
                "    {}: hydrograph peak {} {fu}; TR-55 graphical peak {} {fu} (Ia/P {:.3}{})",
                g.storm,
                sig(g.hydrograph_peak, 4),
                sig(g.graphical_peak, 4),
                g.ia_over_p,
                if g.clamped { ", clamped" } else { "" }
            );
        }
    }
    ponds_text(&mut t, study, o);
    channels_text(&mut t, study, &s);
    let est = estimate_text(study, a);
    if !est.is_empty() {
        t.push('\n');
        t.push_str(&est);
    }
    let warnings = s.warnings.to_vec();
    (t, warnings)
}

/// Each pond: where it drains, its storage, its outlets and a readable rating.
fn ponds_text(t: &mut String, study: &Study, o: Out) {
    let (lu, vu, fu) = (
        o.unit(Quantity::Length),
        o.unit(Quantity::Volume),
        o.unit(Quantity::Flow),
    );
    for e in &study.elements {
        let ElementKind::Pond(p) = &e.kind else {
            continue;
        };
        let _ = writeln!(
            t,
            "\n{} -> {} (storage: {})",
            summary::kind_and_name("Pond", &e.name),
            summary::target_name(study, e.to),
            p.storage_kind.describe()
        );
        for (i, d) in p.outlets.iter().enumerate() {
            let label = crate::engine::sizing::outlet_label(
                i,
                p.outlet_names.get(i).and_then(|n| n.as_deref()),
            );
            let _ = writeln!(t, "  {label}: {}", describe_outlet(d, o));
        }
        let mut table = Table::new(vec![
            Column::number(format!("stage {lu}")),
            Column::number(format!("storage {vu}")),
            Column::number(format!("outflow {fu}")),
        ]);
        for (h, v, q) in network::rating_rows(p) {
            table.row([
                format!("{:.2}", o.length(h)),
                sig(o.volume(v), 6),
                sig(o.flow(q), 4),
            ]);
        }
        t.push_str(&table.text("  ", &[10, 14, 12]));
    }
}

/// Each channel: where it drains, its Muskingum split, and per storm its
/// peak in and out.
fn channels_text(t: &mut String, study: &Study, s: &summary::Summary) {
    let fu = Out(study.units).unit(Quantity::Flow);
    for e in &study.elements {
        let ElementKind::Channel(ch) = &e.kind else {
            continue;
        };
        let _ = writeln!(
            t,
            "\n{} -> {}",
            summary::kind_and_name("Channel", &e.name),
            summary::target_name(study, e.to)
        );
        for line in crate::report::markdown::channel_sentences(study, ch) {
            let _ = writeln!(t, "  {line}");
        }
        for ev in s
            .events
            .iter()
            .filter(|ev| ev.kind == crate::model::Kind::Channel && ev.element == e.name)
        {
            let (Some(pin), Some(tin)) = (ev.peak_inflow, ev.peak_inflow_time_h) else {
                continue;
            };
            let _ = writeln!(
                t,
                "  {} ({}): peak in {} {fu} at {:.2} h, out {} {fu} at {:.2} h",
                ev.storm,
                ev.condition,
                sig(pin, 4),
                tin,
                sig(ev.peak_flow, 4),
                ev.peak_time_h
            );
        }
    }
}

/// A catchment's timing: where it came from, Tc, lag and Tp, and the
/// unit-hydrograph peak both by the formula and as sampled at the step.
fn timing_lines(t: &mut String, c: &summary::CatchmentOut, units: [&str; 3]) {
    let [fu, du, lu] = units;
    let basis = match c.timing {
        "lag_time" => "lag given (`lag_time`), Tc = lag / 0.6".to_string(),
        "watershed_lag" => match &c.watershed_lag {
            Some(w) => format!(
                "lag by the NRCS watershed-lag equation (Bedient et al. eq. 2-18; length {} {lu}, slope {:.3} %), Tc = lag / 0.6",
                sig(w.length, 5),
                w.slope_pct
            ),
            None => "lag by the NRCS watershed-lag equation, Tc = lag / 0.6".to_string(),
        },
        "tc" => "Tc given, lag = 0.6 Tc".to_string(),
        _ => "Tc by the TR-55 velocity method, lag = 0.6 Tc".to_string(),
    };
    let _ = writeln!(
        t,
        "    Tc {:.3} h, lag {:.3} h, Tp {:.3} h ({basis})",
        c.tc_h, c.lag_h, c.tp_h
    );
    let _ = writeln!(
        t,
        "    unit-hydrograph peak per {du} of runoff: {} A Q / Tp = {} {fu}; sampled at the step {} {fu}",
        c.prf,
        sig(c.uh_formula_peak_per_depth, 4),
        sig(c.uh_peak_per_depth, 4)
    );
}

/// What `runnel estimate` prints: the storage estimates, or why there are none.
pub fn estimate_only_text(study: &Study, a: &analysis::Analysis) -> String {
    let t = estimate_text(study, a);
    if t.is_empty() {
        "No pond receives an NRCS 24-hour design storm with a limit, so there is nothing to estimate.\n".into()
    } else {
        t
    }
}

/// Stage at which a pond holds `v` ft3 (bisection on the stage-storage relation).
pub fn stage_for_volume(p: &crate::model::Pond, v: f64) -> f64 {
    let (mut lo, mut hi) = (p.storage.bottom_ft(), p.storage.bottom_ft() + 1.0);
    let mut guard = 0;
    while p.storage.volume_ft3(hi) < v && guard < 60 {
        hi = lo + (hi - lo) * 2.0;
        guard += 1;
    }
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if p.storage.volume_ft3(mid) < v {
            lo = mid
        } else {
            hi = mid
        }
    }
    0.5 * (lo + hi)
}

/// TR-55 chapter 6 storage estimates for every pond and NRCS storm.
pub fn estimate_text(study: &Study, a: &analysis::Analysis) -> String {
    let o = Out(study.units);
    let (fu, lu, vu) = (
        o.unit(Quantity::Flow),
        o.unit(Quantity::Length),
        o.unit(Quantity::Volume),
    );
    let mut t = String::new();
    for st in &a.storms {
        let storm = &study.storms[st.storm];
        let Some(kind) = storm.nrcs() else { continue };
        for c in &st.conditions {
            for (i, er) in c.elements.iter().enumerate() {
                let (Some(pr), ElementKind::Pond(p)) = (
                    er.as_ref().and_then(|e| e.pond.as_ref()),
                    &study.elements[i].kind,
                ) else {
                    continue;
                };
                // The point downstream of the pond.
                let mut at = i;
                let point = loop {
                    match study.elements[at].to {
                        Target::Point(q) => break q,
                        Target::Element(j) => at = j,
                    }
                };
                let Some(limit) = analysis::limit_cfs(
                    study,
                    &a.topology,
                    &a.storms,
                    point,
                    st.storm,
                    c.condition,
                ) else {
                    continue;
                };
                let qi = pr.summary.peak_inflow_cfs;
                let bypass = c
                    .elements
                    .iter()
                    .enumerate()
                    .filter(|(j, e)| {
                        *j != i
                            && e.is_some()
                            && study.elements[*j].to == Target::Point(point)
                            && !a.topology.reaches_through(*j, i)
                    })
                    .map(|(_, e)| {
                        e.as_ref()
                            .map(|e| network::peak(&e.outflow_cfs).0)
                            .unwrap_or(0.0)
                    })
                    .sum::<f64>();
                let qo = (limit - bypass).max(0.0);
                if qi <= 0.0 {
                    continue;
                }
                if t.is_empty() {
                    let _ = writeln!(
                        t,
                        "First-cut storage (TR-55 chapter 6, Figure 6-1 / Table F-2; an approximate method for concept sizing, not a routing):"
                    );
                }
                let head = format!(
                    "  {}, {} ({}): qi {} {fu}, allowed qo {} {fu} (limit {} less bypass {}), qo/qi {:.3}",
                    summary::kind_and_name("pond", &study.elements[i].name),
                    storm.name,
                    study.conditions[c.condition],
                    sig(o.flow(qi), 4),
                    sig(o.flow(qo), 4),
                    sig(o.flow(limit), 4),
                    sig(o.flow(bypass), 4),
                    qo / qi,
                );
                if !storage_estimate::needs_storage(qo / qi) {
                    let _ = writeln!(
                        t,
                        "{head}: the allowed outflow is not below the inflow peak, so this storm needs no storage"
                    );
                    continue;
                }
                let ratio = storage_estimate::storage_ratio(analysis::storm_type(kind), qo / qi);
                let hydrograph_vr = network::volume_ft3(&pr.inflow_cfs, st.step_h);
                let tr55 = tr55_runoff_volume(study, &a.topology, c, i);
                // TR-55 chapter 6 multiplies Vs/Vr by its own Vr = 53.33 Q Am; a pond
                // that also takes inflow hydrographs has no such Q, so its inflow
                // hydrograph's volume stands in.
                let vr = tr55.map_or(hydrograph_vr, |v| v.volume_ft3);
                let vs = ratio.vs_over_vr * vr;
                let stage = stage_for_volume(p, p.storage.volume_ft3(pr.start_ft) + vs);
                let _ = writeln!(
                    t,
                    "{head}{} -> Vs/Vr {:.3}, {}, Vs {} {vu}, reaching stage {:.2} {lu}",
                    if ratio.outside_range {
                        " (outside the figure's 0.1-0.8)"
                    } else {
                        ""
                    },
                    ratio.vs_over_vr,
                    vr_text(tr55, hydrograph_vr, o),
                    sig(o.volume(vs), 5),
                    o.length(stage)
                );
            }
        }
    }
    t
}

/// The TR-55 chapter 6 runoff volume of the catchments draining through a
/// pond in one storm and condition.
#[derive(Debug, Clone, Copy)]
struct Tr55Volume {
    /// Area-weighted runoff depth Q, in.
    runoff_in: f64,
    /// Drainage area Am, mi2.
    area_mi2: f64,
    /// Vr = 53.33 Q Am, ft3.
    volume_ft3: f64,
}

/// Vr = 53.33 Q Am (TR-55 chapter 6) over the catchments whose runoff
/// passes through pond `i`; `None` when an inflow hydrograph also does (its
/// volume has no runoff depth) or no catchment does.
fn tr55_runoff_volume(
    study: &Study,
    topology: &crate::engine::topology::Topology,
    c: &network::ConditionResult,
    i: usize,
) -> Option<Tr55Volume> {
    let (mut qa, mut area_ac) = (0.0, 0.0);
    for (j, er) in c.elements.iter().enumerate() {
        let Some(er) = er else { continue };
        if j == i || !topology.reaches_through(j, i) {
            continue;
        }
        match (&study.elements[j].kind, &er.runoff) {
            (ElementKind::Catchment(cat), Some(r)) => {
                qa += r.runoff_in * cat.area_ac;
                area_ac += cat.area_ac;
            }
            (ElementKind::Inflow(_), _) => return None,
            _ => {}
        }
    }
    if area_ac <= 0.0 {
        return None;
    }
    let runoff_in = qa / area_ac;
    let area_mi2 = area_ac / 640.0;
    let acft = storage_estimate::tr55_runoff_volume_acft(runoff_in, area_mi2);
    Some(Tr55Volume {
        runoff_in,
        area_mi2,
        volume_ft3: acft * 43_560.0,
    })
}

/// The runoff volume part of an estimate line: TR-55's Vr beside the
/// inflow hydrograph's volume.
fn vr_text(tr55: Option<Tr55Volume>, hydrograph_ft3: f64, o: Out) -> String {
    let vu = o.unit(Quantity::Volume);
    let du = o.unit(Quantity::Depth);
    match tr55 {
        Some(v) => format!(
            "Vr = 53.33 Q Am {} {vu} (Q {} {du}, Am {} mi2; TR-55), inflow hydrograph {} {vu}",
            sig(o.volume(v.volume_ft3), 5),
            sig(o.depth(v.runoff_in), 4),
            sig(v.area_mi2, 4),
            sig(o.volume(hydrograph_ft3), 5)
        ),
        None => format!(
            "Vr {} {vu} (the inflow hydrograph's volume: an inflow hydrograph reaches the pond, so TR-55's 53.33 Q Am does not apply)",
            sig(o.volume(hydrograph_ft3), 5)
        ),
    }
}
