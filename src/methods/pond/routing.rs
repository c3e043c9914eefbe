//! Storage-indication (modified Puls) routing of an inflow through a
//! [`PondTable`].

use super::*;

/// Result of routing: one value per inflow ordinate, at the same times.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Routed {
    /// Outflow, cfs.
    pub outflow_cfs: Vec<f64>,
    /// Water-surface elevation, ft.
    pub stage_ft: Vec<f64>,
    /// Storage above the table's lowest stage, ft3.
    pub storage_ft3: Vec<f64>,
    /// Infiltration, cfs, at the same times; empty for a pond that does
    /// not infiltrate.
    pub infiltration_cfs: Vec<f64>,
}

/// What a routing loop lost to the ground and the air, ft3.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct LossTotals {
    /// Infiltrated, ft3 (trapezoidal in time, as the routing assumes).
    pub infiltrated_ft3: f64,
    /// Evaporated, ft3.
    pub evaporated_ft3: f64,
}

/// An inflow ordinate with NaN and infinities read as 0.
#[inline]
pub(super) fn finite_or_zero(q: f64) -> f64 {
    if q.is_finite() { q } else { 0.0 }
}

/// Routes an inflow hydrograph through a pond by storage-indication.
///
/// `inflow_cfs[k]` is the inflow (cfs) at time `k * dt` (the table's step);
/// the pond starts at `start_stage_ft` (ft; clamped at the bottom) with the
/// table's outflow there. Output index `k` is the state at time `k * dt`.
/// See [`route_into`] for the method.
///
/// # Formula
/// `(I_n + I_{n+1}) + (2 S_n/dt - O_n) = (2 S_{n+1}/dt + O_{n+1})`
/// (Bedient, Huber & Vieux eq. 4-13); I, O cfs, S ft3, dt s.
pub fn route(table: &PondTable, inflow_cfs: &[f64], start_stage_ft: f64) -> Routed {
    let mut out = Routed::default();
    route_into(table, inflow_cfs, start_stage_ft, &mut out);
    out
}

/// [`route`] writing into caller-provided buffers (cleared first, grown only
/// when too small), for long records and sizing loops.
///
/// One pass, no allocation once the buffers are large enough. Each step
/// forms `x = I_n + I_{n+1} + (2 S_n/dt - O_n)`, finds the grid segment
/// whose `2S/dt + O` brackets `x` by walking from the previous step's
/// segment, and interpolates stage, storage and outflow with the same
/// fraction, so `2 S_{n+1}/dt + O_{n+1} = x` up to rounding and the mass
/// balance closes. Above the table's last row the last segment is
/// extended; a value below the bottom row (possible only when `dt` exceeds
/// `2 dS/dO` near the bottom) is held at the bottom row. NaN or infinite
/// inflow ordinates are read as 0.
///
/// # Formula
/// `(I_n + I_{n+1}) + (2 S_n/dt - O_n) = (2 S_{n+1}/dt + O_{n+1})`
/// (Bedient, Huber & Vieux eq. 4-13); I, O cfs, S ft3, dt s.
pub fn route_into(table: &PondTable, inflow_cfs: &[f64], start_stage_ft: f64, out: &mut Routed) {
    out.outflow_cfs.clear();
    out.stage_ft.clear();
    out.storage_ft3.clear();
    let n = inflow_cfs.len();
    out.outflow_cfs.reserve(n);
    out.stage_ft.reserve(n);
    out.storage_ft3.reserve(n);
    out.infiltration_cfs.clear();
    let infiltrates = table.infiltrates();
    if infiltrates {
        out.infiltration_cfs.reserve(n);
    }
    route_each(
        table,
        n,
        start_stage_ft,
        &[],
        |k| inflow_cfs.get(k).copied().unwrap_or(0.0),
        |_, o, s, h, l| {
            out.outflow_cfs.push(o);
            out.storage_ft3.push(s);
            out.stage_ft.push(h);
            if infiltrates {
                out.infiltration_cfs.push(l);
            }
        },
    );
}

/// [`route_into`] for long records, without a storage series and without a
/// separate stage buffer: `series` holds the inflow (cfs) on entry and the
/// stage (ft) on return, each ordinate overwritten once it has been read;
/// `outflow_cfs` is cleared and filled. Returns the storage (ft3) at the
/// first and the last step, which the mass balance needs (`(0, 0)` for an
/// empty series).
///
/// # Formula
/// `(I_n + I_{n+1}) + (2 S_n/dt - O_n) = (2 S_{n+1}/dt + O_{n+1})`
/// (Bedient, Huber & Vieux eq. 4-13); I, O cfs, S ft3, dt s.
pub fn route_stage_in_place(
    table: &PondTable,
    series: &mut [f64],
    start_stage_ft: f64,
    outflow_cfs: &mut Vec<f64>,
) -> (f64, f64) {
    let (first, last, _) =
        route_stage_in_place_losing(table, series, start_stage_ft, outflow_cfs, &[]);
    (first, last)
}

