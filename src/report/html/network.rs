//! The network diagram of `report.html`: per simulated condition, every element as a box
//! (catchments, ponds and inflows in their own shapes and colours) with an arrow to what it
//! drains to, the points on the right. Drawn as SVG by hand: columns by how many elements
//! lie between an element and its point.

use std::fmt::Write;

use super::{Cell, Doc, HtmlInput, esc, text_col};
use crate::model::{ElementKind, Study, Target};

const BOX_W: f64 = 190.0;
const BOX_H: f64 = 46.0;
const COL_GAP: f64 = 80.0;
const ROW_GAP: f64 = 18.0;

/// The network section: a diagram per condition and the table of links.
pub(super) fn section(doc: &mut Doc, input: &HtmlInput<'_>) {
    let study = input.study;
    if study.elements.is_empty() {
        return;
    }
    doc.section("network", "Network");
    let conds = study.simulated_conditions();
    let keys: Vec<String> = conds.iter().map(|c| format!("fig-network-{c}")).collect();
    doc.para(&format!(
        "What drains where, per condition: {}. Catchments are green, ponds blue, inflows grey; points are round. {} lists every link and its lag.",
        keys.iter().map(|k| Doc::refer(k)).collect::<Vec<_>>().join(", "),
        Doc::refer("tab-links")
    ));
    for (c, key) in conds.iter().zip(&keys) {
        let svg = diagram(study, *c);
        doc.figure(
            key,
            &svg,
            &format!(
                "The network in the {} condition.",
                esc(&study.conditions[*c])
            ),
            "net",
        );
    }
    let rows: Vec<Vec<Cell>> = study
        .elements
        .iter()
        .map(|e| {
            let in_conds: Vec<&str> = study
                .conditions
                .iter()
                .zip(&e.conditions)
                .filter(|(_, m)| **m)
                .map(|(n, _)| n.as_str())
                .collect();
            vec![
                Cell::Text(esc(&e.name)),
                Cell::Text(e.kind_word().to_string()),
                Cell::Text(esc(&in_conds.join(", "))),
                Cell::Text(esc(&target_text(study, e.to))),
                Doc::calc(super::fixed(e.lag_h, 2)),
            ]
        })
        .collect();
    doc.table(
        "tab-links",
        "Elements, the conditions they belong to, and where each drains (lag in h on the way).",
        &[
            text_col("element"),
            text_col("kind"),
            text_col("conditions"),
            text_col("drains to"),
            super::num_col("lag", "h"),
        ],
        &rows,
    );
    doc.end();
}

fn target_text(study: &Study, t: Target) -> String {
    match t {
        Target::Element(j) => format!(
            "{} {}",
            study.elements[j].kind_word(),
            study.elements[j].name
        ),
        Target::Point(p) => format!("point {}", study.points[p].name),
    }
}

/// How many elements lie between element `i` and its point (0: it drains to a point).
fn depth(study: &Study, i: usize) -> usize {
    let mut d = 0;
    let mut t = study.elements[i].to;
    while let Target::Element(j) = t {
        d += 1;
        t = study.elements[j].to;
        if d > study.elements.len() {
            break;
        }
    }
    d
}

