//! Helpers shared by the integration tests: run the binary, read results.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Output;

/// Path of a file in tests/data.
pub fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data")
        .join(name)
}

/// Path of a file in examples/.
pub fn example(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("examples")
        .join(name)
}

/// Runs `runnel ARGS`.
pub fn runnel(args: &[&str]) -> Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_runnel"))
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"))
}

/// Runs a scenario into a fresh temporary folder; returns (exit code, summary, folder).
pub fn run_scenario(path: &Path) -> (i32, serde_json::Value, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&[
        "run",
        &path.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    let code = o.status.code().unwrap_or(-1);
    let text = std::fs::read_to_string(out.join("summary.json")).unwrap_or_else(|e| {
        panic!(
            "no summary.json (exit {code}): {e}\nstderr: {}",
            String::from_utf8_lossy(&o.stderr)
        )
    });
    let v: serde_json::Value = serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}"));
    (code, v, dir)
}

/// The event row for a storm, condition and element.
pub fn event<'a>(
    s: &'a serde_json::Value,
    storm: &str,
    condition: &str,
    element: &str,
) -> &'a serde_json::Value {
    s["events"]
        .as_array()
        .and_then(|a| {
            a.iter().find(|e| {
                e["storm"] == storm && e["condition"] == condition && e["element"] == element
            })
        })
        .unwrap_or_else(|| panic!("no event {storm}/{condition}/{element}"))
}

/// A number from JSON.
pub fn num(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Every file and folder below `dir` (relative path -> bytes; folders hold no bytes).
pub fn snapshot(dir: &Path) -> std::collections::BTreeMap<PathBuf, Vec<u8>> {
    let mut out = std::collections::BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        let entries = std::fs::read_dir(&d).unwrap_or_else(|e| panic!("{}: {e}", d.display()));
        for entry in entries {
            let p = entry.unwrap_or_else(|e| panic!("{e}")).path();
            let bytes = if p.is_dir() {
                stack.push(p.clone());
                Vec::new()
            } else {
                std::fs::read(&p).unwrap_or_else(|e| panic!("{}: {e}", p.display()))
            };
            out.insert(p.strip_prefix(dir).unwrap_or(&p).to_path_buf(), bytes);
        }
    }
    out
}

/// `(condition, element)` -> entry, from a `records` array.
pub fn by_element(
    v: &serde_json::Value,
) -> std::collections::BTreeMap<(String, String), serde_json::Value> {
    v.as_array()
        .into_iter()
        .flatten()
        .map(|e| {
            let c = e["condition"].as_str().unwrap_or_default().to_string();
            let n = e["element"].as_str().unwrap_or_default().to_string();
            ((c, n), e.clone())
        })
        .collect()
}

/// Asserts `got` is within `rel` (relative) of the independent implementation's `want`.
pub fn assert_close(what: &str, got: f64, want: f64, rel: f64) {
    let scale = want.abs().max(1e-12);
    assert!(
        (got - want).abs() <= rel * scale,
        "{what}: runnel {got} vs independent {want} (more than {:.4} % apart)",
        rel * 100.0
    );
}
