//! Quantities derived from a case: smoothing length, sound speed, dimensionless numbers,
//! layer ratios and memory. Meaningful on a validated case. (The time step itself is
//! `lamella_sph::stable_time_step`, fed with these.)

use crate::schema::{Axis, Case, InitialVelocity, Region, Side};

/// Largest relative density variation the automatic sound speed allows, δ in Morris, Fox &
/// Zhu 1997 §2.4 (c0 ≥ U/√δ gives c0 ≥ 10 U: common practice).
pub const DENSITY_VARIATION: f64 = 0.01;

/// Euclidean length of a vector given as its components (a speed from a velocity, m/s).
pub(crate) fn magnitude(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// One lower bound on the sound speed (see [`Case::sound_speed_criteria`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SoundSpeedCriterion {
    /// What the bound comes from: "flow speed", "viscous", "body force" or "lid corner".
    pub name: &'static str,
    /// The smallest sound speed it allows (m/s).
    pub sound_speed: f64,
}

/// A Layer region after sorting: which phase fills which band of heights.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerBand {
    /// Phase index.
    pub phase: usize,
    /// Lower bound in y (m).
    pub bottom: f64,
    /// Upper bound in y (m).
    pub top: f64,
}

/// Two stacked layers of different phases that share a boundary.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerPair {
    /// Phase index of the lower layer.
    pub lower: usize,
    /// Phase index of the upper layer.
    pub upper: usize,
    /// Height of the shared boundary (m).
    pub interface: f64,
    /// Viscosity ratio m = μ_lower / μ_upper.
    pub viscosity_ratio: f64,
    /// Layer-width ratio n = width_lower / width_upper.
    pub width_ratio: f64,
}

/// A channel the analytical references know: walled at the bottom and top, periodic along x,
/// flowing along x (a 3D channel periodic in z with nothing driving along z counts as plane).
#[derive(Clone, Debug, PartialEq)]
pub enum ChannelFlow {
    /// Two stacked layers filling the gap, driven by a body force along x between fixed plates;
    /// each layer feels its own force density ρ_i g_x (the channel is horizontal: no force
    /// across it).
    TwoLayers {
        /// Width of the lower layer (m).
        lower_width: f64,
        /// Width of the upper layer (m).
        upper_width: f64,
        /// Dynamic viscosity of the lower layer (Pa·s).
        lower_viscosity: f64,
        /// Dynamic viscosity of the upper layer (Pa·s).
        upper_viscosity: f64,
        /// Driving force density ρ g_x of the lower layer (N/m³).
        force_density: f64,
        /// Driving force density ρ g_x of the upper layer (N/m³); equal to `force_density` for
        /// layers of one density.
        upper_force_density: f64,
    },
    /// One fluid driven by a body force between fixed plates.
    Poiseuille {
        /// Plate gap (m).
        gap: f64,
        /// Kinematic viscosity (m²/s).
        kinematic_viscosity: f64,
        /// Body force per unit mass along x (m/s²).
        force: f64,
    },
    /// One fluid between a fixed bottom plate and a top plate sliding along x.
    Couette {
        /// Plate gap (m).
        gap: f64,
        /// Kinematic viscosity (m²/s).
        kinematic_viscosity: f64,
        /// Speed of the top plate (m/s).
        wall_speed: f64,
    },
    /// One fluid or two stacked layers of which some phase has a viscosity law that depends
    /// on the shear rate, driven by a body force along x and/or a top plate sliding along x.
    /// It has no closed form in general; the reference is the steady 1D solution.
    Generalised {
        /// The layers, bottom to top, filling the gap.
        layers: Vec<ChannelLayer>,
        /// Speed of the top plate along x (m/s); zero for a fixed plate.
        wall_speed: f64,
    },
}

/// One layer of a [`ChannelFlow::Generalised`] channel.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ChannelLayer {
    /// Width (m).
    pub width: f64,
    /// Driving force density ρ g_x (N/m³).
    pub force_density: f64,
    /// The phase's viscosity law.
    pub law: lamella_sph::ViscosityLaw,
}

impl Case {
    /// Smoothing length h = (h/dx) · dx (m).
    pub fn smoothing_length(&self) -> f64 {
        self.particles.smoothing_ratio * self.particles.spacing
    }

    /// Kernel support radius (m): 2h for Wendland C2 and cubic spline, 3h for quintic.
    pub fn support_radius(&self) -> f64 {
        self.particles.kernel.support_factor() * self.smoothing_length()
    }

