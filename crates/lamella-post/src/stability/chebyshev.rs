//! Chebyshev–Gauss–Lobatto collocation: nodes and differentiation matrices.
//!
//! Formulas from Trefethen 2000, *Spectral Methods in MATLAB*, ch. 6 (`cheb.m`): nodes
//! ξ_k = cos(πk/N), k = 0..N (so ξ_0 = +1 and ξ_N = −1), and
//! D_ij = (c_i/c_j)(−1)^(i+j)/(ξ_i − ξ_j) for i ≠ j, with c_0 = c_N = 2, c_k = 1 otherwise.
//! The diagonal is the negative row sum (Bayliss, Class & Matkowsky 1994, J. Comput. Phys.
//! 116), which keeps D applied to a constant exactly zero and reduces round-off in high
//! derivatives; node differences use the sine form ξ_i − ξ_j = 2 sin(π(i+j)/2N) sin(π(j−i)/2N).
//! Higher derivatives follow the recursion of Weideman & Reddy 2000.

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

/// The first four derivative matrices D, D², D³, D⁴ on [−1, 1], each scaled by
/// `scale`^order (pass 2/L for a layer of thickness L mapped onto [−1, 1]).
///
/// Built by the recursion of Weideman & Reddy 2000 (ACM Trans. Math. Softw. 26, "A MATLAB
/// differentiation matrix suite", `chebdif`): D⁽ˡ⁾_ij = l Z_ij (C_ij D⁽ˡ⁻¹⁾_ii − D⁽ˡ⁻¹⁾_ij) for
/// i ≠ j, with Z_ij = 1/(ξ_i − ξ_j) and C_ij = (c_i/c_j)(−1)^(i+j), and every diagonal by the
/// negative row sum. Far less round-off than powers of D for the fourth derivative.
pub fn derivative_matrices(degree: usize, scale: f64) -> [Vec<f64>; 4] {
    let size = degree + 1;
    let n = degree as f64;
    let half = std::f64::consts::PI / (2.0 * n);
    let weight = |k: usize| if k == 0 || k == degree { 2.0 } else { 1.0 };
    let mut inverse_gap = vec![0.0; size * size];
    let mut ratio = vec![0.0; size * size];
    for i in 0..size {
        for j in 0..size {
            if i != j {
                let gap =
                    2.0 * (half * (i + j) as f64).sin() * (half * (j as f64 - i as f64)).sin();
                inverse_gap[i * size + j] = 1.0 / gap;
                let sign = if (i + j) % 2 == 0 { 1.0 } else { -1.0 };
                ratio[i * size + j] = weight(i) / weight(j) * sign;
            }
        }
    }
    let mut previous: Vec<f64> = (0..size * size)
        .map(|k| if k / size == k % size { 1.0 } else { 0.0 })
        .collect();
    let mut out: [Vec<f64>; 4] = Default::default();
    for (order, slot) in out.iter_mut().enumerate() {
        let l = (order + 1) as f64;
        let mut d = vec![0.0; size * size];
        for i in 0..size {
            let diag = previous[i * size + i];
            let mut row_sum = 0.0;
            for j in 0..size {
                if i != j {
                    let v = l
                        * inverse_gap[i * size + j]
                        * (ratio[i * size + j] * diag - previous[i * size + j]);
                    d[i * size + j] = v;
                    row_sum += v;
                }
            }
            d[i * size + i] = -row_sum;
        }
        previous = d.clone();
        let factor = scale.powi(order as i32 + 1);
        d.iter_mut().for_each(|v| *v *= factor);
        *slot = d;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn apply(m: &[f64], v: &[f64]) -> Vec<f64> {
        let size = v.len();
        (0..size)
            .map(|i| (0..size).map(|j| m[i * size + j] * v[j]).sum())
            .collect()
    }

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
    fn derivatives_of_a_polynomial_are_exact() {
        // p(ξ) = ξ⁵ − 2ξ³ + ξ is degree 5 < N, so collocation differentiates it exactly.
        let degree = 12;
        let x = nodes(degree);
        let p: Vec<f64> = x.iter().map(|x| x.powi(5) - 2.0 * x.powi(3) + x).collect();
        let [d1, d2, d3, d4] = derivative_matrices(degree, 1.0);
        let exact = [
            |x: f64| 5.0 * x.powi(4) - 6.0 * x * x + 1.0,
            |x: f64| 20.0 * x.powi(3) - 12.0 * x,
            |x: f64| 60.0 * x * x - 12.0,
            |x: f64| 120.0 * x,
        ];
        for (m, f) in [d1, d2, d3, d4].iter().zip(exact) {
            let got = apply(m, &p);
            for (g, x) in got.iter().zip(&x) {
                assert!((g - f(*x)).abs() < 1e-9, "{g} vs {}", f(*x));
            }
        }
    }

    #[test]
    fn derivative_of_an_exponential_converges_spectrally() {
        // d/dξ e^ξ = e^ξ; with N = 20 the error is near round-off (Trefethen 2000, ch. 6).
        let degree = 20;
        let x = nodes(degree);
        let f: Vec<f64> = x.iter().map(|x| x.exp()).collect();
        let got = apply(&derivative_matrices(degree, 1.0)[0], &f);
        let err = got
            .iter()
            .zip(&f)
            .map(|(g, e)| (g - e).abs())
            .fold(0.0, f64::max);
        assert!(err < 1e-12, "max error {err}");
    }

    #[test]
    fn scale_maps_a_layer_of_given_thickness() {
        // On y = 3ξ (thickness 6), d/dy = (1/3) d/dξ: scale 2/L = 1/3.
        let degree = 6;
        let x = nodes(degree);
        let y: Vec<f64> = x.iter().map(|x| 3.0 * x).collect();
        let f: Vec<f64> = y.iter().map(|y| y * y).collect();
        let [d1, d2, _, _] = derivative_matrices(degree, 1.0 / 3.0);
        let g1 = apply(&d1, &f);
        let g2 = apply(&d2, &f);
        for k in 0..=degree {
            assert!((g1[k] - 2.0 * y[k]).abs() < 1e-12);
            assert!((g2[k] - 2.0).abs() < 1e-11);
        }
    }
}
