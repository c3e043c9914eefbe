//! `report.html` of the demo: every number tagged from `summary.json` matches it, the file is
//! self-contained, its references resolve; and (ignored without a browser) it prints to a PDF
//! of a sensible length in headless Chromium with no request and no console message, and its
//! screenshot is not blank.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

/// The demo's results folder, run once for the tests of this file.
fn demo() -> &'static Path {
    static DIR: OnceLock<(tempfile::TempDir, PathBuf)> = OnceLock::new();
    &DIR.get_or_init(|| {
        let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("temp dir: {e}"));
        let out = tmp.path().join("demo");
        let scenario =
            Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wrenfield-commons.toml");
        let o = Command::new(env!("CARGO_BIN_EXE_runnel"))
            .arg("run")
            .arg(&scenario)
            .arg("--out")
            .arg(&out)
            .output()
            .unwrap_or_else(|e| panic!("runnel runs: {e}"));
        // Exit 1 is a failing check (the demo's duration control fails); anything else is not.
        assert!(
            matches!(o.status.code(), Some(0 | 1)),
            "demo run: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        (tmp, out)
    })
    .1
}

fn read(p: &Path) -> String {
    std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

/// The value at a dotted path (`events.3.peak_flow`) in a JSON document.
fn at<'a>(v: &'a serde_json::Value, path: &str) -> Option<&'a serde_json::Value> {
    path.split('.')
        .try_fold(v, |v, k| match k.parse::<usize>() {
            Ok(i) => v.get(i),
            Err(_) => v.get(k),
        })
}

/// Each `data-json` cell: (path, text shown).
fn tagged_cells(html: &str) -> Vec<(String, String)> {
    let mut out = Vec::new();
    let mut rest = html;
    while let Some(a) = rest.find("data-json=\"") {
        let after = &rest[a + 11..];
        let Some(q) = after.find('"') else { break };
        let path = after[..q].to_string();
        let Some(gt) = after[q..].find('>') else {
            break;
        };
        let text_start = &after[q + gt + 1..];
        let Some(end) = text_start.find('<') else {
            break;
        };
        out.push((path, text_start[..end].trim().to_string()));
        rest = &text_start[end..];
    }
    out
}

#[test]
fn every_number_tagged_in_the_demo_report_matches_summary_json() {
    let dir = demo();
    let html = read(&dir.join("report.html"));
    let json: serde_json::Value =
        serde_json::from_str(&read(&dir.join("summary.json"))).unwrap_or_else(|e| panic!("{e}"));
    let cells = tagged_cells(&html);
    // The demo has 4 storms, 5 catchments, a pond and a long record: well over a hundred
    // numbers come from summary.json.
    assert!(cells.len() > 100, "only {} tagged numbers", cells.len());
    for (path, text) in &cells {
        let want = at(&json, path)
            .and_then(serde_json::Value::as_f64)
            .unwrap_or_else(|| panic!("{path} is not a number in summary.json"));
        let shown: f64 = text
            .parse()
            .unwrap_or_else(|e| panic!("{path}: \"{text}\" is not a number: {e}"));
        let decimals = text.split('.').nth(1).map_or(0, str::len) as i32;
        // The printed text is the JSON value rounded to the printed decimals.
        let half_unit = 0.5 * 10f64.powi(-decimals);
        assert!(
            (shown - want).abs() <= half_unit * (1.0 + 1e-9),
            "{path}: report shows {text}, summary.json has {want}"
        );
    }
    // Every kind of result is covered, not just one table.
    for prefix in [
        "comparisons.",
        "pond_checks.",
        "catchments.",
        "events.",
        "records.",
    ] {
        assert!(
            cells.iter().any(|(p, _)| p.starts_with(prefix)),
            "no number from {prefix}* in the report"
        );
    }
}

#[test]
fn the_demo_report_is_self_contained_numbered_and_listed_in_the_marker() {
    let dir = demo();
    let html = read(&dir.join("report.html"));
    for banned in ["<script", "<link", "<img", "<iframe", "src=\"", "@import"] {
        assert!(!html.contains(banned), "report.html holds {banned}");
    }
    // url() only for references inside the file (the network diagram's arrow heads).
    assert_eq!(html.matches("url(").count(), html.matches("url(#").count());
    // The only address is the SVG namespace, which is a name, not a request.
    let without_ns = html.replace("http://www.w3.org/2000/svg", "");
    assert!(!without_ns.contains("http://") && !without_ns.contains("https://"));
    assert!(
        !html.contains("(not drawn)"),
        "a reference to a missing figure or table"
    );
    assert!(!html.contains('\u{1}'), "a reference left unresolved");
    let figures = html.matches("<figcaption><b>Figure ").count();
    assert!(figures >= 12, "{figures} figures");
    for n in 1..=figures {
        assert!(
            html.contains(&format!("<b>Figure {n}.</b>")),
            "Figure {n} missing"
        );
    }
    assert!(html.contains("class=\"caution\""));
    for section in [
        "Summary of checks",
        "Network",
        "Rainfall",
        "Catchment worksheets",
        "Pond A",
        "Hydrographs at the points",
        "Long records",
        "Warnings",
        "Provenance",
    ] {
        assert!(
            html.contains(&format!("</span>{section}</h2>")),
            "no section {section}"
        );
    }
    let marker = read(&dir.join(".runnel-results"));
    assert!(
        marker.lines().any(|l| l == "report.html"),
        "marker: {marker}"
    );
}

