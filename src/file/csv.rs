//! Two-column numeric CSV tables (spectra, lamp tables) with units in the header.
//!
//! ```text
//! # comment lines start with '#'
//! wavelength (nm), epsilon (L/(mol cm))
//! 300, 1200
//! 310, 1850
//! ```
//! The header names each column with its unit in parentheses or brackets; a dimensionless
//! column (relative power, quantum yield) has no unit. Cells are split by [`records`] (the
//! `csv` crate), so quoted cells as in RFC 4180 read back whole; the data reader (`file::data`)
//! splits its files the same way.

use std::fmt;
use std::path::{Path, PathBuf};

/// A two-column table read from a CSV file.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The file it was read from.
    pub path: PathBuf,
    /// Column names from the header.
    pub names: [String; 2],
    /// Units from the header (None where the column has none).
    pub units: [Option<String>; 2],
    /// Rows `(x, y, line number)`.
    pub rows: Vec<(f64, f64, usize)>,
}

/// A CSV problem with its file and line.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvError {
    /// The file.
    pub path: PathBuf,
    /// 1-based line, if the problem is on one.
    pub line: Option<usize>,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for CsvError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.path.display())?;
        if let Some(l) = self.line {
            write!(f, ":{l}")?;
        }
        write!(f, ": {}", self.message)
    }
}

/// Split "wavelength (nm)" into ("wavelength", Some("nm")).
pub(crate) fn split_header(cell: &str) -> (String, Option<String>) {
    let cell = cell.trim();
    for (open, close) in [('(', ')'), ('[', ']')] {
        if let Some(i) = cell.find(open)
            && cell.ends_with(close)
        {
            let unit = cell[i + 1..cell.len() - 1].trim().to_string();
            let name = cell[..i].trim().to_string();
            return (name, if unit.is_empty() { None } else { Some(unit) });
        }
    }
    (cell.to_string(), None)
}

/// One record of a CSV file: the 1-based line it starts on and its cells, trimmed and unquoted.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Record {
    /// 1-based line where the record starts.
    pub line: usize,
    /// The cells, surrounding spaces removed, quotes undone (`"a ""b"", c"` -> `a "b", c`).
    pub cells: Vec<String>,
}

