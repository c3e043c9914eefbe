//! Snapshots (insta) of what `runnel run` writes for a small US and a small
//! SI scenario: `summary.md`, `summary.json` and the 10-year storm's CSV;
//! and `summary.md` of two ponds in series.
//! Any change to a report shows up here as a diff to review.
//!
//! To review a change: run `cargo test --test snapshots`; a failing
//! snapshot prints its diff, and insta writes the new version beside the
//! old one as `tests/snapshots/*.snap.new`. To accept every new version,
//! run `INSTA_UPDATE=always cargo test --test snapshots` and review the
//! diff with `git diff tests/snapshots/` before committing (DEVELOPERS.md,
//! "Snapshots").
//!
//! What changes from run to run or machine to machine is replaced before
//! the comparison: the run's time stamp; and every non-integer number in
//! `summary.json` is rounded to 12 significant digits, so that a platform
//! whose maths library differs in the last bit does not fail (the Markdown
//! and CSV print fewer digits).

use std::path::Path;

/// Runs `runnel run tests/data/NAME --out TMP` from the crate folder (so
/// the scenario path in the provenance is the same on every machine) and
/// returns the results folder.
fn run(name: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_runnel"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(["run", &format!("tests/data/{name}"), "--out"])
        .arg(&out)
        .arg("--quiet")
        .output()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"));
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "runnel run {name}: {}\n{}",
        o.status,
        String::from_utf8_lossy(&o.stderr)
    );
    dir
}

fn read(dir: &Path, file: &str) -> String {
    let p = dir.join("out").join(file);
    std::fs::read_to_string(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
}

/// `summary.md` with the run's time stamp replaced.
fn markdown(dir: &Path) -> String {
    let md = read(dir, "summary.md");
    let runs = md.lines().filter(|l| l.starts_with("| run |")).count();
    assert_eq!(runs, 1, "summary.md has one `| run |` line");
    md.lines()
        .map(|l| {
            if l.starts_with("| run |") {
                "| run | [run date] |"
            } else {
                l
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Rounds a number to 12 significant digits.
fn round_12(x: f64) -> f64 {
    format!("{x:.11e}").parse().unwrap_or(x)
}

fn round_numbers(v: &mut serde_json::Value) {
    match v {
        serde_json::Value::Number(n) if !(n.is_i64() || n.is_u64()) => {
            if let Some(r) = n
                .as_f64()
                .map(round_12)
                .and_then(serde_json::Number::from_f64)
            {
                *n = r;
            }
        }
        serde_json::Value::Array(a) => a.iter_mut().for_each(round_numbers),
        serde_json::Value::Object(o) => o.values_mut().for_each(round_numbers),
        _ => {}
    }
}

/// `summary.json` with the run's time stamp replaced and numbers rounded.
fn json(dir: &Path) -> String {
    let text = read(dir, "summary.json");
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}"));
    let stamp = v
        .pointer_mut("/provenance/run_date")
        .unwrap_or_else(|| panic!("summary.json has provenance.run_date"));
    assert!(stamp.as_str().is_some_and(|s| s.ends_with('Z')), "{stamp}");
    *stamp = serde_json::Value::from("[run date]");
    round_numbers(&mut v);
    serde_json::to_string_pretty(&v).unwrap_or_else(|e| panic!("{e}"))
}

fn check(scenario: &str, tag: &str) {
    let dir = run(scenario);
    insta::assert_snapshot!(format!("{tag}_summary_md"), markdown(dir.path()));
    insta::assert_snapshot!(format!("{tag}_summary_json"), json(dir.path()));
    insta::assert_snapshot!(
        format!("{tag}_storm_10_yr_csv"),
        read(dir.path(), "storm-10-yr.csv")
    );
}

#[test]
fn us_scenario_outputs_match_their_snapshots() {
    check("basic-us.toml", "us");
}

#[test]
fn si_scenario_outputs_match_their_snapshots() {
    check("basic-si.toml", "si");
}

#[test]
fn series_summary_md_matches_its_snapshot() {
    let dir = run("series.toml");
    insta::assert_snapshot!("series_summary_md", markdown(dir.path()));
}
