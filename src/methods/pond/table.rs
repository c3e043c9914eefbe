//! The routing table: stage, storage, outflow (outlets and the
//! embankment) and the storage-indication value `2S/dt + O` on a fine
//! stage grid.

use super::*;

/// The embankment of a pond, which spills as a broad-crested weir over its
/// top.
#[derive(Debug, Clone, PartialEq)]
pub struct Embankment {
    /// Elevation of the embankment top, ft.
    pub top_ft: f64,
    /// Length of the top that spills, ft.
    pub crest_length_ft: f64,
    /// Broad-crested weir coefficient (US), ft^0.5/s.
    pub coefficient: f64,
}

impl Embankment {
    /// Flow over the embankment (cfs) at `stage_ft`.
    ///
    /// # Formula
    /// Broad-crested weir `Q = C L H^1.5` (from memory), H = stage - top (ft).
    pub fn flow_cfs(&self, stage_ft: f64) -> f64 {
        Outlet::BroadCrestedWeir {
            crest_ft: self.top_ft,
            length_ft: self.crest_length_ft,
            coefficient: self.coefficient,
        }
        .flow_cfs(stage_ft)
    }
}

/// Rows of the fine grid (at the grid step) before the spacing grows with
/// depth: 50 000 rows, 500 ft at the default 0.01-ft step.
pub const FINE_GRID_ROWS: usize = 50_000;

/// Relative spacing of the grid above [`FINE_GRID_ROWS`]: each stage is
/// 0.1 % of its depth above the bottom higher than the one below.
pub(super) const DEEP_GRID_RATIO: f64 = 1e-3;

/// The grid stages above `bottom` (exclusive) up to the first one at or
/// above `end` whose storage reaches `max_storage_ft3`: every `step` ft for
/// the first [`FINE_GRID_ROWS`] rows, then spaced by [`DEEP_GRID_RATIO`] of
/// the depth, so that the number of rows grows with the logarithm of the
/// depth the water can reach, not with the depth itself.
pub(super) fn grid_stages(
    storage: &StageStorage,
    bottom: f64,
    step: f64,
    end: f64,
    max_storage_ft3: f64,
) -> Result<Vec<f64>, PondError> {
    let needed = ((end - bottom) / step).ceil();
    let too_many = |rows: f64, to_ft: f64| PondError::TooManyRows {
        rows,
        limit: MAX_TABLE_ROWS,
        from_ft: bottom,
        to_ft,
        step_ft: step,
    };
    if !needed.is_finite() {
        return Err(too_many(needed, end));
    }
    let fine = (needed.max(1.0) as usize).min(FINE_GRID_ROWS);
    let mut out: Vec<f64> = (1..=fine).map(|i| bottom + i as f64 * step).collect();
    let mut h = bottom + fine as f64 * step;
    // more while rounding (or the row cap) leaves the last stage short of the bound
    while storage.volume_ft3(h) < max_storage_ft3 || (storage.is_capped() && h < end) {
        let next = if out.len() < FINE_GRID_ROWS {
            bottom + (out.len() + 1) as f64 * step
        } else {
            h + step.max(DEEP_GRID_RATIO * (h - bottom))
        };
        if !(next.is_finite() && next > h) || out.len() + 1 >= MAX_TABLE_ROWS {
            return Err(too_many(out.len() as f64 + 1.0, end));
        }
        h = next;
        out.push(h);
    }
    Ok(out)
}

/// One grid segment of a [`PondTable`], laid out for the routing loop: the
/// values at its lower row and their increments to the upper row.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Segment {
    pub(super) indicator_cfs: f64,
    pub(super) inv_d_indicator: f64,
    pub(super) stage_ft: f64,
    pub(super) d_stage_ft: f64,
    pub(super) storage_ft3: f64,
    pub(super) d_storage_ft3: f64,
    pub(super) outflow_cfs: f64,
    pub(super) d_outflow_cfs: f64,
    pub(super) loss_cfs: f64,
    pub(super) d_loss_cfs: f64,
    pub(super) surface_ft2: f64,
    pub(super) d_surface_ft2: f64,
}

