//! TR-55 graphical peak discharge, an independent first check on the peak of a
//! simulated catchment hydrograph.
//!
//! Source: USDA-SCS (1986) *Urban Hydrology for Small Watersheds*, TR-55, chapter 4:
//! eq. 4-1 (`qp = qu Am Q Fp`), the unit peak discharge of Exhibit 4 as the fitted
//! polynomial of Appendix F (eq. 4-2 form, Table F-1 coefficients) and the pond and
//! swamp adjustment factor of Table 4-2. Units are those of TR-55: qu in csm/in
//! (ft3/s per square mile per inch of runoff), Tc in hours, Am in square miles,
//! Q in inches, qp in ft3/s.
//!
//! Between the tabulated Ia/P rows the unit peak **qu itself** is interpolated
//! linearly in Ia/P: TR-55 reads qu off the Exhibit 4 curve of each tabulated
//! Ia/P and interpolates between curves, so interpolating qu (rather than the
//! coefficients or log qu) is the direct reading of the method.

/// NRCS 24-hour rainfall distribution type.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum StormType {
    /// Type I (Pacific maritime climate, wet winters and dry summers).
    I,
    /// Type IA (the least intense: Pacific coast, Cascades and Sierra Nevada slopes).
    IA,
    /// Type II (the most intense short-duration rain; most of the conterminous US).
    II,
    /// Type III (Gulf of Mexico and Atlantic coastal areas, tropical storms).
    III,
}

/// One row of TR-55 Table F-1: `(Ia/P, C0, C1, C2)`.
type F1Row = (f64, f64, f64, f64);

/// TR-55 Table F-1 (transcribed), Type I.
const F1_TYPE_I: &[F1Row] = &[
    (0.10, 2.30550, -0.51429, -0.11750),
    (0.20, 2.23537, -0.50387, -0.08929),
    (0.25, 2.18219, -0.48488, -0.06589),
    (0.30, 2.10624, -0.45695, -0.02835),
    (0.35, 2.00303, -0.40769, 0.01983),
    (0.40, 1.87733, -0.32274, 0.05754),
    (0.45, 1.76312, -0.15644, 0.00453),
    (0.50, 1.67889, -0.06930, 0.0),
];

/// TR-55 Table F-1 (transcribed), Type IA.
const F1_TYPE_IA: &[F1Row] = &[
    (0.10, 2.03250, -0.31583, -0.13748),
    (0.20, 1.91978, -0.28215, -0.07020),
    (0.25, 1.83842, -0.25543, -0.02597),
    (0.30, 1.72657, -0.19826, 0.02633),
    (0.50, 1.63417, -0.09100, 0.0),
];

/// TR-55 Table F-1 (transcribed), Type II (no rows at Ia/P 0.20 and 0.25).
const F1_TYPE_II: &[F1Row] = &[
    (0.10, 2.55323, -0.61512, -0.16403),
    (0.30, 2.46532, -0.62257, -0.11657),
    (0.35, 2.41896, -0.61594, -0.08820),
    (0.40, 2.36409, -0.59857, -0.05621),
    (0.45, 2.29238, -0.57005, -0.02281),
    (0.50, 2.20282, -0.51599, -0.01259),
];

/// TR-55 Table F-1 (transcribed), Type III (no rows at Ia/P 0.20 and 0.25).
const F1_TYPE_III: &[F1Row] = &[
    (0.10, 2.47317, -0.51848, -0.17083),
    (0.30, 2.39628, -0.51202, -0.13245),
    (0.35, 2.35477, -0.49735, -0.11985),
    (0.40, 2.30726, -0.46541, -0.11094),
    (0.45, 2.24876, -0.41314, -0.11508),
    (0.50, 2.17772, -0.36803, -0.11508),
];

fn f1_rows(storm: StormType) -> &'static [F1Row] {
    match storm {
        StormType::I => F1_TYPE_I,
        StormType::IA => F1_TYPE_IA,
        StormType::II => F1_TYPE_II,
        StormType::III => F1_TYPE_III,
    }
}

