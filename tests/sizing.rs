//! Outlet sizing through the binary.

mod common;
use common::*;

#[test]
fn orifice_sizing_recovers_the_closed_form_diameter() {
    // Orifice Q = Cd (pi d^2/4) sqrt(2 g (h - d/2)) (Bedient, Huber & Vieux ch.4 form,
    // above-crown rule of the contract); solved here by bisection for Q = 10 cfs, h = 6 ft.
    let (g, h, q, cd) = (32.174f64, 6.0f64, 10.0f64, 0.61f64);
    let f = |d: f64| cd * std::f64::consts::PI * d * d / 4.0 * (2.0 * g * (h - d / 2.0)).sqrt() - q;
    let (mut lo, mut hi) = (0.01, 3.0);
    for _ in 0..100 {
        let m = 0.5 * (lo + hi);
        if f(m) < 0.0 { lo = m } else { hi = m }
    }
    let (code, s, _d) = run_scenario(&data("sizing-closed-form.toml"));
    assert_eq!(code, 0);
    let d = num(&s["sized"][0]["value"]);
    // The buildable answer: the largest multiple of the default increment
    // (0.5 in) at or below the closed-form diameter.
    let inc = 0.5 / 12.0;
    assert!((num(&s["sized"][0]["increment"]) - inc).abs() < 1e-12);
    let buildable = (lo / inc).floor() * inc;
    assert!(
        (d - buildable).abs() < 1e-9,
        "{d} vs {buildable} (closed form {lo})"
    );
    assert!(d <= lo && lo < d + inc, "{d} {lo}");
    assert_eq!(s["sized"][0]["governing_storm"], "dry");
    // the margin at that value: (limit - peak) / limit with the orifice flow there
    let margin = num(&s["sized"][0]["margin"]);
    let q_at = f(d) + q;
    assert!(
        (margin - (q - q_at) / q).abs() < 0.002,
        "{margin} vs {}",
        (q - q_at) / q
    );
}

#[test]
fn a_scenario_of_one_condition_is_sized_to_its_flow_limit() {
    // The closed-form case above with every `condition` key left out: the
    // pond, in the study's only condition, is sized to the same 10-cfs
    // limit (orifice equation as above, Bedient, Huber & Vieux ch. 4 form).
    let text: String = std::fs::read_to_string(data("sizing-closed-form.toml"))
        .unwrap_or_default()
        .lines()
        .filter(|l| !l.starts_with("condition ="))
        .collect::<Vec<_>>()
        .join("\n");
    assert!(!text.contains("condition ="));
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("one.toml");
    std::fs::write(&p, &text).unwrap_or_else(|e| panic!("{e}"));
    let (code, one, _d1) = run_scenario(&p);
    assert_eq!(code, 0, "{one}");
    let (code, two, _d2) = run_scenario(&data("sizing-closed-form.toml"));
    assert_eq!(code, 0, "{two}");
    assert_eq!(one["conditions"], serde_json::json!(["existing"]));
    let d1 = num(&one["sized"][0]["value"]);
    let d2 = num(&two["sized"][0]["value"]);
    assert!(d1 > 0.0 && (d1 - d2).abs() < 1e-12, "{d1} vs {d2}");
    let row = one["comparisons"]
        .as_array()
        .and_then(|a| a.first())
        .cloned()
        .unwrap_or_default();
    assert_eq!(row["status"], "meets", "{row}");
}

