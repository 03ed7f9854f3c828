//! The calibration of `lamella estimate`: build a case, run it a few seconds on this machine
//! and extrapolate wall time, snapshot sizes and peak memory (also used by `lamella sweep
//! check` for the cost of a sweep).

use std::time::Instant;

use lamella_case::Case;
use lamella_cells::Vector;
use lamella_sph::{Kind, Limit, Simulation};

use crate::commands::Globals;
use crate::{Failure, memory};
use lamella_run::output::snapshot::{SnapshotMeta, shear_rate_field, write_snapshot};
use lamella_run::setup;

/// Steps always taken in calibration (beyond the untimed first step).
const MIN_CALIBRATION_STEPS: u64 = 5;

/// What the calibration measured and what it predicts.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    /// Fluid and wall particles.
    pub fluid: usize,
    /// Wall particles.
    pub wall: usize,
    /// Worker threads.
    pub threads: usize,
    /// Setting up the particles and the solver (s).
    pub setup_seconds: f64,
    /// Timed calibration steps.
    pub calibration_steps: u64,
    /// Wall-clock seconds per step (mean over the timed steps).
    pub seconds_per_step: f64,
    /// Mean time step (s of simulated time).
    pub mean_time_step: f64,
    /// The limit that set the last calibration step.
    pub limit: Limit,
    /// Steps to reach the end time.
    pub steps: f64,
    /// Snapshots the run writes.
    pub snapshots: f64,
    /// Wall time to write one snapshot (s).
    pub snapshot_seconds: f64,
    /// Bytes of one snapshot file.
    pub snapshot_bytes: u64,
    /// Peak heap during set-up and calibration (bytes).
    pub peak_heap_bytes: usize,
}

impl Estimate {
    /// Predicted wall time of the whole run (s).
    pub fn total_seconds(&self) -> f64 {
        self.setup_seconds
            + self.steps * self.seconds_per_step
            + self.snapshots * self.snapshot_seconds
    }

    /// The report printed for the user.
    pub fn describe(&self, path: &str, case: &Case) -> String {
        let particles = self.fluid + self.wall;
        let mut out = format!(
            "estimate for {path} on this machine ({} worker thread{})\n",
            self.threads,
            if self.threads == 1 { "" } else { "s" }
        );
        let mut line = |label: &str, value: String| {
            out.push_str(&format!("  {label:<20} {value}\n"));
        };
        line(
            "particles",
            format!("{particles} ({} fluid, {} wall)", self.fluid, self.wall),
        );
        line(
            "calibration",
            format!(
                "{} steps, {} per step ({:.3e} particle-steps/s); dt = {:.3e} s ({} limit)",
                self.calibration_steps,
                duration(self.seconds_per_step),
                particles as f64 / self.seconds_per_step,
                self.mean_time_step,
                self.limit
            ),
        );
        line(
            "steps to the end",
            format!("{:.0} (end time {} s)", self.steps.ceil(), case.time.end),
        );
        line("solver time", duration(self.steps * self.seconds_per_step));
        line(
            "snapshots",
            format!(
                "{:.0} × {} to write, {} each, {} in all",
                self.snapshots,
                duration(self.snapshot_seconds),
                bytes(self.snapshot_bytes as f64),
                bytes(self.snapshots * self.snapshot_bytes as f64)
            ),
        );
        line("set-up", duration(self.setup_seconds));
        line(
            "total wall time",
            format!("about {}", duration(self.total_seconds())),
        );
        line(
            "peak memory",
            format!(
                "{} of heap ({:.0} bytes per particle)",
                bytes(self.peak_heap_bytes as f64),
                self.peak_heap_bytes as f64 / particles.max(1) as f64
            ),
        );
        out.push_str(
            "  (assumes the calibration's time step holds; checkpoints and probes add a little)\n",
        );
        out
    }
}

