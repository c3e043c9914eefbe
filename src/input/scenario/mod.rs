//! Reading a scenario: TOML text -> raw serde types -> the validated
//! [`Study`]. Every check that spans fields (a `to` that names nothing, a
//! cycle, a limit naming an unknown storm) lives here, once.

// Input errors are the cold path and carry a whole message, snippet and hint;
// boxing every one of them would only add noise.
#![allow(clippy::result_large_err)]

pub mod context;
pub mod raw;
pub mod sized;
mod values;
mod plausibility;
mod names;
mod storms;
mod catchments;
mod ponds;
mod outlets;
mod inflows;
mod points;
mod records;

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
use self::{inflows::*, names::*, values::*};
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
