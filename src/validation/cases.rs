//! The list of published cases. Each group is one published table or worked example; its
//! data are written here once, with the source beside them.

use super::Case;
use crate::methods::cover::{Soil, lookup, shallow_velocity_coefficient, sheet_flow_n};
use crate::methods::graphical_peak::pond_factor;
use crate::methods::moisture::{MoistureClass, classify_antecedent, cn_dry, cn_wet};
use crate::methods::runoff::{Lambda, cn_from_retention_in, retention_in, runoff_depth_in};
use crate::methods::stats::frequency_factor;
use crate::methods::unit_hydrograph::gamma_prf;

/// TR-55 (1986) Table 2-1 (transcribed): (P in, CN, Q in), rounded to 0.01 in.
pub const TR55_TABLE_2_1: &[(f64, f64, f64)] = &[
    (1.0, 80.0, 0.08),
    (1.0, 95.0, 0.56),
    (1.0, 98.0, 0.79),
    (1.2, 90.0, 0.46),
    (1.4, 75.0, 0.13),
    (1.6, 85.0, 0.52),
    (1.8, 60.0, 0.03),
    (2.0, 70.0, 0.24),
    (2.0, 98.0, 1.77),
    (2.5, 50.0, 0.02),
    (2.5, 80.0, 0.89),
    (3.0, 45.0, 0.02),
    (3.0, 65.0, 0.51),
    (3.0, 90.0, 1.98),
    (3.5, 55.0, 0.35),
    (3.5, 85.0, 2.02),
    (4.0, 40.0, 0.06),
    (4.0, 75.0, 1.67),
    (4.5, 60.0, 1.02),
    (4.5, 95.0, 3.92),
    (5.0, 50.0, 0.69),
    (5.0, 80.0, 2.89),
    (6.0, 45.0, 0.80),
    (6.0, 70.0, 2.81),
    (7.0, 60.0, 2.60),
    (7.0, 90.0, 5.82),
    (8.0, 55.0, 2.78),
    (9.0, 65.0, 4.72),
    (10.0, 40.0, 2.23),
    (11.0, 85.0, 9.13),
    (12.0, 50.0, 5.00),
    (13.0, 75.0, 9.71),
    (14.0, 95.0, 13.39),
    (15.0, 40.0, 5.33),
    (15.0, 98.0, 14.76),
];

/// TR-55 (1986) Table 4-1 (transcribed): (CN, Ia in).
pub const TR55_TABLE_4_1: &[(f64, f64)] = &[
    (40.0, 3.000),
    (60.0, 1.333),
    (75.0, 0.667),
    (90.0, 0.222),
    (98.0, 0.041),
];

/// Hawkins et al. (2002) S0.05 = 1.33 S0.20^1.15 (from memory, corroborated); CN values
/// computed from it in the reference file, section 6: (CN at Ia = 0.2 S, CN at 0.05 S).
pub const HAWKINS_2002: &[(f64, f64)] = &[
    (60.0, 45.9),
    (70.0, 58.5),
    (80.0, 72.4),
    (90.0, 86.9),
    (98.0, 97.9),
];

/// TR-55 (1986) Table 2-2a to 2-2d (transcribed): (cover key, soil group, CN, table).
pub const TR55_TABLE_2_2: &[(&str, Soil, f64, &str)] = &[
    ("open-space-fair", Soil::C, 79.0, "2-2a"),
    ("impervious", Soil::A, 98.0, "2-2a"),
    ("street-gravel", Soil::D, 91.0, "2-2a"),
    ("desert-landscape-artificial", Soil::B, 96.0, "2-2a"),
    ("residential-quarter-acre", Soil::B, 75.0, "2-2a"),
    ("newly-graded", Soil::B, 86.0, "2-2a"),
    ("commercial", Soil::D, 95.0, "2-2a"),
    ("fallow-bare", Soil::A, 77.0, "2-2b"),
    (
        "row-crops-contoured-terraced-residue-good",
        Soil::D,
        80.0,
        "2-2b",
    ),
    ("small-grain-straight-residue-good", Soil::B, 72.0, "2-2b"),
    ("legumes-contoured-good", Soil::A, 55.0, "2-2b"),
    ("meadow", Soil::B, 58.0, "2-2c"),
    ("woods-grass-fair", Soil::C, 76.0, "2-2c"),
    ("farmstead", Soil::D, 86.0, "2-2c"),
    ("pasture-good", Soil::A, 39.0, "2-2c"),
    ("brush-good", Soil::A, 30.0, "2-2c note 4"),
    ("woods-good", Soil::A, 30.0, "2-2c note 4"),
    ("arid-pinyon-juniper-fair", Soil::C, 73.0, "2-2d"),
    ("arid-desert-shrub-good", Soil::A, 49.0, "2-2d"),
    ("arid-herbaceous-poor", Soil::D, 93.0, "2-2d"),
    ("arid-oak-aspen-good", Soil::B, 30.0, "2-2d"),
];

