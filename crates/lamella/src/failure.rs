//! Failures of a command and the documented exit codes they map to. [`Failure::exit_code`] is
//! the only place that decides an exit code.

use std::path::Path;
use std::process::ExitCode;

use lamella_case::CaseError;
use lamella_run::RunError;
use lamella_run::analysis::AnalysisError;
use lamella_run::output::OutputError;

/// Why a command did not succeed.
#[derive(Debug, thiserror::Error)]
pub enum Failure {
    /// An option, an argument or a file the command reads is wrong; the message says how.
    #[error("{0}")]
    BadInput(String),
    /// The command could not do its work (the report could not be printed, a measurement
    /// failed); the message says why.
    #[error("{0}")]
    RunFailed(String),
    /// The case file is invalid or asks too much of this machine; every problem is listed.
    #[error("{count} in the case file:\n{0}", count = problem_count(.0))]
    Case(#[from] CaseError),
    /// Setting up, running or writing a run, or reading a run folder, failed.
    #[error(transparent)]
    Run(#[from] RunError),
    /// A stop signal (Ctrl-C, `kill`) ended the run after its state was saved; the message
    /// says where and how to continue. Not an error: it is printed without "error:".
    #[error("{0}")]
    Interrupted(String),
    /// Analysing a run folder failed: bad input, a failed solve, or reading or writing files.
    #[error(transparent)]
    Analysis(#[from] AnalysisError),
}

fn problem_count(err: &CaseError) -> String {
    match err.problems.len() {
        1 => "1 problem".to_string(),
        n => format!("{n} problems"),
    }
}

impl From<OutputError> for Failure {
    fn from(err: OutputError) -> Self {
        Failure::Run(RunError::Output(err))
    }
}

impl Failure {
    /// A run stopped by a signal at simulated time `time` (s) after `step` steps, its state
    /// saved in `checkpoint` of the run folder `folder`.
    pub fn interrupted(time: f64, step: u64, checkpoint: &Path, folder: &Path) -> Self {
        Failure::Interrupted(format!(
            "{}; the state is saved in {}; continue with `lamella resume {}`",
            RunError::Interrupted { time, step },
            checkpoint.display(),
            folder.display()
        ))
    }

    /// Whether a stop signal ended the command (exit code 130).
    pub fn is_interrupt(&self) -> bool {
        matches!(
            self,
            Failure::Interrupted(_) | Failure::Run(RunError::Interrupted { .. })
        )
    }

    /// The line printed on standard error: "error: " and the message, except for an
    /// interrupt, which is what the user asked for and is reported as such.
    pub fn report_line(&self) -> String {
        if self.is_interrupt() {
            self.to_string()
        } else {
            format!("error: {self}")
        }
    }

    /// The process exit code of this failure, as the README documents it: 1 the run failed
    /// (the solution went bad, a file could not be written), 2 bad input (case file, option,
    /// run folder, checkpoint), 130 interrupted after saving what is needed to resume.
    pub fn exit_code(&self) -> u8 {
        const FAILED: u8 = 1;
        const BAD_INPUT: u8 = 2;
        const INTERRUPTED: u8 = 130;
        /// A file that cannot be written fails the command; one that cannot be read, or is
        /// not what Lamella wrote, is bad input.
        fn output_code(err: &OutputError) -> u8 {
            match err {
                OutputError::Write { .. } | OutputError::Neighbours(_) => FAILED,
                OutputError::Read { .. } | OutputError::Invalid { .. } | OutputError::Folder(_) => {
                    BAD_INPUT
                }
            }
        }
        match self {
            Failure::BadInput(_) | Failure::Case(_) => BAD_INPUT,
            Failure::RunFailed(_) => FAILED,
            Failure::Interrupted(_) => INTERRUPTED,
            Failure::Run(err) => match err {
                RunError::Case(_) | RunError::Setup(_) => BAD_INPUT,
                RunError::Fault(_) => FAILED,
                RunError::Interrupted { .. } => INTERRUPTED,
                RunError::Output(output) => output_code(output),
            },
            Failure::Analysis(err) => match err {
                AnalysisError::BadInput(_) => BAD_INPUT,
                AnalysisError::Failed(_) => FAILED,
                AnalysisError::Output(output) => output_code(output),
            },
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
    use std::io;

    use super::*;

    #[test]
    fn exit_codes_match_the_readme() {
        assert_eq!(Failure::RunFailed(String::new()).exit_code(), 1);
        assert_eq!(Failure::BadInput(String::new()).exit_code(), 2);
        let interrupted = RunError::Interrupted { time: 1.0, step: 3 };
        assert_eq!(Failure::from(interrupted).exit_code(), 130);
        assert_eq!(Failure::from(RunError::Fault("nan".into())).exit_code(), 1);
        assert_eq!(
            Failure::from(RunError::Case("too small".into())).exit_code(),
            2
        );
    }

    #[test]
    fn an_interrupt_is_reported_as_an_interrupt_with_where_to_continue() {
        let failure = Failure::interrupted(
            0.15000000000000002,
            1200,
            Path::new("out/checkpoints/checkpoint_000003.bin"),
            Path::new("out"),
        );
        assert_eq!(
            failure.report_line(),
            "interrupted at t = 0.15 s (step 1200); the state is saved in \
             out/checkpoints/checkpoint_000003.bin; continue with `lamella resume out`"
        );
        assert_eq!(failure.exit_code(), 130);
        // Without a saved state (a run stopped before its first checkpoint) still no "error".
        let bare = Failure::from(RunError::Interrupted {
            time: 2.5e-3,
            step: 7,
        });
        assert_eq!(bare.report_line(), "interrupted at t = 0.0025 s (step 7)");
        assert_eq!(bare.exit_code(), 130);
        // Everything else is an error.
        assert_eq!(
            Failure::BadInput("no case".into()).report_line(),
            "error: no case"
        );
    }

    #[test]
    fn a_full_disk_is_explained_and_is_a_failed_run() {
        let err = OutputError::write(Path::new("out/x.bin"), io::ErrorKind::StorageFull.into());
        let text = err.to_string();
        assert!(
            text.contains("out/x.bin") && text.contains("disk is full"),
            "{text}"
        );
        assert_eq!(Failure::from(err).exit_code(), 1);
    }

    #[test]
    fn analysis_failures_map_like_run_failures() {
        let code = |err: AnalysisError| Failure::from(err).exit_code();
        assert_eq!(code(AnalysisError::BadInput(String::new())), 2);
        assert_eq!(code(AnalysisError::Failed(String::new())), 1);
        let path = Path::new("analysis/profile.csv");
        let denied = || io::Error::from(io::ErrorKind::PermissionDenied);
        assert_eq!(code(OutputError::write(path, denied()).into()), 1);
        assert_eq!(code(OutputError::read(path, denied()).into()), 2);
    }

    #[test]
    fn invalid_files_are_bad_input() {
        let err = OutputError::invalid(Path::new("c.bin"), "checkpoint", "checksum mismatch");
        assert_eq!(
            err.to_string(),
            "c.bin is not a valid checkpoint: checksum mismatch"
        );
        assert_eq!(Failure::from(err).exit_code(), 2);
    }

    #[test]
    fn case_problems_are_counted_and_bad_input() {
        let err = CaseError {
            origin: "c.ron".into(),
            problems: vec![lamella_case::Problem::value(
                "time.end",
                "-1",
                "a positive time",
            )],
        };
        let failure = Failure::from(err);
        assert!(
            failure
                .to_string()
                .starts_with("1 problem in the case file:\n"),
            "{failure}"
        );
        assert_eq!(failure.exit_code(), 2);
    }
}