/// [`route_stage_in_place`] for a pond that also evaporates: `evaporation`
/// holds `(first step, rate ft/s)` pairs (see [`evaporation_schedule`]),
/// removed from the open water surface explicitly, step by step. Returns
/// the storage (ft3) at the first and the last step and the volumes lost.
///
/// # Formula
/// `(I_n + I_{n+1}) + (2 S_n/dt - O_n - L_n) - 2 E_n = (2 S_{n+1}/dt + O_{n+1} + L_{n+1})`
/// (Bedient, Huber & Vieux eq. 4-13 with the infiltration L as outflow and
/// the evaporation `E_n = e A_n` taken at the step's start); I, O, L, E cfs.
pub fn route_stage_in_place_losing(
    table: &PondTable,
    series: &mut [f64],
    start_stage_ft: f64,
    outflow_cfs: &mut Vec<f64>,
    evaporation: &[(usize, f64)],
) -> (f64, f64, LossTotals) {
    outflow_cfs.clear();
    outflow_cfs.reserve(series.len());
    let n = series.len();
    let cells = std::cell::Cell::from_mut(series).as_slice_of_cells();
    let mut first = None;
    let mut last = 0.0;
    let lost = route_each(
        table,
        n,
        start_stage_ft,
        evaporation,
        |k| cells.get(k).map_or(0.0, std::cell::Cell::get),
        |k, o, s, h, _| {
            outflow_cfs.push(o);
            if let Some(c) = cells.get(k) {
                c.set(h);
            }
            first.get_or_insert(s);
            last = s;
        },
    );
    (first.unwrap_or(0.0), last, lost)
}

/// The storage-indication step loop of [`route_into`] over `n` steps:
/// `inflow(k)` gives the inflow (cfs) at step k, read before `emit(k,
/// outflow cfs, storage ft3, stage ft, infiltration cfs)` reports the
/// state there. The
/// table's infiltration is a loss beside the outflow; `evaporation` holds
/// `(first step, rate ft/s)` pairs applied to the open water surface at
/// each step's start (no more than the water there). Returns the volumes
/// lost.
#[inline(always)]
pub(super) fn route_each(
    table: &PondTable,
    n: usize,
    start_stage_ft: f64,
    evaporation: &[(usize, f64)],
    inflow: impl Fn(usize) -> f64,
    emit: impl FnMut(usize, f64, f64, f64, f64),
) -> LossTotals {
    // Without losses every loss term is exactly zero, so the loop without
    // them gives the same bits, faster (one serial dependency fewer a step).
    if table.infiltrates || !evaporation.is_empty() {
        route_loop::<true>(table, n, start_stage_ft, evaporation, inflow, emit)
    } else {
        route_loop::<false>(table, n, start_stage_ft, &[], inflow, emit)
    }
}

/// [`route_each`]'s loop; `LOSSES` false leaves the infiltration and
/// evaporation terms out (the table has none and no evaporation is given).
#[inline(always)]
fn route_loop<const LOSSES: bool>(
    table: &PondTable,
    n: usize,
    start_stage_ft: f64,
    evaporation: &[(usize, f64)],
    inflow: impl Fn(usize) -> f64,
    mut emit: impl FnMut(usize, f64, f64, f64, f64),
) -> LossTotals {
    let mut lost = LossTotals::default();
    if n == 0 {
        return lost;
    }
    let segs = table.segments.as_slice();
    let last = segs.len() - 1;
    let two_over_dt = 2.0 / table.dt_s;
    let mut i_prev = finite_or_zero(inflow(0));
    let (mut j, h0, s0, o0) = table.state_at_stage(start_stage_ft);
    // the loss and the open surface at the start, on the start's segment
    let f0 = if segs[j].d_stage_ft > 0.0 {
        (h0 - segs[j].stage_ft) / segs[j].d_stage_ft
    } else {
        0.0
    };
    let mut l_prev = segs[j].loss_cfs + f0 * segs[j].d_loss_cfs;
    emit(0, o0, s0, h0, l_prev);
    let mut area_prev = segs[j].surface_ft2 + f0 * segs[j].d_surface_ft2;
    let mut infiltrated_2 = 0.0; // sum of L_n + L_{n+1}, cfs
    let mut evaporated = 0.0; // sum of E_n, cfs
    let mut next_rate = 0usize; // the next entry of `evaporation` to take
    let mut rate = 0.0;

    let x_min = segs[0].indicator_cfs;
    let mut carry = two_over_dt * s0 - o0 - l_prev; // 2 S_n/dt - O_n - L_n
    for k in 1..n {
        let i_next = finite_or_zero(inflow(k));
        while LOSSES && next_rate < evaporation.len() && evaporation[next_rate].0 < k {
            rate = evaporation[next_rate].1;
            next_rate += 1;
        }
        let mut x = i_prev + i_next + carry;
        if LOSSES && rate > 0.0 {
            // E_n at the step's start, no more than what is there to lose
            let e = (rate * area_prev).min(0.5 * (x - x_min)).max(0.0);
            x -= 2.0 * e;
            evaporated += e;
        }
        let x = x.max(x_min);
        while j < last && x > segs[j + 1].indicator_cfs {
            j += 1;
        }
        while j > 0 && x < segs[j].indicator_cfs {
            j -= 1;
        }
        let sg = &segs[j];
        let f = (x - sg.indicator_cfs) * sg.inv_d_indicator;
        let o = sg.outflow_cfs + f * sg.d_outflow_cfs;
        if !LOSSES {
            emit(
                k,
                o,
                sg.storage_ft3 + f * sg.d_storage_ft3,
                sg.stage_ft + f * sg.d_stage_ft,
                0.0,
            );
            // 2 S/dt - O = (2 S/dt + O) - 2 O
            carry = x - 2.0 * o;
            i_prev = i_next;
            continue;
        }
        let l = sg.loss_cfs + f * sg.d_loss_cfs;
        area_prev = sg.surface_ft2 + f * sg.d_surface_ft2;
        emit(
            k,
            o,
            sg.storage_ft3 + f * sg.d_storage_ft3,
            sg.stage_ft + f * sg.d_stage_ft,
            l,
        );
        infiltrated_2 += l_prev + l;
        l_prev = l;
        // 2 S/dt - O - L = (2 S/dt + O + L) - 2 (O + L)
        carry = x - 2.0 * (o + l);
        i_prev = i_next;
    }
    lost.infiltrated_ft3 = 0.5 * infiltrated_2 * table.dt_s;
    lost.evaporated_ft3 = evaporated * table.dt_s;
    lost
}
