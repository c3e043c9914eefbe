//! Nested design storms from local depth-duration values, by the
//! alternating-block method (Chow, Maidment & Mays 1988, *Applied
//! Hydrology*, section 14.4: the section number from memory): the depth of
//! every duration `k dt` (k = 1..N) is read from the local depth-duration
//! table, the increments `P(k dt) - P((k-1) dt)` are the blocks, and the
//! blocks are placed largest first at the chosen peak block, the next
//! largest after it, the next before it, alternately outwards. Every
//! duration's depth is then contained in the storm around its peak.

/// Why a depth-duration table was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum NestedError {
    /// Fewer than two rows.
    #[error(
        "the table needs at least two durations, e.g. [[\"5 min\", \"0.48 in\"], [\"24 h\", \"5.1 in\"]]"
    )]
    TooShort,
    /// A duration or depth is not positive.
    #[error("row {row}: durations and depths must be above zero")]
    NotPositive {
        /// 1-based row.
        row: usize,
    },
    /// Durations do not increase.
    #[error(
        "row {row}: the duration {duration_h} h does not follow the row before's; durations must increase"
    )]
    DurationOrder {
        /// 1-based row.
        row: usize,
        /// Duration, h.
        duration_h: f64,
    },
    /// A longer duration has no more depth.
    #[error(
        "row {row}: {depth_in} in over {duration_h} h is not more than the shorter duration's depth; depths must increase with duration"
    )]
    DepthOrder {
        /// 1-based row.
        row: usize,
        /// Duration, h.
        duration_h: f64,
        /// Depth, in.
        depth_in: f64,
    },
    /// A longer duration has a higher average intensity.
    #[error(
        "row {row}: the average intensity over {duration_h} h ({intensity_in_h:.4} in/h) is above the shorter duration's ({before_in_h:.4} in/h); average intensities must not increase with duration"
    )]
    IntensityOrder {
        /// 1-based row.
        row: usize,
        /// Duration, h.
        duration_h: f64,
        /// Its average intensity, in/h.
        intensity_in_h: f64,
        /// The row before's, in/h.
        before_in_h: f64,
    },
}

/// Checks a depth-duration table `(duration h, depth in)`: durations and
/// depths increasing, average intensities never increasing.
///
/// # Errors
/// The first row that breaks a rule.
pub fn check(rows: &[(f64, f64)]) -> Result<(), NestedError> {
    if rows.len() < 2 {
        return Err(NestedError::TooShort);
    }
    for (i, &(t, p)) in rows.iter().enumerate() {
        if !(t > 0.0 && p > 0.0 && t.is_finite() && p.is_finite()) {
            return Err(NestedError::NotPositive { row: i + 1 });
        }
        if i == 0 {
            continue;
        }
        let (t0, p0) = rows[i - 1];
        if t <= t0 {
            return Err(NestedError::DurationOrder {
                row: i + 1,
                duration_h: t,
            });
        }
        if p <= p0 {
            return Err(NestedError::DepthOrder {
                row: i + 1,
                duration_h: t,
                depth_in: p,
            });
        }
        // a relative slack of 1e-12 keeps equal intensities legal
        if p / t > p0 / t0 * (1.0 + 1e-12) {
            return Err(NestedError::IntensityOrder {
                row: i + 1,
                duration_h: t,
                intensity_in_h: p / t,
                before_in_h: p0 / t0,
            });
        }
    }
    Ok(())
}

/// How a duration's depth was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DepthSource {
    /// The duration is a row of the table.
    Table,
    /// Between two rows: a straight line on log-log axes.
    LogLog,
    /// Shorter than the first row: the first row's average intensity.
    BelowShortest,
}

