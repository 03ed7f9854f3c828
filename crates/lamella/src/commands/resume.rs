//! `lamella resume DIR`: continue a run from the newest valid checkpoint in its run folder,
//! appending to the same series, probes and snapshots; the result is bit for bit the one an
//! uninterrupted run gives.

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;

use glam::{DVec2, DVec3};
use lamella_case::Case;
use lamella_cells::Vector;
use lamella_sph::Simulation;

use crate::Failure;
use crate::commands::{Globals, run_recorded};
use crate::signals::interrupt_flag;
use lamella_run::feasibility::load_case;
use lamella_run::output::checkpoint::{checksum, outside_by};
use lamella_run::output::{Checkpoint, CheckpointStore, RunFolder};
use lamella_run::recorder::Recorder;
use lamella_run::{RunError, setup};

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

fn resume_case<V: Vector>(
    folder: RunFolder,
    case: &Case,
    case_text: &str,
    until: Option<f64>,
    stop: &AtomicBool,
    globals: Globals,
) -> Result<(), Failure> {
    let config = setup::solver_config::<V>(case).map_err(RunError::from)?;
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
    // The progress bar spans the whole run from its first snapshot.
    let run_start = recorder.run_start();
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
        recorder.note(&format!(
            "run on to t = {} s (--until)",
            lamella_post::number::significant(end, 9)
        ))?;
    }
    let summary = run_recorded(&mut sim, end, &mut recorder, stop, globals, run_start)?;
    if !globals.quiet {
        crate::note!(
            "finished at t = {} s after {} more steps in {:.1} s; results in {}",
            lamella_post::number::significant(sim.time(), 9),
            summary.steps,
            summary.seconds,
            recorder.folder().root().display()
        );
    }
    Ok(())
}
