//! The run loop: steps a simulation to its end time, reports progress to a [`Progress`],
//! checks a stop flag the caller owns, and lets an observer (snapshots, series, probes,
//! checkpoints) act after each step.

use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

use lamella_cells::Vector;
use lamella_sph::{Fault, Limit, Simulation, StepReport};

use crate::RunError;

/// Hooks the run loop calls; every method has a do-nothing default.
///
/// The simulation passed is always a good state: after a fault it is the last good one.
pub trait RunObserver<V: Vector> {
    /// Before the first step (the initial state, e.g. snapshot zero).
    fn on_start(&mut self, _sim: &Simulation<V>) -> Result<(), RunError> {
        Ok(())
    }
    /// The next simulated time the observer wants a step to end on exactly (a snapshot or
    /// sample time), if any before the end time. Asked before every step.
    fn next_stop(&self, _sim: &Simulation<V>) -> Option<f64> {
        None
    }
    /// After every successful step.
    fn after_step(&mut self, _sim: &Simulation<V>, _report: &StepReport) -> Result<(), RunError> {
        Ok(())
    }
    /// After the last step, at the end time.
    fn on_finish(&mut self, _sim: &Simulation<V>) -> Result<(), RunError> {
        Ok(())
    }
    /// A step failed; `sim` holds the last good state (e.g. write it for inspection).
    fn on_failure(&mut self, _sim: &Simulation<V>, _fault: &Fault<V>) -> Result<(), RunError> {
        Ok(())
    }
    /// The stop flag was raised; `sim` holds the state after the last completed step
    /// (e.g. write a checkpoint to resume from).
    fn on_interrupt(&mut self, _sim: &Simulation<V>) -> Result<(), RunError> {
        Ok(())
    }
}

/// An observer that does nothing.
pub struct NoObserver;

impl<V: Vector> RunObserver<V> for NoObserver {}

/// Where the run loop reports how far it got; every method has a do-nothing default. The
/// command line shows a bar or log lines; a library user may ignore it ([`NoProgress`]).
pub trait Progress {
    /// Before the first step: the run goes from `start_time` to `end_time` (s).
    fn start(&mut self, _start_time: f64, _end_time: f64) {}
    /// After every successful step; `steps` counts the steps of this call so far.
    fn step(&mut self, _report: &StepReport, _steps: u64) {}
    /// The loop ended (finished, failed or stopped); nothing more will be reported.
    fn finish(&mut self) {}
}

/// Progress that is not shown.
pub struct NoProgress;

impl Progress for NoProgress {}

/// What a finished run did.
#[derive(Clone, Debug, PartialEq)]
pub struct RunSummary {
    /// Steps taken in this call.
    pub steps: u64,
    /// Wall-clock duration (s).
    pub seconds: f64,
    /// How many stable steps each limit set: acoustic, viscous, force.
    pub limits: [u64; 3],
}

impl RunSummary {
    /// The limit that set most steps.
    pub fn dominant_limit(&self) -> Limit {
        let order = [Limit::Acoustic, Limit::Viscous, Limit::Force];
        let mut best = 0;
        for k in 1..3 {
            if self.limits[k] > self.limits[best] {
                best = k;
            }
        }
        order[best]
    }
}

/// Steps `sim` until its time reaches `end_time` (s).
///
/// Errors: [`RunError::Fault`] naming the particle, time, position and likely cause when a
/// step goes bad (the simulation keeps the last good state and the observer's `on_failure` has
/// run); [`RunError::Interrupted`] when `stop` is raised (after `on_interrupt`); any error an
/// observer hook returns.
pub fn run_to_end<V: Vector>(
    sim: &mut Simulation<V>,
    end_time: f64,
    observer: &mut dyn RunObserver<V>,
    stop: &AtomicBool,
    progress: &mut dyn Progress,
) -> Result<RunSummary, RunError> {
    let started = Instant::now();
    let start_step = sim.step_count();
    let mut limits = [0u64; 3];
    progress.start(sim.time(), end_time);
    observer.on_start(sim)?;
    while sim.time() < end_time {
        if stop.load(Ordering::Relaxed) {
            progress.finish();
            observer.on_interrupt(sim)?;
            return Err(RunError::Interrupted {
                time: sim.time(),
                step: sim.step_count(),
            });
        }
        let until = observer
            .next_stop(sim)
            .filter(|&t| t > sim.time() && t < end_time)
            .unwrap_or(end_time);
        let report = match sim.step(until) {
            Ok(report) => report,
            Err(fault) => {
                progress.finish();
                observer.on_failure(sim, &fault)?;
                return Err(RunError::Fault(fault.to_string()));
            }
        };
        if !report.clipped {
            limits[limit_index(report.limit)] += 1;
        }
        observer.after_step(sim, &report)?;
        progress.step(&report, sim.step_count() - start_step);
    }
    progress.finish();
    observer.on_finish(sim)?;
    Ok(RunSummary {
        steps: sim.step_count() - start_step,
        seconds: started.elapsed().as_secs_f64(),
        limits,
    })
}

/// Steps `sim` to `end_time` (s) with no observer, no progress display and no stop request:
/// the plain run of a test, a benchmark or a program using Lamella as a library. Errors as
/// [`run_to_end`].
pub fn run_plain<V: Vector>(
    sim: &mut Simulation<V>,
    end_time: f64,
) -> Result<RunSummary, RunError> {
    let never = AtomicBool::new(false);
    run_to_end(sim, end_time, &mut NoObserver, &never, &mut NoProgress)
}

fn limit_index(limit: Limit) -> usize {
    match limit {
        Limit::Acoustic => 0,
        Limit::Viscous => 1,
        Limit::Force => 2,
    }
}
