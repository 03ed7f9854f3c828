//! Starting a run of a case into its run folder, and resuming a run folder from its newest
//! checkpoint: what `lamella run`, `lamella resume` and `lamella sweep member` do.

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;

use glam::{DVec2, DVec3};
use lamella_case::Case;
use lamella_cells::Vector;
use lamella_post::number::significant;
use lamella_sph::Simulation;

use crate::Failure;
use crate::commands::{Globals, run_recorded};
use crate::signals::interrupt_flag;
use lamella_run::feasibility::load_case;
use lamella_run::output::checkpoint::{checksum, outside_by};
use lamella_run::output::{Checkpoint, CheckpointStore, RunFolder};
use lamella_run::recorder::Recorder;
use lamella_run::{RunError, setup};

/// Validates the case file `case_path` and the run folder (`out`, or the case's
/// `output.folder`), runs the case to its end time and writes its run folder; `start_from` and
/// `force` as `lamella run` takes them.
pub fn start(
    case_path: &Path,
    out: Option<&Path>,
    start_from: Option<&Path>,
    force: bool,
    globals: Globals,
) -> Result<(), Failure> {
    let case = load_case(case_path)?;
    let out = match (out, &case.output.folder) {
        (Some(out), _) => out.to_path_buf(),
        (None, Some(folder)) => PathBuf::from(folder),
        (None, None) => {
            return Err(Failure::BadInput(format!(
                "no run folder: give --out DIR or set output.folder in {}",
                case_path.display()
            )));
        }
    };
    lamella_run::output::folder::check_output_folder(&out)
        .map_err(|problem| Failure::BadInput(format!("run folder {}: {problem}", out.display())))?;
    std::fs::create_dir_all(&out).map_err(|err| {
        Failure::BadInput(format!("cannot create run folder {}: {err}", out.display()))
    })?;
    let case_text = std::fs::read_to_string(case_path)
        .map_err(|err| Failure::BadInput(format!("cannot read {}: {err}", case_path.display())))?;
    let stop = interrupt_flag()?;
    let name = case_name(case_path);
    let start = Start {
        from: start_from,
        force,
    };
    match case.dimension {
        2 => run_case::<DVec2>(&case, &case_text, &name, &out, start, &stop, globals),
        3 => run_case::<DVec3>(&case, &case_text, &name, &out, start, &stop, globals),
        other => Err(Failure::BadInput(format!(
            "{}: dimension {other} is not supported; use 2 or 3",
            case_path.display()
        ))),
    }
}

fn case_name(path: &Path) -> String {
    path.file_stem()
        .map_or_else(|| "case".to_string(), |s| s.to_string_lossy().into_owned())
}

/// Where a new run starts from.
#[derive(Clone, Copy)]
struct Start<'a> {
    /// Another run folder whose newest state to start from.
    from: Option<&'a Path>,
    /// Replace an existing run folder.
    force: bool,
}

/// The simulation at time zero: the case's particles, or the newest state of the run folder
/// `from` prepared by [`setup::developed_particles`]; with a note for the run log.
fn initial_simulation<V: Vector>(
    case: &Case,
    from: Option<&Path>,
) -> Result<(Simulation<V>, Option<String>), Failure> {
    let Some(source) = from else {
        return Ok((setup::simulation::<V>(case).map_err(RunError::from)?, None));
    };
    let folder = RunFolder::open(source)?;
    let restored = CheckpointStore::new(folder.checkpoints()).newest_valid::<V>()?;
    let particles =
        setup::developed_particles(case, restored.checkpoint.particles).map_err(|why| {
            Failure::BadInput(format!(
                "--start-from {}: the state in {} does not fit the case: {why}; start from a run \
             of a case with the same spacing, domain, walls and layers",
                source.display(),
                restored.path.display()
            ))
        })?;
    let config = setup::solver_config::<V>(case).map_err(RunError::from)?;
    let sim = Simulation::new(config, particles).map_err(RunError::from)?;
    let note = format!(
        "started from the state of {} at t = {:e} s ({})",
        source.display(),
        restored.checkpoint.time,
        restored.path.display()
    );
    Ok((sim, Some(note)))
}

fn run_case<V: Vector>(
    case: &Case,
    case_text: &str,
    name: &str,
    out: &Path,
    start: Start<'_>,
    stop: &AtomicBool,
    globals: Globals,
) -> Result<(), Failure> {
    let (mut sim, note) = initial_simulation::<V>(case, start.from)?;
    if !globals.quiet {
        crate::note!(
            "{name}: {} particles, sound speed {} m/s, end time {} s",
            sim.particles().len(),
            significant(sim.config().state_law.sound_speed, 4),
            significant(case.time.end, 4)
        );
    }
    let mut observer = Recorder::<V>::start(out, start.force, case, case_text, name)?;
    if let Some(note) = note {
        if !globals.quiet {
            crate::note!("{name}: {note}");
        }
        observer.note(&note)?;
    }
    let summary = run_recorded(&mut sim, case.time.end, &mut observer, stop, globals, None)?;
    if !globals.quiet {
        crate::note!(
            "{name}: finished at t = {} s after {} steps in {:.1} s; time step mostly \
             limited by the {} criterion (acoustic {}, viscous {}, force {} steps); results in {}",
            lamella_post::number::significant(sim.time(), 9),
            summary.steps,
            summary.seconds,
            summary.dominant_limit(),
            summary.limits[0],
            summary.limits[1],
            summary.limits[2],
            out.display()
        );
    }
    Ok(())
}

/// Restores the newest valid checkpoint of the run folder `folder` and runs on to the end time,
/// or to `until` (s) as `lamella resume --until` takes it.
pub fn resume(folder: &Path, until: Option<f64>, globals: Globals) -> Result<(), Failure> {
    // The interrupt handler comes first: a Ctrl-C that arrives once the lock is taken (which a
    // caller may watch for) must stop the run with a checkpoint, not kill the process.
    let stop = interrupt_flag()?;
    // Locked before anything is read: a second resume of the folder stops here (exit 2).
    let folder = RunFolder::open(folder)?.locked()?;
    let case = load_case(&folder.case())?;
    let case_text = std::fs::read_to_string(folder.case()).map_err(|err| {
        Failure::BadInput(format!("cannot read {}: {err}", folder.case().display()))
    })?;
    match case.dimension {
        2 => resume_case::<DVec2>(folder, &case, &case_text, until, &stop, globals),
        3 => resume_case::<DVec3>(folder, &case, &case_text, until, &stop, globals),
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
