//! Reading a scenario: TOML text -> raw serde types -> the validated
//! [`Study`]. Every check that spans fields (a `to` that names nothing, a
//! cycle, a limit naming an unknown storm) lives here, once.

// Input errors are the cold path and carry a whole message, snippet and hint;
// boxing every one of them would only add noise.
#![allow(clippy::result_large_err)]

mod catchments;
mod channels;
pub mod context;
mod elements;
mod inflows;
mod names;
mod outlets;
mod plausibility;
mod points;
mod ponds;
pub mod raw;
mod records;
mod refs;
mod report;
pub mod sized;
mod steps;
mod storms;
mod structure;
mod underground;
mod values;

use self::{elements::RawElement, inflows::*, values::*};
use crate::error::{Error, InputError, SourceText};
use crate::input::gauge;
use crate::methods::hydraulics::Outlet;
use crate::methods::pond::StageStorage;
use crate::methods::rainfall::{MassCurve, NrcsType};
use crate::methods::runoff::{self, Lambda};
use crate::methods::timing::{self, Section, Segment};
use crate::methods::unit_hydrograph::{self, Shape};
use crate::model::*;
use crate::util::suggest;
use crate::util::units::{self, Quantity, UnitSystem};
use crate::warning::Warning;
use raw::*;
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use toml::Spanned;

/// Default cap on the memory one run may use for its series, bytes (8 GB,
/// decimal as `memory_limit` reads it).
pub const DEFAULT_MEMORY_LIMIT_BYTES: u64 = 8_000_000_000;

/// Largest scenario or inflow-table file read, bytes (16 MiB). Gauge files
/// are read in chunks and have no such cap.
pub const MAX_TEXT_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// Most steps one storm or record may have.
pub const MAX_STEPS: usize = 50_000_000;

/// Reads and validates a scenario file.
///
/// # Errors
/// Any problem with the scenario or the files it names, as an
/// [`Error::Input`] that names the file, line, element and key.
pub fn load(path: &Path) -> Result<Study, Error> {
    let bytes = read_capped(path, "a scenario")?;
    let text = String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let before = std::str::from_utf8(e.as_bytes().get(..at).unwrap_or_default()).unwrap_or("");
        let line = before.matches('\n').count() + 1;
        let column = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
        InputError::new(
            path,
            format!("the file is not UTF-8 text (byte {at} cannot be read)"),
        )
        .at(line, column)
        .expected("a TOML scenario in UTF-8")
        .hint("save the file as UTF-8 in your editor")
    })?;
    let sha = hex(&Sha256::digest(text.as_bytes()));
    let src = SourceText::new(path, text);
    let raw: RawScenario = toml::from_str(&src.text).map_err(|e| toml_error(&src, &e))?;
    let dir = path.parent().map(Path::to_path_buf).unwrap_or_default();
    let mut b = Builder {
        src: &src,
        dir,
        units: UnitSystem::Us,
        warnings: Vec::new(),
        inputs: Vec::new(),
        path_spans: Vec::new(),
    };
    let mut study = b.build(raw)?;
    study.provenance = Provenance {
        scenario: path.to_path_buf(),
        scenario_sha256: sha,
        inputs: b.inputs.clone(),
        scenario_text: src.text.clone(),
        path_spans: b.path_spans.clone(),
    };
    study.warnings.extend(b.warnings);
    study
        .warnings
        .extend(crate::engine::records::input_warnings(&study));
    Ok(study)
}

