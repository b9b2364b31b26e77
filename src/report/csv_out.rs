//! The one CSV writer: every CSV photoledger writes is built by a [`CsvTable`].
//!
//! The output follows RFC 4180 section 2 (Shafranov, "Common Format and MIME Type for
//! Comma-Separated Values (CSV) Files", IETF 2005): one header row, then records with the
//! header's number of fields, fields separated by commas, and a field that holds a comma, a
//! double quote or a line break enclosed in double quotes with every inner quote doubled. Only
//! such fields are quoted (the `csv` crate's `QuoteStyle::Necessary`), so numbers and plain
//! names stay bare.
//!
//! Records end in CRLF. RFC 4180 §2 rule 1 asks for CRLF, and every reader the project meets
//! accepts it: its own (`file::csv`, `file::data`), the `csv` crate, Python's `csv` module,
//! spreadsheets, and Rust's `str::lines`. LF alone would be read by most tools too, but would not
//! be RFC 4180; one terminator everywhere keeps every file alike.
//!
//! Cells are text: callers format numbers with [`cell`] (the shortest digits that read back to
//! the same `f64`, plain decimals where a spreadsheet shows them so).

/// A CSV table being written: the header first, then rows of the same width. Into memory
/// ([`CsvTable::new`], [`CsvTable::finish`]) or streamed into a writer row by row
/// ([`CsvTable::to_writer`], [`CsvTable::flush`]), so a time course of a million points is never
/// held whole.
pub struct CsvTable<W: std::io::Write = Vec<u8>> {
    out: csv::Writer<W>,
    width: usize,
    /// The first write error, returned by [`CsvTable::flush`].
    error: Option<std::io::Error>,
}

impl CsvTable<Vec<u8>> {
    /// A table with this header row (units written out in the cells, e.g. `time (s)`).
    pub fn new<I, S>(header: I) -> Self
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        Self::to_writer(Vec::new(), header)
    }

    /// A table preceded by `# ` comment lines, one per line of `comment`. Only for files meant to be
    /// read back by photoledger's own readers (`file::data` time courses), which skip such lines;
    /// RFC 4180 has no comments, so report outputs never use this.
    pub fn with_comments<I, S>(comment: &str, header: I) -> Self
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        let mut top = Vec::new();
        for l in comment.lines() {
            top.extend_from_slice(b"# ");
            top.extend_from_slice(l.as_bytes());
            top.extend_from_slice(b"\r\n");
        }
        Self::to_writer(top, header)
    }

    /// The finished text.
    pub fn finish(self) -> String {
        let bytes = self.out.into_inner().unwrap_or_default();
        String::from_utf8(bytes).unwrap_or_default()
    }
}

impl<W: std::io::Write> CsvTable<W> {
    /// A table with this header row written into `w` as rows come.
    pub fn to_writer<I, S>(w: W, header: I) -> Self
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        let out = csv::WriterBuilder::new()
            .delimiter(b',')
            .quote_style(csv::QuoteStyle::Necessary)
            .terminator(csv::Terminator::CRLF)
            .flexible(true)
            .from_writer(w);
        let mut t = CsvTable {
            out,
            width: 0,
            error: None,
        };
        let cells: Vec<String> = header.into_iter().map(|s| s.as_ref().to_string()).collect();
        t.width = cells.len();
        t.write(&cells);
        t
    }

    /// Append one row. It must have the header's number of cells (checked in debug builds; the
    /// integration test `tests/csv_output.rs` checks every file the commands write).
    pub fn row<I, S>(&mut self, cells: I)
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        let cells: Vec<String> = cells.into_iter().map(|s| s.as_ref().to_string()).collect();
        debug_assert_eq!(cells.len(), self.width, "CSV row {cells:?} does not match the header");
        self.write(&cells);
    }

    fn write(&mut self, cells: &[String]) {
        if cells.is_empty() || self.error.is_some() {
            return;
        }
        if let Err(e) = self.out.write_record(cells) {
            self.error = Some(e.into());
        }
    }

    /// Write out what is buffered; the first error met while writing, if any.
    pub fn flush(mut self) -> std::io::Result<()> {
        if let Some(e) = self.error.take() {
            return Err(e);
        }
        self.out.flush()
    }
}

/// A number with the shortest digits that read back to the same `f64`: plain decimals for
/// magnitudes from 1e-4 up to 1e15, scientific notation outside ("0", "36", "0.0015",
/// "1.5e-7", "2e20"); a zero of either sign is "0". Spreadsheets and CSV readers take both
/// forms, and neither loses a digit (`{:e}` everywhere gave cells such as "0e0" and "3.6e1").
pub fn cell(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    if (1e-4..1e15).contains(&v.abs()) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

/// [`cell`] for a value that may be missing: an empty cell when it is.
pub fn opt_cell(v: Option<f64>) -> String {
    v.map(cell).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Read back with the `csv` crate (strict: every record the header's width).
    fn read(text: &str) -> Vec<Vec<String>> {
        csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(text.as_bytes())
            .records()
            .map(|r| r.unwrap().iter().map(String::from).collect())
            .collect()
    }

    #[test]
    fn quotes_only_what_needs_it() {
        let mut t = CsvTable::new(["time (s)", "A, B (mol/L)"]);
        t.row(["1e0", "plain"]);
        t.row(["2e0", "say \"hi\""]);
        t.row(["3e0", "two\nlines"]);
        t.row(["4e0", ""]);
        let s = t.finish();
        // RFC 4180 §2 rules 1, 5, 6, 7: CRLF records; a field with a comma, quote or line break
        // is enclosed in double quotes and an inner quote is doubled; others are not quoted.
        assert_eq!(
            s,
            "time (s),\"A, B (mol/L)\"\r\n1e0,plain\r\n2e0,\"say \"\"hi\"\"\"\r\n3e0,\"two\nlines\"\r\n4e0,\r\n"
        );
        let back = read(&s);
        assert_eq!(back.len(), 5);
        assert_eq!(back[0][1], "A, B (mol/L)");
        assert_eq!(back[2][1], "say \"hi\"");
        assert_eq!(back[3][1], "two\nlines");
        assert_eq!(back[4][1], "");
    }

    #[test]
    fn comments_precede_the_header() {
        let mut t = CsvTable::with_comments("made up\nsecond", ["x", "y"]);
        t.row(["1", "2"]);
        assert_eq!(t.finish(), "# made up\r\n# second\r\nx,y\r\n1,2\r\n");
    }

    #[test]
    fn numbers_keep_every_digit() {
        for v in [0.1 + 0.2, 1.0 / 3.0, 6.02214076e23, -1e-300, 0.0] {
            assert_eq!(cell(v).parse::<f64>().unwrap(), v);
        }
        assert_eq!(opt_cell(None), "");
        assert_eq!(opt_cell(Some(2.5)), "2.5");
        for (v, want) in [
            (0.0, "0"),
            (-0.0, "0"),
            (36.0, "36"),
            (0.0015, "0.0015"),
            (1.5e-7, "1.5e-7"),
            (2e20, "2e20"),
        ] {
            assert_eq!(cell(v), want);
        }
        // every cell reads back to the same f64
        for v in [
            0.1 + 0.2,
            1.0 / 3.0,
            9.999999999999999e-5,
            1e-4,
            999999999999999.9,
            1e15,
            -2.5e-300,
            f64::MAX,
        ] {
            assert_eq!(cell(v).parse::<f64>().unwrap().to_bits(), v.to_bits(), "{v:e}");
        }
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "does not match the header")]
    fn a_short_row_is_caught() {
        let mut t = CsvTable::new(["a", "b"]);
        t.row(["1"]);
    }
}
