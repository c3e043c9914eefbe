//! Legal values that are almost always a slip (issue 10, item 5) give a
//! warning naming the element, the key, the value as read with its unit,
//! the usual range and the likely intended input; `check` prints it and
//! `run` writes it to stderr and `summary.json`. Condition names that are
//! alike on purpose still load (item 3), and limits read every flow unit
//! the README lists (item 11).
//!
//! Each case is the valid scenario tests/data/bad-base/scenario.toml with
//! one or two lines changed.

mod common;
use common::{data, example, runnel};
use runnel::model::Limit;
use std::path::{Path, PathBuf};

/// The base scenario with each `(from, to)` replaced once, written into a
/// fresh folder.
fn variant(edits: &[(&str, &str)]) -> (tempfile::TempDir, PathBuf) {
    let mut text =
        std::fs::read_to_string(data("bad-base/scenario.toml")).unwrap_or_else(|e| panic!("{e}"));
    for (from, to) in edits {
        assert!(text.contains(from), "the base has no `{from}`");
        text = text.replacen(from, to, 1);
    }
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let path = dir.path().join("scenario.toml");
    std::fs::write(&path, text).unwrap_or_else(|e| panic!("{e}"));
    (dir, path)
}

/// `runnel check PATH`: exit code and stderr.
fn check(path: &Path) -> (i32, String) {
    let o = runnel(&["check", &path.to_string_lossy()]);
    (
        o.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Checks a variant: it loads (exit 0) and stderr holds every needle on one
/// `warning:` line.
fn warns(edits: &[(&str, &str)], needles: &[&str]) {
    let (_dir, path) = variant(edits);
    let (code, stderr) = check(&path);
    assert_eq!(code, 0, "{stderr}");
    let hit = stderr
        .lines()
        .filter(|l| l.starts_with("warning: "))
        .any(|l| needles.iter().all(|n| l.contains(n)));
    assert!(hit, "no warning holds all of {needles:?}:\n{stderr}");
}

/// Phrases that only the plausibility warnings use.
const PLAUSIBILITY: &[&str] = &[
    " % slope; did you mean",
    "Manning n = ",
    "2-year 24-hour rainfall of",
    "design-storm depth",
    "a bare number is in the scenario's length unit",
    "coefficient of",
    "is longer than 24 h",
];

fn plausibility_lines(stderr: &str) -> Vec<&str> {
    stderr
        .lines()
        .filter(|l| l.starts_with("warning: ") && PLAUSIBILITY.iter().any(|p| l.contains(p)))
        .collect()
}

#[test]
fn a_bare_sheet_slope_of_2_5_is_taken_for_a_percentage() {
    // common practice, no published source: sheet and shallow flow slopes
    // above 0.3 ft/ft are rare; a bare slope of 1 or more is a percentage.
    warns(
        &[("slope = 0.02", "slope = 2.5")],
        &[
            "catchment \"PR-1\", flow segment 1, slope",
            "2.5 ft/ft is a 250 % slope; did you mean \"2.5 %\"?",
            "under 0.3 ft/ft",
        ],
    );
}

#[test]
fn a_shallow_slope_of_45_percent_is_flagged() {
    // common practice, no published source: the 0.3 ft/ft (30 %) bound.
    warns(
        &[("slope = \"1.5 %\"", "slope = \"45 %\"")],
        &[
            "catchment \"PR-1\", flow segment 2, slope",
            "0.45 ft/ft is a 45 % slope",
            "did you mean \"4.5 %\"?",
        ],
    );
}

#[test]
fn a_bare_channel_slope_of_1_or_more_is_flagged() {
    // common practice, no published source: a channel slope of 100 % is not
    // open-channel flow.
    warns(
        &[("slope = 0.006", "slope = 1.5")],
        &[
            "catchment \"PR-1\", flow segment 3, slope",
            "1.5 ft/ft is a 150 % slope; did you mean \"1.5 %\"?",
            "not open-channel flow",
        ],
    );
}

#[test]
fn sheet_flow_n_outside_0_008_to_1_is_flagged() {
    // TR-55 (1986) Table 3-1 (transcribed) spans 0.011 to 0.8; the band
    // 0.008-1.0 around it is common practice, no published source.
    warns(
        &[("n = 0.15", "n = 15")],
        &[
            "catchment \"PR-1\", flow segment 1, n",
            "Manning n = 15 is outside the usual sheet-flow range of 0.008-1.0",
            "did you mean n = 0.15?",
        ],
    );
}

#[test]
fn channel_n_above_0_2_is_flagged() {
    // from memory: open-channel n tables (Chow 1959, Table 5-6) end near
    // 0.2 for the densest floodplain brush and timber.
    warns(
        &[("n = 0.013", "n = 0.35")],
        &[
            "catchment \"PR-1\", flow segment 3, n",
            "Manning n = 0.35 is outside the usual channel range of 0.008-0.2",
            "did you mean n = 0.035?",
        ],
    );
}

#[test]
fn p2_of_3_2_in_an_si_scenario_is_read_as_mm_and_flagged() {
    // from memory: the 2-year 24-hour depths mapped for the contiguous US
    // (TP-40, 1961) lie within 1-10 in; the bounds are common practice.
    warns(
        &[
            ("units = \"us\"", "units = \"si\""),
            ("p2 = \"3.2 in\"", "p2 = 3.2"),
        ],
        &[
            "p2: a 2-year 24-hour rainfall of 3.2 mm",
            "outside the usual 25-254 mm (1-10 in)",
            "did you mean \"3.2 in\"?",
        ],
    );
}

#[test]
fn p2_of_80_in_a_us_scenario_is_flagged_as_millimetres() {
    // common practice, no published source: 1-10 in.
    warns(
        &[("p2 = \"3.2 in\"", "p2 = 80")],
        &[
            "p2: a 2-year 24-hour rainfall of 80 in",
            "did you mean \"80 mm\"?",
        ],
    );
}

#[test]
fn a_storm_depth_of_4_8_in_an_si_scenario_is_flagged() {
    // common practice, no published source: design-storm depths of 0.3-40 in.
    warns(
        &[
            ("units = \"us\"", "units = \"si\""),
            ("depth = \"4.8 in\"", "depth = 4.8"),
        ],
        &[
            "storm \"10-yr\", depth: 4.8 mm",
            "outside the usual design-storm depth of 7.6-1016 mm (0.3-40 in)",
            "did you mean \"4.8 in\"?",
        ],
    );
}

#[test]
fn a_bare_orifice_diameter_of_6_in_a_us_scenario_is_taken_for_inches() {
    // common practice, no published source: pond orifices are inches across.
    warns(
        &[("diameter = \"6 in\"", "diameter = 6")],
        &[
            "pond \"Pond A\", outlet 1, diameter",
            "6 ft across",
            "did you mean \"6 in\"?",
            "write \"6 ft\"",
        ],
    );
    // Feet written out say the size is meant.
    let (_dir, path) = variant(&[("diameter = \"6 in\"", "diameter = \"6 ft\"")]);
    let (code, stderr) = check(&path);
    assert_eq!(code, 0, "{stderr}");
    assert!(plausibility_lines(&stderr).is_empty(), "{stderr}");
}

#[test]
fn a_bare_riser_diameter_and_a_bare_range_are_flagged() {
    // common practice, no published source: a bare diameter of 3 or more.
    warns(
        &[(
            "kind = \"weir\"\ncrest = 102.5\nlength = \"3 ft\"",
            "kind = \"riser\"\ncrest = 102.5\ndiameter = 4",
        )],
        &[
            "pond \"Pond A\", outlet 2, diameter",
            "4 ft across",
            "did you mean \"4 in\"?",
        ],
    );
    warns(
        &[("diameter = \"6 in\"", "diameter = { min = 2, max = 24 }")],
        &[
            "pond \"Pond A\", outlet 1, diameter",
            "24 ft across",
            "did you mean \"24 in\"?",
        ],
    );
}

#[test]
fn a_weir_coefficient_of_1_84_in_a_us_scenario_is_flagged_as_si() {
    // USBR Water Measurement Manual (2001), C = 3.33 US / 1.84 SI
    // (transcribed); the band 3.0-3.9 US around it is common practice, no
    // published source.
    warns(
        &[("length = \"3 ft\"", "length = \"3 ft\"\ncoefficient = 1.84")],
        &[
            "pond \"Pond A\", outlet 2, coefficient",
            "1.84 is outside the usual sharp-crested weir coefficient of 3-3.9 in US units",
            "did you mean coefficient = 3.33",
        ],
    );
}

#[test]
fn a_weir_coefficient_of_3_33_in_an_si_scenario_is_flagged_as_us() {
    // USBR Water Measurement Manual (2001), C = 3.33 US / 1.84 SI
    // (transcribed); the band around it is common practice.
    warns(
        &[
            ("units = \"us\"", "units = \"si\""),
            ("length = \"3 ft\"", "length = \"3 ft\"\ncoefficient = 3.33"),
        ],
        &[
            "pond \"Pond A\", outlet 2, coefficient",
            "3.33 is outside the usual sharp-crested weir coefficient of 1.66-2.15 in SI units",
            "did you mean coefficient = 1.84",
        ],
    );
}

#[test]
fn a_spillway_coefficient_of_1_44_in_a_us_scenario_is_flagged() {
    // from memory: broad-crested weir coefficients of about 2.3-3.3 (US),
    // Brater & King's tables; 2.6 US / 1.44 SI is runnel's default.
    warns(
        &[(
            "kind = \"weir\"\ncrest = 102.5\nlength = \"3 ft\"",
            "kind = \"spillway\"\ncrest = 103.5\nlength = \"10 ft\"\ncoefficient = 1.44",
        )],
        &[
            "pond \"Pond A\", outlet 2, coefficient",
            "broad-crested (spillway) coefficient of 2.3-3.4 in US units",
            "did you mean coefficient = 2.61",
        ],
    );
}

#[test]
fn a_tc_of_25_h_is_taken_for_minutes() {
    // common practice, no published source: a Tc over 24 h on a site.
    warns(
        &[("tc = \"25 min\"", "tc = \"25 h\"")],
        &[
            "catchment \"EX-1\", tc: Tc = 25 h is longer than 24 h",
            "did you mean \"25 min\"?",
        ],
    );
}

#[test]
fn run_writes_the_warnings_to_stderr_and_summary_json() {
    // Several slips at once (sources as in the tests above).
    let (dir, path) = variant(&[
        ("slope = 0.02", "slope = 2.5"),
        ("n = 0.013", "n = 0.35"),
        ("p2 = \"3.2 in\"", "p2 = 80"),
        ("diameter = \"6 in\"", "diameter = 6"),
        ("length = \"3 ft\"", "length = \"3 ft\"\ncoefficient = 1.84"),
        ("tc = \"25 min\"", "tc = \"25 h\""),
        ("depth = \"40 mm\"", "depth = \"0.1 in\""),
    ]);
    let out = dir.path().join("out");
    let o = runnel(&[
        "run",
        &path.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(matches!(o.status.code(), Some(0 | 1)), "{stderr}");
    let text = std::fs::read_to_string(out.join("summary.json")).unwrap_or_else(|e| panic!("{e}"));
    let v: serde_json::Value = serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}"));
    let details = v["warning_details"].as_array().cloned().unwrap_or_default();
    for code in [
        "slope-steep",
        "manning-n-unusual",
        "p2-unusual",
        "storm-depth-unusual",
        "diameter-bare",
        "coefficient-unusual",
        "tc-long",
    ] {
        let w = details
            .iter()
            .find(|w| w["code"] == code)
            .unwrap_or_else(|| panic!("no `{code}` in summary.json:\n{text}"));
        let message = w["message"].as_str().unwrap_or("");
        assert!(
            stderr.contains(&format!("warning: {message}")),
            "`{code}` is not on stderr:\n{stderr}"
        );
    }
}

#[test]
fn the_shipped_scenarios_hold_no_slips() {
    // The examples, the test scenarios and the starter load without a
    // plausibility warning, except the two test scenarios whose storms are
    // deliberately tiny (a 0.01-in storm under an inflow hydrograph). They
    // are loaded through the library: `check` of tests/data/slow.toml
    // takes minutes in a debug build.
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let o = runnel(&["init", &tmp.path().join("starter").to_string_lossy()]);
    assert_eq!(o.status.code(), Some(0));
    let mut files: Vec<PathBuf> = vec![tmp.path().join("starter/scenario.toml")];
    for dir in [example(""), data("")] {
        for e in std::fs::read_dir(&dir).unwrap_or_else(|e| panic!("{e}")) {
            let p = e.unwrap_or_else(|e| panic!("{e}")).path();
            if p.extension().is_some_and(|x| x == "toml") {
                files.push(p);
            }
        }
    }
    files.push(data("bad-base/scenario.toml"));
    files.push(data("bad-base/gauge.toml"));
    assert!(files.len() >= 12, "{files:?}");
    let codes = [
        "slope-steep",
        "manning-n-unusual",
        "p2-unusual",
        "storm-depth-unusual",
        "diameter-bare",
        "coefficient-unusual",
        "tc-long",
    ];
    for f in &files {
        let study =
            runnel::input::scenario::load(f).unwrap_or_else(|e| panic!("{}: {e}", f.display()));
        let name = f.file_name().map(|n| n.to_string_lossy().into_owned());
        let allowed: &[&str] = match name.as_deref() {
            Some("ponce.toml") => &["storm \"routing\", depth: 0.01 in"],
            Some("sizing-closed-form.toml") => &["storm \"dry\", depth: 0.01 in"],
            _ => &[],
        };
        for w in study.warnings.iter().filter(|w| codes.contains(&w.code())) {
            let text = w.to_string();
            assert!(
                allowed.iter().any(|a| text.contains(a)),
                "{}: {text}",
                f.display()
            );
        }
    }
}

#[test]
fn conditions_alike_on_purpose_load() {
    // common practice, no published source: how engineers name conditions.
    for edits in [
        // Numbered phases.
        &[
            (
                "name = \"PR-1\"\ncondition = \"proposed\"",
                "name = \"PR-1\"\ncondition = [\"phase-1\", \"phase-2\"]",
            ),
            (
                "name = \"Pond A\"\ncondition = \"proposed\"",
                "name = \"Pond A\"\ncondition = [\"phase-1\", \"phase-2\"]",
            ),
        ][..],
        // Short names two letters apart.
        &[
            ("p2 = \"3.2 in\"", "p2 = \"3.2 in\"\nbaseline = \"ex\""),
            ("condition = \"existing\"", "condition = \"ex\""),
            (
                "name = \"PR-1\"\ncondition = \"proposed\"",
                "name = \"PR-1\"\ncondition = \"pr\"",
            ),
            (
                "name = \"Pond A\"\ncondition = \"proposed\"",
                "name = \"Pond A\"\ncondition = \"pr\"",
            ),
            ("limit = \"existing\"", "limit = \"ex\""),
        ][..],
        // Lettered alternatives.
        &[
            (
                "name = \"PR-1\"\ncondition = \"proposed\"",
                "name = \"PR-1\"\ncondition = [\"alt-a\", \"alt-b\"]",
            ),
            (
                "name = \"Pond A\"\ncondition = \"proposed\"",
                "name = \"Pond A\"\ncondition = [\"alt-a\", \"alt-b\"]",
            ),
        ][..],
        // Names a slip apart, made deliberate by the list at the top.
        &[
            (
                "p2 = \"3.2 in\"",
                "p2 = \"3.2 in\"\nconditions = [\"existing\", \"proposed\", \"proposed2\", \"propsed\"]",
            ),
            (
                "name = \"PR-1\"\ncondition = \"proposed\"",
                "name = \"PR-1\"\ncondition = [\"proposed\", \"propsed\", \"proposed2\"]",
            ),
            (
                "name = \"Pond A\"\ncondition = \"proposed\"",
                "name = \"Pond A\"\ncondition = [\"proposed\", \"propsed\", \"proposed2\"]",
            ),
        ][..],
    ] {
        let (_dir, path) = variant(edits);
        let (code, stderr) = check(&path);
        assert_eq!(code, 0, "{edits:?}: {stderr}");
    }
}

#[test]
fn the_conditions_list_orders_the_study_with_the_baseline_first() {
    let (_dir, path) = variant(&[(
        "p2 = \"3.2 in\"",
        "p2 = \"3.2 in\"\nconditions = [\"proposed\", \"existing\"]",
    )]);
    let study = runnel::input::scenario::load(&path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(study.conditions, ["existing", "proposed"]);
}

#[test]
fn limits_read_every_flow_unit_the_readme_lists() {
    // exact unit definitions (NIST SP 811): 1 ft = 0.3048 m, 1 gal = 231 in3
    let cfs_per_m3s = 1.0 / 0.3048_f64.powi(3);
    let cfs_per_gpm = 231.0 / 1728.0 / 60.0;
    for (limit, cfs) in [
        ("8.4 cfs", 8.4),
        ("8.4 ft3/s", 8.4),
        ("0.24 m3/s", 0.24 * cfs_per_m3s),
        ("0.24 cms", 0.24 * cfs_per_m3s),
        ("240 l/s", 0.24 * cfs_per_m3s),
        ("240 L/s", 0.24 * cfs_per_m3s),
        ("240 lps", 0.24 * cfs_per_m3s),
        ("3800 gpm", 3800.0 * cfs_per_gpm),
    ] {
        let (_dir, path) = variant(&[("limit = \"existing\"", &format!("limit = \"{limit}\""))]);
        let study = runnel::input::scenario::load(&path).unwrap_or_else(|e| panic!("{limit}: {e}"));
        match &study.points[0].limits[0] {
            Limit::Absolute { flow_cfs } => assert!(
                (flow_cfs - cfs).abs() < 1e-9 * cfs,
                "{limit}: {flow_cfs} cfs, expected {cfs}"
            ),
            other => panic!("{limit}: read as {other:?}"),
        }
    }
    // Flows per unit area still read as such.
    for (limit, cfs_per_ac) in [
        ("0.1 cfs/ac", 0.1),
        (
            "10 l/s/ha",
            0.01 * cfs_per_m3s / (10_000.0 / (43_560.0 * 0.3048 * 0.3048)),
        ),
    ] {
        let (_dir, path) = variant(&[("limit = \"existing\"", &format!("limit = \"{limit}\""))]);
        let study = runnel::input::scenario::load(&path).unwrap_or_else(|e| panic!("{limit}: {e}"));
        match &study.points[0].limits[0] {
            Limit::PerArea { cfs_per_ac: q } => assert!(
                (q - cfs_per_ac).abs() < 1e-9 * cfs_per_ac,
                "{limit}: {q}, expected {cfs_per_ac}"
            ),
            other => panic!("{limit}: read as {other:?}"),
        }
    }
}

#[test]
fn names_with_bars_and_html_keep_the_report_tables_whole() {
    let text = std::fs::read_to_string(data("bad-base/scenario.toml"))
        .unwrap_or_else(|e| panic!("{e}"))
        .replace("\"outfall\"", "\"out|fall <b>\"")
        .replace("\"Pond A\"", "\"Pond *A*\"");
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let path = dir.path().join("scenario.toml");
    std::fs::write(&path, text).unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&[
        "run",
        &path.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let md = std::fs::read_to_string(out.join("summary.md")).unwrap_or_else(|e| panic!("{e}"));
    assert!(!md.contains("<b>"), "raw HTML reached the report");
    // Cells split on bars that are not escaped.
    let cells = |line: &str| line.replace("\\|", "").matches('|').count();
    let mut lines = md.lines();
    while let Some(l) = lines.next() {
        if l.starts_with("| point |") {
            let header = cells(l);
            let _rule = lines.next();
            let row = lines.next().unwrap_or("");
            assert!(row.contains("out\\|fall &lt;b&gt;"), "{row}");
            assert_eq!(cells(row), header, "{row}");
            return;
        }
    }
    panic!("no design-point table in:\n{md}");
}
