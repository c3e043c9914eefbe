//! The commands, one entry function each.

pub mod check;
pub mod init;
pub mod output;
pub mod run;
pub mod validate;

pub use check::{check, estimate};
pub use init::init;
pub use run::run;
pub use validate::validate;
