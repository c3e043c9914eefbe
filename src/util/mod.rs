//! Small shared utilities that several layers need, one concept per module.

pub mod calendar;
