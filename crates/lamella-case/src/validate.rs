//! Meaning checks of a parsed case: every bad value, with its field path and what would be
//! valid. Never panics, whatever the values.

use std::collections::HashSet;

use crate::derived::{ChannelFlow, magnitude};
use crate::error::{Problem, Warning, approx, num, vec_str};
use crate::schema::{
    Axis, Case, EquationOfState, InitialVelocity, PairViscosity, Probe, Region, SeedMode, Side,
    ViscosityLaw, ViscosityTreatment,
};

/// Accepted smoothing ratios h/dx (inclusive). Common practice is 1.2 … 1.5.
pub const SMOOTHING_RATIO_RANGE: (f64, f64) = (1.0, 2.0);
/// Smoothing ratios of common practice; outside them `check` warns.
pub const SMOOTHING_RATIO_COMMON: (f64, f64) = (1.2, 1.5);
/// Densities of liquids (kg/m³), common practice: from about 420 (liquefied methane) to
/// 13 534 (mercury) at their usual conditions; outside them `check` warns of a unit slip.
pub const LIQUID_DENSITY_COMMON: (f64, f64) = (400.0, 14_000.0);
/// Dynamic viscosities of liquids (Pa·s), common practice: from about 1e-4 (liquefied gases,
/// light solvents) to 1e5 (bitumen, polymer melts); outside them `check` warns of a unit slip.
pub const LIQUID_VISCOSITY_COMMON: (f64, f64) = (1.0e-4, 1.0e5);
/// Accepted particle-shifting coefficients A (inclusive); 0 turns shifting off, Skillen et al.
/// 2013 use 1 … 6.
pub const SHIFTING_RANGE: (f64, f64) = (0.0, 10.0);
/// Most lattice sites a case may ask for (fluid and wall), to catch a spacing typed wrong.
pub const MAX_PARTICLES: f64 = 2.0e8;
/// Deepest wall accepted (layers of wall particles); the widest kernel support needs 6.
pub const MAX_WALL_LAYERS: u32 = 12;
/// Most sample points accepted on one line probe.
pub const MAX_PROBE_SAMPLES: u32 = 100_000;
/// Most probes accepted: each is a file the run keeps open.
pub const MAX_PROBES: usize = 500;
/// Most snapshots a run may write (`time.end / time.snapshot_interval`): more would flood the
/// disk.
pub const MAX_SNAPSHOTS: f64 = 1.0e5;
/// Most rows `series.csv` and the probes may get (`time.end / time.sample_interval`).
pub const MAX_SAMPLES: f64 = 1.0e8;
/// Longest wall-clock interval between checkpoints accepted, in minutes (a year).
pub const MAX_CHECKPOINT_MINUTES: f64 = 525_600.0;
/// Accepted relative residuals of the implicit viscous solve (inclusive): below 1e-14 round-off
/// keeps it from converging, above 1e-2 it is hardly a solve.
pub const IMPLICIT_TOLERANCE_RANGE: (f64, f64) = (1.0e-14, 1.0e-2);
/// Most conjugate-gradient iterations per step accepted.
pub const MAX_IMPLICIT_ITERATIONS: u32 = 100_000;
/// Viscosity ratio above which arithmetic pair averaging draws a warning: on layered channels
/// it came out 9–19 % wrong at m = 100 and 40–50 % at m = 1000 (measured, 36 rows), while the
/// harmonic mean is the closer one from m = 10 on (`tests/validation_layered.rs`).
pub const ARITHMETIC_WARNING_RATIO: f64 = 10.0;
/// The explicit viscous time-step factor of Morris, Fox & Zhu 1997 (J. Comput. Phys. 136,
/// eq. 25); above it `check` warns (0.5 was measured to run unstable on a layered channel).
pub const VISCOUS_FACTOR_LIMIT: f64 = 0.125;
/// Acoustic (CFL) and force factors of common practice (Monaghan 1992); above them `check`
/// warns.
pub const ACOUSTIC_FORCE_FACTOR_LIMIT: f64 = 0.25;
/// Relative tolerance when a length must be a whole number of spacings or wavelengths.
const TILE_TOLERANCE: f64 = 1e-6;

/// Collects problems as the checks go.
struct Checker {
    problems: Vec<Problem>,
}

impl Checker {
    fn bad(&mut self, path: impl Into<String>, value: impl Into<String>, expected: &str) {
        self.problems.push(Problem::value(path, value, expected));
    }

    /// A strictly positive, finite number.
    fn positive(&mut self, path: &str, x: f64, what: &str) -> bool {
        let ok = x.is_finite() && x > 0.0;
        if !ok {
            self.bad(path, num(x), &format!("a positive {what}"));
        }
        ok
    }

    /// A vector with one finite entry per dimension.
    fn vector(&mut self, path: &str, v: &[f64], dim: Option<usize>, what: &str) -> bool {
        if let Some(d) = dim
            && v.len() != d
        {
            self.bad(
                path,
                vec_str(v),
                &format!("{d} entries ({what}, one per dimension, dimension is {d})"),
            );
            return false;
        }
        if v.iter().any(|x| !x.is_finite()) {
            self.bad(path, vec_str(v), &format!("finite numbers ({what})"));
            return false;
        }
        dim.is_some()
    }
}

