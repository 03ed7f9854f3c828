//! The layered channel in scaled form and its steady pressure-driven velocity profile.
//!
//! Scaling (see the module doc of [`crate::stability`]): walls at y = −1 and y = +1 (length
//! scale: the channel half-width), velocity scaled by the maximum of the steady profile,
//! viscosities relative to the lowest layer.

use super::StabilityError;

/// Layers stacked between the walls y = −1 and y = +1, lowest first.
#[derive(Clone, Debug, PartialEq)]
pub struct LayeredChannel {
    /// Layer bounds −1 = y_0 < y_1 < … < y_k = 1.
    bounds: Vec<f64>,
    /// Viscosity of each layer divided by that of the lowest layer.
    viscosity: Vec<f64>,
}

impl LayeredChannel {
    /// One fluid filling the channel (plane Poiseuille flow).
    pub fn single() -> Self {
        Self {
            bounds: vec![-1.0, 1.0],
            viscosity: vec![1.0],
        }
    }

    /// Two layers: viscosity ratio `m` = μ_lower/μ_upper and width ratio
    /// `n` = d_lower/d_upper (Yih's ratios with fluid 1 the lower layer, as in
    /// `lamella_case::LayerPair`). The interface lies at y = (n − 1)/(n + 1).
    pub fn two_layer(m: f64, n: f64) -> Result<Self, StabilityError> {
        positive("viscosity ratio m", m)?;
        positive("width ratio n", n)?;
        Ok(Self {
            bounds: vec![-1.0, (n - 1.0) / (n + 1.0), 1.0],
            viscosity: vec![1.0, 1.0 / m],
        })
    }

    /// Any stack of layers: `bounds` from −1 to 1, strictly increasing, and one positive
    /// relative viscosity per layer.
    #[allow(clippy::neg_cmp_op_on_partial_ord)] // `!(a > b)` also rejects NaN on purpose
    pub fn from_layers(bounds: Vec<f64>, viscosity: Vec<f64>) -> Result<Self, StabilityError> {
        if bounds.len() != viscosity.len() + 1 || viscosity.is_empty() {
            return Err(StabilityError::InvalidParameter(format!(
                "{} layer bounds for {} layers; give one bound more than layers",
                bounds.len(),
                viscosity.len()
            )));
        }
        if bounds[0] != -1.0 || bounds[bounds.len() - 1] != 1.0 {
            return Err(StabilityError::InvalidParameter(
                "layer bounds must start at -1 and end at 1 (walls of the scaled channel)".into(),
            ));
        }
        if bounds.windows(2).any(|w| !(w[1] > w[0])) {
            return Err(StabilityError::InvalidParameter(
                "layer bounds must increase strictly".into(),
            ));
        }
        for &mu in &viscosity {
            positive("relative viscosity", mu)?;
        }
        Ok(Self { bounds, viscosity })
    }

    /// Number of layers.
    pub fn layer_count(&self) -> usize {
        self.viscosity.len()
    }

    /// Lower and upper bound of layer `j`.
    pub fn layer(&self, j: usize) -> (f64, f64) {
        (self.bounds[j], self.bounds[j + 1])
    }

    /// Relative viscosity of layer `j` (the lowest layer has 1).
    pub fn viscosity(&self, j: usize) -> f64 {
        self.viscosity[j]
    }

    /// Interface positions between consecutive layers, lowest first.
    pub fn interfaces(&self) -> &[f64] {
        &self.bounds[1..self.bounds.len() - 1]
    }

    /// The steady velocity profile, scaled so that its maximum is 1.
    pub fn base_flow(&self) -> BaseFlow {
        BaseFlow::new(self)
    }
}

fn positive(name: &str, value: f64) -> Result<(), StabilityError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(StabilityError::InvalidParameter(format!(
            "{name} must be a positive finite number, got {value}"
        )))
    }
}

/// Steady layered plane Poiseuille flow, U(y) with max U = 1.
///
/// Bird, Stewart & Lightfoot, *Transport Phenomena*, 2nd ed., §2.5: the shear stress
/// τ = μ dU/dy = G (y_0 − y) is linear and continuous across the interfaces (G = −dp/dx),
/// with y_0 fixed by no-slip at both walls: y_0 = Σ_j (y_{j+1}² − y_j²)/(2 μ_j) / Σ_j d_j/μ_j.
/// Integrating dU/dy = G (y_0 − y)/μ_j from the lower wall gives U; the maximum lies at
/// y = y_0, where the stress vanishes.
#[derive(Clone, Debug, PartialEq)]
pub struct BaseFlow {
    bounds: Vec<f64>,
    /// 1/μ_j · G/U_max per layer, so that dU/dy = fluidity_j (y_0 − y).
    fluidity: Vec<f64>,
    /// Velocity at each layer's lower bound.
    bottom_velocity: Vec<f64>,
    zero_stress: f64,
    peak: f64,
}

