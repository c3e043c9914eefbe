//! Published cases of outlet hydraulics (part of the one list, [`super::cases::all`]).

use super::Case;
use super::cases::case;
use crate::methods::hydraulics::Outlet;
use crate::methods::hydraulics::culvert::{Barrel, BarrelShape, entrance};
use crate::methods::hydraulics::submerged::{Perforation, perforated_riser_cfs, villemonte_factor};

/// Every case of this family.
pub fn push_all(out: &mut Vec<Case>) {
    culvert_cases(out);
    entrance_loss_cases(out);
    villemonte_cases(out);
    weir_cases(out);
    v_notch_cases(out);
    riser_cases(out);
}

/// The entrance-loss coefficient ke of every barrel entrance against FHWA
/// HDS-5 (2001, FHWA-NHI-01-020) Table 12, read in a public copy: each
/// entrance keyword with the table's row it corresponds to.
fn entrance_loss_cases(out: &mut Vec<Case>) {
    const HDS5_2001: &str =
        "FHWA HDS-5 (2001) Table 12, entrance loss coefficients (read in a public copy)";
    const MSMA: &str = "FHWA HDS-5 (2001) Table 12 as reproduced in MSMA 2nd ed. Design Chart 27.2 (the row is cut off in the HDS-5 copy read)";
    let rows: [(&'static str, &str, f64, &'static str); 9] = [
        (
            "concrete-square-edge",
            "concrete pipe, headwall, square-edge",
            0.5,
            HDS5_2001,
        ),
        (
            "concrete-groove-headwall",
            "concrete pipe, headwall, socket end (groove-end)",
            0.2,
            HDS5_2001,
        ),
        (
            "concrete-groove-projecting",
            "concrete pipe projecting from fill, socket end (groove-end)",
            0.2,
            HDS5_2001,
        ),
        (
            "metal-headwall",
            "corrugated metal pipe, headwall, square-edge",
            0.5,
            HDS5_2001,
        ),
        (
            "metal-mitered",
            "corrugated metal pipe mitered to conform to fill slope",
            0.7,
            HDS5_2001,
        ),
        (
            "metal-projecting",
            "corrugated metal pipe projecting from fill (no headwall)",
            0.9,
            HDS5_2001,
        ),
        (
            "box-wingwall-30-75",
            "concrete box, wingwalls at 30 to 75 degrees, square-edged at crown",
            0.4,
            HDS5_2001,
        ),
        (
            "box-wingwall-90-15",
            "concrete box, headwall (no wingwalls) square-edged on 3 edges, or wingwalls at 10 to 25 degrees square-edged at crown",
            0.5,
            HDS5_2001,
        ),
        (
            "box-wingwall-0",
            "concrete box, wingwalls parallel (extension of sides), square-edged at crown",
            0.7,
            MSMA,
        ),
    ];
    for (word, row, ke, source) in rows {
        out.push(case(
            "hds5-entrance-loss",
            source,
            format!("ke of `{word}`: {row}"),
            "-",
            ke,
            1e-12,
            move || entrance(word).map_or(f64::NAN, |e| e.ke),
        ));
    }
}

/// The general V-notch form (Cd 0.58, 90 degrees) against the USBR Water
/// Measurement Manual (2001) 90-degree V-notch rating Q = 2.49 H^2.48
/// (transcribed), every 0.01 ft from 0.2 to 2 ft. The exponents differ
/// (2.5 against 2.48), so the two published relations drift apart as
/// H^0.02: within 3.6 % below 0.45 ft and 2 % from there up.
fn v_notch_cases(out: &mut Vec<Case>) {
    for i in 0..=180 {
        let h = 0.2 + f64::from(i) * 0.01;
        let usbr = 2.49 * h.powf(2.48);
        let share = if h >= 0.45 - 1e-9 { 0.02 } else { 0.036 };
        out.push(case(
            "usbr-v-notch",
            "USBR Water Measurement Manual (2001) 90-degree V-notch Q = 2.49 H^2.48 (transcribed)",
            format!("90-degree V-notch, Cd 0.58, H {h:.2} ft"),
            "cfs",
            usbr,
            share * usbr,
            move || {
                Outlet::VNotchWeir {
                    crest_ft: 10.0,
                    angle_deg: 90.0,
                    cd: 0.58,
                }
                .flow_cfs(10.0 + h)
            },
        ));
    }
}

/// McEnroe et al. (1988) perforated-riser approximation (from memory), reference file
/// section 13c: Ap 0.5 ft2, Hs 2 ft, Cp 0.61; (head H ft, Q cfs).
pub const MCENROE_1988: [(f64, f64); 5] = [
    (0.5, 0.2883),
    (1.0, 0.8155),
    (2.0, 2.3067),
    (3.0, 3.4600),
    (5.0, 4.8932),
];

