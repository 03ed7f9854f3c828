//! What each particle presents to its neighbours: pressure, density and the velocity used in the
//! viscous term. For fluid particles these are their own; for wall (dummy) particles they follow
//! the generalised wall condition of Adami, Hu & Adams 2012 (J. Comput. Phys. 231, 7057–7075).

use lamella_cells::Vector;
use rayon::prelude::*;

use crate::eos::StateLaw;
use crate::kernel::Kernel;
use crate::neighbours::Neighbourhood;
use crate::particles::{Kind, Particles};

/// The values a particle shows to its neighbours in the force and continuity sums.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct InteractionState<V> {
    /// Pressure (Pa).
    pub pressure: f64,
    /// Density (kg/m³).
    pub density: f64,
    /// Volume m/ρ (m³, m² in 2D) with this density.
    pub volume: f64,
    /// Velocity entering the viscous term (m/s): own velocity for fluid, the extrapolated
    /// no-slip velocity for walls.
    pub viscous_velocity: V,
}

/// Fills `out[i]` for every particle (parallel map, each entry a fixed-order sum).
///
/// Fluid a: p_a = p(ρ_a), ρ_a, v_a. Wall w, summing over fluid neighbours f with W_wf
/// (Adami, Hu & Adams 2012, eqs. 22–27, walls at rest or moving uniformly so a_w = 0):
/// - p_w = (Σ_f p_f W_wf + g · Σ_f ρ_f r_wf W_wf) / Σ_f W_wf, r_wf = x_w − x_f,
/// - ρ_w = ρ(p_w) by the inverse equation of state,
/// - ṽ_w = 2 v_w − Σ_f v_f W_wf / Σ_f W_wf (no-slip by extrapolation).
///
/// A wall particle with no fluid neighbour takes p = p(ρ0), ρ0 and its own velocity.
pub fn interaction_states<V: Vector, N: Neighbourhood<V>>(
    kernel: &Kernel,
    law: &StateLaw,
    body_force: V,
    reference_density: &[f64],
    particles: &Particles<V>,
    neighbours: &N,
    out: &mut [InteractionState<V>],
) {
    let positions = &particles.position;
    out.par_iter_mut().enumerate().for_each(|(i, state)| {
        let rho0 = reference_density[particles.phase[i] as usize];
        if particles.kind[i] == Kind::Fluid {
            let rho = particles.density[i];
            *state = InteractionState {
                pressure: law.pressure(rho, rho0),
                density: rho,
                volume: particles.mass[i] / rho,
                viscous_velocity: particles.velocity[i],
            };
            return;
        }
        let mut weight = 0.0;
        let mut pressure_sum = 0.0;
        let mut hydrostatic = V::ZERO;
        let mut velocity_sum = V::ZERO;
        neighbours.for_each_neighbour(positions, i, |f, r_wf, dist| {
            if particles.kind[f] != Kind::Fluid {
                return;
            }
            let w = kernel.value(dist);
            let rho_f = particles.density[f];
            let rho0_f = reference_density[particles.phase[f] as usize];
            weight += w;
            pressure_sum += law.pressure(rho_f, rho0_f) * w;
            hydrostatic += r_wf * (rho_f * w);
            velocity_sum += particles.velocity[f] * w;
        });
        let own_velocity = particles.velocity[i];
        *state = if weight > 0.0 {
            let pressure = (pressure_sum + body_force.dot(hydrostatic)) / weight;
            let density = law.density(pressure, rho0);
            InteractionState {
                pressure,
                density,
                volume: particles.mass[i] / density,
                viscous_velocity: own_velocity * 2.0 - velocity_sum / weight,
            }
        } else {
            InteractionState {
                pressure: law.pressure(rho0, rho0),
                density: rho0,
                volume: particles.mass[i] / rho0,
                viscous_velocity: own_velocity,
            }
        };
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eos::EquationOfState;
    use crate::kernel::KernelKind;
    use crate::neighbours::brute_force::BruteForce;
    use glam::DVec2;

    /// A column of fluid over a wall, periodic in x, fluid in hydrostatic balance.
    fn column(g: f64, fluid_velocity: DVec2) -> (Particles<DVec2>, Kernel, StateLaw) {
        let dx = 0.1;
        let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
        let law = StateLaw {
            form: EquationOfState::Linear,
            sound_speed: 10.0,
            background_pressure: 0.0,
        };
        let mut p = Particles::default();
        for row in -3..8 {
            for col in 0..8 {
                let y = (row as f64 + 0.5) * dx;
                let fluid = row >= 0;
                // Hydrostatic density: p = ρ0 g (H − y), H = 0.8.
                let rho = if fluid {
                    law.density(1000.0 * g * (0.8 - y), 1000.0)
                } else {
                    1000.0
                };
                p.position.push(DVec2::new((col as f64 + 0.5) * dx, y));
                p.velocity
                    .push(if fluid { fluid_velocity } else { DVec2::ZERO });
                p.density.push(rho);
                p.pressure.push(0.0);
                p.mass.push(1000.0 * dx * dx);
                p.viscosity.push(1.0);
                p.phase.push(0);
                p.kind.push(if fluid { Kind::Fluid } else { Kind::Wall });
                p.id.push(p.id.len() as u64);
                p.initial_position.push(p.position[p.position.len() - 1]);
            }
        }
        (p, kernel, law)
    }

    #[test]
    fn wall_pressure_continues_the_hydrostatic_profile() {
        let g = 9.81;
        let (p, kernel, law) = column(g, DVec2::ZERO);
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(0.8, 0.0),
        };
        let mut out = vec![InteractionState::default(); p.len()];
        interaction_states(
            &kernel,
            &law,
            DVec2::new(0.0, -g),
            &[1000.0],
            &p,
            &nb,
            &mut out,
        );
        // First wall row below the fluid (y = −0.05): expect about ρ0 g (0.8 + 0.05).
        let first_wall = 2 * 8;
        let expected = 1000.0 * g * 0.85;
        let got = out[first_wall].pressure;
        assert!(
            (got - expected).abs() < 0.02 * expected,
            "{got} vs {expected}"
        );
    }

    #[test]
    fn wall_velocity_is_extrapolated_for_no_slip() {
        let (p, kernel, law) = column(0.0, DVec2::new(1.0, 0.0));
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(0.8, 0.0),
        };
        let mut out = vec![InteractionState::default(); p.len()];
        interaction_states(&kernel, &law, DVec2::ZERO, &[1000.0], &p, &nb, &mut out);
        assert_eq!(out[2 * 8].viscous_velocity, DVec2::new(-1.0, 0.0));
        assert_eq!(out[0].viscous_velocity, DVec2::ZERO, "no fluid in reach");
        assert_eq!(out[3 * 8].viscous_velocity, DVec2::new(1.0, 0.0));
    }
}
