//! The engine: runs a validated study. Design storms through each
//! condition's network ([`network`], [`analysis`]), long records
//! ([`records`]) and outlet sizing ([`sizing`]), all on one network
//! shape ([`topology`]) and one element loop ([`walk`]). Results are typed and in internal units; the
//! report layer converts them. [`catchment_timing`] gives each catchment's
//! derived timing (travel times, Tc, lag, Tp, the unit hydrograph's peak)
//! once, for the reports.

pub mod analysis;
pub mod catchment_timing;
pub mod network;
pub mod records;
pub mod sizing;
pub mod structure;
pub mod topology;
pub mod walk;
