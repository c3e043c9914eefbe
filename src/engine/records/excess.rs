//! A catchment's excess over a long record by its record's moisture mode:
//! event mode ([`moisture::event_excess_each_cn`]) or continuous soil
//! moisture ([`moisture::continuous_excess_each`]), with the connected
//! impervious share computed on its own where the mode or the catchment
//! asks for it. The one place `records` turns rain into excess.

use super::RecordRun;
use crate::methods::moisture::{self, CnAccumulator, CnRange, MoistureError};
use crate::model::{Catchment, MoistureMode};
use crate::util::calendar;

/// What a catchment's excess over a record gives besides the excess itself.
pub(super) struct CatchmentExcess {
    /// Number of events.
    pub events: usize,
    /// Excess over the record, in over the catchment.
    pub runoff_in: f64,
    /// Curve numbers at the events' start.
    pub event_cn: Option<CnRange>,
}

/// Hands each rainy interval's excess (in over the catchment) to `sink`,
/// by the record's moisture mode.
pub(super) fn catchment_excess(
    run: &RecordRun<'_>,
    cat: &Catchment,
    mut sink: impl FnMut(usize, f64),
) -> Result<CatchmentExcess, MoistureError> {
    let r = run.record;
    let step_h = run.step_h;
    let rain: &[f64] = &run.rain_in;
    let mut runoff_in = 0.0;
    match &r.moisture {
        MoistureMode::Event {
            dry_gap_h,
            antecedent,
            growing_months,
        } => {
            let opts = moisture::EventOptions {
                dry_gap_steps: moisture::dry_gap_steps_for(*dry_gap_h, step_h).unwrap_or(1),
                antecedent: antecedent.then(|| moisture::AntecedentRule {
                    growing_months: *growing_months,
                    ..Default::default()
                }),
            };
            let month_of = |k: usize| calendar::month_of(r.start_s + k as i64 * run.step_s);
            let split = cat.separate_impervious && cat.connected_fraction > 0.0;
            let (f, cn) = if split {
                (cat.connected_fraction, cat.rest_cn)
            } else {
                (0.0, cat.cn)
            };
            let mut cns = CnAccumulator::default();
            let events = moisture::event_excess_each_cn(
                rain,
                step_h,
                cn,
                cat.lambda,
                &opts,
                &month_of,
                |c| cns.push(c),
                |j, e| {
                    let e = (1.0 - f) * e;
                    runoff_in += e;
                    sink(j, e);
                },
            )?;
            if split {
                // The connected impervious share: eq. 2-1 per event at CN 98, no antecedent rule.
                let plain = moisture::EventOptions {
                    antecedent: None,
                    ..opts
                };
                moisture::event_excess_each(
                    rain,
                    step_h,
                    moisture::IMPERVIOUS_CN,
                    cat.lambda,
                    &plain,
                    &month_of,
                    |j, e| {
                        let e = f * e;
                        runoff_in += e;
                        sink(j, e);
                    },
                )?;
            }
            Ok(CatchmentExcess {
                events,
                runoff_in,
                event_cn: cns.range(),
            })
        }
        MoistureMode::Continuous {
            dry_gap_h,
            pet_in_per_day,
            recovery,
            initial,
        } => {
            let params = moisture::ContinuousParams {
                cn: cat.rest_cn,
                lambda: cat.lambda,
                pet_in_per_day: *pet_in_per_day,
                recovery: *recovery,
                initial: *initial,
                dry_gap_steps: moisture::dry_gap_steps_for(*dry_gap_h, step_h).unwrap_or(1),
                impervious_fraction: cat.connected_fraction,
            };
            let months = moisture::MonthRuns::new(month_runs(r.start_s, run.step_s, rain.len()))?;
            let t =
                moisture::continuous_excess_each(rain, step_h, &params, &months, |_, _| {}, sink)?;
            Ok(CatchmentExcess {
                events: t.events,
                runoff_in: t.runoff_in,
                event_cn: t.event_cn,
            })
        }
    }
}

/// The calendar month of each of `n` steps of `step_s` seconds from
/// `start_s`, as runs `(first step, month)`: a step belongs to the month
/// its start falls in.
pub(super) fn month_runs(start_s: i64, step_s: i64, n: usize) -> Vec<(usize, u32)> {
    let mut runs = Vec::new();
    let step_s = step_s.max(1);
    let mut k = 0usize;
    while k < n.max(1) {
        let t = start_s + k as i64 * step_s;
        let month = calendar::month_of(t);
        runs.push((k, month));
        let year = calendar::year_of(t);
        let (ny, nm) = if month == 12 {
            (year + 1, 1)
        } else {
            (year, month + 1)
        };
        let Some(next_day) = calendar::day_number(ny, nm, 1) else {
            break;
        };
        let next_s = next_day * calendar::DAY_S;
        // The first step starting at or after the next month's start.
        let next_k = (next_s - start_s + step_s - 1).div_euclid(step_s);
        k = usize::try_from(next_k).unwrap_or(usize::MAX).max(k + 1);
    }
    runs
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn month_runs_follow_the_calendar_and_a_step_belongs_to_the_month_of_its_start() {
        // Calendar arithmetic (no published source needed): 2024 is a leap year.
        let start = calendar::day_number(2024, 1, 31).unwrap_or(0) * calendar::DAY_S;
        let runs = month_runs(start, 86_400, 40);
        assert_eq!(runs, vec![(0, 1), (1, 2), (30, 3)]);
        // 15-minute steps from 23:00 on 31 March: April starts at step 4.
        let start = calendar::day_number(2023, 3, 31).unwrap_or(0) * calendar::DAY_S + 23 * 3600;
        let runs = month_runs(start, 900, 10);
        assert_eq!(runs, vec![(0, 3), (4, 4)]);
        // Every step's month agrees with the calendar over two years of hours.
        let start = calendar::day_number(2019, 12, 30).unwrap_or(0) * calendar::DAY_S;
        let n = 2 * 8784;
        let runs = month_runs(start, 3600, n);
        for k in (0..n).step_by(7) {
            let i = runs.partition_point(|&(s, _)| s <= k) - 1;
            assert_eq!(
                runs[i].1,
                calendar::month_of(start + k as i64 * 3600),
                "step {k}"
            );
        }
    }
}
