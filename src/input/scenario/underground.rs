//! The underground storage of a `[[pond]]` (`[[pond.gallery]]`,
//! `[[pond.vault]]`, `[[pond.stone]]`) and its losses (`infiltration`,
//! `infiltration_area`, `evaporation`).

use super::*;
use crate::methods::pond::{InfiltrationArea, PondLosses, Underground};

/// The words `infiltration_area` takes.
const INFILTRATION_AREAS: [(&str, InfiltrationArea); 2] = [
    ("wetted", InfiltrationArea::Wetted),
    ("bottom", InfiltrationArea::Bottom),
];

impl Builder<'_> {
    /// The pond's underground units, stone beds first (so that galleries
    /// laid in them can be subtracted from their voids), then vaults, then
    /// galleries.
    pub(super) fn underground_units(&self, rp: &RawPond, ctx: &str) -> R<Vec<Underground>> {
        let mut stones: Vec<Underground> = Vec::new();
        for (i, st) in rp.stone.iter().enumerate() {
            let r = st.get_ref();
            let c = format!("{ctx}, stone bed {}", i + 1);
            let bottom = self.elevation(
                self.req(&r.bottom, &st.span(), &c, "bottom", "96.0 (elevation)")?,
                &format!("{c}, bottom"),
            )?;
            let depth = self.positive(
                self.req(&r.depth, &st.span(), &c, "depth", "\"3 ft\"")?,
                Quantity::Length,
                &format!("{c}, depth"),
            )?;
            let area = self.positive(
                self.req(&r.area, &st.span(), &c, "area", "\"4000 ft2\"")?,
                Quantity::SectionArea,
                &format!("{c}, area"),
            )?;
            let por = self.req(&r.porosity, &st.span(), &c, "porosity", "0.4")?;
            let porosity = *por.get_ref();
            if !(porosity > 0.0 && porosity < 1.0) {
                return Err(self
                    .err(
                        &por.span(),
                        &format!("{c}, porosity"),
                        format!("a porosity of {porosity} is not a fraction between 0 and 1"),
                    )
                    .expected("the stone's void ratio, such as 0.4")
                    .hint("write a percentage as a fraction: 40 % is 0.4"));
            }
            stones.push(Underground::Stone {
                bottom_ft: bottom,
                depth_ft: depth,
                area_ft2: area,
                porosity,
                embedded: Vec::new(),
            });
        }
        let mut out: Vec<Underground> = Vec::new();
        for (i, v) in rp.vault.iter().enumerate() {
            let r = v.get_ref();
            let c = format!("{ctx}, vault {}", i + 1);
            let floor = self.elevation(
                self.req(&r.floor, &v.span(), &c, "floor", "95.0 (elevation)")?,
                &format!("{c}, floor"),
            )?;
            let dim = |val: &Option<Spanned<RawValue>>, key: &str, ex: &str| -> R<f64> {
                self.positive(
                    self.req(val, &v.span(), &c, key, ex)?,
                    Quantity::Length,
                    &format!("{c}, {key}"),
                )
            };
            out.push(Underground::Vault {
                floor_ft: floor,
                length_ft: dim(&r.length, "length", "\"60 ft\"")?,
                width_ft: dim(&r.width, "width", "\"20 ft\"")?,
                height_ft: dim(&r.height, "height", "\"6 ft\"")?,
            });
        }
        for (i, g) in rp.gallery.iter().enumerate() {
            let unit = self.gallery(g, &format!("{ctx}, gallery {}", i + 1), &mut stones)?;
            out.push(unit);
        }
        stones.extend(out);
        Ok(stones)
    }

    /// One `[[pond.gallery]]`; a gallery laid in a stone bed is subtracted
    /// from that bed's voids.
    fn gallery(
        &self,
        g: &Spanned<RawGallery>,
        c: &str,
        stones: &mut [Underground],
    ) -> R<Underground> {
        let r = g.get_ref();
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let invert = self.elevation(
            self.req(&r.invert, &g.span(), c, "invert", "96.5 (elevation)")?,
            &format!("{c}, invert"),
        )?;
        let diameter = self.positive(
            self.req(&r.diameter, &g.span(), c, "diameter", "\"48 in\"")?,
            Quantity::Length,
            &format!("{c}, diameter"),
        )?;
        let length = self.positive(
            self.req(&r.length, &g.span(), c, "length", "\"100 ft\"")?,
            Quantity::Length,
            &format!("{c}, length"),
        )?;
        let count = match &r.count {
            Some(n) if (1..=10_000).contains(n.get_ref()) => *n.get_ref() as u32,
            Some(n) => {
                return Err(self
                    .err(
                        &n.span(),
                        &format!("{c}, count"),
                        format!("{} pipes", n.get_ref()),
                    )
                    .expected("a whole number of pipes from 1 to 10000"));
            }
            None => 1,
        };
        if let Some(k) = &r.in_stone {
            let n = stones.len();
            let idx = usize::try_from(*k.get_ref())
                .ok()
                .filter(|&x| x >= 1 && x <= n)
                .ok_or_else(|| {
                    self.err(
                        &k.span(),
                        &format!("{c}, in_stone"),
                        format!("there is no stone bed {}", k.get_ref()),
                    )
                    .expected(if n == 0 {
                        "a [[pond.stone]] for the pipes to lie in, or no `in_stone`".to_string()
                    } else {
                        format!("a stone bed number from 1 to {n}, in the order written")
                    })
                })?;
            if let Underground::Stone {
                bottom_ft,
                depth_ft,
                area_ft2,
                embedded,
                ..
            } = &mut stones[idx - 1]
            {
                let footprint: f64 = embedded.iter().map(|e| e.2 * e.1).sum::<f64>()
                    + f64::from(count) * length * diameter;
                if invert < *bottom_ft - 1e-9 || invert + diameter > *bottom_ft + *depth_ft + 1e-9 {
                    return Err(self
                        .err(
                            &k.span(),
                            &format!("{c}, in_stone"),
                            format!(
                                "the pipes (invert {}, crown {}) do not lie within stone bed {idx} ({} to {})",
                                units::short(invert / lf, 6),
                                units::short((invert + diameter) / lf, 6),
                                units::short(*bottom_ft / lf, 6),
                                units::short((*bottom_ft + *depth_ft) / lf, 6)
                            ),
                        )
                        .expected("pipes whose invert and crown lie between the stone's bottom and top"));
                }
                if footprint > *area_ft2 {
                    return Err(self
                        .err(
                            &k.span(),
                            &format!("{c}, in_stone"),
                            format!("the pipes laid in stone bed {idx} cover more than its area"),
                        )
                        .expected("pipes whose plan area (count x length x diameter) fits within the stone's `area`"));
                }
                embedded.push((invert, diameter, f64::from(count) * length));
            }
        }
        Ok(Underground::Gallery {
            invert_ft: invert,
            diameter_ft: diameter,
            length_ft: length,
            count,
        })
    }

    /// `infiltration`, `infiltration_area` and `evaporation` of a pond.
    pub(super) fn pond_losses(
        &self,
        rp: &RawPond,
        ctx: &str,
        storage: &StageStorage,
    ) -> R<PondLosses> {
        let mut losses = PondLosses::default();
        if let Some(v) = &rp.infiltration {
            losses.infiltration_ft_per_s =
                self.infiltration_rate(v, &format!("{ctx}, infiltration"))?;
        }
        if let Some(a) = &rp.infiltration_area {
            let word = a.get_ref().trim();
            let found = INFILTRATION_AREAS.iter().find(|(w, _)| *w == word);
            let Some((_, area)) = found else {
                return Err(self.unknown_word(
                    &a.span(),
                    &format!("{ctx}, infiltration_area"),
                    format!("unknown infiltration area \"{word}\""),
                    "\"wetted\" (the water surface at each stage) or \"bottom\"",
                    word,
                    INFILTRATION_AREAS.iter().map(|(w, _)| *w),
                ));
            };
            if rp.infiltration.is_none() {
                return Err(self
                    .err(
                        &a.span(),
                        &format!("{ctx}, infiltration_area"),
                        "an infiltration area without an infiltration rate",
                    )
                    .expected("`infiltration = \"0.5 in/h\"` on the pond as well"));
            }
            losses.infiltration_area = *area;
        }
        if let Some(v) = &rp.infiltration
            && losses.infiltration_ft_per_s > 0.0
        {
            let probe = storage.top_ft().max(storage.bottom_ft() + 1.0);
            if losses.infiltration_area_ft2(storage, probe) <= 0.0 {
                return Err(self
                    .err(
                        &v.span(),
                        &format!("{ctx}, infiltration"),
                        "the pond has no area to infiltrate through",
                    )
                    .expected(
                        "an open basin (stage_area, stage_volume or basin) or a [[pond.stone]] bed: vaults and pipe galleries are closed",
                    )
                    .hint(if losses.infiltration_area == InfiltrationArea::Bottom {
                        "the basin's bottom area is 0: use infiltration_area = \"wetted\" or give the bottom an area"
                    } else {
                        "remove `infiltration` or add a stone bed"
                    }));
            }
        }
        if let Some(e) = &rp.evaporation {
            losses.evaporation_ft_per_day =
                self.evaporation_depths(e, &format!("{ctx}, evaporation"))?;
            if !storage.has_open_basin() {
                return Err(self
                    .err(
                        &e.span(),
                        &format!("{ctx}, evaporation"),
                        "the pond has no open water surface to evaporate from",
                    )
                    .expected("an open basin (stage_area, stage_volume or basin)")
                    .hint("underground storage does not evaporate: remove `evaporation`"));
            }
        }
        Ok(losses)
    }

    /// An infiltration rate (ft/s): `"0.5 in/h"`, `"12 mm/h"`, `"1 ft/d"`;
    /// a bare number is in in/h (US) or mm/h (SI).
    fn infiltration_rate(&self, v: &Spanned<RawValue>, ctx: &str) -> R<f64> {
        let bad = |msg: String| {
            self.err(&v.span(), ctx, msg)
                .expected("a rate such as \"0.5 in/h\" (or mm/h, cm/h, ft/d, m/d)")
        };
        let ft_per_h = match v.get_ref() {
            RawValue::Num(x) if x.is_finite() => {
                x * Quantity::Depth.bare_factor(self.units).unwrap_or(1.0) / 12.0
            }
            RawValue::Text(t) => {
                let Some((len, time)) = t.rsplit_once('/') else {
                    return Err(bad(format!("\"{t}\" has no time unit")));
                };
                let depth_ft = units::parse_quantity(len.trim(), Quantity::Length, self.units)
                    .map_err(|e| bad(e.to_string()))?;
                let per_h = units::parse_quantity(
                    &format!("1 {}", time.trim()),
                    Quantity::Time,
                    self.units,
                )
                .map_err(|e| bad(format!("\"{}\": {e}", time.trim())))?;
                if per_h <= 0.0 {
                    return Err(bad(format!("\"{t}\" has no time unit")));
                }
                depth_ft / per_h
            }
            other => return Err(bad(format!("{} is not a rate", show(other)))),
        };
        if !(ft_per_h.is_finite() && ft_per_h > 0.0) {
            return Err(bad(format!("{} is not a positive rate", show(v.get_ref()))));
        }
        // 100 in/h: beyond any soil or media (clean gravel is near 20 in/h)
        if ft_per_h > 100.0 / 12.0 {
            return Err(bad(format!(
                "{} is more than 100 in/h, beyond any soil or filter media",
                show(v.get_ref())
            ))
            .hint("check the unit: \"0.5 in/h\", not \"0.5 ft/s\""));
        }
        Ok(ft_per_h / 3600.0)
    }

    /// Twelve monthly evaporation depths per day (ft/day), January first.
    fn evaporation_depths(&self, e: &Spanned<Vec<RawValue>>, ctx: &str) -> R<Vec<f64>> {
        let values = e.get_ref();
        if values.len() != 12 {
            return Err(self
                .err(
                    &e.span(),
                    ctx,
                    format!(
                        "{} values given; evaporation needs one per month",
                        values.len()
                    ),
                )
                .expected("12 depths per day, January to December, such as [\"0.02 in\", ...]"));
        }
        values
            .iter()
            .enumerate()
            .map(|(i, x)| {
                let sp = Spanned::new(e.span(), x.clone());
                let c = format!("{ctx}, {}", crate::util::calendar::month_name(i as u32 + 1));
                let in_per_day = self.qty(&sp, Quantity::DepthPerDay, &c)?;
                if in_per_day < 0.0 {
                    return Err(self
                        .err(&e.span(), &c, format!("{} is negative", show(x)))
                        .expected("a depth per day of 0 or more"));
                }
                Ok(in_per_day / 12.0)
            })
            .collect()
    }
}
