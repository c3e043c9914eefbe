//! Cross-references between sections: where each element drains, its
//! conditions and lag, paths that loop or leave their condition, and
//! conditions that reach no point.

use super::*;

impl Builder<'_> {
    /// Each element with its conditions, target and lag.
    pub(super) fn link(
        &self,
        raw: &RawScenario,
        raw_elements: &[RawElement],
        kinds: Vec<ElementKind>,
        conditions: &[String],
    ) -> R<Vec<Element>> {
        let point_names: Vec<String> = raw
            .point
            .iter()
            .map(|p| p.get_ref().name.get_ref().trim().to_string())
            .collect();
        let mut elements = Vec::new();
        for (e, kind) in raw_elements.iter().zip(kinds) {
            let ctx = e.ctx();
            elements.push(Element {
                name: e.trimmed_name().to_string(),
                conditions: self.membership(e.condition(), conditions, &ctx)?,
                to: self.target(*e, raw_elements, &point_names, &ctx)?,
                lag_h: self.lag(e.lag(), &ctx)?,
                kind,
            });
        }
        Ok(elements)
    }

    /// Which conditions an element belongs to (all without a list).
    fn membership(
        &self,
        list: &Option<Spanned<NameList>>,
        conditions: &[String],
        ctx: &str,
    ) -> R<Vec<bool>> {
        let mut membership = vec![false; conditions.len()];
        match list {
            Some(l) => {
                if l.get_ref().0.is_empty() {
                    return Err(self
                        .err(
                            &l.span(),
                            &format!("{ctx}, condition"),
                            "the list of conditions is empty",
                        )
                        .expected("a condition name or a list of them"));
                }
                for c in &l.get_ref().0 {
                    if let Some(i) = conditions.iter().position(|x| x == c) {
                        membership[i] = true;
                    }
                }
            }
            None => membership.iter_mut().for_each(|m| *m = true),
        }
        Ok(membership)
    }

    /// Where an element drains: a point, or a pond or channel other than itself.
    fn target(
        &self,
        e: RawElement,
        raw_elements: &[RawElement],
        point_names: &[String],
        ctx: &str,
    ) -> R<Target> {
        let to_raw = self.req(
            e.to(),
            &e.span(),
            ctx,
            "to",
            "\"the name of a pond, channel or point\"",
        )?;
        let tname = to_raw.get_ref().trim();
        if let Some(i) = point_names.iter().position(|n| n == tname) {
            return Ok(Target::Point(i));
        }
        if let Some(i) = raw_elements.iter().position(|x| x.trimmed_name() == tname) {
            let found = raw_elements[i];
            if !matches!(found, RawElement::Pond(_) | RawElement::Channel(_)) {
                return Err(self
                    .err(
                        &to_raw.span(),
                        &format!("{ctx}, to"),
                        format!(
                            "\"{tname}\" is a {}; flow can only go to a pond, a channel or a point",
                            found.word()
                        ),
                    )
                    .expected("the name of a pond, channel or point"));
            }
            if found.trimmed_name() == e.trimmed_name() {
                return Err(self
                    .err(
                        &to_raw.span(),
                        &format!("{ctx}, to"),
                        "an element cannot drain to itself",
                    )
                    .expected("the name of a pond, channel or point downstream"));
            }
            return Ok(Target::Element(i));
        }
        let targets: Vec<&str> = point_names
            .iter()
            .map(String::as_str)
            .chain(
                raw_elements
                    .iter()
                    .filter(|x| matches!(x, RawElement::Pond(_) | RawElement::Channel(_)))
                    .filter(|x| x.trimmed_name() != e.trimmed_name())
                    .map(|x| x.trimmed_name()),
            )
            .collect();
        let err = self
            .err(
                &to_raw.span(),
                &format!("{ctx}, to"),
                format!("nothing is named \"{tname}\""),
            )
            .expected("the name of a pond, channel or point");
        Err(if point_names.is_empty() {
            err.hint(format!(
                "the scenario has no [[point]]; add one with name = \"{tname}\""
            ))
        } else {
            match suggest::nearest(tname, targets.iter().copied()) {
                Some(h) => err.hint(suggest::did_you_mean(h)),
                None => err.hint(format!(
                    "the points, ponds and channels are {}",
                    quoted_str(&targets)
                )),
            }
        })
    }

    /// The `lag` of an element, h (zero without one).
    fn lag(&self, lag: Option<&Spanned<RawValue>>, ctx: &str) -> R<f64> {
        let Some(l) = lag else {
            return Ok(0.0);
        };
        let v = self.qty(l, Quantity::Time, &format!("{ctx}, lag"))?;
        if v < 0.0 {
            return Err(self
                .err(
                    &l.span(),
                    &format!("{ctx}, lag"),
                    "a lag cannot be negative",
                )
                .expected("a time of zero or more"));
        }
        if v > MAX_LAG_H {
            return Err(self
                .err(
                    &l.span(),
                    &format!("{ctx}, lag"),
                    format!(
                        "a lag of {} h is longer than runnel's limit of 31 days ({} h)",
                        units::short(v, 4),
                        units::short(MAX_LAG_H, 4)
                    ),
                )
                .expected("a lag of at most 31 days (\"744 h\")")
                .hint("check the unit: a lag is usually minutes or hours"));
        }
        Ok(v)
    }
}