/// A headless Chromium on this machine, if any (`RUNNEL_CHROMIUM` names one).
fn chromium() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os("RUNNEL_CHROMIUM") {
        return Some(PathBuf::from(p));
    }
    let path = std::env::var_os("PATH")?;
    for name in [
        "chromium-headless-shell",
        "chromium",
        "chromium-browser",
        "google-chrome",
    ] {
        for dir in std::env::split_paths(&path) {
            let p = dir.join(name);
            if p.is_file() {
                return Some(p);
            }
        }
    }
    None
}

/// Headless Chromium with nothing of its own running in the background.
const QUIET_BROWSER: [&str; 7] = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
];

/// Runs headless Chromium on `url` with a fresh profile, every host unresolvable (so a request
/// for anything outside the file fails and is logged) and the net log written to `net_log`;
/// returns stderr.
fn chromium_run(
    browser: &Path,
    work: &Path,
    extra: &[String],
    url: &str,
    net_log: &Path,
) -> String {
    let profile = work.join(format!("profile-{}", extra.len()));
    let o = Command::new(browser)
        .args(QUIET_BROWSER)
        .args([
            "--enable-logging=stderr",
            "--v=0",
            "--host-resolver-rules=MAP * ~NOTFOUND",
            "--no-pdf-header-footer",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--log-net-log={}", net_log.display()))
        .args(extra)
        .arg(url)
        .output()
        .unwrap_or_else(|e| panic!("{} runs: {e}", browser.display()));
    let err = String::from_utf8_lossy(&o.stderr).to_string();
    assert!(o.status.success(), "{} failed: {err}", browser.display());
    err
}

/// Pages in a PDF written by Chromium: the largest `/Count` (the root of the page tree).
fn pdf_pages(pdf: &[u8]) -> usize {
    let text = String::from_utf8_lossy(pdf);
    text.match_indices("/Count ")
        .filter_map(|(i, _)| {
            let digits: String = text[i + 7..]
                .chars()
                .take_while(char::is_ascii_digit)
                .collect();
            digits.parse().ok()
        })
        .max()
        .unwrap_or(0)
}

#[test]
#[ignore = "needs a headless Chromium: .ci/run installs it"]
fn the_demo_report_prints_in_headless_chromium() {
    let browser = chromium().unwrap_or_else(|| {
        panic!("no headless Chromium found: run .ci/run, or set RUNNEL_CHROMIUM")
    });
    let dir = demo();
    let work = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let url = format!(
        "file://{}",
        std::path::absolute(dir.join("report.html"))
            .unwrap_or_default()
            .display()
    );
    let pdf = work.path().join("report.pdf");
    let shot = work.path().join("report.png");
    let mut logs = Vec::new();
    for (extra, net) in [
        (
            vec![format!("--print-to-pdf={}", pdf.display())],
            work.path().join("net-pdf.json"),
        ),
        (
            vec![
                format!("--screenshot={}", shot.display()),
                "--window-size=1280,1800".to_string(),
            ],
            work.path().join("net-shot.json"),
        ),
    ] {
        let err = chromium_run(&browser, work.path(), &extra, &url, &net);
        // No script runs in the report, so any console line is a fault (an error, a failed
        // resource, a blocked request).
        let console: Vec<&str> = err.lines().filter(|l| l.contains(":CONSOLE")).collect();
        assert!(console.is_empty(), "console messages: {console:?}");
        let log = read(&net);
        assert!(
            !log.contains("\"url\":"),
            "the page made a network request: {}",
            log.len()
        );
        logs.push(err);
    }
    let bytes = std::fs::read(&pdf).unwrap_or_else(|e| panic!("{e}"));
    assert!(bytes.starts_with(b"%PDF"), "not a PDF");
    let pages = pdf_pages(&bytes);
    // The demo prints to 15-40 pages on A4 or Letter (24 on Letter with its record in
    // continuous mode and its outlet structure, at full size since no table is wider than
    // the page; 17 when a wide table made Chromium shrink every page): the sections each
    // start a page;
    // far fewer means sections or figures are missing, far more that a figure or table
    // broke. The figures and tables themselves are counted by the numbering test.
    assert!((15..=40).contains(&pages), "{pages} pages");
    let png = std::fs::read(&shot).unwrap_or_else(|e| panic!("{e}"));
    let img = image::load_from_memory(&png)
        .unwrap_or_else(|e| panic!("screenshot: {e}"))
        .to_rgb8();
    let total = img.pixels().count();
    let inked = img
        .pixels()
        .filter(|p| p.0.iter().any(|&c| c < 200))
        .count();
    let colours: std::collections::HashSet<[u8; 3]> = img.pixels().map(|p| p.0).collect();
    assert!(
        inked * 100 > total,
        "screenshot nearly blank: {inked} of {total} pixels inked"
    );
    assert!(
        colours.len() > 16,
        "screenshot holds {} colours",
        colours.len()
    );
}

/// `report.html` of `dir` with a script that lists every table wider than
/// the column it stands in, laid out in headless Chromium at the body's
/// width (182 mm, the printed width on A4; Letter's is wider, and the
/// tables' type is the same on screen and paper). Returns the list.
fn tables_wider_than_the_page(browser: &Path, dir: &Path, work: &Path) -> String {
    let html = read(&dir.join("report.html"));
    let script = "<script>window.addEventListener('load', () => { const out = []; \
        document.querySelectorAll('table').forEach((t, i) => { \
        const box = t.parentElement.getBoundingClientRect(); const r = t.getBoundingClientRect(); \
        if (r.right > box.right + 0.5 || t.scrollWidth > t.clientWidth + 0.5) { \
        out.push((t.caption ? t.caption.textContent.slice(0, 50) : 'table ' + i) + ': ' + \
        Math.round(r.width) + ' px in ' + Math.round(box.width) + ' px'); } }); \
        const pre = document.createElement('pre'); pre.textContent = 'WIDER[' + out.join(' | ') + ']'; \
        document.body.appendChild(pre); });</script>";
    assert!(html.contains("</body>"));
    let page = work.join("measured.html");
    std::fs::write(&page, html.replace("</body>", &format!("{script}</body>")))
        .unwrap_or_else(|e| panic!("{e}"));
    let o = Command::new(browser)
        .args(QUIET_BROWSER)
        .args([
            "--host-resolver-rules=MAP * ~NOTFOUND",
            "--window-size=1280,1800",
            "--virtual-time-budget=5000",
            "--dump-dom",
        ])
        .arg(format!(
            "--user-data-dir={}",
            work.join("profile-measure").display()
        ))
        .arg(format!("file://{}", page.display()))
        .output()
        .unwrap_or_else(|e| panic!("{} runs: {e}", browser.display()));
    let dom = String::from_utf8_lossy(&o.stdout);
    let start = dom
        .rfind("WIDER[")
        .unwrap_or_else(|| panic!("the measuring script did not run: {dom:.300}"));
    let rest = &dom[start + "WIDER[".len()..];
    rest[..rest.find(']').unwrap_or(rest.len())].to_string()
}

#[test]
#[ignore = "needs a headless Chromium: .ci/run installs it"]
fn no_table_is_wider_than_the_printed_page() {
    let browser = chromium().unwrap_or_else(|| {
        panic!("no headless Chromium found: run .ci/run, or set RUNNEL_CHROMIUM")
    });
    let work = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    // The demo (a riser, its barrel and two more outlets), and an invented pond with
    // fourteen openings with long names: a rating table of eighteen columns.
    let mut outlets = String::new();
    for k in 0..14 {
        outlets.push_str(&format!(
            "[[pond.outlet]]\nname = \"orifice in the north wall, row {k}\"\nkind = \"orifice\"\ninvert = {:.1}\ndiameter = \"4 in\"\n",
            100.0 + 0.4 * f64::from(k)
        ));
    }
    let scenario = format!(
        "title = \"Many openings (invented)\"\nunits = \"us\"\nstep = \"5 min\"\n\n[[storm]]\nname = \"design\"\npattern = \"uniform\"\ndepth = \"1 in\"\nduration = \"1 h\"\n\n[[inflow]]\nname = \"inflow\"\nto = \"vault\"\ntable = [[0.0, 0.0], [1.0, 30.0], [3.0, 10.0], [8.0, 0.0], [30.0, 0.0]]\n\n[[pond]]\nname = \"vault\"\nto = \"outfall\"\nstage_area = [[100.0, 20000.0], [108.0, 26000.0]]\ntop = 108.0\n{outlets}\n[[point]]\nname = \"outfall\"\nlimit = \"none\"\n"
    );
    let path = work.path().join("many.toml");
    std::fs::write(&path, scenario).unwrap_or_else(|e| panic!("{e}"));
    let many = work.path().join("many");
    let o = Command::new(env!("CARGO_BIN_EXE_runnel"))
        .arg("run")
        .arg(&path)
        .arg("--out")
        .arg(&many)
        .output()
        .unwrap_or_else(|e| panic!("runnel runs: {e}"));
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(read(&many.join("report.html")).contains("north wall, row 13"));
    for dir in [demo(), many.as_path()] {
        let wider = tables_wider_than_the_page(&browser, dir, work.path());
        assert!(wider.is_empty(), "{}: {wider}", dir.display());
    }
}
