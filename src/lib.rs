//! runnel: stormwater design-storm and continuous simulation for drainage
//! reports.
//!
//! Rainfall (NRCS 24-hour patterns, user tables, gauge CSV) -> excess by the
//! SCS curve-number method -> SCS dimensionless unit hydrograph with lag
//! from the TR-55 velocity-method time of concentration -> detention ponds
//! routed by storage-indication -> comparison of conditions at points ->
//! JSON, Markdown, CSV and PNG results.
//!
//! The folders follow the data: [`input`] reads the scenario and gauge
//! files and builds the validated [`model::Study`]; [`methods`] holds the
//! published methods as pure functions; [`engine`] runs the study
//! ([`engine::sizing::solve`] fixes ranged outlet dimensions,
//! [`engine::analysis::analyse`] runs every storm through
//! [`engine::network`], [`engine::records::run`] the long records);
//! [`report`] turns results into output units and formats; [`cli`] writes
//! the files and prints. [`util`] holds what several layers share.
#![forbid(unsafe_code)]

pub mod cli;
pub mod engine;
pub mod error;
pub mod input;
pub mod methods;
pub mod model;
pub mod report;
pub mod util;
pub mod validation;
pub mod warning;

pub use error::{Error, InputError};
