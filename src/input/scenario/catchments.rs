//! The `[[catchment]]` section: area, curve number, time of concentration
//! by flow-path segments, unit-hydrograph shape.

use super::*;
use crate::methods::cover;

impl Builder<'_> {
    pub(super) fn catchment(
        &mut self,
        rc: &RawCatchment,
        span: &std::ops::Range<usize>,
        ctx: &str,
        p2_in: Option<f64>,
    ) -> R<Catchment> {
        let covers = self.catchment_covers(rc, ctx)?;
        let cover_total: f64 = covers.iter().map(|c| c.area_ac).sum();
        let area_ac = match &rc.area {
            Some(a) => {
                let v = self.positive(a, Quantity::Area, &format!("{ctx}, area"))?;
                if !covers.is_empty() && ((cover_total - v) / v).abs() > 0.01 {
                    let f = Quantity::Area.output_factor(self.units);
                    let u = Quantity::Area.output_unit(self.units);
                    return Err(self
                        .err(&a.span(), &format!("{ctx}, area"), format!("the covers add up to {:.4} {u} but the catchment area is {:.4} {u}", cover_total * f, v * f))
                        .expected("cover areas that add up to the catchment area within 1 %"));
                }
                v
            }
            None if !covers.is_empty() => cover_total,
            None => {
                return Err(self
                    .err(span, ctx, "missing required key `area`")
                    .expected("`area = \"6.2 ac\"`"));
            }
        };
        let cn = match (&rc.cn, covers.is_empty()) {
            (Some(cn), true) => self.cn(cn, &format!("{ctx}, cn"))?,
            (Some(cn), false) => {
                return Err(self
                    .err(
                        &cn.span(),
                        &format!("{ctx}, cn"),
                        "give either `cn` or a list of [[catchment.cover]], not both",
                    )
                    .expected("one of them"));
            }
            (None, false) => {
                runoff::composite_cn(&covers.iter().map(|c| (c.cn, c.area_ac)).collect::<Vec<_>>())
                    .unwrap_or(0.0)
            }
            (None, true) => {
                return Err(self
                    .err(span, ctx, "missing `cn` (or a list of [[catchment.cover]])")
                    .expected("`cn = 84` or [[catchment.cover]] tables"));
            }
        };
        let split = impervious_split(&covers, cn);
        if let Some(impervious_pct) = split.unconnected_ignored_pct {
            self.warnings.push(Warning::UnconnectedIgnored {
                catchment: rc.name.get_ref().clone(),
                impervious_pct,
            });
        }
        let cn = split.cn;
        if cn < 30.0 {
            self.warnings.push(Warning::CnLow {
                catchment: rc.name.get_ref().clone(),
                cn,
            });
        }
        let lambda = match &rc.lambda {
            None => Lambda::Standard,
            Some(l) if (*l.get_ref() - 0.2).abs() < 1e-12 => Lambda::Standard,
            Some(l) if (*l.get_ref() - 0.05).abs() < 1e-12 => Lambda::Reduced,
            Some(l) => {
                return Err(self
                    .err(
                        &l.span(),
                        &format!("{ctx}, lambda"),
                        format!("lambda = {} is not supported", l.get_ref()),
                    )
                    .expected("0.2 (TR-55) or 0.05 (Hawkins et al. 2002)"));
            }
        };
        let (segments, tc_h, uh_lag_h, timing_basis) = match self.catchment_lag(rc, ctx, cn)? {
            Some((lag, basis)) => (Vec::new(), timing::tc_from_lag_h(lag), lag, basis),
            None => {
                let (segments, tc_h) = self.catchment_tc(rc, span, ctx, p2_in)?;
                let basis = if segments.is_empty() {
                    TimingBasis::TcGiven
                } else {
                    TimingBasis::FlowPath
                };
                (segments, tc_h, timing::lag_h(tc_h), basis)
            }
        };
        let prf = match &rc.prf {
            Some(p) => self.num(p, &format!("{ctx}, prf"))?,
            None => unit_hydrograph::STANDARD_PRF,
        };
        let shape = Shape::for_prf(prf).ok_or_else(|| {
            let span = rc.prf.as_ref().map(|p| p.span()).unwrap_or(span.clone());
            self.err(
                &span,
                &format!("{ctx}, prf"),
                format!("no unit-hydrograph shape has a peak rate factor of {prf}"),
            )
            .expected("a peak rate factor between 1 and 640 (484 is the NRCS standard)")
        })?;
        let separate_impervious = match &rc.impervious {
            None => false,
            Some(w) => match w.get_ref().as_str() {
                "composite" => false,
                "separate" => true,
                other => {
                    return Err(self.unknown_word(
                        &w.span(),
                        &format!("{ctx}, impervious"),
                        format!("unknown impervious treatment \"{other}\""),
                        "\"composite\" (one CN for the whole area) or \"separate\" (connected impervious cover at CN 98 on its own)",
                        other,
                        ["composite", "separate"],
                    ));
                }
            },
        };
        Ok(Catchment {
            area_ac,
            covers,
            cn,
            lambda,
            retention_in: lambda.retention_in(cn),
            segments,
            tc_h,
            uh_lag_h,
            timing_basis,
            prf,
            shape,
            connected_fraction: split.connected_fraction,
            rest_cn: split.rest_cn,
            separate_impervious,
            unconnected_reduced: split.unconnected_reduced,
        })
    }

    pub(super) fn cn(&self, cn: &Spanned<f64>, ctx: &str) -> R<f64> {
        let v = self.num(cn, ctx)?;
        if v > 0.0 && v <= 100.0 {
            Ok(v)
        } else {
            Err(self
                .err(&cn.span(), ctx, format!("CN {v} is outside (0, 100]"))
                .expected("a curve number above 0 and at most 100"))
        }
    }

    pub(super) fn segment(
        &mut self,
        f: &Spanned<RawFlow>,
        ctx: &str,
        p2_in: Option<f64>,
        catchment: &str,
        index: usize,
    ) -> R<Segment> {
        let rf = f.get_ref();
        let kind = self.req(
            &rf.kind,
            &f.span(),
            ctx,
            "kind",
            "\"sheet\", \"shallow\" or \"channel\"",
        )?;
        let length_ft = self.positive(
            self.req(&rf.length, &f.span(), ctx, "length", "\"100 ft\"")?,
            Quantity::Length,
            &format!("{ctx}, length"),
        )?;
        let slope_raw = self.req(&rf.slope, &f.span(), ctx, "slope", "0.02 or \"2 %\"")?;
        let slope = self.positive(slope_raw, Quantity::Slope, &format!("{ctx}, slope"))?;
        self.slope_warning(slope_raw, slope, kind.get_ref(), ctx);
        if let Some(n_raw) = &rf.n
            && let NumOrName::Num(n) = n_raw.get_ref()
        {
            self.manning_warning(*n, kind.get_ref(), ctx);
        }
        match kind.get_ref().as_str() {
            "sheet" => {
                self.unused_flow_key(
                    ctx,
                    "surface",
                    rf.surface.as_ref().map(|s| s.span()),
                    "sheet",
                )?;
                self.unused_flow_key(
                    ctx,
                    "section",
                    rf.section.as_ref().map(|s| s.span()),
                    "sheet",
                )?;
                let n = self.sheet_n(f, ctx)?;
                if p2_in.is_none() {
                    return Err(self.err(&kind.span(), ctx, "sheet flow needs the 2-year 24-hour rainfall `p2` at the top of the scenario").expected("`p2 = \"3.3 in\"` at the top level").hint("TR-55 eq. 3-3 uses P2"));
                }
                self.sheet_length_warning(length_ft, catchment, index);
                Ok(Segment::Sheet {
                    n,
                    length_ft,
                    slope,
                })
            }
            "shallow" => {
                self.unused_flow_key(ctx, "n", rf.n.as_ref().map(|s| s.span()), "shallow")?;
                self.unused_flow_key(
                    ctx,
                    "section",
                    rf.section.as_ref().map(|s| s.span()),
                    "shallow",
                )?;
                let s = self.req(
                    &rf.surface,
                    &f.span(),
                    ctx,
                    "surface",
                    "\"paved\" or \"unpaved\"",
                )?;
                let k = cover::shallow_velocity_coefficient(s.get_ref()).map_err(|e| {
                    self.err(&s.span(), &format!("{ctx}, surface"), e.to_string())
                        .expected("\"paved\" or \"unpaved\"")
                })?;
                Ok(Segment::Shallow {
                    k_fps: k,
                    surface: s.get_ref().clone(),
                    length_ft,
                    slope,
                })
            }
            "channel" => {
                self.unused_flow_key(
                    ctx,
                    "surface",
                    rf.surface.as_ref().map(|s| s.span()),
                    "channel",
                )?;
                let n_raw = self.req(&rf.n, &f.span(), ctx, "n", "0.030")?;
                let n = match n_raw.get_ref() {
                    NumOrName::Num(x) if *x > 0.0 && x.is_finite() => *x,
                    NumOrName::Num(x) => {
                        return Err(self
                            .err(
                                &n_raw.span(),
                                &format!("{ctx}, n"),
                                format!("Manning n must be positive, got {x}"),
                            )
                            .expected("a positive roughness such as 0.030"));
                    }
                    NumOrName::Name(s) => {
                        return Err(self
                            .err(
                                &n_raw.span(),
                                &format!("{ctx}, n"),
                                format!("channel flow needs Manning n as a number, not \"{s}\""),
                            )
                            .expected("a number such as 0.030"));
                    }
                };
                let sec_raw = self.req(
                    &rf.section,
                    &f.span(),
                    ctx,
                    "section",
                    "{ shape = \"trapezoid\", bottom = \"3 ft\", side = 2.0, depth = \"1.5 ft\" }",
                )?;
                let section = self.section(sec_raw, &format!("{ctx}, section"))?;
                Ok(Segment::Channel {
                    n,
                    length_ft,
                    slope,
                    section,
                })
            }
            other => Err(self.unknown_word(
                &kind.span(),
                &format!("{ctx}, kind"),
                format!("unknown flow kind \"{other}\""),
                "\"sheet\", \"shallow\" or \"channel\"",
                other,
                ["sheet", "shallow", "channel"],
            )),
        }
    }

    pub(super) fn section(&self, s: &Spanned<RawSection>, ctx: &str) -> R<Section> {
        let r = s.get_ref();
        let shape = r.shape.as_ref().map(|x| x.get_ref().to_ascii_lowercase());
        match shape.as_deref() {
            Some("trapezoid") | Some("rectangle") => {
                let bottom_ft = self.qty(
                    self.req(&r.bottom, &s.span(), ctx, "bottom", "\"3 ft\"")?,
                    Quantity::Length,
                    &format!("{ctx}, bottom"),
                )?;
                let side = match &r.side {
                    Some(v) => self.num(v, &format!("{ctx}, side"))?,
                    None if shape.as_deref() == Some("rectangle") => 0.0,
                    None => {
                        return Err(self
                            .err(&s.span(), ctx, "missing required key `side`")
                            .expected("side slope, horizontal per vertical, e.g. side = 2.0"));
                    }
                };
                let depth_ft = self.positive(
                    self.req(&r.depth, &s.span(), ctx, "depth", "\"1.5 ft\"")?,
                    Quantity::Length,
                    &format!("{ctx}, depth"),
                )?;
                if bottom_ft < 0.0 || side < 0.0 || (bottom_ft == 0.0 && side == 0.0) {
                    return Err(self
                        .err(&s.span(), ctx, "the section has no width")
                        .expected("a bottom width >= 0 and a side slope >= 0, not both zero"));
                }
                Ok(Section::Trapezoid {
                    bottom_ft,
                    side_h_per_v: side,
                    depth_ft,
                })
            }
            Some("pipe") => {
                let d = self.positive(
                    self.req(&r.diameter, &s.span(), ctx, "diameter", "\"18 in\"")?,
                    Quantity::Length,
                    &format!("{ctx}, diameter"),
                )?;
                Ok(Section::PipeFull { diameter_ft: d })
            }
            None => {
                let a = self.positive(
                    self.req(&r.flow_area, &s.span(), ctx, "flow_area", "4.5 (ft2 or m2)")?,
                    Quantity::SectionArea,
                    &format!("{ctx}, flow_area"),
                )?;
                let p = self.positive(
                    self.req(&r.perimeter, &s.span(), ctx, "perimeter", "6.1 (ft or m)")?,
                    Quantity::Length,
                    &format!("{ctx}, perimeter"),
                )?;
                Ok(Section::Given {
                    area_ft2: a,
                    perimeter_ft: p,
                })
            }
            Some(other) => {
                let span = r.shape.as_ref().map(|x| x.span()).unwrap_or(s.span());
                Err(self.err(&span, &format!("{ctx}, shape"), format!("unknown section shape \"{other}\"")).expected("\"trapezoid\", \"rectangle\", \"pipe\", or flow_area + perimeter with no shape"))
            }
        }
    }

    /// The cover rows of a catchment, each with its curve number and area.
    fn catchment_covers(&mut self, rc: &RawCatchment, ctx: &str) -> R<Vec<CoverRow>> {
        let mut covers = Vec::new();
        for (i, cv) in rc.cover.iter().enumerate() {
            let c = cv.get_ref();
            let cctx = format!("{ctx}, cover {}", i + 1);
            let area = self.positive(
                self.req(&c.area, &cv.span(), &cctx, "area", "\"3.0 ac\"")?,
                Quantity::Area,
                &format!("{cctx}, area"),
            )?;
            let (cn, label, pervious) = match (&c.cn, &c.land) {
                (Some(_), Some(l)) => {
                    return Err(self
                        .err(
                            &l.span(),
                            &format!("{cctx}, land"),
                            "a cover takes either `cn` or `land` + `soil`, not both",
                        )
                        .expected("one of them"));
                }
                (Some(cn), None) => {
                    let v = self.cn(cn, &format!("{cctx}, cn"))?;
                    (
                        v,
                        c.note.clone().unwrap_or_else(|| "CN given".into()),
                        v < 98.0,
                    )
                }
                (None, Some(l)) => {
                    let soil_raw = self.req(
                        &c.soil,
                        &cv.span(),
                        &cctx,
                        "soil",
                        "\"A\", \"B\", \"C\" or \"D\"",
                    )?;
                    let soil = cover::Soil::parse(soil_raw.get_ref()).ok_or_else(|| {
                        self.err(
                            &soil_raw.span(),
                            &format!("{cctx}, soil"),
                            format!("unknown hydrologic soil group \"{}\"", soil_raw.get_ref()),
                        )
                        .expected("A, B, C or D")
                    })?;
                    let cn = cover::lookup(l.get_ref(), soil).map_err(|e| {
                        self.err(&l.span(), &format!("{cctx}, land"), e.to_string())
                            .expected("a land-cover key listed in the README (\"Land covers\")")
                    })?;
                    let pervious = cover::COVERS
                        .iter()
                        .find(|e| e.key == l.get_ref())
                        .map(|e| e.pervious)
                        .unwrap_or(true);
                    (
                        cn,
                        format!(
                            "{} ({})",
                            l.get_ref(),
                            soil_raw.get_ref().to_ascii_uppercase()
                        ),
                        pervious,
                    )
                }
                (None, None) => {
                    return Err(self
                        .err(
                            &cv.span(),
                            &cctx,
                            "a cover needs `cn`, or `land` and `soil`",
                        )
                        .expected("cn = 98, or land = \"open-space-good\" with soil = \"C\""));
                }
            };
            if pervious && cn > 98.0 {
                self.warnings.push(Warning::CnHighPervious {
                    catchment: rc.name.get_ref().clone(),
                    cover: label.clone(),
                    cn,
                });
            }
            let connected = match &c.connected {
                Some(k) if !*k.get_ref() && (pervious || (cn - 98.0).abs() > 1e-9) => {
                    return Err(self
                        .err(
                            &k.span(),
                            &format!("{cctx}, connected"),
                            format!("`connected = false` marks impervious cover, but this cover has CN {cn} and is not impervious at CN 98"),
                        )
                        .expected("`connected = false` only on impervious covers (land = \"impervious\" or \"street-paved-curbed\", or cn = 98)")
                        .hint("leave `connected` out for pervious and composite covers"));
                }
                Some(k) => *k.get_ref(),
                None => true,
            };
            covers.push(CoverRow {
                label,
                cn,
                area_ac: area,
                pervious,
                connected,
            });
        }
        Ok(covers)
    }

    /// A lag given (`lag_time`) or computed by the NRCS watershed-lag
    /// equation (`watershed_lag`), with its basis; `None` when the catchment
    /// gives `tc` or a flow path instead. Only one of the four may be given.
    fn catchment_lag(
        &mut self,
        rc: &RawCatchment,
        ctx: &str,
        cn: f64,
    ) -> R<Option<(f64, TimingBasis)>> {
        let given: Vec<(&str, std::ops::Range<usize>)> = [
            ("tc", rc.tc.as_ref().map(|t| t.span())),
            ("lag_time", rc.lag_time.as_ref().map(|t| t.span())),
            ("watershed_lag", rc.watershed_lag.as_ref().map(|t| t.span())),
            ("[[catchment.flow]]", rc.flow.first().map(|f| f.span())),
        ]
        .into_iter()
        .filter_map(|(k, s)| s.map(|s| (k, s)))
        .collect();
        if given.len() > 1 {
            let (k, span) = &given[1];
            return Err(self
                .err(
                    span,
                    &format!("{ctx}, {k}"),
                    format!("give one of `tc`, `lag_time`, `watershed_lag` or a flow path of [[catchment.flow]]; this catchment also has {}", given[0].0),
                )
                .expected("one timing input per catchment"));
        }
        if let Some(l) = &rc.lag_time {
            let lag = self.positive(l, Quantity::Time, &format!("{ctx}, lag_time"))?;
            self.lag_short(rc, lag);
            return Ok(Some((lag, TimingBasis::LagGiven)));
        }
        let Some(w) = &rc.watershed_lag else {
            return Ok(None);
        };
        let wctx = format!("{ctx}, watershed_lag");
        let wl = w.get_ref();
        let length = self.req(
            &wl.length,
            &w.span(),
            &wctx,
            "length",
            "\"26400 ft\" (flow length to the divide)",
        )?;
        let length_ft = self.positive(length, Quantity::Length, &format!("{wctx}, length"))?;
        let slope_raw = self.req(
            &wl.slope,
            &w.span(),
            &wctx,
            "slope",
            "\"1.9 %\" (average watershed slope)",
        )?;
        let slope = self.positive(slope_raw, Quantity::Slope, &format!("{wctx}, slope"))?;
        let lag = timing::watershed_lag_h(length_ft, slope * 100.0, cn);
        if !(lag > 0.0 && lag.is_finite()) {
            return Err(self
                .err(
                    &w.span(),
                    &wctx,
                    format!("the watershed lag works out to {lag} h"),
                )
                .expected("a length, slope and curve number that give a positive, finite lag"));
        }
        self.lag_short(rc, lag);
        Ok(Some((lag, TimingBasis::WatershedLag { length_ft, slope })))
    }

    /// The short-Tc warning for a catchment timed by its lag (Tc = lag / 0.6).
    fn lag_short(&mut self, rc: &RawCatchment, lag_h: f64) {
        let tc_h = timing::tc_from_lag_h(lag_h);
        if tc_h < 0.1 {
            self.warnings.push(Warning::TcShort {
                catchment: rc.name.get_ref().clone(),
                tc_h,
            });
        }
    }

    /// The flow path and the time of concentration (h): given, or summed
    /// over the flow path;
    /// warnings when it is unusually long or short.
    fn catchment_tc(
        &mut self,
        rc: &RawCatchment,
        span: &std::ops::Range<usize>,
        ctx: &str,
        p2_in: Option<f64>,
    ) -> R<(Vec<Segment>, f64)> {
        let mut segments = Vec::new();
        for (i, f) in rc.flow.iter().enumerate() {
            segments.push(self.segment(
                f,
                &format!("{ctx}, flow segment {}", i + 1),
                p2_in,
                rc.name.get_ref(),
                i + 1,
            )?);
        }
        let tc_h = match (&rc.tc, segments.is_empty()) {
            (Some(t), true) => self.positive(t, Quantity::Time, &format!("{ctx}, tc"))?,
            (Some(t), false) => {
                return Err(self
                    .err(
                        &t.span(),
                        &format!("{ctx}, tc"),
                        "give either `tc` or a flow path of [[catchment.flow]], not both",
                    )
                    .expected("one of them"));
            }
            (None, false) => timing::time_of_concentration_h(&segments, p2_in),
            (None, true) => {
                return Err(self
                    .err(
                        span,
                        ctx,
                        "missing `tc` (or a flow path of [[catchment.flow]], `lag_time` or `watershed_lag`)",
                    )
                    .expected("`tc = \"12 min\"`, [[catchment.flow]] segments, `lag_time = \"20 min\"` or `watershed_lag = { length = \"2600 ft\", slope = \"3 %\" }`"));
            }
        };
        if !(tc_h > 0.0 && tc_h.is_finite()) {
            return Err(self
                .err(
                    span,
                    ctx,
                    format!("the time of concentration works out to {tc_h} h"),
                )
                .expected("a positive, finite Tc"));
        }
        if tc_h > 24.0 {
            let (at, hint) = match &rc.tc {
                Some(t) => {
                    let hint = match t.get_ref() {
                        RawValue::Text(txt) => match units::split_number(txt) {
                            Ok((x, u)) if matches!(u.to_ascii_lowercase().as_str(), "h" | "hr" | "hrs" | "hour" | "hours") => {
                                format!("did you mean \"{} min\"?", units::short(x, 4))
                            }
                            Ok((x, u)) if matches!(u.to_ascii_lowercase().as_str(), "d" | "day" | "days") => {
                                format!("did you mean \"{} h\"?", units::short(x, 4))
                            }
                            _ => "check the value and its unit".to_string(),
                        },
                        _ => "check the value and its unit".to_string(),
                    };
                    (format!("{ctx}, tc"), hint)
                }
                None => (
                    ctx.to_string(),
                    "check each flow segment's length, slope and Manning n (`runnel check` lists every segment's travel time) and `p2`".to_string(),
                ),
            };
            self.warnings.push(Warning::TcLong {
                at,
                value: format!("{} h", units::short(tc_h, 4)),
                hint,
            });
        }
        if tc_h < 0.1 {
            self.warnings.push(Warning::TcShort {
                catchment: rc.name.get_ref().clone(),
                tc_h,
            });
        }
        Ok((segments, tc_h))
    }

    /// The Manning n of sheet flow: a number or a surface name.
    fn sheet_n(&self, f: &Spanned<RawFlow>, ctx: &str) -> R<f64> {
        let rf = f.get_ref();
        let n_raw = self.req(
            &rf.n,
            &f.span(),
            ctx,
            "n",
            "0.15 or a surface name such as \"grass-short-prairie\"",
        )?;
        let n = match n_raw.get_ref() {
            NumOrName::Num(x) => *x,
            NumOrName::Name(s) => cover::sheet_flow_n(s).map_err(|e| {
                self.err(&n_raw.span(), &format!("{ctx}, n"), e.to_string())
                    .expected("a Manning n, or a sheet-flow surface listed in the README")
            })?,
        };
        if !(n > 0.0 && n.is_finite()) {
            return Err(self
                .err(
                    &n_raw.span(),
                    &format!("{ctx}, n"),
                    format!("Manning n must be positive, got {n}"),
                )
                .expected("a positive roughness such as 0.15"));
        }
        Ok(n)
    }

    /// A note when a sheet-flow length exceeds the TR-55 guidance.
    fn sheet_length_warning(&mut self, length_ft: f64, catchment: &str, index: usize) {
        if length_ft > timing::SHEET_FLOW_GUIDANCE_FT + 1e-9 {
            let f_out = Quantity::Length.output_factor(self.units);
            self.warnings.push(Warning::SheetFlowLong {
                catchment: catchment.to_string(),
                segment: index,
                length: format!(
                    "{:.0} {}",
                    length_ft * f_out,
                    Quantity::Length.output_unit(self.units)
                ),
            });
        }
    }

    /// A key given that this kind of flow segment does not use.
    fn unused_flow_key(
        &self,
        ctx: &str,
        key: &str,
        sp: Option<std::ops::Range<usize>>,
        kind: &str,
    ) -> R<()> {
        if let Some(sp) = sp {
            return Err(self
                .err(
                    &sp,
                    &format!("{ctx}, {key}"),
                    format!("`{key}` is not used by {kind} flow"),
                )
                .expected(match kind {
                    "sheet" => "kind, n, length, slope",
                    "shallow" => "kind, surface, length, slope",
                    _ => "kind, n, length, slope, section",
                }));
        }
        Ok(())
    }
}

