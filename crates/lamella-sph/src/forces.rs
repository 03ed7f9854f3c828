//! Rates of change of the fluid particles: momentum and continuity equations.

use glam::{DMat3, DVec3};
use lamella_cells::Vector;
use rayon::prelude::*;

use crate::kernel::Kernel;
use crate::neighbours::Neighbourhood;
use crate::particles::{Kind, Particles};
use crate::walls::InteractionState;

/// How the viscosity of a pair of particles is formed from the two particle viscosities.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PairViscosity {
    /// μab = 2 μa μb / (μa + μb): keeps the shear stress continuous across a viscosity jump.
    Harmonic,
    /// μab = (μa + μb) / 2, as in Morris, Fox & Zhu 1997.
    Arithmetic,
}

impl PairViscosity {
    /// The pair viscosity μab (Pa·s); both means reduce to μ when μa = μb.
    #[inline]
    pub fn mean(self, mu_a: f64, mu_b: f64) -> f64 {
        match self {
            PairViscosity::Harmonic => {
                let sum = mu_a + mu_b;
                if sum > 0.0 {
                    2.0 * mu_a * mu_b / sum
                } else {
                    0.0
                }
            }
            PairViscosity::Arithmetic => 0.5 * (mu_a + mu_b),
        }
    }
}

/// The constants of the rate evaluation.
#[derive(Clone, Copy, Debug)]
pub struct RateParameters<'a, V> {
    /// Smoothing kernel.
    pub kernel: Kernel,
    /// Body force per unit mass g (m/s²).
    pub body_force: V,
    /// Pair viscosity rule.
    pub pair_viscosity: PairViscosity,
    /// Density-diffusion coefficient δ (dimensionless; 0.1 is common practice).
    pub density_diffusion: f64,
    /// Sound speed c0 (m/s), scales the density diffusion.
    pub sound_speed: f64,
    /// Reference density ρ0 of each phase (kg/m³).
    pub reference_density: &'a [f64],
    /// 1/ρ0 of each phase (m³/kg), so that the pair loop multiplies instead of dividing.
    pub inverse_reference_density: &'a [f64],
    /// Factor on the viscous term, [`lattice_viscous_normalisation`] (1 leaves it unchanged).
    pub viscous_normalisation: f64,
    /// Whether a wall may pull fluid towards it: false holds the fluid–wall pair pressure p̃ at
    /// zero or above (see [`SolverConfig::wall_suction`](crate::SolverConfig::wall_suction)).
    pub wall_suction: bool,
}

/// The momentum rate of one particle, and the sums particle regularisation needs.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Rates<V> {
    /// dv/dt (m/s²).
    pub acceleration: V,
    /// ∇C = Σ_b V_b ∇_a W_ab (1/m), the particle-concentration gradient (Lind et al. 2012).
    pub concentration_gradient: V,
    /// Σ over fluid neighbours of another phase that are at most as viscous as this particle
    /// of V_b ∇_a W_ab (1/m): points towards the other phase. Zero away from an interface and
    /// on the runnier side of one, so that shifting ([`crate::shifting::shift`]) holds only
    /// the more viscous side's particles (both sides where the viscosities are equal) to the
    /// interface.
    pub interface_normal: V,
}

