//! What the report and the printed lines say: area balance, runs with one
//! condition, flow-duration results, units and coefficients in the
//! scenario's system, outlet numbers and names, and the storage estimate
//! when no storage is needed.

mod common;
use common::*;

/// Writes `text` as a scenario in a fresh folder and runs `runnel ARGS`
/// on it (the scenario path is appended, then `--out` for `run`); returns
/// (exit code, summary.json or Null, stdout, stderr, folder).
fn run_text(cmd: &str, text: &str) -> (i32, serde_json::Value, String, String, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("s.toml");
    std::fs::write(&p, text).unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let (ps, os) = (p.to_string_lossy(), out.to_string_lossy());
    let o = if cmd == "run" {
        runnel(&["run", &ps, "--out", &os])
    } else {
        runnel(&[cmd, &ps])
    };
    let s: serde_json::Value = std::fs::read_to_string(out.join("summary.json"))
        .ok()
        .and_then(|t| serde_json::from_str(&t).ok())
        .unwrap_or_default();
    (
        o.status.code().unwrap_or(-1),
        s,
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
        dir,
    )
}

/// The two-dimension sizing site with fixed outlets and the given limits.
fn fixed_site(limit: &str, limits: &str) -> String {
    let t = std::fs::read_to_string(data("sizing-two-dims.toml")).unwrap_or_default();
    let t = t
        .replace("limit = \"existing\"", &format!("limit = \"{limit}\""))
        .replace("limits = { \"2-yr\" = \"50% existing\" }", limits)
        .replace(
            "diameter = { min = \"2 in\", max = \"24 in\" }",
            "diameter = \"6 in\"",
        )
        .replace(
            "length = { min = \"0.5 ft\", max = \"30 ft\" }",
            "length = \"4 ft\"",
        );
    assert!(!t.contains("min ="), "{t}");
    t
}

