//! Names and conditions: name text, the condition list and its slips, and
//! names that would give the same result file.

use super::*;

/// One use of a condition name by an element.
pub(super) struct Mention {
    pub(super) name: String,
    pub(super) span: std::ops::Range<usize>,
    pub(super) ctx: String,
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
    let d = suggest::edit_distance(&la, &lb);
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

/// A name as written and one result file it gives.
pub(super) type NamedFile<'r> = (&'r Spanned<String>, String);

impl Builder<'_> {
    /// A name of an element, point, storm, record or condition: not empty,
    /// no control characters, at most [`MAX_NAME_CHARS`] characters (names
    /// become parts of file names).
    pub(super) fn name_text(&self, n: &Spanned<String>, ctx: &str) -> R<()> {
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
    pub(super) fn listed_conditions(
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
            return Err(match suggest::nearest(baseline, names.iter().map(String::as_str)) {
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
                    match suggest::nearest(&m.name, names.iter().map(String::as_str)) {
                        Some(h) => e.hint(suggest::did_you_mean(h)),
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
    pub(super) fn condition_slips(
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
                    let d = suggest::edit_distance(&slip.to_lowercase(), &meant.to_lowercase());
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

    /// Two storms, ponds, points or records whose names give the same
    /// file name (`10/yr` and `10-yr` both become `10-yr`) would write the
    /// same result files: an input error naming both.
    pub(super) fn check_file_name_parts(&self, raw: &RawScenario) -> R<()> {
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
    pub(super) fn check_result_files(&self, study: &Study) -> R<()> {
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

    /// Names: each element and point named once (they are `to` targets),
    /// each storm and each record named once, every name a usable text.
    pub(super) fn check_names(&self, raw: &RawScenario, elements: &[RawElement]) -> R<()> {
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
        for e in elements {
            check_name(self, e.name(), e.word())?;
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
        Ok(())
    }

    /// The conditions: the baseline first, then the `conditions` list or
    /// the names in order of first mention; slips are errors.
    pub(super) fn conditions(&self, raw: &RawScenario, elements: &[RawElement]) -> R<Vec<String>> {
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
        for e in elements {
            mention(e.condition(), e.word(), e.name());
        }
        for m in &mentions {
            self.name_text(&Spanned::new(m.span.clone(), m.name.clone()), &m.ctx)?;
        }
        Ok(match &raw.conditions {
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
        })
    }
}