/// Fills `out[a]` for every particle (parallel map, each a fixed-order sum; zero for walls).
///
/// With r_ab = x_a − x_b, ∇_a W_ab = r_ab F(r), V_b = m_b/ρ_b and the states `seen` of
/// [`crate::walls::interaction_states`]:
/// - pressure force in the inter-particle averaged form of Hu & Adams 2006 (J. Comput. Phys.
///   213, eq. 8), stable across a phase interface:
///   −(1/m_a) Σ_b (V_a² + V_b²) p̃_ab ∇_a W_ab, p̃_ab = (ρ_b p_a + ρ_a p_b)/(ρ_a + ρ_b),
///   against a wall held at p̃_ab ≥ 0 unless `wall_suction`;
/// - viscous force after Morris, Fox & Zhu 1997 (J. Comput. Phys. 136, eq. 8):
///   Σ_b m_b 2 μ_ab/(ρ_a ρ_b) · (r_ab·∇_a W_ab)/(r² + 0.01 h²) · (v_a − ṽ_b), with μ_ab the
///   chosen pair mean, and μ_ab = μ_a against a wall;
///   times the constant `viscous_normalisation`;
/// - when `gradients` holds a velocity gradient G per particle (else it is empty), the rest of
///   the Newtonian viscous stress, ∇·(μ ∇uᵀ), in the symmetric form of the SPH divergence of a
///   tensor (Monaghan 1992, Annu. Rev. Astron. Astrophys. 30, §3):
///   (1/m_a) Σ_b V_a V_b (S_a + S_b)·∇_a W_ab with S = μ Gᵀ (S_b = S_a for a wall particle);
///   see [`transposed_viscous_stress`];
/// - plus the body force g.
pub fn particle_rates<V: Vector, N: Neighbourhood<V>>(
    params: &RateParameters<'_, V>,
    particles: &Particles<V>,
    seen: &[InteractionState<V>],
    gradients: &[DMat3],
    neighbours: &N,
    out: &mut [Rates<V>],
) {
    let full_stress = !gradients.is_empty();
    let h = params.kernel.smoothing_length();
    let eta2 = 0.01 * h * h;
    let viscous_scale = 2.0 * params.viscous_normalisation;
    let positions = &particles.position;
    out.par_iter_mut().enumerate().for_each(|(a, rates)| {
        if particles.kind[a] != Kind::Fluid {
            *rates = Rates::default();
            return;
        }
        let rho_a = seen[a].density;
        let p_a = seen[a].pressure;
        let m_a = particles.mass[a];
        let vol_a = seen[a].volume;
        let v_a = particles.velocity[a];
        let mu_a = particles.viscosity[a];
        let phase_a = particles.phase[a];
        let stress_a = if full_stress {
            transposed_viscous_stress(mu_a, &gradients[a])
        } else {
            DMat3::ZERO
        };
        let mut stress_force = DVec3::ZERO; // the ∇·(μ ∇uᵀ) part of m_a · acceleration
        let mut force = V::ZERO; // m_a · acceleration without body force
        let mut gradient = V::ZERO;
        let mut normal = V::ZERO;
        neighbours.for_each_neighbour(
            positions,
            a,
            // Inlined into the candidate scan so the sums stay in registers (measured about
            // 8 % faster a step with `lamella bench`).
            #[inline(always)]
            |b, r_ab, dist| {
                let f = params.kernel.gradient_factor(dist);
                let grad = r_ab * f;
                let seen_b = &seen[b];
                let (rho_b, vol_b) = (seen_b.density, seen_b.volume);
                let fluid_b = particles.kind[b] == Kind::Fluid;
                // Only a liquid at most as viscous as this particle's holds it to the
                // interface (see `Rates::interface_normal`).
                if fluid_b && particles.phase[b] != phase_a && particles.viscosity[b] <= mu_a {
                    normal += grad * vol_b;
                }
                gradient += grad * vol_b;
                let mut p_ab = (rho_b * p_a + rho_a * seen_b.pressure) / (rho_a + rho_b);
                if !fluid_b && !params.wall_suction {
                    p_ab = p_ab.max(0.0);
                }
                force -= grad * ((vol_a * vol_a + vol_b * vol_b) * p_ab);
                let mu_ab = if fluid_b {
                    params.pair_viscosity.mean(mu_a, particles.viscosity[b])
                } else {
                    mu_a
                };
                // m_a m_b / (ρ_a ρ_b) = V_a V_b.
                let r2 = dist * dist;
                let visc = viscous_scale * vol_a * vol_b * mu_ab * f * r2 / (r2 + eta2);
                force += (v_a - seen_b.viscous_velocity) * visc;
                if full_stress {
                    let stress_b = if fluid_b {
                        transposed_viscous_stress(particles.viscosity[b], &gradients[b])
                    } else {
                        stress_a
                    };
                    let grad3 = DVec3::from_array(std::array::from_fn(|i| {
                        if i < V::DIM { grad.get(i) } else { 0.0 }
                    }));
                    stress_force += (stress_a + stress_b) * grad3 * (vol_a * vol_b);
                }
            },
        );
        if full_stress {
            force += V::from_fn(|i| stress_force[i]);
        }
        *rates = Rates {
            acceleration: force / m_a + params.body_force,
            concentration_gradient: gradient,
            interface_normal: normal,
        };
    });
}

