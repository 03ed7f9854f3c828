//! Errors of the output layer, each naming the file and what went wrong.

use std::io;
use std::path::{Path, PathBuf};

/// Why reading or writing run output failed.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    /// A file or folder could not be written (full disk, no permission, ...).
    #[error("cannot write {}: {source}{}", path.display(), write_hint(source))]
    Write {
        /// The file or folder being written.
        path: PathBuf,
        /// The operating system's reason.
        source: io::Error,
    },
    /// A file could not be read.
    #[error("cannot read {}: {source}", path.display())]
    Read {
        /// The file being read.
        path: PathBuf,
        /// The operating system's reason.
        source: io::Error,
    },
    /// A file exists but its content is not what Lamella wrote (truncated, altered, other format).
    #[error("{} is not a valid {what}: {reason}", path.display())]
    Invalid {
        /// The offending file.
        path: PathBuf,
        /// What the file should have been ("checkpoint", "snapshot", ...).
        what: &'static str,
        /// What exactly is wrong.
        reason: String,
    },
    /// The run folder cannot be used as asked (exists and is not empty, is missing, ...).
    #[error("{0}")]
    Folder(String),
    /// The neighbour search behind an output quantity (probes, interface statistics, shear
    /// rate) refused the state; the solver checks the same state first, so this is a fault.
    #[error("cannot compute the output quantities: {0}")]
    Neighbours(#[from] lamella_cells::CellError),
}

impl OutputError {
    /// A write error on `path`.
    pub fn write(path: &Path, source: io::Error) -> Self {
        OutputError::Write {
            path: path.to_path_buf(),
            source,
        }
    }

    /// A read error on `path`.
    pub fn read(path: &Path, source: io::Error) -> Self {
        OutputError::Read {
            path: path.to_path_buf(),
            source,
        }
    }

    /// An invalid-content error on `path`.
    pub fn invalid(path: &Path, what: &'static str, reason: impl Into<String>) -> Self {
        OutputError::Invalid {
            path: path.to_path_buf(),
            what,
            reason: reason.into(),
        }
    }
}

fn write_hint(source: &io::Error) -> &'static str {
    match source.kind() {
        io::ErrorKind::StorageFull | io::ErrorKind::QuotaExceeded => {
            " (the disk is full: free some space or choose another --out folder; \
             files written before, including the previous checkpoint, are untouched)"
        }
        io::ErrorKind::PermissionDenied | io::ErrorKind::ReadOnlyFilesystem => {
            " (the folder is not writable: fix its permissions or choose another --out folder)"
        }
        _ => "",
    }
}
