//! Assembly of the coupled Orr–Sommerfeld problem and its generalised eigenvalues.
//!
//! In each layer j (relative viscosity μ_j, stream function ψ = φ(y) e^{iα(x − ct)},
//! u = ∂ψ/∂y, v = −∂ψ/∂x) the Orr–Sommerfeld equation (Orszag 1971, J. Fluid Mech. 50, eq. 2)
//!
//!   (U − c)(φ'' − α²φ) − U''φ = μ_j/(iαRe) (φ'''' − 2α²φ'' + α⁴φ),
//!
//! with no-slip walls φ = φ' = 0 at y = ±1. At each interface y_i (displacement
//! η e^{iα(x − ct)}) the linearised conditions of Yih 1967 (J. Fluid Mech. 27, §2), written
//! for equal densities with jumps [f] = f(upper) − f(lower):
//!
//! 1. normal velocity      [φ] = 0,
//! 2. tangential velocity  [φ'] + η [U'] = 0,
//! 3. tangential stress    [μ(φ'' + α²φ)] = 0  (μU'' = −G is the same in both layers),
//! 4. normal stress        [μ(φ''' − 3α²φ')] + iα³ Re S η = 0, with S = γ/(ρ U_max² h);
//!    the inertial part of the pressure jump, [(U − c)φ' − U'φ], cancels by 1, 2 and 5,
//! 5. kinematic            φ(y_i) + U(y_i) η = c η.
//!
//! Discretisation by spectral integration (Greengard 1991, SIAM J. Numer. Anal. 28): in each
//! layer the unknowns are g = φ'''' at the N + 1 Chebyshev–Gauss–Lobatto nodes and the four
//! Chebyshev coefficients of a cubic, with φ = I⁴g + cubic (see [`super::chebyshev`]); then
//! one η per interface. The equation is collocated at every node; the four wall or
//! interface conditions 1–4 of each layer take the rows of its cubic's coefficients, and
//! condition 5 the row of η. This gives A x = c B x with B singular (zero rows for the
//! conditions without c). The cubics' coefficients are eliminated with the condition rows
//! first (no infinite eigenvalues remain), then the eigenvalues of the shift-inverted
//! operator (A − σB)⁻¹B are computed with `faer`'s dense eigen solver. (`faer`'s QZ on the
//! pencil was tried and returned wrong eigenvalues above about 40 points per layer.)
//!
//! Why integration rather than differentiation matrices: collocation with D⁴ (or D² twice)
//! applies derivative matrices with entries of order N⁴ to values that do not vanish at an
//! interface, and rounding in those rows moved the leading eigenvalue of two-layer problems
//! by up to 2e-7 at 128 points per layer (measured; perturbing only those rows by 1e-14
//! reproduced it). With integration every matrix entry is of order one and the leading
//! eigenvalue stays within about 1e-14 from 64 to 128 points per layer.

use faer::linalg::solvers::Solve;
use faer::{Mat, c64};

use super::StabilityError;
use super::channel::LayeredChannel;
use super::chebyshev;

/// Collocation points per layer used when none are asked for.
pub const DEFAULT_POINTS_PER_LAYER: usize = 64;

/// Eigenvalues with |c| above this are discarded as the infinite eigenvalues of the
/// singular B (boundary rows) and their round-off images: physical wave speeds of the
/// leading modes lie within the range of U, 0..1 (Joseph's semicircle bound for one layer,
/// Drazin & Reid 1981, *Hydrodynamic Stability*, §22), and the heavily damped modes beyond
/// |c| = 1000 never lead.
pub const SPURIOUS_SPEED: f64 = 1.0e3;

/// Shift σ of the shift-invert transform: inside the band of wave speeds of the leading
/// modes (0 < c_r < 1), a little above the real axis where growing modes lie.
const SHIFT: c64 = c64 { re: 0.5, im: 0.2 };

/// Offset of the inverse-iteration shift from the eigenvalue (on both parts): far below any
/// gap between the leading modes, and far above round-off, so A − σB stays invertible.
const INVERSE_ITERATION_OFFSET: f64 = 1.0e-9;

