//! Excess rainfall by the SCS curve-number method.
//!
//! Source: USDA-SCS (1986) *Urban Hydrology for Small Watersheds*, TR-55,
//! chapter 2, equations 2-1 to 2-4; the initial-abstraction ratio 0.05 and
//! its retention conversion from Hawkins et al. (2002). Everything here works
//! in inches, the units in which TR-55 publishes the method.

/// Potential maximum retention S in inches for a curve number.
///
/// # Formula
/// TR-55 eq. 2-4: `S = 1000 / CN - 10` (S in in, CN dimensionless, 0 < CN <= 100).
pub fn retention_in(cn: f64) -> f64 {
    1000.0 / cn - 10.0
}

/// Potential maximum retention S in millimetres for a curve number.
///
/// # Formula
/// SI form of TR-55 eq. 2-4: `S = 25400 / CN - 254` (S in mm).
pub fn retention_mm(cn: f64) -> f64 {
    25400.0 / cn - 254.0
}

/// Initial-abstraction ratio Ia/S of the curve-number method.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Lambda {
    /// Ia = 0.2 S, the ratio of TR-55 eq. 2-2.
    Standard,
    /// Ia = 0.05 S, with the retention converted from the 0.2-based CN by
    /// Hawkins et al. (2002).
    Reduced,
}

impl Lambda {
    /// The ratio Ia/S as a number.
    pub fn ratio(self) -> f64 {
        match self {
            Lambda::Standard => 0.2,
            Lambda::Reduced => 0.05,
        }
    }

    /// The retention (in) to use with this ratio, from the CN tabulated for Ia = 0.2 S.
    ///
    /// # Formula
    /// Hawkins et al. (2002): `S0.05 = 1.33 * S0.20^1.15` (S in in).
    pub fn retention_in(self, cn: f64) -> f64 {
        let s20 = retention_in(cn);
        match self {
            Lambda::Standard => s20,
            Lambda::Reduced => 1.33 * s20.max(0.0).powf(1.15),
        }
    }

    /// The curve number (for Ia = 0.2 S, as tabulated) whose retention with
    /// this ratio is `s_in` (in): the inverse of [`Lambda::retention_in`].
    ///
    /// # Formula
    /// TR-55 eq. 2-4 inverted, `CN = 1000 / (10 + S0.20)`, with
    /// `S0.20 = (S0.05 / 1.33)^(1/1.15)` for the reduced ratio (Hawkins et
    /// al. 2002, inverted; S in in).
    pub fn cn_for_retention_in(self, s_in: f64) -> f64 {
        let s20 = match self {
            Lambda::Standard => s_in,
            Lambda::Reduced => (s_in.max(0.0) / 1.33).powf(1.0 / 1.15),
        };
        cn_from_retention_in(s20)
    }
}

/// Curve number equivalent to the converted retention of [`Lambda::retention_in`].
///
/// # Formula
/// Inverse of TR-55 eq. 2-4: `CN = 1000 / (10 + S)`.
pub fn cn_from_retention_in(s_in: f64) -> f64 {
    1000.0 / (10.0 + s_in)
}

/// Accumulated runoff depth Q (in) for accumulated rainfall P (in).
///
/// # Formula
/// TR-55 eq. 2-1 with `Ia = lambda * S`:
/// `Q = (P - Ia)^2 / (P - Ia + S)` for `P > Ia`, else 0 (P, Q, S, Ia in in).
///
/// # Example
/// TR-55 (1986) Table 2-1 (transcribed) gives 2.89 in for P = 5 in, CN 80:
/// ```
/// use runnel::methods::runoff::{retention_in, runoff_depth_in};
/// let q = runoff_depth_in(5.0, retention_in(80.0), 0.2);
/// assert!((q - 2.89).abs() < 0.006);
/// ```
pub fn runoff_depth_in(p_in: f64, s_in: f64, ia_ratio: f64) -> f64 {
    let ia = ia_ratio * s_in;
    if p_in > ia {
        let e = p_in - ia;
        e * e / (e + s_in)
    } else {
        0.0
    }
}

