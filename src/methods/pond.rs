//! Detention ponds: stage-storage relations, the stage-storage-discharge
//! table, and storage-indication (modified Puls) routing.
//!
//! A pond is described by a [`StageStorage`] (from a stage-area table,
//! volumes by the conic-frustum rule, or from a stage-volume table), its
//! outlets ([`crate::methods::hydraulics::Outlet`], free outfall, parallel outlets add
//! up) and an optional [`Embankment`] that spills as a broad-crested weir
//! above its top. [`PondTable::build`] tabulates stage, storage, outflow and
//! the storage-indication value `2S/dt + O` on a fine stage grid, and
//! [`route`] steps an inflow hydrograph through it.
//!
//! Source: the storage-indication form
//! `(I_n + I_{n+1}) + (2 S_n/dt - O_n) = (2 S_{n+1}/dt + O_{n+1})` is
//! Bedient, Huber & Vieux, *Hydrology and Floodplain Analysis*, 5th ed.,
//! eq. 4-13 (and V. M. Ponce's worked linear-reservoir example). The
//! frustum volume between two surface areas is elementary geometry.
//!
//! Units are US customary throughout: stage ft, storage ft3, surface area
//! ft2, flow cfs, time step s. A `PondError` quotes values in the units it
//! was given; its row numbers count from 1.

use crate::methods::hydraulics::{Outlet, total_flow_cfs};
use crate::methods::stats::max_first;

/// Largest number of rows a [`PondTable`] may have.
pub const MAX_TABLE_ROWS: usize = 5_000_000;

/// Largest number of rows [`basin_stage_area`] produces.
const MAX_BASIN_ROWS: usize = 100_000;

/// Row spacing (ft) of [`basin_stage_area`].
const BASIN_ROW_STEP_FT: f64 = 0.5;

/// Two grid stages closer than this (ft) are merged into one.
const MERGE_TOL_FT: f64 = 1e-9;
/// Extra stages, in the ratio sqrt(2) down to 1/64 of the grid step, above
/// each stage where an outlet begins to flow (see [`PondTable::build`]).
const LOW_HEAD_LEVELS: u32 = 12;

/// What is wrong with a pond's tables or parameters.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum PondError {
    /// A table has fewer than two rows.
    #[error("the {table} table has {found} row(s); it needs at least 2 rows")]
    TooFewRows {
        /// Which table (`stage-area`, `stage-volume`).
        table: &'static str,
        /// Rows found.
        found: usize,
    },
    /// A table value is NaN or infinite.
    #[error(
        "row {row}: {column} {value:?} is not a finite number; every value must be a finite number"
    )]
    NotFinite {
        /// Row number, from 1.
        row: usize,
        /// Column name (`stage`, `area`, `volume`).
        column: &'static str,
        /// The value found.
        value: f64,
    },
    /// A stage is not above the stage of the previous row.
    #[error(
        "row {row}: stage {stage:?} is not above the previous stage {previous:?}; stages must increase strictly"
    )]
    StageNotIncreasing {
        /// Row number, from 1.
        row: usize,
        /// Stage of this row.
        stage: f64,
        /// Stage of the previous row.
        previous: f64,
    },
    /// An area or volume is below zero.
    #[error("row {row}: {column} {value:?} is negative; {column}s must be 0 or more")]
    Negative {
        /// Row number, from 1.
        row: usize,
        /// Column name (`area`, `volume`).
        column: &'static str,
        /// The value found.
        value: f64,
    },
    /// An area or volume is smaller than the one in the previous row.
    #[error(
        "row {row}: {column} {value:?} is less than the previous {column} {previous:?}; {column}s must not decrease as the stage rises"
    )]
    Decreasing {
        /// Row number, from 1.
        row: usize,
        /// Column name (`area`, `volume`).
        column: &'static str,
        /// The value found.
        value: f64,
        /// The previous row's value.
        previous: f64,
    },
    /// A scalar parameter is out of its range.
    #[error("{what} is {value:?}; expected {expected}")]
    InvalidParameter {
        /// Which parameter.
        what: &'static str,
        /// The value given.
        value: f64,
        /// What was expected.
        expected: &'static str,
    },
    /// The stage-storage relation cannot hold the requested storage.
    #[error(
        "the pond cannot hold {storage_ft3:?} ft3: its storage stops rising above the last table row; give a table whose volume keeps rising at the top"
    )]
    StorageBoundUnreachable {
        /// The storage asked for, ft3.
        storage_ft3: f64,
    },
    /// The stage grid would be too long.
    #[error(
        "the routing table would need about {rows} rows (stage {from_ft:?} to {to_ft:?} ft every {step_ft:?} ft), more than the limit of {limit}; use a coarser grid step or check the pond's size against its inflow volume"
    )]
    TooManyRows {
        /// Rows needed (estimate).
        rows: f64,
        /// The row limit, [`MAX_TABLE_ROWS`].
        limit: usize,
        /// Lowest grid stage, ft.
        from_ft: f64,
        /// Highest grid stage, ft.
        to_ft: f64,
        /// Grid step, ft.
        step_ft: f64,
    },
    /// `2S/dt + O` does not increase from one grid stage to the next.
    #[error(
        "the storage-indication value 2S/dt + O does not rise between stage {previous_ft:?} ft and {stage_ft:?} ft (storage {storage_ft3:?} ft3, outflow {outflow_cfs:?} cfs); storage or outflow must increase with stage there"
    )]
    IndicatorNotIncreasing {
        /// The stage at which it stops rising, ft.
        stage_ft: f64,
        /// The grid stage below it, ft.
        previous_ft: f64,
        /// Storage at `stage_ft`, ft3.
        storage_ft3: f64,
        /// Outflow at `stage_ft`, cfs.
        outflow_cfs: f64,
    },
}

/// How storage is interpolated between and beyond the table rows.
#[derive(Debug, Clone, PartialEq)]
enum Shape {
    /// From a stage-area table: `sqrt(area)` linear in stage between rows
    /// (the conic frustum), the last area kept above the last row.
    Area { area_ft2: Vec<f64> },
    /// From a stage-volume table: volume linear between rows, the last
    /// slope extended above the last row.
    Volume,
}

/// Stage-storage relation of a pond: storage (ft3) measured from the
/// lowest stage of its table.
#[derive(Debug, Clone, PartialEq)]
pub struct StageStorage {
    stage_ft: Vec<f64>,
    volume_ft3: Vec<f64>,
    shape: Shape,
}

/// Checks a `(stage, value)` table: at least 2 rows, finite values, stages
/// strictly increasing, values >= 0 and non-decreasing.
fn validate_rows(
    rows: &[(f64, f64)],
    table: &'static str,
    column: &'static str,
) -> Result<(), PondError> {
    if rows.len() < 2 {
        return Err(PondError::TooFewRows {
            table,
            found: rows.len(),
        });
    }
    for (i, &(stage, value)) in rows.iter().enumerate() {
        let row = i + 1;
        if !stage.is_finite() {
            return Err(PondError::NotFinite {
                row,
                column: "stage",
                value: stage,
            });
        }
        if !value.is_finite() {
            return Err(PondError::NotFinite { row, column, value });
        }
        if i > 0 {
            let (prev_stage, _) = rows[i - 1];
            if stage <= prev_stage {
                return Err(PondError::StageNotIncreasing {
                    row,
                    stage,
                    previous: prev_stage,
                });
            }
        }
        if value < 0.0 {
            return Err(PondError::Negative { row, column, value });
        }
        if i > 0 {
            let (_, prev_value) = rows[i - 1];
            if value < prev_value {
                return Err(PondError::Decreasing {
                    row,
                    column,
                    value,
                    previous: prev_value,
                });
            }
        }
    }
    Ok(())
}

/// Volume (ft3) of a frustum between surface areas `a1_ft2` and `a2_ft2`
/// a height `h_ft` apart.
///
/// # Formula
/// `V = (h/3) (A1 + A2 + sqrt(A1 A2))` (frustum of a cone or pyramid,
/// elementary geometry); V ft3, h ft, A ft2.
fn frustum_volume_ft3(h_ft: f64, a1_ft2: f64, a2_ft2: f64) -> f64 {
    h_ft / 3.0 * (a1_ft2 + a2_ft2 + (a1_ft2 * a2_ft2).sqrt())
}

