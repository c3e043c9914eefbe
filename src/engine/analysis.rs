//! A whole study: every storm through every condition, then the checks an
//! engineer's report needs: limits at points, pond limits, and the TR-55
//! graphical-method cross-check of every catchment.

use crate::engine::network::{self, StormResult};
use crate::engine::topology::Topology;
use crate::methods::graphical_peak::{self, StormType};
use crate::methods::rainfall::NrcsType;
use crate::methods::runoff;
use crate::model::{ElementKind, Limit, Pond, Study};
use crate::util::tolerances;
use crate::util::units::{Quantity, Shown};
use crate::warning::Warning;
use rayon::prelude::*;

/// One limit check at a point.
#[derive(Debug, Clone)]
pub struct Comparison {
    /// Point index.
    pub point: usize,
    /// Storm index.
    pub storm: usize,
    /// Condition index checked.
    pub condition: usize,
    /// Baseline peak at the point, cfs.
    pub baseline_peak_cfs: f64,
    /// Condition's peak, cfs.
    pub peak_cfs: f64,
    /// The limit, cfs.
    pub limit_cfs: f64,
    /// Whether the peak is within the limit (true when not checked).
    pub pass: bool,
    /// False when the limit needs a baseline that has no element: the
    /// point is reported "not checked: no baseline" (`limit_cfs` is NaN).
    pub checked: bool,
    /// Area draining to the point in the condition checked, ac.
    pub area_ac: f64,
    /// Area draining to the point in the baseline, ac (None without a baseline).
    pub baseline_area_ac: Option<f64>,
}

/// One pond limit or overtopping check.
#[derive(Debug, Clone)]
pub struct PondCheck {
    /// Element index of the pond.
    pub element: usize,
    /// Storm index.
    pub storm: usize,
    /// Condition index.
    pub condition: usize,
    /// What was checked, with the value found and the limit.
    pub check: PondLimitCheck,
    /// Whether it holds.
    pub pass: bool,
}

/// What a pond check compares, each value with its unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PondLimitCheck {
    /// The peak stage against the top of the embankment.
    Overtopping {
        /// Peak stage, ft.
        peak_stage_ft: f64,
        /// Top of embankment, ft.
        top_ft: f64,
    },
    /// The least freeboard against the least allowed.
    Freeboard {
        /// Freeboard found, ft.
        freeboard_ft: f64,
        /// Least freeboard allowed, ft.
        min_freeboard_ft: f64,
    },
    /// The drain time against the longest allowed.
    DrainTime {
        /// Drain time, h (None: not drained within the run).
        hours: Option<f64>,
        /// Longest drain time allowed, h.
        max_hours: f64,
    },
}

impl PondLimitCheck {
    /// Which check it is.
    pub fn kind(&self) -> PondCheckKind {
        match self {
            PondLimitCheck::Overtopping { .. } => PondCheckKind::Overtopping,
            PondLimitCheck::Freeboard { .. } => PondCheckKind::Freeboard,
            PondLimitCheck::DrainTime { .. } => PondCheckKind::DrainTime,
        }
    }
}

/// The kinds of pond check, as named in results.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PondCheckKind {
    /// Peak stage above the top of the embankment.
    Overtopping,
    /// Least freeboard.
    Freeboard,
    /// Longest drain time.
    DrainTime,
}

impl PondCheckKind {
    /// The word written in results: overtopping, freeboard, drain time.
    pub fn word(self) -> &'static str {
        match self {
            PondCheckKind::Overtopping => "overtopping",
            PondCheckKind::Freeboard => "freeboard",
            PondCheckKind::DrainTime => "drain time",
        }
    }

    /// Whether its value and limit are times (h) rather than stages.
    pub fn is_time(self) -> bool {
        self == PondCheckKind::DrainTime
    }
}

