//! Reading a scenario: TOML text -> raw serde types -> the validated
//! [`Study`]. Every check that spans fields (a `to` that names nothing, a
//! cycle, a limit naming an unknown storm) lives here, once.

// Input errors are the cold path and carry a whole message, snippet and hint;
// boxing every one of them would only add noise.
#![allow(clippy::result_large_err)]

pub mod context;
pub mod raw;

use crate::error::{Error, InputError, SourceText};
use crate::input::gauge;
use crate::methods::cover;
use crate::methods::hydraulics::Outlet;
use crate::methods::pond::StageStorage;
use crate::methods::rainfall::{MassCurve, NrcsType};
use crate::methods::runoff::{self, Lambda};
use crate::methods::timing::{self, Section, Segment};
use crate::methods::unit_hydrograph::{self, Shape};
use crate::model::*;
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
        if let Some(best) = cover::nearest(word, candidates.iter().copied()) {
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

/// A name as written and one result file it gives.
type NamedFile<'r> = (&'r Spanned<String>, String);

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

/// One use of a condition name by an element.
struct Mention {
    name: String,
    span: std::ops::Range<usize>,
    ctx: String,
}

fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Whether two condition names are a slip apart: they differ only in case,
/// or by an edit distance of 2 or less, except where an engineer names
/// conditions alike on purpose: names that differ only in their numbers
/// (`phase-1`, `phase-2`; `proposed`, `proposed-2`), only in a short final
/// tag (`alt-a`, `alt-b`; `option A`, `option B`), or short names that an
/// edit of 2 changes by half or more (`ex`, `pr`).
pub fn condition_slip(a: &str, b: &str) -> bool {
    if a == b {
        return false;
    }
    let (la, lb) = (a.to_lowercase(), b.to_lowercase());
    if la == lb {
        return true;
    }
    let d = cover::edit_distance(&la, &lb);
    if d > 2 {
        return false;
    }
    let shorter = la.chars().count().min(lb.chars().count());
    if 2 * d >= shorter {
        return false;
    }
    let separator = |c: char| matches!(c, '-' | '_' | ' ' | '.' | '/');
    let skeleton = |s: &str| -> String {
        s.chars()
            .filter(|c| !c.is_ascii_digit() && !separator(*c))
            .collect()
    };
    if skeleton(&la) == skeleton(&lb) {
        return false;
    }
    let stem = |s: &str| -> String {
        match s.rfind(separator) {
            Some(i) if s[i + 1..].chars().count() <= 2 && i > 0 => s[..i].to_string(),
            _ => s.to_string(),
        }
    };
    stem(&la) != stem(&lb)
}

/// One element's shared keys, collected before its kind is built.
struct Pending {
    name: String,
    name_span: std::ops::Range<usize>,
    conditions: Option<Spanned<NameList>>,
    to: Option<Spanned<String>>,
    lag: Option<Spanned<RawValue>>,
    table_span: std::ops::Range<usize>,
    ctx: String,
}

impl<'a> Builder<'a> {
    fn err(&self, span: &std::ops::Range<usize>, ctx: &str, msg: impl Into<String>) -> InputError {
        self.src.error_at(span.start, msg).context(ctx.to_string())
    }

    fn qty(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
        let x = self.qty_unbounded(v, q, ctx)?;
        self.bounded(x, v, q, ctx)
    }

    /// Refuses a value whose magnitude lies beyond what any site can hold
    /// ([`Quantity::max_magnitude`]): a slip or a number such as 1e308,
    /// refused here before any arithmetic can overflow.
    fn bounded(&self, x: f64, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
        let max = q.max_magnitude();
        if x.abs() <= max {
            return Ok(x);
        }
        Err(self
            .err(
                &v.span(),
                ctx,
                format!(
                    "{} is far beyond anything runnel can model ({} accepted here is at most {} {})",
                    match v.get_ref() {
                        RawValue::Num(x) => big(*x),
                        other => show(other),
                    },
                    q.describe(),
                    units::sig(max * q.output_factor(self.units), 3),
                    q.output_unit(self.units)
                ),
            )
            .expected(format!("{} such as {}", q.describe(), q.examples(self.units)))
            .hint("check the number for a slip (a misplaced decimal point, exponent or unit)"))
    }

    fn qty_unbounded(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
        match v.get_ref() {
            RawValue::Num(x) => {
                if !x.is_finite() {
                    return Err(self.err(&v.span(), ctx, format!("{x} is not a finite number")).expected(q.examples(self.units)));
                }
                match q.bare_factor(self.units) {
                    Some(f) => Ok(x * f),
                    None => Err(self
                        .err(&v.span(), ctx, format!("a time needs a unit: `{x}` is a bare number"))
                        .expected(q.examples(self.units))
                        .hint(format!("write it as \"{x} min\" or \"{x} h\""))),
                }
            }
            RawValue::Text(t) => units::parse_quantity(t, q, self.units)
                .map_err(|e| self.err(&v.span(), ctx, e.to_string()).expected(format!("{} such as {}", q.describe(), q.examples(self.units)))),
            RawValue::Range(_) => Err(self
                .err(&v.span(), ctx, "a { min, max } range is only allowed for outlet dimensions, which runnel sizes")
                .expected(format!("a single value such as {}", q.examples(self.units)))),
        }
    }

    fn positive(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
        let x = self.qty(v, q, ctx)?;
        if x > 0.0 {
            Ok(x)
        } else {
            Err(self
                .err(
                    &v.span(),
                    ctx,
                    format!("must be positive, got {}", show(v.get_ref())),
                )
                .expected(format!("{} greater than zero", q.describe())))
        }
    }

