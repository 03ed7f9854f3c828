//! One module per subcommand; each has an `Args` (clap) and a `run` function.

pub mod analysis;
pub mod bench;
pub mod check;
pub mod converge;
pub mod estimate;
pub mod growth;
pub mod mix;
pub mod new;
pub mod profile;
pub mod resume;
pub mod run;
pub mod stability;
pub mod values;

use crate::Failure;
use crate::cli::{Command, Globals};

/// Runs the chosen subcommand.
pub fn dispatch(command: Command, globals: Globals) -> Result<(), Failure> {
    match command {
        Command::Check(args) => check::run(args, globals),
        Command::New(args) => new::run(args, globals),
        Command::Run(args) => run::run(args, globals),
        Command::Resume(args) => resume::run(args, globals),
        Command::Stability(args) => stability::run(args, globals),
        Command::Profile(args) => profile::run(args, globals),
        Command::Converge(args) => converge::run(args, globals),
        Command::Growth(args) => growth::run(args, globals),
        Command::Mix(args) => mix::run(args, globals),
        Command::Bench(args) => bench::run(args, globals),
        Command::Estimate(args) => estimate::run(args, globals),
    }
}