/// Shortest Tc (h) of the TR-55 graphical method.
pub const TC_MIN_H: f64 = 0.1;
/// Longest Tc (h) of the TR-55 graphical method.
pub const TC_MAX_H: f64 = 10.0;

/// Range of Ia/P covered by TR-55 Table F-1 for a rainfall type: `(lowest, highest)`.
pub fn ia_over_p_range(storm: StormType) -> (f64, f64) {
    let rows = f1_rows(storm);
    let lo = rows.first().map_or(f64::NAN, |r| r.0);
    let hi = rows.last().map_or(f64::NAN, |r| r.0);
    (lo, hi)
}

/// Unit peak discharge from the TR-55 graphical method, with the values used.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UnitPeak {
    /// Unit peak discharge qu (csm/in: ft3/s per square mile per inch of runoff).
    pub qu_csm_per_in: f64,
    /// Tc actually used (h), after clamping to 0.1..10 h.
    pub tc_used_h: f64,
    /// Ia/P actually used, after clamping to the table's range.
    pub ia_over_p_used: f64,
    /// `true` when the given Tc was outside 0.1..10 h (or not a number).
    pub tc_clamped: bool,
    /// `true` when the given Ia/P was outside the table's range (or not a number).
    pub ia_over_p_clamped: bool,
}

/// log10 qu of one Table F-1 row at log10 Tc.
fn log_qu(row: &F1Row, log_tc: f64) -> f64 {
    let (_, c0, c1, c2) = *row;
    c0 + c1 * log_tc + c2 * log_tc * log_tc
}

/// Unit peak discharge qu (csm/in) for a rainfall type, Ia/P and Tc (TR-55 chapter 4).
///
/// # Formula
/// TR-55 eq. 4-2 / Appendix F: `log10(qu) = C0 + C1 log10(Tc) + C2 (log10 Tc)^2`,
/// qu in csm/in, Tc in h, C0..C2 from Table F-1 for the row's Ia/P
/// (Ia = initial abstraction, P = 24-h rainfall, both in in).
///
/// Tc is clamped to 0.1..10 h, the range of the method. Ia/P is clamped to the
/// table's range for the type (0.10..0.50 for all four types), and between two
/// tabulated rows qu is interpolated linearly in Ia/P (Types II and III have no
/// 0.20 and 0.25 rows, so 0.1..0.3 is one interval). TR-55 says to use the limiting
/// value outside the range and to interpolate inside it (from memory). A NaN input
/// gives a NaN qu with its flag set.
pub fn unit_peak_csm_per_in(storm: StormType, ia_over_p: f64, tc_h: f64) -> UnitPeak {
    let rows = f1_rows(storm);
    let (lo, hi) = ia_over_p_range(storm);

    let tc_clamped = !(TC_MIN_H..=TC_MAX_H).contains(&tc_h);
    let ia_over_p_clamped = !(lo..=hi).contains(&ia_over_p);
    if tc_h.is_nan() || ia_over_p.is_nan() {
        return UnitPeak {
            qu_csm_per_in: f64::NAN,
            tc_used_h: tc_h.clamp(TC_MIN_H, TC_MAX_H),
            ia_over_p_used: ia_over_p.clamp(lo, hi),
            tc_clamped,
            ia_over_p_clamped,
        };
    }
    let tc_used_h = tc_h.clamp(TC_MIN_H, TC_MAX_H);
    let r = ia_over_p.clamp(lo, hi);
    let log_tc = tc_used_h.log10();
    let qu_at = |row: &F1Row| 10f64.powf(log_qu(row, log_tc));

    let bracket = rows.windows(2).find_map(|w| match w {
        [a, b] if r <= b.0 => Some((a, b)),
        _ => None,
    });
    let qu_csm_per_in = match bracket {
        Some((a, b)) => {
            let span = b.0 - a.0;
            let frac = if span > 0.0 { (r - a.0) / span } else { 0.0 };
            let (qa, qb) = (qu_at(a), qu_at(b));
            qa + frac * (qb - qa)
        }
        None => rows.last().map_or(f64::NAN, qu_at),
    };

    UnitPeak {
        qu_csm_per_in,
        tc_used_h,
        ia_over_p_used: r,
        tc_clamped,
        ia_over_p_clamped,
    }
}

