//! The library's error type and the source positions that its messages name.
//!
//! Every problem with the user's input becomes an [`InputError`] that knows
//! the file, the line and column where the input has them, the element and
//! key, what was expected and, where one helps, a hint. The binary prints it
//! once, as `error: FILE:LINE:COLUMN: ...`, and exits with code 2.

use std::fmt;
use std::path::{Path, PathBuf};

/// A problem with the input: scenario, rainfall CSV, hydrograph file.
#[derive(Debug, Clone, PartialEq)]
pub struct InputError {
    /// The file, as resolved.
    pub file: PathBuf,
    /// 1-based line, where known.
    pub line: Option<usize>,
    /// 1-based column, where known.
    pub column: Option<usize>,
    /// The element and key, e.g. `catchment "PR-1", flow segment 2, slope`.
    pub context: String,
    /// What is wrong.
    pub message: String,
    /// What was expected.
    pub expected: Option<String>,
    /// A hint, e.g. `did you mean "outlet"?`.
    pub hint: Option<String>,
    /// The offending line of the file, for a snippet.
    pub snippet: Option<String>,
}

impl InputError {
    /// A new error about `file` with a message.
    pub fn new(file: &Path, message: impl Into<String>) -> Self {
        InputError {
            file: file.to_path_buf(),
            line: None,
            column: None,
            context: String::new(),
            message: message.into(),
            expected: None,
            hint: None,
            snippet: None,
        }
    }

    /// Sets the element and key.
    pub fn context(mut self, context: impl Into<String>) -> Self {
        self.context = context.into();
        self
    }

    /// Sets what was expected.
    pub fn expected(mut self, expected: impl Into<String>) -> Self {
        self.expected = Some(expected.into());
        self
    }

    /// Sets a hint.
    pub fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }

    /// Sets the position from a 1-based line and column.
    pub fn at(mut self, line: usize, column: usize) -> Self {
        self.line = Some(line);
        self.column = Some(column);
        self
    }

    /// Sets the line only.
    pub fn at_line(mut self, line: usize) -> Self {
        self.line = Some(line);
        self
    }
}

impl fmt::Display for InputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file.display())?;
        if let Some(l) = self.line {
            write!(f, ":{l}")?;
            if let Some(c) = self.column {
                write!(f, ":{c}")?;
            }
        }
        write!(f, ": ")?;
        if !self.context.is_empty() {
            write!(f, "{}: ", self.context)?;
        }
        write!(f, "{}", self.message)?;
        if let (Some(line), Some(text)) = (self.line, &self.snippet) {
            let num = line.to_string();
            write!(f, "\n {} |\n {num} | {text}", " ".repeat(num.len()))?;
            if let Some(c) = self.column {
                let pad: String = text
                    .chars()
                    .take(c.saturating_sub(1))
                    .map(|ch| if ch == '\t' { '\t' } else { ' ' })
                    .collect();
                write!(f, "\n {} | {pad}^", " ".repeat(num.len()))?;
            }
        }
        if let Some(e) = &self.expected {
            write!(f, "\n  expected: {e}")?;
        }
        if let Some(h) = &self.hint {
            write!(f, "\n  hint: {h}")?;
        }
        Ok(())
    }
}

/// Everything that can go wrong in the library.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// Bad input: exit code 2, nothing written.
    #[error("{0}")]
    Input(Box<InputError>),
    /// A file could not be read.
    #[error("{}: cannot read: {source}", path.display())]
    Read {
        /// The path as resolved.
        path: PathBuf,
        /// The operating system's reason.
        source: std::io::Error,
    },
    /// Results could not be written.
    #[error("{}: cannot write results: {message}", path.display())]
    Write {
        /// Where.
        path: PathBuf,
        /// Why.
        message: String,
    },
    /// A computation met values it cannot work with (reported, never a panic).
    #[error("{message}")]
    Compute {
        /// What and where.
        message: String,
    },
    /// A storm or record cannot be simulated with these inputs (a pond that
    /// cannot be routed, a result that is not finite, a run too long).
    #[error("{0}")]
    Simulation(#[from] crate::engine::network::SimulationError),
    /// The run would need more memory than runnel allows itself.
    #[error("{message}")]
    TooLarge {
        /// What and how much.
        message: String,
    },
}

impl Error {
    /// The process exit code the contract gives this error.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_)
            | Error::Read { .. }
            | Error::TooLarge { .. }
            | Error::Simulation(_)
            | Error::Compute { .. } => 2,
            Error::Write { .. } => 3,
        }
    }
}

impl From<InputError> for Error {
    fn from(e: InputError) -> Self {
        Error::Input(Box::new(e))
    }
}

/// A text file held in memory, to turn byte offsets into lines and columns.
#[derive(Debug, Clone)]
pub struct SourceText {
    /// The path as resolved.
    pub path: PathBuf,
    /// The whole text.
    pub text: String,
    line_starts: Vec<usize>,
}

impl SourceText {
    /// Wraps a text read from `path`.
    pub fn new(path: &Path, text: String) -> Self {
        let mut line_starts = vec![0];
        line_starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        SourceText {
            path: path.to_path_buf(),
            text,
            line_starts,
        }
    }

    /// 1-based line and column (in characters) of a byte offset.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let line = self.line_starts.partition_point(|&s| s <= offset).max(1);
        let start = self.line_starts.get(line - 1).copied().unwrap_or(0);
        let col = self
            .text
            .get(start..offset)
            .map(|s| s.chars().count())
            .unwrap_or(0)
            + 1;
        (line, col)
    }

    /// The text of a 1-based line, without its end.
    pub fn line_text(&self, line: usize) -> Option<String> {
        self.text
            .lines()
            .nth(line.checked_sub(1)?)
            .map(|s| s.trim_end_matches('\r').to_string())
    }

    /// An error at a byte offset of this file.
    pub fn error_at(&self, offset: usize, message: impl Into<String>) -> InputError {
        let (line, col) = self.line_col(offset);
        let mut e = InputError::new(&self.path, message).at(line, col);
        e.snippet = self.line_text(line);
        e
    }

    /// An error with no position in this file.
    pub fn error(&self, message: impl Into<String>) -> InputError {
        InputError::new(&self.path, message)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_become_lines_and_columns() {
        let s = SourceText::new(Path::new("a.toml"), "ab\ncde\n\nf".into());
        assert_eq!(s.line_col(0), (1, 1));
        assert_eq!(s.line_col(4), (2, 2));
        assert_eq!(s.line_col(8), (4, 1));
        assert_eq!(s.line_text(2).as_deref(), Some("cde"));
    }

    #[test]
    fn display_starts_with_file_line_column() {
        let s = SourceText::new(Path::new("x.toml"), "area = \"5 ft\"\n".into());
        let e = s
            .error_at(7, "not an area")
            .context("catchment \"A\", area")
            .expected("\"8.4 ac\"");
        let text = e.to_string();
        assert!(
            text.starts_with("x.toml:1:8: catchment \"A\", area: not an area"),
            "{text}"
        );
        assert!(text.contains("expected: \"8.4 ac\""));
    }
}
