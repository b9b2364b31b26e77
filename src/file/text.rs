//! Reading a text file the user named (a network, a CSV table, a frequency file, a data file):
//! only a regular file, at most [`LIMIT`] bytes, UTF-8, a leading byte-order mark skipped.
//!
//! Checked before anything is read: a FIFO, a device such as `/dev/zero` or a folder is refused
//! by its kind (reading one would block forever or grow without end), and a file larger than the
//! limit by its size. Bytes that are not UTF-8 are reported at their line and column.

use std::fmt;
use std::io::Read;
use std::path::Path;

/// The largest text file read, bytes (256 MiB: a spectrometer's export of a million rows is
/// about 30 MB).
pub const LIMIT: u64 = 256 * 1024 * 1024;

/// Why a text file could not be read.
#[derive(Debug)]
pub enum ReadError {
    /// The operating system's error (missing file, no permission).
    Io(std::io::Error),
    /// Not a regular file: what it is instead ("a folder", "a FIFO", "a device", ...).
    NotRegular(&'static str),
    /// Larger than [`LIMIT`]; its size in bytes.
    TooLarge(u64),
    /// Not UTF-8: the line and column (from 1, columns in characters) of the first bad byte.
    NotUtf8 {
        /// Line, from 1.
        line: usize,
        /// Column in characters, from 1.
        column: usize,
    },
}

impl fmt::Display for ReadError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReadError::Io(e) => write!(f, "{e}"),
            ReadError::NotRegular(what) => {
                write!(f, "is {what}, not a regular file (only regular files are read)")
            }
            ReadError::TooLarge(size) => write!(
                f,
                "is {} MiB, more than the {} MiB a text file may have",
                size.div_ceil(1024 * 1024),
                LIMIT / (1024 * 1024)
            ),
            ReadError::NotUtf8 { line, column } => write!(
                f,
                "line {line}, column {column}: not UTF-8 text (save the file as UTF-8)"
            ),
        }
    }
}

impl std::error::Error for ReadError {}

/// What a path that is not a regular file is, for messages.
fn kind(meta: &std::fs::Metadata) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let t = meta.file_type();
        if t.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if meta.is_dir() { "a folder" } else { "not a file" }
}

/// Read `path` as UTF-8 text within [`LIMIT`], without a leading byte-order mark.
pub fn read(path: &Path) -> Result<String, ReadError> {
    // `metadata` follows symbolic links and opens nothing, so a FIFO is never opened.
    let meta = std::fs::metadata(path).map_err(ReadError::Io)?;
    if !meta.is_file() {
        return Err(ReadError::NotRegular(kind(&meta)));
    }
    if meta.len() > LIMIT {
        return Err(ReadError::TooLarge(meta.len()));
    }
    let file = std::fs::File::open(path).map_err(ReadError::Io)?;
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    // The file may grow between the size check and the read: never take more than the limit.
    file.take(LIMIT + 1).read_to_end(&mut bytes).map_err(ReadError::Io)?;
    if bytes.len() as u64 > LIMIT {
        return Err(ReadError::TooLarge(bytes.len() as u64));
    }
    decode(bytes)
}

/// `bytes` as text without a leading byte-order mark, or where the first invalid byte is.
pub fn decode(bytes: Vec<u8>) -> Result<String, ReadError> {
    match String::from_utf8(bytes) {
        Ok(mut s) => {
            if s.starts_with('\u{feff}') {
                s.drain(..'\u{feff}'.len_utf8());
            }
            Ok(s)
        }
        Err(e) => {
            let valid = e.utf8_error().valid_up_to();
            let good = std::str::from_utf8(&e.as_bytes()[..valid]).unwrap_or("");
            let line = 1 + good.matches('\n').count();
            let column = 1 + good.rsplit('\n').next().map_or(0, |l| l.chars().count());
            Err(ReadError::NotUtf8 { line, column })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_byte_order_mark_is_skipped() {
        assert_eq!(decode(b"\xef\xbb\xbf# note\n1,2\n".to_vec()).unwrap(), "# note\n1,2\n");
    }

    #[test]
    fn bad_bytes_are_placed_by_line_and_column() {
        let e = decode(b"[conditions]\ntemperature = \"25 \xb0C\"\n".to_vec()).unwrap_err();
        assert!(matches!(e, ReadError::NotUtf8 { line: 2, column: 19 }), "{e:?}");
        assert!(e.to_string().contains("line 2, column 19"), "{e}");
    }

    #[test]
    fn folders_and_devices_are_refused_by_kind() {
        let dir = std::env::temp_dir();
        assert!(matches!(read(&dir), Err(ReadError::NotRegular("a folder"))));
        #[cfg(unix)]
        {
            let e = read(Path::new("/dev/zero")).unwrap_err();
            assert!(matches!(e, ReadError::NotRegular("a device")), "{e:?}");
        }
    }
}
