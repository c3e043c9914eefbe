//! The validation report: every published case with runnel's value, the difference and the
//! verdict, as Markdown (for diffs) and as a self-contained HTML page (for print).

use std::fmt::Write;

use super::{Case, Outcome};
use crate::report::html::esc;

/// Every case checked, in the list's order.
pub fn run() -> Vec<(Case, Outcome)> {
    super::cases::all()
        .into_iter()
        .map(|c| {
            let o = c.check();
            (c, o)
        })
        .collect()
}

/// A value to the precision that shows its comparison: enough decimals for the tolerance.
fn shown(v: f64, tolerance: f64) -> String {
    if !v.is_finite() {
        return "-".into();
    }
    let d = if tolerance > 0.0 {
        ((-tolerance.log10()).ceil() as i64 + 1).clamp(0, 12) as usize
    } else {
        4
    };
    format!("{v:.d$}")
}

/// The heading line: how many cases, how many pass.
pub fn headline(rows: &[(Case, Outcome)]) -> String {
    let off = rows.iter().filter(|(_, o)| !o.pass).count();
    if off == 0 {
        format!(
            "All {} published cases agree within their tolerances.",
            rows.len()
        )
    } else {
        format!("{off} of {} published cases are off.", rows.len())
    }
}

const INTRO: &str = "runnel computes each published value below with the same functions a run uses, and compares it with the value printed in the source. The tolerance is the source's rounding unless stated. The test suite asserts the same list of cases.";

/// The report as Markdown.
pub fn markdown(rows: &[(Case, Outcome)]) -> String {
    let mut m = format!(
        "# runnel {}: validation against published values\n\n{INTRO}\n\n**{}**\n\n| source | quantity | published | runnel | difference | tolerance | verdict |\n|---|---|---:|---:|---:|---:|---|\n",
        env!("CARGO_PKG_VERSION"),
        headline(rows)
    );
    for (c, o) in rows {
        let unit = if c.unit.is_empty() {
            String::new()
        } else {
            format!(" {}", c.unit)
        };
        let _ = writeln!(
            m,
            "| {} | {} | {}{unit} | {}{unit} | {} | {} | {} |",
            crate::report::markdown::cell(c.source),
            crate::report::markdown::cell(&c.quantity),
            shown(c.published, c.tolerance),
            shown(o.value, c.tolerance),
            shown(o.difference, c.tolerance),
            shown(c.tolerance, c.tolerance),
            if o.pass { "agrees" } else { "**off**" }
        );
    }
    m
}

/// The report as a self-contained HTML page.
pub fn html(rows: &[(Case, Outcome)]) -> String {
    let mut h = format!(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>runnel validation</title><style>\
         html{{font-family:\"DejaVu Sans\",Helvetica,Arial,sans-serif;font-size:9.5pt;color:#1f2328}}\
         body{{max-width:182mm;margin:0 auto;padding:8mm 0}}h1{{font-size:15pt;color:#1f5799}}\
         table{{border-collapse:collapse;width:100%;font-size:8.2pt}}th,td{{padding:0.7mm 1.4mm;border-bottom:0.5pt solid #c9d1d9;text-align:left;vertical-align:top}}\
         th{{background:#eef3f8}}td.n{{text-align:right;white-space:nowrap;font-variant-numeric:tabular-nums}}td.ok{{color:#176b3a}}td.bad{{color:#a51d2d;font-weight:700}}\
         thead{{display:table-header-group}}tr{{break-inside:avoid}}\
         @page{{margin:14mm;@bottom-right{{content:\"page \" counter(page) \" of \" counter(pages);font-size:8pt}}}}\
         </style></head><body><h1>runnel {}: validation against published values</h1><p>{}</p><p><b>{}</b></p>\
         <table><thead><tr><th>source</th><th>quantity</th><th>published</th><th>runnel</th><th>difference</th><th>tolerance</th><th>verdict</th></tr></thead><tbody>\n",
        env!("CARGO_PKG_VERSION"),
        esc(INTRO),
        esc(&headline(rows))
    );
    for (c, o) in rows {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td class=\"n\">{} {}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td class=\"{}\">{}</td></tr>",
            esc(c.source),
            esc(&c.quantity),
            shown(c.published, c.tolerance),
            esc(c.unit),
            shown(o.value, c.tolerance),
            shown(o.difference, c.tolerance),
            shown(c.tolerance, c.tolerance),
            if o.pass { "ok" } else { "bad" },
            if o.pass { "agrees" } else { "off" }
        );
    }
    h.push_str("</tbody></table></body></html>\n");
    h
}
