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
    route_each(
        table,
        n,
        start_stage_ft,
        |k| inflow_cfs.get(k).copied().unwrap_or(0.0),
        |_, o, s, h| {
            out.outflow_cfs.push(o);
            out.storage_ft3.push(s);
            out.stage_ft.push(h);
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
    outflow_cfs.clear();
    outflow_cfs.reserve(series.len());
    let n = series.len();
    let cells = std::cell::Cell::from_mut(series).as_slice_of_cells();
    let mut first = None;
    let mut last = 0.0;
    route_each(
        table,
        n,
        start_stage_ft,
        |k| cells.get(k).map_or(0.0, std::cell::Cell::get),
        |k, o, s, h| {
            outflow_cfs.push(o);
            if let Some(c) = cells.get(k) {
                c.set(h);
            }
            first.get_or_insert(s);
            last = s;
        },
    );
    (first.unwrap_or(0.0), last)
}

/// The storage-indication step loop of [`route_into`] over `n` steps:
/// `inflow(k)` gives the inflow (cfs) at step k, read before `emit(k,
/// outflow cfs, storage ft3, stage ft)` reports the state there.
#[inline(always)]
pub(super) fn route_each(
    table: &PondTable,
    n: usize,
    start_stage_ft: f64,
    inflow: impl Fn(usize) -> f64,
    mut emit: impl FnMut(usize, f64, f64, f64),
) {
    if n == 0 {
        return;
    }
    let segs = table.segments.as_slice();
    let last = segs.len() - 1;
    let two_over_dt = 2.0 / table.dt_s;
    let mut i_prev = finite_or_zero(inflow(0));
    let (mut j, h0, s0, o0) = table.state_at_stage(start_stage_ft);
    emit(0, o0, s0, h0);

    let x_min = segs[0].indicator_cfs;
    let mut carry = two_over_dt * s0 - o0; // 2 S_n/dt - O_n
    for k in 1..n {
        let i_next = finite_or_zero(inflow(k));
        let x = (i_prev + i_next + carry).max(x_min);
        while j < last && x > segs[j + 1].indicator_cfs {
            j += 1;
        }
        while j > 0 && x < segs[j].indicator_cfs {
            j -= 1;
        }
        let sg = &segs[j];
        let f = (x - sg.indicator_cfs) * sg.inv_d_indicator;
        let o = sg.outflow_cfs + f * sg.d_outflow_cfs;
        emit(
            k,
            o,
            sg.storage_ft3 + f * sg.d_storage_ft3,
            sg.stage_ft + f * sg.d_stage_ft,
        );
        // 2 S/dt - O = (2 S/dt + O) - 2 O
        carry = x - 2.0 * o;
        i_prev = i_next;
    }
}
