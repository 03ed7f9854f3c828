//! The two-layer channel of a case as linear stability sees it: the layers, the scaled problem
//! and its scales. One derivation serves the eigenmode seed ([`crate::eigenmode`]), the
//! predicted mode of a run ([`crate::analysis::mode`]) and `lamella stability`.
//!
//! Scales as `lamella_post::stability` defines them: h the channel half-width, U_max the peak
//! of the steady layered profile (Bird, Stewart & Lightfoot §2.5), Re = ρ U_max h/μ_lower,
//! α = k h, growth rate α c_i U_max/h (Yih 1967, J. Fluid Mech. 27).

use lamella_case::{Axis, Case, LayerPair, Side};
use lamella_post::stability::{
    ChannelScales, LayeredChannel, StabilityError, StabilityProblem, c64,
};

/// Why a case is not a driven plane channel of two layers of one density.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ChannelError {
    /// Not exactly one boundary between two stacked layers of different phases.
    #[error(
        "the stability analysis needs exactly two stacked layers of different phases, found {0} \
         layer boundaries"
    )]
    Layers(usize),
    /// Not a plane channel with fixed walls, periodic along x, filled by the layers.
    #[error("{0}")]
    Shape(String),
    /// The two layers differ in density.
    #[error(
        "phases '{lower}' and '{upper}' differ in density ({lower_density} and \
         {upper_density} kg/m³); the stability analysis assumes equal densities"
    )]
    Densities {
        /// Name of the lower phase.
        lower: String,
        /// Name of the upper phase.
        upper: String,
        /// Density of the lower phase (kg/m³).
        lower_density: f64,
        /// Density of the upper phase (kg/m³).
        upper_density: f64,
    },
    /// No body force along x drives the flow.
    #[error("the flow needs a body force along x (the drive of the channel flow)")]
    NoDrive,
    /// The ratios of the layers are out of the stability solver's range.
    #[error(transparent)]
    Ratios(#[from] StabilityError),
}

/// A case's two-layer channel in the scaled units of the stability analysis.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseChannel {
    /// The two layers: phases, m = μ_lower/μ_upper, n = d_lower/d_upper, interface height.
    pub pair: LayerPair,
    /// The scaled channel (walls at y = ±1).
    pub channel: LayeredChannel,
    /// Half-width h, peak velocity U_max of the steady profile and Re.
    pub scales: ChannelScales,
    /// Direction of the flow along x: the sign of the body force (±1).
    pub direction: f64,
}

impl CaseChannel {
    /// The channel of `case`: two layers of one density filling a plane channel between
    /// fixed walls, periodic along x, driven by a body force along x.
    pub fn of(case: &Case) -> Result<Self, ChannelError> {
        let pairs = case.layer_pairs();
        let [pair] = pairs.as_slice() else {
            return Err(ChannelError::Layers(pairs.len()));
        };
        require_channel(case).map_err(ChannelError::Shape)?;
        let (lower, upper) = (&case.phases[pair.lower], &case.phases[pair.upper]);
        if (lower.density - upper.density).abs() > 1e-9 * lower.density.abs() {
            return Err(ChannelError::Densities {
                lower: lower.name.clone(),
                upper: upper.name.clone(),
                lower_density: lower.density,
                upper_density: upper.density,
            });
        }
        let force = case
            .body_force
            .as_ref()
            .map(|f| f[0])
            .filter(|f| *f != 0.0)
            .ok_or(ChannelError::NoDrive)?;
        let channel = LayeredChannel::two_layer(pair.viscosity_ratio, pair.width_ratio)?;
        let scales = ChannelScales::new(
            &channel,
            case.extent(1) / 2.0,
            lower.density * force.abs(),
            lower.density,
            lower.viscosity_law.reference_viscosity(),
        );
        Ok(Self {
            pair: pair.clone(),
            channel,
            scales,
            direction: force.signum(),
        })
    }

    /// The scaled wavenumber α = 2π h/λ of the wavelength `wavelength` (m).
    pub fn wavenumber(&self, wavelength: f64) -> f64 {
        2.0 * std::f64::consts::PI / wavelength * self.scales.half_width
    }

    /// The stability problem at scaled wavenumber `wavenumber`, without interfacial tension.
    pub fn problem(&self, wavenumber: f64) -> StabilityProblem {
        StabilityProblem::new(self.channel.clone(), self.scales.reynolds, wavenumber)
    }

    /// Temporal growth rate α c_i U_max / h (1/s) of scaled wavenumber α and wave speed c.
    pub fn growth_rate(&self, wavenumber: f64, c: c64) -> f64 {
        wavenumber * c.im * self.scales.peak_velocity / self.scales.half_width
    }

    /// Phase speed along x, direction · c_r U_max (m/s), of scaled wave speed c.
    pub fn wave_speed(&self, c: c64) -> f64 {
        self.direction * c.re * self.scales.peak_velocity
    }

    /// Wavelength 2π h / α (m) of scaled wavenumber α.
    pub fn wavelength(&self, wavenumber: f64) -> f64 {
        2.0 * std::f64::consts::PI * self.scales.half_width / wavenumber
    }
}

/// A plane channel: fixed walls at the bottom and top, periodic along x, layers filling the
/// height.
fn require_channel(case: &Case) -> Result<(), String> {
    for side in [Side::Bottom, Side::Top] {
        match case.walls.iter().find(|w| w.side == side) {
            None => return Err(format!("the channel needs a wall at the {side:?} side")),
            Some(w)
                if w.velocity
                    .as_ref()
                    .is_some_and(|v| v.iter().any(|x| *x != 0.0)) =>
            {
                return Err(format!(
                    "the {side:?} wall moves; the analysis is for fixed walls"
                ));
            }
            Some(_) => {}
        }
    }
    if !case.is_periodic(Axis::X) {
        return Err("the channel must be periodic along x".into());
    }
    let bands = case.layer_bands();
    let (lo, hi) = (case.domain.lower[1], case.domain.upper[1]);
    let tol = 1e-9 * (hi - lo);
    let covers = bands.first().is_some_and(|b| (b.bottom - lo).abs() <= tol)
        && bands.last().is_some_and(|b| (b.top - hi).abs() <= tol);
    if !covers {
        return Err("the two layers must fill the channel from the bottom to the top".into());
    }
    Ok(())
}