/// A catchment's curve numbers with its impervious cover split out.
#[derive(Debug, Clone, Copy, PartialEq)]
struct ImperviousSplit {
    /// Composite CN of the whole area (TR-55 Figure 2-4 when impervious
    /// cover is marked unconnected and is under 30 % of the area).
    cn: f64,
    /// Share of the area that is connected impervious cover at CN 98.
    connected_fraction: f64,
    /// CN of the rest of the area.
    rest_cn: f64,
    /// The impervious share (percent) when covers are marked unconnected
    /// but the share is 30 % or more, so the marks were not used.
    unconnected_ignored_pct: Option<f64>,
    /// Whether the composite is TR-55 Figure 2-4's (unconnected impervious
    /// cover at half weight).
    unconnected_reduced: bool,
}

/// Splits the covers into connected impervious cover (CN 98) and the rest.
///
/// Without covers marked `connected = false`, the composite is the
/// area-weighted `area_weighted_cn` and the rest is the area-weighted CN of
/// the other covers. With them, and under 30 % impervious in all, TR-55
/// (1986) Figure 2-4 (from memory) gives the composite, and the rest's CN
/// is the same relation over the rest of the area, so that the two shares
/// added by area give the composite. At 30 % or more TR-55 treats all
/// impervious cover as connected (its Figure 2-3).
fn impervious_split(covers: &[CoverRow], area_weighted_cn: f64) -> ImperviousSplit {
    let total: f64 = covers.iter().map(|c| c.area_ac).sum();
    let sum = |f: &dyn Fn(&CoverRow) -> bool| -> f64 {
        covers.iter().filter(|c| f(c)).map(|c| c.area_ac).sum()
    };
    let connected = sum(&|c| c.is_impervious() && c.connected);
    let unconnected = sum(&|c| c.is_impervious() && !c.connected);
    if total.is_nan() || total <= 0.0 || connected + unconnected <= 0.0 {
        return ImperviousSplit {
            cn: area_weighted_cn,
            connected_fraction: 0.0,
            rest_cn: area_weighted_cn,
            unconnected_ignored_pct: None,
            unconnected_reduced: false,
        };
    }
    let other: Vec<(f64, f64)> = covers
        .iter()
        .filter(|c| !c.is_impervious())
        .map(|c| (c.cn, c.area_ac))
        .collect();
    let pervious_cn = runoff::composite_cn(&other).unwrap_or(98.0);
    let (pc, pu) = (100.0 * connected / total, 100.0 * unconnected / total);
    match runoff::unconnected_composite_cn(pervious_cn, pc, pu) {
        Some(cn) if pu > 0.0 => {
            let rest_pct = 100.0 - pc;
            let rest_cn = if rest_pct > 0.0 {
                pervious_cn + (98.0 - pervious_cn) * 0.5 * pu / rest_pct
            } else {
                98.0
            };
            ImperviousSplit {
                cn,
                connected_fraction: connected / total,
                rest_cn,
                unconnected_ignored_pct: None,
                unconnected_reduced: true,
            }
        }
        _ => ImperviousSplit {
            cn: area_weighted_cn,
            connected_fraction: (connected + unconnected) / total,
            rest_cn: pervious_cn,
            unconnected_ignored_pct: (pu > 0.0).then_some(pc + pu),
            unconnected_reduced: false,
        },
    }
}
