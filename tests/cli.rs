//! End-to-end tests of the `runnel` binary on scenarios in tests/data,
//! reading its summary.json.

mod common;
use common::*;

#[test]
fn shipped_example_runs_and_writes_every_output() {
    let (code, s, dir) = run_scenario(&example("wrenfield-commons.toml"));
    assert!(code == 0 || code == 1, "exit {code}");
    let out = dir.path().join("out");
    for f in [
        "summary.json",
        "summary.md",
        "storm-2-yr.csv",
        "storm-100-yr-outfall.png",
    ] {
        assert!(out.join(f).is_file(), "missing {f}");
    }
    assert_eq!(s["provenance"]["program"], "runnel");
    assert_eq!(
        s["provenance"]["scenario_sha256"].as_str().map(str::len),
        Some(64)
    );
    // Four design storms and one flow-duration check over the record.
    let rows = s["comparisons"].as_array().cloned().unwrap_or_default();
    assert_eq!(rows.iter().filter(|c| c.get("storm").is_some()).count(), 4);
    assert_eq!(rows.iter().filter(|c| c.get("record").is_some()).count(), 1);
    assert!(
        s["caution"]
            .as_str()
            .is_some_and(|c| c.contains("licensed"))
    );
    let md = std::fs::read_to_string(out.join("summary.md")).unwrap_or_default();
    assert!(md.starts_with("# Wrenfield Commons"));
    assert!(md.contains("licensed professional"));
    // PNG signature and size of a plot.
    let png = std::fs::read(out.join("storm-100-yr-outfall.png")).unwrap_or_default();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
}

#[test]
fn us_and_si_versions_of_one_site_agree_within_a_tenth_of_a_percent() {
    // The same published equations after conversion (contract: "SI input goes
    // through the same published equations after conversion").
    let (_, us, _d1) = run_scenario(&data("basic-us.toml"));
    let (_, si, _d2) = run_scenario(&data("basic-si.toml"));
    let m3s_per_cfs = 0.3048f64.powi(3);
    for storm in ["10-yr", "2-yr-I", "burst", "flat"] {
        for (cond, el) in [
            ("existing", "EX"),
            ("proposed", "PR-A"),
            ("proposed", "PR-B"),
            ("proposed", "outlet"),
        ] {
            let a = num(&event(&us, storm, cond, el)["peak_flow"]) * m3s_per_cfs;
            let b = num(&event(&si, storm, cond, el)["peak_flow"]);
            assert!(
                (a - b).abs() <= 0.001 * a.abs().max(1e-9),
                "{storm} {el}: {a} vs {b}"
            );
        }
    }
    let tc = |s: &serde_json::Value, n: &str| {
        s["catchments"]
            .as_array()
            .and_then(|a| a.iter().find(|c| c["name"] == n))
            .map(|c| num(&c["tc_h"]))
            .unwrap_or(0.0)
    };
    for n in ["EX", "PR-A", "PR-B"] {
        assert!((tc(&us, n) - tc(&si, n)).abs() < 1e-6 * tc(&us, n));
    }
}

#[test]
fn catchment_volume_is_runoff_depth_times_area() {
    // TR-55 (1986) eq. 2-1 and NEH 630 ch.16: the hydrograph holds the runoff depth over the area.
    let (_, s, _d) = run_scenario(&data("basic-us.toml"));
    for e in s["events"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|e| e["kind"] == "catchment")
    {
        let area_ac = s["catchments"]
            .as_array()
            .and_then(|a| a.iter().find(|c| c["name"] == e["element"]))
            .map(|c| num(&c["area"]))
            .unwrap_or(0.0);
        let want = num(&e["runoff_depth"]) / 12.0 * area_ac * 43_560.0;
        let got = num(&e["volume"]);
        assert!(
            (got - want).abs() <= 0.005 * want.max(1.0),
            "{}: {got} vs {want}",
            e["element"]
        );
    }
}

#[test]
fn limits_follow_every_form_of_the_contract() {
    let (code, s, _d) = run_scenario(&data("basic-us.toml"));
    let rows = s["comparisons"].as_array().cloned().unwrap_or_default();
    // "flat" has limit "none": not checked.
    assert!(rows.iter().all(|r| r["storm"] != "flat"));
    let half = rows
        .iter()
        .find(|r| r["storm"] == "2-yr-I")
        .unwrap_or_else(|| panic!("no 2-yr-I row"));
    assert!((num(&half["limit"]) - 0.5 * num(&half["baseline_peak"])).abs() < 1e-9);
    let any_fail = rows.iter().any(|r| r["pass"] == false);
    assert_eq!(code, if any_fail { 1 } else { 0 });
}