/// Stage-storage-discharge table of a pond on a fine stage grid, with the
/// storage-indication value `2S/dt + O` for one time step.
#[derive(Debug, Clone, PartialEq)]
pub struct PondTable {
    pub(super) stage_ft: Vec<f64>,
    pub(super) storage_ft3: Vec<f64>,
    pub(super) outflow_cfs: Vec<f64>,
    pub(super) indicator_cfs: Vec<f64>,
    /// Infiltration (cfs) at each row, a loss beside the outflow.
    pub(super) loss_cfs: Vec<f64>,
    /// Open water surface (ft2) at each row, for evaporation.
    pub(super) surface_ft2: Vec<f64>,
    pub(super) segments: Vec<Segment>,
    /// Whether any row holds an infiltration loss (kept at build, so a
    /// routing loop can leave the loss out where there is none).
    pub(super) infiltrates: bool,
    pub(super) dt_s: f64,
    pub(super) lowest_outlet_ft: Option<f64>,
    pub(super) lowest_orifice: Option<(f64, f64)>,
    pub(super) top_ft: Option<f64>,
}

pub(super) fn check_positive(what: &'static str, value: f64) -> Result<(), PondError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(PondError::InvalidParameter {
            what,
            value,
            expected: "a positive finite number",
        })
    }
}

/// The lowest [`Outlet::lowest_ft`] of `outlets` (ft), if any is finite.
pub(super) fn lowest_outlet_ft(outlets: &[Outlet]) -> Option<f64> {
    outlets
        .iter()
        .map(Outlet::lowest_ft)
        .filter(|s| s.is_finite())
        .min_by(f64::total_cmp)
}

/// `(invert ft, crown ft)` of the orifice with the lowest invert, if any.
pub(super) fn lowest_orifice_ft(outlets: &[Outlet]) -> Option<(f64, f64)> {
    outlets
        .iter()
        .filter_map(|o| match o {
            Outlet::CircularOrifice {
                invert_ft,
                diameter_ft,
                ..
            } => Some((*invert_ft, invert_ft + diameter_ft)),
            Outlet::RectangularOrifice {
                invert_ft,
                height_ft,
                ..
            } => Some((*invert_ft, invert_ft + height_ft)),
            _ => None,
        })
        .filter(|(i, c)| i.is_finite() && c.is_finite())
        .min_by(|a, b| a.0.total_cmp(&b.0))
}

/// The stage (ft) the routing table must reach and the storage (ft3) it
/// holds there: where the storage reaches `max_storage_ft3`, or, for
/// storage that is full at its top (underground units alone), where the
/// outflow alone carries any inflow ([`full_storage_grid_end_ft`]).
fn grid_bound(
    storage: &StageStorage,
    works: &Works<'_>,
    embankment: Option<&Embankment>,
    dt_s: f64,
    max_storage_ft3: f64,
) -> Result<(f64, f64), PondError> {
    let s_bound = storage.stage_for_volume_ft(max_storage_ft3);
    if s_bound.is_finite() {
        return Ok((s_bound, max_storage_ft3));
    }
    if !storage.is_capped() {
        return Err(PondError::StorageBoundUnreachable {
            storage_ft3: max_storage_ft3,
        });
    }
    let flow = |h: f64| works.total_cfs(h) + embankment.map_or(0.0, |e| e.flow_cfs(h));
    let end = full_storage_grid_end_ft(storage, flow, dt_s, max_storage_ft3)?;
    Ok((end, storage.volume_ft3(end)))
}

/// An embankment's top must be a number and its crest and coefficient positive.
fn check_embankment(e: &Embankment) -> Result<(), PondError> {
    if !e.top_ft.is_finite() {
        return Err(PondError::InvalidParameter {
            what: "the embankment top (ft)",
            value: e.top_ft,
            expected: "a finite number",
        });
    }
    check_positive("the embankment crest length (ft)", e.crest_length_ft)?;
    check_positive("the embankment weir coefficient", e.coefficient)
}

