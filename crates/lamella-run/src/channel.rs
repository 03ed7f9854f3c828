//! The two-layer channel of a case as linear stability sees it: the layers, the scaled problem
//! and its scales. One derivation serves the eigenmode seed ([`crate::eigenmode`]), the
//! predicted mode of a run ([`crate::analysis::mode`]) and `lamella stability`.
//!
//! Scales as `lamella_post::stability` defines them: h the channel half-width, U_max the peak
//! of the steady layered profile (Bird, Stewart & Lightfoot §2.5), Re = ρ U_max h/μ_lower,
//! α = k h, growth rate α c_i U_max/h (Yih 1967, J. Fluid Mech. 27).

use lamella_case::{Case, ChannelFlow, LayerPair};
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
    /// Not a two-layer channel between fixed walls: why, as [`Case::channel_flow_or_why`] says.
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
    /// A phase's viscosity depends on the shear rate.
    #[error(
        "phase '{0}' has a viscosity law that depends on the shear rate; the stability analysis \
         is for Newtonian layers"
    )]
    NotNewtonian(String),
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
    /// The channel of `case`: a two-layer channel as [`Case::channel_flow_or_why`] knows it
    /// (fixed walls, periodic along x, the layers filling the height), of one density
    /// ([`Case::layers_share_density`]), driven by a body force along x.
    pub fn of(case: &Case) -> Result<Self, ChannelError> {
        if let Some(phase) = case
            .phases
            .iter()
            .find(|p| p.viscosity_law.newtonian_viscosity().is_none())
        {
            return Err(ChannelError::NotNewtonian(phase.name.clone()));
        }
        let pairs = case.layer_pairs();
        let (pair, force_density) = match (pairs.as_slice(), case.channel_flow_or_why()) {
            ([pair], Ok(ChannelFlow::TwoLayers { force_density, .. })) => (pair, force_density),
            ([_], Err(why)) => return Err(ChannelError::Shape(why)),
            _ => return Err(ChannelError::Layers(pairs.len())),
        };
        let (lower, upper) = (&case.phases[pair.lower], &case.phases[pair.upper]);
        if !case.layers_share_density(pair) {
            return Err(ChannelError::Densities {
                lower: lower.name.clone(),
                upper: upper.name.clone(),
                lower_density: lower.density,
                upper_density: upper.density,
            });
        }
        if force_density == 0.0 {
            return Err(ChannelError::NoDrive);
        }
        let channel = LayeredChannel::two_layer(pair.viscosity_ratio, pair.width_ratio)?;
        let scales = ChannelScales::new(
            &channel,
            case.extent(1) / 2.0,
            force_density.abs(),
            lower.density,
            case.phase_viscosity(pair.lower),
        );
        Ok(Self {
            pair: pair.clone(),
            channel,
            scales,
            direction: force_density.signum(),
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

#[cfg(test)]
mod tests {
    use super::{CaseChannel, ChannelError};
    use lamella_case::Case;
    use std::path::Path;

    fn growing() -> Case {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../cases/interface-growth.ron");
        lamella_case::load(&path).expect("bundled case")
    }

    #[test]
    fn densities_are_one_within_a_relative_1e_9() {
        let mut case = growing();
        let upper = case.tracked_interface().expect("two layers").upper;
        let density = case.phases[upper].density;
        case.phases[upper].density = density * (1.0 + 1e-12);
        assert!(CaseChannel::of(&case).is_ok());
        case.phases[upper].density = density * (1.0 + 1e-6);
        assert!(matches!(
            CaseChannel::of(&case),
            Err(ChannelError::Densities { .. })
        ));
    }

    #[test]
    fn the_channel_is_the_one_the_references_know_and_driven_along_x() {
        let mut across = growing();
        across.body_force.as_mut().expect("driven")[1] = 1.0;
        let why = across.channel_flow_or_why().expect_err("a force across");
        assert_eq!(CaseChannel::of(&across), Err(ChannelError::Shape(why)));
        let mut sliding = growing();
        let top = sliding
            .walls
            .iter_mut()
            .find(|w| w.side == lamella_case::Side::Top);
        top.expect("a top wall").velocity = Some(vec![1.0e-3, 0.0]);
        assert!(matches!(
            CaseChannel::of(&sliding),
            Err(ChannelError::Shape(_))
        ));
        let mut undriven = growing();
        undriven.body_force = None;
        assert_eq!(CaseChannel::of(&undriven), Err(ChannelError::NoDrive));
        let mut one_layer = growing();
        one_layer.regions.truncate(1);
        assert_eq!(CaseChannel::of(&one_layer), Err(ChannelError::Layers(0)));
    }
}
