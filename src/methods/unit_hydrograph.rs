//! The NRCS (SCS) dimensionless unit hydrograph, its gamma-shaped relatives
//! for other peak rate factors, and discrete convolution of excess rainfall.
//!
//! Sources: NRCS NEH Part 630 chapter 16, Table 16-1 (dimensionless ratios,
//! transcribed) and Table 16-5 (gamma shape m against the peak rate factor,
//! transcribed); Tp = D/2 + L (Bedient, Huber & Vieux eq. 2-17).

use crate::util::units::FT2_PER_AC;

/// NEH 630 ch. 16 Table 16-1 (transcribed): t/Tp and q/qp.
const TABLE_16_1: [(f64, f64); 33] = [
    (0.0, 0.0),
    (0.1, 0.03),
    (0.2, 0.1),
    (0.3, 0.19),
    (0.4, 0.31),
    (0.5, 0.47),
    (0.6, 0.66),
    (0.7, 0.82),
    (0.8, 0.93),
    (0.9, 0.99),
    (1.0, 1.0),
    (1.1, 0.99),
    (1.2, 0.93),
    (1.3, 0.86),
    (1.4, 0.78),
    (1.5, 0.68),
    (1.6, 0.56),
    (1.7, 0.46),
    (1.8, 0.39),
    (1.9, 0.33),
    (2.0, 0.28),
    (2.2, 0.207),
    (2.4, 0.147),
    (2.6, 0.107),
    (2.8, 0.077),
    (3.0, 0.055),
    (3.2, 0.04),
    (3.4, 0.029),
    (3.6, 0.021),
    (3.8, 0.015),
    (4.0, 0.011),
    (4.5, 0.005),
    (5.0, 0.0),
];

/// The peak rate factor of Table 16-1's shape (cfs per sq mi per in, h).
pub const STANDARD_PRF: f64 = 484.0;

/// cfs·h per (in · mi²): 640 ac/mi² × 43560 ft²/ac × (1/12) ft/in / 3600 s/h.
pub const CFS_H_PER_IN_MI2: f64 = 640.0 * FT2_PER_AC / 12.0 / 3600.0;

/// The shape of a dimensionless unit hydrograph.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// NEH 630 ch. 16 Table 16-1, interpolated linearly (peak rate factor 484).
    Standard,
    /// Gamma form `q/qp = [(t/Tp) e^(1 - t/Tp)]^m` (from memory; it reproduces
    /// NEH 630 ch. 16 Table 16-5).
    Gamma {
        /// Shape exponent m.
        m: f64,
    },
}

impl Shape {
    /// The shape for a peak rate factor: Table 16-1 for 484, otherwise the
    /// gamma shape whose PRF matches.
    ///
    /// Returns `None` when no gamma shape gives that factor (outside about 1..640).
    pub fn for_prf(prf: f64) -> Option<Shape> {
        if (prf - STANDARD_PRF).abs() < 1e-9 {
            return Some(Shape::Standard);
        }
        gamma_m_for_prf(prf).map(|m| Shape::Gamma { m })
    }

    /// The ratio q/qp at t/Tp.
    pub fn ratio(&self, t_over_tp: f64) -> f64 {
        match *self {
            Shape::Standard => {
                if t_over_tp >= 5.0 {
                    0.0
                } else {
                    crate::util::interp::linear(&TABLE_16_1, t_over_tp)
                }
            }
            Shape::Gamma { m } => {
                if t_over_tp <= 0.0 {
                    0.0
                } else {
                    (t_over_tp * (1.0 - t_over_tp).exp()).powf(m)
                }
            }
        }
    }

    /// Where the shape has (practically) ended, in multiples of Tp.
    pub fn time_base_over_tp(&self) -> f64 {
        match *self {
            Shape::Standard => 5.0,
            Shape::Gamma { .. } => {
                // First x > 1 with ratio below 1e-6, at most 60 Tp.
                let mut x = 1.0;
                while x < 60.0 && self.ratio(x) > 1e-6 {
                    x += 0.05;
                }
                x
            }
        }
    }
}

