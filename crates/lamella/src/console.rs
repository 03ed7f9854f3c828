//! Writing to standard output and standard error without ever panicking.
//!
//! `println!` and `eprintln!` panic when the stream is closed (`lamella run ... | head -n1`,
//! a terminal that went away) or full (`>/dev/full`). A run must never stop for that: a
//! message on standard error is best effort ([`note!`]), and the report a command prints on
//! standard output ([`report!`]) is an error only when it cannot be written for a reason
//! other than a reader that stopped reading.

use std::io::{self, Write};

use crate::Failure;

/// Writes `text` to standard error, ignoring every error (there is nowhere left to report one).
pub fn note_text(text: std::fmt::Arguments<'_>) {
    let mut stderr = io::stderr().lock();
    let _ = stderr.write_fmt(text).and_then(|()| stderr.flush());
}

/// Writes `text` to standard output. A closed pipe (the reader stopped reading, as
/// `| head` does) is not an error; anything else (a full disk) is a failed command, exit 1.
pub fn report_text(text: std::fmt::Arguments<'_>) -> Result<(), Failure> {
    let mut stdout = io::stdout().lock();
    match stdout.write_fmt(text).and_then(|()| stdout.flush()) {
        Ok(()) => Ok(()),
        Err(err) if err.kind() == io::ErrorKind::BrokenPipe => Ok(()),
        Err(err) => Err(Failure::RunFailed(format!(
            "cannot write to standard output: {err}"
        ))),
    }
}

/// `eprintln!` that never panics: a line on standard error, best effort.
#[macro_export]
macro_rules! note {
    ($($arg:tt)*) => {
        $crate::console::note_text(format_args!("{}\n", format_args!($($arg)*)))
    };
}

/// `println!` that never panics: a line on standard output; evaluates to
/// `Result<(), Failure>` (see [`report_text`]).
#[macro_export]
macro_rules! report {
    ($($arg:tt)*) => {
        $crate::console::report_text(format_args!("{}\n", format_args!($($arg)*)))
    };
}
