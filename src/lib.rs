//! runnel: stormwater design-storm and continuous simulation for drainage
//! reports.
//!
//! Rainfall (NRCS 24-hour patterns, user tables, gauge CSV) -> excess by the
//! SCS curve-number method -> SCS dimensionless unit hydrograph with lag
//! from the TR-55 velocity-method time of concentration -> detention ponds
//! routed by storage-indication -> comparison of conditions at points ->
//! JSON, Markdown, CSV and PNG results.
//!
//! The pipeline reads top-down: [`scenario::load`] builds a validated
//! [`model::Study`]; [`sizing::solve`] fixes any ranged outlet dimension;
//! [`analysis::analyse`] runs every storm through [`network`];
//! [`records::run`] does the long records; [`cli::run`] writes the report.
#![forbid(unsafe_code)]

pub mod analysis;
pub mod cli;
pub mod cover;
pub mod error;
pub mod gauge;
pub mod graphical_peak;
pub mod hydraulics;
pub mod interp;
pub mod model;
pub mod moisture;
pub mod network;
pub mod output;
pub mod pond;
pub mod rainfall;
pub mod records;
pub mod report;
pub mod runoff;
pub mod scenario;
pub mod sizing;
pub mod stats;
pub mod storage_estimate;
pub mod timing;
pub mod unit_hydrograph;
pub mod units;
pub mod util;
pub mod warning;

pub use error::{Error, InputError};
