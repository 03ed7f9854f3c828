//! Long-wave limit of the two-layer interface mode by regular perturbation in α.
//!
//! Following the expansion of Yih 1967 (J. Fluid Mech. 27, §3): φ = φ₀ + αφ₁ + …,
//! c = c₀ + αc₁ + …, with the interface displacement fixed at η = 1. At order α⁰ each layer
//! obeys φ₀'''' = 0 (cubics) with the wall and interface conditions at α = 0 and
//! [φ₀'] = −[U']; the kinematic condition gives c₀ = U(y_i) + φ₀(y_i). At order α,
//! μ_j φ₁'''' = iRe [(U − c₀)φ₀'' − U''φ₀] with homogeneous conditions, and c₁ = φ₁(y_i).
//! Hence φ₁ = iRe ψ₁ with ψ₁ real, and c ≈ c₀ + iαRe J with J = ψ₁(y_i): the growth rate
//! of long waves is σ = α c_i ≈ α² Re J, with the sign of J alone deciding stability.
//! All polynomials are handled exactly (coefficients in y), independently of the
//! collocation solver, so the two can check each other.

use faer::Mat;
use faer::linalg::solvers::Solve;

use super::StabilityError;
use super::channel::LayeredChannel;

/// Leading terms of the long-wave interface mode: c ≈ `speed` + i α Re `growth`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LongWave {
    /// c₀, the wave speed as α → 0 (units of U_max).
    pub speed: f64,
    /// J = lim c_i/(α Re) as α → 0.
    pub growth: f64,
}

/// Long-wave speed and growth coefficient of the interface mode of a two-layer channel.
pub fn long_wave_coefficient(channel: &LayeredChannel) -> Result<LongWave, StabilityError> {
    if channel.layer_count() != 2 {
        return Err(StabilityError::InvalidParameter(format!(
            "the long-wave expansion is for two layers, got {}",
            channel.layer_count()
        )));
    }
    let flow = channel.base_flow();
    let yi = channel.interfaces()[0];
    let mu = [channel.viscosity(0), channel.viscosity(1)];
    let shear_jump = flow.shear_in(1, yi) - flow.shear_in(0, yi);
    // Order α⁰: no particular part; the shear jump drives [φ₀'].
    let zero = [vec![0.0], vec![0.0]];
    let phi0 = solve_cubics(&zero, mu, yi, [0.0, -shear_jump])?;
    let ui = flow.velocity_in(0, yi);
    let speed = ui + eval(&phi0[0], yi);
    // Order α: μ_j ψ₁'''' = (U − c₀)φ₀'' − U''φ₀, with U = u0 + u1 y + u2 y² per layer.
    let mut particular = [vec![], vec![]];
    for j in 0..2 {
        let curvature = flow.curvature_in(j);
        let slope0 = flow.shear_in(j, 0.0);
        let u = vec![flow.velocity_in(j, 0.0) - speed, slope0, curvature / 2.0];
        let forcing = sub(
            &mul(&u, &derivative(&phi0[j], 2)),
            &scale(&phi0[j], curvature),
        );
        let mut p = scale(&forcing, 1.0 / mu[j]);
        for _ in 0..4 {
            p = integrate(&p);
        }
        particular[j] = p;
    }
    let psi1 = solve_cubics(&particular, mu, yi, [0.0, 0.0])?;
    Ok(LongWave {
        speed,
        growth: eval(&psi1[0], yi),
    })
}

