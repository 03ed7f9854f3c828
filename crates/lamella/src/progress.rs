//! Progress of a run on standard error: a live bar (simulated time, steps/s, ETA) when
//! standard error is a terminal, otherwise a plain log line every [`LOG_INTERVAL`]; nothing
//! with `--quiet`. The run loop of `lamella-run` reports to it through [`Progress`].

use std::io::IsTerminal;
use std::time::{Duration, Instant};

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use lamella_run::runner::{NoProgress, Progress};
use lamella_sph::StepReport;

/// Wall-clock time between plain progress lines.
pub const LOG_INTERVAL: Duration = Duration::from_secs(10);

/// Ticks of the progress bar over the whole run (the bar's resolution).
const BAR_TICKS: u64 = 100_000;

/// The progress display of a command: none with `--quiet`, otherwise a [`Console`].
pub fn for_command(quiet: bool) -> Box<dyn Progress> {
    if quiet {
        Box::new(NoProgress)
    } else {
        Box::new(Console::new())
    }
}

/// A bar on a terminal, plain lines otherwise.
pub struct Console {
    bar: Option<ProgressBar>,
    start_time: f64,
    end_time: f64,
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
            start_time: 0.0,
            end_time: 0.0,
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
}

impl Default for Console {
    fn default() -> Self {
        Self::new()
    }
}

impl Progress for Console {
    fn start(&mut self, start_time: f64, end_time: f64) {
        self.start_time = start_time;
        self.end_time = end_time;
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
