//! `lamella run`: placeholder so the crate builds; the real command follows shortly.

use std::path::PathBuf;

use crate::Failure;
use crate::cli::Globals;

/// Options of `lamella run`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The case file (RON) or path this command works on.
    pub path: PathBuf,
}

/// Not yet available: fails with a clear message (exit code 1).
pub fn run(args: Args, _globals: Globals) -> Result<(), Failure> {
    Err(Failure::RunFailed(format!(
        "`lamella run` is not built yet (asked for {})",
        args.path.display()
    )))
}
