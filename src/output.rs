//! Writing a run's files so that a failed or interrupted run never
//! clobbers the last good results.
//!
//! Everything is written into a temporary folder beside the target (same
//! parent). Only when it is complete is the old folder moved aside, the new
//! one moved into place, and the old one removed. Nothing is written
//! anywhere else.
//!
//! A run killed part-way (SIGKILL, or SIGINT, which ends the process without
//! running destructors) can leave its temporary folder behind, or, if it
//! died between the two renames of the commit, the previous results under
//! their moved-aside name. The next run that writes to the same target
//! tidies up after runs that are no longer alive (where the system lets it
//! tell, through `/proc`): it puts moved-aside results back if the target
//! is missing and removes the leftovers.

use crate::error::Error;
use std::path::{Path, PathBuf};

/// A set of result files being written.
#[derive(Debug)]
pub struct Staging {
    target: PathBuf,
    temp: PathBuf,
    done: bool,
}

fn target_name(target: &Path) -> String {
    target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into())
}

fn sibling(target: &Path, tag: &str) -> PathBuf {
    let name = target_name(target);
    let parent = target.parent().map(Path::to_path_buf).unwrap_or_default();
    parent.join(format!(".{name}.{tag}-{}", std::process::id()))
}

/// Whether process `pid` may still be running: known only where `/proc`
/// lists processes; elsewhere every process is taken to be alive.
fn may_be_alive(pid: u32) -> bool {
    !Path::new("/proc/self").exists() || Path::new(&format!("/proc/{pid}")).exists()
}

/// Tidies up after earlier runs on `target` that were killed part-way:
/// moved-aside previous results go back into place when the target is
/// missing; their temporary and moved-aside folders are removed. Folders of
/// runs that may still be alive are left alone. Problems are ignored (this
/// is housekeeping; the run itself goes on).
fn recover_interrupted(target: &Path, parent: &Path) {
    let name = target_name(target);
    let Ok(entries) = std::fs::read_dir(parent) else {
        return;
    };
    let mut stale: Vec<(PathBuf, bool)> = Vec::new();
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        let Some(rest) = file_name.strip_prefix(&format!(".{name}.")) else {
            continue;
        };
        let (is_old, pid) = match (rest.strip_prefix("old-"), rest.strip_prefix("partial-")) {
            (Some(pid), _) => (true, pid),
            (_, Some(pid)) => (false, pid),
            _ => continue,
        };
        match pid.parse::<u32>() {
            Ok(pid) if pid != std::process::id() && !may_be_alive(pid) => {
                stale.push((entry.path(), is_old));
            }
            _ => {}
        }
    }
    for (path, is_old) in stale {
        if is_old && !target.exists() && std::fs::rename(&path, target).is_ok() {
            continue;
        }
        let _ = std::fs::remove_dir_all(&path);
    }
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
        recover_interrupted(target, &parent);
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
    fn leftovers_of_a_killed_run_are_tidied_and_moved_aside_results_restored() {
        // No process has an id this large (Linux caps ids at 2^22).
        let dead = 99_999_999u32;
        if !Path::new("/proc/self").exists() || Path::new(&format!("/proc/{dead}")).exists() {
            return; // cannot tell dead processes from live ones here
        }
        let dir = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
        let target = dir.path().join("out");
        // Killed between the two renames of a commit: the results are aside.
        let old = dir.path().join(format!(".out.old-{dead}"));
        std::fs::create_dir(&old).unwrap_or_else(|e| panic!("{e}"));
        std::fs::write(old.join("summary.json"), "previous").unwrap_or_else(|e| panic!("{e}"));
        let partial = dir.path().join(format!(".out.partial-{dead}"));
        std::fs::create_dir(&partial).unwrap_or_else(|e| panic!("{e}"));
        // Another target's folder is not touched.
        let other = dir.path().join(format!(".other.partial-{dead}"));
        std::fs::create_dir(&other).unwrap_or_else(|e| panic!("{e}"));
        let s = Staging::new(&target).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(
            std::fs::read_to_string(target.join("summary.json")).unwrap_or_default(),
            "previous"
        );
        assert!(!old.exists() && !partial.exists() && other.exists());
        drop(s);
        assert_eq!(
            std::fs::read_dir(dir.path())
                .map(|d| d.count())
                .unwrap_or(0),
            2
        );
    }

    #[test]
    fn slugs_are_safe_file_names() {
        assert_eq!(slug("Pond A"), "pond-a");
        assert_eq!(slug("100-yr"), "100-yr");
        assert_eq!(slug("//"), "x");
    }
}
