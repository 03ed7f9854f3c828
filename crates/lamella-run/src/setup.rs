//! From a validated case to a ready solver: configuration and initial particles.

use lamella_case::{
    Case, EquationOfState, InitialVelocity, Kernel as CaseKernel, NoSlip as CaseNoSlip,
    PairViscosity as CasePair, ViscosityTreatment as CaseTreatment,
};
use lamella_cells::{Domain, Vector};
use lamella_sph::forces::lattice_viscous_normalisation;

use crate::eigenmode::EigenmodeSeed;
use crate::reference::channel_reference;
use lamella_sph::{
    DEFAULT_DENSITY_DIFFUSION, Kernel, KernelKind, Kind, NoSlip, PairViscosity, Particles,
    Regularisation, SetupError, Simulation, SolverConfig, StateLaw, TimeStepFactors,
    implicit_viscosity::{ImplicitSettings, ViscosityTreatment},
};

/// Extra lattice rows the neighbour-search box reaches past the outermost wall row.
const SEARCH_MARGIN_ROWS: f64 = 2.0;

/// The smoothing kernel of a case in `dim` dimensions.
pub fn kernel(case: &Case, dim: usize) -> Kernel {
    let kind = match case.particles.kernel {
        CaseKernel::WendlandC2 => KernelKind::WendlandC2,
        CaseKernel::CubicSpline => KernelKind::CubicSpline,
        CaseKernel::QuinticSpline => KernelKind::QuinticSpline,
    };
    Kernel::new(kind, case.smoothing_length(), dim)
}

/// The solver configuration of a case, for vectors of the case's dimension.
pub fn solver_config<V: Vector>(case: &Case) -> Result<SolverConfig<V>, SetupError> {
    let dim = V::DIM;
    let dx = case.particles.spacing;
    let kernel = kernel(case, dim);
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
        viscosity_laws: case
            .phases
            .iter()
            .map(|p| p.viscosity_law.solver_law())
            .collect(),
        pair_viscosity: match case.pair_viscosity {
            CasePair::Harmonic => PairViscosity::Harmonic,
            CasePair::Arithmetic => PairViscosity::Arithmetic,
        },
        body_force,
        density_diffusion: DEFAULT_DENSITY_DIFFUSION,
        viscous_normalisation: lattice_viscous_normalisation(&kernel, dx, dim),
        // ∇·(μ ∇uᵀ) vanishes for one viscosity (incompressible flow) and is needed across a
        // viscosity jump.
        full_viscous_stress: full_viscous_stress(case),
        viscosity_treatment: match case.viscosity_treatment {
            CaseTreatment::Explicit => ViscosityTreatment::Explicit,
            CaseTreatment::Implicit {
                tolerance,
                max_iterations,
            } => ViscosityTreatment::Implicit(ImplicitSettings {
                tolerance,
                max_iterations,
            }),
        },
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
        // Without walls there is nothing to continue.
        no_slip: match case.no_slip {
            _ if case.walls.is_empty() => NoSlip::Averaged,
            CaseNoSlip::Averaged => NoSlip::Averaged,
            CaseNoSlip::Quadratic => NoSlip::Quadratic {
                lower: V::from_fn(|a| case.domain.lower[a]),
                upper: V::from_fn(|a| case.domain.upper[a]),
            },
        },
        // Only where a moving wall meets another, whose upstream corner is in suction.
        wall_suction: case.lid_corner_speed().is_none(),
        fluid_lower,
        fluid_upper,
    })
}

/// Whether the solver adds the transposed viscous stress for `case`: where it has more than
/// one viscosity (by [`Case::viscosity_contrast`]: between phases, a generalised law read at
/// U/L). Within one generalised phase it is left out, although the viscosity varies there too:
/// explicit, it went unstable where a regularised yield stress jumps the viscosity by a
/// thousand times over a few particles (DEVELOPERS.md, "Generalised Newtonian phases").
fn full_viscous_stress(case: &Case) -> bool {
    case.viscosity_contrast() > 1.0
}

