//! Output folders written whole or not at all.
//!
//! A command that writes a folder ([`Folder::begin`]) writes every file into a temporary sibling
//! (`.NAME.partial-PID`), and [`Folder::commit`] moves it into place at the end: the old folder
//! is renamed aside, the new one renamed in, the old one removed. An interrupted run (an error,
//! a panic, SIGINT or SIGTERM through [`remove_unfinished`]) leaves the old folder as it was and
//! no temporary folder; a finished run leaves only the new one, never a mix of old and new
//! files. Each file inside is still written by `report::write_atomic`, whose temporary file
//! ([`create_temporary`]) is removed on a signal too: a single-file output (a diagram, a
//! report page, an uncertainty shard) leaves the old file or the new one, and no `.tmp`.
//!
//! One lock guards every temporary: it is held while a temporary is created or a folder
//! committed, and the signal handler takes it for good before it removes them, so nothing is
//! created after the clean-up began.

use crate::error::{Error, Result};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

/// A temporary not yet in place, for [`remove_unfinished`].
#[derive(Debug, Clone, PartialEq)]
enum Unfinished {
    /// A folder being written (temporary folder, target).
    Folder(PathBuf, PathBuf),
    /// A file being written by `report::write_atomic` (the temporary file).
    File(PathBuf),
}

/// Every temporary not yet in place. Held while one is created or a folder committed.
static UNFINISHED: Mutex<Vec<Unfinished>> = Mutex::new(Vec::new());

fn unfinished() -> MutexGuard<'static, Vec<Unfinished>> {
    UNFINISHED.lock().unwrap_or_else(|e| e.into_inner())
}

/// An output folder being written.
#[derive(Debug)]
pub struct Folder {
    target: PathBuf,
    staging: PathBuf,
    committed: bool,
}

/// A sibling of `target` named `.NAME.TAG-PID`.
fn sibling(target: &Path, tag: &str) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "out".into());
    let parent = match target.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    parent.join(format!(".{name}.{tag}-{}", std::process::id()))
}

/// Refuse `target` as an output folder when it is an existing file (or a link to one): named,
/// and left alone. Also for a folder that files are added to rather than replaced whole (an
/// uncertainty shard's).
pub fn not_a_file(target: &Path) -> Result<()> {
    if let Ok(meta) = std::fs::metadata(target)
        && !meta.is_dir()
    {
        return Err(Error::Usage(format!(
            "--out {}: is an existing file, not a folder; name a folder (it is created, or replaced whole)",
            target.display()
        )));
    }
    Ok(())
}

impl Folder {
    /// Start writing the folder `target`: refused when `target` is something other than a
    /// folder (a regular file, or a link to one: it is named, and left alone); the files go
    /// into a fresh temporary sibling until [`Folder::commit`].
    pub fn begin(target: &Path) -> Result<Folder> {
        not_a_file(target)?;
        if std::fs::symlink_metadata(target).is_ok_and(|m| m.file_type().is_symlink()) {
            return Err(Error::Usage(format!(
                "--out {}: is a symbolic link; name the folder itself, which is replaced whole",
                target.display()
            )));
        }
        let staging = sibling(target, "partial");
        let io = |source| Error::Io {
            path: staging.clone(),
            source,
        };
        let mut u = unfinished();
        if staging.exists() {
            std::fs::remove_dir_all(&staging).map_err(io)?;
        }
        std::fs::create_dir_all(&staging).map_err(io)?;
        u.push(Unfinished::Folder(staging.clone(), target.to_path_buf()));
        Ok(Folder {
            target: target.to_path_buf(),
            staging,
            committed: false,
        })
    }

    /// The folder to write the files into (the temporary sibling).
    pub fn path(&self) -> &Path {
        &self.staging
    }

    /// The path of file `name` in the folder being written.
    pub fn join(&self, name: impl AsRef<Path>) -> PathBuf {
        self.staging.join(name)
    }

    /// The folder the files end up in.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Move the written folder into place, replacing the old one whole.
    pub fn commit(mut self) -> Result<()> {
        let io = |path: &Path, source| Error::Io {
            path: path.to_path_buf(),
            source,
        };
        let old = sibling(&self.target, "old");
        let had_old = self.target.is_dir();
        {
            // The renames under the lock: a signal meanwhile waits, then finds the old folder
            // aside or the new one in place and settles either.
            let mut u = unfinished();
            if had_old {
                if old.exists() {
                    std::fs::remove_dir_all(&old).map_err(|e| io(&old, e))?;
                }
                std::fs::rename(&self.target, &old).map_err(|e| io(&self.target, e))?;
            }
            if let Err(e) = std::fs::rename(&self.staging, &self.target) {
                // Put the old folder back: the run leaves what was there.
                if had_old {
                    let _ = std::fs::rename(&old, &self.target);
                }
                return Err(io(&self.target, e));
            }
            self.committed = true;
            u.retain(|x| !matches!(x, Unfinished::Folder(s, _) if *s == self.staging));
        }
        if had_old {
            std::fs::remove_dir_all(&old).map_err(|e| io(&old, e))?;
        }
        Ok(())
    }
}

impl Drop for Folder {
    /// A folder never committed (an error or a panic on the way) is removed.
    fn drop(&mut self) {
        if !self.committed {
            let mut u = unfinished();
            let _ = std::fs::remove_dir_all(&self.staging);
            u.retain(|x| !matches!(x, Unfinished::Folder(s, _) if *s == self.staging));
        }
    }
}

