//! Published methods, as pure functions in the form and units in which
//! they are published (TR-55, NEH 630, Bulletin 17B and the others named in
//! each module). They take numbers and slices and return values; they never
//! print, read files or see the scenario.

pub mod channel;
pub mod cover;
pub mod graphical_peak;
pub mod hydraulics;
pub mod moisture;
pub mod pond;
pub mod rainfall;
pub mod runoff;
pub mod stats;
pub mod storage_estimate;
pub mod timing;
pub mod unit_hydrograph;
