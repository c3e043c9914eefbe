//! Writing a run's files so that a failed or interrupted run never
//! clobbers the last good results.
//!
//! Everything is written into a temporary folder beside the target (same
//! parent). Only when it is complete is the old folder moved aside, the new
//! one moved into place, and the old one removed. Nothing is written
//! anywhere else.

use crate::error::Error;
use std::path::{Path, PathBuf};

/// A set of result files being written.
#[derive(Debug)]
pub struct Staging {
    target: PathBuf,
    temp: PathBuf,
    done: bool,
}

fn sibling(target: &Path, tag: &str) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let parent = target.parent().map(Path::to_path_buf).unwrap_or_default();
    parent.join(format!(".{name}.{tag}-{}", std::process::id()))
}

impl Staging {
    /// Creates the temporary folder beside `target`.
    ///
    /// # Errors
    /// When the parent cannot be created or written.
    pub fn new(target: &Path) -> Result<Self, Error> {
        let parent = target
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from("."));
        std::fs::create_dir_all(&parent).map_err(|e| Error::Write {
            path: parent.clone(),
            message: e.to_string(),
        })?;
        let temp = sibling(target, "partial");
        if temp.exists() {
            let _ = std::fs::remove_dir_all(&temp);
        }
        std::fs::create_dir(&temp).map_err(|e| Error::Write {
            path: temp.clone(),
            message: e.to_string(),
        })?;
        Ok(Staging {
            target: target.to_path_buf(),
            temp,
            done: false,
        })
    }

    /// The temporary folder (for tests and progress messages).
    pub fn temp_dir(&self) -> &Path {
        &self.temp
    }

    /// Writes one file into the temporary folder.
    ///
    /// # Errors
    /// When the file cannot be written.
    pub fn write(&self, name: &str, bytes: &[u8]) -> Result<(), Error> {
        let p = self.temp.join(name);
        std::fs::write(&p, bytes).map_err(|e| Error::Write {
            path: p.clone(),
            message: e.to_string(),
        })
    }

    /// Moves the complete set into place.
    ///
    /// # Errors
    /// When the folders cannot be renamed; the previous results then stay.
    pub fn commit(mut self) -> Result<PathBuf, Error> {
        let old = sibling(&self.target, "old");
        let had_old = self.target.exists();
        if had_old {
            if old.exists() {
                let _ = std::fs::remove_dir_all(&old);
            }
            std::fs::rename(&self.target, &old).map_err(|e| Error::Write {
                path: self.target.clone(),
                message: format!("cannot move the previous results aside: {e}"),
            })?;
        }
        if let Err(e) = std::fs::rename(&self.temp, &self.target) {
            if had_old {
                let _ = std::fs::rename(&old, &self.target);
            }
            return Err(Error::Write {
                path: self.target.clone(),
                message: format!("cannot move the new results into place: {e}"),
            });
        }
        self.done = true;
        if had_old {
            let _ = std::fs::remove_dir_all(&old);
        }
        Ok(self.target.clone())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.done {
            let _ = std::fs::remove_dir_all(&self.temp);
        }
    }
}

/// A file-name-safe form of an element or storm name.
pub fn slug(name: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.' {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect();
    let s = s.trim_matches('-').to_string();
    if s.is_empty() { "x".into() } else { s }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn commit_replaces_the_old_folder_and_a_dropped_stage_leaves_it() {
        let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
        let target = dir.path().join("out");
        std::fs::create_dir(&target).unwrap_or_else(|e| panic!("{e}"));
        std::fs::write(target.join("summary.json"), "old").unwrap_or_else(|e| panic!("{e}"));
        {
            let s = Staging::new(&target).unwrap_or_else(|e| panic!("{e}"));
            s.write("summary.json", b"half")
                .unwrap_or_else(|e| panic!("{e}"));
        }
        assert_eq!(
            std::fs::read_to_string(target.join("summary.json")).unwrap_or_default(),
            "old"
        );
        let s = Staging::new(&target).unwrap_or_else(|e| panic!("{e}"));
        s.write("summary.json", b"new")
            .unwrap_or_else(|e| panic!("{e}"));
        s.commit().unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(
            std::fs::read_to_string(target.join("summary.json")).unwrap_or_default(),
            "new"
        );
        assert_eq!(
            std::fs::read_dir(dir.path())
                .map(|d| d.count())
                .unwrap_or(0),
            1
        );
    }

    #[test]
    fn slugs_are_safe_file_names() {
        assert_eq!(slug("Pond A"), "pond-a");
        assert_eq!(slug("100-yr"), "100-yr");
        assert_eq!(slug("//"), "x");
    }
}
