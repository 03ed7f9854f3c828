//! `lamella resume DIR`: continue a run from the newest valid checkpoint in its run folder,
//! appending to the same series, probes and snapshots; the result is bit for bit the one an
//! uninterrupted run gives.

use std::path::PathBuf;

use crate::Failure;
use crate::commands::{Globals, launch};

/// Options of `lamella resume`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit codes: 0 finished, 1 the run failed, 2 bad input (not a run \
    folder, no valid checkpoint, case.ron changed), 130 interrupted again (state saved)."
)]
pub struct Args {
    /// The run folder written by `lamella run --out DIR`.
    #[arg(value_name = "DIR")]
    pub folder: PathBuf,
    /// Run on to this simulated time (s) instead of the case's end time: extends a finished
    /// or stopped run (snapshots and samples go on at the case's intervals). Give it again if
    /// an extended run is interrupted and resumed.
    #[arg(long, value_name = "SECONDS", value_parser = super::values::positive)]
    pub until: Option<f64>,
}

/// Restores the newest valid checkpoint of the run folder and runs on to the end time.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    launch::resume(&args.folder, args.until, globals)
}
