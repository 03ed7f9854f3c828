//! `lamella resume DIR`: continue a run from the newest valid checkpoint in its run folder,
//! appending to the same series, probes and snapshots; the result is bit for bit the one an
//! uninterrupted run gives.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::AtomicBool;

use glam::{DVec2, DVec3};
use lamella_case::Case;
use lamella_cells::Vector;
use lamella_sph::Simulation;

use crate::Failure;
use crate::cli::Globals;
use crate::commands::check::load_case;
use crate::output::checkpoint::{checksum, outside_by};
use crate::output::{Checkpoint, CheckpointStore, Recorder, RunFolder};
use crate::runner::{ProgressMode, run_to_end};
use crate::setup;

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
    // Locked before anything is read: a second resume of the folder stops here (exit 2).
    let folder = RunFolder::open(&args.folder)?.locked()?;
    let case = load_case(&folder.case())?;
    let case_text = std::fs::read_to_string(folder.case()).map_err(|err| {
        Failure::BadInput(format!("cannot read {}: {err}", folder.case().display()))
    })?;
    let stop = interrupt_flag()?;
    match case.dimension {
        2 => resume_case::<DVec2>(folder, &case, &case_text, args.until, &stop, globals),
        3 => resume_case::<DVec3>(folder, &case, &case_text, args.until, &stop, globals),
        other => Err(Failure::BadInput(format!(
            "{}: dimension {other} is not supported; use 2 or 3",
            folder.case().display()
        ))),
    }
}

/// A flag raised by SIGINT, SIGTERM or SIGHUP; the run loop polls it each step, then
/// checkpoints and stops with exit code 130.
///
/// Every later signal only raises the flag again: it never ends the process while the
/// checkpoint is being written (GNU `timeout` sends SIGTERM twice, an impatient user presses
/// Ctrl-C twice, a closed terminal sends SIGHUP and then SIGTERM). The step in progress
/// finishes, the checkpoint is written, then the process exits. Only SIGKILL stops a run
/// without saving, and a resume then starts from the previous checkpoint.
pub(crate) fn interrupt_flag() -> Result<Arc<AtomicBool>, Failure> {
    let stop = Arc::new(AtomicBool::new(false));
    for signal in STOP_SIGNALS {
        signal_hook::flag::register(signal, Arc::clone(&stop)).map_err(|err| {
            Failure::RunFailed(format!("cannot install the interrupt handler: {err}"))
        })?;
    }
    Ok(stop)
}

/// The signals that stop a run after saving: Ctrl-C, `kill`/`timeout`, a closed terminal.
const STOP_SIGNALS: [std::ffi::c_int; 3] = [
    signal_hook::consts::SIGINT,
    signal_hook::consts::SIGTERM,
    signal_hook::consts::SIGHUP,
];

fn resume_case<V: Vector>(
    folder: RunFolder,
    case: &Case,
    case_text: &str,
    until: Option<f64>,
    stop: &AtomicBool,
    globals: Globals,
) -> Result<(), Failure> {
    let config = setup::solver_config::<V>(case)
        .map_err(|err| Failure::BadInput(format!("cannot set up the solver: {err}")))?;
    let case_checksum = checksum(case_text.as_bytes());
    let domain = config.search_domain;
    let margin = config.kernel.support_radius();
    let restored = CheckpointStore::new(folder.checkpoints()).newest_accepted(
        |checkpoint: &Checkpoint<V>| {
            if checkpoint.case_checksum != case_checksum {
                return Err(format!(
                    "it was written for the case `{}` with another text: another run's \
                     checkpoint, or {} was changed after it was written",
                    checkpoint.case_name,
                    folder.case().display()
                ));
            }
            match outside_by(&checkpoint.particles, domain.lower, domain.upper, margin) {
                Some((id, at)) => Err(format!(
                    "particle {id} is at {at:?} m, outside the case's domain"
                )),
                None => Ok(()),
            }
        },
    )?;
    let end = until.unwrap_or(case.time.end);
    if end < restored.checkpoint.time {
        return Err(Failure::BadInput(format!(
            "--until {end:e} s is before the newest checkpoint ({:e} s, {}); give a later time",
            restored.checkpoint.time,
            restored.path.display()
        )));
    }
    for skipped in &restored.skipped {
        crate::note!("warning: skipping a checkpoint that cannot be used: {skipped}");
    }
    let checkpoint = restored.checkpoint;
    let mut recorder = Recorder::resume(folder, case, case_text, &checkpoint)?;
    for skipped in &restored.skipped {
        recorder.note(&format!(
            "skipped a checkpoint that cannot be used: {skipped}"
        ))?;
    }
    if !globals.quiet {
        crate::note!(
            "resuming from {} at t = {:.6e} s, step {}",
            restored.path.display(),
            checkpoint.time,
            checkpoint.step
        );
    }
    let mut sim = Simulation::from_parts(
        config,
        checkpoint.particles,
        checkpoint.time,
        checkpoint.step,
    )
    .map_err(|err| {
        Failure::BadInput(format!(
            "{} does not fit the case: {err}",
            restored.path.display()
        ))
    })?;
    if until.is_some() {
        recorder.note(&format!("run on to t = {end:e} s (--until)"))?;
    }
    let summary = run_to_end(
        &mut sim,
        end,
        &mut recorder,
        stop,
        ProgressMode::from_quiet(globals.quiet),
    )?;
    if !globals.quiet {
        crate::note!(
            "finished at t = {:.6e} s after {} more steps in {:.1} s; results in {}",
            sim.time(),
            summary.steps,
            summary.seconds,
            recorder.folder().root().display()
        );
    }
    Ok(())
}
