//! A pond's outlet structure in results: every device's flow on a regular
//! stage grid (the stage-storage-discharge table with one column per
//! device), every device's flow at each routed peak, and the
//! clogged-outlet checks (`[[pond.failure]]`).

use crate::engine::network::{self, StormResult};
use crate::methods::hydraulics::{DeviceFlows, Works};
use crate::methods::pond::{self, PondTable};
use crate::model::{ElementKind, FailureCheck, Pond, Study};
use crate::util::tolerances;
use crate::util::units::{M_PER_FT, UnitSystem};

/// One row of a pond's structure rating.
#[derive(Debug, Clone, PartialEq)]
pub struct StructureRow {
    /// Stage, ft.
    pub stage_ft: f64,
    /// Storage above the bottom, ft3.
    pub storage_ft3: f64,
    /// Every device's flow there (the embankment not included).
    pub flows: DeviceFlows,
    /// Flow over the embankment, cfs.
    pub embankment_cfs: f64,
}

/// The regular stage step of the structure rating: 0.1 ft (US) or 0.05 m
/// (SI), in ft.
pub fn rating_step_ft(units: UnitSystem) -> f64 {
    match units {
        UnitSystem::Us => 0.1,
        UnitSystem::Si => 0.05 / M_PER_FT,
    }
}

/// Most rows of a structure rating; past this the step is doubled until
/// the table fits.
pub const MAX_RATING_ROWS: usize = 400;

/// The stages a rating of pond `p` spans (ft): from its bottom to its top
/// of embankment or its storage table's highest stage, whichever is
/// higher, and at least `min_span_ft` above the bottom.
pub fn rating_range_ft(p: &Pond, min_span_ft: f64) -> (f64, f64) {
    let bottom = p.storage.bottom_ft();
    let table_top = p.storage.rows().last().map(|r| r.0).unwrap_or(bottom + 1.0);
    let top = p
        .top_ft
        .unwrap_or(table_top)
        .max(table_top)
        .max(bottom + min_span_ft);
    (bottom, top)
}

/// The structure rating of pond `p`: from the bottom to the top (or the
/// storage table's highest stage, whichever is higher) at `step_ft`
/// (doubled until at most [`MAX_RATING_ROWS`] rows), plus every device's
/// invert, crest and barrel inlet ([`Works::key_stages_ft`]) in that range.
pub fn structure_rating(p: &Pond, step_ft: f64) -> Vec<StructureRow> {
    let (bottom, top) = rating_range_ft(p, step_ft);
    let mut step = step_ft;
    while (top - bottom) / step > MAX_RATING_ROWS as f64 {
        step *= 2.0;
    }
    let n = ((top - bottom) / step + 1e-9).floor() as usize;
    let works = p.works();
    let mut stages: Vec<f64> = (0..=n).map(|i| bottom + i as f64 * step).collect();
    stages.extend(
        works
            .key_stages_ft()
            .into_iter()
            .filter(|&s| s > bottom && s < top),
    );
    stages.push(top);
    stages.sort_by(f64::total_cmp);
    stages.dedup_by(|a, b| (*a - *b).abs() < 1e-6);
    let emb = p.embankment();
    stages
        .into_iter()
        .map(|h| StructureRow {
            stage_ft: h,
            storage_ft3: p.storage.volume_ft3(h),
            flows: works.flows(h),
            embankment_cfs: emb.as_ref().map_or(0.0, |e| e.flow_cfs(h)),
        })
        .collect()
}

/// Every device's flow at a pond's routed peak in one storm and condition.
#[derive(Debug, Clone, PartialEq)]
pub struct DevicePeak {
    /// Element index of the pond.
    pub element: usize,
    /// Storm index.
    pub storm: usize,
    /// Condition index.
    pub condition: usize,
    /// The routed peak stage, ft.
    pub stage_ft: f64,
    /// The devices' flows at that stage.
    pub flows: DeviceFlows,
}

/// [`DevicePeak`] of every pond in every storm and condition.
pub fn device_peaks(study: &Study, storms: &[StormResult]) -> Vec<DevicePeak> {
    let mut out = Vec::new();
    for s in storms {
        for c in &s.conditions {
            for (i, e) in c.elements.iter().enumerate() {
                let (Some(pr), ElementKind::Pond(p)) = (
                    e.as_ref().and_then(|e| e.pond.as_ref()),
                    &study.elements[i].kind,
                ) else {
                    continue;
                };
                let h = pr.summary.peak_stage_ft;
                out.push(DevicePeak {
                    element: i,
                    storm: s.storm,
                    condition: c.condition,
                    stage_ft: h,
                    flows: p.works().flows(h),
                });
            }
        }
    }
    out
}

/// The result of one clogged-outlet check in one condition.
#[derive(Debug, Clone, PartialEq)]
pub struct FailureResult {
    /// Element index of the pond.
    pub element: usize,
    /// Which of the pond's `[[pond.failure]]` checks (0-based).
    pub check: usize,
    /// Storm index.
    pub storm: usize,
    /// Condition index.
    pub condition: usize,
    /// Names of the blocked devices.
    pub blocked: Vec<String>,
    /// Starting water surface, ft.
    pub start_ft: f64,
    /// Whether the start was "full" (the lowest opening left open).
    pub start_full: bool,
    /// Peak stage, ft (None when the pond could not be routed).
    pub peak_stage_ft: Option<f64>,
    /// Peak outflow, cfs.
    pub peak_outflow_cfs: f64,
    /// Top of embankment, ft.
    pub top_ft: f64,
    /// Freeboard left, ft.
    pub freeboard_ft: Option<f64>,
    /// Least freeboard asked for, ft.
    pub min_freeboard_ft: f64,
    /// Mass-balance error of the routing (fraction of inflow).
    pub mass_balance_error: f64,
    /// Whether the freeboard left is at least the least asked for.
    pub pass: bool,
    /// Why the pond could not be routed, if it could not.
    pub error: Option<String>,
}

