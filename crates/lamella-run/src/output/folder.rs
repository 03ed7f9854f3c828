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
//! DIR/run.lock                     who writes the folder now (locked while a run or resume does)
//! ```
//!
//! A run or resume holds an exclusive operating-system lock on `run.lock` for as long as it
//! writes the folder, so a second one cannot interleave its rows with the first's. The lock
//! belongs to the open file: the kernel releases it when the process ends, however it ends
//! (even SIGKILL), so a lock is never left stale; the text in the file (process id, host,
//! start time) only names the holder in the message a second run gets.

use std::fs::{self, File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Instant, SystemTime, UNIX_EPOCH};

use lamella_case::Problem;

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

/// The lock file of a run folder (see the module documentation).
pub const LOCK_FILE: &str = "run.lock";

/// The paths of one run folder, and its lock while this process writes it.
#[derive(Clone, Debug)]
pub struct RunFolder {
    root: PathBuf,
    /// The open, exclusively locked `run.lock` (released when the last clone is dropped).
    lock: Option<Arc<File>>,
}

impl RunFolder {
    /// Creates the folder for a new run and locks it (see [`RunFolder::locked`]). An existing
    /// non-empty folder is refused unless `force`, which deletes Lamella's own entries in it
    /// (nothing else).
    pub fn create(root: &Path, force: bool) -> Result<Self, OutputError> {
        fs::create_dir_all(root).map_err(|err| OutputError::write(root, err))?;
        let folder = RunFolder {
            root: root.to_path_buf(),
            lock: None,
        }
        .locked()?;
        let non_empty = fs::read_dir(root).is_ok_and(|entries| {
            entries
                .filter_map(Result::ok)
                .any(|entry| entry.file_name() != LOCK_FILE)
        });
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
        for dir in [folder.snapshots(), folder.checkpoints()] {
            fs::create_dir_all(&dir).map_err(|err| OutputError::write(&dir, err))?;
        }
        Ok(folder)
    }

