//! The leading eigenmode as a function of position: the stream function φ(y) in every layer,
//! the interface displacements η and the velocity perturbation, to start a simulation on the
//! linear mode.
//!
//! Conventions as in [`super::spectrum`]: ψ = φ(y) e^{iα(x − ct)}, u = ∂ψ/∂y, v = −∂ψ/∂x, so at
//! t = 0 the perturbation velocity is u' = Re[φ'(y) e^{iαx}], v' = Re[−iα φ(y) e^{iαx}], and
//! interface i sits at y_i + Re[η_i e^{iαx}]. The kinematic condition ∂η/∂t + U ∂η/∂x = v
//! (Yih 1967, J. Fluid Mech. 27, §2; Hooper 1985, Phys. Fluids 28, for the two-fluid interface
//! conditions) gives η_i = φ(y_i)/(c − U(y_i)) in this convention (written φ/(U − c) it
//! belongs to v = +∂ψ/∂x).
//!
//! The eigenvector of the discretisation ([`StabilityProblem::solve`]; Chebyshev methods for
//! Orr–Sommerfeld modes after Orszag 1971, J. Fluid Mech. 50) holds g = φ'''' at the nodes of
//! each layer and the Chebyshev coefficients of a cubic, φ = I⁴g + cubic. Here they become
//! Chebyshev series of φ, φ', …, φ'''' in each layer, evaluated anywhere by Clenshaw's
//! recurrence, also a little past a layer's bounds (for a particle that a seeded wave has
//! carried across the undisturbed interface height).

use faer::c64;

use super::channel::LayeredChannel;
use super::chebyshev;
use super::{StabilityError, StabilityProblem};

/// Derivatives of φ kept per layer: φ, φ', φ'', φ''', φ''''.
const DERIVATIVES: usize = 5;

/// Below this |η_0| (relative to the largest nodal |φ|) the leading mode does not move the
/// first interface, and cannot be normalised on it.
const NO_DISPLACEMENT: f64 = 1.0e-8;

/// The leading eigenmode of a layered channel in scaled units (lengths in h, velocities in
/// U_max; see [`crate::stability`]), normalised so that the lowest interface is displaced by
/// η_0 = 1 (real: the crest at x = 0); with no interface, so that the largest nodal |φ| is 1
/// (real).
#[derive(Clone, Debug, PartialEq)]
pub struct Eigenmode {
    channel: LayeredChannel,
    wavenumber: f64,
    speed: c64,
    /// Per layer, the Chebyshev series in the layer's ξ ∈ [−1, 1] of d^pφ/dy^p, p = 0..=4.
    series: Vec<[Vec<c64>; DERIVATIVES]>,
    /// η of each interface, lowest first.
    displacement: Vec<c64>,
}

impl StabilityProblem {
    /// The leading mode (largest c_i, as [`Spectrum::leading`](super::Spectrum::leading)) with
    /// its eigenfunction. Fails as [`Self::solve`] does, or when the leading mode leaves the
    /// lowest interface in place (it could not be seeded by displacing it).
    pub fn leading_mode(&self) -> Result<Eigenmode, StabilityError> {
        let speed = self.solve()?.leading().ok_or(StabilityError::NoMode)?;
        let vector = self.eigenvector(speed)?;
        Eigenmode::from_eigenvector(self, speed, &vector)
    }
}

/// Applies a real linear map of Chebyshev series (`integrate`, `differentiate`) to a complex one.
fn complex_series(series: &[c64], map: fn(&[f64]) -> Vec<f64>) -> Vec<c64> {
    let re: Vec<f64> = series.iter().map(|c| c.re).collect();
    let im: Vec<f64> = series.iter().map(|c| c.im).collect();
    map(&re)
        .into_iter()
        .zip(map(&im))
        .map(|(re, im)| c64::new(re, im))
        .collect()
}

