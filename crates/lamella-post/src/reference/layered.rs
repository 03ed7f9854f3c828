//! Steady plane Poiseuille flow of two immiscible fluid layers between fixed plates.
//!
//! Source: Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5 (flow of two adjacent
//! immiscible fluids), here derived for unequal layer widths. Layer 1 (viscosity μ1) fills
//! 0 < y < h1, layer 2 (μ2) fills h1 < y < h1 + h2; both are driven along +x by the same force
//! density f (N/m³: ρ g for a body force g per unit mass on a common density ρ, or −dp/dx).
//!
//! In each layer μ_i u_i'' = −f, so the shear stress τ = μ u' is one straight line across the
//! whole gap, τ(y) = C − f y (continuity of shear stress at the interface). With no slip at both
//! walls and continuity of velocity at y = h1:
//!
//! C (h1/μ1 + h2/μ2) = f/2 · (h1²/μ1 + h2 (2h1 + h2)/μ2),
//! u1(y) = (C y − f y²/2)/μ1,                      0 ≤ y ≤ h1,
//! u2(y) = (C (y − H) − f (y² − H²)/2)/μ2,          h1 ≤ y ≤ H = h1 + h2.

/// The two-layer channel: widths (m), dynamic viscosities (Pa·s) and the driving force density.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LayeredChannel {
    /// Width of the lower layer h1 (m), next to the wall at y = 0.
    pub lower_width: f64,
    /// Width of the upper layer h2 (m), next to the wall at y = h1 + h2.
    pub upper_width: f64,
    /// Dynamic viscosity μ1 of the lower layer (Pa·s).
    pub lower_viscosity: f64,
    /// Dynamic viscosity μ2 of the upper layer (Pa·s).
    pub upper_viscosity: f64,
    /// Driving force density f along +x (N/m³), e.g. ρ g for a body force g per unit mass.
    pub force_density: f64,
}

/// Where the velocity peaks and how large it is.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Peak {
    /// Height of the maximum velocity (m).
    pub y: f64,
    /// The maximum velocity (m/s).
    pub velocity: f64,
}

impl LayeredChannel {
    /// Gap between the walls H = h1 + h2 (m).
    pub fn gap(&self) -> f64 {
        self.lower_width + self.upper_width
    }

    /// Wall shear stress at y = 0, the constant C of τ(y) = C − f y (Pa); see the module docs.
    pub fn lower_wall_stress(&self) -> f64 {
        let (h1, h2) = (self.lower_width, self.upper_width);
        let (m1, m2) = (self.lower_viscosity, self.upper_viscosity);
        let f = self.force_density;
        0.5 * f * (h1 * h1 / m1 + h2 * (2.0 * h1 + h2) / m2) / (h1 / m1 + h2 / m2)
    }

    /// Shear stress τ(y) = C − f y (Pa), continuous across the interface.
    pub fn shear_stress(&self, y: f64) -> f64 {
        self.lower_wall_stress() - self.force_density * y
    }

    /// Velocity u(y) (m/s), piecewise parabolic; zero outside the gap.
    pub fn velocity(&self, y: f64) -> f64 {
        let h = self.gap();
        if !(0.0..=h).contains(&y) {
            return 0.0;
        }
        self.velocity_in_layer(y, y > self.lower_width)
    }

    /// Velocity u(y) (m/s) of one layer's parabola (`upper` picks layer 2), continued past the
    /// interface: the base flow a particle of that layer carries when a seeded wave has moved
    /// it a little across the undisturbed interface height.
    pub fn velocity_in_layer(&self, y: f64, upper: bool) -> f64 {
        let (c, f, h) = (self.lower_wall_stress(), self.force_density, self.gap());
        if upper {
            (c * (y - h) - 0.5 * f * (y * y - h * h)) / self.upper_viscosity
        } else {
            (c * y - 0.5 * f * y * y) / self.lower_viscosity
        }
    }

    /// Velocity gradient du/dy (1/s) from the piece that holds y; at the interface itself
    /// `upper_side` picks the layer-2 side.
    pub fn velocity_gradient(&self, y: f64, upper_side: bool) -> f64 {
        let c = self.lower_wall_stress();
        let f = self.force_density;
        let in_upper = y > self.lower_width || (y == self.lower_width && upper_side);
        if in_upper {
            (c - f * y) / self.upper_viscosity
        } else {
            (c - f * y) / self.lower_viscosity
        }
    }

    /// Velocity at the interface y = h1 (m/s).
    pub fn interface_velocity(&self) -> f64 {
        self.velocity(self.lower_width)
    }

    /// Location and value of the velocity maximum, where τ(y) = 0, i.e. y = C/f.
    /// For f = 0 there is no flow and the peak is reported at y = 0 with zero velocity.
    pub fn peak(&self) -> Peak {
        if self.force_density == 0.0 {
            return Peak {
                y: 0.0,
                velocity: 0.0,
            };
        }
        let y = self.lower_wall_stress() / self.force_density;
        Peak {
            y,
            velocity: self.velocity(y),
        }
    }