/// What kind of thing a path that is not a regular file is, in words.
fn file_kind(meta: &std::fs::Metadata) -> &'static str {
    let t = meta.file_type();
    if t.is_dir() {
        return "a folder";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a named pipe";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

/// Reads a whole text input (`what`: "a scenario", "an inflow table") of
/// at most [`MAX_TEXT_FILE_BYTES`]. Folders, devices and pipes are refused
/// before they are opened, so `/dev/zero` or a pipe never hangs a run.
///
/// # Errors
/// [`Error::Read`] when the file is missing or cannot be read; an input
/// error when it is not a regular file or is too large.
pub fn read_capped(path: &Path, what: &str) -> Result<Vec<u8>, Error> {
    use std::io::Read;
    let meta = std::fs::metadata(path).map_err(|source| Error::Read {
        path: path.to_path_buf(),
        source,
    })?;
    if !meta.is_file() {
        return Err(
            InputError::new(path, format!("this is {}, not a file", file_kind(&meta)))
                .expected(format!("{what} file"))
                .into(),
        );
    }
    let too_large = || -> Error {
        InputError::new(
            path,
            format!(
                "the file is larger than {} MiB, more than {what} file can sensibly be",
                MAX_TEXT_FILE_BYTES / (1024 * 1024)
            ),
        )
        .expected(format!("{what} file of at most 16 MiB"))
        .hint("check that the path names the right file; long rainfall series belong in a gauge CSV (`gauge = ...`), which has no size cap")
        .into()
    };
    if meta.len() > MAX_TEXT_FILE_BYTES {
        return Err(too_large());
    }
    let file = std::fs::File::open(path).map_err(|source| Error::Read {
        path: path.to_path_buf(),
        source,
    })?;
    let mut bytes = Vec::new();
    file.take(MAX_TEXT_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|source| Error::Read {
            path: path.to_path_buf(),
            source,
        })?;
    if bytes.len() as u64 > MAX_TEXT_FILE_BYTES {
        return Err(too_large());
    }
    Ok(bytes)
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// Turns a TOML parser error into an input error with a hint.
fn toml_error(src: &SourceText, e: &toml::de::Error) -> InputError {
    let msg = e.message().trim().to_string();
    let mut err = match e.span() {
        Some(s) => {
            let mut err = src.error_at(s.start, first_line(&msg));
            err.context = context::describe(&src.text, s.start);
            err
        }
        None => src.error(first_line(&msg)),
    };
    if let Some(rest) = msg.strip_prefix("unknown field `") {
        let word = rest.split('`').next().unwrap_or("");
        let candidates: Vec<&str> = rest
            .split_once("expected")
            .map(|(_, c)| c.split('`').skip(1).step_by(2).collect())
            .unwrap_or_default();
        if let Some(best) = suggest::nearest(word, candidates.iter().copied()) {
            err = err.hint(format!("did you mean `{best}`?"));
        }
        err.message = format!("unknown key `{word}`");
        if !candidates.is_empty() {
            err = err.expected(format!(
                "one of {}",
                candidates
                    .iter()
                    .map(|c| format!("`{c}`"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        }
    } else if let Some(rest) = msg.strip_prefix("missing field `") {
        let word = rest.split('`').next().unwrap_or("");
        err.message = format!("missing required key `{word}`");
        err = err.expected(format!("`{word} = ...` in this table"));
    } else if msg.contains("invalid type") {
        // Serde names Rust types; say what they are in the scenario's words.
        for (rust, words) in [
            ("expected f64", "expected a number"),
            ("expected i64", "expected a whole number"),
            ("expected a sequence", "expected a list [ ... ]"),
            ("expected a boolean", "expected true or false"),
        ] {
            err.message = err.message.replace(rust, words);
        }
        err = err.expected(
            "a value of the type shown in the scenario format (README, \"Scenario format\")",
        );
    }
    err
}

fn first_line(s: &str) -> String {
    s.lines().next().unwrap_or(s).to_string()
}

struct Builder<'a> {
    src: &'a SourceText,
    dir: PathBuf,
    units: UnitSystem,
    warnings: Vec<Warning>,
    inputs: Vec<PathBuf>,
    path_spans: Vec<(std::ops::Range<usize>, PathBuf)>,
}

type R<T> = Result<T, InputError>;

/// Most characters in a name (elements, points, storms, records,
/// conditions): a pond's plot file joins three names, and file systems
/// allow 255 bytes.
pub const MAX_NAME_CHARS: usize = 64;

/// Longest `lag` accepted: 31 days (a lag is minutes or hours; the bound
/// keeps a slip such as "1e18 h" from the arithmetic of the run length).
pub const MAX_LAG_H: f64 = 31.0 * 24.0;

/// Latest time accepted in an inflow hydrograph: 31 days.
pub const MAX_INFLOW_H: f64 = 31.0 * 24.0;

/// Usual 2-year 24-hour rainfall, in (the range the issue asks for; the
/// README gives its source).
pub const P2_USUAL_IN: (f64, f64) = (1.0, 10.0);

/// Usual design-storm depth, in.
pub const STORM_DEPTH_USUAL_IN: (f64, f64) = (0.3, 40.0);

/// Steepest usual sheet or shallow-flow slope, ft/ft.
pub const SLOPE_USUAL_MAX: f64 = 0.3;

/// Usual Manning n of sheet flow (TR-55 Table 3-1 spans 0.011-0.8).
pub const SHEET_N_USUAL: (f64, f64) = (0.008, 1.0);

/// Usual Manning n of channel flow.
pub const CHANNEL_N_USUAL: (f64, f64) = (0.008, 0.2);

/// A bare orifice or riser diameter (ft or m) at or above this is flagged.
pub const BARE_DIAMETER_LIMIT: f64 = 3.0;

/// Usual sharp-crested weir coefficient, US units (3.33 standard).
pub const SHARP_WEIR_C_US: (f64, f64) = (3.0, 3.9);

/// Usual riser rim (weir) coefficient, US units.
pub const RISER_C_US: (f64, f64) = (2.6, 3.9);

/// Usual broad-crested (spillway) coefficient, US units.
pub const SPILLWAY_C_US: (f64, f64) = (2.3, 3.4);

/// Largest weir coefficient accepted at all (either system).
pub const MAX_WEIR_COEFFICIENT: f64 = 20.0;

impl<'a> Builder<'a> {
    fn err(&self, span: &std::ops::Range<usize>, ctx: &str, msg: impl Into<String>) -> InputError {
        self.src.error_at(span.start, msg).context(ctx.to_string())
    }

    fn resolve(&mut self, rel: &Spanned<String>, ctx: &str) -> R<PathBuf> {
        let p = self.dir.join(rel.get_ref());
        match std::fs::metadata(&p) {
            Ok(m) if m.is_file() => {}
            Ok(m) => {
                return Err(self
                    .err(
                        &rel.span(),
                        ctx,
                        format!("{} is {}, not a file", p.display(), file_kind(&m)),
                    )
                    .expected("the path of a file, relative to the scenario file"));
            }
            Err(_) => {
                return Err(self
                    .err(&rel.span(), ctx, format!("file not found: {}", p.display()))
                    .expected("a path relative to the scenario file"));
            }
        }
        self.inputs.push(p.clone());
        self.path_spans.push((rel.span(), p.clone()));
        Ok(p)
    }

    /// The scenario-wide keys: the unit system (set on the builder), `p2`
    /// (in) and the memory limit (bytes).
    fn settings(&mut self, raw: &RawScenario) -> R<(Option<f64>, u64)> {
        if let Some(u) = &raw.units {
            self.units = match u.get_ref().to_ascii_lowercase().as_str() {
                "us" => UnitSystem::Us,
                "si" => UnitSystem::Si,
                other => {
                    return Err(self
                        .err(
                            &u.span(),
                            "units",
                            format!("unknown unit system \"{other}\""),
                        )
                        .expected("\"us\" or \"si\""));
                }
            };
        }
        let p2_in = match &raw.p2 {
            Some(v) => {
                let p2 = self.positive(v, Quantity::Depth, "p2")?;
                if !(P2_USUAL_IN.0..=P2_USUAL_IN.1).contains(&p2) {
                    let (value, usual, hint) = self.depth_slip(v, p2, P2_USUAL_IN);
                    self.warnings
                        .push(Warning::P2Unusual { value, usual, hint });
                }
                Some(p2)
            }
            None => None,
        };
        let memory_limit_bytes = match &raw.memory_limit {
            Some(v) => parse_bytes(v.get_ref()).ok_or_else(|| {
                self.err(
                    &v.span(),
                    "memory_limit",
                    format!("cannot read \"{}\" as a memory size", v.get_ref()),
                )
                .expected("a size such as \"4 GB\" or \"512 MB\" (decimal: 1 GB = 10^9 bytes; GiB and MiB are binary)")
            })?,
            None => DEFAULT_MEMORY_LIMIT_BYTES,
        };
        Ok((p2_in, memory_limit_bytes))
    }

    /// The validated study, section by section: names, conditions, storms,
    /// elements and their links, points, the step, records; then the checks
    /// that need all of them.
    fn build(&mut self, raw: RawScenario) -> R<Study> {
        let (p2_in, memory_limit_bytes) = self.settings(&raw)?;
        let raw_elements = RawElement::all(&raw);
        self.check_names(&raw, &raw_elements)?;
        self.check_file_name_parts(&raw)?;
        let conditions = self.conditions(&raw, &raw_elements)?;
        let storms = raw
            .storm
            .iter()
            .map(|s| self.storm(s))
            .collect::<R<Vec<_>>>()?;
        let (kinds, sizing_raw) = self.element_kinds(&raw_elements, p2_in, &storms)?;
        let elements = self.link(&raw, &raw_elements, kinds, &conditions)?;
        self.check_paths(&raw_elements, &elements, &conditions)?;
        let baseline_empty = self.check_conditions_reached(&raw, &elements, &conditions)?;
        let points = self.points(&raw, &conditions, &storms, &elements, baseline_empty)?;
        let (step_h, step_given) = self.step(&raw, &elements, &storms)?;
        self.step_warnings(&elements, &storms, step_h);
        self.check_routing(&raw_elements, &elements, step_h)?;
        if !storms.is_empty() {
            self.check_channels(&raw_elements, &elements, step_h, "")?;
        }
        self.channel_warnings(&elements, &conditions);
        let records = raw
            .record
            .iter()
            .map(|r| self.record(r))
            .collect::<R<Vec<_>>>()?;
        self.check_unit_hydrograph_sizes(&raw_elements, &elements, &records, step_h)?;
        for r in &records {
            self.check_channels(
                &raw_elements,
                &elements,
                r.step_h,
                &format!(" of record \"{}\"", r.name),
            )?;
        }
        if storms.is_empty() && records.is_empty() && !elements.is_empty() {
            return Err(self
                .src
                .error("the scenario has no [[storm]] and no [[record]]")
                .expected("at least one design storm or long record"));
        }

        let study = Study {
            title: raw.title.clone().unwrap_or_default(),
            units: self.units,
            step_h,
            step_given,
            conditions,
            baseline: 0,
            baseline_empty,
            p2_in,
            storms,
            elements,
            points,
            records,
            warnings: Vec::new(),
            provenance: Provenance::default(),
            sizing: sizing_raw,
            memory_limit_bytes,
            report: self.report(&raw)?,
        };
        self.check_result_files(&study)?;
        Ok(study)
    }
}

/// The contract's step rule: the largest of 1, 2, 3, 5, 6 minutes that is at
/// most 0.133 Tc of the catchment with the smallest Tc (1 minute when none is).
pub fn default_step_h(min_tc_h: f64) -> f64 {
    let limit_min = 0.133 * min_tc_h * 60.0;
    let m = [6.0, 5.0, 3.0, 2.0, 1.0]
        .into_iter()
        .find(|&m| m <= limit_min + 1e-9)
        .unwrap_or(1.0);
    m / 60.0
}

#[cfg(test)]
mod tests {
    use super::names::condition_slip;
    use super::*;

    #[test]
    fn step_hints_round_up_to_three_significant_digits_in_a_fitting_unit() {
        // 192 h over 50 million steps is 0.013824 s.
        assert_eq!(format_step_up(192.0 / 50_000_000.0), "0.0139 s");
        assert_eq!(format_step_up(1.0 / 60.0), "1.00 min");
        assert_eq!(format_step_up(0.1), "6.00 min");
        assert_eq!(format_step_up(20_100.0), "20100 h");
    }

    #[test]
    fn condition_slips_are_typos_and_not_names_alike_on_purpose() {
        // common practice, no published source: how engineers name conditions
        assert!(condition_slip("proposed", "propsed"));
        assert!(condition_slip("existing", "exisitng"));
        assert!(condition_slip("existing", "Existing"));
        assert!(condition_slip("EX", "ex"));
        assert!(condition_slip("Phase-1", "phase-1"));
        assert!(!condition_slip("phase-1", "phase-2"));
        assert!(!condition_slip("proposed", "proposed-2"));
        assert!(!condition_slip("2030", "2040"));
        assert!(!condition_slip("alt-a", "alt-b"));
        assert!(!condition_slip("option A", "option B"));
        assert!(!condition_slip("proposed", "proposed-b"));
        assert!(!condition_slip("ex", "pr"));
        assert!(!condition_slip("A", "B"));
        assert!(!condition_slip("pre", "post"));
        assert!(!condition_slip("existing", "proposed"));
        assert!(!condition_slip("proposed", "proposed"));
    }

    #[test]
    fn big_numbers_print_in_exponent_form() {
        assert_eq!(big(1.7e308), "1.7e308");
        assert_eq!(big(1e18), "1e18");
        assert_eq!(big(104.5), "104.5");
    }

    #[test]
    fn default_step_follows_the_contract_rule() {
        // contract convention: largest of 1, 2, 3, 5, 6 min <= 0.133 Tc
        assert!((default_step_h(0.5) - 3.0 / 60.0).abs() < 1e-12); // 0.133*30 = 3.99 min
        assert!((default_step_h(1.0) - 6.0 / 60.0).abs() < 1e-12);
        assert!((default_step_h(0.05) - 1.0 / 60.0).abs() < 1e-12);
        assert!((default_step_h(f64::INFINITY) - 6.0 / 60.0).abs() < 1e-12);
    }
}