/// s·a + t·b for series of any lengths (the shorter padded with zeros).
fn combine(s: f64, a: &[c64], t: f64, b: &[c64]) -> Vec<c64> {
    let zero = c64::new(0.0, 0.0);
    (0..a.len().max(b.len()))
        .map(|m| a.get(m).copied().unwrap_or(zero) * s + b.get(m).copied().unwrap_or(zero) * t)
        .collect()
}

/// A complex Chebyshev series at ξ (Clenshaw on both parts).
fn evaluate(series: &[c64], xi: f64) -> c64 {
    let re: Vec<f64> = series.iter().map(|c| c.re).collect();
    let im: Vec<f64> = series.iter().map(|c| c.im).collect();
    c64::new(chebyshev::evaluate(&re, xi), chebyshev::evaluate(&im, xi))
}

impl Eigenmode {
    /// The series of φ … φ'''' in each layer from an eigenvector of `problem` (layout of
    /// [`StabilityProblem::node`], [`StabilityProblem::cubic`], [`StabilityProblem::eta`]):
    /// d^pφ/dy^p = s^(p−4) Q^(4−p) C g + s^p D^p a, with C the nodal-to-coefficient transform,
    /// Q integration and D differentiation of Chebyshev series, s = 2/(layer thickness).
    fn from_eigenvector(
        problem: &StabilityProblem,
        speed: c64,
        vector: &[c64],
    ) -> Result<Self, StabilityError> {
        let channel = &problem.channel;
        let degree = problem.points_per_layer - 1;
        let size = degree + 1;
        let transform = chebyshev::coefficients_from_values(degree);
        let mut series = Vec::with_capacity(channel.layer_count());
        for j in 0..channel.layer_count() {
            let (lower, upper) = channel.layer(j);
            let s = 2.0 / (upper - lower);
            let fourth: Vec<c64> = (0..size)
                .map(|m| {
                    (0..size)
                        .map(|k| vector[problem.node(j, k)] * transform[m * size + k])
                        .sum()
                })
                .collect();
            // integrals[q] = Q^q C g, cubics[p] = D^p a.
            let mut integrals = vec![fourth];
            let cubic: Vec<c64> = (0..4).map(|i| vector[problem.cubic(j, i)]).collect();
            let mut cubics = vec![cubic];
            for q in 0..4 {
                integrals.push(complex_series(&integrals[q], chebyshev::integrate));
                cubics.push(complex_series(&cubics[q], chebyshev::differentiate));
            }
            series.push(std::array::from_fn(|p| {
                combine(
                    s.powi(p as i32 - 4),
                    &integrals[4 - p],
                    s.powi(p as i32),
                    &cubics[p],
                )
            }));
        }
        let displacement: Vec<c64> = (0..channel.interfaces().len())
            .map(|i| vector[problem.eta(i)])
            .collect();
        let mut mode = Eigenmode {
            channel: channel.clone(),
            wavenumber: problem.wavenumber,
            speed,
            series,
            displacement,
        };
        let largest = mode.largest_nodal_stream_function(degree);
        let reference = match mode.displacement.first() {
            Some(&eta) if eta.norm() > NO_DISPLACEMENT * largest.norm() => eta,
            Some(_) => {
                return Err(StabilityError::InvalidParameter(
                    "the leading mode does not displace the interface, so it cannot be seeded \
                     by an interface wave"
                        .into(),
                ));
            }
            None => largest,
        };
        mode.scale(reference.inv());
        Ok(mode)
    }

    /// φ of largest modulus at the Chebyshev nodes of all layers.
    fn largest_nodal_stream_function(&self, degree: usize) -> c64 {
        let xi = chebyshev::nodes(degree);
        self.series
            .iter()
            .flat_map(|layer| xi.iter().map(|&x| evaluate(&layer[0], x)))
            .fold(c64::new(0.0, 0.0), |best, phi| {
                if phi.norm() > best.norm() { phi } else { best }
            })
    }

