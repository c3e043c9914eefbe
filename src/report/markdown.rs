//! `summary.md`: the report an engineer pastes into a drainage study.
//!
//! It opens with the provenance and the caution, then the comparison at the
//! design points, the catchment worksheet, the event table, the ponds, any
//! sizing and long-record results, the plots and the warnings.

use crate::model::{EMBANKMENT_WEIR_COEFFICIENT, ElementKind, Kind, Pond, Study};
use crate::report::summary::{CatchmentOut, ComparisonKind, ComparisonStatus, Out, Summary};
use crate::report::table::{Column, Table};
use crate::util::units::{Quantity, sig};
use std::fmt::Write;

fn f(v: f64, d: usize) -> String {
    if v.is_finite() {
        format!("{v:.d$}")
    } else {
        "-".into()
    }
}

fn opt(v: Option<f64>, d: usize) -> String {
    v.map(|x| f(x, d)).unwrap_or_else(|| "-".into())
}

/// How drain time is measured, stated beside every drain-time check.
pub const DRAIN_TIME_DEFINITION: &str = "Drain time runs from the peak stage until the storage above the starting storage falls below 1 % of its peak value (\"never drained\": not within the run).";

/// A user's text (a name, a limit as written) made safe for a Markdown
/// table cell, heading or image caption: `|` cannot end the cell, `[` and
/// `]` cannot end a caption, and `<`, `>`, `*`, `` ` ``, `\\` and an `&`
/// that would start a character reference are shown as written instead of
/// as HTML or emphasis. A plain `&` ("Harper & Baker") stays as it is, so
/// the file reads well as text too.
/// (Control characters are refused when the scenario is loaded.)
pub fn cell(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for (i, c) in text.char_indices() {
        match c {
            '\\' | '|' | '*' | '`' | '[' | ']' => {
                out.push('\\');
                out.push(c);
            }
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str(ampersand(&text[i + 1..])),
            _ => out.push(c),
        }
    }
    out
}

/// How to write an `&` followed by `rest` in Markdown: `&amp;` where it
/// would start a character reference (`&copy;`, `&#169;`, `&#xA9;`, as
/// CommonMark reads them), else `&` as it is.
fn ampersand(rest: &str) -> &'static str {
    let body = rest.split(';').next().unwrap_or("");
    let is_reference = rest.len() > body.len()
        && !body.is_empty()
        && body.len() <= 32
        && (body.chars().all(|c| c.is_ascii_alphanumeric())
            || body
                .strip_prefix('#')
                .is_some_and(|n| !n.is_empty() && n.chars().all(|c| c.is_ascii_alphanumeric())));
    if is_reference { "&amp;" } else { "&" }
}

/// A warning's text for a Markdown list: no raw HTML and no character
/// reference from the names it quotes.
fn plain(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for (i, c) in text.char_indices() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str(ampersand(&text[i + 1..])),
            _ => out.push(c),
        }
    }
    out
}

/// The summary with every name and limit text escaped by [`cell`], for
/// rendering; `summary.json` keeps the names as written.
fn escaped(s: &Summary) -> Summary {
    let mut s = s.clone();
    let e = |x: &mut String| *x = cell(x);
    e(&mut s.baseline);
    for c in &mut s.catchments {
        e(&mut c.name);
        e(&mut c.condition);
        e(&mut c.to);
        c.covers.iter_mut().for_each(|v| e(&mut v.cover));
    }
    for v in &mut s.events {
        e(&mut v.storm);
        e(&mut v.condition);
        e(&mut v.element);
    }
    for c in &mut s.comparisons {
        e(&mut c.point);
        c.storm.iter_mut().for_each(e);
        c.record.iter_mut().for_each(e);
        e(&mut c.baseline);
        e(&mut c.condition);
        e(&mut c.limit_text);
    }
    for c in &mut s.pond_checks {
        e(&mut c.pond);
        e(&mut c.storm);
        e(&mut c.condition);
    }
    for z in &mut s.sized {
        e(&mut z.pond);
        z.governing_storm.iter_mut().for_each(e);
        z.governing_check.iter_mut().for_each(e);
    }
    for g in &mut s.graphical_checks {
        e(&mut g.catchment);
        e(&mut g.storm);
    }
    escape_structures(&mut s);
    s
}

/// [`escaped`] for the outlet-structure parts of the summary.
fn escape_structures(s: &mut Summary) {
    let e = |x: &mut String| *x = cell(x);
    for st in &mut s.structures {
        e(&mut st.pond);
        for d in &mut st.devices {
            e(&mut d.label);
            e(&mut d.description);
            d.into.iter_mut().for_each(e);
        }
    }
    for d in &mut s.device_peaks {
        e(&mut d.pond);
        e(&mut d.storm);
        e(&mut d.condition);
    }
    for f in &mut s.failure_checks {
        e(&mut f.pond);
        e(&mut f.storm);
        e(&mut f.condition);
        f.blocked.iter_mut().for_each(e);
    }
}

/// The scenario's output unit labels, for table headers.
struct Units {
    flow: &'static str,
    length: &'static str,
    volume: &'static str,
    depth: &'static str,
    area: &'static str,
}

