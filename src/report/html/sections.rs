//! The text sections of `report.html`: the project block and caution, the summary of checks,
//! the catchment worksheets, sizing, warnings and provenance.

use super::{Cell, Doc, HtmlInput, esc, fixed, num_col, text_col};
use crate::report::markdown::DRAIN_TIME_DEFINITION;

/// The project block (title and the `[report]` entries), the caution and the contents.
pub(super) fn project(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    let r = &input.study.report;
    let title = if s.title.is_empty() {
        "Stormwater computations"
    } else {
        &s.title
    };
    let mut html = format!(
        "<header class=\"project\"><h1>{}</h1><div>Stormwater computations by runnel {}</div><dl>",
        esc(title),
        esc(s.provenance.version)
    );
    for (label, v) in [
        ("Project number", &r.project_number),
        ("Client", &r.client),
        ("Prepared by", &r.prepared_by),
        ("Date", &r.date),
    ] {
        if let Some(v) = v {
            html.push_str(&format!("<dt>{label}</dt><dd>{}</dd>", esc(v)));
        }
    }
    html.push_str(&format!(
        "<dt>Computed</dt><dd>{}</dd><dt>Scenario</dt><dd><code>{}</code></dd></dl></header>\n",
        esc(&s.provenance.run_date),
        esc(&s.provenance.scenario)
    ));
    html.push_str(&format!(
        "<div class=\"caution\"><b>Caution.</b> {}</div>\n",
        esc(s.caution)
    ));
    html.push_str(super::TOC_MARK);
    doc.raw(&html);
}

fn verdict(pass: Option<bool>) -> Cell {
    match pass {
        Some(true) => Cell::Verdict("meets".into(), true),
        Some(false) => Cell::Verdict("exceeds".into(), false),
        None => Cell::Verdict("not checked".into(), false),
    }
}

/// The overall verdict, every limit at the points and every pond check.
pub(super) fn checks(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    let u = &s.units;
    doc.section("checks", "Summary of checks");
    let fails = s.comparisons.iter().filter(|c| c.fails()).count()
        + s.pond_checks.iter().filter(|c| !c.pass).count();
    doc.raw(&format!(
        "<div class=\"verdict {}\">{}</div>\n",
        if s.all_pass { "ok" } else { "bad" },
        if s.all_pass {
            "Every check is met.".to_string()
        } else {
            format!("{fails} check(s) fail; see the rows marked in red.")
        }
    ));
    let peaks: Vec<(usize, &_)> = s
        .comparisons
        .iter()
        .enumerate()
        .filter(|(_, c)| c.check == crate::report::summary::ComparisonKind::Peak)
        .collect();
    if !peaks.is_empty() {
        doc.para(&format!(
            "{} compares each condition's peak at each point with its limit; the hydrographs are drawn in the section on points.",
            Doc::refer("tab-peaks")
        ));
        let cols = [
            text_col("point"),
            text_col("storm"),
            text_col("condition"),
            text_col("limit as given"),
            num_col(&format!("{} peak", s.baseline), u.flow),
            num_col("limit", u.flow),
            num_col("peak", u.flow),
            text_col("result"),
        ];
        let rows: Vec<Vec<Cell>> = peaks
            .iter()
            .map(|(i, c)| {
                vec![
                    Cell::Text(esc(&c.point)),
                    Cell::Text(esc(c.storm.as_deref().unwrap_or(""))),
                    Cell::Text(esc(&c.condition)),
                    Cell::Text(esc(&c.limit_text)),
                    sig_opt(format!("comparisons.{i}.baseline_peak"), c.baseline_peak),
                    sig_opt(format!("comparisons.{i}.limit"), c.limit),
                    sig_opt(format!("comparisons.{i}.peak"), c.peak),
                    verdict(c.pass),
                ]
            })
            .collect();
        doc.table(
            "tab-peaks",
            "Peak flow at the points against the limits.",
            &cols,
            &rows,
        );
    }
    let durations: Vec<(usize, &_)> = s
        .comparisons
        .iter()
        .enumerate()
        .filter(|(_, c)| c.duration.is_some())
        .collect();
    if !durations.is_empty() {
        let cols = [
            text_col("point"),
            text_col("record"),
            text_col("condition"),
            num_col("worst level", u.flow),
            num_col(&format!("{} time", s.baseline), "h"),
            num_col("allowed", "h"),
            num_col("time", "h"),
            text_col("result"),
        ];
        let rows: Vec<Vec<Cell>> = durations
            .iter()
            .filter_map(|(i, c)| {
                let d = c.duration.as_ref()?;
                Some(vec![
                    Cell::Text(esc(&c.point)),
                    Cell::Text(esc(c.record.as_deref().unwrap_or(""))),
                    Cell::Text(esc(&c.condition)),
                    Doc::sig(
                        format!("comparisons.{i}.duration.worst_flow"),
                        d.worst_flow,
                        4,
                    ),
                    Doc::sig(
                        format!("comparisons.{i}.duration.baseline_time_h"),
                        d.baseline_time_h,
                        4,
                    ),
                    Doc::sig(
                        format!("comparisons.{i}.duration.allowed_time_h"),
                        d.allowed_time_h,
                        4,
                    ),
                    Doc::sig(format!("comparisons.{i}.duration.time_h"), d.time_h, 4),
                    verdict(c.pass),
                ])
            })
            .collect();
        doc.table(
            "tab-durations",
            "Flow-duration controls: time above the level where the condition comes closest to (or beyond) its allowance.",
            &cols,
            &rows,
        );
    }
    pond_checks(doc, input);
    doc.end();
}

