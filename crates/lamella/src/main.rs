//! The `lamella` binary: the command line (clap), exit codes, signals, progress display and the
//! counting allocator, over the `lamella-run` library that sets cases up, runs them and reads
//! and writes run folders.

mod cli;
mod commands;
mod console;
mod failure;
mod memory;
mod point_progress;
mod progress;
mod signals;

use failure::Failure;

fn main() -> std::process::ExitCode {
    cli::main()
}