/// The parameters of one phase's viscosity law, at `path` (`phases[i].viscosity_law`): every
/// viscosity, consistency, time and exponent positive, a yield stress or infinite-shear
/// viscosity not negative, and the clamps positive and ordered.
fn check_viscosity_law(c: &mut Checker, path: &str, law: &ViscosityLaw) {
    use lamella_sph::FlowCurve;
    let field = |name: &str| format!("{path}.{name}");
    let non_negative = |c: &mut Checker, name: &str, x: f64, what: &str| {
        if !(x.is_finite() && x >= 0.0) {
            c.bad(field(name), num(x), &format!("zero or a positive {what}"));
        }
    };
    // The schema's field names are the solver's, so the paths come from the solver's law.
    let (curve, min, max) = match law.solver_law() {
        lamella_sph::ViscosityLaw::Newtonian { viscosity } => {
            c.positive(
                &field("viscosity"),
                viscosity,
                "dynamic viscosity in Pa·s (water is about 1.0e-3)",
            );
            return;
        }
        lamella_sph::ViscosityLaw::Generalised {
            curve,
            min_viscosity,
            max_viscosity,
        } => (curve, min_viscosity, max_viscosity),
    };
    // The plateaus μ0, μ∞ and the time constant λ shared by the Cross and Carreau–Yasuda laws.
    let viscosity_plateaus = |c: &mut Checker, zero: f64, infinite: f64, time: f64| {
        c.positive(&field("zero_shear_viscosity"), zero, "viscosity in Pa·s");
        non_negative(c, "infinite_shear_viscosity", infinite, "viscosity in Pa·s");
        c.positive(&field("time_constant"), time, "time constant λ in s");
    };
    let regularisation =
        "regularisation time in s (large against 1/shear rate of the flowing liquid)";
    match curve {
        FlowCurve::PowerLaw { consistency, index } => {
            c.positive(&field("consistency"), consistency, "consistency K in Pa·sⁿ");
            c.positive(
                &field("index"),
                index,
                "flow behaviour index n (1 is Newtonian)",
            );
        }
        FlowCurve::Cross {
            zero_shear_viscosity,
            infinite_shear_viscosity,
            time_constant,
            exponent,
        } => {
            viscosity_plateaus(
                c,
                zero_shear_viscosity,
                infinite_shear_viscosity,
                time_constant,
            );
            c.positive(&field("exponent"), exponent, "exponent m");
        }
        FlowCurve::CarreauYasuda {
            zero_shear_viscosity,
            infinite_shear_viscosity,
            time_constant,
            transition,
            index,
        } => {
            viscosity_plateaus(
                c,
                zero_shear_viscosity,
                infinite_shear_viscosity,
                time_constant,
            );
            c.positive(
                &field("transition"),
                transition,
                "transition exponent a (2 is Carreau)",
            );
            c.positive(&field("index"), index, "power-law index n");
        }
        FlowCurve::HerschelBulkley {
            yield_stress,
            consistency,
            index,
            regularisation: s,
        } => {
            non_negative(c, "yield_stress", yield_stress, "yield stress in Pa");
            c.positive(&field("consistency"), consistency, "consistency K in Pa·sⁿ");
            c.positive(&field("index"), index, "flow behaviour index n");
            c.positive(&field("regularisation"), s, regularisation);
        }
        FlowCurve::Bingham {
            yield_stress,
            plastic_viscosity,
            regularisation: s,
        } => {
            non_negative(c, "yield_stress", yield_stress, "yield stress in Pa");
            c.positive(
                &field("plastic_viscosity"),
                plastic_viscosity,
                "plastic viscosity in Pa·s",
            );
            c.positive(&field("regularisation"), s, regularisation);
        }
    }
    let min_ok = c.positive(&field("min_viscosity"), min, "smallest viscosity in Pa·s");
    let max_ok = c.positive(&field("max_viscosity"), max, "largest viscosity in Pa·s");
    if min_ok && max_ok && min >= max {
        c.bad(
            field("max_viscosity"),
            num(max),
            &format!(
                "a value above min_viscosity = {} Pa·s (the clamps must be ordered)",
                num(min)
            ),
        );
    }
}

/// The domain box once its own fields are known to be sound.
struct Box_ {
    lower: Vec<f64>,
    upper: Vec<f64>,
}

impl Box_ {
    fn extent(&self, axis: usize) -> f64 {
        self.upper[axis] - self.lower[axis]
    }
    fn tolerance(&self) -> f64 {
        let largest = (0..self.lower.len())
            .map(|a| self.extent(a))
            .fold(0.0, f64::max);
        1e-9 * largest
    }
    fn contains(&self, p: &[f64]) -> bool {
        let tol = self.tolerance();
        p.iter()
            .enumerate()
            .all(|(a, &x)| x >= self.lower[a] - tol && x <= self.upper[a] + tol)
    }
    fn describe(&self) -> String {
        format!(
            "inside the domain {} … {}",
            vec_str(&self.lower),
            vec_str(&self.upper)
        )
    }
}

/// True when `length / unit` is a whole number (within a relative tolerance).
pub(crate) fn tiles(length: f64, unit: f64) -> bool {
    let n = length / unit;
    n.round() >= 1.0 && (n - n.round()).abs() <= TILE_TOLERANCE * n.max(1.0)
}

