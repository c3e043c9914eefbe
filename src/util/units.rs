//! Units of measure: parsing unit-bearing strings and converting them to the
//! one system runnel computes in.
//!
//! runnel computes in US customary units, the units in which TR-55 and NEH 630
//! publish their equations: lengths and stages in ft, catchment areas in ac,
//! rain and runoff depths in in, flows in cfs, volumes in ft3, pond surface
//! areas in ft2, times in h (seconds inside routing). SI input is converted
//! here, at the edge, and results are converted back on output.

use std::fmt;

/// Exact conversion constants (international foot and inch).
pub const M_PER_FT: f64 = 0.3048;
/// Millimetres per inch (exact).
pub const MM_PER_IN: f64 = 25.4;
/// Square feet per acre (exact).
pub const FT2_PER_AC: f64 = 43_560.0;
/// Square metres per hectare.
pub const M2_PER_HA: f64 = 10_000.0;
/// Cubic feet per cubic metre.
pub const FT3_PER_M3: f64 = 1.0 / (M_PER_FT * M_PER_FT * M_PER_FT);
/// Acres per hectare.
pub const AC_PER_HA: f64 = M2_PER_HA / (FT2_PER_AC * M_PER_FT * M_PER_FT);

/// The unit system of a scenario: bare numbers are read in it and results
/// are written in it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum UnitSystem {
    /// US customary: ac, in, ft, cfs, ft3.
    #[default]
    Us,
    /// SI: ha, mm, m, m3/s, m3.
    Si,
}

/// What a value means physically; decides which units are accepted and what
/// a bare number is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Catchment or cover area; internal ac. Bare: ac / ha.
    Area,
    /// Rain or runoff depth; internal in. Bare: in / mm.
    Depth,
    /// Length, stage, elevation, diameter; internal ft. Bare: ft / m.
    Length,
    /// Flow rate; internal cfs. Bare: cfs / m3/s.
    Flow,
    /// Volume; internal ft3. Bare: ft3 / m3.
    Volume,
    /// Time or duration; internal h. Bare numbers are refused.
    Time,
    /// Slope; internal ft/ft. Bare: a ratio; "2 %" is 0.02.
    Slope,
    /// Channel flow area; internal ft2. Bare: ft2 / m2.
    SectionArea,
    /// Depth per day (evapotranspiration); internal in/day. Bare: in / mm per day.
    DepthPerDay,
}

