//! `lamella run CASE --out DIR`: run a case to its end time and write its results.
//!
//! Writes the run folder through [`crate::output::Recorder`]: snapshots, series, probes,
//! checkpoints and the log (layout in [`crate::output::folder`]).

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;

use glam::{DVec2, DVec3};
use lamella_case::Case;
use lamella_cells::Vector;

use crate::Failure;
use crate::cli::Globals;
use crate::commands::check::load_case;
use crate::commands::resume::interrupt_flag;
use crate::output::Recorder;
use crate::runner::{ProgressMode, run_to_end};
use crate::setup;

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
    lamella_case::check_output_folder(&out)
        .map_err(|problem| Failure::BadInput(format!("run folder {}: {problem}", out.display())))?;
    std::fs::create_dir_all(&out).map_err(|err| {
        Failure::BadInput(format!("cannot create run folder {}: {err}", out.display()))
    })?;
    let case_text = std::fs::read_to_string(&args.case)
        .map_err(|err| Failure::BadInput(format!("cannot read {}: {err}", args.case.display())))?;
    let stop = interrupt_flag()?;
    let name = case_name(&args.case);
    match case.dimension {
        2 => run_case::<DVec2>(&case, &case_text, &name, &out, args.force, &stop, globals),
        3 => run_case::<DVec3>(&case, &case_text, &name, &out, args.force, &stop, globals),
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

fn run_case<V: Vector>(
    case: &Case,
    case_text: &str,
    name: &str,
    out: &Path,
    force: bool,
    stop: &AtomicBool,
    globals: Globals,
) -> Result<(), Failure> {
    let mut sim = setup::simulation::<V>(case)
        .map_err(|err| Failure::BadInput(format!("cannot set up the solver: {err}")))?;
    if !globals.quiet {
        crate::note!(
            "{name}: {} particles, sound speed {:.4e} m/s, end time {:.4e} s",
            sim.particles().len(),
            sim.config().state_law.sound_speed,
            case.time.end
        );
    }
    let mut observer = Recorder::<V>::start(out, force, case, case_text, name)?;
    let summary = run_to_end(
        &mut sim,
        case.time.end,
        &mut observer,
        stop,
        ProgressMode::from_quiet(globals.quiet),
    )?;
    if !globals.quiet {
        crate::note!(
            "{name}: finished at t = {:.4e} s after {} steps in {:.1} s; time step mostly \
             limited by the {} criterion (acoustic {}, viscous {}, force {} steps); results in {}",
            sim.time(),
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
