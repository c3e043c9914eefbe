//! Issue 10 (trust), the engine's part: ponds that cannot be routed,
//! non-finite results, lagged runoff, long-record blind spots and gauge
//! files that must be refused. Each test runs the binary on a small
//! invented scenario and checks the exit code and the message or warning
//! that names the element and key.

mod common;
use common::*;
use std::fmt::Write;
use std::path::{Path, PathBuf};

/// Writes `files` (name, text) into a fresh folder; returns it and the
/// path of the first file (the scenario).
fn write_case(files: &[(&str, &str)]) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    for (name, text) in files {
        std::fs::write(dir.path().join(name), text).unwrap_or_else(|e| panic!("{e}"));
    }
    let p = dir.path().join(files[0].0);
    (dir, p)
}

/// `runnel run SCENARIO --out DIR/out`: (exit code, stdout, stderr).
fn run(dir: &Path, scenario: &Path) -> (i32, String, String) {
    let out = dir.join("out");
    let o = runnel(&[
        "run",
        &scenario.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
        "--quiet",
    ]);
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// `runnel check SCENARIO`: (exit code, stderr).
fn check(scenario: &Path) -> (i32, String) {
    let o = runnel(&["check", &scenario.to_string_lossy()]);
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// The `summary.json` a run wrote into `dir/out`.
fn summary(dir: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(dir.join("out/summary.json"))
        .unwrap_or_else(|e| panic!("no summary.json: {e}"));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}"))
}

/// A site with one existing catchment and a proposed catchment draining
/// through pond "basin" (whose table and outlet are `pond`) to the point.
fn pond_site(storm: &str, pond: &str) -> String {
    format!(
        r#"title = "Engine trust (invented)"
units = "us"
step = "5 min"

{storm}

[[catchment]]
name = "meadow"
condition = "existing"
area = "10 ac"
cn = 70
tc = "30 min"
to = "creek"

[[catchment]]
name = "lots"
condition = "proposed"
area = "10 ac"
cn = 90
tc = "20 min"
to = "basin"

[[pond]]
name = "basin"
condition = "proposed"
to = "creek"
{pond}

[[point]]
name = "creek"
limit = "none"
"#
    )
}

const STORM: &str = "[[storm]]\nname = \"100-yr\"\npattern = \"nrcs-type-ii\"\ndepth = \"7 in\"";
const OUTLET: &str = "[[pond.outlet]]\nkind = \"orifice\"\ninvert = 100.0\ndiameter = \"12 in\"";

#[test]
fn a_pond_with_areas_typed_in_acres_is_routed_not_reported_as_zero_outflow() {
    // 0.5 and 1.2 "ft2" (acres typed as square feet): the water rises far
    // above the top, so the pond overtops (exit 1) and passes its inflow on;
    // before, the table could not be built and the pond "met" with peak 0.
    let pond = format!("stage_area = [[100.0, 0.5], [106.0, 1.2]]\ntop = 106.0\n{OUTLET}");
    let (dir, p) = write_case(&[("s.toml", &pond_site(STORM, &pond))]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 1, "{err}");
    let s = summary(dir.path());
    let ev = event(&s, "100-yr", "proposed", "basin");
    let (inflow, outflow) = (num(&ev["peak_inflow"]), num(&ev["peak_flow"]));
    assert!(outflow > 0.9 * inflow && outflow > 0.0, "{ev}");
    assert!(err.contains("pond \"basin\" overtops"), "{err}");
}

#[test]
fn a_huge_inflow_into_a_pond_is_routed_not_reported_as_zero_outflow() {
    // A 1e7-cfs inflow (a slip) into an ordinary pond: routed on a table
    // that reaches as high as the water goes, overtopping the pond.
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let site = pond_site(STORM, &pond).replace(
        "[[point]]",
        "[[inflow]]\nname = \"pipe\"\ncondition = \"proposed\"\nto = \"basin\"\ntable = [[0.0, 0.0], [1.0, 1e7], [2.0, 0.0]]\n\n[[point]]",
    );
    let (dir, p) = write_case(&[("s.toml", &site)]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 1, "{err}");
    let s = summary(dir.path());
    let ev = event(&s, "100-yr", "proposed", "basin");
    assert!(num(&ev["peak_flow"]) > 1e5, "{ev}");
}

#[test]
fn a_pond_that_holds_no_water_is_refused_naming_the_pond_and_storm() {
    // Zero area at every stage: the pond cannot hold the water that reaches
    // it, so no table can route it; exit 2 with a message, never peak 0.
    let pond = format!("stage_area = [[100.0, 0.0], [106.0, 0.0]]\ntop = 106.0\n{OUTLET}");
    let (dir, p) = write_case(&[("s.toml", &pond_site(STORM, &pond))]);
    let (code, out, err) = run(dir.path(), &p);
    assert_eq!(code, 2, "{out}\n{err}");
    assert!(
        err.contains("pond \"basin\"")
            && err.contains("100-yr")
            && err.contains("cannot be routed"),
        "{err}"
    );
    assert!(!dir.path().join("out").exists());
    let (code, err) = check(&p);
    assert_eq!(code, 2, "{err}");
}

#[test]
fn a_storm_depth_that_would_overflow_is_refused_not_null_peaks() {
    // Refused at load (a magnitude no site can hold), before the engine's
    // own finite-result check could see it.
    let storm = "[[storm]]\nname = \"huge\"\npattern = \"nrcs-type-ii\"\ndepth = \"1e308 in\"";
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let (dir, p) = write_case(&[("s.toml", &pond_site(storm, &pond))]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("far beyond anything runnel can model") && err.contains("huge"),
        "{err}"
    );
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn runoff_lagged_past_seven_days_reaches_the_point_in_a_storm() {
    // lag = "8 d" is longer than the 7-day tail: the run now lasts long
    // enough for the lagged hydrograph, whose peak reaches the point whole.
    let site = pond_site(
        STORM,
        &format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}"),
    )
    .replace(
        "tc = \"30 min\"\nto = \"creek\"",
        "tc = \"30 min\"\nto = \"creek\"\nlag = \"8 d\"",
    );
    let (dir, p) = write_case(&[("s.toml", &site)]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 0, "{err}");
    let s = summary(dir.path());
    let own = num(&event(&s, "100-yr", "existing", "meadow")["peak_flow"]);
    let at_point = num(&event(&s, "100-yr", "existing", "creek")["peak_flow"]);
    assert!(
        own > 0.0 && (at_point - own).abs() <= 1e-9 * own,
        "{own} vs {at_point}"
    );
}

#[test]
fn an_enormous_lag_is_refused_without_a_panic() {
    let site = pond_site(
        STORM,
        &format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}"),
    )
    .replace(
        "tc = \"30 min\"\nto = \"creek\"",
        "tc = \"30 min\"\nto = \"creek\"\nlag = \"1e18 h\"",
    );
    let (dir, p) = write_case(&[("s.toml", &site)]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 2, "{err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(err.contains("lag"), "{err}");
}

#[test]
fn a_mass_balance_off_by_more_than_a_tenth_of_a_percent_is_warned_about() {
    // Stage areas typed in acres (0.5 and 1.2 "ft2") under a 100-cfs inflow
    // that stops at once: the pond holds almost nothing, the 5-minute step is
    // far above 2 dS/dO, and storage-indication (Bedient, Huber & Vieux
    // eq. 4-13) cannot close its balance when the inflow stops. The warning
    // names the pond and storm; the same site with an ordinary pond does not.
    let small = "stage_area = [[100.0, 0.5], [106.0, 1.2]]\n[[pond.outlet]]\nkind = \"orifice\"\ninvert = 100.0\ndiameter = \"6 in\"";
    let pipe = "[[inflow]]\nname = \"pipe\"\ncondition = \"proposed\"\nto = \"basin\"\ntable = [[0.0, 100.0], [2.0, 100.0], [2.01, 0.0]]\n\n[[point]]";
    let site = pond_site(STORM, small).replace("[[point]]", pipe);
    let (dir, p) = write_case(&[("s.toml", &site)]);
    let (_, _, err) = run(dir.path(), &p);
    assert!(
        err.contains(
            "pond \"basin\" (proposed, storm \"100-yr\"): the routing's mass balance is off by"
        ),
        "{err}"
    );
    let normal =
        format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let site = pond_site(STORM, &normal).replace("[[point]]", pipe);
    let (dir, p) = write_case(&[("s.toml", &site)]);
    let (_, _, err) = run(dir.path(), &p);
    let s = summary(dir.path());
    let mb = s["events"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|e| e["element"] == "basin")
        .map(|e| e["mass_balance_error"].clone());
    assert!(!err.contains("mass balance"), "{mb:?}\n{err}");
}

/// `time,depth` rows every `interval_min` from `start` for `days`, with
/// `storm_in` of rain spread over the 12 intervals starting at each of
/// `storm_at` (interval indices).
fn gauge(start: (i32, u32, u32), days: i64, interval_min: i64, storms: &[(usize, f64)]) -> String {
    let t0 =
        runnel::util::calendar::day_number(start.0, start.1, start.2).unwrap_or_default() * 86_400;
    let dt = interval_min * 60;
    let n = (days * 86_400 / dt) as usize;
    let mut out = String::from("time,depth\n");
    for k in 0..n {
        let d = storms
            .iter()
            .filter(|(at, _)| (*at..at + 12).contains(&k))
            .fold(0.0, |a, (_, depth)| a + depth / 12.0);
        let ts = runnel::util::calendar::format_timestamp(t0 + (k as i64 + 1) * dt);
        let _ = writeln!(out, "{} {},{d:.6}", &ts[..10], &ts[11..16]);
    }
    out
}

/// A record site: `pond` and a `[[record]]` block, with no design storm.
fn record_site(pond: &str, record: &str) -> String {
    pond_site("", pond) + "\n" + record
}

const RECORD: &str = "[[record]]\nname = \"gauge\"\ngauge = \"rain.csv\"\nmoisture = \"event\"";

#[test]
fn a_pond_that_overtops_in_a_record_is_warned_about_and_fails_the_run() {
    // 3 in of rain in an hour on a small pond with a small orifice.
    let pond = "stage_area = [[100.0, 1500.0], [103.0, 2000.0]]\ntop = 103.0\n[[pond.outlet]]\nkind = \"orifice\"\ninvert = 100.0\ndiameter = \"3 in\"";
    let rain = gauge((2003, 1, 1), 3 * 365, 60, &[(200 * 24, 6.0)]);
    let (dir, p) = write_case(&[("s.toml", &record_site(pond, RECORD)), ("rain.csv", &rain)]);
    let (code, out, err) = run(dir.path(), &p);
    assert_eq!(code, 1, "{out}\n{err}");
    assert!(
        err.contains("pond \"basin\" overtops in record \"gauge\" (proposed): the water reaches"),
        "{err}"
    );
    assert!(err.contains("2003-07-"), "when: {err}");
    let s = summary(dir.path());
    assert_eq!(s["all_pass"], false);
    let fails = s["pond_checks"]
        .as_array()
        .into_iter()
        .flatten()
        .any(|c| c["storm"] == "gauge" && c["check"] == "overtopping" && c["pass"] == false);
    assert!(fails, "{}", s["pond_checks"]);
}

#[test]
fn a_record_says_what_it_cannot_see() {
    // Starts on 1 March 2001 (an incomplete first year), 3 years long (fewer
    // than 10 complete years), ends an hour after a storm (water still in
    // the pond and on its way to the point), and the meadow's runoff is
    // lagged by a day past the end.
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let days = 365 * 3 + 306;
    let n = (days * 24) as usize;
    let rain = gauge((2001, 3, 1), days, 60, &[(500, 3.0), (n - 13, 3.0)]);
    let site = record_site(&pond, RECORD).replace(
        "tc = \"30 min\"\nto = \"creek\"",
        "tc = \"30 min\"\nto = \"creek\"\nlag = \"1 d\"",
    );
    let (dir, p) = write_case(&[("s.toml", &site), ("rain.csv", &rain)]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 0, "{err}");
    for want in [
        "record \"gauge\": 2001 (83.", // 306 of 365 days
        "not a complete calendar year",
        "record \"gauge\": only 3 complete calendar year(s)",
        "record \"gauge\" (proposed), pond \"basin\": when the record ends,",
        "is still stored in it",
        "record \"gauge\" (proposed), point \"creek\": when the record ends,",
        "record \"gauge\" (existing), \"meadow\": its lag of 24 h shifts",
    ] {
        assert!(err.contains(want), "missing {want:?} in\n{err}");
    }
    let s = summary(dir.path());
    let codes: Vec<&str> = s["warning_details"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|w| w["code"].as_str())
        .collect();
    for c in [
        "record-incomplete-years",
        "record-short-fit",
        "record-water-left",
        "record-lag-past-end",
    ] {
        assert!(codes.contains(&c), "{c} not in {codes:?}");
    }
}

#[test]
fn a_complete_dry_ended_record_warns_of_none_of_that() {
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    // 1 January 2001 to 1 January 2011 (3652 days), one storm a year, dry ends.
    let storms: Vec<(usize, f64)> = (0..10).map(|y| (y * 8760 + 4000, 2.0)).collect();
    let rain = gauge((2001, 1, 1), 3652, 60, &storms);
    let (dir, p) = write_case(&[("s.toml", &record_site(&pond, RECORD)), ("rain.csv", &rain)]);
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 0, "{err}");
    for unwanted in [
        "complete calendar year",
        "when the record ends",
        "past the end of the record",
        "mass balance",
        "overtops",
    ] {
        assert!(!err.contains(unwanted), "{unwanted:?} in\n{err}");
    }
}

