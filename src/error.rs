//! One error type for the whole library: problems located in a file, with the field,
//! what was found and what is accepted, so a user can act on them.

use std::fmt;
use std::path::{Path, PathBuf};

/// Where a value came from: a byte span of a file, or the command line (`--set`).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub enum Origin {
    /// A byte range in the source text of the file being read.
    Span(std::ops::Range<usize>),
    /// Given on the command line with `--set`.
    CommandLine,
    /// No position known (a derived or default value).
    #[default]
    Unknown,
}

/// How bad a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Severity {
    /// The network can still be used; the user should look.
    Warning,
    /// The network cannot be used as written.
    Error,
}

/// A finding about an input file, with everything needed to fix it.
#[derive(Debug, Clone, PartialEq)]
pub struct Diagnostic {
    /// Error or warning.
    pub severity: Severity,
    /// The file it concerns, if any.
    pub file: Option<PathBuf>,
    /// 1-based line and column, if known.
    pub line_col: Option<(usize, usize)>,
    /// True when the value was given with `--set` on the command line.
    pub from_command_line: bool,
    /// The field, in dotted form (`species[2].initial`, `transient "S1".channels[0].fraction`).
    pub field: String,
    /// What is wrong, including what was found.
    pub message: String,
    /// What is accepted, or a suggestion ("did you mean ...?").
    pub help: Option<String>,
}

impl Diagnostic {
    /// A new error about `field`.
    pub fn error(field: impl Into<String>, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            file: None,
            line_col: None,
            from_command_line: false,
            field: field.into(),
            message: message.into(),
            help: None,
        }
    }

    /// A new warning about `field`.
    pub fn warning(field: impl Into<String>, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::error(field, message)
        }
    }

    /// Attach what is accepted or a suggestion.
    pub fn with_help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// Attach the position of `origin` in `source` (the text of `file`).
    pub fn at(self, file: &Path, source: &str, origin: &Origin) -> Self {
        self.placed(file, &LineIndex::new(source), origin)
    }

    /// Attach the position of `origin` in the file whose lines are `lines` (for many
    /// diagnostics about one file, indexed once).
    pub fn placed(mut self, file: &Path, lines: &LineIndex, origin: &Origin) -> Self {
        self.file = Some(file.to_path_buf());
        match origin {
            Origin::Span(r) => self.line_col = Some(lines.line_col(r.start)),
            Origin::CommandLine => self.from_command_line = true,
            Origin::Unknown => {}
        }
        self
    }

    /// Attach a file with no position.
    pub fn in_file(mut self, file: &Path) -> Self {
        self.file = Some(file.to_path_buf());
        self
    }
}

/// 1-based line and column (in characters) of byte `offset` in `source`.
pub fn line_col(source: &str, offset: usize) -> (usize, usize) {
    LineIndex::new(source).line_col(offset)
}

/// The start of every line of a text, so that locating many positions in one file costs a
/// binary search each instead of a scan from the top ([`line_col`] for a single position).
#[derive(Debug, Clone)]
pub struct LineIndex<'a> {
    source: &'a str,
    /// Byte offset where each line begins (the first is 0).
    starts: Vec<usize>,
}

impl<'a> LineIndex<'a> {
    /// Index the lines of `source`.
    pub fn new(source: &'a str) -> Self {
        let mut starts = vec![0];
        starts.extend(
            source
                .bytes()
                .enumerate()
                .filter(|&(_, b)| b == b'\n')
                .map(|(i, _)| i + 1),
        );
        LineIndex { source, starts }
    }

    /// 1-based line and column (in characters) of byte `offset`, as [`line_col`] gives.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let mut off = offset.min(self.source.len());
        while off > 0 && !self.source.is_char_boundary(off) {
            off -= 1;
        }
        let line = self.starts.partition_point(|&s| s <= off);
        let start = self.starts[line - 1];
        (line, self.source[start..off].chars().count() + 1)
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let kind = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        write!(f, "{kind}: ")?;
        if let Some(file) = &self.file {
            write!(f, "{}", file.display())?;
            if let Some((l, c)) = self.line_col {
                write!(f, ":{l}:{c}")?;
            }
            write!(f, ": ")?;
        }
        if !self.field.is_empty() {
            write!(f, "{}: ", self.field)?;
        }
        write!(f, "{}", self.message)?;
        if self.from_command_line {
            write!(f, " (value given with --set)")?;
        }
        if let Some(h) = &self.help {
            write!(f, "\n  help: {h}")?;
        }
        Ok(())
    }
}

/// The library's error.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The input is invalid; every problem found is listed (warnings may be included).
    #[error("{}", render(.0))]
    Invalid(Vec<Diagnostic>),
    /// A file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The operating system's error.
        source: std::io::Error,
    },
    /// A request that does not make sense for this network (a usage error).
    #[error("{0}")]
    Usage(String),
    /// A numerical engine could not finish (with the reason).
    #[error("{0}")]
    Numerical(String),
    /// The kinetics gave a concentration or photon count below zero beyond the tolerance,
    /// still after retries with tighter tolerances: a numerical failure, not a result.
    #[error("{0}")]
    Unphysical(Box<crate::kinetics::check::Unphysical>),
}

fn render(ds: &[Diagnostic]) -> String {
    let errors: Vec<String> = ds
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .map(|d| d.to_string())
        .collect();
    let n = errors.len();
    let mut s = errors.join("\n");
    if n > 1 {
        s.push_str(&format!("\n{n} errors"));
    }
    s
}

impl Error {
    /// A single invalid-input error.
    pub fn invalid(d: Diagnostic) -> Self {
        Error::Invalid(vec![d])
    }
}

/// The library's result type.
pub type Result<T, E = Error> = std::result::Result<T, E>;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_and_column_are_one_based() {
        let s = "a = 1\nbb = \"x µ\"\n";
        assert_eq!(line_col(s, 0), (1, 1));
        assert_eq!(line_col(s, 6), (2, 1));
        assert_eq!(line_col(s, 11), (2, 6));
        assert_eq!(line_col(s, 10_000), (3, 1));
        // The index against a scan from the top (the lines before, the characters since the
        // last line break), at every offset including ones inside a multi-byte character.
        let index = LineIndex::new(s);
        for off in 0..=s.len() + 3 {
            let mut b = off.min(s.len());
            while !s.is_char_boundary(b) {
                b -= 1;
            }
            let before = &s[..b];
            let scan = (
                before.matches('\n').count() + 1,
                before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1,
            );
            assert_eq!(index.line_col(off), scan, "offset {off}");
        }
    }

    #[test]
    fn display_names_file_line_field_and_help() {
        let d = Diagnostic::error("species[0].initial", "\"10\" has no unit")
            .with_help("a number with M, mM")
            .at(Path::new("n.toml"), "x\ny", &Origin::Span(2..3));
        let s = d.to_string();
        assert!(
            s.starts_with("error: n.toml:2:1: species[0].initial: \"10\" has no unit"),
            "{s}"
        );
        assert!(s.contains("help: a number with M"), "{s}");
    }
}
