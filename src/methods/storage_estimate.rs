//! TR-55 chapter 6 first-cut detention storage: the storage a pond needs to cut a
//! peak inflow qi down to a peak outflow qo, as a share of the runoff volume.
//!
//! Source: USDA-SCS (1986) *Urban Hydrology for Small Watersheds*, TR-55, chapter 6,
//! Figure 6-1 as the cubic of Appendix F with the Table F-2 coefficients. The method
//! is a preliminary estimate to start a pond design from; runnel's routing
//! (storage-indication) is the real check.

use crate::methods::graphical_peak::StormType;

/// Lowest qo/qi of TR-55 Figure 6-1 (from memory).
pub const RATIO_MIN: f64 = 0.1;
/// Highest qo/qi of TR-55 Figure 6-1 (from memory).
pub const RATIO_MAX: f64 = 0.8;

/// Square feet in an acre.
const FT2_PER_AC: f64 = 43_560.0;
/// Inches in a foot.
const IN_PER_FT: f64 = 12.0;

/// TR-55 Table F-2 (transcribed): `[C0, C1, C2, C3]` for Types I and IA.
const F2_TYPE_I_IA: [f64; 4] = [0.660, -1.76, 1.96, -0.730];
/// TR-55 Table F-2 (transcribed): `[C0, C1, C2, C3]` for Types II and III.
const F2_TYPE_II_III: [f64; 4] = [0.682, -1.43, 1.64, -0.804];

/// Storage-to-runoff volume ratio from TR-55 Figure 6-1, with a range flag.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StorageRatio {
    /// Vs/Vr: storage volume over runoff volume (dimensionless).
    pub vs_over_vr: f64,
    /// `true` when qo/qi was outside 0.1..0.8, the range of Figure 6-1 (or not a
    /// number); the cubic is still evaluated there.
    pub outside_range: bool,
}

/// Storage volume over runoff volume, Vs/Vr, for a ratio of peak outflow to peak
/// inflow qo/qi (TR-55 chapter 6, Figure 6-1).
///
/// # Formula
/// TR-55 Appendix F: `Vs/Vr = C0 + C1 r + C2 r^2 + C3 r^3`, r = qo/qi (both
/// peaks in the same units), with the Table F-2 coefficients: Types I and IA
/// 0.660, -1.76, 1.96, -0.730; Types II and III 0.682, -1.43, 1.64, -0.804.
///
/// Outside 0.1 <= r <= 0.8 the value is still computed, and flagged.
pub fn storage_ratio(storm: StormType, qo_over_qi: f64) -> StorageRatio {
    let [c0, c1, c2, c3] = match storm {
        StormType::I | StormType::IA => F2_TYPE_I_IA,
        StormType::II | StormType::III => F2_TYPE_II_III,
    };
    let r = qo_over_qi;
    StorageRatio {
        vs_over_vr: c0 + r * (c1 + r * (c2 + r * c3)),
        outside_range: !(RATIO_MIN..=RATIO_MAX).contains(&r),
    }
}

/// Whether a storm needs any detention storage: only when the allowed
/// outflow is below the inflow peak (qo/qi < 1). At qo/qi >= 1 the inflow
/// can pass untouched, and the Figure 6-1 cubic, fitted for 0.1-0.8, is meaningless
/// there and goes negative above it (Types II and III: -0.487 at r = 1.5).
pub fn needs_storage(qo_over_qi: f64) -> bool {
    qo_over_qi < 1.0
}

/// Runoff volume Vr (ft3) of a runoff depth over an area.
///
/// # Formula
/// `Vr = Q A`, here `Vr (ft3) = Q (in) / 12 (in/ft) * A (ac) * 43 560 (ft2/ac)`
/// = 3630 Q A. TR-55 writes the same volume as `Vr = 53.33 Q Am` acre-ft with Am in
/// square miles (from memory); 53.33 = 640 ac/mi2 / 12 in/ft.
pub fn runoff_volume_ft3(runoff_in: f64, area_ac: f64) -> f64 {
    runoff_in / IN_PER_FT * area_ac * FT2_PER_AC
}

/// Acre-feet per square-mile-inch in TR-55's runoff volume, as printed.
pub const TR55_ACFT_PER_MI2_IN: f64 = 53.33;