impl Quantity {
    /// Plain-words name of the quantity for messages.
    pub fn describe(self) -> &'static str {
        match self {
            Quantity::Area => "an area",
            Quantity::Depth => "a depth",
            Quantity::Length => "a length",
            Quantity::Flow => "a flow",
            Quantity::Volume => "a volume",
            Quantity::Time => "a time",
            Quantity::Slope => "a slope",
            Quantity::SectionArea => "a flow area",
            Quantity::DepthPerDay => "a depth per day",
        }
    }

    /// Example units for messages, in the scenario's system first.
    pub fn examples(self, system: UnitSystem) -> &'static str {
        match (self, system) {
            (Quantity::Area, UnitSystem::Us) => "\"8.4 ac\" (or ha, ft2, m2, km2, mi2)",
            (Quantity::Area, UnitSystem::Si) => "\"3.4 ha\" (or ac, m2, km2)",
            (Quantity::Depth, UnitSystem::Us) => "\"3.4 in\" (or mm, cm)",
            (Quantity::Depth, UnitSystem::Si) => "\"86 mm\" (or cm, in)",
            (Quantity::Length, UnitSystem::Us) => "\"100 ft\" (or in, m, mm)",
            (Quantity::Length, UnitSystem::Si) => "\"30 m\" (or mm, ft, in)",
            (Quantity::Flow, UnitSystem::Us) => "\"12 cfs\" (or m3/s, L/s)",
            (Quantity::Flow, UnitSystem::Si) => "\"0.34 m3/s\" (or L/s, cfs)",
            (Quantity::Volume, _) => "\"36000 ft3\" (or m3, ac-ft)",
            (Quantity::Time, _) => "\"5 min\", \"0.5 h\", \"24 h\", \"3 d\"",
            (Quantity::Slope, _) => "0.02 or \"2 %\"",
            (Quantity::SectionArea, _) => "\"4.5 ft2\" or \"0.42 m2\"",
            (Quantity::DepthPerDay, _) => "\"0.15 in\" or \"4 mm\" (per day)",
        }
    }

    /// Factor that turns a bare number in `system` into the internal unit.
    pub fn bare_factor(self, system: UnitSystem) -> Option<f64> {
        Some(match (self, system) {
            (Quantity::Time, _) => return None,
            (Quantity::Slope, _) => 1.0,
            (_, UnitSystem::Us) => 1.0,
            (Quantity::Area, UnitSystem::Si) => AC_PER_HA,
            (Quantity::Depth | Quantity::DepthPerDay, UnitSystem::Si) => 1.0 / MM_PER_IN,
            (Quantity::Length, UnitSystem::Si) => 1.0 / M_PER_FT,
            (Quantity::Flow | Quantity::Volume, UnitSystem::Si) => FT3_PER_M3,
            (Quantity::SectionArea, UnitSystem::Si) => 1.0 / (M_PER_FT * M_PER_FT),
        })
    }

    /// Factor that turns an internal value into the output unit of `system`.
    pub fn output_factor(self, system: UnitSystem) -> f64 {
        match self {
            Quantity::Time | Quantity::Slope => 1.0,
            _ => match self.bare_factor(system) {
                Some(f) => 1.0 / f,
                None => 1.0,
            },
        }
    }

    /// The largest magnitude runnel accepts for this quantity, in internal
    /// units. These are not design limits: each lies far beyond anything a
    /// site or a watershed can hold (a 250-in storm, an elevation of
    /// 100,000 ft, 10,000 mi2), so that a value past it is a slip (or a
    /// number such as 1e308) and is refused at load time before any
    /// arithmetic can overflow.
    pub fn max_magnitude(self) -> f64 {
        match self {
            // 10,000 mi2.
            Quantity::Area => 6.4e6,
            // 250 in, above the largest multi-day rainfalls recorded.
            Quantity::Depth => 250.0,
            // 100,000 ft (about 19 mi): lengths, elevations, diameters.
            Quantity::Length => 1.0e5,
            // 100 million cfs, ten times the largest river flows.
            Quantity::Flow => 1.0e8,
            // 1e13 ft3 (about 230 million ac-ft).
            Quantity::Volume => 1.0e13,
            // One year.
            Quantity::Time => 8760.0,
            // 1000 ft/ft (100,000 %).
            Quantity::Slope => 1000.0,
            // 1e8 ft2.
            Quantity::SectionArea => 1.0e8,
            // 100 in a day.
            Quantity::DepthPerDay => 100.0,
        }
    }

    /// Unit label of results in `system`.
    pub fn output_unit(self, system: UnitSystem) -> &'static str {
        match (self, system) {
            (Quantity::Area, UnitSystem::Us) => "ac",
            (Quantity::Area, UnitSystem::Si) => "ha",
            (Quantity::Depth, UnitSystem::Us) => "in",
            (Quantity::Depth, UnitSystem::Si) => "mm",
            (Quantity::DepthPerDay, UnitSystem::Us) => "in/d",
            (Quantity::DepthPerDay, UnitSystem::Si) => "mm/d",
            (Quantity::Length, UnitSystem::Us) => "ft",
            (Quantity::Length, UnitSystem::Si) => "m",
            (Quantity::Flow, UnitSystem::Us) => "cfs",
            (Quantity::Flow, UnitSystem::Si) => "m3/s",
            (Quantity::Volume, UnitSystem::Us) => "ft3",
            (Quantity::Volume, UnitSystem::Si) => "m3",
            (Quantity::SectionArea, UnitSystem::Us) => "ft2",
            (Quantity::SectionArea, UnitSystem::Si) => "m2",
            (Quantity::Time, _) => "h",
            (Quantity::Slope, _) => "ft/ft",
        }
    }
}

/// Physical dimension of a unit word.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Dim {
    Length,
    Area,
    Volume,
    Flow,
    Time,
    Percent,
    Ratio,
}