#[test]
fn record_steps_coarser_than_the_gauge_or_far_above_tp_are_warned_and_one_that_does_not_divide_is_refused()
 {
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    // 15-minute gauge, 30-minute step: coarser than the gauge, above 0.25 Tp.
    let rain = gauge((2001, 1, 1), 30, 15, &[(100, 2.0)]);
    let rec = format!("{RECORD}\nstep = \"30 min\"");
    let (dir, p) = write_case(&[("s.toml", &record_site(&pond, &rec)), ("rain.csv", &rain)]);
    let (_, err) = check(&p);
    assert!(
        err.contains(
            "record \"gauge\": the step of 30.0 min is coarser than the gauge interval of 15.0 min"
        ),
        "{err}"
    );
    assert!(
        err.contains("record \"gauge\", catchment \"lots\": the record's step of 30.0 min is more than 0.25 Tp"),
        "{err}"
    );
    // 7 min does not divide 30 days of 15-minute intervals.
    let rec = format!("{RECORD}\nstep = \"7 min\"");
    std::fs::write(&p, record_site(&pond, &rec)).unwrap_or_else(|e| panic!("{e}"));
    let (code, err) = check(&p);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("record \"gauge\", step") && err.contains("does not divide the record"),
        "{err}"
    );
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 2, "{err}");
}

