//! The design-storm sections of `report.html`: rainfall (each storm's source, depth and
//! hyetograph), the ponds (geometry, outlets, the stage-storage-discharge table with each
//! device's flow, the curves, and per storm the routing summary, figure and a routing table
//! around the peak) and the hydrographs at the points.

use std::fmt::Write;

use super::{Cell, Col, Doc, HtmlInput, esc, fixed, num_col, text_col};
use crate::model::{ElementKind, Kind, Pond, StormRain, Study};
use crate::report::figures::Subject;
use crate::report::markdown::describe_outlet;
use crate::report::plot::{self, PlotError};
use crate::report::summary::{Out, kind_and_name};
use crate::util::units::{Quantity, sig};

/// Interval of the hyetographs and of the routing tables, hours (a readable quarter hour;
/// a coarser step is kept as it is).
const READABLE_INTERVAL_H: f64 = 0.25;

/// Most rows of a routing table: the interval grows in quarter hours to keep within it.
const MAX_ROUTING_ROWS: usize = 36;

/// Each storm's source, depth and pattern, and its hyetograph.
pub(super) fn rainfall(doc: &mut Doc, input: &HtmlInput<'_>) {
    let study = input.study;
    if input.analysis.storms.is_empty() {
        return;
    }
    let o = Out(study.units);
    let du = o.unit(Quantity::Depth);
    doc.section("rainfall", "Rainfall");
    doc.para(&format!(
        "{} lists the design storms; each hyetograph shows the rain in each quarter hour (or each step, where the step is coarser).",
        Doc::refer("tab-storms")
    ));
    let cols = [
        text_col("storm"),
        text_col("source"),
        num_col("depth", du),
        num_col("duration", "h"),
        num_col("largest quarter-hour depth", du),
        text_col("hyetograph"),
    ];
    let mut rows = Vec::new();
    let mut figs = Vec::new();
    for st in &input.analysis.storms {
        let storm = &study.storms[st.storm];
        let rain_steps = ((storm.rain_end_h() / st.step_h).ceil() as usize).min(st.rain_in.len());
        let (bins, width_h) = binned(
            st.rain_in.get(..rain_steps).unwrap_or(&st.rain_in),
            st.step_h,
        );
        let source = match &storm.rain {
            StormRain::Pattern { key, .. } => {
                format!("pattern \"{}\" scaled to the depth", esc(key))
            }
            StormRain::Nested {
                depths, peak_at, ..
            } => format!(
                "nested storm from {} local depth-duration values, alternating blocks, largest at {} % of the duration",
                depths.len(),
                fixed(peak_at * 100.0, 0)
            ),
            StormRain::Gauge { path, .. } => format!(
                "gauge file <code>{}</code>",
                esc(&path
                    .file_name()
                    .map(|f| f.to_string_lossy().to_string())
                    .unwrap_or_default())
            ),
        };
        let key = format!("fig-hyeto-{}", st.storm);
        rows.push(vec![
            Cell::Text(esc(&storm.name)),
            Cell::Text(source),
            Doc::calc(sig(o.depth(storm.depth_in()), 3)),
            Doc::calc(fixed(storm.rain_end_h(), 2)),
            Doc::calc(fixed(o.depth(bins.iter().copied().fold(0.0, f64::max)), 3)),
            Cell::Text(Doc::refer(&key)),
        ]);
        let svg = hyetograph_svg(
            &bins.iter().map(|v| o.depth(*v)).collect::<Vec<_>>(),
            width_h,
            du,
        );
        figs.push((
            key,
            svg,
            format!(
                "Hyetograph of the {} storm ({} {du} in all), rain per {} min.",
                esc(&storm.name),
                sig(o.depth(storm.depth_in()), 3),
                fixed(width_h * 60.0, 0)
            ),
        ));
    }
    doc.table("tab-storms", "Design storms.", &cols, &rows);
    for (key, svg, cap) in figs {
        doc.figure(&key, &svg, &cap, "hyeto");
    }
    doc.end();
}

/// Rain summed into readable intervals: (depth per interval, interval in h).
fn binned(rain: &[f64], step_h: f64) -> (Vec<f64>, f64) {
    let per = ((READABLE_INTERVAL_H / step_h).round() as usize).max(1);
    let bins = rain
        .chunks(per)
        .map(|c| c.iter().filter(|v| v.is_finite()).sum())
        .collect();
    (bins, per as f64 * step_h)
}

