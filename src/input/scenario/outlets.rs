//! The outlets of a pond: each kind read with its dimensions, fixed or
//! to be sized.

use super::*;

impl Builder<'_> {
    pub(super) fn outlet(
        &self,
        o: &Spanned<RawOutlet>,
        ctx: &str,
        index: usize,
    ) -> R<(Outlet, Vec<SizedDim>)> {
        let r = o.get_ref();
        let kind_raw = self.req(
            &r.kind,
            &o.span(),
            ctx,
            "kind",
            "\"orifice\", \"weir\", \"spillway\", ...",
        )?;
        let kind = kind_raw.get_ref().to_ascii_lowercase();
        let cf = match self.units {
            UnitSystem::Us => 1.0,
            UnitSystem::Si => 1.0 / units::M_PER_FT.sqrt(),
        };
        let allowed: &[&str] = match kind.as_str() {
            "orifice" => &["invert", "diameter", "cd"],
            "rectangular-orifice" => &["invert", "width", "height", "cd"],
            "weir" => &["crest", "length", "coefficient", "contractions"],
            "v-notch" => &["crest", "angle", "cd"],
            "spillway" | "broad-crested-weir" => &["crest", "length", "coefficient"],
            "riser" => &["crest", "diameter", "coefficient", "cd"],
            "rating" => &["table"],
            other => {
                let kinds = [
                    "orifice",
                    "rectangular-orifice",
                    "weir",
                    "v-notch",
                    "spillway",
                    "broad-crested-weir",
                    "riser",
                    "rating",
                ];
                let e = self
                    .err(&kind_raw.span(), &format!("{ctx}, kind"), format!("unknown outlet kind \"{other}\""))
                    .expected("orifice | rectangular-orifice | weir | v-notch | spillway | riser | rating");
                return Err(match cover::nearest(other, kinds) {
                    Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                    None => e,
                });
            }
        };
        let present: [(&str, Option<std::ops::Range<usize>>); 11] = [
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
                    });
                }
                Ok(x)
            };
        let coefficient = |default: f64| -> R<f64> {
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
                                format!(
                                    "a weir coefficient of {v} is far beyond any published value"
                                ),
                            )
                            .expected("a weir coefficient such as 3.33 (US) or 1.84 (SI)"));
                    }
                    Ok(v * cf)
                }
                None => Ok(default),
            }
        };
        let cd = |default: f64| -> R<f64> {
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
        };
        let outlet = match kind.as_str() {
            "orifice" => Outlet::CircularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"6 in\"",
                )?,
                cd: cd(0.61)?,
            },
            "rectangular-orifice" => Outlet::RectangularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                width_ft: get(SizedField::Width, &r.width, Quantity::Length, "\"1 ft\"")?,
                height_ft: get(
                    SizedField::Height,
                    &r.height,
                    Quantity::Length,
                    "\"0.5 ft\"",
                )?,
                cd: cd(0.61)?,
            },
            "weir" => {
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
                Outlet::SharpCrestedWeir {
                    crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "103.2")?,
                    length_ft: get(SizedField::Length, &r.length, Quantity::Length, "\"4 ft\"")?,
                    coefficient: coefficient(3.33)?,
                    contractions,
                }
            }
            "v-notch" => {
                let crest_ft = get(SizedField::Crest, &r.crest, Quantity::Length, "103.0")?;
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
                if let Some((min, max)) = range {
                    sized.push(SizedDim {
                        element: 0,
                        outlet: index,
                        field: SizedField::Angle,
                        min,
                        max,
                        span: a.span(),
                    });
                }
                Outlet::VNotchWeir {
                    crest_ft,
                    angle_deg: angle,
                    cd: cd(0.58)?,
                }
            }
            "spillway" | "broad-crested-weir" => Outlet::BroadCrestedWeir {
                crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "105.0")?,
                length_ft: get(SizedField::Length, &r.length, Quantity::Length, "\"20 ft\"")?,
                coefficient: coefficient(2.6)?,
            },
            "riser" => Outlet::Riser {
                crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "104.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"4 ft\"",
                )?,
                weir_coefficient: coefficient(3.33)?,
                cd: cd(0.61)?,
            },
            _ => {
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
                Outlet::Rating { table: rows }
            }
        };
        Ok((outlet, sized))
    }
}
