//! Layered channels at large viscosity ratios, shared by `tests/validation_viscous.rs` and
//! `benches/viscous.rs`: the steady two-fluid plane Poiseuille flow of Bird, Stewart &
//! Lightfoot, Transport Phenomena, 2nd ed., §2.5 (`lamella_post::reference::layered`), run from
//! rest to its steady state and measured against it.

use std::time::Instant;

use glam::DVec2;
use lamella_case::{Case, Region, ViscosityLaw, ViscosityTreatment};
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::layered::LayeredChannel;
use lamella_sph::Kind;

/// Channel height H (m).
pub const HEIGHT: f64 = 1.2e-3;
/// Viscosity of the runny layer (Pa·s); the viscous one has `ratio` times more.
pub const RUNNY_VISCOSITY: f64 = 1.0e-3;
const DENSITY: f64 = 1000.0;

/// One layered channel: rows across, viscosity ratio m ≥ 1 (viscous over runny), width ratio
/// n = viscous width / runny width, and whether the viscous layer lies below.
#[derive(Clone, Copy, Debug)]
pub struct Layers {
    /// Particle rows across the height.
    pub rows: usize,
    /// μ_viscous / μ_runny.
    pub ratio: f64,
    /// Width of the viscous layer over the width of the runny one.
    pub width_ratio: f64,
    /// True for the viscous layer at the bottom.
    pub viscous_below: bool,
}

impl Layers {
    /// Rows of the runny layer.
    pub fn runny_rows(&self) -> usize {
        (self.rows as f64 / (1.0 + self.width_ratio)).round() as usize
    }

    /// The case (from the bundled two-layer channel) and its exact steady solution. The end
    /// time is 8 time constants of the runny layer's slowest transient, w²/(π² ν) with w its
    /// width (the viscous layer, a hundred times quicker or more, acts on it as a wall):
    /// the start-up is then down to e⁻⁸ = 0.03 %.
    pub fn case(&self, treatment: ViscosityTreatment) -> (Case, LayeredChannel) {
        let mut case =
            lamella_case::load(&lamella_suite::cases_dir().join("two-layer-channel.ron"))
                .expect("bundled case loads");
        let dx = HEIGHT / self.rows as f64;
        let runny_width = self.runny_rows() as f64 * dx;
        let viscous_width = HEIGHT - runny_width;
        let viscous = self.ratio * RUNNY_VISCOSITY;
        let (lower_width, mu1, mu2) = if self.viscous_below {
            (viscous_width, viscous, RUNNY_VISCOSITY)
        } else {
            (runny_width, RUNNY_VISCOSITY, viscous)
        };
        case.particles.spacing = dx;
        // Six rows along the periodic x (a fully developed channel does not vary along x).
        case.domain.upper = vec![6.0 * dx, HEIGHT];
        case.phases[0].viscosity_law = ViscosityLaw::Newtonian { viscosity: mu1 };
        case.phases[1].viscosity_law = ViscosityLaw::Newtonian { viscosity: mu2 };
        case.regions = vec![
            Region::Layer {
                phase: case.phases[0].name.clone(),
                bottom: 0.0,
                top: lower_width,
            },
            Region::Layer {
                phase: case.phases[1].name.clone(),
                bottom: lower_width,
                top: HEIGHT,
            },
        ];
        case.output.probes.clear();
        case.viscosity_treatment = treatment;
        let force = case.body_force.as_ref().expect("body force")[0];
        let exact = LayeredChannel {
            lower_width,
            upper_width: HEIGHT - lower_width,
            lower_viscosity: mu1,
            upper_viscosity: mu2,
            force_density: DENSITY * force,
            upper_force_density: DENSITY * force,
        };
        case.scales.expected_max_speed = 1.1 * exact.peak().velocity;
        let nu = RUNNY_VISCOSITY / DENSITY;
        case.time.end = 8.0 * runny_width * runny_width / (std::f64::consts::PI.powi(2) * nu);
        case.time.snapshot_interval = case.time.end;
        let text = lamella_case::to_ron(&case);
        let case = lamella_case::parse_str(&text, "layered case").expect("valid case");
        (case, exact)
    }

    /// Runs the case to its end time and measures it.
    pub fn run(&self, treatment: ViscosityTreatment) -> Measured {
        let (case, exact) = self.case(treatment);
        let started = Instant::now();
        let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
        let mut iterations = 0u64;
        while sim.time() < case.time.end {
            let report = sim
                .step(case.time.end)
                .unwrap_or_else(|fault| panic!("{self:?}: {fault}"));
            iterations += u64::from(report.viscous_iterations);
        }
        let seconds = started.elapsed().as_secs_f64();
        let p = sim.particles();
        let (y, u): (Vec<f64>, Vec<f64>) = (0..p.len())
            .filter(|&i| p.kind[i] == Kind::Fluid)
            .map(|i| (p.position[i].y, p.velocity[i].x))
            .unzip();
        let cmp = compare_with_reference(&y, &u, 0.0, HEIGHT, self.rows, |yy| exact.velocity(yy))
            .expect("profile");
        // Flow rate of the runny layer: the row means times dx over its rows, against the
        // exact integral (Simpson's rule, exact for each parabolic piece).
        let dx = HEIGHT / self.rows as f64;
        let runny = self.runny_rows();
        let rows: Vec<usize> = if self.viscous_below {
            (self.rows - runny..self.rows).collect()
        } else {
            (0..runny).collect()
        };
        let measured_rate: f64 = rows.iter().map(|&k| cmp.sampled.mean[k] * dx).sum();
        let (a, b) = (rows[0] as f64 * dx, (rows[rows.len() - 1] + 1) as f64 * dx);
        let exact_rate = simpson(|yy| exact.velocity(yy), a, b, 2000);
        // The row next to the interface, in the runny layer.
        let next = if self.viscous_below {
            rows[0]
        } else {
            rows[rows.len() - 1]
        };
        Measured {
            relative_l2: cmp.relative_l2,
            runny_flow_rate_error: measured_rate / exact_rate - 1.0,
            interface_row_error: cmp.sampled.mean[next] / cmp.reference[next] - 1.0,
            steps: sim.step_count(),
            iterations,
            seconds,
        }
    }
}

/// What one layered run measured.
#[derive(Clone, Copy, Debug)]
pub struct Measured {
    /// Relative L2 error of the row-mean u(y) against the exact profile.
    pub relative_l2: f64,
    /// Runny-layer flow rate over the exact one, minus 1.
    pub runny_flow_rate_error: f64,
    /// Row-mean u of the runny row next to the interface over the exact u there, minus 1.
    pub interface_row_error: f64,
    /// Steps taken.
    pub steps: u64,
    /// Conjugate-gradient iterations of the implicit viscous solve, summed over the steps.
    pub iterations: u64,
    /// Wall time of the run (s).
    pub seconds: f64,
}

/// ∫_a^b f by Simpson's rule on `intervals` (even) intervals.
fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, intervals: usize) -> f64 {
    let h = (b - a) / intervals as f64;
    let mut sum = f(a) + f(b);
    for i in 1..intervals {
        sum += f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    sum * h / 3.0
}
