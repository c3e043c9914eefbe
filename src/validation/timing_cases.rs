//! Published cases of rainfall patterns, travel time, peaks, unit-hydrograph peaks and
//! detention storage estimates (part of the one list, [`super::cases::all`]).

use super::Case;
use super::cases::case;
use crate::methods::cover::shallow_velocity_coefficient;
use crate::methods::graphical_peak::{StormType, unit_peak_csm_per_in};
use crate::methods::rainfall::NrcsType;
use crate::methods::rainfall::tables::{PATTERN_TIMES_H, TYPE_I, TYPE_IA, TYPE_II, TYPE_III};
use crate::methods::storage_estimate::{runoff_volume_ft3, storage_ratio, tr55_runoff_volume_acft};
use crate::methods::timing::{
    Section, Segment, shallow_velocity_fps, sheet_flow_time_h, time_of_concentration_h,
    watershed_lag_h,
};
use crate::methods::unit_hydrograph::{Shape, ordinates_cfs_per_in, time_to_peak_h};

/// Every case of this family.
pub fn push_all(out: &mut Vec<Case>) {
    rainfall_cases(out);
    travel_cases(out);
    peak_cases(out);
    storage_cases(out);
}

/// NEH 630 ch. 15 (2010) Table 15-3 via FHWA HEC-22 (2009) Table 3-3 (transcribed):
/// (shallow-flow surface, k of V = k s^0.5 in ft/s).
pub const NEH630_TABLE_15_3: &[(&str, f64)] = &[
    ("forest-heavy-litter", 2.5),
    ("hay-meadow", 2.5),
    ("minimum-tillage", 5.0),
    ("contour-strip-cropped", 5.0),
    ("woodland", 5.0),
    ("short-grass-pasture", 7.0),
    ("cultivated-straight-row", 9.0),
    ("nearly-bare", 10.0),
    ("alluvial-fan", 10.0),
    ("grassed-waterway", 15.0),
    ("unpaved", 16.1345),
    ("paved", 20.3282),
    ("upland-gully", 20.3282),
];

/// The ratios qo/qi of the TR-55 (1986) Table F-2 cases.
pub const TABLE_F2_RATIOS: [f64; 5] = [0.1, 0.2, 0.3, 0.5, 0.8];
/// TR-55 (1986) Table F-2 (transcribed), values computed from it: Vs/Vr at
/// [`TABLE_F2_RATIOS`] for Types II and III.
pub const TABLE_F2_TYPE_II_III: [f64; 5] = [0.5546, 0.4552, 0.3789, 0.2765, 0.1760];
/// As [`TABLE_F2_TYPE_II_III`], for Types I and IA.
pub const TABLE_F2_TYPE_I_IA: [f64; 5] = [0.5029, 0.3806, 0.2887, 0.1788, 0.1326];

