//! The outlets of a pond: each kind read with its dimensions, fixed or
//! to be sized.

use super::*;
use crate::methods::hydraulics::Perforation;

/// Most identical openings (`count`) or holes one outlet may have.
const MAX_OUTLET_COUNT: i64 = 10_000;

/// The kinds of outlet a pond may have.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum OutletKind {
    Orifice,
    RectangularOrifice,
    Weir,
    VNotch,
    Spillway,
    Riser,
    Rating,
    PerforatedRiser,
}

impl OutletKind {
    /// Every word read as an outlet kind: each kind's keyword first, then
    /// any other word for it. This table is the one list of outlet kinds:
    /// parsing, error messages and suggestions all read it.
    pub(super) const WORDS: [(&'static str, OutletKind); 9] = [
        ("orifice", OutletKind::Orifice),
        ("rectangular-orifice", OutletKind::RectangularOrifice),
        ("weir", OutletKind::Weir),
        ("v-notch", OutletKind::VNotch),
        ("spillway", OutletKind::Spillway),
        ("broad-crested-weir", OutletKind::Spillway),
        ("riser", OutletKind::Riser),
        ("rating", OutletKind::Rating),
        ("perforated-riser", OutletKind::PerforatedRiser),
    ];

    /// The kind a (lower-case) word names.
    pub(super) fn parse(word: &str) -> Option<Self> {
        Self::WORDS.iter().find(|w| w.0 == word).map(|w| w.1)
    }

    /// The kinds' keywords, as an expected list: `orifice | weir | ...`.
    pub(super) fn expected() -> String {
        let mut seen: Vec<OutletKind> = Vec::new();
        let mut words: Vec<&str> = Vec::new();
        for (w, k) in Self::WORDS {
            if !seen.contains(&k) {
                seen.push(k);
                words.push(w);
            }
        }
        words.join(" | ")
    }

    /// The keys an outlet of this kind takes besides `kind`.
    pub(super) fn keys(self) -> &'static [&'static str] {
        match self {
            OutletKind::Orifice => &["invert", "diameter", "cd", "count", "into"],
            OutletKind::RectangularOrifice => &["invert", "width", "height", "cd", "count", "into"],
            OutletKind::Weir => &[
                "crest",
                "length",
                "coefficient",
                "coefficient_table",
                "contractions",
                "into",
            ],
            OutletKind::VNotch => &["crest", "angle", "cd", "into"],
            OutletKind::Spillway => &[
                "crest",
                "length",
                "coefficient",
                "coefficient_table",
                "into",
            ],
            OutletKind::Riser => &["crest", "diameter", "coefficient", "cd", "into"],
            OutletKind::Rating => &["table", "into"],
            OutletKind::PerforatedRiser => &[
                "invert",
                "height",
                "holes",
                "hole_diameter",
                "cd",
                "form",
                "into",
            ],
        }
    }
}