impl BaseFlow {
    fn new(channel: &LayeredChannel) -> Self {
        let bounds = channel.bounds.clone();
        let inverse: Vec<f64> = channel.viscosity.iter().map(|mu| 1.0 / mu).collect();
        let layers = inverse.len();
        let numerator: f64 = (0..layers)
            .map(|j| inverse[j] * (bounds[j + 1].powi(2) - bounds[j].powi(2)) / 2.0)
            .sum();
        let denominator: f64 = (0..layers)
            .map(|j| inverse[j] * (bounds[j + 1] - bounds[j]))
            .sum();
        let zero_stress = numerator / denominator;
        // Unscaled (G = 1) profile: U increases by w_j [y_0 (y − a) − (y² − a²)/2] in layer j.
        let rise =
            |j: usize, a: f64, y: f64| inverse[j] * (zero_stress * (y - a) - (y * y - a * a) / 2.0);
        let mut bottom_velocity = vec![0.0; layers];
        for j in 1..layers {
            bottom_velocity[j] = bottom_velocity[j - 1] + rise(j - 1, bounds[j - 1], bounds[j]);
        }
        let top = (0..layers)
            .find(|&j| zero_stress <= bounds[j + 1])
            .unwrap_or(layers - 1);
        let peak = bottom_velocity[top] + rise(top, bounds[top], zero_stress);
        Self {
            fluidity: inverse.iter().map(|w| w / peak).collect(),
            bottom_velocity: bottom_velocity.iter().map(|u| u / peak).collect(),
            bounds,
            zero_stress,
            peak,
        }
    }

    fn layer_of(&self, y: f64) -> usize {
        let layers = self.fluidity.len();
        (0..layers)
            .find(|&j| y <= self.bounds[j + 1])
            .unwrap_or(layers - 1)
    }

    /// U(y) in the layer containing `y`.
    pub fn velocity(&self, y: f64) -> f64 {
        self.velocity_in(self.layer_of(y), y)
    }

    /// U(y) evaluated with the formula of layer `j` (one-sided at an interface).
    pub fn velocity_in(&self, j: usize, y: f64) -> f64 {
        let a = self.bounds[j];
        self.bottom_velocity[j]
            + self.fluidity[j] * (self.zero_stress * (y - a) - (y * y - a * a) / 2.0)
    }

    /// dU/dy in layer `j`.
    pub fn shear_in(&self, j: usize, y: f64) -> f64 {
        self.fluidity[j] * (self.zero_stress - y)
    }

    /// d²U/dy² in layer `j` (constant in a layer).
    pub fn curvature_in(&self, j: usize) -> f64 {
        -self.fluidity[j]
    }

    /// Dimensional peak velocity per unit drive: U_max = `peak_coefficient` · G h²/μ_lower,
    /// with G = −dp/dx (or ρ times the body force per unit mass) and h the half-width.
    /// One layer: 1/2.
    pub fn peak_coefficient(&self) -> f64 {
        self.peak
    }

    /// Height of the velocity maximum (zero shear stress).
    pub fn peak_height(&self) -> f64 {
        self.zero_stress
    }
}

/// The dimensional scales of a layered channel, which turn the scaled stability problem into
/// the case's units: lengths scale with the half-width h, velocities with the peak U_max.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ChannelScales {
    /// Half the channel height h (m).
    pub half_width: f64,
    /// Peak velocity of the steady profile U_max (m/s), of either sign's drive.
    pub peak_velocity: f64,
    /// Reynolds number ρ U_max h / μ_lower.
    pub reynolds: f64,
}

impl ChannelScales {
    /// The scales of `channel` with half-width `half_width` (m), driven by the force density
    /// `drive` = ρ |g_x| (N/m³), with lower-layer density `density` (kg/m³) and viscosity
    /// `lower_viscosity` (Pa·s): U_max = [`BaseFlow::peak_coefficient`] · drive h²/μ_lower.
    pub fn new(
        channel: &LayeredChannel,
        half_width: f64,
        drive: f64,
        density: f64,
        lower_viscosity: f64,
    ) -> Self {
        let peak_velocity =
            channel.base_flow().peak_coefficient() * drive * half_width.powi(2) / lower_viscosity;
        Self::of_peak(half_width, peak_velocity, density, lower_viscosity)
    }