    /// Ratio of the velocity gradients on the two sides of the interface,
    /// (du/dy)₂ / (du/dy)₁ at y = h1; equals μ1/μ2 by stress continuity.
    pub fn gradient_jump_ratio(&self) -> f64 {
        let h1 = self.lower_width;
        self.velocity_gradient(h1, true) / self.velocity_gradient(h1, false)
    }

    /// Volume flow rate per unit depth Q = ∫ u dy (m²/s), from the exact integral of each
    /// parabolic piece.
    pub fn flow_rate(&self) -> f64 {
        let (h1, h) = (self.lower_width, self.gap());
        let c = self.lower_wall_stress();
        let f = self.force_density;
        let lower = (0.5 * c * h1 * h1 - f * h1.powi(3) / 6.0) / self.lower_viscosity;
        // ∫_{h1}^{H} [C (y − H) − f (y² − H²)/2] dy
        let upper = (-0.5 * c * (h - h1).powi(2)
            - 0.5 * f * ((h.powi(3) - h1.powi(3)) / 3.0 - h * h * (h - h1)))
            / self.upper_viscosity;
        lower + upper
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn channel(m1: f64, m2: f64, h1: f64, h2: f64) -> LayeredChannel {
        LayeredChannel {
            lower_width: h1,
            upper_width: h2,
            lower_viscosity: m1,
            upper_viscosity: m2,
            force_density: 50.0,
        }
    }

    #[test]
    fn equal_viscosities_give_the_single_parabola() {
        // Plane Poiseuille flow u = f y (H − y)/(2μ), Bird, Stewart & Lightfoot §2.5 with μ1 = μ2.
        let c = channel(0.3, 0.3, 0.4e-3, 0.6e-3);
        let h = c.gap();
        for k in 0..=20 {
            let y = h * k as f64 / 20.0;
            let exact = 50.0 * y * (h - y) / (2.0 * 0.3);
            assert!((c.velocity(y) - exact).abs() < 1e-12 * exact.max(1e-12));
        }
        let peak = c.peak();
        assert!((peak.y - 0.5 * h).abs() < 1e-15);
        // Q = f H³/(12 μ) for the single parabola.
        assert!((c.flow_rate() - 50.0 * h.powi(3) / (12.0 * 0.3)).abs() < 1e-12 * c.flow_rate());
    }

    #[test]
    fn velocity_vanishes_at_walls_and_is_continuous() {
        let c = channel(1.0, 0.1, 0.3e-3, 0.7e-3);
        assert_eq!(c.velocity(0.0), 0.0);
        assert!(c.velocity(c.gap()).abs() < 1e-18);
        let h1 = c.lower_width;
        let below = c.velocity(h1 * (1.0 - 1e-12));
        let above = c.velocity(h1 * (1.0 + 1e-12));
        assert!((below - above).abs() < 1e-9 * c.interface_velocity());
    }

    #[test]
    fn shear_stress_is_continuous_from_finite_differences() {
        // Stress continuity μ1 u1'(h1) = μ2 u2'(h1) (Bird, Stewart & Lightfoot §2.5), checked on
        // one-sided finite differences of the velocity itself.
        let c = channel(2.0, 0.25, 0.55e-3, 0.45e-3);
        let h1 = c.lower_width;
        let d = 1e-9;
        let slope_below = (c.velocity(h1) - c.velocity(h1 - d)) / d;
        let slope_above = (c.velocity(h1 + d) - c.velocity(h1)) / d;
        let tau_below = c.lower_viscosity * slope_below;
        let tau_above = c.upper_viscosity * slope_above;
        assert!((tau_below - tau_above).abs() < 1e-4 * tau_below.abs());
        assert!((c.gradient_jump_ratio() - 2.0 / 0.25).abs() < 1e-12);
    }

    #[test]
    fn peak_lies_in_the_less_viscous_layer() {
        // A fact of the trade (DESIGN.md; Yih 1967 set-up): the maximum sits in the less viscous layer.
        let c = channel(5.0, 1.0, 0.5e-3, 0.5e-3);
        let peak = c.peak();
        assert!(peak.y > c.lower_width);
        // The peak is the true maximum on a fine scan.
        for k in 0..=1000 {
            let y = c.gap() * k as f64 / 1000.0;
            assert!(c.velocity(y) <= peak.velocity * (1.0 + 1e-12));
        }
        let swapped = channel(1.0, 5.0, 0.5e-3, 0.5e-3);
        assert!(swapped.peak().y < swapped.lower_width);
    }

    #[test]
    fn flow_rate_matches_a_quadrature() {
        let c = channel(0.7, 0.05, 0.2e-3, 0.8e-3);
        let n = 20_000;
        let dy = c.gap() / n as f64;
        let q: f64 = (0..n).map(|k| c.velocity((k as f64 + 0.5) * dy) * dy).sum();
        assert!((q - c.flow_rate()).abs() < 1e-6 * q);
    }
}
