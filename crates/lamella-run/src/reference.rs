//! The analytical channel profile of a case: what `profile` and `converge` compare with, and
//! what a run started with `initial_velocity: SteadyChannel` starts from.

use lamella_case::{Case, ChannelFlow, InitialVelocity};
use lamella_post::reference::generalised::{FlowLayer, GeneralisedChannel};
use lamella_post::reference::layered::LayeredChannel;
use lamella_post::reference::startup::PlateGap;

/// The profile u_x(y, t) a case is validated against, when it has one.
#[derive(Clone, Debug, PartialEq)]
pub enum Reference {
    /// Two stacked layers driven by a body force (Bird, Stewart & Lightfoot §2.5, with a force
    /// density of each layer's own for unequal densities), steady.
    Layered(LayeredChannel),
    /// One fluid driven by a body force between fixed plates (Morris et al. 1997).
    Poiseuille {
        /// Plate gap and kinematic viscosity.
        gap: PlateGap,
        /// Body force per unit mass (m/s²).
        force: f64,
        /// True when the run starts from rest (start-up series), false when it starts steady.
        from_rest: bool,
    },
    /// One or two layers of which some phase's viscosity depends on the shear rate: the steady
    /// 1D solution integrated numerically (`lamella_post::reference::generalised`), checked
    /// there against the closed-form power-law and Bingham slit profiles of Chhabra &
    /// Richardson 2008, ch. 3.
    Generalised(GeneralisedChannel),
    /// One fluid between a fixed and a moving plate (Morris et al. 1997).
    Couette {
        /// Plate gap and kinematic viscosity.
        gap: PlateGap,
        /// Speed of the upper plate (m/s).
        wall_speed: f64,
        /// True when the run starts from rest (start-up series), false when it starts steady.
        from_rest: bool,
    },
}

impl Reference {
    /// Streamwise velocity at height `y` above the lower wall and time `t` (m/s).
    pub fn velocity(&self, y: f64, t: f64) -> f64 {
        match *self {
            Reference::Layered(c) => c.velocity(y),
            Reference::Generalised(ref c) => c.velocity(y),
            Reference::Poiseuille {
                gap,
                force,
                from_rest,
            } => {
                if from_rest {
                    gap.poiseuille_startup(force, y, t)
                } else {
                    gap.poiseuille_steady(force, y)
                }
            }
            Reference::Couette {
                gap,
                wall_speed,
                from_rest,
            } => {
                if from_rest {
                    gap.couette_startup(wall_speed, y, t)
                } else {
                    wall_speed * y / gap.gap
                }
            }
        }
    }

    /// The steady velocity (m/s) of a fluid particle of the lower (`upper` false) or upper
    /// layer at height `y` above the lower wall: each layer's own profile, continued past the
    /// interface for a particle a seeded wave has moved across it.
    pub fn steady_velocity_in_layer(&self, y: f64, upper: bool) -> f64 {
        match *self {
            Reference::Layered(c) => c.velocity_in_layer(y, upper),
            Reference::Generalised(ref c) => c.velocity(y),
            Reference::Poiseuille { gap, force, .. } => gap.poiseuille_steady(force, y),
            Reference::Couette {
                gap, wall_speed, ..
            } => wall_speed * y / gap.gap,
        }
    }

    /// Peak speed of the steady profile (m/s): the largest |u_x| across the channel once the
    /// flow has settled (for a start-up series, the profile it tends to).
    pub fn steady_peak_speed(&self) -> f64 {
        match *self {
            Reference::Layered(c) => c.peak().velocity.abs(),
            Reference::Generalised(ref c) => {
                let samples = PEAK_SAMPLES;
                (0..=samples)
                    .map(|i| c.velocity(c.gap() * i as f64 / samples as f64).abs())
                    .fold(0.0, f64::max)
            }
            Reference::Poiseuille { gap, force, .. } => {
                gap.poiseuille_steady(force, 0.5 * gap.gap).abs()
            }
            Reference::Couette { wall_speed, .. } => wall_speed.abs(),
        }
    }

    /// Short name for titles and messages.
    pub fn name(&self) -> &'static str {
        match self {
            Reference::Layered(_) => "layered Poiseuille (Bird, Stewart & Lightfoot §2.5)",
            Reference::Generalised(_) => "steady generalised Newtonian channel (1D solution)",
            Reference::Poiseuille {
                from_rest: true, ..
            } => "start-up Poiseuille (Morris, Fox & Zhu 1997)",
            Reference::Poiseuille { .. } => "steady Poiseuille (Morris, Fox & Zhu 1997)",
            Reference::Couette {
                from_rest: true, ..
            } => "start-up Couette (Morris, Fox & Zhu 1997)",
            Reference::Couette { .. } => "steady Couette (Morris, Fox & Zhu 1997)",
        }
    }
}

/// Table points per layer of the numerical 1D reference; its error falls as the tenth power of
/// their spacing where the profile is smooth (`GeneralisedChannel::solve`).
const REFERENCE_POINTS: usize = 400;

/// Heights sampled for the peak speed of a numerical reference.
const PEAK_SAMPLES: usize = 4000;

/// The reference of a channel case ([`channel_reference_or_why`]); `None` for anything else.
pub fn channel_reference(case: &Case) -> Option<Reference> {
    channel_reference_or_why(case).ok()
}

/// The reference of a channel case ([`Case::channel_flow_or_why`]), or why the case has none
/// (a sentence naming the case setting that rules it out).
pub fn channel_reference_or_why(case: &Case) -> Result<Reference, String> {
    let from_rest = !matches!(case.initial_velocity, InitialVelocity::SteadyChannel);
    Ok(match case.channel_flow_or_why()? {
        ChannelFlow::TwoLayers {
            lower_width,
            upper_width,
            lower_viscosity,
            upper_viscosity,
            force_density,
            upper_force_density,
        } => Reference::Layered(LayeredChannel {
            lower_width,
            upper_width,
            lower_viscosity,
            upper_viscosity,
            force_density,
            upper_force_density,
        }),
        ChannelFlow::Poiseuille {
            gap,
            kinematic_viscosity,
            force,
        } => Reference::Poiseuille {
            gap: PlateGap {
                gap,
                nu: kinematic_viscosity,
            },
            force,
            from_rest,
        },
        ChannelFlow::Couette {
            gap,
            kinematic_viscosity,
            wall_speed,
        } => Reference::Couette {
            gap: PlateGap {
                gap,
                nu: kinematic_viscosity,
            },
            wall_speed,
            from_rest,
        },
        ChannelFlow::Generalised { layers, wall_speed } => {
            let laws: Vec<_> = layers.iter().map(|layer| layer.law).collect();
            let viscosities: Vec<_> = laws
                .iter()
                .map(|law| move |rate| law.viscosity(rate))
                .collect();
            let flow_layers: Vec<FlowLayer<'_>> = layers
                .iter()
                .zip(&viscosities)
                .map(|(layer, viscosity)| FlowLayer {
                    width: layer.width,
                    force_density: layer.force_density,
                    viscosity,
                })
                .collect();
            let channel = GeneralisedChannel::solve(&flow_layers, wall_speed, REFERENCE_POINTS)
                .map_err(|err| {
                    format!("the 1D reference of the channel cannot be solved: {err}")
                })?;
            Reference::Generalised(channel)
        }
    })
}