/// Heap bytes per particle of a running solver of `case` in its dimension
/// ([`Simulation::heap_bytes_per_particle`]); `lamella check` prints it and the feasibility
/// check multiplies it by the particle count.
pub fn heap_bytes_per_particle(case: &Case) -> usize {
    let full = full_viscous_stress(case);
    let implicit = matches!(case.viscosity_treatment, CaseTreatment::Implicit { .. });
    let quadratic = case.no_slip == CaseNoSlip::Quadratic && !case.walls.is_empty();
    if case.dimension == 3 {
        Simulation::<glam::DVec3>::heap_bytes_per_particle(full, implicit, quadratic)
    } else {
        Simulation::<glam::DVec2>::heap_bytes_per_particle(full, implicit, quadratic)
    }
}

/// The particles of a case at time zero: the generated lattice (fluid, then walls) with mass
/// ρ0 dx^d, the phase's viscosity, density ρ0, ids 0, 1, 2, … in generation order; with
/// `initial_velocity: SteadyChannel` the fluid velocity is the analytical steady profile
/// ([`channel_reference`]), each layer's own profile for its particles; with
/// `interface_perturbation.mode: Eigenmode` the velocity of the leading linear mode is added
/// ([`add_eigenmode_velocity`]). Fails only when that mode cannot be computed.
pub fn initial_particles<V: Vector>(case: &Case) -> Result<Particles<V>, SetupError> {
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
        p.viscosity
            .push(case.phase_viscosity(generated.phase[i] as usize));
        p.kind.push(if wall { Kind::Wall } else { Kind::Fluid });
    }
    add_eigenmode_velocity(case, &mut p).map_err(SetupError::InitialState)?;
    Ok(p)
}

/// Adds the velocity of the case's eigenmode seed ([`EigenmodeSeed`]) to every fluid
/// particle, each with its own layer's eigenfunction at its position; nothing unless the case
/// asks for `Eigenmode`. The error says why the mode could not be computed.
pub fn add_eigenmode_velocity<V: Vector>(
    case: &Case,
    particles: &mut Particles<V>,
) -> Result<(), String> {
    let Some(mode) = EigenmodeSeed::of(case)? else {
        return Ok(());
    };
    let upper_phase = case.tracked_interface().map(|pair| pair.upper as u16);
    for i in (0..particles.len()).filter(|&i| particles.kind[i] == Kind::Fluid) {
        let p = particles.position[i];
        let upper = upper_phase == Some(particles.phase[i]);
        let [u, v] = mode.velocity([p.get(0), p.get(1)], upper);
        let velocity = &mut particles.velocity[i];
        velocity.set(0, velocity.get(0) + u);
        velocity.set(1, velocity.get(1) + v);
    }
    Ok(())
}

/// A simulation of `case` at time zero.
pub fn simulation<V: Vector>(case: &Case) -> Result<Simulation<V>, SetupError> {
    Simulation::new(solver_config(case)?, initial_particles(case)?)
}