/// Split CSV text into records with the `csv` crate, the way every CSV photoledger reads is read.
///
/// Cells are separated by one separator for the whole file: a comma, or a semicolon or tab when
/// the first non-comment line has no comma (outside quotes). A cell holding the separator, a quote
/// or a line break is quoted as in RFC 4180 §2 (`"1,2-diol"`, `"say ""hi"""`); spaces around
/// cells are ignored, also before an opening quote (`0, "A, B", 1`). Lines starting with `#` and
/// blank lines are skipped. Errors give the line and what is wrong.
pub(crate) fn records(text: &str) -> Result<Vec<Record>, (usize, String)> {
    let sep = separator(text);
    let text = tidy(text, sep)?;
    let mut reader = ::csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(sep as u8)
        .trim(::csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut out = Vec::new();
    // Lines are counted from where the last record began, so reading stays linear in the
    // file's length (the crate's positions only move forward).
    let mut cursor = (0usize, 1usize); // (byte, line at that byte)
    for r in reader.records() {
        let mut line_at = |pos: Option<&::csv::Position>| {
            // The crate's position is where it began reading, before skipped blank lines.
            let b = pos.map_or(0, |p| p.byte() as usize).min(text.len());
            let start = text[b..].find(|c| c != '\r' && c != '\n').map_or(text.len(), |i| b + i);
            if start < cursor.0 {
                cursor = (0, 1);
            }
            cursor.1 += text.as_bytes()[cursor.0..start].iter().filter(|&&c| c == b'\n').count();
            cursor.0 = start;
            cursor.1
        };
        let r = r.map_err(|e| (line_at(e.position()), format!("cannot be read as CSV: {e}")))?;
        if r.iter().all(str::is_empty) {
            continue;
        }
        out.push(Record {
            line: line_at(r.position()),
            cells: r.iter().map(String::from).collect(),
        });
    }
    Ok(out)
}

/// The separator: a comma, else a semicolon, else a tab, whichever the first non-comment line
/// holds outside quotes (a comma when it holds none).
fn separator(text: &str) -> char {
    let first = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    let mut quoted = false;
    let mut seen = [false; 3];
    for c in first.chars() {
        match c {
            '"' => quoted = !quoted,
            ',' if !quoted => seen[0] = true,
            ';' if !quoted => seen[1] = true,
            '\t' if !quoted => seen[2] = true,
            _ => {}
        }
    }
    [',', ';', '\t']
        .into_iter()
        .zip(seen)
        .find_map(|(c, s)| s.then_some(c))
        .unwrap_or(',')
}

/// Prepare text for the `csv` crate, keeping every line break (so line numbers stay): comment
/// lines are emptied, and spaces before an opening quote dropped (the crate takes a quote as
/// opening only at the very start of a cell). A quote never closed is an error on its line.
fn tidy(text: &str, sep: char) -> Result<String, (usize, String)> {
    #[derive(PartialEq)]
    enum At {
        LineStart,
        CellStart,
        Bare,
        Quoted,
        QuoteInQuoted,
        Comment,
    }
    let blank = |c: char| c == ' ' || (c == '\t' && sep != '\t');
    let mut out = String::with_capacity(text.len());
    let mut held = String::new();
    let (mut at, mut line, mut opened) = (At::LineStart, 1, 1);
    for c in text.chars() {
        at = match at {
            At::LineStart | At::CellStart if blank(c) => {
                held.push(c);
                at
            }
            At::LineStart if c == '#' => {
                held.clear();
                At::Comment
            }
            At::LineStart | At::CellStart if c == '"' => {
                held.clear();
                out.push(c);
                opened = line;
                At::Quoted
            }
            At::LineStart | At::CellStart | At::Bare | At::QuoteInQuoted => {
                out.push_str(&held);
                held.clear();
                out.push(c);
                if c == sep {
                    At::CellStart
                } else if c == '\n' {
                    At::LineStart
                } else if c == '"' && at == At::QuoteInQuoted {
                    At::Quoted
                } else {
                    At::Bare
                }
            }
            At::Quoted => {
                out.push(c);
                if c == '"' { At::QuoteInQuoted } else { At::Quoted }
            }
            At::Comment => {
                if c == '\n' {
                    out.push(c);
                    At::LineStart
                } else {
                    At::Comment
                }
            }
        };
        if c == '\n' {
            line += 1;
        }
    }
    if at == At::Quoted {
        return Err((
            opened,
            "a quoted cell opened on this line is never closed; a quote inside a quoted cell is written twice (\"\")"
                .into(),
        ));
    }
    Ok(out)
}

/// Read a two-column table from `path`.
pub fn read(path: &Path) -> Result<Table, CsvError> {
    let text = super::text::read(path).map_err(|e| CsvError {
        path: path.to_path_buf(),
        line: None,
        message: format!("cannot read: {e}"),
    })?;
    parse(path, &text)
}

/// Parse the text of a two-column table.
pub fn parse(path: &Path, text: &str) -> Result<Table, CsvError> {
    let err = |line: usize, message: String| CsvError {
        path: path.to_path_buf(),
        line: Some(line),
        message,
    };
    let mut header: Option<([String; 2], [Option<String>; 2])> = None;
    let mut rows = Vec::new();
    for r in records(text).map_err(|(line, message)| err(line, message))? {
        let line_no = r.line;
        let cells: Vec<&str> = r.cells.iter().map(String::as_str).collect();
        if header.is_none() {
            if cells.len() != 2 {
                return Err(err(
                    line_no,
                    format!(
                        "the header has {} columns; two are expected, e.g. \"wavelength (nm), epsilon (L/(mol cm))\"",
                        cells.len()
                    ),
                ));
            }
            let (n0, u0) = split_header(cells[0]);
            let (n1, u1) = split_header(cells[1]);
            if n0.parse::<f64>().is_ok() {
                return Err(err(
                    line_no,
                    "the first line is data; a header naming the columns and their units comes first, e.g. \"wavelength (nm), epsilon (L/(mol cm))\"".into(),
                ));
            }
            header = Some(([n0, n1], [u0, u1]));
            continue;
        }
        if cells.len() != 2 {
            return Err(err(line_no, format!("{} columns found; two are expected", cells.len())));
        }
        let num = |s: &str, col: &str| {
            s.parse::<f64>().ok().filter(|v| v.is_finite()).ok_or_else(|| {
                err(
                    line_no,
                    format!("the {col} column holds \"{s}\", which is not a finite number"),
                )
            })
        };
        let x = num(cells[0], "first")?;
        let y = num(cells[1], "second")?;
        rows.push((x, y, line_no));
    }
    let (names, units) = header.ok_or_else(|| CsvError {
        path: path.to_path_buf(),
        line: None,
        message: "the file is empty; a header and at least one row are expected".into(),
    })?;
    if rows.is_empty() {
        return Err(CsvError {
            path: path.to_path_buf(),
            line: None,
            message: "no data rows".into(),
        });
    }
    Ok(Table {
        path: path.to_path_buf(),
        names,
        units,
        rows,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_header_units_and_rows() {
        let t = parse(
            Path::new("x.csv"),
            "# c\nwavelength (nm), epsilon (L/(mol cm))\n300, 12\n310,14\n",
        )
        .unwrap();
        assert_eq!(t.units[0].as_deref(), Some("nm"));
        assert_eq!(t.units[1].as_deref(), Some("L/(mol cm)"));
        assert_eq!(t.rows, vec![(300.0, 12.0, 3), (310.0, 14.0, 4)]);
    }

    #[test]
    fn bad_rows_name_the_line() {
        let e = parse(Path::new("x.csv"), "wavelength (nm), p\n300, 1\n310, abc\n").unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(e.to_string().contains("x.csv:3"), "{e}");
        let e = parse(Path::new("x.csv"), "300, 1\n").unwrap_err();
        assert!(e.message.contains("header"), "{e}");
        assert!(parse(Path::new("x.csv"), "").is_err());
    }

    fn cells(text: &str) -> Vec<(usize, Vec<String>)> {
        records(text).unwrap().into_iter().map(|r| (r.line, r.cells)).collect()
    }

    #[test]
    fn records_follow_rfc_4180_quoting() {
        // RFC 4180 §2 rules 5-7: quoted fields may hold commas, line breaks and doubled quotes.
        let got = cells("# note, \"x\n\na,\"b, c\"\r\n\"d \"\"e\"\"\", \"f\ng\"\n  # indented comment\nh ,  i\n");
        let want = |l: usize, c: &[&str]| (l, c.iter().map(|s| s.to_string()).collect::<Vec<_>>());
        assert_eq!(
            got,
            vec![
                want(3, &["a", "b, c"]),
                want(4, &["d \"e\"", "f\ng"]),
                want(7, &["h", "i"]),
            ]
        );
        let e = records("a,b\n1,\"2\n3,4\n").unwrap_err();
        assert_eq!(e.0, 2);
        assert!(e.1.contains("never closed"), "{}", e.1);
    }

    #[test]
    fn the_separator_comes_from_the_first_line() {
        assert_eq!(cells("x (nm); \"y, z\"\n1;2\n")[1].1, vec!["1", "2"]);
        assert_eq!(cells("x (nm); \"y, z\"\n")[0].1[1], "y, z");
        assert_eq!(cells("x (nm)\ty\n1\t2\n")[1].1, vec!["1", "2"]);
        assert_eq!(cells("x (nm), y\n1, 2\n")[1].1, vec!["1", "2"]);
    }

    #[test]
    fn a_quoted_header_cell_with_a_comma_reads() {
        let t = parse(
            Path::new("x.csv"),
            "\"wavelength (nm)\",\"relative power, smoothed\"\n300,1\n",
        )
        .unwrap();
        assert_eq!(t.names[1], "relative power, smoothed");
        assert_eq!(t.rows, vec![(300.0, 1.0, 2)]);
    }
}
