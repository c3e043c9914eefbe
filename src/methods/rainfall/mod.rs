//! Design-storm rainfall: the NRCS 24-hour cumulative patterns, a uniform
//! storm, user mass curves, nested storms from local depths
//! ([`nested`]), and sampling a storm at the computation step.
//!
//! Source of the patterns: Chow, Maidment & Mays (1988) *Applied Hydrology*,
//! Table 14.4.1 (p. 461), the NRCS (SCS) Type I, IA, II and III 24-hour
//! distributions, as transcribed in the project's reference file (section
//! 1a); the data are in [`tables`]. No finer tabulation (0.1 h) that
//! matches that table within 0.002 was found in a citable public document,
//! so between the tabulated times the cumulative fraction follows a
//! monotone piecewise cubic (Fritsch and Carlson 1980, with Fritsch and
//! Butland's 1984 slopes, [`monotone`]): it passes through every published
//! point, never decreases, and has no corners, so a hyetograph sampled from
//! it has no flat stretches of uniform intensity between the rows. The one
//! exception is each pattern's steepest tabulated interval (its peak, e.g.
//! Type II 11.75-12 h), kept as the published straight line, with the curves
//! on either side ending on their own secants there.
//!
//! Both choices are made by evidence, in this module's tests and in
//! `tests/methods.rs`: between Chow's rows the cubic predicts the published
//! half-hour ordinates of Types I, IA and II, and the City of Austin's
//! 5-minute Type III ordinates, better than straight lines do; inside and
//! beside the peak interval no finer published point exists, and a cubic
//! there draws rain towards the peak (its intensity peaks at 1.65 P24/h
//! where the table's 15-minute block averages 1.22), which moves the peaks
//! of catchments with Tc of 0.1-0.5 h away from the TR-55 graphical method
//! (NRCS's own results for these storms): over the 260-case grid of
//! `tests/methods.rs` the worst difference grows from +19.1 % (straight
//! lines) to +28.3 %, and the mean at Tc = 0.1 h from 3.1 % to 17.8 %. With
//! the peak interval straight the grid spans -5.4 % to +19.2 %, with mean
//! differences at Tc = 0.1, 0.25, 0.5, 1 and 2 h of 3.1, 16.2, 9.1, 1.2 and
//! 3.9 % (straight lines everywhere: 3.1, 16.0, 8.5, 2.1 and 4.5 %).
//! User mass curves (`pattern = "table"`) stay linear between their rows.

pub mod monotone;
pub mod nested;
pub mod tables;

use tables::{PATTERN_TIMES_H, TYPE_I, TYPE_IA, TYPE_II, TYPE_III};

/// The tabulation behind the four NRCS patterns, as named in every report.
pub const NRCS_TABULATION: &str = "Chow, Maidment & Mays (1988) Table 14.4.1 points; monotone cubic between them (Fritsch-Carlson 1980, Fritsch-Butland 1984 slopes) except the peak interval, kept straight as published";

