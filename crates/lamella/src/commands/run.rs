//! `lamella run CASE --out DIR`: run a case to its end time and write its results.
//!
//! Writes the run folder through [`lamella_run::recorder::Recorder`]: snapshots, series, probes,
//! checkpoints and the log (layout in [`lamella_run::output::folder`]).

use std::path::PathBuf;

use crate::Failure;
use crate::commands::{Globals, launch};

/// Options of `lamella run`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit codes: 0 finished, 1 the run failed, 2 bad input (case file or \
    run folder), 130 interrupted."
)]
pub struct Args {
    /// The case file (RON) to run.
    #[arg(value_name = "CASE")]
    pub case: PathBuf,
    /// Run folder for snapshots, tables and checkpoints; created if missing
    /// [default: the case's output.folder].
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Replace the results in an existing non-empty run folder (only Lamella's own files
    /// are deleted).
    #[arg(long)]
    pub force: bool,
    /// Start from the newest state of another run folder instead of the case's initial
    /// particles (e.g. a developed, unperturbed run of the same channel): its positions,
    /// velocities and densities at time zero, with this case's interface seed applied. The
    /// case must make the same particles (same spacing, domain, walls and layers).
    #[arg(long, value_name = "RUN")]
    pub start_from: Option<PathBuf>,
}

/// Validates the case and the run folder, runs the case to its end time and writes snapshots.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    launch::start(
        &args.case,
        args.out.as_deref(),
        args.start_from.as_deref(),
        args.force,
        globals,
    )
}
