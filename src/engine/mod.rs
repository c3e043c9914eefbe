//! The engine: runs a validated study. Design storms through each
//! condition's network ([`network`], [`analysis`]), long records
//! ([`records`]) and outlet sizing ([`sizing`]), all on one network
//! shape ([`topology`]). Results are typed and in
//! internal units; the report layer converts them.

pub mod analysis;
pub mod network;
pub mod records;
pub mod sizing;
pub mod topology;
