//! What can stop a run started through this library, each kind kept apart so that the
//! command line decides exit codes in one place.

use lamella_sph::SetupError;

use crate::output::OutputError;

/// Why running a case (setting it up, stepping it, writing its run folder) did not finish.
#[derive(Debug, thiserror::Error)]
pub enum RunError {
    /// The case is valid but cannot be used as asked (no standard benchmark case of that size,
    /// a state of another run that does not fit the case, ...); the message says why.
    #[error("{0}")]
    Case(String),
    /// The solver refused the case's configuration or initial particles.
    #[error("cannot set up the solver: {0}")]
    Setup(#[from] SetupError),
    /// Reading or writing the run folder failed.
    #[error(transparent)]
    Output(#[from] OutputError),
    /// A step went bad; the message names the particle, time, position and likely cause.
    #[error("the run went bad: {0}")]
    Fault(String),
    /// The stop flag was raised; the state after the last completed step was handed to the
    /// observer (a run folder writes a checkpoint to resume from).
    #[error(
        "interrupted at t = {} s (step {step})",
        lamella_post::number::significant(*time, 6)
    )]
    Interrupted {
        /// Simulated time of the last completed step (s).
        time: f64,
        /// Steps completed.
        step: u64,
    },
}