/// Inverse-iteration steps: each shrinks the other modes by about 1e-9 over their gap.
const INVERSE_ITERATIONS: usize = 3;

/// One linear stability problem in scaled units.
#[derive(Clone, Debug, PartialEq)]
pub struct StabilityProblem {
    /// The layers and their viscosities.
    pub channel: LayeredChannel,
    /// Reynolds number ρ U_max h / μ_lower (h the half-width, μ_lower the lowest layer's).
    pub reynolds: f64,
    /// Wavenumber α = k h.
    pub wavenumber: f64,
    /// Interfacial tension S = γ/(ρ U_max² h); zero for none.
    pub tension: f64,
    /// Chebyshev–Gauss–Lobatto points in each layer (at least 8).
    pub points_per_layer: usize,
}

impl StabilityProblem {
    /// A problem with no interfacial tension and the default resolution.
    pub fn new(channel: LayeredChannel, reynolds: f64, wavenumber: f64) -> Self {
        Self {
            channel,
            reynolds,
            wavenumber,
            tension: 0.0,
            points_per_layer: DEFAULT_POINTS_PER_LAYER,
        }
    }

    /// The same problem at another Reynolds number.
    pub fn with_reynolds(&self, reynolds: f64) -> Self {
        Self {
            reynolds,
            ..self.clone()
        }
    }

    /// The same problem at another wavenumber.
    pub fn with_wavenumber(&self, wavenumber: f64) -> Self {
        Self {
            wavenumber,
            ..self.clone()
        }
    }

    /// The same problem at another resolution.
    pub fn with_points(&self, points_per_layer: usize) -> Self {
        Self {
            points_per_layer,
            ..self.clone()
        }
    }

    fn validate(&self) -> Result<(), StabilityError> {
        let check = |name: &str, value: f64, allow_zero: bool| {
            if value.is_finite() && (value > 0.0 || (allow_zero && value == 0.0)) {
                Ok(())
            } else {
                Err(StabilityError::InvalidParameter(format!(
                    "{name} must be a {} finite number, got {value}",
                    if allow_zero {
                        "non-negative"
                    } else {
                        "positive"
                    }
                )))
            }
        };
        check("Reynolds number", self.reynolds, false)?;
        check("wavenumber", self.wavenumber, false)?;
        check("interfacial tension", self.tension, true)?;
        if self.points_per_layer < 8 {
            return Err(StabilityError::InvalidParameter(format!(
                "at least 8 collocation points per layer are needed, got {}",
                self.points_per_layer
            )));
        }
        Ok(())
    }

    /// Solves the generalised eigenvalue problem and keeps the finite wave speeds.
    pub fn solve(&self) -> Result<Spectrum, StabilityError> {
        self.validate()?;
        let (a, b) = self.assemble();
        let (a, b) = self.eliminate_conditions(&a, &b)?;
        // Shift-invert: the eigenvalues ν of (A − σB)⁻¹B are ν = 1/(c − σ), so the modes near
        // the shift (the least damped ones, |c| ~ 1) become the largest ν and the huge, badly
        // conditioned viscous eigenvalues collapse towards ν = 0 (Golub & Van Loan 2013,
        // *Matrix Computations*, 4th ed., §7.6 and §8.2).
        let shifted = &a - &b * faer::Scale(SHIFT);
        let operator = shifted.partial_piv_lu().solve(&b);
        let values = operator
            .eigenvalues()
            .map_err(|_| StabilityError::NoConvergence)?;
        let mut speeds: Vec<c64> = values
            .into_iter()
            .filter(|nu| nu.norm() > 0.0)
            .map(|nu| SHIFT + nu.inv())
            .filter(|c| c.re.is_finite() && c.im.is_finite() && c.norm() <= SPURIOUS_SPEED)
            .collect();
        speeds.sort_by(|p, q| q.im.total_cmp(&p.im).then(p.re.total_cmp(&q.re)));
        Ok(Spectrum {
            wavenumber: self.wavenumber,
            speeds,
        })
    }