impl StageStorage {
    /// Stage-storage from `(stage ft, surface area ft2)` rows.
    ///
    /// # Formula
    /// Between rows the conic-frustum volume `V = (h/3)(A1 + A2 + sqrt(A1 A2))`
    /// (h the stage difference, ft; A the areas, ft2); within a segment the
    /// same rule to the intermediate stage, with `sqrt(A)` linear in stage.
    /// Above the last row the last area is kept (vertical walls).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative area, or an area smaller than the previous one.
    pub fn from_stage_area(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        validate_rows(rows, "stage-area", "area")?;
        let mut volume_ft3 = Vec::with_capacity(rows.len());
        let mut v = 0.0;
        volume_ft3.push(v);
        for w in rows.windows(2) {
            let ((s1, a1), (s2, a2)) = (w[0], w[1]);
            v += frustum_volume_ft3(s2 - s1, a1, a2);
            volume_ft3.push(v);
        }
        Ok(StageStorage {
            stage_ft: rows.iter().map(|r| r.0).collect(),
            volume_ft3,
            shape: Shape::Area {
                area_ft2: rows.iter().map(|r| r.1).collect(),
            },
        })
    }

    /// Stage-storage from `(stage ft, volume ft3)` rows; volumes are linear
    /// between rows, the last slope is extended above the last row, and
    /// storage is measured from the first row (its volume is subtracted).
    ///
    /// # Errors
    /// Fewer than 2 rows, a non-finite value, stages not strictly
    /// increasing, a negative volume, or a volume smaller than the previous one.
    pub fn from_stage_volume(rows: &[(f64, f64)]) -> Result<Self, PondError> {
        validate_rows(rows, "stage-volume", "volume")?;
        let v0 = rows[0].1;
        Ok(StageStorage {
            stage_ft: rows.iter().map(|r| r.0).collect(),
            volume_ft3: rows.iter().map(|r| r.1 - v0).collect(),
            shape: Shape::Volume,
        })
    }

    /// The lowest stage of the table (ft), where storage is 0.
    pub fn bottom_ft(&self) -> f64 {
        self.stage_ft[0]
    }

    /// `(stage ft, storage ft3)` at each input row, storage measured from
    /// the lowest stage.
    pub fn rows(&self) -> Vec<(f64, f64)> {
        self.stage_ft
            .iter()
            .copied()
            .zip(self.volume_ft3.iter().copied())
            .collect()
    }

    /// Slope dV/dh (ft2) above the last row.
    fn top_slope_ft2(&self) -> f64 {
        let n = self.stage_ft.len();
        match &self.shape {
            Shape::Area { area_ft2 } => area_ft2[n - 1],
            Shape::Volume => {
                (self.volume_ft3[n - 1] - self.volume_ft3[n - 2])
                    / (self.stage_ft[n - 1] - self.stage_ft[n - 2])
            }
        }
    }

    /// Storage (ft3) above the row `k` at a depth `d_ft` above it, inside
    /// segment `k..k+1`.
    fn segment_volume_ft3(&self, k: usize, d_ft: f64) -> f64 {
        let h = self.stage_ft[k + 1] - self.stage_ft[k];
        match &self.shape {
            Shape::Area { area_ft2 } => {
                let a = area_ft2[k].sqrt();
                let b = (area_ft2[k + 1].sqrt() - a) / h;
                // integral of (a + b t)^2 dt from 0 to d, the frustum rule to depth d
                d_ft * (a * a + a * b * d_ft + b * b * d_ft * d_ft / 3.0)
            }
            Shape::Volume => (self.volume_ft3[k + 1] - self.volume_ft3[k]) * (d_ft / h),
        }
    }

    /// Storage (ft3) at `stage_ft`, measured from the lowest stage: 0 at and
    /// below it (and for a NaN stage).
    pub fn volume_ft3(&self, stage_ft: f64) -> f64 {
        let n = self.stage_ft.len();
        if stage_ft.is_nan() || stage_ft <= self.stage_ft[0] {
            return 0.0;
        }
        let k = self.stage_ft.partition_point(|&s| s <= stage_ft);
        if k >= n {
            return self.volume_ft3[n - 1]
                + self.top_slope_ft2() * (stage_ft - self.stage_ft[n - 1]);
        }
        self.volume_ft3[k - 1] + self.segment_volume_ft3(k - 1, stage_ft - self.stage_ft[k - 1])
    }

    /// Surface area dV/dh (ft2) at `stage_ft`: 0 below the lowest stage.
    /// For a stage-area table the frustum interpolation between rows (the
    /// given area at each row, the last area above the last row); for a
    /// stage-volume table the slope of the segment containing the stage
    /// (the segment above at a row).
    pub fn area_at_ft2(&self, stage_ft: f64) -> f64 {
        let n = self.stage_ft.len();
        if stage_ft.is_nan() || stage_ft < self.stage_ft[0] {
            return 0.0;
        }
        let k = self.stage_ft.partition_point(|&s| s <= stage_ft);
        if k >= n {
            return self.top_slope_ft2();
        }
        let j = k - 1;
        let h = self.stage_ft[k] - self.stage_ft[j];
        match &self.shape {
            Shape::Area { area_ft2 } => {
                let a = area_ft2[j].sqrt();
                let b = (area_ft2[k].sqrt() - a) / h;
                let r = a + b * (stage_ft - self.stage_ft[j]);
                r * r
            }
            Shape::Volume => (self.volume_ft3[k] - self.volume_ft3[j]) / h,
        }
    }

