//! Command-line definition (clap) and dispatch to the subcommands.

use std::num::NonZeroUsize;
use std::process::ExitCode;

use clap::Parser;

use crate::Failure;
use crate::commands::{self, Command, Globals};

/// Lamella: layered flows of immiscible viscous liquids by weakly-compressible SPH.
///
/// Exit codes: 0 success, 1 run failed, 2 bad input, 130 interrupted (state saved).
#[derive(Debug, Parser)]
#[command(name = "lamella", version, propagate_version = true)]
pub struct Cli {
    /// Worker threads [default: all cores]; results are identical whatever the thread count.
    // `lamella bench` alone reads a list here (its help says so), hence the delimiter.
    #[arg(
        long,
        global = true,
        value_name = "N",
        value_delimiter = ',',
        help_heading = GLOBAL_OPTIONS
    )]
    pub threads: Vec<NonZeroUsize>,

    /// Print errors only: no progress, no summaries.
    #[arg(long, short, global = true, help_heading = GLOBAL_OPTIONS)]
    pub quiet: bool,

    #[command(subcommand)]
    pub command: Command,
}

/// The help heading of the options every subcommand accepts.
const GLOBAL_OPTIONS: &str = "Global options";

/// Parses the command line, runs the subcommand and turns the outcome into an exit code.
pub fn main() -> ExitCode {
    let mut cli = Cli::parse();
    if let Command::Bench(args) = &mut cli.command {
        // The benchmark builds one pool per thread count it measures.
        args.thread_counts = cli.threads.clone();
    } else if let Err(failure) = start_thread_pool(&cli.threads) {
        return report(failure);
    }
    let globals = Globals { quiet: cli.quiet };
    match commands::dispatch(cli.command, globals) {
        Ok(()) => ExitCode::SUCCESS,
        Err(failure) => report(failure),
    }
}

/// Sizes the global worker pool from `--threads` (one count; all cores when absent).
fn start_thread_pool(threads: &[NonZeroUsize]) -> Result<(), Failure> {
    let count = match threads {
        [] => return Ok(()),
        [count] => count.get(),
        _ => {
            return Err(Failure::BadInput(
                "--threads takes one count, except with `lamella bench`, which measures each \
                 count of a list"
                    .into(),
            ));
        }
    };
    rayon::ThreadPoolBuilder::new()
        .num_threads(count)
        .build_global()
        .map_err(|err| Failure::BadInput(format!("cannot start {count} worker threads: {err}")))
}

fn report(failure: Failure) -> ExitCode {
    crate::note!("{}", failure.report_line());
    failure.into()
}