/// Finds φ_j = p_j + q_j (q_j cubic) meeting φ = φ' = 0 at the walls y = ∓1 and, at y_i,
/// [φ] = jumps[0], [φ'] = jumps[1], [μφ''] = 0, [μφ'''] = 0. Returns the full φ_j.
#[allow(clippy::needless_range_loop)] // index loops mirror the matrix formulas
fn solve_cubics(
    particular: &[Vec<f64>; 2],
    mu: [f64; 2],
    yi: f64,
    jumps: [f64; 2],
) -> Result<[Vec<f64>; 2], StabilityError> {
    // Row of the order-d derivative of the monomials y^0..y^3 at y.
    let monomial = |d: usize, y: f64| -> [f64; 4] {
        let mut row = [0.0; 4];
        for (k, r) in row.iter_mut().enumerate() {
            if k >= d {
                let falling: f64 = (k - d + 1..=k).map(|v| v as f64).product();
                *r = falling * y.powi((k - d) as i32);
            }
        }
        row
    };
    let mut a = Mat::<f64>::zeros(8, 8);
    let mut rhs = Mat::<f64>::zeros(8, 1);
    let mut row = 0;
    // Walls: lower layer at y = −1, upper at y = +1.
    for (j, y) in [(0usize, -1.0), (1, 1.0)] {
        for d in 0..2 {
            let m = monomial(d, y);
            for k in 0..4 {
                a[(row, 4 * j + k)] = m[k];
            }
            rhs[(row, 0)] = -eval(&derivative(&particular[j], d), y);
            row += 1;
        }
    }
    // Interface jumps (upper minus lower), weighted by viscosity for the stresses.
    for d in 0..4 {
        let weight = if d >= 2 { mu } else { [1.0, 1.0] };
        let m = monomial(d, yi);
        for k in 0..4 {
            a[(row, k)] = -weight[0] * m[k];
            a[(row, 4 + k)] = weight[1] * m[k];
        }
        let known = weight[1] * eval(&derivative(&particular[1], d), yi)
            - weight[0] * eval(&derivative(&particular[0], d), yi);
        rhs[(row, 0)] = if d < 2 { jumps[d] } else { 0.0 } - known;
        row += 1;
    }
    let solution = a.partial_piv_lu().solve(&rhs);
    if (0..8).any(|k| !solution[(k, 0)].is_finite()) {
        return Err(StabilityError::SearchFailed(
            "the long-wave interface system is singular".into(),
        ));
    }
    let full = |j: usize| {
        let cubic: Vec<f64> = (0..4).map(|k| solution[(4 * j + k, 0)]).collect();
        add(&particular[j], &cubic)
    };
    Ok([full(0), full(1)])
}

fn eval(p: &[f64], y: f64) -> f64 {
    p.iter().rev().fold(0.0, |acc, c| acc * y + c)
}

fn derivative(p: &[f64], order: usize) -> Vec<f64> {
    let mut out = p.to_vec();
    for _ in 0..order {
        out = out
            .iter()
            .enumerate()
            .skip(1)
            .map(|(k, c)| k as f64 * c)
            .collect();
    }
    out
}

fn integrate(p: &[f64]) -> Vec<f64> {
    std::iter::once(0.0)
        .chain(p.iter().enumerate().map(|(k, c)| c / (k + 1) as f64))
        .collect()
}

fn mul(p: &[f64], q: &[f64]) -> Vec<f64> {
    if p.is_empty() || q.is_empty() {
        return vec![];
    }
    let mut out = vec![0.0; p.len() + q.len() - 1];
    for (i, a) in p.iter().enumerate() {
        for (j, b) in q.iter().enumerate() {
            out[i + j] += a * b;
        }
    }
    out
}

fn add(p: &[f64], q: &[f64]) -> Vec<f64> {
    (0..p.len().max(q.len()))
        .map(|k| p.get(k).unwrap_or(&0.0) + q.get(k).unwrap_or(&0.0))
        .collect()
}

fn sub(p: &[f64], q: &[f64]) -> Vec<f64> {
    add(p, &scale(q, -1.0))
}

fn scale(p: &[f64], s: f64) -> Vec<f64> {
    p.iter().map(|c| c * s).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn polynomial_helpers_are_exact() {
        let p = vec![1.0, -2.0, 3.0]; // 1 − 2y + 3y²
        assert_eq!(eval(&p, 2.0), 9.0);
        assert_eq!(derivative(&p, 1), vec![-2.0, 6.0]);
        assert_eq!(derivative(&integrate(&p), 1), p);
        assert_eq!(mul(&p, &[0.0, 1.0]), vec![0.0, 1.0, -2.0, 3.0]);
    }

    #[test]
    fn equal_viscosities_give_a_neutral_interface_moving_with_the_flow() {
        // m = 1: the interface is a passive material line, c = U(y_i) exactly.
        let channel = LayeredChannel::two_layer(1.0, 0.7).unwrap();
        let lw = long_wave_coefficient(&channel).unwrap();
        let yi = channel.interfaces()[0];
        assert!((lw.speed - channel.base_flow().velocity(yi)).abs() < 1e-13);
        assert!(lw.growth.abs() < 1e-13);
    }
}