    /// The lowest stage (ft) at which storage reaches `volume_ft3`: the
    /// bottom for 0 or less (or NaN), `+inf` when the storage never gets
    /// there (a flat top).
    pub fn stage_for_volume_ft(&self, volume_ft3: f64) -> f64 {
        let n = self.stage_ft.len();
        if volume_ft3.is_nan() || volume_ft3 <= 0.0 {
            return self.stage_ft[0];
        }
        let k = self.volume_ft3.partition_point(|&v| v < volume_ft3);
        if k >= n {
            let slope = self.top_slope_ft2();
            if slope > 0.0 {
                return self.stage_ft[n - 1] + (volume_ft3 - self.volume_ft3[n - 1]) / slope;
            }
            return f64::INFINITY;
        }
        // volume_ft3[k-1] < volume <= volume_ft3[k], k >= 1 because volume_ft3[0] = 0
        let j = k - 1;
        let target = volume_ft3 - self.volume_ft3[j];
        let h = self.stage_ft[k] - self.stage_ft[j];
        match &self.shape {
            Shape::Volume => {
                let dv = self.volume_ft3[k] - self.volume_ft3[j];
                self.stage_ft[j] + h * (target / dv)
            }
            Shape::Area { .. } => {
                // bisection on the monotone segment volume
                let (mut lo, mut hi) = (0.0, h);
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if mid <= lo || mid >= hi {
                        break;
                    }
                    if self.segment_volume_ft3(j, mid) < target {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                self.stage_ft[j] + hi
            }
        }
    }
}

/// Stage-area rows of a basin with a rectangular bottom and uniform side
/// slopes, for concept design.
///
/// Rows from the bottom to the top (`bottom + depth`) at equal spacing of
/// 0.5 ft or finer, the top row exact.
///
/// # Formula
/// `A(h) = (L + 2 z h)(W + 2 z h)`: A ft2, L and W the bottom length and
/// width (ft), z the side slope (horizontal per vertical), h the depth above
/// the bottom (ft) (elementary geometry). Volumes from these rows by the
/// frustum rule of [`StageStorage::from_stage_area`] are within about 0.1 %
/// of the exact prismoid for ordinary basins.
///
/// # Errors
/// A non-finite bottom elevation, a length, width or depth that is not
/// positive, a negative side slope, or a depth so large that more than
/// 100 000 rows would be needed.
pub fn basin_stage_area(
    bottom_elev_ft: f64,
    bottom_length_ft: f64,
    bottom_width_ft: f64,
    side_slope_h_per_v: f64,
    depth_ft: f64,
) -> Result<Vec<(f64, f64)>, PondError> {
    if !bottom_elev_ft.is_finite() {
        return Err(PondError::InvalidParameter {
            what: "the basin bottom elevation",
            value: bottom_elev_ft,
            expected: "a finite number",
        });
    }
    for (what, value) in [
        ("the basin bottom length", bottom_length_ft),
        ("the basin bottom width", bottom_width_ft),
        ("the basin depth", depth_ft),
    ] {
        if !(value.is_finite() && value > 0.0) {
            return Err(PondError::InvalidParameter {
                what,
                value,
                expected: "a positive finite number",
            });
        }
    }
    if !(side_slope_h_per_v.is_finite() && side_slope_h_per_v >= 0.0) {
        return Err(PondError::InvalidParameter {
            what: "the basin side slope",
            value: side_slope_h_per_v,
            expected: "0 or more (horizontal per vertical)",
        });
    }
    let n_f = (depth_ft / BASIN_ROW_STEP_FT).ceil().max(1.0);
    if n_f > MAX_BASIN_ROWS as f64 {
        return Err(PondError::InvalidParameter {
            what: "the basin depth",
            value: depth_ft,
            expected: "at most 50000 ft",
        });
    }
    let n = n_f as usize;
    let z = side_slope_h_per_v;
    let rows = (0..=n)
        .map(|i| {
            let h = if i == n {
                depth_ft
            } else {
                depth_ft * (i as f64 / n as f64)
            };
            let area = (bottom_length_ft + 2.0 * z * h) * (bottom_width_ft + 2.0 * z * h);
            (bottom_elev_ft + h, area)
        })
        .collect();
    Ok(rows)
}

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
const DEEP_GRID_RATIO: f64 = 1e-3;

/// The grid stages above `bottom` (exclusive) up to the first one at or
/// above `end` whose storage reaches `max_storage_ft3`: every `step` ft for
/// the first [`FINE_GRID_ROWS`] rows, then spaced by [`DEEP_GRID_RATIO`] of
/// the depth, so that the number of rows grows with the logarithm of the
/// depth the water can reach, not with the depth itself.
fn grid_stages(
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
    while storage.volume_ft3(h) < max_storage_ft3 {
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
struct Segment {
    indicator_cfs: f64,
    inv_d_indicator: f64,
    stage_ft: f64,
    d_stage_ft: f64,
    storage_ft3: f64,
    d_storage_ft3: f64,
    outflow_cfs: f64,
    d_outflow_cfs: f64,
}

/// Stage-storage-discharge table of a pond on a fine stage grid, with the
/// storage-indication value `2S/dt + O` for one time step.
#[derive(Debug, Clone, PartialEq)]
pub struct PondTable {
    stage_ft: Vec<f64>,
    storage_ft3: Vec<f64>,
    outflow_cfs: Vec<f64>,
    indicator_cfs: Vec<f64>,
    segments: Vec<Segment>,
    dt_s: f64,
    lowest_outlet_ft: Option<f64>,
    lowest_orifice: Option<(f64, f64)>,
    top_ft: Option<f64>,
}

fn check_positive(what: &'static str, value: f64) -> Result<(), PondError> {
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
fn lowest_outlet_ft(outlets: &[Outlet]) -> Option<f64> {
    outlets
        .iter()
        .map(Outlet::lowest_ft)
        .filter(|s| s.is_finite())
        .min_by(f64::total_cmp)
}

/// `(invert ft, crown ft)` of the orifice with the lowest invert, if any.
fn lowest_orifice_ft(outlets: &[Outlet]) -> Option<(f64, f64)> {
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
            if !e.top_ft.is_finite() {
                return Err(PondError::InvalidParameter {
                    what: "the embankment top (ft)",
                    value: e.top_ft,
                    expected: "a finite number",
                });
            }
            check_positive("the embankment crest length (ft)", e.crest_length_ft)?;
            check_positive("the embankment weir coefficient", e.coefficient)?;
        }
        let bottom = storage.bottom_ft();
        let step = grid_step_ft;
        let s_bound = storage.stage_for_volume_ft(max_storage_ft3);
        if !s_bound.is_finite() {
            return Err(PondError::StorageBoundUnreachable {
                storage_ft3: max_storage_ft3,
            });
        }
        // The grid reaches as far as the water can go and no further: an
        // embankment top above the storage bound is never reached, so it
        // does not lengthen the table.
        let end = s_bound.max(bottom + step);
        let lattice = grid_stages(storage, bottom, step, end, max_storage_ft3)?;
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
            .chain(embankment.map(|e| e.top_ft))
            .collect();
        let refined = starts.iter().flat_map(|&h0| {
            (1..=LOW_HEAD_LEVELS).map(move |j| h0 + step * 0.5f64.powf(f64::from(j) / 2.0))
        });
        let mut must: Vec<f64> = outlets
            .iter()
            .flat_map(|o| o.key_stages_ft())
            .chain(storage.stage_ft.iter().copied())
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
        for (i, &h) in stage_ft.iter().enumerate() {
            let s = storage.volume_ft3(h);
            let o = total_flow_cfs(outlets, h) + embankment.map_or(0.0, |e| e.flow_cfs(h));
            let ind = 2.0 * s / dt_s + o;
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
            })
            .collect();

        Ok(PondTable {
            stage_ft,
            storage_ft3,
            outflow_cfs,
            indicator_cfs,
            segments,
            dt_s,
            lowest_outlet_ft: lowest_outlet_ft(outlets),
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
    fn state_at_stage(&self, stage_ft: f64) -> (usize, f64, f64, f64) {
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
fn finite_or_zero(q: f64) -> f64 {
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
fn route_each(
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
    /// `(inflow volume - outflow volume - change in storage) / inflow volume`;
    /// 0 when there is no inflow.
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

/// What [`max_first`] stands for when a series has no value that is not NaN.
const NO_PEAK: (f64, usize) = (f64::NEG_INFINITY, 0);

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
fn trapezoid_volume_ft3(q: impl Iterator<Item = f64>, dt_s: f64) -> f64 {
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
/// mass-balance error `(V_in - V_out - (S_end - S_start)) / V_in`.
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
struct OutletFacts {
    lowest_outlet_ft: Option<f64>,
    lowest_orifice: Option<(f64, f64)>,
}

/// The summary; `start` is `(stage ft, storage ft3, outflow cfs)` used only
/// when the series is empty.
fn summarize_core(
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
    let mass_balance_error = if inflow_volume != 0.0 && inflow_volume.is_finite() {
        (inflow_volume - outflow_volume - (end_storage - start_storage)) / inflow_volume
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
        mass_balance_error,
        drain_time_h,
        lowest_outlet_ft,
        never_filled_above_lowest_outlet: lowest_outlet_ft.is_some_and(|l| peak_stage <= l),
        lowest_orifice_crown_ft: crown,
        lowest_orifice_submerged: crown.map(|c| peak_stage >= c),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use proptest::prelude::*;

    const STEP_FT: f64 = 0.01;

    fn example_area_rows() -> Vec<(f64, f64)> {
        vec![
            (100.0, 4000.0),
            (102.0, 6200.0),
            (104.0, 8800.0),
            (106.0, 11800.0),
        ]
    }

    /// Ponce's linear reservoir (K = 2 h) as a table: stage numerically
    /// equal to O (cfs), S = K O (ft3), and a rating outlet O = stage.
    fn linear_reservoir(k_s: f64, max_o: usize) -> (StageStorage, Vec<Outlet>) {
        let storage_rows: Vec<(f64, f64)> =
            (0..=max_o).map(|o| (o as f64, k_s * o as f64)).collect();
        let rating: Vec<(f64, f64)> = (0..=max_o).map(|o| (o as f64, o as f64)).collect();
        (
            StageStorage::from_stage_volume(&storage_rows).unwrap(),
            vec![Outlet::Rating { table: rating }],
        )
    }

    fn trapezoid(q: &[f64], dt_s: f64) -> f64 {
        q.windows(2).map(|w| 0.5 * (w[0] + w[1])).sum::<f64>() * dt_s
    }

    #[test]
    fn linear_reservoir_routing_reproduces_the_ponce_example() {
        // Ponce (1989) linear reservoir example (onlinecalc.sdsu.edu): K = 2 h, dt = 1 h,
        // steady start at O = 100, inflow held at 100 after hour 15.
        let (storage, outlets) = linear_reservoir(2.0 * 3600.0, 2000);
        let mut inflow = vec![
            100.0, 150.0, 250.0, 400.0, 800.0, 1000.0, 900.0, 700.0, 550.0, 400.0, 300.0, 250.0,
            200.0, 150.0, 120.0, 100.0,
        ];
        inflow.resize(26, 100.0);
        let dt = 3600.0;
        let bound = storage.volume_ft3(100.0) + trapezoid(&inflow, dt);
        let table = PondTable::build(&storage, &outlets, None, dt, 1.0, bound).unwrap();
        let routed = route(&table, &inflow, 100.0);
        let expected = [
            (0, 100.0),
            (1, 110.0),
            (2, 146.0),
            (3, 217.6),
            (4, 370.56),
            (5, 582.336),
            (6, 729.402),
            (7, 757.641),
            (8, 704.585),
            (9, 612.751),
            (10, 507.65),
            (11, 414.59),
            (12, 338.754),
            (13, 273.252),
            (14, 217.951),
            (15, 174.771),
            (16, 144.863),
            (20, 105.814),
            (25, 100.452),
        ];
        for (h, o) in expected {
            // published to 3 decimals: half a unit of the last place
            assert!(
                (routed.outflow_cfs[h] - o).abs() <= 5e-4,
                "hour {h}: {} vs {o}",
                routed.outflow_cfs[h]
            );
        }
        // storage-indication column 2S/dt + O of the same example
        for (h, x) in [
            (0, 500.0),
            (1, 550.0),
            (2, 730.0),
            (3, 1088.0),
            (4, 1852.8),
            (5, 2911.68),
        ] {
            let ind = 2.0 * routed.storage_ft3[h] / dt + routed.outflow_cfs[h];
            assert!((ind - x).abs() <= 5e-4, "hour {h}: {ind} vs {x}");
        }
        let summary = summarize(&table, &inflow, &routed, dt, 100.0, None);
        assert!((summary.peak_outflow_cfs - 757.641).abs() <= 5e-4);
        assert_eq!(summary.peak_time_h, 7.0);
        assert!(summary.mass_balance_error.abs() < 1e-12);
    }

    #[test]
    fn stage_area_volume_follows_the_conic_frustum_rule() {
        // Frustum volume V = (h/3)(A1 + A2 + sqrt(A1 A2)), elementary geometry (from memory):
        // 100 -> 102 ft, 4000 and 6200 ft2: (2/3)(4000 + 6200 + 4979.9598) = 10119.9732 ft3.
        let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        assert_relative_eq!(s.volume_ft3(102.0), 10_119.973_226, max_relative = 1e-10);
        // half way, sqrt(A) linear: sqrt(A) = (63.245553 + 78.740079)/2 = 70.992816, A = 5039.9799 ft2;
        // V = (1/3)(4000 + 5039.9799 + sqrt(4000 * 5039.9799)) = 4509.9866 ft3
        assert_relative_eq!(s.area_at_ft2(101.0), 5_039.979_92, max_relative = 1e-9);
        assert_relative_eq!(s.volume_ft3(101.0), 4_509.986_613, max_relative = 1e-9);
        assert_eq!(s.volume_ft3(100.0), 0.0);
        assert_eq!(s.volume_ft3(95.0), 0.0);
        assert_eq!(s.bottom_ft(), 100.0);
        let rows = s.rows();
        assert_eq!(rows.len(), 4);
        assert_relative_eq!(rows[1].1, 10_119.973_226, max_relative = 1e-10);
    }

    #[test]
    fn stage_area_table_keeps_its_last_area_above_the_last_row() {
        // contract (scenario-format.md, Ponds): a stage_area table keeps its last area
        let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        assert_relative_eq!(
            s.volume_ft3(108.0) - s.volume_ft3(106.0),
            2.0 * 11_800.0,
            max_relative = 1e-12
        );
        assert_eq!(s.area_at_ft2(107.0), 11_800.0);
        assert_eq!(s.area_at_ft2(99.0), 0.0);
    }

    #[test]
    fn stage_volume_table_extends_its_last_slope_and_counts_from_its_first_row() {
        // contract (scenario-format.md, Ponds): a stage_volume table extends its last slope
        let s =
            StageStorage::from_stage_volume(&[(10.0, 50.0), (11.0, 150.0), (12.0, 350.0)]).unwrap();
        assert_eq!(s.rows(), vec![(10.0, 0.0), (11.0, 100.0), (12.0, 300.0)]);
        assert_relative_eq!(s.volume_ft3(10.5), 50.0, max_relative = 1e-12);
        assert_relative_eq!(s.volume_ft3(13.0), 500.0, max_relative = 1e-12);
        assert_eq!(s.area_at_ft2(10.2), 100.0);
        assert_eq!(s.area_at_ft2(12.5), 200.0);
        assert_relative_eq!(s.stage_for_volume_ft(500.0), 13.0, max_relative = 1e-12);
        assert_relative_eq!(s.stage_for_volume_ft(50.0), 10.5, max_relative = 1e-12);
    }

    #[test]
    fn stage_for_volume_inverts_the_frustum_volume() {
        let s = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        for h in [100.3, 101.0, 103.7, 105.99, 110.0] {
            assert_relative_eq!(
                s.stage_for_volume_ft(s.volume_ft3(h)),
                h,
                max_relative = 1e-12
            );
        }
        assert_eq!(s.stage_for_volume_ft(0.0), 100.0);
    }

    #[test]
    fn table_errors_name_the_row_and_what_was_expected() {
        let e = StageStorage::from_stage_area(&[(100.0, 4000.0), (102.0, 5000.0), (101.5, 6000.0)])
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "row 3: stage 101.5 is not above the previous stage 102.0; stages must increase strictly"
        );
        let e = StageStorage::from_stage_area(&[(100.0, 4000.0), (101.0, 4000.0), (101.0, 5000.0)])
            .unwrap_err();
        assert!(matches!(e, PondError::StageNotIncreasing { row: 3, .. }));
        let e = StageStorage::from_stage_area(&[(100.0, 0.0), (101.0, -5.0)]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "row 2: area -5.0 is negative; areas must be 0 or more"
        );
        let e = StageStorage::from_stage_area(&[(100.0, 500.0), (101.0, 400.0)]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "row 2: area 400.0 is less than the previous area 500.0; areas must not decrease as the stage rises"
        );
        let e =
            StageStorage::from_stage_volume(&[(0.0, 0.0), (1.0, 100.0), (2.0, 50.0)]).unwrap_err();
        assert_eq!(
            e,
            PondError::Decreasing {
                row: 3,
                column: "volume",
                value: 50.0,
                previous: 100.0
            }
        );
        let e = StageStorage::from_stage_volume(&[(0.0, -1.0), (1.0, 100.0)]).unwrap_err();
        assert!(matches!(
            e,
            PondError::Negative {
                row: 1,
                column: "volume",
                ..
            }
        ));
        let e = StageStorage::from_stage_volume(&[(0.0, 0.0)]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "the stage-volume table has 1 row(s); it needs at least 2 rows"
        );
        assert!(matches!(
            StageStorage::from_stage_area(&[]),
            Err(PondError::TooFewRows { found: 0, .. })
        ));
        let e = StageStorage::from_stage_volume(&[(0.0, 0.0), (f64::NAN, 1.0)]).unwrap_err();
        assert!(matches!(
            e,
            PondError::NotFinite {
                row: 2,
                column: "stage",
                ..
            }
        ));
    }

    #[test]
    fn basin_rows_follow_the_side_slope_and_reach_the_top() {
        // A(h) = (L + 2 z h)(W + 2 z h), elementary geometry; L = 50, W = 20, z = 3, depth 4.2 ft:
        // top area (50 + 25.2)(20 + 25.2) = 3399.04 ft2.
        let rows = basin_stage_area(100.0, 50.0, 20.0, 3.0, 4.2).unwrap();
        assert_eq!(rows[0], (100.0, 1000.0));
        let top = *rows.last().unwrap();
        assert_eq!(top.0, 104.2);
        assert_relative_eq!(top.1, 3399.04, max_relative = 1e-12);
        assert!(rows.windows(2).all(|w| w[1].0 - w[0].0 <= 0.5 + 1e-12));
        // exact prismoid V = L W d + z (L + W) d^2 + (4/3) z^2 d^3 (elementary geometry, from memory):
        // 4200 + 3704.4 + 889.056 = 8793.456 ft3; the frustum rule on these rows is within 0.1 %.
        let s = StageStorage::from_stage_area(&rows).unwrap();
        let v = s.volume_ft3(104.2);
        assert!((v - 8793.456).abs() / 8793.456 < 1e-3, "{v}");
        assert!(basin_stage_area(100.0, 0.0, 20.0, 3.0, 4.0).is_err());
        assert!(basin_stage_area(100.0, 50.0, 20.0, -1.0, 4.0).is_err());
        assert!(basin_stage_area(f64::NAN, 50.0, 20.0, 3.0, 4.0).is_err());
        assert!(basin_stage_area(100.0, 50.0, 20.0, 3.0, 1e9).is_err());
    }

    fn many_outlets() -> Vec<Outlet> {
        vec![
            Outlet::CircularOrifice {
                invert_ft: 100.37,
                diameter_ft: 0.5,
                cd: 0.61,
            },
            Outlet::RectangularOrifice {
                invert_ft: 101.013,
                width_ft: 1.0,
                height_ft: 0.333,
                cd: 0.6,
            },
            Outlet::SharpCrestedWeir {
                crest_ft: 103.2,
                length_ft: 4.0,
                coefficient: 3.33,
                contractions: 0,
            },
            Outlet::Riser {
                crest_ft: 104.13,
                diameter_ft: 2.0,
                weir_coefficient: 3.33,
                cd: 0.6,
            },
            Outlet::Rating {
                table: vec![(104.5, 0.0), (105.0, 12.0), (106.0, 60.0)],
            },
        ]
    }

    #[test]
    fn grid_contains_every_invert_crest_and_table_row_within_the_step() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = many_outlets();
        let bank = Embankment {
            top_ft: 106.5,
            crest_length_ft: 30.0,
            coefficient: 2.6,
        };
        // the water can reach 106.6 ft, above every key stage
        let reach = storage.volume_ft3(106.6);
        for step in [STEP_FT, 0.003 / 0.3048] {
            let table =
                PondTable::build(&storage, &outlets, Some(&bank), 60.0, step, reach).unwrap();
            let stages: Vec<f64> = table.rows().map(|r| r.0).collect();
            let mut keys: Vec<f64> = outlets.iter().flat_map(Outlet::key_stages_ft).collect();
            keys.extend([100.0, 102.0, 104.0, 106.0, 106.5]);
            for k in keys {
                assert!(stages.contains(&k), "step {step}: stage {k} missing");
            }
            assert!(
                stages
                    .windows(2)
                    .all(|w| w[1] > w[0] && w[1] - w[0] <= step + 1e-9),
                "spacing exceeds {step}"
            );
            // at least one step above the top
            assert!(*stages.last().unwrap() >= 106.5 + step - 1e-9);
            assert_eq!(table.bottom_ft(), 100.0);
            assert_eq!(table.lowest_outlet_ft(), Some(100.37));
            assert_eq!(table.lowest_orifice_ft(), Some((100.37, 100.87)));
        }
    }

    #[test]
    fn grid_reaches_the_storage_bound() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let bound = storage.volume_ft3(109.123);
        let table =
            PondTable::build(&storage, &many_outlets(), None, 60.0, STEP_FT, bound).unwrap();
        let (h, s, _) = table.rows().last().unwrap();
        assert!(s >= bound && h < 109.123 + STEP_FT + 1e-9, "{h} {s}");
        assert_eq!(table.row_count(), table.rows().count());
        assert_eq!(table.indicator_cfs().len(), table.row_count());
    }

    #[test]
    fn table_outflow_is_the_sum_of_outlets_and_embankment() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = many_outlets();
        let bank = Embankment {
            top_ft: 106.0,
            crest_length_ft: 30.0,
            coefficient: 2.6,
        };
        let table = PondTable::build(&storage, &outlets, Some(&bank), 60.0, STEP_FT, 2e5).unwrap();
        for (h, s, o) in table.rows() {
            assert_eq!(o, total_flow_cfs(&outlets, h) + bank.flow_cfs(h));
            assert_eq!(s, storage.volume_ft3(h));
        }
    }

    #[test]
    fn flat_storage_without_outflow_is_rejected_at_its_stage() {
        let storage = StageStorage::from_stage_volume(&[
            (0.0, 0.0),
            (1.0, 100.0),
            (2.0, 100.0),
            (3.0, 200.0),
        ])
        .unwrap();
        let outlets = vec![Outlet::CircularOrifice {
            invert_ft: 5.0,
            diameter_ft: 0.5,
            cd: 0.61,
        }];
        let e = PondTable::build(&storage, &outlets, None, 60.0, STEP_FT, 150.0).unwrap_err();
        match e {
            PondError::IndicatorNotIncreasing {
                stage_ft,
                previous_ft,
                ..
            } => {
                assert_relative_eq!(stage_ft, 1.01, max_relative = 1e-9);
                assert_eq!(previous_ft, 1.0);
            }
            other => panic!("unexpected {other:?}"),
        }
    }

    #[test]
    fn impossible_tables_give_errors_not_panics() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let o = many_outlets();
        // a step of 1e-7 ft: the fine grid stops after FINE_GRID_ROWS rows
        // and the spacing then grows with depth, so the table stays bounded
        let t = PondTable::build(&storage, &o, None, 60.0, 1e-7, 1e5).unwrap();
        assert!(t.row_count() < FINE_GRID_ROWS + 20_000, "{}", t.row_count());
        let (_, s_last, _) = t.rows().last().unwrap();
        assert!(s_last >= 1e5);
        assert!(matches!(
            PondTable::build(&storage, &o, None, 0.0, STEP_FT, 1e5),
            Err(PondError::InvalidParameter { .. })
        ));
        assert!(matches!(
            PondTable::build(&storage, &o, None, 60.0, f64::NAN, 1e5),
            Err(PondError::InvalidParameter { .. })
        ));
        assert!(matches!(
            PondTable::build(&storage, &o, None, 60.0, STEP_FT, f64::INFINITY),
            Err(PondError::InvalidParameter { .. })
        ));
        let flat =
            StageStorage::from_stage_volume(&[(0.0, 0.0), (1.0, 100.0), (2.0, 100.0)]).unwrap();
        assert!(matches!(
            PondTable::build(&flat, &o, None, 60.0, STEP_FT, 200.0),
            Err(PondError::StorageBoundUnreachable { .. })
        ));
        let bad_bank = Embankment {
            top_ft: 106.0,
            crest_length_ft: 0.0,
            coefficient: 2.6,
        };
        assert!(PondTable::build(&storage, &o, Some(&bad_bank), 60.0, STEP_FT, 1e5).is_err());
    }

    #[test]
    fn a_tall_top_does_not_lengthen_the_table() {
        // common practice, no published source: the table need reach only
        // as high as the water can go. A top typed as 10310.97 ft for a pond
        // near 103 ft gives the same table as a top of 107 ft.
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let o = many_outlets();
        let bound = storage.volume_ft3(105.0);
        let bank = |top_ft| Embankment {
            top_ft,
            crest_length_ft: 30.0,
            coefficient: 2.6,
        };
        let low = PondTable::build(&storage, &o, Some(&bank(107.0)), 60.0, STEP_FT, bound).unwrap();
        let tall =
            PondTable::build(&storage, &o, Some(&bank(10_310.97)), 60.0, STEP_FT, bound).unwrap();
        assert_eq!(low.row_count(), tall.row_count());
        assert!(tall.row_count() < 700, "{}", tall.row_count());
        // and when the water could reach such a top, the rows grow with the
        // logarithm of the depth, not with the depth
        let deep = storage.volume_ft3(10_400.0);
        let t =
            PondTable::build(&storage, &o, Some(&bank(10_310.97)), 60.0, STEP_FT, deep).unwrap();
        // 50 000 rows to 500 ft of depth, then ln(10 300 / 500) / ln(1.001) = 3027 more
        assert!(t.row_count() < FINE_GRID_ROWS + 3_200, "{}", t.row_count());
        let top_row = t.rows().map(|r| r.0).find(|&h| h == 10_310.97);
        assert_eq!(top_row, Some(10_310.97));
    }

    #[test]
    fn areas_typed_in_acres_are_routed_on_a_bounded_table() {
        // common practice, no published source: a stage-area table in acres
        // (0.5 and 1.2 "ft2") under a 100-cfs, 2-hour inflow: the orifice
        // passes 100 cfs only about 10 800 ft up (orifice equation, Bedient,
        // Huber & Vieux ch. 4), so the table must reach that far, in bounded
        // rows. The pond holds next to nothing, so the outflow is the inflow;
        // the step is far above 2 dS/dO, and the mass balance is off by more
        // than 0.1 %, which the analysis warns about.
        let storage = StageStorage::from_stage_area(&[(100.0, 0.5), (106.0, 1.2)]).unwrap();
        let o = vec![Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 0.5,
            cd: 0.61,
        }];
        let dt = 300.0;
        let inflow: Vec<f64> = (0..=48).map(|k| if k < 24 { 100.0 } else { 0.0 }).collect();
        let bound = trapezoid(&inflow, dt) * 1.02 + 1.0;
        let table = PondTable::build(&storage, &o, None, dt, STEP_FT, bound).unwrap();
        assert!(
            table.row_count() < FINE_GRID_ROWS + 20_000,
            "{}",
            table.row_count()
        );
        let routed = route(&table, &inflow, 100.0);
        let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
        assert!(
            (s.peak_outflow_cfs - 100.0).abs() < 5.0 && s.peak_stage_ft > 1000.0,
            "{s:?}"
        );
        assert!(
            s.mass_balance_error.is_finite() && s.mass_balance_error.abs() > 0.001,
            "{}",
            s.mass_balance_error
        );
    }

    #[test]
    fn drain_time_counts_from_the_peak_until_one_percent_of_the_rise_remains() {
        // Ponce (1989) linear reservoir (onlinecalc.sdsu.edu): with K = 2 h and dt = 1 h and no inflow,
        // storage falls by C2 = (2 - dt/K)/(2 + dt/K) = 0.6 each hour. A pulse [0, 100, 0, ...] from empty
        // peaks at hour 2 (O = 32: x1 = 100 -> O1 = 20; x2 = 100 + 100 - 40 = 160 -> O2 = 32);
        // 0.6^9 = 0.01008 >= 0.01 and 0.6^10 = 0.00605 < 0.01, so the drain time is 10 h
        // (drain-time rule of the scenario-format contract).
        let (storage, outlets) = linear_reservoir(7200.0, 200);
        let mut inflow = vec![0.0, 100.0];
        inflow.resize(30, 0.0);
        let dt = 3600.0;
        let table =
            PondTable::build(&storage, &outlets, None, dt, 1.0, trapezoid(&inflow, dt)).unwrap();
        let routed = route(&table, &inflow, 0.0);
        assert_relative_eq!(routed.outflow_cfs[1], 20.0, max_relative = 1e-12);
        assert_relative_eq!(routed.outflow_cfs[2], 32.0, max_relative = 1e-12);
        assert_relative_eq!(routed.outflow_cfs[3], 19.2, max_relative = 1e-12);
        let s = summarize(&table, &inflow, &routed, dt, 0.0, None);
        assert_eq!(s.peak_stage_time_h, 2.0);
        assert_eq!(s.drain_time_h, Some(10.0));
        // cut before it drains: no drain time
        let short = &inflow[..11];
        let r = route(&table, short, 0.0);
        assert_eq!(
            summarize(&table, short, &r, dt, 0.0, None).drain_time_h,
            None
        );
    }

    #[test]
    fn embankment_weir_engages_above_the_top_and_overtopping_is_flagged() {
        // Broad-crested weir Q = C L H^1.5 (from memory) over the top, plus the orifice equation
        // (Bedient, Huber & Vieux ch.4): at 104.5 ft, orifice D = 0.25 ft, h = 4.5 ft:
        // 0.61 * 0.04908739 * sqrt(2*32.174*4.375) = 0.61 * 0.04908739 * 16.778632 = 0.502408 cfs;
        // weir 2.6 * 20 * 0.5^1.5 = 18.384776 cfs; total 18.887184 cfs.
        let storage = StageStorage::from_stage_area(&[(100.0, 1000.0), (104.0, 2000.0)]).unwrap();
        let outlets = vec![Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 0.25,
            cd: 0.61,
        }];
        let bank = Embankment {
            top_ft: 104.0,
            crest_length_ft: 20.0,
            coefficient: 2.6,
        };
        let dt = 60.0;
        // triangle, 50 cfs peak at 1 h, back to 0 at 2 h, then 4 h of nothing
        let inflow: Vec<f64> = (0..=360)
            .map(|k| {
                let t = k as f64 / 60.0;
                if t < 1.0 {
                    50.0 * t
                } else {
                    (50.0 * (2.0 - t)).max(0.0)
                }
            })
            .collect();
        let bound = trapezoid(&inflow, dt);
        let table = PondTable::build(&storage, &outlets, Some(&bank), dt, STEP_FT, bound).unwrap();
        assert_relative_eq!(
            table.outflow_at_stage_cfs(104.5),
            18.887_184,
            max_relative = 1e-6
        );
        let routed = route(&table, &inflow, 100.0);
        let s = summarize(&table, &inflow, &routed, dt, 100.0, Some(104.0));
        assert!(s.overtopped);
        assert!(s.peak_stage_ft > 104.0);
        assert!(s.freeboard_ft.unwrap() < 0.0);
        assert!(s.peak_outflow_cfs > table.outflow_at_stage_cfs(104.0));
        assert_eq!(s.lowest_orifice_submerged, Some(true));
        assert!(!s.never_filled_above_lowest_outlet);
        assert!(s.mass_balance_error.abs() < 1e-9);
        // the same pond with a fiftieth of the inflow (3600 ft3; 5885 ft3 below the top) stays below it
        let small: Vec<f64> = inflow.iter().map(|q| q * 0.02).collect();
        let r = route(&table, &small, 100.0);
        let s = summarize(&table, &small, &r, dt, 100.0, Some(104.0));
        assert!(!s.overtopped && s.freeboard_ft.unwrap() > 0.0);
    }

    #[test]
    fn a_pond_that_stays_below_its_outlets_is_reported() {
        // storage-indication, Bedient, Huber & Vieux eq. 4-13: with no outflow all inflow is stored
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = vec![Outlet::CircularOrifice {
            invert_ft: 101.0,
            diameter_ft: 0.5,
            cd: 0.61,
        }];
        let inflow = vec![0.0, 1.0, 2.0, 1.0, 0.0, 0.0];
        let dt = 60.0;
        let table = PondTable::build(
            &storage,
            &outlets,
            None,
            dt,
            STEP_FT,
            trapezoid(&inflow, dt),
        )
        .unwrap();
        let routed = route(&table, &inflow, 100.0);
        let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
        assert!(s.never_filled_above_lowest_outlet);
        assert_eq!(s.lowest_orifice_submerged, Some(false));
        assert_eq!(s.peak_outflow_cfs, 0.0);
        // all inflow stays: 240 ft3 (trapezoid of 0,1,2,1,0 cfs at 60 s)
        assert_relative_eq!(s.end_storage_ft3, 240.0, max_relative = 1e-9);
        assert_eq!(s.drain_time_h, None);
        assert!(s.mass_balance_error.abs() < 1e-12);
    }

    #[test]
    fn routing_past_the_table_top_extrapolates_without_failing() {
        // storage-indication, Bedient, Huber & Vieux eq. 4-13, continued on the last table segment
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = vec![Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 0.5,
            cd: 0.61,
        }];
        let dt = 300.0;
        // bound far too small on purpose: the table stops one step above the bottom
        let table = PondTable::build(&storage, &outlets, None, dt, STEP_FT, 0.0).unwrap();
        let inflow = vec![0.0, 50.0, 100.0, 50.0, 0.0, 0.0, 0.0];
        let routed = route(&table, &inflow, 100.0);
        let last_row = table.rows().last().unwrap().0;
        assert!(routed.stage_ft.iter().any(|&h| h > last_row));
        assert!(
            routed
                .outflow_cfs
                .iter()
                .all(|q| q.is_finite() && *q >= 0.0)
        );
        let s = summarize(&table, &inflow, &routed, dt, 100.0, None);
        assert!(s.mass_balance_error.abs() < 1e-9);
    }

    #[test]
    fn small_heads_over_an_outlet_are_not_overstated_by_the_grid() {
        // Accuracy of the table, not a published value: the interpolated
        // outflow a few thousandths of a foot over an orifice invert and a
        // weir crest against the outlet equations themselves (circular
        // orifice and sharp-crested weir forms of the scenario contract).
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = vec![
            Outlet::CircularOrifice {
                invert_ft: 100.0,
                diameter_ft: 5.0 / 12.0,
                cd: 0.61,
            },
            Outlet::SharpCrestedWeir {
                crest_ft: 103.0,
                length_ft: 4.0,
                coefficient: 3.33,
                contractions: 0,
            },
        ];
        let table = PondTable::build(&storage, &outlets, None, 300.0, STEP_FT, 200_000.0).unwrap();
        for (h0, over) in [
            (100.0, 0.0019),
            (100.0, 0.0041),
            (103.0, 0.0007),
            (103.0, 0.0033),
        ] {
            let h = h0 + over;
            let exact = total_flow_cfs(&outlets, h) - total_flow_cfs(&outlets, h0);
            let (_, _, _, o) = table.state_at_stage(h);
            let from_table = o - table.state_at_stage(h0).3;
            assert!(
                ((from_table - exact) / exact).abs() < 0.05,
                "{over} ft over {h0}: table {from_table}, equation {exact}"
            );
        }
    }

    #[test]
    fn route_into_reuses_its_buffers_and_matches_route() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = many_outlets();
        let dt = 60.0;
        let inflow: Vec<f64> = (0..500)
            .map(|k| 20.0 * (k as f64 / 80.0).sin().abs())
            .collect();
        let table = PondTable::build(
            &storage,
            &outlets,
            None,
            dt,
            STEP_FT,
            trapezoid(&inflow, dt),
        )
        .unwrap();
        let expected = route(&table, &inflow, 100.0);
        let mut out = Routed::default();
        route_into(&table, &inflow, 100.0, &mut out);
        let ptrs = (
            out.outflow_cfs.as_ptr(),
            out.stage_ft.as_ptr(),
            out.storage_ft3.as_ptr(),
        );
        route_into(&table, &inflow, 100.0, &mut out);
        assert_eq!(out, expected);
        assert_eq!(
            ptrs,
            (
                out.outflow_cfs.as_ptr(),
                out.stage_ft.as_ptr(),
                out.storage_ft3.as_ptr()
            )
        );
        route_into(&table, &[], 100.0, &mut out);
        assert!(
            out.outflow_cfs.is_empty() && out.stage_ft.is_empty() && out.storage_ft3.is_empty()
        );
        // The record form gives the same outflow and stage, and the storage
        // at both ends (same storage-indication step, BHV eq. 4-13).
        let mut q = Vec::new();
        let mut h = inflow.clone();
        let (s_first, s_last) = route_stage_in_place(&table, &mut h, 100.0, &mut q);
        assert_eq!(q, expected.outflow_cfs);
        assert_eq!(h, expected.stage_ft);
        assert_eq!(Some(&s_first), expected.storage_ft3.first());
        assert_eq!(Some(&s_last), expected.storage_ft3.last());
        assert_eq!(
            route_stage_in_place(&table, &mut [], 100.0, &mut q),
            (0.0, 0.0)
        );
        assert!(q.is_empty());
    }

    #[test]
    fn a_pond_started_above_its_outlet_drains_with_no_inflow() {
        // storage-indication, Bedient, Huber & Vieux eq. 4-13; drain-time and mass-balance rules of
        // the scenario-format contract (nothing to drain above the starting storage: 0 h)
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = vec![Outlet::CircularOrifice {
            invert_ft: 100.0,
            diameter_ft: 0.5,
            cd: 0.61,
        }];
        let dt = 300.0;
        let start = 102.0;
        let table = PondTable::build(
            &storage,
            &outlets,
            None,
            dt,
            STEP_FT,
            storage.volume_ft3(start),
        )
        .unwrap();
        let inflow = vec![0.0; 200];
        let routed = route(&table, &inflow, start);
        assert_eq!(routed.stage_ft[0], start);
        assert!(routed.outflow_cfs[0] > 0.0);
        assert!(routed.stage_ft.windows(2).all(|w| w[1] <= w[0]));
        let s = summarize(&table, &inflow, &routed, dt, start, None);
        assert_eq!(s.mass_balance_error, 0.0);
        assert_eq!(s.drain_time_h, Some(0.0));
        assert_eq!(s.peak_stage_ft, start);
        // start below the bottom is held at the bottom
        let r = route(&table, &[0.0, 0.0], 90.0);
        assert_eq!(r.stage_ft, vec![100.0, 100.0]);
    }

    #[test]
    fn stage_for_storage_interpolates_the_table() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let table = PondTable::build(&storage, &many_outlets(), None, 60.0, STEP_FT, 5e4).unwrap();
        for h in [100.0, 100.005, 101.37, 104.5] {
            let s = table.storage_at_stage_ft3(h);
            assert_relative_eq!(table.stage_for_storage_ft(s), h, max_relative = 1e-12);
        }
        assert_eq!(table.stage_for_storage_ft(-5.0), 100.0);
        assert_eq!(table.stage_for_storage_ft(f64::NAN), 100.0);
    }