/// Depth (in) of the duration `t_h` from a checked table, and how it was found.
///
/// # Formula
/// Between rows i and i+1 (common practice, no published source: depth-
/// duration curves are drawn as straight lines on log-log paper):
/// `ln P = ln P_i + (ln P_{i+1} - ln P_i) (ln t - ln t_i)/(ln t_{i+1} - ln t_i)`;
/// below the first row `P = P_1 t / t_1`; beyond the last, `P_n`.
pub fn depth_at(rows: &[(f64, f64)], t_h: f64) -> (f64, DepthSource) {
    let Some(&(t1, p1)) = rows.first() else {
        return (0.0, DepthSource::Table);
    };
    if t_h <= 0.0 {
        return (0.0, DepthSource::Table);
    }
    let tol = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.max(1.0);
    if let Some(&(_, p)) = rows.iter().find(|r| tol(r.0, t_h)) {
        return (p, DepthSource::Table);
    }
    if t_h < t1 {
        return (p1 * t_h / t1, DepthSource::BelowShortest);
    }
    let i = rows.partition_point(|r| r.0 <= t_h);
    if i >= rows.len() {
        return (rows[rows.len() - 1].1, DepthSource::Table);
    }
    let (ta, pa) = rows[i - 1];
    let (tb, pb) = rows[i];
    let f = (t_h.ln() - ta.ln()) / (tb.ln() - ta.ln());
    (
        (pa.ln() + (pb.ln() - pa.ln()) * f).exp(),
        DepthSource::LogLog,
    )
}

/// What the storm at a step took from the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Interpolated {
    /// Blocks (durations `k dt`) in the storm.
    pub blocks: usize,
    /// Durations read straight from the table.
    pub from_table: usize,
    /// Durations interpolated log-log between rows.
    pub log_log: usize,
    /// Durations shorter than the first row (its intensity kept).
    pub below_shortest: usize,
}

/// The block (0-based) that holds the peak: the one containing
/// `peak_at x duration`, the last block for `peak_at = 1`.
pub fn peak_block(blocks: usize, peak_at: f64) -> usize {
    if blocks == 0 {
        return 0;
    }
    ((peak_at.clamp(0.0, 1.0) * blocks as f64).floor() as usize).min(blocks - 1)
}

