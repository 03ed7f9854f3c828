//! From a validated case to a ready solver: configuration and initial particles.

use lamella_case::{
    Case, EquationOfState, InitialVelocity, Kernel as CaseKernel, PairViscosity as CasePair,
};
use lamella_cells::{Domain, Vector};
use lamella_sph::forces::lattice_viscous_normalisation;

use crate::reference::channel_reference;
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
        // ∇·(μ ∇uᵀ) vanishes for one viscosity (incompressible flow) and is needed across a
        // viscosity jump.
        full_viscous_stress: case.viscosity_contrast() > 1.0,
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
/// ρ0 dx^d, the phase's viscosity, density ρ0, ids 0, 1, 2, … in generation order; with
/// `initial_velocity: SteadyChannel` the fluid velocity is the analytical steady profile
/// ([`channel_reference`]), each layer's own profile for its particles.
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
    let steady = match case.initial_velocity {
        InitialVelocity::SteadyChannel => channel_reference(case),
        _ => None,
    };
    let upper_phase = case.tracked_interface().map(|pair| pair.upper as u16);
    let bottom = case.domain.lower[1];
    for i in 0..n {
        let phase = &case.phases[generated.phase[i] as usize];
        let wall = generated.is_wall[i];
        p.velocity.push(match (&steady, wall) {
            (_, true) => generated.wall_velocity[i],
            (None, false) => generated.velocity[i],
            (Some(reference), false) => {
                let y = p.position[i].get(1) - bottom;
                let upper = upper_phase == Some(generated.phase[i]);
                let mut v = V::ZERO;
                v.set(0, reference.steady_velocity_in_layer(y, upper));
                v
            }
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

/// The particles of `source`, the state of another run of a case with the same particles (the
/// same ids, kinds and phases as `case` generates), prepared to start `case` from: the
/// initial positions become the current ones and the fluid particles are moved by the case's
/// interface seed ([`lamella_case::Seed`]); velocities, densities and the rest are kept. The
/// error says what differs.
pub fn developed_particles<V: Vector>(
    case: &Case,
    mut source: Particles<V>,
) -> Result<Particles<V>, String> {
    let fresh = initial_particles::<V>(case);
    if source.len() != fresh.len() {
        return Err(format!(
            "it holds {} particles, the case makes {}",
            source.len(),
            fresh.len()
        ));
    }
    for i in 0..source.len() {
        let Some(j) = usize::try_from(source.id[i])
            .ok()
            .filter(|&j| j < fresh.len())
        else {
            return Err(format!(
                "particle id {} is not one the case makes",
                source.id[i]
            ));
        };
        if source.kind[i] != fresh.kind[j] || source.phase[i] != fresh.phase[j] {
            return Err(format!(
                "particle {} is a {:?} of phase {} there but a {:?} of phase {} in the case",
                source.id[i], source.kind[i], source.phase[i], fresh.kind[j], fresh.phase[j]
            ));
        }
    }
    if let Some(seed) = lamella_case::Seed::of(case) {
        let domain = solver_config::<V>(case)
            .map_err(|err| format!("cannot set up the solver: {err}"))?
            .search_domain;
        for i in (0..source.len()).filter(|&i| source.kind[i] == Kind::Fluid) {
            let p = source.position[i];
            let moved =
                seed.displace([p.get(0), p.get(1), if V::DIM == 3 { p.get(2) } else { 0.0 }]);
            source.position[i] = domain.wrap(V::from_fn(|a| moved[a]));
        }
    }
    source.initial_position.clone_from(&source.position);
    Ok(source)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::output::InterfaceTracker;
    use glam::DVec2;

    fn bundled(name: &str) -> Case {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../../cases")
            .join(name);
        lamella_case::load(&path).expect("bundled case")
    }

    #[test]
    fn a_steady_start_is_the_analytical_layered_profile() {
        // Bird, Stewart & Lightfoot §2.5, through `lamella_post::reference::layered`.
        let mut case = bundled("interface-growth.ron");
        case.interface_perturbation = None;
        let reference = channel_reference(&case).expect("a two-layer channel");
        let p = initial_particles::<DVec2>(&case);
        let mut fluid = 0;
        for i in (0..p.len()).filter(|&i| p.kind[i] == Kind::Fluid) {
            let expected = reference.velocity(p.position[i].y, 0.0);
            assert!((p.velocity[i].x - expected).abs() <= 1e-15 * expected.abs().max(1e-3));
            assert_eq!(p.velocity[i].y, 0.0);
            fluid += 1;
        }
        assert_eq!(fluid, 900);
    }

    #[test]
    fn a_sub_spacing_seed_moves_the_interface_by_its_amplitude() {
        // A = 8e-6 m, a fifth of the 4e-5 m spacing, η = A sin(kx) = A cos(kx − π/2).
        let case = bundled("interface-growth.ron");
        let p = initial_particles::<DVec2>(&case);
        let wave = InterfaceTracker::of(&case).expect("recorded").measure(&p);
        assert!((wave.amplitude / 8.0e-6 - 1.0).abs() < 0.01, "{wave:?}");
        assert!(
            (wave.phase + 0.5 * std::f64::consts::PI).abs() < 0.01,
            "{wave:?}"
        );
        assert!(wave.noise < 0.01 * wave.amplitude, "{wave:?}");
    }
}