    #[test]
    fn a_larger_orifice_can_lower_the_peak_outflow_when_a_weir_sits_above_it() {
        // Storage-indication (Bedient, Huber & Vieux eq. 4-13). Found by the property tests and
        // confirmed by an independent RK4 solution of dS/dt = I - O(S) at 0.5 s (computed, no
        // published source): 0.989673 cfs for D = 0.05 ft against 0.989525 cfs for D = 0.13 ft.
        // The larger orifice keeps the pond lower, where the weir's dO/dS is smaller, so the
        // outflow peaks later on the falling limb and lower. Peak stage still falls.
        let storage = StageStorage::from_stage_area(&[(100.0, 2000.0), (100.5, 2000.0)]).unwrap();
        let tp_s = 1.429_030_855_964_026 * 3600.0;
        let dt = 5.0;
        let inflow: Vec<f64> = (0..(4.0 * 3600.0 / dt) as usize)
            .map(|k| {
                let r = k as f64 * dt / tp_s;
                r * (1.0 - r).exp()
            })
            .collect();
        let run = |d: f64| {
            let o = outlets_for(100.0, d, Some((100.33, 1.0, 0)));
            let t = PondTable::build(&storage, &o, None, dt, 0.001, 1e5).unwrap();
            let r = route(&t, &inflow, 100.0);
            summarize(&t, &inflow, &r, dt, 100.0, None)
        };
        let (small, large) = (run(0.05), run(0.13));
        assert!(
            (small.peak_outflow_cfs - 0.989_673).abs() < 2e-6,
            "{}",
            small.peak_outflow_cfs
        );
        assert!(
            (large.peak_outflow_cfs - 0.989_525).abs() < 2e-6,
            "{}",
            large.peak_outflow_cfs
        );
        assert!(large.peak_outflow_cfs < small.peak_outflow_cfs);
        assert!(large.peak_stage_ft < small.peak_stage_ft);
        assert!(large.peak_time_h > small.peak_time_h);
    }

