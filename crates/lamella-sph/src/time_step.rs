//! The adaptive time step: the smallest of the acoustic, viscous and body-force limits.

/// Safety factors of the three time-step limits (dimensionless).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TimeStepFactors {
    /// C_cfl in dt ≤ C_cfl h / (c0 + |v|max); 0.25 is common practice.
    pub acoustic: f64,
    /// C_ν in dt ≤ C_ν h² / ν_max; 0.125 after Morris, Fox & Zhu 1997.
    pub viscous: f64,
    /// C_f in dt ≤ C_f √(h / |a|max); 0.25 after Monaghan 1992.
    pub force: f64,
}

impl Default for TimeStepFactors {
    fn default() -> Self {
        TimeStepFactors {
            acoustic: 0.25,
            viscous: 0.125,
            force: 0.25,
        }
    }
}

/// Which limit set the time step.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Limit {
    /// Sound waves: C_cfl h / (c0 + |v|max).
    Acoustic,
    /// Viscous diffusion: C_ν h² / ν_max.
    Viscous,
    /// Acceleration: C_f √(h / |a|max).
    Force,
}

impl std::fmt::Display for Limit {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Limit::Acoustic => "acoustic",
            Limit::Viscous => "viscous",
            Limit::Force => "force",
        })
    }
}

/// dt = min(C_cfl h/(c0 + Umax), C_ν h²/ν_max, C_f √(h/|a|max)) (s) and the limit that set it
/// (Morris, Fox & Zhu 1997, J. Comput. Phys. 136, eq. 24–25; Monaghan 1992, Annu. Rev. Astron.
/// Astrophys. 30). A zero viscosity or acceleration removes that limit; ties go to the earlier
/// limit in the order acoustic, viscous, force.
pub fn stable_time_step(
    h: f64,
    sound_speed: f64,
    max_speed: f64,
    max_kinematic_viscosity: f64,
    max_acceleration: f64,
    factors: &TimeStepFactors,
) -> (f64, Limit) {
    let mut best = (
        factors.acoustic * h / (sound_speed + max_speed),
        Limit::Acoustic,
    );
    if max_kinematic_viscosity > 0.0 {
        let viscous = factors.viscous * h * h / max_kinematic_viscosity;
        if viscous < best.0 {
            best = (viscous, Limit::Viscous);
        }
    }
    if max_acceleration > 0.0 {
        let force = factors.force * (h / max_acceleration).sqrt();
        if force < best.0 {
            best = (force, Limit::Force);
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_limit_can_win() {
        let f = TimeStepFactors::default();
        let (dt, limit) = stable_time_step(1e-2, 10.0, 0.0, 0.0, 0.0, &f);
        assert_eq!(limit, Limit::Acoustic);
        assert!((dt - 0.25 * 1e-2 / 10.0).abs() < 1e-18);
        let (dt, limit) = stable_time_step(1e-2, 10.0, 0.0, 1.0, 0.0, &f);
        assert_eq!(limit, Limit::Viscous);
        assert!((dt - 0.125 * 1e-4).abs() < 1e-18);
        let (dt, limit) = stable_time_step(1e-2, 10.0, 0.0, 0.0, 1e6, &f);
        assert_eq!(limit, Limit::Force);
        assert!((dt - 0.25 * 1e-4).abs() < 1e-18);
    }
}