/// Every pond check: freeboard, stage, drain time, overtopping.
fn pond_checks(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    let u = &s.units;
    if s.pond_checks.is_empty() {
        return;
    }
    {
        let cols = [
            text_col("pond"),
            text_col("storm or record"),
            text_col("condition"),
            text_col("check"),
            num_col("value", ""),
            num_col("limit", ""),
            text_col("result"),
        ];
        let rows: Vec<Vec<Cell>> = s
            .pond_checks
            .iter()
            .enumerate()
            .map(|(i, c)| {
                vec![
                    Cell::Text(esc(&c.pond)),
                    Cell::Text(esc(&c.storm)),
                    Cell::Text(esc(&c.condition)),
                    Cell::Text(esc(&serde_json::to_value(c.check)
                        .ok()
                        .and_then(|v| v.as_str().map(str::to_string))
                        .unwrap_or_default())),
                    Doc::opt(format!("pond_checks.{i}.value"), c.value, 2),
                    Doc::num(format!("pond_checks.{i}.limit"), c.limit, 2),
                    Cell::Verdict(if c.pass { "meets" } else { "fails" }.into(), c.pass),
                ]
            })
            .collect();
        doc.table(
            "tab-pond-checks",
            &format!(
                "Pond checks: freeboard and stage in {}, drain time in h. {}",
                esc(u.stage),
                esc(DRAIN_TIME_DEFINITION)
            ),
            &cols,
            &rows,
        );
    }
}

fn sig_opt(path: String, v: Option<f64>) -> Cell {
    match v {
        Some(v) => Doc::sig(path, v, 4),
        None => Cell::Num("-".into(), None),
    }
}

/// A catchment's covers with the sentence on its impervious cover (none
/// when the CN was given).
fn covers_table(
    doc: &mut Doc,
    i: usize,
    c: &crate::report::summary::CatchmentOut,
    u: &crate::report::summary::Units,
) {
    if !c.covers.is_empty() {
        let cols = [
            text_col("cover"),
            num_col("CN", ""),
            num_col("area", u.area),
            num_col("CN × area", ""),
        ];
        let rows: Vec<Vec<Cell>> = c
            .covers
            .iter()
            .enumerate()
            .map(|(j, r)| {
                vec![
                    Cell::Text(esc(&crate::report::markdown::cover_label(
                        &r.cover,
                        r.unconnected,
                    ))),
                    Doc::num(format!("catchments.{i}.covers.{j}.cn"), r.cn, 0),
                    Doc::num(format!("catchments.{i}.covers.{j}.area"), r.area, 3),
                    Doc::calc(fixed(r.cn * r.area, 2)),
                ]
            })
            .collect();
        doc.table(
            &format!("tab-covers-{i}"),
            &format!(
                "Catchment {}: covers (TR-55 Table 2-2), for the composite curve number.",
                esc(&c.name)
            ),
            &cols,
            &rows,
        );
        if let Some(imp) = &c.impervious {
            doc.para(&esc(&imp.sentence().replace('`', "")));
        }
    }
}

