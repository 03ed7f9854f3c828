//! What each particle presents to its neighbours: pressure, density and the velocity used in the
//! viscous term. For fluid particles these are their own; for wall (dummy) particles they follow
//! the generalised wall condition of Adami, Hu & Adams 2012 (J. Comput. Phys. 231, 7057–7075).

use lamella_cells::Vector;
use rayon::prelude::*;

use crate::eos::StateLaw;
use crate::kernel::Kernel;
use crate::neighbours::Neighbourhood;
use crate::particles::{Kind, Particles};
use crate::shear_rate::Flow;
use crate::velocity_fit::{QuadraticFit, quadratic_velocity_fit};

/// How the velocity a wall particle shows the viscous term continues the fluid's profile.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum NoSlip<V> {
    /// ṽ_w = 2 v_w − Σ_f v_f W_wf / Σ_f W_wf (Adami, Hu & Adams 2012, eq. 23): the kernel
    /// average of the fluid nearby stands for the fluid at the wall particle's mirror point.
    /// First order: on a curved profile (Poiseuille flow) the wall drags too little.
    Averaged,
    /// ṽ_w = 2 v_w − u(x_m) + Σ_a ∂²u/∂x_a² d_a²: the no-slip continuation across the wall of
    /// a quadratic profile, u(x_m) the fluid velocity at the mirror point x_m by a second-order
    /// Taylor expansion from each fluid neighbour ([`NearWallFlow`]), d_a the wall particle's
    /// distance beyond the wall face on axis a. Fluid in a corner (within a kernel support of
    /// two faces) or next to another liquid enters with its own velocity, as in
    /// [`NoSlip::Averaged`]. The walls are the faces of the box `[lower, upper]` on the axes
    /// that are not periodic.
    Quadratic {
        /// Lower corner of the box whose faces are the walls (m).
        lower: V,
        /// Upper corner (m).
        upper: V,
    },
}

/// The fluid's velocity field to second order next to the walls, which [`NoSlip::Quadratic`]
/// takes; a buffer reused every step.
#[derive(Clone, Debug, Default)]
pub struct NearWallFlow<V> {
    /// The [`quadratic_velocity_fit`] of each fluid particle within one support of exactly one
    /// wall face; `None` elsewhere (corners included) or where it is undefined (next to an
    /// interface, too few neighbours).
    fit: Vec<Option<QuadraticFit<V>>>,
}

impl<V: Vector> NearWallFlow<V> {
    /// Heap bytes per particle: one fit.
    pub const BYTES_PER_PARTICLE: usize = std::mem::size_of::<Option<QuadraticFit<V>>>();

    /// Fits the velocity around every fluid particle within one support of a wall face of
    /// `walls` on the axes where `walled` is true (the fluid neighbours of wall particles); a
    /// parallel map, each a fixed-order sum. Within one support of two faces (a corner) and
    /// next to another liquid there is no fit, so the wall particles there take the fluid's own
    /// velocities, Adami's first-order average: the flow at a lid corner is singular, and a
    /// quadratic fitted over a quarter of a support and carried across both faces pushed a
    /// particle through the side wall of a viscous cavity within a quarter of a lid transit
    /// (measured; DEVELOPERS.md).
    pub fn evaluate<N: Neighbourhood<V>>(
        &mut self,
        (lower, upper): (V, V),
        walled: [bool; 3],
        kernel: &Kernel,
        particles: &Particles<V>,
        neighbours: &N,
    ) {
        let p = particles;
        let reach = kernel.support_radius();
        let flow = Flow {
            position: &p.position,
            velocity: &p.velocity,
            kind: &p.kind,
        };
        self.fit.resize(p.len(), None);
        self.fit.par_iter_mut().enumerate().for_each(|(a, fit)| {
            *fit = if faces_within(p.position[a], (lower, upper), walled, reach) == 1 {
                quadratic_velocity_fit(
                    neighbours,
                    a,
                    flow,
                    |b| p.mass[b] / p.density[b],
                    kernel,
                    &p.phase,
                )
            } else {
                None
            };
        });
    }

    /// The velocity fluid particle `f` predicts at `delta` from its position (second-order
    /// Taylor expansion) minus Σ_a ∂²u/∂x_a² d_a², d the wall particle's distances beyond each
    /// face; without a fit (corners), its own velocity.
    fn continued(&self, particles: &Particles<V>, f: usize, delta: V, beyond: [f64; 3]) -> V {
        let u = particles.velocity[f];
        let Some(fit) = &self.fit[f] else {
            return u;
        };
        let mut u = u + fit.change(delta);
        for (axis, d) in beyond.iter().enumerate().take(V::DIM) {
            if *d != 0.0 {
                u -= fit.curvature(axis) * (d * d);
            }
        }
        u
    }
}

/// How many faces of `[lower, upper]` on walled axes lie closer to `x` than `reach` (m).
fn faces_within<V: Vector>(x: V, (lower, upper): (V, V), walled: [bool; 3], reach: f64) -> usize {
    (0..V::DIM)
        .filter(|&axis| walled[axis])
        .filter(|&axis| (x.get(axis) - lower.get(axis)).min(upper.get(axis) - x.get(axis)) < reach)
        .count()
}

