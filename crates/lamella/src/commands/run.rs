//! `lamella run CASE --out DIR`: run a case to its end time and write its results.
//!
//! Writes the run folder through [`lamella_run::recorder::Recorder`]: snapshots, series, probes,
//! checkpoints and the log (layout in [`lamella_run::output::folder`]).

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
use lamella_run::output::{CheckpointStore, RunFolder};
use lamella_run::recorder::Recorder;
use lamella_run::{RunError, setup};

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
    let case = load_case(&args.case)?;
    let out = match (&args.out, &case.output.folder) {
        (Some(out), _) => out.clone(),
        (None, Some(folder)) => PathBuf::from(folder),
        (None, None) => {
            return Err(Failure::BadInput(format!(
                "no run folder: give --out DIR or set output.folder in {}",
                args.case.display()
            )));
        }
    };
    lamella_run::output::folder::check_output_folder(&out)
        .map_err(|problem| Failure::BadInput(format!("run folder {}: {problem}", out.display())))?;
    std::fs::create_dir_all(&out).map_err(|err| {
        Failure::BadInput(format!("cannot create run folder {}: {err}", out.display()))
    })?;
    let case_text = std::fs::read_to_string(&args.case)
        .map_err(|err| Failure::BadInput(format!("cannot read {}: {err}", args.case.display())))?;
    let stop = interrupt_flag()?;
    let name = case_name(&args.case);
    let start = Start {
        from: args.start_from.as_deref(),
        force: args.force,
    };
    match case.dimension {
        2 => run_case::<DVec2>(&case, &case_text, &name, &out, start, &stop, globals),
        3 => run_case::<DVec3>(&case, &case_text, &name, &out, start, &stop, globals),
        other => Err(Failure::BadInput(format!(
            "{}: dimension {other} is not supported; use 2 or 3",
            args.case.display()
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
