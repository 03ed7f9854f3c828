//! Opening a run folder for analysis: its case copy, choosing snapshots, reading columns of
//! `series.csv`, and the folder the results go to.

use std::path::{Path, PathBuf};

use lamella_case::Case;
use lamella_post::number::significant;

use super::AnalysisError;
use crate::output::collection::{Collection, Entry};
use crate::output::{RunFolder, Snapshot, read_snapshot};

/// A finished (or running) run folder with its case and snapshot list.
pub struct Run {
    /// The folder.
    pub folder: RunFolder,
    /// The case copied into it.
    pub case: Case,
    /// The snapshots, in time order.
    pub entries: Vec<Entry>,
}

impl Run {
    /// Opens `dir`: it must hold `case.ron` and at least one snapshot.
    pub fn open(dir: &Path) -> Result<Self, AnalysisError> {
        let (folder, case) = open_case(dir)?;
        let collection = Collection::read(&folder.collection()).map_err(|e| {
            AnalysisError::BadInput(format!(
                "{e}; the run folder {} has no snapshots yet",
                dir.display()
            ))
        })?;
        let entries = collection.entries().to_vec();
        if entries.is_empty() {
            return Err(AnalysisError::BadInput(format!(
                "the run folder {} lists no snapshot in {}",
                dir.display(),
                folder.collection().display()
            )));
        }
        Ok(Run {
            folder,
            case,
            entries,
        })
    }

    /// Reads snapshot `entry`; one of another dimension than the case is bad input.
    pub fn read(&self, entry: &Entry) -> Result<Snapshot, AnalysisError> {
        let path = self.folder.snapshots().join(&entry.file);
        let snapshot = read_snapshot(&path)?;
        if snapshot.dimension != self.case.dimension as usize {
            return Err(AnalysisError::BadInput(format!(
                "{} is a {}D snapshot but the run's case {} is {}D; the snapshot belongs to \
                 another run, put back this run's own snapshots",
                path.display(),
                snapshot.dimension,
                self.folder.case().display(),
                self.case.dimension
            )));
        }
        Ok(snapshot)
    }

    /// The snapshot closest in time to `time`, or the last one.
    pub fn entry_at(&self, time: Option<f64>) -> &Entry {
        match time {
            None => self
                .entries
                .last()
                .expect("a run has at least one snapshot"),
            Some(t) => self
                .entries
                .iter()
                .min_by(|a, b| (a.time - t).abs().total_cmp(&(b.time - t).abs()))
                .expect("a run has at least one snapshot"),
        }
    }

    /// [`Run::entry_at`], with a note when `time` lies outside the run's snapshots (before the
    /// first or after the last by more than a millionth of the run's span), naming the time
    /// used instead.
    pub fn entry_near(&self, time: Option<f64>) -> (&Entry, Option<String>) {
        let entry = self.entry_at(time);
        let note = time.and_then(|t| {
            let (first, last) = (
                self.entries[0].time,
                self.entries[self.entries.len() - 1].time,
            );
            let slack = 1e-6 * (last - first).abs().max(f64::MIN_POSITIVE);
            let outside = if t > last + slack {
                Some(format!("the run ends at t = {} s", significant(last, 6)))
            } else if t < first - slack {
                Some(format!("the run starts at t = {} s", significant(first, 6)))
            } else {
                None
            };
            outside.map(|why| {
                format!(
                    "--time {} s: no snapshot there ({why}); using the snapshot at t = {} s ({})",
                    significant(t, 6),
                    significant(entry.time, 6),
                    entry.file
                )
            })
        });
        (entry, note)
    }

    /// Where analysis results go: `out`, or `DIR/analysis` (created).
    pub fn output_folder(&self, out: Option<&Path>) -> Result<PathBuf, AnalysisError> {
        analysis_folder(&self.folder, out)
    }
}

/// Where the analysis results of the run in `folder` go: `out`, or `DIR/analysis` (created;
/// a folder that cannot be created is bad input).
pub fn analysis_folder(folder: &RunFolder, out: Option<&Path>) -> Result<PathBuf, AnalysisError> {
    let dir = out.map_or_else(|| folder.root().join("analysis"), Path::to_path_buf);
    std::fs::create_dir_all(&dir).map_err(|e| {
        AnalysisError::BadInput(format!(
            "cannot create the output folder {}: {e}",
            dir.display()
        ))
    })?;
    Ok(dir)
}

/// Opens the run folder `dir` and reads its case copy; unlike [`Run::open`] it needs no
/// snapshot (for the analyses of `series.csv`).
pub fn open_case(dir: &Path) -> Result<(RunFolder, Case), AnalysisError> {
    let folder = RunFolder::open(dir)?;
    let case =
        lamella_case::load(&folder.case()).map_err(|e| AnalysisError::BadInput(e.to_string()))?;
    Ok((folder, case))
}

/// Reads the columns `names` of the CSV table `path` (header row, numbers in the rows; an empty
/// cell is NaN). A column missing from the header is bad input whose message ends with `hint`.
pub fn read_columns(
    path: &Path,
    names: &[&str],
    hint: &str,
) -> Result<Vec<Vec<f64>>, AnalysisError> {
    let bad = AnalysisError::BadInput;
    let text = std::fs::read_to_string(path)
        .map_err(|e| bad(format!("cannot read {}: {e}", path.display())))?;
    let mut lines = text.lines();
    let header: Vec<&str> = lines
        .next()
        .unwrap_or_default()
        .split(',')
        .map(str::trim)
        .collect();
    let missing: Vec<&str> = names
        .iter()
        .copied()
        .filter(|n| !header.contains(n))
        .collect();
    if !missing.is_empty() {
        return Err(bad(format!(
            "{} has no column {}; {hint}",
            path.display(),
            missing.join(", ")
        )));
    }
    let index: Vec<usize> = names
        .iter()
        .map(|n| header.iter().position(|h| h == n).unwrap_or(0))
        .collect();
    let mut columns = vec![Vec::new(); names.len()];
    for (row, line) in lines.enumerate().filter(|(_, l)| !l.trim().is_empty()) {
        let cells: Vec<&str> = line.split(',').map(str::trim).collect();
        for ((column, &i), name) in columns.iter_mut().zip(&index).zip(names) {
            let value = match cells.get(i) {
                Some(&"") => f64::NAN,
                Some(cell) => cell.parse::<f64>().map_err(|_| {
                    bad(format!(
                        "{} line {}, column {name}: cannot read {cell:?} as a number; the file \
                         is damaged, or was not written by `lamella run`",
                        path.display(),
                        row + 2
                    ))
                })?,
                None => {
                    return Err(bad(format!(
                        "{} line {} has {} cells, the header {}; the file is cut short or damaged",
                        path.display(),
                        row + 2,
                        cells.len(),
                        header.len()
                    )));
                }
            };
            column.push(value);
        }
    }
    Ok(columns)
}
