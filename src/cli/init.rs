//! `runnel init`: writes a commented starter scenario and a small rainfall
//! CSV that run as they are.

use crate::error::Error;
use std::path::{Path, PathBuf};

const SCENARIO: &str = include_str!("starter/scenario.toml");
const RAIN: &str = include_str!("starter/sample-storm.csv");

/// Writes `scenario.toml` and `rain/sample-storm.csv` into `dir`.
///
/// # Errors
/// When a file exists (and `force` is not set) or cannot be written.
pub fn init(dir: &Path, force: bool) -> Result<Vec<PathBuf>, Error> {
    let files = [
        (dir.join("scenario.toml"), SCENARIO),
        (dir.join("rain").join("sample-storm.csv"), RAIN),
    ];
    if !force && let Some((p, _)) = files.iter().find(|(p, _)| p.exists()) {
        return Err(Error::Write {
            path: p.clone(),
            message: "the file exists; use --force to overwrite it".into(),
        });
    }
    let mut out = Vec::new();
    for (p, text) in files {
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).map_err(|e| Error::Write {
                path: parent.to_path_buf(),
                message: e.to_string(),
            })?;
        }
        std::fs::write(&p, text).map_err(|e| Error::Write {
            path: p.clone(),
            message: e.to_string(),
        })?;
        out.push(p);
    }
    Ok(out)
}