/// The particles of `source`, the state of another run of a case with the same particles (the
/// same ids, kinds and phases as `case` generates), prepared to start `case` from: the
/// initial positions become the current ones and the fluid particles are moved by the case's
/// interface seed ([`lamella_case::Seed`]); velocities, densities and the rest are kept, with
/// the eigenmode's velocity added when the case asks for it ([`add_eigenmode_velocity`]). The
/// error says what differs.
pub fn developed_particles<V: Vector>(
    case: &Case,
    mut source: Particles<V>,
) -> Result<Particles<V>, String> {
    let fresh = initial_particles::<V>(case).map_err(|err| err.to_string())?;
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
    add_eigenmode_velocity(case, &mut source)?;
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
    fn bytes_per_particle_count_the_gradient_only_with_two_viscosities() {
        // One viscosity: the 2D arrays of `Simulation::heap_bytes_per_particle` (walls with
        // the default quadratic no slip); two add a 3 × 3 velocity gradient for the full
        // viscous stress.
        let one = heap_bytes_per_particle(&bundled("poiseuille.ron"));
        assert_eq!(
            one,
            Simulation::<DVec2>::heap_bytes_per_particle(false, false, true)
        );
        let two = heap_bytes_per_particle(&bundled("two-layer-channel.ron"));
        assert_eq!(two, one + 72);
    }

    #[test]
    fn a_steady_start_is_the_analytical_layered_profile() {
        // Bird, Stewart & Lightfoot §2.5, through `lamella_post::reference::layered`.
        let mut case = bundled("interface-growth.ron");
        case.interface_perturbation = None;
        let reference = channel_reference(&case).expect("a two-layer channel");
        let p = initial_particles::<DVec2>(&case).unwrap();
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
    fn an_eigenmode_seed_adds_the_eigenfunction_at_every_fluid_particle() {
        // The mode of `lamella_post::stability` (Yih 1967) in SI, mapped here independently:
        // h = 0.6 mm, centre 0.6 mm, U_max from the peak coefficient, ε = −iA/h for the seed
        // A sin(kx); u' = U_max Re[ε φ'(ŷ) e^{ikx}], v' = U_max Re[−iα ε φ(ŷ) e^{ikx}].
        use lamella_post::stability::{LayeredChannel, StabilityProblem, c64};
        let mut case = bundled("interface-growth.ron");
        case.interface_perturbation.as_mut().unwrap().mode = lamella_case::SeedMode::Eigenmode;
        let reference = channel_reference(&case).expect("a two-layer channel");
        let channel = LayeredChannel::two_layer(20.0, 1.0).unwrap();
        let h = 0.6e-3;
        let force = case.body_force.as_ref().unwrap()[0];
        let peak = channel.base_flow().peak_coefficient() * 1000.0 * force * h * h / 2.0e-2;
        let alpha = std::f64::consts::PI;
        let mode = StabilityProblem::new(channel, 1000.0 * peak * h / 2.0e-2, alpha)
            .leading_mode()
            .unwrap();
        let epsilon = c64::new(0.0, -8.0e-6 / h);
        let p = initial_particles::<DVec2>(&case).unwrap();
        let mut largest_v: f64 = 0.0;
        for i in (0..p.len()).filter(|&i| p.kind[i] == Kind::Fluid) {
            let upper = p.phase[i] == 1;
            let (x, y) = (p.position[i].x / h, (p.position[i].y - h) / h);
            let wave = epsilon * c64::cis(alpha * x);
            let layer = usize::from(upper);
            let u = peak * (mode.derivative_in(layer, 1, y) * wave).re;
            let v = peak * (mode.derivative_in(layer, 0, y) * wave * c64::new(0.0, -alpha)).re;
            let steady = reference.steady_velocity_in_layer(p.position[i].y, upper);
            assert!(
                (p.velocity[i].x - steady - u).abs() < 1e-12 * peak,
                "particle {i}"
            );
            assert!((p.velocity[i].y - v).abs() < 1e-12 * peak, "particle {i}");
            largest_v = largest_v.max(v.abs());
        }
        // The mode moves the fluid: v' at the interface is about A k |U_i − c| ≈ 1e-4 m/s.
        assert!(largest_v > 1e-5, "{largest_v}");
        // The displacement seed alone leaves the vertical velocity zero.
        case.interface_perturbation.as_mut().unwrap().mode = lamella_case::SeedMode::Displacement;
        let plain = initial_particles::<DVec2>(&case).unwrap();
        assert!(plain.velocity.iter().all(|v| v.y == 0.0));
    }

    #[test]
    fn a_sub_spacing_seed_moves_the_interface_by_its_amplitude() {
        // A = 8e-6 m, a fifth of the 4e-5 m spacing, η = A sin(kx) = A cos(kx − π/2).
        let case = bundled("interface-growth.ron");
        let p = initial_particles::<DVec2>(&case).unwrap();
        let wave = InterfaceTracker::of(&case).expect("recorded").measure(&p);
        assert!((wave.amplitude / 8.0e-6 - 1.0).abs() < 0.01, "{wave:?}");
        assert!(
            (wave.phase + 0.5 * std::f64::consts::PI).abs() < 0.01,
            "{wave:?}"
        );
        assert!(wave.noise < 0.01 * wave.amplitude, "{wave:?}");
    }
}
