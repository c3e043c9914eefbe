//! Design-storm rainfall: the NRCS 24-hour cumulative patterns, a uniform
//! storm, user mass curves, and sampling a storm at the computation step.
//!
//! Source of the patterns: Chow, Maidment & Mays (1988) *Applied Hydrology*,
//! Table 14.4.1 (p. 461), the NRCS (SCS) Type I, IA, II and III 24-hour
//! distributions, as transcribed in the project's reference file (section 1a).
//! Between tabulated times the cumulative fraction is interpolated linearly.

/// Times (h) of the Chow, Maidment & Mays (1988) Table 14.4.1 rows.
const PATTERN_TIMES_H: [f64; 23] = [
    0.0, 2.0, 4.0, 6.0, 7.0, 8.0, 8.5, 9.0, 9.5, 9.75, 10.0, 10.5, 11.0, 11.5, 11.75, 12.0, 12.5,
    13.0, 13.5, 14.0, 16.0, 20.0, 24.0,
];
/// Type I cumulative fractions (Chow et al. 1988 Table 14.4.1, transcribed).
const TYPE_I: [f64; 23] = [
    0.0, 0.035, 0.076, 0.125, 0.156, 0.194, 0.219, 0.254, 0.303, 0.362, 0.515, 0.583, 0.624, 0.654,
    0.669, 0.682, 0.706, 0.727, 0.748, 0.767, 0.830, 0.926, 1.0,
];
/// Type IA cumulative fractions (Chow et al. 1988 Table 14.4.1, transcribed).
const TYPE_IA: [f64; 23] = [
    0.0, 0.050, 0.116, 0.206, 0.268, 0.425, 0.480, 0.520, 0.550, 0.564, 0.577, 0.601, 0.624, 0.645,
    0.655, 0.664, 0.683, 0.701, 0.719, 0.736, 0.800, 0.906, 1.0,
];
/// Type II cumulative fractions (Chow et al. 1988 Table 14.4.1, transcribed).
const TYPE_II: [f64; 23] = [
    0.0, 0.022, 0.048, 0.080, 0.098, 0.120, 0.133, 0.147, 0.163, 0.172, 0.181, 0.204, 0.235, 0.283,
    0.357, 0.663, 0.735, 0.772, 0.799, 0.820, 0.880, 0.952, 1.0,
];
/// Type III cumulative fractions (Chow et al. 1988 Table 14.4.1, transcribed).
const TYPE_III: [f64; 23] = [
    0.0, 0.020, 0.043, 0.072, 0.089, 0.115, 0.130, 0.148, 0.167, 0.178, 0.189, 0.216, 0.250, 0.298,
    0.339, 0.500, 0.702, 0.751, 0.785, 0.811, 0.886, 0.957, 1.0,
];

/// The four NRCS 24-hour rainfall distributions.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NrcsType {
    /// Type I (Pacific maritime climate, wet winters).
    I,
    /// Type IA (the least intense; Pacific Northwest coast).
    IA,
    /// Type II (most of the United States; the most intense).
    II,
    /// Type III (Gulf and Atlantic coasts).
    III,
}

impl NrcsType {
    /// Cumulative fractions at [`PATTERN_TIMES_H`].
    fn fractions(self) -> &'static [f64; 23] {
        match self {
            NrcsType::I => &TYPE_I,
            NrcsType::IA => &TYPE_IA,
            NrcsType::II => &TYPE_II,
            NrcsType::III => &TYPE_III,
        }
    }

    /// The pattern as a dimensionless mass curve over 24 h.
    pub fn mass_curve(self) -> MassCurve {
        MassCurve {
            points: PATTERN_TIMES_H
                .iter()
                .zip(self.fractions())
                .map(|(&t, &f)| (t / 24.0, f))
                .collect(),
        }
    }

    /// Name as written in scenarios.
    pub fn key(self) -> &'static str {
        match self {
            NrcsType::I => "nrcs-type-i",
            NrcsType::IA => "nrcs-type-ia",
            NrcsType::II => "nrcs-type-ii",
            NrcsType::III => "nrcs-type-iii",
        }
    }
}

/// A dimensionless cumulative rainfall curve: (time fraction, depth
/// fraction) from (0, 0) to (1, 1), non-decreasing.
#[derive(Debug, Clone, PartialEq)]
pub struct MassCurve {
    points: Vec<(f64, f64)>,
}

