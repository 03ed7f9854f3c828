//! Finite-time Lyapunov exponent (FTLE) per particle from an SPH estimate of the deformation
//! gradient F = ∂x/∂X of the flow map between the initial positions X and the current x.
//!
//! FTLE = ln √λ_max(FᵀF) / |T| (Haller 2001, Physica D 149; Shadden, Lekien & Marsden 2005,
//! Physica D 212). F is estimated in the reference configuration with a corrected SPH
//! gradient, F_a = [Σ_b V_b (x_b − x_a) ⊗ ∇W(X_a − X_b)] · [Σ_b V_b (X_b − X_a) ⊗ ∇W(X_a − X_b)]⁻¹
//! (the total-Lagrangian estimate used by Sun et al. 2016 for FTLE in SPH; the correction
//! matrix follows Bonet & Lok 1999, Comput. Methods Appl. Mech. Engrg. 180), which is exact
//! for any linear flow map.

// Index loops mirror the matrix formulas (i, j, k as in the doc comments).
#![allow(clippy::needless_range_loop)]

use lamella_cells::Vector;

use crate::neighbours::Neighbours;

type Matrix = [[f64; 3]; 3];

/// Deformation gradient of each particle (row-major, `dim` × `dim` used of 3 × 3).
/// `reference` lists the neighbours in the initial configuration (separations X_a − X_b);
/// `current` gives the current positions and `separation(x_a, x_b)` the current x_a − x_b
/// (minimum image on periodic axes); `gradient_factor(r)` is (1/r) ∂W/∂r of the kernel.
/// A particle whose correction matrix is singular (too few neighbours) gets NaN.
pub fn deformation_gradients<V: Vector>(
    reference: &Neighbours<V>,
    current: &[V],
    volume: &[f64],
    separation: impl Fn(V, V) -> V,
    gradient_factor: impl Fn(f64) -> f64,
) -> Vec<Matrix> {
    let dim = V::DIM;
    (0..reference.len())
        .map(|a| {
            let mut deformed = [[0.0; 3]; 3];
            let mut undeformed = [[0.0; 3]; 3];
            for (b, r0) in reference.of(a) {
                // ∇_a W_ab = (X_a − X_b) F(|X_a − X_b|); x_b − x_a = −(x_a − x_b).
                let grad = r0 * gradient_factor(r0.length());
                let dx = -separation(current[a], current[b]);
                let dx0 = -r0;
                for i in 0..dim {
                    for j in 0..dim {
                        deformed[i][j] += volume[b] * dx.get(i) * grad.get(j);
                        undeformed[i][j] += volume[b] * dx0.get(i) * grad.get(j);
                    }
                }
            }
            match invert(&undeformed, dim) {
                Some(inv) => multiply(&deformed, &inv, dim),
                None => [[f64::NAN; 3]; 3],
            }
        })
        .collect()
}

/// FTLE of each deformation gradient over the time interval `duration` T (1/s):
/// ln √λ_max(FᵀF)/|T|; NaN where F is NaN or T = 0.
pub fn ftle(gradients: &[Matrix], dim: usize, duration: f64) -> Vec<f64> {
    gradients
        .iter()
        .map(|f| {
            if duration == 0.0 || f.iter().flatten().any(|v| v.is_nan()) {
                return f64::NAN;
            }
            let mut c = [[0.0; 3]; 3];
            for i in 0..dim {
                for j in 0..dim {
                    c[i][j] = (0..dim).map(|k| f[k][i] * f[k][j]).sum();
                }
            }
            0.5 * largest_eigenvalue(&c, dim).ln() / duration.abs()
        })
        .collect()
}

