//! Reports: what the engines found, as text, CSV, JSON and SVG. Pure functions that return
//! strings, plus [`write_atomic`], the one way outputs reach the disk.

pub mod barrier;
pub mod barrier_json;
pub mod chain;
pub mod chain_paths;
pub mod check;
pub mod csv_out;
pub mod decimate;
pub mod diagram;
pub mod evidence;
pub mod fit;
pub mod html;
pub mod levels;
pub mod palette;
pub mod plan;
pub mod simulation;
pub mod summary;
pub mod sweep;
pub mod ticks;
pub mod timeplot;
pub mod uncertainty;

use crate::error::{Error, Result};
use std::io::Write;
use std::path::Path;

/// Write `bytes` to `path` atomically: a temporary file beside it, flushed, then renamed, so a
/// reader never sees a half-written file and a failed run leaves the old file in place.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    write_atomic_with(path, |w| w.write_all(bytes))
}

/// [`write_atomic`] for output made as it is written: `fill` writes into a buffered writer on
/// the temporary file (a CSV of a million rows streamed, never held whole).
pub fn write_atomic_with(path: &Path, fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>) -> Result<()> {
    let io = |source| Error::Io {
        path: path.to_path_buf(),
        source,
    };
    // A symbolic link is written through, never replaced by a file: the file it names gets the
    // output (a link whose file is missing is an error naming the link).
    let resolved;
    let path = if std::fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink()) {
        resolved = std::fs::canonicalize(path).map_err(io)?;
        resolved.as_path()
    } else {
        path
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "out".into());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        // Recorded until renamed: a signal meanwhile removes it (`file::folder`).
        let (f, _pending) = crate::file::folder::create_temporary(&tmp)?;
        let mut f = std::io::BufWriter::new(f);
        fill(&mut f)?;
        let f = f.into_inner().map_err(|e| e.into_error())?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(io)
}

/// The one caution line every text output that involves a lamp ends with, under the one
/// heading "caution:" (`simulate`, `plan`, `fit`, `uncertainty`, `actinometer`).
pub fn caution_line() -> String {
    format!("caution: {}", simulation::CAUTIONS)
}

#[cfg(test)]
mod tests {
    #[test]
    fn writes_and_replaces() {
        let dir = std::env::temp_dir().join(format!("pl-atomic-{}", std::process::id()));
        let p = dir.join("a.txt");
        super::write_atomic(&p, b"one").unwrap();
        super::write_atomic(&p, b"two").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "two");
        let left: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
        assert_eq!(left.len(), 1, "no temporary file is left behind");
        std::fs::remove_dir_all(dir).unwrap();
    }

    #[cfg(unix)]
    #[test]
    fn a_link_is_written_through_not_replaced() {
        let dir = std::env::temp_dir().join(format!("pl-atomic-link-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("keep")).unwrap();
        std::fs::write(dir.join("keep/page.html"), "old").unwrap();
        std::os::unix::fs::symlink("keep/page.html", dir.join("page.html")).unwrap();
        super::write_atomic(&dir.join("page.html"), b"new").unwrap();
        let link = std::fs::symlink_metadata(dir.join("page.html")).unwrap();
        assert!(link.file_type().is_symlink(), "the link was replaced by a file");
        assert_eq!(std::fs::read_to_string(dir.join("keep/page.html")).unwrap(), "new");
        assert_eq!(
            std::fs::read_dir(dir.join("keep")).unwrap().count(),
            1,
            "no temporary left"
        );
        // A link to nothing: an error naming it, and the link left.
        std::os::unix::fs::symlink("gone/x.svg", dir.join("x.svg")).unwrap();
        let e = super::write_atomic(&dir.join("x.svg"), b"new").unwrap_err().to_string();
        assert!(e.contains("x.svg"), "{e}");
        assert!(
            std::fs::symlink_metadata(dir.join("x.svg"))
                .unwrap()
                .file_type()
                .is_symlink()
        );
        std::fs::remove_dir_all(dir).unwrap();
    }
}
