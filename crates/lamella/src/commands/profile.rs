//! `lamella profile DIR`: the bin-averaged streamwise velocity across the channel at one time,
//! compared with the case's analytical profile when it has one (layered channel, start-up
//! Poiseuille or Couette flow).

use std::path::PathBuf;

use crate::Failure;
use crate::commands::Globals;
use lamella_run::analysis::folder::Run;
use lamella_run::analysis::profile::profile;

/// Options of `lamella profile`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Writes profile.csv and profile.png into --out [default: DIR/analysis]. \
    Exit codes: 0 done, 1 a file could not be written, 2 bad input."
)]
pub struct Args {
    /// The run folder written by `lamella run`.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,
    /// Time of the snapshot to use (s); the closest snapshot is taken, with a note when the
    /// time lies outside the run [default: the last].
    #[arg(long, value_name = "T", value_parser = super::values::time)]
    pub time: Option<f64>,
    /// Axis across which to bin: x, y or z.
    #[arg(long, default_value = "y", value_parser = ["x", "y", "z"])]
    pub axis: String,
    /// Number of bins [default: one per particle row].
    #[arg(long, value_name = "N", value_parser = super::values::profile_bins)]
    pub bins: Option<usize>,
    /// Folder for the results [default: DIR/analysis].
    #[arg(long, value_name = "OUT")]
    pub out: Option<PathBuf>,
    /// Also write the profile chart to this PNG file (e.g. the README figure).
    #[arg(long, value_name = "PNG")]
    pub figure: Option<PathBuf>,
}

/// Runs `lamella profile`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let run = Run::open(&args.dir)?;
    let axis = match args.axis.as_str() {
        "x" => 0,
        "y" => 1,
        _ => 2,
    };
    if axis >= run.case.dimension as usize {
        return Err(Failure::BadInput(format!(
            "--axis {}: the case is {}D",
            args.axis, run.case.dimension
        )));
    }
    let result = profile(
        &run,
        args.time,
        axis,
        args.bins,
        args.out.as_deref(),
        args.figure.as_deref(),
    )?;
    if let Some(note) = &result.time_note {
        crate::note!("note: {note}");
    }
    if !globals.quiet {
        match &result.comparison {
            Ok((c, name)) => crate::report!(
                "profile at t = {:.4} s against {name}: relative L2 error {:.4e}, max error {:.4e} m/s",
                result.time,
                c.relative_l2,
                c.max_abs
            )?,
            Err(why) => crate::report!(
                "profile at t = {:.4} s (no analytical profile: {why})",
                result.time
            )?,
        }
    }
    Ok(())
}