/// The tabulation of a user mass curve, as named in reports.
pub const TABLE_TABULATION: &str = "the scenario's table, linear between its rows";

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

    /// The pattern as a dimensionless mass curve over 24 h: through Chow
    /// et al.'s points, monotone cubic between them except in the pattern's
    /// steepest interval (its peak), which stays the published straight
    /// line (see the module documentation for the evidence).
    pub fn mass_curve(self) -> MassCurve {
        let points: Vec<(f64, f64)> = PATTERN_TIMES_H
            .iter()
            .zip(self.fractions())
            .map(|(&t, &f)| (t / 24.0, f))
            .collect();
        let slopes = monotone::interval_slopes(&points, Some(self.peak_interval()));
        MassCurve {
            points,
            slopes: Some(slopes),
        }
    }

    /// Index of the tabulated interval with the highest average intensity.
    pub fn peak_interval(self) -> usize {
        let f = self.fractions();
        (0..f.len() - 1)
            .max_by(|&a, &b| {
                let ia = (f[a + 1] - f[a]) / (PATTERN_TIMES_H[a + 1] - PATTERN_TIMES_H[a]);
                let ib = (f[b + 1] - f[b]) / (PATTERN_TIMES_H[b + 1] - PATTERN_TIMES_H[b]);
                ia.total_cmp(&ib)
            })
            .unwrap_or(0)
    }

    /// The same published points joined by straight lines (the tabulation
    /// runnel used before; kept for the comparison in the tests).
    pub fn linear_mass_curve(self) -> MassCurve {
        MassCurve {
            points: PATTERN_TIMES_H
                .iter()
                .zip(self.fractions())
                .map(|(&t, &f)| (t / 24.0, f))
                .collect(),
            slopes: None,
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
    /// Hermite slopes at both ends of each interval (monotone cubic);
    /// `None`: linear.
    slopes: Option<Vec<[f64; 2]>>,
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
            slopes: None,
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
            slopes: None,
        })
    }

    /// Cumulative depth fraction at time fraction `x`: monotone cubic
    /// between rows for the NRCS patterns, linear for the others; 0 before
    /// the start and 1 after the end.
    pub fn fraction_at(&self, x: f64) -> f64 {
        match &self.slopes {
            Some(m) => monotone::eval(&self.points, m, x),
            None => crate::util::interp::linear(&self.points, x),
        }
    }

    /// Whether the curve is a monotone cubic between its rows.
    pub fn is_cubic(&self) -> bool {
        self.slopes.is_some()
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

    const ALL: [NrcsType; 4] = [NrcsType::I, NrcsType::IA, NrcsType::II, NrcsType::III];

    #[test]
    fn every_pattern_passes_every_published_point_exactly() {
        // Chow, Maidment & Mays (1988) Table 14.4.1 (transcribed): all 23 rows of each type
        // (the cases of `validation::timing_cases`, the list `runnel validate` reports).
        assert_eq!(
            crate::validation::group("chow-table-14-4-1").len(),
            ALL.len() * PATTERN_TIMES_H.len()
        );
        crate::validation::assert_group("chow-table-14-4-1");
    }

    #[test]
    fn every_pattern_sums_to_its_depth_at_every_step() {
        // conservation by construction; Chow et al. (1988) Table 14.4.1 (transcribed)
        for t in ALL {
            for step_min in [1.0, 2.0, 5.0, 6.0, 7.0, 15.0] {
                let n = (24.0 * 60.0 / step_min) as usize + 3;
                let r = hyetograph(&t.mass_curve(), 4.3, 24.0, step_min / 60.0, n);
                assert!(
                    (r.iter().sum::<f64>() - 4.3).abs() < 1e-12,
                    "{t:?} {step_min}"
                );
                assert!(r.iter().all(|x| *x >= 0.0));
            }
        }
    }

    /// Largest and root-mean-square error of a curve against `(t h, fraction)` points.
    fn errors(c: &MassCurve, pts: &[(f64, f64)]) -> (f64, f64) {
        let e: Vec<f64> = pts
            .iter()
            .map(|&(t, f)| c.fraction_at(t / 24.0) - f)
            .collect();
        let max = e.iter().fold(0.0f64, |m, x| m.max(x.abs()));
        let rms = (e.iter().map(|x| x * x).sum::<f64>() / e.len() as f64).sqrt();
        (max, rms)
    }

    #[test]
    fn monotone_cubic_predicts_the_half_hour_points_better_than_straight_lines() {
        // Evidence for the interpolation. The half-hour table (reference file
        // section 1b, a university table, source not stated; transcribed) has 28 times
        // per type that Chow et al. (1988) Table 14.4.1 (transcribed) lacks. Errors
        // there, fraction of the 24-h depth, (largest, rms), straight lines
        // against the monotone cubic:
        //   I   (0.004000, 0.001832) against (0.001361, 0.000634)
        //   IA  (0.036500, 0.007498) against (0.036500, 0.007137) (both largest at
        //       7.5 h, inside Type IA's peak interval 7-8 h, which stays straight;
        //       there the half-hour table's steep rise differs from Chow's rows)
        //   II  (0.007000, 0.003128) against (0.004611, 0.001396)
        //   III (0.000500, 0.000313) against (0.005511, 0.002755): the half-hour Type
        //       III column is Chow's rows joined by straight lines, rounded (all 28
        //       points within 0.0005 of them), so it cannot decide; the City of
        //       Austin's independent 5-minute Type III ordinates (Drainage Criteria
        //       Manual section 2.5.1, Table 2-6) do: at 0:30, 1:00, 8:05, 16:30 and
        //       17:00, (0.005750, 0.003064) against (0.001057, 0.000636).
        let want = [
            (NrcsType::I, 2, (0.004000, 0.001832), (0.001361, 0.000634)),
            (NrcsType::IA, 3, (0.036500, 0.007498), (0.036500, 0.007137)),
            (NrcsType::II, 4, (0.007000, 0.003128), (0.004611, 0.001396)),
            (NrcsType::III, 5, (0.000500, 0.000313), (0.005511, 0.002755)),
        ];
        for (t, col, lin_want, cub_want) in want {
            let pts: Vec<(f64, f64)> = tables::HALF_HOUR
                .iter()
                .filter(|r| !PATTERN_TIMES_H.contains(&r[0]))
                .map(|r| (r[0], r[col - 1]))
                .collect();
            assert_eq!(pts.len(), 28);
            let lin = errors(&t.linear_mass_curve(), &pts);
            let cub = errors(&t.mass_curve(), &pts);
            assert!(
                (lin.0 - lin_want.0).abs() < 1e-6 && (lin.1 - lin_want.1).abs() < 1e-6,
                "{t:?} linear {lin:?}"
            );
            assert!(
                (cub.0 - cub_want.0).abs() < 1e-6 && (cub.1 - cub_want.1).abs() < 1e-6,
                "{t:?} cubic {cub:?}"
            );
            if t != NrcsType::III {
                assert!(cub.0 <= lin.0 && cub.1 < lin.1, "{t:?}");
            }
        }
        let austin: Vec<(f64, f64)> = tables::AUSTIN_TYPE_III
            .iter()
            .copied()
            .filter(|p| !PATTERN_TIMES_H.contains(&p.0))
            .collect();
        assert_eq!(austin.len(), 5);
        let lin = errors(&NrcsType::III.linear_mass_curve(), &austin);
        let cub = errors(&NrcsType::III.mass_curve(), &austin);
        assert!(
            (lin.0 - 0.005750).abs() < 1e-6 && (lin.1 - 0.003064).abs() < 1e-6,
            "{lin:?}"
        );
        assert!(
            (cub.0 - 0.001057).abs() < 1e-6 && (cub.1 - 0.000636).abs() < 1e-6,
            "{cub:?}"
        );
    }

    #[test]
    fn the_type_ii_hyetograph_has_no_flat_stretches_and_no_shoulder_after_its_peak() {
        // the stair steps of straight lines: between Chow et al.'s 16-h and 20-h rows
        // (Table 14.4.1, transcribed) straight lines give one intensity for 4 hours;
        // the monotone cubic's intensity falls from step to step
        let r = hyetograph(&NrcsType::II.mass_curve(), 1.0, 24.0, 0.1, 240);
        for k in 161..195 {
            assert!(r[k + 1] < r[k], "{k}: {} {}", r[k], r[k + 1]);
        }
        let l = hyetograph(&NrcsType::II.linear_mass_curve(), 1.0, 24.0, 0.1, 240);
        assert!((l[170] - l[190]).abs() < 1e-12);
        // after the peak block the 1-minute intensity rises by at most 9.5 % (to
        // 12.17 h, from the recession's own secant at 12 h) and then falls through
        // 14 h (measured; Fritsch and Carlson's arithmetic-mean slopes across the
        // peak dip to 0.047 and rise back to 0.078 per 0.1 h near 12.4 h, 66 %, a
        // shoulder on every hydrograph's recession)
        let m = hyetograph(&NrcsType::II.mass_curve(), 1.0, 24.0, 1.0 / 60.0, 1440);
        let mut trough = f64::INFINITY;
        let mut worst = 0.0f64;
        for &x in &m[720..840] {
            trough = trough.min(x);
            worst = worst.max(x / trough - 1.0);
        }
        assert!(worst > 0.094 && worst < 0.096, "{worst}");
        // the peak interval itself is the published uniform block (11.75-12 h)
        assert!((m[710] - m[715]).abs() < 1e-12 && (m[706] - 0.306 / 15.0).abs() < 1e-12);
    }
}
