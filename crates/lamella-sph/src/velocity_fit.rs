//! The velocity around a fluid particle to second order, by a weighted least-squares fit over
//! its neighbours: what the no slip next to walls extrapolates through the wall
//! ([`crate::walls::NoSlip::Quadratic`]).
//!
//! A corrected SPH gradient (Bonet & Lok 1999) is exact for linear fields only when the support
//! is cut by a wall: on a parabolic profile it is off at first order in the spacing, and its
//! gradient (for the curvature) more so. Fitting the Taylor polynomial of second order,
//! u(x_a + δ) ≈ u_a + G δ + ½ δᵀ H δ, by least squares over the neighbours instead is exact for
//! any quadratic field on a one-sided support too. This is the weighted least-squares Taylor
//! fit of the generalised finite difference method (Benito, Ureña & Gavete 2001, "Influence of
//! several factors in the generalized finite difference method", Appl. Math. Model. 25; the
//! same second-order consistency as the finite particle method of Liu & Liu 2006, Appl. Numer.
//! Math. 56; both recalled from memory).

use lamella_cells::Vector;
use nalgebra::{SMatrix, SVector};

use crate::kernel::Kernel;
use crate::neighbours::Neighbourhood;
use crate::particles::Kind;
use crate::shear_rate::Flow;

/// Number of terms of the second-order Taylor polynomial in 3D: three first derivatives and
/// six distinct second derivatives (five in 2D: two and three).
const MAX_TERMS: usize = 9;

/// Terms of the polynomial in `dim` dimensions.
const fn terms(dim: usize) -> usize {
    dim + dim * (dim + 1) / 2
}

/// The Taylor terms at offset δ: δ_j (j < D), then for each pair j ≤ k in order
/// ½ δ_j² (j = k) or δ_j δ_k (j < k), so that the coefficients are ∂u/∂x_j and ∂²u/∂x_j∂x_k.
/// Unused entries (2D) are zero.
fn taylor_terms<V: Vector>(delta: V) -> [f64; MAX_TERMS] {
    let mut phi = [0.0; MAX_TERMS];
    let mut t = 0;
    for j in 0..V::DIM {
        phi[t] = delta.get(j);
        t += 1;
    }
    for j in 0..V::DIM {
        for k in j..V::DIM {
            let product = delta.get(j) * delta.get(k);
            phi[t] = if j == k { 0.5 * product } else { product };
            t += 1;
        }
    }
    phi
}

/// The index of the ∂²/∂x_a² term among [`taylor_terms`].
fn pure_second_term(dim: usize, axis: usize) -> usize {
    // Pairs (j, k ≥ j) before row `axis`: Σ_{j < axis} (dim − j).
    dim + (0..axis).map(|j| dim - j).sum::<usize>()
}

/// The velocity field around one particle to second order.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct QuadraticFit<V> {
    /// Coefficient of each Taylor term ([`taylor_terms`]) for the velocity: first the gradient
    /// columns ∂u/∂x_j, then the second derivatives ∂²u/∂x_j∂x_k (m/s per m and per m²).
    coefficients: [V; MAX_TERMS],
}

impl<V: Vector> QuadraticFit<V> {
    /// u(x_a + δ) − u_a = G δ + ½ δᵀ H δ (each velocity component its own H).
    pub fn change(&self, delta: V) -> V {
        taylor_terms(delta)
            .iter()
            .zip(&self.coefficients)
            .fold(V::ZERO, |sum, (phi, c)| sum + *c * *phi)
    }

    /// ∂u/∂x_a.
    pub fn slope(&self, axis: usize) -> V {
        self.coefficients[axis]
    }

    /// ∂²u/∂x_a², the curvature of the velocity along axis a.
    pub fn curvature(&self, axis: usize) -> V {
        self.coefficients[pure_second_term(V::DIM, axis)]
    }
}

