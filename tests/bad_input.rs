//! The bad-input corpus in tests/bad/: every mistake gets a clear error
//! (exit code 2, `error: FILE:LINE:COLUMN: ...` naming the key, element or
//! line), nothing is written, previous results are untouched, and nothing
//! panics. Scenario contract, "Command line" (exit code 2, "nothing written,
//! previous results untouched") and the error format under it.
//!
//! Each case is one file `tests/bad/NAME.toml`, or a folder
//! `tests/bad/NAME/` with `scenario.toml` and the `rain.csv` it reads; each
//! breaks one rule of the valid scenarios in tests/data/bad-base/.

mod common;
use common::snapshot;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Where the first line of the error must point.
#[derive(Debug, Clone, Copy)]
enum At {
    /// `error: SCENARIO:LINE:` (a column follows).
    Line(usize),
    /// `error: SCENARIO:LINE:COLUMN:`.
    LineCol(usize, usize),
    /// `error: CASE_DIR/FILE:LINE:` for an error in a file the scenario reads.
    FileLine(&'static str, usize),
    /// `error: CASE_DIR/FILE: ` (the problem has no line).
    File(&'static str),
    /// `error: SCENARIO: ` (the problem is the whole scenario).
    Whole,
}

/// One case: its name in tests/bad/, where the error points, and strings
/// the error text must contain (`{dir}` stands for the case's folder).
struct Case {
    name: &'static str,
    at: At,
    needles: &'static [&'static str],
}

const fn case(name: &'static str, at: At, needles: &'static [&'static str]) -> Case {
    Case { name, at, needles }
}

use At::*;

#[rustfmt::skip]
const CASES: &[Case] = &[
    // TOML level: syntax, keys, types.
    case("toml-syntax", LineCol(21, 15), &["area", "string"]),
    case("unknown-key-top", LineCol(2, 1), &["unknown key `titel`", "did you mean `title`"]),
    case("unknown-key-catchment", LineCol(21, 1), &["catchment \"EX-1\"", "unknown key `aera`", "did you mean `area`"]),
    case("unknown-key-outlet", LineCol(65, 1), &["pond \"Pond A\", outlet 1", "did you mean `diameter`"]),
    case("unknown-key-cover", LineCol(35, 1), &["cover 2", "did you mean `land`"]),
    case("missing-name", Line(18), &["catchment", "missing required key `name`"]),
    case("missing-to", Line(18), &["catchment \"EX-1\"", "`to`"]),
    case("missing-depth", Line(6), &["storm \"10-yr\"", "`depth`"]),
    case("missing-cn", Line(18), &["catchment \"EX-1\"", "`cn`"]),
    case("wrong-type-cn", LineCol(23, 6), &["cn", "invalid type", "expected a number"]),
    case("wrong-type-name", LineCol(19, 8), &["name", "invalid type", "expected a string"]),
    case("wrong-type-stage-area", LineCol(59, 14), &["pond \"Pond A\", stage_area", "invalid type"]),
    case("not-utf8", LineCol(2, 13), &["not UTF-8"]),
    case("empty-scenario", Whole, &["no [[catchment]]"]),
    // Numbers that are not numbers.
    case("nan-area", LineCol(21, 8), &["catchment \"EX-1\", area", "not a finite number"]),
    case("inf-depth", LineCol(9, 9), &["storm \"10-yr\", depth", "not a finite number"]),
    case("nan-cn", LineCol(23, 6), &["catchment \"EX-1\", cn", "not a finite number"]),
    case("inf-slope-text", LineCol(47, 9), &["flow segment 2, slope", "inf %"]),
    case("nan-stage-table", LineCol(59, 14), &["stage_area", "row 2", "not finite"]),
    // Units.
    case("unknown-unit", LineCol(21, 8), &["area", "unknown unit `acers`"]),
    case("wrong-dimension", LineCol(21, 8), &["catchment \"EX-1\", area", "`5 ft` is not an area"]),
    case("wrong-dimension-time", LineCol(24, 6), &["tc", "`25 ft` is not a time"]),
    case("unknown-unit-system", LineCol(3, 9), &["units", "\"metric\"", "\"us\" or \"si\""]),
    case("tc-bare-number", LineCol(24, 6), &["catchment \"EX-1\", tc", "a time needs a unit", "hint:"]),
    case("step-bare-number", LineCol(5, 8), &["step", "a time needs a unit"]),
    // Curve numbers.
    case("cn-zero", LineCol(23, 6), &["catchment \"EX-1\", cn", "CN 0 is outside (0, 100]"]),
    case("cn-120", LineCol(23, 6), &["cn", "CN 120 is outside"]),
    case("cn-negative", LineCol(32, 6), &["cover 1, cn", "CN -5 is outside"]),
    case("lambda-unsupported", LineCol(24, 10), &["lambda", "0.2", "0.05"]),
    // Positive quantities.
    case("area-zero", LineCol(21, 8), &["catchment \"EX-1\", area", "must be positive"]),
    case("area-negative-cover", LineCol(33, 8), &["cover 1, area", "must be positive"]),
    case("length-zero", LineCol(46, 10), &["flow segment 2, length", "must be positive"]),
    case("slope-negative", LineCol(52, 9), &["flow segment 3, slope", "must be positive"]),
    case("slope-zero", LineCol(42, 9), &["flow segment 1, slope", "must be positive"]),
    case("diameter-zero", LineCol(65, 12), &["outlet 1, diameter", "must be positive"]),
    case("pipe-diameter-negative", LineCol(53, 40), &["section, diameter", "must be positive"]),
    case("manning-n-zero", LineCol(40, 5), &["flow segment 1, n", "Manning n must be positive"]),
    case("manning-n-negative", LineCol(50, 5), &["flow segment 3, n", "Manning n must be positive"]),
    case("slope-near-zero", Line(26), &["catchment \"PR-1\"", "time of concentration", "steps"]),
    case("tc-far-too-long", LineCol(24, 6), &["catchment \"EX-1\", tc", "\"1e9 h\" is far beyond", "8760 h"]),
    // Covers, flow paths, sections.
    case("cover-areas-mismatch", LineCol(29, 8), &["catchment \"PR-1\", area", "5.0000 ac", "6.0000 ac"]),
    case("soil-group-unknown", LineCol(36, 8), &["cover 2, soil", "\"E\""]),
    case("land-cover-unknown", LineCol(35, 8), &["cover 2, land", "open-space-excellent"]),
    case("flow-kind-unknown", LineCol(44, 8), &["flow segment 2, kind", "\"shalow\"", "did you mean \"shallow\""]),
    case("shallow-surface-unknown", LineCol(45, 11), &["flow segment 2, surface", "gravel road"]),
    case("section-shape-unknown", LineCol(53, 21), &["section, shape", "\"circle\""]),
    case("p2-missing-sheet-flow", LineCol(38, 8), &["flow segment 1", "`p2`"]),
    // Names and the network.
    case("duplicate-catchment-name", LineCol(27, 8), &["\"EX-1\" is already used", "line 19"]),
    case("duplicate-storm-name", LineCol(12, 8), &["storm \"10-yr\"", "already used", "line 7"]),
    case("duplicate-name-across-kinds", LineCol(73, 8), &["point \"Pond A\"", "already used by a pond"]),
    case("to-unknown", LineCol(30, 6), &["catchment \"PR-1\", to", "nothing is named \"Pond B\"", "did you mean \"Pond A\""]),
    case("to-catchment", LineCol(30, 6), &["catchment \"PR-1\", to", "\"EX-1\" is a catchment"]),
    case("no-point", LineCol(22, 6), &["nothing is named \"outfall\"", "no [[point]]"]),
    case("pond-cycle", LineCol(58, 6), &["pond \"Pond A\", to", "cycle", "Pond A -> Pond B -> Pond A"]),
    case("drains-to-pond-outside-condition", LineCol(22, 6), &["catchment \"EX-1\", to", "condition \"existing\"", "\"Pond A\""]),
    case("baseline-no-elements", LineCol(4, 12), &["baseline", "\"predevelopment\"", "never reaches a point"]),
    case("condition-list-empty", LineCol(20, 13), &["catchment \"EX-1\", condition", "empty"]),
    // Points and limits.
    // Names that give the same result file name.
    case("file-name-clash-storms", LineCol(12, 8), &["storm \"10/yr\" and storm \"10-yr\" (line 7)", "storm-10-yr.csv", "rename one"]),
    case("file-name-clash-points", LineCol(77, 8), &["point \"OUTFALL\" and point \"outfall\" (line 73)", "storm-10-yr-outfall.png"]),
    case("file-name-clash-ponds", LineCol(77, 8), &["pond \"pond a\" and pond \"Pond A\" (line 56)", "pond-pond-a-10-yr-proposed.png"]),
    case("file-name-clash-records", LineCol(78, 8), &["record \"June!\" and record \"june\" (line 74)", "record-june-outfall-duration.png"]),
    case("file-name-clash-across-kinds", Whole, &["storm \"10-yr\" at point \"outfall\"", "storm \"10\" at point \"yr outfall\"", "storm-10-yr-outfall.png"]),
    case("limits-unknown-storm", LineCol(75, 23), &["point \"outfall\", limits", "no storm is named \"100-yr\""]),
    case("limit-unknown-condition", LineCol(74, 9), &["point \"outfall\", limit", "\"exsting\" is not a condition", "did you mean \"existing\""]),
    case("limit-unreadable", LineCol(74, 9), &["point \"outfall\", limit", "bananas"]),
    case("limit-negative", LineCol(74, 9), &["point \"outfall\", limit", "negative"]),
    // Sizing ranges.
    case("range-min-above-max", LineCol(65, 12), &["outlet 1, diameter", "min > max"]),
    case("range-on-catchment-area", LineCol(21, 8), &["catchment \"EX-1\", area", "range"]),
    // Storms.
    case("pattern-unknown", LineCol(8, 11), &["storm \"10-yr\", pattern", "\"nrcs-type-2\"", "did you mean"]),
    case("pattern-table-not-from-zero", LineCol(14, 9), &["storm \"burst\", table", "starts at [0, 0]"]),
    case("pattern-table-decreasing", LineCol(14, 9), &["storm \"burst\", table", "row 3"]),
    case("pattern-table-not-to-one", LineCol(14, 9), &["storm \"burst\", table", "ends at [1, 1]"]),
    case("pattern-table-row-length", LineCol(14, 9), &["storm \"burst\", table", "row 2"]),
    case("duration-missing-table", Line(11), &["storm \"burst\"", "`duration`"]),
    // Issue 15: nested storms, lag inputs, shallow-flow surfaces, regional skew.
    case("nested-intensity-rises", LineCol(14, 10), &["storm \"burst\", depths", "row 3", "average intensities must not increase"]),
    case("nested-with-depth", LineCol(14, 9), &["storm \"burst\", depth", "takes its depth from `depths`"]),
    case("nested-peak-outside", LineCol(15, 11), &["storm \"burst\", peak_at", "outside the storm"]),
    case("depths-without-nested", LineCol(17, 10), &["storm \"burst\", depths", "only used with pattern = \"nested\""]),
    case("timing-tc-and-lag", LineCol(25, 12), &["catchment \"EX-1\", lag_time", "also has tc"]),
    case("watershed-lag-no-slope", LineCol(24, 17), &["catchment \"EX-1\", watershed_lag", "`slope`"]),
    case("surface-typo-waterway", LineCol(45, 11), &["flow segment 2, surface", "did you mean `grassed-waterway`"]),
    case("regional-skew-without-mse", LineCol(76, 17), &["record \"june-record\", regional_skew", "regional_skew_mse"]),
    case("inflow-times-decreasing", Line(72), &["inflow \"offsite\"", "row 3"]),
    // Ponds and outlets.
    // Outlet structures: barrels, tailwater, clogged-outlet checks (issue 13).
    case("barrel-unknown-into", LineCol(68, 8), &["outlet 1 (\"low-flow orifice\"), into", "no barrel", "did you mean \"outlet pipe\""]),
    case("barrel-entrance-unknown", LineCol(80, 12), &["barrel \"outlet pipe\", entrance", "did you mean \"concrete-square-edge\""]),
    case("barrel-entrance-for-box", LineCol(80, 12), &["entrance", "is an entrance for a box", "concrete-square-edge"]),
    case("barrel-no-slope", LineCol(75, 1), &["barrel \"outlet pipe\"", "slope or its outlet invert"]),
    case("failure-unknown-blocked", LineCol(84, 12), &["failure, blocked", "\"low flow orifice\"", "did you mean \"low-flow orifice\""]),
    case("failure-unknown-storm", LineCol(83, 9), &["failure, storm", "did you mean \"10-yr\""]),
    case("failure-start-word", LineCol(85, 9), &["failure, start", "did you mean \"full\""]),
    case("tailwater-table-falling", LineCol(62, 13), &["pond \"Pond A\", tailwater", "elevations never falling"]),
    case("perforated-form-unknown", LineCol(69, 8), &["outlet 1, form", "did you mean \"slot\""]),
    case("outlet-count-zero", LineCol(67, 9), &["outlet 1, count", "a whole number from 1"]),
    case("stage-out-of-order", LineCol(59, 14), &["pond \"Pond A\", stage_area", "row 3", "increase"]),
    case("stage-area-negative", LineCol(59, 14), &["pond \"Pond A\", stage_area", "row 2", "negative"]),
    case("stage-volume-negative", LineCol(59, 16), &["pond \"Pond A\", stage_volume", "row 2", "negative"]),
    case("storage-missing", Line(55), &["pond \"Pond A\"", "no storage", "stage_area"]),
    case("outlet-below-bottom", LineCol(64, 10), &["pond \"Pond A\", outlet 1", "below the pond bottom"]),
    case("top-below-bottom", LineCol(60, 7), &["pond \"Pond A\", top", "not above the pond bottom"]),
    case("freeboard-negative", LineCol(61, 17), &["pond \"Pond A\", min_freeboard", "negative"]),
    case("outlet-kind-unknown", LineCol(68, 8), &["outlet 2, kind", "\"wier\"", "did you mean \"weir\""]),
    case("outlet-key-not-used", LineCol(71, 12), &["outlet 2, diameter", "does not take `diameter`"]),
    case("outlet-cd-above-one", LineCol(66, 6), &["outlet 1, cd", "1.6"]),
    case("weir-contractions-three", LineCol(71, 16), &["outlet 2, contractions", "0, 1 or 2"]),
    // The step.
    case("step-zero", LineCol(5, 8), &["step", "must be positive"]),
    case("step-negative", LineCol(5, 8), &["step", "must be positive"]),
    case("step-too-fine", LineCol(5, 8), &["step", "50000000", "use a step of at least"]),
    // Gauge files.
    case("gauge-empty", File("rain.csv"), &["storm \"june\", gauge", "empty"]),
    case("gauge-bad-header", FileLine("rain.csv", 1), &["bad header `when,rain`", "time,depth"]),
    case("gauge-depth-not-number", FileLine("rain.csv", 4), &["`lots` is not a number"]),
    case("gauge-depth-negative", FileLine("rain.csv", 4), &["`-0.35` is negative"]),
    case("gauge-time-unreadable", FileLine("rain.csv", 4), &["cannot read the time `June 3 00:45`"]),
    case("gauge-date-impossible", FileLine("rain.csv", 2), &["2023-02-30", "does not exist"]),
    case("gauge-hour-25", FileLine("rain.csv", 4), &["hour 25"]),
    case("gauge-out-of-order", FileLine("rain.csv", 4), &["out of order", "line 3"]),
    case("gauge-duplicate-time", FileLine("rain.csv", 4), &["repeats the time on line 3"]),
    case("gauge-mixed-interval", FileLine("rain.csv", 3), &["mixed interval lengths", "15 min", "10 min"]),
    case("gauge-gap", FileLine("rain.csv", 4), &["missing intervals", "missing = \"zero\""]),
    case("gauge-file-missing", LineCol(13, 9), &["storm \"june\", gauge", "file not found", "{dir}/rain.csv"]),
    case("gauge-is-folder", LineCol(13, 9), &["storm \"june\", gauge", "is a folder, not a file", "{dir}/rain.csv"]),
    case("gauge-missing-value-unknown", LineCol(14, 11), &["storm \"june\", missing", "\"skip\"", "\"zero\""]),
    case("gauge-and-pattern", LineCol(14, 11), &["storm \"june\", pattern", "either `gauge` or `pattern`"]),
    // Long records.
    case("record-pet-count", LineCol(77, 7), &["record \"june-record\", pet", "11 values given", "12 monthly values"]),
    case("record-recovery-range", LineCol(78, 12), &["record \"june-record\", recovery", "outside 0.3 to 3"]),
    case("record-initial-unknown", LineCol(78, 11), &["record \"june-record\", initial", "\"IIII\"", "did you mean \"III\""]),
    case("record-pet-in-event-mode", LineCol(77, 7), &["record \"june-record\", pet", "belongs to moisture = \"continuous\""]),
    case("cover-connected-pervious", LineCol(38, 13), &["catchment \"PR-1\", cover 2, connected", "not impervious at CN 98"]),
    case("catchment-impervious-unknown", LineCol(31, 14), &["catchment \"PR-1\", impervious", "\"seperate\"", "did you mean \"separate\""]),
    case("record-moisture-unknown", LineCol(76, 12), &["record \"june-record\", moisture", "\"bucket\""]),
    // Conditions are deliberate (issue 10, item 3).
    case("condition-typo", LineCol(57, 13), &["pond \"Pond A\", condition", "\"propsed\" is 1 letter away from condition \"proposed\"", "did you mean \"proposed\"", "conditions = [\"existing\", \"proposed\", \"propsed\"]"]),
    case("condition-case", LineCol(20, 13), &["catchment \"EX-1\", condition", "\"Existing\" differs only in case", "did you mean \"existing\""]),
    case("condition-not-listed", LineCol(58, 13), &["pond \"Pond A\", condition", "\"proposed-b\" is not one of the scenario's conditions", "\"existing\", \"proposed\""]),
    case("conditions-baseline-missing", LineCol(5, 12), &["baseline", "\"exisitng\" is not in the `conditions` list", "did you mean \"existing\""]),
    // Names (issue 10, item 11).
    case("name-empty", LineCol(19, 8), &["catchment, name", "the name is empty"]),
    case("storm-name-empty", LineCol(7, 8), &["storm, name", "the name is empty"]),
    case("name-control-character", LineCol(19, 8), &["catchment, name", "control character (U+0009)"]),
    case("name-too-long", LineCol(7, 8), &["storm, name", "300 characters long", "limit of 64"]),
    // Magnitudes no site can hold, refused at load (issue 10, item 11).
    case("crest-huge", LineCol(69, 9), &["pond \"Pond A\", outlet 2, crest", "far beyond", "100000 ft"]),
    case("storm-depth-huge", LineCol(9, 9), &["storm \"10-yr\", depth", "\"1e308 in\" is far beyond", "250 in"]),
    case("lag-huge", LineCol(25, 7), &["catchment \"EX-1\", lag", "\"1e18 h\" is far beyond"]),
    case("lag-over-a-month", LineCol(25, 7), &["catchment \"EX-1\", lag", "960 h is longer than runnel's limit of 31 days"]),
    // Channels: Muskingum K and X, the split at the step, unknown keys, what may drain to what.
    case("channel-k-zero", LineCol(38, 5), &["channel \"east swale\", k", "Muskingum K must be a positive duration", "hint:"]),
    case("channel-k-bare-number", LineCol(38, 5), &["channel \"east swale\", k", "a time needs a unit", "hint:"]),
    case("channel-k-over-a-month", LineCol(38, 5), &["channel \"east swale\", k", "1000 h is longer than runnel's limit of 31 days"]),
    case("channel-x-above-half", LineCol(39, 5), &["channel \"east swale\", x", "between 0 and 0.5, got 0.6", "hint:"]),
    case("channel-x-negative", LineCol(39, 5), &["channel \"east swale\", x", "between 0 and 0.5, got -0.1"]),
    case("channel-unknown-key", LineCol(37, 1), &["channel \"east swale\"", "unknown key `too`", "did you mean `to`"]),
    case("channel-missing-k", Line(34), &["channel \"east swale\"", "missing required key `k`"]),
    case("channel-no-split", Line(34), &["channel \"east swale\"", "non-negative Muskingum coefficients", "hint:"]),
    case("channel-to-catchment", LineCol(31, 6), &["catchment \"commons graded\", to", "\"commons\" is a catchment", "a pond, channel or point"]),
    case("inflow-time-huge", LineCol(76, 9), &["inflow \"offsite\"", "row 3", "time", "far beyond", "744 h"]),
    case("stage-huge", LineCol(59, 14), &["pond \"Pond A\", stage_area", "row 3", "stage", "far beyond"]),
    // Ponds (issue 10, item 5).
    case("start-above-top", LineCol(61, 9), &["pond \"Pond A\", start", "105 is above the top of embankment 104"]),
    // Underground storage, pond losses and buildable increments (issues 13 and 12).
    case("pond-no-storage", LineCol(56, 1), &["pond \"Pond A\"", "no storage", "[[pond.gallery]]"]),
    case("stone-porosity-percent", LineCol(67, 12), &["stone bed 1, porosity", "40 % is 0.4"]),
    case("gallery-in-missing-stone", LineCol(68, 12), &["gallery 1, in_stone", "no stone bed 2"]),
    case("infiltration-area-typo", LineCol(62, 21), &["infiltration_area", "did you mean \"bottom\""]),
    case("infiltration-no-time-unit", LineCol(61, 16), &["pond \"Pond A\", infiltration", "no time unit", "in/h"]),
    case("evaporation-eleven-months", LineCol(61, 15), &["evaporation", "11 values", "12 depths per day"]),
    case("infiltration-vault-only", LineCol(60, 16), &["infiltration", "no area to infiltrate", "vaults and pipe galleries are closed"]),
    case("range-increment-no-multiple", LineCol(66, 12), &["outlet 1, diameter, increment", "no multiple", "0.5000 in", "finer `increment`"]),
    // The report's project block (issue 14).
    case("report-unknown-key", LineCol(78, 1), &["report, clinet", "unknown key `clinet`", "did you mean `client`"]),
    case("report-empty", LineCol(77, 15), &["report, prepared_by", "prepared_by is empty", "leave the key out"]),
];

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// The scenario of a case and the folder its relative files live in.
fn case_paths(name: &str) -> (PathBuf, PathBuf) {
    let bad = root().join("tests/bad");
    let folder = bad.join(name);
    if folder.is_dir() {
        (folder.join("scenario.toml"), folder)
    } else {
        (bad.join(format!("{name}.toml")), bad)
    }
}

fn runnel(args: &[&Path], cwd: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_runnel"))
        .args(args)
        .current_dir(cwd)
        .env_remove("RUST_BACKTRACE")
        .output()
        .unwrap_or_else(|e| panic!("cannot start runnel: {e}"))
}

/// A results folder from an earlier, complete run: runnel's marker and the
/// files it lists, so that runnel may replace it and an error found after
/// loading still reaches its own message.
fn previous_results(parent: &Path) -> PathBuf {
    let out = parent.join("results");
    std::fs::create_dir(&out).unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(
        out.join("summary.json"),
        "{\"title\": \"earlier run\", \"comparisons\": [], \"warnings\": [], \"provenance\": {\"program\": \"runnel\"}}\n",
    )
    .unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(out.join("storm-10-yr.csv"), "time_h,flow\n0,0\n")
        .unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(
        out.join(".runnel-results"),
        "runnel results folder: an earlier run's, made by tests/bad_input.rs\nstorm-10-yr.csv\nsummary.json\n",
    )
    .unwrap_or_else(|e| panic!("{e}"));
    assert!(runnel::cli::output::is_own_folder(&out));
    out
}

fn assert_no_panic(what: &str, stderr: &str) {
    for bad in ["panicked", "RUST_BACKTRACE", "stack backtrace", "thread '"] {
        assert!(
            !stderr.contains(bad),
            "{what}: stderr shows a panic:\n{stderr}"
        );
    }
}

/// Runs one case through `run` and `check`; returns the problems found.
fn try_case(c: &Case) -> Vec<String> {
    let mut problems = Vec::new();
    let (scenario, dir) = case_paths(c.name);
    if !scenario.is_file() {
        return vec![format!(
            "{}: no such case file {}",
            c.name,
            scenario.display()
        )];
    }
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = previous_results(tmp.path());
    let before = snapshot(tmp.path());

    let o = runnel(
        &[Path::new("run"), &scenario, Path::new("--out"), &out],
        tmp.path(),
    );
    let stderr = String::from_utf8_lossy(&o.stderr).into_owned();
    let stdout = String::from_utf8_lossy(&o.stdout).into_owned();
    let mut fail = |m: String| problems.push(format!("{}: {m}\n--- stderr:\n{stderr}", c.name));
    if o.status.code() != Some(2) {
        fail(format!("run: exit code {:?}, expected 2", o.status.code()));
    }
    if !stderr.starts_with("error: ") {
        fail("run: stderr does not start with `error: `".into());
    }
    for bad in ["panicked", "RUST_BACKTRACE", "stack backtrace"] {
        if stderr.contains(bad) {
            fail(format!("run: stderr contains `{bad}`"));
        }
    }
    if stdout.contains("results written") {
        fail(format!("run: stdout says results were written: {stdout}"));
    }
    let dir_text = dir.display().to_string();
    for n in c.needles {
        let n = n.replace("{dir}", &dir_text);
        if !stderr.contains(&n) {
            fail(format!("the error does not contain `{n}`"));
        }
    }
    let first = stderr.lines().next().unwrap_or("");
    let s = scenario.display();
    let prefix = match c.at {
        Line(l) => format!("error: {s}:{l}:"),
        LineCol(l, col) => format!("error: {s}:{l}:{col}: "),
        FileLine(f, l) => format!("error: {}:{l}:", dir.join(f).display()),
        File(f) => format!("error: {}: ", dir.join(f).display()),
        Whole => format!("error: {s}: "),
    };
    if !first.starts_with(&prefix) {
        fail(format!(
            "first line `{first}` does not start with `{prefix}`"
        ));
    }
    // Nothing written: the earlier results are byte-for-byte the same and no
    // other folder (staging, backup) was left beside them.
    let after = snapshot(tmp.path());
    if after != before {
        let added: Vec<_> = after.keys().filter(|k| !before.contains_key(*k)).collect();
        let gone: Vec<_> = before.keys().filter(|k| !after.contains_key(*k)).collect();
        fail(format!(
            "the results folder changed (added {added:?}, removed {gone:?}, or bytes differ)"
        ));
    }

    let before_check = snapshot(tmp.path());
    let o = runnel(&[Path::new("check"), &scenario], tmp.path());
    let check_err = String::from_utf8_lossy(&o.stderr).into_owned();
    if o.status.code() != Some(2) {
        problems.push(format!(
            "{}: check: exit code {:?}, expected 2\n{check_err}",
            c.name,
            o.status.code()
        ));
    }
    if !check_err.starts_with("error: ") || check_err.contains("panicked") {
        problems.push(format!(
            "{}: check: stderr is not a plain error:\n{check_err}",
            c.name
        ));
    }
    if snapshot(tmp.path()) != before_check {
        problems.push(format!("{}: check wrote into the folder", c.name));
    }
    problems
}

#[test]
fn every_case_in_the_corpus_is_refused_with_a_clear_error_and_writes_nothing() {
    assert!(
        CASES.len() >= 45,
        "the corpus has only {} cases",
        CASES.len()
    );
    let problems: Vec<String> = CASES.iter().flat_map(try_case).collect();
    assert!(
        problems.is_empty(),
        "{} problem(s):\n\n{}",
        problems.len(),
        problems.join("\n\n")
    );
}

#[test]
fn the_table_and_the_corpus_folder_list_the_same_cases() {
    let mut on_disk: Vec<String> = std::fs::read_dir(root().join("tests/bad"))
        .unwrap_or_else(|e| panic!("{e}"))
        .map(|e| e.unwrap_or_else(|e| panic!("{e}")).path())
        .filter_map(|p| {
            let name = p.file_name()?.to_string_lossy().into_owned();
            if p.is_dir() {
                Some(name)
            } else {
                name.strip_suffix(".toml").map(str::to_string)
            }
        })
        .collect();
    on_disk.sort();
    let mut listed: Vec<String> = CASES.iter().map(|c| c.name.to_string()).collect();
    listed.sort();
    let before = listed.len();
    listed.dedup();
    assert_eq!(before, listed.len(), "a case is listed twice");
    assert_eq!(on_disk, listed);
}

#[test]
fn the_valid_bases_of_the_corpus_pass_check() {
    // Each case breaks one rule of these; they must themselves be valid, so
    // that a case fails for its own reason.
    for name in ["scenario.toml", "gauge.toml"] {
        let p = root().join("tests/data/bad-base").join(name);
        let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
        let o = runnel(&[Path::new("check"), &p], tmp.path());
        let stderr = String::from_utf8_lossy(&o.stderr);
        assert_no_panic(name, &stderr);
        assert_eq!(o.status.code(), Some(0), "{name}: {stderr}");
        assert!(String::from_utf8_lossy(&o.stdout).contains("scenario is valid"));
    }
}

#[test]
fn a_missing_scenario_file_is_an_error_naming_the_path() {
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = previous_results(tmp.path());
    let before = snapshot(tmp.path());
    let missing = tmp.path().join("no-such-study.toml");
    let o = runnel(
        &[Path::new("run"), &missing, Path::new("--out"), &out],
        tmp.path(),
    );
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.starts_with(&format!("error: {}", missing.display())),
        "{stderr}"
    );
    assert_no_panic("missing scenario", &stderr);
    assert_eq!(snapshot(tmp.path()), before);
}
