//! One module per subcommand; each has an `Args` (clap) and a `run` function.

pub mod check;
pub mod new;
pub mod resume;
pub mod run;

use crate::Failure;
use crate::cli::{Command, Globals};

/// Runs the chosen subcommand.
pub fn dispatch(command: Command, globals: Globals) -> Result<(), Failure> {
    match command {
        Command::Check(args) => check::run(args, globals),
        Command::New(args) => new::run(args, globals),
        Command::Run(args) => run::run(args, globals),
        Command::Resume(args) => resume::run(args, globals),
    }
}
