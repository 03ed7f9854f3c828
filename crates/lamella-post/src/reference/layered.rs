//! Steady plane Poiseuille flow of two immiscible fluid layers between fixed plates.
//!
//! Source: Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5 (flow of two adjacent
//! immiscible fluids), here derived for unequal layer widths and a driving force density of
//! each layer's own. Layer 1 (viscosity μ1) fills 0 < y < h1, layer 2 (μ2) fills
//! h1 < y < h1 + h2 = H; layer i is driven along +x by the force density f_i (N/m³: ρ_i g for a
//! body force g per unit mass along a horizontal channel, so layers of unequal density feel
//! unequal forces; f1 = f2 = −dp/dx for a pressure gradient).
//!
//! In each layer μ_i u_i'' = −f_i, so the shear stress τ = μ u' falls linearly in each layer
//! and is continuous at the interface: τ(y) = C − f1 y below h1 and τ(y) = D − f2 y above it,
//! D = C − (f1 − f2) h1. With no slip at both walls and continuity of velocity at y = h1:
//!
//! C (h1/μ1 + h2/μ2) = f1 h1²/(2 μ1) + h2 (f1 h1 + f2 h2/2)/μ2,
//! u1(y) = (C y − f1 y²/2)/μ1,                      0 ≤ y ≤ h1,
//! u2(y) = (D (y − H) − f2 (y² − H²)/2)/μ2,         h1 ≤ y ≤ H.
//!
//! For f1 = f2 = f this is Bird, Stewart & Lightfoot's case, with
//! C (h1/μ1 + h2/μ2) = f/2 · (h1²/μ1 + h2 (2h1 + h2)/μ2), and D = C; that form is evaluated
//! then, so results for equal densities are unchanged to the last bit.

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
    /// Driving force density f1 of the lower layer along +x (N/m³), e.g. ρ1 g for a body
    /// force g per unit mass.
    pub force_density: f64,
    /// Driving force density f2 of the upper layer along +x (N/m³), e.g. ρ2 g; equal to
    /// `force_density` for layers of one density or a pressure gradient.
    pub upper_force_density: f64,
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

    /// Wall shear stress at y = 0, the constant C of τ(y) = C − f1 y (Pa); see the module docs.
    pub fn lower_wall_stress(&self) -> f64 {
        let (h1, h2) = (self.lower_width, self.upper_width);
        let (m1, m2) = (self.lower_viscosity, self.upper_viscosity);
        let (f1, f2) = (self.force_density, self.upper_force_density);
        if f1 == f2 {
            // Bird, Stewart & Lightfoot §2.5, one force density (the form used before f2 was
            // separate, kept so that equal densities give the same bits).
            0.5 * f1 * (h1 * h1 / m1 + h2 * (2.0 * h1 + h2) / m2) / (h1 / m1 + h2 / m2)
        } else {
            (0.5 * f1 * h1 * h1 / m1 + h2 * (f1 * h1 + 0.5 * f2 * h2) / m2) / (h1 / m1 + h2 / m2)
        }
    }

    /// The constant D = C − (f1 − f2) h1 of the upper layer's stress τ(y) = D − f2 y (Pa);
    /// D = C for equal force densities.
    fn upper_stress_constant(&self) -> f64 {
        self.lower_wall_stress()
            - (self.force_density - self.upper_force_density) * self.lower_width
    }

    /// Shear stress τ(y) (Pa): C − f1 y in the lower layer, D − f2 y in the upper one,
    /// continuous across the interface.
    pub fn shear_stress(&self, y: f64) -> f64 {
        if y > self.lower_width {
            self.upper_stress_constant() - self.upper_force_density * y
        } else {
            self.lower_wall_stress() - self.force_density * y
        }
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
        let h = self.gap();
        if upper {
            let (d, f2) = (self.upper_stress_constant(), self.upper_force_density);
            (d * (y - h) - 0.5 * f2 * (y * y - h * h)) / self.upper_viscosity
        } else {
            let (c, f1) = (self.lower_wall_stress(), self.force_density);
            (c * y - 0.5 * f1 * y * y) / self.lower_viscosity
        }
    }

    /// Velocity gradient du/dy (1/s) from the piece that holds y; at the interface itself
    /// `upper_side` picks the layer-2 side.
    pub fn velocity_gradient(&self, y: f64, upper_side: bool) -> f64 {
        let in_upper = y > self.lower_width || (y == self.lower_width && upper_side);
        if in_upper {
            (self.upper_stress_constant() - self.upper_force_density * y) / self.upper_viscosity
        } else {
            (self.lower_wall_stress() - self.force_density * y) / self.lower_viscosity
        }
    }

    /// Velocity at the interface y = h1 (m/s).
    pub fn interface_velocity(&self) -> f64 {
        self.velocity(self.lower_width)
    }

    /// Location and value of the velocity maximum, where τ(y) = 0: y = C/f1 when that lies in
    /// the lower layer, y = D/f2 otherwise (the same y = C/f for equal force densities).
    /// With no driving force there is no flow and the peak is reported at y = 0 with zero
    /// velocity.
    pub fn peak(&self) -> Peak {
        let (f1, f2) = (self.force_density, self.upper_force_density);
        if f1 == 0.0 && f2 == 0.0 {
            return Peak {
                y: 0.0,
                velocity: 0.0,
            };
        }
        let lower = self.lower_wall_stress() / f1;
        let y = if f1 != 0.0 && (0.0..=self.lower_width).contains(&lower) {
            lower
        } else if f2 != 0.0 {
            self.upper_stress_constant() / f2
        } else {
            self.lower_width
        };
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
        let (c, d) = (self.lower_wall_stress(), self.upper_stress_constant());
        let (f1, f2) = (self.force_density, self.upper_force_density);
        let lower = (0.5 * c * h1 * h1 - f1 * h1.powi(3) / 6.0) / self.lower_viscosity;
        // ∫_{h1}^{H} [D (y − H) − f2 (y² − H²)/2] dy
        let upper = (-0.5 * d * (h - h1).powi(2)
            - 0.5 * f2 * ((h.powi(3) - h1.powi(3)) / 3.0 - h * h * (h - h1)))
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
            upper_force_density: 50.0,
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

    /// Layers of unequal density in a horizontal channel: force densities f1 = ρ1 g, f2 = ρ2 g.
    fn unequal(m1: f64, m2: f64, h1: f64, h2: f64, f1: f64, f2: f64) -> LayeredChannel {
        LayeredChannel {
            lower_width: h1,
            upper_width: h2,
            lower_viscosity: m1,
            upper_viscosity: m2,
            force_density: f1,
            upper_force_density: f2,
        }
    }

    #[test]
    fn a_hand_solved_channel_with_only_the_lower_layer_driven() {
        // h1 = h2 = 1, μ1 = μ2 = 1, f1 = 2, f2 = 0, solved by hand from μ u'' = −f_i:
        // 2C = f1 h1²/2 + h2 (f1 h1 + f2 h2/2) = 1 + 2, C = 3/2; u1 = 3y/2 − y²;
        // D = C − (f1 − f2) h1 = −1/2; u2 = −(y − 2)/2, a Couette profile dragged by layer 1.
        let c = unequal(1.0, 1.0, 1.0, 1.0, 2.0, 0.0);
        assert_eq!(c.lower_wall_stress(), 1.5);
        for k in 0..=20 {
            let y = 2.0 * k as f64 / 20.0;
            let exact = if y <= 1.0 {
                1.5 * y - y * y
            } else {
                1.0 - 0.5 * y
            };
            assert!((c.velocity(y) - exact).abs() < 1e-15, "y = {y}");
        }
        assert_eq!(c.shear_stress(1.5), -0.5);
        // Peak where τ = 0, y = C/f1 = 3/4, u = 9/16; Q = 5/12 + 1/4 = 2/3.
        assert_eq!(
            c.peak(),
            Peak {
                y: 0.75,
                velocity: 0.5625
            }
        );
        assert!((c.flow_rate() - 2.0 / 3.0).abs() < 1e-15);
    }

    #[test]
    fn unequal_force_densities_satisfy_the_equations_and_interface_conditions() {
        // Syrup (μ 5 mPa·s, 1300 kg/m³) under water (1 mPa·s, 1000 kg/m³), g = 0.4 m/s²: no slip
        // at both walls, u and μ u' continuous at the interface, μ_i u'' = −ρ_i g in each layer
        // (second differences), checked on the velocity itself.
        let g = 0.4;
        let c = unequal(5.0e-3, 1.0e-3, 0.8e-3, 0.4e-3, 1300.0 * g, 1000.0 * g);
        let (h1, h) = (c.lower_width, c.gap());
        assert_eq!(c.velocity(0.0), 0.0);
        assert!(c.velocity_in_layer(h, true).abs() < 1e-18);
        let d = 1e-9;
        let (below, above) = (
            c.velocity_in_layer(h1, false),
            c.velocity_in_layer(h1, true),
        );
        assert!(
            (below - above).abs() < 1e-12 * below.abs(),
            "{below} vs {above}"
        );
        let tau_below = c.lower_viscosity * (c.velocity(h1) - c.velocity(h1 - d)) / d;
        let tau_above = c.upper_viscosity * (c.velocity(h1 + d) - c.velocity(h1)) / d;
        // One-sided differences are off by f_i d/2 each (the curvature): the tolerance.
        let slack = (c.force_density + c.upper_force_density) * d;
        assert!(
            (tau_below - tau_above).abs() < slack,
            "{tau_below} vs {tau_above}"
        );
        assert!((c.shear_stress(h1) - tau_below).abs() < slack);
        assert!((c.shear_stress(h1 * (1.0 + 1e-12)) - c.shear_stress(h1)).abs() < 1e-12);
        let e = 1e-6;
        for (y, mu, f) in [
            (0.3e-3, c.lower_viscosity, c.force_density),
            (1.0e-3, c.upper_viscosity, c.upper_force_density),
        ] {
            let second = (c.velocity(y + e) - 2.0 * c.velocity(y) + c.velocity(y - e)) / (e * e);
            assert!(
                (mu * second + f).abs() < 1e-5 * f,
                "μ u'' = {}, −f = {}",
                mu * second,
                -f
            );
        }
        // The peak is the true maximum on a fine scan, and the flow rate matches a quadrature.
        let peak = c.peak();
        let n = 20_000;
        let dy = h / n as f64;
        let mut q = 0.0;
        for k in 0..n {
            let u = c.velocity((k as f64 + 0.5) * dy);
            assert!(u <= peak.velocity * (1.0 + 1e-12));
            q += u * dy;
        }
        assert!((q - c.flow_rate()).abs() < 1e-6 * q);
        // A denser lower layer is driven harder: its side of the profile is fuller than with
        // one density (ρ2 g in both layers).
        let one_density = unequal(5.0e-3, 1.0e-3, 0.8e-3, 0.4e-3, 1000.0 * g, 1000.0 * g);
        assert!(c.interface_velocity() > one_density.interface_velocity());
    }

    #[test]
    fn nearly_equal_force_densities_approach_the_one_density_profile() {
        // The general form (f1 ≠ f2) tends to Bird, Stewart & Lightfoot's (f1 = f2) evaluated
        // separately: their difference is of the order of the force difference, 1e-9.
        let same = unequal(2.0, 0.25, 0.55e-3, 0.45e-3, 50.0, 50.0);
        let near = unequal(2.0, 0.25, 0.55e-3, 0.45e-3, 50.0, 50.0 * (1.0 + 1e-9));
        for k in 0..=20 {
            let y = same.gap() * k as f64 / 20.0;
            let scale = same.peak().velocity;
            assert!(
                (same.velocity(y) - near.velocity(y)).abs() < 1e-8 * scale,
                "y = {y}"
            );
        }
        assert!((same.peak().y - near.peak().y).abs() < 1e-8 * same.gap());
    }
}