impl Builder<'_> {
    pub(super) fn outlet(
        &self,
        o: &Spanned<RawOutlet>,
        ctx: &str,
        index: usize,
    ) -> R<(Outlet, Vec<SizedDim>)> {
        let r = o.get_ref();
        let outlet_kind = self.outlet_kind(o, ctx)?;
        let mut sized = Vec::new();
        let mut get =
            |field: SizedField, v: &Option<Spanned<RawValue>>, q: Quantity, what: &str| -> R<f64> {
                let v = self.req(v, &o.span(), ctx, field.key(), what)?;
                let (x, range) = self.dim(
                    v,
                    &format!("{ctx}, {}", field.key()),
                    q,
                    field.is_elevation(),
                    !field.is_elevation(),
                )?;
                if let Some((min, max)) = range {
                    sized.push(SizedDim {
                        element: 0,
                        outlet: index,
                        field,
                        min,
                        max,
                        span: v.span(),
                        increment: 0.0, // set by `ponds::sized_increments`
                    });
                }
                Ok(x)
            };
        let outlet = match outlet_kind {
            OutletKind::Orifice => Outlet::CircularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"6 in\"",
                )?,
                cd: self.discharge_coefficient(r, ctx, 0.61)?,
            },
            OutletKind::RectangularOrifice => Outlet::RectangularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                width_ft: get(SizedField::Width, &r.width, Quantity::Length, "\"1 ft\"")?,
                height_ft: get(
                    SizedField::Height,
                    &r.height,
                    Quantity::Length,
                    "\"0.5 ft\"",
                )?,
                cd: self.discharge_coefficient(r, ctx, 0.61)?,
            },
            OutletKind::Weir => {
                let contractions = match &r.contractions {
                    Some(c) if (0..=2).contains(c.get_ref()) => *c.get_ref() as u8,
                    Some(c) => {
                        return Err(self
                            .err(
                                &c.span(),
                                &format!("{ctx}, contractions"),
                                format!("{} end contractions", c.get_ref()),
                            )
                            .expected("0, 1 or 2"));
                    }
                    None => 0,
                };
                let crest_ft = get(SizedField::Crest, &r.crest, Quantity::Length, "103.2")?;
                let length_ft = get(SizedField::Length, &r.length, Quantity::Length, "\"4 ft\"")?;
                match self.coefficient_table(r, ctx)? {
                    Some(coefficients) => Outlet::VaryingWeir {
                        crest_ft,
                        length_ft,
                        coefficients,
                        contractions,
                    },
                    None => Outlet::SharpCrestedWeir {
                        crest_ft,
                        length_ft,
                        coefficient: self.weir_coefficient(r, ctx, 3.33)?,
                        contractions,
                    },
                }
            }
            OutletKind::VNotch => {
                let crest_ft = get(SizedField::Crest, &r.crest, Quantity::Length, "103.0")?;
                let (angle, range, angle_span) = self.notch_angle(o, ctx)?;
                if let Some((min, max)) = range {
                    sized.push(SizedDim {
                        element: 0,
                        outlet: index,
                        field: SizedField::Angle,
                        min,
                        max,
                        span: angle_span,
                        increment: 0.0, // set by `ponds::sized_increments`
                    });
                }
                Outlet::VNotchWeir {
                    crest_ft,
                    angle_deg: angle,
                    cd: self.discharge_coefficient(r, ctx, 0.58)?,
                }
            }
            OutletKind::Spillway => {
                let crest_ft = get(SizedField::Crest, &r.crest, Quantity::Length, "105.0")?;
                let length_ft = get(SizedField::Length, &r.length, Quantity::Length, "\"20 ft\"")?;
                match self.coefficient_table(r, ctx)? {
                    Some(coefficients) => Outlet::VaryingWeir {
                        crest_ft,
                        length_ft,
                        coefficients,
                        contractions: 0,
                    },
                    None => Outlet::BroadCrestedWeir {
                        crest_ft,
                        length_ft,
                        coefficient: self.weir_coefficient(r, ctx, 2.6)?,
                    },
                }
            }
            OutletKind::PerforatedRiser => {
                let invert_ft = get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?;
                self.perforated_riser(o, ctx, invert_ft)?
            }
            OutletKind::Riser => Outlet::Riser {
                crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "104.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"4 ft\"",
                )?,
                weir_coefficient: self.weir_coefficient(r, ctx, 3.33)?,
                cd: self.discharge_coefficient(r, ctx, 0.61)?,
            },
            OutletKind::Rating => self.rating(o, ctx)?,
        };
        Ok((outlet, sized))
    }

    /// The kind of an outlet, checked against the keys it is given.
    fn outlet_kind(&self, o: &Spanned<RawOutlet>, ctx: &str) -> R<OutletKind> {
        let r = o.get_ref();
        let kind_raw = self.req(
            &r.kind,
            &o.span(),
            ctx,
            "kind",
            "\"orifice\", \"weir\", \"spillway\", ...",
        )?;
        let kind = kind_raw.get_ref().to_ascii_lowercase();
        let Some(outlet_kind) = OutletKind::parse(&kind) else {
            return Err(self.unknown_word(
                &kind_raw.span(),
                &format!("{ctx}, kind"),
                format!("unknown outlet kind \"{kind}\""),
                OutletKind::expected(),
                &kind,
                OutletKind::WORDS.iter().map(|w| w.0),
            ));
        };
        let allowed = outlet_kind.keys();
        let present: [(&str, Option<std::ops::Range<usize>>); 17] = [
            ("into", r.into.as_ref().map(|x| x.span())),
            ("count", r.count.as_ref().map(|x| x.span())),
            ("holes", r.holes.as_ref().map(|x| x.span())),
            ("hole_diameter", r.hole_diameter.as_ref().map(|x| x.span())),
            ("form", r.form.as_ref().map(|x| x.span())),
            (
                "coefficient_table",
                r.coefficient_table.as_ref().map(|x| x.span()),
            ),
            ("invert", r.invert.as_ref().map(|x| x.span())),
            ("crest", r.crest.as_ref().map(|x| x.span())),
            ("diameter", r.diameter.as_ref().map(|x| x.span())),
            ("width", r.width.as_ref().map(|x| x.span())),
            ("height", r.height.as_ref().map(|x| x.span())),
            ("length", r.length.as_ref().map(|x| x.span())),
            ("angle", r.angle.as_ref().map(|x| x.span())),
            ("cd", r.cd.as_ref().map(|x| x.span())),
            ("coefficient", r.coefficient.as_ref().map(|x| x.span())),
            ("contractions", r.contractions.as_ref().map(|x| x.span())),
            ("table", r.table.as_ref().map(|x| x.span())),
        ];
        for (k, sp) in &present {
            if let Some(sp) = sp
                && !allowed.contains(k)
            {
                return Err(self
                    .err(
                        sp,
                        &format!("{ctx}, {k}"),
                        format!("a {kind} outlet does not take `{k}`"),
                    )
                    .expected(format!(
                        "the keys of a {kind}: kind, {}",
                        allowed.join(", ")
                    )));
            }
        }
        Ok(outlet_kind)
    }

    /// The weir coefficient (US units inside) or `default`.
    fn weir_coefficient(&self, r: &RawOutlet, ctx: &str, default: f64) -> R<f64> {
        let cf = match self.units {
            UnitSystem::Us => 1.0,
            UnitSystem::Si => 1.0 / units::M_PER_FT.sqrt(),
        };
        match &r.coefficient {
            Some(c) => {
                let v = self.num(c, &format!("{ctx}, coefficient"))?;
                if v <= 0.0 {
                    return Err(self
                        .err(
                            &c.span(),
                            &format!("{ctx}, coefficient"),
                            "the coefficient must be positive",
                        )
                        .expected("a positive weir coefficient"));
                }
                if v > MAX_WEIR_COEFFICIENT {
                    return Err(self
                        .err(
                            &c.span(),
                            &format!("{ctx}, coefficient"),
                            format!("a weir coefficient of {v} is far beyond any published value"),
                        )
                        .expected("a weir coefficient such as 3.33 (US) or 1.84 (SI)"));
                }
                Ok(v * cf)
            }
            None => Ok(default),
        }
    }

    /// The discharge coefficient `cd` or `default`.
    fn discharge_coefficient(&self, r: &RawOutlet, ctx: &str, default: f64) -> R<f64> {
        match &r.cd {
            Some(c) => {
                let v = self.num(c, &format!("{ctx}, cd"))?;
                if v <= 0.0 || v > 1.0 {
                    return Err(self
                        .err(
                            &c.span(),
                            &format!("{ctx}, cd"),
                            format!("cd = {v} is outside (0, 1]"),
                        )
                        .expected("a discharge coefficient such as 0.61"));
                }
                Ok(v)
            }
            None => Ok(default),
        }
    }

    /// The notch angle (degrees), its range when it is sized, and its span.
    #[allow(clippy::type_complexity)]
    fn notch_angle(
        &self,
        o: &Spanned<RawOutlet>,
        ctx: &str,
    ) -> R<(f64, Option<(f64, f64)>, std::ops::Range<usize>)> {
        let r = o.get_ref();
        let a = self.req(&r.angle, &o.span(), ctx, "angle", "90 (degrees)")?;
        let (angle, range) = match a.get_ref() {
            RawValue::Num(x) => (*x, None),
            RawValue::Range(rr) => match (&rr.0, &rr.1) {
                (RawValue::Num(x), RawValue::Num(y)) => (*x, Some((*x, *y))),
                _ => {
                    return Err(self
                        .err(
                            &a.span(),
                            &format!("{ctx}, angle"),
                            "an angle is a bare number of degrees",
                        )
                        .expected("{ min = 20, max = 120 }"));
                }
            },
            RawValue::Text(t) => match t
                .trim()
                .trim_end_matches("deg")
                .trim_end_matches('°')
                .trim()
                .parse::<f64>()
            {
                Ok(x) => (x, None),
                Err(_) => {
                    return Err(self
                        .err(
                            &a.span(),
                            &format!("{ctx}, angle"),
                            format!("cannot read \"{t}\" as an angle"),
                        )
                        .expected("degrees, e.g. 90"));
                }
            },
        };
        let bad = |x: f64| !(x > 0.0 && x < 180.0);
        if bad(angle) || range.is_some_and(|(x, y)| bad(x) || bad(y) || x > y) {
            return Err(self
                .err(
                    &a.span(),
                    &format!("{ctx}, angle"),
                    "the notch angle must lie between 0 and 180 degrees (and min <= max)",
                )
                .expected("degrees, e.g. 90"));
        }
        Ok((angle, range, a.span()))
    }

    /// A rating table: stage and flow pairs, stages rising, flows never falling.
    fn rating(&self, o: &Spanned<RawOutlet>, ctx: &str) -> R<Outlet> {
        let r = o.get_ref();
        let t = self.req(&r.table, &o.span(), ctx, "table", "[[stage, flow], ...]")?;
        let ff = Quantity::Flow.bare_factor(self.units).unwrap_or(1.0);
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let rows = self.table_rows(t, &format!("{ctx}, table"), lf, ff)?;
        self.bounded_rows(
            &rows,
            &t.span(),
            &format!("{ctx}, table"),
            [
                (Quantity::Length, "stage", None),
                (Quantity::Flow, "flow", None),
            ],
        )?;
        if rows.len() < 2 {
            return Err(self
                .err(
                    &t.span(),
                    &format!("{ctx}, table"),
                    "a rating needs at least two rows",
                )
                .expected("[[stage, flow], [stage, flow], ...]"));
        }
        for (i, w) in rows.windows(2).enumerate() {
            if w[1].0 <= w[0].0 {
                return Err(self
                    .err(
                        &t.span(),
                        &format!("{ctx}, table"),
                        format!("row {}: the stage does not increase", i + 2),
                    )
                    .expected("stages strictly increasing"));
            }
            if w[1].1 < w[0].1 {
                return Err(self
                    .err(
                        &t.span(),
                        &format!("{ctx}, table"),
                        format!("row {}: the flow decreases as the stage rises", i + 2),
                    )
                    .expected("flows that never decrease"));
            }
        }
        if rows.iter().any(|r| r.1 < 0.0) {
            return Err(self
                .err(&t.span(), &format!("{ctx}, table"), "a flow is negative")
                .expected("flows of zero or more"));
        }
        Ok(Outlet::Rating { table: rows })
    }
}

