//! Underground and composite pond storage and pond losses through the
//! binary: mass balance, capacity, the reports, and the drain time.

mod common;
use common::*;
use std::f64::consts::PI;

fn pond_events(s: &serde_json::Value) -> Vec<serde_json::Value> {
    s["events"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|e| e["kind"] == "pond")
        .cloned()
        .collect()
}

fn run_text(text: &str) -> (i32, serde_json::Value, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("s.toml");
    std::fs::write(&p, text).unwrap_or_else(|e| panic!("{e}"));
    let (code, s, d) = run_scenario(&p);
    drop(dir);
    (code, s, d)
}

#[test]
fn underground_storage_alone_routes_with_its_mass_balance_and_within_its_capacity() {
    // Storage-indication (Bedient, Huber & Vieux eq. 4-13): the mass balance
    // closes under 0.1 % (here to rounding); the capacity by elementary
    // geometry: 6 pipes of 4 ft x 120 ft, laid in 9000 ft2 x 5 ft of stone of
    // porosity 0.4, and a 40 x 20 x 5 ft vault.
    let (code, s, d) = run_scenario(&data("underground.toml"));
    assert_eq!(code, 0, "{s}");
    let pipes = 6.0 * 120.0 * PI * 4.0;
    let capacity = pipes + 0.4 * (9000.0 * 5.0 - pipes) + 40.0 * 20.0 * 5.0;
    let ev = pond_events(&s);
    assert_eq!(ev.len(), 2);
    for e in &ev {
        assert!(num(&e["mass_balance_error"]).abs() < 1e-3, "{e}");
        assert!(num(&e["peak_storage"]) < capacity, "{e}");
        assert!(num(&e["peak_stage"]) < 100.0, "{e}");
    }
    // a larger storm fills more of it
    assert!(num(&ev[1]["peak_storage"]) > num(&ev[0]["peak_storage"]));
    let md = std::fs::read_to_string(d.path().join("out/summary.md")).unwrap_or_default();
    assert!(
        md.contains("underground (pipe galleries by circular segment")
            && md.contains("pipe gallery: 6 x 4")
            && md.contains("the pipes laid in it are taken out of its voids"),
        "{md}"
    );
    // `check` reads it and prints its table
    let o = runnel(&["check", &data("underground.toml").to_string_lossy()]);
    assert_eq!(o.status.code(), Some(0));
}

#[test]
fn an_overfull_underground_system_spills_over_its_top_and_is_flagged() {
    // With a tiny overflow the 100-year storm fills the units: the water rises
    // over their top (the default top of underground storage alone), the
    // pond is reported overtopped (exit 1) and the mass balance still closes.
    let text = std::fs::read_to_string(data("underground.toml"))
        .unwrap_or_default()
        .replace("length = \"15 ft\"", "length = \"0.5 ft\"");
    let (code, s, _d) = run_text(&text);
    assert_eq!(code, 1, "{s}");
    let e = &pond_events(&s)[1];
    assert_eq!(e["overtopped"], true, "{e}");
    assert!(num(&e["mass_balance_error"]).abs() < 1e-3, "{e}");
}

#[test]
fn infiltration_is_a_loss_in_the_mass_balance_and_shortens_the_drain_time() {
    // The mass balance counts the infiltrated volume (under 0.1 %); without
    // infiltration more water leaves through the outlets and the pond takes
    // longer to drain (common practice, no published source).
    let base = std::fs::read_to_string(data("composite-infiltration.toml")).unwrap_or_default();
    let (code, s, d) = run_scenario(&data("composite-infiltration.toml"));
    assert_eq!(code, 0, "{s}");
    let with = &pond_events(&s)[0];
    assert!(num(&with["mass_balance_error"]).abs() < 1e-3, "{with}");
    let infiltrated = num(&with["infiltrated_volume"]);
    assert!(infiltrated > 0.0, "{with}");
    let text = base.replace("infiltration = \"0.5 in/h\"\n", "");
    assert!(!text.contains("infiltration ="));
    let (code2, s2, _d2) = run_text(&text);
    assert_eq!(code2, 0);
    let without = &pond_events(&s2)[0];
    assert!(without.get("infiltrated_volume").is_none(), "{without}");
    assert!(num(&without["volume"]) > num(&with["volume"]) + 0.5 * infiltrated);
    // without it the pool below the orifice never drains (null), with it the
    // pond empties
    assert!(
        without["drain_time_h"].is_null()
            || num(&without["drain_time_h"]) > num(&with["drain_time_h"]),
        "{without}"
    );
    assert!(with["drain_time_h"].is_number(), "{with}");
    let md = std::fs::read_to_string(d.path().join("out/summary.md")).unwrap_or_default();
    assert!(
        md.contains("Infiltration at a constant 0.5 in/h over the water surface")
            && md.contains("infiltrated [ft3]"),
        "{md}"
    );
    // twice the rate drains sooner still
    let fast = base.replace("\"0.5 in/h\"", "\"1.0 in/h\"");
    let (_, s3, _d3) = run_text(&fast);
    let faster = &pond_events(&s3)[0];
    assert!(num(&faster["drain_time_h"]) < num(&with["drain_time_h"]));
    assert!(num(&faster["mass_balance_error"]).abs() < 1e-3);
}

#[test]
fn a_long_record_counts_infiltration_and_evaporation_in_the_mass_balance() {
    // Over the invented 20-year record the basin infiltrates and evaporates;
    // both are reported and the mass balance closes under 0.1 %; water lost
    // to the ground is not reported as water that has not reached the point.
    let (code, s, d) = run_scenario(&data("infiltration-record.toml"));
    assert_eq!(code, 0, "{s}");
    let pond = s["records"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|r| r["kind"] == "pond")
        .cloned()
        .unwrap_or_default();
    assert!(num(&pond["mass_balance_error"]).abs() < 1e-3, "{pond}");
    assert!(num(&pond["infiltrated_volume"]) > 0.0, "{pond}");
    assert!(num(&pond["evaporated_volume"]) > 0.0, "{pond}");
    let warnings = s["warnings"].to_string();
    assert!(!warnings.contains("has not reached"), "{warnings}");
    let md = std::fs::read_to_string(d.path().join("out/summary.md")).unwrap_or_default();
    assert!(
        md.contains("Water the ponds lost besides their outlets"),
        "{md}"
    );
    // no evaporation: nothing evaporates, more infiltrates or leaves
    let text = std::fs::read_to_string(data("infiltration-record.toml")).unwrap_or_default();
    let none = text
        .lines()
        .filter(|l| !l.starts_with("evaporation") && !l.trim_start().starts_with("\"0.23 in\""))
        .collect::<Vec<_>>()
        .join("\n");
    assert!(!none.contains("evaporation ="));
    let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    std::fs::create_dir_all(dir.path().join("rain")).unwrap_or_else(|e| panic!("{e}"));
    std::fs::copy(
        data("rain/cross-check-20yr-15min.csv"),
        dir.path().join("rain/cross-check-20yr-15min.csv"),
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let p = dir.path().join("s.toml");
    std::fs::write(&p, none).unwrap_or_else(|e| panic!("{e}"));
    let (code2, s2, _d2) = run_scenario(&p);
    assert_eq!(code2, 0, "{s2}");
    let pond2 = s2["records"]
        .as_array()
        .into_iter()
        .flatten()
        .find(|r| r["kind"] == "pond")
        .cloned()
        .unwrap_or_default();
    assert!(
        pond2.get("evaporated_volume").is_none_or(|v| num(v) == 0.0),
        "{pond2}"
    );
    assert!(num(&pond2["mass_balance_error"]).abs() < 1e-3);
}
