//! Outlet sizing: every outlet dimension given as a `{ min, max }` range is
//! given the largest opening (for an elevation, the lowest) that keeps every
//! limit at every point downstream of its pond, and the pond's own limits,
//! for every storm.
//!
//! Dimensions are taken from the lowest outlet up; each is bisected with the
//! others held (lower ones already fixed, higher ones at their smallest
//! opening until their turn); the sweep repeats until no value moves by
//! more than 0.1 %. Bisection assumes the checks pass for small openings
//! and fail beyond some opening; at a point that also receives a bypass this
//! need not hold exactly, so the final values are verified and stepped back
//! if a check fails.

use crate::analysis::{self, reaches};
use crate::error::Error;
use crate::hydraulics::Outlet;
use crate::model::{ElementKind, SizedDim, SizedField, Study};
use crate::network::{self, StormResult};
use crate::report::summary::SizedOut;
use rayon::prelude::*;
use std::path::Path;

/// Results of sizing, for the report.
#[derive(Debug, Clone, Default)]
pub struct Sizing {
    /// One row per sized dimension.
    pub outputs: Vec<SizedOut>,
}

/// One check that sizing must keep.
#[derive(Debug, Clone)]
struct Check {
    storm: usize,
    what: String,
    value: f64,
    limit: f64,
    /// For checks where a lower value passes (peaks, drain time) true; for
    /// freeboard (a higher value passes) false.
    upper: bool,
}

impl Check {
    fn pass(&self) -> bool {
        if self.upper {
            self.value <= self.limit * (1.0 + 1e-9) + 1e-12
        } else {
            self.value >= self.limit - 1e-9
        }
    }
    fn margin(&self) -> f64 {
        if self.limit.abs() < 1e-12 {
            return if self.pass() { 0.0 } else { -1.0 };
        }
        if self.upper {
            (self.limit - self.value) / self.limit
        } else {
            (self.value - self.limit) / self.limit
        }
    }
}

/// Sets the value of a sized dimension in the study.
fn set(study: &mut Study, d: &SizedDim, v: f64) {
    let ElementKind::Pond(p) = &mut study.elements[d.element].kind else {
        return;
    };
    let Some(o) = p.outlets.get_mut(d.outlet) else {
        return;
    };
    match (o, d.field) {
        (Outlet::CircularOrifice { diameter_ft, .. }, SizedField::Diameter)
        | (Outlet::Riser { diameter_ft, .. }, SizedField::Diameter) => *diameter_ft = v,
        (Outlet::CircularOrifice { invert_ft, .. }, SizedField::Invert)
        | (Outlet::RectangularOrifice { invert_ft, .. }, SizedField::Invert) => *invert_ft = v,
        (Outlet::RectangularOrifice { width_ft, .. }, SizedField::Width) => *width_ft = v,
        (Outlet::RectangularOrifice { height_ft, .. }, SizedField::Height) => *height_ft = v,
        (Outlet::SharpCrestedWeir { length_ft, .. }, SizedField::Length)
        | (Outlet::BroadCrestedWeir { length_ft, .. }, SizedField::Length) => *length_ft = v,
        (Outlet::SharpCrestedWeir { crest_ft, .. }, SizedField::Crest)
        | (Outlet::BroadCrestedWeir { crest_ft, .. }, SizedField::Crest)
        | (Outlet::VNotchWeir { crest_ft, .. }, SizedField::Crest)
        | (Outlet::Riser { crest_ft, .. }, SizedField::Crest) => *crest_ft = v,
        (Outlet::VNotchWeir { angle_deg, .. }, SizedField::Angle) => *angle_deg = v,
        _ => {}
    }
}

/// Opening fraction 0..1 to a value.
fn value_at(d: &SizedDim, opening: f64) -> f64 {
    if d.field.is_elevation() {
        d.max - opening * (d.max - d.min)
    } else {
        d.min + opening * (d.max - d.min)
    }
}