/// S = μ Gᵀ, the part of the Newtonian viscous stress μ(G + Gᵀ) (G_ij = ∂u_i/∂x_j) that the
/// Morris term leaves out: that term is a discrete ∇·(μ ∇u), which equals the divergence of
/// the full stress only where μ is uniform (there ∇·(μ ∇uᵀ) = μ ∇(∇·u) vanishes for an
/// incompressible flow). Across a viscosity jump the missing part carries the μ ∂v/∂x share of
/// the tangential stress and the second μ ∂v/∂y of the normal stress that the interface
/// conditions of Yih 1967 (J. Fluid Mech. 27, §2) need; without it a layered channel keeps its
/// steady profile but its interface waves run about 15 % fast (measured; see DEVELOPERS.md).
/// A particle without a gradient (too few fluid neighbours) has G = 0.
#[inline]
pub fn transposed_viscous_stress(viscosity: f64, gradient: &DMat3) -> DMat3 {
    if gradient.is_finite() {
        gradient.transpose() * viscosity
    } else {
        DMat3::ZERO
    }
}

/// How the fluid particles move during a step: their velocity v and, when particles are shifted,
/// the shifting velocity δv = δr/dt (empty when they are not). A particle moves with v + δv.
#[derive(Clone, Copy, Debug)]
pub struct ParticleMotion<'a, V> {
    /// Velocity of each particle (m/s), indexed like the particles.
    pub velocity: &'a [V],
    /// Shifting velocity of each particle (m/s), or empty for no shifting.
    pub shift: &'a [V],
}