    /// Index of the phase called `name`.
    pub fn phase_index(&self, name: &str) -> Option<usize> {
        self.phases.iter().position(|p| p.name == name)
    }

    /// True when the domain wraps around along `axis`.
    pub fn is_periodic(&self, axis: Axis) -> bool {
        self.domain.periodic.contains(&axis)
    }

    /// Domain extent along component `axis` (m).
    pub fn extent(&self, axis: usize) -> f64 {
        self.domain.upper[axis] - self.domain.lower[axis]
    }

    /// Number of lattice sites along each axis inside the domain.
    pub fn lattice_counts(&self) -> Vec<usize> {
        (0..self.dimension as usize)
            .map(|a| (self.extent(a) / self.particles.spacing).round().max(0.0) as usize)
            .collect()
    }

    /// Reference length L (m): `scales.reference_length`, or the domain height.
    pub fn reference_length(&self) -> f64 {
        self.scales
            .reference_length
            .unwrap_or_else(|| self.extent(1))
    }

    /// The shear rate U/L (1/s) at which the scale estimates (sound speed, Reynolds number,
    /// viscosity contrast) read a viscosity law that depends on it: the expected peak speed
    /// over the reference length.
    pub fn characteristic_shear_rate(&self) -> f64 {
        self.scales.expected_max_speed / self.reference_length()
    }

    /// Dynamic viscosity of phase `index` for scale estimates (Pa·s): its law at the
    /// [`Case::characteristic_shear_rate`] (the constant of a Newtonian phase).
    pub fn phase_viscosity(&self, index: usize) -> f64 {
        self.phases[index]
            .viscosity_law
            .viscosity_at(self.characteristic_shear_rate())
    }

    /// Kinematic viscosity ν = μ/ρ0 of each phase (m²/s), μ by [`Case::phase_viscosity`].
    pub fn kinematic_viscosities(&self) -> Vec<f64> {
        (0..self.phases.len())
            .map(|i| self.phase_viscosity(i) / self.phases[i].density)
            .collect()
    }

    /// The largest kinematic viscosity each phase can reach (m²/s; a generalised law's
    /// `max_viscosity` over ρ0): what bounds the explicit viscous time step.
    pub fn largest_kinematic_viscosities(&self) -> Vec<f64> {
        self.phases
            .iter()
            .map(|p| p.viscosity_law.max_viscosity() / p.density)
            .collect()
    }

    /// Largest of [`Case::largest_kinematic_viscosities`] (m²/s).
    pub fn max_kinematic_viscosity(&self) -> f64 {
        self.largest_kinematic_viscosities()
            .into_iter()
            .fold(0.0, f64::max)
    }

    /// True when some phase's viscosity depends on the shear rate.
    pub fn has_generalised_phase(&self) -> bool {
        self.phases
            .iter()
            .any(|p| p.viscosity_law.newtonian_viscosity().is_none())
    }

    /// Magnitude of the body force per unit mass (m/s²), zero when none is given.
    pub fn body_force_magnitude(&self) -> f64 {
        self.body_force.as_ref().map_or(0.0, |f| magnitude(f))
    }

    /// Sound speed c0 (m/s): `scales.sound_speed` if given, else the smallest value that keeps
    /// density variations near δ = 1 % by every bound of [`Case::sound_speed_criteria`].
    pub fn sound_speed(&self) -> f64 {
        if let Some(c0) = self.scales.sound_speed {
            return c0;
        }
        self.sound_speed_criteria()
            .into_iter()
            .map(|criterion| criterion.sound_speed)
            .fold(0.0, f64::max)
    }