    /// The eigenvector x of A x = c B x for an eigenvalue `speed` of [`Self::solve`], by inverse
    /// iteration: x ← (A − σB)⁻¹ B x with σ a hair off `speed`, so that the mode of `speed`
    /// dominates after a few steps by the ratio |c − σ|/|c' − σ| of the nearest other mode
    /// (Golub & Van Loan 2013, *Matrix Computations*, 4th ed., §7.6.1). The full pencil (with
    /// the condition rows) is used: A − σB is regular away from the eigenvalues. Scaled to a
    /// largest entry of modulus one.
    pub(super) fn eigenvector(&self, speed: c64) -> Result<Vec<c64>, StabilityError> {
        self.validate()?;
        let (a, b) = self.assemble();
        let sigma = speed + c64::new(INVERSE_ITERATION_OFFSET, INVERSE_ITERATION_OFFSET);
        let lu = (&a - &b * faer::Scale(sigma)).partial_piv_lu();
        let size = a.nrows();
        let mut x = Mat::<c64>::from_fn(size, 1, |_, _| c64::new(1.0, 0.0));
        for _ in 0..INVERSE_ITERATIONS {
            x = lu.solve(&(&b * &x));
            let largest = (0..size).map(|i| x[(i, 0)].norm()).fold(0.0, f64::max);
            if !(largest.is_finite() && largest > 0.0) {
                return Err(StabilityError::NoConvergence);
            }
            x = &x * faer::Scale(c64::new(1.0 / largest, 0.0));
        }
        Ok((0..size).map(|i| x[(i, 0)]).collect())
    }

    /// Number of unknowns per layer: g = φ'''' at the N + 1 nodes and the cubic's 4
    /// coefficients.
    fn layer_unknowns(&self) -> usize {
        self.points_per_layer + 4
    }

    /// Index of g = φ'''' at node `k` of layer `j` (also the row of the equation there).
    pub(super) fn node(&self, j: usize, k: usize) -> usize {
        j * self.layer_unknowns() + k
    }

    /// Index of the cubic's coefficient `i` in layer `j` (also the row of one wall or
    /// interface condition).
    pub(super) fn cubic(&self, j: usize, i: usize) -> usize {
        j * self.layer_unknowns() + self.points_per_layer + i
    }

    /// Index of the displacement η of interface `i` (also the row of its kinematic condition).
    pub(super) fn eta(&self, i: usize) -> usize {
        self.channel.layer_count() * self.layer_unknowns() + i
    }

    /// Rows and columns eliminated before the eigen solve: the wall and interface conditions
    /// 1–4 (no c, so B is zero there) and the cubics' coefficients.
    fn condition_indices(&self) -> Vec<usize> {
        (0..self.channel.layer_count())
            .flat_map(|j| (0..4).map(move |i| (j, i)))
            .map(|(j, i)| self.cubic(j, i))
            .collect()
    }

    /// Eliminates the condition unknowns x_b (the cubics' coefficients) with the condition rows,
    /// C_b x_b + C_i x_i = 0, leaving the regular pencil on the remaining unknowns x_i:
    /// (A_ii − A_ib C_b⁻¹ C_i) x_i = c (B_ii − B_ib C_b⁻¹ C_i) x_i. This removes the infinite
    /// eigenvalues of the singular B before the eigen solve ("boundary bordering"; Boyd 2001,
    /// *Chebyshev and Fourier Spectral Methods*, 2nd ed., §6.4).
    fn eliminate_conditions(
        &self,
        a: &Mat<c64>,
        b: &Mat<c64>,
    ) -> Result<(Mat<c64>, Mat<c64>), StabilityError> {
        let bnd = self.condition_indices();
        let size = a.nrows();
        let rest: Vec<usize> = (0..size).filter(|k| !bnd.contains(k)).collect();
        let pick = |m: &Mat<c64>, rows: &[usize], cols: &[usize]| {
            Mat::<c64>::from_fn(rows.len(), cols.len(), |i, j| m[(rows[i], cols[j])])
        };
        let c_b = pick(a, &bnd, &bnd);
        let c_i = pick(a, &bnd, &rest);
        let lu = c_b.partial_piv_lu();
        let elim = lu.solve(&c_i);
        if (0..elim.nrows()).any(|i| {
            (0..elim.ncols()).any(|j| !elim[(i, j)].re.is_finite() || !elim[(i, j)].im.is_finite())
        }) {
            return Err(StabilityError::InvalidParameter(
                "the wall and interface conditions are singular at this resolution".into(),
            ));
        }
        let reduce = |m: &Mat<c64>| pick(m, &rest, &rest) - pick(m, &rest, &bnd) * &elim;
        let (mut a, mut b) = (reduce(a), reduce(b));
        // Equilibrate: scale each row to unit largest |A| entry (the pencil's eigenvalues do
        // not change; the LU of the shift-invert step loses less to round-off).
        for i in 0..a.nrows() {
            let largest = (0..a.ncols()).map(|j| a[(i, j)].norm()).fold(0.0, f64::max);
            if largest > 0.0 {
                let s = 1.0 / largest;
                for j in 0..a.ncols() {
                    a[(i, j)] *= s;
                    b[(i, j)] *= s;
                }
            }
        }
        Ok((a, b))
    }

