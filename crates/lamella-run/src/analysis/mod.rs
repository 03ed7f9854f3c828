//! The analyses of a run folder as a library, for the analysis commands: opening a run folder
//! and reading its tables ([`folder`]), the growth of the interface mode a run recorded
//! ([`growth`]), the velocity profile against the case's analytical one ([`profile`]), the
//! mode linear theory predicts for a case ([`mode`]), the mixing measures of its snapshots
//! ([`mixing`]) and the members of a sweep side by side ([`sweep`]). Numbers and files out; no printing.

pub mod folder;
pub mod growth;
pub mod mixing;
pub mod mode;
pub mod profile;
pub mod sweep;

use lamella_post::stability::StabilityError;

use crate::output::OutputError;

/// Why an analysis of a run folder did not give its result.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    /// The run folder, its case or a setting does not allow the analysis; the message says how.
    #[error("{0}")]
    BadInput(String),
    /// The analysis could not be done (a solve or a chart failed); the message says why.
    #[error("{0}")]
    Failed(String),
    /// Reading the run folder or writing a result failed.
    #[error(transparent)]
    Output(#[from] OutputError),
}

impl From<StabilityError> for AnalysisError {
    /// A parameter out of range is bad input; any other failed solve is a failure.
    fn from(err: StabilityError) -> Self {
        match err {
            StabilityError::InvalidParameter(msg) => AnalysisError::BadInput(msg),
            other => AnalysisError::Failed(format!("stability solve failed: {other}")),
        }
    }
}