    #[test]
    fn a_series_summary_without_the_table_agrees_with_the_table_summary() {
        let storage = StageStorage::from_stage_area(&example_area_rows()).unwrap();
        let outlets = many_outlets();
        let dt = 60.0;
        let inflow: Vec<f64> = (0..400)
            .map(|k| 30.0 * (k as f64 / 130.0).sin().max(0.0))
            .collect();
        let table = PondTable::build(
            &storage,
            &outlets,
            None,
            dt,
            STEP_FT,
            trapezoid(&inflow, dt),
        )
        .unwrap();
        let routed = route(&table, &inflow, 100.0);
        let a = summarize(&table, &inflow, &routed, dt, 100.0, Some(106.0));
        let b = summarize_series(&inflow, &routed, dt, 100.0, Some(106.0), &outlets);
        assert_eq!(a, b);
        let empty = summarize_series(&[], &Routed::default(), dt, 101.0, None, &outlets);
        assert_eq!(empty.peak_stage_ft, 101.0);
        assert_eq!(empty.mass_balance_error, 0.0);
    }

    // ---- property tests -------------------------------------------------

    /// Random stage-area pond, bottom at 100 ft, areas 2000 ft2 and up.
    fn pond_rows() -> impl Strategy<Value = Vec<(f64, f64)>> {
        (
            2000.0..20000.0f64,
            prop::collection::vec((0.5..3.0f64, 0.0..5000.0f64), 1..5),
        )
            .prop_map(|(a0, steps)| {
                let mut rows = vec![(100.0, a0)];
                let (mut s, mut a) = (100.0, a0);
                for (ds, da) in steps {
                    s += ds;
                    a += da;
                    rows.push((s, a));
                }
                rows
            })
    }

