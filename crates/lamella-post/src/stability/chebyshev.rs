//! Chebyshev–Gauss–Lobatto nodes and the spectral-integration representation of a function
//! through its fourth derivative.
//!
//! Nodes ξ_k = cos(πk/N), k = 0..N (so ξ_0 = +1 and ξ_N = −1; Trefethen 2000, *Spectral
//! Methods in MATLAB*, ch. 6). Instead of differentiating nodal values (the entries of a
//! p-th derivative matrix grow like N^(2p), and applied to values that do not vanish at the
//! ends they lose digits by cancellation), a function is written as φ = I⁴g + cubic: g = φ''''
//! is interpolated at the nodes, integrated four times exactly in Chebyshev coefficients,
//! and a cubic carries the four integration constants. Every matrix then has entries of
//! order one (spectral integration: Greengard 1991, "Spectral integration and two-point
//! boundary value problems", SIAM J. Numer. Anal. 28; Coutsias, Hagstrom & Torres 1996,
//! Math. Comp. 65).

/// Gauss–Lobatto nodes ξ_k = cos(πk/N), k = 0..=N, from +1 down to −1.
pub fn nodes(degree: usize) -> Vec<f64> {
    let n = degree as f64;
    (0..=degree)
        .map(|k| {
            // sin form is symmetric about zero to the last bit: ξ_k = sin(π(N − 2k)/2N).
            (std::f64::consts::PI * (n - 2.0 * k as f64) / (2.0 * n)).sin()
        })
        .collect()
}

/// T_m(ξ_k) = cos(πmk/N), with the angle reduced modulo 2π in integers first so that the
/// end nodes give exactly ±1.
fn chebyshev_at_node(m: usize, k: usize, degree: usize) -> f64 {
    let turn = (m * k) % (2 * degree);
    (std::f64::consts::PI * turn as f64 / degree as f64).cos()
}

/// Chebyshev coefficients of the degree-N interpolant of nodal values, as a row-major
/// (N+1)×(N+1) matrix: c_m = 2/(N w_m) Σ_k g_k T_m(ξ_k)/w_k, w_0 = w_N = 2, w_k = 1
/// otherwise (discrete Chebyshev transform; Boyd 2001, *Chebyshev and Fourier Spectral
/// Methods*, 2nd ed., §4.4).
pub fn coefficients_from_values(degree: usize) -> Vec<f64> {
    let size = degree + 1;
    let weight = |k: usize| if k == 0 || k == degree { 2.0 } else { 1.0 };
    let mut out = vec![0.0; size * size];
    for m in 0..size {
        for k in 0..size {
            out[m * size + k] =
                2.0 / (degree as f64 * weight(m) * weight(k)) * chebyshev_at_node(m, k, degree);
        }
    }
    out
}

/// An antiderivative of the Chebyshev series `c` (one term longer, constant term zero):
/// b_1 = c_0 − c_2/2 and b_k = (c_{k−1} − c_{k+1})/(2k) for k ≥ 2, from
/// ∫T_0 = T_1, ∫T_1 = T_2/4, ∫T_k = T_{k+1}/(2(k+1)) − T_{k−1}/(2(k−1)) (Boyd 2001, App. A).
pub fn integrate(c: &[f64]) -> Vec<f64> {
    let at = |k: usize| c.get(k).copied().unwrap_or(0.0);
    let mut out = vec![0.0; c.len() + 1];
    for (k, slot) in out.iter_mut().enumerate().skip(1) {
        let below = if k == 1 { 2.0 * at(0) } else { at(k - 1) };
        *slot = (below - at(k + 1)) / (2.0 * k as f64);
    }
    out
}

/// The derivative of the Chebyshev series `c` (one term shorter; empty stays empty):
/// b_{k−1} = b_{k+1} + 2k c_k from the top down, then b_0 halved (Boyd 2001, App. A, the
/// inverse of [`integrate`] up to its constant).
pub fn differentiate(c: &[f64]) -> Vec<f64> {
    let n = c.len();
    if n < 2 {
        return Vec::new();
    }
    let mut out = vec![0.0; n - 1];
    for k in (1..n).rev() {
        let above = out.get(k + 1).copied().unwrap_or(0.0);
        out[k - 1] = above + 2.0 * k as f64 * c[k];
    }
    out[0] /= 2.0;
    out
}

/// The value Σ c_m T_m(ξ) of a Chebyshev series at any ξ, by Clenshaw's recurrence
/// b_m = c_m + 2ξ b_{m+1} − b_{m+2}, value c_0 + ξ b_1 − b_2 (Boyd 2001, App. A). Outside
/// [−1, 1] it continues the polynomial.
pub fn evaluate(c: &[f64], xi: f64) -> f64 {
    let (mut b1, mut b2) = (0.0, 0.0);
    for &cm in c.iter().skip(1).rev() {
        let b0 = cm + 2.0 * xi * b1 - b2;
        b2 = b1;
        b1 = b0;
    }
    c.first().copied().unwrap_or(0.0) + xi * b1 - b2
}

