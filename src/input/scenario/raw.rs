//! Raw serde types of the scenario TOML, exactly as written by the user.
//! Nothing here is validated beyond TOML types; `scenario::build` turns
//! these into the checked model.

use serde::Deserialize;
use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use std::collections::BTreeMap;
use std::fmt;
use toml::Spanned;

/// A number, a unit-bearing string, or a `{ min, max }` range.
#[derive(Debug, Clone, PartialEq)]
pub enum RawValue {
    /// A bare number in the scenario's system.
    Num(f64),
    /// A string such as `"8.4 ac"`.
    Text(String),
    /// A range to be solved by sizing: min, max and the optional
    /// buildable `increment`.
    Range(Box<(RawValue, RawValue, Option<RawValue>)>),
}

impl<'de> Deserialize<'de> for RawValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = RawValue;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number or a string with a unit such as \"8.4 ac\"")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<RawValue, E> {
                Ok(RawValue::Num(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<RawValue, E> {
                Ok(RawValue::Num(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<RawValue, E> {
                Ok(RawValue::Num(v as f64))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<RawValue, E> {
                Ok(RawValue::Text(v.to_string()))
            }
            fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<RawValue, A::Error> {
                let mut min = None;
                let mut max = None;
                let mut increment = None;
                while let Some(key) = map.next_key::<String>()? {
                    match key.as_str() {
                        "min" => min = Some(map.next_value::<RawValue>()?),
                        "max" => max = Some(map.next_value::<RawValue>()?),
                        "increment" => increment = Some(map.next_value::<RawValue>()?),
                        other => {
                            return Err(de::Error::custom(format!(
                                "unknown key `{other}` in a range; a range is {{ min = ..., max = ..., increment = ... }} (increment optional)"
                            )));
                        }
                    }
                }
                match (min, max) {
                    (Some(a), Some(b)) => Ok(RawValue::Range(Box::new((a, b, increment)))),
                    _ => Err(de::Error::custom("a range needs both `min` and `max`")),
                }
            }
        }
        d.deserialize_any(V)
    }
}

/// A name or a list of names (`condition = "existing"` or `["existing", "proposed"]`).
#[derive(Debug, Clone, PartialEq)]
pub struct NameList(pub Vec<String>);

impl<'de> Deserialize<'de> for NameList {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = NameList;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a name or a list of names")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<NameList, E> {
                Ok(NameList(vec![v.to_string()]))
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<NameList, A::Error> {
                let mut out = Vec::new();
                while let Some(s) = seq.next_element::<String>()? {
                    out.push(s);
                }
                Ok(NameList(out))
            }
        }
        d.deserialize_any(V)
    }
}

/// A Manning n given as a number or a named surface.
#[derive(Debug, Clone, PartialEq)]
pub enum NumOrName {
    /// A number.
    Num(f64),
    /// A name from a built-in table.
    Name(String),
}

impl<'de> Deserialize<'de> for NumOrName {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = NumOrName;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number or a surface name")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<NumOrName, E> {
                Ok(NumOrName::Num(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<NumOrName, E> {
                Ok(NumOrName::Num(v as f64))
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<NumOrName, E> {
                Ok(NumOrName::Name(v.to_string()))
            }
        }
        d.deserialize_any(V)
    }
}

/// Rows of numbers, e.g. `[[100.0, 4000.0], [102.0, 6200.0]]`.
pub type Rows = Vec<Vec<f64>>;

/// The whole scenario file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScenario {
    /// Free text.
    pub title: Option<String>,
    /// "us" or "si".
    pub units: Option<Spanned<String>>,
    /// Computation step.
    pub step: Option<Spanned<RawValue>>,
    /// The condition the others are compared against.
    pub baseline: Option<Spanned<String>>,
    /// The scenario's conditions, listed once (optional); when given, no
    /// other condition name may be used.
    pub conditions: Option<Spanned<Vec<Spanned<String>>>>,
    /// 2-year 24-hour rainfall.
    pub p2: Option<Spanned<RawValue>>,
    /// Memory cap for a run, e.g. "4 GB" (runnel's own key).
    pub memory_limit: Option<Spanned<String>>,
    /// Design storms.
    #[serde(default)]
    pub storm: Vec<Spanned<RawStorm>>,
    /// Catchments.
    #[serde(default)]
    pub catchment: Vec<Spanned<RawCatchment>>,
    /// Ponds.
    #[serde(default)]
    pub pond: Vec<Spanned<RawPond>>,
    /// Inflow hydrographs.
    #[serde(default)]
    pub inflow: Vec<Spanned<RawInflow>>,
    /// Channel reaches (runnel's own table).
    #[serde(default)]
    pub channel: Vec<Spanned<RawChannel>>,
    /// Points of comparison.
    #[serde(default)]
    pub point: Vec<Spanned<RawPoint>>,
    /// Long records.
    #[serde(default)]
    pub record: Vec<Spanned<RawRecord>>,
    /// The report's project block (optional; runnel's own keys).
    pub report: Option<Spanned<RawReport>>,
}

/// `[report]`: free text for the project block of `report.html`, printed as
/// written.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawReport {
    /// The consultant's or the agency's project number.
    pub project_number: Option<Spanned<String>>,
    /// Who the report is for.
    pub client: Option<Spanned<String>>,
    /// Who prepared it.
    pub prepared_by: Option<Spanned<String>>,
    /// The report's date, as it should print.
    pub date: Option<Spanned<String>>,
}

/// Rows of `[duration, depth]` pairs with their positions, e.g.
/// `[["5 min", "0.48 in"], ["24 h", "4.3 in"]]`.
pub type DepthRows = Vec<Spanned<Vec<Spanned<RawValue>>>>;

/// `[[storm]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStorm {
    /// Storm name.
    pub name: Spanned<String>,
    /// Pattern key.
    pub pattern: Option<Spanned<String>>,
    /// Total depth.
    pub depth: Option<Spanned<RawValue>>,
    /// Duration.
    pub duration: Option<Spanned<RawValue>>,
    /// Mass curve for `pattern = "table"`.
    pub table: Option<Spanned<Rows>>,
    /// Local depth-duration values for `pattern = "nested"`:
    /// `[["5 min", "0.48 in"], ...]`.
    pub depths: Option<Spanned<DepthRows>>,
    /// Where a nested storm's largest block falls: a fraction of the
    /// duration or a time from the start.
    pub peak_at: Option<Spanned<RawValue>>,
    /// Gauge CSV path.
    pub gauge: Option<Spanned<String>>,
    /// Gauge interval.
    pub interval: Option<Spanned<RawValue>>,
    /// "zero" to fill missing intervals.
    pub missing: Option<Spanned<String>>,
}

