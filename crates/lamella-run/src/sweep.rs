//! The sweep folder: the member cases of a sweep, their run folders and the state of each.
//!
//! ```text
//! DIR/manifest.ron              the sweep: its file, a fingerprint, the parameters, every member's values
//! DIR/cases/member-NNN.ron      the case of member NNN (the base case with its values set)
//! DIR/member-NNN/               the run folder of member NNN (as `lamella run --out` writes it)
//! DIR/failures/member-NNN.txt   why member NNN failed before or outside its run loop
//! DIR/sweep.csv, DIR/stability-map.png, DIR/convergence.png   the report (`analysis::sweep`)
//! DIR/sweep.sbatch, DIR/collect.sbatch, DIR/logs/            the Slurm scripts and their logs
//! ```
//!
//! A member's status ([`Status`]) is read from its run folder: its lock (running), the last
//! event of its `run.log` (finished, went bad, interrupted) and its checkpoints.

use std::fmt;
use std::fs;
use std::path::{Path, PathBuf};

use lamella_case::sweep::{self, Sweep};
use lamella_case::{CaseError, to_ron};
use serde::{Deserialize, Serialize};

use crate::feasibility;
use crate::output::atomic::write_bytes;
use crate::output::checkpoint::checksum;
use crate::output::folder::{RunFolder, in_use};
use crate::output::{CheckpointStore, OutputError};
use crate::recorder::{LOG_FINISHED, LOG_INTERRUPTED, LOG_WENT_BAD};

/// The manifest's file name in a sweep folder.
pub const MANIFEST: &str = "manifest.ron";

/// Loads a sweep file ([`lamella_case::sweep::load`]) and checks, like
/// [`feasibility::load_case`] does for one case, that every member can finish and fits in this
/// machine's memory; the error lists every problem, each member named with its values.
pub fn load_sweep(path: &Path) -> Result<Sweep, CaseError> {
    let sweep = sweep::load(path)?;
    let problems: Vec<_> = sweep
        .members
        .iter()
        .flat_map(|member| {
            let label = sweep.label(member.index, &member.values);
            feasibility::problems(&member.case)
                .into_iter()
                .map(move |problem| sweep::in_member(&label, problem))
        })
        .collect();
    if !problems.is_empty() {
        return Err(CaseError {
            origin: sweep.origin.clone(),
            problems,
        });
    }
    Ok(sweep)
}

/// What a sweep folder records of its sweep (`manifest.ron`).
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Manifest {
    /// The sweep file the folder was made from, as it was given.
    pub sweep: String,
    /// CRC-32 (hex) of the parameters and every member's case text: two sweeps with the same
    /// fingerprint make the same runs.
    pub fingerprint: String,
    /// Field path of every parameter.
    pub parameters: Vec<String>,
    /// The values of the parameters in every member, in index order.
    pub members: Vec<Vec<f64>>,
}

/// The state of one member.
#[derive(Clone, Debug, PartialEq)]
pub enum Status {
    /// Not started (or stopped before its first checkpoint).
    Pending,
    /// A process is running it now.
    Running,
    /// It reached its end time.
    Finished,
    /// It failed; why.
    Failed(String),
    /// It was stopped after a checkpoint and can be resumed.
    Interrupted,
}

impl Status {
    /// The status word of tables and reports: pending, running, finished, failed, interrupted.
    pub fn word(&self) -> &'static str {
        match self {
            Status::Pending => "pending",
            Status::Running => "running",
            Status::Finished => "finished",
            Status::Failed(_) => "failed",
            Status::Interrupted => "interrupted",
        }
    }
}

impl fmt::Display for Status {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Status::Failed(why) => write!(f, "failed: {why}"),
            other => f.write_str(other.word()),
        }
    }
}

/// A sweep folder and its manifest.
#[derive(Clone, Debug)]
pub struct SweepFolder {
    root: PathBuf,
    /// What the folder holds.
    pub manifest: Manifest,
}

/// The name of member `index`: `member-NNN`.
pub fn member_name(index: usize) -> String {
    format!("member-{index:03}")
}

/// The case text of a member: a comment with its values, then the case.
fn member_text(sweep: &Sweep, index: usize) -> String {
    let member = &sweep.members[index];
    format!(
        "// {} of a Lamella sweep\n{}",
        sweep.label(index, &member.values),
        to_ron(&member.case)
    )
}