#[test]
fn estimate_says_no_storage_is_needed_when_the_allowed_outflow_exceeds_the_inflow_peak() {
    // TR-55 (1986) chapter 6: Figure 6-1 covers qo/qi from 0.1 to 0.8; with
    // qo/qi >= 1 the inflow passes untouched and no storage is needed.
    let text = fixed_site("100 cfs", "limits = { \"2-yr\" = \"5 cfs\" }");
    let (code, _, out, err, _d) = run_text("estimate", &text);
    assert_eq!(code, 0, "{err}");
    let lines: Vec<&str> = out.lines().collect();
    let l100 = lines
        .iter()
        .find(|l| l.contains("100-yr"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(l100.contains("needs no storage"), "{l100}");
    assert!(!l100.contains("Vs/Vr") && !l100.contains("Vs "), "{l100}");
    // The 2-yr storm, limited to 5 cfs, still gets a positive estimate.
    let l2 = lines
        .iter()
        .find(|l| l.contains("2-yr"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(l2.contains("Vs/Vr 0.") && !l2.contains("Vs/Vr -"), "{l2}");
}

#[test]
fn a_scenario_with_one_condition_runs_and_reports_not_checked_no_baseline() {
    let (code, s, dir) = run_scenario(&data("one-condition.toml"));
    assert_eq!(code, 0, "{s}");
    assert!(dir.path().join("out/summary.json").is_file());
    assert_eq!(s["baseline"], "existing");
    assert_eq!(s["baseline_present"], false);
    assert_eq!(s["conditions"], serde_json::json!(["proposed"]));
    assert_eq!(s["all_pass"], true);
    let row = |when: &str| comparison_for(&s, when);
    // The default limit "existing" needs the missing baseline.
    let ten = row("10-yr");
    assert_eq!(ten["status"], "not checked: no baseline");
    assert!(ten["pass"].is_null() && ten["limit"].is_null());
    assert!(num(&ten["peak"]) > 0.0);
    // A limit in flow units is still checked.
    let hundred = row("100-yr");
    assert_eq!(hundred["status"], "meets");
    assert_eq!(hundred["pass"], true);
    assert!((num(&hundred["limit"]) - 60.0).abs() < 1e-9);
    // The flow-duration rule needs the baseline's LP3 flows.
    let rec = row("twenty years");
    assert_eq!(rec["check"], "flow duration");
    assert_eq!(rec["status"], "not checked: no baseline");
    // One warning names the point and what is not checked.
    let w = warnings_coded(&s, "no-baseline");
    assert_eq!(w.len(), 1, "{}", s["warning_details"]);
    let msg = &w[0];
    assert!(
        msg.contains("point \"outlet\"")
            && msg.contains("limit \"existing\"")
            && msg.contains("flow-duration rule"),
        "{msg}"
    );
    // No "nothing drains to it" warning for the baseline that is not there.
    assert!(
        !s["warning_details"]
            .as_array()
            .into_iter()
            .flatten()
            .any(|w| w["code"] == "point-not-reached")
    );
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    assert!(md.contains("| not checked: no baseline |"), "{md}");
    assert!(md.contains("| baseline | existing (no element"), "{md}");
}

/// The comparison of `summary.json` for a storm or record named `when`.
fn comparison_for(s: &serde_json::Value, when: &str) -> serde_json::Value {
    s["comparisons"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|c| c["storm"] == when || c["record"] == when)
        .cloned()
        .unwrap_or_else(|| panic!("no comparison for {when}: {}", s["comparisons"]))
}

/// The messages of `summary.json`'s warnings with `code`.
fn warnings_coded(s: &serde_json::Value, code: &str) -> Vec<String> {
    s["warning_details"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|w| w["code"] == code)
        .filter_map(|w| w["message"].as_str().map(str::to_string))
        .collect()
}

/// `one-condition.toml` with every `condition` key left out (so every
/// element belongs to "existing", the only condition), its 100-yr limit
/// set to `limit_100`, run from a temporary folder.
fn run_without_conditions(limit_100: &str) -> (i32, serde_json::Value, tempfile::TempDir) {
    let text = std::fs::read_to_string(data("one-condition.toml")).unwrap_or_default();
    let gauge = data("rain/cross-check-20yr-15min.csv");
    let text: String = text
        .lines()
        .filter(|l| !l.starts_with("condition ="))
        .map(|l| {
            l.replace("\"60 cfs\"", &format!("\"{limit_100}\""))
                .replace(
                    "\"rain/cross-check-20yr-15min.csv\"",
                    &format!("{:?}", gauge.to_string_lossy()),
                )
        })
        .collect::<Vec<_>>()
        .join("\n");
    assert!(!text.contains("condition =") && text.contains(limit_100));
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let path = dir.path().join("no-conditions.toml");
    std::fs::write(&path, text).unwrap_or_else(|e| panic!("{e}"));
    let (code, s, out) = run_scenario(&path);
    drop(dir);
    (code, s, out)
}

#[test]
fn a_scenario_of_one_condition_checks_its_flow_limits_and_says_what_it_cannot_compare() {
    // runnel's own rule: with every element in one condition, limits in flow
    // units are checked on it; limits that compare conditions are not.
    let (code, s, dir) = run_without_conditions("60 cfs");
    assert_eq!(code, 0, "{s}");
    assert_eq!(s["conditions"], serde_json::json!(["existing"]));
    let row = |when: &str| comparison_for(&s, when);
    let hundred = row("100-yr");
    assert_eq!(hundred["condition"], "existing");
    assert_eq!(hundred["status"], "meets");
    assert!((num(&hundred["limit"]) - 60.0).abs() < 1e-9);
    assert!(num(&hundred["peak"]) > 0.0 && num(&hundred["peak"]) <= 60.0);
    assert!(hundred["baseline_peak"].is_null());
    let ten = row("10-yr");
    assert_eq!(ten["status"], "not checked: one condition only");
    assert!(ten["pass"].is_null());
    let rec = row("twenty years");
    assert_eq!(rec["check"], "flow duration");
    assert_eq!(rec["status"], "not checked: one condition only");
    assert!(warnings_coded(&s, "no-baseline").is_empty());
    let w = warnings_coded(&s, "one-condition");
    assert_eq!(w.len(), 1, "{}", s["warning_details"]);
    let msg = &w[0];
    assert!(
        msg.contains("point \"outlet\"")
            && msg.contains("limit \"existing\"")
            && msg.contains("flow-duration rule"),
        "{msg}"
    );
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    assert!(md.contains("| not checked: one condition only |"), "{md}");
    assert!(md.contains("not made: they compare conditions"), "{md}");

    // The same site over a limit it cannot meet: exit 1, and the row says so.
    let (code, s, _dir) = run_without_conditions("1 cfs");
    assert_eq!(code, 1, "{s}");
    assert_eq!(s["all_pass"], false);
    let exceeds = s["comparisons"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|c| c["storm"] == "100-yr")
        .cloned()
        .unwrap_or_default();
    assert_eq!(exceeds["status"], "exceeds", "{exceeds}");
    assert!(num(&exceeds["peak"]) > 1.0);
}

#[test]
fn a_failing_flow_duration_rule_reports_its_worst_level_not_a_peak() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&[
        "run",
        &data("record-check.toml").to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    assert_eq!(o.status.code(), Some(1));
    let s: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.join("summary.json")).unwrap_or_default(),
    )
    .unwrap_or_default();
    let c = s["comparisons"]
        .as_array()
        .and_then(|a| a.iter().find(|c| c["record"] == "twenty years"))
        .cloned()
        .unwrap_or_else(|| panic!("{}", s["comparisons"]));
    assert_eq!(c["check"], "flow duration");
    assert_eq!(c["status"], "exceeds");
    assert_eq!(c["pass"], false);
    // Never a peak against a limit.
    assert!(c["peak"].is_null() && c["limit"].is_null() && c["baseline_peak"].is_null());
    let d = &c["duration"];
    let (lo, hi, w) = (
        num(&d["from_flow"]),
        num(&d["to_flow"]),
        num(&d["worst_flow"]),
    );
    assert!(lo <= w && w <= hi, "{d}");
    let (tb, tc, ta) = (
        num(&d["baseline_time_h"]),
        num(&d["time_h"]),
        num(&d["allowed_time_h"]),
    );
    // The rule's tolerance is 10 %: allowed = 1.1 x the baseline's time.
    assert!((ta - 1.1 * tb).abs() <= 1e-9 * ta.max(1.0), "{d}");
    assert!(tc > ta, "{d}");
    // The times are whole numbers of 15-minute record steps.
    assert!((tc * 4.0 - (tc * 4.0).round()).abs() < 1e-9, "{d}");
    let stdout = String::from_utf8_lossy(&o.stdout);
    let line = stdout
        .lines()
        .find(|l| l.contains("twenty years"))
        .unwrap_or_else(|| panic!("{stdout}"));
    assert!(
        line.starts_with("EXCEEDS") && line.contains("flow durations") && line.contains("h above"),
        "{line}"
    );
    assert!(!line.contains("peak") && !line.contains("limit"), "{line}");
    let md = std::fs::read_to_string(out.join("summary.md")).unwrap_or_default();
    let row = md
        .lines()
        .find(|l| l.starts_with("| outlet | twenty years |"))
        .unwrap_or_else(|| panic!("{md}"));
    // No margin against a limit: the row holds the rule, the worst flow and
    // the three times.
    assert!(row.contains("**EXCEEDS**") && !row.contains('+'), "{row}");
    assert_eq!(row.matches('|').count(), 12, "{row}");
    assert!(md.contains("| worst flow [cfs] |"));
    // A study of long records only has no design-storm events: a sentence, not an empty table.
    let events = md
        .split("## Events")
        .nth(1)
        .and_then(|rest| rest.split("\n## ").next())
        .unwrap_or_else(|| panic!("{md}"));
    assert!(events.contains("No design storm is run"), "{events}");
    assert!(!events.contains("| storm |"), "{events}");
}

#[test]
fn areas_draining_to_a_point_are_reported_and_a_mismatch_over_5_percent_is_warned() {
    // Both conditions drain 10 ac: no warning, the areas in every row.
    let (_, s, _, _, _d) = run_text("run", &fixed_site("existing", ""));
    for c in s["comparisons"].as_array().into_iter().flatten() {
        assert!((num(&c["area"]) - 10.0).abs() < 1e-9, "{c}");
        assert!((num(&c["baseline_area"]) - 10.0).abs() < 1e-9, "{c}");
    }
    let codes = |s: &serde_json::Value| -> Vec<String> {
        s["warning_details"]
            .as_array()
            .into_iter()
            .flatten()
            .filter(|w| w["code"] == "area-mismatch")
            .map(|w| w["message"].as_str().unwrap_or_default().to_string())
            .collect()
    };
    assert!(codes(&s).is_empty());
    // 4 % more is within the 5 % (common practice, no published source).
    let text = fixed_site("existing", "")
        .replace("area = \"10 ac\"\ncn = 88", "area = \"10.4 ac\"\ncn = 88");
    assert!(text.contains("10.4 ac"));
    let (_, s, _, _, _d) = run_text("run", &text);
    assert!(codes(&s).is_empty(), "{:?}", codes(&s));
    // 12 % more is flagged, naming the point and both areas.
    let text = fixed_site("existing", "")
        .replace("area = \"10 ac\"\ncn = 88", "area = \"11.2 ac\"\ncn = 88");
    let (_, s, _, err, dir) = run_text("run", &text);
    let w = codes(&s);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains("point \"outfall\"")
            && w[0].contains("11.20 ac")
            && w[0].contains("10.00 ac")
            && w[0].contains("+12.0 %"),
        "{}",
        w[0]
    );
    assert!(err.contains("11.20 ac drains to it in proposed"), "{err}");
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    assert!(md.contains("| area [ac] | existing area [ac] |"), "{md}");
    assert!(md.contains("| 11.200 | 10.000 |"), "{md}");
}

/// An SI site with every weir-type outlet at its default coefficient.
const SI_SITE: &str = r#"
title = "SI coefficients (invented)"
units = "si"
step = "2 min"

[[storm]]
name = "10-yr"
pattern = "nrcs-type-ii"
depth = "110 mm"

[[catchment]]
name = "before"
condition = "existing"
area = "4 ha"
cn = 65
tc = "35 min"
to = "outfall"

[[catchment]]
name = "after"
condition = "proposed"
area = "4 ha"
cn = 88
tc = "12 min"
to = "Pond A"

[[pond]]
name = "Pond A"
condition = "proposed"
to = "outfall"
stage_area = [[30.0, 1500.0], [31.0, 1900.0], [32.0, 2400.0], [33.0, 3000.0]]
top = 33.0
max_drain_time = "72 h"

[[pond.outlet]]
name = "low flow"
kind = "orifice"
invert = 30.0
diameter = "150 mm"
[[pond.outlet]]
kind = "weir"
crest = 31.2
length = "1 m"
[[pond.outlet]]
kind = "riser"
crest = 31.8
diameter = "0.9 m"
[[pond.outlet]]
kind = "spillway"
crest = 32.4
length = "4 m"

[[point]]
name = "outfall"
"#;

#[test]
fn an_si_report_prints_si_coefficients_and_names_outlets_and_ponds_once() {
    let (code, _s, out, err, dir) = run_text("run", SI_SITE);
    assert!(code == 0 || code == 1, "{out}{err}");
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    // 3.33 US = 1.84 SI (sharp-crested weir and riser rim), 2.6 US = 1.44 SI
    // (broad-crested): C_SI = C_US sqrt(0.3048) (common practice, no
    // published source).
    assert!(!md.contains("(US)"), "{md}");
    assert!(
        md.contains("sharp-crested weir 1.000 m long, crest 31.20 m, C 1.84"),
        "{md}"
    );
    assert!(md.contains("weir C 1.84"), "{md}");
    assert!(
        md.contains("broad-crested spillway 4.000 m long, crest 32.40 m, C 1.44"),
        "{md}"
    );
    assert!(md.contains("broad-crested weir (C = 1.44)"), "{md}");
    // Outlets numbered from 1, with their names.
    assert!(md.contains("| 1 | low flow | circular orifice"), "{md}");
    assert!(md.contains("| 4 |  | broad-crested spillway"), "{md}");
    // "Pond A" is not called "Pond Pond A".
    assert!(
        !md.contains("Pond Pond") && !md.contains("pond Pond"),
        "{md}"
    );
    assert!(md.contains("## Pond A\n"), "{md}");
    // The drain-time definition stands beside the drain-time check.
    let checks = md.split("### Pond checks").nth(1).unwrap_or_default();
    assert!(
        checks
            .split("| pond |")
            .next()
            .is_some_and(|t| t.contains("Drain time runs from the peak stage until the storage above the starting storage falls below 1 % of its peak value")),
        "{md}"
    );
    // `check` numbers and names outlets the same way.
    let (_, _, out, _, _d) = run_text("check", SI_SITE);
    assert!(
        out.contains("outlet 1 (\"low flow\"): circular orifice"),
        "{out}"
    );
    assert!(out.contains("outlet 2: sharp-crested weir"), "{out}");
    assert!(!out.contains("Pond Pond"), "{out}");
}

#[test]
fn an_error_in_a_named_outlet_names_it_with_its_number_from_1() {
    let text = SI_SITE.replace("diameter = \"150 mm\"\n", "");
    let (code, _, _, err, _d) = run_text("run", &text);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("pond \"Pond A\", outlet 1 (\"low flow\"): missing required key `diameter`"),
        "{err}"
    );
    // Two outlets of one pond cannot share a name.
    let text = SI_SITE.replace("kind = \"weir\"", "name = \"low flow\"\nkind = \"weir\"");
    let (code, _, _, err, _d) = run_text("run", &text);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("outlet 2, name")
            && err.contains("outlet 1 of this pond is already named \"low flow\""),
        "{err}"
    );
}

