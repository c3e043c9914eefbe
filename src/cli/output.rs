//! Writing a run's files so that a run never costs the user a file and a
//! failed or interrupted run never clobbers the last good results.
//!
//! **Only runnel's own folders are replaced.** Every results folder carries
//! a marker file, [`MARKER`], whose first line says what the folder is and
//! whose other lines list the files runnel wrote into it. A run may write
//! into a folder that does not exist, an empty folder, or a folder holding
//! runnel's earlier results and nothing else: a marker and the files it
//! lists, or (results written before the marker existed) a `summary.json`
//! with runnel's provenance and files named as runnel names them. Anything
//! else (a file of the user's in the folder, a subfolder, a link, a target
//! that is a file, a folder holding the scenario or a file it reads) is
//! refused by [`check_target`] with an input error naming one foreign file,
//! before anything is touched.
//!
//! **Atomic replacement.** Everything is written into a temporary folder
//! beside the target (same parent), each file flushed to disk. Only when
//! the set is complete is the old folder (checked again) moved aside, the
//! new one moved into place, and the old one removed. Nothing is written
//! anywhere else.
//!
//! A run killed part-way (SIGKILL, or SIGINT, which ends the process without
//! running destructors) can leave its temporary folder behind, or, if it
//! died between the two renames of the commit, the previous results under
//! their moved-aside name. The next run that writes to the same target
//! tidies up after runs that are no longer alive (where the system lets it
//! tell, through `/proc`): it puts moved-aside results back if the target
//! is missing and removes the leftovers, but only folders that pass the same
//! test of being runnel's own.

use crate::error::{Error, InputError};
use crate::model::{ElementKind, Study};
use std::ffi::OsString;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// Name of the marker file in every results folder.
pub const MARKER: &str = ".runnel-results";

/// First line of the marker: what the folder is and the rule it follows.
const MARKER_HEAD: &str = "runnel results folder: runnel wrote every file listed below and replaces this folder as a whole on the next run; it refuses to if anything else is put here.";

/// Files that file browsers write into any folder they show; they hold no
/// one's work, so they do not make a results folder foreign.
const BROWSER_FILES: [&str; 3] = [".DS_Store", "Thumbs.db", "desktop.ini"];

/// Largest marker or earlier `summary.json` read when judging a folder, bytes.
const MAX_JUDGED_FILE_BYTES: u64 = 64 * 1024 * 1024;

/// The three plots written per record and point, as `record-R-P-KIND.png`.
pub const RECORD_PLOT_KINDS: [&str; 3] = ["duration", "frequency", "overview"];

/// File name of a storm's hydrograph CSV.
pub fn storm_csv_name(storm: &str) -> String {
    format!("storm-{}.csv", slug(storm))
}

/// File name of a storm's plot at a point.
pub fn storm_plot_name(storm: &str, point: &str) -> String {
    format!("storm-{}-{}.png", slug(storm), slug(point))
}

/// File name of a pond's plot for a storm and condition.
pub fn pond_plot_name(pond: &str, storm: &str, condition: &str) -> String {
    format!(
        "pond-{}-{}-{}.png",
        slug(pond),
        slug(storm),
        slug(condition)
    )
}

/// Common start of a record's plots at a point (a kind and `.png` follow).
pub fn record_plot_base(record: &str, point: &str) -> String {
    format!("record-{}-{}", slug(record), slug(point))
}

/// The printable report written into every results folder.
pub const REPORT_HTML: &str = "report.html";

/// `runnel validate --out`: the validation report as Markdown.
pub const VALIDATION_MD: &str = "validation.md";

/// `runnel validate --out`: the validation report as HTML.
pub const VALIDATION_HTML: &str = "validation.html";

