//! The one table writer of the reports: columns with a header (its unit in
//! brackets) and an alignment, then rows of already formatted cells,
//! written as a Markdown (GFM) table or as fixed-width plain text.

use std::fmt::Write;

/// Where a column's cells sit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Text: left (`|---|`).
    Left,
    /// Numbers: right (`|---:|`).
    Right,
}

/// One column: its header and alignment.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Column {
    /// Header text, with its unit in brackets when it has one.
    pub header: String,
    /// Alignment of the cells.
    pub align: Align,
}

impl Column {
    /// A left-aligned text column.
    pub fn text(header: impl Into<String>) -> Column {
        Column {
            header: header.into(),
            align: Align::Left,
        }
    }

    /// A right-aligned number column without a unit.
    pub fn number(header: impl Into<String>) -> Column {
        Column {
            header: header.into(),
            align: Align::Right,
        }
    }

    /// A right-aligned number column headed `name [unit]`.
    pub fn quantity(name: &str, unit: &str) -> Column {
        Column::number(format!("{name} [{unit}]"))
    }
}

/// A table being filled.
#[derive(Debug, Clone, Default)]
pub struct Table {
    columns: Vec<Column>,
    rows: Vec<Vec<String>>,
}

impl Table {
    /// A table with these columns and no rows.
    pub fn new(columns: Vec<Column>) -> Table {
        Table {
            columns,
            rows: Vec::new(),
        }
    }

    /// Adds a row of formatted cells (one per column).
    pub fn row<I, S>(&mut self, cells: I)
    where
        I: IntoIterator<Item = S>,
        S: Into<String>,
    {
        self.rows.push(cells.into_iter().map(Into::into).collect());
    }

    /// Number of rows so far.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The Markdown table: header, alignment line, one line per row, each
    /// ending in a newline. An empty header cell is written `| |`.
    pub fn markdown(&self) -> String {
        let mut m = String::new();
        m.push('|');
        for c in &self.columns {
            if c.header.is_empty() {
                m.push_str(" |");
            } else {
                let _ = write!(m, " {} |", c.header);
            }
        }
        m.push_str("\n|");
        for c in &self.columns {
            m.push_str(match c.align {
                Align::Left => "---|",
                Align::Right => "---:|",
            });
        }
        m.push('\n');
        for r in &self.rows {
            m.push('|');
            for cell in r {
                let _ = write!(m, " {cell} |");
            }
            m.push('\n');
        }
        m
    }

    /// Fixed-width plain text: every line starts with `indent`, each cell is
    /// padded to its column's width (right or left by the alignment) and
    /// cells are separated by one space.
    pub fn text(&self, indent: &str, widths: &[usize]) -> String {
        let mut t = String::new();
        let mut line = |cells: &mut dyn Iterator<Item = &str>| {
            t.push_str(indent);
            for (k, (cell, c)) in cells.zip(&self.columns).enumerate() {
                if k > 0 {
                    t.push(' ');
                }
                let w = widths.get(k).copied().unwrap_or(0);
                let _ = match c.align {
                    Align::Left => write!(t, "{cell:<w$}"),
                    Align::Right => write!(t, "{cell:>w$}"),
                };
            }
            t.push('\n');
        };
        line(&mut self.columns.iter().map(|c| c.header.as_str()));
        for r in &self.rows {
            line(&mut r.iter().map(String::as_str));
        }
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // common practice, no published source: GitHub-flavoured Markdown table
    // syntax (header, `---` / `---:` alignment line, rows)
    #[test]
    fn markdown_table_has_units_alignment_and_rows() {
        let mut t = Table::new(vec![
            Column::text("storm"),
            Column::quantity("peak", "cfs"),
            Column::number("CN"),
        ]);
        assert!(t.is_empty());
        t.row(["10-yr", "12.5", "80"]);
        t.row(vec!["100-yr".to_string(), "20.1".into(), "80".into()]);
        assert_eq!(t.len(), 2);
        assert_eq!(
            t.markdown(),
            "| storm | peak [cfs] | CN |\n|---|---:|---:|\n| 10-yr | 12.5 | 80 |\n| 100-yr | 20.1 | 80 |\n"
        );
    }

    #[test]
    fn empty_headers_and_cells() {
        let mut t = Table::new(vec![Column::text(""), Column::text("")]);
        t.row(["program", "runnel"]);
        t.row(["", "x"]);
        assert_eq!(
            t.markdown(),
            "| | |\n|---|---|\n| program | runnel |\n|  | x |\n"
        );
    }

    #[test]
    fn text_table_pads_to_widths() {
        let mut t = Table::new(vec![Column::number("stage ft"), Column::text("note")]);
        t.row(["1.50", "crest"]);
        assert_eq!(
            t.text("  ", &[10, 6]),
            "    stage ft note  \n        1.50 crest \n"
        );
    }
}