/// Unit words: (spellings, dimension, value in the base unit of the
/// dimension: ft, ft2, ft3, cfs, h, or a pure ratio).
const UNITS: &[(&[&str], Dim, f64)] = &[
    (&["ft", "feet", "foot"], Dim::Length, 1.0),
    (&["in", "inch", "inches"], Dim::Length, 1.0 / 12.0),
    (
        &["m", "metre", "meter", "metres", "meters"],
        Dim::Length,
        1.0 / M_PER_FT,
    ),
    (&["mm"], Dim::Length, 0.001 / M_PER_FT),
    (&["cm"], Dim::Length, 0.01 / M_PER_FT),
    (&["km"], Dim::Length, 1000.0 / M_PER_FT),
    (&["mi", "mile", "miles"], Dim::Length, 5280.0),
    (&["ac", "acre", "acres"], Dim::Area, FT2_PER_AC),
    (
        &["ha", "hectare", "hectares"],
        Dim::Area,
        M2_PER_HA / (M_PER_FT * M_PER_FT),
    ),
    (&["ft2", "sq ft", "sqft", "ft^2", "ft²"], Dim::Area, 1.0),
    (
        &["m2", "m^2", "m²", "sq m"],
        Dim::Area,
        1.0 / (M_PER_FT * M_PER_FT),
    ),
    (
        &["km2", "km^2", "km²"],
        Dim::Area,
        1.0e6 / (M_PER_FT * M_PER_FT),
    ),
    (&["mi2", "mi^2", "mi²", "sq mi"], Dim::Area, 5280.0 * 5280.0),
    (&["ft3", "cu ft", "ft^3", "ft³", "cf"], Dim::Volume, 1.0),
    (&["m3", "m^3", "m³"], Dim::Volume, FT3_PER_M3),
    (&["ac-ft", "acre-ft", "af"], Dim::Volume, FT2_PER_AC),
    (
        &["l", "litre", "liter", "litres", "liters"],
        Dim::Volume,
        0.001 * FT3_PER_M3,
    ),
    (&["gal", "gallon", "gallons"], Dim::Volume, 0.133_680_555_6),
    (&["cfs", "ft3/s", "ft^3/s", "ft³/s"], Dim::Flow, 1.0),
    (&["m3/s", "cms", "m^3/s", "m³/s"], Dim::Flow, FT3_PER_M3),
    (&["l/s", "lps"], Dim::Flow, 0.001 * FT3_PER_M3),
    (&["gpm"], Dim::Flow, 0.133_680_555_6 / 60.0),
    (
        &["s", "sec", "secs", "second", "seconds"],
        Dim::Time,
        1.0 / 3600.0,
    ),
    (&["min", "mins", "minute", "minutes"], Dim::Time, 1.0 / 60.0),
    (&["h", "hr", "hrs", "hour", "hours"], Dim::Time, 1.0),
    (&["d", "day", "days"], Dim::Time, 24.0),
    (&["%", "percent"], Dim::Percent, 0.01),
    (&["ft/ft", "m/m"], Dim::Ratio, 1.0),
];

/// Why a unit-bearing string could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum UnitError {
    /// No number at the start of the text.
    #[error("`{text}` does not start with a number")]
    NotANumber {
        /// The text as written.
        text: String,
    },
    /// The number is NaN or infinite.
    #[error("`{text}` is not a finite number")]
    NotFinite {
        /// The text as written.
        text: String,
    },
    /// The unit word is not known.
    #[error("unknown unit `{unit}`")]
    UnknownUnit {
        /// The unit word.
        unit: String,
    },
    /// The unit exists but measures something else.
    #[error("`{text}` is not {wanted}")]
    WrongDimension {
        /// The text as written.
        text: String,
        /// What was wanted, in words.
        wanted: &'static str,
    },
    /// A time was written as a bare number.
    #[error("a time needs a unit")]
    TimeWithoutUnit,
}

fn lookup_unit(word: &str) -> Option<(Dim, f64)> {
    let w = word.trim().to_ascii_lowercase();
    UNITS
        .iter()
        .find(|(names, _, _)| names.iter().any(|n| n.eq_ignore_ascii_case(&w)))
        .map(|&(_, d, f)| (d, f))
}

