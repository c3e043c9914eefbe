//! A run that is killed part-way leaves the previous results as they were.
//! Scenario contract, "Command line": a failed run leaves "previous results
//! untouched"; an interrupted one must not lose them either.
//!
//! tests/data/slow.toml takes seconds in release (a one-second step over
//! two 24-hour storms); each test first writes a complete set of results
//! with a quick scenario, then starts the slow run into the same folder,
//! checks that it is still running, kills it (SIGKILL, or SIGINT as Ctrl-C
//! sends) and compares every file beside and below the folder, byte for
//! byte.
#![cfg(unix)]

mod common;
use common::snapshot;
use std::os::unix::process::ExitStatusExt;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::Duration;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// Writes a complete set of results into `parent/results` with a quick
/// scenario and returns the folder.
fn previous_results(parent: &Path) -> PathBuf {
    let out = parent.join("results");
    let o = Command::new(env!("CARGO_BIN_EXE_runnel"))
        .arg("run")
        .arg(root().join("tests/data/bad-base/scenario.toml"))
        .arg("--out")
        .arg(&out)
        .current_dir(parent)
        .output()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"));
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "the quick run failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(out.join("summary.json").is_file());
    out
}

/// True when this process ignores SIGINT, which its children then inherit
/// (a test harness started as a background job of a non-interactive shell
/// runs that way). Linux only; elsewhere false.
fn interrupt_ignored() -> bool {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find_map(|l| l.strip_prefix("SigIgn:"))
                .and_then(|m| u64::from_str_radix(m.trim(), 16).ok())
        })
        .is_some_and(|mask| mask & (1 << (2 - 1)) != 0)
}

/// The runnel command, with SIGINT set back to its default action when this
/// process ignores it (by GNU env's `--default-signal`), so that the test
/// interrupts runnel as Ctrl-C would in a terminal.
fn runnel_with_default_interrupt() -> Command {
    if interrupt_ignored() {
        let mut c = Command::new("env");
        c.arg("--default-signal=INT")
            .arg(env!("CARGO_BIN_EXE_runnel"));
        c
    } else {
        Command::new(env!("CARGO_BIN_EXE_runnel"))
    }
}

#[derive(Debug, Clone, Copy)]
enum Stop {
    /// `Child::kill()`: SIGKILL, no chance to clean up.
    Kill,
    /// `kill -INT PID`: what Ctrl-C sends.
    Interrupt,
}

/// Starts the slow run into a folder of complete results, stops it after
/// `after_ms`, and checks that nothing changed.
fn stop_part_way(stop: Stop, after_ms: u64) {
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = previous_results(tmp.path());
    let before = snapshot(tmp.path());
    let summary = std::fs::read(out.join("summary.json")).unwrap_or_else(|e| panic!("{e}"));

    let mut child = runnel_with_default_interrupt()
        .arg("run")
        .arg(root().join("tests/data/slow.toml"))
        .arg("--out")
        .arg(&out)
        .arg("--quiet")
        .current_dir(tmp.path())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"));
    std::thread::sleep(Duration::from_millis(after_ms));
    let early = child.try_wait().unwrap_or_else(|e| panic!("{e}"));
    if let Some(status) = early {
        panic!(
            "the slow run had already ended ({status}) after {after_ms} ms; make tests/data/slow.toml slower"
        );
    }
    match stop {
        Stop::Kill => child.kill().unwrap_or_else(|e| panic!("{e}")),
        Stop::Interrupt => {
            let status = Command::new("kill")
                .arg("-INT")
                .arg(child.id().to_string())
                .status()
                .unwrap_or_else(|e| panic!("cannot run kill: {e}"));
            assert!(status.success(), "kill -INT failed: {status}");
        }
    }
    let status = child.wait().unwrap_or_else(|e| panic!("{e}"));
    let expected_signal = match stop {
        Stop::Kill => 9,
        Stop::Interrupt => 2,
    };
    assert_eq!(
        status.signal(),
        Some(expected_signal),
        "the run was not ended by the signal: {status}"
    );

    assert_eq!(
        std::fs::read(out.join("summary.json")).unwrap_or_default(),
        summary,
        "summary.json changed"
    );
    let after = snapshot(tmp.path());
    let added: Vec<_> = after.keys().filter(|k| !before.contains_key(*k)).collect();
    let removed: Vec<_> = before.keys().filter(|k| !after.contains_key(*k)).collect();
    assert!(
        added.is_empty() && removed.is_empty(),
        "files changed: added {added:?}, removed {removed:?}"
    );
    assert!(after == before, "a result file changed its bytes");
}

#[test]
fn a_run_killed_part_way_leaves_the_previous_results_intact() {
    stop_part_way(Stop::Kill, 150);
}

#[test]
fn a_run_interrupted_part_way_leaves_the_previous_results_intact() {
    stop_part_way(Stop::Interrupt, 150);
}

#[test]
fn a_run_killed_later_in_its_work_leaves_the_previous_results_intact() {
    stop_part_way(Stop::Kill, 900);
}