/// The mirror image of a wall particle at `x` across every face of `[lower, upper]` it lies
/// beyond, and its distance beyond each (zero on the axes where it is inside).
pub fn mirror<V: Vector>(x: V, lower: V, upper: V) -> (V, [f64; 3]) {
    let mut image = x;
    let mut beyond = [0.0; 3];
    for (axis, distance) in beyond.iter_mut().enumerate().take(V::DIM) {
        let c = x.get(axis);
        let face = if c < lower.get(axis) {
            lower.get(axis)
        } else if c > upper.get(axis) {
            upper.get(axis)
        } else {
            continue;
        };
        image.set(axis, 2.0 * face - c);
        *distance = c - face;
    }
    (image, beyond)
}

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
/// - ṽ_w = 2 v_w − Σ_f v_f W_wf / Σ_f W_wf (no-slip by extrapolation), or with `near_wall`
///   given ([`NoSlip::Quadratic`]) v_f replaced by what f predicts at the mirror point minus the
///   curvature term ([`NearWallFlow`]).
///
/// A wall particle with no fluid neighbour takes p = p(ρ0), ρ0 and its own velocity.
// The state law, body force and reference densities are what every caller has at hand
// separately; bundling them only for this call would add a type and no meaning.
#[allow(clippy::too_many_arguments)]
pub fn interaction_states<V: Vector, N: Neighbourhood<V>>(
    kernel: &Kernel,
    law: &StateLaw,
    body_force: V,
    reference_density: &[f64],
    particles: &Particles<V>,
    neighbours: &N,
    near_wall: Option<(&NearWallFlow<V>, V, V)>,
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
        let mirrored =
            near_wall.map(|(flow, lower, upper)| (flow, mirror(positions[i], lower, upper)));
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
            velocity_sum += match mirrored {
                // From f to the mirror point: r_wf (minimum image) then wall particle to image.
                Some((flow, (image, beyond))) => {
                    flow.continued(particles, f, image - positions[i] + r_wf, beyond)
                }
                None => particles.velocity[f],
            } * w;
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

    /// The interaction states of `p` over a brute-force search periodic in x (period 0.8).
    fn states(
        p: &Particles<DVec2>,
        kernel: &Kernel,
        law: &StateLaw,
        g: f64,
        near_wall: Option<(&NearWallFlow<DVec2>, DVec2, DVec2)>,
    ) -> Vec<InteractionState<DVec2>> {
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(0.8, 0.0),
        };
        let mut out = vec![InteractionState::default(); p.len()];
        let body_force = DVec2::new(0.0, -g);
        interaction_states(
            kernel,
            law,
            body_force,
            &[1000.0],
            p,
            &nb,
            near_wall,
            &mut out,
        );
        out
    }

    #[test]
    fn wall_pressure_continues_the_hydrostatic_profile() {
        let g = 9.81;
        let (p, kernel, law) = column(g, DVec2::ZERO);
        let out = states(&p, &kernel, &law, g, None);
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
        let out = states(&p, &kernel, &law, 0.0, None);
        assert_eq!(out[2 * 8].viscous_velocity, DVec2::new(-1.0, 0.0));
        assert_eq!(out[0].viscous_velocity, DVec2::ZERO, "no fluid in reach");
        assert_eq!(out[3 * 8].viscous_velocity, DVec2::new(1.0, 0.0));
    }

    #[test]
    fn mirror_reflects_across_every_face_passed() {
        let lower = DVec2::new(0.0, 0.0);
        let upper = DVec2::new(1.0, 2.0);
        let (image, beyond) = mirror(DVec2::new(0.5, -0.15), lower, upper);
        assert!((image - DVec2::new(0.5, 0.15)).length() < 1e-15);
        assert_eq!(beyond, [0.0, -0.15, 0.0]);
        // A corner particle beyond the right and the top face.
        let (image, beyond) = mirror(DVec2::new(1.05, 2.25), lower, upper);
        assert!((image - DVec2::new(0.95, 1.75)).length() < 1e-12);
        assert!((beyond[0] - 0.05).abs() < 1e-12 && (beyond[1] - 0.25).abs() < 1e-12);
    }

    /// The wall velocity for a plane Poiseuille profile u = y (H − y) over a wall at y = 0:
    /// no slip continues it to u(−d) = −d (H + d) below the wall (Bird, Stewart & Lightfoot,
    /// Transport Phenomena, 2nd ed., §2.3: the parabolic profile of a slit flow). The
    /// quadratic no slip gives it to round-off (every fluid neighbour's second-order fit is
    /// exact for a parabola); the average does not.
    #[test]
    fn quadratic_no_slip_continues_a_parabolic_profile() {
        let height = 0.8;
        let (mut p, kernel, law) = column(0.0, DVec2::ZERO);
        for (v, x) in p.velocity.iter_mut().zip(&p.position) {
            if x.y > 0.0 {
                *v = DVec2::new(x.y * (height - x.y), 0.0);
            }
        }
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: DVec2::new(0.8, 0.0),
        };
        let (lower, upper) = (DVec2::ZERO, DVec2::new(0.8, height));
        let mut flow = NearWallFlow::default();
        flow.evaluate((lower, upper), [false, true, false], &kernel, &p, &nb);
        let averaged = states(&p, &kernel, &law, 0.0, None);
        let quadratic = states(&p, &kernel, &law, 0.0, Some((&flow, lower, upper)));
        let peak = 0.25 * height * height;
        // The wall rows y = −0.05 and −0.15 (indices 2 · 8 and 1 · 8; the lowest has no fluid
        // in reach).
        for row in [2, 1] {
            let i = row * 8;
            let d = p.position[i].y;
            let exact = d * (height - d);
            let first = (averaged[i].viscous_velocity.x - exact).abs() / peak;
            let second = (quadratic[i].viscous_velocity.x - exact).abs() / peak;
            eprintln!("row {row}: averaged {first:.3e}, quadratic {second:.3e} of the peak");
            assert!(second < 1e-10, "{second}");
            assert!(first > 1e-3, "the average is first order: {first}");
        }
    }
}