/// Area-weighted composite curve number, never rounded.
///
/// `parts` holds `(cn, area)` pairs in any one area unit. Returns `None` when
/// the total area is not positive.
pub fn composite_cn(parts: &[(f64, f64)]) -> Option<f64> {
    let total: f64 = parts.iter().map(|(_, a)| a).sum();
    if total > 0.0 && total.is_finite() {
        Some(parts.iter().map(|(cn, a)| cn * a).sum::<f64>() / total)
    } else {
        None
    }
}

/// Curve number of a catchment part whose impervious cover is not all
/// directly connected to the drainage system.
///
/// `pervious_cn` is the area-weighted CN of the pervious covers;
/// `connected_pct` and `unconnected_pct` are the connected and unconnected
/// impervious covers (CN 98) in percent of the whole area. Returns `None`
/// when the total impervious share is 30 % or more, where TR-55 uses the
/// connected composite (its Figure 2-3) instead.
///
/// # Formula
/// TR-55 (1986) Figure 2-4 (recalled from memory: the figure's equation was
/// not read in a published copy): `CNc = CNp + (Pimp/100)(98 - CNp)(1 - 0.5 R)`,
/// with `Pimp` the total impervious percent and `R` the unconnected share of
/// the impervious area; that is, the unconnected part counts at half weight:
/// `CNc = CNp + (98 - CNp)(Pc + 0.5 Pu)/100`.
pub fn unconnected_composite_cn(
    pervious_cn: f64,
    connected_pct: f64,
    unconnected_pct: f64,
) -> Option<f64> {
    let total = connected_pct + unconnected_pct;
    if total >= 30.0 {
        return None;
    }
    Some(pervious_cn + (98.0 - pervious_cn) * (connected_pct + 0.5 * unconnected_pct) / 100.0)
}

/// Excess rainfall per step (in) from rainfall per step (in).
///
/// The curve-number equation is applied to the cumulative rainfall and the
/// cumulative runoff is differenced, so the excess sums to the runoff depth
/// of the total rainfall.
pub fn excess_per_step_in(rain_in: &[f64], s_in: f64, ia_ratio: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(rain_in.len());
    let mut p = 0.0;
    let mut q_prev = 0.0;
    for r in rain_in {
        p += r;
        let q = runoff_depth_in(p, s_in, ia_ratio);
        out.push((q - q_prev).max(0.0));
        q_prev = q;
    }
    out
}

