//! Taylor–Green vortex in a periodic square of side L, the decaying exact solution of the
//! Navier–Stokes equations (Taylor & Green 1937, Proc. R. Soc. A 158).
//!
//! Convention: u = U sin(kx) cos(ky) F(t), v = −U cos(kx) sin(ky) F(t), k = 2π/L,
//! F(t) = exp(−2νk²t), so the kinetic energy decays as E(t) = E0 exp(−4νk²t).

use std::f64::consts::PI;

/// A periodic square of side `side` (m) with peak speed `speed` U (m/s) at t = 0 and kinematic
/// viscosity `nu` (m²/s).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TaylorGreen {
    /// Side L of the periodic square (m).
    pub side: f64,
    /// Velocity amplitude U (m/s).
    pub speed: f64,
    /// Kinematic viscosity ν (m²/s).
    pub nu: f64,
}

impl TaylorGreen {
    /// Wavenumber k = 2π/L (1/m).
    pub fn wavenumber(&self) -> f64 {
        2.0 * PI / self.side
    }

    /// Velocity (u, v) at (x, y) and time t (m/s), in the convention of the module docs.
    pub fn velocity(&self, x: f64, y: f64, t: f64) -> (f64, f64) {
        let k = self.wavenumber();
        let amp = self.speed * (-2.0 * self.nu * k * k * t).exp();
        (
            amp * (k * x).sin() * (k * y).cos(),
            -amp * (k * x).cos() * (k * y).sin(),
        )
    }

    /// Mean kinetic energy per unit mass over the square, E(t) = (U²/4) exp(−4νk²t) (J/kg).
    pub fn mean_kinetic_energy(&self, t: f64) -> f64 {
        let k = self.wavenumber();
        0.25 * self.speed * self.speed * (-4.0 * self.nu * k * k * t).exp()
    }

    /// Energy decay E(t)/E0 = exp(−4νk²t).
    pub fn energy_ratio(&self, t: f64) -> f64 {
        let k = self.wavenumber();
        (-4.0 * self.nu * k * k * t).exp()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TG: TaylorGreen = TaylorGreen {
        side: 1e-2,
        speed: 1e-2,
        nu: 1e-6,
    };

    #[test]
    fn mean_energy_matches_a_quadrature_of_the_field() {
        let n = 200;
        let d = TG.side / n as f64;
        let t = 3.0;
        let mut sum = 0.0;
        for i in 0..n {
            for j in 0..n {
                let (u, v) = TG.velocity((i as f64 + 0.5) * d, (j as f64 + 0.5) * d, t);
                sum += 0.5 * (u * u + v * v);
            }
        }
        let mean = sum / (n * n) as f64;
        assert!((mean - TG.mean_kinetic_energy(t)).abs() < 1e-10 * mean);
        assert!(
            (TG.energy_ratio(t) - TG.mean_kinetic_energy(t) / TG.mean_kinetic_energy(0.0)).abs()
                < 1e-14
        );
    }

    #[test]
    fn field_is_divergence_free() {
        let (x, y, t, d) = (0.0013, 0.0071, 1.0, 1e-7);
        let du_dx = (TG.velocity(x + d, y, t).0 - TG.velocity(x - d, y, t).0) / (2.0 * d);
        let dv_dy = (TG.velocity(x, y + d, t).1 - TG.velocity(x, y - d, t).1) / (2.0 * d);
        assert!((du_dx + dv_dy).abs() < 1e-6 * du_dx.abs().max(1.0));
    }
}
