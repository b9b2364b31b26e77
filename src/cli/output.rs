//! Every line the commands print goes through here: `out!`/`outln!` for standard output,
//! `note!`/`noteln!` for standard error.
//!
//! A closed standard output (`photoledger simulate ... | head -3`, `| true`) is not an error: the
//! reader took what it wanted. The first write that finds the pipe closed marks standard output
//! closed; later writes are dropped, the command finishes its work (its files are written as
//! usual) and the program exits with its ordinary code, 0 on success, with nothing said.
//! (Rust ignores SIGPIPE, so without this every `println!` after the reader left would panic.)
//! Any other failure to write standard output (a full disk behind `> file`) is a file error.
//! Writes to standard error never fail a command: if it is closed, the notes are lost.

use photoledger::Error;
use std::io::{ErrorKind, Write};
use std::sync::atomic::{AtomicBool, Ordering};

static STDOUT_CLOSED: AtomicBool = AtomicBool::new(false);

/// Write `args` to standard output. A closed pipe ends printing quietly (`Ok`); any other
/// failure is an [`Error::Io`] on "standard output".
pub fn stdout(args: std::fmt::Arguments) -> photoledger::Result<()> {
    if STDOUT_CLOSED.load(Ordering::Relaxed) {
        return Ok(());
    }
    let mut out = std::io::stdout().lock();
    match out.write_fmt(args).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == ErrorKind::BrokenPipe => {
            STDOUT_CLOSED.store(true, Ordering::Relaxed);
            Ok(())
        }
        Err(source) => Err(Error::Io {
            path: "standard output".into(),
            source,
        }),
    }
}

/// Write `args` to standard error, ignoring any failure (a closed stderr loses the note).
pub fn stderr(args: std::fmt::Arguments) {
    let _ = std::io::stderr().lock().write_fmt(args);
}

/// `print!` through [`stdout`]: evaluates to `photoledger::Result<()>`, so write `out!(...)?`.
macro_rules! out {
    ($($arg:tt)*) => { $crate::cli::output::stdout(format_args!($($arg)*)) };
}

/// `println!` through [`stdout`]: evaluates to `photoledger::Result<()>`, so write `outln!(...)?`.
macro_rules! outln {
    () => { $crate::cli::output::stdout(format_args!("\n")) };
    ($($arg:tt)*) => { $crate::cli::output::stdout(format_args!("{}\n", format_args!($($arg)*))) };
}

/// `eprint!` through [`stderr`], never failing.
#[allow(unused_macros)]
macro_rules! note {
    ($($arg:tt)*) => { $crate::cli::output::stderr(format_args!($($arg)*)) };
}

/// `eprintln!` through [`stderr`], never failing.
macro_rules! noteln {
    ($($arg:tt)*) => { $crate::cli::output::stderr(format_args!("{}\n", format_args!($($arg)*))) };
}

#[allow(unused_imports)]
pub(crate) use {note, noteln, out, outln};
