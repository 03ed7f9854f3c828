//! The two-layer plane channel of the layered validations, rebuilt from the bundled
//! `two-layer-channel.ron`, with its exact steady solution: the two-fluid plane Poiseuille flow
//! of Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5
//! (`lamella_post::reference::layered`).

use lamella_case::{Case, Region, ViscosityLaw};
use lamella_post::reference::layered::LayeredChannel;

/// Height H of the bundled two-layer channel (m).
pub const HEIGHT: f64 = 1.2e-3;
/// Density of both layers of the bundled two-layer channel (kg/m³).
pub const DENSITY: f64 = 1000.0;

/// The layers of a channel: where they meet and how viscous each is.
#[derive(Clone, Copy, Debug)]
pub struct Layering {
    /// Width of the lower layer (m); the upper one fills the rest of [`HEIGHT`].
    pub lower_width: f64,
    /// Viscosity of the lower layer (Pa·s).
    pub lower_viscosity: f64,
    /// Viscosity of the upper layer (Pa·s).
    pub upper_viscosity: f64,
}

/// The bundled two-layer channel with `rows` particle rows across, `length` (m) along the
/// periodic x, the layers of `layering`, run from rest to `end` (s) with one snapshot at the
/// end; `adjust` changes anything else before the case is validated again as a user's file
/// would be. Returns the case and its exact steady profile.
pub fn channel(
    rows: usize,
    length: f64,
    layering: Layering,
    end: f64,
    adjust: impl FnOnce(&mut Case),
) -> (Case, LayeredChannel) {
    let mut case = lamella_case::load(&crate::cases_dir().join("two-layer-channel.ron"))
        .expect("bundled case loads");
    let Layering {
        lower_width,
        lower_viscosity,
        upper_viscosity,
    } = layering;
    case.particles.spacing = HEIGHT / rows as f64;
    case.domain.upper = vec![length, HEIGHT];
    case.phases[0].viscosity_law = ViscosityLaw::Newtonian {
        viscosity: lower_viscosity,
    };
    case.phases[1].viscosity_law = ViscosityLaw::Newtonian {
        viscosity: upper_viscosity,
    };
    case.regions = vec![
        Region::Layer {
            phase: case.phases[0].name.clone(),
            bottom: 0.0,
            top: lower_width,
        },
        Region::Layer {
            phase: case.phases[1].name.clone(),
            bottom: lower_width,
            top: HEIGHT,
        },
    ];
    case.output.probes.clear();
    adjust(&mut case);
    let force = case.body_force.as_ref().expect("body force")[0];
    let exact = LayeredChannel {
        lower_width,
        upper_width: HEIGHT - lower_width,
        lower_viscosity,
        upper_viscosity,
        force_density: DENSITY * force,
        upper_force_density: DENSITY * force,
    };
    case.scales.expected_max_speed = 1.1 * exact.peak().velocity;
    case.time.end = end;
    case.time.snapshot_interval = end;
    let text = lamella_case::to_ron(&case);
    let case = lamella_case::parse_str(&text, "layered channel").expect("valid case");
    (case, exact)
}
