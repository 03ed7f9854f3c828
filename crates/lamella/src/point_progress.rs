//! Progress over a known number of points (the wavenumbers of a stability scan, the (m, n)
//! pairs of a map, the members of a sweep) on standard error, shown like a run's progress (`progress.rs`): a live bar
//! when standard error is a terminal, otherwise a plain line every
//! [`crate::progress::LOG_INTERVAL`]; nothing with `--quiet`.

use std::io::IsTerminal;
use std::time::Instant;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// Counts solved points out of a total and shows how far it is.
pub struct PointProgress {
    what: &'static str,
    /// What happened to a counted point ("solved", "done").
    verb: &'static str,
    total: usize,
    display: Display,
    started: Instant,
    last_shown: Instant,
}

enum Display {
    Silent,
    Bar(ProgressBar),
    Lines,
}

impl PointProgress {
    /// Progress over `total` points, each a `what` (e.g. "wavenumber"), counted as solved;
    /// silent when `quiet`.
    pub fn new(what: &'static str, total: usize, quiet: bool) -> Self {
        Self::counting(what, "solved", total, quiet)
    }

    /// Progress over `total` things, each a `what` (e.g. "member"), counted as `verb` (e.g.
    /// "done"); silent when `quiet`.
    pub fn counting(what: &'static str, verb: &'static str, total: usize, quiet: bool) -> Self {
        let display = if quiet {
            Display::Silent
        } else if std::io::stderr().is_terminal() {
            let bar = ProgressBar::with_draw_target(
                Some(total as u64),
                ProgressDrawTarget::stderr_with_hz(4),
            );
            bar.set_style(
                ProgressStyle::with_template(
                    "{bar:30.cyan/blue} {pos}/{len} {msg} ({elapsed}, ETA {eta})",
                )
                .unwrap_or_else(|_| ProgressStyle::default_bar())
                .progress_chars("=> "),
            );
            bar.set_message(format!("{what}s {verb}"));
            Display::Bar(bar)
        } else {
            Display::Lines
        };
        let now = Instant::now();
        PointProgress {
            what,
            verb,
            total,
            display,
            started: now,
            last_shown: now,
        }
    }

    /// `done` points of the total are solved.
    pub fn set(&mut self, done: usize) {
        match &self.display {
            Display::Silent => {}
            Display::Bar(bar) => bar.set_position(done as u64),
            Display::Lines => {
                let now = Instant::now();
                if now.duration_since(self.last_shown) < crate::progress::LOG_INTERVAL {
                    return;
                }
                self.last_shown = now;
                let elapsed = now.duration_since(self.started).as_secs_f64();
                let fraction = done.min(self.total) as f64 / self.total.max(1) as f64;
                let eta = crate::progress::eta_seconds(elapsed, 0.0, fraction)
                    .map_or_else(|| "unknown".to_string(), |s| format!("{s:.0} s"));
                crate::note!(
                    "{done} of {} {}s {}, ETA {eta}",
                    self.total,
                    self.what,
                    self.verb
                );
            }
        }
    }

    /// Removes the bar (nothing stays on the terminal).
    pub fn finish(self) {
        if let Display::Bar(bar) = self.display {
            bar.finish_and_clear();
        }
    }
}
