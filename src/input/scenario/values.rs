//! Quantities and numbers read from the scenario: a value with its unit, a
//! positive or bounded number, a required key, a table of pairs.

use super::*;

/// A number for a message, in exponent form when it is very large or small.
pub(super) fn big(x: f64) -> String {
    if x != 0.0 && !(1e-4..1e6).contains(&x.abs()) {
        format!("{x:e}")
    } else {
        units::short(x, 6)
    }
}

pub(super) fn show(v: &RawValue) -> String {
    match v {
        RawValue::Num(x) => x.to_string(),
        RawValue::Text(t) => format!("\"{t}\""),
        RawValue::Range(r) => format!("{{ min = {}, max = {} }}", show(&r.0), show(&r.1)),
    }
}

/// A step in hours as text in seconds, minutes or hours, rounded up to
/// three significant digits (for hints).
pub(super) fn format_step_up(h: f64) -> String {
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

/// A memory size: decimal units (kB, MB, GB = 10^3, 10^6, 10^9 bytes), as
/// runnel prints them, or binary ones (KiB, MiB, GiB = 2^10, 2^20, 2^30).
pub(super) fn parse_bytes(s: &str) -> Option<u64> {
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

pub(super) fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("\"{n}\""))
        .collect::<Vec<_>>()
        .join(", ")
}

impl Builder<'_> {
    pub(super) fn qty(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
        let x = self.qty_unbounded(v, q, ctx)?;
        self.bounded(x, v, q, ctx)
    }

    /// Refuses a value whose magnitude lies beyond what any site can hold
    /// ([`Quantity::max_magnitude`]): a slip or a number such as 1e308,
    /// refused here before any arithmetic can overflow.
    pub(super) fn bounded(&self, x: f64, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
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

    pub(super) fn qty_unbounded(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
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

    pub(super) fn positive(&self, v: &Spanned<RawValue>, q: Quantity, ctx: &str) -> R<f64> {
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

    pub(super) fn req<'v, T>(
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

    pub(super) fn num(&self, v: &Spanned<f64>, ctx: &str) -> R<f64> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self
                .err(&v.span(), ctx, format!("{x} is not a finite number"))
                .expected("a finite number"))
        }
    }

    pub(super) fn elevation(&self, v: &Spanned<RawValue>, ctx: &str) -> R<f64> {
        self.qty(v, Quantity::Length, ctx)
    }

    pub(super) fn table_rows(
        &self,
        t: &Spanned<Rows>,
        ctx: &str,
        fx: f64,
        fy: f64,
    ) -> R<Vec<(f64, f64)>> {
        Ok(self
            .pairs(t, ctx)?
            .into_iter()
            .map(|(a, b)| (a * fx, b * fy))
            .collect())
    }

    /// Refuses table rows (in internal units) whose columns lie beyond the
    /// bounds of their quantities ([`Quantity::max_magnitude`], or `max`
    /// when given).
    pub(super) fn bounded_rows(
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

    pub(super) fn pairs(&self, t: &Spanned<Rows>, ctx: &str) -> R<Vec<(f64, f64)>> {
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

    /// A length or elevation that may be a sizing range; returns the value
    /// to start from (the smallest opening) and the range, if any.
    pub(super) fn dim(
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

    /// An unknown keyword or name: the error at `span` with its message and
    /// what was expected, and a "did you mean" hint naming the closest of
    /// `candidates` when one is close enough (see [`suggest::nearest`]).
    pub(super) fn unknown_word<'c>(
        &self,
        span: &std::ops::Range<usize>,
        ctx: &str,
        message: impl Into<String>,
        expected: impl Into<String>,
        word: &str,
        candidates: impl IntoIterator<Item = &'c str>,
    ) -> InputError {
        with_suggestion(
            self.err(span, ctx, message).expected(expected),
            word,
            candidates,
        )
    }
}

/// `e` with a "did you mean" hint naming the closest of `candidates` to
/// `word`, when one is close enough; `e` as it is otherwise.
pub(super) fn with_suggestion<'c>(
    e: InputError,
    word: &str,
    candidates: impl IntoIterator<Item = &'c str>,
) -> InputError {
    match suggest::nearest(word, candidates) {
        Some(h) => e.hint(suggest::did_you_mean(h)),
        None => e,
    }
}