/// Splits `"8.4 ac"` into the number and the unit word (empty when bare).
pub fn split_number(text: &str) -> Result<(f64, &str), UnitError> {
    let t = text.trim();
    let end = t
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit()
                || c == '.'
                || c == '+'
                || c == '-'
                || ((c == 'e' || c == 'E')
                    && t[i + 1..]
                        .starts_with(|d: char| d.is_ascii_digit() || d == '-' || d == '+')
                    && i > 0))
        })
        .map(|(i, _)| i)
        .unwrap_or(t.len());
    let num = &t[..end];
    let value: f64 = num.parse().map_err(|_| UnitError::NotANumber {
        text: text.to_string(),
    })?;
    if !value.is_finite() {
        return Err(UnitError::NotFinite {
            text: text.to_string(),
        });
    }
    Ok((value, t[end..].trim()))
}

/// Converts a unit-bearing string to the internal unit of `quantity`.
///
/// ```
/// use runnel::util::units::{parse_quantity, Quantity, UnitSystem};
/// // 18 in is 1.5 ft; a bare number is in the scenario's system.
/// assert_eq!(parse_quantity("18 in", Quantity::Length, UnitSystem::Us), Ok(1.5));
/// assert!(parse_quantity("5 ft", Quantity::Area, UnitSystem::Us).is_err());
/// ```
///
/// # Errors
/// Unknown unit words, units of the wrong dimension, text that is not a
/// number, and times without a unit.
pub fn parse_quantity(
    text: &str,
    quantity: Quantity,
    system: UnitSystem,
) -> Result<f64, UnitError> {
    let (value, unit) = split_number(text)?;
    if unit.is_empty() {
        return match quantity.bare_factor(system) {
            Some(f) => Ok(value * f),
            None => Err(UnitError::TimeWithoutUnit),
        };
    }
    let (dim, f) = lookup_unit(unit).ok_or_else(|| UnitError::UnknownUnit {
        unit: unit.to_string(),
    })?;
    let wrong = || UnitError::WrongDimension {
        text: text.to_string(),
        wanted: quantity.describe(),
    };
    // `f` is in ft, ft2 (or ac for areas below), ft3, cfs, h.
    let internal = match (quantity, dim) {
        (Quantity::Length, Dim::Length) => value * f,
        (Quantity::Depth | Quantity::DepthPerDay, Dim::Length) => value * f * 12.0,
        (Quantity::Area, Dim::Area) => value * f / FT2_PER_AC,
        (Quantity::SectionArea, Dim::Area) => value * f,
        (Quantity::Volume, Dim::Volume) => value * f,
        (Quantity::Flow, Dim::Flow) => value * f,
        (Quantity::Time, Dim::Time) => value * f,
        (Quantity::Slope, Dim::Percent | Dim::Ratio) => value * f,
        _ => return Err(wrong()),
    };
    if internal.is_finite() {
        Ok(internal)
    } else {
        Err(UnitError::NotFinite {
            text: text.to_string(),
        })
    }
}

/// A flow per unit area (`"0.1 cfs/ac"`), returned in cfs per acre.
///
/// # Errors
/// When the text is not a flow unit over an area unit.
pub fn parse_flow_per_area(text: &str) -> Result<f64, UnitError> {
    let (value, unit) = split_number(text)?;
    let (num, den) = unit
        .rsplit_once('/')
        .ok_or_else(|| UnitError::UnknownUnit {
            unit: unit.to_string(),
        })?;
    let (fd, ff) = lookup_unit(num).ok_or_else(|| UnitError::UnknownUnit {
        unit: num.to_string(),
    })?;
    let (ad, af) = lookup_unit(den).ok_or_else(|| UnitError::UnknownUnit {
        unit: den.to_string(),
    })?;
    if fd != Dim::Flow || ad != Dim::Area {
        return Err(UnitError::WrongDimension {
            text: text.to_string(),
            wanted: "a flow per unit area",
        });
    }
    Ok(value * ff / (af / FT2_PER_AC))
}

/// Renders a number for a report with `digits` significant figures.
pub fn sig(value: f64, digits: usize) -> String {
    if !value.is_finite() {
        return "-".into();
    }
    if value == 0.0 {
        return "0".into();
    }
    let mag = value.abs().log10().floor() as i32;
    let decimals = (digits as i32 - 1 - mag).clamp(0, 8) as usize;
    format!("{value:.decimals$}")
}