/// One worksheet per catchment: covers and composite CN, the flow path, the timing.
pub(super) fn catchments(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    let u = &s.units;
    if s.catchments.is_empty() {
        return;
    }
    doc.section("catchments", "Catchment worksheets");
    doc.para("Runoff by the SCS curve-number method (TR-55 eq. 2-1 to 2-4); travel times by the TR-55 velocity method (eq. 3-1 to 3-4); lag = 0.6 Tc; SCS dimensionless unit hydrograph (NEH 630 ch. 16) with Tp = step/2 + lag.");
    for (i, c) in s.catchments.iter().enumerate() {
        doc.h3(&format!("{} ({}), to {}", c.name, c.condition, c.to));
        let key = format!("tab-catchment-{i}");
        let cols = [text_col("quantity"), num_col("value", ""), text_col("unit")];
        let p = |f: &str| format!("catchments.{i}.{f}");
        let mut rows = vec![
            vec![
                Cell::Text("area".into()),
                Doc::num(p("area"), c.area, 3),
                Cell::Text(esc(u.area)),
            ],
            vec![
                Cell::Text("curve number (composite or given)".into()),
                Doc::num(p("cn"), c.cn, 2),
                Cell::Text(String::new()),
            ],
            vec![
                Cell::Text("initial abstraction ratio".into()),
                Doc::num(p("lambda"), c.lambda, 2),
                Cell::Text(String::new()),
            ],
            vec![
                Cell::Text("curve number used".into()),
                Doc::num(p("cn_used"), c.cn_used, 2),
                Cell::Text(String::new()),
            ],
            vec![
                Cell::Text("potential retention S".into()),
                Doc::num(p("retention"), c.retention, 3),
                Cell::Text(esc(u.depth)),
            ],
            vec![
                Cell::Text("time of concentration Tc".into()),
                Doc::num(p("tc_h"), c.tc_h, 3),
                Cell::Text("h".into()),
            ],
            vec![
                Cell::Text("lag".into()),
                Doc::num(p("lag_h"), c.lag_h, 3),
                Cell::Text("h".into()),
            ],
            vec![
                Cell::Text("time to peak Tp".into()),
                Doc::num(p("tp_h"), c.tp_h, 3),
                Cell::Text("h".into()),
            ],
            vec![
                Cell::Text("unit-hydrograph peak per unit of runoff".into()),
                Doc::sig(p("uh_peak_per_depth"), c.uh_peak_per_depth, 4),
                Cell::Text(format!("{} per {}", esc(u.flow), esc(u.depth))),
            ],
            vec![
                Cell::Text("peak rate factor".into()),
                Doc::num(p("prf"), c.prf, 0),
                Cell::Text(String::new()),
            ],
        ];
        rows.truncate(10);
        doc.table(
            &key,
            &format!("Catchment {}: runoff and timing.", esc(&c.name)),
            &cols,
            &rows,
        );
        covers_table(doc, i, c, u);
        if !c.flow_path.is_empty() {
            let lu = u.stage;
            let cols = [
                num_col("segment", ""),
                text_col("kind"),
                num_col("length", lu),
                num_col("slope", &format!("{lu}/{lu}")),
                text_col("n or surface"),
                num_col("velocity", &format!("{lu}/s")),
                num_col("travel time", "h"),
            ];
            let rows: Vec<Vec<Cell>> = c
                .flow_path
                .iter()
                .enumerate()
                .map(|(j, g)| {
                    let q = |f: &str| format!("catchments.{i}.flow_path.{j}.{f}");
                    vec![
                        Doc::calc((j + 1).to_string()),
                        Cell::Text(esc(g.kind)),
                        Doc::num(q("length"), g.length, 1),
                        Doc::num(q("slope"), g.slope, 4),
                        match (g.n, &g.surface) {
                            (Some(n), _) => Doc::num(q("n"), n, 3),
                            (None, Some(sf)) => Cell::Text(esc(sf)),
                            _ => Cell::Text(String::new()),
                        },
                        Doc::num(q("velocity"), g.velocity, 2),
                        Doc::num(q("time_h"), g.time_h, 3),
                    ]
                })
                .collect();
            doc.table(
                &format!("tab-path-{i}"),
                &format!(
                    "Catchment {}: flow path and travel times; their sum is Tc.",
                    esc(&c.name)
                ),
                &cols,
                &rows,
            );
        }
    }
    doc.end();
}

