//! The viscosity-law plug-in point: each phase has a [`ViscosityLaw`] in the solver
//! configuration, and every step [`update_viscosities`] writes each fluid particle's dynamic
//! viscosity μ(γ̇) from its phase's law and its shear rate γ̇ (the solver computes shear rates
//! only when some law depends on them).
//!
//! A generalised Newtonian law is a [`FlowCurve`] (the viscosity as a function of the shear
//! rate) clamped to a range [μ_min, μ_max] set in the case: a power law has no finite
//! viscosity at rest, and a regularised yield stress a very large one, so the clamps keep the
//! time step and the implicit solve bounded. A new law is a new [`FlowCurve`] variant (its
//! formula in [`FlowCurve::viscosity`]) and the matching variant of the case schema.

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
    /// A viscosity that depends on the shear rate, clamped to `[min_viscosity, max_viscosity]`.
    Generalised {
        /// The viscosity as a function of the shear rate.
        curve: FlowCurve,
        /// Smallest viscosity the law gives (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity the law gives (Pa·s).
        max_viscosity: f64,
    },
}

/// Generalised Newtonian flow curves μ(γ̇), γ̇ the shear-rate magnitude √(2 D:D) (1/s).
/// Formulas as in Bird, Armstrong & Hassager, Dynamics of Polymeric Liquids vol. 1, 2nd ed.
/// 1987, §4.1 (power law, Carreau–Yasuda), and Chhabra & Richardson, Non-Newtonian Flow and
/// Applied Rheology, 2nd ed. 2008, §1.3 (Cross, Herschel–Bulkley, Bingham); the regularised
/// yield stress is Papanastasiou 1987 (J. Rheol. 31, 385). Section numbers recalled from
/// memory.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FlowCurve {
    /// μ = K γ̇^(n−1): shear-thinning for n < 1, shear-thickening for n > 1.
    PowerLaw {
        /// Consistency K (Pa·sⁿ).
        consistency: f64,
        /// Flow behaviour index n (> 0).
        index: f64,
    },
    /// μ = μ∞ + (μ0 − μ∞) / (1 + (λ γ̇)^m).
    Cross {
        /// Zero-shear viscosity μ0 (Pa·s).
        zero_shear_viscosity: f64,
        /// Infinite-shear viscosity μ∞ (Pa·s).
        infinite_shear_viscosity: f64,
        /// Time constant λ (s).
        time_constant: f64,
        /// Exponent m (> 0).
        exponent: f64,
    },
    /// μ = μ∞ + (μ0 − μ∞) (1 + (λ γ̇)^a)^((n−1)/a); a = 2 is the Carreau law.
    CarreauYasuda {
        /// Zero-shear viscosity μ0 (Pa·s).
        zero_shear_viscosity: f64,
        /// Infinite-shear viscosity μ∞ (Pa·s).
        infinite_shear_viscosity: f64,
        /// Time constant λ (s).
        time_constant: f64,
        /// Transition exponent a (> 0).
        transition: f64,
        /// Power-law index n (> 0).
        index: f64,
    },
    /// μ = K γ̇^(n−1) + τ0 (1 − e^(−s γ̇))/γ̇: Herschel–Bulkley with Papanastasiou's
    /// regularisation, whose viscosity at rest is finite (K γ̇^(n−1) + τ0 s as γ̇ → 0 for
    /// n = 1) and which tends to τ = τ0 + K γ̇ⁿ once s γ̇ ≫ 1.
    HerschelBulkley {
        /// Yield stress τ0 (Pa).
        yield_stress: f64,
        /// Consistency K (Pa·sⁿ).
        consistency: f64,
        /// Flow behaviour index n (> 0).
        index: f64,
        /// Regularisation time s (s): larger is closer to a true yield stress.
        regularisation: f64,
    },
    /// μ = μp + τ0 (1 − e^(−s γ̇))/γ̇: the Bingham plastic with Papanastasiou's
    /// regularisation (Herschel–Bulkley with n = 1 and K = μp).
    Bingham {
        /// Yield stress τ0 (Pa).
        yield_stress: f64,
        /// Plastic viscosity μp (Pa·s).
        plastic_viscosity: f64,
        /// Regularisation time s (s).
        regularisation: f64,
    },
}

