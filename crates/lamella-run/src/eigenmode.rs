//! The eigenmode seed of a case (`interface_perturbation.mode: Eigenmode`): the leading linear
//! mode of the two-layer channel ([`lamella_post::stability::Eigenmode`], Yih 1967, J. Fluid
//! Mech. 27) in SI units and in the case's coordinates, scaled to the seeded interface wave.
//!
//! Scales as `lamella stability` uses them: h the channel half-width, U_max the peak of the
//! steady layered profile (Bird, Stewart & Lightfoot §2.5), Re = ρ U_max h/μ_lower, α = k h.
//! The case's seed displaces the interface by A sin(k(x − x_lower)) = Re[−iA e^{ik(x − x_lower)}],
//! so the mode (normalised to a unit real displacement) is scaled by ε = −iA/h. A flow
//! towards −x (body force along −x) is the mirror image x → −x of the solved one: there the
//! mode is taken at x̃ = −(x − x_lower), with ε = +iA/h and u' reversed.

use lamella_case::{Case, ChannelFlow, SeedMode};
use lamella_post::stability::{ChannelScales, Eigenmode, LayeredChannel, StabilityProblem, c64};

/// The leading eigenmode of a case's two-layer channel, ready to add to the steady profile.
#[derive(Clone, Debug, PartialEq)]
pub struct EigenmodeSeed {
    mode: Eigenmode,
    /// Channel half-width h (m).
    half_width: f64,
    /// Height of the channel's centre line (m): scaled y = (y − centre)/h.
    centre: f64,
    /// Peak speed of the steady profile U_max (m/s).
    peak_velocity: f64,
    /// Direction of the flow along x, ±1 (the sign of the body force).
    direction: f64,
    /// Start of the domain along x (m), where the seeded sine has its zero.
    x0: f64,
    /// Complex amplitude ε of the scaled mode (units of h).
    amplitude: c64,
}

impl EigenmodeSeed {
    /// The seed of `case`; `None` unless its interface perturbation asks for `Eigenmode`. The
    /// error says why the mode could not be computed (the case is not a driven two-layer
    /// channel, or the stability solve failed).
    pub fn of(case: &Case) -> Result<Option<Self>, String> {
        let Some(perturbation) = &case.interface_perturbation else {
            return Ok(None);
        };
        if perturbation.mode != SeedMode::Eigenmode {
            return Ok(None);
        }
        let Some(ChannelFlow::TwoLayers {
            lower_width,
            upper_width,
            lower_viscosity,
            upper_viscosity,
            force_density,
            upper_force_density,
        }) = case.channel_flow()
        else {
            return Err("the eigenmode seed needs a two-layer channel".into());
        };
        if upper_force_density != force_density {
            return Err(
                "the eigenmode seed needs layers of one density (the stability analysis assumes \
                 equal densities)"
                    .into(),
            );
        }
        if force_density == 0.0 {
            return Err("the eigenmode seed needs a body force along x".into());
        }
        let channel =
            LayeredChannel::two_layer(lower_viscosity / upper_viscosity, lower_width / upper_width)
                .map_err(|err| err.to_string())?;
        let half_width = 0.5 * (lower_width + upper_width);
        let density = case.phases[case.tracked_interface().map_or(0, |pair| pair.lower)].density;
        let ChannelScales {
            peak_velocity,
            reynolds,
            ..
        } = ChannelScales::new(
            &channel,
            half_width,
            force_density.abs(),
            density,
            lower_viscosity,
        );
        let wavenumber = std::f64::consts::TAU / perturbation.wavelength * half_width;
        let mode = StabilityProblem::new(channel, reynolds, wavenumber)
            .leading_mode()
            .map_err(|err| format!("the leading eigenmode could not be computed: {err}"))?;
        let direction = force_density.signum();
        Ok(Some(Self {
            mode,
            half_width,
            centre: case.domain.lower[1] + half_width,
            peak_velocity,
            direction,
            x0: case.domain.lower[0],
            amplitude: c64::new(0.0, -direction * perturbation.amplitude / half_width),
        }))
    }

    /// The mode's velocity (u', v') in m/s at `position` (m; x and y) for a fluid particle of
    /// the lower (`upper` false) or upper layer: each layer's eigenfunction, continued past
    /// the undisturbed interface for a particle the seed has moved across it.
    pub fn velocity(&self, position: [f64; 2], upper: bool) -> [f64; 2] {
        let x = self.direction * (position[0] - self.x0) / self.half_width;
        let y = (position[1] - self.centre) / self.half_width;
        let [u, v] = self
            .mode
            .velocity_in(usize::from(upper), self.amplitude, x, y);
        [
            self.direction * self.peak_velocity * u,
            self.peak_velocity * v,
        ]
    }
}