    /// Builds the matrices A and B of A x = c B x.
    #[allow(clippy::needless_range_loop)] // index loops mirror the matrix formulas
    pub(super) fn assemble(&self) -> (Mat<c64>, Mat<c64>) {
        let channel = &self.channel;
        let flow = channel.base_flow();
        let layers = channel.layer_count();
        let degree = self.points_per_layer - 1;
        let points = degree + 1;
        let width = self.layer_unknowns();
        let size = layers * width + layers - 1;
        let alpha = self.wavenumber;
        let alpha2 = alpha * alpha;
        let i_alpha_re = c64::new(0.0, alpha * self.reynolds);
        let real = |v: f64| c64::new(v, 0.0);
        let xi = chebyshev::nodes(degree);
        let mut a = Mat::<c64>::zeros(size, size);
        let mut b = Mat::<c64>::zeros(size, size);

        // Per layer: φ, φ', φ'', φ''' at its nodes (k = 0 the layer top, k = N its bottom)
        // from the layer's unknowns.
        let bases: Vec<[Vec<f64>; 4]> = (0..layers)
            .map(|j| {
                let (lower, upper) = channel.layer(j);
                chebyshev::integrated_basis(degree, 2.0 / (upper - lower))
            })
            .collect();
        for j in 0..layers {
            let (lower, upper) = channel.layer(j);
            let mu = channel.viscosity(j);
            let [phi, _, phi2, _] = &bases[j];
            let curvature = flow.curvature_in(j);
            for k in 0..points {
                let y = lower + (upper - lower) * (xi[k] + 1.0) / 2.0;
                let u = flow.velocity_in(j, y);
                let row = self.node(j, k);
                for col in 0..width {
                    let value = phi[k * width + col];
                    let lap = phi2[k * width + col] - alpha2 * value;
                    let fourth = if col == k { 1.0 } else { 0.0 };
                    let bilap =
                        fourth - 2.0 * alpha2 * phi2[k * width + col] + alpha2 * alpha2 * value;
                    // Multiplied through by iαRe: iαRe[U(φ''−α²φ) − U''φ] − μ(φ''''−2α²φ''+α⁴φ).
                    a[(row, j * width + col)] =
                        i_alpha_re * (u * lap - curvature * value) - real(mu * bilap);
                    b[(row, j * width + col)] = i_alpha_re * lap;
                }
            }
        }
        // Adds `weight` times derivative `order` of φ at `node` of layer `j` to row `row`.
        let add =
            |a: &mut Mat<c64>, row: usize, j: usize, order: usize, node: usize, weight: f64| {
                let basis = &bases[j][order];
                for col in 0..width {
                    a[(row, j * width + col)] += real(weight * basis[node * width + col]);
                }
            };
        // Walls: φ = φ' = 0 at the bottom of layer 0 (node N) and the top of the last (node 0).
        let top = layers - 1;
        add(&mut a, self.cubic(0, 0), 0, 0, degree, 1.0);
        add(&mut a, self.cubic(0, 1), 0, 1, degree, 1.0);
        add(&mut a, self.cubic(top, 2), top, 0, 0, 1.0);
        add(&mut a, self.cubic(top, 3), top, 1, 0, 1.0);

        // Interfaces: lower layer (its top node 0), upper layer (its bottom node N); two
        // condition rows in each of the two layers.
        for (i, &yi) in channel.interfaces().iter().enumerate() {
            let (lo, up) = (i, i + 1);
            let (mu_lo, mu_up) = (channel.viscosity(lo), channel.viscosity(up));
            let eta = self.eta(i);
            let rows = [
                self.cubic(lo, 2),
                self.cubic(lo, 3),
                self.cubic(up, 0),
                self.cubic(up, 1),
            ];
            // 1. [φ] = 0
            add(&mut a, rows[0], up, 0, degree, 1.0);
            add(&mut a, rows[0], lo, 0, 0, -1.0);
            // 2. [φ'] + η [U'] = 0
            add(&mut a, rows[1], up, 1, degree, 1.0);
            add(&mut a, rows[1], lo, 1, 0, -1.0);
            a[(rows[1], eta)] += real(flow.shear_in(up, yi) - flow.shear_in(lo, yi));
            // 3. [μ(φ'' + α²φ)] = 0
            add(&mut a, rows[2], up, 2, degree, mu_up);
            add(&mut a, rows[2], up, 0, degree, mu_up * alpha2);
            add(&mut a, rows[2], lo, 2, 0, -mu_lo);
            add(&mut a, rows[2], lo, 0, 0, -mu_lo * alpha2);
            // 4. [μ(φ''' − 3α²φ')] + iα³ Re S η = 0
            add(&mut a, rows[3], up, 3, degree, mu_up);
            add(&mut a, rows[3], up, 1, degree, -3.0 * alpha2 * mu_up);
            add(&mut a, rows[3], lo, 3, 0, -mu_lo);
            add(&mut a, rows[3], lo, 1, 0, 3.0 * alpha2 * mu_lo);
            a[(rows[3], eta)] += c64::new(0.0, alpha2 * alpha * self.reynolds * self.tension);
            // 5. φ(y_i) + U(y_i) η = c η
            add(&mut a, eta, lo, 0, 0, 1.0);
            a[(eta, eta)] += real(flow.velocity_in(lo, yi));
            b[(eta, eta)] = real(1.0);
        }
        (a, b)
    }
}

