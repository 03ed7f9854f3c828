//! Throughput and memory of the solver: the standard benchmark case and timed steps.
//!
//! `lamella bench` and `lamella estimate` measure through this module, and the criterion
//! benches in `benches/` build their case with [`standard_case`], so every figure Lamella
//! reports about its own speed comes from the same code.

use std::time::Instant;

use lamella_case::Case;
use lamella_cells::Vector;
use lamella_sph::Simulation;

use crate::{RunError, setup};

/// The bundled template the standard benchmark case is made from.
pub const STANDARD_TEMPLATE: &str = "two-layer-channel";

/// The standard benchmark case with about `fluid_particles` fluid particles: the bundled 2D
/// two-layer channel (Wendland C2, h = 1.3 dx, two phases of viscosity ratio 5, periodic in x,
/// three wall rows top and bottom, density diffusion, viscosity, shifting), with the spacing
/// chosen so that the square channel holds the requested number of fluid particles.
pub fn standard_case(fluid_particles: usize) -> Result<Case, RunError> {
    let template = lamella_case::templates::template(STANDARD_TEMPLATE)
        .expect("the standard benchmark template is bundled");
    let mut case = lamella_case::parse_str(template.text, STANDARD_TEMPLATE)
        .expect("the bundled template is a valid case");
    let height = case.extent(1);
    let length = case.extent(0);
    let ideal_rows = (fluid_particles as f64 * height / length)
        .sqrt()
        .round()
        .max(4.0) as usize;
    // Layer boundaries must fall between lattice rows: take the nearest row count that the
    // case's validation accepts.
    let mut rejected = Vec::new();
    for offset in 0..ideal_rows {
        for rows in [ideal_rows + offset, ideal_rows.saturating_sub(offset)] {
            let spacing = height / rows as f64;
            let columns = (length / spacing).round().max(4.0);
            case.domain.upper[0] = case.domain.lower[0] + columns * spacing;
            case.particles.spacing = spacing;
            case.output.probes.clear();
            let problems = case.validate();
            if problems.is_empty() {
                return Ok(case);
            }
            if rejected.is_empty() {
                rejected = problems.iter().map(ToString::to_string).collect();
            }
        }
    }
    Err(RunError::Case(format!(
        "no standard case with about {fluid_particles} particles: {}",
        rejected.join("; ")
    )))
}

/// Timings of one case at one thread count.
#[derive(Clone, Debug, PartialEq)]
pub struct Timing {
    /// Particles (fluid and wall).
    pub particles: usize,
    /// Worker threads.
    pub threads: usize,
    /// Steps per repeat.
    pub steps: usize,
    /// Wall-clock seconds per step of each repeat.
    pub seconds_per_step: Vec<f64>,
    /// Simulated time advanced per step, averaged over the timed steps (s).
    pub mean_time_step: f64,
    /// Largest heap in use while the simulation was built and stepped, minus the heap in use
    /// before (bytes), from the [`HeapMeter`] given to [`time_steps`].
    pub peak_heap_bytes: usize,
}

impl Timing {
    /// Median seconds per step over the repeats.
    pub fn median_seconds_per_step(&self) -> f64 {
        median(&self.seconds_per_step)
    }

    /// Particle-steps per second at the median step time.
    pub fn particle_steps_per_second(&self) -> f64 {
        self.particles as f64 / self.median_seconds_per_step()
    }

    /// Peak heap bytes per particle.
    pub fn peak_bytes_per_particle(&self) -> f64 {
        self.peak_heap_bytes as f64 / self.particles as f64
    }
}

/// Median of a non-empty list.
pub fn median(values: &[f64]) -> f64 {
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let mid = sorted.len() / 2;
    if sorted.len() % 2 == 1 {
        sorted[mid]
    } else {
        0.5 * (sorted[mid - 1] + sorted[mid])
    }
}

/// Steps excluded from timing at the start (first allocations, caches, page faults).
pub const WARM_UP_STEPS: usize = 2;

/// The heap counters of the process, from a counting global allocator the program installs
/// (a library cannot choose the allocator; the `lamella` binary installs one).
pub trait HeapMeter {
    /// Heap bytes in use now.
    fn current_bytes(&self) -> usize;
    /// The most heap bytes in use at once since the last [`HeapMeter::reset_peak`].
    fn peak_bytes(&self) -> usize;
    /// Starts a new peak measurement from the heap in use now.
    fn reset_peak(&self);
}

/// Builds `case` and times `repeats` runs of `steps` steps after [`WARM_UP_STEPS`], on the
/// current rayon pool, with the peak heap from `heap`. The steps never end on a time (the
/// case's end time does not apply).
pub fn time_steps<V: Vector>(
    case: &Case,
    steps: usize,
    repeats: usize,
    heap: &dyn HeapMeter,
) -> Result<Timing, RunError> {
    let baseline = heap.current_bytes();
    heap.reset_peak();
    let mut sim: Simulation<V> = setup::simulation(case)?;
    let step = |sim: &mut Simulation<V>| {
        sim.step(f64::INFINITY)
            .map(|_| ())
            .map_err(|fault| RunError::Fault(fault.to_string()))
    };
    for _ in 0..WARM_UP_STEPS {
        step(&mut sim)?;
    }
    let mut seconds_per_step = Vec::with_capacity(repeats);
    let timed_start = sim.time();
    for _ in 0..repeats.max(1) {
        let started = Instant::now();
        for _ in 0..steps.max(1) {
            step(&mut sim)?;
        }
        seconds_per_step.push(started.elapsed().as_secs_f64() / steps.max(1) as f64);
    }
    let timed_steps = (steps.max(1) * repeats.max(1)) as f64;
    Ok(Timing {
        particles: sim.particles().len(),
        threads: rayon::current_num_threads(),
        steps: steps.max(1),
        seconds_per_step,
        mean_time_step: (sim.time() - timed_start) / timed_steps,
        peak_heap_bytes: heap.peak_bytes().saturating_sub(baseline),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn standard_case_has_about_the_requested_particle_count() {
        for target in [2_000usize, 20_000] {
            let case = standard_case(target).unwrap();
            let fluid: usize = case.lattice_counts().iter().product();
            let relative = (fluid as f64 / target as f64 - 1.0).abs();
            assert!(relative < 0.05, "{fluid} fluid particles for {target}");
            assert_eq!(case.particles.smoothing_ratio, 1.3);
        }
    }

    #[test]
    fn median_of_odd_and_even_lists() {
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), 2.5);
    }
}