/// Runoff volume Vr (acre-ft) in the form TR-55 chapter 6 uses with Figure 6-1.
///
/// # Formula
/// TR-55 chapter 6: `Vr = 53.33 Q Am`, Vr in acre-ft, Q the runoff depth
/// (in), Am the drainage area (mi2) (the form and constant from memory,
/// reference file section 10; 53.33 is 640 ac/mi2 / 12 in/ft rounded, so it
/// runs 0.006 % under the exact 53.333).
pub fn tr55_runoff_volume_acft(runoff_in: f64, area_mi2: f64) -> f64 {
    TR55_ACFT_PER_MI2_IN * runoff_in * area_mi2
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    const RATIOS: [f64; 5] = [0.1, 0.2, 0.3, 0.5, 0.8];

    #[test]
    fn type_ii_and_iii_ratios_reproduce_the_table_f2_cubic() {
        // TR-55 (1986) Table F-2 (transcribed); values computed from it
        // (`validation::timing_cases`, the list `runnel validate` reports, within 0.001)
        crate::validation::assert_group("tr55-table-f-2");
        for storm in [StormType::II, StormType::III] {
            for r in RATIOS {
                assert!(!storage_ratio(storm, r).outside_range);
            }
        }
    }

    #[test]
    fn type_i_and_ia_ratios_reproduce_the_table_f2_cubic() {
        // TR-55 (1986) Table F-2 (transcribed); values computed from it
        // (`validation::timing_cases`, the list `runnel validate` reports, within 0.001)
        crate::validation::assert_group("tr55-table-f-2");
        for storm in [StormType::I, StormType::IA] {
            for r in RATIOS {
                assert!(!storage_ratio(storm, r).outside_range);
            }
        }
    }

    #[test]
    fn storage_ratio_falls_as_the_allowed_outflow_rises() {
        // TR-55 (1986) Table F-2 (transcribed); computed from it over Figure 6-1's range
        for storm in [StormType::I, StormType::IA, StormType::II, StormType::III] {
            let mut last = f64::INFINITY;
            for k in 0..=70 {
                let r = 0.1 + 0.01 * f64::from(k);
                let v = storage_ratio(storm, r).vs_over_vr;
                assert!(v < last && v > 0.0, "{storm:?} r {r}");
                last = v;
            }
        }
    }

    #[test]
    fn no_storage_is_needed_once_the_allowed_outflow_reaches_the_inflow_peak() {
        // TR-55 (1986) Table F-2 (transcribed): at r = 1 the Type II/III cubic
        // gives 0.682 - 1.43 + 1.64 - 0.804 = 0.088 and Type I/IA
        // 0.660 - 1.76 + 1.96 - 0.730 = 0.130; above 1 it falls below zero
        // (Type II at r = 1.5: -0.487), which cannot be a storage.
        assert!((storage_ratio(StormType::II, 1.0).vs_over_vr - 0.088).abs() < 1e-9);
        assert!(storage_ratio(StormType::II, 1.5).vs_over_vr < 0.0);
        assert!(needs_storage(0.99));
        assert!(!needs_storage(1.0));
        assert!(!needs_storage(1.7));
    }

    #[test]
    fn ratios_outside_the_figure_are_computed_but_flagged() {
        // TR-55 (1986) Figure 6-1 range 0.1..0.8 // from memory
        let low = storage_ratio(StormType::II, 0.05);
        assert!(low.outside_range);
        // Table F-2 (transcribed): 0.682 - 1.43 * 0.05 + 1.64 * 0.0025 - 0.804 * 0.000125
        assert_relative_eq!(low.vs_over_vr, 0.614_499_5, max_relative = 1e-9);
        let high = storage_ratio(StormType::I, 0.9);
        assert!(high.outside_range && high.vs_over_vr.is_finite());
        assert!(storage_ratio(StormType::III, f64::NAN).outside_range);
        assert!(!storage_ratio(StormType::III, 0.1).outside_range);
        assert!(!storage_ratio(StormType::III, 0.8).outside_range);
    }

    #[test]
    fn one_inch_over_a_square_mile_is_53_33_acre_feet() {
        // TR-55 (1986) chapter 6: Vr = 53.33 Q Am (acre-ft) // from memory
        // (`validation::timing_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("tr55-ch6-runoff-volume");
    }

    #[test]
    fn runoff_volume_is_depth_times_area() {
        // unit conversion: 1 in over 1 ac = 43 560 / 12 ft3
        assert_relative_eq!(runoff_volume_ft3(1.0, 1.0), 3630.0, max_relative = 1e-12);
        assert_relative_eq!(runoff_volume_ft3(2.5, 6.2), 56_265.0, max_relative = 1e-12);
        assert_eq!(runoff_volume_ft3(0.0, 10.0), 0.0);
    }

    #[test]
    fn tr55_runoff_volume_is_53_33_q_am_and_agrees_with_q_a() {
        // TR-55 (1986) chapter 6, Vr = 53.33 Q Am (from memory, reference file section 10):
        // 2.5 in over 0.75 mi2 -> 99.99 acre-ft
        // (`validation::timing_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("tr55-ch6-runoff-volume");
        // the same volume as Q A in ft3 (480 ac = 0.75 mi2), within the rounding of 53.33
        let exact_acft = runoff_volume_ft3(2.5, 480.0) / 43_560.0;
        assert_relative_eq!(
            tr55_runoff_volume_acft(2.5, 0.75),
            exact_acft,
            max_relative = 1e-4
        );
    }
}
