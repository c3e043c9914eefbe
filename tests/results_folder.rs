//! runnel only ever replaces what runnel wrote (issue 10, item 1).
//!
//! `--out` may name a new folder, an empty folder, or a folder holding
//! runnel's earlier results and nothing else. A folder holding anything
//! else, a file, or a folder holding the scenario or a file it reads is
//! refused with exit code 2 and a message naming one foreign file, and
//! every byte beside and below it stays as it was (a full snapshot of the
//! tree is compared before and after). `runnel init` never overwrites a
//! file.

mod common;
use common::*;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"))
}

/// The quick valid scenario of the bad-input corpus.
fn quick() -> PathBuf {
    data("bad-base/scenario.toml")
}

/// Runs `runnel ARGS` in `cwd`.
fn runnel_in(cwd: &Path, args: &[&Path]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_runnel"))
        .args(args)
        .current_dir(cwd)
        .env_remove("RUST_BACKTRACE")
        .output()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"))
}

fn run_into(cwd: &Path, scenario: &Path, out: &Path) -> Output {
    runnel_in(
        cwd,
        &[
            Path::new("run"),
            scenario,
            Path::new("--out"),
            out,
            Path::new("-q"),
        ],
    )
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn put(p: &Path, text: &str) {
    std::fs::write(p, text).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
}

/// Asserts a refusal: exit 2, one `error: ...` naming `needle`, no panic,
/// nothing said to be written.
fn assert_refused(o: &Output, needles: &[&str]) {
    let err = stderr(o);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.starts_with("error: "), "{err}");
    for n in needles {
        assert!(err.contains(n), "the error does not name `{n}`:\n{err}");
    }
    assert!(!err.contains("panicked"), "{err}");
    assert!(
        !String::from_utf8_lossy(&o.stdout).contains("results written"),
        "{err}"
    );
}

/// A first, complete run into `parent/results`.
fn first_run(parent: &Path) -> PathBuf {
    let out = parent.join("results");
    let o = run_into(parent, &quick(), &out);
    assert!(matches!(o.status.code(), Some(0 | 1)), "{}", stderr(&o));
    assert!(out.join("summary.json").is_file());
    assert!(out.join(".runnel-results").is_file());
    out
}

