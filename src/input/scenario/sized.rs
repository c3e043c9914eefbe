//! The sized scenario: the scenario text with every sized outlet dimension
//! fixed at its chosen value and every file path rewritten to be read from
//! the results folder. Text edits by the spans the reader kept; nothing
//! here looks at the current directory.

use crate::engine::sizing::current_value;
use crate::model::{ElementKind, SizedField, Study};
use crate::util::units::{Quantity, UnitSystem};
use std::path::{Path, PathBuf};

/// The scenario text with every range replaced by its value and every file
/// path rewritten to run from `out_dir`.
///
/// `scenario_dir` is the folder of the scenario file and `out_dir` the
/// results folder, both absolute: input paths written relative to the
/// scenario are resolved against `scenario_dir`.
pub fn sized_scenario_text(study: &Study, scenario_dir: &Path, out_dir: &Path) -> String {
    let text = &study.provenance.scenario_text;
    let mut edits: Vec<(std::ops::Range<usize>, String)> = Vec::new();
    for d in &study.sizing {
        let ElementKind::Pond(p) = &study.elements[d.element].kind else {
            continue;
        };
        let Some(outlet) = p.outlets.get(d.outlet) else {
            continue;
        };
        let Some(v) = current_value(outlet, d.field) else {
            continue;
        };
        let rep = match buildable_text(study.units, d.field, v) {
            // a buildable value as it would be written by hand ("6.5 in"),
            // when it reads back as the very number the run used
            Some(t) if read_buildable(study.units, d.field, &t) == Some(v) => {
                if d.field == SizedField::Angle {
                    t
                } else {
                    format!("\"{t}\"")
                }
            }
            _ if d.field == SizedField::Angle => format!("{v:.4}"),
            // Shortest text that reads back as the same number, so that the
            // sized copy reproduces the run exactly.
            _ => length_text(study.units, v),
        };
        edits.push((d.span.clone(), rep));
    }
    let base = std::fs::canonicalize(out_dir).unwrap_or_else(|_| out_dir.to_path_buf());
    // The reader joined each path to the scenario's folder as given; the
    // part after it is the path as written in the scenario.
    let read_dir = study
        .provenance
        .scenario
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    for (span, path) in &study.provenance.path_spans {
        let written = path.strip_prefix(&read_dir).unwrap_or(path);
        let full = scenario_dir.join(written);
        let abs = std::fs::canonicalize(&full).unwrap_or(full);
        let rel = relative(&abs, &base).unwrap_or(abs);
        edits.push((span.clone(), toml_string(&rel.to_string_lossy())));
    }
    edits.sort_by_key(|e| std::cmp::Reverse(e.0.start));
    let mut out = text.clone();
    for (span, rep) in edits {
        if span.end <= out.len()
            && out.is_char_boundary(span.start)
            && out.is_char_boundary(span.end)
        {
            out.replace_range(span, &rep);
        }
    }
    format!(
        "# Written by runnel {} with every sized outlet dimension fixed at its chosen value.\n{out}",
        env!("CARGO_PKG_VERSION")
    )
}

/// A sized value (ft, or degrees) as written by hand, rounded to 9
/// decimals: degrees as a bare number (`45`), a diameter, width or height
/// in inches or millimetres (`6.5 in`, `530 mm`), any other length in the
/// scenario's length unit (`5.3 ft`, `102.05 ft`). None for a value that is
/// not finite.
pub fn buildable_text(units: UnitSystem, field: SizedField, v: f64) -> Option<String> {
    if !v.is_finite() {
        return None;
    }
    let round = |x: f64| (x * 1e9).round() / 1e9;
    Some(match (field, units) {
        (SizedField::Angle, _) => format!("{}", round(v)),
        (SizedField::Diameter | SizedField::Width | SizedField::Height, UnitSystem::Us) => {
            format!("{} in", round(v * 12.0))
        }
        (SizedField::Diameter | SizedField::Width | SizedField::Height, UnitSystem::Si) => {
            format!("{} mm", round(v * crate::util::units::M_PER_FT * 1000.0))
        }
        _ => {
            let q = Quantity::Length;
            format!(
                "{} {}",
                round(v * q.output_factor(units)),
                q.output_unit(units)
            )
        }
    })
}

/// The value (ft, or degrees) a [`buildable_text`] reads back as.
pub fn read_buildable(units: UnitSystem, field: SizedField, text: &str) -> Option<f64> {
    if field == SizedField::Angle {
        return text.trim().parse().ok();
    }
    crate::util::units::parse_quantity(text, Quantity::Length, units).ok()
}

/// A length (ft) as a quoted quantity in the scenario's own unit, in the
/// shortest text that reads back as the same number: `"1.604 ft"`.
fn length_text(units: UnitSystem, ft: f64) -> String {
    let q = Quantity::Length;
    format!(
        "\"{} {}\"",
        ft * q.output_factor(units),
        q.output_unit(units)
    )
}

/// `s` as a TOML basic string: `"` and `\\` escaped, control characters as
/// `\\uXXXX` (or their short escapes), every other character as it is.
pub fn toml_string(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            '\r' => out.push_str("\\r"),
            c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// `path` relative to `base` (both absolute).
fn relative(path: &Path, base: &Path) -> Option<PathBuf> {
    let p: Vec<_> = path.components().collect();
    let b: Vec<_> = base.components().collect();
    let common = p.iter().zip(&b).take_while(|(x, y)| x == y).count();
    if common == 0 {
        return None;
    }
    let mut out = PathBuf::new();
    for _ in common..b.len() {
        out.push("..");
    }
    for c in &p[common..] {
        out.push(c);
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::toml_string;

    #[test]
    fn toml_strings_read_back_as_written() {
        // TOML 1.0, "String": basic strings escape `"`, `\` and control
        // characters; every other character is written as it is.
        for s in [
            "plain.csv",
            "Ville\u{301}/pluie.csv",
            "C:\\data\\rain.csv",
            "say \"when\"",
            "tab\there\u{7f}\u{1}",
        ] {
            let doc = format!("k = {}", toml_string(s));
            let t: toml::Table = toml::from_str(&doc).unwrap_or_else(|e| panic!("{e}: {doc}"));
            assert_eq!(t["k"].as_str(), Some(s), "{doc}");
        }
        assert_eq!(toml_string("e\u{301}"), "\"e\u{301}\"");
    }
}
