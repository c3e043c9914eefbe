//! Outlet sizing: every outlet dimension given as a `{ min, max }` range is
//! given the largest opening (for an elevation, the lowest) that keeps every
//! limit at every point downstream of its pond, and the pond's own limits,
//! for every storm.
//!
//! Dimensions are taken from the lowest outlet up, the others held (lower
//! ones already fixed, higher ones at their smallest opening until their
//! turn); the sweep repeats until no value moves by more than 0.1 %. For
//! one dimension, sizes are tried from the largest opening down (for a size,
//! the range's min times powers of 1.2, so the sizes tried below any
//! maximum do not depend on it; for an elevation, 1/200 of the range) until
//! one meets every limit, then the value is bisected between it and the next
//! larger size tried. Nothing is assumed about which limits hold at the
//! smallest opening: a pond that overtops there may still meet every limit
//! at a larger one, and a peak need not grow with the opening where a
//! bypass joins. When no size meets every limit during the sweep, the
//! largest opening that keeps every limit met somewhere in the range is
//! taken, so that a later dimension can mend the rest; a pond whose limits
//! still fail at the end is searched again dimension by dimension, and
//! reported infeasible, naming the limits that fail at every size, when
//! none meets them. Last, every value is moved to a buildable one, a whole
//! multiple of its range's `increment` (defaults by kind of dimension): the
//! largest opening that still meets every limit after routing again.

use crate::engine::analysis;
use crate::engine::network::{self, StormResult};
use crate::engine::topology::Topology;
use crate::error::Error;
use crate::methods::hydraulics::Outlet;
use crate::model::{ElementKind, SizedDim, SizedField, Study};
use crate::util::text::kind_and_name;
use rayon::prelude::*;

/// Results of sizing, for the report.
#[derive(Debug, Clone, Default)]
pub struct Sizing {
    /// One row per sized dimension.
    pub outputs: Vec<SizedResult>,
}

/// One sized dimension, in internal units (ft, or degrees for an angle).
#[derive(Debug, Clone, PartialEq)]
pub struct SizedResult {
    /// Pond element index.
    pub element: usize,
    /// 0-based outlet index.
    pub outlet: usize,
    /// The outlet's `name`, when the scenario gives one.
    pub outlet_name: Option<String>,
    /// What was sized.
    pub field: SizedField,
    /// Chosen value (ft or degrees).
    pub value: f64,
    /// Range min (ft or degrees).
    pub min: f64,
    /// Range max (ft or degrees).
    pub max: f64,
    /// Buildable increment (ft or degrees): `value` is a whole multiple of it.
    pub increment: f64,
    /// The storm whose limit governs (index).
    pub governing_storm: Option<usize>,
    /// The point or pond limit that governs, in words.
    pub governing_check: Option<String>,
    /// (limit - peak) / limit of the governing check.
    pub margin: Option<f64>,
    /// When not feasible: the limits that fail at every size, and why.
    pub reason: Option<String>,
}