/// The words of the perforated-riser forms.
const PERFORATION_FORMS: [(&str, Perforation); 2] = [
    ("slot", Perforation::Slot),
    ("approximation", Perforation::Approximation),
];

impl Builder<'_> {
    /// `count`: identical copies of an opening (1 when absent).
    pub(super) fn outlet_count(&self, r: &RawOutlet, ctx: &str) -> R<u32> {
        match &r.count {
            None => Ok(1),
            Some(c) if (1..=MAX_OUTLET_COUNT).contains(c.get_ref()) => Ok(*c.get_ref() as u32),
            Some(c) => Err(self
                .err(
                    &c.span(),
                    &format!("{ctx}, count"),
                    format!("a count of {}", c.get_ref()),
                )
                .expected(format!("a whole number from 1 to {MAX_OUTLET_COUNT}"))),
        }
    }

    /// `coefficient_table = [[head, C], ...]` (heads rising from 0 or more,
    /// C positive), in US units; refused beside `coefficient`.
    fn coefficient_table(&self, r: &RawOutlet, ctx: &str) -> R<Option<Vec<(f64, f64)>>> {
        let Some(t) = &r.coefficient_table else {
            return Ok(None);
        };
        let key = format!("{ctx}, coefficient_table");
        if let Some(c) = &r.coefficient {
            return Err(self
                .err(
                    &c.span(),
                    &format!("{ctx}, coefficient"),
                    "both `coefficient` and `coefficient_table` are given",
                )
                .expected("one of them: a fixed C, or C against head"));
        }
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let cf = match self.units {
            UnitSystem::Us => 1.0,
            UnitSystem::Si => 1.0 / units::M_PER_FT.sqrt(),
        };
        let rows = self.table_rows(t, &key, lf, cf)?;
        let bad = rows.is_empty()
            || rows
                .iter()
                .any(|&(h, c)| h < 0.0 || c <= 0.0 || c / cf > MAX_WEIR_COEFFICIENT)
            || rows.windows(2).any(|w| w[1].0 <= w[0].0);
        if bad {
            return Err(self
                .err(&t.span(), &key, "the coefficient table is not a list of rising heads and positive coefficients")
                .expected("[[head, C], ...]: heads 0 or more, strictly rising; C positive, e.g. [[0.5, 2.7], [1.5, 3.1]] (US)"));
        }
        Ok(Some(rows))
    }

    /// A perforated riser: `holes` of `hole_diameter` spread over `height`
    /// above the lowest row (`invert`), `cd` (default 0.61), `form`.
    fn perforated_riser(&self, o: &Spanned<RawOutlet>, ctx: &str, invert_ft: f64) -> R<Outlet> {
        let r = o.get_ref();
        let h = self.req(&r.height, &o.span(), ctx, "height", "\"2 ft\"")?;
        let height_ft = self.positive(h, Quantity::Length, &format!("{ctx}, height"))?;
        let d = self.req(
            &r.hole_diameter,
            &o.span(),
            ctx,
            "hole_diameter",
            "\"1 in\"",
        )?;
        let hole_ft = self.positive(d, Quantity::Length, &format!("{ctx}, hole_diameter"))?;
        let n = self.req(&r.holes, &o.span(), ctx, "holes", "24")?;
        if !(1..=MAX_OUTLET_COUNT).contains(n.get_ref()) {
            return Err(self
                .err(
                    &n.span(),
                    &format!("{ctx}, holes"),
                    format!("{} holes", n.get_ref()),
                )
                .expected(format!("a whole number from 1 to {MAX_OUTLET_COUNT}")));
        }
        let form = match &r.form {
            None => Perforation::Slot,
            Some(f) => {
                let w = f.get_ref().trim().to_ascii_lowercase();
                match PERFORATION_FORMS.iter().find(|x| x.0 == w) {
                    Some(x) => x.1,
                    None => {
                        return Err(self.unknown_word(
                            &f.span(),
                            &format!("{ctx}, form"),
                            format!("unknown perforated-riser form \"{w}\""),
                            "slot | approximation",
                            &w,
                            PERFORATION_FORMS.iter().map(|x| x.0),
                        ));
                    }
                }
            }
        };
        Ok(Outlet::PerforatedRiser {
            invert_ft,
            height_ft,
            area_ft2: *n.get_ref() as f64 * std::f64::consts::PI * hole_ft * hole_ft / 4.0,
            cd: self.discharge_coefficient(r, ctx, 0.61)?,
            form,
        })
    }
}