/// (1 − e^(−s γ̇))/γ̇, the regularised yield term per unit yield stress, with its limit s at
/// γ̇ = 0 (written with `exp_m1` so that small s γ̇ loses no digits).
fn regularised_yield(regularisation: f64, shear_rate: f64) -> f64 {
    if shear_rate > 0.0 {
        -(-regularisation * shear_rate).exp_m1() / shear_rate
    } else {
        regularisation
    }
}

impl FlowCurve {
    /// Unclamped viscosity (Pa·s) at shear rate `shear_rate` ≥ 0 (1/s); +∞ for a
    /// shear-thinning power law at rest.
    pub fn viscosity(&self, shear_rate: f64) -> f64 {
        let rate = shear_rate;
        match *self {
            FlowCurve::PowerLaw { consistency, index } => consistency * rate.powf(index - 1.0),
            FlowCurve::Cross {
                zero_shear_viscosity: mu0,
                infinite_shear_viscosity: mu_inf,
                time_constant,
                exponent,
            } => mu_inf + (mu0 - mu_inf) / (1.0 + (time_constant * rate).powf(exponent)),
            FlowCurve::CarreauYasuda {
                zero_shear_viscosity: mu0,
                infinite_shear_viscosity: mu_inf,
                time_constant,
                transition,
                index,
            } => {
                let base = 1.0 + (time_constant * rate).powf(transition);
                mu_inf + (mu0 - mu_inf) * base.powf((index - 1.0) / transition)
            }
            FlowCurve::HerschelBulkley {
                yield_stress,
                consistency,
                index,
                regularisation,
            } => {
                consistency * rate.powf(index - 1.0)
                    + yield_stress * regularised_yield(regularisation, rate)
            }
            FlowCurve::Bingham {
                yield_stress,
                plastic_viscosity,
                regularisation,
            } => plastic_viscosity + yield_stress * regularised_yield(regularisation, rate),
        }
    }
}

impl ViscosityLaw {
    /// Dynamic viscosity (Pa·s) at shear-rate magnitude `shear_rate` (1/s). A generalised law
    /// clamps its curve to its range and reads a shear rate that is not known (NaN, e.g. a
    /// particle with too few neighbours for a gradient) as rest.
    pub fn viscosity(&self, shear_rate: f64) -> f64 {
        match *self {
            ViscosityLaw::Newtonian { viscosity } => viscosity,
            ViscosityLaw::Generalised {
                curve,
                min_viscosity,
                max_viscosity,
            } => {
                let rate = if shear_rate.is_nan() {
                    0.0
                } else {
                    shear_rate.abs()
                };
                let mu = curve.viscosity(rate);
                // NaN cannot come from a valid curve; `max` maps it to the lower clamp.
                mu.max(min_viscosity).min(max_viscosity)
            }
        }
    }

    /// The smallest and largest viscosity the law can give (Pa·s).
    pub fn range(&self) -> (f64, f64) {
        match *self {
            ViscosityLaw::Newtonian { viscosity } => (viscosity, viscosity),
            ViscosityLaw::Generalised {
                min_viscosity,
                max_viscosity,
                ..
            } => (min_viscosity, max_viscosity),
        }
    }

    /// The largest viscosity the law can give (Pa·s): what bounds the explicit viscous step.
    pub fn max_viscosity(&self) -> f64 {
        self.range().1
    }

    /// True when [`ViscosityLaw::viscosity`] reads its shear rate, so the solver must compute
    /// shear rates each step.
    pub fn depends_on_shear_rate(&self) -> bool {
        match self {
            ViscosityLaw::Newtonian { .. } => false,
            ViscosityLaw::Generalised { .. } => true,
        }
    }
}

/// Writes `viscosity[i]` of every fluid particle i from the law of its phase,
/// `laws[phase[i]]`, at its shear rate `shear_rate(i)` (1/s; asked only when the law depends
/// on it). A parallel map, so the result does not depend on the thread count. Wall particles
/// keep their viscosity.
pub fn update_viscosities(
    laws: &[ViscosityLaw],
    phase: &[u16],
    kind: &[Kind],
    shear_rate: impl Fn(usize) -> f64 + Sync,
    viscosity: &mut [f64],
) {
    viscosity
        .par_iter_mut()
        .enumerate()
        .filter(|&(i, _)| kind[i] == Kind::Fluid)
        .for_each(|(i, mu)| {
            let law = &laws[phase[i] as usize];
            let rate = if law.depends_on_shear_rate() {
                shear_rate(i)
            } else {
                f64::NAN
            };
            *mu = law.viscosity(rate);
        });
}