impl SizedResult {
    /// Whether the range could meet every limit.
    pub fn feasible(&self) -> bool {
        self.reason.is_none()
    }
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
    /// Why the limit is what it is, when that explains a failure (a limit
    /// of zero because the condition it refers to sheds no runoff).
    why: Option<String>,
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

/// The tolerance to which a value is solved: 0.05 % of a size, 0.001 ft
/// (0.3 mm) of an elevation.
fn tolerance(d: &SizedDim, v: f64) -> f64 {
    if d.field.is_elevation() {
        0.001
    } else {
        0.0005 * v.abs().max(1e-6)
    }
}

/// Ratio between neighbouring sizes tried before bisection.
const GRID_RATIO: f64 = 1.2;

/// The values tried for a dimension, largest opening first: for a size,
/// the range's min times powers of 1.2 (so the values below any maximum
/// are the same whatever the maximum) and the max; for an elevation, steps
/// of 1/200 of the range (at least 0.02 ft) up from the lowest.
fn grid(d: &SizedDim) -> Vec<f64> {
    let mut out = Vec::new();
    if d.field.is_elevation() {
        let h = ((d.max - d.min) / 200.0).max(0.02);
        let mut v = d.min;
        while v < d.max - 1e-9 && out.len() < 100_000 {
            out.push(v);
            v += h;
        }
        out.push(d.max);
        out.dedup();
    } else {
        let lo = d.min.max(1e-9);
        let mut v = lo;
        while v < d.max * (1.0 - 1e-9) && out.len() < 100_000 {
            out.push(v);
            v *= GRID_RATIO;
        }
        out.push(d.max);
        out.dedup();
        out.reverse();
    }
    out
}

/// What a search for one dimension found.
struct Found {
    /// The value chosen (internal units).
    value: f64,
    /// Whether every check holds at it.
    all_pass: bool,
    /// Checks that failed at every value tried.
    failing_everywhere: Vec<Check>,
    /// Checks that fail at the value chosen.
    failing_at_value: Vec<Check>,
}

impl Found {
    /// Why no value meets every limit, in words.
    fn reason(&self, study: &Study) -> String {
        let say = |c: &Check| {
            let mut t = format!("{} in {}", c.what, study.storms[c.storm].name);
            if let Some(w) = &c.why {
                t.push_str(&format!(" ({w})"));
            }
            t
        };
        if self.failing_everywhere.is_empty() {
            let list: Vec<String> = self.failing_at_value.iter().map(say).collect();
            format!(
                "each limit is met somewhere in the range, but no single size meets them all at once; at the value written, {} fails",
                list.join("; ")
            )
        } else {
            let list: Vec<String> = self.failing_everywhere.iter().map(say).collect();
            format!("{} fails at every size in the range", list.join("; "))
        }
    }
}

/// The largest opening of `d` (the others held) at which the checks
/// `eval` returns all hold; bisected to [`tolerance`] between the largest
/// value of [`grid`] that passes and the next larger one. With `strict`
/// false and no value passing every check, the largest opening that keeps
/// every check met anywhere in the range (failing that, every check met at
/// the smallest opening) is taken, so that a later dimension can mend the
/// rest.
fn size_one(
    study: &mut Study,
    d: &SizedDim,
    eval: &dyn Fn(&Study) -> Vec<Check>,
    strict: bool,
) -> Found {
    let all = |ch: &[Check]| ch.iter().all(Check::pass);
    let mut evals: Vec<(f64, Vec<Check>)> = Vec::new();
    for v in grid(d) {
        set(study, d, v);
        let ch = eval(study);
        let ok = all(&ch);
        evals.push((v, ch));
        if ok {
            break;
        }
    }
    let largest = |study: &mut Study, ok: &dyn Fn(&[Check]) -> bool| -> Option<f64> {
        let i = evals.iter().position(|(_, ch)| ok(ch))?;
        if i == 0 {
            return Some(evals[0].0);
        }
        let (mut good, mut bad) = (evals[i].0, evals[i - 1].0);
        for _ in 0..200 {
            if (bad - good).abs() <= tolerance(d, good) {
                break;
            }
            let mid = 0.5 * (good + bad);
            set(study, d, mid);
            if ok(&eval(study)) {
                good = mid;
            } else {
                bad = mid;
            }
        }
        Some(good)
    };
    let failing_everywhere: Vec<Check> = match evals.first() {
        Some((_, first)) => first
            .iter()
            .enumerate()
            .filter(|(i, _)| {
                evals
                    .iter()
                    .all(|(_, ch)| ch.get(*i).is_none_or(|c| !c.pass()))
            })
            .map(|(_, c)| c.clone())
            .collect(),
        None => Vec::new(),
    };
    let mut value = largest(study, &|ch: &[Check]| all(ch));
    if value.is_none() && !strict {
        let n = evals.first().map(|e| e.1.len()).unwrap_or(0);
        let somewhere: Vec<bool> = (0..n)
            .map(|i| {
                evals
                    .iter()
                    .any(|(_, ch)| ch.get(i).is_some_and(Check::pass))
            })
            .collect();
        let at_min: Vec<bool> = evals
            .last()
            .map(|(_, ch)| ch.iter().map(Check::pass).collect())
            .unwrap_or_default();
        for keep in [somewhere, at_min] {
            let ok = |ch: &[Check]| {
                ch.len() == keep.len() && ch.iter().zip(&keep).all(|(c, k)| !k || c.pass())
            };
            value = largest(study, &ok);
            if value.is_some() {
                break;
            }
        }
    }
    let value = value.unwrap_or_else(|| value_at(d, 0.0));
    set(study, d, value);
    let at = eval(study);
    Found {
        value,
        all_pass: all(&at),
        failing_everywhere,
        failing_at_value: at.into_iter().filter(|c| !c.pass()).collect(),
    }
}

/// The outlet's name, if the scenario gives one.
fn outlet_name(study: &Study, d: &SizedDim) -> Option<String> {
    match &study.elements[d.element].kind {
        ElementKind::Pond(p) => p.outlet_names.get(d.outlet).cloned().flatten(),
        _ => None,
    }
}

/// "outlet 2" or "outlet 2 (\"low flow\")": outlets are numbered from 1
/// in the order of the scenario, in errors, warnings and reports alike.
pub fn outlet_label(index: usize, name: Option<&str>) -> String {
    match name {
        Some(n) => format!("outlet {} (\"{n}\")", index + 1),
        None => format!("outlet {}", index + 1),
    }
}

/// A value of a sized dimension with its unit, in the scenario's system:
/// "1.604 ft (19.25 in)", "0.4889 m (488.9 mm)", "5.450 ft", "90 deg".
pub fn with_unit(study: &Study, d: &SizedDim, v: f64) -> String {
    d.field.value_text(study.units, v)
}

/// What every trial of a sizing reuses: the network, the storms of the
/// study as first simulated, and the conditions that hold a sized pond.
struct Trials<'a> {
    topology: &'a Topology,
    cache: Vec<StormResult>,
    conditions: Vec<usize>,
}