/// Simulates the conditions that hold a sized pond, reusing the rest.
fn simulate(
    study: &Study,
    cache: &[StormResult],
    conditions: &[usize],
) -> Result<Vec<StormResult>, network::SimulationError> {
    (0..study.storms.len())
        .into_par_iter()
        .map(|s| {
            let mut fresh = network::simulate_storm(study, s, conditions)?;
            let mut merged = cache[s].clone();
            for c in fresh.conditions.drain(..) {
                if let Some(slot) = merged
                    .conditions
                    .iter_mut()
                    .find(|x| x.condition == c.condition)
                {
                    *slot = c;
                }
            }
            // Keep one time base: pad every series to the longest.
            let len = merged
                .conditions
                .iter()
                .flat_map(|c| c.points.iter().map(Vec::len))
                .max()
                .unwrap_or(0);
            for c in &mut merged.conditions {
                for p in &mut c.points {
                    p.resize(len, 0.0);
                }
            }
            Ok(merged)
        })
        .collect()
}

/// Every check a pond's sizing must keep, evaluated on storm results.
fn checks(study: &Study, storms: &[StormResult], pond: usize) -> Vec<Check> {
    let mut out = Vec::new();
    let ElementKind::Pond(p) = &study.elements[pond].kind else {
        return out;
    };
    for s in storms {
        for c in &s.conditions {
            if !study.elements[pond].conditions[c.condition] {
                continue;
            }
            for pi in 0..study.points.len() {
                if !reaches(study, pond, pi) || c.condition == study.baseline {
                    continue;
                }
                if let Some(limit) = analysis::limit_cfs(study, storms, pi, s.storm, c.condition) {
                    out.push(Check {
                        storm: s.storm,
                        what: format!(
                            "point \"{}\" peak ({})",
                            study.points[pi].name, study.conditions[c.condition]
                        ),
                        value: analysis::point_peak(storms, s.storm, c.condition, pi),
                        limit,
                        upper: true,
                    });
                }
            }
            let Some(pr) = c
                .elements
                .get(pond)
                .and_then(|e| e.as_ref())
                .and_then(|e| e.pond.as_ref())
            else {
                continue;
            };
            if let Some(top) = p.top_ft {
                out.push(Check {
                    storm: s.storm,
                    what: format!("pond \"{}\" below its top", study.elements[pond].name),
                    value: pr.summary.peak_stage_ft,
                    limit: top,
                    upper: true,
                });
            }
            if let (Some(minf), Some(fb)) = (p.min_freeboard_ft, pr.summary.freeboard_ft) {
                out.push(Check {
                    storm: s.storm,
                    what: format!("pond \"{}\" freeboard", study.elements[pond].name),
                    value: fb,
                    limit: minf,
                    upper: false,
                });
            }
            if let Some(maxd) = p.max_drain_time_h {
                out.push(Check {
                    storm: s.storm,
                    what: format!("pond \"{}\" drain time", study.elements[pond].name),
                    value: pr.summary.drain_time_h.unwrap_or(f64::INFINITY),
                    limit: maxd,
                    upper: true,
                });
            }
        }
    }
    out
}

