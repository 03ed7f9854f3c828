//! The eigenmode seed of a case (`interface_perturbation.mode: Eigenmode`): the leading linear
//! mode of the two-layer channel ([`lamella_post::stability::Eigenmode`], Yih 1967, J. Fluid
//! Mech. 27) in SI units and in the case's coordinates, scaled to the seeded interface wave.
//!
//! The channel and its scales are [`CaseChannel`]'s, as `lamella stability` uses them.
//! The case's seed displaces the interface by A sin(k(x − x_lower)) = Re[−iA e^{ik(x − x_lower)}],
//! so the mode (normalised to a unit real displacement) is scaled by ε = −iA/h. A flow
//! towards −x (body force along −x) is the mirror image x → −x of the solved one: there the
//! mode is taken at x̃ = −(x − x_lower), with ε = +iA/h and u' reversed.

use lamella_case::{Case, SeedMode};
use lamella_post::stability::{Eigenmode, c64};

use crate::channel::{CaseChannel, ChannelError};

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
        let channel = CaseChannel::of(case).map_err(|err| match err {
            ChannelError::NoDrive => "the eigenmode seed needs a body force along x".to_string(),
            ChannelError::Layers(_) | ChannelError::Shape(_) => {
                format!("the eigenmode seed needs a two-layer channel: {err}")
            }
            err => format!("the eigenmode seed: {err}"),
        })?;
        let half_width = channel.scales.half_width;
        let mode = channel
            .problem(channel.wavenumber(perturbation.wavelength))
            .leading_mode()
            .map_err(|err| format!("the leading eigenmode could not be computed: {err}"))?;
        let direction = channel.direction;
        Ok(Some(Self {
            mode,
            half_width,
            centre: case.domain.lower[1] + half_width,
            peak_velocity: channel.scales.peak_velocity,
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
