//! The time-stepping simulation: configuration, complete state, and one step.
//!
//! # State and resume
//! The complete state of a run is the [`Particles`] (positions, velocities, densities, masses,
//! viscosities, phases, kinds, ids, initial positions), the simulated `time` and the `step`
//! count. Pressure is derived (recomputed from density every step) and the buffers held beside
//! the state are scratch space. [`Simulation::from_parts`] rebuilds a simulation from exactly
//! those parts, so a run saved with [`Simulation::particles`], [`Simulation::time`] and
//! [`Simulation::step_count`] and restored with `from_parts` continues bit for bit as the
//! uninterrupted run would (given the same configuration and the same sequence of `until` times).
//!
//! # Scheme
//! Each step: sort the particles by cell (the neighbour search order), evaluate the wall states
//! and the accelerations at the current state, pick dt from the acoustic, viscous and force
//! limits, then advance by symplectic (semi-implicit) Euler, the kick–drift form of leapfrog
//! (Monaghan 2005, Rep. Prog. Phys. 68, §9): v ← v + dt a(x, ρ), then ρ ← ρ + dt dρ/dt(x, v)
//! and x ← x + dt (v + δv) with the new v and the shifting velocity δv (which the density rate
//! follows, see [`crate::forces::density_rates`]). Both pairs that oscillate, position with velocity
//! and density with velocity (sound waves), are thus updated one after the other, which keeps
//! each mode's amplitude bounded for ω dt < 2 (Hairer, Lubich & Wanner 2006, Geometric
//! Numerical Integration, §I.1). Taking dρ/dt from the old velocity instead is explicit Euler for
//! the sound waves, |1 + i ω dt| > 1 for every mode: in the lid-driven cavity at Re = 100, where
//! viscosity damps little, the density noise then grew past 5 % within 1500 steps.
//! With the implicit viscosity treatment the kick leaves out the Morris viscous term and the
//! kicked velocity is then corrected by its backward-Euler solve
//! ([`crate::implicit_viscosity`]); the viscous limit drops out of dt.
//! Wall particles keep their position; their velocity is a sliding velocity (a moving lid or
//! plate is a belt that moves along itself).
//!
//! # Determinism
//! Every per-particle quantity is a parallel map whose sums run over the neighbours in the
//! cell list's fixed order; every reduction over particles runs sequentially in array order.
//! Results therefore do not depend on the number of threads.

use glam::DMat3;
use lamella_cells::{CellError, CellList, Domain, Vector};
use rayon::prelude::*;

use crate::eos::StateLaw;
use crate::fault::{Fault, FaultCause};
use crate::forces::{
    PairViscosity, ParticleMotion, RateParameters, Rates, density_rates, particle_rates,
};
use crate::implicit_viscosity::{SolverScratch, ViscosityTreatment, ViscousOperator, solve};
use crate::kernel::Kernel;
use crate::particles::{FieldMut, Kind, Particles, ReorderScratch};
use crate::shear_rate::{Flow, shear_rate_of, velocity_gradient_through_walls, velocity_gradients};
use crate::shifting::{Regularisation, shift};
use crate::time_step::{Limit, TimeStepFactors, stable_time_step};
use crate::viscosity::{ViscosityLaw, update_viscosities};
use crate::walls::{InteractionState, NearWallFlow, NoSlip, interaction_states};

/// Density-diffusion coefficient δ of the δ-SPH term when a case does not choose one
/// (Antuono et al. 2010, Comput. Phys. Commun. 181: 0.1, common practice).
pub const DEFAULT_DENSITY_DIFFUSION: f64 = 0.1;

/// Heap bytes per particle of the cell list (its cell ranges and the permutation), about 10
/// at the usual spacings; measured by `lamella bench` with the rest of the simulation.
const CELL_LIST_BYTES_PER_PARTICLE: usize = 10;

