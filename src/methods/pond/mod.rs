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

#[cfg(test)]
use crate::methods::hydraulics::total_flow_cfs;
use crate::methods::hydraulics::{Outlet, Works};
use crate::methods::stats::max_first;

mod losses;
mod routing;
mod storage;
mod summary;
mod table;
mod underground;

pub use losses::*;
pub use routing::*;
pub use storage::*;
pub use summary::*;
pub use table::*;
pub use underground::*;

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

#[cfg(test)]
mod storage_tests;
#[cfg(test)]
mod tests;