/// The diagram of one condition.
fn diagram(study: &Study, c: usize) -> String {
    let members: Vec<usize> = (0..study.elements.len())
        .filter(|&i| {
            study.elements[i]
                .conditions
                .get(c)
                .copied()
                .unwrap_or(false)
        })
        .collect();
    let max_d = members.iter().map(|&i| depth(study, i)).max().unwrap_or(0);
    let cols = max_d + 2;
    let mut column: Vec<Vec<usize>> = vec![Vec::new(); cols];
    for &i in &members {
        column[max_d - depth(study, i)].push(i);
    }
    let points: Vec<usize> = (0..study.points.len())
        .filter(|&p| {
            members
                .iter()
                .any(|&i| study.elements[i].to == Target::Point(p))
        })
        .collect();
    let rows = column
        .iter()
        .map(Vec::len)
        .max()
        .unwrap_or(0)
        .max(points.len())
        .max(1);
    let w = cols as f64 * (BOX_W + COL_GAP) - COL_GAP + 20.0;
    let h = rows as f64 * (BOX_H + ROW_GAP) - ROW_GAP + 20.0;
    let at = |col: usize, row: usize, n: usize| -> (f64, f64) {
        let offset = (rows - n) as f64 * (BOX_H + ROW_GAP) / 2.0;
        (
            10.0 + col as f64 * (BOX_W + COL_GAP),
            10.0 + offset + row as f64 * (BOX_H + ROW_GAP),
        )
    };
    let mut pos = vec![(0.0, 0.0); study.elements.len()];
    for (ci, col) in column.iter().enumerate() {
        for (ri, &i) in col.iter().enumerate() {
            pos[i] = at(ci, ri, col.len());
        }
    }
    let mut ppos = vec![(0.0, 0.0); study.points.len()];
    for (ri, &p) in points.iter().enumerate() {
        ppos[p] = at(cols - 1, ri, points.len());
    }
    let mut s = format!(
        "<svg viewBox=\"0 0 {w:.0} {h:.0}\" xmlns=\"http://www.w3.org/2000/svg\" role=\"img\" font-family=\"sans-serif\" font-size=\"14\" style=\"max-height:{:.0}px\"><defs><marker id=\"arrow-{c}\" viewBox=\"0 0 10 10\" refX=\"10\" refY=\"5\" markerWidth=\"7\" markerHeight=\"7\" orient=\"auto\"><path d=\"M0,0 L10,5 L0,10 z\" fill=\"#555\"/></marker></defs>",
        h.max(120.0)
    );
    for &i in &members {
        let (x, y) = pos[i];
        let (tx, ty) = match study.elements[i].to {
            Target::Element(j) => pos[j],
            Target::Point(p) => ppos[p],
        };
        let _ = write!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"#555\" stroke-width=\"1.6\" marker-end=\"url(#arrow-{c})\"/>",
            x + BOX_W,
            y + BOX_H / 2.0,
            tx,
            ty + BOX_H / 2.0
        );
    }
    for &i in &members {
        let e = &study.elements[i];
        let (x, y) = pos[i];
        let (fill, edge, rx) = match e.kind {
            ElementKind::Catchment(_) => ("#e4f1e1", "#4f7f45", 10.0),
            ElementKind::Pond(_) => ("#dde9f6", "#2f5f93", 2.0),
            ElementKind::Channel(_) => ("#e3f3f4", "#2f7f86", 18.0),
            _ => ("#ececec", "#666666", 0.0),
        };
        let _ = write!(
            s,
            "<rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{BOX_W}\" height=\"{BOX_H}\" rx=\"{rx}\" fill=\"{fill}\" stroke=\"{edge}\" stroke-width=\"1.5\"/><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"#1f2328\">{}</text><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"#5b6470\" font-size=\"12\">{}</text>",
            x + BOX_W / 2.0,
            y + 19.0,
            esc(&clip(&e.name, 22)),
            x + BOX_W / 2.0,
            y + 36.0,
            e.kind_word()
        );
    }
    for &p in &points {
        let (x, y) = ppos[p];
        let _ = write!(
            s,
            "<rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{BOX_W}\" height=\"{BOX_H}\" rx=\"{:.0}\" fill=\"#fff7e6\" stroke=\"#a86b00\" stroke-width=\"1.5\"/><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"#1f2328\">{}</text><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"#5b6470\" font-size=\"12\">point</text>",
            BOX_H / 2.0,
            x + BOX_W / 2.0,
            y + 19.0,
            esc(&clip(&study.points[p].name, 22)),
            x + BOX_W / 2.0,
            y + 36.0
        );
    }
    s.push_str("</svg>");
    s
}

/// A name shortened to `n` characters with an ellipsis (the table gives it in full).
fn clip(name: &str, n: usize) -> String {
    if name.chars().count() <= n {
        name.to_string()
    } else {
        let mut s: String = name.chars().take(n - 1).collect();
        s.push('…');
        s
    }
}
