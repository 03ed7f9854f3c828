//! `lamella estimate CASE`: predicts the wall time, memory and disk use of a run on this
//! machine from a short calibration run, so a user knows before leaving whether it finishes
//! by morning.

use std::path::PathBuf;

use glam::{DVec2, DVec3};

use crate::Failure;
use crate::commands::Globals;
use crate::commands::calibration::calibrate;
use lamella_run::feasibility::load_case;

/// Options of `lamella estimate`.
#[derive(Debug, clap::Args)]
#[command(
    long_about = "Builds the case, runs it for a short calibration (at least a few steps, \
    then until --calibration seconds of wall time have passed), and extrapolates: steps to \
    the end time from the mean time step, solver time from the mean wall time per step, \
    snapshot time and size from one snapshot written to a temporary folder, and peak memory \
    measured by Lamella's allocator. The calibration runs on the worker threads the real run \
    would use (see the global --threads option).",
    after_help = "The prediction assumes the time step of the calibration holds for the \
    whole run; it does while the acoustic or viscous limit sets it (the usual case), but a \
    flow that speeds up beyond the case's expected_max_speed takes smaller steps. Exit codes: 0 done, \
    1 the calibration run failed, 2 bad input."
)]
pub struct Args {
    /// The case file (RON).
    #[arg(value_name = "CASE")]
    pub case: PathBuf,
    /// Wall-clock seconds to calibrate for.
    #[arg(long, value_name = "SECONDS", default_value_t = 10.0, value_parser = super::values::calibration_seconds)]
    pub calibration: f64,
}

/// Runs `lamella estimate`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    if !(args.calibration.is_finite() && args.calibration > 0.0) {
        return Err(Failure::BadInput(format!(
            "--calibration {} must be a positive number of seconds",
            args.calibration
        )));
    }
    let case = load_case(&args.case)?;
    let estimate = match case.dimension {
        2 => calibrate::<DVec2>(&case, args.calibration, globals)?,
        3 => calibrate::<DVec3>(&case, args.calibration, globals)?,
        other => {
            return Err(Failure::BadInput(format!(
                "{}: dimension {other} is not supported; use 2 or 3",
                args.case.display()
            )));
        }
    };
    if !globals.quiet {
        crate::console::report_text(format_args!(
            "{}",
            estimate.describe(&args.case.display().to_string(), &case)
        ))?;
    }
    Ok(())
}