/// Peak discharge (ft3/s) of the TR-55 graphical method.
///
/// # Formula
/// TR-55 eq. 4-1: `qp = qu Am Q Fp`, with qp in ft3/s, qu the unit peak discharge
/// (csm/in), Am the drainage area (mi2), Q the runoff depth (in) and Fp the pond and
/// swamp adjustment factor (1.0 where there are none).
pub fn peak_cfs(qu_csm_per_in: f64, area_mi2: f64, runoff_in: f64, pond_factor: f64) -> f64 {
    qu_csm_per_in * area_mi2 * runoff_in * pond_factor
}

/// TR-55 Table 4-2 (transcribed): `(pond and swamp area %, Fp)`.
const TABLE_4_2: &[(f64, f64)] = &[
    (0.0, 1.0),
    (0.2, 0.97),
    (1.0, 0.87),
    (3.0, 0.75),
    (5.0, 0.72),
];

/// Pond and swamp adjustment factor, with a flag for values outside TR-55 Table 4-2.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PondFactor {
    /// The factor Fp (dimensionless, 0.72..1.0).
    pub fp: f64,
    /// `true` when the pond and swamp share was outside 0..5 % (or not a number);
    /// the nearest end of the table was used.
    pub outside_table: bool,
}

/// Pond and swamp adjustment factor Fp for the share of the drainage area in ponds
/// and swamps spread throughout the watershed (TR-55 Table 4-2).
///
/// Between the table's rows (0, 0.2, 1, 3 and 5 %) Fp is interpolated linearly
/// (runnel's reading of the table); outside 0..5 % the nearest end is used and
/// flagged. A NaN share gives a NaN factor, flagged.
pub fn pond_factor(pond_swamp_percent: f64) -> PondFactor {
    let outside_table = !(0.0..=5.0).contains(&pond_swamp_percent);
    if pond_swamp_percent.is_nan() {
        return PondFactor {
            fp: f64::NAN,
            outside_table,
        };
    }
    let x = pond_swamp_percent.clamp(0.0, 5.0);
    let bracket = TABLE_4_2.windows(2).find_map(|w| match w {
        [a, b] if x <= b.0 => Some((a, b)),
        _ => None,
    });
    let fp = match bracket {
        Some((a, b)) => {
            let span = b.0 - a.0;
            let frac = if span > 0.0 { (x - a.0) / span } else { 0.0 };
            a.1 + frac * (b.1 - a.1)
        }
        None => TABLE_4_2.last().map_or(f64::NAN, |r| r.1),
    };
    PondFactor { fp, outside_table }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    const ALL: [StormType; 4] = [StormType::I, StormType::IA, StormType::II, StormType::III];

    #[test]
    fn unit_peak_at_one_hour_is_ten_to_the_c0() {
        // TR-55 (1986) Table F-1 (transcribed); values computed from it: log10(1) = 0
        let u = unit_peak_csm_per_in(StormType::II, 0.1, 1.0);
        assert_relative_eq!(u.qu_csm_per_in, 10f64.powf(2.55323), max_relative = 1e-12);
        // 357.5 within 0.1: `validation::timing_cases`, the list `runnel validate` reports
        crate::validation::assert_group("tr55-table-f-1");
        assert!(!u.tc_clamped && !u.ia_over_p_clamped);
    }

    #[test]
    fn unit_peak_cells_match_the_table_f1_polynomial() {
        // TR-55 (1986) Table F-1 (transcribed); values computed from it
        // (the cells 596.83, 40.85 and 67.37 within 0.01 are `validation::timing_cases`,
        // the list `runnel validate` reports)
        crate::validation::assert_group("tr55-table-f-1");
        // Type III, Ia/P 0.30, Tc 0.1 h: 2.39628 + 0.51202 - 0.13245 = 2.77585
        // Type I, Ia/P 0.45, Tc 10 h: 1.76312 - 0.15644 + 0.00453 = 1.61121
        // Type IA, Ia/P 0.20, Tc 2 h: x = log10 2; 1.91978 - 0.28215 x - 0.07020 x^2
        let x = 2f64.log10();
        let expected = 10f64.powf(1.91978 - 0.28215 * x - 0.07020 * x * x);
        let u = unit_peak_csm_per_in(StormType::IA, 0.20, 2.0);
        assert_relative_eq!(u.qu_csm_per_in, expected, max_relative = 1e-12);
        // Type II, Ia/P 0.50, Tc 0.5 h: x = -0.30103
        let x = 0.5f64.log10();
        let expected = 10f64.powf(2.20282 - 0.51599 * x - 0.01259 * x * x);
        let u = unit_peak_csm_per_in(StormType::II, 0.50, 0.5);
        assert_relative_eq!(u.qu_csm_per_in, expected, max_relative = 1e-12);
    }

    #[test]
    fn unit_peak_is_interpolated_linearly_in_qu_between_rows() {
        // TR-55 (1986) Table F-1 (transcribed); values computed from it.
        // Type II has no 0.20 row: 0.20 is halfway between the 0.10 and 0.30 rows.
        let q10 = unit_peak_csm_per_in(StormType::II, 0.10, 1.0).qu_csm_per_in;
        let q30 = unit_peak_csm_per_in(StormType::II, 0.30, 1.0).qu_csm_per_in;
        let q20 = unit_peak_csm_per_in(StormType::II, 0.20, 1.0);
        assert_relative_eq!(q20.qu_csm_per_in, 0.5 * (q10 + q30), max_relative = 1e-12);
        assert!(!q20.ia_over_p_clamped);
        assert_relative_eq!(q30, 10f64.powf(2.46532), max_relative = 1e-12);
    }

    #[test]
    fn unit_peak_falls_as_ia_over_p_rises() {
        // TR-55 (1986) Table F-1 (transcribed); computed from it
        for storm in ALL {
            for k in 0..=20 {
                let tc = 10f64.powf(-1.0 + 0.1 * f64::from(k));
                let mut last = f64::INFINITY;
                for j in 0..=80 {
                    let r = 0.1 + 0.005 * f64::from(j);
                    let q = unit_peak_csm_per_in(storm, r, tc).qu_csm_per_in;
                    assert!(q.is_finite() && q > 0.0);
                    assert!(q <= last + 1e-9, "{storm:?} Tc {tc} Ia/P {r}: {q} > {last}");
                    last = q;
                }
            }
        }
    }

    #[test]
    fn unit_peak_falls_as_tc_rises() {
        // TR-55 (1986) Table F-1 (transcribed); computed from it
        for storm in ALL {
            for r in [0.1, 0.2, 0.3, 0.42, 0.5] {
                let mut last = f64::INFINITY;
                for k in 0..=40 {
                    let tc = 10f64.powf(-1.0 + 0.05 * f64::from(k));
                    let q = unit_peak_csm_per_in(storm, r, tc).qu_csm_per_in;
                    assert!(q < last, "{storm:?} Ia/P {r} Tc {tc}");
                    last = q;
                }
            }
        }
    }

    #[test]
    fn tc_outside_the_method_range_is_clamped_and_flagged() {
        let short = unit_peak_csm_per_in(StormType::II, 0.3, 0.05);
        let at_min = unit_peak_csm_per_in(StormType::II, 0.3, 0.1);
        assert!(short.tc_clamped && !at_min.tc_clamped);
        assert_eq!(short.tc_used_h, 0.1);
        assert_eq!(short.qu_csm_per_in, at_min.qu_csm_per_in);

        let long = unit_peak_csm_per_in(StormType::III, 0.3, 24.0);
        let at_max = unit_peak_csm_per_in(StormType::III, 0.3, 10.0);
        assert!(long.tc_clamped && !at_max.tc_clamped);
        assert_eq!(long.qu_csm_per_in, at_max.qu_csm_per_in);

        let zero = unit_peak_csm_per_in(StormType::I, 0.3, 0.0);
        assert!(zero.tc_clamped && zero.qu_csm_per_in.is_finite());
    }

    #[test]
    fn ia_over_p_outside_the_table_is_clamped_and_flagged() {
        for storm in ALL {
            let low = unit_peak_csm_per_in(storm, 0.02, 1.0);
            let at_low = unit_peak_csm_per_in(storm, 0.10, 1.0);
            assert!(low.ia_over_p_clamped && !at_low.ia_over_p_clamped);
            assert_eq!(low.ia_over_p_used, 0.10);
            assert_eq!(low.qu_csm_per_in, at_low.qu_csm_per_in);

            let high = unit_peak_csm_per_in(storm, 0.9, 1.0);
            let at_high = unit_peak_csm_per_in(storm, 0.50, 1.0);
            assert!(high.ia_over_p_clamped && !at_high.ia_over_p_clamped);
            assert_eq!(high.qu_csm_per_in, at_high.qu_csm_per_in);
        }
    }

    #[test]
    fn not_a_number_gives_a_flagged_nan_instead_of_a_panic() {
        let u = unit_peak_csm_per_in(StormType::II, f64::NAN, 1.0);
        assert!(u.qu_csm_per_in.is_nan() && u.ia_over_p_clamped && !u.tc_clamped);
        let u = unit_peak_csm_per_in(StormType::II, 0.2, f64::NAN);
        assert!(u.qu_csm_per_in.is_nan() && u.tc_clamped);
        let u = unit_peak_csm_per_in(StormType::IA, f64::INFINITY, f64::INFINITY);
        assert!(u.qu_csm_per_in.is_finite() && u.tc_clamped && u.ia_over_p_clamped);
    }

    #[test]
    fn every_type_covers_ia_over_p_from_one_to_five_tenths() {
        // TR-55 (1986) Table F-1 (transcribed)
        for storm in ALL {
            assert_eq!(ia_over_p_range(storm), (0.10, 0.50));
            let rows = f1_rows(storm);
            assert!(rows.windows(2).all(|w| w[0].0 < w[1].0));
        }
    }

    #[test]
    fn peak_is_unit_peak_times_area_runoff_and_pond_factor() {
        // TR-55 (1986) eq. 4-1: qp = qu Am Q Fp
        assert_relative_eq!(peak_cfs(300.0, 0.5, 2.0, 1.0), 300.0, max_relative = 1e-12);
        assert_relative_eq!(peak_cfs(300.0, 0.5, 2.0, 0.87), 261.0, max_relative = 1e-12);
        assert_eq!(peak_cfs(300.0, 0.5, 0.0, 1.0), 0.0);
    }

    #[test]
    fn pond_factor_matches_tr55_table_4_2() {
        // TR-55 (1986) Table 4-2 (transcribed), from `validation::cases::TR55_TABLE_4_2`
        // (the list `runnel validate` reports).
        crate::validation::assert_group("tr55-table-4-2");
        for &(pct, _) in crate::validation::cases::TR55_TABLE_4_2 {
            assert!(!pond_factor(pct).outside_table);
        }
        // linear between rows (runnel's reading of the table)
        assert_relative_eq!(pond_factor(2.0).fp, 0.81, max_relative = 1e-12);
        let big = pond_factor(8.0);
        assert!(big.outside_table);
        assert_relative_eq!(big.fp, 0.72, max_relative = 1e-12);
        assert!(pond_factor(-1.0).outside_table);
        assert!(pond_factor(f64::NAN).fp.is_nan());
    }
}