#[test]
fn a_results_folder_holding_a_foreign_file_is_refused_and_left_as_it_was() {
    let dir = tmp();
    let out = first_run(dir.path());
    put(&out.join("notes.txt"), "the engineer's notes, not runnel's");
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), &quick(), &out);
    assert_refused(&o, &["`notes.txt`", "move `notes.txt` out"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");

    // A folder of the user's that runnel never wrote into, too.
    let mine = dir.path().join("mine");
    std::fs::create_dir(&mine).unwrap_or_else(|e| panic!("{e}"));
    put(&mine.join("site-plan.dwg"), "drawing");
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), &quick(), &mine);
    assert_refused(&o, &["`site-plan.dwg`"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");
}

#[test]
fn out_dot_beside_the_scenario_is_refused_and_nothing_changes() {
    let dir = tmp();
    let scenario = dir.path().join("site.toml");
    std::fs::copy(quick(), &scenario).unwrap_or_else(|e| panic!("{e}"));
    put(&dir.path().join("report-draft.docx"), "draft");
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), Path::new("site.toml"), Path::new("."));
    assert_refused(&o, &["`site.toml`", "which this run reads"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");
}

#[test]
fn out_naming_an_existing_file_is_refused_and_the_file_kept() {
    let dir = tmp();
    let notes = dir.path().join("notes.txt");
    put(&notes, "keep me");
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), &quick(), &notes);
    assert_refused(&o, &["notes.txt", "is a file, not a folder"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");
}

#[test]
fn out_holding_an_input_the_scenario_reads_is_refused() {
    // The gauge CSV lives in the folder named as --out, and an ancestor of
    // the scenario's own folder is refused too.
    let dir = tmp();
    let site = dir.path().join("site");
    let rain = site.join("rain");
    std::fs::create_dir_all(&rain).unwrap_or_else(|e| panic!("{e}"));
    let text = std::fs::read_to_string(data("bad-base/gauge.toml"))
        .unwrap_or_default()
        .replace("gauge = \"rain.csv\"", "gauge = \"rain/june.csv\"");
    put(&site.join("gauge.toml"), &text);
    std::fs::copy(data("bad-base/rain.csv"), rain.join("june.csv"))
        .unwrap_or_else(|e| panic!("{e}"));
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), &site.join("gauge.toml"), &rain);
    assert_refused(&o, &["`june.csv`", "which this run reads"]);
    let o = run_into(dir.path(), &site.join("gauge.toml"), dir.path());
    assert_refused(&o, &["gauge.toml", "which this run reads"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");
}

#[cfg(unix)]
#[test]
fn a_second_run_into_runnels_own_folder_replaces_it_atomically() {
    use std::os::unix::fs::MetadataExt;
    let dir = tmp();
    // The first run has a storm the second does not: its CSV must go, so
    // the folder is replaced, not merged into.
    let out = first_run(dir.path());
    assert!(out.join("storm-burst.csv").is_file());
    let inode = std::fs::metadata(&out).map(|m| m.ino()).unwrap_or(0);
    let text = std::fs::read_to_string(quick())
        .unwrap_or_default()
        .replace("name = \"burst\"", "name = \"short burst\"");
    let second = dir.path().join("second.toml");
    put(&second, &text);
    let o = run_into(dir.path(), &second, &out);
    assert!(matches!(o.status.code(), Some(0 | 1)), "{}", stderr(&o));
    assert!(!out.join("storm-burst.csv").exists());
    assert!(out.join("storm-short-burst.csv").is_file());
    // A new folder was renamed into place (another inode), and nothing was
    // left beside it: no temporary or moved-aside folder.
    assert_ne!(std::fs::metadata(&out).map(|m| m.ino()).unwrap_or(0), inode);
    let mut beside: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap_or_else(|e| panic!("{e}"))
        .map(|e| e.map(|e| e.file_name().to_string_lossy().into_owned()))
        .collect::<Result<_, _>>()
        .unwrap_or_else(|e| panic!("{e}"));
    beside.sort();
    assert_eq!(beside, ["results", "second.toml"]);
    // The marker lists exactly the files in the folder.
    let marker = std::fs::read_to_string(out.join(".runnel-results")).unwrap_or_default();
    let mut listed: Vec<&str> = marker.lines().skip(1).collect();
    listed.sort_unstable();
    let mut present: Vec<String> = snapshot(&out)
        .keys()
        .map(|k| k.display().to_string())
        .filter(|k| k != ".runnel-results")
        .collect();
    present.sort();
    assert_eq!(listed, present);
}

#[test]
fn earlier_results_without_a_marker_are_replaced_but_not_with_a_stray_file() {
    // Results written before the marker existed (the committed demo output
    // among them) are runnel's own: summary.json with runnel's provenance
    // and result file names.
    let dir = tmp();
    let out = first_run(dir.path());
    std::fs::remove_file(out.join(".runnel-results")).unwrap_or_else(|e| panic!("{e}"));
    let o = run_into(dir.path(), &quick(), &out);
    assert!(matches!(o.status.code(), Some(0 | 1)), "{}", stderr(&o));
    assert!(out.join(".runnel-results").is_file());

    std::fs::remove_file(out.join(".runnel-results")).unwrap_or_else(|e| panic!("{e}"));
    put(&out.join("calcs.xlsx"), "mine");
    let before = snapshot(dir.path());
    let o = run_into(dir.path(), &quick(), &out);
    assert_refused(&o, &["`calcs.xlsx`"]);
    assert_eq!(snapshot(dir.path()), before, "the folder changed");
}

#[test]
fn the_committed_demo_results_may_be_replaced_by_the_readme_command() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("output/wrenfield-commons");
    let inputs = [example("wrenfield-commons.toml")];
    let r = runnel::cli::output::check_target(&demo, &inputs);
    assert!(r.is_ok(), "{:?}", r.err().map(|e| e.to_string()));
}

#[test]
fn init_never_overwrites_a_file() {
    let dir = tmp();
    put(&dir.path().join("scenario.toml"), "my own study");
    let before = snapshot(dir.path());
    let o = runnel_in(dir.path(), &[Path::new("init"), dir.path()]);
    assert_refused(
        &o,
        &["scenario.toml", "the file exists", "never overwrites"],
    );
    assert_eq!(snapshot(dir.path()), before);

    // Only the rain file exists: still nothing is written.
    let dir = tmp();
    std::fs::create_dir(dir.path().join("rain")).unwrap_or_else(|e| panic!("{e}"));
    put(&dir.path().join("rain/sample-storm.csv"), "my gauge");
    let before = snapshot(dir.path());
    let o = runnel_in(dir.path(), &[Path::new("init"), dir.path()]);
    assert_refused(&o, &["sample-storm.csv", "the file exists"]);
    assert_eq!(snapshot(dir.path()), before);

    // There is no option to overwrite.
    let o = runnel_in(
        dir.path(),
        &[Path::new("init"), dir.path(), Path::new("--force")],
    );
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(snapshot(dir.path()), before);
}