impl PondTable {
    /// Tabulates stage, storage, outflow and `2S/dt + O` for a time step
    /// `dt_s` (s).
    ///
    /// The grid starts at the storage bottom and runs in steps of
    /// `grid_step_ft` to the first grid stage whose storage is at least
    /// `max_storage_ft3` (the caller passes start storage plus the total
    /// inflow volume, a bound on the peak), and at least one step above the
    /// embankment top. Every key stage of every outlet
    /// ([`Outlet::key_stages_ft`]), every stage-storage table row and the
    /// embankment top inside that range are grid stages too; a grid stage
    /// within 1e-9 ft of one of them is moved onto it, so the spacing is at
    /// most `grid_step_ft + 1e-9` ft. Outflow is the sum of the outlets plus
    /// the embankment weir.
    ///
    /// # Formula
    /// Storage-indication value `2S/dt + O` (cfs), S ft3, dt s, O cfs
    /// (Bedient, Huber & Vieux eq. 4-13).
    ///
    /// # Errors
    /// `dt_s` or `grid_step_ft` not positive, `max_storage_ft3` negative or
    /// not finite, an embankment with a non-finite top or a crest length or
    /// coefficient that is not positive, a storage bound the pond cannot
    /// hold, more than [`MAX_TABLE_ROWS`] rows, or a `2S/dt + O` that does
    /// not increase strictly with stage (the error names the stage).
    pub fn build(
        storage: &StageStorage,
        outlets: &[Outlet],
        embankment: Option<&Embankment>,
        dt_s: f64,
        grid_step_ft: f64,
        max_storage_ft3: f64,
    ) -> Result<Self, PondError> {
        Self::build_works(
            storage,
            &Works::free(outlets),
            embankment,
            dt_s,
            grid_step_ft,
            max_storage_ft3,
            &PondLosses::default(),
        )
    }

