//! The run loop's observer that writes a run folder: snapshots with their collection, the
//! series and probe tables at every sample time, checkpoints every N wall-clock minutes, at the
//! end and on interrupt, and the run log. Also restores itself from a checkpoint for a resume.

use std::path::Path;
use std::time::{Duration, Instant};

use lamella_case::Case;
use lamella_cells::Vector;
use lamella_sph::{Fault, Simulation, StepReport};

use crate::RunError;
use crate::output::checkpoint::{Checkpoint, CheckpointStore, Value, checksum};
use crate::output::collection::Collection;
use crate::output::folder::{RunFolder, RunLog};
use crate::output::probes::{Probe, ProbeFiles};
use crate::output::series::{FlowStatistics, InterfaceTracker, SeriesFile, SeriesRow};
use crate::output::snapshot::shear_rate_field;
use crate::output::{OutputError, SnapshotMeta, write_snapshot};
use crate::runner::RunObserver;

/// How `run.log` begins the line of a run that reached its end time.
pub const LOG_FINISHED: &str = "finished at t = ";
/// How `run.log` begins the line of a run that went bad, followed by the fault.
pub const LOG_WENT_BAD: &str = "the run went bad: ";
/// How `run.log` begins the line of a run stopped by a signal after its checkpoint.
pub const LOG_INTERRUPTED: &str = "interrupted; ";

/// Checkpoint value names of the recorder's own bookkeeping.
const NEXT_SNAPSHOT: &str = "output.next_snapshot_index";
const NEXT_SAMPLE: &str = "output.next_sample_index";
const SNAPSHOTS_WRITTEN: &str = "output.snapshots_written";
const SERIES_BYTES: &str = "output.series_bytes";
const PROBE_COUNT: &str = "output.probe_files";

/// Writes a run's results into its run folder as the run loop advances.
pub struct Recorder<V: Vector> {
    folder: RunFolder,
    case_name: String,
    case_checksum: u32,
    phase_names: Vec<String>,
    snapshot_interval: f64,
    sample_interval: f64,
    /// Index of the next snapshot time (time = index · snapshot interval).
    next_snapshot: u64,
    /// Index of the next sample time (time = index · sample interval).
    next_sample: u64,
    collection: Collection,
    series: SeriesFile,
    /// Measures the tracked interface wave for the series, when the case records it.
    interface: Option<InterfaceTracker>,
    probes: ProbeFiles<V>,
    checkpoints: CheckpointStore,
    checkpoint_every: Duration,
    last_checkpoint: Instant,
    /// The checkpoint this recorder wrote last.
    newest_checkpoint: Option<std::path::PathBuf>,
    log: RunLog,
    /// False until the first snapshot, sample and checkpoint of a fresh run are written.
    started: bool,
}

impl<V: Vector> Recorder<V> {
    /// A recorder for a new run of `case` (its file text `case_text`, named `case_name`) in
    /// `root`: creates the folder (see [`RunFolder::create`] for `force`), copies the case,
    /// opens the tables. Snapshot zero and the first row are written when the run starts.
    pub fn start(
        root: &Path,
        force: bool,
        case: &Case,
        case_text: &str,
        case_name: &str,
    ) -> Result<Self, OutputError> {
        let folder = RunFolder::create(root, force)?;
        folder.save_case(case_text)?;
        let phase_names: Vec<String> = case.phases.iter().map(|p| p.name.clone()).collect();
        let interface = InterfaceTracker::of(case);
        let series =
            SeriesFile::create(&folder.series(), &phase_names, V::DIM, interface.is_some())?;
        let probes = ProbeFiles::create(&folder.probes(), probes_of(case))?;
        let mut log = RunLog::open(&folder.log())?;
        log.line(&format!("run of {case_name} started"))?;
        Ok(Recorder {
            collection: Collection::new(folder.collection()),
            checkpoints: CheckpointStore::new(folder.checkpoints()),
            case_name: case_name.to_string(),
            case_checksum: checksum(case_text.as_bytes()),
            phase_names,
            snapshot_interval: case.time.snapshot_interval,
            sample_interval: sample_interval(case),
            next_snapshot: 0,
            next_sample: 0,
            series,
            interface,
            probes,
            checkpoint_every: checkpoint_every(case),
            last_checkpoint: Instant::now(),
            newest_checkpoint: None,
            log,
            started: false,
            folder,
        })
    }