    /// The lower bounds on c0 for δ = 1 %, each as a speed (m/s). The three of Morris, Fox &
    /// Zhu 1997 §2.4: the flow speed, c0² ≥ U²/δ; viscosity, c0² ≥ ν_max U/(L δ); the body
    /// force, c0² ≥ |F| L/δ (U the expected peak speed, L the reference length, F the body force
    /// per unit mass; ν_max the largest of [`Case::kinematic_viscosities`], so a generalised law
    /// enters at the characteristic shear rate U/L). With a moving wall that meets another wall (a lid corner, see
    /// [`Case::lid_corner_speed`]) a fourth: the viscous bound with the spacing as its length,
    /// c0² ≥ ν_max U_w/(dx δ), because at the corner the velocity jumps from the wall's U_w to
    /// zero over one spacing and the pressure there scales as μ U_w/dx, not μ U/L. The automatic
    /// sound speed is the largest; `check` shows them all.
    pub fn sound_speed_criteria(&self) -> Vec<SoundSpeedCriterion> {
        let u = self.scales.expected_max_speed;
        let length = self.reference_length();
        let nu = self.kinematic_viscosities().into_iter().fold(0.0, f64::max);
        let delta = DENSITY_VARIATION;
        let mut bounds = vec![
            ("flow speed", u * u / delta),
            ("viscous", nu * u / (length * delta)),
            ("body force", self.body_force_magnitude() * length / delta),
        ];
        if let Some(wall_speed) = self.lid_corner_speed() {
            let dx = self.particles.spacing;
            bounds.push(("lid corner", nu * wall_speed / (dx * delta)));
        }
        bounds
            .into_iter()
            .map(|(name, c2)| SoundSpeedCriterion {
                name,
                sound_speed: c2.sqrt(),
            })
            .collect()
    }

    /// The largest speed (m/s) of a moving wall that meets another wall at a corner (a lid
    /// between two side walls), or `None` when no moving wall does: a wall on a periodic axis's
    /// neighbour meets nothing, so a plate sliding over a periodic channel has no corner.
    pub fn lid_corner_speed(&self) -> Option<f64> {
        let walled = |side: Side| {
            !self.is_periodic(side.axis()) && self.walls.iter().any(|w| w.side == side)
        };
        self.walls
            .iter()
            .filter_map(|wall| {
                let speed = magnitude(wall.velocity.as_ref()?);
                let meets_another = Side::ALL.iter().any(|&other| {
                    other.axis() != wall.side.axis()
                        && other.axis().index() < usize::from(self.dimension)
                        && walled(other)
                });
                (speed > 0.0 && meets_another).then_some(speed)
            })
            .reduce(f64::max)
    }

    /// Reynolds number U L / ν_min with the expected peak speed, the reference length and the
    /// least viscous phase (the most inertial one). `lamella check` shows it for cases that are
    /// not channels; a channel gets ρ U_max h/μ_lower from its steady profile instead.
    pub fn reynolds_number(&self) -> f64 {
        let nu = self
            .kinematic_viscosities()
            .into_iter()
            .fold(f64::INFINITY, f64::min);
        self.scales.expected_max_speed * self.reference_length() / nu
    }

    /// Ratio of the largest to the smallest phase viscosity (1 for a single phase), by
    /// [`Case::phase_viscosity`].
    pub fn viscosity_contrast(&self) -> f64 {
        let mu: Vec<f64> = (0..self.phases.len())
            .map(|i| self.phase_viscosity(i))
            .collect();
        let max = mu.iter().copied().fold(0.0, f64::max);
        let min = mu.iter().copied().fold(f64::INFINITY, f64::min);
        max / min
    }

    /// Every Layer region with a known phase, sorted by bottom height.
    pub fn layer_bands(&self) -> Vec<LayerBand> {
        let mut bands: Vec<LayerBand> = self
            .regions
            .iter()
            .filter_map(|region| match region {
                Region::Layer { phase, bottom, top } => {
                    self.phase_index(phase).map(|phase| LayerBand {
                        phase,
                        bottom: *bottom,
                        top: *top,
                    })
                }
                _ => None,
            })
            .collect();
        bands.sort_by(|a, b| a.bottom.total_cmp(&b.bottom));
        bands
    }

    /// Adjacent layers of different phases, bottom to top, with Yih's ratios m and n
    /// (lower over upper). Empty unless the case is layered.
    pub fn layer_pairs(&self) -> Vec<LayerPair> {
        let bands = self.layer_bands();
        let tol = 1e-9 * self.extent(1).abs();
        bands
            .windows(2)
            .filter(|w| w[0].phase != w[1].phase && (w[0].top - w[1].bottom).abs() <= tol)
            .map(|w| {
                let mu = |i: usize| self.phase_viscosity(i);
                LayerPair {
                    lower: w[0].phase,
                    upper: w[1].phase,
                    interface: w[0].top,
                    viscosity_ratio: mu(w[0].phase) / mu(w[1].phase),
                    width_ratio: (w[0].top - w[0].bottom) / (w[1].top - w[1].bottom),
                }
            })
            .collect()
    }