    /// Single-peaked inflow `qp (t/tp)^m exp(m (1 - t/tp))` (cfs), 0 after 10 tp.
    #[derive(Debug, Clone, Copy)]
    struct Peak {
        qp_cfs: f64,
        tp_h: f64,
        m: f64,
    }

    fn peak() -> impl Strategy<Value = Peak> {
        (1.0..30.0f64, 0.25..2.0f64, 1.0..5.0f64).prop_map(|(qp_cfs, tp_h, m)| Peak {
            qp_cfs,
            tp_h,
            m,
        })
    }

    fn sample(p: Peak, dt_s: f64) -> Vec<f64> {
        let end_s = 12.0 * p.tp_h * 3600.0;
        let n = (end_s / dt_s).ceil() as usize + 1;
        (0..n)
            .map(|k| {
                let r = k as f64 * dt_s / (p.tp_h * 3600.0);
                if r >= 10.0 {
                    0.0
                } else {
                    p.qp_cfs * r.powf(p.m) * (p.m * (1.0 - r)).exp()
                }
            })
            .collect()
    }

    /// `(height above the crown ft, length ft, end contractions)` of an optional weir.
    type Weir = Option<(f64, f64, u8)>;

    fn weir() -> impl Strategy<Value = Weir> {
        prop::option::of((0.2..3.0f64, 1.0..10.0f64, 0u8..=2))
    }

