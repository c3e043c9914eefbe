//! `runnel check` and `runnel estimate`: load, analyse, print. The text
//! itself is written by [`crate::report::check`].

use crate::engine::analysis;
use crate::error::Error;
use crate::model::Study;
use std::path::Path;

/// Loads a scenario, checks what `run` would refuse before simulating
/// (memory, the records' gauges as `run` reads them) and analyses its
/// design storms.
fn load_and_analyse(scenario: &Path) -> Result<(Study, analysis::Analysis), Error> {
    let study = crate::input::scenario::load(scenario)?;
    crate::cli::run::check_memory(&study)?;
    crate::engine::records::validate(&study)?;
    let a = analysis::analyse(&study)?;
    Ok((study, a))
}

/// Validates a scenario and returns the text `check` prints and its warnings.
///
/// # Errors
/// Bad input.
pub fn check(scenario: &Path) -> Result<(String, Vec<String>), Error> {
    let (study, a) = load_and_analyse(scenario)?;
    let memory = crate::cli::run::memory_line(&study);
    Ok(crate::report::check::check_text(&study, &a, &memory))
}

/// The `estimate` command: the storage estimate alone.
///
/// # Errors
/// Bad input.
pub fn estimate(scenario: &Path) -> Result<String, Error> {
    let (study, a) = load_and_analyse(scenario)?;
    Ok(crate::report::check::estimate_only_text(&study, &a))
}