/// `[[catchment]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCatchment {
    /// Name.
    pub name: Spanned<String>,
    /// Conditions it belongs to.
    pub condition: Option<Spanned<NameList>>,
    /// Area.
    pub area: Option<Spanned<RawValue>>,
    /// Downstream element.
    pub to: Option<Spanned<String>>,
    /// Curve number.
    pub cn: Option<Spanned<f64>>,
    /// Time of concentration.
    pub tc: Option<Spanned<RawValue>>,
    /// Watershed lag of the unit hydrograph, given directly.
    pub lag_time: Option<Spanned<RawValue>>,
    /// Watershed lag by the NRCS curve-number lag equation.
    pub watershed_lag: Option<Spanned<RawWatershedLag>>,
    /// Initial-abstraction ratio.
    pub lambda: Option<Spanned<f64>>,
    /// Translation to `to`.
    pub lag: Option<Spanned<RawValue>>,
    /// Peak rate factor.
    pub prf: Option<Spanned<f64>>,
    /// Cover list.
    #[serde(default)]
    pub cover: Vec<Spanned<RawCover>>,
    /// Flow path.
    #[serde(default)]
    pub flow: Vec<Spanned<RawFlow>>,
    /// "separate" | "composite": the connected impervious share on its own.
    pub impervious: Option<Spanned<String>>,
}

/// `watershed_lag = { length, slope }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWatershedLag {
    /// Hydraulic length to the divide.
    pub length: Option<Spanned<RawValue>>,
    /// Average watershed slope.
    pub slope: Option<Spanned<RawValue>>,
}