/// Fills `out[a]` with dρ_a/dt (kg/m³/s) for every particle (parallel map, each a fixed-order
/// sum; zero for walls), following each fluid particle as it moves with w = v + δv.
///
/// Continuity with density diffusion (Molteni & Colagrossi 2009, Comput. Phys. Commun. 180;
/// Antuono et al. 2010, Comput. Phys. Commun. 181), diffusion over fluid neighbours only and on
/// ρ/ρ0 so phases of different ρ0 do not exchange mass:
/// dρ_a/dt = ρ_a Σ_b V_b (w_a − w_b)·∇_a W_ab + Σ_b V_b (ρ_a δv_a + ρ_b δv_b)·∇_a W_ab
///           + δ h c0 Σ_b 2 ρ0_a (ρ_a/ρ0_a − ρ_b/ρ0_b) F V_b.
///
/// A shifted particle does not move with the fluid, so its density follows the arbitrary
/// Lagrangian–Eulerian form dρ/dt = −ρ ∇·w + ∇·(ρ δv) (= −ρ ∇·v + δv·∇ρ; Sun, Colagrossi,
/// Marrone, Antuono & Zhang 2019, "A consistent approach to particle shifting in the δ-Plus-SPH
/// model", Comput. Methods Appl. Mech. Eng. 348, §3; the discrete form here is ours): the first
/// sum is the change of the particle's kernel sum along its actual path, so a density that
/// shifting has evened out is not left with the compression that the disorder before it caused;
/// the second is antisymmetric in a and b, so it moves density between particles and changes
/// Σ_a V_a ρ_a by nothing. Without shifting both reduce to the plain continuity equation.
///
/// A wall particle enters with w_b = 0, the velocity of its own motion (wall particles keep
/// their place); its sliding velocity only enters the viscous term. A belt velocity here would
/// act as a sink or source where the belt ends: at the top corners of a lid-driven cavity the
/// corner particle at rest sees Σ V_b U ∂W/∂x over the lid particles on one side only, which
/// emptied that corner and pulled the particle into the lid.
pub fn density_rates<V: Vector, N: Neighbourhood<V>>(
    params: &RateParameters<'_, V>,
    particles: &Particles<V>,
    motion: ParticleMotion<'_, V>,
    seen: &[InteractionState<V>],
    neighbours: &N,
    out: &mut [f64],
) {
    let h = params.kernel.smoothing_length();
    let diffusion = params.density_diffusion * h * params.sound_speed;
    let inverse_reference = params.inverse_reference_density;
    let positions = &particles.position;
    let shifted = !motion.shift.is_empty();
    let shift_of = |b: usize| if shifted { motion.shift[b] } else { V::ZERO };
    out.par_iter_mut().enumerate().for_each(|(a, rate)| {
        if particles.kind[a] != Kind::Fluid {
            *rate = 0.0;
            return;
        }
        let rho_a = seen[a].density;
        let shift_a = shift_of(a);
        let w_a = motion.velocity[a] + shift_a;
        let flux_a = shift_a * rho_a;
        let phase_a = particles.phase[a] as usize;
        let rho0_a = params.reference_density[phase_a];
        let relative_a = rho_a * inverse_reference[phase_a];
        let mut continuity = 0.0;
        let mut shift_flux = 0.0;
        let mut diffusion_sum = 0.0;
        neighbours.for_each_neighbour(
            positions,
            a,
            // Inlined into the candidate scan, as in `particle_rates`.
            #[inline(always)]
            |b, r_ab, dist| {
                let f = params.kernel.gradient_factor(dist);
                let grad = r_ab * f;
                let seen_b = &seen[b];
                let vol_b = seen_b.volume;
                if particles.kind[b] == Kind::Fluid {
                    let shift_b = shift_of(b);
                    let w_b = motion.velocity[b] + shift_b;
                    continuity += vol_b * (w_a - w_b).dot(grad);
                    if shifted {
                        shift_flux += vol_b * (flux_a + shift_b * seen_b.density).dot(grad);
                    }
                    let relative_b =
                        seen_b.density * inverse_reference[particles.phase[b] as usize];
                    diffusion_sum += 2.0 * rho0_a * (relative_a - relative_b) * f * vol_b;
                } else {
                    continuity += vol_b * w_a.dot(grad);
                    if shifted {
                        shift_flux += vol_b * flux_a.dot(grad);
                    }
                }
            },
        );
        *rate = rho_a * continuity + shift_flux + diffusion * diffusion_sum;
    });
}