fn multiply(a: &Matrix, b: &Matrix, dim: usize) -> Matrix {
    let mut m = [[0.0; 3]; 3];
    for i in 0..dim {
        for j in 0..dim {
            m[i][j] = (0..dim).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    m
}

/// Inverse of the leading `dim` × `dim` block by cofactors; `None` if (nearly) singular.
fn invert(m: &Matrix, dim: usize) -> Option<Matrix> {
    let scale = m.iter().flatten().fold(0.0f64, |s, v| s.max(v.abs()));
    if scale == 0.0 {
        return None;
    }
    let mut inv = [[0.0; 3]; 3];
    if dim == 2 {
        let det = m[0][0] * m[1][1] - m[0][1] * m[1][0];
        if det.abs() <= 1e-10 * scale * scale {
            return None;
        }
        inv[0][0] = m[1][1] / det;
        inv[0][1] = -m[0][1] / det;
        inv[1][0] = -m[1][0] / det;
        inv[1][1] = m[0][0] / det;
    } else {
        let c = |i: usize, j: usize| {
            let (r0, r1) = ((i + 1) % 3, (i + 2) % 3);
            let (c0, c1) = ((j + 1) % 3, (j + 2) % 3);
            m[r0][c0] * m[r1][c1] - m[r0][c1] * m[r1][c0]
        };
        let det = m[0][0] * c(0, 0) + m[0][1] * c(0, 1) + m[0][2] * c(0, 2);
        if det.abs() <= 1e-10 * scale.powi(3) {
            return None;
        }
        for (i, row) in inv.iter_mut().enumerate() {
            for (j, v) in row.iter_mut().enumerate() {
                *v = c(j, i) / det;
            }
        }
    }
    Some(inv)
}

/// Largest eigenvalue of a symmetric positive semi-definite `dim` × `dim` matrix: closed form
/// in 2D, cyclic Jacobi rotations in 3D (Golub & Van Loan, Matrix Computations, §8.5).
fn largest_eigenvalue(c: &Matrix, dim: usize) -> f64 {
    if dim == 2 {
        let mean = 0.5 * (c[0][0] + c[1][1]);
        let diff = 0.5 * (c[0][0] - c[1][1]);
        return mean + (diff * diff + c[0][1] * c[0][1]).sqrt();
    }
    let mut a = *c;
    for _ in 0..50 {
        let off = a[0][1].powi(2) + a[0][2].powi(2) + a[1][2].powi(2);
        if off <= 1e-30 * (a[0][0].powi(2) + a[1][1].powi(2) + a[2][2].powi(2)) {
            break;
        }
        for (p, q) in [(0, 1), (0, 2), (1, 2)] {
            if a[p][q] == 0.0 {
                continue;
            }
            let theta = (a[q][q] - a[p][p]) / (2.0 * a[p][q]);
            let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
            let t = if theta == 0.0 { 1.0 } else { t };
            let cs = 1.0 / (t * t + 1.0).sqrt();
            let sn = t * cs;
            for k in 0..3 {
                let (akp, akq) = (a[k][p], a[k][q]);
                a[k][p] = cs * akp - sn * akq;
                a[k][q] = sn * akp + cs * akq;
            }
            for k in 0..3 {
                let (apk, aqk) = (a[p][k], a[q][k]);
                a[p][k] = cs * apk - sn * aqk;
                a[q][k] = sn * apk + cs * aqk;
            }
        }
    }
    a[0][0].max(a[1][1]).max(a[2][2])
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::neighbours::brute_force;
    use glam::{DVec2, DVec3};

    /// Wendland C2 gradient factor (1/r) dW/dr up to a constant (Wendland 1995), support 2h.
    fn wendland_factor(h: f64) -> impl Fn(f64) -> f64 {
        move |r: f64| {
            let q = r / h;
            if q < 2.0 {
                -5.0 * (1.0 - 0.5 * q).powi(3) / (h * h)
            } else {
                0.0
            }
        }
    }

    #[test]
    fn ftle_of_linear_strain_equals_the_strain_rate() {
        // u = (s x, −s y): x = X e^{sT}, y = Y e^{−sT}, F = diag(e^{sT}, e^{−sT}), so the
        // FTLE is exactly s (Haller 2001; Shadden, Lekien & Marsden 2005). 1 % required.
        let (s, duration, dx): (f64, f64, f64) = (0.8, 1.5, 0.02);
        let n = 25;
        let initial: Vec<DVec2> = (0..n * n)
            .map(|k| DVec2::new(((k % n) as f64 - 12.0) * dx, ((k / n) as f64 - 12.0) * dx))
            .collect();
        let current: Vec<DVec2> = initial
            .iter()
            .map(|p| DVec2::new(p.x * (s * duration).exp(), p.y * (-s * duration).exp()))
            .collect();
        let h = 1.3 * dx;
        let nb = brute_force(&initial, &initial, 2.0 * h, true);
        let volume = vec![dx * dx; initial.len()];
        let f = deformation_gradients(&nb, &current, &volume, |a, b| a - b, wendland_factor(h));
        let lambda = ftle(&f, 2, duration);
        for (k, &l) in lambda.iter().enumerate() {
            assert!((l - s).abs() < 0.01 * s, "particle {k}: FTLE {l}");
        }
        // Exact also at the edge of the particle set, thanks to the correction.
        assert!((lambda[0] - s).abs() < 1e-9);
    }

    #[test]
    fn rigid_rotation_has_zero_ftle_and_3d_works() {
        let dx = 0.1;
        let n = 7;
        let initial: Vec<DVec3> = (0..n * n * n)
            .map(|k| DVec3::new((k % n) as f64, ((k / n) % n) as f64, (k / (n * n)) as f64) * dx)
            .collect();
        let angle: f64 = 0.7;
        let (c, s) = (angle.cos(), angle.sin());
        let rotated: Vec<DVec3> = initial
            .iter()
            .map(|p| DVec3::new(c * p.x - s * p.y, s * p.x + c * p.y, p.z))
            .collect();
        let h = 1.3 * dx;
        let nb = brute_force(&initial, &initial, 2.0 * h, true);
        let volume = vec![dx.powi(3); initial.len()];
        let f = deformation_gradients(&nb, &rotated, &volume, |a, b| a - b, wendland_factor(h));
        for l in ftle(&f, 3, 2.0) {
            assert!(l.abs() < 1e-9, "FTLE {l}");
        }
        // Stretch along z by e^{0.3·2}: FTLE 0.3.
        let stretched: Vec<DVec3> = initial
            .iter()
            .map(|p| DVec3::new(p.x, p.y, p.z * (0.6f64).exp()))
            .collect();
        let f = deformation_gradients(&nb, &stretched, &volume, |a, b| a - b, wendland_factor(h));
        for l in ftle(&f, 3, 2.0) {
            assert!((l - 0.3).abs() < 1e-9);
        }
    }

    #[test]
    fn isolated_particle_gets_nan() {
        let initial = vec![DVec2::ZERO, DVec2::new(10.0, 0.0)];
        let nb = brute_force(&initial, &initial, 1.0, true);
        let f = deformation_gradients(
            &nb,
            &initial,
            &[1.0, 1.0],
            |a, b| a - b,
            wendland_factor(0.4),
        );
        assert!(ftle(&f, 2, 1.0).iter().all(|v| v.is_nan()));
    }
}
