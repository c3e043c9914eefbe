//! The `[[pond]]` section: stage-storage, top, and its outlets.

use super::*;

pub(super) fn unreachable_storage<T>() -> R<T> {
    Err(InputError::new(Path::new(""), "internal: pond storage"))
}

impl Builder<'_> {
    pub(super) fn pond(
        &mut self,
        rp: &RawPond,
        span: &std::ops::Range<usize>,
        ctx: &str,
        storms: &[Storm],
    ) -> R<(Pond, Vec<SizedDim>)> {
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let (storage, storage_kind, table_top) = self.pond_storage_all(rp, span, ctx)?;
        let bottom = storage.bottom_ft();
        let top_ft = match &rp.top {
            Some(t) => {
                let v = self.elevation(t, &format!("{ctx}, top"))?;
                if v <= bottom {
                    return Err(self
                        .err(
                            &t.span(),
                            &format!("{ctx}, top"),
                            "the top of embankment is not above the pond bottom",
                        )
                        .expected(format!("an elevation above {}", bottom / lf)));
                }
                Some(v)
            }
            None if rp.basin.is_some() || !storage.has_open_basin() => table_top,
            None => None,
        };
        let mut outlets = Vec::new();
        let mut sized = Vec::new();
        if rp.outlet.is_empty() && rp.barrel.is_empty() {
            return Err(self
                .err(span, ctx, "the pond has no outlet")
                .expected("at least one [[pond.outlet]] or [[pond.barrel]]"));
        }
        let mut outlet_names: Vec<Option<String>> = Vec::new();
        for (i, o) in rp.outlet.iter().enumerate() {
            let name = match &o.get_ref().name {
                Some(n) => {
                    let t = n.get_ref().trim().to_string();
                    let nctx = format!(
                        "{ctx}, {}, name",
                        crate::engine::sizing::outlet_label(i, None)
                    );
                    if t.is_empty() {
                        return Err(self
                            .err(&n.span(), &nctx, "the outlet name is empty")
                            .expected("a name such as \"low-flow orifice\", or no `name` key"));
                    }
                    if let Some(k) = outlet_names.iter().position(|x| x.as_deref() == Some(&t)) {
                        return Err(self
                            .err(
                                &n.span(),
                                &nctx,
                                format!("outlet {} of this pond is already named \"{t}\"", k + 1),
                            )
                            .expected("each outlet of a pond named once"));
                    }
                    Some(t)
                }
                None => None,
            };
            let label = crate::engine::sizing::outlet_label(i, name.as_deref());
            outlet_names.push(name);
            let (outlet, s) = self.outlet(o, &format!("{ctx}, {label}"), i)?;
            let w = self.outlet_warnings(o.get_ref(), &format!("{ctx}, {label}"));
            self.warnings.extend(w);
            let low = outlet.lowest_ft();
            if low < bottom - 1e-9 {
                let sp = o
                    .get_ref()
                    .invert
                    .as_ref()
                    .or(o.get_ref().crest.as_ref())
                    .map(|x| x.span())
                    .unwrap_or(o.span());
                return Err(self
                    .err(
                        &sp,
                        &format!("{ctx}, {label}"),
                        format!(
                            "the outlet is below the pond bottom ({} < {})",
                            low / lf,
                            bottom / lf
                        ),
                    )
                    .expected(
                        "an invert or crest at or above the lowest stage of the storage table",
                    ));
            }
            if let Some(top) = top_ft
                && low >= top
            {
                self.warnings.push(Warning::OutletAboveTop {
                    pond: rp.name.get_ref().clone(),
                    outlet: label.clone(),
                });
            }
            outlets.push(outlet);
            sized.extend(s);
        }
        self.sized_increments(rp, ctx, &mut sized)?;
        let start_ft = self.pond_start(rp, ctx, bottom, top_ft)?;
        let top_length_ft = match &rp.top_length {
            Some(t) => self.positive(t, Quantity::Length, &format!("{ctx}, top_length"))?,
            None => match top_ft {
                Some(t) => default_top_length_ft(&storage, t),
                None => 0.0,
            },
        };
        let min_freeboard_ft = self.pond_freeboard(rp, ctx, top_ft)?;
        let max_drain_time_h = match &rp.max_drain_time {
            Some(v) => Some(self.positive(v, Quantity::Time, &format!("{ctx}, max_drain_time"))?),
            None => None,
        };
        let structure = self.pond_structure(
            rp,
            &structure::StructureCtx {
                ctx,
                bottom,
                top_ft,
                outlet_names: &outlet_names,
                storms,
                min_freeboard_ft,
            },
        )?;
        self.tailwater_start_note(rp, &outlets, &structure, start_ft, bottom);
        let losses = self.pond_losses(rp, ctx, &storage)?;
        let grid_step_ft = match self.units {
            UnitSystem::Us => 0.01,
            UnitSystem::Si => 0.003 / units::M_PER_FT,
        };
        Ok((
            Pond {
                storage,
                storage_kind,
                outlets,
                outlet_names,
                start_ft,
                top_ft,
                top_length_ft,
                min_freeboard_ft,
                max_drain_time_h,
                grid_step_ft,
                structure: Box::new(structure),
                losses,
            },
            sized,
        ))
    }

    /// The storage of a pond (exactly one of a stage-area table, a
    /// stage-volume table or a basin), its kind in words, and the top of
    /// the table where a basin gives one.
    fn pond_storage(
        &self,
        rp: &RawPond,
        span: &std::ops::Range<usize>,
        ctx: &str,
        underground: bool,
    ) -> R<(StageStorage, StorageKind, Option<f64>)> {
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let af = Quantity::SectionArea.bare_factor(self.units).unwrap_or(1.0);
        let vf = Quantity::Volume.bare_factor(self.units).unwrap_or(1.0);
        let given = [
            rp.stage_area.is_some(),
            rp.stage_volume.is_some(),
            rp.basin.is_some(),
        ]
        .iter()
        .filter(|x| **x)
        .count();
        if given > 1 || (given == 0 && !underground) {
            return Err(self
                .err(
                    span,
                    ctx,
                    if given == 0 {
                        "the pond has no storage"
                    } else {
                        "the pond's storage is given more than once"
                    },
                )
                .expected(
                    "one of `stage_area`, `stage_volume` or `basin`, or underground storage alone ([[pond.gallery]], [[pond.vault]], [[pond.stone]])",
                ));
        }
        Ok(if given == 0 {
            unreachable_storage()?
        } else if let Some(t) = &rp.stage_area {
            let rows = self.table_rows(t, &format!("{ctx}, stage_area"), lf, af)?;
            self.bounded_rows(
                &rows,
                &t.span(),
                &format!("{ctx}, stage_area"),
                [
                    (Quantity::Length, "stage", None),
                    (Quantity::SectionArea, "area", None),
                ],
            )?;
            let s = StageStorage::from_stage_area(&rows).map_err(|e| {
                self.err(&t.span(), &format!("{ctx}, stage_area"), e.to_string())
                    .expected(
                        "[stage, area] rows with stages increasing and areas >= 0, not decreasing",
                    )
            })?;
            (s, StorageKind::StageArea, rows.last().map(|r| r.0))
        } else if let Some(t) = &rp.stage_volume {
            let rows = self.table_rows(t, &format!("{ctx}, stage_volume"), lf, vf)?;
            self.bounded_rows(
                &rows,
                &t.span(),
                &format!("{ctx}, stage_volume"),
                [
                    (Quantity::Length, "stage", None),
                    (Quantity::Volume, "volume", None),
                ],
            )?;
            let s = StageStorage::from_stage_volume(&rows).map_err(|e| self.err(&t.span(), &format!("{ctx}, stage_volume"), e.to_string()).expected("[stage, volume] rows with stages increasing and volumes >= 0, not decreasing"))?;
            (s, StorageKind::StageVolume, rows.last().map(|r| r.0))
        } else if let Some(b) = &rp.basin {
            let rb = b.get_ref();
            let bctx = format!("{ctx}, basin");
            let bottom = self.elevation(
                self.req(&rb.bottom, &b.span(), &bctx, "bottom", "100.0 (elevation)")?,
                &format!("{bctx}, bottom"),
            )?;
            let length = self.positive(
                self.req(&rb.length, &b.span(), &bctx, "length", "\"80 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, length"),
            )?;
            let width = self.positive(
                self.req(&rb.width, &b.span(), &bctx, "width", "\"40 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, width"),
            )?;
            let side_raw = self.req(
                &rb.side,
                &b.span(),
                &bctx,
                "side",
                "3.0 (horizontal per vertical)",
            )?;
            let side = self.num(side_raw, &format!("{bctx}, side"))?;
            if side < 0.0 {
                return Err(self
                    .err(
                        &side_raw.span(),
                        &format!("{bctx}, side"),
                        "the side slope cannot be negative",
                    )
                    .expected("0 or more (horizontal per vertical)"));
            }
            let depth = self.positive(
                self.req(&rb.depth, &b.span(), &bctx, "depth", "\"6 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, depth"),
            )?;
            let rows = crate::methods::pond::basin_stage_area(bottom, length, width, side, depth)
                .map_err(|e| self.err(&b.span(), &bctx, e.to_string()))?;
            let s = StageStorage::from_stage_area(&rows)
                .map_err(|e| self.err(&b.span(), &bctx, e.to_string()))?;
            (s, StorageKind::Basin, Some(bottom + depth))
        } else {
            unreachable_storage()?
        })
    }

    /// The storage of a pond: its open basin (at most one of a stage-area
    /// table, a stage-volume table or a basin), its underground units, or
    /// both added together; the kind in words and the top where a basin or
    /// underground storage alone gives one (the top of the highest unit).
    fn pond_storage_all(
        &self,
        rp: &RawPond,
        span: &std::ops::Range<usize>,
        ctx: &str,
    ) -> R<(StageStorage, StorageKind, Option<f64>)> {
        let underground = !(rp.gallery.is_empty() && rp.vault.is_empty() && rp.stone.is_empty());
        if !underground {
            return self.pond_storage(rp, span, ctx, false);
        }
        let units = self.underground_units(rp, ctx)?;
        let open = rp.stage_area.is_some() || rp.stage_volume.is_some() || rp.basin.is_some();
        if !open {
            let s =
                StageStorage::underground(units).map_err(|e| self.err(span, ctx, e.to_string()))?;
            let top = s.top_ft();
            return Ok((s, StorageKind::Underground, Some(top)));
        }
        let (s, kind, top) = self.pond_storage(rp, span, ctx, true)?;
        let s = s
            .with_underground(units)
            .map_err(|e| self.err(span, ctx, e.to_string()))?;
        let kind = match kind {
            StorageKind::StageArea => StorageKind::StageAreaAndUnderground,
            StorageKind::StageVolume => StorageKind::StageVolumeAndUnderground,
            _ => StorageKind::BasinAndUnderground,
        };
        Ok((s, kind, top))
    }

    /// The buildable increment of each sized dimension of a pond: the
    /// range's `increment`, or [`SizedField::default_increment`]; a range
    /// must hold at least one multiple of it.
    fn sized_increments(&self, rp: &RawPond, ctx: &str, sized: &mut [SizedDim]) -> R<()> {
        for d in sized.iter_mut() {
            let Some(o) = rp.outlet.get(d.outlet) else {
                continue;
            };
            let r = o.get_ref();
            let raw = match d.field {
                SizedField::Diameter => &r.diameter,
                SizedField::Width => &r.width,
                SizedField::Height => &r.height,
                SizedField::Length => &r.length,
                SizedField::Angle => &r.angle,
                SizedField::Crest => &r.crest,
                SizedField::Invert => &r.invert,
            };
            let label = crate::engine::sizing::outlet_label(
                d.outlet,
                r.name.as_ref().map(|n| n.get_ref().trim()),
            );
            let kctx = format!("{ctx}, {label}, {}, increment", d.field.key());
            let given = match raw.as_ref().map(|v| (v.span(), v.get_ref())) {
                Some((span, RawValue::Range(b))) => b.2.clone().map(|x| Spanned::new(span, x)),
                _ => None,
            };
            d.increment = match &given {
                None => d.field.default_increment(self.units),
                Some(v) if d.field == SizedField::Angle => match v.get_ref() {
                    RawValue::Num(x) if x.is_finite() && *x > 0.0 && *x <= 90.0 => *x,
                    _ => {
                        return Err(self
                            .err(
                                &v.span(),
                                &kctx,
                                format!("{} is not an angle step", show(v.get_ref())),
                            )
                            .expected("a number of degrees such as 5"));
                    }
                },
                Some(v) => self.positive(v, Quantity::Length, &kctx)?,
            };
            let inc = d.increment;
            let first = (d.min / inc - 1e-9).ceil() * inc;
            if first > d.max * (1.0 + 1e-12) + 1e-12 {
                let show_v = |x: f64| d.field.value_text(self.units, x);
                let span = given
                    .as_ref()
                    .map(|v| v.span())
                    .or_else(|| raw.as_ref().map(|v| v.span()))
                    .unwrap_or(o.span());
                return Err(self
                    .err(
                        &span,
                        &kctx,
                        format!(
                            "no multiple of the increment {} lies between the range's min {} and max {}",
                            show_v(inc),
                            show_v(d.min),
                            show_v(d.max)
                        ),
                    )
                    .expected("a range that holds at least one buildable size")
                    .hint("widen the range or give a finer `increment` in it"));
            }
        }
        Ok(())
    }

    /// The starting water surface (ft), between the bottom and the top.
    fn pond_start(
        &self,
        rp: &RawPond,
        ctx: &str,
        bottom: f64,
        top_ft: Option<f64>,
    ) -> R<Option<f64>> {
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        Ok(match &rp.start {
            Some(s) => {
                let v = self.elevation(s, &format!("{ctx}, start"))?;
                if v < bottom - 1e-9 {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, start"),
                            "the starting water surface is below the pond bottom",
                        )
                        .expected(format!("an elevation of at least {}", bottom / lf)));
                }
                if let Some(top) = top_ft
                    && v > top + 1e-9
                {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, start"),
                            format!(
                                "the starting water surface {} is above the top of embankment {}",
                                units::short(v / lf, 6),
                                units::short(top / lf, 6)
                            ),
                        )
                        .expected(format!(
                            "a starting water surface at or below the top ({})",
                            units::short(top / lf, 6)
                        ))
                        .hint("check `start` and `top`: a pond cannot start overtopped"));
                }
                Some(v)
            }
            None => None,
        })
    }

    /// The least freeboard asked for (ft); it needs a top.
    fn pond_freeboard(&self, rp: &RawPond, ctx: &str, top_ft: Option<f64>) -> R<Option<f64>> {
        Ok(match &rp.min_freeboard {
            Some(v) => {
                if top_ft.is_none() {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, min_freeboard"),
                            "freeboard needs a top of embankment",
                        )
                        .expected("`top = ...` on the pond"));
                }
                let f = self.qty(v, Quantity::Length, &format!("{ctx}, min_freeboard"))?;
                if f < 0.0 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, min_freeboard"),
                            format!("a freeboard of {} is negative", show(v.get_ref())),
                        )
                        .expected("a freeboard of zero or more, such as \"1 ft\""));
                }
                Some(f)
            }
            None => None,
        })
    }

    /// The note when the tailwater stands above the default start (the
    /// lowest outlet), which the pond keeps.
    fn tailwater_start_note(
        &mut self,
        rp: &RawPond,
        outlets: &[Outlet],
        st: &Structure,
        start_ft: Option<f64>,
        bottom: f64,
    ) {
        let (Some(tw), None) = (&st.tailwater, start_ft) else {
            return;
        };
        let works = crate::methods::hydraulics::Works {
            outlets,
            counts: &st.counts,
            into: &st.into,
            barrels: &st.barrels,
            tailwater: Some(tw),
            blocked_outlets: &[],
            blocked_barrels: &[],
        };
        let start = works.lowest_ft().map_or(bottom, |l| l.max(bottom));
        let still = tw.still_ft();
        if still > start + 1e-9 {
            let lf = Quantity::Length.output_factor(self.units);
            let lu = Quantity::Length.output_unit(self.units);
            self.warnings.push(Warning::TailwaterAboveStart {
                pond: rp.name.get_ref().clone(),
                tailwater: format!("{} {lu}", units::short(still * lf, 6)),
                start: format!("{} {lu}", units::short(start * lf, 6)),
            });
        }
    }
}

/// The default crest length (ft) of an embankment that overtops at `top_ft`:
/// the side of a square of the pond's surface area there (at least 1 ft);
/// for underground storage alone, of the units' plan area together.
fn default_top_length_ft(storage: &StageStorage, top_ft: f64) -> f64 {
    if storage.has_open_basin() {
        return storage.area_at_ft2(top_ft).max(1.0).sqrt();
    }
    storage
        .underground_parts()
        .iter()
        .map(crate::methods::pond::Underground::footprint_ft2)
        .sum::<f64>()
        .max(1.0)
        .sqrt()
}