impl SweepFolder {
    /// Writes the sweep folder of `sweep` (from the file `origin`) at `root`: the member cases,
    /// then the manifest. A folder that already holds this sweep (same fingerprint) is kept as
    /// it is, with its runs; one that holds another sweep, or anything that is not a sweep
    /// folder, is refused.
    pub fn prepare(root: &Path, sweep: &Sweep, origin: &Path) -> Result<Self, OutputError> {
        let texts: Vec<String> = (0..sweep.members.len())
            .map(|i| member_text(sweep, i))
            .collect();
        let mut identity = sweep.parameters.join("\n");
        for text in &texts {
            identity.push('\n');
            identity.push_str(text);
        }
        let manifest = Manifest {
            sweep: origin.display().to_string(),
            fingerprint: format!("{:08x}", checksum(identity.as_bytes())),
            parameters: sweep.parameters.clone(),
            members: sweep.members.iter().map(|m| m.values.clone()).collect(),
        };
        if root.join(MANIFEST).exists() {
            let existing = Self::open(root)?;
            if existing.manifest.fingerprint != manifest.fingerprint {
                return Err(OutputError::Folder(format!(
                    "{} holds another sweep (made from {}, {} members, fingerprint {}; this one \
                     is {}); choose a new folder for this sweep",
                    root.display(),
                    existing.manifest.sweep,
                    existing.manifest.members.len(),
                    existing.manifest.fingerprint,
                    manifest.fingerprint
                )));
            }
            return Ok(existing);
        }
        if fs::read_dir(root).is_ok_and(|mut entries| entries.next().is_some()) {
            return Err(OutputError::Folder(format!(
                "{} is not empty and is not a sweep folder (it has no {MANIFEST}); choose a new \
                 folder for the sweep",
                root.display()
            )));
        }
        let folder = SweepFolder {
            root: root.to_path_buf(),
            manifest,
        };
        let cases = root.join("cases");
        fs::create_dir_all(&cases).map_err(|err| OutputError::write(&cases, err))?;
        for (i, text) in texts.iter().enumerate() {
            write_bytes(&folder.member_case(i), text.as_bytes())?;
        }
        let config = ron::ser::PrettyConfig::new().struct_names(false);
        let manifest_text =
            ron::ser::to_string_pretty(&folder.manifest, config).map_err(|err| {
                OutputError::invalid(&root.join(MANIFEST), "sweep manifest", err.to_string())
            })?;
        // Written last: a folder with a manifest has all its member cases.
        write_bytes(&root.join(MANIFEST), manifest_text.as_bytes())?;
        Ok(folder)
    }

    /// An existing sweep folder, read from its manifest.
    pub fn open(root: &Path) -> Result<Self, OutputError> {
        let path = root.join(MANIFEST);
        if !path.is_file() {
            return Err(OutputError::Folder(format!(
                "{} is not a sweep folder: it has no {MANIFEST}; give the folder that `lamella \
                 sweep run` or `lamella sweep slurm` wrote",
                root.display()
            )));
        }
        let text = fs::read_to_string(&path).map_err(|err| OutputError::read(&path, err))?;
        let manifest: Manifest = ron::from_str(&text)
            .map_err(|err| OutputError::invalid(&path, "sweep manifest", err.to_string()))?;
        Ok(SweepFolder {
            root: root.to_path_buf(),
            manifest,
        })
    }

    /// The folder itself.
    pub fn root(&self) -> &Path {
        &self.root
    }
    /// Number of members.
    pub fn len(&self) -> usize {
        self.manifest.members.len()
    }
    /// Whether the sweep has no member (never, for a folder `prepare` wrote).
    pub fn is_empty(&self) -> bool {
        self.manifest.members.is_empty()
    }
    /// The case file of member `index`.
    pub fn member_case(&self, index: usize) -> PathBuf {
        self.root
            .join("cases")
            .join(format!("{}.ron", member_name(index)))
    }
    /// The run folder of member `index`.
    pub fn member_run(&self, index: usize) -> PathBuf {
        self.root.join(member_name(index))
    }
    /// The file that records why member `index` failed outside its run loop.
    pub fn failure_file(&self, index: usize) -> PathBuf {
        self.root
            .join("failures")
            .join(format!("{}.txt", member_name(index)))
    }

    /// Records why member `index` failed (atomically).
    pub fn record_failure(&self, index: usize, why: &str) -> Result<(), OutputError> {
        let path = self.failure_file(index);
        if let Some(folder) = path.parent() {
            fs::create_dir_all(folder).map_err(|err| OutputError::write(folder, err))?;
        }
        write_bytes(&path, format!("{why}\n").as_bytes())
    }

    /// Forgets an earlier failure of member `index` (before it is run again).
    pub fn clear_failure(&self, index: usize) -> Result<(), OutputError> {
        let path = self.failure_file(index);
        match fs::remove_file(&path) {
            Err(err) if err.kind() != std::io::ErrorKind::NotFound => {
                Err(OutputError::write(&path, err))
            }
            _ => Ok(()),
        }
    }