impl Units {
    fn of(o: Out) -> Units {
        Units {
            flow: o.unit(Quantity::Flow),
            length: o.unit(Quantity::Length),
            volume: o.unit(Quantity::Volume),
            depth: o.unit(Quantity::Depth),
            area: o.unit(Quantity::Area),
        }
    }
}

/// Renders the report. `plots` lists (caption, file name) of the PNGs.
pub fn render(study: &Study, s: &Summary, plots: &[(String, String)]) -> String {
    let record_comparisons: Vec<_> = s
        .comparisons
        .iter()
        .filter(|c| c.record.is_some())
        .cloned()
        .collect();
    let record_md = crate::report::records::markdown(study, &s.records, &record_comparisons);
    let s = &escaped(s);
    let o = Out(study.units);
    let u = Units::of(o);
    let mut m = String::new();
    let title = if s.title.is_empty() {
        "Drainage study"
    } else {
        s.title.as_str()
    };
    let _ = writeln!(m, "# {title}\n");
    let _ = writeln!(m, "> **Caution.** {}\n", s.caution);
    provenance(&mut m, study, s, &u);
    // Verdict first.
    design_points(&mut m, s, &u);
    pond_checks(&mut m, s, &u);
    crate::report::storms::markdown(&mut m, &s.storms, u.depth);
    worksheet(&mut m, s, &u);
    events(&mut m, s, &u);
    for e in &study.elements {
        if let ElementKind::Pond(p) = &e.kind {
            pond(&mut m, s, &e.name, p, o, &u);
        }
    }
    for e in &study.elements {
        if let ElementKind::Channel(ch) = &e.kind {
            channel(&mut m, s, study, &e.name, ch, &u);
        }
    }
    sizing(&mut m, s);
    if !record_md.is_empty() {
        m.push_str(&record_md);
    }
    if !plots.is_empty() {
        let _ = writeln!(m, "## Plots\n");
        for (cap, file) in plots {
            let _ = writeln!(m, "![{}]({file})\n", cell(cap));
        }
    }
    warnings(&mut m, s);
    let _ = writeln!(m, "---\n\n*{}*", s.caution);
    m
}

