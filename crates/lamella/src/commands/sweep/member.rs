//! `lamella sweep member DIR INDEX`: run one member of a written sweep folder: skip it when it
//! finished, resume it from its newest checkpoint when it was interrupted, start it otherwise.
//! What `lamella sweep run` runs in each child process and what each Slurm array task calls.

use std::path::PathBuf;

use lamella_run::sweep::{Status, SweepFolder, member_name};

use crate::Failure;
use crate::commands::{Globals, launch};

/// Options of `lamella sweep member`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "A member that fails is recorded in DIR/failures/member-NNN.txt (and its \
    run.log); running it again starts it afresh. Exit codes: 0 finished (now or before), 1 the \
    run failed, 2 bad input (not a sweep folder, no such member, the member is running \
    elsewhere), 130 interrupted (state saved; run the same command again to resume)."
)]
pub struct Args {
    /// The sweep folder written by `lamella sweep run` or `lamella sweep slurm`.
    #[arg(value_name = "DIR")]
    pub folder: PathBuf,
    /// The member's index, from 0 (a Slurm array task passes $SLURM_ARRAY_TASK_ID).
    #[arg(value_name = "INDEX")]
    pub index: usize,
}

/// Runs, resumes or skips the member.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let folder = SweepFolder::open(&args.folder)?;
    let index = args.index;
    if index >= folder.len() {
        return Err(Failure::BadInput(format!(
            "{} has {} members (0 to {}); there is no member {index}",
            folder.root().display(),
            folder.len(),
            folder.len().saturating_sub(1)
        )));
    }
    let name = member_name(index);
    let run_dir = folder.member_run(index);
    let outcome = match folder.status(index) {
        Status::Finished => {
            if !globals.quiet {
                crate::note!("{name}: finished already, nothing to do");
            }
            return Ok(());
        }
        Status::Running => {
            return Err(Failure::BadInput(format!(
                "{name} is being run by another process now (lock {}); wait for it to end",
                run_dir
                    .join(lamella_run::output::folder::LOCK_FILE)
                    .display()
            )));
        }
        Status::Interrupted => launch::resume(&run_dir, None, globals),
        Status::Pending | Status::Failed(_) => {
            folder.clear_failure(index)?;
            launch::start(
                &folder.member_case(index),
                Some(&run_dir),
                None,
                true,
                globals,
            )
        }
    };
    if let Err(failure) = &outcome
        && !failure.is_interrupt()
    {
        // The failure is what the user needs to see; recording it is best effort.
        let _ = folder.record_failure(index, &failure.to_string());
    }
    outcome
}