impl Case {
    /// Checks every value and returns all problems found (empty when the case is valid).
    pub fn validate(&self) -> Vec<Problem> {
        let mut c = Checker {
            problems: Vec::new(),
        };
        let dim = self.check_dimension(&mut c);
        let domain = self.check_domain(&mut c, dim);
        let spacing_ok = self.check_particles(&mut c, domain.as_ref());
        self.check_phases(&mut c);
        self.check_regions(&mut c, dim, domain.as_ref());
        self.check_perturbation(&mut c, domain.as_ref());
        self.check_scales(&mut c);
        self.check_initial_velocity(&mut c, dim);
        self.check_walls(&mut c, dim, spacing_ok);
        if let Some(force) = &self.body_force {
            c.vector("body_force", force, dim, "force per unit mass in m/s²");
        }
        self.check_equation_of_state(&mut c);
        self.check_run_settings(&mut c);
        self.check_output(&mut c, dim, domain.as_ref());
        c.problems
    }

    /// Advice on a valid case: settings that work but lie outside common practice.
    pub fn warnings(&self) -> Vec<Warning> {
        let mut warnings = Vec::new();
        let (lo, hi) = SMOOTHING_RATIO_COMMON;
        let ratio = self.particles.smoothing_ratio;
        if !(lo..=hi).contains(&ratio) {
            warnings.push(Warning {
                path: "particles.smoothing_ratio".into(),
                message: format!(
                    "{} is accepted but outside the common-practice range {lo} … {hi}",
                    num(ratio)
                ),
            });
        }
        if let Some(c0) = self.scales.sound_speed {
            let floor = 10.0 * self.scales.expected_max_speed;
            if c0 < floor {
                warnings.push(Warning {
                    path: "scales.sound_speed".into(),
                    message: format!(
                        "{} m/s is below 10 × expected_max_speed = {} m/s; density may vary by \
                         more than 1 % (common practice)",
                        num(c0),
                        num(floor)
                    ),
                });
            }
        }
        warnings.extend(self.magnitude_warnings());
        let contrast = self.viscosity_contrast();
        if self.pair_viscosity == PairViscosity::Arithmetic && contrast > ARITHMETIC_WARNING_RATIO {
            warnings.push(Warning {
                path: "pair_viscosity".into(),
                message: format!(
                    "Arithmetic averaging at a viscosity ratio of {}: on layered channels it came \
                     out 9–19 % wrong at a ratio of 100 and 40–50 % at 1000 (measured); use \
                     Harmonic, which keeps the shear stress continuous across the jump",
                    approx(contrast)
                ),
            });
        }
        let f = &self.time_step;
        if self.viscosity_treatment == ViscosityTreatment::Explicit
            && f.viscous > VISCOUS_FACTOR_LIMIT
        {
            warnings.push(Warning {
                path: "time_step.viscous".into(),
                message: format!(
                    "{} is above the explicit stability factor {VISCOUS_FACTOR_LIMIT} of Morris, \
                     Fox & Zhu 1997; the viscous term may run unstable (0.5 did, measured); \
                     lower it, or use viscosity_treatment: Implicit() to lift the viscous limit",
                    num(f.viscous)
                ),
            });
        }
        for (name, value) in [("acoustic", f.acoustic), ("force", f.force)] {
            if value > ACOUSTIC_FORCE_FACTOR_LIMIT {
                warnings.push(Warning {
                    path: format!("time_step.{name}"),
                    message: format!(
                        "{} is above {ACOUSTIC_FORCE_FACTOR_LIMIT}, the factor of common practice \
                         (Monaghan 1992); the run may go unstable",
                        num(value)
                    ),
                });
            }
        }
        warnings
    }

    /// Densities and viscosities outside the ranges of liquids, with the likely unit slip.
    fn magnitude_warnings(&self) -> Vec<Warning> {
        let mut warnings = Vec::new();
        let (rho_lo, rho_hi) = LIQUID_DENSITY_COMMON;
        let (mu_lo, mu_hi) = LIQUID_VISCOSITY_COMMON;
        for (i, phase) in self.phases.iter().enumerate() {
            let rho = phase.density;
            if rho.is_finite() && rho > 0.0 && !(rho_lo..=rho_hi).contains(&rho) {
                let hint = if (rho_lo..=rho_hi).contains(&(rho * 1000.0)) {
                    format!(
                        " — did you mean {} g/cm³ = {} kg/m³?",
                        num(rho),
                        approx(rho * 1000.0)
                    )
                } else {
                    "; density is in kg/m³ (water 1000)".to_string()
                };
                warnings.push(Warning {
                    path: format!("phases[{i}].density"),
                    message: format!(
                        "{} kg/m³ is outside the densities of liquids, {} … {} kg/m³ (common \
                         practice){hint}",
                        num(rho),
                        num(rho_lo),
                        num(rho_hi)
                    ),
                });
            }
            let Some(mu) = phase.viscosity_law.newtonian_viscosity() else {
                continue;
            };
            if !(mu.is_finite() && mu > 0.0) || (mu_lo..=mu_hi).contains(&mu) {
                continue;
            }
            let hint = if mu > mu_hi {
                format!(
                    " — did you mean {} mPa·s = {} Pa·s?",
                    num(mu),
                    approx(mu * 1e-3)
                )
            } else if rho.is_finite() && rho > 0.0 {
                format!(
                    " — a kinematic viscosity in m²/s? The dynamic viscosity is μ = ρ ν = {} Pa·s",
                    approx(rho * mu)
                )
            } else {
                String::new()
            };
            warnings.push(Warning {
                path: format!("phases[{i}].viscosity_law.viscosity"),
                message: format!(
                    "{} Pa·s is outside the viscosities of liquids, {} … {} Pa·s (common \
                     practice){hint}",
                    num(mu),
                    num(mu_lo),
                    num(mu_hi)
                ),
            });
        }
        warnings
    }

