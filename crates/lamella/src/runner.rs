//! The run loop: steps a simulation to its end time, reports progress, checks for a stop
//! request, and lets an observer (snapshots, series, probes, checkpoints) act after each step.

use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use lamella_cells::Vector;
use lamella_sph::{Fault, Limit, Simulation, StepReport};

use crate::Failure;

/// Hooks the run loop calls; every method has a do-nothing default.
///
/// The simulation passed is always a good state: after a fault it is the last good one.
pub trait RunObserver<V: Vector> {
    /// Before the first step (the initial state, e.g. snapshot zero).
    fn on_start(&mut self, _sim: &Simulation<V>) -> Result<(), Failure> {
        Ok(())
    }
    /// The next simulated time the observer wants a step to end on exactly (a snapshot or
    /// sample time), if any before the end time. Asked before every step.
    fn next_stop(&self, _sim: &Simulation<V>) -> Option<f64> {
        None
    }
    /// After every successful step.
    fn after_step(&mut self, _sim: &Simulation<V>, _report: &StepReport) -> Result<(), Failure> {
        Ok(())
    }
    /// After the last step, at the end time.
    fn on_finish(&mut self, _sim: &Simulation<V>) -> Result<(), Failure> {
        Ok(())
    }
    /// A step failed; `sim` holds the last good state (e.g. write it for inspection).
    fn on_failure(&mut self, _sim: &Simulation<V>, _fault: &Fault<V>) -> Result<(), Failure> {
        Ok(())
    }
    /// The stop flag was raised; `sim` holds the state after the last completed step
    /// (e.g. write a checkpoint to resume from).
    fn on_interrupt(&mut self, _sim: &Simulation<V>) -> Result<(), Failure> {
        Ok(())
    }
}

/// An observer that does nothing.
pub struct NoObserver;

impl<V: Vector> RunObserver<V> for NoObserver {}

/// How progress is shown on stderr.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ProgressMode {
    /// A live bar (simulated time, steps/s, ETA) when stderr is a terminal, otherwise a plain
    /// log line every [`LOG_INTERVAL`].
    Auto,
    /// Plain log lines every [`LOG_INTERVAL`], whatever stderr is.
    Lines,
    /// Nothing (errors are still reported by the caller).
    Silent,
}

impl ProgressMode {
    /// The mode for the command line: silent with `--quiet`, otherwise automatic.
    pub fn from_quiet(quiet: bool) -> Self {
        if quiet {
            ProgressMode::Silent
        } else {
            ProgressMode::Auto
        }
    }
}

/// Wall-clock time between plain progress lines.
pub const LOG_INTERVAL: Duration = Duration::from_secs(10);

/// Ticks of the progress bar over the whole run (the bar's resolution).
const BAR_TICKS: u64 = 100_000;

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
/// Errors: [`Failure::RunFailed`] naming the particle, time, position and likely cause when a
/// step goes bad (the simulation keeps the last good state and the observer's `on_failure` has
/// run); [`Failure::Interrupted`] when `stop` is raised (after `on_interrupt`); any error an
/// observer hook returns.
pub fn run_to_end<V: Vector>(
    sim: &mut Simulation<V>,
    end_time: f64,
    observer: &mut dyn RunObserver<V>,
    stop: &AtomicBool,
    mode: ProgressMode,
) -> Result<RunSummary, Failure> {
    let started = Instant::now();
    let start_step = sim.step_count();
    let mut limits = [0u64; 3];
    let mut progress = Progress::new(mode, sim.time(), end_time);
    observer.on_start(sim)?;
    while sim.time() < end_time {
        if stop.load(Ordering::Relaxed) {
            progress.finish();
            observer.on_interrupt(sim)?;
            return Err(Failure::Interrupted(format!(
                "stopped at t = {:.6e} s (step {}) on request",
                sim.time(),
                sim.step_count()
            )));
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
                return Err(Failure::RunFailed(format!("the run went bad: {fault}")));
            }
        };
        if !report.clipped {
            limits[limit_index(report.limit)] += 1;
        }
        observer.after_step(sim, &report)?;
        progress.update(&report, sim.step_count() - start_step);
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
pub fn run_plain<V: Vector>(sim: &mut Simulation<V>, end_time: f64) -> Result<RunSummary, Failure> {
    let never = AtomicBool::new(false);
    run_to_end(sim, end_time, &mut NoObserver, &never, ProgressMode::Silent)
}

fn limit_index(limit: Limit) -> usize {
    match limit {
        Limit::Acoustic => 0,
        Limit::Viscous => 1,
        Limit::Force => 2,
    }
}

/// Progress display: a bar, plain lines, or nothing.
struct Progress {
    bar: Option<ProgressBar>,
    lines: bool,
    start_time: f64,
    end_time: f64,
    started: Instant,
    last_shown: Instant,
}

impl Progress {
    fn new(mode: ProgressMode, start_time: f64, end_time: f64) -> Self {
        let terminal = std::io::stderr().is_terminal();
        let (bar, lines) = match mode {
            ProgressMode::Silent => (None, false),
            ProgressMode::Lines => (None, true),
            ProgressMode::Auto if terminal => {
                let bar = ProgressBar::with_draw_target(
                    Some(BAR_TICKS),
                    ProgressDrawTarget::stderr_with_hz(4),
                );
                bar.set_style(
                    ProgressStyle::with_template(
                        "{bar:30.cyan/blue} {percent:>3}% {msg} ETA {eta}",
                    )
                    .unwrap_or_else(|_| ProgressStyle::default_bar())
                    .progress_chars("=> "),
                );
                (Some(bar), false)
            }
            ProgressMode::Auto => (None, true),
        };
        let now = Instant::now();
        Progress {
            bar,
            lines,
            start_time,
            end_time,
            started: now,
            last_shown: now,
        }
    }

    fn fraction(&self, time: f64) -> f64 {
        let span = self.end_time - self.start_time;
        if span > 0.0 {
            ((time - self.start_time) / span).clamp(0.0, 1.0)
        } else {
            1.0
        }
    }

    fn update(&mut self, report: &StepReport, steps: u64) {
        if self.bar.is_none() && !self.lines {
            return;
        }
        let now = Instant::now();
        let interval = if self.bar.is_some() {
            Duration::from_millis(200)
        } else {
            LOG_INTERVAL
        };
        if now.duration_since(self.last_shown) < interval {
            return;
        }
        self.last_shown = now;
        let elapsed = now.duration_since(self.started).as_secs_f64();
        let rate = steps as f64 / elapsed.max(1e-9);
        let fraction = self.fraction(report.time);
        let status = format!(
            "t = {:.4e} s of {:.4e} s, step {}, {:.0} steps/s, dt {:.3e} s ({})",
            report.time, self.end_time, report.step, rate, report.dt, report.limit
        );
        if let Some(bar) = &self.bar {
            bar.set_position((fraction * BAR_TICKS as f64) as u64);
            bar.set_message(status);
        } else {
            let eta = if fraction > 0.0 {
                format!("{:.0} s", elapsed * (1.0 - fraction) / fraction)
            } else {
                "unknown".to_string()
            };
            crate::note!("{:5.1} % {status}, ETA {eta}", 100.0 * fraction);
        }
    }

    fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}
