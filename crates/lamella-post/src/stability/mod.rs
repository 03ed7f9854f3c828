//! Linear stability of layered plane Poiseuille flow: predicted growth rates of interface
//! and shear waves to compare simulations with.
//!
//! # Problem
//! Two (or more) immiscible layers of equal density between fixed plates, driven by a
//! pressure gradient, optionally with interfacial tension. Each layer obeys an
//! Orr–Sommerfeld equation; the layers are coupled by continuity of velocity, of
//! tangential and normal stress, and the kinematic condition at each interface (Yih 1967,
//! J. Fluid Mech. 27; numerical treatments: Yiantsios & Higgins 1988, Phys. Fluids 31;
//! South & Hooper 1999, J. Fluid Mech. 380). Each layer is discretised by Chebyshev
//! collocation of the equation for the fourth derivative of the stream function
//! (spectral integration) and the generalised eigenvalue problem is solved with `faer`
//! (condition rows eliminated, then shift-invert and a dense eigen solve).
//!
//! # Scalings (all results of this module are in these units)
//! - length: the channel half-width h (walls at y = ±1);
//! - velocity: the maximum U_max of the steady profile (for one layer, the centreline
//!   velocity, as in Orszag 1971, J. Fluid Mech. 50);
//! - Reynolds number Re = ρ U_max h / μ_lower, with μ_lower the viscosity of the lowest
//!   layer;
//! - viscosity ratio m = μ_lower/μ_upper, width ratio n = d_lower/d_upper (both lower
//!   over upper, as `lamella_case::LayerPair`), so the interface lies at y = (n − 1)/(n + 1);
//! - wavenumber α = k h; wave speed c = c_r + i c_i in units of U_max; temporal growth rate
//!   σ = α c_i in units of U_max/h (a disturbance grows as e^{σ t});
//! - interfacial tension S = γ/(ρ U_max² h).
//!
//! # Eigenfunctions
//! [`StabilityProblem::leading_mode`] also returns the leading mode's stream function in every
//! layer, its interface displacements and velocity perturbation ([`Eigenmode`]), normalised to
//! a unit displacement of the lowest interface, so that a run can start on the linear mode.
//!
//! # Spurious eigenvalues
//! The boundary and interface rows make B singular (infinite eigenvalues); they are
//! eliminated before the solve. Of the rest, [`StabilityProblem::solve`] drops every c that
//! is not finite or has |c| > [`SPURIOUS_SPEED`] (unresolved, heavily damped viscous modes);
//! [`leading_checked`] also solves at 1.5 times the resolution and reports how far the
//! leading eigenvalue moved, which exposes a spurious or unresolved leading mode.
//!
//! # Accuracy
//! Each layer is represented through its fourth derivative, so no matrix entry grows with
//! the resolution and round-off stays near 1e-14 (measured).
//! At the default [`DEFAULT_POINTS_PER_LAYER`] the leading eigenvalue of the validation
//! problems (one layer at Re = 10⁴; two layers up to Re = 10⁴) changes by under 1e-11 when
//! the points are doubled.

mod channel;
mod charts;
mod chebyshev;
mod eigenmode;
mod long_wave;
mod search;
mod spectrum;

pub use channel::{BaseFlow, ChannelScales, LayeredChannel};
pub use charts::{RatioPoint, growth_curve_chart, map_chart, ratio_map};
pub use eigenmode::Eigenmode;
pub use long_wave::{LongWave, long_wave_coefficient};
pub use search::{
    CheckedMode, CriticalPoint, CurvePoint, MapPoint, NEUTRAL_RATE, critical_point, growth_curve,
    growth_curve_observed, leading_checked, most_unstable, neutral_reynolds, stability_map,
    stability_map_observed,
};
pub use spectrum::{DEFAULT_POINTS_PER_LAYER, SPURIOUS_SPEED, Spectrum, StabilityProblem};

/// Complex numbers of the wave speeds (from `faer`).
pub use faer::c64;
use thiserror::Error;

/// Why a stability problem could not be solved.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum StabilityError {
    /// A parameter is out of range; the message names it and the accepted range.
    #[error("{0}")]
    InvalidParameter(String),
    /// The QZ iteration did not converge.
    #[error("the generalised eigenvalue solver did not converge")]
    NoConvergence,
    /// Every eigenvalue was filtered out as spurious.
    #[error("no finite eigenvalue survived the spurious-mode filter")]
    NoMode,
    /// A root search (neutral or critical point) did not converge.
    #[error("{0}")]
    SearchFailed(String),
}