/// The works of `p` with the devices flagged in `bo` (outlets) and `bb`
/// (barrels) blocked.
fn blocked_works<'a>(p: &'a Pond, bo: &'a [bool], bb: &'a [bool]) -> Works<'a> {
    Works {
        blocked_outlets: bo,
        blocked_barrels: bb,
        ..p.works()
    }
}

/// Every `[[pond.failure]]` check of every pond, in each condition where
/// the pond is simulated: the pond's inflow in that storm routed again
/// with the named devices blocked, from `start` ("full": the lowest
/// opening left open, or the top when none is).
pub fn failure_checks(study: &Study, storms: &[StormResult]) -> Vec<FailureResult> {
    let mut out = Vec::new();
    for (i, el) in study.elements.iter().enumerate() {
        let ElementKind::Pond(p) = &el.kind else {
            continue;
        };
        let Some(top) = p.top_ft else { continue };
        for (k, f) in p.structure.failures.iter().enumerate() {
            let Some(s) = storms.iter().find(|s| s.storm == f.storm) else {
                continue;
            };
            for c in &s.conditions {
                let Some(pr) = c
                    .elements
                    .get(i)
                    .and_then(|e| e.as_ref())
                    .and_then(|e| e.pond.as_ref())
                else {
                    continue;
                };
                out.push(one_failure(p, i, k, f, s, c.condition, top, &pr.inflow_cfs));
            }
        }
    }
    out
}

#[allow(clippy::too_many_arguments)]
fn one_failure(
    p: &Pond,
    element: usize,
    check: usize,
    f: &FailureCheck,
    s: &StormResult,
    condition: usize,
    top: f64,
    inflow: &[f64],
) -> FailureResult {
    let mut bo = vec![false; p.outlets.len()];
    f.blocked_outlets.iter().for_each(|&i| bo[i] = true);
    let mut bb = vec![false; p.structure.barrels.len()];
    f.blocked_barrels.iter().for_each(|&j| bb[j] = true);
    let works = blocked_works(p, &bo, &bb);
    let bottom = p.storage.bottom_ft();
    let start = f
        .start_ft
        .unwrap_or_else(|| works.lowest_ft().unwrap_or(top).min(top))
        .max(bottom);
    let dt_s = s.step_h * 3600.0;
    let inflow_volume: f64 = inflow.iter().sum::<f64>() * dt_s;
    let table = PondTable::build_works(
        &p.storage,
        &works,
        p.embankment().as_ref(),
        dt_s,
        p.grid_step_ft,
        crate::engine::network::storage_cap_ft3(p, start, inflow_volume),
        &p.losses,
    );
    let mut r = FailureResult {
        element,
        check,
        storm: s.storm,
        condition,
        blocked: f.blocked_names.clone(),
        start_ft: start,
        start_full: f.start_ft.is_none(),
        peak_stage_ft: None,
        peak_outflow_cfs: 0.0,
        top_ft: top,
        freeboard_ft: None,
        min_freeboard_ft: f.min_freeboard_ft,
        mass_balance_error: 0.0,
        pass: false,
        error: None,
    };
    match table {
        Ok(table) => {
            let routed = pond::route(&table, inflow, start);
            let sm = pond::summarize_series(inflow, &routed, dt_s, start, p.top_ft, &p.outlets);
            r.peak_stage_ft = Some(sm.peak_stage_ft);
            r.peak_outflow_cfs = network::peak(&routed.outflow_cfs).0;
            r.freeboard_ft = Some(top - sm.peak_stage_ft);
            r.mass_balance_error = sm.mass_balance_error;
            r.pass = top - sm.peak_stage_ft >= f.min_freeboard_ft - tolerances::POND_LIMIT_SLACK;
        }
        Err(e) => r.error = Some(e.to_string()),
    }
    r
}

/// Warnings from the clogged-outlet checks: a check that fails, and a
/// routing whose mass balance is off by more than 0.1 %.
pub fn structure_warnings(
    study: &Study,
    failures: &[FailureResult],
) -> Vec<crate::warning::Warning> {
    use crate::util::units::{Quantity, sig};
    use crate::warning::Warning;
    let lf = Quantity::Length.output_factor(study.units);
    let lu = Quantity::Length.output_unit(study.units);
    let mut out = Vec::new();
    for r in failures {
        let pond = study.elements[r.element].name.clone();
        let storm = study.storms[r.storm].name.clone();
        let condition = study.conditions[r.condition].clone();
        if !r.pass {
            out.push(Warning::CloggedOutletFails {
                pond: pond.clone(),
                storm: storm.clone(),
                condition: condition.clone(),
                blocked: r
                    .blocked
                    .iter()
                    .map(|b| format!("\"{b}\""))
                    .collect::<Vec<_>>()
                    .join(", "),
                freeboard: match (r.freeboard_ft, &r.error) {
                    (Some(fb), _) => format!("{} {lu}", sig(fb * lf, 3)),
                    (None, Some(e)) => format!("no routing ({e}), so no"),
                    (None, None) => "no".into(),
                },
                min_freeboard: format!("{} {lu}", sig(r.min_freeboard_ft * lf, 3)),
            });
        }
        if r.mass_balance_error.abs() > tolerances::MASS_BALANCE_WARN {
            out.push(Warning::MassBalance {
                pond,
                run: format!("clogged-outlet check, storm \"{storm}\""),
                condition,
                error: r.mass_balance_error,
            });
        }
    }
    out
}