/// Solves every sized dimension in place and reports the chosen values.
///
/// # Errors
/// None at present beyond those of simulation; infeasible ranges are
/// reported in the result (and make the run's exit code 1), not as errors.
pub fn solve(study: &mut Study) -> Result<Sizing, Error> {
    if study.sizing.is_empty() {
        return Ok(Sizing::default());
    }
    let mut dims = study.sizing.clone();
    // Lowest outlet first (by its lowest elevation at the range's low end).
    dims.sort_by(|a, b| {
        let low = |d: &SizedDim| match &study.elements[d.element].kind {
            ElementKind::Pond(p) => {
                p.outlets
                    .get(d.outlet)
                    .map(|o| o.lowest_ft())
                    .unwrap_or(0.0)
                    - if d.field.is_elevation() {
                        d.max - d.min
                    } else {
                        0.0
                    }
            }
            _ => 0.0,
        };
        low(a).total_cmp(&low(b))
    });
    let conditions: Vec<usize> = (0..study.conditions.len())
        .filter(|&c| dims.iter().any(|d| study.elements[d.element].conditions[c]))
        .collect();
    for d in &dims {
        set(study, d, value_at(d, 0.0));
    }
    let all: Vec<usize> = (0..study.conditions.len()).collect();
    let cache: Vec<StormResult> = (0..study.storms.len())
        .into_par_iter()
        .map(|s| network::simulate_storm(study, s, &all))
        .collect::<Result<_, _>>()?;
    // A trial value whose storms cannot be simulated meets nothing (the
    // final values are simulated again by the analysis, which reports why).
    let feasible = |study: &Study, pond: usize| -> (bool, Vec<Check>) {
        let Ok(storms) = simulate(study, &cache, &conditions) else {
            return (false, Vec::new());
        };
        let ch = checks(study, &storms, pond);
        (ch.iter().all(Check::pass), ch)
    };
    let mut openings = vec![0.0f64; dims.len()];
    let mut infeasible = vec![false; dims.len()];
    for _sweep in 0..6 {
        let mut moved = false;
        for (k, d) in dims.iter().enumerate() {
            let before = value_at(d, openings[k]);
            // The limits this dimension must keep: those met at its smallest
            // opening (a limit already broken there cannot be mended by
            // closing it further; a later dimension or sweep has to).
            set(study, d, value_at(d, 0.0));
            let (_, at_min) = feasible(study, d.element);
            let keep: Vec<bool> = at_min.iter().map(Check::pass).collect();
            let keeps = |study: &Study| -> bool {
                let (_, ch) = feasible(study, d.element);
                ch.len() == keep.len() && ch.iter().zip(&keep).all(|(c, k)| !k || c.pass())
            };
            set(study, d, value_at(d, 1.0));
            let o = if keeps(study) {
                1.0
            } else {
                let (mut lo, mut hi) = (0.0f64, 1.0f64);
                for _ in 0..60 {
                    let (vl, vh) = (value_at(d, lo), value_at(d, hi));
                    let tol = if d.field.is_elevation() {
                        (0.001 * (d.max - d.min)).max(1e-4)
                    } else {
                        0.0005 * vl.abs().max(1e-6)
                    };
                    if (vh - vl).abs() <= tol {
                        break;
                    }
                    let mid = 0.5 * (lo + hi);
                    set(study, d, value_at(d, mid));
                    if keeps(study) {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                lo
            };
            openings[k] = o;
            set(study, d, value_at(d, o));
            let after = value_at(d, o);
            if (after - before).abs() > 0.001 * before.abs().max(1e-9) {
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    // Verify at the final values; step back where a check fails.
    for (k, d) in dims.iter().enumerate().rev() {
        if infeasible[k] {
            continue;
        }
        let mut tries = 0;
        while !feasible(study, d.element).0 && openings[k] > 0.0 && tries < 400 {
            openings[k] = (openings[k] - 0.0025).max(0.0);
            set(study, d, value_at(d, openings[k]));
            tries += 1;
        }
    }
    // A dimension is infeasible only if the final values still break a limit
    // with it at its smallest opening.
    let final_ok = dims.iter().all(|d| feasible(study, d.element).0);
    let any_closed = openings.iter().any(|o| *o <= 0.0);
    for (k, flag) in infeasible.iter_mut().enumerate() {
        *flag = !final_ok && (openings[k] <= 0.0 || !any_closed);
    }
    // Report: governing check = the one that fails first beyond the value.
    let mut outputs = Vec::new();
    let o = crate::report::summary::Out(study.units);
    for (k, d) in dims.iter().enumerate() {
        let v = value_at(d, openings[k]);
        let (_, at_value) = feasible(study, d.element);
        let governing = if openings[k] < 1.0 {
            let more = (openings[k]
                + 0.02_f64.max(0.02 * v.abs() / (d.max - d.min).abs().max(1e-9)))
            .min(1.0);
            set(study, d, value_at(d, more));
            let (_, beyond) = feasible(study, d.element);
            set(study, d, v);
            beyond
                .iter()
                .enumerate()
                .filter(|(_, c)| !c.pass())
                .min_by(|a, b| a.1.margin().total_cmp(&b.1.margin()))
                .and_then(|(i, _)| at_value.get(i).cloned())
                .or_else(|| {
                    at_value
                        .iter()
                        .min_by(|a, b| a.margin().total_cmp(&b.margin()))
                        .cloned()
                })
        } else {
            at_value
                .iter()
                .min_by(|a, b| a.margin().total_cmp(&b.margin()))
                .cloned()
        };
        let conv = |x: f64| {
            if d.field == SizedField::Angle {
                x
            } else {
                o.length(x)
            }
        };
        outputs.push(SizedOut {
            pond: study.elements[d.element].name.clone(),
            outlet: d.outlet,
            field: d.field.key(),
            value: conv(v),
            min: conv(d.min),
            max: conv(d.max),
            governing_storm: governing
                .as_ref()
                .map(|c| study.storms[c.storm].name.clone()),
            governing_check: governing.as_ref().map(|c| {
                if openings[k] >= 1.0 && c.pass() {
                    format!("{} (range max reached)", c.what)
                } else {
                    c.what.clone()
                }
            }),
            margin: governing.as_ref().map(Check::margin),
            feasible: !infeasible[k],
        });
        if infeasible[k] {
            let failing: Vec<String> = at_value
                .iter()
                .filter(|c| !c.pass())
                .map(|c| format!("{} in {}", c.what, study.storms[c.storm].name))
                .collect();
            study.warnings.push(crate::warning::Warning::Note(format!(
                "sizing of pond \"{}\" outlet {} {}: even the smallest opening in the range breaks a limit ({}); results are written at the smallest opening",
                study.elements[d.element].name,
                d.outlet,
                d.field.key(),
                failing.join("; ")
            )));
        }
    }
    // Dimensions are now fixed values; keep the list for the sized copy.
    study.sizing = dims;
    Ok(Sizing { outputs })
}

/// The scenario text with every range replaced by its value and every file
/// path rewritten to run from `out_dir`.
pub fn sized_scenario_text(study: &Study, out_dir: &Path, _scenario: &Path) -> String {
    let text = &study.provenance.scenario_text;
    let o = crate::report::summary::Out(study.units);
    let lu = o.unit(crate::units::Quantity::Length);
    let mut edits: Vec<(std::ops::Range<usize>, String)> = Vec::new();
    for d in &study.sizing {
        let ElementKind::Pond(p) = &study.elements[d.element].kind else {
            continue;
        };
        let Some(outlet) = p.outlets.get(d.outlet) else {
            continue;
        };
        let v = match (outlet, d.field) {
            (
                Outlet::CircularOrifice { diameter_ft, .. } | Outlet::Riser { diameter_ft, .. },
                SizedField::Diameter,
            ) => *diameter_ft,
            (
                Outlet::CircularOrifice { invert_ft, .. }
                | Outlet::RectangularOrifice { invert_ft, .. },
                SizedField::Invert,
            ) => *invert_ft,
            (Outlet::RectangularOrifice { width_ft, .. }, SizedField::Width) => *width_ft,
            (Outlet::RectangularOrifice { height_ft, .. }, SizedField::Height) => *height_ft,
            (
                Outlet::SharpCrestedWeir { length_ft, .. }
                | Outlet::BroadCrestedWeir { length_ft, .. },
                SizedField::Length,
            ) => *length_ft,
            (Outlet::VNotchWeir { angle_deg, .. }, SizedField::Angle) => *angle_deg,
            (o2, SizedField::Crest) => o2.lowest_ft(),
            _ => continue,
        };
        let rep = if d.field == SizedField::Angle {
            format!("{v:.4}")
        } else {
            format!("\"{:.6} {lu}\"", o.length(v))
        };
        edits.push((d.span.clone(), rep));
    }
    let abs_out = if out_dir.is_absolute() {
        out_dir.to_path_buf()
    } else {
        std::env::current_dir()
            .map(|d| d.join(out_dir))
            .unwrap_or_else(|_| out_dir.to_path_buf())
    };
    let base = std::fs::canonicalize(&abs_out).unwrap_or(abs_out);
    for (span, path) in &study.provenance.path_spans {
        let abs = std::fs::canonicalize(path).unwrap_or_else(|_| path.clone());
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
fn relative(path: &Path, base: &Path) -> Option<std::path::PathBuf> {
    let p: Vec<_> = path.components().collect();
    let b: Vec<_> = base.components().collect();
    let common = p.iter().zip(&b).take_while(|(x, y)| x == y).count();
    if common == 0 {
        return None;
    }
    let mut out = std::path::PathBuf::new();
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
