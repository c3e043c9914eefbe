//! Issue 15 end to end: nested storms from local depths, catchments timed by
//! a given lag or the NRCS watershed-lag equation, the NEH 630 shallow-flow
//! surfaces, and the tabulation of every storm named in the reports
//! (`tests/data/nested-lag.toml`, an invented site).

mod common;
use common::*;

fn storm<'a>(s: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    s["storms"]
        .as_array()
        .and_then(|a| a.iter().find(|x| x["name"] == name))
        .unwrap_or_else(|| panic!("no storm {name}"))
}

fn catchment<'a>(s: &'a serde_json::Value, name: &str) -> &'a serde_json::Value {
    s["catchments"]
        .as_array()
        .and_then(|a| a.iter().find(|x| x["name"] == name))
        .unwrap_or_else(|| panic!("no catchment {name}"))
}

#[test]
fn nested_storms_hold_their_depths_and_name_what_they_interpolated() {
    // alternating-block method, Chow, Maidment & Mays (1988) section 14.4: the
    // storm's depth is the table's longest duration's; with peak_at = "1.5 h" of a
    // 6-h storm the peak block is the one holding 1.5 h
    let (code, s, dir) = run_scenario(&data("nested-lag.toml"));
    assert_eq!(code, 0);
    let full = storm(&s, "local 10-yr");
    assert_eq!(full["pattern"], "nested");
    assert!((num(&full["depth"]) - 4.3).abs() < 1e-12);
    assert!((num(&full["duration_h"]) - 24.0).abs() < 1e-12);
    assert!((num(&full["peak_at"]) - 0.5).abs() < 1e-12);
    let note = full["interpolated"].as_str().unwrap_or_default();
    // 1-min step: 1440 blocks; 5, 15, 60, 360, 1440 min from the table; 1-4 min
    // below the first duration; the other 1431 interpolated log-log
    assert!(
        note.starts_with("1440 blocks of 1 min: 5 durations from the table"),
        "{note}"
    );
    assert!(note.contains("1431 interpolated log-log"), "{note}");
    assert!(
        note.contains("4 shorter than the first given duration"),
        "{note}"
    );
    let early = storm(&s, "local 10-yr early");
    assert!((num(&early["peak_at"]) - 0.25).abs() < 1e-12);
    assert!((num(&early["depth"]) - 2.9).abs() < 1e-12);
    // the storm's rain sums to its depth and peaks at 1.5 h (the storm CSV)
    let csv = std::fs::read_to_string(dir.path().join("out/storm-local-10-yr-early.csv"))
        .unwrap_or_default();
    let mut rain = Vec::new();
    for line in csv.lines().skip(1) {
        let mut f = line.split(',');
        let t: f64 = f.next().and_then(|x| x.parse().ok()).unwrap_or(f64::NAN);
        let r: f64 = f.next().and_then(|x| x.parse().ok()).unwrap_or(f64::NAN);
        rain.push((t, r));
    }
    // (the CSV rounds its values; the event table carries the exact total)
    let total = num(&event(&s, "local 10-yr early", "existing", "swale lot")["rain_depth"]);
    assert!((total - 2.9).abs() < 1e-9, "{total}");
    let max = rain.iter().fold(0.0f64, |m, r| m.max(r.1));
    // the row at time t holds the rain of the step ending at t: the peak block
    // [1.5 h, 1.5 h + 1 min) ends at 1.5167 h (the five 1-minute blocks within the
    // first given duration, 5 min, tie at its intensity: 0.48 in / 5 = 0.096 in)
    let at = rain
        .iter()
        .find(|r| (r.0 - (1.5 + 1.0 / 60.0)).abs() < 1e-3)
        .map(|r| r.1)
        .unwrap_or(f64::NAN);
    assert!(
        (at - max).abs() < 1e-12 && (max - 0.096).abs() < 1e-4,
        "{at} {max}"
    );
    assert!(
        storm(&s, "type II")["tabulation"]
            .as_str()
            .is_some_and(|t| t.contains("Chow, Maidment & Mays (1988) Table 14.4.1")
                && t.contains("monotone cubic"))
    );
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap_or_default();
    assert!(md.contains("## Design storms"));
    assert!(md.contains("alternating-block method"));
}

#[test]
fn lag_inputs_are_used_and_reported() {
    // Bedient, Huber & Vieux (5th ed.) Example 2-6 (eq. 2-18, after SCS): 26,400 ft,
    // 1.9 %, CN 78 -> lag 3.36 h; a given lag is used as given; Tc = lag / 0.6
    let (_, s, _d) = run_scenario(&data("nested-lag.toml"));
    let upper = catchment(&s, "upper field");
    assert_eq!(upper["timing"], "watershed_lag");
    assert!((num(&upper["lag_h"]) - 3.36).abs() < 0.005);
    assert!((num(&upper["tc_h"]) - num(&upper["lag_h"]) / 0.6).abs() < 1e-12);
    assert!((num(&upper["watershed_lag"]["slope_pct"]) - 1.9).abs() < 1e-9);
    let gauged = catchment(&s, "gauged lot");
    assert_eq!(gauged["timing"], "lag_time");
    assert!((num(&gauged["lag_h"]) - 0.3).abs() < 1e-12);
    // NEH 630 ch. 15 Table 15-3 (via HEC-22 2009 Table 3-3, transcribed): grassed
    // waterway k = 15.0 ft/s, so 1.5 ft/s at 1 % and 900 ft in 600 s
    let swale = catchment(&s, "swale lot");
    assert_eq!(swale["timing"], "flow path");
    assert!((num(&swale["flow_path"][0]["velocity"]) - 1.5).abs() < 1e-12);
    assert!((num(&swale["tc_h"]) - 600.0 / 3600.0).abs() < 1e-12);
    // the unit-hydrograph peak both ways: 484 A Q / Tp (NEH 630 ch. 16) and sampled
    let f = num(&gauged["uh_formula_peak_per_depth"]);
    let tp = num(&gauged["tp_h"]);
    assert!((f - 484.0 * (12.0 / 640.0) / tp).abs() < 1e-9);
    assert!((num(&gauged["uh_peak_per_depth"]) - f).abs() < 0.01 * f);
}

#[test]
fn check_prints_the_timing_basis_and_both_unit_hydrograph_peaks() {
    let o = runnel(&["check", &data("nested-lag.toml").to_string_lossy()]);
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(0), "{out}");
    assert!(
        out.contains("lag by the NRCS watershed-lag equation"),
        "{out}"
    );
    assert!(out.contains("lag given (`lag_time`)"), "{out}");
    assert!(out.contains("484 A Q / Tp = "), "{out}");
    assert!(out.contains("sampled at the step"), "{out}");
}