    /// Multiplies the mode (φ and η) by `factor`.
    fn scale(&mut self, factor: c64) {
        for layer in &mut self.series {
            for coefficient in layer.iter_mut().flatten() {
                *coefficient *= factor;
            }
        }
        for eta in &mut self.displacement {
            *eta *= factor;
        }
    }

    /// The layers and their viscosities.
    pub fn channel(&self) -> &LayeredChannel {
        &self.channel
    }

    /// Wavenumber α = k h.
    pub fn wavenumber(&self) -> f64 {
        self.wavenumber
    }

    /// Wave speed c = c_r + i c_i (units of U_max).
    pub fn speed(&self) -> c64 {
        self.speed
    }

    /// Temporal growth rate α c_i (units of U_max/h).
    pub fn growth_rate(&self) -> f64 {
        self.wavenumber * self.speed.im
    }

    /// Complex displacement η of interface `interface` (lowest first; η_0 = 1).
    ///
    /// Panics if there is no such interface.
    pub fn displacement(&self, interface: usize) -> c64 {
        self.displacement[interface]
    }

    /// Index of the layer holding `y` (the lower layer at an interface).
    pub fn layer_of(&self, y: f64) -> usize {
        let layers = self.channel.layer_count();
        (0..layers)
            .find(|&j| y <= self.channel.layer(j).1)
            .unwrap_or(layers - 1)
    }

    /// d^pφ/dy^p (`order` p ≤ 4) at `y` from the series of layer `layer`, continued past its
    /// bounds when `y` lies outside it.
    ///
    /// Panics if `layer` or `order` is out of range.
    pub fn derivative_in(&self, layer: usize, order: usize, y: f64) -> c64 {
        let (lower, upper) = self.channel.layer(layer);
        let xi = (2.0 * y - lower - upper) / (upper - lower);
        evaluate(&self.series[layer][order], xi)
    }

    /// d^pφ/dy^p at `y` in the layer that holds it.
    pub fn derivative(&self, order: usize, y: f64) -> c64 {
        self.derivative_in(self.layer_of(y), order, y)
    }

    /// Perturbation velocity (u', v') at (x, y) from layer `layer`'s series, for the mode
    /// scaled by the complex `amplitude` (the lowest interface then sits at
    /// y_0 + Re[amplitude e^{iαx}]): u' = Re[amplitude φ' e^{iαx}],
    /// v' = Re[−iα amplitude φ e^{iαx}].
    pub fn velocity_in(&self, layer: usize, amplitude: c64, x: f64, y: f64) -> [f64; 2] {
        let wave = amplitude * c64::cis(self.wavenumber * x);
        let u = self.derivative_in(layer, 1, y) * wave;
        let v = self.derivative_in(layer, 0, y) * wave * c64::new(0.0, -self.wavenumber);
        [u.re, v.re]
    }