/// Everything the solver needs besides the particle state. Fixed for a run.
#[derive(Clone, Debug, PartialEq)]
pub struct SolverConfig<V: Vector> {
    /// Smoothing kernel (its smoothing length h and dimension).
    pub kernel: Kernel,
    /// Equation of state with sound speed and background pressure.
    pub state_law: StateLaw,
    /// Reference density ρ0 of each phase (kg/m³), indexed by `Particles::phase`.
    pub reference_density: Vec<f64>,
    /// Viscosity law of each phase, indexed by `Particles::phase`; every step sets each fluid
    /// particle's viscosity from it ([`crate::viscosity::update_viscosities`]).
    pub viscosity_laws: Vec<ViscosityLaw>,
    /// Pair viscosity rule.
    pub pair_viscosity: PairViscosity,
    /// Body force per unit mass (m/s²).
    pub body_force: V,
    /// Density-diffusion coefficient δ ([`DEFAULT_DENSITY_DIFFUSION`] is common practice, 0
    /// disables it).
    pub density_diffusion: f64,
    /// Factor on the viscous term; [`crate::forces::lattice_viscous_normalisation`] of the
    /// initial lattice makes it exact for quadratic profiles, 1 leaves Morris's form unchanged.
    pub viscous_normalisation: f64,
    /// Adds ∇·(μ ∇uᵀ) to the Morris term, so the viscous force is the divergence of the full
    /// Newtonian stress ([`crate::forces::transposed_viscous_stress`]); needed where the
    /// viscosity varies, zero for an incompressible flow of one viscosity.
    pub full_viscous_stress: bool,
    /// How the Morris viscous term is advanced: explicitly, or by the implicit solve of
    /// [`crate::implicit_viscosity`], which removes the viscous time-step limit.
    pub viscosity_treatment: ViscosityTreatment,
    /// Safety factors of the time step.
    pub time_step: TimeStepFactors,
    /// Particle regularisation.
    pub regularisation: Regularisation,
    /// Largest tolerated |ρ − ρ0|/ρ0 of a fluid particle.
    pub density_tolerance: f64,
    /// The box every particle (walls included) must stay in; its periodic axes wrap.
    pub search_domain: Domain<V>,
    /// How wall particles continue the fluid's velocity for the viscous term.
    pub no_slip: NoSlip<V>,
    /// Whether a wall may pull fluid towards it. Adami's wall pressure continues the fluid's,
    /// so where the fluid pressure is negative the wall attracts it. Under a moving lid the
    /// corner upstream is such a suction (−960 Pa measured in a glaze-over-water cavity), and it
    /// draws a runny particle there into the lid; false holds the fluid–wall pair pressure at
    /// zero or above, so walls only push (common practice for walls in suction).
    pub wall_suction: bool,
    /// Fluid particles must stay within `[fluid_lower, fluid_upper]` on non-periodic axes (m).
    pub fluid_lower: V,
    /// Upper corner of the fluid's allowed region (m).
    pub fluid_upper: V,
}

/// What one step did.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StepReport {
    /// Time step taken (s).
    pub dt: f64,
    /// The limit that set the stable step.
    pub limit: Limit,
    /// True when the step was cut short to end on the caller's `until`.
    pub clipped: bool,
    /// Simulated time after the step (s).
    pub time: f64,
    /// Steps taken so far, this one included.
    pub step: u64,
    /// Largest fluid speed at the start of the step (m/s).
    pub max_speed: f64,
    /// Largest |ρ − ρ0|/ρ0 of a fluid particle after the step.
    pub max_density_deviation: f64,
    /// Conjugate-gradient iterations of the implicit viscous solve (0 when explicit).
    pub viscous_iterations: u32,
}