    fn check_dimension(&self, c: &mut Checker) -> Option<usize> {
        match self.dimension {
            2 | 3 => Some(self.dimension as usize),
            d => {
                c.bad("dimension", d.to_string(), "2 or 3");
                None
            }
        }
    }

    fn check_domain(&self, c: &mut Checker, dim: Option<usize>) -> Option<Box_> {
        let d = &self.domain;
        let lower_ok = c.vector("domain.lower", &d.lower, dim, "lower corner in m");
        let upper_ok = c.vector("domain.upper", &d.upper, dim, "upper corner in m");
        let mut ok = lower_ok && upper_ok;
        if ok {
            for axis in 0..d.lower.len() {
                if d.upper[axis] <= d.lower[axis] {
                    c.bad(
                        format!("domain.upper[{axis}]"),
                        num(d.upper[axis]),
                        &format!(
                            "a value above domain.lower[{axis}] = {}",
                            num(d.lower[axis])
                        ),
                    );
                    ok = false;
                }
            }
        }
        let mut seen = HashSet::new();
        for (i, axis) in d.periodic.iter().enumerate() {
            if let Some(dim) = dim
                && axis.index() >= dim
            {
                c.bad(
                    format!("domain.periodic[{i}]"),
                    format!("{axis:?}"),
                    &format!("an axis of a {dim}D case ({})", axes_list(dim)),
                );
            }
            if !seen.insert(*axis) {
                c.bad(
                    format!("domain.periodic[{i}]"),
                    format!("{axis:?}"),
                    "each axis listed once",
                );
            }
        }
        ok.then(|| Box_ {
            lower: d.lower.clone(),
            upper: d.upper.clone(),
        })
    }

    fn check_particles(&self, c: &mut Checker, domain: Option<&Box_>) -> bool {
        let p = &self.particles;
        let (lo, hi) = SMOOTHING_RATIO_RANGE;
        if !(p.smoothing_ratio.is_finite() && (lo..=hi).contains(&p.smoothing_ratio)) {
            c.bad(
                "particles.smoothing_ratio",
                num(p.smoothing_ratio),
                &format!(
                    "h/dx within the stable range {lo} … {hi} (common practice {} … {})",
                    SMOOTHING_RATIO_COMMON.0, SMOOTHING_RATIO_COMMON.1
                ),
            );
        }
        let (lo, hi) = SHIFTING_RANGE;
        if !(p.shifting.is_finite() && (lo..=hi).contains(&p.shifting)) {
            c.bad(
                "particles.shifting",
                num(p.shifting),
                &format!("a shifting coefficient within {lo} … {hi} (0 turns shifting off)"),
            );
        }
        let dx = p.spacing;
        if !(dx.is_finite() && dx > 0.0) {
            c.bad(
                "particles.spacing",
                num(dx),
                "a positive particle spacing in m",
            );
            return false;
        }
        let Some(domain) = domain else {
            return true;
        };
        let dim = domain.lower.len();
        let smallest = (0..dim).map(|a| domain.extent(a)).fold(f64::MAX, f64::min);
        if dx > smallest {
            c.bad(
                "particles.spacing",
                num(dx),
                &format!(
                    "a spacing no larger than the smallest domain extent {} m (a few dozen \
                     particles across is a coarse start)",
                    num(smallest)
                ),
            );
            return false;
        }
        let mut ok = true;
        for axis in 0..dim {
            let length = domain.extent(axis);
            if !tiles(length, dx) {
                let n = (length / dx).round().max(1.0);
                c.bad(
                    "particles.spacing",
                    num(dx),
                    &format!(
                        "a spacing that divides the domain extent along {} ({} m) into whole \
                         particles, e.g. {} m ({n} particles)",
                        axis_name(axis),
                        num(length),
                        approx(length / n)
                    ),
                );
                ok = false;
            }
        }
        let sites: f64 = (0..dim)
            .map(|a| domain.extent(a) / dx + 2.0 * 8.0)
            .product();
        if sites > MAX_PARTICLES {
            c.bad(
                "particles.spacing",
                num(dx),
                &format!(
                    "a spacing giving at most {} particles (this one gives about {})",
                    num(MAX_PARTICLES),
                    num(sites.round())
                ),
            );
            ok = false;
        }
        let (lo, hi) = SMOOTHING_RATIO_RANGE;
        if ok && (lo..=hi).contains(&p.smoothing_ratio) {
            // The neighbour search needs each periodic axis to span two kernel supports.
            let reach = 2.0 * self.support_radius();
            for axis in self
                .domain
                .periodic
                .iter()
                .map(|a| a.index())
                .filter(|&a| a < dim)
            {
                let length = domain.extent(axis);
                if length < reach {
                    c.bad(
                        "domain.periodic",
                        format!("{:?}", self.domain.periodic),
                        &format!(
                            "periodic axes at least twice the kernel support long: {} is {} m, \
                             less than 2 × {} m; lengthen the domain along {} or make \
                             particles.spacing smaller",
                            axis_name(axis),
                            num(length),
                            approx(self.support_radius()),
                            axis_name(axis)
                        ),
                    );
                    ok = false;
                }
            }
        }
        ok
    }