fn riser_cases(out: &mut Vec<Case>) {
    for (h, q) in MCENROE_1988 {
        out.push(case(
            "mcenroe-1988-riser",
            "McEnroe et al. (1988) perforated-riser approximation (from memory); reference file section 13c",
            format!("perforated riser, Ap 0.5 ft2, Hs 2 ft, Cp 0.61, H {h} ft"),
            "cfs",
            q,
            2e-4 * q,
            move || {
                perforated_riser_cfs(100.0 + h, 100.0, 2.0, 0.5, 0.61, Perforation::Approximation)
            },
        ));
    }
}

/// Heads (ft) at which the USBR contracted-weir form is checked.
pub const USBR_CONTRACTED_HEADS_FT: [f64; 4] = [0.1, 0.3, 0.6, 1.0];

fn weir_cases(out: &mut Vec<Case>) {
    for h in USBR_CONTRACTED_HEADS_FT {
        // The published form evaluated at the head.
        let usbr = 3.33 * (3.0 - 0.2 * h) * h.powf(1.5);
        out.push(case(
            "usbr-contracted-weir",
            "USBR Water Measurement Manual (2001) standard contracted weir Q = 3.33 (L - 0.2 H) H^1.5 (transcribed)",
            format!("sharp-crested weir, L 3 ft, two contractions, C 3.33, H {h} ft"),
            "cfs",
            usbr,
            1e-12 * usbr,
            move || {
                Outlet::SharpCrestedWeir {
                    crest_ft: 0.0,
                    length_ft: 3.0,
                    coefficient: 3.33,
                    contractions: 2,
                }
                .flow_cfs(h)
            },
        ));
    }
}

/// Villemonte (1947) (from memory), reference file section 13c: (H2/H1, factor at n 1.5,
/// factor at n 2.5).
pub const VILLEMONTE_1947: [(f64, f64, f64); 4] = [
    (0.2, 0.9646, 0.9931),
    (0.5, 0.8454, 0.9278),
    (0.8, 0.6163, 0.7210),
    (0.95, 0.3671, 0.4426),
];

fn villemonte_cases(out: &mut Vec<Case>) {
    const SOURCE: &str = "Villemonte (1947) (from memory); reference file section 13c";
    for (r, n15, n25) in VILLEMONTE_1947 {
        out.push(case(
            "villemonte-1947",
            SOURCE,
            format!("submergence factor, H2/H1 {r}, n 1.5"),
            "",
            n15,
            2e-4 * n15,
            move || villemonte_factor(1.0, r, 1.5),
        ));
        out.push(case(
            "villemonte-1947",
            SOURCE,
            format!("submergence factor, H2/H1 {r}, n 2.5"),
            "",
            n25,
            2e-4 * n25,
            move || villemonte_factor(2.0, 2.0 * r, 2.5),
        ));
    }
}

/// The 36 in barrel of the reference file's section 13b cases: 100 ft long, inverts 101 and
/// 100 ft, n 0.012.
pub fn pipe36(entrance_word: &str) -> Option<Barrel> {
    Some(Barrel {
        shape: BarrelShape::Circular { diameter_ft: 3.0 },
        length_ft: 100.0,
        inlet_invert_ft: 101.0,
        outlet_invert_ft: 100.0,
        n: 0.012,
        entrance: entrance(entrance_word)?,
    })
}

fn culvert_cases(out: &mut Vec<Case>) {
    // (source, entrance, Q cfs, published HW ft, relative tolerance)
    let inlet: [(&'static str, &'static str, f64, f64, f64); 4] = [
        (
            "FHWA HDS-5 (2012) App. A form 1 with Table A.1 constants (transcribed); reference file section 13b",
            "concrete-square-edge",
            30.0,
            2.674,
            1e-3,
        ),
        (
            "FHWA HDS-5 (2012) App. A submerged form, Table A.1 (transcribed); reference file section 13b",
            "concrete-square-edge",
            60.0,
            4.863,
            2e-4,
        ),
        (
            "FHWA HDS-5 (2012) App. A submerged form, Table A.1 (transcribed); reference file section 13b",
            "concrete-square-edge",
            100.0,
            9.961,
            2e-4,
        ),
        (
            "FHWA HDS-5 (2012) App. A submerged form, Table A.1 (transcribed); reference file section 13b",
            "metal-projecting",
            100.0,
            12.673,
            2e-4,
        ),
    ];
    for (source, word, q, hw, rel) in inlet {
        out.push(case(
            "hds5-inlet-control",
            source,
            format!("inlet-control headwater, 36 in {word}, Q {q} cfs"),
            "ft",
            hw,
            rel * hw,
            move || pipe36(word).map_or(f64::NAN, |b| b.inlet_headwater_ft(q)),
        ));
    }
    out.push(case(
        "hds5-outlet-control",
        "FHWA HDS-5 (2012) full-flow outlet control (form from memory; ke 0.5 of HDS-5 (2001) Table 12); reference file section 13b",
        "outlet-control headwater, 36 in concrete-square-edge, Q 100 cfs, ke 0.5, tailwater 2 ft"
            .into(),
        "ft",
        8.518,
        3e-4 * 8.518,
        || {
            pipe36("concrete-square-edge")
                .map_or(f64::NAN, |b| b.outlet_headwater_ft(100.0, Some(102.0)))
        },
    ));
}