/// TR-55 chapter 4 graphical peak beside the hydrograph peak.
#[derive(Debug, Clone)]
pub struct GraphicalCheck {
    /// Element index of the catchment.
    pub element: usize,
    /// Storm index.
    pub storm: usize,
    /// Ia/P used (after clamping).
    pub ia_over_p: f64,
    /// Unit peak discharge, csm/in.
    pub qu_csm_per_in: f64,
    /// Graphical-method peak, cfs.
    pub graphical_peak_cfs: f64,
    /// Hydrograph peak, cfs.
    pub hydrograph_peak_cfs: f64,
    /// Whether Tc or Ia/P were clamped to the table's range.
    pub clamped: bool,
}

/// Everything a run computes.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// One result per storm, every condition.
    pub storms: Vec<StormResult>,
    /// Limit checks at points.
    pub comparisons: Vec<Comparison>,
    /// Pond checks.
    pub pond_checks: Vec<PondCheck>,
    /// Graphical cross-checks.
    pub graphical: Vec<GraphicalCheck>,
    /// Warnings found while simulating.
    pub warnings: Vec<Warning>,
    /// The study's network the storms were run on.
    pub topology: Topology,
    /// Every device's flow at each pond's routed peak.
    pub device_peaks: Vec<crate::engine::structure::DevicePeak>,
    /// Clogged-outlet checks (`[[pond.failure]]`).
    pub failures: Vec<crate::engine::structure::FailureResult>,
}

impl Analysis {
    /// Whether any limit failed or a pond overtopped.
    pub fn any_failure(&self) -> bool {
        self.comparisons.iter().any(|c| !c.pass)
            || self.pond_checks.iter().any(|c| !c.pass)
            || self.failures.iter().any(|f| !f.pass)
    }
}

/// Runs every storm in parallel with the study's own ponds.
///
/// # Errors
/// The first storm that cannot be simulated ([`network::SimulationError`]).
pub fn run_storms_parallel(study: &Study) -> Result<Vec<StormResult>, network::SimulationError> {
    run_storms(study, &Topology::new(study))
}

/// [`run_storms_parallel`] on the study's [`Topology`].
///
/// # Errors
/// The first storm that cannot be simulated ([`network::SimulationError`]).
pub fn run_storms(
    study: &Study,
    topology: &Topology,
) -> Result<Vec<StormResult>, network::SimulationError> {
    let all = study.simulated_conditions();
    (0..study.storms.len())
        .into_par_iter()
        .map(|s| network::simulate_storm_on(study, topology, s, &all))
        .collect()
}

/// Peak at a point, cfs.
pub fn point_peak(storms: &[StormResult], storm: usize, condition: usize, point: usize) -> f64 {
    storms
        .iter()
        .find(|s| s.storm == storm)
        .and_then(|s| s.condition(condition))
        .and_then(|c| c.points.get(point))
        .map(|q| network::peak(q).0)
        .unwrap_or(0.0)
}

/// The limit in cfs for a point, storm and condition, or None when not checked.
pub fn limit_cfs(
    study: &Study,
    topology: &Topology,
    storms: &[StormResult],
    point: usize,
    storm: usize,
    condition: usize,
) -> Option<f64> {
    limit_with_area(study, storms, point, storm, || {
        topology.area_to_point_ac(point, condition)
    })
}

/// [`limit_cfs`] with the area draining to the point (ac) from `area_ac`.
fn limit_with_area(
    study: &Study,
    storms: &[StormResult],
    point: usize,
    storm: usize,
    area_ac: impl FnOnce() -> f64,
) -> Option<f64> {
    let limit = study.points[point].limits.get(storm)?;
    if study.cannot_check(limit) {
        return None;
    }
    match limit {
        Limit::None => None,
        Limit::Absolute { flow_cfs } => Some(*flow_cfs),
        Limit::PerArea { cfs_per_ac } => Some(cfs_per_ac * area_ac()),
        Limit::Relative {
            fraction,
            condition: lc,
            storm: ls,
        } => Some(fraction * point_peak(storms, ls.unwrap_or(storm), *lc, point)),
    }
}