/// TR-55 (1986) Table 3-1 (transcribed): (sheet-flow surface, Manning n).
pub const TR55_TABLE_3_1: &[(&str, f64)] = &[
    ("smooth", 0.011),
    ("fallow", 0.05),
    ("cultivated-light-residue", 0.06),
    ("cultivated-heavy-residue", 0.17),
    ("grass-short-prairie", 0.15),
    ("grass-dense", 0.24),
    ("grass-bermuda", 0.41),
    ("range", 0.13),
    ("woods-light-underbrush", 0.40),
    ("woods-dense-underbrush", 0.80),
];

/// NEH 630 ch. 16 Table 16-5 (transcribed): (gamma shape m, peak rate factor).
pub const NEH630_TABLE_16_5: &[(f64, f64)] = &[
    (0.26, 101.0),
    (1.0, 238.0),
    (2.0, 349.0),
    (3.0, 433.0),
    (3.7, 484.0),
    (4.0, 504.0),
    (5.0, 566.0),
];

/// TR-55 (1986) Table 4-2 (transcribed): (pond and swamp area %, Fp).
pub const TR55_TABLE_4_2: &[(f64, f64)] = &[
    (0.0, 1.0),
    (0.2, 0.97),
    (1.0, 0.87),
    (3.0, 0.75),
    (5.0, 0.72),
];

/// Exceedance probabilities of the columns of [`B17B_FREQUENCY_FACTORS`].
pub const B17B_EXCEEDANCE: [f64; 8] = [0.99, 0.5, 0.2, 0.1, 0.04, 0.02, 0.01, 0.005];

/// Bulletin 17B frequency factors via Bedient, Huber & Vieux Table 3-4: (skew, K at each
/// exceedance of [`B17B_EXCEEDANCE`]), to three decimals.
pub const B17B_FREQUENCY_FACTORS: [(f64, [f64; 8]); 9] = [
    (
        3.0,
        [-0.667, -0.396, 0.420, 1.180, 2.278, 3.152, 4.051, 4.970],
    ),
    (
        2.0,
        [-0.990, -0.307, 0.609, 1.302, 2.219, 2.912, 3.605, 4.298],
    ),
    (
        1.0,
        [-1.588, -0.164, 0.758, 1.340, 2.043, 2.542, 3.022, 3.489],
    ),
    (
        0.5,
        [-1.955, -0.083, 0.808, 1.323, 1.910, 2.311, 2.686, 3.041],
    ),
    (0.0, [-2.326, 0.0, 0.842, 1.282, 1.751, 2.054, 2.326, 2.576]),
    (
        -0.5,
        [-2.686, 0.083, 0.856, 1.216, 1.567, 1.777, 1.955, 2.108],
    ),
    (
        -1.0,
        [-3.022, 0.164, 0.852, 1.128, 1.366, 1.492, 1.588, 1.664],
    ),
    (
        -2.0,
        [-3.605, 0.307, 0.777, 0.895, 0.959, 0.980, 0.990, 0.995],
    ),
    (
        -3.0,
        [-4.051, 0.396, 0.636, 0.660, 0.666, 0.666, 0.667, 0.667],
    ),
];

pub(super) fn case(
    group: &'static str,
    source: &'static str,
    quantity: String,
    unit: &'static str,
    published: f64,
    tolerance: f64,
    compute: impl Fn() -> f64 + Send + Sync + 'static,
) -> Case {
    Case {
        group,
        source,
        quantity,
        unit,
        published,
        tolerance,
        compute: Box::new(compute),
    }
}

/// Every published case, grouped by table or example.
pub fn all() -> Vec<Case> {
    let mut out = Vec::new();
    runoff_cases(&mut out);
    cover_cases(&mut out);
    hydrograph_cases(&mut out);
    frequency_cases(&mut out);
    super::timing_cases::push_all(&mut out);
    super::hydraulics_cases::push_all(&mut out);
    super::routing_cases::push_all(&mut out);
    out
}

