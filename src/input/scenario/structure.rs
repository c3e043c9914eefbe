//! A pond's outlet structure beyond its outlets: `[[pond.barrel]]`, each
//! outlet's `into` and `count`, `tailwater`, and the clogged-outlet checks
//! `[[pond.failure]]`.

use super::*;
use crate::methods::hydraulics::culvert::{self, BarrelShape};
use crate::methods::hydraulics::{Barrel, Tailwater};

/// Manning n a barrel may have.
const BARREL_N_RANGE: (f64, f64) = (0.005, 0.1);

/// What [`Builder::pond_structure`] reads besides the raw pond.
pub(super) struct StructureCtx<'a> {
    pub ctx: &'a str,
    pub bottom: f64,
    pub top_ft: Option<f64>,
    pub outlet_names: &'a [Option<String>],
    pub storms: &'a [Storm],
    pub min_freeboard_ft: Option<f64>,
}

impl Builder<'_> {
    /// Barrels, `into`, `count`, the tailwater and the failure checks.
    pub(super) fn pond_structure(&self, rp: &RawPond, c: &StructureCtx<'_>) -> R<Structure> {
        let mut st = Structure::default();
        for (j, b) in rp.barrel.iter().enumerate() {
            let (name, barrel, entrance) = self.barrel(b, c, j)?;
            if st.barrel_names.contains(&name) {
                let sp = b.get_ref().name.as_ref().map_or(b.span(), |n| n.span());
                return Err(self
                    .err(
                        &sp,
                        &format!("{}, barrel \"{name}\"", c.ctx),
                        format!("two barrels are named \"{name}\""),
                    )
                    .expected("each barrel of a pond named once"));
            }
            st.barrel_names.push(name);
            st.barrels.push(barrel);
            st.barrel_entrances.push(entrance);
        }
        for (i, o) in rp.outlet.iter().enumerate() {
            let label = crate::engine::sizing::outlet_label(i, c.outlet_names[i].as_deref());
            let octx = format!("{}, {label}", c.ctx);
            st.counts.push(self.outlet_count(o.get_ref(), &octx)?);
            st.into.push(match &o.get_ref().into {
                None => None,
                Some(n) => {
                    Some(self.barrel_named(n, &format!("{octx}, into"), &st.barrel_names)?)
                }
            });
        }
        st.tailwater = match &rp.tailwater {
            None => None,
            Some(t) => Some(self.tailwater(t, &format!("{}, tailwater", c.ctx))?),
        };
        for f in &rp.failure {
            st.failures.push(self.failure(f, c, &st.barrel_names)?);
        }
        Ok(st)
    }

    /// The barrel `into` names.
    fn barrel_named(&self, n: &Spanned<String>, ctx: &str, names: &[String]) -> R<usize> {
        let w = n.get_ref().trim();
        if let Some(k) = names.iter().position(|x| x == w) {
            return Ok(k);
        }
        let expected = if names.is_empty() {
            "the name of a [[pond.barrel]] of this pond (it has none)".to_string()
        } else {
            format!("one of the pond's barrels: {}", quoted(names))
        };
        Err(self.unknown_word(
            &n.span(),
            ctx,
            format!("no barrel of this pond is named \"{w}\""),
            expected,
            w,
            names.iter().map(String::as_str),
        ))
    }

    /// One `[[pond.barrel]]`: its name, the barrel and its entrance keyword.
    fn barrel(
        &self,
        b: &Spanned<RawBarrel>,
        c: &StructureCtx<'_>,
        j: usize,
    ) -> R<(String, Barrel, String)> {
        let r = b.get_ref();
        let name = match &r.name {
            Some(n) if !n.get_ref().trim().is_empty() => n.get_ref().trim().to_string(),
            Some(n) => {
                return Err(self
                    .err(
                        &n.span(),
                        &format!("{}, barrel {}, name", c.ctx, j + 1),
                        "the barrel name is empty",
                    )
                    .expected("a name such as \"outlet pipe\""));
            }
            None => format!("barrel {}", j + 1),
        };
        let ctx = format!("{}, barrel \"{name}\"", c.ctx);
        let shape = match (&r.diameter, &r.width, &r.height) {
            (Some(d), None, None) => BarrelShape::Circular {
                diameter_ft: self.positive(d, Quantity::Length, &format!("{ctx}, diameter"))?,
            },
            (None, Some(w), Some(h)) => BarrelShape::Box {
                width_ft: self.positive(w, Quantity::Length, &format!("{ctx}, width"))?,
                height_ft: self.positive(h, Quantity::Length, &format!("{ctx}, height"))?,
            },
            _ => {
                return Err(self
                    .err(
                        &b.span(),
                        &ctx,
                        "a barrel needs a diameter, or a width and a height (not both)",
                    )
                    .expected("diameter = \"24 in\", or width = \"4 ft\" and height = \"3 ft\""));
            }
        };
        let lr = self.req(&r.length, &b.span(), &ctx, "length", "\"60 ft\"")?;
        let length_ft = self.positive(lr, Quantity::Length, &format!("{ctx}, length"))?;
        let inlet_invert_ft = match &r.invert {
            Some(v) => {
                let x = self.elevation(v, &format!("{ctx}, invert"))?;
                if x < c.bottom - 1e-9 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, invert"),
                            "the barrel's inlet is below the pond bottom",
                        )
                        .expected("an inlet invert at or above the lowest stage of the storage"));
                }
                x
            }
            None => c.bottom,
        };
        let outlet_invert_ft = match (&r.slope, &r.outlet_invert) {
            (Some(s), None) => {
                inlet_invert_ft
                    - length_ft * self.qty(s, Quantity::Slope, &format!("{ctx}, slope"))?
            }
            (None, Some(v)) => self.elevation(v, &format!("{ctx}, outlet_invert"))?,
            _ => {
                return Err(self
                    .err(
                        &b.span(),
                        &ctx,
                        "a barrel needs its slope or its outlet invert (one of them)",
                    )
                    .expected("slope = \"1 %\", or outlet_invert = 99.4"));
            }
        };
        if (inlet_invert_ft - outlet_invert_ft).abs() > length_ft {
            return Err(self
                .err(
                    &b.span(),
                    &ctx,
                    "the barrel falls (or rises) more than its length",
                )
                .expected("a slope under 100 %"));
        }
        let n = match &r.n {
            None => 0.013,
            Some(v) => {
                let x = self.num(v, &format!("{ctx}, n"))?;
                if !(BARREL_N_RANGE.0..=BARREL_N_RANGE.1).contains(&x) {
                    return Err(self
                        .err(&v.span(), &format!("{ctx}, n"), format!("Manning n = {x} for a barrel"))
                        .expected("a Manning n from 0.005 to 0.1, such as 0.013 (concrete) or 0.024 (corrugated metal)"));
                }
                x
            }
        };
        let is_box = matches!(shape, BarrelShape::Box { .. });
        let (word, entrance) = self.entrance(r, &ctx, is_box)?;
        Ok((
            name,
            Barrel {
                shape,
                length_ft,
                inlet_invert_ft,
                outlet_invert_ft,
                n,
                entrance,
            },
            word,
        ))
    }

    /// The entrance keyword (default by shape), checked against the shape.
    fn entrance(&self, r: &RawBarrel, ctx: &str, is_box: bool) -> R<(String, culvert::Entrance)> {
        let fits = |e: &culvert::Entrance| e.for_box == is_box;
        let words = || {
            culvert::ENTRANCES
                .iter()
                .filter(|e| fits(&e.1))
                .map(|e| e.0)
        };
        let Some(w) = &r.entrance else {
            let d = if is_box {
                "box-wingwall-30-75"
            } else {
                "concrete-square-edge"
            };
            return Ok((
                d.to_string(),
                culvert::entrance(d).unwrap_or(culvert::ENTRANCES[0].1),
            ));
        };
        let word = w.get_ref().trim().to_ascii_lowercase();
        let key = format!("{ctx}, entrance");
        match culvert::entrance(&word) {
            Some(e) if fits(&e) => Ok((word, e)),
            Some(_) => Err(self
                .err(
                    &w.span(),
                    &key,
                    format!(
                        "\"{word}\" is an entrance for a {}",
                        if is_box { "circular pipe" } else { "box" }
                    ),
                )
                .expected(words().collect::<Vec<_>>().join(" | "))),
            None => Err(self.unknown_word(
                &w.span(),
                &key,
                format!("unknown entrance \"{word}\""),
                words().collect::<Vec<_>>().join(" | "),
                &word,
                words(),
            )),
        }
    }

    /// `tailwater`: a fixed elevation or `[[flow, elevation], ...]`.
    fn tailwater(&self, t: &Spanned<RawTailwater>, ctx: &str) -> R<Tailwater> {
        match t.get_ref() {
            RawTailwater::Level(v) => {
                let sv = Spanned::new(t.span(), v.clone());
                Ok(Tailwater::Fixed(self.elevation(&sv, ctx)?))
            }
            RawTailwater::Table(rows) => {
                let st = Spanned::new(t.span(), rows.clone());
                let ff = Quantity::Flow.bare_factor(self.units).unwrap_or(1.0);
                let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
                let rows = self.table_rows(&st, ctx, ff, lf)?;
                self.bounded_rows(
                    &rows,
                    &t.span(),
                    ctx,
                    [
                        (Quantity::Flow, "flow", None),
                        (Quantity::Length, "elevation", None),
                    ],
                )?;
                let bad = rows.len() < 2
                    || rows[0].0 < 0.0
                    || rows.windows(2).any(|w| w[1].0 <= w[0].0 || w[1].1 < w[0].1);
                if bad {
                    return Err(self
                        .err(&t.span(), ctx, "the tailwater table is not a rising list of flows and elevations")
                        .expected("[[flow, elevation], ...]: two rows or more, flows from 0 strictly rising, elevations never falling"));
                }
                Ok(Tailwater::Table(rows))
            }
        }
    }

    /// One `[[pond.failure]]` check.
    fn failure(
        &self,
        f: &Spanned<RawFailure>,
        c: &StructureCtx<'_>,
        barrels: &[String],
    ) -> R<FailureCheck> {
        let r = f.get_ref();
        let ctx = format!("{}, failure", c.ctx);
        let s = self.req(&r.storm, &f.span(), &ctx, "storm", "\"100-yr\"")?;
        let storm = match c.storms.iter().position(|x| x.name == *s.get_ref()) {
            Some(i) => i,
            None => {
                let names: Vec<String> = c.storms.iter().map(|x| x.name.clone()).collect();
                return Err(self.unknown_word(
                    &s.span(),
                    &format!("{ctx}, storm"),
                    format!("no storm is named \"{}\"", s.get_ref()),
                    format!("one of the storms: {}", quoted(&names)),
                    s.get_ref(),
                    names.iter().map(String::as_str),
                ));
            }
        };
        let Some(top) = c.top_ft else {
            return Err(self
                .err(
                    &f.span(),
                    &ctx,
                    "a failure check needs a top of embankment to measure freeboard from",
                )
                .expected("`top = ...` on the pond"));
        };
        let bl = self.req(
            &r.blocked,
            &f.span(),
            &ctx,
            "blocked",
            "[\"low-flow orifice\"]",
        )?;
        if bl.get_ref().is_empty() {
            return Err(self
                .err(
                    &bl.span(),
                    &format!("{ctx}, blocked"),
                    "no outlet is blocked",
                )
                .expected(
                    "the names of the outlets (or barrels) blocked, e.g. [\"low-flow orifice\"]",
                ));
        }
        let outlet_names: Vec<String> = c.outlet_names.iter().flatten().cloned().collect();
        let (mut blocked_outlets, mut blocked_barrels, mut blocked_names) =
            (vec![], vec![], vec![]);
        for n in bl.get_ref() {
            let w = n.get_ref().trim();
            if let Some(i) = c.outlet_names.iter().position(|x| x.as_deref() == Some(w)) {
                blocked_outlets.push(i);
            } else if let Some(j) = barrels.iter().position(|x| x == w) {
                blocked_barrels.push(j);
            } else {
                let all: Vec<String> = outlet_names.iter().chain(barrels).cloned().collect();
                return Err(self.unknown_word(
                    &n.span(),
                    &format!("{ctx}, blocked"),
                    format!("no outlet or barrel of this pond is named \"{w}\""),
                    if all.is_empty() {
                        "an outlet's `name` (this pond's outlets have none: give the outlet one)"
                            .to_string()
                    } else {
                        format!("the `name` of an outlet or barrel: {}", quoted(&all))
                    },
                    w,
                    all.iter().map(String::as_str),
                ));
            }
            blocked_names.push(w.to_string());
        }
        let min_freeboard_ft = match (&r.min_freeboard, c.min_freeboard_ft) {
            (Some(v), _) => {
                let x = self.qty(v, Quantity::Length, &format!("{ctx}, min_freeboard"))?;
                if x < 0.0 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, min_freeboard"),
                            "a negative freeboard",
                        )
                        .expected("a freeboard of zero or more, such as \"0.5 ft\""));
                }
                x
            }
            (None, Some(x)) => x,
            (None, None) => 0.0,
        };
        let start_ft = match &r.start {
            None => None,
            Some(v) => self.failure_start(v, c, top, &ctx)?,
        };
        Ok(FailureCheck {
            storm,
            blocked_outlets,
            blocked_barrels,
            blocked_names,
            min_freeboard_ft,
            start_ft,
        })
    }

    /// A failure check's `start`: `"full"` (None) or an elevation in the pond.
    fn failure_start(
        &self,
        v: &Spanned<RawValue>,
        c: &StructureCtx<'_>,
        top: f64,
        ctx: &str,
    ) -> R<Option<f64>> {
        let key = format!("{ctx}, start");
        if let RawValue::Text(t) = v.get_ref() {
            let w = t.trim();
            if w.eq_ignore_ascii_case("full") {
                return Ok(None);
            }
            if !w.starts_with(|ch: char| ch.is_ascii_digit() || ch == '-' || ch == '.' || ch == '+')
            {
                return Err(self.unknown_word(
                    &v.span(),
                    &key,
                    format!("cannot read \"{w}\" as a start"),
                    "\"full\" or an elevation",
                    &w.to_ascii_lowercase(),
                    ["full"],
                ));
            }
        }
        let x = self.elevation(v, &key)?;
        if x < c.bottom - 1e-9 || x > top + 1e-9 {
            return Err(self
                .err(
                    &v.span(),
                    &key,
                    "the failure check's start is outside the pond",
                )
                .expected("an elevation between the pond bottom and its top, or \"full\""));
        }
        Ok(Some(x))
    }
}
