//! `runnel init`: writes a commented starter scenario and a small rainfall
//! CSV that run as they are. It never overwrites a file.

use crate::error::{Error, InputError};
use std::io::Write;
use std::path::{Path, PathBuf};

const SCENARIO: &str = include_str!("starter/scenario.toml");
const RAIN: &str = include_str!("starter/sample-storm.csv");

fn exists(p: &Path) -> bool {
    std::fs::symlink_metadata(p).is_ok()
}

fn refuse(p: &Path, message: &str) -> Error {
    InputError::new(p, message)
        .context("runnel init")
        .expected("a folder without scenario.toml and rain/sample-storm.csv")
        .hint("runnel init never overwrites a file: choose a new or empty folder, e.g. `runnel init my-site`, or move the file away")
        .into()
}

/// Writes `scenario.toml` and `rain/sample-storm.csv` into `dir`.
///
/// # Errors
/// An input error (exit code 2) naming the first of the files (or the
/// `rain` path) that already exists; nothing is written then. A write
/// error when a file cannot be written.
pub fn init(dir: &Path) -> Result<Vec<PathBuf>, Error> {
    let rain = dir.join("rain");
    let files = [
        (dir.join("scenario.toml"), SCENARIO),
        (rain.join("sample-storm.csv"), RAIN),
    ];
    // Everything is checked before anything is written.
    if let Some((p, _)) = files.iter().find(|(p, _)| exists(p)) {
        return Err(refuse(p, "the file exists"));
    }
    if exists(dir) && !dir.is_dir() {
        return Err(refuse(dir, "the path is a file, not a folder"));
    }
    if exists(&rain) && !rain.is_dir() {
        return Err(refuse(
            &rain,
            "the path is a file, where the starter puts its rain folder",
        ));
    }
    let mut out = Vec::new();
    for (p, text) in files {
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).map_err(|e| Error::Write {
                path: parent.to_path_buf(),
                message: e.to_string(),
            })?;
        }
        // `create_new`: a file that appeared since the check is not replaced.
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&p)
            .map_err(|e| {
                if e.kind() == std::io::ErrorKind::AlreadyExists {
                    refuse(&p, "the file exists")
                } else {
                    Error::Write {
                        path: p.clone(),
                        message: e.to_string(),
                    }
                }
            })?;
        f.write_all(text.as_bytes())
            .and_then(|()| f.sync_all())
            .map_err(|e| Error::Write {
                path: p.clone(),
                message: e.to_string(),
            })?;
        out.push(p);
    }
    Ok(out)
}