    fn req<'v, T>(
        &self,
        v: &'v Option<Spanned<T>>,
        table: &std::ops::Range<usize>,
        ctx: &str,
        key: &str,
        what: &str,
    ) -> R<&'v Spanned<T>> {
        v.as_ref().ok_or_else(|| {
            self.err(table, ctx, format!("missing required key `{key}`"))
                .expected(format!("`{key} = {what}`"))
        })
    }

    fn num(&self, v: &Spanned<f64>, ctx: &str) -> R<f64> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self
                .err(&v.span(), ctx, format!("{x} is not a finite number"))
                .expected("a finite number"))
        }
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

    /// For a rain depth outside its usual range (in): the value as read in
    /// the scenario's unit, the usual range in both systems, and the likely
    /// intended input (a bare number read in the other system's unit).
    fn depth_slip(
        &self,
        v: &Spanned<RawValue>,
        depth_in: f64,
        usual: (f64, f64),
    ) -> (String, String, String) {
        let (value, usual_text) = match self.units {
            UnitSystem::Us => (
                format!("{} in", units::short(depth_in, 3)),
                format!(
                    "{}-{} in ({}-{} mm)",
                    usual.0,
                    usual.1,
                    units::sig(usual.0 * units::MM_PER_IN, 2),
                    units::sig(usual.1 * units::MM_PER_IN, 2)
                ),
            ),
            UnitSystem::Si => (
                format!("{} mm", units::short(depth_in * units::MM_PER_IN, 3)),
                format!(
                    "{}-{} mm ({}-{} in)",
                    units::sig(usual.0 * units::MM_PER_IN, 2),
                    units::sig(usual.1 * units::MM_PER_IN, 2),
                    usual.0,
                    usual.1
                ),
            ),
        };
        let in_range = |x: f64| (usual.0..=usual.1).contains(&x);
        let hint = match (v.get_ref(), self.units) {
            // A bare SI number read as mm that makes sense in inches.
            (RawValue::Num(x), UnitSystem::Si) if in_range(*x) => {
                format!("did you mean \"{x} in\"?")
            }
            // A bare US number read as inches that makes sense in mm.
            (RawValue::Num(x), UnitSystem::Us) if in_range(x / units::MM_PER_IN) => {
                format!("did you mean \"{x} mm\"?")
            }
            _ => "check the value and its unit against the local rainfall data".to_string(),
        };
        (value, usual_text, hint)
    }

    /// A slope that is legal but almost always a percentage written as a
    /// ratio: 1 or more for any segment, above 0.3 for sheet and shallow flow.
    fn slope_warning(&mut self, raw: &Spanned<RawValue>, slope: f64, kind: &str, ctx: &str) {
        let surface = matches!(kind, "sheet" | "shallow");
        if !(slope >= 1.0 || (surface && slope > SLOPE_USUAL_MAX)) {
            return;
        }
        let unit = match self.units {
            UnitSystem::Us => "ft/ft",
            UnitSystem::Si => "m/m",
        };
        let percent_written = match raw.get_ref() {
            RawValue::Text(t) => t.contains('%') || t.to_ascii_lowercase().contains("percent"),
            _ => false,
        };
        let likely = if percent_written {
            // "45 %": a slipped decimal point.
            format!("\"{} %\"", units::short(slope * 10.0, 4))
        } else {
            format!("\"{} %\"", units::short(slope, 4))
        };
        let usual = if surface {
            format!(
                "sheet and shallow flow slopes are usually under {SLOPE_USUAL_MAX} {unit} (30 %)"
            )
        } else {
            format!("a channel slope of 1 {unit} (100 %) or more is not open-channel flow")
        };
        self.warnings.push(Warning::SlopeSteep {
            at: format!("{ctx}, slope"),
            value: format!("{} {unit}", units::short(slope, 4)),
            percent: slope * 100.0,
            usual,
            likely,
        });
    }

    /// A Manning n outside the usual range of sheet or channel flow.
    fn manning_warning(&mut self, n: f64, kind: &str, ctx: &str) {
        let (range, usual) = match kind {
            "sheet" => (
                SHEET_N_USUAL,
                "sheet-flow range of 0.008-1.0 (TR-55 Table 3-1 spans 0.011 to 0.8)",
            ),
            "channel" => (CHANNEL_N_USUAL, "channel range of 0.008-0.2"),
            _ => return,
        };
        if !(n.is_finite() && n > 0.0) || (range.0..=range.1).contains(&n) {
            return;
        }
        // The same digits with the decimal point moved into the range.
        let mut guess = n;
        for _ in 0..400 {
            if guess > range.1 {
                guess /= 10.0;
            } else if guess < range.0 {
                guess *= 10.0;
            } else {
                break;
            }
        }
        let hint = if (range.0..=range.1).contains(&guess) {
            format!("did you mean n = {}?", units::short(guess, 4))
        } else {
            "check the value".to_string()
        };
        self.warnings.push(Warning::ManningNUnusual {
            at: format!("{ctx}, n"),
            value: units::short(n, 4),
            usual: usual.to_string(),
            hint,
        });
    }

    /// Plausibility warnings of an outlet (read again from the raw keys).
    fn outlet_warnings(&self, r: &RawOutlet, ctx: &str) -> Vec<Warning> {
        let mut out = Vec::new();
        let kind = r
            .kind
            .as_ref()
            .map(|k| k.get_ref().to_ascii_lowercase())
            .unwrap_or_default();
        // A bare diameter of 3 or more (ft or m) for an orifice or riser.
        if matches!(kind.as_str(), "orifice" | "riser")
            && let Some(d) = &r.diameter
        {
            let bare: Vec<f64> = match d.get_ref() {
                RawValue::Num(x) => vec![*x],
                RawValue::Range(b) => [&b.0, &b.1]
                    .into_iter()
                    .filter_map(|x| match x {
                        RawValue::Num(v) => Some(*v),
                        _ => None,
                    })
                    .collect(),
                RawValue::Text(_) => Vec::new(),
            };
            if let Some(x) = bare
                .into_iter()
                .filter(|x| *x >= BARE_DIAMETER_LIMIT)
                .reduce(f64::max)
            {
                let (unit, small) = match self.units {
                    UnitSystem::Us => ("ft", "in"),
                    UnitSystem::Si => ("m", "mm"),
                };
                let usual = match (kind.as_str(), self.units) {
                    ("orifice", UnitSystem::Us) => {
                        "pond orifices are a few inches to about 2 ft across"
                    }
                    ("orifice", UnitSystem::Si) => "pond orifices are about 50 mm to 0.6 m across",
                    (_, UnitSystem::Us) => "risers are usually 2 to 6 ft across",
                    (_, UnitSystem::Si) => "risers are usually 0.6 to 1.8 m across",
                };
                out.push(Warning::DiameterBare {
                    at: format!("{ctx}, diameter"),
                    value: format!("{x} {unit}"),
                    usual: usual.to_string(),
                    likely: format!("\"{x} {small}\""),
                    explicit: format!("\"{x} {unit}\""),
                });
            }
        }
        // Weir, spillway and riser coefficients, in the scenario's system.
        if let Some(c) = &r.coefficient {
            let v = *c.get_ref();
            let range_us = match kind.as_str() {
                "weir" => Some(SHARP_WEIR_C_US),
                "riser" => Some(RISER_C_US),
                "spillway" | "broad-crested-weir" => Some(SPILLWAY_C_US),
                _ => None,
            };
            if let Some((lo, hi)) = range_us {
                let si = units::M_PER_FT.sqrt();
                let (range, other, sys, other_sys, to_sys) = match self.units {
                    UnitSystem::Us => ((lo, hi), (lo * si, hi * si), "US", "SI", 1.0 / si),
                    UnitSystem::Si => ((lo * si, hi * si), (lo, hi), "SI", "US", si),
                };
                if v.is_finite() && !(range.0..=range.1).contains(&v) {
                    let what = match kind.as_str() {
                        "weir" => "sharp-crested weir coefficient",
                        "riser" => "riser rim (weir) coefficient",
                        _ => "broad-crested (spillway) coefficient",
                    };
                    let hint = if (other.0..=other.1).contains(&v) {
                        format!(
                            "{v} is the {other_sys} form of {}; did you mean coefficient = {} (the same weir in {sys} units)?",
                            units::short(v * to_sys, 3),
                            units::short(v * to_sys, 3)
                        )
                    } else {
                        "check the value (leave `coefficient` out to use the default)".to_string()
                    };
                    out.push(Warning::CoefficientUnusual {
                        at: format!("{ctx}, coefficient"),
                        value: format!("{v}"),
                        usual: format!(
                            "{what} of {}-{} in {sys} units (ft^0.5/s in US, m^0.5/s in SI)",
                            units::short(range.0, 3),
                            units::short(range.1, 3)
                        ),
                        hint,
                    });
                }
            }
        }
        out
    }

    /// A name of an element, point, storm, record or condition: not empty,
    /// no control characters, at most [`MAX_NAME_CHARS`] characters (names
    /// become parts of file names).
    fn name_text(&self, n: &Spanned<String>, ctx: &str) -> R<()> {
        let s = n.get_ref();
        if s.trim().is_empty() {
            return Err(self
                .err(&n.span(), ctx, "the name is empty")
                .expected("a name of at least one visible character"));
        }
        if let Some(c) = s.chars().find(|c| c.is_control()) {
            return Err(self
                .err(
                    &n.span(),
                    ctx,
                    format!(
                        "the name holds a control character (U+{:04X})",
                        u32::from(c)
                    ),
                )
                .expected("a name of printable characters")
                .hint("remove the tab, line break or other invisible character from the name"));
        }
        let count = s.trim().chars().count();
        if count > MAX_NAME_CHARS {
            return Err(self
                .err(
                    &n.span(),
                    ctx,
                    format!(
                        "the name is {count} characters long, more than runnel's limit of {MAX_NAME_CHARS}"
                    ),
                )
                .expected(format!("a name of at most {MAX_NAME_CHARS} characters"))
                .hint("names become parts of file names (a pond's plots join the pond, storm and condition names); shorten it"));
        }
        Ok(())
    }

    /// The conditions when the scenario lists them: the list must hold the
    /// baseline, and every `condition` must name one of them.
    fn listed_conditions(
        &self,
        list: &Spanned<Vec<Spanned<String>>>,
        baseline: &str,
        baseline_raw: Option<&Spanned<String>>,
        mentions: &[Mention],
    ) -> R<Vec<String>> {
        if list.get_ref().is_empty() {
            return Err(self
                .err(&list.span(), "conditions", "the list of conditions is empty")
                .expected("the scenario's condition names, e.g. conditions = [\"existing\", \"proposed\"]"));
        }
        let mut names: Vec<String> = Vec::new();
        for n in list.get_ref() {
            self.name_text(n, "conditions")?;
            if names.contains(n.get_ref()) {
                return Err(self
                    .err(
                        &n.span(),
                        "conditions",
                        format!("\"{}\" is listed twice", n.get_ref()),
                    )
                    .expected("each condition listed once"));
            }
            names.push(n.get_ref().clone());
        }
        if !names.iter().any(|n| n == baseline) {
            let (span, ctx) = match baseline_raw {
                Some(b) => (b.span(), "baseline"),
                None => (list.span(), "conditions"),
            };
            let e = self
                .err(
                    &span,
                    ctx,
                    format!(
                        "the baseline condition \"{baseline}\" is not in the `conditions` list"
                    ),
                )
                .expected(format!("a baseline among {}", quoted(&names)));
            return Err(match cover::nearest(baseline, names.iter().map(String::as_str)) {
                Some(h) => e.hint(format!("did you mean \"{h}\"? The baseline is set by `baseline = \"{h}\"`")),
                None if baseline_raw.is_none() => e.hint(format!(
                    "without `baseline` the baseline is \"existing\"; name yours with `baseline = \"...\"`, or add \"{baseline}\" to the list"
                )),
                None => e.hint(format!("add \"{baseline}\" to the list")),
            });
        }
        for m in mentions {
            if !names.contains(&m.name) {
                let e = self
                    .err(
                        &m.span,
                        &m.ctx,
                        format!("\"{}\" is not one of the scenario's conditions", m.name),
                    )
                    .expected(format!(
                        "one of {} (the `conditions` list at the top)",
                        quoted(&names)
                    ));
                return Err(
                    match cover::nearest(&m.name, names.iter().map(String::as_str)) {
                        Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                        None => e.hint(format!(
                            "add \"{}\" to `conditions` if it is a new condition",
                            m.name
                        )),
                    },
                );
            }
        }
        let mut out = vec![baseline.to_string()];
        out.extend(names.into_iter().filter(|n| n != baseline));
        Ok(out)
    }

    /// Without a `conditions` list, two condition names a slip apart (see
    /// [`condition_slip`]) are an error: the name used by fewer elements is
    /// taken for the slip.
    fn condition_slips(
        &self,
        baseline: &str,
        baseline_raw: Option<&Spanned<String>>,
        mentions: &[Mention],
    ) -> R<()> {
        let mut names: Vec<&str> = vec![baseline];
        for m in mentions {
            if !names.contains(&m.name.as_str()) {
                names.push(&m.name);
            }
        }
        let uses = |n: &str| mentions.iter().filter(|m| m.name == n).count();
        for i in 0..names.len() {
            for j in i + 1..names.len() {
                let (a, b) = (names[i], names[j]);
                if !condition_slip(a, b) {
                    continue;
                }
                // The baseline named by `baseline` counts as one more use.
                let ua = uses(a) + usize::from(i == 0 && baseline_raw.is_some());
                let ub = uses(b);
                let (slip, meant) = if ua < ub && (uses(a) > 0 || baseline_raw.is_some()) {
                    (a, b)
                } else {
                    (b, a)
                };
                let (span, ctx) = match mentions.iter().find(|m| m.name == slip) {
                    Some(m) => (m.span.clone(), m.ctx.clone()),
                    None => (
                        baseline_raw.map(|b| b.span()).unwrap_or(0..0),
                        "baseline".to_string(),
                    ),
                };
                let how = if slip.to_lowercase() == meant.to_lowercase() {
                    "differs only in case from".to_string()
                } else {
                    let d = cover::edit_distance(&slip.to_lowercase(), &meant.to_lowercase());
                    format!("is {d} letter{} away from", if d == 1 { "" } else { "s" })
                };
                let mut all: Vec<String> = names.iter().map(|n| n.to_string()).collect();
                all.sort_by_key(|n| usize::from(n != baseline));
                let mut hint = format!("did you mean \"{meant}\"?");
                if meant == baseline && baseline_raw.is_none() {
                    hint.push_str(&format!(
                        " (or, if \"{slip}\" is the baseline, say so with `baseline = \"{slip}\"`)"
                    ));
                }
                hint.push_str(&format!(
                    " If both are meant, list the conditions at the top of the scenario: conditions = [{}]",
                    all.iter()
                        .map(|n| format!("\"{n}\""))
                        .collect::<Vec<_>>()
                        .join(", ")
                ));
                return Err(self
                    .err(
                        &span,
                        &ctx,
                        format!("condition \"{slip}\" {how} condition \"{meant}\", so it looks like a slip"),
                    )
                    .expected("condition names that differ clearly, or a `conditions = [...]` list at the top that names every condition")
                    .hint(hint));
            }
        }
        Ok(())
    }

    fn build(&mut self, raw: RawScenario) -> R<Study> {
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

        // Names: unique across every element and point (they are `to` targets).
        let mut names: HashMap<String, (&'static str, std::ops::Range<usize>)> = HashMap::new();
        let mut check_name = |this: &Self, n: &Spanned<String>, kind: &'static str| -> R<()> {
            this.name_text(n, &format!("{kind}, name"))?;
            let s = n.get_ref().trim();
            if let Some((k, first)) = names.get(s) {
                let (l, _) = this.src.line_col(first.start);
                return Err(this
                    .err(
                        &n.span(),
                        &format!("{kind} \"{s}\", name"),
                        format!("the name \"{s}\" is already used by a {k} (line {l})"),
                    )
                    .expected("a name used once"));
            }
            names.insert(s.to_string(), (kind, n.span()));
            Ok(())
        };
        for c in &raw.catchment {
            check_name(self, &c.get_ref().name, "catchment")?;
        }
        for p in &raw.pond {
            check_name(self, &p.get_ref().name, "pond")?;
        }
        for i in &raw.inflow {
            check_name(self, &i.get_ref().name, "inflow")?;
        }
        for p in &raw.point {
            check_name(self, &p.get_ref().name, "point")?;
        }
        let mut storm_names: HashMap<String, std::ops::Range<usize>> = HashMap::new();
        for s in &raw.storm {
            let n = &s.get_ref().name;
            self.name_text(n, "storm, name")?;
            if let Some(first) = storm_names.get(n.get_ref()) {
                let (l, _) = self.src.line_col(first.start);
                return Err(self
                    .err(
                        &n.span(),
                        &format!("storm \"{}\", name", n.get_ref()),
                        format!("the storm name is already used (line {l})"),
                    )
                    .expected("each storm named once"));
            }
            storm_names.insert(n.get_ref().clone(), n.span());
        }
        let mut record_names: HashMap<String, ()> = HashMap::new();
        for r in &raw.record {
            let n = &r.get_ref().name;
            self.name_text(n, "record, name")?;
            if record_names.insert(n.get_ref().clone(), ()).is_some() {
                return Err(self
                    .err(
                        &n.span(),
                        &format!("record \"{}\", name", n.get_ref()),
                        "the record name is already used",
                    )
                    .expected("each record named once"));
            }
        }

        self.check_file_name_parts(&raw)?;

        // Conditions, in order of first mention, baseline first.
        // Conditions: the baseline first, then the `conditions` list, or
        // (without a list) the names in order of first mention.
        let baseline_name = raw
            .baseline
            .as_ref()
            .map(|b| b.get_ref().clone())
            .unwrap_or_else(|| "existing".to_string());
        if let Some(b) = &raw.baseline {
            self.name_text(b, "baseline")?;
        }
        let mut mentions: Vec<Mention> = Vec::new();
        let mut mention = |list: &Option<Spanned<NameList>>, kind: &str, name: &Spanned<String>| {
            if let Some(l) = list {
                for c in &l.get_ref().0 {
                    mentions.push(Mention {
                        name: c.clone(),
                        span: l.span(),
                        ctx: format!("{kind} \"{}\", condition", name.get_ref()),
                    });
                }
            }
        };
        for c in &raw.catchment {
            mention(&c.get_ref().condition, "catchment", &c.get_ref().name);
        }
        for p in &raw.pond {
            mention(&p.get_ref().condition, "pond", &p.get_ref().name);
        }
        for i in &raw.inflow {
            mention(&i.get_ref().condition, "inflow", &i.get_ref().name);
        }
        for m in &mentions {
            self.name_text(&Spanned::new(m.span.clone(), m.name.clone()), &m.ctx)?;
        }
        let conditions = match &raw.conditions {
            Some(list) => {
                self.listed_conditions(list, &baseline_name, raw.baseline.as_ref(), &mentions)?
            }
            None => {
                self.condition_slips(&baseline_name, raw.baseline.as_ref(), &mentions)?;
                let mut conditions = vec![baseline_name.clone()];
                for m in &mentions {
                    if !conditions.contains(&m.name) {
                        conditions.push(m.name.clone());
                    }
                }
                conditions
            }
        };

        let storms = raw
            .storm
            .iter()
            .map(|s| self.storm(s))
            .collect::<R<Vec<_>>>()?;
        let storm_index = |n: &str| storms.iter().position(|s: &Storm| s.name == n);

        // Elements.
        let mut pending = Vec::new();
        let mut kinds = Vec::new();
        for c in &raw.catchment {
            let rc = c.get_ref();
            let ctx = format!("catchment \"{}\"", rc.name.get_ref());
            pending.push(Pending {
                name: rc.name.get_ref().trim().to_string(),
                name_span: rc.name.span(),
                conditions: rc.condition.clone(),
                to: rc.to.clone(),
                lag: rc.lag.clone(),
                table_span: c.span(),
                ctx: ctx.clone(),
            });
            kinds.push(ElementKind::Catchment(self.catchment(
                rc,
                &c.span(),
                &ctx,
                p2_in,
            )?));
        }
        let mut sizing_raw = Vec::new();
        for p in &raw.pond {
            let rp = p.get_ref();
            let ctx = format!("pond \"{}\"", rp.name.get_ref());
            pending.push(Pending {
                name: rp.name.get_ref().trim().to_string(),
                name_span: rp.name.span(),
                conditions: rp.condition.clone(),
                to: rp.to.clone(),
                lag: None,
                table_span: p.span(),
                ctx: ctx.clone(),
            });
            let element_index = pending.len() - 1;
            let (pond, sized) = self.pond(rp, &p.span(), &ctx)?;
            for mut s in sized {
                s.element = element_index;
                sizing_raw.push(s);
            }
            kinds.push(ElementKind::Pond(pond));
        }
        for i in &raw.inflow {
            let ri = i.get_ref();
            let ctx = format!("inflow \"{}\"", ri.name.get_ref());
            pending.push(Pending {
                name: ri.name.get_ref().trim().to_string(),
                name_span: ri.name.span(),
                conditions: ri.condition.clone(),
                to: ri.to.clone(),
                lag: ri.lag.clone(),
                table_span: i.span(),
                ctx: ctx.clone(),
            });
            let storm = match &ri.storm {
                Some(s) => Some(storm_index(s.get_ref()).ok_or_else(|| {
                    let hint = cover::nearest(s.get_ref(), storms.iter().map(|s| s.name.as_str()));
                    let e = self
                        .err(
                            &s.span(),
                            &format!("{ctx}, storm"),
                            format!("no storm is named \"{}\"", s.get_ref()),
                        )
                        .expected("the name of a [[storm]]");
                    match hint {
                        Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                        None => e,
                    }
                })?),
                None => None,
            };
            kinds.push(ElementKind::Inflow(self.inflow(
                ri,
                &i.span(),
                &ctx,
                storm,
            )?));
        }

        let point_names: Vec<String> = raw
            .point
            .iter()
            .map(|p| p.get_ref().name.get_ref().trim().to_string())
            .collect();
        let element_names: Vec<String> = pending.iter().map(|p| p.name.clone()).collect();
        let mut elements = Vec::new();
        for (p, kind) in pending.into_iter().zip(kinds) {
            let mut membership = vec![false; conditions.len()];
            match &p.conditions {
                Some(l) => {
                    if l.get_ref().0.is_empty() {
                        return Err(self
                            .err(
                                &l.span(),
                                &format!("{}, condition", p.ctx),
                                "the list of conditions is empty",
                            )
                            .expected("a condition name or a list of them"));
                    }
                    for c in &l.get_ref().0 {
                        if let Some(i) = conditions.iter().position(|x| x == c) {
                            membership[i] = true;
                        }
                    }
                }
                None => membership.iter_mut().for_each(|m| *m = true),
            }
            let to_raw = self.req(
                &p.to,
                &p.table_span,
                &p.ctx,
                "to",
                "\"the name of a pond or point\"",
            )?;
            let tname = to_raw.get_ref().trim();
            let to = if let Some(i) = point_names.iter().position(|n| n == tname) {
                Target::Point(i)
            } else if let Some(i) = element_names.iter().position(|n| n == tname) {
                if !matches!(kind_of(&element_names, i, &raw), "pond") {
                    return Err(self
                        .err(
                            &to_raw.span(),
                            &format!("{}, to", p.ctx),
                            format!(
                                "\"{tname}\" is a {}; flow can only go to a pond or a point",
                                kind_of(&element_names, i, &raw)
                            ),
                        )
                        .expected("the name of a pond or point"));
                }
                if element_names.get(i) == Some(&p.name) {
                    return Err(self
                        .err(
                            &to_raw.span(),
                            &format!("{}, to", p.ctx),
                            "an element cannot drain to itself",
                        )
                        .expected("the name of a pond or point downstream"));
                }
                Target::Element(i)
            } else {
                let targets: Vec<&str> = point_names
                    .iter()
                    .map(String::as_str)
                    .chain(
                        element_names
                            .iter()
                            .enumerate()
                            .filter(|(k, _)| kind_of(&element_names, *k, &raw) == "pond")
                            .map(|(_, n)| n.as_str()),
                    )
                    .collect();
                let e = self
                    .err(
                        &to_raw.span(),
                        &format!("{}, to", p.ctx),
                        format!("nothing is named \"{tname}\""),
                    )
                    .expected("the name of a pond or point");
                return Err(if point_names.is_empty() {
                    e.hint(format!(
                        "the scenario has no [[point]]; add one with name = \"{tname}\""
                    ))
                } else {
                    match cover::nearest(tname, targets.iter().copied()) {
                        Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                        None => e.hint(format!(
                            "the ponds and points are {}",
                            targets
                                .iter()
                                .map(|n| format!("\"{n}\""))
                                .collect::<Vec<_>>()
                                .join(", ")
                        )),
                    }
                });
            };
            let lag_h = match &p.lag {
                Some(l) => {
                    let v = self.qty(l, Quantity::Time, &format!("{}, lag", p.ctx))?;
                    if v < 0.0 {
                        return Err(self
                            .err(
                                &l.span(),
                                &format!("{}, lag", p.ctx),
                                "a lag cannot be negative",
                            )
                            .expected("a time of zero or more"));
                    }
                    if v > MAX_LAG_H {
                        return Err(self
                            .err(
                                &l.span(),
                                &format!("{}, lag", p.ctx),
                                format!(
                                    "a lag of {} h is longer than runnel's limit of 31 days ({} h)",
                                    units::short(v, 4),
                                    units::short(MAX_LAG_H, 4)
                                ),
                            )
                            .expected("a lag of at most 31 days (\"744 h\")")
                            .hint("check the unit: a lag is usually minutes or hours"));
                    }
                    v
                }
                None => 0.0,
            };
            let _ = &p.name_span;
            elements.push(Element {
                name: p.name,
                conditions: membership,
                to,
                lag_h,
                kind,
            });
        }

        // Every element's path must reach a point in each of its conditions.
        for (i, e) in elements.iter().enumerate() {
            for (c, cname) in conditions.iter().enumerate() {
                if !e.conditions[c] {
                    continue;
                }
                let mut seen = vec![false; elements.len()];
                let mut at = i;
                loop {
                    if seen[at] {
                        // `at` lies on the loop: name it and the loop from it.
                        let span = &raw_to_span(&raw, at);
                        return Err(self
                            .err(
                                span,
                                &format!(
                                    "{} \"{}\", to",
                                    elements[at].kind_word(),
                                    elements[at].name
                                ),
                                "the flow path loops back on itself (a cycle)",
                            )
                            .expected("every path to end at a point")
                            .hint(cycle_text(&elements, at)));
                    }
                    seen[at] = true;
                    match elements[at].to {
                        Target::Point(_) => break,
                        Target::Element(j) => {
                            if !elements[j].conditions[c] {
                                let span = &raw_to_span(&raw, at);
                                return Err(self
                                    .err(span, &format!("{} \"{}\", to", elements[at].kind_word(), elements[at].name), format!("in condition \"{cname}\" it drains to \"{}\", which is not part of that condition", elements[j].name))
                                    .expected(format!("a target that belongs to condition \"{cname}\""))
                                    .hint(format!("add \"{cname}\" to the `condition` list of \"{}\", or give this element a condition list without it", elements[j].name)));
                            }
                            at = j;
                        }
                    }
                }
            }
        }

        // Conditions that never reach a point are an error.
        if elements.is_empty() {
            return Err(self
                .src
                .error("the scenario has no [[catchment]], [[pond]] or [[inflow]]")
                .expected("at least one catchment that drains to a [[point]]"));
        }
        // A scenario whose elements all belong to one condition other than
        // the baseline (a pond to route, nothing to compare) runs without a
        // baseline: limits that need it are reported "not checked".
        let baseline_empty = conditions.len() == 2 && !elements.iter().any(|e| e.conditions[0]);
        for (c, cname) in conditions.iter().enumerate() {
            if baseline_empty && c == 0 {
                continue;
            }
            if !elements.iter().any(|e| e.conditions[c]) {
                let Some(span) = raw.baseline.as_ref().map(|b| b.span()) else {
                    return Err(self
                        .src
                        .error(format!("no element belongs to the baseline condition \"{cname}\", so it never reaches a point"))
                        .expected("elements with `condition = \"existing\"` (or no `condition`)")
                        .hint("name the baseline with `baseline = \"...\"` at the top of the scenario"));
                };
                return Err(self
                    .err(&span, "baseline", format!("condition \"{cname}\" has no catchment, pond or inflow, so it never reaches a point"))
                    .expected("at least one element in each condition")
                    .hint(if c == 0 { "name the baseline with `baseline = \"...\"`, or give elements `condition = \"existing\"`".to_string() } else { "check the spelling of the condition lists".to_string() }));
            }
        }
        if raw.point.is_empty() && !elements.is_empty() {
            return Err(self
                .src
                .error("the scenario has no [[point]]")
                .expected("at least one [[point]] where conditions are compared"));
        }

        // Points and limits.
        let mut points = Vec::new();
        for p in &raw.point {
            points.push(self.point(p, &conditions, &storms)?);
        }
        for (pi, p) in points.iter().enumerate() {
            if baseline_empty {
                let mut needs: Vec<String> = Vec::new();
                for (l, t) in p.limits.iter().zip(&p.limit_text) {
                    let missing = matches!(l, Limit::Relative { condition: 0, .. });
                    let said = format!("limit \"{t}\"");
                    if missing && !needs.contains(&said) {
                        needs.push(said);
                    }
                }
                if p.durations.is_some() && !raw.record.is_empty() {
                    needs.push("flow-duration rule".to_string());
                }
                if !needs.is_empty() {
                    self.warnings.push(Warning::NoBaseline {
                        point: p.name.clone(),
                        what: if needs.len() == 1 {
                            format!("its {} needs", needs[0])
                        } else {
                            format!("its {} need", needs.join(" and its "))
                        },
                        baseline: conditions[0].clone(),
                        condition: conditions[1].clone(),
                    });
                }
            }
            for (c, cname) in conditions.iter().enumerate() {
                if baseline_empty && c == 0 {
                    continue;
                }
                let reaches = elements
                    .iter()
                    .any(|e| e.conditions[c] && e.to == Target::Point(pi));
                if !reaches {
                    self.warnings.push(Warning::PointNotReached {
                        point: p.name.clone(),
                        condition: cname.clone(),
                    });
                }
            }
        }

        // Step.
        let min_tc = elements
            .iter()
            .filter_map(|e| match &e.kind {
                ElementKind::Catchment(c) => Some(c.tc_h),
                _ => None,
            })
            .fold(f64::INFINITY, f64::min);
        let (step_h, step_given) = match &raw.step {
            Some(s) => {
                let v = self.qty(s, Quantity::Time, "step")?;
                if v <= 0.0 {
                    return Err(self
                        .err(
                            &s.span(),
                            "step",
                            format!("the step must be positive, got {}", show(s.get_ref())),
                        )
                        .expected("a time such as \"2 min\""));
                }
                (v, true)
            }
            None => (default_step_h(min_tc), false),
        };
        // Paths are free of cycles here (checked above).
        let max_path_lag_h = (0..elements.len())
            .map(|i| {
                let mut lag = 0.0;
                let mut at = i;
                for _ in 0..elements.len() {
                    lag += elements[at].lag_h;
                    match elements[at].to {
                        Target::Element(j) => at = j,
                        Target::Point(_) => break,
                    }
                }
                lag
            })
            .fold(0.0, f64::max);
        for (si, s) in storms.iter().enumerate() {
            // The run lasts until the rain and every inflow end, plus the
            // longest sum of lags down to a point, plus the tail.
            let inflow_end = elements
                .iter()
                .filter_map(|e| match &e.kind {
                    ElementKind::Inflow(i) if i.storm.is_none() || i.storm == Some(si) => {
                        Some(i.end_h())
                    }
                    _ => None,
                })
                .fold(0.0, f64::max);
            let n =
                ((s.rain_end_h().max(inflow_end) + max_path_lag_h + 7.0 * 24.0) / step_h).ceil();
            if n > MAX_STEPS as f64 {
                let least = format_step_up((s.rain_end_h() + 7.0 * 24.0) / MAX_STEPS as f64);
                return Err(match &raw.step {
                    Some(st) => self
                        .err(
                            &st.span(),
                            "step",
                            format!(
                                "storm \"{}\" would need {n:.0} steps at a step of {}, more than runnel's limit of {MAX_STEPS}",
                                s.name,
                                format_step_up(step_h)
                            ),
                        )
                        .expected("a step that gives at most 50 million steps per storm")
                        .hint(format!(
                            "use a step of at least {least}; without `step` runnel picks {}",
                            format_step_up(default_step_h(min_tc))
                        )),
                    None => {
                        let span = raw.storm.get(si).map(|x| x.span()).unwrap_or(0..0);
                        let msg = format!(
                            "the storm lasts {} h; with its 7-day tail it would need {n:.0} steps at the step of {}, more than runnel's limit of {MAX_STEPS}",
                            units::sig(s.rain_end_h(), 4),
                            format_step_up(step_h)
                        );
                        self.err(&span, &format!("storm \"{}\"", s.name), msg)
                            .expected(
                                "a storm (and its tail of 7 days) that fits in 50 million steps",
                            )
                            .hint(format!(
                                "shorten the storm, or give a coarser `step` of at least {least}"
                            ))
                    }
                });
            }
        }

        // Warnings that depend on the step and storms.
        for e in &elements {
            if let ElementKind::Catchment(c) = &e.kind {
                let tp = unit_hydrograph::time_to_peak_h(step_h, timing::lag_h(c.tc_h));
                let base_h = c.shape.time_base_over_tp() * tp;
                if base_h > crate::engine::network::TAIL_H {
                    self.warnings.push(Warning::Note(format!(
                        "catchment \"{}\": its unit hydrograph lasts {base_h:.0} h, longer than the 7 days a storm runs after its rain; the end of its runoff falls outside the run",
                        e.name
                    )));
                }
                if step_h > 0.25 * tp {
                    self.warnings.push(Warning::StepCoarse {
                        catchment: e.name.clone(),
                        step_h,
                        tp_h: tp,
                    });
                }
                for s in &storms {
                    if s.rain_end_h() < c.tc_h {
                        self.warnings.push(Warning::StormShorterThanTc {
                            storm: s.name.clone(),
                            catchment: e.name.clone(),
                            duration_h: s.rain_end_h(),
                            tc_h: c.tc_h,
                        });
                    }
                }
            }
        }

        // Each pond's storage-indication relation must increase strictly at this step.
        for (i, e) in elements.iter().enumerate() {
            if let ElementKind::Pond(p) = &e.kind {
                let top = p
                    .storage
                    .rows()
                    .last()
                    .map(|r| r.0)
                    .unwrap_or(0.0)
                    .max(p.top_ft.unwrap_or(f64::NEG_INFINITY));
                let vmax = p.storage.volume_ft3(top + 0.5);
                if let Err(err) = crate::engine::network::pond_table_to(p, step_h * 3600.0, vmax) {
                    let span = raw
                        .pond
                        .get(i - raw.catchment.len())
                        .map(|x| x.span())
                        .unwrap_or(0..0);
                    return Err(self
                        .err(
                            &span,
                            &format!("pond \"{}\"", e.name),
                            format!("the stage-storage-discharge table cannot be routed: {err}"),
                        )
                        .expected(
                            "storage that grows with stage (2S/dt + O strictly increasing)",
                        ));
                }
            }
        }

        let records = raw
            .record
            .iter()
            .map(|r| self.record(r))
            .collect::<R<Vec<_>>>()?;

        // A unit hydrograph must fit in memory at every step it is used at
        // (a very long Tc, e.g. from a near-zero slope, would not).
        let finest_step_h = records.iter().map(|r| r.step_h).fold(step_h, f64::min);
        for (i, e) in elements.iter().enumerate() {
            if let ElementKind::Catchment(c) = &e.kind {
                let tp_h = unit_hydrograph::time_to_peak_h(finest_step_h, timing::lag_h(c.tc_h));
                let n = c.shape.time_base_over_tp() * tp_h / finest_step_h;
                if n.is_nan() || n > MAX_STEPS as f64 {
                    let rc = raw.catchment.get(i).map(|c| c.get_ref());
                    let span = rc
                        .and_then(|c| c.tc.as_ref().map(|t| t.span()))
                        .or_else(|| raw.catchment.get(i).map(|c| c.span()))
                        .unwrap_or(0..0);
                    return Err(self
                        .err(
                            &span,
                            &format!("catchment \"{}\"", e.name),
                            format!(
                                "the time of concentration works out to {:.3e} h, so its unit hydrograph would need {n:.3e} steps, more than runnel's limit of {MAX_STEPS}",
                                c.tc_h
                            ),
                        )
                        .expected("a time of concentration of hours, not years")
                        .hint("check the flow path's lengths, slopes and Manning n, and `p2`"));
                }
            }
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
        };
        self.check_result_files(&study)?;
        Ok(study)
    }

    /// Two storms, ponds, points or records whose names give the same
    /// file name (`10/yr` and `10-yr` both become `10-yr`) would write the
    /// same result files: an input error naming both.
    fn check_file_name_parts(&self, raw: &RawScenario) -> R<()> {
        use crate::cli::output::{
            pond_plot_name, record_plot_base, storm_csv_name, storm_plot_name,
        };
        let storm = raw.storm.first().map_or_else(
            || "STORM".to_string(),
            |s| s.get_ref().name.get_ref().clone(),
        );
        let point = raw.point.first().map_or_else(
            || "POINT".to_string(),
            |p| p.get_ref().name.get_ref().trim().to_string(),
        );
        let baseline = raw
            .baseline
            .as_ref()
            .map_or_else(|| "existing".to_string(), |b| b.get_ref().clone());
        let record_plot = |r: &str, p: &str| format!("{}-duration.png", record_plot_base(r, p));
        // Per kind: each name and one file it writes.
        let kinds: [(&str, Vec<NamedFile>); 4] = [
            (
                "storm",
                raw.storm
                    .iter()
                    .map(|s| {
                        let n = &s.get_ref().name;
                        (n, storm_csv_name(n.get_ref()))
                    })
                    .collect(),
            ),
            (
                "pond",
                raw.pond
                    .iter()
                    .map(|p| {
                        let p = p.get_ref();
                        let condition = p
                            .condition
                            .as_ref()
                            .and_then(|c| c.get_ref().0.first().cloned())
                            .unwrap_or_else(|| baseline.clone());
                        let n = &p.name;
                        (n, pond_plot_name(n.get_ref().trim(), &storm, &condition))
                    })
                    .collect(),
            ),
            (
                "point",
                raw.point
                    .iter()
                    .map(|p| {
                        let n = &p.get_ref().name;
                        let name = n.get_ref().trim();
                        let file = match (raw.storm.is_empty(), raw.record.first()) {
                            (true, Some(r)) => record_plot(r.get_ref().name.get_ref(), name),
                            _ => storm_plot_name(&storm, name),
                        };
                        (n, file)
                    })
                    .collect(),
            ),
            (
                "record",
                raw.record
                    .iter()
                    .map(|r| {
                        let n = &r.get_ref().name;
                        (n, record_plot(n.get_ref(), &point))
                    })
                    .collect(),
            ),
        ];
        for (kind, names) in &kinds {
            let mut seen: HashMap<String, &Spanned<String>> = HashMap::new();
            for (n, file) in names {
                let name = n.get_ref().trim();
                let part = crate::cli::output::slug(name);
                if let Some(other) = seen.get(&part) {
                    let (l, _) = self.src.line_col(other.span().start);
                    return Err(self
                        .err(
                            &n.span(),
                            &format!("{kind} \"{name}\", name"),
                            format!(
                                "{kind} \"{name}\" and {kind} \"{}\" (line {l}) give the same file names: both would write {file}",
                                other.get_ref().trim(),
                            ),
                        )
                        .expected("names that stay different in file names, where runnel keeps letters (in lower case), digits, '-', '_' and '.' and turns every other character into '-'")
                        .hint(format!("rename one of the two {kind}s")));
                }
                seen.insert(part, n);
            }
        }
        Ok(())
    }

    /// Every result file name of a run is distinct and fits a file system
    /// (names of different kinds can still meet: storm "a-b" at point "c"
    /// and storm "a" at point "b-c" both give `storm-a-b-c.png`).
    fn check_result_files(&self, study: &Study) -> R<()> {
        let mut seen: HashMap<String, String> = HashMap::new();
        for (file, from) in crate::cli::output::result_files(study) {
            if file.len() > 255 {
                return Err(self
                    .src
                    .error(format!(
                        "{from} would write a file named with {} bytes ({}...); file systems allow 255",
                        file.len(),
                        file.chars().take(40).collect::<String>()
                    ))
                    .expected("names short enough for file names")
                    .hint("shorten the name"));
            }
            if let Some(other) = seen.get(&file) {
                return Err(self
                    .src
                    .error(format!("{other} and {from} would both write {file}"))
                    .expected("names that give distinct file names")
                    .hint("rename one of them"));
            }
            seen.insert(file, from);
        }
        Ok(())
    }

    fn storm(&mut self, s: &Spanned<RawStorm>) -> R<Storm> {
        let rs = s.get_ref();
        let name = rs.name.get_ref().clone();
        let ctx = format!("storm \"{name}\"");
        if let Some(g) = &rs.gauge {
            if let Some(p) = &rs.pattern {
                return Err(self
                    .err(
                        &p.span(),
                        &format!("{ctx}, pattern"),
                        "a storm takes either `gauge` or `pattern`, not both",
                    )
                    .expected("one of them"));
            }
            let (series, path) = self.gauge(g, &rs.interval, &rs.missing, &ctx, 0)?;
            return Ok(Storm {
                name,
                rain: StormRain::Gauge {
                    path,
                    interval_h: series.interval_s as f64 / 3600.0,
                    start_s: series.start_s,
                    depth_in: series
                        .depth
                        .iter()
                        .map(|d| d * self.depth_factor())
                        .collect(),
                },
            });
        }
        let pat = self.req(
            &rs.pattern,
            &s.span(),
            &ctx,
            "pattern",
            "\"nrcs-type-ii\" (or a `gauge` file)",
        )?;
        let depth_raw = self.req(&rs.depth, &s.span(), &ctx, "depth", "\"5.1 in\"")?;
        let depth = self.positive(depth_raw, Quantity::Depth, &format!("{ctx}, depth"))?;
        if !(STORM_DEPTH_USUAL_IN.0..=STORM_DEPTH_USUAL_IN.1).contains(&depth) {
            let (value, usual, hint) = self.depth_slip(depth_raw, depth, STORM_DEPTH_USUAL_IN);
            self.warnings.push(Warning::StormDepthUnusual {
                storm: name.clone(),
                value,
                usual,
                hint,
            });
        }
        let key = pat.get_ref().to_ascii_lowercase();
        let nrcs = match key.as_str() {
            "nrcs-type-i" => Some(NrcsType::I),
            "nrcs-type-ia" => Some(NrcsType::IA),
            "nrcs-type-ii" => Some(NrcsType::II),
            "nrcs-type-iii" => Some(NrcsType::III),
            "uniform" | "table" => None,
            other => {
                let keys = [
                    "nrcs-type-i",
                    "nrcs-type-ia",
                    "nrcs-type-ii",
                    "nrcs-type-iii",
                    "uniform",
                    "table",
                ];
                let e = self
                    .err(&pat.span(), &format!("{ctx}, pattern"), format!("unknown pattern \"{other}\""))
                    .expected("nrcs-type-i | nrcs-type-ia | nrcs-type-ii | nrcs-type-iii | uniform | table");
                return Err(match cover::nearest(other, keys) {
                    Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                    None => e,
                });
            }
        };
        let duration_h = match (&rs.duration, nrcs) {
            (Some(d), Some(_)) => {
                let v = self.qty(d, Quantity::Time, &format!("{ctx}, duration"))?;
                if (v - 24.0).abs() > 1e-9 {
                    return Err(self
                        .err(
                            &d.span(),
                            &format!("{ctx}, duration"),
                            "the NRCS patterns are 24-hour storms",
                        )
                        .expected("\"24 h\" or no `duration`"));
                }
                24.0
            }
            (None, Some(_)) => 24.0,
            (Some(d), None) => self.positive(d, Quantity::Time, &format!("{ctx}, duration"))?,
            (None, None) => {
                return Err(self
                    .err(&s.span(), &ctx, "missing required key `duration`")
                    .expected("`duration = \"6 h\"` for uniform and table storms"));
            }
        };
        let curve = match (key.as_str(), nrcs) {
            (_, Some(t)) => t.mass_curve(),
            ("uniform", _) => MassCurve::uniform(),
            _ => {
                let t = self.req(
                    &rs.table,
                    &s.span(),
                    &ctx,
                    "table",
                    "[[0.0, 0.0], ..., [1.0, 1.0]]",
                )?;
                let rows = self.pairs(t, &format!("{ctx}, table"))?;
                MassCurve::from_table(&rows).map_err(|e| {
                    self.err(&t.span(), &format!("{ctx}, table"), e.to_string())
                        .expected("a mass curve from [0, 0] to [1, 1] that never decreases")
                })?
            }
        };
        if rs.table.is_some()
            && key != "table"
            && let Some(t) = &rs.table
        {
            return Err(self
                .err(
                    &t.span(),
                    &format!("{ctx}, table"),
                    format!("`table` is only used with pattern = \"table\", not \"{key}\""),
                )
                .expected("no `table` key, or pattern = \"table\""));
        }
        Ok(Storm {
            name,
            rain: StormRain::Pattern {
                curve,
                nrcs,
                key,
                depth_in: depth,
                duration_h,
            },
        })
    }

    fn depth_factor(&self) -> f64 {
        Quantity::Depth.bare_factor(self.units).unwrap_or(1.0)
    }

    fn gauge(
        &mut self,
        g: &Spanned<String>,
        interval: &Option<Spanned<RawValue>>,
        missing: &Option<Spanned<String>>,
        ctx: &str,
        max_intervals: usize,
    ) -> R<(gauge::GaugeSeries, PathBuf)> {
        let path = self.resolve(g, &format!("{ctx}, gauge"))?;
        let interval_s = match interval {
            Some(v) => {
                let h = self.positive(v, Quantity::Time, &format!("{ctx}, interval"))?;
                let s = (h * 3600.0).round();
                if s < 1.0 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, interval"),
                            "the interval must be at least one second",
                        )
                        .expected("a time such as \"15 min\""));
                }
                Some(s as i64)
            }
            None => None,
        };
        let missing_zero = match missing {
            Some(m) if m.get_ref() == "zero" => true,
            Some(m) if m.get_ref() == "error" => false,
            Some(m) => {
                return Err(self
                    .err(
                        &m.span(),
                        &format!("{ctx}, missing"),
                        format!("unknown value \"{}\"", m.get_ref()),
                    )
                    .expected("\"zero\" (missing intervals have no rain) or \"error\""));
            }
            None => false,
        };
        let file = std::fs::File::open(&path).map_err(|e| {
            self.err(
                &g.span(),
                &format!("{ctx}, gauge"),
                format!("cannot read {}: {e}", path.display()),
            )
        })?;
        let size_hint = file.metadata().ok().map(|m| m.len());
        let opts = gauge::GaugeOptions {
            interval_s,
            missing_zero,
            max_intervals: if max_intervals == 0 {
                MAX_STEPS
            } else {
                max_intervals
            },
        };
        // Read in chunks: a long record's file is never held whole.
        let series = gauge::parse_gauge_reader(file, size_hint, &opts).map_err(|e| {
            let mut ie = InputError::new(&path, e.message.clone()).context(format!("{ctx}, gauge"));
            if e.line > 0 {
                ie = ie.at_line(e.line);
                if let Some(c) = e.column {
                    ie.column = Some(c);
                }
                ie.snippet = line_of_file(&path, e.line);
            }
            if !e.expected.is_empty() {
                ie = ie.expected(e.expected.clone());
            }
            ie
        })?;
        Ok((series, path))
    }

    fn pairs(&self, t: &Spanned<Rows>, ctx: &str) -> R<Vec<(f64, f64)>> {
        t.get_ref()
            .iter()
            .enumerate()
            .map(|(i, r)| match r.as_slice() {
                [a, b] if a.is_finite() && b.is_finite() => Ok((*a, *b)),
                [_, _] => Err(self
                    .err(
                        &t.span(),
                        ctx,
                        format!("row {} holds a number that is not finite", i + 1),
                    )
                    .expected("finite numbers")),
                _ => Err(self
                    .err(
                        &t.span(),
                        ctx,
                        format!("row {} has {} numbers", i + 1, r.len()),
                    )
                    .expected("rows of two numbers, e.g. [[0.0, 0.0], [1.0, 1.0]]")),
            })
            .collect()
    }

    fn catchment(
        &mut self,
        rc: &RawCatchment,
        span: &std::ops::Range<usize>,
        ctx: &str,
        p2_in: Option<f64>,
    ) -> R<Catchment> {
        let mut covers = Vec::new();
        for (i, cv) in rc.cover.iter().enumerate() {
            let c = cv.get_ref();
            let cctx = format!("{ctx}, cover {}", i + 1);
            let area = self.positive(
                self.req(&c.area, &cv.span(), &cctx, "area", "\"3.0 ac\"")?,
                Quantity::Area,
                &format!("{cctx}, area"),
            )?;
            let (cn, label, pervious) = match (&c.cn, &c.land) {
                (Some(_), Some(l)) => {
                    return Err(self
                        .err(
                            &l.span(),
                            &format!("{cctx}, land"),
                            "a cover takes either `cn` or `land` + `soil`, not both",
                        )
                        .expected("one of them"));
                }
                (Some(cn), None) => {
                    let v = self.cn(cn, &format!("{cctx}, cn"))?;
                    (
                        v,
                        c.note.clone().unwrap_or_else(|| "CN given".into()),
                        v < 98.0,
                    )
                }
                (None, Some(l)) => {
                    let soil_raw = self.req(
                        &c.soil,
                        &cv.span(),
                        &cctx,
                        "soil",
                        "\"A\", \"B\", \"C\" or \"D\"",
                    )?;
                    let soil = cover::Soil::parse(soil_raw.get_ref()).ok_or_else(|| {
                        self.err(
                            &soil_raw.span(),
                            &format!("{cctx}, soil"),
                            format!("unknown hydrologic soil group \"{}\"", soil_raw.get_ref()),
                        )
                        .expected("A, B, C or D")
                    })?;
                    let cn = cover::lookup(l.get_ref(), soil).map_err(|e| {
                        self.err(&l.span(), &format!("{cctx}, land"), e.to_string())
                            .expected("a land-cover key listed in the README (\"Land covers\")")
                    })?;
                    let pervious = cover::COVERS
                        .iter()
                        .find(|e| e.key == l.get_ref())
                        .map(|e| e.pervious)
                        .unwrap_or(true);
                    (
                        cn,
                        format!(
                            "{} ({})",
                            l.get_ref(),
                            soil_raw.get_ref().to_ascii_uppercase()
                        ),
                        pervious,
                    )
                }
                (None, None) => {
                    return Err(self
                        .err(
                            &cv.span(),
                            &cctx,
                            "a cover needs `cn`, or `land` and `soil`",
                        )
                        .expected("cn = 98, or land = \"open-space-good\" with soil = \"C\""));
                }
            };
            if pervious && cn > 98.0 {
                self.warnings.push(Warning::CnHighPervious {
                    catchment: rc.name.get_ref().clone(),
                    cover: label.clone(),
                    cn,
                });
            }
            covers.push(CoverRow {
                label,
                cn,
                area_ac: area,
                pervious,
            });
        }
        let cover_total: f64 = covers.iter().map(|c| c.area_ac).sum();
        let area_ac = match &rc.area {
            Some(a) => {
                let v = self.positive(a, Quantity::Area, &format!("{ctx}, area"))?;
                if !covers.is_empty() && ((cover_total - v) / v).abs() > 0.01 {
                    let f = Quantity::Area.output_factor(self.units);
                    let u = Quantity::Area.output_unit(self.units);
                    return Err(self
                        .err(&a.span(), &format!("{ctx}, area"), format!("the covers add up to {:.4} {u} but the catchment area is {:.4} {u}", cover_total * f, v * f))
                        .expected("cover areas that add up to the catchment area within 1 %"));
                }
                v
            }
            None if !covers.is_empty() => cover_total,
            None => {
                return Err(self
                    .err(span, ctx, "missing required key `area`")
                    .expected("`area = \"6.2 ac\"`"));
            }
        };
        let cn = match (&rc.cn, covers.is_empty()) {
            (Some(cn), true) => self.cn(cn, &format!("{ctx}, cn"))?,
            (Some(cn), false) => {
                return Err(self
                    .err(
                        &cn.span(),
                        &format!("{ctx}, cn"),
                        "give either `cn` or a list of [[catchment.cover]], not both",
                    )
                    .expected("one of them"));
            }
            (None, false) => {
                runoff::composite_cn(&covers.iter().map(|c| (c.cn, c.area_ac)).collect::<Vec<_>>())
                    .unwrap_or(0.0)
            }
            (None, true) => {
                return Err(self
                    .err(span, ctx, "missing `cn` (or a list of [[catchment.cover]])")
                    .expected("`cn = 84` or [[catchment.cover]] tables"));
            }
        };
        if cn < 30.0 {
            self.warnings.push(Warning::CnLow {
                catchment: rc.name.get_ref().clone(),
                cn,
            });
        }
        let lambda = match &rc.lambda {
            None => Lambda::Standard,
            Some(l) if (*l.get_ref() - 0.2).abs() < 1e-12 => Lambda::Standard,
            Some(l) if (*l.get_ref() - 0.05).abs() < 1e-12 => Lambda::Reduced,
            Some(l) => {
                return Err(self
                    .err(
                        &l.span(),
                        &format!("{ctx}, lambda"),
                        format!("lambda = {} is not supported", l.get_ref()),
                    )
                    .expected("0.2 (TR-55) or 0.05 (Hawkins et al. 2002)"));
            }
        };
        let mut segments = Vec::new();
        for (i, f) in rc.flow.iter().enumerate() {
            segments.push(self.segment(
                f,
                &format!("{ctx}, flow segment {}", i + 1),
                p2_in,
                rc.name.get_ref(),
                i + 1,
            )?);
        }
        let tc_h = match (&rc.tc, segments.is_empty()) {
            (Some(t), true) => self.positive(t, Quantity::Time, &format!("{ctx}, tc"))?,
            (Some(t), false) => {
                return Err(self
                    .err(
                        &t.span(),
                        &format!("{ctx}, tc"),
                        "give either `tc` or a flow path of [[catchment.flow]], not both",
                    )
                    .expected("one of them"));
            }
            (None, false) => timing::time_of_concentration_h(&segments, p2_in.unwrap_or(1.0)),
            (None, true) => {
                return Err(self
                    .err(
                        span,
                        ctx,
                        "missing `tc` (or a flow path of [[catchment.flow]])",
                    )
                    .expected("`tc = \"12 min\"` or [[catchment.flow]] segments"));
            }
        };
        if !(tc_h > 0.0 && tc_h.is_finite()) {
            return Err(self
                .err(
                    span,
                    ctx,
                    format!("the time of concentration works out to {tc_h} h"),
                )
                .expected("a positive, finite Tc"));
        }
        if tc_h > 24.0 {
            let (at, hint) = match &rc.tc {
                Some(t) => {
                    let hint = match t.get_ref() {
                        RawValue::Text(txt) => match units::split_number(txt) {
                            Ok((x, u)) if matches!(u.to_ascii_lowercase().as_str(), "h" | "hr" | "hrs" | "hour" | "hours") => {
                                format!("did you mean \"{} min\"?", units::short(x, 4))
                            }
                            Ok((x, u)) if matches!(u.to_ascii_lowercase().as_str(), "d" | "day" | "days") => {
                                format!("did you mean \"{} h\"?", units::short(x, 4))
                            }
                            _ => "check the value and its unit".to_string(),
                        },
                        _ => "check the value and its unit".to_string(),
                    };
                    (format!("{ctx}, tc"), hint)
                }
                None => (
                    ctx.to_string(),
                    "check each flow segment's length, slope and Manning n (`runnel check` lists every segment's travel time) and `p2`".to_string(),
                ),
            };
            self.warnings.push(Warning::TcLong {
                at,
                value: format!("{} h", units::short(tc_h, 4)),
                hint,
            });
        }
        if tc_h < 0.1 {
            self.warnings.push(Warning::TcShort {
                catchment: rc.name.get_ref().clone(),
                tc_h,
            });
        }
        let prf = match &rc.prf {
            Some(p) => self.num(p, &format!("{ctx}, prf"))?,
            None => unit_hydrograph::STANDARD_PRF,
        };
        let shape = Shape::for_prf(prf).ok_or_else(|| {
            let span = rc.prf.as_ref().map(|p| p.span()).unwrap_or(span.clone());
            self.err(
                &span,
                &format!("{ctx}, prf"),
                format!("no unit-hydrograph shape has a peak rate factor of {prf}"),
            )
            .expected("a peak rate factor between 1 and 640 (484 is the NRCS standard)")
        })?;
        Ok(Catchment {
            area_ac,
            covers,
            cn,
            lambda,
            retention_in: lambda.retention_in(cn),
            segments,
            tc_h,
            prf,
            shape,
        })
    }

    fn cn(&self, cn: &Spanned<f64>, ctx: &str) -> R<f64> {
        let v = self.num(cn, ctx)?;
        if v > 0.0 && v <= 100.0 {
            Ok(v)
        } else {
            Err(self
                .err(&cn.span(), ctx, format!("CN {v} is outside (0, 100]"))
                .expected("a curve number above 0 and at most 100"))
        }
    }

    fn segment(
        &mut self,
        f: &Spanned<RawFlow>,
        ctx: &str,
        p2_in: Option<f64>,
        catchment: &str,
        index: usize,
    ) -> R<Segment> {
        let rf = f.get_ref();
        let kind = self.req(
            &rf.kind,
            &f.span(),
            ctx,
            "kind",
            "\"sheet\", \"shallow\" or \"channel\"",
        )?;
        let length_ft = self.positive(
            self.req(&rf.length, &f.span(), ctx, "length", "\"100 ft\"")?,
            Quantity::Length,
            &format!("{ctx}, length"),
        )?;
        let slope_raw = self.req(&rf.slope, &f.span(), ctx, "slope", "0.02 or \"2 %\"")?;
        let slope = self.positive(slope_raw, Quantity::Slope, &format!("{ctx}, slope"))?;
        self.slope_warning(slope_raw, slope, kind.get_ref(), ctx);
        if let Some(n_raw) = &rf.n
            && let NumOrName::Num(n) = n_raw.get_ref()
        {
            self.manning_warning(*n, kind.get_ref(), ctx);
        }
        // A key given that this kind of segment does not use.
        let unused =
            |this: &Self, key: &str, sp: Option<std::ops::Range<usize>>, k: &str| -> R<()> {
                if let Some(sp) = sp {
                    return Err(this
                        .err(
                            &sp,
                            &format!("{ctx}, {key}"),
                            format!("`{key}` is not used by {k} flow"),
                        )
                        .expected(match k {
                            "sheet" => "kind, n, length, slope",
                            "shallow" => "kind, surface, length, slope",
                            _ => "kind, n, length, slope, section",
                        }));
                }
                Ok(())
            };
        match kind.get_ref().as_str() {
            "sheet" => {
                unused(
                    self,
                    "surface",
                    rf.surface.as_ref().map(|s| s.span()),
                    "sheet",
                )?;
                unused(
                    self,
                    "section",
                    rf.section.as_ref().map(|s| s.span()),
                    "sheet",
                )?;
                let n_raw = self.req(
                    &rf.n,
                    &f.span(),
                    ctx,
                    "n",
                    "0.15 or a surface name such as \"grass-short-prairie\"",
                )?;
                let n = match n_raw.get_ref() {
                    NumOrName::Num(x) => *x,
                    NumOrName::Name(s) => cover::sheet_flow_n(s).map_err(|e| {
                        self.err(&n_raw.span(), &format!("{ctx}, n"), e.to_string())
                            .expected("a Manning n, or a sheet-flow surface listed in the README")
                    })?,
                };
                if !(n > 0.0 && n.is_finite()) {
                    return Err(self
                        .err(
                            &n_raw.span(),
                            &format!("{ctx}, n"),
                            format!("Manning n must be positive, got {n}"),
                        )
                        .expected("a positive roughness such as 0.15"));
                }
                if p2_in.is_none() {
                    return Err(self.err(&kind.span(), ctx, "sheet flow needs the 2-year 24-hour rainfall `p2` at the top of the scenario").expected("`p2 = \"3.3 in\"` at the top level").hint("TR-55 eq. 3-3 uses P2"));
                }
                if length_ft > timing::SHEET_FLOW_GUIDANCE_FT + 1e-9 {
                    let f_out = Quantity::Length.output_factor(self.units);
                    self.warnings.push(Warning::SheetFlowLong {
                        catchment: catchment.to_string(),
                        segment: index,
                        length: format!(
                            "{:.0} {}",
                            length_ft * f_out,
                            Quantity::Length.output_unit(self.units)
                        ),
                    });
                }
                Ok(Segment::Sheet {
                    n,
                    length_ft,
                    slope,
                })
            }
            "shallow" => {
                unused(self, "n", rf.n.as_ref().map(|s| s.span()), "shallow")?;
                unused(
                    self,
                    "section",
                    rf.section.as_ref().map(|s| s.span()),
                    "shallow",
                )?;
                let s = self.req(
                    &rf.surface,
                    &f.span(),
                    ctx,
                    "surface",
                    "\"paved\" or \"unpaved\"",
                )?;
                let k = cover::shallow_velocity_coefficient(s.get_ref()).map_err(|e| {
                    self.err(&s.span(), &format!("{ctx}, surface"), e.to_string())
                        .expected("\"paved\" or \"unpaved\"")
                })?;
                Ok(Segment::Shallow {
                    k_fps: k,
                    surface: s.get_ref().clone(),
                    length_ft,
                    slope,
                })
            }
            "channel" => {
                unused(
                    self,
                    "surface",
                    rf.surface.as_ref().map(|s| s.span()),
                    "channel",
                )?;
                let n_raw = self.req(&rf.n, &f.span(), ctx, "n", "0.030")?;
                let n = match n_raw.get_ref() {
                    NumOrName::Num(x) if *x > 0.0 && x.is_finite() => *x,
                    NumOrName::Num(x) => {
                        return Err(self
                            .err(
                                &n_raw.span(),
                                &format!("{ctx}, n"),
                                format!("Manning n must be positive, got {x}"),
                            )
                            .expected("a positive roughness such as 0.030"));
                    }
                    NumOrName::Name(s) => {
                        return Err(self
                            .err(
                                &n_raw.span(),
                                &format!("{ctx}, n"),
                                format!("channel flow needs Manning n as a number, not \"{s}\""),
                            )
                            .expected("a number such as 0.030"));
                    }
                };
                let sec_raw = self.req(
                    &rf.section,
                    &f.span(),
                    ctx,
                    "section",
                    "{ shape = \"trapezoid\", bottom = \"3 ft\", side = 2.0, depth = \"1.5 ft\" }",
                )?;
                let section = self.section(sec_raw, &format!("{ctx}, section"))?;
                Ok(Segment::Channel {
                    n,
                    length_ft,
                    slope,
                    section,
                })
            }
            other => {
                let e = self
                    .err(
                        &kind.span(),
                        &format!("{ctx}, kind"),
                        format!("unknown flow kind \"{other}\""),
                    )
                    .expected("\"sheet\", \"shallow\" or \"channel\"");
                Err(
                    match cover::nearest(other, ["sheet", "shallow", "channel"]) {
                        Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                        None => e,
                    },
                )
            }
        }
    }

    fn section(&self, s: &Spanned<RawSection>, ctx: &str) -> R<Section> {
        let r = s.get_ref();
        let shape = r.shape.as_ref().map(|x| x.get_ref().to_ascii_lowercase());
        match shape.as_deref() {
            Some("trapezoid") | Some("rectangle") => {
                let bottom_ft = self.qty(
                    self.req(&r.bottom, &s.span(), ctx, "bottom", "\"3 ft\"")?,
                    Quantity::Length,
                    &format!("{ctx}, bottom"),
                )?;
                let side = match &r.side {
                    Some(v) => self.num(v, &format!("{ctx}, side"))?,
                    None if shape.as_deref() == Some("rectangle") => 0.0,
                    None => {
                        return Err(self
                            .err(&s.span(), ctx, "missing required key `side`")
                            .expected("side slope, horizontal per vertical, e.g. side = 2.0"));
                    }
                };
                let depth_ft = self.positive(
                    self.req(&r.depth, &s.span(), ctx, "depth", "\"1.5 ft\"")?,
                    Quantity::Length,
                    &format!("{ctx}, depth"),
                )?;
                if bottom_ft < 0.0 || side < 0.0 || (bottom_ft == 0.0 && side == 0.0) {
                    return Err(self
                        .err(&s.span(), ctx, "the section has no width")
                        .expected("a bottom width >= 0 and a side slope >= 0, not both zero"));
                }
                Ok(Section::Trapezoid {
                    bottom_ft,
                    side_h_per_v: side,
                    depth_ft,
                })
            }
            Some("pipe") => {
                let d = self.positive(
                    self.req(&r.diameter, &s.span(), ctx, "diameter", "\"18 in\"")?,
                    Quantity::Length,
                    &format!("{ctx}, diameter"),
                )?;
                Ok(Section::PipeFull { diameter_ft: d })
            }
            None => {
                let a = self.positive(
                    self.req(&r.flow_area, &s.span(), ctx, "flow_area", "4.5 (ft2 or m2)")?,
                    Quantity::SectionArea,
                    &format!("{ctx}, flow_area"),
                )?;
                let p = self.positive(
                    self.req(&r.perimeter, &s.span(), ctx, "perimeter", "6.1 (ft or m)")?,
                    Quantity::Length,
                    &format!("{ctx}, perimeter"),
                )?;
                Ok(Section::Given {
                    area_ft2: a,
                    perimeter_ft: p,
                })
            }
            Some(other) => {
                let span = r.shape.as_ref().map(|x| x.span()).unwrap_or(s.span());
                Err(self.err(&span, &format!("{ctx}, shape"), format!("unknown section shape \"{other}\"")).expected("\"trapezoid\", \"rectangle\", \"pipe\", or flow_area + perimeter with no shape"))
            }
        }
    }

    fn elevation(&self, v: &Spanned<RawValue>, ctx: &str) -> R<f64> {
        self.qty(v, Quantity::Length, ctx)
    }

    fn table_rows(&self, t: &Spanned<Rows>, ctx: &str, fx: f64, fy: f64) -> R<Vec<(f64, f64)>> {
        Ok(self
            .pairs(t, ctx)?
            .into_iter()
            .map(|(a, b)| (a * fx, b * fy))
            .collect())
    }

    /// Refuses table rows (in internal units) whose columns lie beyond the
    /// bounds of their quantities ([`Quantity::max_magnitude`], or `max`
    /// when given).
    fn bounded_rows(
        &self,
        rows: &[(f64, f64)],
        span: &std::ops::Range<usize>,
        ctx: &str,
        cols: [(Quantity, &str, Option<f64>); 2],
    ) -> R<()> {
        for (i, r) in rows.iter().enumerate() {
            for (k, (q, what, max)) in cols.iter().enumerate() {
                let x = if k == 0 { r.0 } else { r.1 };
                let max = max.unwrap_or(q.max_magnitude());
                if x.abs() > max {
                    let f = q.output_factor(self.units);
                    let u = q.output_unit(self.units);
                    return Err(self
                        .err(
                            span,
                            ctx,
                            format!(
                                "row {}: the {what} {} {u} is far beyond anything runnel can model (at most {} {u})",
                                i + 1,
                                big(x * f),
                                units::sig(max * f, 3)
                            ),
                        )
                        .expected(format!("{what}s of at most {} {u}", units::sig(max * f, 3)))
                        .hint("check the row for a slip (a misplaced decimal point or exponent)"));
                }
            }
        }
        Ok(())
    }

    fn pond(
        &mut self,
        rp: &RawPond,
        span: &std::ops::Range<usize>,
        ctx: &str,
    ) -> R<(Pond, Vec<SizedDim>)> {
        let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
        let af = Quantity::SectionArea.bare_factor(self.units).unwrap_or(1.0);
        let vf = Quantity::Volume.bare_factor(self.units).unwrap_or(1.0);
        let given = [
            rp.stage_area.is_some(),
            rp.stage_volume.is_some(),
            rp.basin.is_some(),
        ]
        .iter()
        .filter(|x| **x)
        .count();
        if given != 1 {
            return Err(self
                .err(
                    span,
                    ctx,
                    if given == 0 {
                        "the pond has no storage"
                    } else {
                        "the pond's storage is given more than once"
                    },
                )
                .expected("exactly one of `stage_area`, `stage_volume` or `basin`"));
        }
        let (storage, storage_kind, table_top) = if let Some(t) = &rp.stage_area {
            let rows = self.table_rows(t, &format!("{ctx}, stage_area"), lf, af)?;
            self.bounded_rows(
                &rows,
                &t.span(),
                &format!("{ctx}, stage_area"),
                [
                    (Quantity::Length, "stage", None),
                    (Quantity::SectionArea, "area", None),
                ],
            )?;
            let s = StageStorage::from_stage_area(&rows).map_err(|e| {
                self.err(&t.span(), &format!("{ctx}, stage_area"), e.to_string())
                    .expected(
                        "[stage, area] rows with stages increasing and areas >= 0, not decreasing",
                    )
            })?;
            (
                s,
                crate::model::StorageKind::StageArea,
                rows.last().map(|r| r.0),
            )
        } else if let Some(t) = &rp.stage_volume {
            let rows = self.table_rows(t, &format!("{ctx}, stage_volume"), lf, vf)?;
            self.bounded_rows(
                &rows,
                &t.span(),
                &format!("{ctx}, stage_volume"),
                [
                    (Quantity::Length, "stage", None),
                    (Quantity::Volume, "volume", None),
                ],
            )?;
            let s = StageStorage::from_stage_volume(&rows).map_err(|e| self.err(&t.span(), &format!("{ctx}, stage_volume"), e.to_string()).expected("[stage, volume] rows with stages increasing and volumes >= 0, not decreasing"))?;
            (
                s,
                crate::model::StorageKind::StageVolume,
                rows.last().map(|r| r.0),
            )
        } else if let Some(b) = &rp.basin {
            let rb = b.get_ref();
            let bctx = format!("{ctx}, basin");
            let bottom = self.elevation(
                self.req(&rb.bottom, &b.span(), &bctx, "bottom", "100.0 (elevation)")?,
                &format!("{bctx}, bottom"),
            )?;
            let length = self.positive(
                self.req(&rb.length, &b.span(), &bctx, "length", "\"80 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, length"),
            )?;
            let width = self.positive(
                self.req(&rb.width, &b.span(), &bctx, "width", "\"40 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, width"),
            )?;
            let side_raw = self.req(
                &rb.side,
                &b.span(),
                &bctx,
                "side",
                "3.0 (horizontal per vertical)",
            )?;
            let side = self.num(side_raw, &format!("{bctx}, side"))?;
            if side < 0.0 {
                return Err(self
                    .err(
                        &side_raw.span(),
                        &format!("{bctx}, side"),
                        "the side slope cannot be negative",
                    )
                    .expected("0 or more (horizontal per vertical)"));
            }
            let depth = self.positive(
                self.req(&rb.depth, &b.span(), &bctx, "depth", "\"6 ft\"")?,
                Quantity::Length,
                &format!("{bctx}, depth"),
            )?;
            let rows = crate::methods::pond::basin_stage_area(bottom, length, width, side, depth)
                .map_err(|e| self.err(&b.span(), &bctx, e.to_string()))?;
            let s = StageStorage::from_stage_area(&rows)
                .map_err(|e| self.err(&b.span(), &bctx, e.to_string()))?;
            (s, crate::model::StorageKind::Basin, Some(bottom + depth))
        } else {
            unreachable_storage()?
        };
        let bottom = storage.bottom_ft();
        let top_ft = match &rp.top {
            Some(t) => {
                let v = self.elevation(t, &format!("{ctx}, top"))?;
                if v <= bottom {
                    return Err(self
                        .err(
                            &t.span(),
                            &format!("{ctx}, top"),
                            "the top of embankment is not above the pond bottom",
                        )
                        .expected(format!("an elevation above {}", bottom / lf)));
                }
                Some(v)
            }
            None if rp.basin.is_some() => table_top,
            None => None,
        };
        let mut outlets = Vec::new();
        let mut sized = Vec::new();
        if rp.outlet.is_empty() {
            return Err(self
                .err(span, ctx, "the pond has no outlet")
                .expected("at least one [[pond.outlet]]"));
        }
        let mut outlet_names: Vec<Option<String>> = Vec::new();
        for (i, o) in rp.outlet.iter().enumerate() {
            let name = match &o.get_ref().name {
                Some(n) => {
                    let t = n.get_ref().trim().to_string();
                    let nctx = format!(
                        "{ctx}, {}, name",
                        crate::engine::sizing::outlet_label(i, None)
                    );
                    if t.is_empty() {
                        return Err(self
                            .err(&n.span(), &nctx, "the outlet name is empty")
                            .expected("a name such as \"low-flow orifice\", or no `name` key"));
                    }
                    if let Some(k) = outlet_names.iter().position(|x| x.as_deref() == Some(&t)) {
                        return Err(self
                            .err(
                                &n.span(),
                                &nctx,
                                format!("outlet {} of this pond is already named \"{t}\"", k + 1),
                            )
                            .expected("each outlet of a pond named once"));
                    }
                    Some(t)
                }
                None => None,
            };
            let label = crate::engine::sizing::outlet_label(i, name.as_deref());
            outlet_names.push(name);
            let (outlet, s) = self.outlet(o, &format!("{ctx}, {label}"), i)?;
            let w = self.outlet_warnings(o.get_ref(), &format!("{ctx}, {label}"));
            self.warnings.extend(w);
            let low = outlet.lowest_ft();
            if low < bottom - 1e-9 {
                let sp = o
                    .get_ref()
                    .invert
                    .as_ref()
                    .or(o.get_ref().crest.as_ref())
                    .map(|x| x.span())
                    .unwrap_or(o.span());
                return Err(self
                    .err(
                        &sp,
                        &format!("{ctx}, {label}"),
                        format!(
                            "the outlet is below the pond bottom ({} < {})",
                            low / lf,
                            bottom / lf
                        ),
                    )
                    .expected(
                        "an invert or crest at or above the lowest stage of the storage table",
                    ));
            }
            if let Some(top) = top_ft
                && low >= top
            {
                self.warnings.push(Warning::OutletAboveTop {
                    pond: rp.name.get_ref().clone(),
                    outlet: label.clone(),
                });
            }
            outlets.push(outlet);
            sized.extend(s);
        }
        let start_ft = match &rp.start {
            Some(s) => {
                let v = self.elevation(s, &format!("{ctx}, start"))?;
                if v < bottom - 1e-9 {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, start"),
                            "the starting water surface is below the pond bottom",
                        )
                        .expected(format!("an elevation of at least {}", bottom / lf)));
                }
                if let Some(top) = top_ft
                    && v > top + 1e-9
                {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, start"),
                            format!(
                                "the starting water surface {} is above the top of embankment {}",
                                units::short(v / lf, 6),
                                units::short(top / lf, 6)
                            ),
                        )
                        .expected(format!(
                            "a starting water surface at or below the top ({})",
                            units::short(top / lf, 6)
                        ))
                        .hint("check `start` and `top`: a pond cannot start overtopped"));
                }
                Some(v)
            }
            None => None,
        };
        let top_length_ft = match &rp.top_length {
            Some(t) => self.positive(t, Quantity::Length, &format!("{ctx}, top_length"))?,
            None => match top_ft {
                Some(t) => storage.area_at_ft2(t).max(1.0).sqrt(),
                None => 0.0,
            },
        };
        let min_freeboard_ft = match &rp.min_freeboard {
            Some(v) => {
                if top_ft.is_none() {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, min_freeboard"),
                            "freeboard needs a top of embankment",
                        )
                        .expected("`top = ...` on the pond"));
                }
                let f = self.qty(v, Quantity::Length, &format!("{ctx}, min_freeboard"))?;
                if f < 0.0 {
                    return Err(self
                        .err(
                            &v.span(),
                            &format!("{ctx}, min_freeboard"),
                            format!("a freeboard of {} is negative", show(v.get_ref())),
                        )
                        .expected("a freeboard of zero or more, such as \"1 ft\""));
                }
                Some(f)
            }
            None => None,
        };
        let max_drain_time_h = match &rp.max_drain_time {
            Some(v) => Some(self.positive(v, Quantity::Time, &format!("{ctx}, max_drain_time"))?),
            None => None,
        };
        let grid_step_ft = match self.units {
            UnitSystem::Us => 0.01,
            UnitSystem::Si => 0.003 / units::M_PER_FT,
        };
        Ok((
            Pond {
                storage,
                storage_kind,
                outlets,
                outlet_names,
                start_ft,
                top_ft,
                top_length_ft,
                min_freeboard_ft,
                max_drain_time_h,
                grid_step_ft,
            },
            sized,
        ))
    }

    /// A length or elevation that may be a sizing range; returns the value
    /// to start from (the smallest opening) and the range, if any.
    fn dim(
        &self,
        v: &Spanned<RawValue>,
        ctx: &str,
        q: Quantity,
        elevation: bool,
        positive: bool,
    ) -> R<(f64, Option<(f64, f64)>)> {
        if let RawValue::Range(r) = v.get_ref() {
            let one = |x: &RawValue| self.qty(&Spanned::new(v.span(), x.clone()), q, ctx);
            let (a, b) = (one(&r.0)?, one(&r.1)?);
            if a > b {
                return Err(self
                    .err(
                        &v.span(),
                        ctx,
                        format!("the range has min > max ({} > {})", show(&r.0), show(&r.1)),
                    )
                    .expected("{ min = smaller, max = larger }"));
            }
            if positive && a <= 0.0 {
                return Err(self
                    .err(&v.span(), ctx, "the range's min must be positive")
                    .expected("a positive minimum"));
            }
            let start = if elevation { b } else { a };
            return Ok((start, Some((a, b))));
        }
        let x = self.qty(v, q, ctx)?;
        if positive && x <= 0.0 {
            return Err(self
                .err(
                    &v.span(),
                    ctx,
                    format!("must be positive, got {}", show(v.get_ref())),
                )
                .expected(format!("{} greater than zero", q.describe())));
        }
        Ok((x, None))
    }

    fn outlet(
        &self,
        o: &Spanned<RawOutlet>,
        ctx: &str,
        index: usize,
    ) -> R<(Outlet, Vec<SizedDim>)> {
        let r = o.get_ref();
        let kind_raw = self.req(
            &r.kind,
            &o.span(),
            ctx,
            "kind",
            "\"orifice\", \"weir\", \"spillway\", ...",
        )?;
        let kind = kind_raw.get_ref().to_ascii_lowercase();
        let cf = match self.units {
            UnitSystem::Us => 1.0,
            UnitSystem::Si => 1.0 / units::M_PER_FT.sqrt(),
        };
        let allowed: &[&str] = match kind.as_str() {
            "orifice" => &["invert", "diameter", "cd"],
            "rectangular-orifice" => &["invert", "width", "height", "cd"],
            "weir" => &["crest", "length", "coefficient", "contractions"],
            "v-notch" => &["crest", "angle", "cd"],
            "spillway" | "broad-crested-weir" => &["crest", "length", "coefficient"],
            "riser" => &["crest", "diameter", "coefficient", "cd"],
            "rating" => &["table"],
            other => {
                let kinds = [
                    "orifice",
                    "rectangular-orifice",
                    "weir",
                    "v-notch",
                    "spillway",
                    "broad-crested-weir",
                    "riser",
                    "rating",
                ];
                let e = self
                    .err(&kind_raw.span(), &format!("{ctx}, kind"), format!("unknown outlet kind \"{other}\""))
                    .expected("orifice | rectangular-orifice | weir | v-notch | spillway | riser | rating");
                return Err(match cover::nearest(other, kinds) {
                    Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                    None => e,
                });
            }
        };
        let present: [(&str, Option<std::ops::Range<usize>>); 11] = [
            ("invert", r.invert.as_ref().map(|x| x.span())),
            ("crest", r.crest.as_ref().map(|x| x.span())),
            ("diameter", r.diameter.as_ref().map(|x| x.span())),
            ("width", r.width.as_ref().map(|x| x.span())),
            ("height", r.height.as_ref().map(|x| x.span())),
            ("length", r.length.as_ref().map(|x| x.span())),
            ("angle", r.angle.as_ref().map(|x| x.span())),
            ("cd", r.cd.as_ref().map(|x| x.span())),
            ("coefficient", r.coefficient.as_ref().map(|x| x.span())),
            ("contractions", r.contractions.as_ref().map(|x| x.span())),
            ("table", r.table.as_ref().map(|x| x.span())),
        ];
        for (k, sp) in &present {
            if let Some(sp) = sp
                && !allowed.contains(k)
            {
                return Err(self
                    .err(
                        sp,
                        &format!("{ctx}, {k}"),
                        format!("a {kind} outlet does not take `{k}`"),
                    )
                    .expected(format!(
                        "the keys of a {kind}: kind, {}",
                        allowed.join(", ")
                    )));
            }
        }
        let mut sized = Vec::new();
        let mut get =
            |field: SizedField, v: &Option<Spanned<RawValue>>, q: Quantity, what: &str| -> R<f64> {
                let v = self.req(v, &o.span(), ctx, field.key(), what)?;
                let (x, range) = self.dim(
                    v,
                    &format!("{ctx}, {}", field.key()),
                    q,
                    field.is_elevation(),
                    !field.is_elevation(),
                )?;
                if let Some((min, max)) = range {
                    sized.push(SizedDim {
                        element: 0,
                        outlet: index,
                        field,
                        min,
                        max,
                        span: v.span(),
                    });
                }
                Ok(x)
            };
        let coefficient = |default: f64| -> R<f64> {
            match &r.coefficient {
                Some(c) => {
                    let v = self.num(c, &format!("{ctx}, coefficient"))?;
                    if v <= 0.0 {
                        return Err(self
                            .err(
                                &c.span(),
                                &format!("{ctx}, coefficient"),
                                "the coefficient must be positive",
                            )
                            .expected("a positive weir coefficient"));
                    }
                    if v > MAX_WEIR_COEFFICIENT {
                        return Err(self
                            .err(
                                &c.span(),
                                &format!("{ctx}, coefficient"),
                                format!(
                                    "a weir coefficient of {v} is far beyond any published value"
                                ),
                            )
                            .expected("a weir coefficient such as 3.33 (US) or 1.84 (SI)"));
                    }
                    Ok(v * cf)
                }
                None => Ok(default),
            }
        };
        let cd = |default: f64| -> R<f64> {
            match &r.cd {
                Some(c) => {
                    let v = self.num(c, &format!("{ctx}, cd"))?;
                    if v <= 0.0 || v > 1.0 {
                        return Err(self
                            .err(
                                &c.span(),
                                &format!("{ctx}, cd"),
                                format!("cd = {v} is outside (0, 1]"),
                            )
                            .expected("a discharge coefficient such as 0.61"));
                    }
                    Ok(v)
                }
                None => Ok(default),
            }
        };
        let outlet = match kind.as_str() {
            "orifice" => Outlet::CircularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"6 in\"",
                )?,
                cd: cd(0.61)?,
            },
            "rectangular-orifice" => Outlet::RectangularOrifice {
                invert_ft: get(SizedField::Invert, &r.invert, Quantity::Length, "100.0")?,
                width_ft: get(SizedField::Width, &r.width, Quantity::Length, "\"1 ft\"")?,
                height_ft: get(
                    SizedField::Height,
                    &r.height,
                    Quantity::Length,
                    "\"0.5 ft\"",
                )?,
                cd: cd(0.61)?,
            },
            "weir" => {
                let contractions = match &r.contractions {
                    Some(c) if (0..=2).contains(c.get_ref()) => *c.get_ref() as u8,
                    Some(c) => {
                        return Err(self
                            .err(
                                &c.span(),
                                &format!("{ctx}, contractions"),
                                format!("{} end contractions", c.get_ref()),
                            )
                            .expected("0, 1 or 2"));
                    }
                    None => 0,
                };
                Outlet::SharpCrestedWeir {
                    crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "103.2")?,
                    length_ft: get(SizedField::Length, &r.length, Quantity::Length, "\"4 ft\"")?,
                    coefficient: coefficient(3.33)?,
                    contractions,
                }
            }
            "v-notch" => {
                let crest_ft = get(SizedField::Crest, &r.crest, Quantity::Length, "103.0")?;
                let a = self.req(&r.angle, &o.span(), ctx, "angle", "90 (degrees)")?;
                let (angle, range) = match a.get_ref() {
                    RawValue::Num(x) => (*x, None),
                    RawValue::Range(rr) => match (&rr.0, &rr.1) {
                        (RawValue::Num(x), RawValue::Num(y)) => (*x, Some((*x, *y))),
                        _ => {
                            return Err(self
                                .err(
                                    &a.span(),
                                    &format!("{ctx}, angle"),
                                    "an angle is a bare number of degrees",
                                )
                                .expected("{ min = 20, max = 120 }"));
                        }
                    },
                    RawValue::Text(t) => match t
                        .trim()
                        .trim_end_matches("deg")
                        .trim_end_matches('°')
                        .trim()
                        .parse::<f64>()
                    {
                        Ok(x) => (x, None),
                        Err(_) => {
                            return Err(self
                                .err(
                                    &a.span(),
                                    &format!("{ctx}, angle"),
                                    format!("cannot read \"{t}\" as an angle"),
                                )
                                .expected("degrees, e.g. 90"));
                        }
                    },
                };
                let bad = |x: f64| !(x > 0.0 && x < 180.0);
                if bad(angle) || range.is_some_and(|(x, y)| bad(x) || bad(y) || x > y) {
                    return Err(self
                        .err(
                            &a.span(),
                            &format!("{ctx}, angle"),
                            "the notch angle must lie between 0 and 180 degrees (and min <= max)",
                        )
                        .expected("degrees, e.g. 90"));
                }
                if let Some((min, max)) = range {
                    sized.push(SizedDim {
                        element: 0,
                        outlet: index,
                        field: SizedField::Angle,
                        min,
                        max,
                        span: a.span(),
                    });
                }
                Outlet::VNotchWeir {
                    crest_ft,
                    angle_deg: angle,
                    cd: cd(0.58)?,
                }
            }
            "spillway" | "broad-crested-weir" => Outlet::BroadCrestedWeir {
                crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "105.0")?,
                length_ft: get(SizedField::Length, &r.length, Quantity::Length, "\"20 ft\"")?,
                coefficient: coefficient(2.6)?,
            },
            "riser" => Outlet::Riser {
                crest_ft: get(SizedField::Crest, &r.crest, Quantity::Length, "104.0")?,
                diameter_ft: get(
                    SizedField::Diameter,
                    &r.diameter,
                    Quantity::Length,
                    "\"4 ft\"",
                )?,
                weir_coefficient: coefficient(3.33)?,
                cd: cd(0.61)?,
            },
            _ => {
                let t = self.req(&r.table, &o.span(), ctx, "table", "[[stage, flow], ...]")?;
                let ff = Quantity::Flow.bare_factor(self.units).unwrap_or(1.0);
                let lf = Quantity::Length.bare_factor(self.units).unwrap_or(1.0);
                let rows = self.table_rows(t, &format!("{ctx}, table"), lf, ff)?;
                self.bounded_rows(
                    &rows,
                    &t.span(),
                    &format!("{ctx}, table"),
                    [
                        (Quantity::Length, "stage", None),
                        (Quantity::Flow, "flow", None),
                    ],
                )?;
                if rows.len() < 2 {
                    return Err(self
                        .err(
                            &t.span(),
                            &format!("{ctx}, table"),
                            "a rating needs at least two rows",
                        )
                        .expected("[[stage, flow], [stage, flow], ...]"));
                }
                for (i, w) in rows.windows(2).enumerate() {
                    if w[1].0 <= w[0].0 {
                        return Err(self
                            .err(
                                &t.span(),
                                &format!("{ctx}, table"),
                                format!("row {}: the stage does not increase", i + 2),
                            )
                            .expected("stages strictly increasing"));
                    }
                    if w[1].1 < w[0].1 {
                        return Err(self
                            .err(
                                &t.span(),
                                &format!("{ctx}, table"),
                                format!("row {}: the flow decreases as the stage rises", i + 2),
                            )
                            .expected("flows that never decrease"));
                    }
                }
                if rows.iter().any(|r| r.1 < 0.0) {
                    return Err(self
                        .err(&t.span(), &format!("{ctx}, table"), "a flow is negative")
                        .expected("flows of zero or more"));
                }
                Outlet::Rating { table: rows }
            }
        };
        Ok((outlet, sized))
    }

    fn inflow(
        &mut self,
        ri: &RawInflow,
        span: &std::ops::Range<usize>,
        ctx: &str,
        storm: Option<usize>,
    ) -> R<Inflow> {
        let ff = Quantity::Flow.bare_factor(self.units).unwrap_or(1.0);
        let (rows, file) = match (&ri.table, &ri.file) {
            (Some(t), None) => (self.pairs(t, &format!("{ctx}, table"))?, None),
            (None, Some(f)) => {
                let path = self.resolve(f, &format!("{ctx}, file"))?;
                (read_hydrograph_csv(&path)?, Some(path))
            }
            (Some(_), Some(f)) => {
                return Err(self
                    .err(
                        &f.span(),
                        &format!("{ctx}, file"),
                        "give either `table` or `file`, not both",
                    )
                    .expected("one of them"));
            }
            (None, None) => {
                return Err(self
                    .err(span, ctx, "missing `table` (or `file`)")
                    .expected("table = [[0.0, 0.0], [0.5, 12.0], ...] in hours and flow"));
            }
        };
        if rows.is_empty() {
            return Err(self
                .err(span, ctx, "the hydrograph has no rows")
                .expected("[hours, flow] rows"));
        }
        for (i, w) in rows.windows(2).enumerate() {
            if w[1].0 <= w[0].0 {
                return Err(self
                    .err(
                        span,
                        ctx,
                        format!(
                            "row {}: time {} h does not follow {} h",
                            i + 2,
                            w[1].0,
                            w[0].0
                        ),
                    )
                    .expected("times strictly increasing"));
            }
        }
        if let Some((i, _)) = rows
            .iter()
            .enumerate()
            .find(|(_, r)| r.1 < 0.0 || r.0 < 0.0)
        {
            return Err(self
                .err(
                    span,
                    ctx,
                    format!("row {} has a negative time or flow", i + 1),
                )
                .expected("times and flows of zero or more"));
        }
        let scaled: Vec<(f64, f64)> = rows.iter().map(|&(t, q)| (t, q * ff)).collect();
        self.bounded_rows(
            &scaled,
            &ri.table.as_ref().map(|t| t.span()).unwrap_or(span.clone()),
            ctx,
            [
                (Quantity::Time, "time", Some(MAX_INFLOW_H)),
                (Quantity::Flow, "flow", None),
            ],
        )?;
        Ok(Inflow {
            table: rows.into_iter().map(|(t, q)| (t, q * ff)).collect(),
            storm,
            file,
        })
    }

    fn point(&self, p: &Spanned<RawPoint>, conditions: &[String], storms: &[Storm]) -> R<Point> {
        let rp = p.get_ref();
        let name = rp.name.get_ref().trim().to_string();
        let ctx = format!("point \"{name}\"");
        let default = match &rp.limit {
            Some(l) => (
                self.limit(l, &format!("{ctx}, limit"), conditions, storms)?,
                l.get_ref().clone(),
            ),
            None => (
                Limit::Relative {
                    fraction: 1.0,
                    condition: 0,
                    storm: None,
                },
                conditions.first().cloned().unwrap_or_default(),
            ),
        };
        let mut limits = vec![default.0.clone(); storms.len()];
        let mut limit_text = vec![default.1.clone(); storms.len()];
        if let Some(map) = &rp.limits {
            for (storm, text) in map.get_ref() {
                let Some(i) = storms.iter().position(|s| &s.name == storm) else {
                    let e = self
                        .err(
                            &text.span(),
                            &format!("{ctx}, limits"),
                            format!("no storm is named \"{storm}\""),
                        )
                        .expected("the name of a [[storm]]");
                    return Err(
                        match cover::nearest(storm, storms.iter().map(|s| s.name.as_str())) {
                            Some(h) => e.hint(format!("did you mean \"{h}\"?")),
                            None => e,
                        },
                    );
                };
                limits[i] = self.limit(
                    text,
                    &format!("{ctx}, limits.\"{storm}\""),
                    conditions,
                    storms,
                )?;
                limit_text[i] = text.get_ref().clone();
            }
        }
        let durations = match &rp.durations {
            Some(d) => Some(self.durations(d, &format!("{ctx}, durations"))?),
            None => None,
        };
        Ok(Point {
            name,
            limits,
            limit_text,
            durations,
        })
    }

    fn limit(
        &self,
        l: &Spanned<String>,
        ctx: &str,
        conditions: &[String],
        storms: &[Storm],
    ) -> R<Limit> {
        let text = l.get_ref().trim();
        let bad = |msg: String| {
            self.err(&l.span(), ctx, msg)
                .expected("\"existing\", \"50% existing\", \"existing 2-yr\", \"12 cfs\", \"0.1 cfs/ac\" or \"none\"")
        };
        if text.eq_ignore_ascii_case("none") {
            return Ok(Limit::None);
        }
        let numeric = text
            .trim_start_matches(['-', '+'])
            .starts_with(|c: char| c.is_ascii_digit() || c == '.');
        let (fraction, rest) = if numeric {
            let (v, unit) = units::split_number(text).map_err(|e| bad(e.to_string()))?;
            if let Some(r) = unit.strip_prefix('%') {
                if v <= 0.0 {
                    return Err(bad(format!("a percentage of {v} % cannot be met")));
                }
                (v / 100.0, r.trim().to_string())
            } else if unit.contains('/')
                && units::parse_quantity(text, Quantity::Flow, self.units).is_err()
            {
                // A flow per unit area ("0.1 cfs/ac", "10 l/s/ha"); a flow
                // unit that holds a slash ("0.24 m3/s", "240 l/s") is a flow.
                let q = units::parse_flow_per_area(text).map_err(|e| bad(e.to_string()))?;
                if q < 0.0 {
                    return Err(bad(format!(
                        "a limit of {text} is negative and cannot be met"
                    )));
                }
                // SI input: cfs per ac already; units parse handles l/s/ha etc.
                return Ok(Limit::PerArea { cfs_per_ac: q });
            } else {
                let q = units::parse_quantity(text, Quantity::Flow, self.units)
                    .map_err(|e| bad(e.to_string()))?;
                if q < 0.0 {
                    return Err(bad(format!(
                        "a limit of {text} is negative and cannot be met"
                    )));
                }
                return Ok(Limit::Absolute { flow_cfs: q });
            }
        } else {
            (1.0, text.to_string())
        };
        // `rest` is "COND" or "COND STORM".
        if let Some(c) = conditions.iter().position(|c| c == &rest) {
            return Ok(Limit::Relative {
                fraction,
                condition: c,
                storm: None,
            });
        }
        for (i, _) in rest.match_indices(' ') {
            let (c, s) = (rest[..i].trim(), rest[i..].trim());
            if let (Some(ci), Some(si)) = (
                conditions.iter().position(|x| x == c),
                storms.iter().position(|x| x.name == s),
            ) {
                return Ok(Limit::Relative {
                    fraction,
                    condition: ci,
                    storm: Some(si),
                });
            }
        }
        let first = rest.split_whitespace().next().unwrap_or("");
        let mut e = bad(format!("cannot read \"{text}\" as a limit"));
        if !conditions.iter().any(|c| c == first) {
            e.message = format!("\"{first}\" is not a condition of this scenario");
            if let Some(h) = cover::nearest(first, conditions.iter().map(String::as_str)) {
                e = e.hint(format!("did you mean \"{h}\"?"));
            }
        } else {
            let s = rest[first.len()..].trim();
            e.message = format!("\"{s}\" is not a storm of this scenario");
            if let Some(h) = cover::nearest(s, storms.iter().map(|s| s.name.as_str())) {
                e = e.hint(format!("did you mean \"{h}\"?"));
            }
        }
        Err(e)
    }

    fn durations(&self, d: &Spanned<RawDurations>, ctx: &str) -> R<DurationControl> {
        let r = d.get_ref();
        let q = |s: &Spanned<String>, key: &str| -> R<(f64, f64)> {
            let t = s.get_ref().trim();
            let bad = || {
                self.err(
                    &s.span(),
                    &format!("{ctx}, {key}"),
                    format!("cannot read \"{t}\" as a frequency flow"),
                )
                .expected("\"Q2\", \"10% Q2\", \"50% Q10\"")
            };
            let (frac, rest) = match t.split_once('%') {
                Some((a, b)) => (
                    a.trim().parse::<f64>().map_err(|_| bad())? / 100.0,
                    b.trim(),
                ),
                None => (1.0, t),
            };
            let n: f64 = rest
                .strip_prefix(['Q', 'q'])
                .ok_or_else(bad)?
                .trim()
                .parse()
                .map_err(|_| bad())?;
            if !(frac > 0.0 && frac.is_finite() && n > 1.0 && n.is_finite()) {
                return Err(bad());
            }
            Ok((frac, n))
        };
        let from = q(&r.from, "from")?;
        let to = q(&r.to, "to")?;
        let tolerance = match &r.tolerance {
            Some(t) => {
                let v = self.qty(t, Quantity::Slope, &format!("{ctx}, tolerance"))?;
                if v < 0.0 {
                    return Err(self
                        .err(
                            &t.span(),
                            &format!("{ctx}, tolerance"),
                            "the tolerance cannot be negative",
                        )
                        .expected("a percentage such as \"10%\""));
                }
                v
            }
            None => 0.1,
        };
        Ok(DurationControl {
            from,
            to,
            tolerance,
            text: format!("{} to {}", r.from.get_ref(), r.to.get_ref()),
        })
    }

    fn record(&mut self, r: &Spanned<RawRecord>) -> R<Record> {
        let rr = r.get_ref();
        let name = rr.name.get_ref().clone();
        let ctx = format!("record \"{name}\"");
        let g = self.req(&rr.gauge, &r.span(), &ctx, "gauge", "\"rain/hourly.csv\"")?;
        let (series, path) = self.gauge(g, &rr.interval, &rr.missing, &ctx, MAX_STEPS)?;
        let interval_h = series.interval_s as f64 / 3600.0;
        let step_h = match &rr.step {
            Some(s) => {
                let v = self.positive(s, Quantity::Time, &format!("{ctx}, step"))?;
                let n = series.depth.len() as f64 * interval_h / v;
                if n > MAX_STEPS as f64 {
                    return Err(self
                        .err(&s.span(), &format!("{ctx}, step"), format!("the record would need {} steps, more than runnel's limit of {MAX_STEPS}", n as u64))
                        .expected("a coarser step")
                        .hint(format!("use a step of at least {}", format_step_up(series.depth.len() as f64 * interval_h / MAX_STEPS as f64))));
                }
                // The record must be a whole number of steps, or its last
                // step would hold only part of an interval's rain.
                if (n - n.round()).abs() > 1e-6 * n.max(1.0) {
                    return Err(self
                        .err(
                            &s.span(),
                            &format!("{ctx}, step"),
                            format!(
                                "the step of {} does not divide the record ({} intervals of {}): it would need {n:.3} steps",
                                format_step_up(v),
                                series.depth.len(),
                                format_step_up(interval_h)
                            ),
                        )
                        .expected("a step that divides the record, best the gauge interval or a divisor of it")
                        .hint(format!("use `step = \"{}\"` (the gauge interval)", format_step_up(interval_h))));
                }
                v
            }
            None => interval_h,
        };
        let moisture = match rr.moisture.as_ref().map(|m| m.get_ref().as_str()) {
            None | Some("event") => {
                let dry_gap_h = match &rr.dry_gap {
                    Some(d) => self.positive(d, Quantity::Time, &format!("{ctx}, dry_gap"))?,
                    None => 6.0,
                };
                let antecedent = match &rr.antecedent {
                    Some(a) if a.get_ref() == "amc" => true,
                    Some(a) if a.get_ref() == "none" => false,
                    Some(a) => {
                        return Err(self
                            .err(
                                &a.span(),
                                &format!("{ctx}, antecedent"),
                                format!("unknown antecedent rule \"{}\"", a.get_ref()),
                            )
                            .expected("\"amc\" or \"none\""));
                    }
                    None => false,
                };
                let mut growing_months = [false; 12];
                match &rr.growing_months {
                    Some(m) => {
                        for &x in m.get_ref() {
                            if !(1..=12).contains(&x) {
                                return Err(self
                                    .err(
                                        &m.span(),
                                        &format!("{ctx}, growing_months"),
                                        format!("{x} is not a month"),
                                    )
                                    .expected("month numbers 1..12"));
                            }
                            growing_months[(x - 1) as usize] = true;
                        }
                    }
                    None => (3..9).for_each(|i| growing_months[i] = true),
                }
                MoistureMode::Event {
                    dry_gap_h,
                    antecedent,
                    growing_months,
                }
            }
            Some("continuous") => {
                let p = self.req(
                    &rr.pet,
                    &r.span(),
                    &ctx,
                    "pet",
                    "12 monthly values of depth per day",
                )?;
                if p.get_ref().len() != 12 {
                    return Err(self
                        .err(
                            &p.span(),
                            &format!("{ctx}, pet"),
                            format!("{} values given", p.get_ref().len()),
                        )
                        .expected("12 monthly values, January first"));
                }
                let mut pet = [0.0; 12];
                for (i, v) in p.get_ref().iter().enumerate() {
                    let x = self.qty(
                        &Spanned::new(p.span(), v.clone()),
                        Quantity::DepthPerDay,
                        &format!("{ctx}, pet"),
                    )?;
                    if x < 0.0 {
                        return Err(self
                            .err(
                                &p.span(),
                                &format!("{ctx}, pet"),
                                format!("month {} is negative", i + 1),
                            )
                            .expected("depths of zero or more"));
                    }
                    pet[i] = x;
                }
                let _ = MoistureMode::Continuous {
                    pet_in_per_day: pet,
                };
                let span = rr.moisture.as_ref().map(|m| m.span()).unwrap_or(r.span());
                return Err(self
                    .err(&span, &format!("{ctx}, moisture"), crate::methods::moisture::MoistureError::ContinuousUnavailable.to_string())
                    .expected("moisture = \"event\"")
                    .hint("no published soil-moisture-accounting formulation could be verified for this version; see the README, \"Long records\""));
            }
            Some(other) => {
                let span = rr.moisture.as_ref().map(|m| m.span()).unwrap_or(r.span());
                return Err(self
                    .err(
                        &span,
                        &format!("{ctx}, moisture"),
                        format!("unknown moisture accounting \"{other}\""),
                    )
                    .expected("\"event\" or \"continuous\""));
            }
        };
        Ok(Record {
            name,
            path,
            depth_in: {
                // Converted in place: a long record's depths are large.
                let f = self.depth_factor();
                let mut d = series.depth;
                if f != 1.0 {
                    d.iter_mut().for_each(|x| *x *= f);
                }
                d
            },
            interval_h,
            step_h,
            start_s: series.start_s,
            moisture,
        })
    }
}

