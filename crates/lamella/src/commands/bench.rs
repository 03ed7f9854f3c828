//! `lamella bench`: solver throughput of the standard 2D layered channel at several sizes and
//! thread counts, as a table and one JSON line.

use std::num::NonZeroUsize;

use glam::DVec2;
use serde::Serialize;

use crate::commands::Globals;
use crate::commands::shared::parse_list;
use crate::{Failure, memory};
use lamella_run::benchmark::{STANDARD_TEMPLATE, Timing, standard_case, time_steps};

/// Particle-steps each timed repeat aims at when `--steps` is not given.
const PARTICLE_STEPS_PER_REPEAT: f64 = 2.0e6;

/// Options of `lamella bench`.
#[derive(Debug, clap::Args)]
#[command(
    long_about = "Measures how many particle-steps per second this machine does on the \
    standard case: the bundled two-layer channel (2D, Wendland C2, h = 1.3 dx, viscosity \
    ratio 5, harmonic pair viscosity, density diffusion, shifting, three wall rows top and \
    bottom), resized to each particle count. Each size and thread count is built afresh, \
    stepped twice to warm up, then timed over --repeats runs of --steps steps; the table \
    quotes the median. Use the global --threads option with a list (e.g. --threads 1,2) to \
    choose the thread counts [default: 1 and all cores].",
    after_help = "Thread counts: the global --threads option takes a list here (e.g. \
    --threads 1,2) and each count is measured [default: 1 and all cores].\n\nPeak memory is the most heap the run held at once (setup included), counted \
    by Lamella's allocator, divided by the particle count. Exit codes: 0 done, 1 a benchmark \
    run failed, 2 bad options."
)]
pub struct Args {
    /// Fluid particle counts, separated by commas (e.g. 1e4,1e5,1e6).
    #[arg(long, value_name = "N,N,...", default_value = "1e4,1e5,1e6", value_parser = super::values::bench_particles)]
    pub particles: String,
    /// Timed steps per repeat [default: about 2 million particle-steps, 5 to 200 steps].
    #[arg(long, value_name = "STEPS")]
    pub steps: Option<NonZeroUsize>,
    /// Timed repeats per size and thread count; the median is reported.
    #[arg(long, value_name = "R", default_value_t = NonZeroUsize::new(5).unwrap())]
    pub repeats: NonZeroUsize,
    /// Thread counts, filled in from the global `--threads` list.
    #[arg(skip)]
    pub thread_counts: Vec<NonZeroUsize>,
}

/// One row of the results.
#[derive(Debug, Serialize)]
struct Row {
    particles: usize,
    threads: usize,
    steps: usize,
    repeats: usize,
    seconds_per_step: f64,
    particle_steps_per_second: f64,
    particle_steps_per_second_per_thread: f64,
    speed_up: Option<f64>,
    peak_bytes_per_particle: f64,
}

/// The JSON line: the machine and every row.
#[derive(Debug, Serialize)]
struct Report<'a> {
    benchmark: &'a str,
    lamella: &'a str,
    machine: String,
    cores: usize,
    rows: &'a [Row],
}

/// Runs `lamella bench`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let sizes: Vec<f64> = parse_list(&args.particles, "--particles").map_err(Failure::BadInput)?;
    if sizes.is_empty() || sizes.iter().any(|n| !(100.0..=1.0e8).contains(n)) {
        return Err(Failure::BadInput(
            "--particles needs counts between 100 and 1e8, separated by commas, e.g. 1e4,1e5"
                .into(),
        ));
    }
    let cores = std::thread::available_parallelism().map_or(1, NonZeroUsize::get);
    let mut thread_counts: Vec<usize> = if args.thread_counts.is_empty() {
        vec![1, cores]
    } else {
        args.thread_counts.iter().map(|t| t.get()).collect()
    };
    thread_counts.dedup();
    let mut rows = Vec::new();
    for &size in &sizes {
        let case = standard_case(size.round() as usize)?;
        let steps = args.steps.map_or_else(
            || (PARTICLE_STEPS_PER_REPEAT / size).round().clamp(5.0, 200.0) as usize,
            NonZeroUsize::get,
        );
        let mut single_thread: Option<f64> = None;
        for &threads in &thread_counts {
            if !globals.quiet {
                crate::note!(
                    "timing {size:.0e} particles on {threads} thread(s): {} × {steps} steps",
                    args.repeats
                );
            }
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .map_err(|err| {
                    Failure::BadInput(format!("cannot start {threads} worker threads: {err}"))
                })?;
            let timing: Timing = pool.install(|| {
                time_steps::<DVec2>(&case, steps, args.repeats.get(), &memory::Counter)
            })?;
            let seconds = timing.median_seconds_per_step();
            if threads == 1 {
                single_thread = Some(seconds);
            }
            rows.push(Row {
                particles: timing.particles,
                threads,
                steps,
                repeats: args.repeats.get(),
                seconds_per_step: seconds,
                particle_steps_per_second: timing.particle_steps_per_second(),
                particle_steps_per_second_per_thread: timing.particle_steps_per_second()
                    / threads as f64,
                speed_up: single_thread.map(|one| one / seconds),
                peak_bytes_per_particle: timing.peak_bytes_per_particle(),
            });
        }
    }
    if !globals.quiet {
        let machine = machine_name();
        crate::report!("{}", table(&rows, &machine, cores))?;
        let report = Report {
            benchmark: STANDARD_TEMPLATE,
            lamella: env!("CARGO_PKG_VERSION"),
            machine,
            cores,
            rows: &rows,
        };
        let json = serde_json::to_string(&report)
            .map_err(|err| Failure::RunFailed(format!("cannot write the JSON line: {err}")))?;
        crate::report!("{json}")?;
    }
    Ok(())
}

/// The results as an aligned text table with a heading naming the case and the machine.
fn table(rows: &[Row], machine: &str, cores: usize) -> String {
    let mut out = format!(
        "standard case: {STANDARD_TEMPLATE} (2D, Wendland C2, h = 1.3 dx, all physics on)\n\
         machine: {machine}, {cores} cores; Lamella {}\n\n\
         {:>10} {:>7} {:>6} {:>12} {:>16} {:>16} {:>8} {:>10}\n",
        env!("CARGO_PKG_VERSION"),
        "particles",
        "threads",
        "steps",
        "s/step",
        "particle-steps/s",
        "per thread",
        "speed-up",
        "B/particle"
    );
    for row in rows {
        let speed_up = row
            .speed_up
            .map_or_else(|| "-".to_string(), |s| format!("{s:.2}"));
        out.push_str(&format!(
            "{:>10} {:>7} {:>6} {:>12.4e} {:>16.3e} {:>16.3e} {:>8} {:>10.0}\n",
            row.particles,
            row.threads,
            row.steps,
            row.seconds_per_step,
            row.particle_steps_per_second,
            row.particle_steps_per_second_per_thread,
            speed_up,
            row.peak_bytes_per_particle
        ));
    }
    out
}

/// The processor model from `/proc/cpuinfo`, or the architecture where that is not readable.
pub(crate) fn machine_name() -> String {
    std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|text| {
            text.lines()
                .find(|line| line.starts_with("model name"))
                .and_then(|line| line.split(':').nth(1))
                .map(|name| name.trim().to_string())
        })
        .unwrap_or_else(|| std::env::consts::ARCH.to_string())
}
