//! Reading network files: the TOML text, and the CSV tables it refers to; writing TOML back.
//!
//! This is the only module that knows the TOML layout ([`schema`] to read it, [`write`](mod@write) to write
//! it from typed values) and the only one below the CLI that touches the file system on the way
//! in. [`load`] reads the file and every CSV it names, so that `network::build` is a pure
//! function of what was read.

pub mod csv;
pub mod data;
pub mod evidence;
pub mod folder;
pub mod frequencies;
pub mod levels;
pub mod schema;
pub mod structure;
pub mod text;
pub mod uncertain;
pub mod write;

use crate::error::{Diagnostic, Error, Result};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

pub use csv::Table;
pub use schema::NetworkFile;

/// A network file as read from disk: its text, the parsed structure and referenced tables.
#[derive(Debug)]
pub struct Loaded {
    /// Path as given.
    pub path: PathBuf,
    /// The file's text (spans refer to it).
    pub text: String,
    /// The parsed structure.
    pub doc: NetworkFile,
    /// CSV tables named by `file` keys, by the string written in the file.
    pub tables: BTreeMap<String, std::result::Result<Table, String>>,
    /// Frequency files named by `*frequencies` keys, by the string written in the file: the
    /// path they were read from and their text (or why they could not be read).
    pub frequency_files: BTreeMap<String, (PathBuf, std::result::Result<String, String>)>,
}

impl Loaded {
    /// The names of the `[[species]]` entries, in file order (the network's species order).
    pub fn species_names(&self) -> Vec<String> {
        self.doc
            .species
            .iter()
            .filter_map(|s| s.get_ref().name.as_ref().map(|n| n.get_ref().clone()))
            .collect()
    }

    /// The keys a fit frees: `given` ones (trimmed, empty ones dropped), else the file's
    /// `[fit] free` list.
    pub fn free_keys(&self, given: &[String]) -> Vec<String> {
        let given: Vec<String> = given
            .iter()
            .map(|k| k.trim().to_string())
            .filter(|k| !k.is_empty())
            .collect();
        if !given.is_empty() {
            return given;
        }
        self.doc.fit.as_ref().map_or(Vec::new(), |f| f.get_ref().free.clone())
    }
}

/// Read and parse `path` and the CSV files it names.
///
/// A TOML syntax error or an unknown key is an [`Error::Invalid`] with the line and column;
/// a missing file is [`Error::Io`]. A CSV that cannot be read is kept as an error string and
/// reported by validation at the `file` key that names it.
pub fn load(path: &Path) -> Result<Loaded> {
    let text = read_text(path)?;
    parse_text(path, text)
}

/// Read a file the user named on the command line or in a network ([`text::read`]): a bad kind
/// or size is an [`Error::Io`] naming the path, bytes that are not UTF-8 an [`Error::Invalid`]
/// at their line and column.
pub fn read_text(path: &Path) -> Result<String> {
    text::read(path).map_err(|e| match e {
        text::ReadError::Io(source) => Error::Io {
            path: path.to_path_buf(),
            source,
        },
        text::ReadError::NotUtf8 { line, column } => {
            let mut d = Diagnostic::error("", "not UTF-8 text here (save the file as UTF-8)").in_file(path);
            d.line_col = Some((line, column));
            Error::invalid(d)
        }
        other => Error::Io {
            path: path.to_path_buf(),
            source: std::io::Error::other(other.to_string()),
        },
    })
}

/// Parse network text as if read from `path` (CSV paths resolve against its folder). Every
/// structural problem (a misspelt key, a number without its unit) is reported together, up
/// to [`structure::MOST`].
pub fn parse_text(path: &Path, text: String) -> Result<Loaded> {
    match parse_all(path, text) {
        (Some(l), problems) if problems.is_empty() => Ok(l),
        (_, problems) => Err(Error::Invalid(problems)),
    }
}

/// [`parse_text`] that goes on past structural problems: the problems, and, when the text with
/// their lines blanked reads, that text as a [`Loaded`] (same offsets and lines as the file) so
/// validation can report its own problems in the same run (`network::load`).
pub fn parse_all(path: &Path, text: String) -> (Option<Loaded>, Vec<Diagnostic>) {
    let (rest, problems) = structure::read_all(path, &text);
    let Some((text, doc)) = rest else {
        return (None, problems);
    };
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut tables = BTreeMap::new();
    for name in referenced_files(&doc) {
        let full = dir.join(&name);
        let t = csv::read(&full).map_err(|e| e.to_string());
        tables.insert(name, t);
    }
    let mut frequency_files = BTreeMap::new();
    for name in referenced_frequency_files(&doc) {
        let full = dir.join(&name);
        let t = text::read(&full).map_err(|e| e.to_string());
        frequency_files.insert(name, (full, t));
    }
    let loaded = Loaded {
        path: path.to_path_buf(),
        text,
        doc,
        tables,
        frequency_files,
    };
    (Some(loaded), problems)
}

/// File names given (as strings) to the frequency keys of rates, hot transients and hot channels.
fn referenced_frequency_files(doc: &NetworkFile) -> Vec<String> {
    let mut out = Vec::new();
    let mut add = |v: &Option<toml::Spanned<toml::Value>>| {
        if let Some(v) = v
            && let toml::Value::String(s) = v.get_ref()
        {
            out.push(s.clone());
        }
    };
    let rate = |r: &Option<toml::Spanned<schema::Rate>>, add: &mut dyn FnMut(&Option<toml::Spanned<toml::Value>>)| {
        if let Some(r) = r {
            add(&r.get_ref().reactant_frequencies);
            add(&r.get_ref().ts_frequencies);
        }
    };
    for t in &doc.thermal {
        rate(&t.get_ref().rate, &mut add);
        rate(&t.get_ref().reverse, &mut add);
    }
    for t in &doc.transient {
        add(&t.get_ref().frequencies);
        for c in &t.get_ref().channels {
            rate(&c.get_ref().rate, &mut add);
            if let Some(h) = &c.get_ref().hot {
                add(&h.get_ref().ts_frequencies);
            }
        }
    }
    out
}

fn referenced_files(doc: &NetworkFile) -> Vec<String> {
    use schema::Valued;
    let mut out = Vec::new();
    let mut from_valued = |v: &Valued| {
        if let Valued::Table(t) = v
            && let Some(f) = &t.file
        {
            out.push(f.clone());
        }
    };
    if let Some(c) = &doc.conditions
        && let Some(b) = &c.get_ref().background
    {
        from_valued(b.get_ref());
    }
    for s in &doc.species {
        if let Some(e) = &s.get_ref().epsilon {
            from_valued(e.get_ref());
        }
    }
    for p in &doc.photo {
        if let Some(q) = &p.get_ref().quantum_yield {
            from_valued(q.get_ref());
        }
    }
    for l in &doc.light {
        if let Some(f) = &l.get_ref().file {
            out.push(f.get_ref().clone());
        }
    }
    out
}
