//! `report.html`: the report a reviewer prints and signs off. One self-contained file (styles
//! inline, figures inline as SVG, no scripts, no requests), laid out for print on A4 and US
//! Letter (the printer's paper decides; the page box fits both) and readable on screen.
//!
//! Sections, in the order a reviewer reads them: the project block, the caution, the summary
//! of checks, the network, rainfall, the catchment worksheets, the ponds, the comparisons at
//! the points, long records, sizing, warnings, provenance. Figures and tables are numbered in
//! one sequence each and referred to by number: a section writes a reference with
//! [`Doc::refer`] and the numbers are filled in once the whole document is laid out, so a
//! reference may point forwards.
//!
//! Every number that `summary.json` also carries is written from the same [`Summary`] value
//! with [`Doc::num`], which tags the cell with its JSON path (`data-json="events.3.peak_flow"`)
//! so that a test can check each printed number against the file.

mod network;
mod records;
mod sections;
mod storms;
mod style;

use std::collections::HashMap;
use std::fmt::Write;

use crate::engine::analysis::Analysis;
use crate::model::Study;
use crate::report::figures::StormFigure;
use crate::report::plot::PlotError;
use crate::report::records::{RecordOut, RecordPlots};
use crate::report::summary::Summary;

/// Everything the report is written from: the study, the typed results, the summary values
/// and the figures' data (the same as the PNGs').
pub struct HtmlInput<'a> {
    /// The validated study.
    pub study: &'a Study,
    /// Design-storm results.
    pub analysis: &'a Analysis,
    /// The values of `summary.json`.
    pub summary: &'a Summary,
    /// The storm and pond figures.
    pub figures: &'a [StormFigure],
    /// The long records' entries in output units.
    pub record_entries: &'a [RecordOut],
    /// The long records' figures.
    pub record_plots: &'a [RecordPlots],
}

/// Writes `report.html`.
///
/// # Errors
/// When a figure cannot be drawn.
pub fn render(input: &HtmlInput<'_>) -> Result<String, PlotError> {
    let mut doc = Doc::default();
    sections::project(&mut doc, input);
    sections::checks(&mut doc, input);
    network::section(&mut doc, input);
    storms::rainfall(&mut doc, input);
    sections::catchments(&mut doc, input);
    storms::ponds(&mut doc, input)?;
    storms::channels(&mut doc, input);
    storms::points(&mut doc, input)?;
    records::section(&mut doc, input)?;
    sections::sizing(&mut doc, input);
    sections::warnings(&mut doc, input);
    sections::provenance(&mut doc, input);
    Ok(doc.finish(input.summary))
}

/// HTML text: `<`, `>`, `&`, and both quotes escaped (safe in text and attributes).
pub(crate) fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// A number with `d` decimals ("-" when not finite).
pub(crate) fn fixed(v: f64, d: usize) -> String {
    if v.is_finite() {
        format!("{v:.d$}")
    } else {
        "-".into()
    }
}

/// One table cell.
#[derive(Debug, Clone)]
pub(crate) enum Cell {
    /// Text, already escaped.
    Text(String),
    /// A number (right-aligned), with the JSON path it comes from in `summary.json`, if any.
    Num(String, Option<String>),
    /// A verdict word, styled as passing or failing.
    Verdict(String, bool),
}

/// A table column: header (escaped HTML) and whether it holds numbers.
#[derive(Debug, Clone)]
pub(crate) struct Col(pub(crate) String, pub(crate) bool);

/// A column of text.
pub(crate) fn text_col(h: &str) -> Col {
    Col(esc(h), false)
}

/// A column of numbers with a unit.
pub(crate) fn num_col(h: &str, unit: &str) -> Col {
    if unit.is_empty() {
        Col(esc(h), true)
    } else {
        Col(
            format!("{}<span class=\"u\">{}</span>", esc(h), esc(unit)),
            true,
        )
    }
}