/// The factor that makes the Morris viscous operator exact for quadratic velocity fields on the
/// initial lattice (square/cubic, spacing `spacing`).
///
/// The Morris term is a kernel estimate of ∇²v; applied to v = ½|x|² at a lattice site it gives
/// −Σ_b V_b F(r) r² · r²/(r² + 0.01 h²) instead of the exact d. For Wendland C2 at h = 1.3 dx that
/// sum is about 0.963·d in 2D, which makes a Poiseuille profile 4 % too fast. The returned
/// factor d / sum is the scalar (trace) form of the second-derivative normalisation of Fatehi &
/// Manzari 2011 (Comput. Math. Appl. 61, 482–498), evaluated once on the lattice so that the
/// pair forces stay antisymmetric and momentum is conserved exactly.
pub fn lattice_viscous_normalisation(kernel: &Kernel, spacing: f64, dim: usize) -> f64 {
    let h = kernel.smoothing_length();
    let eta2 = 0.01 * h * h;
    let reach = (kernel.support_radius() / spacing).ceil() as i64;
    let volume = spacing.powi(dim as i32);
    let mut sum = 0.0;
    let k_range = if dim == 3 { -reach..=reach } else { 0..=0 };
    for k in k_range {
        for j in -reach..=reach {
            for i in -reach..=reach {
                if i == 0 && j == 0 && k == 0 {
                    continue;
                }
                let r2 = ((i * i + j * j + k * k) as f64) * spacing * spacing;
                let r = r2.sqrt();
                sum -= volume * kernel.gradient_factor(r) * r2 * r2 / (r2 + eta2);
            }
        }
    }
    dim as f64 / sum
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eos::{EquationOfState, StateLaw};
    use crate::kernel::KernelKind;
    use crate::neighbours::brute_force::BruteForce;
    use crate::walls::interaction_states;
    use glam::DVec2;

    /// Rate parameters with δ = 0.1, c0 = 10 m/s and no viscous normalisation.
    fn test_parameters<'a>(
        kernel: Kernel,
        reference_density: &'a [f64],
        inverse_reference_density: &'a [f64],
        body_force: DVec2,
        pair_viscosity: PairViscosity,
    ) -> RateParameters<'a, DVec2> {
        RateParameters {
            kernel,
            body_force,
            pair_viscosity,
            density_diffusion: 0.1,
            sound_speed: 10.0,
            reference_density,
            inverse_reference_density,
            viscous_normalisation: 1.0,
            wall_suction: true,
        }
    }

    #[test]
    fn pair_means_reduce_to_the_common_value_and_order_correctly() {
        for rule in [PairViscosity::Harmonic, PairViscosity::Arithmetic] {
            assert!((rule.mean(0.3, 0.3) - 0.3).abs() < 1e-15);
        }
        assert!((PairViscosity::Harmonic.mean(1.0, 4.0) - 1.6).abs() < 1e-15);
        assert!((PairViscosity::Arithmetic.mean(1.0, 4.0) - 2.5).abs() < 1e-15);
    }

    /// The interaction states of `p` under a linear equation of state with c0 = 10 m/s and the
    /// given background pressure (Pa), no body force.
    fn wall_and_fluid_states(
        p: &Particles<DVec2>,
        nb: &BruteForce<DVec2>,
        kernel: &Kernel,
        rho0: &[f64],
        background_pressure: f64,
    ) -> Vec<InteractionState<DVec2>> {
        let law = StateLaw {
            form: EquationOfState::Linear,
            sound_speed: 10.0,
            background_pressure,
        };
        let mut seen = vec![InteractionState::default(); p.len()];
        interaction_states(kernel, &law, DVec2::ZERO, rho0, p, nb, None, &mut seen);
        seen
    }

    /// A jittered periodic box of fluid of two phases.
    fn periodic_box() -> (Particles<DVec2>, BruteForce<DVec2>, Kernel) {
        let n = 10;
        let dx = 0.1;
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let mut p = Particles::default();
        for k in 0..n * n {
            let (i, j) = (k % n, k / n);
            let jitter = ((k * 7919) % 13) as f64 / 13.0 - 0.5;
            let x = DVec2::new((i as f64 + 0.5 + 0.2 * jitter) * dx, (j as f64 + 0.5) * dx);
            p.position.push(x);
            p.initial_position.push(x);
            p.velocity.push(DVec2::new((j as f64).sin(), 0.3 * jitter));
            p.density.push(1000.0 * (1.0 + 0.001 * jitter));
            p.pressure.push(0.0);
            p.mass.push(1000.0 * dx * dx);
            p.phase.push(if j < 5 { 0 } else { 1 });
            p.viscosity.push(if j < 5 { 1.0 } else { 4.0 });
            p.kind.push(Kind::Fluid);
            p.id.push(k as u64);
        }
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(1.0, 1.0),
        };
        (p, nb, kernel)
    }

    /// Continuity in the form of a particle that moves with w = v + δv, dρ/dt = −ρ ∇·v + δv·∇ρ
    /// (Sun et al. 2019, Comput. Methods Appl. Mech. Eng. 348, §3): a shift through a density
    /// that is uniform, with the fluid at rest, changes no density, however uneven the shift.
    /// On an unjittered periodic lattice Σ_b V_b ∇_a W_ab = 0, so the discrete form must give
    /// zero to round-off; the same shift without its flux term would not.
    #[test]
    fn a_shift_through_uniform_density_changes_no_density() {
        let (mut p, nb, kernel) = periodic_box();
        let n = 10;
        for k in 0..n * n {
            let (i, j) = (k % n, k / n);
            p.position[k] = DVec2::new((i as f64 + 0.5) * 0.1, (j as f64 + 0.5) * 0.1);
            p.velocity[k] = DVec2::ZERO;
            p.density[k] = 1000.0;
        }
        let shift: Vec<DVec2> = (0..n * n)
            .map(|k| DVec2::new((k as f64 * 0.7).sin(), (k as f64 * 1.3).cos()) * 1e-3)
            .collect();
        let rho0 = [1000.0, 1000.0];
        let seen = wall_and_fluid_states(&p, &nb, &kernel, &rho0, 0.0);
        let inverse = rho0.map(|r| 1.0 / r);
        let params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::ZERO,
            PairViscosity::Harmonic,
        );
        let mut rates = vec![1.0; p.len()];
        let shifted = ParticleMotion {
            velocity: &p.velocity,
            shift: &shift,
        };
        density_rates(&params, &p, shifted, &seen, &nb, &mut rates);
        let largest = rates.iter().fold(0.0f64, |m, r| m.max(r.abs()));
        assert!(largest < 1e-9, "largest dρ/dt {largest} kg/m³/s");
        // The same particles moved by v = δv instead change density: the shift's own
        // compression is there and the flux term is what cancels it.
        let moving = ParticleMotion {
            velocity: &shift,
            shift: &[],
        };
        density_rates(&params, &p, moving, &seen, &nb, &mut rates);
        let largest = rates.iter().fold(0.0f64, |m, r| m.max(r.abs()));
        assert!(largest > 1e-3, "largest dρ/dt {largest} kg/m³/s");
    }

    #[test]
    fn internal_forces_conserve_momentum_and_continuity_conserves_mass() {
        let (p, nb, kernel) = periodic_box();
        let rho0 = [1000.0, 1000.0];
        let seen = wall_and_fluid_states(&p, &nb, &kernel, &rho0, 100.0);
        let inverse = rho0.map(|r| 1.0 / r);
        let params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::ZERO,
            PairViscosity::Harmonic,
        );
        let mut rates = vec![Rates::default(); p.len()];
        particle_rates(&params, &p, &seen, &[], &nb, &mut rates);
        let momentum_rate: DVec2 = rates
            .iter()
            .zip(&p.mass)
            .fold(DVec2::ZERO, |s, (r, &m)| s + r.acceleration * m);
        let scale: f64 = rates
            .iter()
            .zip(&p.mass)
            .map(|(r, &m)| (r.acceleration * m).length())
            .sum();
        assert!(scale > 0.0);
        assert!(
            momentum_rate.length() < 1e-12 * scale,
            "{momentum_rate} vs {scale}"
        );
        // Away from the interface there is no interface normal (next to it, see
        // `only_the_more_viscous_side_has_an_interface_normal`).
        assert_eq!(rates[2 * 10 + 3].interface_normal, DVec2::ZERO);
    }

    /// Appends a lattice site of water (ρ0 = 1000 kg/m³, 1 mPa·s, phase 0) at `x`: a fluid
    /// particle, or a wall particle when `fluid` is false.
    fn push_water_site(
        p: &mut Particles<DVec2>,
        x: DVec2,
        dx: f64,
        velocity: DVec2,
        density: f64,
        fluid: bool,
    ) {
        p.position.push(x);
        p.initial_position.push(x);
        p.velocity.push(velocity);
        p.density.push(density);
        p.pressure.push(0.0);
        p.mass.push(1000.0 * dx * dx);
        p.phase.push(0);
        p.viscosity.push(1.0e-3);
        p.kind.push(if fluid { Kind::Fluid } else { Kind::Wall });
        p.id.push(p.id.len() as u64);
    }

    #[test]
    fn a_lid_sliding_over_fluid_at_rest_changes_no_density() {
        // A 6 × 6 box of fluid at rest in three wall rows; the top rows slide along +x and end
        // at the side walls, as a cavity lid does. Its sliding must not enter continuity: the
        // corner particle would otherwise see Σ V_b U ∂W/∂x over lid particles on one side.
        let dx = 0.1;
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let mut p = Particles::default();
        for j in -3..9 {
            for i in -3..9 {
                let fluid = (0..6).contains(&i) && (0..6).contains(&j);
                let lid = j >= 6 && (0..6).contains(&i);
                let x = DVec2::new((i as f64 + 0.5) * dx, (j as f64 + 0.5) * dx);
                let velocity = if lid {
                    DVec2::new(1.0, 0.0)
                } else {
                    DVec2::ZERO
                };
                push_water_site(&mut p, x, dx, velocity, 1000.0, fluid);
            }
        }
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::ZERO,
        };
        let rho0 = [1000.0];
        let seen = wall_and_fluid_states(&p, &nb, &kernel, &rho0, 0.0);
        let inverse = rho0.map(|r| 1.0 / r);
        let params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::ZERO,
            PairViscosity::Harmonic,
        );
        let mut rates = vec![1.0; p.len()];
        let still = ParticleMotion {
            velocity: &p.velocity,
            shift: &[],
        };
        density_rates(&params, &p, still, &seen, &nb, &mut rates);
        assert!(rates.iter().all(|&r| r == 0.0), "{rates:?}");
        // The lid still drags the fluid through the viscous term.
        let mut momentum = vec![Rates::default(); p.len()];
        particle_rates(&params, &p, &seen, &[], &nb, &mut momentum);
        let corner = (5 + 3) * 12 + 3; // fluid site (0, 5), under the lid's left end
        assert!(momentum[corner].acceleration.x > 0.0);
    }

    /// A row of fluid at rest in suction (ρ below ρ0, so p = c0² (ρ − ρ0) = −100 Pa) under
    /// three rows of wall, which continue its pressure (Adami et al. 2012): with wall suction
    /// the wall pulls the row up, towards itself; without it the fluid–wall pair pressure is
    /// held at zero and nothing pulls (the row's own pairs are horizontal).
    #[test]
    fn a_wall_pulls_fluid_in_suction_only_with_wall_suction() {
        let dx = 0.1;
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let mut p = Particles::default();
        for j in 0..4 {
            for i in -3..9 {
                let fluid = j == 0 && (0..6).contains(&i);
                if j == 0 && !fluid {
                    continue;
                }
                let x = DVec2::new((i as f64 + 0.5) * dx, (j as f64 + 0.5) * dx);
                push_water_site(&mut p, x, dx, DVec2::ZERO, 999.0, fluid);
            }
        }
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::ZERO,
        };
        let rho0 = [1000.0];
        let seen = wall_and_fluid_states(&p, &nb, &kernel, &rho0, 0.0);
        assert!(
            (seen[2].pressure + 100.0).abs() < 1e-9,
            "{}",
            seen[2].pressure
        );
        let inverse = rho0.map(|r| 1.0 / r);
        let mut params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::ZERO,
            PairViscosity::Harmonic,
        );
        let mut rates = vec![Rates::default(); p.len()];
        particle_rates(&params, &p, &seen, &[], &nb, &mut rates);
        let middle = 2; // fluid site (2, 0), the first six particles are the row
        // Of the order of |p|/(ρ dx) = 1 m/s².
        assert!(
            rates[middle].acceleration.y > 0.5,
            "{}",
            rates[middle].acceleration
        );
        params.wall_suction = false;
        particle_rates(&params, &p, &seen, &[], &nb, &mut rates);
        assert!(
            rates[..6].iter().all(|r| r.acceleration.y.abs() < 1e-12),
            "{:?}",
            rates[..6]
                .iter()
                .map(|r| r.acceleration)
                .collect::<Vec<_>>()
        );
    }

    /// Shifting's interface restriction holds the more viscous side only: in the two-phase box
    /// (rows 0–4 of viscosity 1, rows 5–9 of viscosity 4) a particle of row 4 has no interface
    /// normal, one of row 5 has one pointing down, towards the runnier rows; with equal
    /// viscosities both sides have one.
    #[test]
    fn only_the_more_viscous_side_has_an_interface_normal() {
        let (p, nb, kernel) = periodic_box();
        let rho0 = [1000.0, 1000.0];
        let inverse = rho0.map(|r| 1.0 / r);
        let params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::ZERO,
            PairViscosity::Harmonic,
        );
        let normals = |p: &Particles<DVec2>| {
            let seen = wall_and_fluid_states(p, &nb, &kernel, &rho0, 0.0);
            let mut rates = vec![Rates::default(); p.len()];
            particle_rates(&params, p, &seen, &[], &nb, &mut rates);
            (
                rates[4 * 10 + 3].interface_normal,
                rates[5 * 10 + 3].interface_normal,
            )
        };
        let (runny, viscous) = normals(&p);
        assert_eq!(runny, DVec2::ZERO);
        assert!(viscous.y < -10.0 * viscous.x.abs(), "{viscous}");
        let mut equal = p.clone();
        equal.viscosity.fill(1.0);
        let (lower, upper) = normals(&equal);
        assert!(lower.y > 10.0 * lower.x.abs(), "{lower}");
        assert!(upper.y < -10.0 * upper.x.abs(), "{upper}");
    }

    #[test]
    fn uniform_shear_gives_no_viscous_force_in_the_bulk() {
        // v = (y, 0) on a regular lattice: the Morris term is a Laplacian, zero for linear v.
        let (mut p, nb, kernel) = periodic_box();
        for k in 0..p.len() {
            let i = k % 10;
            let j = k / 10;
            p.position[k] = DVec2::new((i as f64 + 0.5) * 0.1, (j as f64 + 0.5) * 0.1);
            p.velocity[k] = DVec2::new(p.position[k].y, 0.0);
            p.density[k] = 1000.0;
            p.viscosity[k] = 1.0;
            p.phase[k] = 0;
        }
        let rho0 = [1000.0];
        let seen = wall_and_fluid_states(&p, &nb, &kernel, &rho0, 0.0);
        let inverse = rho0.map(|r| 1.0 / r);
        let params = test_parameters(
            kernel,
            &rho0,
            &inverse,
            DVec2::new(0.5, 0.0),
            PairViscosity::Arithmetic,
        );
        let mut rates = vec![Rates::default(); p.len()];
        particle_rates(&params, &p, &seen, &[], &nb, &mut rates);
        // Row 5 is far from the periodic seam in y, where the linear profile breaks.
        let a = rates[5 * 10 + 4].acceleration;
        assert!((a - DVec2::new(0.5, 0.0)).length() < 1e-10, "{a}");
        assert!(rates[5 * 10 + 4].concentration_gradient.length() < 1e-9);
    }
}

#[cfg(test)]
mod normalisation_tests {
    use super::*;
    use crate::kernel::KernelKind;

    #[test]
    fn lattice_normalisation_corrects_the_known_wendland_deficit() {
        // Wendland C2, h = 1.3 dx in 2D: the lattice sum is about 0.963 d (computed by hand).
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3, 2);
        let c = lattice_viscous_normalisation(&kernel, 1.0, 2);
        assert!((c - 1.0 / 0.9627).abs() < 1e-3, "{c}");
        // A wide kernel on a fine lattice approaches the continuous value (η² costs ~1 %).
        let wide = Kernel::new(KernelKind::QuinticSpline, 2.0, 3);
        let c3 = lattice_viscous_normalisation(&wide, 1.0, 3);
        assert!((c3 - 1.0).abs() < 0.03, "{c3}");
    }
}