/// Every result file a run of `study` writes (other than the summaries),
/// with what writes it, e.g. `("storm-10-yr.csv", "storm \"10-yr\"")`.
pub fn result_files(study: &Study) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for s in &study.storms {
        out.push((storm_csv_name(&s.name), format!("storm \"{}\"", s.name)));
        for p in &study.points {
            out.push((
                storm_plot_name(&s.name, &p.name),
                format!("storm \"{}\" at point \"{}\"", s.name, p.name),
            ));
        }
        for (c, cname) in study.conditions.iter().enumerate() {
            for e in &study.elements {
                if matches!(e.kind, ElementKind::Pond(_)) && e.conditions[c] {
                    out.push((
                        pond_plot_name(&e.name, &s.name, cname),
                        format!(
                            "pond \"{}\" in storm \"{}\", condition \"{cname}\"",
                            e.name, s.name
                        ),
                    ));
                }
            }
        }
    }
    for r in &study.records {
        for p in &study.points {
            for kind in RECORD_PLOT_KINDS {
                out.push((
                    format!("{}-{kind}.png", record_plot_base(&r.name, &p.name)),
                    format!("record \"{}\" at point \"{}\"", r.name, p.name),
                ));
            }
        }
    }
    out
}

/// Whether `name` is one runnel gives its results (used only for folders
/// written before the marker existed).
fn is_result_name(name: &str) -> bool {
    let slug_chars = name
        .chars()
        .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || "-_.".contains(c));
    if !slug_chars {
        return false;
    }
    matches!(name, "summary.json" | "summary.md" | "sized-scenario.toml")
        || name == REPORT_HTML
        || name == VALIDATION_MD
        || name == VALIDATION_HTML
        || (name.starts_with("storm-") && (name.ends_with(".csv") || name.ends_with(".png")))
        || (name.starts_with("pond-") && name.ends_with(".png"))
        || (name.starts_with("record-")
            && RECORD_PLOT_KINDS
                .iter()
                .any(|k| name.ends_with(&format!("-{k}.png"))))
}

/// What an existing folder holds, as far as replacing it goes.
#[derive(Debug, PartialEq)]
enum Contents {
    /// Nothing (or only files a file browser wrote).
    Empty,
    /// runnel's marker and only the files it lists.
    Marked,
    /// Results written before the marker existed: runnel's `summary.json`
    /// and files named as runnel names them.
    Earlier,
    /// Something runnel did not write.
    Foreign {
        /// One foreign entry (the first by name).
        name: OsString,
        /// Why it is foreign.
        why: String,
        /// How many other foreign entries there are.
        more: usize,
    },
}

/// Reads at most `cap` bytes of a regular file; `None` when it is larger or
/// cannot be read.
fn read_capped(path: &Path, cap: u64) -> Option<Vec<u8>> {
    use std::io::Read;
    let f = std::fs::File::open(path).ok()?;
    let mut bytes = Vec::new();
    f.take(cap + 1).read_to_end(&mut bytes).ok()?;
    (bytes.len() as u64 <= cap).then_some(bytes)
}

/// The file names a marker lists, or `None` when `path` is not runnel's
/// marker.
fn marker_list(path: &Path) -> Option<Vec<String>> {
    let meta = std::fs::symlink_metadata(path).ok()?;
    if !meta.file_type().is_file() {
        return None;
    }
    let bytes = read_capped(path, MAX_JUDGED_FILE_BYTES)?;
    let text = String::from_utf8(bytes).ok()?;
    let mut lines = text.lines();
    if !lines.next()?.starts_with("runnel results folder") {
        return None;
    }
    Some(
        lines
            .filter(|l| !l.is_empty())
            .map(str::to_string)
            .collect(),
    )
}

/// Whether `path` is a `summary.json` that runnel wrote (its provenance
/// names runnel).
fn is_runnel_summary(path: &Path) -> bool {
    let Some(bytes) = read_capped(path, MAX_JUDGED_FILE_BYTES) else {
        return false;
    };
    serde_json::from_slice::<serde_json::Value>(&bytes)
        .is_ok_and(|v| v["provenance"]["program"] == "runnel")
}