/// Peak rate factor of a gamma-shaped unit hydrograph.
///
/// # Formula
/// `PRF = 645.33 m^m e^(-m) / Gamma(m)` (computed from the gamma form; it
/// reproduces NEH 630 ch. 16 Table 16-5), 645.33 = cfs·h per in·mi².
pub fn gamma_prf(m: f64) -> f64 {
    CFS_H_PER_IN_MI2 * (m * m.ln() - m - ln_gamma(m)).exp()
}

/// Shape exponent m for a peak rate factor, by bisection on [`gamma_prf`]
/// (increasing in m). `None` outside PRF 1..640.
pub fn gamma_m_for_prf(prf: f64) -> Option<f64> {
    if !(1.0..=640.0).contains(&prf) || !prf.is_finite() {
        return None;
    }
    let (mut lo, mut hi) = (1e-3, 5000.0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if gamma_prf(mid) < prf {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

/// ln Γ(x) for x > 0 (Lanczos approximation, g = 7, n = 9; Press et al.,
/// *Numerical Recipes*).
pub fn ln_gamma(x: f64) -> f64 {
    const G: f64 = 7.0;
    const C: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if x < 0.5 {
        let pi = std::f64::consts::PI;
        return (pi / (pi * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut a = C[0];
    let t = x + G + 0.5;
    for (i, c) in C.iter().enumerate().skip(1) {
        a += c / (x + i as f64);
    }
    0.5 * (2.0 * std::f64::consts::PI).ln() + (x + 0.5) * t.ln() - t + a.ln()
}

/// Time to peak (h) of the unit hydrograph for a computation step.
///
/// # Formula
/// `Tp = D/2 + L` with `D` the step (h) and `L = 0.6 Tc` the lag (h)
/// (Bedient, Huber & Vieux eq. 2-17; NEH 630 ch. 16).
pub fn time_to_peak_h(step_h: f64, lag_h: f64) -> f64 {
    step_h / 2.0 + lag_h
}

/// Peak of the unit hydrograph (cfs per in of runoff).
///
/// # Formula
/// `qp = PRF A / Tp` (A in mi², Tp in h; NEH 630 ch. 16, Bedient, Huber &
/// Vieux eq. 2-16 for PRF = 484).
pub fn peak_cfs_per_in(prf: f64, area_ac: f64, tp_h: f64) -> f64 {
    prf * (area_ac / 640.0) / tp_h
}

/// Unit-hydrograph ordinates (cfs per in of excess) at `k * step`, k = 0, 1, ...
///
/// Ordinates are the dimensionless ratio at `k * step / Tp`, then scaled so
/// that `sum(U_k) * step` holds exactly one inch of runoff over the area.
pub fn ordinates_cfs_per_in(shape: Shape, area_ac: f64, tp_h: f64, step_h: f64) -> Vec<f64> {
    let base = shape.time_base_over_tp() * tp_h;
    let n = ((base / step_h).ceil() as usize).saturating_add(1).max(2);
    let mut u: Vec<f64> = (0..n)
        .map(|k| shape.ratio(k as f64 * step_h / tp_h))
        .collect();
    let sum: f64 = u.iter().sum();
    // One inch over the area, ft3; spread over sum * step seconds.
    let volume_ft3 = area_ac * FT2_PER_AC / 12.0;
    if sum > 0.0 {
        let scale = volume_ft3 / (sum * step_h * 3600.0);
        for v in &mut u {
            *v *= scale;
        }
    } else {
        // Step far coarser than Tp: all the volume in the first step.
        u = vec![0.0, volume_ft3 / (step_h * 3600.0)];
    }
    while u.len() > 2 && u.last().is_some_and(|&v| v == 0.0) {
        u.pop();
    }
    u
}

/// Discrete convolution of excess (in per step) with unit-hydrograph
/// ordinates (cfs per in): `Q_n = sum_j e_j U_(n-j)`. The excess of
/// interval j starts its unit hydrograph at `j * step`, so `Q_0 = 0`.
/// Dry steps are skipped, so long records cost in proportion to their wet
/// steps. The output has `n_steps` values.
pub fn convolve(excess_in: &[f64], uh_cfs_per_in: &[f64], n_steps: usize) -> Vec<f64> {
    let mut q = vec![0.0; n_steps];
    convolve_into(excess_in, uh_cfs_per_in, &mut q);
    q
}

/// [`convolve`] adding into a caller's buffer.
pub fn convolve_into(excess_in: &[f64], uh_cfs_per_in: &[f64], q: &mut [f64]) {
    for (j, &e) in excess_in.iter().enumerate() {
        add_response(q, j, e, uh_cfs_per_in);
    }
}

/// Adds the response to `excess_in` (in) of interval `j` into the flows
/// `q` (cfs): `q[j + k] += excess_in * U_k` for every ordinate that falls
/// within `q`; nothing for zero excess. One term of [`convolve_into`].
#[inline]
pub fn add_response(q: &mut [f64], j: usize, excess_in: f64, uh_cfs_per_in: &[f64]) {
    if excess_in == 0.0 {
        return;
    }
    let Some(tail) = q.get_mut(j..) else {
        return;
    };
    for (qv, &u) in tail.iter_mut().zip(uh_cfs_per_in) {
        *qv += excess_in * u;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unit_hydrograph_holds_one_inch_over_the_area() {
        // NEH 630 ch.16 Table 16-1 (transcribed): volume = 1 in over the area (±0.1 %)
        let area_ac = 320.0;
        let step_h = 0.05;
        let u = ordinates_cfs_per_in(
            Shape::Standard,
            area_ac,
            time_to_peak_h(step_h, 0.6),
            step_h,
        );
        let vol_ft3: f64 = u.iter().sum::<f64>() * step_h * 3600.0;
        let want = area_ac * 43_560.0 / 12.0;
        assert!(((vol_ft3 - want) / want).abs() < 0.001);
    }

    #[test]
    fn standard_shape_peaks_at_484_a_over_tp() {
        // NEH 630 ch.16 Table 16-1 (transcribed): peak = 484 A / Tp within 0.5 %
        // (the table's area is 1.336, not 4/3, so the scaled peak sits slightly off 484)
        // (`validation::timing_cases`, the list `runnel validate` reports)
        crate::validation::assert_group("neh630-table-16-1");
    }

    #[test]
    fn gamma_shape_reproduces_table_16_5() {
        // NEH 630 ch.16 Table 16-5 (transcribed): m -> PRF within 0.5 %
        // (`validation::cases::NEH630_TABLE_16_5`, the list `runnel validate` reports).
        crate::validation::assert_group("neh630-table-16-5");
        let m = gamma_m_for_prf(300.0).unwrap_or(0.0);
        assert!((gamma_prf(m) - 300.0).abs() < 1e-6);
    }

    #[test]
    fn gamma_unit_hydrograph_peaks_at_prf_a_over_tp() {
        // NEH 630 ch.16 Table 16-5 (transcribed) relation, PRF 300
        let Some(shape) = Shape::for_prf(300.0) else {
            panic!("no shape for 300");
        };
        let (area_ac, tp, step_h) = (640.0, 1.0, 0.005);
        let u = ordinates_cfs_per_in(shape, area_ac, tp, step_h);
        let peak = u.iter().copied().fold(0.0, f64::max);
        assert!((peak - 300.0).abs() / 300.0 < 0.005, "{peak}");
    }

    #[test]
    fn convolution_conserves_volume_and_starts_at_zero() {
        // discrete convolution: volume out = excess x unit volume (exact)
        let u = ordinates_cfs_per_in(Shape::Standard, 10.0, 0.3, 0.05);
        let e = [0.0, 0.2, 0.5, 0.1];
        let q = convolve(&e, &u, 200);
        assert_eq!(q[0], 0.0);
        let vol: f64 = q.iter().sum::<f64>() * 0.05 * 3600.0;
        let want = 0.8 * 10.0 * 43_560.0 / 12.0;
        assert!((vol - want).abs() / want < 1e-9);
    }

    #[test]
    fn ln_gamma_matches_known_values() {
        // Γ(5) = 24, Γ(0.5) = sqrt(pi) (exact values)
        assert!((ln_gamma(5.0) - 24f64.ln()).abs() < 1e-12);
        assert!((ln_gamma(0.5) - std::f64::consts::PI.sqrt().ln()).abs() < 1e-12);
    }
}