    /// [`PondTable::build`] for a whole outlet structure: outlets, barrels,
    /// tailwater and blocked devices ([`Works`]); outflow at each stage is
    /// [`Works::total_cfs`], and every stage where a device starts to flow
    /// or changes form ([`Works::key_stages_ft`]) is a grid stage. A pond
    /// that infiltrates has its loss `L` at each stage
    /// ([`PondLosses::infiltration_cfs`]) tabulated beside the outflow, as
    /// one more outflow term of the storage-indication value, and the open
    /// water surface kept for evaporation.
    ///
    /// # Formula
    /// `2S/dt + O + L` (cfs), the storage-indication value with the loss
    /// (Bedient, Huber & Vieux eq. 4-13, the loss taken as outflow).
    ///
    /// # Errors
    /// As [`PondTable::build`].
    pub fn build_works(
        storage: &StageStorage,
        works: &Works<'_>,
        embankment: Option<&Embankment>,
        dt_s: f64,
        grid_step_ft: f64,
        max_storage_ft3: f64,
        losses: &PondLosses,
    ) -> Result<Self, PondError> {
        let outlets = works.outlets;
        check_positive("the time step (s)", dt_s)?;
        check_positive("the stage grid step (ft)", grid_step_ft)?;
        if !(max_storage_ft3.is_finite() && max_storage_ft3 >= 0.0) {
            return Err(PondError::InvalidParameter {
                what: "the storage bound (ft3)",
                value: max_storage_ft3,
                expected: "a finite number, 0 or more",
            });
        }
        if let Some(e) = embankment {
            check_embankment(e)?;
        }
        let bottom = storage.bottom_ft();
        let step = grid_step_ft;
        let (s_bound, reach_ft3) = grid_bound(storage, works, embankment, dt_s, max_storage_ft3)?;
        // The grid reaches as far as the water can go and no further: an
        // embankment top above the storage bound is never reached, so it
        // does not lengthen the table.
        let end = s_bound.max(bottom + step);
        let lattice = grid_stages(storage, bottom, step, end, reach_ft3)?;
        let last = *lattice.last().unwrap_or(&bottom);
        let n = lattice.len();

        // stages the grid must contain; and, in the first grid cell above
        // each stage where an outlet (or the embankment) begins to flow,
        // stages at step / 2^(j/2) for j = 1..12 (down to step/64), because
        // outflow there grows like a power of the head (h^1.5 to h^2) that
        // a straight line across the whole cell overstates; with cells in
        // the ratio sqrt(2), linear interpolation of h^2 is off by 3 % at
        // most
        let starts: Vec<f64> = outlets
            .iter()
            .map(Outlet::lowest_ft)
            .chain(works.barrels.iter().map(|b| b.inlet_invert_ft))
            .chain(embankment.map(|e| e.top_ft))
            .collect();
        let refined = starts.iter().flat_map(|&h0| {
            (1..=LOW_HEAD_LEVELS).map(move |j| h0 + step * 0.5f64.powf(f64::from(j) / 2.0))
        });
        let mut must: Vec<f64> = works
            .key_stages_ft()
            .into_iter()
            .chain(storage.key_stages_ft())
            .chain(embankment.map(|e| e.top_ft))
            .chain(refined)
            .filter(|&s| s.is_finite() && s > bottom + MERGE_TOL_FT && s <= last)
            .collect();
        must.sort_by(f64::total_cmp);
        must.dedup_by(|a, b| (*a - *b).abs() <= MERGE_TOL_FT);
        if n + 1 + must.len() > MAX_TABLE_ROWS {
            return Err(PondError::TooManyRows {
                rows: (n + 1 + must.len()) as f64,
                limit: MAX_TABLE_ROWS,
                from_ft: bottom,
                to_ft: last,
                step_ft: step,
            });
        }
        let near_must = |g: f64| {
            let k = must.partition_point(|&m| m < g);
            let below = k.checked_sub(1).and_then(|i| must.get(i));
            let above = must.get(k);
            below.is_some_and(|&m| (g - m).abs() <= MERGE_TOL_FT)
                || above.is_some_and(|&m| (m - g).abs() <= MERGE_TOL_FT)
        };
        let mut stage_ft: Vec<f64> = Vec::with_capacity(n + 1 + must.len());
        stage_ft.push(bottom);
        stage_ft.extend(lattice.iter().copied().filter(|&g| !near_must(g)));
        stage_ft.extend(must.iter().copied());
        stage_ft.sort_by(f64::total_cmp);

        let rows = stage_ft.len();
        let mut storage_ft3 = Vec::with_capacity(rows);
        let mut outflow_cfs = Vec::with_capacity(rows);
        let mut indicator_cfs = Vec::with_capacity(rows);
        let mut loss_cfs = Vec::with_capacity(rows);
        let mut surface_ft2 = Vec::with_capacity(rows);
        for (i, &h) in stage_ft.iter().enumerate() {
            let s = storage.volume_ft3(h);
            let o = works.total_cfs(h) + embankment.map_or(0.0, |e| e.flow_cfs(h));
            // no more water can soak away in a step than the pond holds
            // beyond what its outlets release: L <= 2S/dt - O, so the
            // routing never draws the pond below empty
            let l = losses
                .infiltration_cfs(storage, h)
                .min((2.0 * s / dt_s - o).max(0.0));
            loss_cfs.push(l);
            surface_ft2.push(storage.open_surface_ft2(h));
            let ind = 2.0 * s / dt_s + o + l;
            let rising = i == 0 || ind > indicator_cfs[i - 1];
            if !ind.is_finite() || !rising {
                return Err(PondError::IndicatorNotIncreasing {
                    stage_ft: h,
                    previous_ft: if i == 0 { h } else { stage_ft[i - 1] },
                    storage_ft3: s,
                    outflow_cfs: o,
                });
            }
            storage_ft3.push(s);
            outflow_cfs.push(o);
            indicator_cfs.push(ind);
        }
        let segments = (0..rows - 1)
            .map(|i| Segment {
                indicator_cfs: indicator_cfs[i],
                inv_d_indicator: 1.0 / (indicator_cfs[i + 1] - indicator_cfs[i]),
                stage_ft: stage_ft[i],
                d_stage_ft: stage_ft[i + 1] - stage_ft[i],
                storage_ft3: storage_ft3[i],
                d_storage_ft3: storage_ft3[i + 1] - storage_ft3[i],
                outflow_cfs: outflow_cfs[i],
                d_outflow_cfs: outflow_cfs[i + 1] - outflow_cfs[i],
                loss_cfs: loss_cfs[i],
                d_loss_cfs: loss_cfs[i + 1] - loss_cfs[i],
                surface_ft2: surface_ft2[i],
                d_surface_ft2: surface_ft2[i + 1] - surface_ft2[i],
            })
            .collect();

        Ok(PondTable {
            stage_ft,
            storage_ft3,
            outflow_cfs,
            indicator_cfs,
            infiltrates: loss_cfs.iter().any(|&l| l != 0.0),
            loss_cfs,
            surface_ft2,
            segments,
            dt_s,
            lowest_outlet_ft: works.lowest_ft(),
            lowest_orifice: lowest_orifice_ft(outlets),
            top_ft: embankment.map(|e| e.top_ft),
        })
    }