    fn check_phases(&self, c: &mut Checker) {
        if self.phases.is_empty() {
            c.bad(
                "phases",
                "[]",
                "at least one phase, e.g. (name: \"water\", density: 1000.0, viscosity_law: \
                 Newtonian(viscosity: 1.0e-3))",
            );
        }
        if self.phases.len() > u16::MAX as usize {
            c.bad(
                "phases",
                format!("{} phases", self.phases.len()),
                "at most 65535 phases",
            );
        }
        let mut names = HashSet::new();
        for (i, phase) in self.phases.iter().enumerate() {
            if phase.name.trim().is_empty() {
                c.bad(
                    format!("phases[{i}].name"),
                    format!("{:?}", phase.name),
                    "a non-empty name",
                );
            } else if !names.insert(phase.name.as_str()) {
                c.bad(
                    format!("phases[{i}].name"),
                    format!("{:?}", phase.name),
                    "a name no other phase has",
                );
            }
            c.positive(
                &format!("phases[{i}].density"),
                phase.density,
                "reference density in kg/m³",
            );
            check_viscosity_law(
                c,
                &format!("phases[{i}].viscosity_law"),
                &phase.viscosity_law,
            );
        }
    }

    fn check_regions(&self, c: &mut Checker, dim: Option<usize>, domain: Option<&Box_>) {
        if self.regions.is_empty() {
            c.bad(
                "regions",
                "[]",
                "at least one region, e.g. Fill(phase: \"water\")",
            );
        }
        let names: Vec<String> = self
            .phases
            .iter()
            .map(|p| format!("{:?}", p.name))
            .collect();
        for (i, region) in self.regions.iter().enumerate() {
            let path = format!("regions[{i}]");
            if self.phase_index(region.phase()).is_none() {
                c.bad(
                    format!("{path}.phase"),
                    format!("{:?}", region.phase()),
                    &format!("one of the phase names: {}", names.join(", ")),
                );
            }
            match region {
                Region::Fill { .. } => {}
                Region::Layer { bottom, top, .. } => {
                    let finite = bottom.is_finite() && top.is_finite();
                    if !finite || bottom >= top {
                        c.bad(
                            format!("{path}.top"),
                            num(*top),
                            &format!("a finite height above bottom = {}", num(*bottom)),
                        );
                    } else if let Some(domain) = domain {
                        let tol = domain.tolerance();
                        let (lo, hi) = (domain.lower[1], domain.upper[1]);
                        if *bottom < lo - tol || *bottom > hi + tol {
                            c.bad(
                                format!("{path}.bottom"),
                                num(*bottom),
                                &format!("a height inside the domain, {} … {}", num(lo), num(hi)),
                            );
                        }
                        if *top > hi + tol || *top < lo - tol {
                            c.bad(
                                format!("{path}.top"),
                                num(*top),
                                &format!("a height inside the domain, {} … {}", num(lo), num(hi)),
                            );
                        }
                    }
                }
                Region::Box { lower, upper, .. } => {
                    let ok_lower = c.vector(&format!("{path}.lower"), lower, dim, "corner in m");
                    let ok_upper = c.vector(&format!("{path}.upper"), upper, dim, "corner in m");
                    if ok_lower && ok_upper {
                        if lower.iter().zip(upper).any(|(l, u)| u <= l) {
                            c.bad(
                                format!("{path}.upper"),
                                vec_str(upper),
                                &format!("every entry above lower = {}", vec_str(lower)),
                            );
                        }
                        if let Some(domain) = domain {
                            if !domain.contains(lower) {
                                c.bad(format!("{path}.lower"), vec_str(lower), &domain.describe());
                            }
                            if !domain.contains(upper) {
                                c.bad(format!("{path}.upper"), vec_str(upper), &domain.describe());
                            }
                        }
                    }
                }
                Region::Circle { centre, radius, .. } => {
                    let ok_centre = c.vector(&format!("{path}.centre"), centre, dim, "centre in m");
                    let ok_radius = c.positive(&format!("{path}.radius"), *radius, "radius in m");
                    if let (true, true, Some(domain)) = (ok_centre, ok_radius, domain) {
                        if !domain.contains(centre) {
                            c.bad(
                                format!("{path}.centre"),
                                vec_str(centre),
                                &domain.describe(),
                            );
                        } else {
                            let lo: Vec<f64> = centre.iter().map(|x| x - radius).collect();
                            let hi: Vec<f64> = centre.iter().map(|x| x + radius).collect();
                            if !domain.contains(&lo) || !domain.contains(&hi) {
                                c.bad(
                                    format!("{path}.radius"),
                                    num(*radius),
                                    &format!("a radius keeping the circle {}", domain.describe()),
                                );
                            }
                        }
                    }
                }
            }
        }
    }

