//! Pond summaries: peaks, volumes, mass balance, freeboard, overtopping
//! and the drain rule.

use super::*;

/// Event summary of a routed pond, for reports and warnings.
#[derive(Debug, Clone, PartialEq)]
pub struct PondSummary {
    /// Largest inflow, cfs.
    pub peak_inflow_cfs: f64,
    /// Largest outflow, cfs.
    pub peak_outflow_cfs: f64,
    /// Time of the (first) largest outflow, h from the start of the series.
    pub peak_time_h: f64,
    /// Highest water-surface elevation, ft.
    pub peak_stage_ft: f64,
    /// Time of the (first) highest stage, h.
    pub peak_stage_time_h: f64,
    /// Largest storage, ft3, measured from the table's lowest stage.
    pub peak_storage_ft3: f64,
    /// Storage at the start, ft3.
    pub start_storage_ft3: f64,
    /// Storage at the end of the series, ft3.
    pub end_storage_ft3: f64,
    /// Embankment top minus peak stage, ft (negative when overtopped), if a top is given.
    pub freeboard_ft: Option<f64>,
    /// True when the peak stage is above the top.
    pub overtopped: bool,
    /// Inflow volume, ft3 (trapezoidal in time).
    pub inflow_volume_ft3: f64,
    /// Outflow volume, ft3 (trapezoidal in time, as the routing assumes).
    pub outflow_volume_ft3: f64,
    /// Volume infiltrated, ft3 (trapezoidal in time; 0 without infiltration).
    pub infiltrated_ft3: f64,
    /// Volume evaporated, ft3 (0 for design storms).
    pub evaporated_ft3: f64,
    /// `(inflow volume - outflow volume - infiltrated - evaporated - change
    /// in storage) / inflow volume`; 0 when there is no inflow.
    pub mass_balance_error: f64,
    /// Time (h) from the peak stage until the storage above the starting
    /// storage first falls below 1 % of its peak value; `Some(0.0)` when the
    /// storage never rises above the start; `None` when it does not drain
    /// within the series.
    pub drain_time_h: Option<f64>,
    /// The lowest outlet's [`Outlet::lowest_ft`], ft (None without outlets).
    pub lowest_outlet_ft: Option<f64>,
    /// True when the peak stage is at or below the lowest outlet (for the
    /// warning "pond never fills above its lowest outlet"); false without outlets.
    pub never_filled_above_lowest_outlet: bool,
    /// Crown (invert + diameter or height) of the orifice with the lowest
    /// invert, ft; None without an orifice.
    pub lowest_orifice_crown_ft: Option<f64>,
    /// Whether the peak stage reached the crown of the lowest orifice, so it
    /// flowed as a submerged orifice at least once. `Some(false)` supports
    /// the warning "orifice never submerged" (it worked as a weir
    /// throughout); None without an orifice.
    pub lowest_orifice_submerged: Option<bool>,
}

/// `(value, index)` standing for the peak of a series with no value that is
/// not NaN (see [`max_first`]).
pub const NO_PEAK: (f64, usize) = (f64::NEG_INFINITY, 0);

/// The drain rule of the scenario-format contract: the index of the first
/// value at or after the peak at which the storage above the starting
/// storage falls below 1 % of its peak rise. `peak` is `(storage ft3,
/// index)` of the peak; `storage` ft3; `start_storage_ft3` the starting
/// storage. The peak's own index when the storage never rises above the
/// start; None when it does not drain within the series.
pub fn drain_index(
    storage_ft3: &[f64],
    start_storage_ft3: f64,
    peak: (f64, usize),
) -> Option<usize> {
    let (peak_storage, from) = peak;
    let rise = peak_storage - start_storage_ft3;
    if rise <= 0.0 {
        return Some(from);
    }
    let threshold = 0.01 * rise;
    storage_ft3
        .get(from..)?
        .iter()
        .position(|&s| s - start_storage_ft3 < threshold)
        .map(|k| from + k)
}

/// Trapezoidal volume (ft3) of a flow series (cfs) at step `dt_s` (s).
///
/// # Formula
/// `V = dt * sum_n (Q_n + Q_{n+1}) / 2`.
pub(super) fn trapezoid_volume_ft3(q: impl Iterator<Item = f64>, dt_s: f64) -> f64 {
    let mut prev: Option<f64> = None;
    let mut sum = 0.0;
    for x in q {
        if let Some(p) = prev {
            sum += 0.5 * (p + x);
        }
        prev = Some(x);
    }
    sum * dt_s
}

/// Summarises a routed event: peaks, volumes, mass balance, freeboard, drain
/// time and the facts behind the "never fills above its lowest outlet" and
/// "orifice never submerged" warnings.
///
/// `routed` is the result of [`route`] for `inflow_cfs` from
/// `start_stage_ft`; `dt_s` (s) the step; `top_ft` (ft) the embankment top
/// for freeboard and overtopping. Non-finite inflow ordinates count as 0,
/// as in the routing. Series of different lengths are cut to the shorter.
///
/// # Formula
/// Volumes trapezoidal in time, `V = dt sum (Q_n + Q_{n+1})/2`, as the
/// storage-indication step assumes (Bedient, Huber & Vieux eq. 4-13);
/// mass-balance error `(V_in - V_out - V_infiltrated - (S_end - S_start)) / V_in`.
pub fn summarize(
    table: &PondTable,
    inflow_cfs: &[f64],
    routed: &Routed,
    dt_s: f64,
    start_stage_ft: f64,
    top_ft: Option<f64>,
) -> PondSummary {
    let (_, h, s, o) = table.state_at_stage(start_stage_ft);
    let facts = OutletFacts {
        lowest_outlet_ft: table.lowest_outlet_ft,
        lowest_orifice: table.lowest_orifice,
    };
    summarize_core(inflow_cfs, routed, dt_s, (h, s, o), top_ft, facts)
}

