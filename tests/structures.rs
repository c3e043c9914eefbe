//! Outlet structures end to end (issue 13) on tests/data/structures.toml:
//! a riser draining through a barrel too small for it, the same under
//! tailwater, a perforated riser with identical orifices and a spillway
//! whose coefficient varies with head, and the clogged-outlet checks.

mod common;
use common::{data, event, num, run_scenario};
use serde_json::Value;

fn structure<'a>(s: &'a Value, pond: &str) -> &'a Value {
    s["structures"]
        .as_array()
        .and_then(|a| a.iter().find(|x| x["pond"] == pond))
        .unwrap_or_else(|| panic!("no structure for {pond}"))
}

fn row_at(st: &Value, stage: f64) -> &Value {
    st["rating"]
        .as_array()
        .and_then(|a| a.iter().find(|r| (num(&r["stage"]) - stage).abs() < 1e-9))
        .unwrap_or_else(|| panic!("no rating row at {stage}"))
}

#[test]
fn a_riser_through_a_too_small_barrel_is_limited_by_the_barrel_and_the_pond_rises() {
    // FHWA HDS-5 (2012): the structure passes the lesser of its openings and the barrel.
    let (code, s, _dir) = run_scenario(&data("structures.toml"));
    assert_eq!(code, 1, "one clogged-outlet check fails on purpose");
    let barrel = structure(&s, "barrel");
    let free = structure(&s, "free");
    let rows = barrel["rating"].as_array().unwrap();
    // below the stage where the barrel fills, the openings govern; from there up, the barrel
    let first_barrel = rows
        .iter()
        .position(|r| r["governs"][0] != "openings" && r["governs"][0] != "dry")
        .expect("the barrel governs somewhere");
    let switch = num(&rows[first_barrel]["stage"]);
    assert!(
        switch > 102.0 && switch < 103.0,
        "barrel takes over at {switch}"
    );
    for r in &rows[first_barrel..] {
        assert!(
            r["governs"][0] == "inlet" || r["governs"][0] == "outlet",
            "{r}"
        );
        let h = num(&r["stage"]);
        if let Some(f) = free["rating"]
            .as_array()
            .unwrap()
            .iter()
            .find(|x| num(&x["stage"]) == h)
        {
            assert!(num(&r["outflow"]) < num(&f["outflow"]), "stage {h}");
        }
    }
    for r in &rows[..first_barrel] {
        let h = num(&r["stage"]);
        if let Some(f) = free["rating"]
            .as_array()
            .unwrap()
            .iter()
            .find(|x| num(&x["stage"]) == h)
        {
            let q = num(&f["outflow"]);
            assert!(
                (num(&r["outflow"]) - q).abs() <= 1e-9 * (1.0 + q),
                "stage {h}"
            );
        }
    }
    // the routed peak stage rises against free outfall
    let free_peak = num(&event(&s, "design", "existing", "free")["peak_stage"]);
    let barrel_peak = num(&event(&s, "design", "existing", "barrel")["peak_stage"]);
    assert!(
        barrel_peak > free_peak + 0.5,
        "{barrel_peak} vs {free_peak}"
    );
    // the rating is continuous where the barrel takes over (0.1-ft rows)
    for w in rows.windows(2) {
        let (a, b) = (num(&w[0]["outflow"]), num(&w[1]["outflow"]));
        assert!(b >= a - 1e-9 && b - a < 6.0, "{} -> {}", w[0], w[1]);
    }
}

#[test]
fn tailwater_above_the_barrel_outlet_raises_the_pond_and_is_reported() {
    // FHWA HDS-5 (2012) outlet control sees the tailwater: ho = max(TW, (dc + D)/2).
    let (_, s, _dir) = run_scenario(&data("structures.toml"));
    let barrel_peak = num(&event(&s, "design", "existing", "barrel")["peak_stage"]);
    let tw_peak = num(&event(&s, "design", "existing", "tailwater")["peak_stage"]);
    assert!(tw_peak > barrel_peak, "{tw_peak} vs {barrel_peak}");
    let peak = s["device_peaks"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["pond"] == "tailwater")
        .unwrap();
    assert_eq!(peak["tailwater_acts"], true);
    assert_eq!(peak["governs"][0], "outlet");
    assert_eq!(num(&peak["tailwater"]), 101.5);
    // no flow below the tailwater: the rating is zero up to 101.5 ft
    let st = structure(&s, "tailwater");
    assert_eq!(num(&row_at(st, 101.5)["outflow"]), 0.0);
    assert!(num(&row_at(st, 101.6)["outflow"]) > 0.0);
    // the start is said
    let codes: Vec<&str> = s["warning_details"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|w| w["code"].as_str())
        .collect();
    assert!(codes.contains(&"tailwater-above-start"), "{codes:?}");
}