/// The second-order fit of the velocity around fluid particle `a` over its fluid neighbours b:
/// the coefficients c minimise Σ_b W_ab V_b |u_b − u_a − Σ_t c_t φ_t(x_b − x_a)|²
/// ([`taylor_terms`] φ), solved from the normal equations by Cholesky factorisation with the
/// offsets scaled by the smoothing length. `None` for a wall particle; for a particle with a
/// fluid neighbour of another phase (across an interface the velocity's gradient jumps, and a
/// drop's film against a wall leaves too few rows of one liquid to fit); and where the
/// neighbours do not determine every term (fewer than the five terms in 2D, nine in 3D, or all
/// on one line): the smallest pivot of the factorisation below 10⁻⁶ of the largest diagonal
/// entry (common practice: a conditioning floor; the value is chosen here).
pub fn quadratic_velocity_fit<V: Vector>(
    neighbours: &impl Neighbourhood<V>,
    a: usize,
    flow: Flow<'_, V>,
    volume: impl Fn(usize) -> f64,
    kernel: &Kernel,
    phase: &[u16],
) -> Option<QuadraticFit<V>> {
    if flow.kind[a] != Kind::Fluid {
        return None;
    }
    let mut one_liquid = true;
    let used = terms(V::DIM);
    let h = kernel.smoothing_length();
    let v_a = flow.velocity[a];
    let mut normal = SMatrix::<f64, MAX_TERMS, MAX_TERMS>::zeros();
    let mut right = [SVector::<f64, MAX_TERMS>::zeros(); 3];
    neighbours.for_each_neighbour(flow.position, a, |b, r_ab, distance| {
        if flow.kind[b] != Kind::Fluid {
            return;
        }
        if phase[b] != phase[a] {
            one_liquid = false;
            return;
        }
        let weight = kernel.value(distance) * volume(b);
        // Offset from a to b, over h so that every entry of the matrix is of order one.
        let phi = SVector::<f64, MAX_TERMS>::from(taylor_terms(r_ab * (-1.0 / h)));
        normal += phi * phi.transpose() * weight;
        let du = flow.velocity[b] - v_a;
        for (i, rhs) in right.iter_mut().enumerate().take(V::DIM) {
            *rhs += phi * (du.get(i) * weight);
        }
    });
    let largest = (0..used).map(|t| normal[(t, t)]).fold(0.0f64, f64::max);
    if !one_liquid || largest <= 0.0 {
        return None;
    }
    for t in used..MAX_TERMS {
        normal[(t, t)] = largest;
    }
    let factor = normal.cholesky()?;
    let smallest_pivot = (0..used)
        .map(|t| factor.l_dirty()[(t, t)].powi(2))
        .fold(f64::INFINITY, f64::min);
    if smallest_pivot < 1e-6 * largest {
        return None;
    }
    let solved = right.map(|rhs| factor.solve(&rhs));
    let mut coefficients = [V::ZERO; MAX_TERMS];
    for (t, coefficient) in coefficients.iter_mut().enumerate().take(used) {
        // Undo the scaling: first derivatives carry 1/h, second derivatives 1/h².
        let unscale = if t < V::DIM { 1.0 / h } else { 1.0 / (h * h) };
        *coefficient = V::from_fn(|i| solved[i][t] * unscale);
    }
    Some(QuadraticFit { coefficients })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::kernel::KernelKind;
    use crate::neighbours::brute_force::BruteForce;
    use glam::{DVec2, DVec3};

    #[test]
    fn second_derivative_terms_are_found_in_order() {
        assert_eq!(pure_second_term(2, 0), 2);
        assert_eq!(pure_second_term(2, 1), 4);
        assert_eq!(pure_second_term(3, 0), 3);
        assert_eq!(pure_second_term(3, 1), 6);
        assert_eq!(pure_second_term(3, 2), 8);
        assert_eq!(terms(2), 5);
        assert_eq!(terms(3), MAX_TERMS);
    }

    /// The fit around particle `a` of particles at `position` (all fluid unless `kind` says
    /// otherwise) with velocity `velocity`, phase `phase` and volume `volume`, over a brute-force
    /// search with a Wendland C2 kernel of h = 0.13 in the dimension of `V`.
    fn fit_at<V: Vector>(
        position: &[V],
        velocity: &[V],
        phase: &[u16],
        kind: Option<&[Kind]>,
        a: usize,
        volume: f64,
    ) -> Option<QuadraticFit<V>> {
        let fluid = vec![Kind::Fluid; position.len()];
        let kernel = Kernel::new(KernelKind::WendlandC2, 0.13, V::DIM);
        let nb = BruteForce {
            radius: kernel.support_radius(),
            period: V::ZERO,
        };
        let flow = Flow {
            position,
            velocity,
            kind: kind.unwrap_or(&fluid),
        };
        quadratic_velocity_fit(&nb, a, flow, |_| volume, &kernel, phase)
    }

    /// A lattice of fluid particles filling y > 0 only (the support of the particles in the
    /// first rows is cut as by a wall), with the velocity of `field`.
    fn half_lattice_2d(field: impl Fn(DVec2) -> DVec2) -> (Vec<DVec2>, Vec<DVec2>) {
        let dx = 0.1;
        let mut position = Vec::new();
        for j in 0..8 {
            for i in 0..12 {
                // A slightly irregular lattice: the fit must not rely on symmetry.
                let jitter = 0.07 * dx * ((i * 7 + j * 3) % 5) as f64 / 5.0;
                position.push(DVec2::new(
                    (i as f64 + 0.5) * dx + jitter,
                    (j as f64 + 0.5) * dx,
                ));
            }
        }
        let velocity = position.iter().map(|&x| field(x)).collect();
        (position, velocity)
    }

    /// Exact for a quadratic field next to a cut support, where the corrected gradient is not:
    /// u = (y (1 − y) + x y, x² − 3 x y), the plane Poiseuille profile of a slit (Bird, Stewart
    /// & Lightfoot, Transport Phenomena, 2nd ed., §2.3) plus terms that exercise every entry.
    #[test]
    fn a_quadratic_field_is_fitted_exactly_on_a_one_sided_support() {
        let field =
            |x: DVec2| DVec2::new(x.y * (1.0 - x.y) + x.x * x.y, x.x * x.x - 3.0 * x.x * x.y);
        let (position, velocity) = half_lattice_2d(field);
        let mut phase = vec![0u16; position.len()];
        // A particle in the first row, in the middle of x.
        let a = 6;
        let x = position[a];
        let fit = fit_at(&position, &velocity, &phase, None, a, 0.01).expect("fit");
        let slope_x = DVec2::new(x.y, 2.0 * x.x - 3.0 * x.y);
        let slope_y = DVec2::new(1.0 - 2.0 * x.y + x.x, -3.0 * x.x);
        assert!(
            (fit.slope(0) - slope_x).length() < 1e-9,
            "{:?}",
            fit.slope(0)
        );
        assert!(
            (fit.slope(1) - slope_y).length() < 1e-9,
            "{:?}",
            fit.slope(1)
        );
        assert!((fit.curvature(0) - DVec2::new(0.0, 2.0)).length() < 1e-7);
        assert!((fit.curvature(1) - DVec2::new(-2.0, 0.0)).length() < 1e-7);
        // Evaluated at a point below the particle, outside the support's half (the mirror
        // point of a wall particle lies this way), the change is exact too.
        let delta = DVec2::new(0.03, -0.12);
        let exact = field(x + delta) - field(x);
        assert!((fit.change(delta) - exact).length() < 1e-9);
        // A neighbour of another liquid in the support: no fit.
        phase[a + 12] = 1;
        assert!(fit_at(&position, &velocity, &phase, None, a, 0.01).is_none());
    }

    #[test]
    fn a_quadratic_field_is_fitted_exactly_in_3d() {
        let field = |x: DVec3| DVec3::new(x.y * x.z + x.x * x.x, x.z * x.z - x.x * x.y, x.y);
        let dx = 0.1;
        let mut position = Vec::new();
        for k in 0..6 {
            for j in 0..6 {
                for i in 0..6 {
                    position.push(DVec3::new(i as f64, j as f64, k as f64) * dx);
                }
            }
        }
        let velocity: Vec<DVec3> = position.iter().map(|&x| field(x)).collect();
        let phase = vec![0u16; position.len()];
        // The corner particle: its support is an eighth of a ball.
        let fit = fit_at(&position, &velocity, &phase, None, 0, 1e-3).expect("fit");
        let delta = DVec3::new(-0.05, 0.02, -0.1);
        let exact = field(delta) - field(DVec3::ZERO);
        assert!((fit.change(delta) - exact).length() < 1e-9);
        assert!((fit.curvature(2) - DVec3::new(0.0, 2.0, 0.0)).length() < 1e-7);
    }

    #[test]
    fn too_few_neighbours_give_no_fit() {
        // Three particles on a line cannot determine a curvature across it.
        let position = vec![
            DVec2::new(0.0, 0.0),
            DVec2::new(0.1, 0.0),
            DVec2::new(0.2, 0.0),
        ];
        let velocity = vec![DVec2::ZERO; 3];
        let phase = vec![0u16; 3];
        assert!(fit_at(&position, &velocity, &phase, None, 1, 0.01).is_none());
        let walls = vec![Kind::Wall; 3];
        assert!(fit_at(&position, &velocity, &phase, Some(&walls), 1, 0.01).is_none());
    }
}
