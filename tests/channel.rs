//! A channel element through the binary: the same catchment reaching its
//! outfall directly (existing) and through a swale routed by Muskingum
//! (proposed), in design storms and over a long record, on
//! `tests/data/channel.toml` and `tests/data/channel-record.toml`
//! (invented place and numbers).

mod common;
use common::{data, event, num, run_scenario, runnel};

#[test]
fn a_swale_lowers_and_delays_the_peak_and_keeps_the_volume() {
    let (code, s, dir) = run_scenario(&data("channel.toml"));
    assert_eq!(code, 0);
    for storm in ["10-yr", "100-yr"] {
        let direct = event(&s, storm, "existing", "outfall");
        let routed = event(&s, storm, "proposed", "outfall");
        let swale = event(&s, storm, "proposed", "east swale");
        assert_eq!(swale["kind"], "channel");
        // Muskingum storage attenuates and delays the wave (reference file
        // section 13d); with K = 40 min the peak falls by about a third and
        // comes some 40 min later
        let (qd, qr) = (num(&direct["peak_flow"]), num(&routed["peak_flow"]));
        assert!(qr < 0.8 * qd, "{storm}: {qr} against {qd}");
        let delay_h = num(&routed["peak_time_h"]) - num(&direct["peak_time_h"]);
        assert!(delay_h > 0.3 && delay_h < 0.8, "{storm}: delay {delay_h} h");
        // the channel's inflow is the catchment's hydrograph
        let cat = event(&s, storm, "proposed", "commons graded");
        assert!((num(&swale["peak_inflow"]) - num(&cat["peak_flow"])).abs() < 1e-9);
        assert!((num(&swale["inflow_volume"]) - num(&cat["volume"])).abs() < 1e-6);
        // volume kept: what left plus what is still in the reach is what
        // entered (derived: the recursion is the trapezoidal storage balance)
        let vin = num(&swale["inflow_volume"]);
        let vout = num(&swale["volume"]);
        let left = num(&swale["stored_at_end"]);
        assert!(
            (vin - vout - left).abs() < 1e-9 * vin,
            "{vin} {vout} {left}"
        );
        assert!(num(&swale["mass_balance_error"]).abs() < 1e-12);
        // the run lasts until the recession is below 0.1 % of the peak
        // (the run-length rule), so the volumes at the point agree within it
        let (vd, vr) = (num(&direct["volume"]), num(&routed["volume"]));
        assert!((vd - vr).abs() < 1e-3 * vd, "{storm}: {vd} against {vr}");
        // the split at the 2-min step: 2 K X = 16 min -> 8 sub-reaches of 5 min
        // (common practice, no published source)
        let ch = &swale["channel"];
        assert_eq!(ch["sub_reaches"], 8);
        assert_eq!(ch["sub_steps"], 1);
        assert!((num(&ch["k_h"]) - 40.0 / 60.0).abs() < 1e-12);
        assert!((num(&ch["x"]) - 0.2).abs() < 1e-12);
    }
    // the point's drained area counts the catchment above the channel
    let comps = s["comparisons"].as_array().cloned().unwrap_or_default();
    assert!(!comps.is_empty());
    for c in &comps {
        assert!((num(&c["area"]) - 14.0).abs() < 1e-9, "{c}");
    }
    assert!(
        s["warning_details"]
            .as_array()
            .is_none_or(|w| w.iter().all(|w| w["code"] != "area-mismatch"))
    );
    // the reports say what a reviewer needs
    let md = std::fs::read_to_string(dir.path().join("out/summary.md"))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(md.contains("## Channel \"east swale\""));
    assert!(md.contains("K = 40.00 min and X = 0.2, in 8 sub-reaches"));
    assert!(md.contains("peak lowered by"));
    let html = std::fs::read_to_string(dir.path().join("out/report.html"))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(html.contains("Channel &quot;east swale&quot;"));
    let csv = std::fs::read_to_string(dir.path().join("out/storm-10-yr.csv"))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(
        csv.lines()
            .next()
            .is_some_and(|h| h.contains("proposed/east swale flow [cfs]"))
    );
}