fn rainfall_cases(out: &mut Vec<Case>) {
    let types: [(NrcsType, &'static [f64; 23]); 4] = [
        (NrcsType::I, &TYPE_I),
        (NrcsType::IA, &TYPE_IA),
        (NrcsType::II, &TYPE_II),
        (NrcsType::III, &TYPE_III),
    ];
    for (t, fractions) in types {
        for (&h, &f) in PATTERN_TIMES_H.iter().zip(fractions.iter()) {
            out.push(case(
                "chow-table-14-4-1",
                "Chow, Maidment & Mays (1988) Table 14.4.1 (transcribed)",
                format!("NRCS {t:?} cumulative rain fraction at {h} h"),
                "",
                f,
                0.0,
                move || t.mass_curve().fraction_at(h / 24.0),
            ));
        }
    }
}

/// The three segments of TR-55 (1986) Example 3-1.
fn example_3_1() -> [Segment; 3] {
    [
        Segment::Sheet {
            n: 0.24,
            length_ft: 100.0,
            slope: 0.01,
        },
        Segment::Shallow {
            k_fps: 16.1345,
            surface: "unpaved".into(),
            length_ft: 1400.0,
            slope: 0.01,
        },
        Segment::Channel {
            n: 0.05,
            length_ft: 7300.0,
            slope: 0.005,
            section: Section::Given {
                area_ft2: 27.0,
                perimeter_ft: 28.2,
            },
        },
    ]
}

fn travel_cases(out: &mut Vec<Case>) {
    const EX: &str = "TR-55 (1986) Example 3-1 (inputs and results from memory; arithmetic checked in the reference file)";
    // (quantity, unit, published, tolerance, segment index or 3 for Tc, velocity?)
    let rows: [(&str, &'static str, f64, f64, usize, bool); 6] = [
        (
            "sheet-flow travel time, segment AB (P2 = 3.6 in)",
            "h",
            0.30,
            0.01,
            0,
            false,
        ),
        (
            "shallow-flow velocity, segment BC",
            "ft/s",
            1.6,
            0.02,
            1,
            true,
        ),
        (
            "shallow-flow travel time, segment BC",
            "h",
            0.24,
            0.01,
            1,
            false,
        ),
        ("channel velocity, segment CD", "ft/s", 2.05, 0.01, 2, true),
        ("channel travel time, segment CD", "h", 0.99, 0.01, 2, false),
        ("time of concentration", "h", 1.53, 0.01, 3, false),
    ];
    for (quantity, unit, published, tol, i, velocity) in rows {
        out.push(case(
            "tr55-example-3-1",
            EX,
            quantity.into(),
            unit,
            published,
            tol,
            move || {
                let segments = example_3_1();
                match segments.get(i) {
                    Some(s) if velocity => s.travel(Some(3.6)).velocity_fps,
                    Some(s) => s.travel(Some(3.6)).time_h,
                    None => time_of_concentration_h(&segments, Some(3.6)),
                }
            },
        ));
    }
    out.push(case(
        "tr55-eq-3-3",
        "TR-55 (1986) eq. 3-3 (verified in the reference file), hand value",
        "sheet-flow time, n 0.15, L 100 ft, P2 3.0 in, s 0.02".into(),
        "h",
        0.1687,
        0.0005,
        || sheet_flow_time_h(0.15, 100.0, 3.0, 0.02),
    ));
    out.push(case(
        "bedient-example-2-6",
        "Bedient, Huber & Vieux (5th ed.) Example 2-6 (eq. 2-18, cited to SCS)",
        "watershed lag tp, L 26,400 ft, y 1.9 %, CN 78".into(),
        "h",
        3.36,
        0.005,
        || watershed_lag_h(26_400.0, 1.9, 78.0),
    ));
    for &(name, k) in NEH630_TABLE_15_3 {
        out.push(case(
            "neh630-table-15-3",
            "NEH 630 ch. 15 (2010) Table 15-3, checked through FHWA HEC-22 (2009) Table 3-3 (transcribed)",
            format!("shallow-flow k of {name} (V = k s^0.5; runnel's V at s = 1)"),
            "ft/s",
            k,
            1e-12,
            move || {
                shallow_velocity_coefficient(name)
                    .map_or(f64::NAN, |k| shallow_velocity_fps(k, 1.0))
            },
        ));
    }
}

fn peak_cases(out: &mut Vec<Case>) {
    const F1: &str = "TR-55 (1986) Table F-1 (transcribed); values computed from it";
    let cells: [(StormType, f64, f64, f64, f64); 4] = [
        (StormType::II, 0.1, 1.0, 357.5, 0.1),
        (StormType::III, 0.30, 0.1, 596.83, 0.01),
        (StormType::I, 0.45, 10.0, 40.85, 0.01),
        (StormType::IA, 0.20, 2.0, 67.37, 0.01),
    ];
    for (storm, r, tc, qu, tol) in cells {
        out.push(case(
            "tr55-table-f-1",
            F1,
            format!("unit peak qu, Type {storm:?}, Ia/P {r}, Tc {tc} h"),
            "csm/in",
            qu,
            tol,
            move || unit_peak_csm_per_in(storm, r, tc).qu_csm_per_in,
        ));
    }
    // Within 0.5 % (the table's area is 1.336, not 4/3, so the scaled peak sits slightly
    // off 484).
    out.push(case(
        "neh630-table-16-1",
        "NEH 630 ch.16 Table 16-1 (transcribed)",
        "peak rate factor of the standard shape (qp Tp / A, 1 mi2, lag 1 h, step 0.01 h)".into(),
        "",
        484.0,
        0.005 * 484.0,
        || {
            let (area_ac, step_h) = (640.0, 0.01);
            let tp = time_to_peak_h(step_h, 1.0);
            let u = ordinates_cfs_per_in(Shape::Standard, area_ac, tp, step_h);
            u.iter().copied().fold(0.0, f64::max) * tp / (area_ac / 640.0)
        },
    ));
}

fn storage_cases(out: &mut Vec<Case>) {
    const F2: &str = "TR-55 (1986) Table F-2 (transcribed); values computed from it";
    let pairs = [
        (StormType::II, TABLE_F2_TYPE_II_III),
        (StormType::III, TABLE_F2_TYPE_II_III),
        (StormType::I, TABLE_F2_TYPE_I_IA),
        (StormType::IA, TABLE_F2_TYPE_I_IA),
    ];
    for (storm, values) in pairs {
        for (r, vs) in TABLE_F2_RATIOS.into_iter().zip(values) {
            out.push(case(
                "tr55-table-f-2",
                F2,
                format!("storage ratio Vs/Vr, Type {storm:?}, qo/qi {r}"),
                "",
                vs,
                0.001,
                move || storage_ratio(storm, r).vs_over_vr,
            ));
        }
    }
    const VR: &str =
        "TR-55 (1986) chapter 6, Vr = 53.33 Q Am (from memory, reference file section 10)";
    out.push(case(
        "tr55-ch6-runoff-volume",
        VR,
        "runoff volume of 1 in over 1 mi2 (Q A)".into(),
        "acre-ft",
        53.33,
        0.005,
        || runoff_volume_ft3(1.0, 640.0) / 43_560.0,
    ));
    out.push(case(
        "tr55-ch6-runoff-volume",
        VR,
        "runoff volume 53.33 Q Am of 2.5 in over 0.75 mi2".into(),
        "acre-ft",
        99.99375,
        1e-9,
        || tr55_runoff_volume_acft(2.5, 0.75),
    ));
}
