//! Plausibility warnings: values that read but are unusual for their kind
//! (a rain depth, a slope, a Manning n, an outlet coefficient or size).

use super::outlets::OutletKind;
use super::*;

impl Builder<'_> {
    /// For a rain depth outside its usual range (in): the value as read in
    /// the scenario's unit, the usual range in both systems, and the likely
    /// intended input (a bare number read in the other system's unit).
    pub(super) fn depth_slip(
        &self,
        v: &Spanned<RawValue>,
        depth_in: f64,
        usual: (f64, f64),
    ) -> (String, String, String) {
        let (value, usual_text) = match self.units {
            UnitSystem::Us => (
                format!("{} in", units::short(depth_in, 3)),
                format!(
                    "{}-{} in ({}-{} mm)",
                    usual.0,
                    usual.1,
                    units::sig(usual.0 * units::MM_PER_IN, 2),
                    units::sig(usual.1 * units::MM_PER_IN, 2)
                ),
            ),
            UnitSystem::Si => (
                format!("{} mm", units::short(depth_in * units::MM_PER_IN, 3)),
                format!(
                    "{}-{} mm ({}-{} in)",
                    units::sig(usual.0 * units::MM_PER_IN, 2),
                    units::sig(usual.1 * units::MM_PER_IN, 2),
                    usual.0,
                    usual.1
                ),
            ),
        };
        let in_range = |x: f64| (usual.0..=usual.1).contains(&x);
        let hint = match (v.get_ref(), self.units) {
            // A bare SI number read as mm that makes sense in inches.
            (RawValue::Num(x), UnitSystem::Si) if in_range(*x) => {
                format!("did you mean \"{x} in\"?")
            }
            // A bare US number read as inches that makes sense in mm.
            (RawValue::Num(x), UnitSystem::Us) if in_range(x / units::MM_PER_IN) => {
                format!("did you mean \"{x} mm\"?")
            }
            _ => "check the value and its unit against the local rainfall data".to_string(),
        };
        (value, usual_text, hint)
    }

    /// A slope that is legal but almost always a percentage written as a
    /// ratio: 1 or more for any segment, above 0.3 for sheet and shallow flow.
    pub(super) fn slope_warning(
        &mut self,
        raw: &Spanned<RawValue>,
        slope: f64,
        kind: &str,
        ctx: &str,
    ) {
        let surface = matches!(kind, "sheet" | "shallow");
        if !(slope >= 1.0 || (surface && slope > SLOPE_USUAL_MAX)) {
            return;
        }
        let unit = match self.units {
            UnitSystem::Us => "ft/ft",
            UnitSystem::Si => "m/m",
        };
        let percent_written = match raw.get_ref() {
            RawValue::Text(t) => t.contains('%') || t.to_ascii_lowercase().contains("percent"),
            _ => false,
        };
        let likely = if percent_written {
            // "45 %": a slipped decimal point.
            format!("\"{} %\"", units::short(slope * 10.0, 4))
        } else {
            format!("\"{} %\"", units::short(slope, 4))
        };
        let usual = if surface {
            format!(
                "sheet and shallow flow slopes are usually under {SLOPE_USUAL_MAX} {unit} (30 %)"
            )
        } else {
            format!("a channel slope of 1 {unit} (100 %) or more is not open-channel flow")
        };
        self.warnings.push(Warning::SlopeSteep {
            at: format!("{ctx}, slope"),
            value: format!("{} {unit}", units::short(slope, 4)),
            percent: slope * 100.0,
            usual,
            likely,
        });
    }

    /// A Manning n outside the usual range of sheet or channel flow.
    pub(super) fn manning_warning(&mut self, n: f64, kind: &str, ctx: &str) {
        let (range, usual) = match kind {
            "sheet" => (
                SHEET_N_USUAL,
                "sheet-flow range of 0.008-1.0 (TR-55 Table 3-1 spans 0.011 to 0.8)",
            ),
            "channel" => (CHANNEL_N_USUAL, "channel range of 0.008-0.2"),
            _ => return,
        };
        if !(n.is_finite() && n > 0.0) || (range.0..=range.1).contains(&n) {
            return;
        }
        // The same digits with the decimal point moved into the range.
        let mut guess = n;
        for _ in 0..400 {
            if guess > range.1 {
                guess /= 10.0;
            } else if guess < range.0 {
                guess *= 10.0;
            } else {
                break;
            }
        }
        let hint = if (range.0..=range.1).contains(&guess) {
            format!("did you mean n = {}?", units::short(guess, 4))
        } else {
            "check the value".to_string()
        };
        self.warnings.push(Warning::ManningNUnusual {
            at: format!("{ctx}, n"),
            value: units::short(n, 4),
            usual: usual.to_string(),
            hint,
        });
    }

    /// Plausibility warnings of an outlet (read again from the raw keys).
    pub(super) fn outlet_warnings(&self, r: &RawOutlet, ctx: &str) -> Vec<Warning> {
        let mut out = Vec::new();
        let kind = r
            .kind
            .as_ref()
            .and_then(|k| OutletKind::parse(&k.get_ref().to_ascii_lowercase()));
        // A bare diameter of 3 or more (ft or m) for an orifice or riser.
        if matches!(kind, Some(OutletKind::Orifice | OutletKind::Riser))
            && let Some(d) = &r.diameter
        {
            let bare: Vec<f64> = match d.get_ref() {
                RawValue::Num(x) => vec![*x],
                RawValue::Range(b) => [&b.0, &b.1]
                    .into_iter()
                    .filter_map(|x| match x {
                        RawValue::Num(v) => Some(*v),
                        _ => None,
                    })
                    .collect(),
                RawValue::Text(_) => Vec::new(),
            };
            if let Some(x) = bare
                .into_iter()
                .filter(|x| *x >= BARE_DIAMETER_LIMIT)
                .reduce(f64::max)
            {
                let (unit, small) = match self.units {
                    UnitSystem::Us => ("ft", "in"),
                    UnitSystem::Si => ("m", "mm"),
                };
                let usual = match (kind, self.units) {
                    (Some(OutletKind::Orifice), UnitSystem::Us) => {
                        "pond orifices are a few inches to about 2 ft across"
                    }
                    (Some(OutletKind::Orifice), UnitSystem::Si) => {
                        "pond orifices are about 50 mm to 0.6 m across"
                    }
                    (_, UnitSystem::Us) => "risers are usually 2 to 6 ft across",
                    (_, UnitSystem::Si) => "risers are usually 0.6 to 1.8 m across",
                };
                out.push(Warning::DiameterBare {
                    at: format!("{ctx}, diameter"),
                    value: format!("{x} {unit}"),
                    usual: usual.to_string(),
                    likely: format!("\"{x} {small}\""),
                    explicit: format!("\"{x} {unit}\""),
                });
            }
        }
        // Weir, spillway and riser coefficients, in the scenario's system.
        if let Some(c) = &r.coefficient {
            let v = *c.get_ref();
            let range_us = match kind {
                Some(OutletKind::Weir) => Some(SHARP_WEIR_C_US),
                Some(OutletKind::Riser) => Some(RISER_C_US),
                Some(OutletKind::Spillway) => Some(SPILLWAY_C_US),
                _ => None,
            };
            if let Some((lo, hi)) = range_us {
                let si = units::M_PER_FT.sqrt();
                let (range, other, sys, other_sys, to_sys) = match self.units {
                    UnitSystem::Us => ((lo, hi), (lo * si, hi * si), "US", "SI", 1.0 / si),
                    UnitSystem::Si => ((lo * si, hi * si), (lo, hi), "SI", "US", si),
                };
                if v.is_finite() && !(range.0..=range.1).contains(&v) {
                    let what = match kind {
                        Some(OutletKind::Weir) => "sharp-crested weir coefficient",
                        Some(OutletKind::Riser) => "riser rim (weir) coefficient",
                        _ => "broad-crested (spillway) coefficient",
                    };
                    let hint = if (other.0..=other.1).contains(&v) {
                        format!(
                            "{v} is the {other_sys} form of {}; did you mean coefficient = {} (the same weir in {sys} units)?",
                            units::short(v * to_sys, 3),
                            units::short(v * to_sys, 3)
                        )
                    } else {
                        "check the value (leave `coefficient` out to use the default)".to_string()
                    };
                    out.push(Warning::CoefficientUnusual {
                        at: format!("{ctx}, coefficient"),
                        value: format!("{v}"),
                        usual: format!(
                            "{what} of {}-{} in {sys} units (ft^0.5/s in US, m^0.5/s in SI)",
                            units::short(range.0, 3),
                            units::short(range.1, 3)
                        ),
                        hint,
                    });
                }
            }
        }
        out
    }
}