fn unreachable_storage<T>() -> R<T> {
    Err(InputError::new(Path::new(""), "internal: pond storage"))
}

fn kind_of(names: &[String], i: usize, raw: &RawScenario) -> &'static str {
    let nc = raw.catchment.len();
    let np = raw.pond.len();
    let _ = names;
    if i < nc {
        "catchment"
    } else if i < nc + np {
        "pond"
    } else {
        "inflow"
    }
}

fn raw_to_span(raw: &RawScenario, i: usize) -> std::ops::Range<usize> {
    let nc = raw.catchment.len();
    let np = raw.pond.len();
    let to = if i < nc {
        raw.catchment
            .get(i)
            .and_then(|c| c.get_ref().to.as_ref().map(|t| t.span()))
    } else if i < nc + np {
        raw.pond
            .get(i - nc)
            .and_then(|c| c.get_ref().to.as_ref().map(|t| t.span()))
    } else {
        raw.inflow
            .get(i - nc - np)
            .and_then(|c| c.get_ref().to.as_ref().map(|t| t.span()))
    };
    to.unwrap_or(0..0)
}

fn cycle_text(elements: &[Element], start: usize) -> String {
    let mut names = vec![elements[start].name.clone()];
    let mut at = start;
    for _ in 0..elements.len() {
        match elements[at].to {
            Target::Element(j) => {
                names.push(elements[j].name.clone());
                if j == start {
                    break;
                }
                at = j;
            }
            Target::Point(_) => break,
        }
    }
    format!("the loop: {}", names.join(" -> "))
}