impl Trials<'_> {
    /// Simulates the conditions that hold a sized pond, reusing the rest.
    fn simulate(&self, study: &Study) -> Result<Vec<StormResult>, network::SimulationError> {
        (0..study.storms.len())
            .into_par_iter()
            .map(|s| {
                let mut fresh =
                    network::simulate_storm_on(study, self.topology, s, &self.conditions)?;
                let mut merged = self.cache[s].clone();
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

    /// Whether every check of `pond` passes at the study's current values,
    /// and the checks. A trial value whose storms cannot be simulated meets
    /// nothing (the final values are simulated again by the analysis, which
    /// reports why).
    fn feasible(&self, study: &Study, pond: usize) -> (bool, Vec<Check>) {
        let Ok(storms) = self.simulate(study) else {
            return (false, Vec::new());
        };
        let ch = checks(study, self.topology, &storms, pond);
        (ch.iter().all(Check::pass), ch)
    }
}

/// Why a point's limit is zero, in words, e.g. "the existing condition
/// sheds no runoff to point \"outfall\" in 1-in, so its limit is 0 cfs".
fn zero_limit_reason(
    study: &Study,
    point: usize,
    storm: usize,
    condition: usize,
) -> Option<String> {
    let fu = crate::util::units::Quantity::Flow.output_unit(study.units);
    let au = crate::util::units::Quantity::Area.output_unit(study.units);
    let p = &study.points[point];
    let text = p.limit_text.get(storm).cloned().unwrap_or_default();
    Some(match p.limits.get(storm)? {
        crate::model::Limit::Relative {
            condition: lc,
            storm: ls,
            ..
        } => format!(
            "the {} condition sheds no runoff to {} in {}, so its limit \"{text}\" is 0 {fu}",
            study.conditions[*lc],
            kind_and_name("point", &p.name),
            study.storms[ls.unwrap_or(storm)].name
        ),
        crate::model::Limit::PerArea { .. } => format!(
            "no catchment of the {} condition drains to {} (0 {au}), so its limit \"{text}\" is 0 {fu}",
            study.conditions[condition],
            kind_and_name("point", &p.name)
        ),
        crate::model::Limit::Absolute { .. } => format!("its limit \"{text}\" is 0 {fu}"),
        crate::model::Limit::None => return None,
    })
}

/// Every check a pond's sizing must keep, evaluated on storm results.
fn checks(study: &Study, topology: &Topology, storms: &[StormResult], pond: usize) -> Vec<Check> {
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
                if !topology.reaches(pond, pi) || !study.limits_apply_to(c.condition) {
                    continue;
                }
                if let Some(limit) =
                    analysis::limit_cfs(study, topology, storms, pi, s.storm, c.condition)
                {
                    out.push(Check {
                        storm: s.storm,
                        what: format!(
                            "{} peak ({})",
                            kind_and_name("point", &study.points[pi].name),
                            study.conditions[c.condition]
                        ),
                        value: analysis::point_peak(storms, s.storm, c.condition, pi),
                        limit,
                        upper: true,
                        why: (limit <= 0.0)
                            .then(|| zero_limit_reason(study, pi, s.storm, c.condition))
                            .flatten(),
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
                    what: format!(
                        "{} below its top",
                        kind_and_name("pond", &study.elements[pond].name)
                    ),
                    value: pr.summary.peak_stage_ft,
                    limit: top,
                    upper: true,
                    why: None,
                });
            }
            if let (Some(minf), Some(fb)) = (p.min_freeboard_ft, pr.summary.freeboard_ft) {
                out.push(Check {
                    storm: s.storm,
                    what: format!(
                        "{} freeboard",
                        kind_and_name("pond", &study.elements[pond].name)
                    ),
                    value: fb,
                    limit: minf,
                    upper: false,
                    why: None,
                });
            }
            if let Some(maxd) = p.max_drain_time_h {
                out.push(Check {
                    storm: s.storm,
                    what: format!(
                        "{} drain time",
                        kind_and_name("pond", &study.elements[pond].name)
                    ),
                    value: pr.summary.drain_time_h.unwrap_or(f64::INFINITY),
                    limit: maxd,
                    upper: true,
                    why: None,
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
    let dims = lowest_first(study);
    let conditions: Vec<usize> = (0..study.conditions.len())
        .filter(|&c| dims.iter().any(|d| study.elements[d.element].conditions[c]))
        .collect();
    for d in &dims {
        set(study, d, value_at(d, 0.0));
    }
    let topology = Topology::new(study);
    let all = study.simulated_conditions();
    let cache: Vec<StormResult> = (0..study.storms.len())
        .into_par_iter()
        .map(|s| network::simulate_storm_on(study, &topology, s, &all))
        .collect::<Result<_, _>>()?;
    let trials = Trials {
        topology: &topology,
        cache,
        conditions,
    };
    let mut values = sweep(study, &trials, &dims);
    let mut infeasible = mend_failing_ponds(study, &trials, &dims, &mut values);
    to_buildable(study, &trials, &dims, &mut values, &mut infeasible);
    let outputs = sized_outputs(study, &trials, &dims, &values, &infeasible);
    // Dimensions are now fixed values; keep the list for the sized copy.
    study.sizing = dims;
    Ok(Sizing { outputs })
}

/// The sized dimensions, lowest outlet first (by its lowest elevation at
/// the range's low end).
fn lowest_first(study: &Study) -> Vec<SizedDim> {
    let mut dims = study.sizing.clone();
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
    dims
}

/// Sweeps the dimensions in turn, each sized with the others held, until
/// no value moves by more than 0.1 % (at most 6 sweeps); returns the values.
fn sweep(study: &mut Study, trials: &Trials<'_>, dims: &[SizedDim]) -> Vec<f64> {
    let mut values: Vec<f64> = dims.iter().map(|d| value_at(d, 0.0)).collect();
    for _sweep in 0..6 {
        let mut moved = false;
        for (k, d) in dims.iter().enumerate() {
            let before = values[k];
            let found = size_one(
                study,
                d,
                &|s: &Study| trials.feasible(s, d.element).1,
                false,
            );
            values[k] = found.value;
            set(study, d, found.value);
            if (found.value - before).abs() > 0.001 * before.abs().max(1e-9) {
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    values
}

/// Every limit of a pond must hold at the final values. Where one does
/// not, each of the pond's dimensions in turn (highest outlet first) is
/// searched again, the others held, for the largest opening that meets
/// every limit; a pond whose limits no single dimension can meet keeps the
/// sweep's values and its dimensions are reported infeasible, with the
/// limits that fail at every size tried. Returns the reason per dimension.
fn mend_failing_ponds(
    study: &mut Study,
    trials: &Trials<'_>,
    dims: &[SizedDim],
    values: &mut [f64],
) -> Vec<Option<String>> {
    let mut infeasible: Vec<Option<String>> = vec![None; dims.len()];
    let ponds: Vec<usize> = {
        let mut v: Vec<usize> = dims.iter().map(|d| d.element).collect();
        v.sort_unstable();
        v.dedup();
        v
    };
    for pond in ponds {
        if trials.feasible(study, pond).0 {
            continue;
        }
        let mine: Vec<usize> = (0..dims.len())
            .filter(|&k| dims[k].element == pond)
            .collect();
        let mut reasons: Vec<(usize, String)> = Vec::new();
        let mut fixed = false;
        for &k in mine.iter().rev() {
            let d = &dims[k];
            let found = size_one(study, d, &|s: &Study| trials.feasible(s, pond).1, true);
            if found.all_pass {
                values[k] = found.value;
                set(study, d, found.value);
                fixed = true;
                break;
            }
            set(study, d, values[k]);
            reasons.push((k, found.reason(study)));
        }
        if !fixed {
            for (k, r) in reasons {
                infeasible[k] = Some(r);
            }
        }
    }
    infeasible
}

/// The whole multiples `k` of the increment with `k * increment` inside
/// the range of `d`: `(lowest k, highest k)`.
fn buildable_steps(d: &SizedDim) -> (i64, i64) {
    let lo = (d.min / d.increment - 1e-9).ceil() as i64;
    let hi = (d.max / d.increment + 1e-9).floor() as i64;
    (lo, hi.max(lo))
}

/// The buildable value `k` increments of `d` (ft or degrees), as the
/// sized scenario writes it by hand and reads it back ("6.5 in"), so that
/// the sized copy reproduces the run exactly; `k * increment` when that
/// text does not read back.
fn buildable_value(units: crate::util::units::UnitSystem, d: &SizedDim, k: i64) -> f64 {
    use crate::input::scenario::sized::{buildable_text, read_buildable};
    let v = k as f64 * d.increment;
    buildable_text(units, d.field, v)
        .and_then(|t| read_buildable(units, d.field, &t))
        .filter(|x| (x - v).abs() <= 1e-9 * v.abs().max(1.0))
        .unwrap_or(v)
}

/// Moves every solved value to a buildable one: a whole multiple of its
/// increment inside its range, the largest opening that still meets every
/// limit of its pond with the others held (each value first rounded toward
/// the smaller opening, then opened one increment at a time while every
/// limit holds, or closed until they do). Repeats until no value moves
/// (at most 4 passes), since closing one dimension may let another open.
/// A dimension whose pond meets its limits at no buildable value keeps the
/// rounded value and is reported infeasible.
fn to_buildable(
    study: &mut Study,
    trials: &Trials<'_>,
    dims: &[SizedDim],
    values: &mut [f64],
    infeasible: &mut [Option<String>],
) {
    let mut ks: Vec<i64> = dims
        .iter()
        .zip(values.iter())
        .map(|(d, &v)| {
            let (lo, hi) = buildable_steps(d);
            let q = v / d.increment;
            let k = if d.field.is_elevation() {
                (q - 1e-9).ceil()
            } else {
                (q + 1e-9).floor()
            };
            (k as i64).clamp(lo, hi)
        })
        .collect();
    for (d, &k) in dims.iter().zip(&ks) {
        set(study, d, buildable_value(study.units, d, k));
    }
    for pass in 0..4 {
        let mut moved = false;
        for (i, d) in dims.iter().enumerate() {
            if infeasible[i].is_some() {
                continue;
            }
            let (lo, hi) = buildable_steps(d);
            let open: i64 = if d.field.is_elevation() { -1 } else { 1 };
            let inside = |k: i64| (lo..=hi).contains(&k);
            let units = study.units;
            let mut ok = |k: i64| {
                set(study, d, buildable_value(units, d, k));
                trials.feasible(study, d.element).0
            };
            let start = ks[i];
            let mut k = start;
            if ok(k) {
                while inside(k + open) && ok(k + open) {
                    k += open;
                }
            } else if pass > 0 {
                // on the first pass the others may still close and mend it
                while inside(k - open) {
                    k -= open;
                    if ok(k) {
                        break;
                    }
                }
                if !ok(k) {
                    k = start;
                }
            }
            set(study, d, buildable_value(study.units, d, k));
            if k != start {
                moved = true;
                ks[i] = k;
            }
        }
        if !moved && pass > 0 {
            break;
        }
    }
    for (i, d) in dims.iter().enumerate() {
        values[i] = buildable_value(study.units, d, ks[i]);
        set(study, d, values[i]);
    }
    for (i, d) in dims.iter().enumerate() {
        if infeasible[i].is_none() && !trials.feasible(study, d.element).0 {
            infeasible[i] = Some(format!(
                "no buildable {} (a multiple of {}) in the range meets every limit with the other dimensions at their buildable values",
                d.field.key(),
                with_unit(study, d, d.increment)
            ));
        }
    }
}

/// The check that governs dimension `d` at value `v`: the one that fails
/// first just beyond the value (or, at the range's maximum or when none
/// fails beyond it, the one with the least margin).
fn governing_check(
    study: &mut Study,
    trials: &Trials<'_>,
    d: &SizedDim,
    v: f64,
    at_max: bool,
) -> Option<Check> {
    let (_, at_value) = trials.feasible(study, d.element);
    let least_margin = |checks: &[Check]| {
        checks
            .iter()
            .min_by(|a, b| a.margin().total_cmp(&b.margin()))
            .cloned()
    };
    if at_max {
        return least_margin(&at_value);
    }
    // one buildable increment beyond the value
    let more = if d.field.is_elevation() {
        (v - d.increment).max(d.min)
    } else {
        (v + d.increment).min(d.max)
    };
    set(study, d, more);
    let (_, beyond) = trials.feasible(study, d.element);
    set(study, d, v);
    beyond
        .iter()
        .enumerate()
        .filter(|(_, c)| !c.pass())
        .min_by(|a, b| a.1.margin().total_cmp(&b.1.margin()))
        .and_then(|(i, _)| at_value.get(i).cloned())
        .or_else(|| least_margin(&at_value))
}

/// One output row per dimension, and a warning for each infeasible one.
fn sized_outputs(
    study: &mut Study,
    trials: &Trials<'_>,
    dims: &[SizedDim],
    values: &[f64],
    infeasible: &[Option<String>],
) -> Vec<SizedResult> {
    let mut outputs = Vec::new();
    for (k, d) in dims.iter().enumerate() {
        let v = values[k];
        let at_max = {
            let (lo, hi) = buildable_steps(d);
            let kk = (v / d.increment).round() as i64;
            if d.field.is_elevation() {
                kk <= lo
            } else {
                kk >= hi
            }
        };
        let governing = governing_check(study, trials, d, v, at_max);
        let pond_name = study.elements[d.element].name.clone();
        let outlet_name = outlet_name(study, d);
        let reason = infeasible[k].clone();
        outputs.push(SizedResult {
            element: d.element,
            outlet: d.outlet,
            outlet_name: outlet_name.clone(),
            field: d.field,
            value: v,
            min: d.min,
            max: d.max,
            increment: d.increment,
            governing_storm: governing.as_ref().map(|c| c.storm),
            governing_check: governing.as_ref().map(|c| {
                if at_max && c.pass() {
                    format!("{} (range max reached)", c.what)
                } else {
                    c.what.clone()
                }
            }),
            margin: if reason.is_some() {
                None
            } else {
                governing
                    .as_ref()
                    .map(Check::margin)
                    .filter(|m| m.is_finite())
            },
            reason: reason.clone(),
        });
        if let Some(r) = reason {
            study
                .warnings
                .push(crate::warning::Warning::SizingInfeasible {
                    pond: pond_name,
                    outlet: outlet_label(d.outlet, outlet_name.as_deref()),
                    field: d.field.key().to_string(),
                    range: format!(
                        "{} to {}",
                        with_unit(study, d, d.min),
                        with_unit(study, d, d.max)
                    ),
                    reason: r,
                    written_at: with_unit(study, d, v),
                });
        }
    }
    outputs
}

/// The value of a sized field of an outlet (ft or degrees).
pub fn current_value(outlet: &Outlet, field: SizedField) -> Option<f64> {
    Some(match (outlet, field) {
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
            Outlet::SharpCrestedWeir { length_ft, .. } | Outlet::BroadCrestedWeir { length_ft, .. },
            SizedField::Length,
        ) => *length_ft,
        (Outlet::VNotchWeir { angle_deg, .. }, SizedField::Angle) => *angle_deg,
        (o2, SizedField::Crest) => o2.lowest_ft(),
        _ => return None,
    })
}

/// The value a sized dimension now holds, with its unit (see [`with_unit`]).
pub fn value_text(study: &Study, d: &SizedDim) -> String {
    let v = match &study.elements[d.element].kind {
        ElementKind::Pond(p) => p
            .outlets
            .get(d.outlet)
            .and_then(|o| current_value(o, d.field)),
        _ => None,
    };
    v.map(|v| with_unit(study, d, v))
        .unwrap_or_else(|| "-".into())
}