#[test]
fn an_increment_in_the_range_gives_multiples_of_it_and_one_more_breaks_the_limit() {
    // Buildable sizes (issue 13): the value is a multiple of the range's
    // increment, the sized scenario run again meets every limit, and one
    // increment more breaks it (Q = Cd A sqrt(2 g h) grows with d).
    let text = std::fs::read_to_string(data("sizing-closed-form.toml"))
        .unwrap_or_default()
        .replace(
            "diameter = { min = \"1 in\", max = \"36 in\" }",
            "diameter = { min = \"1 in\", max = \"36 in\", increment = \"1 in\" }",
        );
    assert!(text.contains("increment"));
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("inc.toml");
    std::fs::write(&p, &text).unwrap_or_else(|e| panic!("{e}"));
    let (code, s, d2) = run_scenario(&p);
    assert_eq!(code, 0, "{s}");
    let z = &s["sized"][0];
    let v = num(&z["value"]) * 12.0;
    assert!((v - v.round()).abs() < 1e-9, "{v} in is not a whole inch");
    assert!((num(&z["increment"]) * 12.0 - 1.0).abs() < 1e-12);
    let sized = d2.path().join("out/sized-scenario.toml");
    let (code2, s2, _) = run_scenario(&sized);
    assert_eq!(code2, 0, "the sized scenario fails a limit: {s2}");
    let more = std::fs::read_to_string(&sized)
        .unwrap_or_default()
        .lines()
        .map(|l| {
            if l.trim_start().starts_with("diameter =") {
                format!("diameter = \"{} in\"", v + 1.0)
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n");
    let p3 = dir.path().join("more.toml");
    std::fs::write(&p3, more).unwrap_or_else(|e| panic!("{e}"));
    let (code3, _, _) = run_scenario(&p3);
    assert_eq!(code3, 1, "one inch more still meets the limit");
}

#[test]
fn a_range_without_a_buildable_size_is_refused() {
    let text = std::fs::read_to_string(data("sizing-closed-form.toml"))
        .unwrap_or_default()
        .replace(
            "diameter = { min = \"1 in\", max = \"36 in\" }",
            "diameter = { min = \"6.1 in\", max = \"6.4 in\" }",
        );
    let (code, _, out, err) = run_text(&text);
    assert_eq!(code, 2, "{out}{err}");
    assert!(
        err.contains("increment") && err.contains("no multiple") && err.contains("tank"),
        "{err}"
    );
}

/// Replaces the value of `key` (the first `key = "... ft"` line after the
/// `n`-th outlet table) in a sized scenario by `factor` times itself.
fn scale_value(text: &str, key: &str, nth: usize, factor: f64) -> String {
    let mut seen = 0;
    let mut out = Vec::new();
    let mut done = false;
    for line in text.lines() {
        if line.trim() == "[[pond.outlet]]" {
            seen += 1;
        }
        if !done && seen == nth + 1 && line.trim_start().starts_with(&format!("{key} =")) {
            let v: f64 = line
                .split('"')
                .nth(1)
                .and_then(|s| s.split_whitespace().next())
                .and_then(|s| s.parse().ok())
                .unwrap_or(f64::NAN);
            out.push(format!("{key} = \"{} ft\"", v * factor));
            done = true;
        } else {
            out.push(line.to_string());
        }
    }
    assert!(done, "no {key} in outlet {nth}");
    out.join("\n")
}

#[test]
fn sized_values_are_maximal_and_the_sized_scenario_reproduces_the_run() {
    let (code, s, dir) = run_scenario(&data("sizing-two-dims.toml"));
    assert_eq!(code, 0, "{s}");
    // Every limit holds at the values found.
    assert!(
        s["comparisons"]
            .as_array()
            .is_some_and(|a| a.iter().all(|c| c["pass"] == true))
    );
    let sized_path = dir.path().join("out/sized-scenario.toml");
    let text = std::fs::read_to_string(&sized_path).unwrap_or_default();
    assert!(!text.contains("min ="), "ranges remain");
    // The sized scenario reproduces the same peaks.
    let (code2, s2, _d2) = run_scenario(&sized_path);
    assert_eq!(code2, 0);
    for (a, b) in s["comparisons"]
        .as_array()
        .into_iter()
        .flatten()
        .zip(s2["comparisons"].as_array().into_iter().flatten())
    {
        assert!((num(&a["peak"]) - num(&b["peak"])).abs() <= 1e-6 * num(&a["peak"]).max(1.0));
    }
    // Each value is a multiple of its increment, and one increment more
    // (unless past its range's max) breaks a limit.
    for (k, z) in s["sized"].as_array().into_iter().flatten().enumerate() {
        let (v, inc) = (num(&z["value"]), num(&z["increment"]));
        assert!(((v / inc) - (v / inc).round()).abs() < 1e-9, "{v} / {inc}");
        if v + inc > num(&z["max"]) + 1e-9 {
            continue;
        }
        let key = z["field"].as_str().unwrap_or("");
        let bigger = scale_value(&text, key, k, (v + inc) / v);
        let p = dir.path().join(format!("out/bigger-{k}.toml"));
        std::fs::write(&p, bigger).unwrap_or_else(|e| panic!("{e}"));
        let (code3, s3, _d3) = run_scenario(&p);
        assert_eq!(
            code3, 1,
            "outlet {k} {key} one increment larger still meets every limit"
        );
        assert!(
            s3["comparisons"]
                .as_array()
                .is_some_and(|a| a.iter().any(|c| c["pass"] == false))
        );
    }
}

#[test]
fn an_infeasible_range_names_the_pond_storm_and_point_and_exits_1() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let text = std::fs::read_to_string(data("sizing-two-dims.toml"))
        .unwrap_or_default()
        .replace("limit = \"existing\"", "limit = \"0.01 cfs\"")
        .replace("limits = { \"2-yr\" = \"50% existing\" }", "");
    let p = dir.path().join("tight.toml");
    std::fs::write(&p, text).unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&["run", &p.to_string_lossy(), "--out", &out.to_string_lossy()]);
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("pond \"basin\"")
            && err.contains("no value from")
            && err.contains("fails at every size")
            && err.contains("outfall")
            && err.contains("2-yr"),
        "{err}"
    );
    assert!(!err.contains("inf"), "{err}");
    let s: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.join("summary.json")).unwrap_or_default(),
    )
    .unwrap_or_default();
    assert!(
        s["sized"]
            .as_array()
            .is_some_and(|a| a.iter().any(|z| z["feasible"] == false))
    );
}