/// `[[catchment.cover]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCover {
    /// Curve number given directly.
    pub cn: Option<Spanned<f64>>,
    /// Built-in land cover key.
    pub land: Option<Spanned<String>>,
    /// Hydrologic soil group.
    pub soil: Option<Spanned<String>>,
    /// Area.
    pub area: Option<Spanned<RawValue>>,
    /// Free note for the worksheet.
    pub note: Option<String>,
    /// `false` for impervious cover not directly connected (TR-55 Figure 2-4).
    pub connected: Option<Spanned<bool>>,
}

/// `[[catchment.flow]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFlow {
    /// sheet | shallow | channel.
    pub kind: Option<Spanned<String>>,
    /// Manning n or named sheet-flow surface.
    pub n: Option<Spanned<NumOrName>>,
    /// Shallow-flow surface.
    pub surface: Option<Spanned<String>>,
    /// Length.
    pub length: Option<Spanned<RawValue>>,
    /// Slope.
    pub slope: Option<Spanned<RawValue>>,
    /// Channel section.
    pub section: Option<Spanned<RawSection>>,
}

/// `section = { ... }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSection {
    /// trapezoid | pipe (absent: flow_area + perimeter).
    pub shape: Option<Spanned<String>>,
    /// Trapezoid bottom width.
    pub bottom: Option<Spanned<RawValue>>,
    /// Trapezoid side slope, H:V.
    pub side: Option<Spanned<f64>>,
    /// Trapezoid depth.
    pub depth: Option<Spanned<RawValue>>,
    /// Pipe diameter.
    pub diameter: Option<Spanned<RawValue>>,
    /// Flow area.
    pub flow_area: Option<Spanned<RawValue>>,
    /// Wetted perimeter.
    pub perimeter: Option<Spanned<RawValue>>,
}

/// `[[pond]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPond {
    /// Name.
    pub name: Spanned<String>,
    /// Conditions.
    pub condition: Option<Spanned<NameList>>,
    /// Downstream element.
    pub to: Option<Spanned<String>>,
    /// Stage-area table.
    pub stage_area: Option<Spanned<Rows>>,
    /// Stage-volume table.
    pub stage_volume: Option<Spanned<Rows>>,
    /// Concept-stage basin geometry.
    pub basin: Option<Spanned<RawBasin>>,
    /// Initial water surface.
    pub start: Option<Spanned<RawValue>>,
    /// Top of embankment.
    pub top: Option<Spanned<RawValue>>,
    /// Embankment crest length for overtopping.
    pub top_length: Option<Spanned<RawValue>>,
    /// Least freeboard allowed.
    pub min_freeboard: Option<Spanned<RawValue>>,
    /// Longest drain time allowed.
    pub max_drain_time: Option<Spanned<RawValue>>,
    /// Outlets.
    #[serde(default)]
    pub outlet: Vec<Spanned<RawOutlet>>,
    /// Barrels (culverts) the outlets may drain through.
    #[serde(default)]
    pub barrel: Vec<Spanned<RawBarrel>>,
    /// Water surface downstream: an elevation or a `[[flow, elevation]]` table.
    pub tailwater: Option<Spanned<RawTailwater>>,
    /// Clogged-outlet checks.
    #[serde(default)]
    pub failure: Vec<Spanned<RawFailure>>,
    // Underground storage and losses (issues 13 and 12).
    /// Pipe galleries.
    #[serde(default)]
    pub gallery: Vec<Spanned<RawGallery>>,
    /// Vaults.
    #[serde(default)]
    pub vault: Vec<Spanned<RawVault>>,
    /// Stone beds.
    #[serde(default)]
    pub stone: Vec<Spanned<RawStone>>,
    /// Constant infiltration rate, e.g. "0.5 in/h".
    pub infiltration: Option<Spanned<RawValue>>,
    /// `"wetted"` (default) or `"bottom"`.
    pub infiltration_area: Option<Spanned<String>>,
    /// Open-water evaporation, 12 monthly depths per day.
    pub evaporation: Option<Spanned<Vec<RawValue>>>,
}

/// `tailwater = 98.5`, `"98.5 ft"` or `[[flow, elevation], ...]`.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum RawTailwater {
    /// Downstream flow against elevation.
    Table(Rows),
    /// A fixed elevation.
    Level(RawValue),
}