/// The document being written: its body, and the numbers of figures and tables by key.
#[derive(Default)]
pub(crate) struct Doc {
    body: String,
    sections: usize,
    figures: usize,
    tables: usize,
    numbers: HashMap<String, String>,
    toc: Vec<(String, String)>,
}

/// Tables of at most this many rows are kept on one printed page.
const SHORT_TABLE_ROWS: usize = 24;

/// Columns above which a table is set small (`wide`) so that it fits the
/// printed width: a pond's rating has one column per device.
const WIDE_TABLE_COLUMNS: usize = 10;

/// The class attribute of a table of `rows` rows and `cols` columns: a
/// short table stays on one page with its caption; a wide one is set in a
/// smaller type.
fn table_class(rows: usize, cols: usize) -> &'static str {
    match (rows <= SHORT_TABLE_ROWS, cols > WIDE_TABLE_COLUMNS) {
        (true, true) => " class=\"short wide\"",
        (true, false) => " class=\"short\"",
        (false, true) => " class=\"wide\"",
        (false, false) => "",
    }
}

/// Where the contents go.
pub(crate) const TOC_MARK: &str = "<!--contents-->";

/// Marks a reference in the body until the numbers are known.
const REF_MARK: char = '\u{1}';

impl Doc {
    /// Opens a numbered section (each starts a new printed page, except the first).
    pub(crate) fn section(&mut self, id: &str, title: &str) {
        self.sections += 1;
        let _ = writeln!(
            self.body,
            "<section class=\"sec\" id=\"{id}\"><h2><span class=\"no\">{}</span>{}</h2>",
            self.sections,
            esc(title)
        );
        self.toc
            .push((id.to_string(), format!("{} {}", self.sections, title)));
    }

    /// Closes a section.
    pub(crate) fn end(&mut self) {
        self.body.push_str("</section>\n");
    }

    /// Appends raw HTML.
    pub(crate) fn raw(&mut self, html: &str) {
        self.body.push_str(html);
    }

    /// A paragraph of escaped text with references already in it (see [`Doc::refer`]).
    pub(crate) fn para(&mut self, html: &str) {
        let _ = writeln!(self.body, "<p>{html}</p>");
    }

    /// A sub-heading.
    pub(crate) fn h3(&mut self, title: &str) {
        let _ = writeln!(self.body, "<h3>{}</h3>", esc(title));
    }

    /// A reference to the figure or table `key` ("Figure 4"), as a link.
    pub(crate) fn refer(key: &str) -> String {
        format!("{REF_MARK}{key}{REF_MARK}")
    }

    /// A numbered figure from SVG text (plotters' or the report's own) and its caption.
    pub(crate) fn figure(&mut self, key: &str, svg: &str, caption: &str, class: &str) {
        self.figures += 1;
        self.numbers
            .insert(key.to_string(), format!("Figure {}", self.figures));
        let _ = writeln!(
            self.body,
            "<figure id=\"{}\" class=\"{class}\">{}<figcaption><b>Figure {}.</b> {caption}</figcaption></figure>",
            esc(key),
            scalable(svg),
            self.figures
        );
    }

    /// A numbered table with its caption above.
    pub(crate) fn table(&mut self, key: &str, caption: &str, cols: &[Col], rows: &[Vec<Cell>]) {
        self.tables += 1;
        self.numbers
            .insert(key.to_string(), format!("Table {}", self.tables));
        let _ = write!(
            self.body,
            "<table id=\"{}\"{}><caption><b>Table {}.</b> {caption}</caption><thead><tr>",
            esc(key),
            table_class(rows.len(), cols.len()),
            self.tables
        );
        for c in cols {
            let _ = write!(
                self.body,
                "<th{}>{}</th>",
                if c.1 { " class=\"n\"" } else { "" },
                c.0
            );
        }
        self.body.push_str("</tr></thead><tbody>\n");
        for r in rows {
            self.body.push_str("<tr>");
            for c in r {
                match c {
                    Cell::Text(t) => {
                        let _ = write!(self.body, "<td>{t}</td>");
                    }
                    Cell::Num(t, Some(path)) => {
                        let _ = write!(self.body, "<td class=\"n\" data-json=\"{path}\">{t}</td>");
                    }
                    Cell::Num(t, None) => {
                        let _ = write!(self.body, "<td class=\"n\">{t}</td>");
                    }
                    Cell::Verdict(t, ok) => {
                        let _ = write!(
                            self.body,
                            "<td class=\"{}\">{}</td>",
                            if *ok { "ok" } else { "bad" },
                            esc(t)
                        );
                    }
                }
            }
            self.body.push_str("</tr>\n");
        }
        self.body.push_str("</tbody></table>\n");
    }

