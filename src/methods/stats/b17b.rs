//! Bulletin 17B refinements of the log-Pearson Type III fit: the single
//! Grubbs-Beck low-outlier test and the skew weighted with a regional
//! skew. (Interagency Advisory Committee on Water Data (1982), *Guidelines
//! for Determining Flood Flow Frequency*, Bulletin 17B. Bulletin 17C (2019)
//! has since replaced the low-outlier test with the multiple Grubbs-Beck
//! test and the moments with the expected moments algorithm; runnel
//! follows 17B.)

use super::{Lp3Fit, fit_lp3, frequency_factor};

/// Smallest number of peaks for which Bulletin 17B tabulates K_N.
pub const LOW_OUTLIER_MIN_N: usize = 10;

/// A regional skew and its mean square error, given by the user (from a
/// regional study or the Bulletin's map).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionalSkew {
    /// Regional (generalized) skew.
    pub skew: f64,
    /// Its mean square error.
    pub mse: f64,
}

/// The one-sided 10 % Grubbs-Beck outlier factor K_N for `n` peaks.
///
/// # Formula
/// `K_N = -0.9043 + 3.345 sqrt(log10 N) - 0.4046 log10 N` (the reference
/// file's section 13g: a recalled approximation of Bulletin 17B's K_N table,
/// within 0.004 of the values found there by simulating the test).
pub fn low_outlier_kn(n: usize) -> f64 {
    let l = (n as f64).log10();
    -0.9043 + 3.345 * l.sqrt() - 0.4046 * l
}

/// Mean square error of a station skew `g` from `n` peaks.
///
/// # Formula
/// Bulletin 17B eq. 6 (from memory; the same coefficients appear in a public
/// code citing eq. 6, p. 13): `MSE_G = 10^(A - B log10(N/10))`, with
/// `A = -0.33 + 0.08 |G|` for |G| <= 0.90, else `-0.52 + 0.30 |G|`, and
/// `B = 0.94 - 0.26 |G|` for |G| <= 1.50, else `0.55`.
pub fn station_skew_mse(g: f64, n: usize) -> f64 {
    let a = g.abs();
    let ca = if a <= 0.90 {
        -0.33 + 0.08 * a
    } else {
        -0.52 + 0.30 * a
    };
    let cb = if a <= 1.50 { 0.94 - 0.26 * a } else { 0.55 };
    10f64.powf(ca - cb * (n as f64 / 10.0).log10())
}

/// Station skew weighted with a regional skew by their mean square errors.
///
/// # Formula
/// Bulletin 17B eq. 5 (from memory): `G_W = (MSE_R G + MSE_G R)/(MSE_R + MSE_G)`,
/// with G the station skew, R the regional skew and their mean square errors.
pub fn weighted_skew(station: f64, station_mse: f64, regional: RegionalSkew) -> f64 {
    (regional.mse * station + station_mse * regional.skew) / (regional.mse + station_mse)
}

/// What the low-outlier test did.
#[derive(Debug, Clone, PartialEq)]
pub struct LowOutliers {
    /// Whether the test was applied (at least [`LOW_OUTLIER_MIN_N`] peaks).
    pub applied: bool,
    /// Number of peaks tested.
    pub n: usize,
    /// K_N used (NaN when not applied).
    pub kn: f64,
    /// Threshold flow, in the peaks' unit (NaN when not applied).
    pub threshold: f64,
    /// Peaks below the threshold, left out of the fit, ascending.
    pub removed: Vec<f64>,
}

/// How the skew used for the flows was found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SkewWeighting {
    /// The regional skew and its mean square error as given.
    pub regional: RegionalSkew,
    /// Station skew of the fitted peaks.
    pub station: f64,
    /// Mean square error of the station skew (Bulletin 17B eq. 6).
    pub station_mse: f64,
    /// Weighted skew (Bulletin 17B eq. 5), used for the flows.
    pub weighted: f64,
}

/// A Bulletin 17B frequency analysis of annual peaks.
#[derive(Debug, Clone, PartialEq)]
pub struct FrequencyAnalysis {
    /// The fit the flows use: moments of the peaks kept, with the skew used
    /// (the weighted skew when a regional skew was given).
    pub fit: Lp3Fit,
    /// Station skew of the peaks kept.
    pub station_skew: f64,
    /// The weighting, when a regional skew was given.
    pub weighting: Option<SkewWeighting>,
    /// The low-outlier test.
    pub low_outliers: LowOutliers,
}

