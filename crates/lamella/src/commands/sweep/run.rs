//! `lamella sweep run SWEEP --out DIR`: run every member on this machine, `--jobs` at once,
//! each as a child process `lamella sweep member DIR INDEX` (isolated, and the same code path
//! as a Slurm array task). Resumable: finished members are skipped, interrupted ones resumed.

use std::num::NonZeroUsize;
use std::path::PathBuf;
use std::process::{Child, Command, Stdio};
use std::sync::atomic::Ordering;
use std::time::Duration;

use lamella_run::sweep::{Status, SweepFolder, member_name};

use crate::Failure;
use crate::commands::Globals;
use crate::point_progress::PointProgress;
use crate::signals::interrupt_flag;

/// Options of `lamella sweep run`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Run the same command again to continue a sweep: finished members are \
    skipped, interrupted ones resume from their checkpoints, failed ones are skipped unless \
    --retry-failed. Ctrl-C (or SIGTERM) stops every member after it saves a checkpoint. The \
    worker threads (global --threads, default all cores) are shared among the --jobs members \
    that run at once. Exit codes: 0 every member finished, 1 a member failed (the others \
    ran; the reasons are listed) or did not finish (killed from outside), 2 bad input (sweep \
    file, a member's case, an --out folder of another sweep), 130 interrupted."
)]
pub struct Args {
    /// The sweep file (RON).
    #[arg(value_name = "SWEEP")]
    pub sweep: PathBuf,
    /// The sweep folder: member cases, one run folder per member, the manifest; created if
    /// missing, reused (and continued) if it holds this sweep, refused if it holds another.
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Members run at once, each in its own process.
    #[arg(long, value_name = "N", default_value = "1")]
    pub jobs: NonZeroUsize,
    /// Run members that failed before again, from the start.
    #[arg(long)]
    pub retry_failed: bool,
}

/// How often running members are polled.
const POLL: Duration = Duration::from_millis(100);

/// Runs the sweep's members and reports their statuses.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let folder = super::prepare(&args.sweep, &args.out)?;
    let stop = interrupt_flag()?;
    let total = folder.len();
    let mut todo = Vec::new();
    for index in 0..total {
        match folder.status(index) {
            Status::Finished => {}
            Status::Failed(_) if !args.retry_failed => {}
            Status::Running => {
                crate::note!(
                    "{}: being run by another process; left to it",
                    member_name(index)
                );
            }
            _ => todo.push(index),
        }
    }
    let jobs = args.jobs.get();
    let threads = (rayon::current_num_threads() / jobs).max(1);
    let exe = std::env::current_exe()
        .map_err(|e| Failure::RunFailed(format!("cannot find the lamella program: {e}")))?;
    let mut progress = PointProgress::counting("member", "done", total, globals.quiet);
    let mut done = total - todo.len();
    progress.set(done);
    let mut queue = todo.into_iter();
    let mut running: Vec<(usize, Child)> = Vec::new();
    let mut forwarded = false;
    loop {
        while running.len() < jobs && !stop.load(Ordering::Relaxed) {
            let Some(index) = queue.next() else { break };
            let child = Command::new(&exe)
                .arg("--quiet")
                .arg("--threads")
                .arg(threads.to_string())
                .args(["sweep", "member"])
                .arg(folder.root())
                .arg(index.to_string())
                .stdin(Stdio::null())
                .spawn()
                .map_err(|e| Failure::RunFailed(format!("cannot start a member: {e}")))?;
            running.push((index, child));
        }
        if running.is_empty() {
            break;
        }
        std::thread::sleep(POLL);
        if stop.load(Ordering::Relaxed) && !forwarded {
            forwarded = true;
            for (_, child) in &running {
                stop_child(child);
            }
        }
        let before = running.len();
        running.retain_mut(|(_, child)| !matches!(child.try_wait(), Ok(Some(_))));
        done += before - running.len();
        progress.set(done);
    }
    progress.finish();
    report(&folder, globals, stop.load(Ordering::Relaxed))
}

/// Asks a member to stop after saving a checkpoint (SIGINT, as Ctrl-C would).
fn stop_child(child: &Child) {
    if let Ok(pid) = libc::pid_t::try_from(child.id()) {
        // SAFETY: kill(2) with a process id this process started and has not yet reaped.
        unsafe {
            libc::kill(pid, libc::SIGINT);
        }
    }
}

/// Prints every member's status and decides the outcome: interrupted, a failure naming the
/// failed members, or success.
fn report(folder: &SweepFolder, globals: Globals, stopped: bool) -> Result<(), Failure> {
    let statuses: Vec<Status> = (0..folder.len()).map(|i| folder.status(i)).collect();
    if !globals.quiet {
        for (index, status) in statuses.iter().enumerate() {
            crate::report!(
                "{}  {:<11}  {}",
                member_name(index),
                status.word(),
                super::values_text(&folder.manifest.parameters, &folder.manifest.members[index])
            )?;
        }
    }
    let finished = statuses.iter().filter(|s| **s == Status::Finished).count();
    if stopped {
        return Err(Failure::Interrupted(format!(
            "sweep interrupted with {finished} of {} members finished; the members that were \
             running saved checkpoints; run the same command again to continue",
            statuses.len()
        )));
    }
    let failed: Vec<String> = statuses
        .iter()
        .enumerate()
        .filter_map(|(i, s)| match s {
            Status::Failed(why) => Some(format!("{} ({why})", member_name(i))),
            _ => None,
        })
        .collect();
    if !failed.is_empty() {
        return Err(Failure::RunFailed(format!(
            "{} of {} members failed: {}; the others ran ({finished} finished); results in {}",
            failed.len(),
            statuses.len(),
            failed.join("; "),
            folder.root().display()
        )));
    }
    // Neither finished nor failed: stopped from outside (a member killed) or run elsewhere.
    let unfinished: Vec<String> = statuses
        .iter()
        .enumerate()
        .filter(|(_, s)| **s != Status::Finished)
        .map(|(i, s)| format!("{} ({})", member_name(i), s.word()))
        .collect();
    if !unfinished.is_empty() {
        return Err(Failure::RunFailed(format!(
            "{} of {} members did not finish: {}; they were stopped from outside this sweep or \
             are run by another process; run the same command again to continue them",
            unfinished.len(),
            statuses.len(),
            unfinished.join(", ")
        )));
    }
    if !globals.quiet {
        crate::note!(
            "{finished} of {} members finished; `lamella sweep report {}` gathers their results",
            statuses.len(),
            folder.root().display()
        );
    }
    Ok(())
}