/// `[[pond.barrel]]`: a culvert pipe or box.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBarrel {
    /// Name, which outlets give as `into`.
    pub name: Option<Spanned<String>>,
    /// Diameter (circular).
    pub diameter: Option<Spanned<RawValue>>,
    /// Span (box).
    pub width: Option<Spanned<RawValue>>,
    /// Rise (box).
    pub height: Option<Spanned<RawValue>>,
    /// Length.
    pub length: Option<Spanned<RawValue>>,
    /// Inlet invert.
    pub invert: Option<Spanned<RawValue>>,
    /// Slope (or `outlet_invert`).
    pub slope: Option<Spanned<RawValue>>,
    /// Outlet invert (or `slope`).
    pub outlet_invert: Option<Spanned<RawValue>>,
    /// Manning n.
    pub n: Option<Spanned<f64>>,
    /// Entrance type keyword.
    pub entrance: Option<Spanned<String>>,
}

/// `[[pond.failure]]`: the clogged-outlet check.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawFailure {
    /// The storm to run.
    pub storm: Option<Spanned<String>>,
    /// Names of the outlets (or barrels) blocked.
    pub blocked: Option<Spanned<Vec<Spanned<String>>>>,
    /// Least freeboard to keep.
    pub min_freeboard: Option<Spanned<RawValue>>,
    /// `"full"` or a starting stage.
    pub start: Option<Spanned<RawValue>>,
}

/// `[[pond.gallery]]`: parallel round pipes.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGallery {
    /// Inside diameter.
    pub diameter: Option<Spanned<RawValue>>,
    /// Length of each pipe.
    pub length: Option<Spanned<RawValue>>,
    /// Number of pipes (default 1).
    pub count: Option<Spanned<i64>>,
    /// Invert elevation.
    pub invert: Option<Spanned<RawValue>>,
    /// The stone bed (numbered from 1) the pipes are laid in.
    pub in_stone: Option<Spanned<i64>>,
}

/// `[[pond.vault]]`: a rectangular vault.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawVault {
    /// Floor elevation.
    pub floor: Option<Spanned<RawValue>>,
    /// Inside length.
    pub length: Option<Spanned<RawValue>>,
    /// Inside width.
    pub width: Option<Spanned<RawValue>>,
    /// Inside height.
    pub height: Option<Spanned<RawValue>>,
}

/// `[[pond.stone]]`: a stone bed.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStone {
    /// Bottom elevation.
    pub bottom: Option<Spanned<RawValue>>,
    /// Depth of stone.
    pub depth: Option<Spanned<RawValue>>,
    /// Plan area.
    pub area: Option<Spanned<RawValue>>,
    /// Void ratio, 0-1.
    pub porosity: Option<Spanned<f64>>,
}

/// `basin = { ... }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBasin {
    /// Bottom elevation.
    pub bottom: Option<Spanned<RawValue>>,
    /// Bottom length.
    pub length: Option<Spanned<RawValue>>,
    /// Bottom width.
    pub width: Option<Spanned<RawValue>>,
    /// Side slope, H:V.
    pub side: Option<Spanned<f64>>,
    /// Depth to the top.
    pub depth: Option<Spanned<RawValue>>,
}

/// `[[pond.outlet]]`: one flat record; which keys a kind takes is checked later.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawOutlet {
    /// Optional name, used by errors, reports and `summary.json`.
    pub name: Option<Spanned<String>>,
    /// Device kind.
    pub kind: Option<Spanned<String>>,
    /// Invert elevation (orifices).
    pub invert: Option<Spanned<RawValue>>,
    /// Crest elevation (weirs, riser).
    pub crest: Option<Spanned<RawValue>>,
    /// Diameter (orifice, riser).
    pub diameter: Option<Spanned<RawValue>>,
    /// Width (rectangular orifice).
    pub width: Option<Spanned<RawValue>>,
    /// Height (rectangular orifice).
    pub height: Option<Spanned<RawValue>>,
    /// Crest length (weirs).
    pub length: Option<Spanned<RawValue>>,
    /// Notch angle (V-notch), degrees.
    pub angle: Option<Spanned<RawValue>>,
    /// Discharge coefficient (orifices, V-notch, riser top).
    pub cd: Option<Spanned<f64>>,
    /// Weir coefficient.
    pub coefficient: Option<Spanned<f64>>,
    /// End contractions (sharp-crested weir).
    pub contractions: Option<Spanned<i64>>,
    /// Rating table.
    pub table: Option<Spanned<Rows>>,
    /// The barrel this outlet drains into.
    pub into: Option<Spanned<String>>,
    /// Identical copies of the opening.
    pub count: Option<Spanned<i64>>,
    /// Number of holes (perforated riser).
    pub holes: Option<Spanned<i64>>,
    /// Hole diameter (perforated riser).
    pub hole_diameter: Option<Spanned<RawValue>>,
    /// Perforated-riser form: `slot` or `approximation`.
    pub form: Option<Spanned<String>>,
    /// Weir coefficient against head: `[[head, C], ...]`.
    pub coefficient_table: Option<Spanned<Rows>>,
}