#[test]
fn check_lists_the_channel() {
    let o = runnel(&["check", &data("channel.toml").to_string_lossy()]);
    assert_eq!(o.status.code(), Some(0));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("Channel \"east swale\" -> outfall"), "{text}");
    assert!(text.contains("8 sub-reaches of K/8 = 5.000 min"), "{text}");
    assert!(
        text.contains("10-yr (proposed): peak in 44.41 cfs"),
        "{text}"
    );
}

#[test]
fn a_channel_nothing_drains_to_is_warned_of() {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let text = std::fs::read_to_string(data("channel.toml")).unwrap_or_else(|e| panic!("{e}"));
    let text = text.replace("to = \"east swale\"", "to = \"outfall\"");
    let path = dir.path().join("idle.toml");
    std::fs::write(&path, text).unwrap_or_else(|e| panic!("{e}"));
    let (code, s, _out) = run_scenario(&path);
    assert_eq!(code, 0);
    let codes = s["warning_details"].as_array().cloned().unwrap_or_default();
    assert!(
        codes.iter().any(|w| w["code"] == "channel-no-inflow"),
        "{codes:?}"
    );
    let w = s["warnings"].as_array().cloned().unwrap_or_default();
    assert!(
        w.iter().any(|w| w.as_str().is_some_and(
            |m| m.contains("channel \"east swale\": nothing in condition \"proposed\"")
        )),
        "{w:?}"
    );
    let swale = event(&s, "10-yr", "proposed", "east swale");
    assert_eq!(num(&swale["peak_flow"]), 0.0);
}

#[test]
fn a_long_record_passes_through_the_channel() {
    let (code, s, dir) = run_scenario(&data("channel-record.toml"));
    assert_eq!(code, 0);
    // the split at the record's step (K 2 h, X 0.2, 10 min: 2KX = 48 min ->
    // 5 sub-reaches of 24 min; common practice, no published source), and
    // no storm table in a study without storms
    let md = std::fs::read_to_string(dir.path().join("out/summary.md"))
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(
        md.contains("Record \"twenty years\": Muskingum routing"),
        "{md}"
    );
    assert!(md.contains("in 5 sub-reaches of K/5 = 24.00 min"), "{md}");
    assert!(!md.contains("| storm | condition | peak in"), "{md}");
    let entry = |condition: &str, element: &str| {
        s["records"]
            .as_array()
            .and_then(|a| {
                a.iter()
                    .find(|e| e["condition"] == condition && e["element"] == element)
            })
            .cloned()
            .unwrap_or_else(|| panic!("no record entry {condition}/{element}"))
    };
    let swale = entry("proposed", "east swale");
    assert_eq!(swale["kind"], "channel");
    let cat = entry("proposed", "commons graded");
    let direct = entry("existing", "outfall");
    let routed = entry("proposed", "outfall");
    // same statistics as every element
    for key in ["annual_peaks", "frequency", "flow_duration"] {
        assert!(
            swale[key].as_array().is_some_and(|a| !a.is_empty()),
            "{key}"
        );
    }
    // volume kept over 20 years (the record ends dry, the reach empty)
    let (vc, vs) = (num(&cat["volume"]), num(&swale["volume"]));
    assert!((vc - vs).abs() < 1e-9 * vc, "{vc} {vs}");
    // every annual peak lowered, never raised (non-negative coefficients)
    assert!(num(&routed["peak_flow"]) < num(&direct["peak_flow"]));
    let peaks = |e: &serde_json::Value| -> Vec<f64> {
        e["annual_peaks"]
            .as_array()
            .map(|a| a.iter().map(|y| num(&y["peak_flow"])).collect())
            .unwrap_or_default()
    };
    for (d, r) in peaks(&direct).iter().zip(peaks(&routed)) {
        assert!(r <= *d + 1e-12, "{r} > {d}");
    }
}