/// A number for a message, in exponent form when it is very large or small.
fn big(x: f64) -> String {
    if x != 0.0 && !(1e-4..1e6).contains(&x.abs()) {
        format!("{x:e}")
    } else {
        units::short(x, 6)
    }
}

fn show(v: &RawValue) -> String {
    match v {
        RawValue::Num(x) => x.to_string(),
        RawValue::Text(t) => format!("\"{t}\""),
        RawValue::Range(r) => format!("{{ min = {}, max = {} }}", show(&r.0), show(&r.1)),
    }
}

/// A step in hours as text in seconds, minutes or hours, rounded up to
/// three significant digits (for hints).
fn format_step_up(h: f64) -> String {
    let (v, unit) = if h < 1.0 / 60.0 {
        (h * 3600.0, "s")
    } else if h < 1.0 {
        (h * 60.0, "min")
    } else {
        (h, "h")
    };
    if !(v.is_finite() && v > 0.0) {
        return format!("{v} {unit}");
    }
    let mag = v.log10().floor();
    let scale = 10f64.powf(mag - 2.0);
    let up = (v / scale - 1e-9).ceil() * scale;
    let decimals = (2.0 - mag).clamp(0.0, 12.0) as usize;
    format!("{up:.decimals$} {unit}")
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

/// A memory size: decimal units (kB, MB, GB = 10^3, 10^6, 10^9 bytes), as
/// runnel prints them, or binary ones (KiB, MiB, GiB = 2^10, 2^20, 2^30).
fn parse_bytes(s: &str) -> Option<u64> {
    let (v, unit) = units::split_number(s).ok()?;
    let f = match unit.to_ascii_lowercase().as_str() {
        "b" | "" => 1.0,
        "kb" => 1e3,
        "mb" => 1e6,
        "gb" => 1e9,
        "tb" => 1e12,
        "kib" => 1024.0,
        "mib" => 1024.0 * 1024.0,
        "gib" => 1024.0 * 1024.0 * 1024.0,
        _ => return None,
    };
    (v > 0.0 && v.is_finite() && v * f < 1.8e19).then_some((v * f) as u64)
}

/// Reads a `time_h,flow` hydrograph CSV.
fn read_hydrograph_csv(path: &Path) -> R<Vec<(f64, f64)>> {
    let text = read_capped(path, "an inflow table").map_err(|e| match e {
        Error::Input(ie) => *ie,
        Error::Read { source, .. } => InputError::new(path, format!("cannot read: {source}")),
        other => InputError::new(path, other.to_string()),
    })?;
    let mut rdr = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_slice());
    let headers = rdr
        .headers()
        .map_err(|e| InputError::new(path, format!("bad header: {e}")).at_line(1))?
        .clone();
    let h: Vec<String> = headers.iter().map(|s| s.to_ascii_lowercase()).collect();
    if h.len() != 2 || h[0] != "time_h" || h[1] != "flow" {
        return Err(InputError::new(
            path,
            format!(
                "bad header \"{}\"",
                headers.iter().collect::<Vec<_>>().join(",")
            ),
        )
        .at_line(1)
        .expected("time_h,flow"));
    }
    let mut out = Vec::new();
    for rec in rdr.records() {
        let rec = rec.map_err(|e| {
            let line = e.position().map(|p| p.line() as usize).unwrap_or(0);
            InputError::new(path, format!("cannot read the row: {e}")).at_line(line)
        })?;
        let line = rec.position().map(|p| p.line() as usize).unwrap_or(0);
        let num = |i: usize| -> R<f64> {
            let s = rec.get(i).unwrap_or("");
            s.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    InputError::new(path, format!("\"{s}\" is not a number"))
                        .at_line(line)
                        .expected("time_h,flow rows of numbers")
                })
        };
        out.push((num(0)?, num(1)?));
    }
    Ok(out)
}