/// Judges what the folder `dir` holds.
fn survey(dir: &Path) -> std::io::Result<Contents> {
    let mut entries: Vec<(OsString, std::fs::FileType)> = Vec::new();
    for entry in std::fs::read_dir(dir)? {
        let entry = entry?;
        let name = entry.file_name();
        if BROWSER_FILES.iter().any(|b| name == *b) {
            continue;
        }
        entries.push((name, entry.file_type()?));
    }
    entries.sort_by(|a, b| a.0.cmp(&b.0));
    if entries.is_empty() {
        return Ok(Contents::Empty);
    }
    let listed = marker_list(&dir.join(MARKER));
    let earlier = listed.is_none() && is_runnel_summary(&dir.join("summary.json"));
    // Foreign entries with a rank: the clearest to name first (a file that
    // is plainly the user's, then a summary.json runnel did not write, then
    // files named like results in a folder that is not runnel's).
    let mut foreign: Vec<(u8, OsString, &'static str)> = Vec::new();
    for (name, ty) in entries {
        let text = name.to_string_lossy();
        let (rank, why) = if ty.is_dir() {
            (0, "a folder, and runnel writes no folders into its results")
        } else if ty.is_symlink() {
            (0, "a link, and runnel writes no links into its results")
        } else if !ty.is_file() {
            (0, "not a regular file")
        } else if let Some(list) = &listed {
            if text == MARKER || list.iter().any(|l| *l == text) {
                continue;
            }
            (
                0,
                "a file that runnel's marker does not list, so runnel did not write it",
            )
        } else if text == MARKER {
            (0, "not runnel's marker (its first line is not runnel's)")
        } else if earlier && is_result_name(&text) {
            continue;
        } else if !is_result_name(&text) {
            (0, "a file runnel did not write")
        } else if text == "summary.json" {
            (
                1,
                "a summary.json without runnel's provenance, so runnel did not write it",
            )
        } else {
            (
                2,
                "named like runnel's results, but the folder has neither runnel's marker nor a summary.json written by runnel",
            )
        };
        foreign.push((rank, name, why));
    }
    foreign.sort_by(|a, b| a.0.cmp(&b.0).then_with(|| a.1.cmp(&b.1)));
    Ok(match foreign.len() {
        0 if listed.is_some() => Contents::Marked,
        0 => Contents::Earlier,
        n => {
            let (_, name, why) = foreign.swap_remove(0);
            Contents::Foreign {
                name,
                why: why.to_string(),
                more: n - 1,
            }
        }
    })
}

/// Whether `dir` is a folder runnel may remove or replace: a real folder
/// (not a link) that is empty or holds only runnel's results.
pub fn is_own_folder(dir: &Path) -> bool {
    std::fs::symlink_metadata(dir).is_ok_and(|m| m.file_type().is_dir())
        && matches!(
            survey(dir),
            Ok(Contents::Empty | Contents::Marked | Contents::Earlier)
        )
}

/// The results-folder error: exit code 2, nothing touched.
fn refuse(target: &Path, message: String, hint: String) -> Error {
    InputError::new(target, message)
        .context("results folder")
        .expected(
            "a new folder, an empty folder, or a folder holding only runnel's earlier results",
        )
        .hint(hint)
        .into()
}

/// Checks that `target` may receive results and returns the path to work
/// on (the same path, or the resolved folder when `target` ends in `.` or
/// `..`). `inputs` are the scenario and every file it reads.
///
/// # Errors
/// An input error (exit code 2) when `target` is a file, a link, a folder
/// holding anything runnel did not write, or a folder holding an input.
/// Nothing is created, changed or removed.
pub fn check_target(target: &Path, inputs: &[PathBuf]) -> Result<PathBuf, Error> {
    let meta = match std::fs::symlink_metadata(target) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            if target.file_name().is_none() {
                return Err(refuse(
                    target,
                    "the path names no folder of its own".into(),
                    "name the results folder, e.g. --out results".into(),
                ));
            }
            return Ok(target.to_path_buf());
        }
        Err(e) => {
            return Err(refuse(
                target,
                format!("cannot look at the path: {e}"),
                "choose another folder with --out".into(),
            ));
        }
    };
    if meta.file_type().is_symlink() {
        return Err(refuse(
            target,
            "the path is a link; runnel would replace the link with its results folder".into(),
            "name the folder the link points to, or another folder, with --out".into(),
        ));
    }
    if !meta.is_dir() {
        return Err(refuse(
            target,
            "the path is a file, not a folder; runnel never turns a file into a results folder"
                .into(),
            "name a folder for the results with --out, e.g. --out results".into(),
        ));
    }
    let real = std::fs::canonicalize(target).map_err(|e| {
        refuse(
            target,
            format!("cannot resolve the folder: {e}"),
            "choose another folder with --out".into(),
        )
    })?;
    if real.parent().is_none() {
        return Err(refuse(
            target,
            "the path is the root of the file system".into(),
            "name a folder of its own for the results with --out, e.g. --out results".into(),
        ));
    }
    for input in inputs {
        let Ok(p) = std::fs::canonicalize(input) else {
            continue;
        };
        if p.starts_with(&real) {
            let shown = p.strip_prefix(&real).unwrap_or(&p).display().to_string();
            return Err(refuse(
                target,
                format!(
                    "the folder holds `{shown}`, which this run reads; runnel replaces its results folder as a whole"
                ),
                "write the results into a folder of their own, e.g. --out results (the default is output/<scenario name>/)".into(),
            ));
        }
    }
    let contents = survey(target).map_err(|e| {
        refuse(
            target,
            format!("cannot list the folder: {e}"),
            "choose another folder with --out".into(),
        )
    })?;
    if let Contents::Foreign { name, why, more } = contents {
        let name = name.to_string_lossy();
        let others = match more {
            0 => String::new(),
            1 => " (and 1 other entry)".into(),
            n => format!(" (and {n} other entries)"),
        };
        return Err(refuse(
            target,
            format!(
                "the folder holds `{name}`{others}: {why}; runnel replaces its results folder as a whole and would remove it"
            ),
            format!(
                "move `{name}` out of the folder, or choose another (new or empty) folder with --out"
            ),
        ));
    }
    Ok(if target.file_name().is_none() {
        real
    } else {
        target.to_path_buf()
    })
}

