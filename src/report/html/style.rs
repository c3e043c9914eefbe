//! The report's style sheet: screen and print. The page box is left to the printer's paper
//! (A4 or US Letter); margins and the widest figure fit the narrower width (A4, 210 mm) and
//! the shorter height (Letter, 279 mm), so the same file prints tidily on either.

/// Styles for screen and print, runnel's own layout and colours.
pub(super) const CSS: &str = r#"
:root { --ink:#1f2328; --muted:#5b6470; --rule:#c9d1d9; --band:#eef3f8; --accent:#1f5799; --ok:#176b3a; --bad:#a51d2d; }
* { box-sizing: border-box; }
html { font-family: "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; font-size: 10pt; color: var(--ink); }
body { max-width: 182mm; margin: 0 auto; padding: 8mm 0; line-height: 1.4; }
h1 { font-size: 17pt; margin: 0 0 2mm; color: var(--accent); }
h2 { font-size: 13pt; margin: 0 0 3mm; padding-bottom: 1mm; border-bottom: 1.5pt solid var(--accent); color: var(--accent); }
h2 .no { display: inline-block; min-width: 8mm; }
h3 { font-size: 11pt; margin: 5mm 0 2mm; }
p { margin: 0 0 2.5mm; }
.project { border: 1pt solid var(--rule); background: var(--band); padding: 4mm 5mm; margin-bottom: 4mm; }
.project dl { display: grid; grid-template-columns: 34mm 1fr; gap: 1mm 4mm; margin: 2mm 0 0; }
.project dt { color: var(--muted); }
.project dd { margin: 0; }
.caution { border-left: 3pt solid #b7791f; background: #fdf6e8; padding: 3mm 4mm; margin: 0 0 4mm; }
.verdict { font-size: 12pt; font-weight: bold; padding: 2mm 4mm; margin: 0 0 4mm; border: 1pt solid; }
.verdict.ok { color: var(--ok); border-color: var(--ok); }
.verdict.bad { color: var(--bad); border-color: var(--bad); }
table { border-collapse: collapse; width: 100%; margin: 2mm 0 5mm; font-size: 8.6pt; break-inside: auto; }
caption { text-align: left; caption-side: top; padding-bottom: 1mm; font-size: 9pt; }
th, td { padding: 0.8mm 1.6mm; border-bottom: 0.5pt solid var(--rule); vertical-align: top; }
th { text-align: left; background: var(--band); font-weight: 600; border-bottom: 1pt solid var(--muted); }
th .u { display: block; font-weight: normal; color: var(--muted); font-size: 7.6pt; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; }
td.n { white-space: nowrap; }
th { overflow-wrap: break-word; }
table.wide { font-size: 7.4pt; }
table.wide th, table.wide td { padding: 0.6mm 1mm; }
table.wide th .u { font-size: 6.8pt; }
td.ok { color: var(--ok); font-weight: 600; }
td.bad { color: var(--bad); font-weight: 700; }
thead { display: table-header-group; }
table.short { break-inside: avoid; }
caption { break-after: avoid; }
tr { break-inside: avoid; }
figure { margin: 3mm 0 5mm; break-inside: avoid; }
figure svg { display: block; width: 100%; height: auto; }
figure.point svg, figure.pond svg, figure.rec svg, figure.curves svg { max-width: 168mm; margin: 0 auto; }
figcaption { font-size: 9pt; margin-top: 1mm; }
a.ref { color: var(--accent); text-decoration: none; }
.toc ol { columns: 2; list-style: none; padding-left: 0; margin: 1mm 0 4mm; }
.toc h2 { border: none; font-size: 11pt; margin: 0; }
.note { color: var(--muted); font-size: 8.6pt; }
.net { margin: 2mm 0; }
code { font-size: 8.6pt; }
@media print {
  html { font-size: 9.5pt; }
  body { max-width: none; padding: 0; }
  section.sec { break-before: page; }
  section.sec:first-of-type { break-before: auto; }
  .toc { break-after: avoid; }
  a { color: inherit; }
}
"#;

/// The page box: margins, the running header with the title, page numbers at the foot
/// (printed where the browser supports page-margin boxes).
pub(super) fn page_rules(title: &str) -> String {
    let quoted: String = title
        .chars()
        .map(|c| match c {
            '"' | '\\' => format!("\\{c}"),
            '<' => "\\3C ".to_string(),
            c if c.is_control() => " ".to_string(),
            c => c.to_string(),
        })
        .collect();
    format!(
        "@page {{ margin: 16mm 14mm 16mm 14mm; \
         @top-left {{ content: \"{quoted}\"; font-size: 8pt; color: #5b6470; }} \
         @top-right {{ content: \"runnel report\"; font-size: 8pt; color: #5b6470; }} \
         @bottom-right {{ content: \"page \" counter(page) \" of \" counter(pages); font-size: 8pt; color: #5b6470; }} \
         @bottom-left {{ content: \"planning-level computations; see the caution on page 1\"; font-size: 7pt; color: #5b6470; }} }}\n"
    )
}