    fn check_perturbation(&self, c: &mut Checker, domain: Option<&Box_>) {
        let Some(p) = &self.interface_perturbation else {
            return;
        };
        if !(p.amplitude.is_finite() && p.amplitude >= 0.0) {
            c.bad(
                "interface_perturbation.amplitude",
                num(p.amplitude),
                "a non-negative amplitude in m",
            );
        }
        if !c.positive(
            "interface_perturbation.wavelength",
            p.wavelength,
            "wavelength in m",
        ) {
            return;
        }
        let Some(domain) = domain else {
            return;
        };
        if self.is_periodic(Axis::X) && !tiles(domain.extent(0), p.wavelength) {
            let length = domain.extent(0);
            let n = (length / p.wavelength).round().max(1.0);
            c.bad(
                "interface_perturbation.wavelength",
                num(p.wavelength),
                &format!(
                    "a wavelength that tiles the periodic length along x ({} m), e.g. {} m",
                    num(length),
                    approx(length / n)
                ),
            );
        }
        let boundaries = self.interior_layer_boundaries();
        if boundaries.is_empty() {
            c.bad(
                "interface_perturbation",
                format!(
                    "(amplitude: {}, wavelength: {})",
                    num(p.amplitude),
                    num(p.wavelength)
                ),
                "None, or Layer regions with a boundary inside the domain to perturb",
            );
        }
        // The seed moves particles along the streamlines of ψ = (A/k) cos(kx) f(y), f rising
        // from 0 at a wall to 1 at the nearest boundary over the distance d between them; the
        // first-order shape A sin(kx) is kept when A f' = πA/(2d) is small: A ≤ d/10 keeps it
        // under 0.16 (common practice for a linear seed: the second-order part stays near 1 %).
        if let Some(gap) = self.seeded_band_width() {
            let limit = 0.1 * gap;
            if p.amplitude.is_finite() && p.amplitude > limit {
                c.bad(
                    "interface_perturbation.amplitude",
                    num(p.amplitude),
                    &format!(
                        "at most a tenth of the narrowest band between a wall and a layer \
                         boundary ({} m), i.e. ≤ {} m; a linear seed is much smaller",
                        num(gap),
                        approx(limit)
                    ),
                );
            }
        }
        if p.mode == SeedMode::Eigenmode {
            self.check_eigenmode_seed(c);
        }
    }

    /// The eigenmode seed adds the leading mode of the two-layer channel (the one `lamella
    /// stability` computes) to the steady layered profile: it needs that profile and that
    /// channel.
    fn check_eigenmode_seed(&self, c: &mut Checker) {
        if self.initial_velocity != InitialVelocity::SteadyChannel {
            c.bad(
                "interface_perturbation.mode",
                "Eigenmode".to_string(),
                "Displacement, or Eigenmode with initial_velocity: SteadyChannel (the mode is a \
                 perturbation of the steady layered profile; set initial_velocity: \
                 SteadyChannel)",
            );
        }
        let driven_two_layers = matches!(
            self.channel_flow(),
            Some(ChannelFlow::TwoLayers { force_density, .. }) if force_density != 0.0
        ) && self
            .tracked_interface()
            .is_some_and(|pair| self.layers_share_density(&pair));
        if !driven_two_layers {
            c.bad(
                "interface_perturbation.mode",
                "Eigenmode".to_string(),
                "Displacement, or Eigenmode on a two-layer channel: two Layer regions of \
                 different phases and one density filling the height, periodic along x, fixed \
                 walls at the bottom and top, driven by a body force along x",
            );
        }
    }

    fn check_scales(&self, c: &mut Checker) {
        let s = &self.scales;
        c.positive(
            "scales.expected_max_speed",
            s.expected_max_speed,
            "speed in m/s (the largest flow speed you expect)",
        );
        if let Some(length) = s.reference_length {
            c.positive("scales.reference_length", length, "length in m");
        }
        if let Some(speed) = s.sound_speed {
            c.positive("scales.sound_speed", speed, "sound speed in m/s");
        }
    }

    fn check_initial_velocity(&self, c: &mut Checker, dim: Option<usize>) {
        let umax = self.scales.expected_max_speed;
        match &self.initial_velocity {
            InitialVelocity::Rest => {}
            InitialVelocity::SteadyChannel => {
                if self.channel_flow().is_none() {
                    c.bad(
                        "initial_velocity",
                        "SteadyChannel".to_string(),
                        "Rest, or SteadyChannel on a channel: periodic along x, walls at the \
                         bottom and top (the top one may slide along x), driven by a body force \
                         along x or the sliding top wall; one fluid, or two layers that fill \
                         the height",
                    );
                }
            }
            InitialVelocity::Uniform { velocity } => {
                let path = "initial_velocity.velocity";
                if c.vector(path, velocity, dim, "velocity in m/s") {
                    let speed = magnitude(velocity);
                    if speed > umax {
                        c.bad(
                            path,
                            vec_str(velocity),
                            &format!(
                                "a speed no larger than scales.expected_max_speed = {} m/s \
                                 (or raise that)",
                                num(umax)
                            ),
                        );
                    }
                }
            }
            InitialVelocity::TaylorGreen { amplitude } => {
                let path = "initial_velocity.amplitude";
                if !(amplitude.is_finite() && *amplitude >= 0.0) {
                    c.bad(path, num(*amplitude), "a non-negative speed in m/s");
                } else if *amplitude > umax {
                    c.bad(
                        path,
                        num(*amplitude),
                        &format!(
                            "a speed no larger than scales.expected_max_speed = {} m/s \
                             (or raise that)",
                            num(umax)
                        ),
                    );
                }
                let needed: Vec<Axis> = match dim {
                    Some(3) => vec![Axis::X, Axis::Y, Axis::Z],
                    _ => vec![Axis::X, Axis::Y],
                };
                let lengths_ok = self.domain.lower.len() == needed.len()
                    && self.domain.upper.len() == needed.len();
                if lengths_ok {
                    let lx = self.extent(0);
                    let square =
                        (1..needed.len()).all(|a| (self.extent(a) - lx).abs() <= 1e-9 * lx.abs());
                    if !square {
                        c.bad(
                            "domain.upper",
                            vec_str(&self.domain.upper),
                            "a square (cube) domain: the Taylor–Green vortex uses one \
                             wavelength along every axis",
                        );
                    }
                }
                if !needed.iter().all(|&a| self.is_periodic(a)) {
                    c.bad(
                        "domain.periodic",
                        format!("{:?}", self.domain.periodic),
                        &format!("{needed:?}: the Taylor–Green vortex needs every axis periodic"),
                    );
                }
            }
        }
    }