/// Why a user mass curve was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MassCurveError {
    /// Fewer than two rows.
    #[error("the table needs at least two rows, [0, 0] first and [1, 1] last")]
    TooShort,
    /// A value is outside 0..1 or not finite.
    #[error("row {row}: [{t}, {f}] is outside 0..1")]
    OutOfRange {
        /// 1-based row.
        row: usize,
        /// Time fraction.
        t: f64,
        /// Depth fraction.
        f: f64,
    },
    /// The curve does not start at [0, 0].
    #[error("the first row is [{t}, {f}]; a mass curve starts at [0, 0]")]
    BadStart {
        /// Time fraction.
        t: f64,
        /// Depth fraction.
        f: f64,
    },
    /// The curve does not end at [1, 1].
    #[error("the last row is [{t}, {f}]; a mass curve ends at [1, 1]")]
    BadEnd {
        /// Time fraction.
        t: f64,
        /// Depth fraction.
        f: f64,
    },
    /// Times or depths go backwards.
    #[error(
        "row {row}: [{t}, {f}] goes backwards from the row before; times must increase and depths must not decrease"
    )]
    Decreasing {
        /// 1-based row.
        row: usize,
        /// Time fraction.
        t: f64,
        /// Depth fraction.
        f: f64,
    },
}

impl MassCurve {
    /// A uniform-intensity storm.
    pub fn uniform() -> Self {
        MassCurve {
            points: vec![(0.0, 0.0), (1.0, 1.0)],
        }
    }

    /// A user table of (time fraction, depth fraction).
    ///
    /// # Errors
    /// The table must start at [0, 0], end at [1, 1], lie in 0..1, have
    /// strictly increasing times and non-decreasing depths.
    pub fn from_table(rows: &[(f64, f64)]) -> Result<Self, MassCurveError> {
        if rows.len() < 2 {
            return Err(MassCurveError::TooShort);
        }
        for (i, &(t, f)) in rows.iter().enumerate() {
            if !(0.0..=1.0).contains(&t) || !(0.0..=1.0).contains(&f) {
                return Err(MassCurveError::OutOfRange { row: i + 1, t, f });
            }
            if i > 0 {
                let (pt, pf) = rows[i - 1];
                if t <= pt || f < pf {
                    return Err(MassCurveError::Decreasing { row: i + 1, t, f });
                }
            }
        }
        let (t0, f0) = rows[0];
        if t0 != 0.0 || f0 != 0.0 {
            return Err(MassCurveError::BadStart { t: t0, f: f0 });
        }
        let (t1, f1) = rows[rows.len() - 1];
        if (t1 - 1.0).abs() > 1e-9 || (f1 - 1.0).abs() > 1e-9 {
            return Err(MassCurveError::BadEnd { t: t1, f: f1 });
        }
        Ok(MassCurve {
            points: rows.to_vec(),
        })
    }

    /// Cumulative depth fraction at time fraction `x`, linear between rows,
    /// 0 before the start and 1 after the end.
    pub fn fraction_at(&self, x: f64) -> f64 {
        crate::util::interp::linear(&self.points, x)
    }

    /// The rows of the curve.
    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }
}

/// Rain per computation step for a design storm.
///
/// The cumulative depth `P(t) = depth * F(t / duration)` is sampled at the
/// step ends `t = k * step` (k = 1..n) and differenced, so element `j` holds
/// the rain of the interval `[j * step, (j + 1) * step)`. Rain stops at the
/// storm's end; `n_steps` may run past it (the rest are zeros).
pub fn hyetograph(
    curve: &MassCurve,
    depth: f64,
    duration_h: f64,
    step_h: f64,
    n_steps: usize,
) -> Vec<f64> {
    let mut out = Vec::with_capacity(n_steps);
    let mut prev = 0.0;
    for k in 1..=n_steps {
        let t = k as f64 * step_h;
        let cum = depth * curve.fraction_at(t / duration_h);
        out.push((cum - prev).max(0.0));
        prev = cum;
    }
    out
}

