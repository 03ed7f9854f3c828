//! Progress of a run on standard error: a live bar (simulated time, steps/s, ETA) when
//! standard error is a terminal, otherwise a plain log line every [`LOG_INTERVAL`]; nothing
//! with `--quiet`. The run loop of `lamella-run` reports to it through [`Progress`].

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use lamella_post::number::significant;
use lamella_run::runner::{NoProgress, Progress};
use lamella_sph::StepReport;

/// Wall-clock time between plain progress lines.
pub const LOG_INTERVAL: Duration = Duration::from_secs(10);

/// Ticks of the progress bar over the whole run (the bar's resolution).
const BAR_TICKS: u64 = 100_000;

/// The progress display of a command: none with `--quiet`, otherwise a [`Console`] whose
/// bar spans the whole run from `run_start` (s; a resumed run passes the time its run folder
/// starts at, so the bar continues where the run was instead of restarting at 0 %).
pub fn for_command(quiet: bool, run_start: Option<f64>) -> Box<dyn Progress> {
    if quiet {
        Box::new(NoProgress)
    } else {
        Box::new(Console::new().spanning_from(run_start))
    }
}

/// Fraction of the run from `start` to `end` done at `time`, in [0, 1]; 1 for an empty span.
pub fn fraction_done(time: f64, start: f64, end: f64) -> f64 {
    let span = end - start;
    if span > 0.0 {
        ((time - start) / span).clamp(0.0, 1.0)
    } else {
        1.0
    }
}

/// Position of the bar (of [`BAR_TICKS`]) at `fraction` of the run.
pub fn bar_position(fraction: f64) -> u64 {
    (fraction.clamp(0.0, 1.0) * BAR_TICKS as f64) as u64
}

/// Estimated seconds left: this call took `elapsed` s to go from `first` to `now` (fractions
/// of the whole run), so the rest, 1 − `now`, takes proportionally long; `None` before any
/// progress in this call.
pub fn eta_seconds(elapsed: f64, first: f64, now: f64) -> Option<f64> {
    let done = now - first;
    (done > 0.0).then(|| elapsed * (1.0 - now) / done)
}

/// A bar on a terminal, plain lines otherwise.
pub struct Console {
    bar: Option<ProgressBar>,
    /// Where the whole run starts (s), when it started before this call (resume).
    run_start: Option<f64>,
    /// Start of the bar's span (s): the run's start.
    start_time: f64,
    end_time: f64,
    /// Fraction of the run done when this call started.
    first_fraction: f64,
    started: Instant,
    last_shown: Instant,
}

impl Console {
    /// A bar when standard error is a terminal, plain lines otherwise.
    pub fn new() -> Self {
        let bar = std::io::stderr().is_terminal().then(|| {
            let bar = ProgressBar::with_draw_target(
                Some(BAR_TICKS),
                ProgressDrawTarget::stderr_with_hz(4),
            );
            bar.set_style(
                ProgressStyle::with_template("{bar:30.cyan/blue} {percent:>3}% {msg} ETA {eta}")
                    .unwrap_or_else(|_| ProgressStyle::default_bar())
                    .progress_chars("=> "),
            );
            bar
        });
        let now = Instant::now();
        Console {
            bar,
            run_start: None,
            start_time: 0.0,
            end_time: 0.0,
            first_fraction: 0.0,
            started: now,
            last_shown: now,
        }
    }

    /// The bar spans the run from `run_start` (s) rather than from where this call starts.
    pub fn spanning_from(mut self, run_start: Option<f64>) -> Self {
        self.run_start = run_start;
        self
    }

    fn fraction(&self, time: f64) -> f64 {
        fraction_done(time, self.start_time, self.end_time)
    }
}

impl Default for Console {
    fn default() -> Self {
        Self::new()
    }
}

impl Progress for Console {
    fn start(&mut self, start_time: f64, end_time: f64) {
        self.start_time = self.run_start.map_or(start_time, |s| s.min(start_time));
        self.end_time = end_time;
        self.first_fraction = self.fraction(start_time);
        if let Some(bar) = &self.bar {
            // Continue where the run was; the ETA then counts only this call's progress.
            bar.set_position(bar_position(self.first_fraction));
            bar.reset_eta();
        }
        let now = Instant::now();
        self.started = now;
        self.last_shown = now;
    }

    fn step(&mut self, report: &StepReport, steps: u64) {
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
            "t = {} s of {} s, step {}, {:.0} steps/s, dt {} s ({})",
            significant(report.time, 4),
            significant(self.end_time, 4),
            report.step,
            rate,
            significant(report.dt, 3),
            report.limit
        );
        if let Some(bar) = &self.bar {
            bar.set_position(bar_position(fraction));
            bar.set_message(status);
        } else {
            let eta = eta_seconds(elapsed, self.first_fraction, fraction)
                .map_or_else(|| "unknown".to_string(), |s| format!("{s:.0} s"));
            crate::note!("{:5.1} % {status}, ETA {eta}", 100.0 * fraction);
        }
    }

    fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_resumed_run_continues_the_bar_where_it_was() {
        // A run from 0 to 2 s resumed at 1.5 s: the bar starts at 75 %, not 0 %, and reaches
        // 100 % at the end.
        let mut console = Console::new().spanning_from(Some(0.0));
        console.start(1.5, 2.0);
        assert_eq!(console.first_fraction, 0.75);
        assert_eq!(bar_position(console.fraction(1.5)), 75_000);
        assert_eq!(bar_position(console.fraction(1.75)), 87_500);
        assert_eq!(bar_position(console.fraction(2.0)), BAR_TICKS);
        // Without the run's start (a fresh run) the span starts where the call starts.
        let mut fresh = Console::new().spanning_from(None);
        fresh.start(1.5, 2.0);
        assert_eq!(bar_position(fresh.fraction(1.5)), 0);
        assert_eq!(fresh.fraction(1.75), 0.5);
        // A run start after the checkpoint (a damaged run folder) cannot push the bar back.
        let mut odd = Console::new().spanning_from(Some(1.8));
        odd.start(1.5, 2.0);
        assert_eq!(odd.fraction(1.5), 0.0);
    }

    #[test]
    fn the_eta_counts_only_this_calls_progress() {
        // Resumed at 75 %, 10 s of wall time to reach 87.5 %: the remaining 12.5 % takes 10 s
        // more (not 10 s × 0.125/0.875, as if the whole 87.5 % had taken 10 s).
        assert_eq!(eta_seconds(10.0, 0.75, 0.875), Some(10.0));
        assert_eq!(eta_seconds(10.0, 0.75, 0.75), None);
        assert_eq!(eta_seconds(4.0, 0.0, 0.5), Some(4.0));
        assert_eq!(fraction_done(3.0, 0.0, 2.0), 1.0);
        assert_eq!(fraction_done(1.0, 2.0, 2.0), 1.0);
        assert_eq!(bar_position(1.5), BAR_TICKS);
    }
}