/// Excess rainfall per step (in over the whole area) of a catchment whose
/// directly connected impervious share is computed on its own.
///
/// # Formula
/// TR-55 (1986) eq. 2-1 on the cumulative rain for each share, added by
/// area: `q = f q(S_imp) + (1 - f) q(S_rest)`, with `f` the connected
/// impervious fraction and `S_imp` the retention at CN 98 (S in in).
pub fn split_excess_per_step_in(
    rain_in: &[f64],
    impervious_fraction: f64,
    s_impervious_in: f64,
    s_rest_in: f64,
    ia_ratio: f64,
) -> Vec<f64> {
    let f = impervious_fraction.clamp(0.0, 1.0);
    let imp = excess_per_step_in(rain_in, s_impervious_in, ia_ratio);
    let rest = excess_per_step_in(rain_in, s_rest_in, ia_ratio);
    imp.iter()
        .zip(&rest)
        .zip(rain_in)
        .map(|((a, b), r)| (f * a + (1.0 - f) * b).clamp(0.0, r.max(0.0)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runoff_depths_match_tr55_table_2_1() {
        // TR-55 (1986) Table 2-1 (transcribed); table rounded to 0.01 in. The data are the
        // validation list's (`validation::cases::TR55_TABLE_2_1`), which `runnel validate` reports.
        crate::validation::assert_group("tr55-table-2-1");
    }

    #[test]
    fn initial_abstraction_matches_tr55_table_4_1() {
        // TR-55 (1986) Table 4-1 (transcribed): Ia = 0.2 S (`validation::cases::TR55_TABLE_4_1`).
        crate::validation::assert_group("tr55-table-4-1");
    }

    #[test]
    fn si_retention_is_the_inch_form_times_25_4() {
        // TR-55 (1986) eq. 2-4; SI constants are the inch form times 25.4 (computed).
        for cn in [40.0, 61.5, 98.0] {
            assert!((retention_mm(cn) - 25.4 * retention_in(cn)).abs() < 1e-9);
        }
    }

    #[test]
    fn hawkins_conversion_matches_reference_values() {
        // Hawkins et al. (2002) S0.05 = 1.33 S0.20^1.15 (from memory, corroborated); CN values
        // computed from it in the reference file, section 6 (`validation::cases::HAWKINS_2002`).
        crate::validation::assert_group("hawkins-2002");
    }

    #[test]
    fn excess_sums_to_the_runoff_of_the_total() {
        // TR-55 (1986) eq. 2-1 applied to cumulative rain.
        let rain = [0.1, 0.3, 0.0, 1.2, 0.8, 0.05];
        let s = retention_in(78.0);
        let total: f64 = excess_per_step_in(&rain, s, 0.2).iter().sum();
        assert!((total - runoff_depth_in(2.45, s, 0.2)).abs() < 1e-12);
    }

    #[test]
    fn the_inverse_retention_gives_back_the_curve_number() {
        // TR-55 (1986) eq. 2-4; Hawkins et al. (2002) conversion (from memory, corroborated).
        for lambda in [Lambda::Standard, Lambda::Reduced] {
            for cn in [40.0, 61.5, 80.0, 98.0] {
                let back = lambda.cn_for_retention_in(lambda.retention_in(cn));
                assert!((back - cn).abs() < 1e-9, "{lambda:?} CN {cn}: {back}");
            }
        }
    }

    #[test]
    fn unconnected_impervious_counts_at_half_weight_below_30_percent() {
        // TR-55 (1986) Figure 2-4 (from memory): CNc = CNp + (Pimp/100)(98 - CNp)(1 - 0.5R).
        // Pimp 20 %, R = 0.5, CNp 61: 61 + 0.2 * 37 * 0.75 = 66.55.
        let got = unconnected_composite_cn(61.0, 10.0, 10.0).unwrap_or(f64::NAN);
        assert!((got - 66.55).abs() < 1e-12, "{got}");
        // R = 0 is the connected composite of Figure 2-3 (area weighting).
        let connected = unconnected_composite_cn(61.0, 20.0, 0.0).unwrap_or(f64::NAN);
        let weighted = composite_cn(&[(98.0, 20.0), (61.0, 80.0)]).unwrap_or(0.0);
        assert!((connected - weighted).abs() < 1e-12);
        // 30 % impervious or more: the figure does not apply.
        assert_eq!(unconnected_composite_cn(61.0, 10.0, 20.0), None);
    }

    #[test]
    fn a_separate_impervious_share_sheds_more_than_the_composite_on_small_storms() {
        // TR-55 (1986) eq. 2-1 per share: 1 in on 30 % at CN 98 and 70 % at CN 61 gives
        // 0.3 * 0.7909 = 0.237 in (reference file 13a: 1.0/98 -> 0.7909), the composite CN 72.1
        // gives 0.04 in; the split is the sum of the shares' runoff.
        let rain = [0.2, 0.5, 0.3];
        let split: f64 =
            split_excess_per_step_in(&rain, 0.3, retention_in(98.0), retention_in(61.0), 0.2)
                .iter()
                .sum();
        let expected = 0.3 * runoff_depth_in(1.0, retention_in(98.0), 0.2)
            + 0.7 * runoff_depth_in(1.0, retention_in(61.0), 0.2);
        assert!((split - expected).abs() < 1e-12);
        assert!((0.3 * runoff_depth_in(1.0, retention_in(98.0), 0.2) - 0.3 * 0.7909).abs() < 1e-4);
        let composite = runoff_depth_in(1.0, retention_in(0.3 * 98.0 + 0.7 * 61.0), 0.2);
        assert!(split > composite + 0.15, "{split} vs {composite}");
    }

    #[test]
    fn composite_cn_is_area_weighted_and_unrounded() {
        // common practice, no published source beyond TR-55 ch.2 worksheet 2 weighting
        let cn = composite_cn(&[(98.0, 3.0), (74.0, 3.2)]).unwrap_or(0.0);
        assert!((cn - (98.0 * 3.0 + 74.0 * 3.2) / 6.2).abs() < 1e-12);
        assert!(composite_cn(&[]).is_none());
    }
}