/// A set of result files being written.
#[derive(Debug)]
pub struct Staging {
    target: PathBuf,
    temp: PathBuf,
    written: Mutex<Vec<String>>,
    done: bool,
}

/// What a commit did.
#[derive(Debug)]
pub struct Committed {
    /// Where the results now are.
    pub dir: PathBuf,
    /// The previous results, kept under this name because something
    /// appeared in them during the run (never removed then).
    pub kept_aside: Option<PathBuf>,
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
/// runs that may still be alive, and folders that are not runnel's own
/// ([`is_own_folder`]), are left alone. Problems are ignored (this is
/// housekeeping; the run itself goes on).
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
        if !is_own_folder(&path) {
            continue;
        }
        if is_old && !target.exists() && std::fs::rename(&path, target).is_ok() {
            continue;
        }
        let _ = std::fs::remove_dir_all(&path);
    }
}

/// Flushes a folder's entries (new names, renames) to disk. Only Unix can
/// open a folder for this; elsewhere it is skipped.
fn sync_dir(dir: &Path) -> std::io::Result<()> {
    if cfg!(unix) {
        std::fs::File::open(dir)?.sync_all()
    } else {
        Ok(())
    }
}

fn write_error(path: &Path, e: impl std::fmt::Display) -> Error {
    Error::Write {
        path: path.to_path_buf(),
        message: e.to_string(),
    }
}