/// Builds the case and runs the calibration on the current worker pool.
pub fn calibrate<V: Vector>(
    case: &Case,
    seconds: f64,
    globals: Globals,
) -> Result<Estimate, Failure> {
    let baseline = memory::current_bytes();
    memory::reset_peak();
    let started = Instant::now();
    let mut sim: Simulation<V> = setup::simulation(case)
        .map_err(|err| Failure::BadInput(format!("cannot set the case up: {err}")))?;
    let setup_seconds = started.elapsed().as_secs_f64();
    let end = case.time.end;
    let step = |sim: &mut Simulation<V>| {
        sim.step(end)
            .map_err(|fault| Failure::RunFailed(format!("the calibration run went bad: {fault}")))
    };
    if !globals.quiet {
        crate::note!(
            "calibrating on {} particles for about {seconds} s ...",
            sim.particles().len()
        );
    }
    let mut limit = step(&mut sim)?.limit;
    let (timed_from, time_from) = (Instant::now(), sim.time());
    let mut timed = 0u64;
    while sim.time() < end
        && (timed < MIN_CALIBRATION_STEPS || timed_from.elapsed().as_secs_f64() < seconds)
    {
        limit = step(&mut sim)?.limit;
        timed += 1;
    }
    let elapsed = timed_from.elapsed().as_secs_f64();
    let timed_steps = timed.max(1) as f64;
    let mean_time_step = (sim.time() - time_from) / timed_steps;
    let (snapshot_seconds, snapshot_bytes) = time_one_snapshot(&sim)?;
    let wall = sim
        .particles()
        .kind
        .iter()
        .filter(|&&k| k == Kind::Wall)
        .count();
    Ok(Estimate {
        fluid: sim.particles().len() - wall,
        wall,
        threads: rayon::current_num_threads(),
        setup_seconds,
        calibration_steps: timed,
        seconds_per_step: elapsed / timed_steps,
        mean_time_step,
        limit,
        steps: if mean_time_step > 0.0 {
            1.0 + timed as f64 + (end - sim.time()) / mean_time_step
        } else {
            1.0 + timed as f64
        },
        snapshots: (end / case.time.snapshot_interval + 1e-9).floor() + 1.0,
        snapshot_seconds,
        snapshot_bytes,
        peak_heap_bytes: memory::peak_bytes().saturating_sub(baseline),
    })
}

/// Writes the current state as a snapshot into a temporary folder: (seconds, bytes).
fn time_one_snapshot<V: Vector>(sim: &Simulation<V>) -> Result<(f64, u64), Failure> {
    let folder = tempfile::tempdir()
        .map_err(|err| Failure::RunFailed(format!("cannot make a temporary folder: {err}")))?;
    let path = folder.path().join("calibration.vtp");
    let meta = SnapshotMeta {
        time: sim.time(),
        step: sim.step_count(),
        case_name: "calibration".into(),
    };
    let started = Instant::now();
    let config = sim.config();
    shear_rate_field(sim.particles(), config.search_domain, &config.kernel)
        .and_then(|shear_rate| write_snapshot(&path, sim.particles(), &shear_rate, &meta))
        .map_err(|err| Failure::RunFailed(format!("cannot write a trial snapshot: {err}")))?;
    let seconds = started.elapsed().as_secs_f64();
    let size = std::fs::metadata(&path).map_or(0, |m| m.len());
    Ok((seconds, size))
}

/// A duration for people: ms, s, min or h.
pub fn duration(seconds: f64) -> String {
    if seconds < 1.0 {
        format!("{:.3} ms", seconds * 1e3)
    } else if seconds < 120.0 {
        format!("{seconds:.1} s")
    } else if seconds < 7200.0 {
        format!("{:.1} min", seconds / 60.0)
    } else {
        format!("{:.1} h", seconds / 3600.0)
    }
}

/// A byte count for people: kB, MB or GB (decimal).
fn bytes(count: f64) -> String {
    if count < 1e6 {
        format!("{:.1} kB", count / 1e3)
    } else if count < 1e9 {
        format!("{:.1} MB", count / 1e6)
    } else {
        format!("{:.2} GB", count / 1e9)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations_and_sizes_read_well() {
        assert_eq!(duration(0.0123), "12.300 ms");
        assert_eq!(duration(90.0), "90.0 s");
        assert_eq!(duration(600.0), "10.0 min");
        assert_eq!(duration(36_000.0), "10.0 h");
        assert_eq!(bytes(2.5e6), "2.5 MB");
    }
}
