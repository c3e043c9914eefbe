//! Inputs and outputs at their limits (issue 10, item 11): a closed pipe on
//! stdout or stderr, a device, a pipe or an oversized file given as a
//! scenario, and the memory cap with many design storms. Each ends in a
//! clear exit code, never a panic or a hang.

mod common;
use common::*;
use std::path::Path;
use std::process::{Child, Command, ExitStatus, Output, Stdio};
use std::time::{Duration, Instant};

fn tmp() -> tempfile::TempDir {
    tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"))
}

fn runnel_cmd() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_runnel"));
    c.env_remove("RUST_BACKTRACE");
    c
}

/// Waits for `child` at most `limit`; kills it and fails if it hangs.
fn wait_or_kill(mut child: Child, limit: Duration, what: &str) -> (ExitStatus, String) {
    let start = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(_)) => break,
            Ok(None) if start.elapsed() < limit => std::thread::sleep(Duration::from_millis(50)),
            _ => {
                let _ = child.kill();
                let _ = child.wait();
                panic!("{what}: runnel was still running after {limit:?}");
            }
        }
    }
    let o = child
        .wait_with_output()
        .unwrap_or_else(|e| panic!("{what}: {e}"));
    (o.status, String::from_utf8_lossy(&o.stderr).into_owned())
}

#[test]
fn a_closed_pipe_on_stdout_and_stderr_ends_output_quietly() {
    // `runnel run x.toml | true`: the reader is gone before runnel writes.
    let dir = tmp();
    let out = dir.path().join("out");
    for closed_err in [false, true] {
        let (reader, writer) = std::io::pipe().unwrap_or_else(|e| panic!("{e}"));
        drop(reader);
        let mut cmd = runnel_cmd();
        cmd.arg("run")
            .arg(data("bad-base/scenario.toml"))
            .arg("--out")
            .arg(&out)
            .stdout(Stdio::from(
                writer.try_clone().unwrap_or_else(|e| panic!("{e}")),
            ));
        if closed_err {
            cmd.stderr(Stdio::from(writer));
        } else {
            cmd.stderr(Stdio::piped());
        }
        let child = cmd.spawn().unwrap_or_else(|e| panic!("{e}"));
        let (status, err) = wait_or_kill(child, Duration::from_secs(120), "closed pipe");
        // The run's own exit code (0 met, 1 a limit failed), not 101.
        assert!(
            matches!(status.code(), Some(0 | 1)),
            "closed stderr {closed_err}: {status}\n{err}"
        );
        assert!(!err.contains("panicked"), "{err}");
        assert!(out.join("summary.json").is_file());
    }
    // `check` prints more than a pipe buffer can take at once for larger
    // studies; a closed pipe ends it quietly too.
    let (reader, writer) = std::io::pipe().unwrap_or_else(|e| panic!("{e}"));
    drop(reader);
    let child = runnel_cmd()
        .arg("check")
        .arg(example("wrenfield-commons.toml"))
        .stdout(Stdio::from(writer))
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("{e}"));
    let (status, err) = wait_or_kill(child, Duration::from_secs(120), "check | true");
    assert_eq!(status.code(), Some(0), "{err}");
    assert!(!err.contains("panicked"), "{err}");
}

fn check_path(p: &Path, what: &str) -> (ExitStatus, String) {
    let child = runnel_cmd()
        .arg("check")
        .arg(p)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("{e}"));
    wait_or_kill(child, Duration::from_secs(30), what)
}

#[cfg(unix)]
#[test]
fn a_device_or_a_named_pipe_as_the_scenario_is_refused_without_reading_it() {
    // /dev/zero never ends; a named pipe with no writer blocks on opening.
    let (status, err) = check_path(Path::new("/dev/zero"), "/dev/zero");
    assert_eq!(status.code(), Some(2), "{err}");
    assert!(
        err.starts_with("error: /dev/zero: this is a device, not a file"),
        "{err}"
    );
    let dir = tmp();
    let fifo = dir.path().join("scenario.toml");
    let made = Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .is_ok_and(|s| s.success());
    if made {
        let (status, err) = check_path(&fifo, "a named pipe");
        assert_eq!(status.code(), Some(2), "{err}");
        assert!(err.contains("is a named pipe, not a file"), "{err}");
    }
    // A folder given as the scenario says so.
    let (status, err) = check_path(dir.path(), "a folder");
    assert_eq!(status.code(), Some(2), "{err}");
    assert!(err.contains("is a folder, not a file"), "{err}");
}

