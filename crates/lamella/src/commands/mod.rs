//! One module per subcommand; each has an `Args` (clap) and a `run` function. The list of
//! subcommands ([`Command`]) and the options they share ([`Globals`]) are here, so the
//! subcommands never import the command line's top level. Subcommands never import each
//! other: what they share is in [`shared`], [`values`] and [`launch`] (starting and resuming
//! runs), or in the libraries.

pub mod bench;
pub mod calibration;
pub mod check;
pub mod converge;
pub mod estimate;
pub mod growth;
pub mod launch;
pub mod mix;
pub mod new;
pub mod profile;
pub mod resume;
pub mod run;
pub mod shared;
pub mod stability;
pub mod sweep;
pub mod values;

use std::sync::atomic::AtomicBool;

use lamella_cells::Vector;
use lamella_run::RunError;
use lamella_run::recorder::Recorder;
use lamella_run::runner::{RunSummary, run_to_end};
use lamella_sph::Simulation;

use crate::{Failure, progress};

/// Options every subcommand sees.
#[derive(Clone, Copy, Debug)]
pub struct Globals {
    /// Print errors only.
    pub quiet: bool,
}

/// The subcommands, each defined in its own module here.
#[derive(Debug, clap::Subcommand)]
pub enum Command {
    /// Validate a case file and print what the run will involve.
    Check(check::Args),
    /// Write a commented starter case file from a template.
    New(new::Args),
    /// Run a case and write its results to a run folder.
    Run(run::Args),
    /// Continue an interrupted run from the newest valid checkpoint in its run folder.
    Resume(resume::Args),
    /// Predicted growth rates of layered channel flow from linear stability theory.
    Stability(stability::Args),
    /// Velocity profile across the channel of a run, against the analytical profile.
    Profile(profile::Args),
    /// Run a case at several spacings and fit the observed order of convergence.
    Converge(converge::Args),
    /// Growth rate and wave speed of the interface mode a run recorded, with 95 % intervals.
    Growth(growth::Args),
    /// Mixing measures of a run: segregation, Lacey index, mixing entropy, FTLE.
    Mix(mix::Args),
    /// Measure solver throughput (particle-steps per second) and memory on this machine.
    Bench(bench::Args),
    /// Predict the wall time and memory of a case on this machine from a short calibration.
    Estimate(estimate::Args),
    /// Parameter sweeps: check, run here or on a Slurm cluster, and report many cases at once.
    Sweep(sweep::Args),
}

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
        Command::Sweep(args) => sweep::run(args, globals),
    }
}

/// Runs `sim` to `end_time` (s) into `recorder`'s run folder, with the progress display of
/// [`progress::for_command`] and the stop flag of [`crate::signals::interrupt_flag`]; after a
/// stop request it says where the state was saved and how to go on. `run_start` is the time
/// (s) the run began at when that is before `sim`'s time (a resumed run), so the progress bar
/// shows the fraction of the whole run.
pub fn run_recorded<V: Vector>(
    sim: &mut Simulation<V>,
    end_time: f64,
    recorder: &mut Recorder<V>,
    stop: &AtomicBool,
    globals: Globals,
    run_start: Option<f64>,
) -> Result<RunSummary, Failure> {
    let mut progress = progress::for_command(globals.quiet, run_start);
    let outcome = run_to_end(sim, end_time, recorder, stop, progress.as_mut());
    if let (Err(RunError::Interrupted { time, step }), Some(path)) =
        (&outcome, recorder.newest_checkpoint())
    {
        return Err(Failure::interrupted(
            *time,
            *step,
            path,
            recorder.folder().root(),
        ));
    }
    Ok(outcome?)
}
