//! The `[[channel]]` section: reaches routed by the Muskingum method, with
//! their K (a duration) and X (0 to 0.5).

use super::*;

impl Builder<'_> {
    /// A channel's K and X, checked.
    pub(super) fn channel(
        &self,
        rc: &RawChannel,
        span: &std::ops::Range<usize>,
        ctx: &str,
    ) -> R<Channel> {
        let k = self.req(
            &rc.k,
            span,
            ctx,
            "k",
            "\"40 min\" (Muskingum K, the reach's travel time)",
        )?;
        let kctx = format!("{ctx}, k");
        let k_h = self.qty(k, Quantity::Time, &kctx)?;
        if k_h <= 0.0 {
            return Err(self
                .err(
                    &k.span(),
                    &kctx,
                    format!(
                        "Muskingum K must be a positive duration, got {}",
                        show(k.get_ref())
                    ),
                )
                .expected("a duration greater than zero, such as \"40 min\" or \"2 h\"")
                .hint("K is the reach's travel time: its length over the flood wave's speed"));
        }
        if k_h > MAX_LAG_H {
            return Err(self
                .err(
                    &k.span(),
                    &kctx,
                    format!(
                        "a K of {} h is longer than runnel's limit of 31 days ({} h)",
                        units::short(k_h, 4),
                        units::short(MAX_LAG_H, 4)
                    ),
                )
                .expected("a K of at most 31 days (\"744 h\")")
                .hint("check the unit: a site's swale or ditch has a K of minutes, a stream one of hours"));
        }
        let x = self.req(&rc.x, span, ctx, "x", "0.2 (Muskingum X, 0 to 0.5)")?;
        let xctx = format!("{ctx}, x");
        let xv = self.num(x, &xctx)?;
        if !(0.0..=0.5).contains(&xv) {
            return Err(self
                .err(
                    &x.span(),
                    &xctx,
                    format!("Muskingum X must lie between 0 and 0.5, got {xv}"),
                )
                .expected("a number from 0 to 0.5")
                .hint("X weights inflow against outflow in the reach's storage: 0 for a reservoir-like reach, 0.5 for pure translation; channels commonly 0.1 to 0.3 (common practice, no published source)"));
        }
        Ok(Channel { k_h, x: xv })
    }

    /// Warns of a channel that nothing drains to in a condition it belongs to.
    pub(super) fn channel_warnings(&mut self, elements: &[Element], conditions: &[String]) {
        for (i, e) in elements.iter().enumerate() {
            if !matches!(e.kind, ElementKind::Channel(_)) {
                continue;
            }
            for (c, cname) in conditions.iter().enumerate() {
                if !e.conditions[c] {
                    continue;
                }
                let fed = elements
                    .iter()
                    .any(|u| u.conditions[c] && u.to == Target::Element(i));
                if !fed {
                    self.warnings.push(Warning::ChannelNoInflow {
                        channel: e.name.clone(),
                        condition: cname.clone(),
                    });
                }
            }
        }
    }

    /// Every channel must have a routing split with non-negative
    /// coefficients at a run's step ([`Channel::plan`]); `run` names the
    /// run in the message (empty for the design storms' step).
    pub(super) fn check_channels(
        &self,
        raw_elements: &[RawElement],
        elements: &[Element],
        step_h: f64,
        run: &str,
    ) -> R<()> {
        for (i, e) in elements.iter().enumerate() {
            let ElementKind::Channel(ch) = &e.kind else {
                continue;
            };
            if ch.plan(step_h).is_some() {
                continue;
            }
            let span = raw_elements.get(i).map_or(0..0, |r| r.span());
            return Err(self
                .err(
                    &span,
                    &format!("channel \"{}\"", e.name),
                    format!(
                        "K = {} min and X = {} cannot be routed at the step of {} min{run} with non-negative Muskingum coefficients in at most {} sub-reaches times sub-steps",
                        units::short(ch.k_h * 60.0, 6),
                        ch.x,
                        units::short(step_h * 60.0, 4),
                        crate::methods::channel::MAX_PLAN_WORK
                    ),
                )
                .expected("K and X with 2 (K/n) X <= step/m <= 2 (K/n) (1 - X) for some n sub-reaches and m sub-steps")
                .hint("at X = 0.5 the reach is a pure translation: give K as a whole number of steps, or use X = 0.45; a very long K at a short step also needs too many sub-reaches: use a coarser `step`"));
        }
        Ok(())
    }
}
