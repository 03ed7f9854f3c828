//! The run folder: where every file of a run lives, and the run log.
//!
//! ```text
//! DIR/case.ron                     the case file, copied byte for byte
//! DIR/run.log                      what the run did, one line per event
//! DIR/series.csv                   global quantities per sample time
//! DIR/snapshots/snapshots.pvd      collection: every snapshot with its time
//! DIR/snapshots/state_NNNNNN.vtp   VTK PolyData snapshots
//! DIR/probes/<name>.csv            point and line probes
//! DIR/checkpoints/checkpoint_NNNNNN.bin   the two newest checkpoints
//! ```

use std::fs::{self, File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;

use super::OutputError;

/// The entries Lamella writes into a run folder (what `--force` clears).
const OWN_ENTRIES: [&str; 6] = [
    "case.ron",
    "run.log",
    "series.csv",
    "snapshots",
    "probes",
    "checkpoints",
];

/// The paths of one run folder.
#[derive(Clone, Debug)]
pub struct RunFolder {
    root: PathBuf,
}

impl RunFolder {
    /// Creates the folder for a new run. An existing non-empty folder is refused unless
    /// `force`, which deletes Lamella's own entries in it (nothing else).
    pub fn create(root: &Path, force: bool) -> Result<Self, OutputError> {
        let non_empty = fs::read_dir(root).is_ok_and(|mut entries| entries.next().is_some());
        if non_empty && !force {
            return Err(OutputError::Folder(format!(
                "run folder {} exists and is not empty; choose a new folder, continue the run \
                 with `lamella resume {}`, or pass --force to replace its results",
                root.display(),
                root.display()
            )));
        }
        if non_empty {
            for entry in OWN_ENTRIES {
                let path = root.join(entry);
                let removed = if path.is_dir() {
                    fs::remove_dir_all(&path)
                } else if path.exists() {
                    fs::remove_file(&path)
                } else {
                    Ok(())
                };
                removed.map_err(|err| OutputError::write(&path, err))?;
            }
        }
        let folder = RunFolder {
            root: root.to_path_buf(),
        };
        for dir in [folder.snapshots(), folder.checkpoints()] {
            fs::create_dir_all(&dir).map_err(|err| OutputError::write(&dir, err))?;
        }
        Ok(folder)
    }

    /// An existing run folder (for `lamella resume`): it must hold the case copy.
    pub fn open(root: &Path) -> Result<Self, OutputError> {
        let folder = RunFolder {
            root: root.to_path_buf(),
        };
        if !folder.case().is_file() {
            return Err(OutputError::Folder(format!(
                "{} is not a Lamella run folder: it has no case.ron; give the folder that \
                 `lamella run --out` wrote",
                root.display()
            )));
        }
        Ok(folder)
    }

    /// The folder itself.
    pub fn root(&self) -> &Path {
        &self.root
    }
    /// The copy of the case file.
    pub fn case(&self) -> PathBuf {
        self.root.join("case.ron")
    }
    /// The run log.
    pub fn log(&self) -> PathBuf {
        self.root.join("run.log")
    }
    /// The time series table.
    pub fn series(&self) -> PathBuf {
        self.root.join("series.csv")
    }
    /// The snapshot folder.
    pub fn snapshots(&self) -> PathBuf {
        self.root.join("snapshots")
    }
    /// The `.pvd` collection of the snapshots.
    pub fn collection(&self) -> PathBuf {
        self.snapshots().join("snapshots.pvd")
    }
    /// File name (within [`RunFolder::snapshots`]) of snapshot number `index`.
    pub fn snapshot_name(index: usize) -> String {
        format!("state_{index:06}.vtp")
    }
    /// The probe folder.
    pub fn probes(&self) -> PathBuf {
        self.root.join("probes")
    }
    /// The checkpoint folder.
    pub fn checkpoints(&self) -> PathBuf {
        self.root.join("checkpoints")
    }

    /// Copies the case text into the folder (atomically).
    pub fn save_case(&self, text: &str) -> Result<(), OutputError> {
        super::atomic::write_atomically(&self.case(), |w| w.write_all(text.as_bytes()))
    }
}

/// The run log, appended line by line (each line flushed at once).
#[derive(Debug)]
pub struct RunLog {
    path: PathBuf,
    file: File,
    started: Instant,
}

impl RunLog {
    /// Opens (creating or appending to) the log at `path`.
    pub fn open(path: &Path) -> Result<Self, OutputError> {
        let file = OpenOptions::new()
            .create(true)
            .append(true)
            .open(path)
            .map_err(|err| OutputError::write(path, err))?;
        Ok(RunLog {
            path: path.to_path_buf(),
            file,
            started: Instant::now(),
        })
    }

    /// Appends `message`, prefixed with the wall-clock seconds since the log was opened.
    pub fn line(&mut self, message: &str) -> Result<(), OutputError> {
        let elapsed = self.started.elapsed().as_secs_f64();
        writeln!(self.file, "[{elapsed:9.1} s] {message}")
            .map_err(|err| OutputError::write(&self.path, err))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_non_empty_folder_needs_force_and_force_keeps_foreign_files() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        let folder = RunFolder::create(&root, false).unwrap();
        folder.save_case("(case)").unwrap();
        fs::write(root.join("notes.txt"), "mine").unwrap();
        let err = RunFolder::create(&root, false).unwrap_err().to_string();
        assert!(
            err.contains("--force") && err.contains("lamella resume"),
            "{err}"
        );
        RunFolder::create(&root, true).unwrap();
        assert!(!folder.case().exists());
        assert_eq!(fs::read_to_string(root.join("notes.txt")).unwrap(), "mine");
        assert!(folder.snapshots().is_dir() && folder.checkpoints().is_dir());
    }

    #[test]
    fn opening_needs_the_case_copy() {
        let dir = tempfile::tempdir().unwrap();
        assert!(RunFolder::open(dir.path()).is_err());
        let folder = RunFolder::create(&dir.path().join("r"), false).unwrap();
        folder.save_case("(case)").unwrap();
        assert!(RunFolder::open(folder.root()).is_ok());
    }
}