    fn check_walls(&self, c: &mut Checker, dim: Option<usize>, spacing_ok: bool) {
        let support = self.particles.kernel.support_factor() * self.particles.smoothing_ratio;
        let needed_layers = (support - 1e-9).ceil().max(1.0);
        let mut sides = HashSet::new();
        for (i, wall) in self.walls.iter().enumerate() {
            let path = format!("walls[{i}]");
            let axis = wall.side.axis();
            if let Some(d) = dim
                && axis.index() >= d
            {
                c.bad(
                    format!("{path}.side"),
                    format!("{:?}", wall.side),
                    &format!("a side of a {d}D box ({})", sides_list(d)),
                );
            }
            if !sides.insert(wall.side) {
                c.bad(
                    format!("{path}.side"),
                    format!("{:?}", wall.side),
                    "each side walled at most once",
                );
            }
            if self.is_periodic(axis) {
                c.bad(
                    format!("{path}.side"),
                    format!("{:?}", wall.side),
                    &format!(
                        "a side whose axis is not periodic ({axis:?} is listed in \
                         domain.periodic); remove this wall or that periodic axis"
                    ),
                );
            }
            let ratio = self.particles.smoothing_ratio;
            let ratio_ok = (SMOOTHING_RATIO_RANGE.0..=SMOOTHING_RATIO_RANGE.1).contains(&ratio);
            if spacing_ok && ratio_ok && f64::from(wall.layers) < needed_layers {
                c.bad(
                    format!("{path}.layers"),
                    wall.layers.to_string(),
                    &format!(
                        "at least {needed_layers} layers, so that layers · dx covers the \
                         {:?} kernel support of {} dx",
                        self.particles.kernel,
                        num(support)
                    ),
                );
            }
            if wall.layers > MAX_WALL_LAYERS {
                c.bad(
                    format!("{path}.layers"),
                    wall.layers.to_string(),
                    &format!(
                        "at most {MAX_WALL_LAYERS} layers; {needed_layers} already cover the \
                         kernel support"
                    ),
                );
            }
            if let Some(v) = &wall.velocity {
                let vpath = format!("{path}.velocity");
                if c.vector(&vpath, v, dim, "wall velocity in m/s") {
                    if v[axis.index()] != 0.0 {
                        c.bad(
                            &vpath,
                            vec_str(v),
                            &format!(
                                "a velocity along the wall: its {axis:?} component must be 0 \
                                 (walls slide, they do not move through the fluid)"
                            ),
                        );
                    }
                    let speed = magnitude(v);
                    if speed > self.scales.expected_max_speed {
                        c.bad(
                            &vpath,
                            vec_str(v),
                            &format!(
                                "a speed no larger than scales.expected_max_speed = {} m/s \
                                 (or raise that)",
                                num(self.scales.expected_max_speed)
                            ),
                        );
                    }
                }
            }
        }
        if let Some(d) = dim {
            for side in Side::ALL {
                let axis = side.axis();
                if axis.index() < d && !self.is_periodic(axis) && !sides.contains(&side) {
                    c.bad(
                        "walls",
                        format!("no wall on side {side:?}"),
                        &format!(
                            "a wall (side: {side:?}) or {axis:?} in domain.periodic: free \
                             surfaces are not supported"
                        ),
                    );
                }
            }
        }
    }

    fn check_equation_of_state(&self, c: &mut Checker) {
        let background = match &self.equation_of_state {
            EquationOfState::Linear {
                background_pressure,
            } => background_pressure,
            EquationOfState::Tait {
                exponent,
                background_pressure,
            } => {
                if !(exponent.is_finite() && *exponent >= 1.0) {
                    c.bad(
                        "equation_of_state.exponent",
                        num(*exponent),
                        "an exponent of at least 1 (7 is common for water)",
                    );
                }
                background_pressure
            }
        };
        if !(background.is_finite() && *background >= 0.0) {
            c.bad(
                "equation_of_state.background_pressure",
                num(*background),
                "a non-negative pressure in Pa",
            );
        }
    }

