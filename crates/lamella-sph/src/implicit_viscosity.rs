//! Implicit (backward-Euler) viscosity: the Morris viscous term solved for the new velocities
//! with a matrix-free, Jacobi-preconditioned conjugate-gradient method, so that the time step is
//! no longer bound by the viscous limit C_ν h²/ν_max.
//!
//! # Method
//! The viscous force of [`crate::forces::particle_rates`] (Morris, Fox & Zhu 1997, J. Comput.
//! Phys. 136, eq. 8) on fluid particle a is linear in the velocities,
//! F_a = Σ_b K_ab (ṽ_b − v_a), K_ab = −2 c V_a V_b μ_ab F(r) r²/(r² + 0.01 h²) ≥ 0,
//! with c the viscous normalisation, F(r) = ∇W/r (negative) and μ_ab the pair mean. K_ab is
//! symmetric in a and b for both pair means, so the fluid–fluid part is a weighted graph
//! Laplacian. Backward Euler for that force,
//! m_a v'_a + dt Σ_{b fluid} K_ab (v'_a − v'_b) + dt Σ_{w wall} K_aw v'_a
//!   = m_a v*_a + dt Σ_{w wall} K_aw ṽ_w,
//! with v* the velocity after every other force, is the system A v' = b with A = M + dt L
//! symmetric positive definite (M the masses, L the Laplacian plus the positive wall diagonal).
//! This is the implicit SPH viscosity of Peer, Ihmsen, Cornelis & Teschner 2015 (ACM Trans.
//! Graph. 34, "An implicit viscosity formulation for SPH fluids") and Weiler, Koschier, Brand &
//! Bender 2018 (Comput. Graph. Forum 37, "A physically consistent implicit viscosity solver for
//! SPH fluids"), who also solve with matrix-free conjugate gradients; here the operator is the
//! Morris term the explicit scheme uses, so both schemes share their steady states exactly.
//! The wall velocities ṽ_w (Adami, Hu & Adams 2012 extrapolation) are taken from the start of
//! the step (lagged), which keeps A symmetric; the wall's own share K_aw v'_a is implicit.
//! Backward Euler damps every mode (|1/(1 + dt λ/m)| < 1), so any dt is stable for this term.
//!
//! Each component of the velocity is an independent system with the same matrix; the solver
//! treats them together (the block system is SPD too) with inner products over all components.
//!
//! # Determinism
//! The operator is a parallel map of fixed-order neighbour sums. Inner products sum fixed
//! chunks of [`CHUNK`] particles, each in array order, and then the chunk sums in order: the
//! same bytes on any number of threads.

use lamella_cells::Vector;
use rayon::prelude::*;

use crate::forces::PairViscosity;
use crate::kernel::Kernel;
use crate::neighbours::Neighbourhood;
use crate::particles::{Kind, Particles};
use crate::walls::InteractionState;

/// Particles per chunk of a deterministic inner product.
pub const CHUNK: usize = 4096;

/// Settings of the implicit viscous solve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ImplicitSettings {
    /// The solve stops when ‖b − A v‖₂ ≤ tolerance · ‖b‖₂ (dimensionless).
    pub tolerance: f64,
    /// Most conjugate-gradient iterations per step; a solve that needs more is a fault.
    pub max_iterations: u32,
}

/// How the viscous term is advanced in time.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ViscosityTreatment {
    /// Explicitly with every other force; the step obeys the viscous limit C_ν h²/ν_max.
    Explicit,
    /// By backward Euler after every other force (see the module docs); no viscous limit.
    Implicit(ImplicitSettings),
}

/// What one implicit solve did.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct SolveReport {
    /// Conjugate-gradient iterations taken.
    pub iterations: u32,
    /// ‖b − A v‖₂ / ‖b‖₂ at the end (0 when b = 0).
    pub relative_residual: f64,
    /// True when the tolerance was met.
    pub converged: bool,
}

/// The viscous operator A = M + dt L of one step (see the module docs), matrix-free.
pub struct ViscousOperator<'a, V: Vector, N> {
    /// Smoothing kernel.
    pub kernel: Kernel,
    /// Pair viscosity rule.
    pub pair_viscosity: PairViscosity,
    /// Factor on the Morris term ([`crate::forces::lattice_viscous_normalisation`]).
    pub normalisation: f64,
    /// Time step (s).
    pub dt: f64,
    /// The particles (positions, masses, viscosities, kinds).
    pub particles: &'a Particles<V>,
    /// Their interaction states (volumes; the wall velocities ṽ_w).
    pub seen: &'a [InteractionState<V>],
    /// Neighbour visitor.
    pub neighbours: &'a N,
}

