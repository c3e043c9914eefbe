//! The `[[point]]` section: design points, their limits and flow-duration rules.

use super::*;

impl Builder<'_> {
    pub(super) fn point(
        &self,
        p: &Spanned<RawPoint>,
        conditions: &[String],
        storms: &[Storm],
    ) -> R<Point> {
        let rp = p.get_ref();
        let name = rp.name.get_ref().trim().to_string();
        let ctx = format!("point \"{name}\"");
        let default = match &rp.limit {
            Some(l) => (
                self.limit(l, &format!("{ctx}, limit"), conditions, storms)?,
                l.get_ref().clone(),
            ),
            None => (
                Limit::Relative {
                    fraction: 1.0,
                    condition: 0,
                    storm: None,
                },
                conditions.first().cloned().unwrap_or_default(),
            ),
        };
        let mut limits = vec![default.0.clone(); storms.len()];
        let mut limit_text = vec![default.1.clone(); storms.len()];
        if let Some(map) = &rp.limits {
            for (storm, text) in map.get_ref() {
                let Some(i) = storms.iter().position(|s| &s.name == storm) else {
                    return Err(self.unknown_word(
                        &text.span(),
                        &format!("{ctx}, limits"),
                        format!("no storm is named \"{storm}\""),
                        "the name of a [[storm]]",
                        storm,
                        storms.iter().map(|s| s.name.as_str()),
                    ));
                };
                limits[i] = self.limit(
                    text,
                    &format!("{ctx}, limits.\"{storm}\""),
                    conditions,
                    storms,
                )?;
                limit_text[i] = text.get_ref().clone();
            }
        }
        let durations = match &rp.durations {
            Some(d) => Some(self.durations(d, &format!("{ctx}, durations"))?),
            None => None,
        };
        Ok(Point {
            name,
            limits,
            limit_text,
            durations,
        })
    }

    pub(super) fn limit(
        &self,
        l: &Spanned<String>,
        ctx: &str,
        conditions: &[String],
        storms: &[Storm],
    ) -> R<Limit> {
        let text = l.get_ref().trim();
        let bad = |msg: String| {
            self.err(&l.span(), ctx, msg)
                .expected("\"existing\", \"50% existing\", \"existing 2-yr\", \"12 cfs\", \"0.1 cfs/ac\" or \"none\"")
        };
        if text.eq_ignore_ascii_case("none") {
            return Ok(Limit::None);
        }
        let numeric = text
            .trim_start_matches(['-', '+'])
            .starts_with(|c: char| c.is_ascii_digit() || c == '.');
        let (fraction, rest) = if numeric {
            let (v, unit) = units::split_number(text).map_err(|e| bad(e.to_string()))?;
            if let Some(r) = unit.strip_prefix('%') {
                if v <= 0.0 {
                    return Err(bad(format!("a percentage of {v} % cannot be met")));
                }
                (v / 100.0, r.trim().to_string())
            } else if unit.contains('/')
                && units::parse_quantity(text, Quantity::Flow, self.units).is_err()
            {
                // A flow per unit area ("0.1 cfs/ac", "10 l/s/ha"); a flow
                // unit that holds a slash ("0.24 m3/s", "240 l/s") is a flow.
                let q = units::parse_flow_per_area(text).map_err(|e| bad(e.to_string()))?;
                if q < 0.0 {
                    return Err(bad(format!(
                        "a limit of {text} is negative and cannot be met"
                    )));
                }
                // SI input: cfs per ac already; units parse handles l/s/ha etc.
                return Ok(Limit::PerArea { cfs_per_ac: q });
            } else {
                let q = units::parse_quantity(text, Quantity::Flow, self.units)
                    .map_err(|e| bad(e.to_string()))?;
                if q < 0.0 {
                    return Err(bad(format!(
                        "a limit of {text} is negative and cannot be met"
                    )));
                }
                return Ok(Limit::Absolute { flow_cfs: q });
            }
        } else {
            (1.0, text.to_string())
        };
        // `rest` is "COND" or "COND STORM".
        if let Some(c) = conditions.iter().position(|c| c == &rest) {
            return Ok(Limit::Relative {
                fraction,
                condition: c,
                storm: None,
            });
        }
        for (i, _) in rest.match_indices(' ') {
            let (c, s) = (rest[..i].trim(), rest[i..].trim());
            if let (Some(ci), Some(si)) = (
                conditions.iter().position(|x| x == c),
                storms.iter().position(|x| x.name == s),
            ) {
                return Ok(Limit::Relative {
                    fraction,
                    condition: ci,
                    storm: Some(si),
                });
            }
        }
        let first = rest.split_whitespace().next().unwrap_or("");
        let mut e = bad(format!("cannot read \"{text}\" as a limit"));
        if !conditions.iter().any(|c| c == first) {
            e.message = format!("\"{first}\" is not a condition of this scenario");
            e = with_suggestion(e, first, conditions.iter().map(String::as_str));
        } else {
            let s = rest[first.len()..].trim();
            e.message = format!("\"{s}\" is not a storm of this scenario");
            e = with_suggestion(e, s, storms.iter().map(|s| s.name.as_str()));
        }
        Err(e)
    }

    pub(super) fn durations(&self, d: &Spanned<RawDurations>, ctx: &str) -> R<DurationControl> {
        let r = d.get_ref();
        let q = |s: &Spanned<String>, key: &str| -> R<(f64, f64)> {
            let t = s.get_ref().trim();
            let bad = || {
                self.err(
                    &s.span(),
                    &format!("{ctx}, {key}"),
                    format!("cannot read \"{t}\" as a frequency flow"),
                )
                .expected("\"Q2\", \"10% Q2\", \"50% Q10\"")
            };
            let (frac, rest) = match t.split_once('%') {
                Some((a, b)) => (
                    a.trim().parse::<f64>().map_err(|_| bad())? / 100.0,
                    b.trim(),
                ),
                None => (1.0, t),
            };
            let n: f64 = rest
                .strip_prefix(['Q', 'q'])
                .ok_or_else(bad)?
                .trim()
                .parse()
                .map_err(|_| bad())?;
            if !(frac > 0.0 && frac.is_finite() && n > 1.0 && n.is_finite()) {
                return Err(bad());
            }
            Ok((frac, n))
        };
        let from = q(&r.from, "from")?;
        let to = q(&r.to, "to")?;
        let tolerance = match &r.tolerance {
            Some(t) => {
                let v = self.qty(t, Quantity::Slope, &format!("{ctx}, tolerance"))?;
                if v < 0.0 {
                    return Err(self
                        .err(
                            &t.span(),
                            &format!("{ctx}, tolerance"),
                            "the tolerance cannot be negative",
                        )
                        .expected("a percentage such as \"10%\""));
                }
                v
            }
            None => 0.1,
        };
        Ok(DurationControl {
            from,
            to,
            tolerance,
            text: format!("{} to {}", r.from.get_ref(), r.to.get_ref()),
        })
    }

    /// What of point `p` cannot be checked, with its verb (`its limit
    /// "existing" needs`): each distinct limit that `cannot` holds for, and the
    /// flow-duration rule when `durations_too`; `None` when nothing. `verb` is
    /// the verb for one thing and for several (`("needs", "need")`).
    fn unchecked_what(
        p: &Point,
        cannot: impl Fn(&Limit) -> bool,
        durations_too: bool,
        verb: (&str, &str),
    ) -> Option<String> {
        let mut what: Vec<String> = Vec::new();
        for (l, t) in p.limits.iter().zip(&p.limit_text) {
            let said = format!("limit \"{t}\"");
            if cannot(l) && !what.contains(&said) {
                what.push(said);
            }
        }
        if p.durations.is_some() && durations_too {
            what.push("flow-duration rule".to_string());
        }
        match what.len() {
            0 => None,
            1 => Some(format!("its {} {}", what[0], verb.0)),
            _ => Some(format!("its {} {}", what.join(" and its "), verb.1)),
        }
    }

    /// The points, with warnings for limits that need an empty baseline and
    /// for conditions that never reach a point.
    pub(super) fn points(
        &mut self,
        raw: &RawScenario,
        conditions: &[String],
        storms: &[Storm],
        elements: &[Element],
        baseline_empty: bool,
    ) -> R<Vec<Point>> {
        // Points and limits.
        let mut points = Vec::new();
        for p in &raw.point {
            points.push(self.point(p, conditions, storms)?);
        }
        for (pi, p) in points.iter().enumerate() {
            let records = !raw.record.is_empty();
            if conditions.len() == 1 {
                let compares = |l: &Limit| matches!(l, Limit::Relative { .. });
                if let Some(what) =
                    Self::unchecked_what(p, compares, records, ("compares", "compare"))
                {
                    self.warnings.push(Warning::OneCondition {
                        point: p.name.clone(),
                        what,
                        condition: conditions[0].clone(),
                    });
                }
            }
            if baseline_empty {
                let missing = |l: &Limit| matches!(l, Limit::Relative { condition: 0, .. });
                if let Some(what) = Self::unchecked_what(p, missing, records, ("needs", "need")) {
                    self.warnings.push(Warning::NoBaseline {
                        point: p.name.clone(),
                        what,
                        baseline: conditions[0].clone(),
                        condition: conditions[1].clone(),
                    });
                }
            }
            for (c, cname) in conditions.iter().enumerate() {
                if baseline_empty && c == 0 {
                    continue;
                }
                let reaches = elements
                    .iter()
                    .any(|e| e.conditions[c] && e.to == Target::Point(pi));
                if !reaches {
                    self.warnings.push(Warning::PointNotReached {
                        point: p.name.clone(),
                        condition: cname.clone(),
                    });
                }
            }
        }
        Ok(points)
    }
}
