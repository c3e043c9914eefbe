//! The step and the checks that depend on it: the run length of each
//! storm, notes on coarse steps, and pond tables and unit hydrographs that
//! must fit at the step they run at.

use super::*;

impl Builder<'_> {
    /// The step (h) and whether the scenario gave it; every storm must fit
    /// in [`MAX_STEPS`] at it.
    pub(super) fn step(
        &self,
        raw: &RawScenario,
        elements: &[Element],
        storms: &[Storm],
    ) -> R<(f64, bool)> {
        // Step.
        let min_tc = elements
            .iter()
            .filter_map(|e| match &e.kind {
                ElementKind::Catchment(c) => Some(c.tc_h),
                _ => None,
            })
            .fold(f64::INFINITY, f64::min);
        let (step_h, step_given) = match &raw.step {
            Some(s) => {
                let v = self.qty(s, Quantity::Time, "step")?;
                if v <= 0.0 {
                    return Err(self
                        .err(
                            &s.span(),
                            "step",
                            format!("the step must be positive, got {}", show(s.get_ref())),
                        )
                        .expected("a time such as \"2 min\""));
                }
                (v, true)
            }
            None => (default_step_h(min_tc), false),
        };
        // Paths are free of cycles here (checked above). A channel adds
        // the time its recession needs (`Element::run_allowance_h`).
        let max_path_lag_h = (0..elements.len())
            .map(|i| {
                let mut lag = 0.0;
                let mut at = i;
                for _ in 0..elements.len() {
                    lag += elements[at].run_allowance_h();
                    match elements[at].to {
                        Target::Element(j) => at = j,
                        Target::Point(_) => break,
                    }
                }
                lag
            })
            .fold(0.0, f64::max);
        for (si, s) in storms.iter().enumerate() {
            // The run lasts until the rain and every inflow end, plus the
            // longest sum of lags down to a point, plus the tail.
            let inflow_end = elements
                .iter()
                .filter_map(|e| match &e.kind {
                    ElementKind::Inflow(i) if i.storm.is_none() || i.storm == Some(si) => {
                        Some(i.end_h())
                    }
                    _ => None,
                })
                .fold(0.0, f64::max);
            let n =
                ((s.rain_end_h().max(inflow_end) + max_path_lag_h + 7.0 * 24.0) / step_h).ceil();
            if n > MAX_STEPS as f64 {
                let least = format_step_up((s.rain_end_h() + 7.0 * 24.0) / MAX_STEPS as f64);
                return Err(match &raw.step {
                    Some(st) => self
                        .err(
                            &st.span(),
                            "step",
                            format!(
                                "storm \"{}\" would need {n:.0} steps at a step of {}, more than runnel's limit of {MAX_STEPS}",
                                s.name,
                                format_step_up(step_h)
                            ),
                        )
                        .expected("a step that gives at most 50 million steps per storm")
                        .hint(format!(
                            "use a step of at least {least}; without `step` runnel picks {}",
                            format_step_up(default_step_h(min_tc))
                        )),
                    None => {
                        let span = raw.storm.get(si).map(|x| x.span()).unwrap_or(0..0);
                        let msg = format!(
                            "the storm lasts {} h; with its 7-day tail it would need {n:.0} steps at the step of {}, more than runnel's limit of {MAX_STEPS}",
                            units::sig(s.rain_end_h(), 4),
                            format_step_up(step_h)
                        );
                        self.err(&span, &format!("storm \"{}\"", s.name), msg)
                            .expected(
                                "a storm (and its tail of 7 days) that fits in 50 million steps",
                            )
                            .hint(format!(
                                "shorten the storm, or give a coarser `step` of at least {least}"
                            ))
                    }
                });
            }
        }
        Ok((step_h, step_given))
    }

    /// Warnings that depend on the step and storms.
    pub(super) fn step_warnings(&mut self, elements: &[Element], storms: &[Storm], step_h: f64) {
        // Warnings that depend on the step and storms.
        for e in elements {
            if let ElementKind::Catchment(c) = &e.kind {
                let tp = unit_hydrograph::time_to_peak_h(step_h, c.uh_lag_h);
                let base_h = c.shape.time_base_over_tp() * tp;
                if base_h > crate::engine::network::TAIL_H {
                    self.warnings.push(Warning::Note(format!(
                        "catchment \"{}\": its unit hydrograph lasts {base_h:.0} h, longer than the 7 days a storm runs after its rain; the end of its runoff falls outside the run",
                        e.name
                    )));
                }
                if step_h > 0.25 * tp {
                    self.warnings.push(Warning::StepCoarse {
                        catchment: e.name.clone(),
                        step_h,
                        tp_h: tp,
                    });
                }
                for s in storms {
                    if s.rain_end_h() < c.tc_h {
                        self.warnings.push(Warning::StormShorterThanTc {
                            storm: s.name.clone(),
                            catchment: e.name.clone(),
                            duration_h: s.rain_end_h(),
                            tc_h: c.tc_h,
                        });
                    }
                }
            }
        }
    }

    pub(super) fn check_routing(
        &self,
        raw_elements: &[RawElement],
        elements: &[Element],
        step_h: f64,
    ) -> R<()> {
        // Each pond's storage-indication relation must increase strictly at this step.
        for (i, e) in elements.iter().enumerate() {
            if let ElementKind::Pond(p) = &e.kind {
                let top = p
                    .storage
                    .rows()
                    .last()
                    .map(|r| r.0)
                    .unwrap_or(0.0)
                    .max(p.top_ft.unwrap_or(f64::NEG_INFINITY));
                let vmax = p.storage.volume_ft3(top + 0.5);
                if let Err(err) = crate::engine::network::pond_table_to(p, step_h * 3600.0, vmax) {
                    let span = raw_elements[i].span();
                    return Err(self
                        .err(
                            &span,
                            &format!("pond \"{}\"", e.name),
                            format!("the stage-storage-discharge table cannot be routed: {err}"),
                        )
                        .expected(
                            "storage that grows with stage (2S/dt + O strictly increasing)",
                        ));
                }
            }
        }
        Ok(())
    }

    pub(super) fn check_unit_hydrograph_sizes(
        &self,
        raw_elements: &[RawElement],
        elements: &[Element],
        records: &[Record],
        step_h: f64,
    ) -> R<()> {
        // A unit hydrograph must fit in memory at every step it is used at
        // (a very long Tc, e.g. from a near-zero slope, would not).
        let finest_step_h = records.iter().map(|r| r.step_h).fold(step_h, f64::min);
        for (i, e) in elements.iter().enumerate() {
            if let ElementKind::Catchment(c) = &e.kind {
                let tp_h = unit_hydrograph::time_to_peak_h(finest_step_h, c.uh_lag_h);
                let n = c.shape.time_base_over_tp() * tp_h / finest_step_h;
                if n.is_nan() || n > MAX_STEPS as f64 {
                    let span = match raw_elements[i] {
                        RawElement::Catchment(c) => c
                            .get_ref()
                            .tc
                            .as_ref()
                            .map_or_else(|| c.span(), |t| t.span()),
                        _ => raw_elements[i].span(),
                    };
                    return Err(self
                        .err(
                            &span,
                            &format!("catchment \"{}\"", e.name),
                            format!(
                                "the time of concentration works out to {:.3e} h, so its unit hydrograph would need {n:.3e} steps, more than runnel's limit of {MAX_STEPS}",
                                c.tc_h
                            ),
                        )
                        .expected("a time of concentration of hours, not years")
                        .hint("check the flow path's lengths, slopes and Manning n, and `p2`"));
                }
            }
        }
        Ok(())
    }
}
