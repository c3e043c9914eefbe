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
    /// A range to be solved by sizing.
    Range(Box<(RawValue, RawValue)>),
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
                while let Some(key) = map.next_key::<String>()? {
                    match key.as_str() {
                        "min" => min = Some(map.next_value::<RawValue>()?),
                        "max" => max = Some(map.next_value::<RawValue>()?),
                        other => {
                            return Err(de::Error::custom(format!(
                                "unknown key `{other}` in a range; a range is {{ min = ..., max = ... }}"
                            )));
                        }
                    }
                }
                match (min, max) {
                    (Some(a), Some(b)) => Ok(RawValue::Range(Box::new((a, b)))),
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
}