/// Derivatives 0..=3 of the cubic's basis T_0..T_3 at ξ: row p holds d^p T_i/dξ^p.
fn cubic_basis(xi: f64) -> [[f64; 4]; 4] {
    [
        [1.0, xi, 2.0 * xi * xi - 1.0, 4.0 * xi.powi(3) - 3.0 * xi],
        [0.0, 1.0, 4.0 * xi, 12.0 * xi * xi - 3.0],
        [0.0, 0.0, 4.0, 24.0 * xi],
        [0.0, 0.0, 0.0, 24.0],
    ]
}

/// Matrices that give φ, φ', φ'', φ''' at the nodes of a layer from the unknowns
/// [g_0 … g_N, a_0 … a_3], where g_k = φ''''(y_k) and φ = I⁴g/s⁴ + Σ a_i T_i(ξ), with
/// y-derivatives d/dy = s d/dξ (`scale` s = 2/L for a layer of thickness L). Each is
/// row-major (N+1)×(N+5): d^pφ/dy^p = s^(p−4) Σ_m (Q^(4−p) C g)_m T_m(ξ_k) + s^p Σ a_i T_i^(p)(ξ_k),
/// with C from [`coefficients_from_values`] and Q from [`integrate`].
pub fn integrated_basis(degree: usize, scale: f64) -> [Vec<f64>; 4] {
    let size = degree + 1;
    let width = size + 4;
    let transform = coefficients_from_values(degree);
    let xi = nodes(degree);
    // T_m(ξ_k) for the series up to degree N + 4.
    let table: Vec<f64> = (0..size)
        .flat_map(|k| (0..width).map(move |m| chebyshev_at_node(m, k, degree)))
        .collect();
    let mut out: [Vec<f64>; 4] = std::array::from_fn(|_| vec![0.0; size * width]);
    for col in 0..size {
        // Coefficients of the interpolant of the unit vector e_col, integrated 4 − p times.
        let mut series: Vec<f64> = (0..size).map(|m| transform[m * size + col]).collect();
        let mut integrals = Vec::with_capacity(4);
        for _ in 0..4 {
            series = integrate(&series);
            integrals.push(series.clone());
        }
        for (p, matrix) in out.iter_mut().enumerate() {
            let coefficients = &integrals[3 - p];
            let factor = scale.powi(p as i32 - 4);
            for k in 0..size {
                let row = &table[k * width..(k + 1) * width];
                let value: f64 = coefficients.iter().zip(row).map(|(c, t)| c * t).sum();
                matrix[k * width + col] = factor * value;
            }
        }
    }
    for (k, &x) in xi.iter().enumerate() {
        let basis = cubic_basis(x);
        for (p, matrix) in out.iter_mut().enumerate() {
            for i in 0..4 {
                matrix[k * width + size + i] = scale.powi(p as i32) * basis[p][i];
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::Mat;
    use faer::linalg::solvers::Solve;

    #[test]
    fn nodes_run_from_one_to_minus_one_symmetrically() {
        let x = nodes(8);
        assert_eq!(x.len(), 9);
        assert_eq!(x[0], 1.0);
        assert_eq!(x[8], -1.0);
        assert_eq!(x[4], 0.0);
        for k in 0..=8 {
            assert_eq!(x[k], -x[8 - k]);
        }
    }

    #[test]
    fn coefficients_of_a_chebyshev_polynomial_are_a_unit_vector() {
        // Values of T_3 at the nodes transform to c = e_3 (exact for degree ≤ N).
        let degree = 10;
        let c = coefficients_from_values(degree);
        let size = degree + 1;
        let values: Vec<f64> = nodes(degree)
            .iter()
            .map(|x| 4.0 * x.powi(3) - 3.0 * x)
            .collect();
        for m in 0..size {
            let cm: f64 = (0..size).map(|k| c[m * size + k] * values[k]).sum();
            let expected = if m == 3 { 1.0 } else { 0.0 };
            assert!((cm - expected).abs() < 1e-14, "c_{m} = {cm}");
        }
    }

    #[test]
    fn integration_inverts_differentiation_up_to_a_constant() {
        // ∫(T_0 + 2T_1 + 3T_2) = T_1 + T_2/2 + 3(T_3/6 − T_1/2) = −T_1/2 + T_2/2 + T_3/2.
        let b = integrate(&[1.0, 2.0, 3.0]);
        let expected = [0.0, -0.5, 0.5, 0.5];
        for (got, want) in b.iter().zip(expected) {
            assert!((got - want).abs() < 1e-15, "{b:?}");
        }
    }

    #[test]
    fn differentiation_undoes_integration() {
        // d/dξ ∫c = c exactly (Boyd 2001, App. A), here for a series with every term.
        let c = [0.3, -1.2, 2.5, 0.7, -0.4, 1.1];
        let back = differentiate(&integrate(&c));
        assert_eq!(back.len(), c.len());
        for (got, want) in back.iter().zip(c) {
            assert!((got - want).abs() < 1e-14, "{back:?}");
        }
        // T_3' = 12ξ² − 3 = 3T_0 + 6T_2.
        assert_eq!(differentiate(&[0.0, 0.0, 0.0, 1.0]), vec![3.0, 0.0, 6.0]);
        assert!(differentiate(&[2.0]).is_empty());
    }

    #[test]
    fn clenshaw_matches_the_cosine_form_and_the_monomial_form() {
        // T_m(cos θ) = cos(mθ) inside [−1, 1]; T_3 = 4ξ³ − 3ξ also outside it.
        let c = [0.5, -0.25, 1.5, 0.75, -2.0];
        for xi in [-1.0, -0.6, 0.0, 0.31, 1.0] {
            let theta = f64::acos(xi);
            let want: f64 = c
                .iter()
                .enumerate()
                .map(|(m, cm)| cm * (m as f64 * theta).cos())
                .sum();
            assert!((evaluate(&c, xi) - want).abs() < 1e-13, "ξ = {xi}");
        }
        let xi = 1.05;
        assert!(
            (evaluate(&[0.0, 0.0, 0.0, 1.0], xi) - (4.0 * xi.powi(3) - 3.0 * xi)).abs() < 1e-13
        );
        assert_eq!(evaluate(&[], 0.3), 0.0);
    }

    #[test]
    fn integrated_basis_reproduces_a_polynomial_and_its_derivatives() {
        // φ(y) on y = 3ξ (thickness 6, s = 1/3): φ = y⁶ − 2y⁵ + y³ + 4, degree 6 ≤ N + 4, so
        // φ'''' = 360y² − 240y is interpolated exactly and φ = I⁴g/s⁴ + cubic exactly. The
        // cubic coefficients a are fitted from φ at four nodes, then all four derivatives
        // must match at every node.
        let degree = 6;
        let scale = 1.0 / 3.0;
        let size = degree + 1;
        let width = size + 4;
        let y: Vec<f64> = nodes(degree).iter().map(|x| 3.0 * x).collect();
        let phi = |y: f64| {
            [
                y.powi(6) - 2.0 * y.powi(5) + y.powi(3) + 4.0,
                6.0 * y.powi(5) - 10.0 * y.powi(4) + 3.0 * y * y,
                30.0 * y.powi(4) - 40.0 * y.powi(3) + 6.0 * y,
                120.0 * y.powi(3) - 120.0 * y * y + 6.0,
            ]
        };
        let g: Vec<f64> = y.iter().map(|y| 360.0 * y * y - 240.0 * y).collect();
        let basis = integrated_basis(degree, scale);
        let apply = |m: &[f64], a: &[f64; 4], k: usize| -> f64 {
            (0..size).map(|j| m[k * width + j] * g[j]).sum::<f64>()
                + (0..4).map(|i| m[k * width + size + i] * a[i]).sum::<f64>()
        };
        // The residual φ − I⁴g/s⁴ is a cubic in ξ: its Chebyshev coefficients from four nodes.
        let zero = [0.0; 4];
        let residual: Vec<f64> = (0..size)
            .map(|k| phi(y[k])[0] - apply(&basis[0], &zero, k))
            .collect();
        let xi = nodes(degree);
        // The cubic's coefficients from the residual at nodes 0, 2, 4, 6.
        let picks = [0, 2, 4, 6];
        let matrix = Mat::<f64>::from_fn(4, 4, |r, i| cubic_basis(xi[picks[r]])[0][i]);
        let rhs = Mat::<f64>::from_fn(4, 1, |r, _| residual[picks[r]]);
        let solved = matrix.partial_piv_lu().solve(&rhs);
        let a = [
            solved[(0, 0)],
            solved[(1, 0)],
            solved[(2, 0)],
            solved[(3, 0)],
        ];
        for (k, &y) in y.iter().enumerate() {
            let exact = phi(y);
            for p in 0..4 {
                let got = apply(&basis[p], &a, k);
                assert!(
                    (got - exact[p]).abs() < 1e-9 * (1.0 + exact[p].abs()),
                    "derivative {p} at y = {y}: {got} vs {}",
                    exact[p]
                );
            }
        }
    }
}