/// The sized outlet dimensions.
pub(super) fn sizing(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    if s.sized.is_empty() {
        return;
    }
    doc.section("sizing", "Outlet sizing");
    doc.para(&format!(
        "{} gives each sized dimension, the range it was sized in, the storm and check that govern it and the margin left. The sized scenario is written beside this report as <code>sized-scenario.toml</code>.",
        Doc::refer("tab-sizing")
    ));
    let cols = [
        text_col("pond"),
        num_col("outlet", ""),
        text_col("dimension"),
        num_col("value", ""),
        num_col("from", ""),
        num_col("to", ""),
        text_col("governed by"),
        text_col("result"),
    ];
    let rows: Vec<Vec<Cell>> = s
        .sized
        .iter()
        .enumerate()
        .map(|(i, z)| {
            vec![
                Cell::Text(esc(&z.pond)),
                Doc::calc((z.outlet + 1).to_string()),
                Cell::Text(format!("{} [{}]", esc(z.field), esc(z.unit))),
                Doc::num(format!("sized.{i}.value"), z.value, 3),
                Doc::num(format!("sized.{i}.min"), z.min, 3),
                Doc::num(format!("sized.{i}.max"), z.max, 3),
                Cell::Text(esc(&format!(
                    "{} {}",
                    z.governing_storm.as_deref().unwrap_or(""),
                    z.governing_check.as_deref().unwrap_or("")
                ))),
                match &z.reason {
                    Some(r) if !z.feasible => Cell::Verdict(format!("infeasible: {r}"), false),
                    _ => Cell::Verdict("sized".into(), z.feasible),
                },
            ]
        })
        .collect();
    doc.table(
        "tab-sizing",
        "Sized outlet dimensions (outlets numbered from 1).",
        &cols,
        &rows,
    );
    doc.end();
}

/// Every warning, with its code.
pub(super) fn warnings(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    doc.section("warnings", "Warnings");
    if s.warning_details.is_empty() {
        doc.para("The run gave no warnings.");
    } else {
        let cols = [text_col("code"), text_col("what to do")];
        let rows: Vec<Vec<Cell>> = s
            .warning_details
            .iter()
            .map(|w| {
                vec![
                    Cell::Text(format!("<code>{}</code>", esc(w.code))),
                    Cell::Text(esc(&w.message)),
                ]
            })
            .collect();
        doc.table("tab-warnings", "Warnings of the run.", &cols, &rows);
    }
    doc.end();
}

/// What was run, on what, when.
pub(super) fn provenance(doc: &mut Doc, input: &HtmlInput<'_>) {
    let s = input.summary;
    let u = &s.units;
    doc.section("provenance", "Provenance");
    let mut rows = vec![
        vec![
            Cell::Text("program".into()),
            Cell::Text(format!("runnel {}", esc(s.provenance.version))),
        ],
        vec![
            Cell::Text("run".into()),
            Cell::Text(esc(&s.provenance.run_date)),
        ],
        vec![
            Cell::Text("scenario".into()),
            Cell::Text(format!("<code>{}</code>", esc(&s.provenance.scenario))),
        ],
        vec![
            Cell::Text("scenario SHA-256".into()),
            Cell::Text(format!(
                "<code>{}</code>",
                esc(&s.provenance.scenario_sha256)
            )),
        ],
    ];
    for f in &s.provenance.inputs {
        rows.push(vec![
            Cell::Text("input read".into()),
            Cell::Text(format!("<code>{}</code>", esc(f))),
        ]);
    }
    rows.push(vec![
        Cell::Text("units".into()),
        Cell::Text(esc(&format!(
            "{} ({}, {}, {}, {}, {}; times in hours from the storm start)",
            s.unit_system, u.flow, u.stage, u.volume, u.depth, u.area
        ))),
    ]);
    rows.push(vec![
        Cell::Text("step".into()),
        Cell::Text(format!("{} min", fixed(s.step_h * 60.0, 2))),
    ]);
    rows.push(vec![
        Cell::Text("baseline".into()),
        Cell::Text(esc(&s.baseline)),
    ]);
    doc.table(
        "tab-provenance",
        "What was run.",
        &[text_col(""), text_col("")],
        &rows,
    );
    doc.para("The same results are written beside this file as <code>summary.json</code> (every number here), <code>summary.md</code> (the text version, for comparing runs), one CSV of hydrographs per storm (the whole run, step by step) and PNG figures.");
    doc.end();
}