/// Names quoted and joined: `"a", "b"`.
fn quoted_str(names: &[&str]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

impl Builder<'_> {
    /// Every element's path must reach a point in each of its conditions,
    /// without a loop and without leaving the condition.
    pub(super) fn check_paths(
        &self,
        raw_elements: &[RawElement],
        elements: &[Element],
        conditions: &[String],
    ) -> R<()> {
        // Every element's path must reach a point in each of its conditions.
        for (i, e) in elements.iter().enumerate() {
            for (c, cname) in conditions.iter().enumerate() {
                if !e.conditions[c] {
                    continue;
                }
                let mut seen = vec![false; elements.len()];
                let mut at = i;
                loop {
                    if seen[at] {
                        // `at` lies on the loop: name it and the loop from it.
                        let span = &raw_elements[at].to_span();
                        return Err(self
                            .err(
                                span,
                                &format!(
                                    "{} \"{}\", to",
                                    elements[at].kind_word(),
                                    elements[at].name
                                ),
                                "the flow path loops back on itself (a cycle)",
                            )
                            .expected("every path to end at a point")
                            .hint(cycle_text(elements, at)));
                    }
                    seen[at] = true;
                    match elements[at].to {
                        Target::Point(_) => break,
                        Target::Element(j) => {
                            if !elements[j].conditions[c] {
                                let span = &raw_elements[at].to_span();
                                return Err(self
                                    .err(span, &format!("{} \"{}\", to", elements[at].kind_word(), elements[at].name), format!("in condition \"{cname}\" it drains to \"{}\", which is not part of that condition", elements[j].name))
                                    .expected(format!("a target that belongs to condition \"{cname}\""))
                                    .hint(format!("add \"{cname}\" to the `condition` list of \"{}\", or give this element a condition list without it", elements[j].name)));
                            }
                            at = j;
                        }
                    }
                }
            }
        }
        Ok(())
    }

    /// Every condition must have an element (the baseline may be empty when
    /// one other condition holds every element); returns whether it is.
    pub(super) fn check_conditions_reached(
        &self,
        raw: &RawScenario,
        elements: &[Element],
        conditions: &[String],
    ) -> R<bool> {
        // Conditions that never reach a point are an error.
        if elements.is_empty() {
            return Err(self
                .src
                .error("the scenario has no [[catchment]], [[pond]] or [[inflow]]")
                .expected("at least one catchment that drains to a [[point]]"));
        }
        // A scenario whose elements all belong to one condition other than
        // the baseline (a pond to route, nothing to compare) runs without a
        // baseline: limits that need it are reported "not checked".
        let baseline_empty = conditions.len() == 2 && !elements.iter().any(|e| e.conditions[0]);
        for (c, cname) in conditions.iter().enumerate() {
            if baseline_empty && c == 0 {
                continue;
            }
            if !elements.iter().any(|e| e.conditions[c]) {
                let Some(span) = raw.baseline.as_ref().map(|b| b.span()) else {
                    return Err(self
                        .src
                        .error(format!("no element belongs to the baseline condition \"{cname}\", so it never reaches a point"))
                        .expected("elements with `condition = \"existing\"` (or no `condition`)")
                        .hint("name the baseline with `baseline = \"...\"` at the top of the scenario"));
                };
                return Err(self
                    .err(&span, "baseline", format!("condition \"{cname}\" has no catchment, pond or inflow, so it never reaches a point"))
                    .expected("at least one element in each condition")
                    .hint(if c == 0 { "name the baseline with `baseline = \"...\"`, or give elements `condition = \"existing\"`".to_string() } else { "check the spelling of the condition lists".to_string() }));
            }
        }
        if raw.point.is_empty() && !elements.is_empty() {
            return Err(self
                .src
                .error("the scenario has no [[point]]")
                .expected("at least one [[point]] where conditions are compared"));
        }
        Ok(baseline_empty)
    }
}

pub(super) fn cycle_text(elements: &[Element], start: usize) -> String {
    let mut names = vec![elements[start].name.clone()];
    let mut at = start;
    for _ in 0..elements.len() {
        match elements[at].to {
            Target::Element(j) => {
                names.push(elements[j].name.clone());
                if j == start {
                    break;
                }
                at = j;
            }
            Target::Point(_) => break,
        }
    }
    format!("the loop: {}", names.join(" -> "))
}