fn runoff_cases(out: &mut Vec<Case>) {
    for &(p, cn, q) in TR55_TABLE_2_1 {
        out.push(case(
            "tr55-table-2-1",
            "TR-55 (1986) Table 2-1 (transcribed)",
            format!("runoff Q for P = {p} in, CN {cn}"),
            "in",
            q,
            0.006,
            move || runoff_depth_in(p, retention_in(cn), 0.2),
        ));
    }
    for &(cn, ia) in TR55_TABLE_4_1 {
        out.push(case(
            "tr55-table-4-1",
            "TR-55 (1986) Table 4-1 (transcribed)",
            format!("initial abstraction Ia = 0.2 S for CN {cn}"),
            "in",
            ia,
            0.0006,
            move || 0.2 * retention_in(cn),
        ));
    }
    for &(cn20, cn05) in HAWKINS_2002 {
        out.push(case("hawkins-2002", "Hawkins et al. (2002), values of the reference file section 6 (from memory, corroborated)", format!("CN at Ia = 0.05 S for CN {cn20} at 0.2 S"), "", cn05, 0.06, move || cn_from_retention_in(Lambda::Reduced.retention_in(cn20))));
    }
    // Chow, Maidment & Mays (1988) formulas via Harper & Baker (2007) (transcribed).
    out.push(case(
        "chow-amc",
        "Chow, Maidment & Mays (1988) via Harper & Baker (2007) (transcribed)",
        "dry (AMC I) CN for CN 80".into(),
        "",
        62.687,
        0.001,
        || cn_dry(80.0),
    ));
    out.push(case(
        "chow-amc",
        "Chow, Maidment & Mays (1988) via Harper & Baker (2007) (transcribed)",
        "wet (AMC III) CN for CN 80".into(),
        "",
        90.196,
        0.001,
        || cn_wet(80.0),
    ));
    for (cn2, cn1) in HB07_TABLE_4_21_DRY {
        // The Chow formula is a different published relation; the two agree to about 2.
        out.push(case(
            "hb07-table-4-21",
            "Harper & Baker (2007) Table 4-21 after McCuen (1982) (transcribed), against the Chow dry formula",
            format!("dry (AMC I) CN for CN {cn2}"),
            "",
            cn1,
            2.0 * (1.0 - 1e-9),
            move || cn_dry(cn2),
        ));
    }
    moisture_threshold_cases(out);
}

/// Harper & Baker (2007) Table 4-21 after McCuen (1982) (transcribed): CN II
/// and its dry (AMC I) curve number.
pub const HB07_TABLE_4_21_DRY: [(f64, f64); 19] = [
    (95.0, 87.0),
    (90.0, 78.0),
    (85.0, 70.0),
    (80.0, 63.0),
    (75.0, 57.0),
    (70.0, 51.0),
    (65.0, 45.0),
    (60.0, 40.0),
    (55.0, 35.0),
    (50.0, 31.0),
    (45.0, 27.0),
    (40.0, 23.0),
    (35.0, 19.0),
    (30.0, 15.0),
    (25.0, 12.0),
    (20.0, 9.0),
    (15.0, 7.0),
    (10.0, 4.0),
    (5.0, 2.0),
];

/// Harper & Baker (2007) Table 4-20 (transcribed): (growing season?, class above the
/// threshold, threshold 5-day rain in).
pub const HB07_TABLE_4_20: [(bool, MoistureClass, f64); 4] = [
    (false, MoistureClass::Average, 0.5),
    (false, MoistureClass::Wet, 1.1),
    (true, MoistureClass::Average, 1.4),
    (true, MoistureClass::Wet, 2.1),
];

/// The 5-day depth (in) at which runnel's class changes to `class` (bisection, to 1e-12 in):
/// the lowest depth of AMC II, or the highest depth below AMC III.
fn amc_threshold_in(growing: bool, class: MoistureClass) -> f64 {
    let reached = |d: f64| match class {
        MoistureClass::Wet => classify_antecedent(d, growing) == MoistureClass::Wet,
        _ => classify_antecedent(d, growing) != MoistureClass::Dry,
    };
    let (mut lo, mut hi) = (0.0, 10.0);
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if reached(mid) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    0.5 * (lo + hi)
}