/// Writes `bytes` to a new file at `path` and flushes it to disk.
fn write_synced(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    let mut f = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(path)
        .map_err(|e| write_error(path, e))?;
    f.write_all(bytes).map_err(|e| write_error(path, e))?;
    f.sync_all().map_err(|e| write_error(path, e))
}

impl Staging {
    /// Checks `target` again ([`check_target`], with the run's `inputs`),
    /// tidies after killed runs, and creates the temporary folder beside
    /// `target` with runnel's marker in it.
    ///
    /// # Errors
    /// An input error when `target` is not a folder runnel may replace;
    /// a write error when the parent cannot be created or written.
    pub fn new(target: &Path, inputs: &[PathBuf]) -> Result<Self, Error> {
        let target = check_target(target, inputs)?;
        let parent = target
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .map(Path::to_path_buf)
            .unwrap_or_else(|| PathBuf::from("."));
        std::fs::create_dir_all(&parent).map_err(|e| write_error(&parent, e))?;
        recover_interrupted(&target, &parent);
        let temp = sibling(&target, "partial");
        if std::fs::symlink_metadata(&temp).is_ok() {
            // Left by an earlier process with the same id.
            if !is_own_folder(&temp) {
                return Err(refuse(
                    &temp,
                    "runnel's temporary folder name is taken by something runnel did not write"
                        .into(),
                    format!("move `{}` away and run again", temp.display()),
                ));
            }
            let _ = std::fs::remove_dir_all(&temp);
        }
        std::fs::create_dir(&temp).map_err(|e| write_error(&temp, e))?;
        let stage = Staging {
            target,
            temp,
            written: Mutex::new(Vec::new()),
            done: false,
        };
        // The marker comes first and lists each file before it is written,
        // so that even a partial folder is recognisably runnel's own.
        std::fs::write(stage.temp.join(MARKER), format!("{MARKER_HEAD}\n"))
            .map_err(|e| write_error(&stage.temp.join(MARKER), e))?;
        Ok(stage)
    }

    /// The temporary folder (for tests and progress messages).
    pub fn temp_dir(&self) -> &Path {
        &self.temp
    }

    /// The folder the results go to.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Writes one file into the temporary folder and flushes it to disk.
    ///
    /// # Errors
    /// When the file cannot be written, or a file of that name was already
    /// written in this run (two results must never share a name).
    pub fn write(&self, name: &str, bytes: &[u8]) -> Result<(), Error> {
        let p = self.temp.join(name);
        {
            let mut written = self
                .written
                .lock()
                .map_err(|_| write_error(&p, "a writer failed part-way"))?;
            if name == MARKER || written.iter().any(|w| w == name) {
                return Err(write_error(
                    &p,
                    "two results of this run have the same file name",
                ));
            }
            let marker = self.temp.join(MARKER);
            let mut f = std::fs::OpenOptions::new()
                .append(true)
                .open(&marker)
                .map_err(|e| write_error(&marker, e))?;
            writeln!(f, "{name}").map_err(|e| write_error(&marker, e))?;
            written.push(name.to_string());
        }
        write_synced(&p, bytes)
    }

