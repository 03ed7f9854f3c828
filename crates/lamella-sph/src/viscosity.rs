//! The viscosity-law plug-in point: each phase has a [`ViscosityLaw`] in the solver
//! configuration, and every step [`update_viscosities`] writes each fluid particle's dynamic
//! viscosity μ(γ̇) from its phase's law and its shear rate γ̇ (written into a buffer by
//! [`crate::shear_rate::shear_rates_into`] when some law depends on it).
//!
//! A law that depends on the shear rate is a new variant here: its `viscosity` and
//! `depends_on_shear_rate`, and the matching variant of the case schema. Only the Newtonian
//! law exists so far; with it μ never changes and no shear rate is computed.

use rayon::prelude::*;

use crate::particles::Kind;

/// How a phase's dynamic viscosity depends on the local flow.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ViscosityLaw {
    /// A constant dynamic viscosity μ (Pa·s).
    Newtonian {
        /// Dynamic viscosity (Pa·s).
        viscosity: f64,
    },
}

impl ViscosityLaw {
    /// Dynamic viscosity (Pa·s) at shear-rate magnitude `shear_rate` (1/s; NaN where it is
    /// not known, which a law that depends on it must handle).
    pub fn viscosity(&self, _shear_rate: f64) -> f64 {
        match *self {
            ViscosityLaw::Newtonian { viscosity } => viscosity,
        }
    }

    /// True when [`ViscosityLaw::viscosity`] reads its shear rate, so the solver must compute
    /// shear rates each step.
    pub fn depends_on_shear_rate(&self) -> bool {
        match self {
            ViscosityLaw::Newtonian { .. } => false,
        }
    }
}

/// Writes `viscosity[i]` of every fluid particle i from the law of its phase,
/// `laws[phase[i]]`, at its shear rate `shear_rate[i]` (a parallel map, so the result does not
/// depend on the thread count). `shear_rate` may be empty when no law depends on it. Wall
/// particles keep their viscosity.
pub fn update_viscosities(
    laws: &[ViscosityLaw],
    phase: &[u16],
    kind: &[Kind],
    shear_rate: &[f64],
    viscosity: &mut [f64],
) {
    viscosity
        .par_iter_mut()
        .enumerate()
        .filter(|&(i, _)| kind[i] == Kind::Fluid)
        .for_each(|(i, mu)| {
            let rate = shear_rate.get(i).copied().unwrap_or(f64::NAN);
            *mu = laws[phase[i] as usize].viscosity(rate);
        });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn newtonian_phases_set_their_constant_viscosity_on_fluid_particles_only() {
        let laws = [
            ViscosityLaw::Newtonian { viscosity: 1.0e-3 },
            ViscosityLaw::Newtonian { viscosity: 2.0e-2 },
        ];
        assert!(laws.iter().all(|law| !law.depends_on_shear_rate()));
        let phase = [0, 1, 1, 0];
        let kind = [Kind::Fluid, Kind::Fluid, Kind::Wall, Kind::Fluid];
        let mut viscosity = [0.0, 0.0, 5.0, 7.0];
        update_viscosities(&laws, &phase, &kind, &[], &mut viscosity);
        assert_eq!(viscosity, [1.0e-3, 2.0e-2, 5.0, 1.0e-3]);
        // The shear rate does not matter to a Newtonian liquid.
        update_viscosities(
            &laws,
            &phase,
            &kind,
            &[1.0, 1e6, 0.0, f64::NAN],
            &mut viscosity,
        );
        assert_eq!(viscosity, [1.0e-3, 2.0e-2, 5.0, 1.0e-3]);
    }
}
