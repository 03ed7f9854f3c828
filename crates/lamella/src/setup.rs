//! From a validated case to a ready solver: configuration and initial particles.

use lamella_case::{Case, EquationOfState, Kernel as CaseKernel, PairViscosity as CasePair};
use lamella_cells::{Domain, Vector};
use lamella_sph::forces::lattice_viscous_normalisation;
use lamella_sph::{
    Kernel, KernelKind, Kind, PairViscosity, Particles, Regularisation, SetupError, Simulation,
    SolverConfig, StateLaw, TimeStepFactors,
};

/// Density-diffusion coefficient δ of the δ-SPH term (Antuono et al. 2010: 0.1, common practice).
pub const DENSITY_DIFFUSION: f64 = 0.1;

/// Extra lattice rows the neighbour-search box reaches past the outermost wall row.
const SEARCH_MARGIN_ROWS: f64 = 2.0;

/// The solver configuration of a case, for vectors of the case's dimension.
pub fn solver_config<V: Vector>(case: &Case) -> Result<SolverConfig<V>, SetupError> {
    let dim = V::DIM;
    let dx = case.particles.spacing;
    let kind = match case.particles.kernel {
        CaseKernel::WendlandC2 => KernelKind::WendlandC2,
        CaseKernel::CubicSpline => KernelKind::CubicSpline,
        CaseKernel::QuinticSpline => KernelKind::QuinticSpline,
    };
    let kernel = Kernel::new(kind, case.particles.smoothing_ratio * dx, dim);
    let (form, background_pressure) = match case.equation_of_state {
        EquationOfState::Linear {
            background_pressure,
        } => (lamella_sph::EquationOfState::Linear, background_pressure),
        EquationOfState::Tait {
            exponent,
            background_pressure,
        } => (
            lamella_sph::EquationOfState::Tait { exponent },
            background_pressure,
        ),
    };
    let mut periodic = [false; 3];
    for axis in &case.domain.periodic {
        periodic[axis.index()] = true;
    }
    let fluid_lower = V::from_fn(|a| case.domain.lower[a] - 0.5 * dx);
    let fluid_upper = V::from_fn(|a| case.domain.upper[a] + 0.5 * dx);
    // The search box holds the wall rows of every side, plus a margin.
    let layers_on = |axis: usize, high: bool| -> f64 {
        case.walls
            .iter()
            .filter(|w| w.side.axis().index() == axis && w.side.is_high() == high)
            .map(|w| f64::from(w.layers))
            .fold(0.0, f64::max)
    };
    let reach = |axis: usize, high: bool| (layers_on(axis, high) + SEARCH_MARGIN_ROWS) * dx;
    let search_lower = V::from_fn(|a| {
        let pad = if periodic[a] { 0.0 } else { reach(a, false) };
        case.domain.lower[a] - pad
    });
    let search_upper = V::from_fn(|a| {
        let pad = if periodic[a] { 0.0 } else { reach(a, true) };
        case.domain.upper[a] + pad
    });
    let search_domain = Domain::new(search_lower, search_upper, periodic)?;
    let body_force = case.body_force.as_ref().map_or(V::ZERO, |f| {
        V::from_fn(|a| f.get(a).copied().unwrap_or(0.0))
    });
    Ok(SolverConfig {
        kernel,
        state_law: StateLaw {
            form,
            sound_speed: case.sound_speed(),
            background_pressure,
        },
        reference_density: case.phases.iter().map(|p| p.density).collect(),
        pair_viscosity: match case.pair_viscosity {
            CasePair::Harmonic => PairViscosity::Harmonic,
            CasePair::Arithmetic => PairViscosity::Arithmetic,
        },
        body_force,
        density_diffusion: DENSITY_DIFFUSION,
        viscous_normalisation: lattice_viscous_normalisation(&kernel, dx, dim),
        time_step: TimeStepFactors {
            acoustic: case.time_step.acoustic,
            viscous: case.time_step.viscous,
            force: case.time_step.force,
        },
        regularisation: if case.particles.shifting > 0.0 {
            Regularisation::Shifting {
                coefficient: case.particles.shifting,
            }
        } else {
            Regularisation::None
        },
        density_tolerance: case.density_tolerance,
        search_domain,
        fluid_lower,
        fluid_upper,
    })
}

/// The particles of a case at time zero: the generated lattice (fluid, then walls) with mass
/// ρ0 dx^d, the phase's viscosity, density ρ0, ids 0, 1, 2, … in generation order.
pub fn initial_particles<V: Vector>(case: &Case) -> Particles<V> {
    let generated = lamella_case::generate::<V>(case);
    let dx = case.particles.spacing;
    let volume = dx.powi(V::DIM as i32);
    let n = generated.len();
    let mut p = Particles {
        position: generated.position.clone(),
        velocity: Vec::with_capacity(n),
        density: Vec::with_capacity(n),
        pressure: vec![0.0; n],
        mass: Vec::with_capacity(n),
        viscosity: Vec::with_capacity(n),
        phase: generated.phase.clone(),
        kind: Vec::with_capacity(n),
        id: (0..n as u64).collect(),
        initial_position: generated.position,
    };
    for i in 0..n {
        let phase = &case.phases[generated.phase[i] as usize];
        let wall = generated.is_wall[i];
        p.velocity.push(if wall {
            generated.wall_velocity[i]
        } else {
            generated.velocity[i]
        });
        p.density.push(phase.density);
        p.mass.push(phase.density * volume);
        p.viscosity.push(phase.viscosity_law.reference_viscosity());
        p.kind.push(if wall { Kind::Wall } else { Kind::Fluid });
    }
    p
}

/// A simulation of `case` at time zero.
pub fn simulation<V: Vector>(case: &Case) -> Result<Simulation<V>, SetupError> {
    Simulation::new(solver_config(case)?, initial_particles(case))
}