    /// A recorder continuing the run in `folder` from `checkpoint`: cuts the tables and the
    /// collection back to what they held at the checkpoint, so the resumed run appends to
    /// them exactly as the uninterrupted one would have.
    pub fn resume(
        folder: RunFolder,
        case: &Case,
        case_text: &str,
        checkpoint: &Checkpoint<V>,
    ) -> Result<Self, OutputError> {
        let case_checksum = checksum(case_text.as_bytes());
        if case_checksum != checkpoint.case_checksum {
            return Err(OutputError::Folder(format!(
                "{} was changed after the checkpoint was written; restore it, or start a new \
                 run with `lamella run`",
                folder.case().display()
            )));
        }
        let missing = |name: &str| {
            OutputError::Folder(format!(
                "the checkpoint lacks the output bookkeeping `{name}`; it was not written by \
                 `lamella run`"
            ))
        };
        let count = |name: &str| checkpoint.u64_value(name).ok_or_else(|| missing(name));
        let phase_names: Vec<String> = case.phases.iter().map(|p| p.name.clone()).collect();
        let interface = InterfaceTracker::of(case);
        let series = SeriesFile::reopen(
            &folder.series(),
            count(SERIES_BYTES)?,
            phase_names.len(),
            interface.is_some(),
        )?;
        let probe_lengths = (0..count(PROBE_COUNT)?)
            .map(|k| count(&probe_bytes_name(k as usize)))
            .collect::<Result<Vec<u64>, _>>()?;
        let probes = ProbeFiles::reopen(&folder.probes(), probes_of(case), &probe_lengths)?;
        let mut collection = Collection::read(&folder.collection())?;
        let written = count(SNAPSHOTS_WRITTEN)? as usize;
        if collection.entries().len() < written {
            return Err(OutputError::invalid(
                &folder.collection(),
                "snapshot collection",
                format!(
                    "it lists {} snapshots but the checkpoint counts {written}",
                    collection.entries().len()
                ),
            ));
        }
        collection.truncate(written);
        collection.write()?;
        let mut log = RunLog::open(&folder.log())?;
        log.line(&format!(
            "resumed at t = {} s, step {}",
            log_time(checkpoint.time),
            checkpoint.step
        ))?;
        Ok(Recorder {
            collection,
            checkpoints: CheckpointStore::new(folder.checkpoints()),
            case_name: checkpoint.case_name.clone(),
            case_checksum,
            phase_names,
            snapshot_interval: case.time.snapshot_interval,
            sample_interval: sample_interval(case),
            next_snapshot: count(NEXT_SNAPSHOT)?,
            next_sample: count(NEXT_SAMPLE)?,
            series,
            interface,
            probes,
            checkpoint_every: checkpoint_every(case),
            last_checkpoint: Instant::now(),
            newest_checkpoint: None,
            log,
            started: true,
            folder,
        })
    }

    /// Where the run began: the time of its first snapshot (t = 0, or the time of the state it
    /// started from), when the folder holds one with a finite time.
    pub fn run_start(&self) -> Option<f64> {
        self.collection
            .entries()
            .first()
            .map(|e| e.time)
            .filter(|t| t.is_finite())
    }

    /// The run folder.
    pub fn folder(&self) -> &RunFolder {
        &self.folder
    }

    /// The checkpoint this recorder wrote last (after an interrupt, the one to resume from).
    pub fn newest_checkpoint(&self) -> Option<&Path> {
        self.newest_checkpoint.as_deref()
    }

    /// Appends a line to the run log.
    pub fn note(&mut self, message: &str) -> Result<(), OutputError> {
        self.log.line(message)
    }

    /// Writes a checkpoint of `sim` now (flushing the tables first so the recorded lengths
    /// are on disk); returns its path.
    pub fn checkpoint(&mut self, sim: &Simulation<V>) -> Result<std::path::PathBuf, OutputError> {
        let series_bytes = self.series.flush()?;
        let probe_bytes = self.probes.flush()?;
        let mut values = vec![
            (NEXT_SNAPSHOT.to_string(), Value::U64(self.next_snapshot)),
            (NEXT_SAMPLE.to_string(), Value::U64(self.next_sample)),
            (
                SNAPSHOTS_WRITTEN.to_string(),
                Value::U64(self.collection.entries().len() as u64),
            ),
            (SERIES_BYTES.to_string(), Value::U64(series_bytes)),
            (
                PROBE_COUNT.to_string(),
                Value::U64(probe_bytes.len() as u64),
            ),
        ];
        for (k, &bytes) in probe_bytes.iter().enumerate() {
            values.push((probe_bytes_name(k), Value::U64(bytes)));
        }
        let checkpoint = Checkpoint {
            time: sim.time(),
            step: sim.step_count(),
            case_name: self.case_name.clone(),
            case_checksum: self.case_checksum,
            particles: sim.particles().clone(),
            values,
            arrays: Vec::new(),
        };
        let path = self.checkpoints.write(&checkpoint)?;
        self.last_checkpoint = Instant::now();
        self.newest_checkpoint = Some(path.clone());
        self.log.line(&format!(
            "checkpoint {} at t = {} s, step {}",
            path.display(),
            log_time(sim.time()),
            sim.step_count()
        ))?;
        Ok(path)
    }

    fn snapshot(&mut self, sim: &Simulation<V>) -> Result<(), OutputError> {
        let name = RunFolder::snapshot_name(self.collection.entries().len());
        let meta = SnapshotMeta {
            time: sim.time(),
            step: sim.step_count(),
            case_name: self.case_name.clone(),
        };
        let config = sim.config();
        let shear_rate = shear_rate_field(sim.particles(), config.search_domain, &config.kernel)?;
        write_snapshot(
            &self.folder.snapshots().join(&name),
            sim.particles(),
            &shear_rate,
            &meta,
        )?;
        self.collection.push(sim.time(), name.clone())?;
        self.log.line(&format!(
            "snapshot {name} at t = {} s, step {}",
            log_time(sim.time()),
            sim.step_count()
        ))
    }