/// The provenance table: program, run, inputs, units, step, baseline.
fn provenance(m: &mut String, study: &Study, s: &Summary, u: &Units) {
    let _ = writeln!(m, "## Provenance\n");
    let mut t = Table::new(vec![Column::text(""), Column::text("")]);
    t.row([
        "program".to_string(),
        format!("runnel {}", s.provenance.version),
    ]);
    t.row(["run".to_string(), s.provenance.run_date.clone()]);
    t.row([
        "scenario".to_string(),
        format!("`{}`", s.provenance.scenario),
    ]);
    t.row([
        "scenario SHA-256".to_string(),
        format!("`{}`", s.provenance.scenario_sha256),
    ]);
    for i in &s.provenance.inputs {
        t.row(["input read".to_string(), format!("`{i}`")]);
    }
    t.row([
        "units".to_string(),
        format!(
            "{} ({}, {}, {}, {}, {}; times in hours from the storm start)",
            s.unit_system, u.flow, u.length, u.volume, u.depth, u.area
        ),
    ]);
    t.row([
        "step".to_string(),
        format!(
            "{} min{}",
            f(s.step_h * 60.0, 2),
            if study.step_given {
                " (given)"
            } else {
                " (chosen: largest of 1, 2, 3, 5, 6 min within 0.133 Tc)"
            }
        ),
    ]);
    t.row([
        "baseline".to_string(),
        format!(
            "{}{}",
            s.baseline,
            if s.baseline_present {
                ""
            } else {
                " (no element: limits that need it are not checked)"
            }
        ),
    ]);
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// The verdict and the limit checks at the design points: peaks per storm
/// and flow durations per record.
fn design_points(m: &mut String, s: &Summary, u: &Units) {
    let _ = writeln!(m, "## Design points\n");
    let peaks: Vec<_> = s
        .comparisons
        .iter()
        .filter(|c| c.check == ComparisonKind::Peak)
        .collect();
    let durations: Vec<_> = s
        .comparisons
        .iter()
        .filter(|c| c.check != ComparisonKind::Peak)
        .collect();
    if s.comparisons.is_empty() {
        let _ = writeln!(m, "No limits are checked (every limit is \"none\").\n");
    } else {
        let fails = s.comparisons.iter().filter(|c| c.fails()).count();
        let unchecked = s.comparisons.iter().filter(|c| c.pass.is_none()).count();
        let mut verdict = if fails == 0 {
            "**Every check is met.**".to_string()
        } else {
            format!("**{fails} check(s) fail.**")
        };
        if unchecked > 0 {
            let one = s
                .comparisons
                .iter()
                .any(|c| c.status == ComparisonStatus::OneCondition);
            verdict.push_str(&if one {
                format!(
                    " {unchecked} check(s) not made: they compare conditions, and every element belongs to \"{}\".",
                    s.baseline
                )
            } else {
                format!(
                    " {unchecked} check(s) not made: the baseline \"{}\" has no element.",
                    s.baseline
                )
            });
        }
        let _ = writeln!(m, "{verdict}\n");
    }
    let b = &s.baseline;
    let sig4 = |v: Option<f64>| v.map(|v| sig(v, 4)).unwrap_or_else(|| "-".into());
    if !peaks.is_empty() {
        let mut t = Table::new(vec![
            Column::text("point"),
            Column::text("storm"),
            Column::text("condition"),
            Column::quantity("area", u.area),
            Column::quantity(&format!("{b} area"), u.area),
            Column::quantity("peak", u.flow),
            Column::quantity("limit", u.flow),
            Column::text("limit rule"),
            Column::quantity(&format!("{b} peak"), u.flow),
            Column::number("margin"),
            Column::text("result"),
        ]);
        for c in &peaks {
            let margin = match (c.limit, c.peak) {
                (Some(l), Some(p)) if l > 0.0 => format!("{:+.1} %", (l - p) / l * 100.0),
                _ => "-".into(),
            };
            t.row([
                c.point.clone(),
                c.storm.clone().unwrap_or_default(),
                c.condition.clone(),
                f(c.area, 3),
                opt(c.baseline_area, 3),
                sig4(c.peak),
                sig4(c.limit),
                c.limit_text.clone(),
                sig4(c.baseline_peak),
                margin,
                result_word(c),
            ]);
        }
        m.push_str(&t.markdown());
        let _ = writeln!(m);
    }
    if !durations.is_empty() {
        let _ = writeln!(
            m,
            "Flow-duration control: each condition's time above each of {} flows spaced evenly in log over the rule's range, against the baseline's time there; a condition fails where its time exceeds the baseline's by more than the tolerance, or where the baseline's time is zero. Each row shows the worst level.\n",
            durations
                .iter()
                .find_map(|c| c.duration.as_ref().map(|d| d.levels))
                .unwrap_or(100)
        );
        let mut t = Table::new(vec![
            Column::text("point"),
            Column::text("record"),
            Column::text("condition"),
            Column::quantity("area", u.area),
            Column::quantity(&format!("{b} area"), u.area),
            Column::text("rule"),
            Column::quantity("worst flow", u.flow),
            Column::quantity(&format!("{b} time above"), "h"),
            Column::quantity("time above", "h"),
            Column::quantity("allowed", "h"),
            Column::text("result"),
        ]);
        for c in &durations {
            let d = c.duration.as_ref();
            t.row([
                c.point.clone(),
                c.record.clone().unwrap_or_default(),
                c.condition.clone(),
                f(c.area, 3),
                opt(c.baseline_area, 3),
                c.limit_text.clone(),
                sig4(d.map(|d| d.worst_flow)),
                sig4(d.map(|d| d.baseline_time_h)),
                sig4(d.map(|d| d.time_h)),
                sig4(d.map(|d| d.allowed_time_h)),
                result_word(c),
            ]);
        }
        m.push_str(&t.markdown());
        let _ = writeln!(m);
    }
}

/// The pond checks (freeboard, drain time, overtopping).
fn pond_checks(m: &mut String, s: &Summary, u: &Units) {
    if s.pond_checks.is_empty() {
        return;
    }
    let _ = writeln!(m, "### Pond checks\n");
    if s.pond_checks.iter().any(|c| c.check.is_time()) {
        let _ = writeln!(m, "{DRAIN_TIME_DEFINITION}\n");
    }
    let mut t = Table::new(vec![
        Column::text("pond"),
        Column::text("storm"),
        Column::text("condition"),
        Column::text("check"),
        Column::number("value"),
        Column::number("limit"),
        Column::text("result"),
    ]);
    for c in &s.pond_checks {
        let unit = if c.check.is_time() { "h" } else { u.length };
        t.row([
            c.pond.clone(),
            c.storm.clone(),
            c.condition.clone(),
            c.check.word().to_string(),
            c.value
                .map(|v| format!("{} {unit}", f(v, 2)))
                .unwrap_or_else(|| "never drained".into()),
            if c.limit.is_finite() {
                format!("{} {unit}", f(c.limit, 2))
            } else {
                "-".into()
            },
            (if c.pass { "meets" } else { "**FAILS**" }).to_string(),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// The catchment worksheet: covers, flow path, timing, graphical check.
fn worksheet(m: &mut String, s: &Summary, u: &Units) {
    let _ = writeln!(m, "## Catchment worksheet\n");
    let _ = writeln!(
        m,
        "Runoff by the SCS curve-number method (TR-55 eq. 2-1 to 2-4); travel times by the TR-55 velocity method (eq. 3-1 to 3-4); lag = 0.6 Tc; SCS dimensionless unit hydrograph (NEH 630 ch. 16) with Tp = step/2 + lag.\n"
    );
    for c in &s.catchments {
        let _ = writeln!(
            m,
            "### {} ({}), {} {}, to \"{}\"\n",
            c.name,
            c.condition,
            f(c.area, 3),
            u.area,
            c.to
        );
        covers(m, c, u);
        if (c.lambda - 0.05).abs() < 1e-9 {
            let _ = writeln!(
                m,
                "Ia = 0.05 S: retention converted by Hawkins et al. (2002), S0.05 = 1.33 S0.20^1.15 (in); equivalent CN {}.\n",
                f(c.cn_used, 2)
            );
        }
        flow_path(m, c, u);
        lag_basis(m, c, u);
        let _ = writeln!(
            m,
            "Tc = **{} h**; lag = {} h; Tp = {} h; unit-hydrograph peak {} {} per {} of runoff (PRF {}).\n",
            f(c.tc_h, 3),
            f(c.lag_h, 3),
            f(c.tp_h, 3),
            sig(c.uh_peak_per_depth, 4),
            u.flow,
            u.depth,
            f(c.prf, 0)
        );
        graphical(m, s, &c.name, u);
    }
}

/// How a catchment timed by its lag got it (nothing for Tc-based ones,
/// whose flow path or given Tc is shown already).
fn lag_basis(m: &mut String, c: &CatchmentOut, u: &Units) {
    match (c.timing, &c.watershed_lag) {
        ("lag_time", _) => {
            let _ = writeln!(
                m,
                "Lag given (`lag_time`); Tc = lag / 0.6 (SCS: Tc = 1.67 lag).\n"
            );
        }
        (_, Some(w)) => {
            let _ = writeln!(
                m,
                "Lag by the NRCS watershed-lag equation, L^0.8 (S + 1)^0.7 / (1900 y^0.5) (Bedient, Huber & Vieux eq. 2-18, after SCS): length {} {}, slope y = {} %, CN {}; Tc = lag / 0.6.\n",
                f(w.length, 1),
                u.length,
                f(w.slope_pct, 3),
                f(c.cn, 2)
            );
        }
        _ => {}
    }
}

/// A catchment's cover table with its composite CN, or the CN as given.
fn covers(m: &mut String, c: &CatchmentOut, u: &Units) {
    if c.covers.is_empty() {
        let _ = writeln!(m, "CN {} (given).\n", f(c.cn, 2));
        return;
    }
    let mut t = Table::new(vec![
        Column::text("cover"),
        Column::number("CN"),
        Column::quantity("area", u.area),
        Column::number("CN x area"),
    ]);
    for r in &c.covers {
        t.row([
            cover_label(&r.cover, r.unconnected),
            f(r.cn, 0),
            f(r.area, 3),
            f(r.cn * r.area, 2),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(
        m,
        "| **composite** | **{}** | {} | |\n",
        f(c.cn, 2),
        f(c.covers.iter().map(|r| r.area).sum(), 3)
    );
    if let Some(imp) = &c.impervious {
        let _ = writeln!(m, "{}\n", imp.sentence());
    }
}

/// A cover's label, marked when it is impervious cover not directly
/// connected (`connected = false`).
pub fn cover_label(label: &str, unconnected: bool) -> String {
    if unconnected {
        format!("{label} (unconnected)")
    } else {
        label.to_string()
    }
}

/// A catchment's flow-path segments with velocities and travel times.
fn flow_path(m: &mut String, c: &CatchmentOut, u: &Units) {
    if c.flow_path.is_empty() {
        return;
    }
    let lu = u.length;
    let mut t = Table::new(vec![
        Column::number("segment"),
        Column::text("kind"),
        Column::quantity("length", lu),
        Column::quantity("slope", &format!("{lu}/{lu}")),
        Column::text("n or surface"),
        Column::quantity("velocity", &format!("{lu}/s")),
        Column::quantity("travel time", "h"),
    ]);
    for (i, sgm) in c.flow_path.iter().enumerate() {
        let ns = sgm
            .n
            .map(|n| f(n, 3))
            .or(sgm.surface.clone())
            .unwrap_or_default();
        t.row([
            (i + 1).to_string(),
            sgm.kind.to_string(),
            f(sgm.length, 1),
            f(sgm.slope, 4),
            ns,
            f(sgm.velocity, 2),
            f(sgm.time_h, 3),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// The TR-55 chapter 4 cross-check of one catchment, when there is one.
fn graphical(m: &mut String, s: &Summary, catchment: &str, u: &Units) {
    let g: Vec<_> = s
        .graphical_checks
        .iter()
        .filter(|g| g.catchment == catchment)
        .collect();
    if g.is_empty() {
        return;
    }
    let _ = writeln!(
        m,
        "Cross-check by the TR-55 chapter 4 graphical method (Table F-1, Fp = 1, Ia = 0.2 S):\n"
    );
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::number("Ia/P"),
        Column::quantity("qu", "csm/in"),
        Column::quantity("graphical peak", u.flow),
        Column::quantity("hydrograph peak", u.flow),
        Column::number("difference"),
    ]);
    for x in g {
        let diff = if x.graphical_peak > 0.0 {
            format!(
                "{:+.0} %",
                (x.hydrograph_peak - x.graphical_peak) / x.graphical_peak * 100.0
            )
        } else {
            "-".into()
        };
        t.row([
            x.storm.clone(),
            format!(
                "{}{}",
                f(x.ia_over_p, 3),
                if x.clamped { " (clamped)" } else { "" }
            ),
            f(x.unit_peak_csm_per_in, 0),
            sig(x.graphical_peak, 4),
            sig(x.hydrograph_peak, 4),
            diff,
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// Every element and point in every storm and condition.
fn events(m: &mut String, s: &Summary, u: &Units) {
    let _ = writeln!(m, "## Events\n");
    if s.events.is_empty() {
        let _ = writeln!(m, "No design storm is run (long records only).\n");
        return;
    }
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("condition"),
        Column::text("element"),
        Column::text("kind"),
        Column::quantity("rain", u.depth),
        Column::quantity("runoff", u.depth),
        Column::quantity("peak", u.flow),
        Column::quantity("at", "h"),
        Column::quantity("volume", u.volume),
    ]);
    for e in &s.events {
        t.row([
            e.storm.clone(),
            e.condition.clone(),
            e.element.clone(),
            e.kind.word().to_string(),
            opt(e.rain_depth, 2),
            opt(e.runoff_depth, 3),
            sig(e.peak_flow, 4),
            f(e.peak_time_h, 2),
            sig(e.volume, 5),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// The sentence that says how runnel routes a channel at the step.
pub fn channel_sentence(ch: &crate::model::Channel, step_h: f64) -> String {
    let split = match ch.plan(step_h) {
        Some(p) => {
            let reaches = if p.sub_reaches > 1 {
                format!(
                    "in {} sub-reaches of K/{} = {} min in series",
                    p.sub_reaches,
                    p.sub_reaches,
                    sig(ch.k_h * 60.0 / p.sub_reaches as f64, 4)
                )
            } else {
                "as one reach".to_string()
            };
            let steps = if p.sub_steps > 1 {
                format!(
                    ", at {} sub-steps of {} min per step",
                    p.sub_steps,
                    sig(step_h * 60.0 / p.sub_steps as f64, 4)
                )
            } else {
                format!(", at the step of {} min", sig(step_h * 60.0, 4))
            };
            format!("{reaches}{steps}")
        }
        None => "(no split with non-negative coefficients at this step)".to_string(),
    };
    format!(
        "Muskingum routing (O2 = C0 I2 + C1 I1 + C2 O1) with K = {} min and X = {}, {split}, so that every coefficient is non-negative (the routing step lies between 2 (K/n) X and 2 (K/n)(1 - X)); the reach starts empty.",
        sig(ch.k_h * 60.0, 4),
        ch.x
    )
}

/// The routing sentences of a channel: at the design storms' step (when
/// the study has storms) and at the step of every record.
pub fn channel_sentences(study: &Study, ch: &crate::model::Channel) -> Vec<String> {
    let mut out = Vec::new();
    if !study.storms.is_empty() {
        out.push(format!(
            "Design storms: {}",
            channel_sentence(ch, study.step_h)
        ));
    }
    for r in &study.records {
        out.push(format!(
            "Record \"{}\": {}",
            r.name,
            channel_sentence(ch, r.step_h)
        ));
    }
    out
}

/// One channel: its K, X and split, and per storm and condition the
/// attenuation and delay of the peak and the volumes.
fn channel(
    m: &mut String,
    s: &Summary,
    study: &Study,
    name: &str,
    ch: &crate::model::Channel,
    u: &Units,
) {
    let _ = writeln!(
        m,
        "## {}\n",
        crate::report::summary::kind_and_name("Channel", &cell(name))
    );
    for line in channel_sentences(study, ch) {
        let _ = writeln!(m, "{}\n", cell(&line));
    }
    if !s
        .events
        .iter()
        .any(|e| e.kind == Kind::Channel && e.element == cell(name))
    {
        return;
    }
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("condition"),
        Column::quantity("peak in", u.flow),
        Column::quantity("at", "h"),
        Column::quantity("peak out", u.flow),
        Column::quantity("at", "h"),
        Column::text("peak lowered by"),
        Column::quantity("delay", "min"),
        Column::quantity("volume in", u.volume),
        Column::quantity("volume out", u.volume),
        Column::quantity("left in reach", u.volume),
    ]);
    for e in s
        .events
        .iter()
        .filter(|e| e.kind == Kind::Channel && e.element == cell(name))
    {
        let (Some(pin), Some(tin), Some((lowered, delay_min))) = (
            e.peak_inflow,
            e.peak_inflow_time_h,
            e.peak_lowered_and_delay(),
        ) else {
            continue;
        };
        let lowered = lowered.map_or_else(|| "-".to_string(), |l| format!("{} %", f(l, 1)));
        t.row([
            e.storm.clone(),
            e.condition.clone(),
            sig(pin, 4),
            f(tin, 2),
            sig(e.peak_flow, 4),
            f(e.peak_time_h, 2),
            lowered,
            f(delay_min, 0),
            opt_sig(e.inflow_volume, 5),
            sig(e.volume, 5),
            opt_sig(e.stored_at_end, 3),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

fn opt_sig(v: Option<f64>, d: usize) -> String {
    v.map_or_else(|| "-".to_string(), |x| sig(x, d))
}

/// One pond: how it is modelled, its outlets, its stage-storage-discharge
/// table (the engine's [`network::rating_rows`]) and its storms.
fn pond(m: &mut String, s: &Summary, name: &str, p: &Pond, o: Out, u: &Units) {
    let lu = u.length;
    let _ = writeln!(
        m,
        "## {}\n",
        crate::report::summary::kind_and_name("Pond", &cell(name))
    );
    let _ = writeln!(
        m,
        "Storage from {}; {}; routed by storage-indication (modified Puls) on a {} {lu} stage grid.{} {DRAIN_TIME_DEFINITION}\n",
        p.storage_kind.describe(),
        crate::report::structure::structure_sentence(p, o),
        f(o.length(p.grid_step_ft), 3),
        match p.top_ft {
            Some(t) => format!(
                " Top of embankment {} {lu}; above it the embankment overflows as a broad-crested weir (C = {}) {} {lu} long.",
                f(o.length(t), 2),
                f(o.weir_coefficient(EMBANKMENT_WEIR_COEFFICIENT), 2),
                f(o.length(p.top_length_ft), 1)
            ),
            None => String::new(),
        }
    );
    pond_storage_and_losses(m, p, o, u);
    let named = p.outlet_names.iter().any(Option::is_some);
    let mut t = Table::new(if named {
        vec![
            Column::number("outlet"),
            Column::text("name"),
            Column::text("device"),
        ]
    } else {
        vec![Column::number("outlet"), Column::text("device")]
    });
    for (i, d) in p.outlets.iter().enumerate() {
        let mut row = vec![(i + 1).to_string()];
        if named {
            row.push(p.outlet_names.get(i).cloned().flatten().unwrap_or_default());
        }
        row.push(describe_outlet(d, o));
        t.row(row);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
    crate::report::structure::markdown_rating(m, s, &cell(name), o);
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("condition"),
        Column::quantity("peak in", u.flow),
        Column::quantity("peak out", u.flow),
        Column::quantity("at", "h"),
        Column::quantity("peak stage", lu),
        Column::quantity("peak storage", u.volume),
        Column::quantity("freeboard", lu),
        Column::quantity("drain time", "h"),
        Column::number("mass balance"),
    ]);
    let escaped_name = cell(name);
    for ev in s
        .events
        .iter()
        .filter(|ev| ev.kind == Kind::Pond && ev.element == escaped_name)
    {
        t.row([
            ev.storm.clone(),
            ev.condition.clone(),
            sig(ev.peak_inflow.unwrap_or(0.0), 4),
            sig(ev.peak_flow, 4),
            f(ev.peak_time_h, 2),
            opt(ev.peak_stage, 2),
            sig(ev.peak_storage.unwrap_or(0.0), 5),
            match (ev.freeboard, ev.overtopped) {
                (_, Some(true)) => "**overtops**".to_string(),
                (Some(fb), _) => f(fb, 2),
                _ => "-".into(),
            },
            ev.drain_time_h
                .flatten()
                .map(|d| f(d, 1))
                .unwrap_or_else(|| "not within run".into()),
            ev.mass_balance_error
                .map(|x| {
                    // Rounding noise on either side of zero prints as 0.
                    let pct = x * 100.0;
                    let pct = if pct.abs() < 0.00005 { 0.0 } else { pct };
                    format!("{pct:.4} %")
                })
                .unwrap_or_default(),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
    crate::report::structure::markdown_peaks_and_failures(m, s, &escaped_name, o);
    pond_infiltrated(m, s, name, p, u);
}

/// A pond's underground units and its losses, in words (nothing for an
/// open basin that loses no water).
fn pond_storage_and_losses(m: &mut String, p: &Pond, o: Out, u: &Units) {
    use crate::methods::pond::Underground;
    use crate::util::units::short;
    let lu = u.length;
    let units = p.storage.underground_parts();
    if !units.is_empty() {
        let _ = writeln!(m, "Underground storage (added to any open basin):\n");
        for (i, unit) in units.iter().enumerate() {
            let text = match unit {
                Underground::Gallery {
                    invert_ft,
                    diameter_ft,
                    length_ft,
                    count,
                } => format!(
                    "pipe gallery: {count} x {} {lu} diameter, {} {lu} long, invert {} {lu} (circular-segment volumes)",
                    short(o.length(*diameter_ft), 4),
                    short(o.length(*length_ft), 4),
                    f(o.length(*invert_ft), 2)
                ),
                Underground::Vault {
                    floor_ft,
                    length_ft,
                    width_ft,
                    height_ft,
                } => format!(
                    "vault: {} x {} {lu}, {} {lu} high, floor {} {lu}",
                    short(o.length(*length_ft), 4),
                    short(o.length(*width_ft), 4),
                    short(o.length(*height_ft), 4),
                    f(o.length(*floor_ft), 2)
                ),
                Underground::Stone {
                    bottom_ft,
                    depth_ft,
                    area_ft2,
                    porosity,
                    embedded,
                } => format!(
                    "stone bed: {} {} in plan, {} {lu} deep, bottom {} {lu}, porosity {}{}",
                    short(*area_ft2 * Quantity::SectionArea.output_factor(o.0), 5),
                    o.unit(Quantity::SectionArea),
                    short(o.length(*depth_ft), 4),
                    f(o.length(*bottom_ft), 2),
                    short(*porosity, 3),
                    if embedded.is_empty() {
                        String::new()
                    } else {
                        "; the pipes laid in it are taken out of its voids".to_string()
                    }
                ),
            };
            let _ = writeln!(m, "{}. {text}", i + 1);
        }
        let _ = writeln!(m);
    }
    let l = &p.losses;
    if l.infiltration_ft_per_s > 0.0 {
        let (rate, ru) = match o.0 {
            crate::util::units::UnitSystem::Us => (l.infiltration_ft_per_s * 3600.0 * 12.0, "in/h"),
            crate::util::units::UnitSystem::Si => {
                (l.infiltration_ft_per_s * 3600.0 * 304.8, "mm/h")
            }
        };
        let _ = writeln!(
            m,
            "Infiltration at a constant {} {ru} over the {}{}; a loss beside the outlets in the routing and the mass balance.\n",
            crate::util::units::short(rate, 3),
            match (p.storage.has_open_basin(), l.infiltration_area) {
                (false, _) => "plan area of every stone bed holding water",
                (true, crate::methods::pond::InfiltrationArea::Wetted) => {
                    "water surface at each stage"
                }
                (true, crate::methods::pond::InfiltrationArea::Bottom) => "bottom area",
            },
            match (p.storage.has_open_basin(), units.is_empty()) {
                (true, false) => {
                    " (and the plan area of any stone bed holding water; vaults and pipes are closed)"
                }
                (false, _) => " (vaults and pipes are closed)",
                (true, true) => "",
            }
        );
    }
    if !l.evaporation_ft_per_day.is_empty() {
        let du = o.unit(Quantity::Depth);
        let list: Vec<String> = l
            .evaporation_ft_per_day
            .iter()
            .map(|e| sig(o.depth(e * 12.0), 3))
            .collect();
        let _ = writeln!(
            m,
            "Evaporation from the open water surface over long records, {du} per day January to December: {}.\n",
            list.join(", ")
        );
    }
}

/// The volume a pond infiltrated in each storm (nothing for a pond that
/// does not infiltrate).
fn pond_infiltrated(m: &mut String, s: &Summary, name: &str, p: &Pond, u: &Units) {
    if p.losses.infiltration_ft_per_s <= 0.0 {
        return;
    }
    let mut t = Table::new(vec![
        Column::text("storm"),
        Column::text("condition"),
        Column::quantity("infiltrated", u.volume),
        Column::quantity("outflow volume", u.volume),
    ]);
    let escaped_name = cell(name);
    for ev in s
        .events
        .iter()
        .filter(|ev| ev.kind == Kind::Pond && ev.element == escaped_name)
    {
        t.row([
            ev.storm.clone(),
            ev.condition.clone(),
            sig(ev.infiltrated_volume.unwrap_or(0.0), 5),
            sig(ev.volume, 5),
        ]);
    }
    m.push_str(&t.markdown());
    let _ = writeln!(m);
}

/// The sized outlet dimensions and why any range is infeasible.
fn sizing(m: &mut String, s: &Summary) {
    if s.sized.is_empty() {
        return;
    }
    let _ = writeln!(m, "## Outlet sizing\n");
    let _ = writeln!(
        m,
        "Each range was given the largest opening (for an elevation, the lowest) that keeps every downstream limit and pond limit for every storm, lowest outlet first, sweeping until no value moves by more than 0.1 %, then the largest buildable value (a whole multiple of the range's step) that still meets every limit with the storms routed again. The margin is at that value; the governing check is the one that fails one step larger.\n"
    );
    let mut t = Table::new(vec![
        Column::text("pond"),
        Column::text("outlet"),
        Column::text("field"),
        Column::text("range"),
        Column::number("chosen"),
        Column::text("governing storm"),
        Column::text("governing check"),
        Column::number("margin"),
    ]);
    for z in &s.sized {
        let unit = z.unit;
        let chosen = if z.feasible {
            format!("{} {unit}", sig(z.value, 4))
        } else {
            format!("{} {unit} (**infeasible**)", sig(z.value, 4))
        };
        t.row([
            z.pond.clone(),
            crate::engine::sizing::outlet_label(z.outlet, z.outlet_name.as_deref()),
            z.field.to_string(),
            format!(
                "{} to {} {unit} in steps of {}",
                sig(z.min, 4),
                sig(z.max, 4),
                crate::util::units::short(z.increment, 4)
            ),
            chosen,
            z.governing_storm.clone().unwrap_or_else(|| "-".into()),
            z.governing_check.clone().unwrap_or_else(|| "-".into()),
            z.margin
                .map(|x| format!("{:.2} %", x * 100.0))
                .unwrap_or_else(|| "-".into()),
        ]);
    }
    m.push_str(&t.markdown());
    for z in s.sized.iter().filter(|z| !z.feasible) {
        let _ = writeln!(
            m,
            "\n**No value of {}, {} {} from {} to {} {} meets every limit:** {}.",
            crate::report::summary::kind_and_name("pond", &z.pond),
            crate::engine::sizing::outlet_label(z.outlet, z.outlet_name.as_deref()),
            z.field,
            sig(z.min, 4),
            sig(z.max, 4),
            z.unit,
            z.reason.clone().unwrap_or_default()
        );
    }
    let _ = writeln!(
        m,
        "\nThe sized scenario is written beside this report as `sized-scenario.toml`.\n"
    );
}

/// The warnings, as a list.
fn warnings(m: &mut String, s: &Summary) {
    let _ = writeln!(m, "## Warnings\n");
    if s.warnings.is_empty() {
        let _ = writeln!(m, "None.\n");
        return;
    }
    for w in &s.warnings {
        // Warnings quote names: no raw HTML from them.
        let _ = writeln!(m, "- {}", plain(w));
    }
    let _ = writeln!(m);
}

/// The result column of a check.
fn result_word(c: &crate::report::summary::ComparisonOut) -> String {
    match c.pass {
        Some(true) => "meets".into(),
        Some(false) => "**EXCEEDS**".into(),
        None => c.status.to_string(),
    }
}

/// One-line description of an outlet in the scenario's units.
pub fn describe_outlet(d: &crate::methods::hydraulics::Outlet, o: Out) -> String {
    use crate::methods::hydraulics::Outlet as D;
    let lu = o.unit(Quantity::Length);
    let l = |x: f64| f(o.length(x), 3);
    match d {
        D::CircularOrifice {
            invert_ft,
            diameter_ft,
            cd,
        } => format!(
            "circular orifice, {} {lu} diameter, invert {} {lu}, Cd {}",
            l(*diameter_ft),
            f(o.length(*invert_ft), 2),
            f(*cd, 2)
        ),
        D::RectangularOrifice {
            invert_ft,
            width_ft,
            height_ft,
            cd,
        } => format!(
            "rectangular orifice {} x {} {lu}, invert {} {lu}, Cd {}",
            l(*width_ft),
            l(*height_ft),
            f(o.length(*invert_ft), 2),
            f(*cd, 2)
        ),
        D::SharpCrestedWeir {
            crest_ft,
            length_ft,
            coefficient,
            contractions,
        } => format!(
            "sharp-crested weir {} {lu} long, crest {} {lu}, C {}, {contractions} end contraction(s)",
            l(*length_ft),
            f(o.length(*crest_ft), 2),
            f(o.weir_coefficient(*coefficient), 2)
        ),
        D::VNotchWeir {
            crest_ft,
            angle_deg,
            cd,
        } => format!(
            "V-notch weir {} deg, crest {} {lu}, Cd {}",
            f(*angle_deg, 1),
            f(o.length(*crest_ft), 2),
            f(*cd, 2)
        ),
        D::BroadCrestedWeir {
            crest_ft,
            length_ft,
            coefficient,
        } => format!(
            "broad-crested spillway {} {lu} long, crest {} {lu}, C {}",
            l(*length_ft),
            f(o.length(*crest_ft), 2),
            f(o.weir_coefficient(*coefficient), 2)
        ),
        D::Riser {
            crest_ft,
            diameter_ft,
            weir_coefficient,
            cd,
        } => format!(
            "riser {} {lu} diameter, rim {} {lu}, weir C {}, Cd {}",
            l(*diameter_ft),
            f(o.length(*crest_ft), 2),
            f(o.weir_coefficient(*weir_coefficient), 2),
            f(*cd, 2)
        ),
        D::Rating { table } => format!(
            "rating table, {} rows from {} {lu}",
            table.len(),
            table
                .first()
                .map(|r| f(o.length(r.0), 2))
                .unwrap_or_default()
        ),
        D::PerforatedRiser {
            invert_ft,
            height_ft,
            area_ft2,
            cd,
            form,
        } => format!(
            "perforated riser, {} {lu}2 of holes over {} {lu} from {} {lu}, Cd {}, {}",
            f(o.length(o.length(*area_ft2)), 3),
            l(*height_ft),
            f(o.length(*invert_ft), 2),
            f(*cd, 2),
            match form {
                crate::methods::hydraulics::Perforation::Slot => "continuous-slot form",
                crate::methods::hydraulics::Perforation::Approximation =>
                    "closed-form approximation",
            }
        ),
        D::VaryingWeir {
            crest_ft,
            length_ft,
            coefficients,
            contractions,
        } => format!(
            "weir {} {lu} long, crest {} {lu}, C from {} to {} over {} heads, {contractions} end contraction(s)",
            l(*length_ft),
            f(o.length(*crest_ft), 2),
            f(
                o.weir_coefficient(coefficients.first().map_or(0.0, |r| r.1)),
                2
            ),
            f(
                o.weir_coefficient(coefficients.last().map_or(0.0, |r| r.1)),
                2
            ),
            coefficients.len()
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_keep_names_from_breaking_tables_and_html() {
        // CommonMark / GFM table syntax: `\|` is a literal bar in a cell
        assert_eq!(cell("Pond A"), "Pond A");
        assert_eq!(cell("a|b"), "a\\|b");
        assert_eq!(cell("<b>x</b> & *y*"), "&lt;b&gt;x&lt;/b&gt; & \\*y\\*");
        // CommonMark 0.31 section 2.5: only `&name;`, `&#digits;` and
        // `&#xhex;` are character references; a plain `&` is shown as is.
        assert_eq!(cell("Harper & Baker"), "Harper & Baker");
        assert_eq!(cell("R&D; lot 4"), "R&amp;D; lot 4");
        assert_eq!(cell("R&D lot 4"), "R&D lot 4");
        assert_eq!(cell("a &copy; b"), "a &amp;copy; b");
        assert_eq!(cell("&#169;&#xA9;"), "&amp;#169;&amp;#xA9;");
        assert_eq!(cell("trailing &"), "trailing &");
        assert_eq!(cell("& ;"), "& ;");
        assert_eq!(plain("x <y> & &amp;"), "x &lt;y&gt; & &amp;amp;");
        assert_eq!(cell("c:\\d"), "c:\\\\d");
    }
}