    /// True when the two layers of `pair` have one density: equal within a relative 1e-9 of
    /// the lower layer's. The stability analysis and the eigenmode seed assume equal densities
    /// and refuse layers that differ by more.
    pub fn layers_share_density(&self, pair: &LayerPair) -> bool {
        let lower = self.phases[pair.lower].density;
        let upper = self.phases[pair.upper].density;
        (lower - upper).abs() <= 1e-9 * lower.abs()
    }

    /// The interface whose growth a run records and `lamella growth` measures: the lowest pair
    /// of adjacent layers of different phases. `None` unless the case is layered.
    pub fn tracked_interface(&self) -> Option<LayerPair> {
        self.layer_pairs().into_iter().next()
    }

    /// Wavelength of the interface mode a run records (m): the seeded wavelength, or the domain
    /// length along x when nothing is seeded (the longest wave a periodic channel holds).
    pub fn tracked_wavelength(&self) -> f64 {
        self.interface_perturbation
            .as_ref()
            .map_or_else(|| self.extent(0), |p| p.wavelength)
    }

    /// How long the base flow takes to settle from the initial velocity (s); a growth rate
    /// measured before this time measures the start-up, not the instability.
    ///
    /// From rest under a body force or a moving wall, the slowest term of the start-up series
    /// of plane Poiseuille and Couette flow decays as exp(−π² ν t / H²) (Morris, Fox & Zhu 1997,
    /// J. Comput. Phys. 136, eqs. 20–21, H the channel height); taking the smallest kinematic
    /// viscosity (the slowest) and waiting until it is down to 1 % gives t = ln(100) H²/(π² ν).
    /// Any other initial velocity is taken as already settled: 0.
    pub fn start_up_time(&self) -> f64 {
        let driven = self.body_force_magnitude() > 0.0
            || self.walls.iter().any(|w| {
                w.velocity
                    .as_ref()
                    .is_some_and(|v| v.iter().any(|&c| c != 0.0))
            });
        match self.initial_velocity {
            InitialVelocity::Rest if driven => {
                let nu = self
                    .kinematic_viscosities()
                    .into_iter()
                    .fold(f64::INFINITY, f64::min);
                let height = self.extent(1);
                100f64.ln() * height * height / (std::f64::consts::PI.powi(2) * nu)
            }
            _ => 0.0,
        }
    }

    /// The channel flow this case is, when it is one (see [`ChannelFlow`]); `None` otherwise
    /// ([`Case::channel_flow_or_why`] says why).
    pub fn channel_flow(&self) -> Option<ChannelFlow> {
        self.channel_flow_or_why().ok()
    }