    /// The scales of a channel of half-width `half_width` (m) whose steady profile peaks at
    /// `peak_velocity` (m/s), however it is driven, with lower-layer density `density`
    /// (kg/m³) and viscosity `lower_viscosity` (Pa·s): Re = ρ U_max h/μ_lower.
    pub fn of_peak(
        half_width: f64,
        peak_velocity: f64,
        density: f64,
        lower_viscosity: f64,
    ) -> Self {
        Self {
            half_width,
            peak_velocity,
            reynolds: density * peak_velocity * half_width / lower_viscosity,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn single_layer_is_the_parabola_one_minus_y_squared() {
        // Plane Poiseuille flow scaled by centreline velocity: U = 1 − y².
        let flow = LayeredChannel::single().base_flow();
        for y in [-1.0, -0.3, 0.0, 0.5, 1.0] {
            assert!((flow.velocity(y) - (1.0 - y * y)).abs() < 1e-15);
            assert!((flow.shear_in(0, y) + 2.0 * y).abs() < 1e-15);
        }
        assert!((flow.curvature_in(0) + 2.0).abs() < 1e-15);
        assert!((flow.peak_coefficient() - 0.5).abs() < 1e-15);
    }

    #[test]
    fn two_layers_satisfy_no_slip_continuity_and_stress_balance() {
        // Bird, Stewart & Lightfoot §2.5: U continuous, μ dU/dy continuous at the interface.
        let (m, n) = (4.0, 0.5);
        let channel = LayeredChannel::two_layer(m, n).unwrap();
        let yi = channel.interfaces()[0];
        assert!((yi + 1.0 / 3.0).abs() < 1e-15);
        let flow = channel.base_flow();
        assert!(flow.velocity_in(0, -1.0).abs() < 1e-14);
        assert!(flow.velocity_in(1, 1.0).abs() < 1e-14);
        assert!((flow.velocity_in(0, yi) - flow.velocity_in(1, yi)).abs() < 1e-14);
        let stress_lower = channel.viscosity(0) * flow.shear_in(0, yi);
        let stress_upper = channel.viscosity(1) * flow.shear_in(1, yi);
        assert!((stress_lower - stress_upper).abs() < 1e-14);
        assert!((flow.velocity(flow.peak_height()) - 1.0).abs() < 1e-14);
        // The peak lies in the less viscous (upper, μ = 1/4) layer (DESIGN.md, facts of the trade).
        assert!(flow.peak_height() > yi);
    }

    #[test]
    fn viscosity_ratio_equal_to_width_ratio_squared_puts_the_peak_at_the_interface() {
        // d1²/μ1 = d2²/μ2 (m = n²): each layer is half of its own Poiseuille profile.
        let channel = LayeredChannel::two_layer(4.0, 2.0).unwrap();
        let flow = channel.base_flow();
        assert!((flow.peak_height() - channel.interfaces()[0]).abs() < 1e-14);
        let channel = LayeredChannel::two_layer(0.25, 0.5).unwrap();
        let flow = channel.base_flow();
        assert!((flow.peak_height() - channel.interfaces()[0]).abs() < 1e-14);
    }

    #[test]
    fn scales_of_a_single_layer_by_hand() {
        // Plane Poiseuille flow: U_max = G h²/(2μ) = 8 · 1e-6/(2 · 1e-3) = 4e-3 m/s, and
        // Re = ρ U_max h/μ = 1000 · 4e-3 · 1e-3/1e-3 = 4, from the drive or from the peak.
        let scales = ChannelScales::new(&LayeredChannel::single(), 1e-3, 8.0, 1000.0, 1e-3);
        assert!((scales.peak_velocity - 4e-3).abs() < 1e-15);
        assert!((scales.reynolds - 4.0).abs() < 1e-12);
        let by_peak = ChannelScales::of_peak(1e-3, 4e-3, 1000.0, 1e-3);
        assert!((by_peak.reynolds - 4.0).abs() < 1e-12);
        assert_eq!((by_peak.half_width, by_peak.peak_velocity), (1e-3, 4e-3));
    }

    #[test]
    fn bad_ratios_are_rejected() {
        assert!(LayeredChannel::two_layer(0.0, 1.0).is_err());
        assert!(LayeredChannel::two_layer(1.0, f64::NAN).is_err());
        assert!(LayeredChannel::from_layers(vec![-1.0, 0.5, 0.2, 1.0], vec![1.0; 3]).is_err());
        assert!(LayeredChannel::from_layers(vec![-1.0, 1.0], vec![1.0, 2.0]).is_err());
    }
}
