//! Start-up flows between parallel plates from rest: the series solutions in
//! Morris, Fox & Zhu 1997, "Modeling low Reynolds number incompressible flows using SPH",
//! J. Comput. Phys. 136, pp. 214–226 (their equations for plane Poiseuille and Couette flow).

use std::f64::consts::PI;

/// Largest number of series terms summed (reached only for t ≈ 0, where the terms decay
/// algebraically rather than exponentially).
const MAX_TERMS: usize = 200_000;

/// Number of terms of a series whose n-th term carries exp(−n²π²νt/L²): enough that the
/// first dropped exponential is below 1e−17 (exp(−39) ≈ 1.2e−17).
fn terms_needed(nu: f64, t: f64, gap: f64) -> usize {
    let decay = PI * PI * nu * t / (gap * gap);
    if decay <= 0.0 {
        return MAX_TERMS;
    }
    let n = (39.0 / decay).sqrt().ceil() as usize + 1;
    n.clamp(1, MAX_TERMS)
}

/// Plates at y = 0 and y = `gap`, fluid of kinematic viscosity `nu` initially at rest.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlateGap {
    /// Distance between the plates L (m).
    pub gap: f64,
    /// Kinematic viscosity ν (m²/s).
    pub nu: f64,
}

impl PlateGap {
    /// Start-up plane Poiseuille flow driven by a body force per unit mass `force` (m/s²)
    /// along +x between fixed plates, velocity v_x(y, t) in m/s.
    ///
    /// v_x = F y (L − y)/(2ν) − Σ_{n≥0} 4FL²/(νπ³(2n+1)³) · sin(π y (2n+1)/L) · exp(−(2n+1)²π²νt/L²)
    ///
    /// Morris, Fox & Zhu 1997, eq. (21). Their printed form has the steady part as
    /// F/(2ν) y (y − L) with a + series; that is the same solution with the flow taken along −x.
    /// Here positive F drives positive v_x, so the steady part is F y(L−y)/(2ν) and the series
    /// (the sine series of that parabola) is subtracted: v_x = 0 at t = 0.
    pub fn poiseuille_startup(&self, force: f64, y: f64, t: f64) -> f64 {
        let (l, nu) = (self.gap, self.nu);
        let steady = force * y * (l - y) / (2.0 * nu);
        // Odd indices 2n+1 only: terms up to index m = 2n+1 ≤ terms_needed.
        let n_max = terms_needed(nu, t, l);
        let mut transient = 0.0;
        let mut m = 1usize;
        while m <= n_max {
            let mf = m as f64;
            transient += 4.0 * force * l * l / (nu * PI.powi(3) * mf.powi(3))
                * (PI * y * mf / l).sin()
                * (-mf * mf * PI * PI * nu * t / (l * l)).exp();
            m += 2;
        }
        steady - transient
    }

    /// Steady plane Poiseuille profile F y (L − y)/(2ν), the t → ∞ limit of
    /// [`PlateGap::poiseuille_startup`] (Morris, Fox & Zhu 1997).
    pub fn poiseuille_steady(&self, force: f64, y: f64) -> f64 {
        force * y * (self.gap - y) / (2.0 * self.nu)
    }

    /// Start-up Couette flow: lower plate fixed, upper plate (y = L) moving at `wall_speed` V0
    /// along +x from t = 0, velocity v_x(y, t) in m/s.
    ///
    /// v_x = V0 y/L + Σ_{n≥1} 2V0/(nπ) (−1)ⁿ sin(nπy/L) exp(−νn²π²t/L²)
    ///
    /// Morris, Fox & Zhu 1997, eq. (22). At t = 0 the series converges only like 1/n, so the
    /// value there is accurate to about 1e−4·V0 in the interior.
    pub fn couette_startup(&self, wall_speed: f64, y: f64, t: f64) -> f64 {
        let (l, nu) = (self.gap, self.nu);
        let n_max = terms_needed(nu, t, l);
        let mut transient = 0.0;
        for n in 1..=n_max {
            let nf = n as f64;
            let sign = if n % 2 == 0 { 1.0 } else { -1.0 };
            transient += 2.0 * wall_speed / (nf * PI)
                * sign
                * (nf * PI * y / l).sin()
                * (-nu * nf * nf * PI * PI * t / (l * l)).exp();
        }
        wall_speed * y / l + transient
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const GAP: PlateGap = PlateGap {
        gap: 1e-3,
        nu: 1e-6,
    };
    const FORCE: f64 = 1e-4;

    #[test]
    fn poiseuille_starts_from_rest() {
        for &y in &[0.1e-3, 0.25e-3, 0.5e-3, 0.9e-3] {
            let v = GAP.poiseuille_startup(FORCE, y, 0.0);
            let scale = GAP.poiseuille_steady(FORCE, 0.5e-3);
            assert!(v.abs() < 1e-8 * scale, "v({y}, 0) = {v}");
        }
    }

    #[test]
    fn poiseuille_tends_to_the_steady_parabola() {
        // Steady centre-line speed F L²/(8ν) (Morris, Fox & Zhu 1997).
        let centre = FORCE * GAP.gap * GAP.gap / (8.0 * GAP.nu);
        assert!((GAP.poiseuille_steady(FORCE, 0.5e-3) - centre).abs() < 1e-15);
        // Morris, Fox & Zhu 1997 use F = 1e-4 m/s², ν = 1e-6 m²/s, L = 1e-3 m: peak 1.25e-5 m/s.
        assert!((centre - 1.25e-5).abs() < 1e-18);
        let t_late = 10.0 * GAP.gap * GAP.gap / GAP.nu;
        for &y in &[0.1e-3, 0.5e-3, 0.77e-3] {
            let v = GAP.poiseuille_startup(FORCE, y, t_late);
            assert!((v - GAP.poiseuille_steady(FORCE, y)).abs() < 1e-12 * centre);
        }
    }

    #[test]
    fn poiseuille_rises_monotonically_at_the_centre() {
        let mut last = 0.0;
        for k in 1..20 {
            let t = k as f64 * 0.02 * GAP.gap * GAP.gap / GAP.nu;
            let v = GAP.poiseuille_startup(FORCE, 0.5e-3, t);
            assert!(v > last);
            last = v;
        }
    }

    #[test]
    fn couette_starts_from_rest_and_tends_to_linear() {
        let v0 = 2.5e-5;
        for &y in &[0.2e-3, 0.5e-3, 0.8e-3] {
            assert!(GAP.couette_startup(v0, y, 0.0).abs() < 1e-3 * v0);
            let t_late = 10.0 * GAP.gap * GAP.gap / GAP.nu;
            let v = GAP.couette_startup(v0, y, t_late);
            assert!((v - v0 * y / GAP.gap).abs() < 1e-12 * v0);
        }
    }

    #[test]
    fn couette_keeps_the_wall_conditions() {
        let v0 = 1.0;
        let t = 0.05 * GAP.gap * GAP.gap / GAP.nu;
        assert!(GAP.couette_startup(v0, 0.0, t).abs() < 1e-14);
        assert!((GAP.couette_startup(v0, GAP.gap, t) - v0).abs() < 1e-12);
    }
}