    /// The channel flow this case is, or why it is none of those the analytical references
    /// know (a sentence naming the case setting that rules it out).
    pub fn channel_flow_or_why(&self) -> Result<ChannelFlow, String> {
        let component = |v: &Option<Vec<f64>>, axis: usize| {
            v.as_ref()
                .map_or(0.0, |v| v.get(axis).copied().unwrap_or(0.0))
        };
        let plane = self.dimension == 2
            || (self.dimension == 3
                && self.is_periodic(Axis::Z)
                && component(&self.body_force, 2) == 0.0
                && self.walls.iter().all(|w| component(&w.velocity, 2) == 0.0));
        if !plane {
            return Err(
                "the 3D case is not a plane channel (it needs z periodic, and no body \
                        force or wall velocity along z)"
                    .into(),
            );
        }
        if !self.is_periodic(Axis::X) || self.domain.lower.len() < 2 {
            return Err("the domain is not periodic along x, as a channel is".into());
        }
        let wall = |side: Side| self.walls.iter().find(|w| w.side == side);
        let (Some(bottom), Some(top)) = (wall(Side::Bottom), wall(Side::Top)) else {
            return Err("a channel needs walls at the bottom and the top".into());
        };
        let bottom_moves = (0..2).any(|a| component(&bottom.velocity, a) != 0.0);
        let top_speed = component(&top.velocity, 0);
        let force = component(&self.body_force, 0);
        if bottom_moves || component(&top.velocity, 1) != 0.0 {
            return Err(
                "the bottom wall moves, or the top one moves across the channel; only \
                        a top wall sliding along x has a reference"
                    .into(),
            );
        }
        if component(&self.body_force, 1) != 0.0 {
            return Err(
                "the body force has a component across the channel (along y); the \
                        references are for a horizontal channel driven along x"
                    .into(),
            );
        }
        let (lo, hi) = (self.domain.lower[1], self.domain.upper[1]);
        let mu = |p: usize| self.phase_viscosity(p);
        let bands = self.layer_bands();
        let generalised = self.has_generalised_phase();
        if self.phases.len() > 1 {
            if self.layer_pairs().len() != 1 || bands.len() != 2 {
                return Err(format!(
                    "the case has {} phases but not two stacked Layer regions of different \
                     phases (found {} layer bands); the layered reference is for two layers",
                    self.phases.len(),
                    bands.len()
                ));
            }
            if top_speed != 0.0 && !generalised {
                return Err(
                    "the top wall slides; the layered reference is for two layers \
                            between fixed walls driven by a body force"
                        .into(),
                );
            }
            let (a, b) = (&bands[0], &bands[1]);
            let tol = 1e-9 * (hi - lo);
            if (a.bottom - lo).abs() > tol || (b.top - hi).abs() > tol {
                return Err("the two layers do not fill the height between the walls".into());
            }
            if generalised {
                let layer = |band: &LayerBand| ChannelLayer {
                    width: band.top - band.bottom,
                    force_density: self.phases[band.phase].density * force,
                    law: self.phases[band.phase].viscosity_law.solver_law(),
                };
                return self.driven_generalised(vec![layer(a), layer(b)], force, top_speed);
            }
            return Ok(ChannelFlow::TwoLayers {
                lower_width: a.top - a.bottom,
                upper_width: b.top - b.bottom,
                lower_viscosity: mu(a.phase),
                upper_viscosity: mu(b.phase),
                force_density: self.phases[a.phase].density * force,
                upper_force_density: self.phases[b.phase].density * force,
            });
        }
        let (gap, kinematic_viscosity) = (hi - lo, mu(0) / self.phases[0].density);
        if generalised {
            let layer = ChannelLayer {
                width: gap,
                force_density: self.phases[0].density * force,
                law: self.phases[0].viscosity_law.solver_law(),
            };
            return self.driven_generalised(vec![layer], force, top_speed);
        }
        match (force != 0.0, top_speed != 0.0) {
            (true, false) => Ok(ChannelFlow::Poiseuille {
                gap,
                kinematic_viscosity,
                force,
            }),
            (false, true) => Ok(ChannelFlow::Couette {
                gap,
                kinematic_viscosity,
                wall_speed: top_speed,
            }),
            (true, true) => Err("both a body force and a sliding top wall drive the flow; \
                                 the references have one or the other"
                .into()),
            (false, false) => Err(
                "nothing drives the flow (no body force along x, no sliding \
                                   top wall)"
                    .into(),
            ),
        }
    }

    /// A [`ChannelFlow::Generalised`] of `layers`, or why not when nothing drives it.
    fn driven_generalised(
        &self,
        layers: Vec<ChannelLayer>,
        force: f64,
        top_speed: f64,
    ) -> Result<ChannelFlow, String> {
        if force == 0.0 && top_speed == 0.0 {
            return Err(
                "nothing drives the flow (no body force along x, no sliding top wall)".into(),
            );
        }
        Ok(ChannelFlow::Generalised {
            layers,
            wall_speed: top_speed,
        })
    }

    /// Heights of Layer bounds strictly inside the domain: the boundaries the interface
    /// perturbation displaces.
    pub fn interior_layer_boundaries(&self) -> Vec<f64> {
        if self.domain.lower.len() < 2 || self.domain.upper.len() < 2 {
            return Vec::new();
        }
        let (lo, hi) = (self.domain.lower[1], self.domain.upper[1]);
        let tol = 1e-9 * (hi - lo).abs();
        let mut heights: Vec<f64> = self
            .regions
            .iter()
            .filter_map(|region| match region {
                Region::Layer { bottom, top, .. } => Some([*bottom, *top]),
                _ => None,
            })
            .flatten()
            .filter(|y| *y > lo + tol && *y < hi - tol)
            .collect();
        heights.sort_by(f64::total_cmp);
        heights.dedup_by(|a, b| (*a - *b).abs() <= tol);
        heights
    }

    /// Narrowest band over which an interface seed fades to zero at a wall: the distance from
    /// each wall to the nearest layer boundary (m). `None` when nothing is walled along y or
    /// there is no boundary inside the domain.
    pub fn seeded_band_width(&self) -> Option<f64> {
        let boundaries = self.interior_layer_boundaries();
        let (first, last) = (boundaries.first()?, boundaries.last()?);
        if self.is_periodic(Axis::Y) {
            return None;
        }
        Some(f64::min(
            first - self.domain.lower[1],
            self.domain.upper[1] - last,
        ))
    }
}
