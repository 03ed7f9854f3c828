//! Failures of a command and the documented exit codes they map to.

use std::process::ExitCode;

/// Why a command did not succeed. Each variant has a fixed, documented exit code.
#[derive(Debug, thiserror::Error)]
pub enum Failure {
    /// The input (case file, option, run folder, checkpoint) is wrong. Exit code 2.
    #[error("{0}")]
    BadInput(String),
    /// The run itself failed (the solution went bad, a file could not be written). Exit code 1.
    #[error("{0}")]
    RunFailed(String),
    /// Stopped by SIGINT/SIGTERM after saving what was needed to resume. Exit code 130.
    #[error("{0}")]
    Interrupted(String),
}

impl Failure {
    /// The process exit code for this failure: 1 run failed, 2 bad input, 130 interrupted.
    pub fn exit_code(&self) -> u8 {
        match self {
            Failure::RunFailed(_) => 1,
            Failure::BadInput(_) => 2,
            Failure::Interrupted(_) => 130,
        }
    }
}

impl From<Failure> for ExitCode {
    fn from(failure: Failure) -> Self {
        ExitCode::from(failure.exit_code())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exit_codes_match_the_readme() {
        assert_eq!(Failure::RunFailed(String::new()).exit_code(), 1);
        assert_eq!(Failure::BadInput(String::new()).exit_code(), 2);
        assert_eq!(Failure::Interrupted(String::new()).exit_code(), 130);
    }
}