    /// The state of member `index`, from its run folder (see the module documentation) and
    /// its failure record.
    pub fn status(&self, index: usize) -> Status {
        let run = self.member_run(index);
        if in_use(&run) {
            return Status::Running;
        }
        let recorded = fs::read_to_string(self.failure_file(index))
            .ok()
            .map(|why| Status::Failed(why.trim().to_string()));
        let Ok(folder) = RunFolder::open(&run) else {
            return recorded.unwrap_or(Status::Pending);
        };
        let log = fs::read_to_string(folder.log()).unwrap_or_default();
        let last_event = log.lines().rev().find_map(|line| {
            // Each line is "[   1.2 s] message".
            let message = line.split_once("] ").map_or(line, |(_, m)| m);
            if message.starts_with(LOG_FINISHED) {
                Some(Status::Finished)
            } else if let Some(why) = message.strip_prefix(LOG_WENT_BAD) {
                Some(Status::Failed(why.to_string()))
            } else {
                message
                    .starts_with(LOG_INTERRUPTED)
                    .then_some(Status::Interrupted)
            }
        });
        match (last_event, recorded) {
            (Some(Status::Finished), _) => Status::Finished,
            (Some(Status::Failed(why)), _) | (_, Some(Status::Failed(why))) => Status::Failed(why),
            _ if CheckpointStore::new(folder.checkpoints())
                .list()
                .is_ok_and(|list| !list.is_empty()) =>
            {
                Status::Interrupted
            }
            _ => Status::Pending,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sweep_at(dir: &Path, viscosities: &str) -> (PathBuf, Sweep) {
        let base = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../cases/interface-growth.ron");
        let path = dir.join(format!("s{}.ron", viscosities.len()));
        let text = format!(
            "(base: {:?}, parameters: [(path: \"phases[0].viscosity_law.viscosity\", values: \
             List([{viscosities}]))])",
            base.display().to_string()
        );
        fs::write(&path, text).unwrap();
        let sweep = load_sweep(&path).unwrap();
        (path, sweep)
    }

    #[test]
    fn a_folder_is_kept_for_its_own_sweep_and_refused_to_another() {
        let dir = tempfile::tempdir().unwrap();
        let (path, sweep) = sweep_at(dir.path(), "0.01, 0.02");
        let root = dir.path().join("out");
        let folder = SweepFolder::prepare(&root, &sweep, &path).unwrap();
        assert_eq!(folder.len(), 2);
        assert_eq!(folder.status(1), Status::Pending);
        let text = fs::read_to_string(folder.member_case(1)).unwrap();
        assert!(text.starts_with("// member 1 (phases[0].viscosity_law.viscosity = 0.02)"));
        assert_eq!(
            lamella_case::parse_str(&text, "member").unwrap(),
            sweep.members[1].case
        );
        let again = SweepFolder::prepare(&root, &sweep, &path).unwrap();
        assert_eq!(again.manifest, folder.manifest);
        let (other_path, other) = sweep_at(dir.path(), "0.01, 0.03, 0.04");
        let err = SweepFolder::prepare(&root, &other, &other_path)
            .unwrap_err()
            .to_string();
        assert!(err.contains("holds another sweep"), "{err}");
        let plain = dir.path().join("plain");
        fs::create_dir_all(&plain).unwrap();
        fs::write(plain.join("notes.txt"), "x").unwrap();
        let err = SweepFolder::prepare(&plain, &sweep, &path)
            .unwrap_err()
            .to_string();
        assert!(err.contains("not a sweep folder"), "{err}");
    }

    #[test]
    fn the_status_follows_the_run_log_the_checkpoints_and_the_failure_record() {
        let dir = tempfile::tempdir().unwrap();
        let (path, sweep) = sweep_at(dir.path(), "0.01");
        let folder = SweepFolder::prepare(&dir.path().join("out"), &sweep, &path).unwrap();
        folder.record_failure(0, "no memory").unwrap();
        assert_eq!(folder.status(0), Status::Failed("no memory".into()));
        folder.clear_failure(0).unwrap();
        let run = RunFolder::create(&folder.member_run(0), false).unwrap();
        run.save_case("(case)").unwrap();
        assert_eq!(folder.status(0), Status::Running);
        drop(run);
        assert_eq!(folder.status(0), Status::Pending);
        fs::write(
            folder
                .member_run(0)
                .join("checkpoints/checkpoint_000001.bin"),
            "x",
        )
        .unwrap();
        assert_eq!(folder.status(0), Status::Interrupted);
        let log = folder.member_run(0).join("run.log");
        fs::write(&log, "[ 1.0 s] the run went bad: NaN at particle 3\n").unwrap();
        assert_eq!(folder.status(0), Status::Failed("NaN at particle 3".into()));
        fs::write(
            &log,
            "[ 1.0 s] interrupted; resume\n[ 2.0 s] finished at t = 0.1 s\n",
        )
        .unwrap();
        assert_eq!(folder.status(0), Status::Finished);
    }
}