#[test]
fn ponce_linear_reservoir_is_reproduced_by_a_scenario_run() {
    // Ponce (1989) linear reservoir example, K = 2 h, dt = 1 h (onlinecalc.sdsu.edu), reference file 9a.
    let (_, s, dir) = run_scenario(&data("ponce.toml"));
    let e = event(&s, "routing", "existing", "reservoir");
    assert!((num(&e["peak_flow"]) - 757.641).abs() < 0.01);
    assert!((num(&e["peak_time_h"]) - 7.0).abs() < 1e-9);
    let csv = std::fs::read_to_string(dir.path().join("out/storm-routing.csv")).unwrap_or_default();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap_or("").split(',').collect();
    let col = header
        .iter()
        .position(|h| h.starts_with("existing/reservoir outflow"))
        .unwrap_or_else(|| panic!("{header:?}"));
    let want = [
        100.0, 110.0, 146.0, 217.6, 370.56, 582.336, 729.402, 757.641, 704.585, 612.751, 507.65,
        414.59, 338.754, 273.252, 217.951, 174.771, 144.863,
    ];
    for (k, line) in lines.take(want.len()).enumerate() {
        let v: f64 = line
            .split(',')
            .nth(col)
            .and_then(|x| x.parse().ok())
            .unwrap_or(f64::NAN);
        assert!((v - want[k]).abs() < 0.01, "hour {k}: {v} vs {}", want[k]);
    }
    assert!(num(&e["mass_balance_error"]).abs() < 0.001);
}

#[test]
fn ponds_in_series_and_a_bypass_sum_at_the_point() {
    let (_, s, dir) = run_scenario(&data("series.toml"));
    let up = event(&s, "25-yr", "existing", "upper pond");
    let low = event(&s, "25-yr", "existing", "lower pond");
    // The lower pond's inflow is the upper pond's outflow.
    assert!(
        (num(&low["peak_inflow"]) - num(&up["peak_flow"])).abs()
            < 1e-6 * num(&up["peak_flow"]).max(1.0)
    );
    for e in [up, low] {
        assert!(num(&e["peak_flow"]) <= num(&e["peak_inflow"]) + 1e-9);
        assert!(num(&e["mass_balance_error"]).abs() < 0.001);
    }
    // The point is the sum of the lower pond's outflow and the lagged bypass, step by step.
    let csv = std::fs::read_to_string(dir.path().join("out/storm-25-yr.csv")).unwrap_or_default();
    let mut lines = csv.lines();
    let header: Vec<String> = lines
        .next()
        .unwrap_or("")
        .split(',')
        .map(String::from)
        .collect();
    let find = |p: &str| {
        header
            .iter()
            .position(|h| h.starts_with(p))
            .unwrap_or_else(|| panic!("{p}"))
    };
    let (cp, cl, cb) = (
        find("existing/creek flow"),
        find("existing/lower pond outflow"),
        find("existing/bypass flow"),
    );
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|x| x.parse().unwrap_or(0.0)).collect())
        .collect();
    let lag_steps = 5.0 / 2.0; // 5 min lag at a 2-min step
    for k in 3..rows.len() {
        let whole = lag_steps as usize;
        let frac = lag_steps - whole as f64;
        let b = rows[k - whole][cb] * (1.0 - frac) + rows[k - whole - 1][cb] * frac;
        assert!(
            (rows[k][cp] - rows[k][cl] - b).abs() < 2e-4 * rows[k][cp].max(1.0),
            "step {k}"
        );
    }
}

#[test]
fn check_prints_derived_parameters_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_runnel"))
        .current_dir(dir.path())
        .args([
            "check",
            &example("wrenfield-commons.toml").to_string_lossy(),
        ])
        .output()
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let text = String::from_utf8_lossy(&o.stdout);
    for want in [
        "composite CN",
        "Tc",
        "segment 1 sheet",
        "\nPond A -> ",
        "outflow",
        "TR-55 graphical peak",
    ] {
        assert!(text.contains(want), "check output lacks {want}");
    }
    assert_eq!(
        std::fs::read_dir(dir.path())
            .map(|d| d.count())
            .unwrap_or(1),
        0
    );
}

#[test]
fn init_writes_a_starter_that_runs() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let o = runnel(&["init", &dir.path().to_string_lossy()]);
    assert_eq!(o.status.code(), Some(0));
    let sc = dir.path().join("scenario.toml");
    let out = dir.path().join("results");
    let r = runnel(&[
        "run",
        &sc.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    assert!(
        matches!(r.status.code(), Some(0) | Some(1)),
        "{}",
        String::from_utf8_lossy(&r.stderr)
    );
    assert!(out.join("summary.json").is_file());
}