    /// The whole file: head with the styles and the running header, the contents, the body
    /// with every reference replaced by its number.
    fn finish(self, s: &Summary) -> String {
        let title = if s.title.is_empty() {
            "runnel results"
        } else {
            &s.title
        };
        let mut out = String::with_capacity(self.body.len() + 16_384);
        let _ = write!(
            out,
            "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
             <meta name=\"generator\" content=\"runnel {}\"><title>{}</title><style>{}{}</style></head><body>\n",
            env!("CARGO_PKG_VERSION"),
            esc(title),
            style::CSS,
            style::page_rules(title)
        );
        let mut toc = String::from("<nav class=\"toc\"><h2>Contents</h2><ol>");
        for (id, t) in &self.toc {
            let _ = write!(toc, "<li><a href=\"#{id}\">{}</a></li>", esc(t));
        }
        toc.push_str("</ol></nav>\n");
        // The contents follow the project block and the caution.
        let body = self.body.replacen(TOC_MARK, &toc, 1);
        let mut rest = body.as_str();
        while let Some(a) = rest.find(REF_MARK) {
            out.push_str(&rest[..a]);
            let after = &rest[a + REF_MARK.len_utf8()..];
            let Some(b) = after.find(REF_MARK) else {
                rest = after;
                break;
            };
            let key = &after[..b];
            match self.numbers.get(key) {
                Some(n) => {
                    let _ = write!(out, "<a class=\"ref\" href=\"#{}\">{n}</a>", esc(key));
                }
                None => out.push_str("(not drawn)"),
            }
            rest = &after[b + REF_MARK.len_utf8()..];
        }
        out.push_str(rest);
        out.push_str("</body></html>\n");
        out
    }

    /// A number from `summary.json` at `path`, with `d` decimals.
    pub(crate) fn num(path: impl Into<String>, v: f64, d: usize) -> Cell {
        Cell::Num(fixed(v, d), Some(path.into()))
    }

    /// An optional number from `summary.json` ("-" when absent).
    pub(crate) fn opt(path: impl Into<String>, v: Option<f64>, d: usize) -> Cell {
        match v {
            Some(v) => Doc::num(path, v, d),
            None => Cell::Num("-".into(), None),
        }
    }

    /// A number from `summary.json` at `path`, to `digits` significant figures.
    pub(crate) fn sig(path: impl Into<String>, v: f64, digits: usize) -> Cell {
        Cell::Num(crate::util::units::sig(v, digits), Some(path.into()))
    }

    /// A number computed for the report (not in `summary.json`).
    pub(crate) fn calc(text: String) -> Cell {
        Cell::Num(text, None)
    }
}

/// SVG made to scale with the page: plotters writes a fixed width and height; the report
/// keeps the view box and lets the style sheet size it.
fn scalable(svg: &str) -> String {
    let body = svg.trim_start_matches(|c| c != '<');
    let body = body
        .strip_prefix("<?xml version=\"1.0\" encoding=\"UTF-8\"?>")
        .unwrap_or(body);
    let body = body.trim_start();
    if let Some(rest) = body.strip_prefix("<svg width=\"") {
        // <svg width="W" height="H" viewBox="..." ...
        if let Some(vb) = rest.find("viewBox=") {
            return format!("<svg role=\"img\" {}", &rest[vb..]);
        }
    }
    body.to_string()
}
