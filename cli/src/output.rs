//! Every byte the program prints goes through here, so a write error is a value, never a panic.
//!
//! `print!` panics when stdout cannot be written (a full disk, `> /dev/full`,
//! a closed pipe); a user who redirects a report to a file on a full disk
//! should read one line saying so, not a backtrace. Results go to stdout
//! through [`out`], which writes all the text, flushes and returns the error
//! as a [`Failure`] (exit 1, or a quiet 141 for a closed pipe). Diagnostics
//! go to stderr through [`note!`]: when stderr itself cannot be written
//! there is nowhere left to say anything, so the error is dropped and the
//! exit code alone tells (clippy's `disallowed_macros`, configured in
//! `cli/clippy.toml`, keeps `print!`/`eprintln!` out of this crate).

use std::io::{self, Write};

use crate::failure::Failure;

/// Write `text` to stdout, all of it, and flush; a failure is the run's failure.
pub fn out(text: &str) -> Result<(), Failure> {
    let mut stdout = io::stdout().lock();
    stdout.write_all(text.as_bytes()).and_then(|()| stdout.flush()).map_err(Failure::output)
}

/// Write one line to stderr (a newline is added); errors are dropped (see the module note).
pub fn note_line(args: std::fmt::Arguments<'_>) {
    let mut stderr = io::stderr().lock();
    let _ = stderr.write_fmt(args).and_then(|()| stderr.write_all(b"\n")).and_then(|()| stderr.flush());
}

/// `eprintln!` that never panics: one line on stderr, dropped if stderr cannot be written.
macro_rules! note {
    ($($arg:tt)*) => {
        $crate::output::note_line(format_args!($($arg)*))
    };
}
pub(crate) use note;