impl<V: Vector, N: Neighbourhood<V>> ViscousOperator<'_, V, N> {
    /// Visits every neighbour b of fluid particle a with K_ab ≥ 0 and whether b is fluid.
    #[inline(always)]
    fn for_each_coefficient(&self, a: usize, mut visit: impl FnMut(usize, f64, bool)) {
        let p = self.particles;
        let h = self.kernel.smoothing_length();
        let eta2 = 0.01 * h * h;
        let scale = -2.0 * self.normalisation * self.seen[a].volume;
        let mu_a = p.viscosity[a];
        self.neighbours
            .for_each_neighbour(&p.position, a, |b, _r_ab, dist| {
                let fluid_b = p.kind[b] == Kind::Fluid;
                let mu_ab = if fluid_b {
                    self.pair_viscosity.mean(mu_a, p.viscosity[b])
                } else {
                    mu_a
                };
                let r2 = dist * dist;
                let f = self.kernel.gradient_factor(dist);
                let k = scale * self.seen[b].volume * mu_ab * f * r2 / (r2 + eta2);
                visit(b, k, fluid_b);
            });
    }

    /// out_a = (A x)_a for fluid a, 0 for walls (parallel map, fixed-order sums).
    pub fn apply(&self, x: &[V], out: &mut [V]) {
        let p = self.particles;
        out.par_iter_mut().enumerate().for_each(|(a, y)| {
            if p.kind[a] != Kind::Fluid {
                *y = V::ZERO;
                return;
            }
            let x_a = x[a];
            let mut sum = V::ZERO;
            self.for_each_coefficient(a, |b, k, fluid_b| {
                sum += if fluid_b { (x_a - x[b]) * k } else { x_a * k };
            });
            *y = x_a * p.mass[a] + sum * self.dt;
        });
    }

    /// The right-hand side b_a = m_a v*_a + dt Σ_w K_aw ṽ_w for fluid a (0 for walls), and the
    /// diagonal of A, m_a + dt Σ_b K_ab (1 for walls), for the Jacobi preconditioner.
    pub fn right_hand_side(&self, velocity: &[V], rhs: &mut [V], diagonal: &mut [f64]) {
        let p = self.particles;
        rhs.par_iter_mut()
            .zip(diagonal.par_iter_mut())
            .enumerate()
            .for_each(|(a, (b_a, d_a))| {
                if p.kind[a] != Kind::Fluid {
                    *b_a = V::ZERO;
                    *d_a = 1.0;
                    return;
                }
                let mut wall = V::ZERO;
                let mut k_sum = 0.0;
                self.for_each_coefficient(a, |b, k, fluid_b| {
                    k_sum += k;
                    if !fluid_b {
                        wall += self.seen[b].viscous_velocity * k;
                    }
                });
                *b_a = velocity[a] * p.mass[a] + wall * self.dt;
                *d_a = p.mass[a] + self.dt * k_sum;
            });
    }
}

/// Work space of [`solve`], reused between steps.
#[derive(Clone, Debug, Default)]
pub struct SolverScratch<V> {
    rhs: Vec<V>,
    residual: Vec<V>,
    preconditioned: Vec<V>,
    direction: Vec<V>,
    product: Vec<V>,
    diagonal: Vec<f64>,
    partial_sums: Vec<f64>,
}

impl<V: Vector> SolverScratch<V> {
    /// Index of the particle with the largest residual |b − A v| of the last solve (the
    /// first in array order on a tie), to name in a fault; 0 before any solve.
    pub fn worst_particle(&self) -> usize {
        let mut worst = (0, -1.0);
        for (i, r) in self.residual.iter().enumerate() {
            let size = r.length();
            if size > worst.1 {
                worst = (i, size);
            }
        }
        worst.0
    }
}

/// Σ_i x_i·y_i in a fixed order: chunks of [`CHUNK`] summed in parallel, each in array order,
/// then the chunk sums in order (independent of the thread count).
pub fn deterministic_dot<V: Vector>(x: &[V], y: &[V], partial_sums: &mut Vec<f64>) -> f64 {
    x.par_chunks(CHUNK)
        .zip(y.par_chunks(CHUNK))
        .map(|(xs, ys)| xs.iter().zip(ys).map(|(a, b)| a.dot(*b)).sum::<f64>())
        .collect_into_vec(partial_sums);
    partial_sums.iter().sum()
}

