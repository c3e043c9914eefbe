//! The `[[inflow]]` section: hydrographs given as tables or CSV files.

use super::*;

/// Reads a `time_h,flow` hydrograph CSV.
pub(super) fn read_hydrograph_csv(path: &Path) -> R<Vec<(f64, f64)>> {
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
pub(super) fn line_of_file(path: &std::path::Path, line: usize) -> Option<String> {
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

impl Builder<'_> {
    pub(super) fn inflow(
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
}