/// Limit checks at every point for every storm and non-baseline condition.
pub fn compare(study: &Study, topology: &Topology, storms: &[StormResult]) -> Vec<Comparison> {
    let mut out = Vec::new();
    for s in storms {
        for p in 0..study.points.len() {
            let base = point_peak(storms, s.storm, study.baseline, p);
            for c in &s.conditions {
                if !study.limits_apply_to(c.condition) {
                    continue;
                }
                let area_ac = topology.area_to_point_ac(p, c.condition);
                // In a study of one condition the baseline is the condition checked.
                let compared = !study.baseline_empty && !study.one_condition();
                let baseline_area_ac =
                    compared.then(|| topology.area_to_point_ac(p, study.baseline));
                let base = if compared { base } else { f64::NAN };
                let peak = point_peak(storms, s.storm, c.condition, p);
                let unchecked = study.points[p]
                    .limits
                    .get(s.storm)
                    .is_some_and(|l| study.cannot_check(l));
                if unchecked {
                    out.push(Comparison {
                        point: p,
                        storm: s.storm,
                        condition: c.condition,
                        baseline_peak_cfs: f64::NAN,
                        peak_cfs: peak,
                        limit_cfs: f64::NAN,
                        pass: true,
                        checked: false,
                        area_ac,
                        baseline_area_ac,
                    });
                    continue;
                }
                let Some(limit) = limit_cfs(study, topology, storms, p, s.storm, c.condition)
                else {
                    continue;
                };
                out.push(Comparison {
                    point: p,
                    storm: s.storm,
                    condition: c.condition,
                    baseline_peak_cfs: base,
                    peak_cfs: peak,
                    limit_cfs: limit,
                    pass: tolerances::within_upper_limit(peak, limit),
                    checked: true,
                    area_ac,
                    baseline_area_ac,
                });
            }
        }
    }
    out
}

/// The pond of element `i`.
fn pond_of(study: &Study, i: usize) -> Option<&Pond> {
    match &study.elements[i].kind {
        ElementKind::Pond(p) => Some(p),
        _ => None,
    }
}

/// Pond limit checks (freeboard, drain time) and overtopping, per storm and condition.
pub fn pond_checks(study: &Study, storms: &[StormResult]) -> Vec<PondCheck> {
    let mut out = Vec::new();
    for s in storms {
        for c in &s.conditions {
            for (i, e) in c.elements.iter().enumerate() {
                let (Some(pr), Some(p)) =
                    (e.as_ref().and_then(|e| e.pond.as_ref()), pond_of(study, i))
                else {
                    continue;
                };
                let check = |check, pass| PondCheck {
                    element: i,
                    storm: s.storm,
                    condition: c.condition,
                    check,
                    pass,
                };
                if let Some(top_ft) = p.top_ft {
                    out.push(check(
                        PondLimitCheck::Overtopping {
                            peak_stage_ft: pr.summary.peak_stage_ft,
                            top_ft,
                        },
                        !pr.summary.overtopped,
                    ));
                }
                if let (Some(minf), Some(fb)) = (p.min_freeboard_ft, pr.summary.freeboard_ft) {
                    out.push(check(
                        PondLimitCheck::Freeboard {
                            freeboard_ft: fb,
                            min_freeboard_ft: minf,
                        },
                        fb >= minf - tolerances::POND_LIMIT_SLACK,
                    ));
                }
                if let Some(maxd) = p.max_drain_time_h {
                    let d = pr.summary.drain_time_h;
                    out.push(check(
                        PondLimitCheck::DrainTime {
                            hours: d,
                            max_hours: maxd,
                        },
                        d.is_some_and(|d| d <= maxd + tolerances::POND_LIMIT_SLACK),
                    ));
                }
            }
        }
    }
    out
}

/// Maps the rainfall module's type to the graphical method's.
pub fn storm_type(t: NrcsType) -> StormType {
    match t {
        NrcsType::I => StormType::I,
        NrcsType::IA => StormType::IA,
        NrcsType::II => StormType::II,
        NrcsType::III => StormType::III,
    }
}