    fn sample(
        &mut self,
        sim: &Simulation<V>,
        dt: f64,
        dt_limit: String,
    ) -> Result<(), OutputError> {
        let config = sim.config();
        let statistics = FlowStatistics::of(
            sim.particles(),
            &config.reference_density,
            config.search_domain,
            config.kernel.support_radius(),
            self.interface.as_ref(),
        )?;
        debug_assert_eq!(statistics.kinetic_energy.len(), self.phase_names.len());
        self.series.append(&SeriesRow {
            time: sim.time(),
            step: sim.step_count(),
            dt,
            dt_limit,
            statistics,
        })?;
        self.probes.sample(
            sim.particles(),
            &config.kernel,
            config.search_domain,
            sim.time(),
            sim.step_count(),
        )
    }

    fn due(index: u64, interval: f64, time: f64) -> bool {
        interval > 0.0 && time >= index as f64 * interval
    }

    fn next_index(mut index: u64, interval: f64, time: f64) -> u64 {
        while Self::due(index, interval, time) {
            index += 1;
        }
        index
    }
}

fn probe_bytes_name(k: usize) -> String {
    format!("output.probe_bytes.{k}")
}

fn probes_of<V: Vector>(case: &Case) -> Vec<Probe<V>> {
    case.output.probes.iter().map(Probe::from_case).collect()
}

fn sample_interval(case: &Case) -> f64 {
    case.time
        .sample_interval
        .unwrap_or(case.time.snapshot_interval)
}

fn checkpoint_every(case: &Case) -> Duration {
    Duration::from_secs_f64((case.output.checkpoint_minutes * 60.0).max(0.0))
}

fn failed(err: OutputError) -> RunError {
    err.into()
}

impl<V: Vector> RunObserver<V> for Recorder<V> {
    fn on_start(&mut self, sim: &Simulation<V>) -> Result<(), RunError> {
        if !self.started {
            self.snapshot(sim).map_err(failed)?;
            self.sample(sim, 0.0, "start".into()).map_err(failed)?;
            self.next_snapshot = 1;
            self.next_sample = 1;
            self.started = true;
        }
        Ok(())
    }

    fn next_stop(&self, _sim: &Simulation<V>) -> Option<f64> {
        let snapshot = (self.snapshot_interval > 0.0)
            .then_some(self.next_snapshot as f64 * self.snapshot_interval);
        let sample =
            (self.sample_interval > 0.0).then_some(self.next_sample as f64 * self.sample_interval);
        match (snapshot, sample) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        }
    }

    fn after_step(&mut self, sim: &Simulation<V>, report: &StepReport) -> Result<(), RunError> {
        if Self::due(self.next_sample, self.sample_interval, report.time) {
            self.sample(sim, report.dt, report.limit.to_string())
                .map_err(failed)?;
            self.next_sample =
                Self::next_index(self.next_sample, self.sample_interval, report.time);
        }
        if Self::due(self.next_snapshot, self.snapshot_interval, report.time) {
            self.snapshot(sim).map_err(failed)?;
            self.next_snapshot =
                Self::next_index(self.next_snapshot, self.snapshot_interval, report.time);
        }
        if self.last_checkpoint.elapsed() >= self.checkpoint_every {
            self.checkpoint(sim).map_err(failed)?;
        }
        Ok(())
    }

    fn on_finish(&mut self, sim: &Simulation<V>) -> Result<(), RunError> {
        let last = self.collection.entries().last().map(|e| e.time);
        if last != Some(sim.time()) {
            self.snapshot(sim).map_err(failed)?;
        }
        self.checkpoint(sim).map_err(failed)?;
        self.log
            .line(&format!(
                "{LOG_FINISHED}{} s, step {}",
                log_time(sim.time()),
                sim.step_count()
            ))
            .map_err(failed)
    }

    fn on_failure(&mut self, sim: &Simulation<V>, fault: &Fault<V>) -> Result<(), RunError> {
        // The last good state, for inspection; the newest checkpoint stays the one to resume.
        self.log
            .line(&format!("{LOG_WENT_BAD}{fault}"))
            .map_err(failed)?;
        self.series.flush().map_err(failed)?;
        self.probes.flush().map_err(failed)?;
        self.snapshot(sim).map_err(failed)
    }

    fn on_interrupt(&mut self, sim: &Simulation<V>) -> Result<(), RunError> {
        self.checkpoint(sim).map_err(failed)?;
        self.log
            .line(&format!("{LOG_INTERRUPTED}resume with `lamella resume`"))
            .map_err(failed)
    }
}
/// A simulated time as `run.log` writes it (s): nine significant digits, enough to tell
/// samples apart, without float noise (the exact value is in the files).
fn log_time(t: f64) -> String {
    lamella_post::number::significant(t, 9)
}
