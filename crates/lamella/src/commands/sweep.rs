//! `lamella sweep`: parameter sweeps over a base case, checked, run here several at once, run on
//! a Slurm cluster as a job array, and reported side by side. The sweep file is read by
//! [`lamella_case::sweep`], the sweep folder is [`lamella_run::sweep::SweepFolder`], the report
//! is computed by [`lamella_run::analysis::sweep`].

mod check;
mod member;
mod report;
mod run;
mod slurm;

use std::path::Path;

use lamella_case::CaseError;
use lamella_case::sweep::Sweep;
use lamella_run::output::folder::check_output_folder;
use lamella_run::sweep::{SweepFolder, load_sweep};

use crate::Failure;
use crate::commands::Globals;

/// Options of `lamella sweep`.
#[derive(Debug, clap::Args)]
#[command(
    long_about = "Parameter sweeps: a sweep file (RON) names a base case and the numbers to vary \
    in it, each by its field path (e.g. phases[0].viscosity_law.viscosity, regions[0].top, \
    body_force[0], particles.spacing), with values as a list, a linear range or a log range, \
    combined as a full grid or zipped. Every member is a case of its own, run in its own run \
    folder DIR/member-NNN inside the sweep folder DIR. The sweep file is described in \
    cases/README.md.",
    after_help = "Exit codes: 0 done, 1 a member (or the command) failed, 2 bad input (sweep \
    file, base case, a member's case, a sweep folder of another sweep), 130 interrupted \
    (members saved checkpoints; run the same command again to continue)."
)]
pub struct Args {
    /// What to do.
    #[command(subcommand)]
    pub action: Action,
}

/// The sweep subcommands.
#[derive(Debug, clap::Subcommand)]
pub enum Action {
    /// Validate every member's case and print the members, their values, the particle-steps
    /// and an estimated cost.
    Check(check::Args),
    /// Run every member on this machine, several at once; resumable.
    Run(run::Args),
    /// Run (or resume, or skip if finished) one member of a written sweep folder.
    Member(member::Args),
    /// Write the sweep folder and a Slurm job array for it; with --submit, submit it.
    Slurm(slurm::Args),
    /// Gather the members' results into DIR/sweep.csv and draw the stability map.
    Report(report::Args),
}

/// Runs the chosen sweep subcommand.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    match args.action {
        Action::Check(args) => check::run(args, globals),
        Action::Run(args) => run::run(args, globals),
        Action::Member(args) => member::run(args, globals),
        Action::Slurm(args) => slurm::run(args, globals),
        Action::Report(args) => report::run(args, globals),
    }
}

/// Reads the sweep file at `path` and every member's case; the error lists every problem.
fn load(path: &Path) -> Result<Sweep, Failure> {
    load_sweep(path).map_err(|err: CaseError| {
        let count = match err.problems.len() {
            1 => "1 problem".to_string(),
            n => format!("{n} problems"),
        };
        Failure::BadInput(format!("{count} in the sweep:\n{err}"))
    })
}

/// Loads the sweep file at `path` and writes (or reopens) its sweep folder `out`.
fn prepare(path: &Path, out: &Path) -> Result<SweepFolder, Failure> {
    let sweep = load(path)?;
    check_output_folder(out).map_err(|problem| {
        Failure::BadInput(format!("sweep folder {}: {problem}", out.display()))
    })?;
    Ok(SweepFolder::prepare(out, &sweep, path)?)
}

/// The values of a member as "path = value, …".
fn values_text(parameters: &[String], values: &[f64]) -> String {
    parameters
        .iter()
        .zip(values)
        .map(|(p, v)| format!("{p} = {}", lamella_post::number::significant(*v, 6)))
        .collect::<Vec<_>>()
        .join(", ")
}