/// A number for a message: at most `digits` significant figures, without
/// trailing zeros (`2.5`, `250`, `0.013`).
pub fn short(value: f64, digits: usize) -> String {
    let s = sig(value, digits);
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A quantity held in internal units and shown in a unit system's output
/// units with `digits` significant digits and its unit, e.g. "12.35 ac".
/// Messages built below the report layer carry these, so the conversion
/// happens only when the text is written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shown {
    /// The value in internal units (ft, ac, cfs, ...).
    pub internal: f64,
    /// What it is.
    pub quantity: Quantity,
    /// The output units to show it in.
    pub units: UnitSystem,
    /// Significant digits.
    pub digits: usize,
}

impl Shown {
    /// `internal` (in internal units) as `quantity`, shown in `units`.
    pub fn new(internal: f64, quantity: Quantity, units: UnitSystem, digits: usize) -> Self {
        Shown {
            internal,
            quantity,
            units,
            digits,
        }
    }
}

impl fmt::Display for Shown {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let v = self.internal * self.quantity.output_factor(self.units);
        write!(
            f,
            "{} {}",
            sig(v, self.digits),
            self.quantity.output_unit(self.units)
        )
    }
}

impl fmt::Display for UnitSystem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            UnitSystem::Us => "us",
            UnitSystem::Si => "si",
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bare_numbers_are_in_the_scenario_system() {
        // exact unit definitions (NIST SP 811), no hydrologic source needed
        assert_eq!(
            parse_quantity("8.4", Quantity::Area, UnitSystem::Us),
            Ok(8.4)
        );
        let ha = parse_quantity("1", Quantity::Area, UnitSystem::Si).unwrap_or(0.0);
        assert!((ha - 2.471_053_8).abs() < 1e-6);
        let mm = parse_quantity("25.4", Quantity::Depth, UnitSystem::Si).unwrap_or(0.0);
        assert!((mm - 1.0).abs() < 1e-12);
    }

    #[test]
    fn unit_strings_convert_to_internal_units() {
        // exact unit definitions (NIST SP 811)
        let d = parse_quantity("18 in", Quantity::Length, UnitSystem::Us).unwrap_or(0.0);
        assert!((d - 1.5).abs() < 1e-12);
        let t = parse_quantity("5 min", Quantity::Time, UnitSystem::Us).unwrap_or(0.0);
        assert!((t - 5.0 / 60.0).abs() < 1e-12);
        assert_eq!(
            parse_quantity("2 %", Quantity::Slope, UnitSystem::Us),
            Ok(0.02)
        );
        let q = parse_quantity("1 m3/s", Quantity::Flow, UnitSystem::Us).unwrap_or(0.0);
        assert!((q - 35.314_666_7).abs() < 1e-6);
        let p = parse_quantity("86 mm", Quantity::Depth, UnitSystem::Us).unwrap_or(0.0);
        assert!((p - 86.0 / 25.4).abs() < 1e-12);
    }

    #[test]
    fn wrong_dimension_unknown_unit_and_bare_time_are_errors() {
        assert!(matches!(
            parse_quantity("5 ft", Quantity::Area, UnitSystem::Us),
            Err(UnitError::WrongDimension { .. })
        ));
        assert!(matches!(
            parse_quantity("5 furlongs", Quantity::Length, UnitSystem::Us),
            Err(UnitError::UnknownUnit { .. })
        ));
        assert_eq!(
            parse_quantity("12", Quantity::Time, UnitSystem::Us),
            Err(UnitError::TimeWithoutUnit)
        );
        assert!(parse_quantity("abc", Quantity::Length, UnitSystem::Us).is_err());
        assert!(parse_quantity("1e999 ft", Quantity::Length, UnitSystem::Us).is_err());
    }

    #[test]
    fn short_numbers_drop_trailing_zeros() {
        assert_eq!(short(2.5, 4), "2.5");
        assert_eq!(short(250.0, 4), "250");
        assert_eq!(short(0.0130, 3), "0.013");
    }

    #[test]
    fn flow_per_area_reads_cfs_per_acre() {
        assert_eq!(parse_flow_per_area("0.1 cfs/ac"), Ok(0.1));
        let si = parse_flow_per_area("10 l/s/ha").unwrap_or(0.0);
        assert!((si - 0.01 * FT3_PER_M3 / AC_PER_HA).abs() < 1e-12);
        assert!(parse_flow_per_area("0.1 ft/ac").is_err());
    }
}