    /// `(stage ft, storage ft3, outflow cfs)` of every grid row, lowest first.
    pub fn rows(&self) -> impl Iterator<Item = (f64, f64, f64)> + '_ {
        self.stage_ft
            .iter()
            .zip(&self.storage_ft3)
            .zip(&self.outflow_cfs)
            .map(|((&h, &s), &o)| (h, s, o))
    }

    /// The storage-indication value `2S/dt + O` (cfs) of every grid row.
    pub fn indicator_cfs(&self) -> &[f64] {
        &self.indicator_cfs
    }

    /// Whether the table holds an infiltration loss.
    pub fn infiltrates(&self) -> bool {
        self.infiltrates
    }

    /// Infiltration (cfs) at every grid row (zeros for a pond without it).
    pub fn loss_cfs(&self) -> &[f64] {
        &self.loss_cfs
    }

    /// Number of grid rows (at least 2).
    pub fn row_count(&self) -> usize {
        self.stage_ft.len()
    }

    /// The time step (s) the table was built for.
    pub fn dt_s(&self) -> f64 {
        self.dt_s
    }

    /// Lowest grid stage (ft): the bottom of the stage-storage table.
    pub fn bottom_ft(&self) -> f64 {
        self.stage_ft[0]
    }

    /// Embankment top (ft), if the table was built with one.
    pub fn top_ft(&self) -> Option<f64> {
        self.top_ft
    }

    /// The lowest [`Outlet::lowest_ft`] of the outlets (ft), if any.
    pub fn lowest_outlet_ft(&self) -> Option<f64> {
        self.lowest_outlet_ft
    }

    /// `(invert ft, crown ft)` of the orifice with the lowest invert, if any.
    pub fn lowest_orifice_ft(&self) -> Option<(f64, f64)> {
        self.lowest_orifice
    }

    /// Segment index, stage, storage and outflow at `stage_ft`, interpolated
    /// linearly in the table (clamped at the bottom, extrapolated on the last
    /// segment above the top).
    pub(super) fn state_at_stage(&self, stage_ft: f64) -> (usize, f64, f64, f64) {
        let bottom = self.stage_ft[0];
        let h = if stage_ft.is_nan() {
            bottom
        } else {
            stage_ft.max(bottom)
        };
        let k = self.stage_ft.partition_point(|&s| s <= h);
        let j = k.saturating_sub(1).min(self.segments.len() - 1);
        let sg = &self.segments[j];
        let f = if sg.d_stage_ft > 0.0 {
            (h - sg.stage_ft) / sg.d_stage_ft
        } else {
            0.0
        };
        (
            j,
            h,
            sg.storage_ft3 + f * sg.d_storage_ft3,
            sg.outflow_cfs + f * sg.d_outflow_cfs,
        )
    }

    /// Storage (ft3) at `stage_ft`, interpolated linearly in the table.
    pub fn storage_at_stage_ft3(&self, stage_ft: f64) -> f64 {
        self.state_at_stage(stage_ft).2
    }

    /// Outflow (cfs) at `stage_ft`, interpolated linearly in the table.
    pub fn outflow_at_stage_cfs(&self, stage_ft: f64) -> f64 {
        self.state_at_stage(stage_ft).3
    }

    /// Stage (ft) at which the table holds `storage_ft3`, interpolated
    /// linearly; the bottom for 0 or less (or NaN), extrapolated on the last
    /// segment above the table.
    pub fn stage_for_storage_ft(&self, storage_ft3: f64) -> f64 {
        let n = self.stage_ft.len();
        if storage_ft3.is_nan() || storage_ft3 <= self.storage_ft3[0] {
            return self.stage_ft[0];
        }
        let k = self.storage_ft3.partition_point(|&s| s < storage_ft3);
        let (j, i) = if k >= n { (n - 2, n - 1) } else { (k - 1, k) };
        let ds = self.storage_ft3[i] - self.storage_ft3[j];
        if ds > 0.0 {
            self.stage_ft[j]
                + (self.stage_ft[i] - self.stage_ft[j]) * ((storage_ft3 - self.storage_ft3[j]) / ds)
        } else {
            self.stage_ft[i]
        }
    }
}