/// A temporary file made by [`create_temporary`]: forgotten when dropped (renamed into place,
/// or removed by its writer after a failure).
#[derive(Debug)]
pub struct Temporary(PathBuf);

impl Drop for Temporary {
    fn drop(&mut self) {
        unfinished().retain(|x| !matches!(x, Unfinished::File(p) if *p == self.0));
    }
}

/// Create the temporary file `tmp` (and its folder) for writing, recorded so that a signal
/// removes it; keep the [`Temporary`] until the file is renamed into place or removed.
pub fn create_temporary(tmp: &Path) -> std::io::Result<(std::fs::File, Temporary)> {
    let mut u = unfinished();
    if let Some(dir) = tmp.parent()
        && !dir.as_os_str().is_empty()
    {
        std::fs::create_dir_all(dir)?;
    }
    let f = std::fs::File::create(tmp)?;
    u.push(Unfinished::File(tmp.to_path_buf()));
    Ok((f, Temporary(tmp.to_path_buf())))
}

/// Remove the temporary folders and files of every output not yet in place, then run `then`
/// with the lock still held (the signal handler ends the process there, so no temporary is
/// created after the clean-up). A run stopped by SIGINT or SIGTERM leaves the old folder as it
/// was; a run stopped inside [`Folder::commit`] is settled: the old folder put back when the
/// new one is not yet in place, and removed when it is.
pub fn remove_unfinished_then(then: impl FnOnce()) {
    let mut u = unfinished();
    for x in std::mem::take(&mut *u) {
        clean(x);
    }
    then();
}

/// Remove one temporary (settling a folder stopped inside its commit).
fn clean(x: Unfinished) {
    match x {
        Unfinished::File(tmp) => {
            let _ = std::fs::remove_file(&tmp);
        }
        Unfinished::Folder(staging, target) => {
            let _ = std::fs::remove_dir_all(&staging);
            let old = sibling(&target, "old");
            if old.is_dir() {
                if target.exists() {
                    let _ = std::fs::remove_dir_all(&old);
                } else {
                    let _ = std::fs::rename(&old, &target);
                }
            }
        }
    }
}

/// [`remove_unfinished_then`] with nothing after it (the lock is released).
pub fn remove_unfinished() {
    remove_unfinished_then(|| {});
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("pl-folder-{}-{tag}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_committed_folder_replaces_the_old_one_whole() {
        let d = scratch("commit");
        let out = d.join("run");
        std::fs::create_dir_all(&out).unwrap();
        std::fs::write(out.join("stale.csv"), "old").unwrap();
        let f = Folder::begin(&out).unwrap();
        std::fs::write(f.join("new.csv"), "new").unwrap();
        assert_eq!(names(&out), ["stale.csv"], "the old folder stands until the commit");
        f.commit().unwrap();
        assert_eq!(names(&out), ["new.csv"]);
        assert_eq!(names(&d), ["run"], "no temporary folder left");
    }

    #[test]
    fn an_unfinished_folder_leaves_the_old_one_and_no_temporary() {
        let d = scratch("drop");
        let out = d.join("run");
        std::fs::create_dir_all(&out).unwrap();
        std::fs::write(out.join("old.csv"), "old").unwrap();
        {
            let f = Folder::begin(&out).unwrap();
            std::fs::write(f.join("half.csv"), "x").unwrap();
        }
        assert_eq!(names(&out), ["old.csv"]);
        assert_eq!(names(&d), ["run"]);
        // What a signal does to a folder being written (only this test's: other tests of the
        // crate write their own meanwhile).
        let f = Folder::begin(&d.join("fresh")).unwrap();
        let mine = Unfinished::Folder(f.path().to_path_buf(), d.join("fresh"));
        assert!(unfinished().contains(&mine));
        clean(mine);
        assert!(!f.path().exists());
    }

    #[test]
    fn a_temporary_file_is_listed_until_dropped_and_a_signal_removes_it() {
        let d = scratch("tmpfile");
        let tmp = d.join("sub/.page.html.1.tmp");
        let (f, t) = create_temporary(&tmp).unwrap();
        drop(f);
        let mine = Unfinished::File(tmp.clone());
        assert!(unfinished().contains(&mine));
        clean(mine.clone());
        assert!(!tmp.exists());
        drop(t);
        assert!(!unfinished().contains(&mine));
    }

    #[test]
    fn a_regular_file_as_the_folder_is_refused_by_name() {
        let d = scratch("file");
        let out = d.join("results.txt");
        std::fs::write(&out, "keep").unwrap();
        let e = Folder::begin(&out).unwrap_err().to_string();
        assert!(e.contains("results.txt") && e.contains("existing file"), "{e}");
        assert_eq!(std::fs::read_to_string(&out).unwrap(), "keep");
    }

    #[cfg(unix)]
    #[test]
    fn a_link_as_the_folder_is_refused_and_left() {
        let d = scratch("link");
        std::fs::create_dir_all(d.join("real")).unwrap();
        std::os::unix::fs::symlink("real", d.join("run")).unwrap();
        let e = Folder::begin(&d.join("run")).unwrap_err().to_string();
        assert!(e.contains("run") && e.contains("symbolic link"), "{e}");
        assert!(
            std::fs::symlink_metadata(d.join("run"))
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(names(&d), ["real", "run"], "no temporary folder");
    }
}