#[test]
fn sized_values_carry_units_and_outlet_names_in_the_report_json_and_printed_lines() {
    let text = std::fs::read_to_string(data("sizing-two-dims.toml"))
        .unwrap_or_default()
        .replace(
            "kind = \"orifice\"",
            "name = \"low flow\"\nkind = \"orifice\"",
        );
    let (code, s, out, err, dir) = run_text("run", &text);
    assert_eq!(code, 0, "{out}{err}");
    let z = &s["sized"][0];
    // summary.json keeps the contract's 0-based index and adds the name.
    assert_eq!(z["outlet"], 0);
    assert_eq!(z["outlet_name"], "low flow");
    assert_eq!(z["unit"], "ft");
    assert!(s["sized"][1]["outlet_name"].is_null());
    let d = num(&z["value"]);
    let line = out
        .lines()
        .find(|l| l.starts_with("sized") && l.contains("diameter"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(
        line.contains("pond \"basin\", outlet 1 (\"low flow\") diameter = ")
            && line.contains(" ft (")
            && line.contains(" in)"),
        "{line}"
    );
    assert!(
        out.lines().any(|l| l.starts_with("sized")
            && l.contains("outlet 2 length = ")
            && l.contains(" ft")),
        "{out}"
    );
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    let row = md
        .lines()
        .find(|l| l.starts_with("| basin | outlet 1 (\"low flow\") | diameter |"))
        .unwrap_or_else(|| panic!("{md}"));
    // | pond | outlet | field | range | chosen | ...: the chosen value with its unit.
    let chosen = row.split('|').nth(5).unwrap_or_default().trim();
    let (v, unit) = chosen.split_once(' ').unwrap_or_default();
    assert_eq!(unit, "ft", "{row}");
    let v: f64 = v.parse().unwrap_or(f64::NAN);
    assert!((v - d).abs() <= 0.001 * d, "{row} vs {d}");
}
