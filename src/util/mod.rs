//! Small shared utilities that several layers need, one concept per module.

pub mod calendar;
pub mod interp;
pub mod suggest;
pub mod text;
pub mod tolerances;
pub mod units;