/// [`summarize`] without a [`PondTable`], for a routed series kept on its
/// own (for example cut to a shorter run): the start state is the first
/// routed value, and the lowest outlet and orifice come from `outlets`.
/// With an empty series the peaks and storages are 0 and the peak stage is
/// `start_stage_ft`.
pub fn summarize_series(
    inflow_cfs: &[f64],
    routed: &Routed,
    dt_s: f64,
    start_stage_ft: f64,
    top_ft: Option<f64>,
    outlets: &[Outlet],
) -> PondSummary {
    let facts = OutletFacts {
        lowest_outlet_ft: lowest_outlet_ft(outlets),
        lowest_orifice: lowest_orifice_ft(outlets),
    };
    summarize_core(
        inflow_cfs,
        routed,
        dt_s,
        (start_stage_ft, 0.0, 0.0),
        top_ft,
        facts,
    )
}

/// What a summary needs to know about the outlets.
#[derive(Debug, Clone, Copy)]
pub(super) struct OutletFacts {
    pub(super) lowest_outlet_ft: Option<f64>,
    pub(super) lowest_orifice: Option<(f64, f64)>,
}

/// The summary; `start` is `(stage ft, storage ft3, outflow cfs)` used only
/// when the series is empty.
pub(super) fn summarize_core(
    inflow_cfs: &[f64],
    routed: &Routed,
    dt_s: f64,
    start: (f64, f64, f64),
    top_ft: Option<f64>,
    facts: OutletFacts,
) -> PondSummary {
    let n = inflow_cfs
        .len()
        .min(routed.outflow_cfs.len())
        .min(routed.stage_ft.len())
        .min(routed.storage_ft3.len());
    let inflow = &inflow_cfs[..n];
    let outflow = &routed.outflow_cfs[..n];
    let stage = &routed.stage_ft[..n];
    let storage = &routed.storage_ft3[..n];
    let to_h = |k: usize| k as f64 * dt_s / 3600.0;

    let (start_h, start_s, start_o) = start;
    let start_storage = storage.first().copied().unwrap_or(start_s);
    let end_storage = storage.last().copied().unwrap_or(start_s);

    let peak_inflow = inflow
        .iter()
        .map(|&q| finite_or_zero(q))
        .fold(0.0, f64::max);
    let (peak_out, k_out) = if n == 0 {
        (start_o, 0)
    } else {
        max_first(outflow).unwrap_or(NO_PEAK)
    };
    let (peak_stage, k_stage) = if n == 0 {
        (start_h, 0)
    } else {
        max_first(stage).unwrap_or(NO_PEAK)
    };
    let peak_storage = if n == 0 {
        start_s
    } else {
        max_first(storage).unwrap_or(NO_PEAK).0
    };

    let inflow_volume = trapezoid_volume_ft3(inflow.iter().map(|&q| finite_or_zero(q)), dt_s);
    let outflow_volume = trapezoid_volume_ft3(outflow.iter().copied(), dt_s);
    let infiltrated = routed
        .infiltration_cfs
        .get(..n)
        .map_or(0.0, |l| trapezoid_volume_ft3(l.iter().copied(), dt_s));
    let mass_balance_error = if inflow_volume != 0.0 && inflow_volume.is_finite() {
        (inflow_volume - outflow_volume - infiltrated - (end_storage - start_storage))
            / inflow_volume
    } else {
        0.0
    };

    let excess_peak = peak_storage - start_storage;
    // storage rises with stage, so the peak stage is also the peak storage
    let drain_time_h = if excess_peak <= 0.0 {
        Some(0.0)
    } else {
        drain_index(storage, start_storage, (peak_storage, k_stage)).map(|k| to_h(k - k_stage))
    };

    let lowest_outlet_ft = facts.lowest_outlet_ft;
    let crown = facts.lowest_orifice.map(|(_, c)| c);
    PondSummary {
        peak_inflow_cfs: peak_inflow,
        peak_outflow_cfs: peak_out,
        peak_time_h: to_h(k_out),
        peak_stage_ft: peak_stage,
        peak_stage_time_h: to_h(k_stage),
        peak_storage_ft3: peak_storage,
        start_storage_ft3: start_storage,
        end_storage_ft3: end_storage,
        freeboard_ft: top_ft.map(|t| t - peak_stage),
        overtopped: top_ft.is_some_and(|t| peak_stage > t),
        inflow_volume_ft3: inflow_volume,
        outflow_volume_ft3: outflow_volume,
        infiltrated_ft3: infiltrated,
        evaporated_ft3: 0.0,
        mass_balance_error,
        drain_time_h,
        lowest_outlet_ft,
        never_filled_above_lowest_outlet: lowest_outlet_ft.is_some_and(|l| peak_stage <= l),
        lowest_orifice_crown_ft: crown,
        lowest_orifice_submerged: crown.map(|c| peak_stage >= c),
    }
}