#[test]
fn a_scenario_or_inflow_table_over_16_mib_is_refused() {
    let dir = tmp();
    let big = dir.path().join("big.toml");
    let line = format!("# {}\n", "x".repeat(1021));
    let mut text = std::fs::read_to_string(data("bad-base/scenario.toml")).unwrap_or_default();
    while text.len() <= 16 * 1024 * 1024 {
        text.push_str(&line);
    }
    std::fs::write(&big, &text).unwrap_or_else(|e| panic!("{e}"));
    let (status, err) = check_path(&big, "a large scenario");
    assert_eq!(status.code(), Some(2), "{err}");
    assert!(err.contains("larger than 16 MiB"), "{err}");

    // The same cap for an inflow table, named at its key.
    let csv = dir.path().join("inflow.csv");
    let mut rows = String::from("time_h,flow\n");
    while rows.len() <= 16 * 1024 * 1024 {
        rows.push_str("0.000000000,0.000000000\n");
    }
    std::fs::write(&csv, rows).unwrap_or_else(|e| panic!("{e}"));
    let sc = dir.path().join("inflow.toml");
    let text = std::fs::read_to_string(data("bad-base/scenario.toml")).unwrap_or_default()
        + "\n[[inflow]]\nname = \"offsite\"\nto = \"outfall\"\nfile = \"inflow.csv\"\n";
    std::fs::write(&sc, text).unwrap_or_else(|e| panic!("{e}"));
    let (status, err) = check_path(&sc, "a large inflow table");
    assert_eq!(status.code(), Some(2), "{err}");
    assert!(err.contains("inflow.csv"), "{err}");
    assert!(err.contains("larger than 16 MiB"), "{err}");
}

/// The quick scenario with `n` design storms instead of two.
fn many_storms(n: usize, memory_limit: &str) -> String {
    let base = std::fs::read_to_string(data("bad-base/scenario.toml")).unwrap_or_default();
    let start = base.find("[[storm]]").unwrap_or(0);
    let end = base.find("[[catchment]]").unwrap_or(base.len());
    let mut text = format!("memory_limit = \"{memory_limit}\"\n{}", &base[..start]);
    for i in 0..n {
        text.push_str(&format!(
            "[[storm]]\nname = \"s{i}\"\npattern = \"nrcs-type-ii\"\ndepth = \"{:.1} in\"\n\n",
            2.0 + 0.1 * (i % 30) as f64
        ));
    }
    text + &base[end..]
}

fn run_out(dir: &Path, scenario: &Path) -> Output {
    runnel_cmd()
        .arg("run")
        .arg(scenario)
        .arg("--out")
        .arg(dir.join("out"))
        .arg("-q")
        .current_dir(dir)
        .output()
        .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn the_memory_cap_counts_every_design_storm_and_check_reports_it() {
    // Every storm's results are held until the report is written, so 1,000
    // storms need about a thousand times one storm (a single storm of this
    // study holds about 0.8 MB). Before, the cap compared only the largest
    // storm times the worker threads and let this run reach 1.3 GB.
    let dir = tmp();
    let sc = dir.path().join("many.toml");
    std::fs::write(&sc, many_storms(1000, "0.5 GB")).unwrap_or_else(|e| panic!("{e}"));
    let before = snapshot(dir.path());
    let o = runnel_cmd()
        .arg("check")
        .arg(&sc)
        .output()
        .unwrap_or_else(|e| panic!("{e}"));
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("1000 design storm(s)"), "{err}");
    assert!(err.contains("over the cap of 500 MB"), "{err}");
    let o = run_out(dir.path(), &sc);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(
        snapshot(dir.path()),
        before,
        "a refused run wrote something"
    );

    // Under a cap that fits, `check` says what the run will hold, in the
    // decimal units the cap is read in (1 GB = 10^9 bytes).
    std::fs::write(&sc, many_storms(10, "2 GB")).unwrap_or_else(|e| panic!("{e}"));
    let o = runnel_cmd()
        .arg("check")
        .arg(&sc)
        .output()
        .unwrap_or_else(|e| panic!("{e}"));
    let text = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(
        text.contains("series memory at the peak of a run: about "),
        "{text}"
    );
    assert!(
        text.contains("under the cap of 2.00 GB (`memory_limit`)"),
        "{text}"
    );
}

#[test]
fn a_memory_limit_in_gib_is_binary_and_in_gb_decimal() {
    // 0.5 GiB = 536,870,912 bytes and 0.5 GB = 500,000,000 bytes: the first
    // prints as 537 MB, the second as 500 MB.
    let dir = tmp();
    let sc = dir.path().join("many.toml");
    for (limit, shown) in [
        ("0.5 GiB", "537 MB"),
        ("0.5 GB", "500 MB"),
        ("500 MB", "500 MB"),
    ] {
        std::fs::write(&sc, many_storms(1000, limit)).unwrap_or_else(|e| panic!("{e}"));
        let o = runnel_cmd()
            .arg("check")
            .arg(&sc)
            .output()
            .unwrap_or_else(|e| panic!("{e}"));
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{err}");
        assert!(
            err.contains(&format!("over the cap of {shown}")),
            "{limit}: {err}"
        );
    }
}