/// TR-55 chapter 4 graphical peaks (Fp = 1) for every catchment and NRCS storm.
pub fn graphical_checks(study: &Study, storms: &[StormResult]) -> Vec<GraphicalCheck> {
    let mut out = Vec::new();
    for s in storms {
        let storm = &study.storms[s.storm];
        let Some(t) = storm.nrcs() else { continue };
        for (i, e) in study.elements.iter().enumerate() {
            let ElementKind::Catchment(c) = &e.kind else {
                continue;
            };
            let p = storm.depth_in();
            let s20 = runoff::retention_in(c.cn);
            let q = runoff::runoff_depth_in(p, s20, 0.2);
            let ia_p = if p > 0.0 { 0.2 * s20 / p } else { 1.0 };
            let up = graphical_peak::unit_peak_csm_per_in(storm_type(t), ia_p, c.tc_h);
            let g = graphical_peak::peak_cfs(up.qu_csm_per_in, c.area_ac / 640.0, q, 1.0);
            let hydro = s
                .conditions
                .iter()
                .find_map(|cr| cr.elements.get(i).and_then(|x| x.as_ref()))
                .map(|r| network::peak(&r.outflow_cfs).0)
                .unwrap_or(0.0);
            out.push(GraphicalCheck {
                element: i,
                storm: s.storm,
                ia_over_p: up.ia_over_p_used,
                qu_csm_per_in: up.qu_csm_per_in,
                graphical_peak_cfs: if g.is_finite() { g } else { 0.0 },
                hydrograph_peak_cfs: hydro,
                clamped: up.tc_clamped || up.ia_over_p_clamped,
            });
        }
    }
    out
}

/// Runs the whole design-storm analysis of a study.
///
/// # Errors
/// A storm that cannot be simulated: a pond that cannot be routed, a
/// result that is not a finite number, a run too long.
pub fn analyse(study: &Study) -> Result<Analysis, crate::error::Error> {
    let topology = Topology::new(study);
    let storms = run_storms(study, &topology)?;
    Ok(finish_on(study, &topology, storms))
}

pub use crate::util::tolerances::MASS_BALANCE_WARN;

/// The checks and warnings for a set of storm results.
pub fn finish(study: &Study, storms: Vec<StormResult>) -> Analysis {
    finish_on(study, &Topology::new(study), storms)
}

