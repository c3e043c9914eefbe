//! Snapshot of `summary.md` for a small scenario, so that any change to the
//! report is seen and reviewed. Set RUNNEL_UPDATE_SNAPSHOTS=1 to rewrite it.

mod common;
use common::*;

/// Replaces what changes from run to run or checkout to checkout.
fn normalise(md: &str) -> String {
    md.lines()
        .map(|l| {
            if l.starts_with("| run |") {
                "| run | (date) |".to_string()
            } else if l.starts_with("| scenario |") {
                "| scenario | (path) |".to_string()
            } else if l.starts_with("| input read |") {
                "| input read | (path) |".to_string()
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn summary_md_matches_its_snapshot() {
    let (_, _, dir) = run_scenario(&data("series.toml"));
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    let got = normalise(&md);
    let snap = data("series.summary.md");
    if std::env::var_os("RUNNEL_UPDATE_SNAPSHOTS").is_some() {
        std::fs::write(&snap, &got).unwrap_or_else(|e| panic!("{e}"));
    }
    let want = std::fs::read_to_string(&snap).unwrap_or_else(|e| {
        panic!(
            "{}: {e} (run with RUNNEL_UPDATE_SNAPSHOTS=1 to create it)",
            snap.display()
        )
    });
    if got != want {
        let first = got
            .lines()
            .zip(want.lines())
            .position(|(a, b)| a != b)
            .unwrap_or(0);
        panic!(
            "summary.md differs from {} at line {}:\n  got:  {}\n  want: {}",
            snap.display(),
            first + 1,
            got.lines().nth(first).unwrap_or(""),
            want.lines().nth(first).unwrap_or("")
        );
    }
}
