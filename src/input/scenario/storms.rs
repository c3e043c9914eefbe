//! The `[[storm]]` section: design storms from NRCS patterns, tables and gauges.

use super::*;

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
