//! Equations of state p(ρ) of the weakly-compressible model, and their inverses.

/// Which equation of state links pressure to density.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum EquationOfState {
    /// Linear (stiffened): p = c0² (ρ − ρ0) + pb.
    Linear,
    /// Tait (Monaghan 1994, J. Comput. Phys. 110): p = (ρ0 c0²/γ) ((ρ/ρ0)^γ − 1) + pb.
    Tait {
        /// Exponent γ (7 for water-like liquids, common practice).
        exponent: f64,
    },
}

/// The equation of state with its constants: sound speed c0 (m/s), background pressure pb (Pa).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StateLaw {
    /// The form p(ρ).
    pub form: EquationOfState,
    /// Artificial sound speed c0 (m/s).
    pub sound_speed: f64,
    /// Background pressure pb (Pa), added to keep confined flows in compression.
    pub background_pressure: f64,
}

impl StateLaw {
    /// Pressure (Pa) of a particle with density `rho` and reference density `rho0` (kg/m³).
    #[inline]
    pub fn pressure(&self, rho: f64, rho0: f64) -> f64 {
        let c2 = self.sound_speed * self.sound_speed;
        match self.form {
            EquationOfState::Linear => c2 * (rho - rho0) + self.background_pressure,
            EquationOfState::Tait { exponent } => {
                rho0 * c2 / exponent * ((rho / rho0).powf(exponent) - 1.0)
                    + self.background_pressure
            }
        }
    }

    /// Density (kg/m³) that gives pressure `p` (Pa): the inverse of [`StateLaw::pressure`].
    #[inline]
    pub fn density(&self, p: f64, rho0: f64) -> f64 {
        let c2 = self.sound_speed * self.sound_speed;
        let excess = p - self.background_pressure;
        match self.form {
            EquationOfState::Linear => rho0 + excess / c2,
            EquationOfState::Tait { exponent } => {
                // Clamp so that a strong suction cannot produce a non-positive density.
                let ratio = (1.0 + exponent * excess / (rho0 * c2)).max(1e-6);
                rho0 * ratio.powf(1.0 / exponent)
            }
        }
    }
}

/// Writes p_i = law.pressure(ρ_i, ρ0[phase_i]) for every particle (pure map over slices).
pub fn pressures_from_densities(
    law: &StateLaw,
    reference_density: &[f64],
    density: &[f64],
    phase: &[u16],
    pressure: &mut [f64],
) {
    for ((p, &rho), &ph) in pressure.iter_mut().zip(density).zip(phase) {
        *p = law.pressure(rho, reference_density[ph as usize]);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_and_tait_agree_to_first_order_and_invert() {
        let linear = StateLaw {
            form: EquationOfState::Linear,
            sound_speed: 10.0,
            background_pressure: 50.0,
        };
        let tait = StateLaw {
            form: EquationOfState::Tait { exponent: 7.0 },
            ..linear
        };
        let rho0 = 1000.0;
        assert_eq!(linear.pressure(rho0, rho0), 50.0);
        assert_eq!(tait.pressure(rho0, rho0), 50.0);
        let rho = rho0 * (1.0 + 1e-5);
        let (pl, pt) = (linear.pressure(rho, rho0), tait.pressure(rho, rho0));
        assert!(((pl - 50.0) - (pt - 50.0)).abs() < 1e-3 * (pl - 50.0));
        for law in [linear, tait] {
            for rho in [990.0, 1000.0, 1012.5] {
                let back = law.density(law.pressure(rho, rho0), rho0);
                assert!((back - rho).abs() < 1e-9 * rho, "{law:?}: {rho} -> {back}");
            }
        }
    }

    #[test]
    fn pressures_use_the_reference_density_of_each_phase() {
        let law = StateLaw {
            form: EquationOfState::Linear,
            sound_speed: 2.0,
            background_pressure: 0.0,
        };
        let mut p = [0.0; 2];
        pressures_from_densities(&law, &[1000.0, 1100.0], &[1001.0, 1101.0], &[0, 1], &mut p);
        assert_eq!(p, [4.0, 4.0]);
    }
}
