//! The case description: what a run needs, read from RON, validated, turned into particles.
//!
//! Read a case with [`load`] (file) or [`parse_str`] (text); both validate and report every
//! problem at once. [`generate`] builds the initial particles. The fields of a case file are
//! documented on the types in [`schema`] and in `cases/README.md`.

pub mod derived;
mod error;
mod generate;
mod load;
pub mod schema;
pub mod sweep;
pub mod templates;
mod validate;

pub use derived::{ChannelFlow, ChannelLayer, LayerBand, LayerPair, SoundSpeedCriterion};
pub use error::{CaseError, Problem, Warning};
pub use generate::{Generated, Seed, generate};
pub use load::{load, parse_listing, parse_str, parse_unvalidated, to_ron};
pub use schema::{
    Analysis, Axis, Case, Domain, EquationOfState, InitialVelocity, Kernel, NoSlip, Output,
    PairViscosity, ParticleSettings, Perturbation, Phase, Probe, Region, Scales, SeedMode, Side,
    Time, TimeStepFactors, ViscosityLaw, ViscosityTreatment, Wall,
};
pub use validate::{
    ACOUSTIC_FORCE_FACTOR_LIMIT, ARITHMETIC_WARNING_RATIO, IMPLICIT_TOLERANCE_RANGE,
    LIQUID_DENSITY_COMMON, LIQUID_VISCOSITY_COMMON, MAX_IMPLICIT_ITERATIONS, MAX_PARTICLES,
    SMOOTHING_RATIO_COMMON, SMOOTHING_RATIO_RANGE, VISCOUS_FACTOR_LIMIT,
};