/// Line `line` (1-based) of a file, cut to 120 characters, for an error's
/// snippet; read again only when there is an error to show.
fn line_of_file(path: &std::path::Path, line: usize) -> Option<String> {
    use std::io::BufRead;
    // Reads no more of the wanted line than the snippet shows, so a file of
    // one enormous line costs no more than its first bytes.
    const KEEP: usize = 480;
    let mut reader = std::io::BufReader::new(std::fs::File::open(path).ok()?);
    let mut at = 1usize;
    let want = line.max(1);
    let mut raw = Vec::new();
    loop {
        let chunk = reader.fill_buf().ok()?;
        if chunk.is_empty() {
            break;
        }
        let (used, done) = match chunk.iter().position(|&c| c == b'\n') {
            Some(i) => {
                if at == want {
                    let take = i.min(KEEP.saturating_sub(raw.len()));
                    raw.extend_from_slice(&chunk[..take]);
                }
                at += 1;
                (i + 1, at > want)
            }
            None => {
                if at == want {
                    let take = chunk.len().min(KEEP.saturating_sub(raw.len()));
                    raw.extend_from_slice(&chunk[..take]);
                }
                (chunk.len(), at == want && raw.len() >= KEEP)
            }
        };
        reader.consume(used);
        if done {
            break;
        }
    }
    if at < want {
        return None;
    }
    let text = String::from_utf8_lossy(&raw);
    Some(text.trim_end_matches('\r').chars().take(120).collect())
}

#[cfg(test)]
mod tests {
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
