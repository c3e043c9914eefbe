//! The `[[storm]]` section: design storms from NRCS patterns, tables and gauges.

use super::*;
use crate::methods::rainfall::nested;

impl Builder<'_> {
    pub(super) fn storm(&mut self, s: &Spanned<RawStorm>) -> R<Storm> {
        let rs = s.get_ref();
        let name = rs.name.get_ref().clone();
        let ctx = format!("storm \"{name}\"");
        if let Some(g) = &rs.gauge {
            if let Some(p) = &rs.pattern {
                return Err(self
                    .err(
                        &p.span(),
                        &format!("{ctx}, pattern"),
                        "a storm takes either `gauge` or `pattern`, not both",
                    )
                    .expected("one of them"));
            }
            let (series, path) = self.gauge(g, &rs.interval, &rs.missing, &ctx, 0)?;
            return Ok(Storm {
                name,
                rain: StormRain::Gauge {
                    path,
                    interval_h: series.interval_s as f64 / 3600.0,
                    start_s: series.start_s,
                    depth_in: series
                        .depth
                        .iter()
                        .map(|d| d * self.depth_factor())
                        .collect(),
                },
            });
        }
        let pat = self.req(
            &rs.pattern,
            &s.span(),
            &ctx,
            "pattern",
            "\"nrcs-type-ii\" (or a `gauge` file)",
        )?;
        if pat.get_ref().eq_ignore_ascii_case("nested") {
            return self.nested_storm(rs, s, name, &ctx);
        }
        self.nested_keys_unused(rs, &ctx, pat.get_ref())?;
        let depth_raw = self.req(&rs.depth, &s.span(), &ctx, "depth", "\"5.1 in\"")?;
        let depth = self.positive(depth_raw, Quantity::Depth, &format!("{ctx}, depth"))?;
        if !(STORM_DEPTH_USUAL_IN.0..=STORM_DEPTH_USUAL_IN.1).contains(&depth) {
            let (value, usual, hint) = self.depth_slip(depth_raw, depth, STORM_DEPTH_USUAL_IN);
            self.warnings.push(Warning::StormDepthUnusual {
                storm: name.clone(),
                value,
                usual,
                hint,
            });
        }
        let key = pat.get_ref().to_ascii_lowercase();
        let nrcs = match key.as_str() {
            "nrcs-type-i" => Some(NrcsType::I),
            "nrcs-type-ia" => Some(NrcsType::IA),
            "nrcs-type-ii" => Some(NrcsType::II),
            "nrcs-type-iii" => Some(NrcsType::III),
            "uniform" | "table" => None,
            other => {
                let keys = [
                    "nrcs-type-i",
                    "nrcs-type-ia",
                    "nrcs-type-ii",
                    "nrcs-type-iii",
                    "uniform",
                    "table",
                    "nested",
                ];
                return Err(self.unknown_word(
                    &pat.span(),
                    &format!("{ctx}, pattern"),
                    format!("unknown pattern \"{other}\""),
                    keys.join(" | "),
                    other,
                    keys,
                ));
            }
        };
        let duration_h = match (&rs.duration, nrcs) {
            (Some(d), Some(_)) => {
                let v = self.qty(d, Quantity::Time, &format!("{ctx}, duration"))?;
                if (v - 24.0).abs() > 1e-9 {
                    return Err(self
                        .err(
                            &d.span(),
                            &format!("{ctx}, duration"),
                            "the NRCS patterns are 24-hour storms",
                        )
                        .expected("\"24 h\" or no `duration`"));
                }
                24.0
            }
            (None, Some(_)) => 24.0,
            (Some(d), None) => self.positive(d, Quantity::Time, &format!("{ctx}, duration"))?,
            (None, None) => {
                return Err(self
                    .err(&s.span(), &ctx, "missing required key `duration`")
                    .expected("`duration = \"6 h\"` for uniform and table storms"));
            }
        };
        let curve = match (key.as_str(), nrcs) {
            (_, Some(t)) => t.mass_curve(),
            ("uniform", _) => MassCurve::uniform(),
            _ => {
                let t = self.req(
                    &rs.table,
                    &s.span(),
                    &ctx,
                    "table",
                    "[[0.0, 0.0], ..., [1.0, 1.0]]",
                )?;
                let rows = self.pairs(t, &format!("{ctx}, table"))?;
                MassCurve::from_table(&rows).map_err(|e| {
                    self.err(&t.span(), &format!("{ctx}, table"), e.to_string())
                        .expected("a mass curve from [0, 0] to [1, 1] that never decreases")
                })?
            }
        };
        if rs.table.is_some()
            && key != "table"
            && let Some(t) = &rs.table
        {
            return Err(self
                .err(
                    &t.span(),
                    &format!("{ctx}, table"),
                    format!("`table` is only used with pattern = \"table\", not \"{key}\""),
                )
                .expected("no `table` key, or pattern = \"table\""));
        }
        Ok(Storm {
            name,
            rain: StormRain::Pattern {
                curve,
                nrcs,
                key,
                depth_in: depth,
                duration_h,
            },
        })
    }

    /// `depths` and `peak_at` belong to nested storms only.
    fn nested_keys_unused(&self, rs: &RawStorm, ctx: &str, pattern: &str) -> R<()> {
        if let Some(d) = &rs.depths {
            return Err(self
                .err(
                    &d.span(),
                    &format!("{ctx}, depths"),
                    format!("`depths` is only used with pattern = \"nested\", not \"{pattern}\""),
                )
                .expected("no `depths` key, or pattern = \"nested\""));
        }
        if let Some(p) = &rs.peak_at {
            return Err(self
                .err(
                    &p.span(),
                    &format!("{ctx}, peak_at"),
                    format!("`peak_at` is only used with pattern = \"nested\", not \"{pattern}\""),
                )
                .expected("no `peak_at` key, or pattern = \"nested\""));
        }
        Ok(())
    }

    /// A nested storm: local depth-duration values arranged by the
    /// alternating-block method at the run's step.
    fn nested_storm(
        &mut self,
        rs: &RawStorm,
        s: &Spanned<RawStorm>,
        name: String,
        ctx: &str,
    ) -> R<Storm> {
        for (key, v) in [
            ("depth", rs.depth.as_ref().map(|d| d.span())),
            ("table", rs.table.as_ref().map(|t| t.span())),
        ] {
            if let Some(span) = v {
                return Err(self
                    .err(
                        &span,
                        &format!("{ctx}, {key}"),
                        format!("a nested storm takes its depth from `depths`; `{key}` is not used"),
                    )
                    .expected("`depths = [[\"5 min\", \"0.48 in\"], ..., [\"24 h\", \"5.1 in\"]]` and no `{key}`".replace("{key}", key)));
            }
        }
        let t = self.req(
            &rs.depths,
            &s.span(),
            ctx,
            "depths",
            "[[\"5 min\", \"0.48 in\"], [\"1 h\", \"1.9 in\"], ..., [\"24 h\", \"5.1 in\"]]",
        )?;
        let dctx = format!("{ctx}, depths");
        let mut rows = Vec::with_capacity(t.get_ref().len());
        for (i, row) in t.get_ref().iter().enumerate() {
            let [d, p] = row.get_ref().as_slice() else {
                return Err(self
                    .err(
                        &row.span(),
                        &dctx,
                        format!("row {} has {} values", i + 1, row.get_ref().len()),
                    )
                    .expected("[duration, depth] pairs such as [\"15 min\", \"0.9 in\"]"));
            };
            let rctx = format!("{dctx}, row {}", i + 1);
            rows.push((
                self.positive(d, Quantity::Time, &rctx)?,
                self.positive(p, Quantity::Depth, &rctx)?,
            ));
        }
        nested::check(&rows).map_err(|e| {
            self.err(&t.span(), &dctx, e.to_string())
                .expected("durations increasing, depths increasing, average intensities (depth / duration) never increasing")
                .hint("list the local depth-duration values of one return period, shortest duration first")
        })?;
        let (last_h, _) = rows[rows.len() - 1];
        let duration_h = match &rs.duration {
            Some(d) => {
                let v = self.positive(d, Quantity::Time, &format!("{ctx}, duration"))?;
                if v > last_h * (1.0 + 1e-9) {
                    return Err(self
                        .err(&d.span(), &format!("{ctx}, duration"), format!("the duration {} h is longer than the longest duration in `depths` ({} h)", units::short(v, 4), units::short(last_h, 4)))
                        .expected("a duration no longer than the last row of `depths`, or no `duration`"));
                }
                v.min(last_h)
            }
            None => last_h,
        };
        let peak_at = match &rs.peak_at {
            None => 0.5,
            Some(v) => {
                let pctx = format!("{ctx}, peak_at");
                let frac = match v.get_ref() {
                    RawValue::Num(x) => *x,
                    _ => self.qty(v, Quantity::Time, &pctx)? / duration_h,
                };
                if !(0.0..=1.0).contains(&frac) {
                    return Err(self
                        .err(&v.span(), &pctx, format!("the peak falls at {} of the duration, outside the storm", units::short(frac, 4)))
                        .expected("a fraction of the duration from 0 to 1 (0.5, the middle, by default) or a time within the storm such as \"12 h\""));
                }
                frac
            }
        };
        let depth_in = nested::depth_at(&rows, duration_h).0;
        Ok(Storm {
            name,
            rain: StormRain::Nested {
                depths: rows,
                peak_at,
                duration_h,
                depth_in,
            },
        })
    }

    pub(super) fn depth_factor(&self) -> f64 {
        Quantity::Depth.bare_factor(self.units).unwrap_or(1.0)
    }

    pub(super) fn gauge(
        &mut self,
        g: &Spanned<String>,
        interval: &Option<Spanned<RawValue>>,
        missing: &Option<Spanned<String>>,
        ctx: &str,
        max_intervals: usize,
    ) -> R<(gauge::GaugeSeries, PathBuf)> {
        let path = self.resolve(g, &format!("{ctx}, gauge"))?;
        let interval_s = match interval {
            Some(v) => {
                let h = self.positive(v, Quantity::Time, &format!("{ctx}, interval"))?;
                let s = (h * 3600.0).round();
                if s < 1.0 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, interval"),
                            "the interval must be at least one second",
                        )
                        .expected("a time such as \"15 min\""));
                }
                Some(s as i64)
            }
            None => None,
        };
        let missing_zero = match missing {
            Some(m) if m.get_ref() == "zero" => true,
            Some(m) if m.get_ref() == "error" => false,
            Some(m) => {
                return Err(self
                    .err(
                        &m.span(),
                        &format!("{ctx}, missing"),
                        format!("unknown value \"{}\"", m.get_ref()),
                    )
                    .expected("\"zero\" (missing intervals have no rain) or \"error\""));
            }
            None => false,
        };
        let file = std::fs::File::open(&path).map_err(|e| {
            self.err(
                &g.span(),
                &format!("{ctx}, gauge"),
                format!("cannot read {}: {e}", path.display()),
            )
        })?;
        let size_hint = file.metadata().ok().map(|m| m.len());
        let opts = gauge::GaugeOptions {
            interval_s,
            missing_zero,
            max_intervals: if max_intervals == 0 {
                MAX_STEPS
            } else {
                max_intervals
            },
        };
        // Read in chunks: a long record's file is never held whole.
        let series = gauge::parse_gauge_reader(file, size_hint, &opts).map_err(|e| {
            let mut ie = InputError::new(&path, e.message.clone()).context(format!("{ctx}, gauge"));
            if e.line > 0 {
                ie = ie.at_line(e.line);
                if let Some(c) = e.column {
                    ie.column = Some(c);
                }
                ie.snippet = line_of_file(&path, e.line);
            }
            if !e.expected.is_empty() {
                ie = ie.expected(e.expected.clone());
            }
            ie
        })?;
        Ok((series, path))
    }
}