#[test]
fn a_reach_short_for_the_step_is_routed_at_sub_steps() {
    // common practice, no published source: when the step is longer than
    // 2K(1 - X) the reach is routed at sub-steps (here K = 3 min, X = 0.1 at
    // a 10-min step: 2K(1 - X) = 5.4 min -> 2 sub-steps of 5 min)
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let text = std::fs::read_to_string(data("channel.toml")).unwrap_or_else(|e| panic!("{e}"));
    let text = text
        .replace("step = \"2 min\"", "step = \"10 min\"")
        .replace("tc = \"18 min\"", "tc = \"1.5 h\"")
        .replace("k = \"40 min\"", "k = \"3 min\"")
        .replace("x = 0.2", "x = 0.1");
    let path = dir.path().join("short.toml");
    std::fs::write(&path, text).unwrap_or_else(|e| panic!("{e}"));
    let (code, s, _out) = run_scenario(&path);
    assert_eq!(code, 0);
    let swale = event(&s, "10-yr", "proposed", "east swale");
    assert_eq!(swale["channel"]["sub_reaches"], 1);
    assert_eq!(swale["channel"]["sub_steps"], 2);
    assert!((num(&swale["channel"]["sub_step_h"]) - 5.0 / 60.0).abs() < 1e-12);
    // a smooth hydrograph: the outflow sampled at the step keeps the volume
    // within the 0.1 % the warning allows (derived: exact on the sub-step grid)
    assert!(num(&swale["mass_balance_error"]).abs() < 1e-3);
    let codes = s["warning_details"].as_array().cloned().unwrap_or_default();
    assert!(
        codes.iter().all(|w| w["code"] != "channel-mass-balance"),
        "{codes:?}"
    );
    // never above the peak inflow, even when the reach barely attenuates
    assert!(num(&swale["peak_flow"]) <= num(&swale["peak_inflow"]));
}

#[test]
fn the_channel_numbers_in_report_html_are_those_of_summary_json() {
    // runnel's own rule: a number the report shows from summary.json is
    // tagged with its path and rounds from the JSON value
    let (code, s, dir) = run_scenario(&data("channel.toml"));
    assert_eq!(code, 0);
    let html = std::fs::read_to_string(dir.path().join("out/report.html"))
        .unwrap_or_else(|e| panic!("{e}"));
    let mut checked = 0;
    let mut rest = html.as_str();
    while let Some(a) = rest.find("data-json=\"") {
        let after = &rest[a + 11..];
        let Some(q) = after.find('"') else { break };
        let path = &after[..q];
        let Some(gt) = after[q..].find('>') else {
            break;
        };
        let text_start = &after[q + gt + 1..];
        let Some(end) = text_start.find('<') else {
            break;
        };
        let text = text_start[..end].trim();
        rest = &text_start[end..];
        if !(path.contains("inflow") || path.contains("events.")) {
            continue;
        }
        let want = path
            .split('.')
            .try_fold(&s, |v, k| match k.parse::<usize>() {
                Ok(i) => v.get(i),
                Err(_) => v.get(k),
            })
            .and_then(serde_json::Value::as_f64)
            .unwrap_or_else(|| panic!("{path} is not a number in summary.json"));
        let shown: f64 = text
            .parse()
            .unwrap_or_else(|e| panic!("{path}: {text}: {e}"));
        let decimals = text.split('.').nth(1).map_or(0, str::len) as i32;
        assert!(
            (shown - want).abs() <= 0.5 * 10f64.powi(-decimals) * (1.0 + 1e-9),
            "{path}: {text} against {want}"
        );
        checked += 1;
    }
    // the channel's rows: peak in and its time, volume in, per storm
    assert!(html.contains("inflow_volume"));
    assert!(checked >= 10, "{checked}");
}