/// A small bar chart of rain per interval, drawn as SVG by hand (bars, a time axis in hours,
/// a depth axis).
fn hyetograph_svg(bins: &[f64], width_h: f64, unit: &str) -> String {
    let (w, h, l, r, t, b) = (1000.0, 230.0, 70.0, 20.0, 16.0, 44.0);
    let max = bins.iter().copied().fold(0.0_f64, f64::max).max(1e-9);
    let top = nice_ceiling(max);
    let t_end = (bins.len() as f64 * width_h).max(width_h);
    let x = |th: f64| l + (w - l - r) * th / t_end;
    let y = |v: f64| t + (h - t - b) * (1.0 - v / top);
    let mut s = format!(
        "<svg viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\" role=\"img\" font-family=\"sans-serif\" font-size=\"13\">"
    );
    for k in 0..=4 {
        let v = top * k as f64 / 4.0;
        let _ = write!(
            s,
            "<line x1=\"{l}\" x2=\"{}\" y1=\"{:.1}\" y2=\"{:.1}\" stroke=\"#e3e7eb\"/><text x=\"{}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"#444\">{}</text>",
            w - r,
            y(v),
            y(v),
            l - 6.0,
            y(v) + 4.0,
            trim(v)
        );
    }
    for (k, v) in bins.iter().enumerate().filter(|(_, v)| **v > 0.0) {
        let (x0, x1) = (x(k as f64 * width_h), x((k + 1) as f64 * width_h));
        let _ = write!(
            s,
            "<rect x=\"{x0:.1}\" y=\"{:.1}\" width=\"{:.2}\" height=\"{:.1}\" fill=\"#8fb3d9\" stroke=\"#5c84ad\" stroke-width=\"0.5\"/>",
            y(*v),
            (x1 - x0).max(0.5),
            y(0.0) - y(*v)
        );
    }
    let step = [1.0, 2.0, 3.0, 6.0, 12.0, 24.0]
        .into_iter()
        .find(|s| t_end / s <= 12.0)
        .unwrap_or(48.0);
    let mut th = 0.0;
    while th <= t_end + 1e-9 {
        let _ = write!(
            s,
            "<line x1=\"{0:.1}\" x2=\"{0:.1}\" y1=\"{1:.1}\" y2=\"{2:.1}\" stroke=\"#666\"/><text x=\"{0:.1}\" y=\"{3:.1}\" text-anchor=\"middle\" fill=\"#444\">{4}</text>",
            x(th),
            y(0.0),
            y(0.0) + 5.0,
            y(0.0) + 20.0,
            trim(th)
        );
        th += step;
    }
    let _ = write!(
        s,
        "<line x1=\"{l}\" x2=\"{}\" y1=\"{:.1}\" y2=\"{:.1}\" stroke=\"#666\"/><text x=\"{}\" y=\"{}\" text-anchor=\"middle\" fill=\"#222\">time from start of storm (h)</text><text transform=\"translate(16 {}) rotate(-90)\" text-anchor=\"middle\" fill=\"#222\">rain ({})</text></svg>",
        w - r,
        y(0.0),
        y(0.0),
        (l + w - r) / 2.0,
        h - 6.0,
        (t + h - b) / 2.0,
        esc(unit)
    );
    s
}

fn nice_ceiling(v: f64) -> f64 {
    let mag = 10f64.powf(v.log10().floor());
    [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|c| *c >= v * 1.02)
        .unwrap_or(v)
}