/// [`finish`] on the study's [`Topology`].
pub fn finish_on(study: &Study, topology: &Topology, storms: Vec<StormResult>) -> Analysis {
    let comparisons = compare(study, topology, &storms);
    let pond_checks = pond_checks(study, &storms);
    let graphical = graphical_checks(study, &storms);
    let mut warnings = Vec::new();
    for g in &graphical {
        let (h, gp) = (g.hydrograph_peak_cfs, g.graphical_peak_cfs);
        let lambda_std = matches!(&study.elements[g.element].kind, ElementKind::Catchment(c) if c.lambda == runoff::Lambda::Standard);
        if lambda_std
            && h > 0.0
            && gp > 0.0
            && ((h - gp).abs() / gp) > tolerances::GRAPHICAL_PEAK_TOLERANCE
        {
            let flow = |cfs| Shown::new(cfs, Quantity::Flow, study.units, 3);
            warnings.push(Warning::GraphicalPeakDiffers {
                catchment: study.elements[g.element].name.clone(),
                storm: study.storms[g.storm].name.clone(),
                hydrograph: flow(h),
                graphical: flow(gp),
            });
        }
    }
    for s in &storms {
        for c in &s.conditions {
            for (i, e) in c.elements.iter().enumerate() {
                let Some(e) = e else { continue };
                if let Some(ch) = &e.channel {
                    let mb = ch.summary(&e.outflow_cfs, s.step_h).mass_balance_error();
                    if mb.abs() > MASS_BALANCE_WARN {
                        warnings.push(Warning::ChannelMassBalance {
                            channel: study.elements[i].name.clone(),
                            run: format!("storm \"{}\"", study.storms[s.storm].name),
                            condition: study.conditions[c.condition].clone(),
                            error: mb,
                        });
                    }
                }
                let Some(pr) = e.pond.as_ref() else {
                    continue;
                };
                let pond = &study.elements[i].name;
                if pr.summary.overtopped {
                    warnings.push(Warning::Overtopped {
                        pond: pond.clone(),
                        storm: study.storms[s.storm].name.clone(),
                        condition: study.conditions[c.condition].clone(),
                    });
                }
                let mb = pr.summary.mass_balance_error;
                if mb.abs() > MASS_BALANCE_WARN {
                    warnings.push(Warning::MassBalance {
                        pond: pond.clone(),
                        run: format!("storm \"{}\"", study.storms[s.storm].name),
                        condition: study.conditions[c.condition].clone(),
                        error: mb,
                    });
                }
                if pr.summary.never_filled_above_lowest_outlet {
                    warnings.push(Warning::PondNeverFills {
                        pond: pond.clone(),
                        storm: study.storms[s.storm].name.clone(),
                        condition: study.conditions[c.condition].clone(),
                    });
                }
            }
        }
    }
    warnings.extend(area_balance(study, topology));
    // Orifices never submerged in any storm.
    for i in 0..study.elements.len() {
        let Some(p) = pond_of(study, i) else { continue };
        for (k, o) in p.outlets.iter().enumerate() {
            let crown = match o {
                crate::methods::hydraulics::Outlet::CircularOrifice {
                    invert_ft,
                    diameter_ft,
                    ..
                } => invert_ft + diameter_ft,
                crate::methods::hydraulics::Outlet::RectangularOrifice {
                    invert_ft,
                    height_ft,
                    ..
                } => invert_ft + height_ft,
                _ => continue,
            };
            let max_stage = storms
                .iter()
                .flat_map(|s| s.conditions.iter())
                .filter_map(|c| {
                    c.elements
                        .get(i)
                        .and_then(|x| x.as_ref())
                        .and_then(|x| x.pond.as_ref())
                })
                .map(|pr| pr.summary.peak_stage_ft)
                .fold(f64::NEG_INFINITY, f64::max);
            if max_stage.is_finite() && max_stage < crown {
                warnings.push(Warning::OrificeNeverSubmerged {
                    pond: study.elements[i].name.clone(),
                    outlet: crate::engine::sizing::outlet_label(
                        k,
                        p.outlet_names.get(k).and_then(|n| n.as_deref()),
                    ),
                });
            }
        }
    }
    let device_peaks = crate::engine::structure::device_peaks(study, &storms);
    let failures = crate::engine::structure::failure_checks(study, &storms);
    warnings.extend(crate::engine::structure::structure_warnings(
        study, &failures,
    ));
    Analysis {
        storms,
        comparisons,
        pond_checks,
        graphical,
        warnings,
        topology: topology.clone(),
        device_peaks,
        failures,
    }
}

pub use crate::util::tolerances::AREA_BALANCE_TOLERANCE;

/// A warning for every point and condition whose draining area differs from
/// the baseline's by more than [`AREA_BALANCE_TOLERANCE`].
pub fn area_balance(study: &Study, topology: &Topology) -> Vec<Warning> {
    let mut out = Vec::new();
    if study.baseline_empty {
        return out;
    }
    let show = |ac: f64| Shown::new(ac, Quantity::Area, study.units, 4);
    for (p, pt) in study.points.iter().enumerate() {
        let base = topology.area_to_point_ac(p, study.baseline);
        for c in study.simulated_conditions() {
            if c == study.baseline {
                continue;
            }
            let a = topology.area_to_point_ac(p, c);
            let differs = if base > 0.0 {
                ((a - base) / base).abs() > AREA_BALANCE_TOLERANCE
            } else {
                a > 0.0
            };
            if differs {
                out.push(Warning::AreaMismatch {
                    point: pt.name.clone(),
                    condition: study.conditions[c].clone(),
                    area: show(a),
                    baseline: study.conditions[study.baseline].clone(),
                    baseline_area: show(base),
                    difference_pct: if base > 0.0 {
                        (a - base) / base * 100.0
                    } else {
                        f64::INFINITY
                    },
                });
            }
        }
    }
    out
}
