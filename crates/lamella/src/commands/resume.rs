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
use crate::output::{CheckpointStore, Recorder, RunFolder};
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
    #[arg(long, value_name = "SECONDS", value_parser = parse_end_time)]
    pub until: Option<f64>,
}

/// A finite, positive end time.
fn parse_end_time(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(t) if t.is_finite() && t > 0.0 => Ok(t),
        _ => Err(format!("{text:?} is not a positive time in seconds")),
    }
}

/// Restores the newest valid checkpoint of the run folder and runs on to the end time.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let folder = RunFolder::open(&args.folder)?;
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

/// A flag raised by SIGINT or SIGTERM; the run loop polls it each step, then checkpoints and
/// stops with exit code 130. A second signal while the flag is up ends the process at once
/// (exit code 130, no checkpoint), for a run that does not reach its next step.
pub(crate) fn interrupt_flag() -> Result<Arc<AtomicBool>, Failure> {
    let stop = Arc::new(AtomicBool::new(false));
    let failed = |err: std::io::Error| {
        Failure::RunFailed(format!("cannot install the interrupt handler: {err}"))
    };
    for signal in [signal_hook::consts::SIGINT, signal_hook::consts::SIGTERM] {
        // Order matters: the shutdown check runs before the flag is raised by this signal.
        signal_hook::flag::register_conditional_shutdown(signal, 130, Arc::clone(&stop))
            .map_err(failed)?;
        signal_hook::flag::register(signal, Arc::clone(&stop)).map_err(failed)?;
    }
    Ok(stop)
}

fn resume_case<V: Vector>(
    folder: RunFolder,
    case: &Case,
    case_text: &str,
    until: Option<f64>,
    stop: &AtomicBool,
    globals: Globals,
) -> Result<(), Failure> {
    let restored = CheckpointStore::new(folder.checkpoints()).newest_valid::<V>()?;
    let end = until.unwrap_or(case.time.end);
    if end < restored.checkpoint.time {
        return Err(Failure::BadInput(format!(
            "--until {end:e} s is before the newest checkpoint ({:e} s, {}); give a later time",
            restored.checkpoint.time,
            restored.path.display()
        )));
    }
    for skipped in &restored.skipped {
        eprintln!("warning: skipping a damaged checkpoint: {skipped}");
    }
    let checkpoint = restored.checkpoint;
    let mut recorder = Recorder::resume(folder, case, case_text, &checkpoint)?;
    for skipped in &restored.skipped {
        recorder.note(&format!("skipped a damaged checkpoint: {skipped}"))?;
    }
    if !globals.quiet {
        eprintln!(
            "resuming from {} at t = {:.6e} s, step {}",
            restored.path.display(),
            checkpoint.time,
            checkpoint.step
        );
    }
    let config = setup::solver_config::<V>(case)
        .map_err(|err| Failure::BadInput(format!("cannot set up the solver: {err}")))?;
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
        eprintln!(
            "finished at t = {:.6e} s after {} more steps in {:.1} s; results in {}",
            sim.time(),
            summary.steps,
            summary.seconds,
            recorder.folder().root().display()
        );
    }
    Ok(())
}
