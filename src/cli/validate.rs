//! `runnel validate [--out DIR]`: the published worked examples and tables that the test
//! suite checks, computed again and compared; optionally written as `validation.md` and
//! `validation.html` into a results folder (the same rules as a run's: a new, empty or
//! runnel-owned folder only).

use std::path::{Path, PathBuf};

use crate::cli::output::{self, Staging};
use crate::error::Error;
use crate::validation::report;

/// What `validate` found.
#[derive(Debug)]
pub struct ValidateOutcome {
    /// The summary line and one line per case that is off.
    pub text: String,
    /// Whether every case agrees.
    pub pass: bool,
    /// Where the report went, if written.
    pub out_dir: Option<PathBuf>,
}

/// Checks every published case; with `out`, writes the report there.
///
/// # Errors
/// A folder runnel may not write into, or a failed write.
pub fn validate(out: Option<&Path>) -> Result<ValidateOutcome, Error> {
    // Refuse a foreign folder before any work.
    let target = match out {
        Some(o) => Some(output::check_target(o, &[])?),
        None => None,
    };
    let rows = report::run();
    let mut text = format!("{}\n", report::headline(&rows));
    for (c, o) in rows.iter().filter(|(_, o)| !o.pass) {
        text.push_str(&format!(
            "off: {} ({}): runnel {} against published {} (tolerance {})\n",
            c.quantity, c.source, o.value, c.published, c.tolerance
        ));
    }
    let pass = rows.iter().all(|(_, o)| o.pass);
    let mut out_dir = None;
    if let Some(t) = target {
        let stage = Staging::new(&t, &[])?;
        stage.write(output::VALIDATION_MD, report::markdown(&rows).as_bytes())?;
        stage.write(output::VALIDATION_HTML, report::html(&rows).as_bytes())?;
        let committed = stage.commit()?;
        text.push_str(&format!("wrote {}\n", committed.dir.display()));
        out_dir = Some(committed.dir);
    }
    Ok(ValidateOutcome {
        text,
        pass,
        out_dir,
    })
}