/// Rain per computation step from rain per gauge interval, with the rain
/// uniform inside each gauge interval (contract convention).
///
/// `gauge` holds the depth of each interval of length `interval_h`, the
/// first starting at t = 0.
pub fn resample_gauge(gauge: &[f64], interval_h: f64, step_h: f64, n_steps: usize) -> Vec<f64> {
    let total_h = gauge.len() as f64 * interval_h;
    let mut out = Vec::with_capacity(n_steps);
    if (step_h - interval_h).abs() < 1e-12 {
        out.extend(gauge.iter().copied().take(n_steps));
        out.resize(n_steps, 0.0);
        return out;
    }
    let mut prefix = Vec::with_capacity(gauge.len() + 1);
    prefix.push(0.0);
    let mut s = 0.0;
    for g in gauge {
        s += g;
        prefix.push(s);
    }
    let cum = |t: f64| -> f64 {
        if t <= 0.0 {
            return 0.0;
        }
        let t = t.min(total_h);
        let pos = t / interval_h;
        let i = (pos.floor() as usize).min(gauge.len());
        let frac = pos - i as f64;
        prefix.get(i).copied().unwrap_or(s) + gauge.get(i).copied().unwrap_or(0.0) * frac
    };
    let mut prev = 0.0;
    for k in 1..=n_steps {
        let c = cum(k as f64 * step_h);
        out.push((c - prev).max(0.0));
        prev = c;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn type_ii_pattern_passes_its_published_anchor_points() {
        // Chow, Maidment & Mays (1988) Table 14.4.1 (transcribed): 0.663 at 12 h, 1.0 at 24 h
        let c = NrcsType::II.mass_curve();
        assert!((c.fraction_at(0.5) - 0.663).abs() < 1e-12);
        assert!((c.fraction_at(1.0) - 1.0).abs() < 1e-12);
        assert!((c.fraction_at(13.0 / 24.0) - 0.772).abs() < 1e-12);
    }

    #[test]
    fn type_iii_is_half_at_noon_and_type_i_matches_its_table() {
        // Chow, Maidment & Mays (1988) Table 14.4.1 (transcribed)
        assert!((NrcsType::III.mass_curve().fraction_at(0.5) - 0.500).abs() < 1e-12);
        assert!((NrcsType::I.mass_curve().fraction_at(10.0 / 24.0) - 0.515).abs() < 1e-12);
        assert!((NrcsType::IA.mass_curve().fraction_at(8.0 / 24.0) - 0.425).abs() < 1e-12);
    }

    #[test]
    fn every_pattern_is_non_decreasing_from_zero_to_one() {
        // Chow, Maidment & Mays (1988) Table 14.4.1 (transcribed)
        for t in [NrcsType::I, NrcsType::IA, NrcsType::II, NrcsType::III] {
            let pts = t.mass_curve();
            assert!(MassCurve::from_table(pts.points()).is_ok(), "{t:?}");
            let mut prev = 0.0;
            for k in 0..=2400 {
                let f = pts.fraction_at(k as f64 / 2400.0);
                assert!(f >= prev - 1e-15, "{t:?} at {k}");
                prev = f;
            }
            assert!((prev - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn hyetograph_holds_the_storm_depth() {
        // conservation by construction; NRCS Type II (Chow et al. 1988 Table 14.4.1, transcribed)
        let r = hyetograph(&NrcsType::II.mass_curve(), 5.1, 24.0, 2.0 / 60.0, 800);
        assert!((r.iter().sum::<f64>() - 5.1).abs() < 1e-9);
        assert_eq!(r.len(), 800);
    }

    #[test]
    fn user_tables_are_checked() {
        assert!(MassCurve::from_table(&[(0.0, 0.0), (0.5, 0.7), (1.0, 1.0)]).is_ok());
        assert!(matches!(
            MassCurve::from_table(&[(0.0, 0.1), (1.0, 1.0)]),
            Err(MassCurveError::BadStart { .. })
        ));
        assert!(matches!(
            MassCurve::from_table(&[(0.0, 0.0), (0.5, 0.7), (0.6, 0.6), (1.0, 1.0)]),
            Err(MassCurveError::Decreasing { row: 3, .. })
        ));
        assert!(matches!(
            MassCurve::from_table(&[(0.0, 0.0), (1.0, 0.9)]),
            Err(MassCurveError::BadEnd { .. })
        ));
    }

    #[test]
    fn gauge_resampling_keeps_rain_uniform_within_intervals() {
        // contract convention: rain uniform within each gauge interval
        let g = [0.0, 0.6, 0.3];
        let r = resample_gauge(&g, 0.25, 0.125, 8);
        let want = [0.0, 0.0, 0.3, 0.3, 0.15, 0.15, 0.0, 0.0];
        for (a, b) in r.iter().zip(want) {
            assert!((a - b).abs() < 1e-12);
        }
        assert_eq!(resample_gauge(&g, 0.25, 0.25, 4), vec![0.0, 0.6, 0.3, 0.0]);
    }
}