/// `[[inflow]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawInflow {
    /// Name.
    pub name: Spanned<String>,
    /// Conditions.
    pub condition: Option<Spanned<NameList>>,
    /// Downstream element.
    pub to: Option<Spanned<String>>,
    /// The storm it belongs to.
    pub storm: Option<Spanned<String>>,
    /// [hours, flow] rows.
    pub table: Option<Spanned<Rows>>,
    /// CSV with time_h,flow.
    pub file: Option<Spanned<String>>,
    /// Translation to `to`.
    pub lag: Option<Spanned<RawValue>>,
}

/// `[[channel]]`: a reach routed by the Muskingum method.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawChannel {
    /// Name.
    pub name: Spanned<String>,
    /// Conditions.
    pub condition: Option<Spanned<NameList>>,
    /// Downstream element or point.
    pub to: Option<Spanned<String>>,
    /// Muskingum K, a duration.
    pub k: Option<Spanned<RawValue>>,
    /// Muskingum X, 0 to 0.5.
    pub x: Option<Spanned<f64>>,
}

/// `[[point]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPoint {
    /// Name.
    pub name: Spanned<String>,
    /// Default limit.
    pub limit: Option<Spanned<String>>,
    /// Per-storm limits.
    pub limits: Option<Spanned<BTreeMap<String, Spanned<String>>>>,
    /// Flow-duration control for records.
    pub durations: Option<Spanned<RawDurations>>,
}

/// `durations = { from, to, tolerance }`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDurations {
    /// Lower flow, e.g. "10% Q2".
    pub from: Spanned<String>,
    /// Upper flow, e.g. "Q10".
    pub to: Spanned<String>,
    /// Relative tolerance, e.g. "10%".
    pub tolerance: Option<Spanned<RawValue>>,
}

/// `[[record]]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRecord {
    /// Name.
    pub name: Spanned<String>,
    /// Gauge CSV path.
    pub gauge: Option<Spanned<String>>,
    /// "zero" to fill missing intervals.
    pub missing: Option<Spanned<String>>,
    /// Gauge interval.
    pub interval: Option<Spanned<RawValue>>,
    /// Computation step (default: the gauge interval).
    pub step: Option<Spanned<RawValue>>,
    /// event | continuous.
    pub moisture: Option<Spanned<String>>,
    /// Dry gap that separates events.
    pub dry_gap: Option<Spanned<RawValue>>,
    /// "amc" to adjust each event's CN by antecedent rain.
    pub antecedent: Option<Spanned<String>>,
    /// Growing-season months (1..12) for the antecedent rule.
    pub growing_months: Option<Spanned<Vec<i64>>>,
    /// Monthly potential evapotranspiration, depth per day (12 values).
    pub pet: Option<Spanned<Vec<RawValue>>>,
    /// Regional (generalized) skew for the frequency fits (Bulletin 17B).
    pub regional_skew: Option<Spanned<f64>>,
    /// Mean square error of `regional_skew`.
    pub regional_skew_mse: Option<Spanned<f64>>,
    /// Recovery coefficient c of continuous accounting.
    pub recovery: Option<Spanned<f64>>,
    /// Starting moisture class of continuous accounting: "I", "II", "III".
    pub initial: Option<Spanned<String>>,
}