    /// [`Self::velocity_in`] in the layer that holds `y`.
    pub fn velocity(&self, amplitude: c64, x: f64, y: f64) -> [f64; 2] {
        self.velocity_in(self.layer_of(y), amplitude, x, y)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The bundled growing case: m = 20, n = 1, Re = 1, α = π.
    fn growing() -> Eigenmode {
        let channel = LayeredChannel::two_layer(20.0, 1.0).unwrap();
        StabilityProblem::new(channel, 1.0, std::f64::consts::PI)
            .leading_mode()
            .unwrap()
    }

    /// The bundled decaying case's ratios: m = 10, n = 2, Re = 5, α = π.
    fn decaying() -> Eigenmode {
        let channel = LayeredChannel::two_layer(10.0, 2.0).unwrap();
        StabilityProblem::new(channel, 5.0, std::f64::consts::PI)
            .leading_mode()
            .unwrap()
    }

    /// Largest |φ| and |φ'| over a fine sweep of the channel: the scale of the errors.
    fn size(mode: &Eigenmode) -> f64 {
        (0..=200)
            .map(|i| -1.0 + 2.0 * i as f64 / 200.0)
            .map(|y| {
                mode.derivative(0, y)
                    .norm()
                    .max(mode.derivative(1, y).norm())
            })
            .fold(0.0, f64::max)
    }

    #[test]
    fn the_mode_is_the_solvers_leading_one_normalised_on_the_interface() {
        let channel = LayeredChannel::two_layer(20.0, 1.0).unwrap();
        let problem = StabilityProblem::new(channel, 1.0, std::f64::consts::PI);
        let mode = problem.leading_mode().unwrap();
        let leading = problem.solve().unwrap().leading().unwrap();
        assert_eq!(mode.speed(), leading);
        assert!(mode.growth_rate() > 0.0, "m = 20, n = 1 grows");
        assert!((mode.displacement(0) - c64::new(1.0, 0.0)).norm() < 1e-14);
    }

    #[test]
    fn no_slip_at_the_walls_and_yihs_interface_conditions_hold() {
        // Yih 1967 §2: [φ] = 0, [φ'] + η[U'] = 0, [μ(φ'' + α²φ)] = 0, [μ(φ''' − 3α²φ')] = 0
        // (no tension), φ = (c − U)η; walls φ = φ' = 0.
        for mode in [growing(), decaying()] {
            let tol = 1e-9 * size(&mode);
            let alpha2 = mode.wavenumber().powi(2);
            let channel = mode.channel().clone();
            let flow = channel.base_flow();
            let top = channel.layer_count() - 1;
            for order in [0, 1] {
                assert!(mode.derivative_in(0, order, -1.0).norm() < tol);
                assert!(mode.derivative_in(top, order, 1.0).norm() < tol);
            }
            let yi = channel.interfaces()[0];
            let eta = mode.displacement(0);
            let d = |j: usize, p: usize| mode.derivative_in(j, p, yi);
            let (mu0, mu1) = (channel.viscosity(0), channel.viscosity(1));
            assert!((d(1, 0) - d(0, 0)).norm() < tol);
            let shear_jump = flow.shear_in(1, yi) - flow.shear_in(0, yi);
            assert!((d(1, 1) - d(0, 1) + eta * shear_jump).norm() < tol);
            let tangential = |j: usize, mu: f64| (d(j, 2) + d(j, 0) * alpha2) * mu;
            assert!((tangential(1, mu1) - tangential(0, mu0)).norm() < tol * 10.0);
            let normal = |j: usize, mu: f64| (d(j, 3) - d(j, 1) * (3.0 * alpha2)) * mu;
            assert!((normal(1, mu1) - normal(0, mu0)).norm() < tol * 100.0);
            let kinematic = d(0, 0) - eta * (mode.speed() - flow.velocity(yi));
            assert!(kinematic.norm() < tol);
        }
    }

    #[test]
    fn the_velocity_of_the_displaced_interface_is_continuous() {
        // Linearised about y_i: the fluid on either side moves with U(y_i) + η U'± + (u'±, v'±);
        // the jump of U' is taken up by u', so the total velocity is continuous.
        for mode in [growing(), decaying()] {
            let scale = size(&mode);
            let channel = mode.channel().clone();
            let flow = channel.base_flow();
            let yi = channel.interfaces()[0];
            let amplitude = c64::new(0.3, -0.2);
            for x in [0.0, 0.4, 1.3, 2.9] {
                let eta = (amplitude * mode.displacement(0) * c64::cis(mode.wavenumber() * x)).re;
                let below = mode.velocity_in(0, amplitude, x, yi);
                let above = mode.velocity_in(1, amplitude, x, yi);
                let du = (above[0] + eta * flow.shear_in(1, yi))
                    - (below[0] + eta * flow.shear_in(0, yi));
                assert!(du.abs() < 1e-9 * scale, "x = {x}: {du}");
                assert!((above[1] - below[1]).abs() < 1e-9 * scale, "x = {x}");
            }
        }
    }

    #[test]
    fn the_eigenfunction_solves_orr_sommerfeld_between_the_collocation_nodes() {
        // Orszag 1971 eq. 2, at points that are not nodes (an independent check of the series):
        // (U − c)(φ'' − α²φ) − U''φ − μ/(iαRe)(φ'''' − 2α²φ'' + α⁴φ) = 0.
        let channel = LayeredChannel::two_layer(20.0, 1.0).unwrap();
        let (re, alpha) = (1.0, std::f64::consts::PI);
        let mode = StabilityProblem::new(channel.clone(), re, alpha)
            .leading_mode()
            .unwrap();
        let flow = channel.base_flow();
        let c = mode.speed();
        let a2 = alpha * alpha;
        for j in 0..channel.layer_count() {
            let (lower, upper) = channel.layer(j);
            let mu = channel.viscosity(j);
            for i in 0..37 {
                let y = lower + (upper - lower) * (i as f64 + 0.37) / 37.0;
                let d = |p: usize| mode.derivative_in(j, p, y);
                let inertia =
                    (d(2) - d(0) * a2) * (flow.velocity_in(j, y) - c) - d(0) * flow.curvature_in(j);
                let viscous =
                    (d(4) - d(2) * (2.0 * a2) + d(0) * (a2 * a2)) / c64::new(0.0, alpha * re) * mu;
                let scale = d(4).norm() * mu / (alpha * re) + inertia.norm();
                assert!(
                    (inertia - viscous).norm() < 1e-9 * scale,
                    "layer {j}, y = {y}: residual {}",
                    (inertia - viscous).norm()
                );
            }
        }
    }

    #[test]
    fn the_single_fluid_mode_is_orszags_even_mode() {
        // Orszag 1971, J. Fluid Mech. 50: plane Poiseuille flow, Re = 10⁴, α = 1, leading
        // c = 0.23752649 + 0.00373967i, an even mode (φ(−y) = φ(y)).
        let problem = StabilityProblem::new(LayeredChannel::single(), 1.0e4, 1.0);
        let mode = problem.leading_mode().unwrap();
        assert!((mode.speed() - c64::new(0.23752649, 0.00373967)).norm() < 1e-8);
        let scale = size(&mode);
        for y in [0.1, 0.35, 0.6, 0.85, 0.97] {
            let even = mode.derivative(0, y) - mode.derivative(0, -y);
            assert!(even.norm() < 1e-8 * scale, "y = {y}: {}", even.norm());
        }
    }

    #[test]
    fn the_velocity_is_divergence_free_and_carries_the_interface() {
        // ∂u'/∂x + ∂v'/∂y = 0 by central differences (step 1e-4, error of order 1e-8 of the
        // size), and the kinematic condition written with the velocity itself:
        // v'(x, y_i) = ∂η/∂t + U ∂η/∂x for η = Re[A η_0 e^{iα(x − ct)}].
        let mode = growing();
        let flow = mode.channel().base_flow();
        let amplitude = c64::new(0.0, -1.0);
        let alpha = mode.wavenumber();
        let step = 1e-4;
        let scale = size(&mode) * alpha;
        for (x, y) in [(0.2, -0.7), (1.1, -0.2), (0.5, 0.3), (1.9, 0.8)] {
            let dudx = (mode.velocity(amplitude, x + step, y)[0]
                - mode.velocity(amplitude, x - step, y)[0])
                / (2.0 * step);
            let dvdy = (mode.velocity(amplitude, x, y + step)[1]
                - mode.velocity(amplitude, x, y - step)[1])
                / (2.0 * step);
            assert!((dudx + dvdy).abs() < 1e-6 * scale, "({x}, {y})");
        }
        let yi = mode.channel().interfaces()[0];
        for x in [0.0, 0.7, 2.1] {
            let eta = amplitude * mode.displacement(0) * c64::cis(alpha * x);
            let moving = eta * c64::new(0.0, alpha) * (flow.velocity(yi) - mode.speed());
            let v = mode.velocity_in(0, amplitude, x, yi)[1];
            assert!((v - moving.re).abs() < 1e-10 * scale, "x = {x}");
        }
    }
}