/// Why a simulation could not be assembled.
#[derive(Debug, thiserror::Error)]
pub enum SetupError {
    /// A particle array has a different length from `position`.
    #[error("particle field `{0}` has a different length from `position`")]
    Inconsistent(&'static str),
    /// A particle's phase has no reference density.
    #[error("particle {id} has phase {phase}, but only {count} phases have a reference density")]
    UnknownPhase {
        /// Particle id.
        id: u64,
        /// Its phase index.
        phase: u16,
        /// Number of phases configured.
        count: usize,
    },
    /// The neighbour search refused the domain or the particles.
    #[error("neighbour search: {0}")]
    Cells(#[from] CellError),
    /// The phases have reference densities but not as many viscosity laws.
    #[error("{laws} viscosity laws for {phases} phases; give one law per phase")]
    ViscosityLaws {
        /// Viscosity laws configured.
        laws: usize,
        /// Phases with a reference density.
        phases: usize,
    },
    /// The initial state of the case could not be built; the message says why.
    #[error("initial state: {0}")]
    InitialState(String),
}

/// Scratch buffers reused every step (no allocation inside a step once warmed up).
#[derive(Clone, Debug, Default)]
struct Scratch<V: Vector> {
    reorder: ReorderScratch<V>,
    /// 1/ρ0 of each phase.
    inverse_reference_density: Vec<f64>,
    seen: Vec<InteractionState<V>>,
    rates: Vec<Rates<V>>,
    /// Velocity gradient of each particle over its own phase, when the full viscous stress is
    /// on.
    gradients: Vec<DMat3>,
    density_rates: Vec<f64>,
    /// Shifting velocity δv of each particle (empty when particles are not shifted).
    shift_velocity: Vec<V>,
    next_position: Vec<V>,
    next_velocity: Vec<V>,
    next_density: Vec<f64>,
    /// Work space of the implicit viscous solve.
    viscous_solve: SolverScratch<V>,
    /// The velocity after every force but the implicit viscous one, v*.
    kicked_velocity: Vec<V>,
    /// The fluid's second-order velocity fit next to the walls ([`NoSlip::Quadratic`]).
    near_wall: NearWallFlow<V>,
}

/// A running simulation: configuration, complete state and scratch space.
#[derive(Clone, Debug)]
pub struct Simulation<V: Vector> {
    config: SolverConfig<V>,
    particles: Particles<V>,
    time: f64,
    step: u64,
    cells: CellList<V>,
    scratch: Scratch<V>,
}

impl<V: Vector> Simulation<V> {
    /// Heap bytes per particle of a running simulation, from the sizes of the arrays it holds:
    /// every field of [`Particles`] (through [`Particles::for_each_field`]), the reorder
    /// scratch (one element of each type), the wall states, the rates and density rates, the
    /// next state (two vectors and a density), the cell list, with `full_viscous_stress` a
    /// 3 × 3 velocity gradient and with `implicit_viscosity` the work space of the viscous
    /// solve (the kicked velocity, five conjugate-gradient vectors and the diagonal), with
    /// `quadratic_no_slip` the fluid's second-order velocity fit next to walls ([`NearWallFlow`]).
    /// Transient buffers of a step (shifting) are not counted.
    pub fn heap_bytes_per_particle(
        full_viscous_stress: bool,
        implicit_viscosity: bool,
        quadratic_no_slip: bool,
    ) -> usize {
        use std::mem::size_of;
        let mut one = Particles::<V>::default();
        one.for_each_field_mut(|_, field| match field {
            FieldMut::Vectors(v) => v.push(V::ZERO),
            FieldMut::Scalars(v) => v.push(0.0),
            FieldMut::Phases(v) => v.push(0),
            FieldMut::Kinds(v) => v.push(Kind::Fluid),
            FieldMut::Ids(v) => v.push(0),
        });
        let mut state = 0;
        one.for_each_field(|_, field| state += field.bytes());
        let reorder_scratch = size_of::<V>()
            + size_of::<f64>()
            + size_of::<u16>()
            + size_of::<Kind>()
            + size_of::<u64>();
        let wall_states = size_of::<InteractionState<V>>();
        let rates = size_of::<Rates<V>>() + size_of::<f64>();
        let next_state = 2 * size_of::<V>() + size_of::<f64>();
        let gradients = if full_viscous_stress {
            size_of::<DMat3>()
        } else {
            0
        };
        state
            + reorder_scratch
            + wall_states
            + rates
            + next_state
            + CELL_LIST_BYTES_PER_PARTICLE
            + gradients
            + if implicit_viscosity {
                6 * size_of::<V>() + size_of::<f64>()
            } else {
                0
            }
            + if quadratic_no_slip {
                NearWallFlow::<V>::BYTES_PER_PARTICLE
            } else {
                0
            }
    }

    /// A simulation at time zero.
    pub fn new(config: SolverConfig<V>, particles: Particles<V>) -> Result<Self, SetupError> {
        Self::from_parts(config, particles, 0.0, 0)
    }

    /// A simulation from its complete state: `particles` at simulated `time` after `step` steps.
    /// Restoring the parts of a saved run continues it bit for bit (see the module docs).
    /// Pressures and wall states are refreshed from the state; nothing else is changed.
    pub fn from_parts(
        config: SolverConfig<V>,
        particles: Particles<V>,
        time: f64,
        step: u64,
    ) -> Result<Self, SetupError> {
        if let Some(field) = particles.inconsistent_field() {
            return Err(SetupError::Inconsistent(field));
        }
        let count = config.reference_density.len();
        if let Some(i) = (0..particles.len()).find(|&i| particles.phase[i] as usize >= count) {
            return Err(SetupError::UnknownPhase {
                id: particles.id[i],
                phase: particles.phase[i],
                count,
            });
        }
        if config.viscosity_laws.len() != count {
            return Err(SetupError::ViscosityLaws {
                laws: config.viscosity_laws.len(),
                phases: count,
            });
        }
        let cells = CellList::new(config.search_domain, config.kernel.support_radius())?;
        let scratch = Scratch {
            inverse_reference_density: config.reference_density.iter().map(|r| 1.0 / r).collect(),
            ..Scratch::default()
        };
        let mut simulation = Simulation {
            config,
            particles,
            time,
            step,
            cells,
            scratch,
        };
        simulation.refresh_derived()?;
        Ok(simulation)
    }

    /// The configuration.
    pub fn config(&self) -> &SolverConfig<V> {
        &self.config
    }

    /// The particle state (in the current cell order; use `id` for identity).
    pub fn particles(&self) -> &Particles<V> {
        &self.particles
    }

    /// Simulated time (s).
    pub fn time(&self) -> f64 {
        self.time
    }

    /// Steps taken.
    pub fn step_count(&self) -> u64 {
        self.step
    }

    /// Takes the state apart: particles, time, step (the inverse of [`Simulation::from_parts`]).
    pub fn into_parts(self) -> (SolverConfig<V>, Particles<V>, f64, u64) {
        (self.config, self.particles, self.time, self.step)
    }

    /// Sorts the particles by cell and recomputes the wall states and pressures for the current
    /// state (writes `pressure` of every particle and `density` of wall particles).
    fn refresh_derived(&mut self) -> Result<(), SetupError> {
        self.sort_by_cell().map_err(SetupError::Cells)?;
        self.evaluate_interaction_states();
        Ok(())
    }

    fn sort_by_cell(&mut self) -> Result<(), CellError> {
        self.cells.rebuild(&self.particles.position)?;
        self.particles
            .reorder(self.cells.permutation(), &mut self.scratch.reorder);
        Ok(())
    }

    /// The velocity gradients the full viscous stress takes (one pass, only when the case has
    /// more than one viscosity). Only fluid neighbours count, so the fluid's own volumes m/ρ
    /// serve.
    fn evaluate_stress_gradients(&mut self) {
        if !self.config.full_viscous_stress {
            return;
        }
        let p = &self.particles;
        self.scratch.gradients.resize(p.len(), DMat3::ZERO);
        velocity_gradients(
            &self.cells,
            p,
            |b| p.mass[b] / p.density[b],
            &self.config.kernel,
            &mut self.scratch.gradients,
        );
    }

    fn evaluate_interaction_states(&mut self) {
        let n = self.particles.len();
        self.scratch.seen.resize(n, InteractionState::default());
        let p = &self.particles;
        let near_wall = match self.config.no_slip {
            NoSlip::Averaged => None,
            NoSlip::Quadratic { lower, upper } => {
                let domain = &self.config.search_domain;
                let walled = std::array::from_fn(|axis| !domain.is_periodic(axis));
                self.scratch.near_wall.evaluate(
                    (lower, upper),
                    walled,
                    &self.config.kernel,
                    p,
                    &self.cells,
                );
                Some((&self.scratch.near_wall, lower, upper))
            }
        };
        interaction_states(
            &self.config.kernel,
            &self.config.state_law,
            self.config.body_force,
            &self.config.reference_density,
            &self.particles,
            &self.cells,
            near_wall,
            &mut self.scratch.seen,
        );
        let p = &mut self.particles;
        p.pressure
            .par_iter_mut()
            .zip(p.density.par_iter_mut())
            .zip(p.kind.par_iter())
            .zip(self.scratch.seen.par_iter())
            .for_each(|(((pressure, density), &kind), seen)| {
                *pressure = seen.pressure;
                if kind == Kind::Wall {
                    *density = seen.density;
                }
            });
    }

    /// The viscosity-law plug-in point: sets each fluid particle's viscosity from its phase's
    /// law. A law that reads the shear rate gets it from the particle's velocity gradient over
    /// its own phase and the walls, which show the velocity continuing the fluid's profile
    /// ([`velocity_gradient_through_walls`], from the interaction states just evaluated). A
    /// Newtonian law writes back the same constant, so those runs are unchanged bit for bit.
    fn update_viscosities(&mut self) {
        let Particles {
            position,
            velocity,
            kind,
            phase,
            viscosity,
            ..
        } = &mut self.particles;
        let seen: &[InteractionState<V>] = &self.scratch.seen;
        let flow = Flow {
            position,
            velocity,
            kind,
        };
        let shear_rate = |a: usize| {
            velocity_gradient_through_walls(
                &self.cells,
                a,
                flow,
                phase,
                |b| seen[b].viscous_velocity,
                |b| seen[b].volume,
                &self.config.kernel,
            )
            .map_or(f64::NAN, shear_rate_of)
        };
        update_viscosities(
            &self.config.viscosity_laws,
            phase,
            kind,
            shear_rate,
            viscosity,
        );
    }

    /// Advances by one stable step, cut short so as not to pass the simulated time `until` (s);
    /// a step that reaches `until` ends exactly on it.
    ///
    /// On a fault (non-finite value, density beyond the bound, a fluid particle through a wall)
    /// the step is discarded: the state stays the last good one and the fault names the particle.
    pub fn step(&mut self, until: f64) -> Result<StepReport, Fault<V>> {
        if let Err(error) = self.sort_by_cell() {
            return Err(self.search_fault(error));
        }
        self.evaluate_interaction_states();
        self.update_viscosities();
        self.evaluate_stress_gradients();
        let n = self.particles.len();
        let Scratch {
            inverse_reference_density,
            seen,
            rates,
            gradients,
            next_position,
            next_velocity,
            next_density,
            density_rates: density_rate,
            shift_velocity,
            viscous_solve,
            kicked_velocity,
            ..
        } = &mut self.scratch;
        let implicit = match self.config.viscosity_treatment {
            ViscosityTreatment::Explicit => None,
            ViscosityTreatment::Implicit(settings) => Some(settings),
        };
        rates.resize(n, Rates::default());
        let params = RateParameters {
            kernel: self.config.kernel,
            body_force: self.config.body_force,
            pair_viscosity: self.config.pair_viscosity,
            density_diffusion: self.config.density_diffusion,
            sound_speed: self.config.state_law.sound_speed,
            reference_density: &self.config.reference_density,
            inverse_reference_density,
            // With the implicit treatment the Morris term is left out here and solved for
            // after the kick.
            viscous_normalisation: if implicit.is_some() {
                0.0
            } else {
                self.config.viscous_normalisation
            },
            wall_suction: self.config.wall_suction,
        };
        particle_rates(
            &params,
            &self.particles,
            seen,
            gradients,
            &self.cells,
            rates,
        );

        // Time step from maxima over the fluid (a parallel maximum is exact, so the result
        // does not depend on the thread count).
        let p = &self.particles;
        let (max_speed, max_acceleration, max_nu) = (0..n)
            .into_par_iter()
            .filter(|&i| p.kind[i] == Kind::Fluid)
            .map(|i| {
                (
                    p.velocity[i].length(),
                    rates[i].acceleration.length(),
                    p.viscosity[i] / p.density[i],
                )
            })
            .reduce(
                || (0.0f64, 0.0f64, 0.0f64),
                |a, b| (a.0.max(b.0), a.1.max(b.1), a.2.max(b.2)),
            );
        let h = self.config.kernel.smoothing_length();
        // The implicit solve is stable for any step: no viscous limit.
        let max_nu = if implicit.is_some() { 0.0 } else { max_nu };
        let (stable_dt, limit) = stable_time_step(
            h,
            self.config.state_law.sound_speed,
            max_speed,
            max_nu,
            max_acceleration,
            &self.config.time_step,
        );
        let remaining = until - self.time;
        let clipped = remaining <= stable_dt;
        let dt = if clipped { remaining } else { stable_dt };
        // Shifting velocity δv = δr/dt, with δr = −D ∇C and D = A h |v|max dt.
        let shift_rate = match self.config.regularisation {
            Regularisation::None => 0.0,
            Regularisation::Shifting { coefficient } => coefficient * h * max_speed,
        };
        shift_velocity.clear();
        if shift_rate > 0.0 {
            shift_velocity.resize(n, V::ZERO);
            shift_velocity
                .par_iter_mut()
                .enumerate()
                .for_each(|(i, dv)| {
                    if p.kind[i] == Kind::Fluid {
                        let r = &rates[i];
                        *dv = shift(shift_rate, r.concentration_gradient, r.interface_normal);
                    }
                });
        }

        // Kick, then the density rate with the new velocities, then drift (parallel maps into
        // the scratch buffers).
        next_position.resize(n, V::ZERO);
        next_velocity.resize(n, V::ZERO);
        next_density.resize(n, 0.0);
        density_rate.resize(n, 0.0);
        next_velocity.par_iter_mut().enumerate().for_each(|(i, v)| {
            *v = if p.kind[i] == Kind::Fluid {
                p.velocity[i] + rates[i].acceleration * dt
            } else {
                p.velocity[i]
            };
        });
        let mut viscous_iterations = 0;
        if let Some(settings) = implicit {
            let operator = ViscousOperator {
                kernel: self.config.kernel,
                pair_viscosity: self.config.pair_viscosity,
                normalisation: self.config.viscous_normalisation,
                dt,
                particles: p,
                seen,
                neighbours: &self.cells,
            };
            // v* is the kicked velocity; the start-of-step velocity is the initial guess (exact
            // at a steady state, so the solve costs little there).
            kicked_velocity.resize(n, V::ZERO);
            std::mem::swap(kicked_velocity, next_velocity);
            next_velocity.copy_from_slice(&p.velocity);
            let report = solve(
                &operator,
                kicked_velocity,
                next_velocity,
                &settings,
                viscous_solve,
            );
            if !report.converged {
                let worst = viscous_solve.worst_particle();
                return Err(Fault {
                    id: p.id[worst],
                    position: p.position[worst],
                    time: self.time,
                    step: self.step,
                    cause: FaultCause::ViscousSolve {
                        iterations: report.iterations,
                        relative_residual: report.relative_residual,
                        tolerance: settings.tolerance,
                    },
                });
            }
            viscous_iterations = report.iterations;
        }
        let motion = ParticleMotion {
            velocity: next_velocity,
            shift: shift_velocity,
        };
        density_rates(&params, p, motion, seen, &self.cells, density_rate);
        let domain = self.config.search_domain;
        next_position
            .par_iter_mut()
            .zip(next_density.par_iter_mut())
            .enumerate()
            .for_each(|(i, (x, rho))| {
                if p.kind[i] != Kind::Fluid {
                    *x = p.position[i];
                    *rho = p.density[i];
                    return;
                }
                let mut velocity = next_velocity[i];
                if shift_rate > 0.0 {
                    velocity += shift_velocity[i];
                }
                *x = domain.wrap(p.position[i] + velocity * dt);
                *rho = p.density[i] + density_rate[i] * dt;
            });

        let max_density_deviation = self.check_health()?;
        let s = &mut self.scratch;
        let p = &mut self.particles;
        std::mem::swap(&mut p.position, &mut s.next_position);
        std::mem::swap(&mut p.velocity, &mut s.next_velocity);
        std::mem::swap(&mut p.density, &mut s.next_density);
        let (law, reference_density) = (&self.config.state_law, &self.config.reference_density);
        p.pressure
            .par_iter_mut()
            .zip(&p.density)
            .zip(&p.kind)
            .zip(&p.phase)
            .for_each(|(((pressure, &density), &kind), &phase)| {
                if kind == Kind::Fluid {
                    *pressure = law.pressure(density, reference_density[phase as usize]);
                }
            });
        self.time = if clipped { until } else { self.time + dt };
        self.step += 1;
        Ok(StepReport {
            dt,
            limit,
            clipped,
            time: self.time,
            step: self.step,
            max_speed,
            max_density_deviation,
            viscous_iterations,
        })
    }

    /// Checks the proposed state in the scratch buffers; returns the largest relative density
    /// deviation, or the fault of the first bad particle in array order (in parallel, with the
    /// same answer on any number of threads).
    fn check_health(&self) -> Result<f64, Fault<V>> {
        let p = &self.particles;
        let s = &self.scratch;
        let deviation = |i: usize| {
            let rho0 = self.config.reference_density[p.phase[i] as usize];
            (s.next_density[i] / rho0 - 1.0).abs()
        };
        // The fault of fluid particle i, if any, and its density deviation.
        let check = |i: usize| -> (Option<FaultCause>, f64) {
            let (x, v, rho) = (s.next_position[i], s.next_velocity[i], s.next_density[i]);
            if !(x.is_finite_vector() && v.is_finite_vector() && rho.is_finite()) {
                return (Some(FaultCause::NonFinite), 0.0);
            }
            let relative = deviation(i);
            if relative > self.config.density_tolerance {
                let cause = FaultCause::DensityDeviation {
                    relative,
                    tolerance: self.config.density_tolerance,
                };
                return (Some(cause), relative);
            }
            let left = (0..V::DIM)
                .filter(|&axis| !self.config.search_domain.is_periodic(axis))
                .find(|&axis| {
                    let c = x.get(axis);
                    c < self.config.fluid_lower.get(axis) || c > self.config.fluid_upper.get(axis)
                })
                .map(|axis| FaultCause::LeftDomain { axis });
            (left, relative)
        };
        // One pass: the first fault in array order (smallest index) and the largest deviation,
        // both exact whatever the split between threads.
        let (first_fault, worst) = (0..p.len())
            .into_par_iter()
            .filter(|&i| p.kind[i] == Kind::Fluid)
            .map(|i| {
                let (cause, relative) = check(i);
                (cause.map(|cause| (i, cause)), relative)
            })
            .reduce(
                || (None, 0.0),
                |(fault_a, worst_a), (fault_b, worst_b)| {
                    let first = match (fault_a, fault_b) {
                        (Some(a), Some(b)) => Some(if a.0 <= b.0 { a } else { b }),
                        (a, b) => a.or(b),
                    };
                    (first, f64::max(worst_a, worst_b))
                },
            );
        match first_fault {
            Some((i, cause)) => Err(Fault {
                id: p.id[i],
                position: s.next_position[i],
                time: self.time,
                step: self.step,
                cause,
            }),
            None => Ok(worst),
        }
    }

    fn search_fault(&self, error: CellError) -> Fault<V> {
        let index = match &error {
            CellError::OutsideDomain { index, .. } | CellError::NonFinite { index } => *index,
            _ => 0,
        };
        let index = index.min(self.particles.len().saturating_sub(1));
        Fault {
            id: self.particles.id.get(index).copied().unwrap_or(0),
            position: self
                .particles
                .position
                .get(index)
                .copied()
                .unwrap_or(V::ZERO),
            time: self.time,
            step: self.step,
            cause: FaultCause::NeighbourSearch(error.to_string()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eos::EquationOfState;
    use crate::kernel::KernelKind;
    use glam::DVec2;

    /// A periodic box of `nx` × `ny` particles at spacing `dx` of one fluid (ρ0 = 1000 kg/m³,
    /// c0 = 10 m/s, no density diffusion) of dynamic viscosity `mu` (Pa·s) advanced with
    /// `treatment`, each particle's velocity and density given by `state` at its position.
    fn periodic_box(
        (nx, ny, dx): (usize, usize, f64),
        mu: f64,
        treatment: ViscosityTreatment,
        state: impl Fn(DVec2) -> (DVec2, f64),
    ) -> Simulation<DVec2> {
        let size = DVec2::new(nx as f64 * dx, ny as f64 * dx);
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let config = SolverConfig {
            kernel,
            state_law: StateLaw {
                form: EquationOfState::Linear,
                sound_speed: 10.0,
                background_pressure: 0.0,
            },
            reference_density: vec![1000.0],
            viscosity_laws: vec![ViscosityLaw::Newtonian { viscosity: mu }],
            pair_viscosity: PairViscosity::Harmonic,
            body_force: DVec2::ZERO,
            density_diffusion: 0.0,
            viscous_normalisation: crate::forces::lattice_viscous_normalisation(&kernel, dx, 2),
            full_viscous_stress: false,
            viscosity_treatment: treatment,
            time_step: TimeStepFactors::default(),
            regularisation: Regularisation::None,
            density_tolerance: 0.5,
            search_domain: Domain::new(DVec2::ZERO, size, [true, true, false]).unwrap(),
            no_slip: NoSlip::Averaged,
            wall_suction: true,
            fluid_lower: DVec2::ZERO,
            fluid_upper: size,
        };
        let mut p = Particles::default();
        for k in 0..nx * ny {
            let x = DVec2::new((k % nx) as f64 + 0.5, (k / nx) as f64 + 0.5) * dx;
            let (velocity, density) = state(x);
            p.position.push(x);
            p.initial_position.push(x);
            p.velocity.push(velocity);
            p.density.push(density);
            p.pressure.push(0.0);
            p.mass.push(1000.0 * dx * dx);
            p.viscosity.push(mu);
            p.phase.push(0);
            p.kind.push(Kind::Fluid);
            p.id.push(k as u64);
        }
        Simulation::new(config, p).unwrap()
    }

    /// A periodic box of inviscid fluid holding one standing sound wave, ρ = ρ0 (1 + ε sin kx).
    fn sound_wave(amplitude: f64) -> Simulation<DVec2> {
        let (nx, dx) = (20, 0.1);
        let k = std::f64::consts::TAU / (nx as f64 * dx);
        periodic_box((nx, 8, dx), 0.0, ViscosityTreatment::Explicit, |x| {
            (DVec2::ZERO, 1000.0 * (1.0 + amplitude * (k * x.x).sin()))
        })
    }

    /// A periodic box of `rows` × 8 particles holding the shear wave u = U sin(2π y), v = 0,
    /// with kinematic viscosity `nu` (m²/s), c0 = 10 m/s, and the given viscosity treatment.
    fn shear_wave(rows: usize, nu: f64, treatment: ViscosityTreatment) -> Simulation<DVec2> {
        let shear = |x: DVec2| DVec2::new((std::f64::consts::TAU * x.y).sin(), 0.0);
        periodic_box((8, rows, 1.0 / rows as f64), 1000.0 * nu, treatment, |x| {
            (shear(x), 1000.0)
        })
    }

    /// Amplitude of the sin(2π y) mode of u: Σ u sin / Σ sin² over the particles.
    fn shear_amplitude(sim: &Simulation<DVec2>) -> f64 {
        let p = sim.particles();
        let (mut num, mut den) = (0.0, 0.0);
        for i in 0..p.len() {
            let s = (std::f64::consts::TAU * p.position[i].y).sin();
            num += p.velocity[i].x * s;
            den += s * s;
        }
        num / den
    }

    fn implicit(tolerance: f64) -> ViscosityTreatment {
        ViscosityTreatment::Implicit(crate::implicit_viscosity::ImplicitSettings {
            tolerance,
            max_iterations: 1000,
        })
    }

    /// A decaying shear wave, u = U sin(ky) e^(−ν k² t): for a parallel flow u(y, t) the
    /// inertial and pressure terms of the Navier–Stokes equations vanish and ∂u/∂t = ν ∂²u/∂y²
    /// remains, whose Fourier mode decays exactly so (the analysis behind the decay of the
    /// Taylor–Green vortex of the design notes). Run to one e-folding with the acoustic step, ten times
    /// the explicit viscous limit: within 3 % of the exact decay (backward Euler with
    /// ν k² dt ≈ 0.05 lags it by about 2.5 %), in an eighth of the explicit steps or fewer.
    /// The explicit scheme on its own limit is the comparison.
    #[test]
    fn implicit_viscosity_decays_a_shear_wave_with_ten_times_the_explicit_step() {
        let rows = 40;
        let h = 1.3 / rows as f64;
        // Acoustic step 0.25 h/c0 = 10 × the viscous limit 0.125 h²/ν.
        let nu = 10.0 * 0.125 * h * 10.0 / 0.25;
        let k = std::f64::consts::TAU;
        let end = 1.0 / (nu * k * k);
        let exact = (-nu * k * k * end).exp();
        let mut steps = Vec::new();
        for treatment in [ViscosityTreatment::Explicit, implicit(1e-9)] {
            let mut sim = shear_wave(rows, nu, treatment);
            while sim.time() < end {
                sim.step(end).unwrap();
            }
            let amplitude = shear_amplitude(&sim);
            assert!(
                (amplitude / exact - 1.0).abs() < 0.03,
                "{treatment:?}: {amplitude} vs exact {exact}"
            );
            steps.push(sim.step_count());
        }
        assert!(
            8 * steps[1] <= steps[0],
            "steps explicit, implicit: {steps:?}"
        );
    }

    /// The implicit step gives the same bytes on one thread and on several, and a run stopped
    /// and rebuilt from its parts continues as the uninterrupted one.
    #[test]
    fn implicit_viscosity_is_thread_independent_and_resumes_exactly() {
        let rows = 20;
        let h = 1.3 / rows as f64;
        let nu = 10.0 * 0.125 * h * 10.0 / 0.25;
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            pool.install(|| {
                let mut sim = shear_wave(rows, nu, implicit(1e-10));
                for _ in 0..10 {
                    sim.step(f64::INFINITY).unwrap();
                }
                sim.particles().clone()
            })
        };
        assert_eq!(run(1), run(3));
        let mut whole = shear_wave(rows, nu, implicit(1e-10));
        let mut first = shear_wave(rows, nu, implicit(1e-10));
        for _ in 0..5 {
            whole.step(f64::INFINITY).unwrap();
            first.step(f64::INFINITY).unwrap();
        }
        let (config, particles, time, step) = first.into_parts();
        let mut resumed = Simulation::from_parts(config, particles, time, step).unwrap();
        for _ in 0..5 {
            whole.step(f64::INFINITY).unwrap();
            resumed.step(f64::INFINITY).unwrap();
        }
        assert_eq!(whole.particles(), resumed.particles());
    }

    #[test]
    fn bytes_per_particle_follow_the_arrays() {
        // 2D: state 91 (three vectors, four scalars, phase, kind, id), reorder scratch 35,
        // wall states 40, rates and density rates 56, next state 40, cell list 10.
        assert_eq!(
            Simulation::<DVec2>::heap_bytes_per_particle(false, false, false),
            272
        );
        assert_eq!(
            Simulation::<DVec2>::heap_bytes_per_particle(true, false, false),
            272 + 72
        );
        // The implicit viscous solve: six vectors and a scalar more.
        assert_eq!(
            Simulation::<DVec2>::heap_bytes_per_particle(false, true, false),
            272 + 6 * 16 + 8
        );
        // 3D: every vector is 8 bytes longer (three in the state, one each in the reorder
        // scratch and the wall states, three in the rates, two in the next state).
        assert_eq!(
            Simulation::<glam::DVec3>::heap_bytes_per_particle(false, false, false),
            272 + 10 * 8
        );
        // Quadratic no slip: an optional fit of nine Taylor coefficients (9 · 16 + 8).
        assert_eq!(
            Simulation::<DVec2>::heap_bytes_per_particle(false, false, true),
            272 + 9 * 16 + 8
        );
    }

    #[test]
    fn an_undamped_sound_wave_keeps_its_amplitude() {
        // With dρ/dt taken from the velocity before the kick (explicit Euler for the wave) the
        // amplitude grows every step and passed 50 % within 700 steps; the semi-implicit update
        // keeps it bounded over these 2000 steps (about 16 wave periods).
        let amplitude = 1.0e-3;
        let mut sim = sound_wave(amplitude);
        let mut largest = 0.0f64;
        for _ in 0..2000 {
            let report = sim.step(f64::INFINITY).unwrap();
            largest = largest.max(report.max_density_deviation);
        }
        assert!(largest < 1.2 * amplitude, "{largest}");
        assert!(largest > 0.8 * amplitude, "{largest}");
    }
}