#[cfg(test)]
mod tests {
    use super::*;

    fn relative(a: f64, b: f64) -> f64 {
        (a - b).abs() / b.abs()
    }

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
        // The shear rate does not matter to a Newtonian liquid: it is not even asked for.
        let never = |_: usize| -> f64 { panic!("a Newtonian law asked for its shear rate") };
        update_viscosities(&laws, &phase, &kind, never, &mut viscosity);
        assert_eq!(viscosity, [1.0e-3, 2.0e-2, 5.0, 1.0e-3]);
    }

    /// The power law's shear stress τ = K γ̇ⁿ at hand-computed points (Bird, Armstrong &
    /// Hassager 1987 §4.1): K = 2 Pa·s^0.5, n = 0.5 gives τ(4) = 2·2 = 4 Pa, so μ = 1 Pa·s;
    /// τ(100) = 20 Pa, μ = 0.2. With n = 1.5, K = 0.1: τ(4) = 0.8 Pa, μ = 0.2; τ(100) = 100 Pa,
    /// μ = 1.
    #[test]
    fn power_law_matches_its_stress_at_hand_computed_rates() {
        let thinning = FlowCurve::PowerLaw {
            consistency: 2.0,
            index: 0.5,
        };
        assert!(relative(thinning.viscosity(4.0), 1.0) < 1e-15);
        assert!(relative(thinning.viscosity(100.0), 0.2) < 1e-15);
        assert!(thinning.viscosity(0.0).is_infinite());
        let thickening = FlowCurve::PowerLaw {
            consistency: 0.1,
            index: 1.5,
        };
        assert!(relative(thickening.viscosity(4.0), 0.2) < 1e-15);
        assert!(relative(thickening.viscosity(100.0), 1.0) < 1e-15);
        assert_eq!(thickening.viscosity(0.0), 0.0);
        // n = 1 is Newtonian with μ = K.
        let newtonian = FlowCurve::PowerLaw {
            consistency: 0.3,
            index: 1.0,
        };
        for rate in [0.0, 1e-3, 1.0, 1e4] {
            assert_eq!(newtonian.viscosity(rate), 0.3);
        }
    }

    /// Cross: μ0 at rest, μ∞ at very high rates, and the midpoint (μ0 + μ∞)/2 at λ γ̇ = 1 for
    /// every exponent (Chhabra & Richardson 2008 §1.3: λ⁻¹ is the shear rate of the
    /// midpoint).
    #[test]
    fn cross_law_limits_and_midpoint() {
        for exponent in [0.5, 1.0, 2.0] {
            let curve = FlowCurve::Cross {
                zero_shear_viscosity: 10.0,
                infinite_shear_viscosity: 0.1,
                time_constant: 0.5,
                exponent,
            };
            assert_eq!(curve.viscosity(0.0), 10.0);
            assert!(relative(curve.viscosity(2.0), 5.05) < 1e-15);
            assert!(relative(curve.viscosity(1e12), 0.1) < 1e-3);
        }
        // Hand-computed: m = 1, λ γ̇ = 3 gives 0.1 + 9.9/4 = 2.575.
        let curve = FlowCurve::Cross {
            zero_shear_viscosity: 10.0,
            infinite_shear_viscosity: 0.1,
            time_constant: 0.5,
            exponent: 1.0,
        };
        assert!(relative(curve.viscosity(6.0), 2.575) < 1e-15);
    }

    /// Carreau–Yasuda: a = 2 is the Carreau law μ∞ + (μ0 − μ∞)(1 + (λγ̇)²)^((n−1)/2); at
    /// λ γ̇ = √3 that is (μ0 − μ∞) 4^((n−1)/2), i.e. 2^(n−1); far out it is a power law of
    /// slope n − 1 (Bird, Armstrong & Hassager 1987 §4.1).
    #[test]
    fn carreau_yasuda_reduces_to_carreau_and_to_a_power_law() {
        let curve = FlowCurve::CarreauYasuda {
            zero_shear_viscosity: 8.0,
            infinite_shear_viscosity: 0.0,
            time_constant: 1.0,
            transition: 2.0,
            index: 0.4,
        };
        assert_eq!(curve.viscosity(0.0), 8.0);
        assert!(relative(curve.viscosity(3f64.sqrt()), 8.0 * 2f64.powf(-0.6)) < 1e-14);
        // Slope of log μ against log γ̇ between 1e4 and 1e5: n − 1 = −0.6.
        let slope = (curve.viscosity(1e5) / curve.viscosity(1e4)).log10();
        assert!((slope + 0.6).abs() < 1e-6, "slope {slope}");
        // n = 1 is Newtonian at μ0 whatever a and λ.
        let flat = FlowCurve::CarreauYasuda {
            zero_shear_viscosity: 3.0,
            infinite_shear_viscosity: 0.5,
            time_constant: 2.0,
            transition: 0.7,
            index: 1.0,
        };
        assert!(relative(flat.viscosity(17.0), 3.0) < 1e-15);
    }

    /// Papanastasiou's regularisation: the stress μ γ̇ tends to the Bingham stress
    /// τ0 + μp γ̇ once s γ̇ ≫ 1, and to the Herschel–Bulkley stress τ0 + K γ̇ⁿ; the viscosity
    /// at rest is finite, μp + τ0 s (Papanastasiou 1987).
    #[test]
    fn regularised_yield_stress_laws_tend_to_their_ideal_stress() {
        let bingham = FlowCurve::Bingham {
            yield_stress: 5.0,
            plastic_viscosity: 0.2,
            regularisation: 1000.0,
        };
        assert_eq!(bingham.viscosity(0.0), 0.2 + 5.0 * 1000.0);
        for rate in [0.1, 1.0, 10.0] {
            let stress = bingham.viscosity(rate) * rate;
            assert!(
                relative(stress, 5.0 + 0.2 * rate) < 1e-12,
                "{rate}: {stress}"
            );
        }
        // Below 1/s the stress stays under the yield stress: τ ≈ τ0 s γ̇ for s γ̇ ≪ 1.
        let creeping = bingham.viscosity(1e-7) * 1e-7;
        assert!(relative(creeping, 5.0 * 1000.0 * 1e-7 + 0.2e-7) < 1e-4);
        let hb = FlowCurve::HerschelBulkley {
            yield_stress: 5.0,
            consistency: 2.0,
            index: 0.5,
            regularisation: 1000.0,
        };
        for rate in [0.1, 4.0, 100.0] {
            let stress = hb.viscosity(rate) * rate;
            assert!(relative(stress, 5.0 + 2.0 * rate.sqrt()) < 1e-12);
        }
        // Herschel–Bulkley with n = 1 and K = μp is the Bingham law.
        let as_bingham = FlowCurve::HerschelBulkley {
            yield_stress: 5.0,
            consistency: 0.2,
            index: 1.0,
            regularisation: 1000.0,
        };
        for rate in [0.0, 1e-6, 0.3, 30.0] {
            assert!(relative(as_bingham.viscosity(rate), bingham.viscosity(rate)) < 1e-14);
        }
    }

    #[test]
    fn generalised_laws_clamp_and_read_an_unknown_rate_as_rest() {
        let law = ViscosityLaw::Generalised {
            curve: FlowCurve::PowerLaw {
                consistency: 2.0,
                index: 0.5,
            },
            min_viscosity: 0.5,
            max_viscosity: 50.0,
        };
        assert!(law.depends_on_shear_rate());
        assert_eq!(law.max_viscosity(), 50.0);
        assert_eq!(law.viscosity(0.0), 50.0);
        assert_eq!(law.viscosity(f64::NAN), 50.0);
        assert!(relative(law.viscosity(4.0), 1.0) < 1e-15);
        assert_eq!(law.viscosity(1e6), 0.5);
        let phase = [0, 0];
        let kind = [Kind::Fluid, Kind::Wall];
        let mut viscosity = [0.0, 9.0];
        update_viscosities(&[law], &phase, &kind, |_| 4.0, &mut viscosity);
        assert!(relative(viscosity[0], 1.0) < 1e-15);
        assert_eq!(viscosity[1], 9.0);
    }
}