#[test]
fn perforated_riser_counted_orifices_and_varying_spillway_match_hand_values() {
    // Perforated riser, continuous-slot form (derived, reference file section 13c),
    // hand computation: 40 holes of 1 in, Ap = 40 pi (1/12)^2/4 = 0.218166 ft2, Hs 2 ft,
    // Cp 0.61, H 1 ft: Q = 0.61 (0.218166/2)(2/3) sqrt(2*32.174) (1) = 0.35585 cfs.
    let (_, s, _dir) = run_scenario(&data("structures.toml"));
    let st = structure(&s, "devices");
    let r = row_at(st, 101.0);
    assert!((num(&r["flows"][0]) - 0.35585).abs() < 5e-5, "{r}");
    // Orifice equation (Bedient, Huber & Vieux ch. 4), 3 x 4-in at 101.5, stage 102:
    // Q = 3 * 0.61 * 0.0872665 * sqrt(2*32.174*(0.5 - 1/6)) = 0.73961 cfs.
    let r = row_at(st, 102.0);
    assert!((num(&r["flows"][1]) - 0.73961).abs() < 5e-5, "{r}");
    // Broad-crested weir Q = C L H^1.5 (from memory) with C(1 ft) = 2.9 from the table:
    // 2.9 * 6 * 1 = 17.4 cfs at 104.0.
    let r = row_at(st, 104.0);
    assert!((num(&r["flows"][2]) - 17.4).abs() < 1e-9, "{r}");
    assert_eq!(st["devices"][1]["count"], 3);
}

#[test]
fn every_new_device_routes_with_a_mass_balance_under_a_tenth_of_a_percent() {
    // Continuity of storage-indication routing (Bedient, Huber & Vieux eq. 4-13).
    let (_, s, _dir) = run_scenario(&data("structures.toml"));
    for pond in ["free", "barrel", "tailwater", "devices"] {
        let e = event(&s, "design", "existing", pond);
        assert!(num(&e["mass_balance_error"]).abs() < 1e-3, "{pond}: {e}");
    }
    for f in s["failure_checks"].as_array().unwrap() {
        assert!(num(&f["mass_balance_error"]).abs() < 1e-3, "{f}");
    }
}

#[test]
fn clogged_outlet_checks_report_peak_freeboard_and_verdict_and_count_in_the_exit_code() {
    // common practice, no published source: the check routes the storm with the named
    // opening blocked from the given start and compares the freeboard left.
    let (code, s, dir) = run_scenario(&data("structures.toml"));
    assert_eq!(code, 1);
    assert_eq!(s["all_pass"], false);
    let f = s["failure_checks"].as_array().unwrap();
    assert_eq!(f.len(), 2);
    assert_eq!(f[0]["pass"], true);
    assert_eq!(f[0]["start_kind"], "full");
    assert_eq!(
        num(&f[0]["start"]),
        102.0,
        "full: at the riser crest, the lowest open device"
    );
    assert_eq!(f[1]["pass"], false);
    assert_eq!(num(&f[1]["start"]), 101.0);
    for c in f {
        let fb = num(&c["top"]) - num(&c["peak_stage"]);
        assert!((num(&c["freeboard"]) - fb).abs() < 1e-12);
        assert_eq!(c["blocked"][0], "low-flow orifice");
    }
    // blocking the low-flow orifice from a fuller start raises the peak
    let normal = num(&event(&s, "design", "existing", "barrel")["peak_stage"]);
    assert!(num(&f[0]["peak_stage"]) > normal);
    let md = std::fs::read_to_string(dir.path().join("out/summary.md")).unwrap();
    assert!(md.contains("Clogged-outlet checks"));
    assert!(md.contains("**FAILS**"));
}