#[test]
fn check_refuses_a_gauge_that_run_refuses() {
    // A depth of 1e300 in is a finite number, so the file parses; no step
    // can hold it, and run and check both refuse it naming the gauge.
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let rain = gauge((2001, 1, 1), 30, 60, &[]).replacen(",0.000000\n", ",1e300\n", 5);
    let (dir, p) = write_case(&[("s.toml", &record_site(&pond, RECORD)), ("rain.csv", &rain)]);
    let (code, err) = check(&p);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("rain.csv") && err.contains("record \"gauge\", gauge"),
        "{err}"
    );
    let (code, _, err2) = run(dir.path(), &p);
    assert_eq!(code, 2, "{err2}");
    assert!(err2.contains("record \"gauge\", gauge"), "{err2}");
}

#[test]
fn an_overlong_gauge_line_is_refused_quickly_with_its_line_number() {
    // A 64-MB line (a binary file, or a file with no line ends) is refused
    // after its first megabyte, naming line 3; check and run alike.
    let pond = format!("stage_area = [[100.0, 30000.0], [108.0, 45000.0]]\ntop = 108.0\n{OUTLET}");
    let mut rain = String::from("time,depth\n2001-01-01 01:00,0\n2001-01-01 02:00,");
    rain.push_str(&"9".repeat(64 << 20));
    let (dir, p) = write_case(&[("s.toml", &record_site(&pond, RECORD)), ("rain.csv", &rain)]);
    let (code, err) = check(&p);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("rain.csv:3") && err.contains("longer than 4096 bytes"),
        "{err}"
    );
    let (code, _, err) = run(dir.path(), &p);
    assert_eq!(code, 2, "{err}");
}
