//! The input layer: the scenario file (parsed, validated, built into the
//! model) and gauge rainfall files. Nothing below this layer sees TOML or
//! CSV text.

pub mod gauge;
pub mod scenario;
