//! Two-column numeric CSV tables (spectra, lamp tables) with units in the header.
//!
//! ```text
//! # comment lines start with '#'
//! wavelength (nm), epsilon (L/(mol cm))
//! 300, 1200
//! 310, 1850
//! ```
//! The header names each column with its unit in parentheses or brackets; a dimensionless
//! column (relative power, quantum yield) has no unit.

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

/// Read a two-column table from `path`.
pub fn read(path: &Path) -> Result<Table, CsvError> {
    let text = std::fs::read_to_string(path).map_err(|e| CsvError {
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
    for (i, raw) in text.lines().enumerate() {
        let line_no = i + 1;
        let line = raw.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = line.split([',', ';', '\t']).map(str::trim).collect();
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
}