/// Fits log-Pearson III to positive annual peaks with Bulletin 17B's
/// low-outlier test and, when given, a regional skew.
///
/// # Formula
/// Bulletin 17B: with x = log10 Q of the N peaks, mean and s as in
/// [`fit_lp3`], peaks below `10^(mean - K_N s)` ([`low_outlier_kn`]) are
/// low outliers: they are left out and the moments recomputed from the
/// others; the flows then take the conditional probability adjustment
/// `P = P_c p`, p = (N - L)/N the share of peaks kept (the Bulletin's
/// further refit of synthetic statistics to the adjusted curve is not
/// made). With a regional skew the skew used is [`weighted_skew`].
///
/// `None` when [`fit_lp3`] finds no fit (fewer than 3 peaks kept, or no spread).
pub fn bulletin17b(peaks: &[f64], regional: Option<RegionalSkew>) -> Option<FrequencyAnalysis> {
    let positive: Vec<f64> = peaks
        .iter()
        .copied()
        .filter(|q| q.is_finite() && *q > 0.0)
        .collect();
    let all = fit_lp3(&positive)?;
    let n = positive.len();
    let low_outliers = if n >= LOW_OUTLIER_MIN_N {
        let kn = low_outlier_kn(n);
        let threshold = 10f64.powf(all.mean_log10 - kn * all.std_log10);
        let mut removed: Vec<f64> = positive
            .iter()
            .copied()
            .filter(|q| *q < threshold)
            .collect();
        removed.sort_by(f64::total_cmp);
        LowOutliers {
            applied: true,
            n,
            kn,
            threshold,
            removed,
        }
    } else {
        LowOutliers {
            applied: false,
            n,
            kn: f64::NAN,
            threshold: f64::NAN,
            removed: Vec::new(),
        }
    };
    let mut fit = if low_outliers.removed.is_empty() {
        all
    } else {
        let kept: Vec<f64> = positive
            .iter()
            .copied()
            .filter(|q| *q >= low_outliers.threshold)
            .collect();
        fit_lp3(&kept)?
    };
    let station_skew = fit.skew;
    let weighting = regional.map(|r| {
        let station_mse = station_skew_mse(station_skew, fit.n);
        SkewWeighting {
            regional: r,
            station: station_skew,
            station_mse,
            weighted: weighted_skew(station_skew, station_mse, r),
        }
    });
    if let Some(w) = &weighting {
        fit.skew = w.weighted;
    }
    Some(FrequencyAnalysis {
        fit,
        station_skew,
        weighting,
        low_outliers,
    })
}

impl FrequencyAnalysis {
    /// Share of the tested peaks kept in the fit, `(N - L)/N`.
    pub fn kept_share(&self) -> f64 {
        let n = self.low_outliers.n;
        if n == 0 {
            return 1.0;
        }
        (n - self.low_outliers.removed.len()) as f64 / n as f64
    }