    fn check_run_settings(&self, c: &mut Checker) {
        let tol = self.density_tolerance;
        if !(tol.is_finite() && tol > 0.0 && tol < 1.0) {
            c.bad(
                "density_tolerance",
                num(tol),
                "a fraction between 0 and 1, e.g. 0.05 for 5 %",
            );
        }
        let f = &self.time_step;
        for (name, value) in [
            ("acoustic", f.acoustic),
            ("viscous", f.viscous),
            ("force", f.force),
        ] {
            if !(value.is_finite() && value > 0.0 && value <= 1.0) {
                c.bad(
                    format!("time_step.{name}"),
                    num(value),
                    "a safety factor in (0, 1]",
                );
            }
        }
        if let ViscosityTreatment::Implicit {
            tolerance,
            max_iterations,
        } = self.viscosity_treatment
        {
            let (lo, hi) = IMPLICIT_TOLERANCE_RANGE;
            if !(tolerance.is_finite() && (lo..=hi).contains(&tolerance)) {
                c.bad(
                    "viscosity_treatment.tolerance",
                    num(tolerance),
                    &format!(
                        "a relative residual within {lo:e} … {hi:e} (smaller is below round-off, \
                         larger is not a solve), e.g. 1e-9"
                    ),
                );
            }
            if !(1..=MAX_IMPLICIT_ITERATIONS).contains(&max_iterations) {
                c.bad(
                    "viscosity_treatment.max_iterations",
                    max_iterations.to_string(),
                    &format!("a whole number of iterations within 1 … {MAX_IMPLICIT_ITERATIONS}"),
                );
            }
        }
        let end = self.time.end;
        let end_ok = c.positive("time.end", end, "end time in s");
        let intervals = [
            (
                "snapshot_interval",
                Some(self.time.snapshot_interval),
                MAX_SNAPSHOTS,
                "snapshot files",
            ),
            (
                "sample_interval",
                self.time.sample_interval,
                MAX_SAMPLES,
                "rows in series.csv",
            ),
        ];
        for (name, interval, most, what) in intervals {
            let Some(interval) = interval else { continue };
            let path = format!("time.{name}");
            if c.positive(&path, interval, "interval in s") && end_ok && end / interval > most {
                c.bad(
                    path,
                    num(interval),
                    &format!(
                        "an interval of at least {} s (time.end / {most:e}): this one gives \
                         about {:e} {what} and would flood the disk",
                        approx(end / most),
                        (end / interval).round()
                    ),
                );
            }
        }
    }

    fn check_output(&self, c: &mut Checker, dim: Option<usize>, domain: Option<&Box_>) {
        let o = &self.output;
        if let Some(folder) = &o.folder
            && folder.trim().is_empty()
        {
            c.bad(
                "output.folder",
                format!("{folder:?}"),
                "a folder path, or None",
            );
        }
        if c.positive(
            "output.checkpoint_minutes",
            o.checkpoint_minutes,
            "number of wall-clock minutes",
        ) && o.checkpoint_minutes > MAX_CHECKPOINT_MINUTES
        {
            c.bad(
                "output.checkpoint_minutes",
                num(o.checkpoint_minutes),
                &format!(
                    "at most {} minutes (a year); a signal still saves a checkpoint at any time",
                    num(MAX_CHECKPOINT_MINUTES)
                ),
            );
        }
        if o.probes.len() > MAX_PROBES {
            c.bad(
                "output.probes",
                format!("{} probes", o.probes.len()),
                &format!(
                    "at most {MAX_PROBES} probes (each is a file kept open during the run); \
                     use Line probes with many samples instead of many Point probes"
                ),
            );
        }
        let mut names = HashSet::new();
        for (i, probe) in o.probes.iter().enumerate() {
            let path = format!("output.probes[{i}]");
            if probe.name().trim().is_empty() || !names.insert(probe.name()) {
                c.bad(
                    format!("{path}.name"),
                    format!("{:?}", probe.name()),
                    "a non-empty name no other probe has",
                );
            }
            let points: Vec<(&str, &Vec<f64>)> = match probe {
                Probe::Point { at, .. } => vec![("at", at)],
                Probe::Line {
                    from, to, samples, ..
                } => {
                    if !(2..=MAX_PROBE_SAMPLES).contains(samples) {
                        c.bad(
                            format!("{path}.samples"),
                            samples.to_string(),
                            &format!("from 2 to {MAX_PROBE_SAMPLES} sample points"),
                        );
                    }
                    vec![("from", from), ("to", to)]
                }
            };
            for (field, point) in points {
                let fpath = format!("{path}.{field}");
                if c.vector(&fpath, point, dim, "position in m")
                    && let Some(domain) = domain
                    && !domain.contains(point)
                {
                    c.bad(&fpath, vec_str(point), &domain.describe());
                }
            }
        }
        let mut seen = HashSet::new();
        for (i, analysis) in o.analyses.iter().enumerate() {
            if !seen.insert(*analysis) {
                c.bad(
                    format!("output.analyses[{i}]"),
                    format!("{analysis:?}"),
                    "each analysis listed once",
                );
            }
        }
    }
}

fn axis_name(axis: usize) -> &'static str {
    ["x", "y", "z"].get(axis).copied().unwrap_or("?")
}

fn axes_list(dim: usize) -> &'static str {
    if dim == 3 { "X, Y, Z" } else { "X, Y" }
}

fn sides_list(dim: usize) -> &'static str {
    if dim == 3 {
        "Left, Right, Bottom, Top, Back, Front"
    } else {
        "Left, Right, Bottom, Top"
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tiling_accepts_whole_multiples_only() {
        assert!(tiles(1.0e-3, 1.0e-3 / 30.0));
        assert!(tiles(4.0e-3, 2.0e-3));
        assert!(!tiles(1.0e-3, 0.3e-3));
        assert!(!tiles(1.0e-3, 3.0e-3));
    }
}