#[test]
fn the_sized_scenario_is_valid_toml_for_a_path_with_a_combining_accent() {
    // "Ville" + U+0301 COMBINING ACUTE ACCENT (a decomposed "é", as macOS
    // writes file names): debug formatting wrote it as `\u{301}`, which is
    // not TOML. The path must come back as written and the copy must run.
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let site = dir.path().join("Ville\u{301}");
    std::fs::create_dir(&site).unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(
        site.join("inflow \"a\".csv"),
        "time_h,flow\n0,0\n1,0.5\n2,0\n",
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let text = std::fs::read_to_string(data("sizing-closed-form.toml")).unwrap_or_default()
        + "\n[[inflow]]\nname = \"offsite\"\ncondition = \"proposed\"\nto = \"tank\"\nfile = 'inflow \"a\".csv'\n";
    let sc = site.join("site.toml");
    std::fs::write(&sc, text).unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&[
        "run",
        &sc.to_string_lossy(),
        "--out",
        &out.to_string_lossy(),
    ]);
    assert!(
        matches!(o.status.code(), Some(0 | 1)),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let sized = std::fs::read_to_string(out.join("sized-scenario.toml")).unwrap_or_default();
    let parsed: toml::Table = toml::from_str(&sized).unwrap_or_else(|e| panic!("{e}\n{sized}"));
    let file = parsed["inflow"][0]["file"].as_str().unwrap_or("");
    assert_eq!(file, "../Ville\u{301}/inflow \"a\".csv");
    // The copy runs from the results folder and finds the inflow.
    let o = runnel(&["check", &out.join("sized-scenario.toml").to_string_lossy()]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
}

/// Runs `text` as a scenario in a fresh folder; returns (exit code, summary, stdout, stderr).
fn run_text(text: &str) -> (i32, serde_json::Value, String, String) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("s.toml");
    std::fs::write(&p, text).unwrap_or_else(|e| panic!("{e}"));
    let out = dir.path().join("out");
    let o = runnel(&["run", &p.to_string_lossy(), "--out", &out.to_string_lossy()]);
    let s: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(out.join("summary.json")).unwrap_or_default(),
    )
    .unwrap_or_default();
    (
        o.status.code().unwrap_or(-1),
        s,
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn the_sized_answer_does_not_depend_on_the_range_maximum() {
    // The smallest orifice overtops the pond, so the limit is met only at
    // larger openings; the largest that meets it must be found whatever the
    // range's maximum. Tolerance: values are solved to 0.05 % (README,
    // Conventions: Sizing), so two answers agree within 0.1 %.
    let base = std::fs::read_to_string(data("sizing-overtops.toml")).unwrap_or_default();
    let mut found = Vec::new();
    for max in ["48 in", "100 ft", "1000 ft"] {
        let text = base.replace("max = \"48 in\"", &format!("max = \"{max}\""));
        assert!(text.contains(max));
        let (code, s, out, err) = run_text(&text);
        assert_eq!(code, 0, "max {max}: {out}{err}");
        assert_eq!(s["sized"][0]["feasible"], true, "max {max}");
        assert_eq!(s["all_pass"], true, "max {max}");
        found.push(num(&s["sized"][0]["value"]));
    }
    for v in &found {
        assert!((v - found[0]).abs() <= 0.001 * found[0], "{found:?}");
    }
    // The answer is maximal: one increment (0.5 in) more breaks the limit
    // (checked on a fixed diameter).
    let bigger = base.replace(
        "diameter = { min = \"2 in\", max = \"48 in\" }",
        &format!("diameter = \"{} ft\"", found[0] + 0.5 / 12.0),
    );
    let (code, s, _, _) = run_text(&bigger);
    assert_eq!(code, 1, "{s}");
}

#[test]
fn sizing_that_cannot_succeed_names_the_limit_and_why() {
    // The baseline's CN 60 sheds no runoff from a 1-in storm (Ia = 0.2 S =
    // 1.33 in > P; TR-55 (1986) eq. 2-1 to 2-4), so "existing" is a limit of
    // 0 cfs that no orifice can meet while the proposed roofs shed runoff.
    let text = std::fs::read_to_string(data("sizing-two-dims.toml"))
        .unwrap_or_default()
        .replace(
            "[[storm]]\nname = \"2-yr\"",
            "[[storm]]\nname = \"1-in\"\npattern = \"nrcs-type-ii\"\ndepth = \"1 in\"\n[[storm]]\nname = \"2-yr\"",
        )
        .replace("cn = 65", "cn = 60")
        .replace("cn = 88", "cn = 98");
    assert!(text.contains("1-in"));
    let (code, s, out, err) = run_text(&text);
    assert_eq!(code, 1, "{out}{err}");
    let all = format!("{out}{err}");
    assert!(
        all.contains("point \"outfall\" peak (proposed) in 1-in")
            && all.contains("the existing condition sheds no runoff to point \"outfall\" in 1-in, so its limit \"existing\" is 0 cfs")
            && all.contains("fails at every size"),
        "{all}"
    );
    assert!(!all.contains("inf %") && !all.contains("-inf"), "{all}");
    let z = &s["sized"][0];
    assert_eq!(z["feasible"], false);
    assert!(
        z["reason"]
            .as_str()
            .is_some_and(|r| r.contains("sheds no runoff"))
    );
    assert!(z["margin"].is_null());
}