    /// An orifice and, optionally, a weir given as `(crest ft, length ft, contractions)`.
    fn outlets_for(invert_ft: f64, diameter_ft: f64, weir: Option<(f64, f64, u8)>) -> Vec<Outlet> {
        let mut v = vec![Outlet::CircularOrifice {
            invert_ft,
            diameter_ft,
            cd: 0.61,
        }];
        if let Some((crest_ft, length_ft, contractions)) = weir {
            v.push(Outlet::SharpCrestedWeir {
                crest_ft,
                length_ft,
                coefficient: 3.33,
                contractions,
            });
        }
        v
    }

    /// Largest dt (s) with `2 dS/dt >= dO` on every grid segment.
    fn largest_stable_dt_s(table: &PondTable) -> f64 {
        let rows: Vec<_> = table.rows().collect();
        rows.windows(2)
            .filter(|w| w[1].2 > w[0].2)
            .map(|w| 2.0 * (w[1].1 - w[0].1) / (w[1].2 - w[0].2))
            .fold(f64::INFINITY, f64::min)
    }

    fn condition_holds(table: &PondTable, dt_s: f64) -> bool {
        let rows: Vec<_> = table.rows().collect();
        rows.windows(2)
            .all(|w| 2.0 * (w[1].1 - w[0].1) / dt_s >= w[1].2 - w[0].2)
    }

