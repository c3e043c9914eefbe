//! The elements of a scenario as read: one enum over the `[[catchment]]`,
//! `[[pond]]`, `[[inflow]]` and `[[channel]]` tables, so that an element's
//! kind, name and spans travel together (in the order the study numbers
//! them: catchments, then ponds, then inflows, then channels), and the
//! building of each element's kind.

use super::*;

/// One raw element: its table as read, with the table's span.
#[derive(Clone, Copy)]
pub(super) enum RawElement<'r> {
    Catchment(&'r Spanned<RawCatchment>),
    Pond(&'r Spanned<RawPond>),
    Inflow(&'r Spanned<RawInflow>),
    Channel(&'r Spanned<RawChannel>),
}

impl<'r> RawElement<'r> {
    /// Every element of `raw`, in the order of the study's elements.
    pub(super) fn all(raw: &'r RawScenario) -> Vec<Self> {
        raw.catchment
            .iter()
            .map(RawElement::Catchment)
            .chain(raw.pond.iter().map(RawElement::Pond))
            .chain(raw.inflow.iter().map(RawElement::Inflow))
            .chain(raw.channel.iter().map(RawElement::Channel))
            .collect()
    }

    /// The kind in words, as errors name it.
    pub(super) fn word(self) -> &'static str {
        match self {
            RawElement::Catchment(_) => "catchment",
            RawElement::Pond(_) => "pond",
            RawElement::Inflow(_) => "inflow",
            RawElement::Channel(_) => "channel",
        }
    }

    /// The name as written.
    pub(super) fn name(self) -> &'r Spanned<String> {
        match self {
            RawElement::Catchment(c) => &c.get_ref().name,
            RawElement::Pond(p) => &p.get_ref().name,
            RawElement::Inflow(i) => &i.get_ref().name,
            RawElement::Channel(c) => &c.get_ref().name,
        }
    }

    /// The name without surrounding spaces, as the study keeps it.
    pub(super) fn trimmed_name(self) -> &'r str {
        self.name().get_ref().trim()
    }

    /// The `condition` key.
    pub(super) fn condition(self) -> &'r Option<Spanned<NameList>> {
        match self {
            RawElement::Catchment(c) => &c.get_ref().condition,
            RawElement::Pond(p) => &p.get_ref().condition,
            RawElement::Inflow(i) => &i.get_ref().condition,
            RawElement::Channel(c) => &c.get_ref().condition,
        }
    }

    /// The `to` key.
    pub(super) fn to(self) -> &'r Option<Spanned<String>> {
        match self {
            RawElement::Catchment(c) => &c.get_ref().to,
            RawElement::Pond(p) => &p.get_ref().to,
            RawElement::Inflow(i) => &i.get_ref().to,
            RawElement::Channel(c) => &c.get_ref().to,
        }
    }

    /// The `lag` key (a pond and a channel have none).
    pub(super) fn lag(self) -> Option<&'r Spanned<RawValue>> {
        match self {
            RawElement::Catchment(c) => c.get_ref().lag.as_ref(),
            RawElement::Pond(_) => None,
            RawElement::Inflow(i) => i.get_ref().lag.as_ref(),
            RawElement::Channel(_) => None,
        }
    }

    /// The span of the whole table.
    pub(super) fn span(self) -> std::ops::Range<usize> {
        match self {
            RawElement::Catchment(c) => c.span(),
            RawElement::Pond(p) => p.span(),
            RawElement::Inflow(i) => i.span(),
            RawElement::Channel(c) => c.span(),
        }
    }

    /// The span of the `to` value (empty when there is none).
    pub(super) fn to_span(self) -> std::ops::Range<usize> {
        self.to().as_ref().map_or(0..0, |t| t.span())
    }

    /// The context errors name: `pond "Basin A"`.
    pub(super) fn ctx(self) -> String {
        format!("{} \"{}\"", self.word(), self.name().get_ref())
    }
}

impl Builder<'_> {
    /// Each element's kind, in order, and the pond dimensions to size.
    pub(super) fn element_kinds(
        &mut self,
        elements: &[RawElement],
        p2_in: Option<f64>,
        storms: &[Storm],
    ) -> R<(Vec<ElementKind>, Vec<SizedDim>)> {
        let mut kinds = Vec::new();
        let mut sizing_raw = Vec::new();
        for (element_index, e) in elements.iter().enumerate() {
            let ctx = e.ctx();
            kinds.push(match *e {
                RawElement::Catchment(c) => {
                    ElementKind::Catchment(self.catchment(c.get_ref(), &c.span(), &ctx, p2_in)?)
                }
                RawElement::Pond(p) => {
                    let (pond, sized) = self.pond(p.get_ref(), &p.span(), &ctx, storms)?;
                    for mut s in sized {
                        s.element = element_index;
                        sizing_raw.push(s);
                    }
                    ElementKind::Pond(pond)
                }
                RawElement::Inflow(i) => {
                    let storm = self.inflow_storm(i.get_ref(), &ctx, storms)?;
                    ElementKind::Inflow(self.inflow(i.get_ref(), &i.span(), &ctx, storm)?)
                }
                RawElement::Channel(c) => {
                    ElementKind::Channel(self.channel(c.get_ref(), &c.span(), &ctx)?)
                }
            });
        }
        Ok((kinds, sizing_raw))
    }

    /// The storm an inflow belongs to (`None`: every storm).
    fn inflow_storm(&self, ri: &RawInflow, ctx: &str, storms: &[Storm]) -> R<Option<usize>> {
        let Some(s) = &ri.storm else {
            return Ok(None);
        };
        if let Some(i) = storms.iter().position(|x| x.name == *s.get_ref()) {
            return Ok(Some(i));
        }
        Err(self.unknown_word(
            &s.span(),
            &format!("{ctx}, storm"),
            format!("no storm is named \"{}\"", s.get_ref()),
            "the name of a [[storm]]",
            s.get_ref(),
            storms.iter().map(|s| s.name.as_str()),
        ))
    }
}