    /// Moves the complete set into place: the marker is written in full,
    /// every file and the folder are flushed to disk, the previous results
    /// (checked again to be runnel's own) are moved aside, the new folder is
    /// renamed into place, and the previous results are removed.
    ///
    /// # Errors
    /// An input error when something other than runnel's results appeared
    /// in the target during the run; a write error when the folders cannot
    /// be renamed. The previous results then stay.
    pub fn commit(mut self) -> Result<Committed, Error> {
        let mut names = self
            .written
            .lock()
            .map(|w| w.clone())
            .map_err(|_| write_error(&self.temp, "a writer failed part-way"))?;
        names.sort();
        let mut text = format!("{MARKER_HEAD}\n");
        for n in &names {
            text.push_str(n);
            text.push('\n');
        }
        let marker = self.temp.join(MARKER);
        std::fs::remove_file(&marker).map_err(|e| write_error(&marker, e))?;
        write_synced(&marker, text.as_bytes())?;
        sync_dir(&self.temp).map_err(|e| write_error(&self.temp, e))?;

        // The run took a while: the target must still be runnel's to replace.
        check_target(&self.target, &[])?;
        let old = sibling(&self.target, "old");
        let had_old = self.target.exists();
        if had_old {
            if std::fs::symlink_metadata(&old).is_ok() {
                if !is_own_folder(&old) {
                    return Err(refuse(
                        &old,
                        "runnel's name for the previous results is taken by something runnel did not write".into(),
                        format!("move `{}` away and run again", old.display()),
                    ));
                }
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
        if let Some(parent) = self.target.parent().filter(|p| !p.as_os_str().is_empty()) {
            let _ = sync_dir(parent);
        }
        let mut kept_aside = None;
        if had_old {
            // Checked once more: a file dropped in during the last instant
            // is kept, never removed.
            if is_own_folder(&old) {
                let _ = std::fs::remove_dir_all(&old);
            } else {
                kept_aside = Some(old);
            }
        }
        Ok(Committed {
            dir: self.target.clone(),
            kept_aside,
        })
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.done && is_own_folder(&self.temp) {
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

    fn tmp() -> tempfile::TempDir {
        tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"))
    }

    fn put(p: &Path, text: &str) {
        std::fs::write(p, text).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    }

    fn mkdir(p: &Path) {
        std::fs::create_dir(p).unwrap_or_else(|e| panic!("{}: {e}", p.display()));
    }

    /// A finished run's folder: marker and the files it lists.
    fn own_results(dir: &Path, files: &[(&str, &str)]) {
        mkdir(dir);
        let mut marker = format!("{MARKER_HEAD}\n");
        for (n, text) in files {
            put(&dir.join(n), text);
            marker.push_str(n);
            marker.push('\n');
        }
        put(&dir.join(MARKER), &marker);
    }

    fn foreign_name(e: &Error) -> String {
        e.to_string()
    }

    #[test]
    fn commit_replaces_the_old_folder_and_a_dropped_stage_leaves_it() {
        let dir = tmp();
        let target = dir.path().join("out");
        own_results(&target, &[("summary.json", "old")]);
        {
            let s = Staging::new(&target, &[]).unwrap_or_else(|e| panic!("{e}"));
            s.write("summary.json", b"half")
                .unwrap_or_else(|e| panic!("{e}"));
        }
        assert_eq!(
            std::fs::read_to_string(target.join("summary.json")).unwrap_or_default(),
            "old"
        );
        let s = Staging::new(&target, &[]).unwrap_or_else(|e| panic!("{e}"));
        s.write("summary.json", b"new")
            .unwrap_or_else(|e| panic!("{e}"));
        s.write("storm-a.csv", b"t\n")
            .unwrap_or_else(|e| panic!("{e}"));
        let c = s.commit().unwrap_or_else(|e| panic!("{e}"));
        assert!(c.kept_aside.is_none());
        assert_eq!(
            std::fs::read_to_string(target.join("summary.json")).unwrap_or_default(),
            "new"
        );
        // The marker says what the folder is and lists every file written.
        let marker = std::fs::read_to_string(target.join(MARKER)).unwrap_or_default();
        let lines: Vec<&str> = marker.lines().collect();
        assert!(lines[0].starts_with("runnel results folder"), "{marker}");
        assert_eq!(&lines[1..], ["storm-a.csv", "summary.json"]);
        assert_eq!(
            std::fs::read_dir(dir.path())
                .map(|d| d.count())
                .unwrap_or(0),
            1
        );
        // And the folder is runnel's own for the next run.
        assert!(is_own_folder(&target));
    }

    #[test]
    fn a_stray_file_in_a_marked_folder_is_foreign_and_named() {
        let dir = tmp();
        let target = dir.path().join("out");
        own_results(&target, &[("summary.json", "{}"), ("summary.md", "# x")]);
        assert_eq!(survey(&target).ok(), Some(Contents::Marked));
        put(&target.join("notes.txt"), "my notes");
        let e = check_target(&target, &[])
            .err()
            .unwrap_or_else(|| panic!("accepted"));
        assert_eq!(e.exit_code(), 2);
        let text = foreign_name(&e);
        assert!(text.contains("`notes.txt`"), "{text}");
        assert!(text.contains("move `notes.txt` out"), "{text}");
        // A file runnel names its results by, but not listed, is foreign too.
        std::fs::remove_file(target.join("notes.txt")).unwrap_or_else(|e| panic!("{e}"));
        put(&target.join("storm-mine.csv"), "hand made");
        assert!(matches!(survey(&target), Ok(Contents::Foreign { .. })));
        // So is a subfolder, even one named in the marker.
        std::fs::remove_file(target.join("storm-mine.csv")).unwrap_or_else(|e| panic!("{e}"));
        std::fs::remove_file(target.join("summary.md")).unwrap_or_else(|e| panic!("{e}"));
        mkdir(&target.join("summary.md"));
        assert!(matches!(survey(&target), Ok(Contents::Foreign { .. })));
    }

    #[test]
    fn earlier_unmarked_results_are_adopted_only_when_everything_is_runnels() {
        let dir = tmp();
        let target = dir.path().join("out");
        mkdir(&target);
        put(
            &target.join("summary.json"),
            r#"{"provenance": {"program": "runnel", "version": "0.1.0"}}"#,
        );
        for f in [
            "summary.md",
            "storm-10-yr.csv",
            "storm-10-yr-outfall.png",
            "pond-pond-a-10-yr-proposed.png",
            "record-synthetic-1995-2024-outfall-overview.png",
            "sized-scenario.toml",
        ] {
            put(&target.join(f), "x");
        }
        assert_eq!(survey(&target).ok(), Some(Contents::Earlier));
        assert!(check_target(&target, &[]).is_ok());
        for stray in [
            "notes.txt",
            "Storm-10-yr.csv",
            "record-a-b.png",
            "site.toml",
        ] {
            put(&target.join(stray), "mine");
            assert!(
                matches!(survey(&target), Ok(Contents::Foreign { ref name, .. }) if name == stray),
                "{stray} was not found foreign"
            );
            std::fs::remove_file(target.join(stray)).unwrap_or_else(|e| panic!("{e}"));
        }
        // Without runnel's provenance in summary.json nothing is adopted.
        put(&target.join("summary.json"), r#"{"title": "my own"}"#);
        let e = check_target(&target, &[])
            .err()
            .unwrap_or_else(|| panic!("accepted"));
        assert!(e.to_string().contains("summary.json"), "{e}");
    }

    #[test]
    fn files_a_file_browser_writes_do_not_make_a_folder_foreign() {
        let dir = tmp();
        let target = dir.path().join("out");
        mkdir(&target);
        put(&target.join(".DS_Store"), "browser");
        assert_eq!(survey(&target).ok(), Some(Contents::Empty));
    }

    #[test]
    fn a_file_a_link_and_a_folder_holding_an_input_are_refused() {
        let dir = tmp();
        let file = dir.path().join("notes.txt");
        put(&file, "mine");
        let e = check_target(&file, &[])
            .err()
            .unwrap_or_else(|| panic!("accepted"));
        assert!(e.to_string().contains("is a file"), "{e}");
        let site = dir.path().join("site");
        mkdir(&site);
        let scenario = site.join("site.toml");
        put(&scenario, "title = 'x'");
        let e = check_target(&site, std::slice::from_ref(&scenario))
            .err()
            .unwrap_or_else(|| panic!("accepted"));
        assert!(e.to_string().contains("`site.toml`"), "{e}");
        // An ancestor of the input's folder too.
        let e = check_target(dir.path(), &[scenario])
            .err()
            .unwrap_or_else(|| panic!("accepted"));
        assert!(e.to_string().contains("site.toml"), "{e}");
        #[cfg(unix)]
        {
            let link = dir.path().join("link");
            let empty = dir.path().join("empty");
            mkdir(&empty);
            std::os::unix::fs::symlink(&empty, &link).unwrap_or_else(|e| panic!("{e}"));
            let e = check_target(&link, &[])
                .err()
                .unwrap_or_else(|| panic!("accepted"));
            assert!(e.to_string().contains("link"), "{e}");
        }
    }

    #[test]
    fn two_results_of_one_run_never_share_a_name() {
        let dir = tmp();
        let s = Staging::new(&dir.path().join("out"), &[]).unwrap_or_else(|e| panic!("{e}"));
        s.write("storm-a.csv", b"1")
            .unwrap_or_else(|e| panic!("{e}"));
        assert!(s.write("storm-a.csv", b"2").is_err());
        assert!(s.write(MARKER, b"2").is_err());
    }

    #[test]
    fn leftovers_of_a_killed_run_are_tidied_and_moved_aside_results_restored() {
        // No process has an id this large (Linux caps ids at 2^22).
        let dead = 99_999_999u32;
        if !Path::new("/proc/self").exists() || Path::new(&format!("/proc/{dead}")).exists() {
            return; // cannot tell dead processes from live ones here
        }
        let dir = tmp();
        let target = dir.path().join("out");
        // Killed between the two renames of a commit: the results are aside.
        let old = dir.path().join(format!(".out.old-{dead}"));
        own_results(&old, &[("summary.json", "previous")]);
        let partial = dir.path().join(format!(".out.partial-{dead}"));
        own_results(&partial, &[("storm-a.csv", "half")]);
        // Another target's folder is not touched.
        let other = dir.path().join(format!(".other.partial-{dead}"));
        mkdir(&other);
        let s = Staging::new(&target, &[]).unwrap_or_else(|e| panic!("{e}"));
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
    fn leftover_names_holding_the_users_files_are_never_removed() {
        let dead = 99_999_999u32;
        if !Path::new("/proc/self").exists() || Path::new(&format!("/proc/{dead}")).exists() {
            return;
        }
        let dir = tmp();
        let target = dir.path().join("out");
        let partial = dir.path().join(format!(".out.partial-{dead}"));
        mkdir(&partial);
        put(&partial.join("thesis.docx"), "years of work");
        let old = dir.path().join(format!(".out.old-{dead}"));
        mkdir(&old);
        put(&old.join("site.toml"), "mine");
        let s = Staging::new(&target, &[]).unwrap_or_else(|e| panic!("{e}"));
        drop(s);
        assert_eq!(
            std::fs::read_to_string(partial.join("thesis.docx")).unwrap_or_default(),
            "years of work"
        );
        assert_eq!(
            std::fs::read_to_string(old.join("site.toml")).unwrap_or_default(),
            "mine"
        );
        assert!(!target.exists());
    }

    #[test]
    fn result_names_are_recognised_and_slugs_are_safe_file_names() {
        assert_eq!(slug("Pond A"), "pond-a");
        assert_eq!(slug("100-yr"), "100-yr");
        assert_eq!(slug("//"), "x");
        assert_eq!(storm_csv_name("10/yr"), storm_csv_name("10-yr"));
        for n in [
            storm_csv_name("10-yr"),
            storm_plot_name("10-yr", "Outfall"),
            pond_plot_name("Pond A", "10-yr", "proposed"),
            format!("{}-overview.png", record_plot_base("r", "p")),
        ] {
            assert!(is_result_name(&n), "{n}");
        }
        assert!(!is_result_name("notes.txt"));
        assert!(!is_result_name("summary.JSON"));
    }
}