    /// Builds the pond at a step no larger than 120 s and no larger than
    /// `2 dS/dO` anywhere in its table (so the storage-indication recursion
    /// is monotone and cannot overshoot the inflow).
    fn stable_build(
        storage: &StageStorage,
        outlet_sets: &[&[Outlet]],
        p: Peak,
    ) -> Option<(f64, Vec<f64>, Vec<PondTable>)> {
        // bound: the inflow volume sampled at 10 s, with a margin
        let bound = 1.05 * trapezoid(&sample(p, 10.0), 10.0);
        let mut dt = 120.0f64;
        for o in outlet_sets {
            let t = PondTable::build(storage, o, None, 1.0, STEP_FT, bound).ok()?;
            dt = dt.min(largest_stable_dt_s(&t) * (1.0 - 1e-9));
        }
        if dt < 1.0 {
            return None;
        }
        let inflow = sample(p, dt);
        let bound = bound.max(trapezoid(&inflow, dt));
        let tables = outlet_sets
            .iter()
            .map(|o| PondTable::build(storage, o, None, dt, STEP_FT, bound).ok())
            .collect::<Option<Vec<_>>>()?;
        Some((dt, inflow, tables))
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        #[test]
        fn routed_ponds_attenuate_stay_physical_and_conserve_mass(
            rows in pond_rows(),
            invert_steps in 0u32..30,
            diameter_steps in 5u32..50,
            w in weir(),
            p in peak(),
        ) {
            // Storage-indication, Bedient, Huber & Vieux eq. 4-13: with dt <= 2 dS/dO everywhere,
            // 2S/dt - O never decreases with stage, so O_{n+1} <= max I whenever O_0 <= max I
            // (the outflow peak never exceeds the inflow peak).
            let storage = StageStorage::from_stage_area(&rows).unwrap();
            let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
            let d = f64::from(diameter_steps) * STEP_FT;
            let outlets = outlets_for(invert, d, w.map(|(above, l, n)| (invert + d + above, l, n)));
            let built = stable_build(&storage, &[&outlets], p);
            prop_assume!(built.is_some());
            let (dt, inflow, tables) = built.unwrap();
            let table = &tables[0];
            prop_assert!(condition_holds(table, dt));
            let routed = route(table, &inflow, 100.0);
            let s = summarize(table, &inflow, &routed, dt, 100.0, None);
            prop_assert!(s.peak_inflow_cfs > 0.0);
            // rounding only
            prop_assert!(s.peak_outflow_cfs <= s.peak_inflow_cfs * (1.0 + 1e-12),
                "{} > {}", s.peak_outflow_cfs, s.peak_inflow_cfs);
            prop_assert!(routed.stage_ft.iter().all(|&h| h >= 100.0));
            prop_assert!(routed.storage_ft3.iter().all(|&v| v >= 0.0));
            prop_assert!(routed.outflow_cfs.iter().all(|&q| q >= 0.0 && q.is_finite()));
            prop_assert!(s.mass_balance_error.abs() < 1e-3, "mass balance {}", s.mass_balance_error);
        }

        #[test]
        fn a_larger_orifice_never_raises_the_peak_stage(
            rows in pond_rows(),
            invert_steps in 0u32..30,
            diameter_steps in 5u32..40,
            extra_steps in 1u32..30,
            w in weir(),
            p in peak(),
        ) {
            // Storage-indication (Bedient, Huber & Vieux eq. 4-13) comparison: with the same pond,
            // inflow and dt (<= 2 dS/dO for both), more outflow at every stage gives a lower or
            // equal stage at every step. Diameters and invert are whole multiples of the grid
            // step so both tables share one stage grid (up to rounding, hence 1e-9).
            let storage = StageStorage::from_stage_area(&rows).unwrap();
            let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
            let d1 = f64::from(diameter_steps) * STEP_FT;
            let d2 = f64::from(diameter_steps + extra_steps) * STEP_FT;
            let crest = w.map(|(above, l, n)| (invert + d2 + above, l, n));
            let small = outlets_for(invert, d1, crest);
            let large = outlets_for(invert, d2, crest);
            let built = stable_build(&storage, &[&small, &large], p);
            prop_assume!(built.is_some());
            let (dt, inflow, tables) = built.unwrap();
            prop_assert!(condition_holds(&tables[0], dt) && condition_holds(&tables[1], dt));
            let r1 = route(&tables[0], &inflow, 100.0);
            let r2 = route(&tables[1], &inflow, 100.0);
            let s1 = summarize(&tables[0], &inflow, &r1, dt, 100.0, None);
            let s2 = summarize(&tables[1], &inflow, &r2, dt, 100.0, None);
            prop_assert!(
                s2.peak_stage_ft - 100.0 <= (s1.peak_stage_ft - 100.0) * (1.0 + 1e-9),
                "peak stage {} (D {}) > {} (D {})", s2.peak_stage_ft, d2, s1.peak_stage_ft, d1
            );
        }

        #[test]
        fn a_larger_lone_orifice_never_lowers_the_peak_outflow(
            rows in pond_rows(),
            invert_steps in 0u32..30,
            diameter_steps in 5u32..40,
            extra_steps in 1u32..30,
            p in peak(),
        ) {
            // Storage-indication (Bedient, Huber & Vieux eq. 4-13), a pond whose only outlet is one
            // circular orifice. (With a weir above the orifice this can fail; see
            // a_larger_orifice_can_lower_the_peak_outflow_when_a_weir_sits_above_it.)
            let storage = StageStorage::from_stage_area(&rows).unwrap();
            let invert = 100.0 + f64::from(invert_steps) * STEP_FT;
            let d1 = f64::from(diameter_steps) * STEP_FT;
            let d2 = f64::from(diameter_steps + extra_steps) * STEP_FT;
            let small = outlets_for(invert, d1, None);
            let large = outlets_for(invert, d2, None);
            let built = stable_build(&storage, &[&small, &large], p);
            prop_assume!(built.is_some());
            let (dt, inflow, tables) = built.unwrap();
            let r1 = route(&tables[0], &inflow, 100.0);
            let r2 = route(&tables[1], &inflow, 100.0);
            let s1 = summarize(&tables[0], &inflow, &r1, dt, 100.0, None);
            let s2 = summarize(&tables[1], &inflow, &r2, dt, 100.0, None);
            prop_assert!(
                s2.peak_outflow_cfs >= s1.peak_outflow_cfs * (1.0 - 1e-9),
                "peak outflow {} (D {}) < {} (D {})", s2.peak_outflow_cfs, d2, s1.peak_outflow_cfs, d1
            );
        }
    }
}