fn trim(v: f64) -> String {
    let s = format!("{v:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// One part per pond: what it is, its table and curves, and its storms.
pub(super) fn ponds(doc: &mut Doc, input: &HtmlInput<'_>) -> Result<(), PlotError> {
    let study = input.study;
    for (i, e) in study.elements.iter().enumerate() {
        let ElementKind::Pond(p) = &e.kind else {
            continue;
        };
        doc.section(&format!("pond-{i}"), &kind_and_name("Pond", &e.name));
        pond_tables(doc, study, i, p)?;
        pond_storms(doc, input, i, &e.name)?;
        doc.end();
    }
    Ok(())
}

/// One section per channel: its K, X and routing split, and per storm and
/// condition the peaks in and out, the attenuation and delay, the volumes.
pub(super) fn channels(doc: &mut Doc, input: &HtmlInput<'_>) {
    let study = input.study;
    let s = input.summary;
    let u = &s.units;
    for (i, e) in study.elements.iter().enumerate() {
        let ElementKind::Channel(ch) = &e.kind else {
            continue;
        };
        doc.section(&format!("channel-{i}"), &kind_and_name("Channel", &e.name));
        doc.para(&esc(&format!(
            "Drains to {}.",
            crate::report::summary::target_name(study, e.to)
        )));
        for line in crate::report::markdown::channel_sentences(study, ch) {
            doc.para(&esc(&line));
        }
        let events: Vec<(usize, &_)> = s
            .events
            .iter()
            .enumerate()
            .filter(|(_, ev)| ev.kind == Kind::Channel && ev.element == e.name)
            .collect();
        if !events.is_empty() {
            let cols = [
                text_col("storm"),
                text_col("condition"),
                num_col("peak in", u.flow),
                num_col("at", "h"),
                num_col("peak out", u.flow),
                num_col("at", "h"),
                num_col("peak lowered", "%"),
                num_col("delay", "min"),
                num_col("volume in", u.volume),
                num_col("volume out", u.volume),
            ];
            let rows: Vec<Vec<Cell>> = events
                .iter()
                .map(|(k, ev)| {
                    let p = |f: &str| format!("events.{k}.{f}");
                    let pin = ev.peak_inflow.unwrap_or(0.0);
                    let tin = ev.peak_inflow_time_h.unwrap_or(0.0);
                    let (lowered, delay_min) = ev.peak_lowered_and_delay().unwrap_or((None, 0.0));
                    vec![
                        Cell::Text(esc(&ev.storm)),
                        Cell::Text(esc(&ev.condition)),
                        Doc::sig(p("peak_inflow"), pin, 4),
                        Doc::num(p("peak_inflow_time_h"), tin, 2),
                        Doc::sig(p("peak_flow"), ev.peak_flow, 4),
                        Doc::num(p("peak_time_h"), ev.peak_time_h, 2),
                        Doc::calc(lowered.map_or_else(|| "-".into(), |l| fixed(l, 1))),
                        Doc::calc(fixed(delay_min, 0)),
                        Doc::opt(p("inflow_volume"), ev.inflow_volume, 0),
                        Doc::num(p("volume"), ev.volume, 0),
                    ]
                })
                .collect();
            doc.table(
                &format!("tab-channel-{i}"),
                "Channel routing per storm and condition: the peak lowered and delayed by the reach.",
                &cols,
                &rows,
            );
        }
        doc.end();
    }
}

/// Outlets, the stage-storage-discharge table with every device's flow, and the curves.
fn pond_tables(doc: &mut Doc, study: &Study, i: usize, p: &Pond) -> Result<(), PlotError> {
    let o = Out(study.units);
    let (lu, vu, fu) = (
        o.unit(Quantity::Length),
        o.unit(Quantity::Volume),
        o.unit(Quantity::Flow),
    );
    let (t_out, t_rate, f_curves) = (
        format!("tab-outlets-{i}"),
        format!("tab-rating-{i}"),
        format!("fig-curves-{i}"),
    );
    doc.para(&format!(
        "Storage from {}; {}; routed by storage-indication on a {} {lu} stage grid{}. {} lists the outlets, {} the stage, storage and each device's discharge, and {} draws them.",
        p.storage_kind.describe(),
        esc(&crate::report::structure::structure_sentence(p, o)),
        fixed(o.length(p.grid_step_ft), 3),
        p.top_ft.map(|t| format!("; top of embankment {} {lu}", fixed(o.length(t), 2))).unwrap_or_default(),
        Doc::refer(&t_out),
        Doc::refer(&t_rate),
        Doc::refer(&f_curves)
    ));
    let rows: Vec<Vec<Cell>> = p
        .outlets
        .iter()
        .enumerate()
        .map(|(k, d)| {
            vec![
                Doc::calc((k + 1).to_string()),
                Cell::Text(esc(p
                    .outlet_names
                    .get(k)
                    .cloned()
                    .flatten()
                    .as_deref()
                    .unwrap_or(""))),
                Cell::Text(esc(&describe_outlet(d, o))),
            ]
        })
        .collect();
    doc.table(
        &t_out,
        "Outlet devices, numbered from 1.",
        &[num_col("outlet", ""), text_col("name"), text_col("device")],
        &rows,
    );
    // The same rating as `summary.json`'s `structures` (every device through
    // its barrel and against the tailwater), plus the embankment.
    let step = crate::engine::structure::rating_step_ft(study.units);
    let rating = crate::engine::structure::structure_rating(p, step);
    let mut labels: Vec<String> = (0..p.outlets.len())
        .map(|k| {
            crate::engine::sizing::outlet_label(k, p.outlet_names.get(k).and_then(|n| n.as_deref()))
        })
        .chain(
            p.structure
                .barrel_names
                .iter()
                .map(|n| format!("barrel \"{n}\"")),
        )
        .collect();
    if p.top_ft.is_some() {
        labels.push("over the embankment".to_string());
    }
    let mut cols = vec![num_col("stage", lu), num_col("storage", vu)];
    for l in &labels {
        cols.push(num_col(l, fu));
    }
    cols.push(num_col("total outflow", fu));
    let mut rows = Vec::new();
    let mut curves = plot::PondCurvesPlot {
        title: format!(
            "{} - stage-storage and stage-discharge",
            kind_and_name("Pond", &study.elements[i].name)
        ),
        subtitle: format!(
            "each device in its own colour, dashed; runnel {}",
            env!("CARGO_PKG_VERSION")
        ),
        stage_unit: lu.to_string(),
        volume_unit: vu.to_string(),
        flow_unit: fu.replace("m3/s", "m³/s"),
        stages: Vec::new(),
        storage: Vec::new(),
        devices: labels.iter().map(|l| (l.clone(), Vec::new())).collect(),
        total: Vec::new(),
        top: p.top_ft.map(|t| o.length(t)),
    };
    for r in &rating {
        let (h, v) = (r.stage_ft, r.storage_ft3);
        let q = r.flows.total_cfs + r.embankment_cfs;
        let mut row = vec![
            Doc::calc(fixed(o.length(h), 2)),
            Doc::calc(sig(o.volume(v), 5)),
        ];
        let flows = r
            .flows
            .outlets_cfs
            .iter()
            .chain(&r.flows.barrels_cfs)
            .copied()
            .chain(p.top_ft.map(|_| r.embankment_cfs));
        for (k, f) in flows.enumerate() {
            row.push(Doc::calc(sig(o.flow(f), 4)));
            if let Some(d) = curves.devices.get_mut(k) {
                d.1.push(o.flow(f));
            }
        }
        row.push(Doc::calc(sig(o.flow(q), 4)));
        rows.push(row);
        curves.stages.push(o.length(h));
        curves.storage.push(o.volume(v));
        curves.total.push(o.flow(q));
    }
    rating_tables(doc, &t_rate, &cols, &rows);
    let svg = plot::pond_curves_svg(&curves)?;
    doc.figure(
        &f_curves,
        &svg,
        &format!(
            "Stage-storage and stage-discharge curves of {}.",
            esc(&kind_and_name("pond", &study.elements[i].name))
        ),
        "curves",
    );
    Ok(())
}

/// Device columns in one printed rating table: a structure with more
/// devices continues in further tables, each with the stage and the total
/// outflow again, so that no table is wider than the page.
const RATING_DEVICES_PER_TABLE: usize = 8;

/// The rating table of a pond (`cols` and `rows`: stage, storage, one
/// column per device, total outflow), split by [`RATING_DEVICES_PER_TABLE`];
/// the first table is `key`.
fn rating_tables(doc: &mut Doc, key: &str, cols: &[Col], rows: &[Vec<Cell>]) {
    const CAPTION: &str = "Stage, storage and discharge: each opening as it discharges within the structure, each barrel with what its openings pass through it, and the total as routed";
    let devices = cols.len().saturating_sub(3);
    let parts = devices.div_ceil(RATING_DEVICES_PER_TABLE).max(1);
    let total = cols.len().saturating_sub(1);
    for part in 0..parts {
        let from = 2 + part * RATING_DEVICES_PER_TABLE;
        let to = (from + RATING_DEVICES_PER_TABLE).min(total);
        // stage (and storage in the first part), this part's devices, the total
        let keep: Vec<usize> = std::iter::once(0)
            .chain((part == 0).then_some(1))
            .chain(from..to)
            .chain(std::iter::once(total))
            .collect();
        let pick =
            |r: &[Cell]| -> Vec<Cell> { keep.iter().filter_map(|&k| r.get(k).cloned()).collect() };
        let part_cols: Vec<Col> = keep.iter().filter_map(|&k| cols.get(k).cloned()).collect();
        let part_rows: Vec<Vec<Cell>> = rows.iter().map(|r| pick(r)).collect();
        let (part_key, caption) = if parts == 1 {
            (key.to_string(), format!("{CAPTION}."))
        } else {
            (
                if part == 0 {
                    key.to_string()
                } else {
                    format!("{key}-{}", part + 1)
                },
                format!(
                    "{CAPTION}{}: devices {} to {} of {devices}{}.",
                    if part == 0 { "" } else { " (continued)" },
                    from - 1,
                    to - 2,
                    if part + 1 < parts {
                        "; continued in the next table"
                    } else {
                        ""
                    }
                ),
            )
        };
        doc.table(&part_key, &caption, &part_cols, &part_rows);
    }
}

/// Per storm: the routing summary (from `summary.json`), the figure, a routing table.
fn pond_storms(
    doc: &mut Doc,
    input: &HtmlInput<'_>,
    i: usize,
    name: &str,
) -> Result<(), PlotError> {
    let s = input.summary;
    let u = &s.units;
    let events: Vec<(usize, &_)> = s
        .events
        .iter()
        .enumerate()
        .filter(|(_, e)| e.kind == Kind::Pond && e.element == name)
        .collect();
    if !events.is_empty() {
        let cols = [
            text_col("storm"),
            text_col("condition"),
            num_col("peak in", u.flow),
            num_col("peak out", u.flow),
            num_col("at", "h"),
            num_col("peak stage", u.stage),
            num_col("peak storage", u.volume),
            num_col("freeboard", u.stage),
            num_col("drain time", "h"),
        ];
        let rows: Vec<Vec<Cell>> = events
            .iter()
            .map(|(k, e)| {
                let p = |f: &str| format!("events.{k}.{f}");
                vec![
                    Cell::Text(esc(&e.storm)),
                    Cell::Text(esc(&e.condition)),
                    match e.peak_inflow {
                        Some(v) => Doc::sig(p("peak_inflow"), v, 4),
                        None => Doc::calc("-".into()),
                    },
                    Doc::sig(p("peak_flow"), e.peak_flow, 4),
                    Doc::num(p("peak_time_h"), e.peak_time_h, 2),
                    Doc::opt(p("peak_stage"), e.peak_stage, 2),
                    match e.peak_storage {
                        Some(v) => Doc::sig(p("peak_storage"), v, 5),
                        None => Doc::calc("-".into()),
                    },
                    match (e.freeboard, e.overtopped) {
                        (_, Some(true)) => Cell::Verdict("overtops".into(), false),
                        (fb, _) => Doc::opt(p("freeboard"), fb, 2),
                    },
                    match e.drain_time_h.flatten() {
                        Some(d) => Doc::num(p("drain_time_h"), d, 1),
                        None => Cell::Text("not within run".into()),
                    },
                ]
            })
            .collect();
        doc.table(
            &format!("tab-routing-summary-{i}"),
            "Routing summary per storm and condition.",
            &cols,
            &rows,
        );
    }
    for f in input
        .figures
        .iter()
        .filter(|f| matches!(f.subject, Subject::Pond { element, .. } if element == i))
    {
        let Subject::Pond { condition, .. } = f.subject else {
            continue;
        };
        let key = format!("fig-pond-{i}-{}-{condition}", f.storm);
        let tkey = format!("tab-route-{i}-{}-{condition}", f.storm);
        doc.h3(&f.caption);
        doc.para(&format!("{} draws the routing around the peak; {} gives it at a readable interval. The whole run, step by step, is in the storm's CSV file.", Doc::refer(&key), Doc::refer(&tkey)));
        doc.figure(
            &key,
            &f.svg()?,
            &format!("Inflow, outflow and water surface of {}.", esc(&f.caption)),
            "pond",
        );
        routing_table(doc, input, &tkey, i, f.storm, condition);
    }
    Ok(())
}

/// The routing at a readable interval across the figure's window, with the peak-outflow step.
fn routing_table(
    doc: &mut Doc,
    input: &HtmlInput<'_>,
    key: &str,
    i: usize,
    storm: usize,
    condition: usize,
) {
    let o = Out(input.study.units);
    let Some(st) = input.analysis.storms.iter().find(|s| s.storm == storm) else {
        return;
    };
    let Some(er) = st
        .condition(condition)
        .and_then(|c| c.elements.get(i))
        .and_then(|e| e.as_ref())
    else {
        return;
    };
    let Some(pr) = er.pond.as_ref() else { return };
    let dt = st.step_h;
    let (t0, t1) = plot::action_window(&[&pr.inflow_cfs, &er.outflow_cfs], dt)
        .unwrap_or((0.0, pr.inflow_cfs.len() as f64 * dt));
    let mut every = READABLE_INTERVAL_H.max(dt);
    while (t1 - t0) / every > MAX_ROUTING_ROWS as f64 {
        every += READABLE_INTERVAL_H;
    }
    let per = ((every / dt).round() as usize).max(1);
    let k_peak = crate::methods::stats::max_first(&er.outflow_cfs).map(|(_, k)| k);
    let (k0, k1) = (
        (t0 / dt).round() as usize,
        ((t1 / dt).round() as usize).min(pr.inflow_cfs.len().saturating_sub(1)),
    );
    let mut ks: Vec<usize> = (k0..=k1).filter(|k| (k - k0) % per == 0).collect();
    if let Some(kp) = k_peak.filter(|k| !ks.contains(k)) {
        ks.push(kp);
        ks.sort_unstable();
    }
    let rows: Vec<Vec<Cell>> = ks
        .iter()
        .map(|&k| {
            let at = |v: &[f64]| v.get(k).copied().unwrap_or(f64::NAN);
            let mark = if Some(k) == k_peak { " (peak out)" } else { "" };
            vec![
                Cell::Text(format!("{}{mark}", fixed(k as f64 * dt, 2))),
                Doc::calc(flow_text(o.flow(at(&pr.inflow_cfs)))),
                Doc::calc(fixed(o.length(at(&pr.stage_ft)), 2)),
                Doc::calc(fixed(o.volume(at(&pr.storage_ft3)), 0)),
                Doc::calc(flow_text(o.flow(at(&er.outflow_cfs)))),
            ]
        })
        .collect();
    let cols = [
        text_col("time [h]"),
        num_col("inflow", o.unit(Quantity::Flow)),
        num_col("stage", o.unit(Quantity::Length)),
        num_col("storage", o.unit(Quantity::Volume)),
        num_col("outflow", o.unit(Quantity::Flow)),
    ];
    doc.table(
        key,
        &format!(
            "Routing every {} min from {} h to {} h, with the step of peak outflow.",
            fixed(every * 60.0, 0),
            fixed(t0, 2),
            fixed(t1, 2)
        ),
        &cols,
        &rows,
    );
}

/// The hydrographs at each point for each storm.
pub(super) fn points(doc: &mut Doc, input: &HtmlInput<'_>) -> Result<(), PlotError> {
    let figs: Vec<_> = input
        .figures
        .iter()
        .filter(|f| matches!(f.subject, Subject::Point(_)))
        .collect();
    if figs.is_empty() {
        return Ok(());
    }
    doc.section("points", "Hydrographs at the points");
    doc.para(&format!(
        "Each figure shows every condition's hydrograph at a point under the storm's rain, around the runoff: from the first runoff until every series has fallen below {} % of its own peak. The limits and peaks are tabulated in {}.",
        fixed(plot::WINDOW_TAIL_FRACTION * 100.0, 0),
        Doc::refer("tab-peaks")
    ));
    for f in figs {
        let Subject::Point(pi) = f.subject else {
            continue;
        };
        doc.figure(
            &format!("fig-point-{pi}-{}", f.storm),
            &f.svg()?,
            &format!("Hydrographs of the {}.", esc(&f.caption)),
            "point",
        );
    }
    doc.end();
    Ok(())
}

/// A flow in a routing table: four significant figures, and flows below a thousandth as 0
/// (the table reads the routing, not its rounding noise).
fn flow_text(v: f64) -> String {
    if v.abs() < 5e-4 {
        "0".into()
    } else {
        sig(v, 4)
    }
}