/// The finite wave speeds c of one problem, most unstable first.
#[derive(Clone, Debug, PartialEq)]
pub struct Spectrum {
    wavenumber: f64,
    speeds: Vec<c64>,
}

impl Spectrum {
    /// Wave speeds c = c_r + i c_i, sorted by decreasing c_i.
    pub fn speeds(&self) -> &[c64] {
        &self.speeds
    }

    /// The leading (largest c_i) wave speed, if any eigenvalue survived the filter.
    pub fn leading(&self) -> Option<c64> {
        self.speeds.first().copied()
    }

    /// Temporal growth rate α c_i of the leading mode, in units of U_max/h.
    pub fn growth_rate(&self) -> Option<f64> {
        self.leading().map(|c| self.wavenumber * c.im)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn condition_rows_are_the_cubic_coefficients_of_each_layer() {
        // Two layers of 10 points: 14 unknowns per layer (10 nodes, then 4 coefficients).
        let problem =
            StabilityProblem::new(LayeredChannel::two_layer(2.0, 1.0).unwrap(), 100.0, 1.0)
                .with_points(10);
        assert_eq!(
            problem.condition_indices(),
            vec![10, 11, 12, 13, 24, 25, 26, 27]
        );
        assert_eq!(problem.eta(0), 28);
    }

    #[test]
    fn bad_parameters_are_reported_not_solved() {
        let good = StabilityProblem::new(LayeredChannel::single(), 100.0, 1.0);
        assert!(good.with_reynolds(-1.0).solve().is_err());
        assert!(good.with_wavenumber(0.0).solve().is_err());
        assert!(good.with_points(4).solve().is_err());
        let mut tense = good.clone();
        tense.tension = f64::NAN;
        assert!(tense.solve().is_err());
    }
}
