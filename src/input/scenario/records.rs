//! The `[[record]]` section: long rainfall records for continuous simulation.

use super::*;
use crate::methods::moisture::MoistureClass;
use crate::util::calendar;

/// Largest potential evapotranspiration (in/day) a month may hold: more
/// than any climate's (bound of sanity, not of climate).
const MAX_PET_IN_PER_DAY: f64 = 1.0;

impl Builder<'_> {
    pub(super) fn record(&mut self, r: &Spanned<RawRecord>) -> R<Record> {
        let rr = r.get_ref();
        let name = rr.name.get_ref().clone();
        let ctx = format!("record \"{name}\"");
        let g = self.req(&rr.gauge, &r.span(), &ctx, "gauge", "\"rain/hourly.csv\"")?;
        let (series, path) = self.gauge(g, &rr.interval, &rr.missing, &ctx, MAX_STEPS)?;
        let interval_h = series.interval_s as f64 / 3600.0;
        let step_h = self.record_step(rr, &ctx, series.depth.len(), interval_h)?;
        let moisture = self.record_moisture(r, &ctx)?;
        Ok(Record {
            name,
            path,
            depth_in: {
                // Converted in place: a long record's depths are large.
                let f = self.depth_factor();
                let mut d = series.depth;
                if f != 1.0 {
                    d.iter_mut().for_each(|x| *x *= f);
                }
                d
            },
            interval_h,
            step_h,
            start_s: series.start_s,
            moisture,
            regional_skew: self.regional_skew(rr, r, &ctx)?,
        })
    }

    /// `regional_skew` and `regional_skew_mse`: both or neither; a skew
    /// within Bulletin 17B's frequency-factor table (-3..3) and a positive
    /// mean square error.
    fn regional_skew(
        &self,
        rr: &RawRecord,
        r: &Spanned<RawRecord>,
        ctx: &str,
    ) -> R<Option<crate::methods::stats::RegionalSkew>> {
        let (skew, mse) = match (&rr.regional_skew, &rr.regional_skew_mse) {
            (None, None) => return Ok(None),
            (Some(g), Some(m)) => (g, m),
            (Some(g), None) => {
                return Err(self
                    .err(&g.span(), &format!("{ctx}, regional_skew"), "a regional skew needs its mean square error `regional_skew_mse` to be weighted with the station skew (Bulletin 17B)")
                    .expected("`regional_skew_mse = 0.30` (the regional study's mean square error) beside `regional_skew`"));
            }
            (None, Some(m)) => {
                let _ = r;
                return Err(self
                    .err(
                        &m.span(),
                        &format!("{ctx}, regional_skew_mse"),
                        "`regional_skew_mse` is given without `regional_skew`",
                    )
                    .expected("both `regional_skew` and `regional_skew_mse`, or neither"));
            }
        };
        let g = self.num(skew, &format!("{ctx}, regional_skew"))?;
        if !(-3.0..=3.0).contains(&g) {
            return Err(self
                .err(&skew.span(), &format!("{ctx}, regional_skew"), format!("a regional skew of {g} is outside -3..3"))
                .expected("a skew coefficient between -3 and 3 (the range of Bulletin 17B's frequency factors)"));
        }
        let m = self.num(mse, &format!("{ctx}, regional_skew_mse"))?;
        if m <= 0.0 {
            return Err(self
                .err(
                    &mse.span(),
                    &format!("{ctx}, regional_skew_mse"),
                    format!("a mean square error of {m} is not above zero"),
                )
                .expected(
                    "the regional skew's mean square error, a positive number such as 0.30",
                ));
        }
        Ok(Some(crate::methods::stats::RegionalSkew {
            skew: g,
            mse: m,
        }))
    }

    /// The `moisture` key and the keys of its mode.
    fn record_moisture(&self, r: &Spanned<RawRecord>, ctx: &str) -> R<MoistureMode> {
        let rr = r.get_ref();
        let dry_gap_h = match &rr.dry_gap {
            Some(d) => self.positive(d, Quantity::Time, &format!("{ctx}, dry_gap"))?,
            None => 6.0,
        };
        match rr.moisture.as_ref().map(|m| m.get_ref().as_str()) {
            None | Some("event") => {
                self.refuse_other_mode_keys(
                    ctx,
                    "event",
                    [
                        ("pet", rr.pet.as_ref().map(|x| x.span())),
                        ("recovery", rr.recovery.as_ref().map(|x| x.span())),
                        ("initial", rr.initial.as_ref().map(|x| x.span())),
                    ],
                )?;
                self.event_moisture(rr, ctx, dry_gap_h)
            }
            Some("continuous") => {
                self.refuse_other_mode_keys(
                    ctx,
                    "continuous",
                    [
                        ("antecedent", rr.antecedent.as_ref().map(|x| x.span())),
                        (
                            "growing_months",
                            rr.growing_months.as_ref().map(|x| x.span()),
                        ),
                    ],
                )?;
                self.continuous_moisture(r, ctx, dry_gap_h)
            }
            Some(other) => {
                let span = rr.moisture.as_ref().map(|m| m.span()).unwrap_or(r.span());
                Err(self.unknown_word(
                    &span,
                    &format!("{ctx}, moisture"),
                    format!("unknown moisture accounting \"{other}\""),
                    "\"event\" or \"continuous\"",
                    other,
                    ["event", "continuous"],
                ))
            }
        }
    }

    /// A key of the other moisture mode is an error (it would be ignored).
    fn refuse_other_mode_keys<const N: usize>(
        &self,
        ctx: &str,
        mode: &str,
        keys: [(&str, Option<std::ops::Range<usize>>); N],
    ) -> R<()> {
        for (key, span) in keys {
            if let Some(span) = span {
                let other = if mode == "event" {
                    "continuous"
                } else {
                    "event"
                };
                return Err(self
                    .err(
                        &span,
                        &format!("{ctx}, {key}"),
                        format!("`{key}` belongs to moisture = \"{other}\", but this record uses moisture = \"{mode}\""),
                    )
                    .expected(format!("no `{key}` with moisture = \"{mode}\""))
                    .hint(format!("set moisture = \"{other}\" to use `{key}`, or remove it")));
            }
        }
        Ok(())
    }

    /// Event mode: the dry gap and the optional antecedent rule.
    fn event_moisture(&self, rr: &RawRecord, ctx: &str, dry_gap_h: f64) -> R<MoistureMode> {
        let antecedent = match &rr.antecedent {
            Some(a) if a.get_ref() == "amc" => true,
            Some(a) if a.get_ref() == "none" => false,
            Some(a) => {
                return Err(self
                    .err(
                        &a.span(),
                        &format!("{ctx}, antecedent"),
                        format!("unknown antecedent rule \"{}\"", a.get_ref()),
                    )
                    .expected("\"amc\" or \"none\""));
            }
            None => false,
        };
        let mut growing_months = [false; 12];
        match &rr.growing_months {
            Some(m) => {
                for &x in m.get_ref() {
                    if !(1..=12).contains(&x) {
                        return Err(self
                            .err(
                                &m.span(),
                                &format!("{ctx}, growing_months"),
                                format!("{x} is not a month"),
                            )
                            .expected("month numbers 1..12"));
                    }
                    growing_months[(x - 1) as usize] = true;
                }
            }
            None => (3..9).for_each(|i| growing_months[i] = true),
        }
        Ok(MoistureMode::Event {
            dry_gap_h,
            antecedent,
            growing_months,
        })
    }

    /// Continuous mode: `pet` (required), `recovery` and `initial`.
    fn continuous_moisture(
        &self,
        r: &Spanned<RawRecord>,
        ctx: &str,
        dry_gap_h: f64,
    ) -> R<MoistureMode> {
        let rr = r.get_ref();
        let p = self.req(
            &rr.pet,
            &r.span(),
            ctx,
            "pet",
            "12 monthly depths per day, January first: pet = [\"0.5 mm\", ...]",
        )?;
        if p.get_ref().len() != 12 {
            return Err(self
                .err(
                    &p.span(),
                    &format!("{ctx}, pet"),
                    format!("{} values given", p.get_ref().len()),
                )
                .expected("12 monthly values of depth per day, January first"));
        }
        let mut pet = [0.0; 12];
        for (i, v) in p.get_ref().iter().enumerate() {
            let pctx = format!("{ctx}, pet ({})", calendar::month_name(i as u32 + 1));
            let x = self.qty(
                &Spanned::new(p.span(), v.clone()),
                Quantity::DepthPerDay,
                &pctx,
            )?;
            if !(0.0..=MAX_PET_IN_PER_DAY).contains(&x) {
                return Err(self
                    .err(
                        &p.span(),
                        &pctx,
                        format!(
                            "{} is not a potential evapotranspiration",
                            self.depth_text(x)
                        ),
                    )
                    .expected("a depth per day of zero or more, at most 1 in (25.4 mm) per day")
                    .hint("pet is a depth per day for each month, e.g. \"3.6 mm\" in June"));
            }
            pet[i] = x;
        }
        let recovery = match &rr.recovery {
            Some(c) => {
                let v = self.num(c, &format!("{ctx}, recovery"))?;
                if !(0.3..=3.0).contains(&v) {
                    return Err(self
                        .err(&c.span(), &format!("{ctx}, recovery"), format!("recovery = {v} is outside 0.3 to 3"))
                        .expected("a recovery coefficient c between 0.3 and 3 (default 1.0)")
                        .hint("c about 1 (0.5-2) is the recalled usual range; larger c slows the recovery"));
                }
                v
            }
            None => 1.0,
        };
        let initial = match &rr.initial {
            None => MoistureClass::Average,
            Some(w) => match w.get_ref().as_str() {
                "I" => MoistureClass::Dry,
                "II" => MoistureClass::Average,
                "III" => MoistureClass::Wet,
                other => {
                    return Err(self.unknown_word(
                        &w.span(),
                        &format!("{ctx}, initial"),
                        format!("unknown starting moisture class \"{other}\""),
                        "\"I\" (dry), \"II\" (average) or \"III\" (wet)",
                        other,
                        ["I", "II", "III"],
                    ));
                }
            },
        };
        Ok(MoistureMode::Continuous {
            dry_gap_h,
            pet_in_per_day: pet,
            recovery,
            initial,
        })
    }

    /// A depth in the scenario's unit, for messages.
    fn depth_text(&self, x_in: f64) -> String {
        let f = Quantity::Depth.output_factor(self.units);
        format!("{} {}", x_in * f, Quantity::Depth.output_unit(self.units))
    }

    /// The step of a record (h): the gauge interval, or a step that divides
    /// the record and fits in [`MAX_STEPS`].
    fn record_step(&self, rr: &RawRecord, ctx: &str, intervals: usize, interval_h: f64) -> R<f64> {
        Ok(match &rr.step {
            Some(s) => {
                let v = self.positive(s, Quantity::Time, &format!("{ctx}, step"))?;
                let n = intervals as f64 * interval_h / v;
                if n > MAX_STEPS as f64 {
                    return Err(self
                        .err(&s.span(), &format!("{ctx}, step"), format!("the record would need {} steps, more than runnel's limit of {MAX_STEPS}", n as u64))
                        .expected("a coarser step")
                        .hint(format!("use a step of at least {}", format_step_up(intervals as f64 * interval_h / MAX_STEPS as f64))));
                }
                // The record must be a whole number of steps, or its last
                // step would hold only part of an interval's rain.
                if (n - n.round()).abs() > 1e-6 * n.max(1.0) {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, step"),
                            format!(
                                "the step of {} does not divide the record ({} intervals of {}): it would need {n:.3} steps",
                                format_step_up(v),
                                intervals,
                                format_step_up(interval_h)
                            ),
                        )
                        .expected("a step that divides the record, best the gauge interval or a divisor of it")
                        .hint(format!("use `step = \"{}\"` (the gauge interval)", format_step_up(interval_h))));
                }
                v
            }
            None => interval_h,
        })
    }
}