/// Solves A v = b (see the module docs) for the fluid velocities after the viscous term, by the
/// conjugate-gradient method with a Jacobi (diagonal) preconditioner (Saad 2003, Iterative
/// Methods for Sparse Linear Systems, 2nd ed., Algorithm 9.1).
///
/// `intermediate` is v*, the velocity after every other force; `velocity` holds the initial
/// guess on entry (the solver uses the velocity at the start of the step, which is the exact
/// answer at a steady state) and the solution on return; wall entries are left unchanged.
pub fn solve<V: Vector, N: Neighbourhood<V>>(
    operator: &ViscousOperator<'_, V, N>,
    intermediate: &[V],
    velocity: &mut [V],
    settings: &ImplicitSettings,
    scratch: &mut SolverScratch<V>,
) -> SolveReport {
    let n = velocity.len();
    let SolverScratch {
        rhs,
        residual,
        preconditioned,
        direction,
        product,
        diagonal,
        partial_sums,
    } = scratch;
    for buffer in [
        &mut *rhs,
        &mut *residual,
        &mut *preconditioned,
        &mut *direction,
        &mut *product,
    ] {
        buffer.resize(n, V::ZERO);
    }
    diagonal.resize(n, 1.0);
    operator.right_hand_side(intermediate, rhs, diagonal);
    let rhs_norm = deterministic_dot(rhs, rhs, partial_sums).sqrt();
    if rhs_norm == 0.0 {
        let fluid = &operator.particles.kind;
        velocity
            .par_iter_mut()
            .zip(fluid.par_iter())
            .for_each(|(v, &kind)| {
                if kind == Kind::Fluid {
                    *v = V::ZERO;
                }
            });
        return SolveReport {
            iterations: 0,
            relative_residual: 0.0,
            converged: true,
        };
    }
    let target = settings.tolerance * rhs_norm;
    operator.apply(velocity, product);
    let precondition = |r: &[V], z: &mut [V], d: &[f64]| {
        z.par_iter_mut()
            .zip(r.par_iter().zip(d.par_iter()))
            .for_each(|(z, (&r, &d))| *z = r / d);
    };
    residual
        .par_iter_mut()
        .zip(rhs.par_iter().zip(product.par_iter()))
        .for_each(|(r, (&b, &q))| *r = b - q);
    precondition(residual, preconditioned, diagonal);
    direction.copy_from_slice(preconditioned);
    let mut rz = deterministic_dot(residual, preconditioned, partial_sums);
    let mut norm = deterministic_dot(residual, residual, partial_sums).sqrt();
    let mut iterations = 0;
    while norm > target && iterations < settings.max_iterations {
        operator.apply(direction, product);
        let curvature = deterministic_dot(direction, product, partial_sums);
        // A non-positive or NaN curvature means a non-finite state: stop, unconverged.
        if curvature.is_nan() || curvature <= 0.0 {
            break;
        }
        let alpha = rz / curvature;
        velocity
            .par_iter_mut()
            .zip(residual.par_iter_mut())
            .zip(direction.par_iter().zip(product.par_iter()))
            .for_each(|((v, r), (&d, &q))| {
                *v += d * alpha;
                *r -= q * alpha;
            });
        precondition(residual, preconditioned, diagonal);
        let rz_next = deterministic_dot(residual, preconditioned, partial_sums);
        let beta = rz_next / rz;
        rz = rz_next;
        direction
            .par_iter_mut()
            .zip(preconditioned.par_iter())
            .for_each(|(d, &z)| *d = z + *d * beta);
        norm = deterministic_dot(residual, residual, partial_sums).sqrt();
        iterations += 1;
    }
    SolveReport {
        iterations,
        relative_residual: norm / rhs_norm,
        converged: norm <= target,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eos::{EquationOfState, StateLaw};
    use crate::kernel::KernelKind;
    use crate::neighbours::brute_force::BruteForce;
    use crate::walls::interaction_states;
    use glam::DVec2;

    /// A jittered 10 × 10 box of two phases (μ = 1 and 100 Pa·s) periodic in x, with three wall
    /// rows below and above, and a velocity field with no symmetry.
    fn walled_box() -> (Particles<DVec2>, BruteForce<DVec2>, Kernel) {
        let (n, dx) = (10, 0.1);
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let mut p = Particles::default();
        for j in -3..n + 3 {
            for i in 0..n {
                let k = p.len();
                let fluid = (0..n).contains(&j);
                let jitter = if fluid {
                    ((k * 7919) % 13) as f64 / 13.0 - 0.5
                } else {
                    0.0
                };
                let x = DVec2::new(
                    (i as f64 + 0.5 + 0.2 * jitter) * dx,
                    (j as f64 + 0.5 - 0.1 * jitter) * dx,
                );
                p.position.push(x);
                p.initial_position.push(x);
                p.velocity.push(if fluid {
                    DVec2::new((k as f64 * 0.37).sin(), (k as f64 * 0.91).cos())
                } else if j >= n {
                    DVec2::new(0.5, 0.0)
                } else {
                    DVec2::ZERO
                });
                p.density.push(1000.0 * (1.0 + 0.001 * jitter));
                p.pressure.push(0.0);
                p.mass.push(1000.0 * dx * dx);
                p.phase.push(if j < n / 2 { 0 } else { 1 });
                p.viscosity.push(if j < n / 2 { 100.0 } else { 1.0 });
                p.kind.push(if fluid { Kind::Fluid } else { Kind::Wall });
                p.id.push(k as u64);
            }
        }
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(n as f64 * dx, 0.0),
        };
        (p, nb, kernel)
    }

    fn states(
        p: &Particles<DVec2>,
        nb: &BruteForce<DVec2>,
        kernel: &Kernel,
    ) -> Vec<InteractionState<DVec2>> {
        let law = StateLaw {
            form: EquationOfState::Linear,
            sound_speed: 10.0,
            background_pressure: 0.0,
        };
        let mut seen = vec![InteractionState::default(); p.len()];
        interaction_states(
            kernel,
            &law,
            DVec2::ZERO,
            &[1000.0, 1000.0],
            p,
            nb,
            None,
            &mut seen,
        );
        seen
    }

    fn fluid_dot(p: &Particles<DVec2>, x: &[DVec2], y: &[DVec2]) -> f64 {
        (0..p.len())
            .filter(|&i| p.kind[i] == Kind::Fluid)
            .map(|i| x[i].dot(y[i]))
            .sum()
    }

    /// Conjugate gradients need A symmetric positive definite on the fluid unknowns: x·Ay = y·Ax
    /// and x·Ax > 0 for two unrelated fields, at a viscosity ratio of 100 with walls.
    #[test]
    fn the_operator_is_symmetric_and_positive_definite() {
        let (p, nb, kernel) = walled_box();
        let seen = states(&p, &nb, &kernel);
        let operator = ViscousOperator {
            kernel,
            pair_viscosity: PairViscosity::Harmonic,
            normalisation: 1.04,
            dt: 1.0e-2,
            particles: &p,
            seen: &seen,
            neighbours: &nb,
        };
        let x: Vec<DVec2> = (0..p.len())
            .map(|k| DVec2::new((k as f64 * 1.7).sin(), (k as f64 * 0.3).cos()))
            .collect();
        let y: Vec<DVec2> = (0..p.len())
            .map(|k| DVec2::new((k as f64 * 0.11).cos(), (k as f64 * 2.9).sin()))
            .collect();
        let (mut ax, mut ay) = (vec![DVec2::ZERO; p.len()], vec![DVec2::ZERO; p.len()]);
        operator.apply(&x, &mut ax);
        operator.apply(&y, &mut ay);
        let (xay, yax) = (fluid_dot(&p, &x, &ay), fluid_dot(&p, &y, &ax));
        assert!(
            (xay - yax).abs() <= 1e-12 * xay.abs().max(1.0),
            "{xay} vs {yax}"
        );
        // x·Ax = Σ m x² + dt (a sum of K_ab |x_a − x_b|² and wall terms): above the mass part.
        let mass_part: f64 = (0..p.len())
            .filter(|&i| p.kind[i] == Kind::Fluid)
            .map(|i| p.mass[i] * x[i].length_squared())
            .sum();
        let xax = fluid_dot(&p, &x, &ax);
        assert!(xax > mass_part, "{xax} vs {mass_part}");
    }

    /// The solution meets A v = b to the tolerance, checked with an independent product, and
    /// the explicit Morris force of `forces::particle_rates` is what the solve made implicit:
    /// m (v − v*)/dt equals that force evaluated at the new velocities v.
    #[test]
    fn the_solve_converges_to_backward_euler_of_the_morris_force() {
        use crate::forces::{RateParameters, Rates, particle_rates};
        let (p, nb, kernel) = walled_box();
        let seen = states(&p, &nb, &kernel);
        let dt = 1.0;
        let operator = ViscousOperator {
            kernel,
            pair_viscosity: PairViscosity::Harmonic,
            normalisation: 1.0,
            dt,
            particles: &p,
            seen: &seen,
            neighbours: &nb,
        };
        let settings = ImplicitSettings {
            tolerance: 1e-12,
            max_iterations: 500,
        };
        let star = p.velocity.clone();
        let mut v = p.velocity.clone();
        let mut scratch = SolverScratch::default();
        let report = solve(&operator, &star, &mut v, &settings, &mut scratch);
        assert!(report.converged, "{report:?}");
        assert!(
            report.iterations > 5,
            "a stiff system needs iterations: {report:?}"
        );
        // Walls keep their velocity.
        for ((new, old), kind) in v.iter().zip(&p.velocity).zip(&p.kind) {
            if *kind == Kind::Wall {
                assert_eq!(new, old);
            }
        }
        // The Morris force at the new velocities (wall states kept from the start of the step,
        // as in the solve).
        let mut moved = p.clone();
        moved.velocity = v.clone();
        let mut seen_moved = seen.clone();
        for i in 0..p.len() {
            if p.kind[i] == Kind::Fluid {
                seen_moved[i].viscous_velocity = v[i];
            }
        }
        let rho0 = [1000.0, 1000.0];
        let inverse = [1e-3, 1e-3];
        let params = RateParameters {
            kernel,
            body_force: DVec2::ZERO,
            pair_viscosity: PairViscosity::Harmonic,
            density_diffusion: 0.0,
            sound_speed: 10.0,
            reference_density: &rho0,
            inverse_reference_density: &inverse,
            viscous_normalisation: 1.0,
            wall_suction: true,
        };
        // Pressure is zero everywhere (ρ unchanged is not zero pressure, so take it out):
        // compare with and without viscosity instead.
        let mut with = vec![Rates::default(); p.len()];
        let mut without = vec![Rates::default(); p.len()];
        particle_rates(&params, &moved, &seen_moved, &[], &nb, &mut with);
        let inviscid = RateParameters {
            viscous_normalisation: 0.0,
            ..params
        };
        particle_rates(&inviscid, &moved, &seen_moved, &[], &nb, &mut without);
        let mut worst = 0.0f64;
        let mut scale = 0.0f64;
        for i in 0..p.len() {
            if p.kind[i] != Kind::Fluid {
                continue;
            }
            let force = (with[i].acceleration - without[i].acceleration) * p.mass[i];
            let change = (v[i] - star[i]) * (p.mass[i] / dt);
            worst = worst.max((force - change).length());
            scale = scale.max(change.length());
        }
        assert!(scale > 0.0);
        assert!(worst <= 1e-8 * scale, "{worst} vs {scale}");
    }

    /// The inner products, the operator and so the whole solve give the same bytes on one thread
    /// and on several.
    #[test]
    fn the_solve_is_identical_on_any_number_of_threads() {
        let (p, nb, kernel) = walled_box();
        let seen = states(&p, &nb, &kernel);
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("pool");
            pool.install(|| {
                let operator = ViscousOperator {
                    kernel,
                    pair_viscosity: PairViscosity::Harmonic,
                    normalisation: 1.0,
                    dt: 1.0e-2,
                    particles: &p,
                    seen: &seen,
                    neighbours: &nb,
                };
                let settings = ImplicitSettings {
                    tolerance: 1e-10,
                    max_iterations: 500,
                };
                let mut v = p.velocity.clone();
                let mut scratch = SolverScratch::default();
                let report = solve(&operator, &p.velocity, &mut v, &settings, &mut scratch);
                (v, report)
            })
        };
        let (one, report_one) = run(1);
        let (three, report_three) = run(3);
        assert_eq!(report_one, report_three);
        assert_eq!(one, three);
        // Long enough to split into chunks on many threads: the dot product too.
        let x: Vec<DVec2> = (0..3 * CHUNK + 17)
            .map(|k| DVec2::new((k as f64).sin(), (k as f64 * 0.5).cos()))
            .collect();
        let dots: Vec<u64> = [1, 2, 5]
            .iter()
            .map(|&threads| {
                let pool = rayon::ThreadPoolBuilder::new()
                    .num_threads(threads)
                    .build()
                    .expect("pool");
                pool.install(|| deterministic_dot(&x, &x, &mut Vec::new()).to_bits())
            })
            .collect();
        assert!(dots.windows(2).all(|w| w[0] == w[1]), "{dots:?}");
    }
}