fn moisture_threshold_cases(out: &mut Vec<Case>) {
    for (growing, class, depth) in HB07_TABLE_4_20 {
        let season = if growing { "growing" } else { "dormant" };
        let edge = match class {
            MoistureClass::Wet => "upper end of AMC II",
            _ => "lower end of AMC II",
        };
        // Both ends of the AMC II range are included; a depth within 1e-9 in of a threshold
        // counts as on it (rounding of summed gauge depths), hence the tolerance.
        out.push(case(
            "hb07-table-4-20",
            "Harper & Baker (2007) Table 4-20 (transcribed)",
            format!("5-day antecedent rain at the {edge}, {season} season"),
            "in",
            depth,
            1e-8,
            move || amc_threshold_in(growing, class),
        ));
    }
}

fn cover_cases(out: &mut Vec<Case>) {
    for &(key, soil, cn, table) in TR55_TABLE_2_2 {
        let source = match table {
            "2-2a" => "TR-55 (1986) Table 2-2a (transcribed)",
            "2-2b" => "TR-55 (1986) Table 2-2b (transcribed)",
            "2-2c" => "TR-55 (1986) Table 2-2c (transcribed)",
            "2-2d" => "TR-55 (1986) Table 2-2d (transcribed)",
            _ => "TR-55 (1986) Table 2-2c note 4 (transcribed)",
        };
        out.push(case(
            "tr55-table-2-2",
            source,
            format!("CN of {key}, soil group {soil:?}"),
            "",
            cn,
            0.0,
            move || lookup(key, soil).unwrap_or(f64::NAN),
        ));
    }
    for &(name, n) in TR55_TABLE_3_1 {
        out.push(case(
            "tr55-table-3-1",
            "TR-55 (1986) Table 3-1 (transcribed)",
            format!("sheet-flow Manning n of {name}"),
            "",
            n,
            0.0,
            move || sheet_flow_n(name).unwrap_or(f64::NAN),
        ));
    }
    out.push(case(
        "tr55-appendix-f",
        "TR-55 (1986) Appendix F (transcribed)",
        "shallow-flow coefficient k, unpaved (V = k s^0.5)".into(),
        "ft/s",
        16.1345,
        0.0,
        || shallow_velocity_coefficient("unpaved").unwrap_or(f64::NAN),
    ));
    out.push(case(
        "tr55-appendix-f",
        "TR-55 (1986) Appendix F (from memory)",
        "shallow-flow coefficient k, paved (V = k s^0.5)".into(),
        "ft/s",
        20.3282,
        0.0,
        || shallow_velocity_coefficient("paved").unwrap_or(f64::NAN),
    ));
    for &(pct, fp) in TR55_TABLE_4_2 {
        out.push(case(
            "tr55-table-4-2",
            "TR-55 (1986) Table 4-2 (transcribed)",
            format!("pond and swamp factor Fp at {pct} % of the area"),
            "",
            fp,
            1e-12,
            move || pond_factor(pct).fp,
        ));
    }
}

fn hydrograph_cases(out: &mut Vec<Case>) {
    for &(m, prf) in NEH630_TABLE_16_5 {
        // Within 0.5 % of the tabulated factor (the table's rounding).
        out.push(case(
            "neh630-table-16-5",
            "NEH 630 ch. 16 Table 16-5 (transcribed)",
            format!("peak rate factor of the gamma shape m = {m}"),
            "",
            prf,
            0.005 * prf,
            move || gamma_prf(m),
        ));
    }
}

fn frequency_cases(out: &mut Vec<Case>) {
    for (cs, ks) in B17B_FREQUENCY_FACTORS {
        for (pe, k) in B17B_EXCEEDANCE.into_iter().zip(ks) {
            out.push(case(
                "b17b-frequency-factors",
                "Bulletin 17B frequency factors via Bedient, Huber & Vieux Table 3-4",
                format!("frequency factor K, skew {cs}, exceedance {pe}"),
                "",
                k,
                0.002,
                move || frequency_factor(cs, 1.0 - pe),
            ));
        }
    }
    // (skew, non-exceedance probability, K)
    for (cs, p, k) in [(1.0, 0.99, 3.023), (-0.5, 0.99, 1.955), (-1.0, 0.5, 0.164)] {
        out.push(case(
            "bhv-problem-3-12",
            "Bedient, Huber & Vieux Problem 3.12, exact K (values [C] in the reference file, matching BHV Table 3-4)",
            format!("frequency factor K, skew {cs}, non-exceedance {p}"),
            "",
            k,
            5e-4,
            move || frequency_factor(cs, p),
        ));
    }
}