    /// This folder, locked for writing by this process: takes the exclusive lock on
    /// `run.lock` without waiting and writes the holder (process id, host, start time) into
    /// it. When another process holds the lock, the error names it (exit code 2).
    pub fn locked(mut self) -> Result<Self, OutputError> {
        if self.lock.is_some() {
            return Ok(self);
        }
        let path = self.root.join(LOCK_FILE);
        let mut file = OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(&path)
            .map_err(|err| OutputError::write(&path, err))?;
        match file.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) => {
                let holder = fs::read_to_string(&path).unwrap_or_default();
                let holder = holder.trim();
                let holder = if holder.is_empty() {
                    "another process".to_string()
                } else {
                    holder.to_string()
                };
                return Err(OutputError::Folder(format!(
                    "run folder {} is in use: {holder} is writing it (lock {}); wait for that \
                     run to finish or stop it (Ctrl-C saves a checkpoint), then resume",
                    self.root.display(),
                    path.display()
                )));
            }
            Err(fs::TryLockError::Error(err)) => return Err(OutputError::write(&path, err)),
        }
        let since = SystemTime::now()
            .duration_since(UNIX_EPOCH)
            .map_or(0, |d| d.as_secs());
        let holder = format!(
            "process {} on host {} (since {since} s after 1970-01-01 UTC)\n",
            std::process::id(),
            host_name()
        );
        file.set_len(0)
            .and_then(|()| file.write_all(holder.as_bytes()))
            .map_err(|err| OutputError::write(&path, err))?;
        self.lock = Some(Arc::new(file));
        Ok(self)
    }

    /// An existing run folder (for `lamella resume`): it must hold the case copy.
    pub fn open(root: &Path) -> Result<Self, OutputError> {
        let folder = RunFolder {
            root: root.to_path_buf(),
            lock: None,
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

/// Whether a process holds the lock of the run folder at `root` now (a run or resume is
/// writing it). Reads only: the lock file is opened read-only and probed with a shared lock.
pub fn in_use(root: &Path) -> bool {
    let Ok(file) = File::open(root.join(LOCK_FILE)) else {
        return false;
    };
    matches!(file.try_lock_shared(), Err(fs::TryLockError::WouldBlock))
}

/// This machine's name, for the lock file ("unknown" where the system does not say).
fn host_name() -> String {
    fs::read_to_string("/proc/sys/kernel/hostname")
        .or_else(|_| fs::read_to_string("/etc/hostname"))
        .ok()
        .map(|name| name.trim().to_string())
        .filter(|name| !name.is_empty())
        .or_else(|| std::env::var("COMPUTERNAME").ok())
        .unwrap_or_else(|| "unknown".to_string())
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

/// Checks that `folder` can be created (if missing) and written, by creating and removing a
/// probe file in it or in its nearest existing parent. Leaves nothing behind.
pub fn check_output_folder(folder: &Path) -> Result<(), Problem> {
    let folder: PathBuf = if folder.as_os_str().is_empty() {
        PathBuf::from(".")
    } else {
        folder.to_path_buf()
    };
    let mut existing = folder.as_path();
    loop {
        match fs::metadata(existing) {
            Ok(meta) if meta.is_dir() => break,
            Ok(_) => {
                return Err(Problem::File {
                    message: format!(
                        "{} exists and is not a folder; choose another run folder",
                        existing.display()
                    ),
                });
            }
            Err(_) => match existing.parent() {
                Some(parent) if !parent.as_os_str().is_empty() => existing = parent,
                _ => {
                    existing = Path::new(".");
                    if fs::metadata(existing).is_err() {
                        return Err(Problem::File {
                            message: "the current folder cannot be read".into(),
                        });
                    }
                    break;
                }
            },
        }
    }
    let probe = existing.join(format!(".lamella-write-probe-{}", std::process::id()));
    match fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&probe)
    {
        Ok(file) => {
            drop(file);
            let _ = fs::remove_file(&probe);
            Ok(())
        }
        Err(err) => Err(Problem::File {
            message: format!(
                "cannot write in {}: {err}; choose a folder you can write to",
                existing.display()
            ),
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn output_folder_check_leaves_nothing_behind() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("a/b/run");
        check_output_folder(&target).unwrap();
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 0);
        check_output_folder(dir.path()).unwrap();
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 0);
    }

    #[test]
    fn output_folder_under_a_file_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("plain");
        fs::write(&file, "x").unwrap();
        let err = check_output_folder(&file.join("run")).unwrap_err();
        assert!(err.to_string().contains("is not a folder"), "{err}");
    }

    #[test]
    fn a_non_empty_folder_needs_force_and_force_keeps_foreign_files() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        let folder = RunFolder::create(&root, false).unwrap();
        folder.save_case("(case)").unwrap();
        fs::write(root.join("notes.txt"), "mine").unwrap();
        let case = folder.case();
        drop(folder);
        let err = RunFolder::create(&root, false).unwrap_err().to_string();
        assert!(
            err.contains("--force") && err.contains("lamella resume"),
            "{err}"
        );
        let folder = RunFolder::create(&root, true).unwrap();
        assert!(!case.exists());
        assert_eq!(fs::read_to_string(root.join("notes.txt")).unwrap(), "mine");
        assert!(folder.snapshots().is_dir() && folder.checkpoints().is_dir());
    }

    #[test]
    fn a_locked_folder_is_refused_with_its_holder_and_freed_on_drop() {
        let dir = tempfile::tempdir().unwrap();
        let root = dir.path().join("run");
        let first = RunFolder::create(&root, false).unwrap();
        first.save_case("(case)").unwrap();
        // A second open file description conflicts even within one process (flock semantics).
        let err = RunFolder::open(&root)
            .unwrap()
            .locked()
            .unwrap_err()
            .to_string();
        let pid = format!("process {}", std::process::id());
        assert!(err.contains("is in use") && err.contains(&pid), "{err}");
        // A folder in use is a folder that cannot be used as asked (bad input, exit code 2).
        assert!(matches!(
            RunFolder::create(&root, true).unwrap_err(),
            OutputError::Folder(_)
        ));
        assert!(in_use(&root));
        drop(first);
        assert!(!in_use(&root));
        RunFolder::open(&root).unwrap().locked().unwrap();
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