    /// Flow with the given return period, in the peaks' unit, with the
    /// conditional probability adjustment for low outliers.
    ///
    /// # Formula
    /// `log10 Q_T = mean + K(G, 1 - P_c) s` with `P_c = (1/T)/p` (Bulletin 17B
    /// conditional probability adjustment; p from [`kept_share`](Self::kept_share)).
    /// NaN when T is not above 1, or when `P_c >= 1` (the flow lies below the
    /// low-outlier threshold, where the curve is not defined).
    pub fn quantile(&self, return_period_yr: f64) -> f64 {
        if !(return_period_yr.is_finite() && return_period_yr > 1.0) {
            return f64::NAN;
        }
        let pc = (1.0 / return_period_yr) / self.kept_share();
        if pc >= 1.0 {
            return f64::NAN;
        }
        let k = frequency_factor(self.fit.skew, 1.0 - pc);
        10f64.powf(self.fit.mean_log10 + k * self.fit.std_log10)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kn_matches_the_values_found_by_simulating_the_test() {
        // Bulletin 17B K_N (10 % level), reference file section 13g: values [C] by
        // simulating the Grubbs-Beck test (400,000 samples per N); the approximation
        // (from memory) within 0.004
        for (n, kn) in [
            (10, 2.036),
            (15, 2.247),
            (20, 2.385),
            (25, 2.486),
            (30, 2.563),
            (40, 2.682),
            (50, 2.768),
            (100, 3.017),
        ] {
            assert!(
                (low_outlier_kn(n) - kn).abs() < 0.004,
                "N {n}: {}",
                low_outlier_kn(n)
            );
        }
    }

    #[test]
    fn station_skew_mse_and_weighting_follow_bulletin_17b() {
        // Bulletin 17B eq. 6 (from memory, corroborated by a public code citing it):
        // G = 0.5, N = 40: A = -0.29, B = 0.81, MSE = 10^(-0.29 - 0.81 log10 4) = 0.16685
        let mse = station_skew_mse(0.5, 40);
        let hand = 10f64.powf(-0.29 - 0.81 * 4f64.log10());
        assert!((mse - hand).abs() < 1e-12);
        assert!((mse - 0.16685).abs() < 5e-6, "{mse}");
        // |G| above 0.90 and 1.50 switch both coefficients: G = -1.6, N = 10 -> 10^(-0.52 + 0.48)
        assert!((station_skew_mse(-1.6, 10) - 10f64.powf(-0.04)).abs() < 1e-12);
        // Bulletin 17B eq. 5 (from memory): equal errors give the mean; a regional
        // skew with no error wins
        let r = RegionalSkew { skew: -0.2, mse };
        assert!((weighted_skew(0.5, mse, r) - 0.15).abs() < 1e-9);
        let exact = RegionalSkew {
            skew: -0.2,
            mse: 0.0,
        };
        assert!((weighted_skew(0.5, mse, exact) + 0.2).abs() < 1e-15);
    }

    /// Twenty invented annual peaks with one far below the others.
    fn peaks_with_a_low_outlier() -> Vec<f64> {
        let mut p: Vec<f64> = (0..19).map(|i| 100.0 * 1.08f64.powi(i)).collect();
        p.push(3.0);
        p
    }

    #[test]
    fn a_low_outlier_is_found_left_out_and_the_flows_adjusted() {
        // Bulletin 17B low-outlier test (K_N per the reference file section 13g) and
        // conditional probability adjustment; invented peaks, hand-checked threshold
        let p = peaks_with_a_low_outlier();
        let a = bulletin17b(&p, None).expect("fit");
        let all = fit_lp3(&p).expect("fit");
        let hand = 10f64.powf(all.mean_log10 - low_outlier_kn(20) * all.std_log10);
        assert!(a.low_outliers.applied);
        assert!((a.low_outliers.threshold - hand).abs() < 1e-9);
        assert_eq!(a.low_outliers.removed, vec![3.0]);
        assert_eq!(a.fit.n, 19);
        assert!((a.kept_share() - 0.95).abs() < 1e-12);
        // the adjusted 100-yr flow is the conditional curve's flow at P_c = 0.01/0.95
        let kept = fit_lp3(&p[..19]).expect("fit");
        let k = frequency_factor(kept.skew, 1.0 - 0.01 / 0.95);
        let q100 = 10f64.powf(kept.mean_log10 + k * kept.std_log10);
        assert!((a.quantile(100.0) - q100).abs() < 1e-9 * q100);
        // no outlier: the plain fit, unchanged
        let b = bulletin17b(&p[..19], None).expect("fit");
        assert!(b.low_outliers.removed.is_empty());
        assert_eq!(b.fit, kept);
        assert!((b.quantile(100.0) - kept.quantile(100.0)).abs() < 1e-9 * q100);
    }

    #[test]
    fn short_records_are_not_tested_and_a_regional_skew_is_weighted_in() {
        // Bulletin 17B tabulates K_N from N = 10; eq. 5 and 6 (from memory)
        let p: Vec<f64> = [5.0, 40.0, 44.0, 47.0, 52.0, 60.0, 66.0, 71.0, 90.0].to_vec();
        let a = bulletin17b(
            &p,
            Some(RegionalSkew {
                skew: 0.1,
                mse: 0.3025,
            }),
        )
        .expect("fit");
        assert!(!a.low_outliers.applied && a.low_outliers.removed.is_empty());
        let w = a.weighting.expect("weighted");
        let mse = station_skew_mse(a.station_skew, 9);
        assert!((w.station_mse - mse).abs() < 1e-12);
        let g = (0.3025 * a.station_skew + mse * 0.1) / (0.3025 + mse);
        assert!((w.weighted - g).abs() < 1e-12 && (a.fit.skew - g).abs() < 1e-12);
    }
}