/// Rain per computation step of a nested storm over `duration_h` (the
/// table's last duration or less), with its largest block at `peak_at`
/// (fraction of the duration, 0.5 the middle); `n_steps` may run past the
/// storm (zeros). Also returns how each block's duration was found.
///
/// # Formula
/// Chow et al. (1988) section 14.4, alternating-block method: blocks
/// `b_k = P(k dt) - P((k-1) dt)`, k = 1..N, sorted largest first, placed at
/// the peak block p, then p+1, p-1, p+2, p-2, ... (one side continuing when
/// the other is full).
pub fn hyetograph(
    rows: &[(f64, f64)],
    duration_h: f64,
    peak_at: f64,
    step_h: f64,
    n_steps: usize,
) -> (Vec<f64>, Interpolated) {
    let n = ((duration_h / step_h) - 1e-9).ceil().max(1.0) as usize;
    let mut note = Interpolated {
        blocks: n,
        ..Interpolated::default()
    };
    let mut blocks = Vec::with_capacity(n);
    let mut prev = 0.0;
    for k in 1..=n {
        let t = (k as f64 * step_h).min(duration_h);
        let (p, src) = depth_at(rows, t);
        match src {
            DepthSource::Table => note.from_table += 1,
            DepthSource::LogLog => note.log_log += 1,
            DepthSource::BelowShortest => note.below_shortest += 1,
        }
        blocks.push((p - prev).max(0.0));
        prev = p;
    }
    blocks.sort_by(|a, b| b.total_cmp(a));
    let p = peak_block(n, peak_at);
    let mut placed = vec![0.0; n];
    let (mut after, mut before) = (p + 1, p);
    placed[p] = blocks[0];
    let mut take_after = true;
    for &b in &blocks[1..] {
        let can_after = after < n;
        let can_before = before > 0;
        if (take_after && can_after) || !can_before {
            placed[after] = b;
            after += 1;
        } else {
            before -= 1;
            placed[before] = b;
        }
        take_after = !take_after;
    }
    placed.resize(n_steps.max(n), 0.0);
    placed.truncate(n_steps);
    (placed, note)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A one-hour table at 10-minute durations (invented depths for a hand
    /// computation).
    const HOUR: [(f64, f64); 6] = [
        (10.0 / 60.0, 0.50),
        (20.0 / 60.0, 0.80),
        (30.0 / 60.0, 1.00),
        (40.0 / 60.0, 1.15),
        (50.0 / 60.0, 1.27),
        (1.0, 1.37),
    ];

    #[test]
    fn a_hand_computed_alternating_block_storm_is_reproduced() {
        // hand computation, cited as such, of the alternating-block method of Chow,
        // Maidment & Mays (1988) section 14.4 (section number from memory):
        // blocks 0.50, 0.30, 0.20, 0.15, 0.12, 0.10 in; six blocks, the peak in
        // block 3 (30-40 min), then after, before, after, before, before:
        // 0.10, 0.12, 0.20, 0.50, 0.30, 0.15
        assert_eq!(check(&HOUR), Ok(()));
        let (r, note) = hyetograph(&HOUR, 1.0, 0.5, 10.0 / 60.0, 8);
        let want = [0.10, 0.12, 0.20, 0.50, 0.30, 0.15, 0.0, 0.0];
        for (a, b) in r.iter().zip(want) {
            assert!((a - b).abs() < 1e-12, "{r:?}");
        }
        assert_eq!(
            note,
            Interpolated {
                blocks: 6,
                from_table: 6,
                log_log: 0,
                below_shortest: 0
            }
        );
        // every duration's depth sits around the peak: the 20-min depth is the
        // peak block and the one after it
        assert!((r[3] + r[4] - 0.80).abs() < 1e-12);
    }

    #[test]
    fn the_storm_holds_its_depth_at_any_step_and_peak_position() {
        // conservation by construction (Chow et al. 1988 section 14.4: the blocks
        // are the increments of the depth-duration curve)
        for step_min in [1.0, 2.0, 3.0, 7.0, 10.0] {
            for peak in [0.0, 0.25, 0.5, 0.9, 1.0] {
                let (r, _) = hyetograph(&HOUR, 1.0, peak, step_min / 60.0, 200);
                assert!((r.iter().sum::<f64>() - 1.37).abs() < 1e-12);
                let max = r.iter().fold(0.0f64, |m, x| m.max(*x));
                let n = ((60.0 / step_min) - 1e-9).ceil() as usize;
                // the largest block (blocks below the first row may tie with it)
                assert_eq!(r[peak_block(n, peak)], max, "step {step_min} peak {peak}");
            }
        }
    }

    #[test]
    fn durations_between_rows_are_read_log_log_and_short_ones_at_the_first_intensity() {
        // common practice, no published source: straight lines on log-log paper;
        // hand value at 15 min: ln P = ln 0.5 + ln(0.8/0.5) ln(1.5)/ln(2)
        let (p, s) = depth_at(&HOUR, 0.25);
        let hand = (0.5f64.ln() + (0.8f64 / 0.5).ln() * 1.5f64.ln() / 2f64.ln()).exp();
        assert!((p - hand).abs() < 1e-12);
        assert_eq!(s, DepthSource::LogLog);
        let (p, s) = depth_at(&HOUR, 5.0 / 60.0);
        assert!((p - 0.25).abs() < 1e-12);
        assert_eq!(s, DepthSource::BelowShortest);
        let (_, note) = hyetograph(&HOUR, 1.0, 0.5, 5.0 / 60.0, 12);
        assert_eq!(
            (note.from_table, note.log_log, note.below_shortest),
            (6, 5, 1)
        );
    }

    #[test]
    fn tables_that_are_not_depth_duration_curves_are_refused() {
        // a depth-duration table must grow with duration while its average
        // intensity falls (Chow et al. 1988 section 14.4 assumes both)
        assert_eq!(check(&[(1.0, 1.0)]), Err(NestedError::TooShort));
        assert!(matches!(
            check(&[(1.0, 1.0), (0.5, 2.0)]),
            Err(NestedError::DurationOrder { row: 2, .. })
        ));
        assert!(matches!(
            check(&[(1.0, 1.0), (2.0, 1.0)]),
            Err(NestedError::DepthOrder { row: 2, .. })
        ));
        assert!(matches!(
            check(&[(1.0, 1.0), (2.0, 2.5)]),
            Err(NestedError::IntensityOrder { row: 2, .. })
        ));
        assert!(matches!(
            check(&[(1.0, 0.0), (2.0, 2.5)]),
            Err(NestedError::NotPositive { row: 1 })
        ));
    }
}
