//! Stop on request: SIGINT, SIGTERM and SIGHUP raise a flag that the run loop of
//! `lamella-run` polls after each step ([`lamella_run::runner::run_to_end`]).

use std::sync::Arc;
use std::sync::atomic::AtomicBool;

use crate::Failure;

/// A flag raised by SIGINT, SIGTERM or SIGHUP; the run loop polls it each step, then
/// checkpoints and stops with exit code 130.
///
/// Every later signal only raises the flag again: it never ends the process while the
/// checkpoint is being written (GNU `timeout` sends SIGTERM twice, an impatient user presses
/// Ctrl-C twice, a closed terminal sends SIGHUP and then SIGTERM). The step in progress
/// finishes, the checkpoint is written, then the process exits. Only SIGKILL stops a run
/// without saving, and a resume then starts from the previous checkpoint.
pub fn interrupt_flag() -> Result<Arc<AtomicBool>, Failure> {
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
