//! The case description types, exactly as they appear in a RON case file.
//!
//! Every struct rejects unknown fields; omitted fields take the defaults documented on each
//! field (and in `cases/README.md`). Vectors (`Vec<f64>`) have one entry per dimension.

use serde::{Deserialize, Serialize};

/// A complete case: everything a run needs.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Case {
    /// A short human-readable title, printed by `lamella check` [default: empty].
    #[serde(default)]
    pub title: String,
    /// Number of space dimensions, 2 or 3 [default: 2].
    #[serde(default = "default_dimension")]
    pub dimension: u8,
    /// The box the fluid fills, and which of its axes are periodic.
    pub domain: Domain,
    /// Initial particle lattice, smoothing length and kernel.
    pub particles: ParticleSettings,
    /// The liquids, by name. Regions refer to them by name; particles carry their index.
    pub phases: Vec<Phase>,
    /// How the viscosity of a pair of particles is averaged, case-wide [default: Harmonic].
    #[serde(default)]
    pub pair_viscosity: PairViscosity,
    /// Regions that fill the domain with phases; later regions override earlier ones.
    pub regions: Vec<Region>,
    /// Optional sinusoidal displacement of every layer boundary inside the domain [default: None].
    #[serde(default)]
    pub interface_perturbation: Option<Perturbation>,
    /// Velocity of the fluid at time zero [default: Rest].
    #[serde(default)]
    pub initial_velocity: InitialVelocity,
    /// Solid walls of dummy particles, one entry per walled side [default: none].
    #[serde(default)]
    pub walls: Vec<Wall>,
    /// How the walls hold the liquid still (or carry it along) in the viscous term
    /// [default: Quadratic].
    #[serde(default)]
    pub no_slip: NoSlip,
    /// Body force per unit mass (m/s²), e.g. gravity or a driving pressure gradient over
    /// density [default: None, no body force].
    #[serde(default)]
    pub body_force: Option<Vec<f64>>,
    /// Characteristic scales: the expected peak speed, the reference length, the sound speed.
    pub scales: Scales,
    /// Equation of state linking pressure to density [default: Linear with zero background].
    #[serde(default)]
    pub equation_of_state: EquationOfState,
    /// Largest relative density deviation |ρ − ρ0|/ρ0 tolerated before a run is stopped as
    /// failed [default: 0.05].
    #[serde(default = "default_density_tolerance")]
    pub density_tolerance: f64,
    /// How the viscous term is advanced in time [default: Explicit].
    #[serde(default)]
    pub viscosity_treatment: ViscosityTreatment,
    /// Safety factors of the time-step limits [default: acoustic 0.25, viscous 0.125, force 0.25].
    #[serde(default)]
    pub time_step: TimeStepFactors,
    /// End time and output intervals.
    pub time: Time,
    /// Run folder, checkpoints, probes and recorded analyses [default: see `Output`].
    #[serde(default)]
    pub output: Output,
}

/// The domain box.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Domain {
    /// Lower corner (m), one entry per dimension.
    pub lower: Vec<f64>,
    /// Upper corner (m), one entry per dimension.
    pub upper: Vec<f64>,
    /// Axes on which the domain wraps around [default: none].
    #[serde(default)]
    pub periodic: Vec<Axis>,
}

/// A coordinate axis.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Axis {
    /// First axis (along the channel).
    X,
    /// Second axis (height; layers are stacked along it).
    Y,
    /// Third axis (3D only).
    Z,
}

impl Axis {
    /// The component index: X = 0, Y = 1, Z = 2.
    pub fn index(self) -> usize {
        match self {
            Axis::X => 0,
            Axis::Y => 1,
            Axis::Z => 2,
        }
    }
}

/// Particle lattice and smoothing.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ParticleSettings {
    /// Initial particle spacing dx (m). Every domain extent must be a whole number of spacings.
    pub spacing: f64,
    /// Smoothing length over spacing, h/dx. Accepted 1.0 ..= 2.0; common practice 1.2 … 1.5
    /// [default: 1.3].
    #[serde(default = "default_smoothing_ratio")]
    pub smoothing_ratio: f64,
    /// Smoothing kernel [default: WendlandC2].
    #[serde(default)]
    pub kernel: Kernel,
    /// Coefficient A of particle shifting, δr = −A h |v|max dt ∇C (Lind et al. 2012; Skillen
    /// et al. 2013 use 1 … 6); 0 turns shifting off. Accepted 0 ..= 10 [default: 2].
    #[serde(default = "default_shifting")]
    pub shifting: f64,
}

/// Smoothing kernels.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Kernel {
    /// Wendland C2 (Wendland 1995), support 2h.
    #[default]
    WendlandC2,
    /// Cubic B-spline (Monaghan & Lattanzio 1985), support 2h.
    CubicSpline,
    /// Quintic spline (Morris 1996), support 3h.
    QuinticSpline,
}

impl Kernel {
    /// Support radius in units of the smoothing length h.
    pub fn support_factor(self) -> f64 {
        match self {
            Kernel::WendlandC2 | Kernel::CubicSpline => 2.0,
            Kernel::QuinticSpline => 3.0,
        }
    }
}

/// One liquid.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Phase {
    /// Name the regions use to refer to this phase; unique within the case.
    pub name: String,
    /// Reference density ρ0 (kg/m³).
    pub density: f64,
    /// How the dynamic viscosity depends on the flow.
    pub viscosity_law: ViscosityLaw,
}

/// Viscosity laws of a phase. Every law but `Newtonian` makes the viscosity depend on the
/// local shear rate γ̇ (1/s) and clamps it to `[min_viscosity, max_viscosity]` (Pa·s): a
/// power law has no finite viscosity at rest and a regularised yield stress a very large one,
/// so the clamps bound the time step and the implicit solve. The formulas are those of
/// [`lamella_sph::FlowCurve`].
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub enum ViscosityLaw {
    /// Constant dynamic viscosity μ (Pa·s).
    Newtonian {
        /// Dynamic viscosity (Pa·s).
        viscosity: f64,
    },
    /// μ = K γ̇^(n−1): shear-thinning for n < 1, shear-thickening for n > 1.
    PowerLaw {
        /// Consistency K (Pa·sⁿ).
        consistency: f64,
        /// Flow behaviour index n (> 0).
        index: f64,
        /// Smallest viscosity (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity (Pa·s).
        max_viscosity: f64,
    },
    /// μ = μ∞ + (μ0 − μ∞) / (1 + (λ γ̇)^m).
    Cross {
        /// Zero-shear viscosity μ0 (Pa·s).
        zero_shear_viscosity: f64,
        /// Infinite-shear viscosity μ∞ (Pa·s).
        infinite_shear_viscosity: f64,
        /// Time constant λ (s).
        time_constant: f64,
        /// Exponent m (> 0).
        exponent: f64,
        /// Smallest viscosity (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity (Pa·s).
        max_viscosity: f64,
    },
    /// μ = μ∞ + (μ0 − μ∞) (1 + (λ γ̇)^a)^((n−1)/a); a = 2 is the Carreau law.
    CarreauYasuda {
        /// Zero-shear viscosity μ0 (Pa·s).
        zero_shear_viscosity: f64,
        /// Infinite-shear viscosity μ∞ (Pa·s).
        infinite_shear_viscosity: f64,
        /// Time constant λ (s).
        time_constant: f64,
        /// Transition exponent a (> 0).
        transition: f64,
        /// Power-law index n (> 0).
        index: f64,
        /// Smallest viscosity (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity (Pa·s).
        max_viscosity: f64,
    },
    /// Herschel–Bulkley with Papanastasiou's regularisation:
    /// μ = K γ̇^(n−1) + τ0 (1 − e^(−s γ̇))/γ̇.
    HerschelBulkley {
        /// Yield stress τ0 (Pa).
        yield_stress: f64,
        /// Consistency K (Pa·sⁿ).
        consistency: f64,
        /// Flow behaviour index n (> 0).
        index: f64,
        /// Regularisation time s (s): larger is closer to a true yield stress; s γ̇ ≫ 1 where
        /// the liquid should flow.
        regularisation: f64,
        /// Smallest viscosity (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity (Pa·s).
        max_viscosity: f64,
    },
    /// Bingham plastic with Papanastasiou's regularisation: μ = μp + τ0 (1 − e^(−s γ̇))/γ̇.
    Bingham {
        /// Yield stress τ0 (Pa).
        yield_stress: f64,
        /// Plastic viscosity μp (Pa·s).
        plastic_viscosity: f64,
        /// Regularisation time s (s).
        regularisation: f64,
        /// Smallest viscosity (Pa·s).
        min_viscosity: f64,
        /// Largest viscosity (Pa·s).
        max_viscosity: f64,
    },
}

impl ViscosityLaw {
    /// The solver's form of the law.
    pub fn solver_law(&self) -> lamella_sph::ViscosityLaw {
        use lamella_sph::FlowCurve as Curve;
        let generalised =
            |curve, min_viscosity, max_viscosity| lamella_sph::ViscosityLaw::Generalised {
                curve,
                min_viscosity,
                max_viscosity,
            };
        match *self {
            ViscosityLaw::Newtonian { viscosity } => {
                lamella_sph::ViscosityLaw::Newtonian { viscosity }
            }
            ViscosityLaw::PowerLaw {
                consistency,
                index,
                min_viscosity,
                max_viscosity,
            } => generalised(
                Curve::PowerLaw { consistency, index },
                min_viscosity,
                max_viscosity,
            ),
            ViscosityLaw::Cross {
                zero_shear_viscosity,
                infinite_shear_viscosity,
                time_constant,
                exponent,
                min_viscosity,
                max_viscosity,
            } => generalised(
                Curve::Cross {
                    zero_shear_viscosity,
                    infinite_shear_viscosity,
                    time_constant,
                    exponent,
                },
                min_viscosity,
                max_viscosity,
            ),
            ViscosityLaw::CarreauYasuda {
                zero_shear_viscosity,
                infinite_shear_viscosity,
                time_constant,
                transition,
                index,
                min_viscosity,
                max_viscosity,
            } => generalised(
                Curve::CarreauYasuda {
                    zero_shear_viscosity,
                    infinite_shear_viscosity,
                    time_constant,
                    transition,
                    index,
                },
                min_viscosity,
                max_viscosity,
            ),
            ViscosityLaw::HerschelBulkley {
                yield_stress,
                consistency,
                index,
                regularisation,
                min_viscosity,
                max_viscosity,
            } => generalised(
                Curve::HerschelBulkley {
                    yield_stress,
                    consistency,
                    index,
                    regularisation,
                },
                min_viscosity,
                max_viscosity,
            ),
            ViscosityLaw::Bingham {
                yield_stress,
                plastic_viscosity,
                regularisation,
                min_viscosity,
                max_viscosity,
            } => generalised(
                Curve::Bingham {
                    yield_stress,
                    plastic_viscosity,
                    regularisation,
                },
                min_viscosity,
                max_viscosity,
            ),
        }
    }

    /// The law's name as the case file writes it.
    pub fn name(&self) -> &'static str {
        match self {
            ViscosityLaw::Newtonian { .. } => "Newtonian",
            ViscosityLaw::PowerLaw { .. } => "PowerLaw",
            ViscosityLaw::Cross { .. } => "Cross",
            ViscosityLaw::CarreauYasuda { .. } => "CarreauYasuda",
            ViscosityLaw::HerschelBulkley { .. } => "HerschelBulkley",
            ViscosityLaw::Bingham { .. } => "Bingham",
        }
    }

    /// Dynamic viscosity (Pa·s) at shear-rate magnitude `shear_rate` (1/s).
    pub fn viscosity_at(&self, shear_rate: f64) -> f64 {
        self.solver_law().viscosity(shear_rate)
    }

    /// The largest viscosity the law gives (Pa·s): what bounds the explicit viscous step.
    pub fn max_viscosity(&self) -> f64 {
        self.solver_law().max_viscosity()
    }

    /// The viscosity of a Newtonian law, `None` for a law that depends on the shear rate.
    pub fn newtonian_viscosity(&self) -> Option<f64> {
        match *self {
            ViscosityLaw::Newtonian { viscosity } => Some(viscosity),
            _ => None,
        }
    }
}

/// Average of the two particle viscosities in a pair (Morris, Fox & Zhu 1997 viscous term).
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum PairViscosity {
    /// μab = 2 μa μb / (μa + μb); keeps shear stress continuous across a viscosity jump.
    #[default]
    Harmonic,
    /// μab = (μa + μb) / 2.
    Arithmetic,
}

/// The velocity wall particles show the viscous term, which makes the liquid stick to the wall.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum NoSlip {
    /// The wall's velocity continues the fluid's quadratic profile across the wall: the fluid
    /// velocity at the wall particle's mirror point (a Taylor expansion from each fluid
    /// neighbour) and the profile's curvature normal to the wall. Second order: exact for
    /// plane Poiseuille flow.
    #[default]
    Quadratic,
    /// Twice the wall's velocity minus the kernel average of the fluid nearby (Adami, Hu &
    /// Adams 2012). First order: near a wall a curved profile lags by a few per cent of the
    /// peak at 10–20 particles across. Cheaper: no gradients near the walls.
    Averaged,
}

/// How the viscous term is advanced in time.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub enum ViscosityTreatment {
    /// With every other force; the time step obeys the viscous limit C_ν h²/ν_max (Morris, Fox
    /// & Zhu 1997), which is small for very viscous liquids.
    #[default]
    Explicit,
    /// Backward Euler, solved every step by conjugate gradients on the symmetric SPH viscous
    /// operator (Peer et al. 2015; Weiler et al. 2018): no viscous time-step limit.
    Implicit {
        /// The solve stops at ‖b − A v‖ ≤ tolerance · ‖b‖ [default: 1e-9].
        #[serde(default = "default_implicit_tolerance")]
        tolerance: f64,
        /// Most iterations per step; more is a failed step [default: 1000].
        #[serde(default = "default_implicit_iterations")]
        max_iterations: u32,
    },
}

/// A part of the domain filled with one phase.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub enum Region {
    /// The whole domain.
    Fill {
        /// Phase name.
        phase: String,
    },
    /// A horizontal layer: bottom ≤ y < top (y is the second axis, the height).
    Layer {
        /// Phase name.
        phase: String,
        /// Lower bound in y (m).
        bottom: f64,
        /// Upper bound in y (m).
        top: f64,
    },
    /// An axis-aligned box: lower ≤ p < upper on every axis.
    Box {
        /// Phase name.
        phase: String,
        /// Lower corner (m).
        lower: Vec<f64>,
        /// Upper corner (m).
        upper: Vec<f64>,
    },
    /// A disc (2D) or ball (3D): |p − centre| ≤ radius.
    Circle {
        /// Phase name.
        phase: String,
        /// Centre (m).
        centre: Vec<f64>,
        /// Radius (m).
        radius: f64,
    },
}

impl Region {
    /// The phase name this region fills with.
    pub fn phase(&self) -> &str {
        match self {
            Region::Fill { phase }
            | Region::Layer { phase, .. }
            | Region::Box { phase, .. }
            | Region::Circle { phase, .. } => phase,
        }
    }
}

/// A sine wave on the layer boundaries, y(x) = y0 + A sin(2π (x − x_lower)/λ), made by moving
/// the fluid particles (never by changing their phase), so any amplitude works, a small
/// fraction of a spacing included.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Perturbation {
    /// Amplitude A (m).
    pub amplitude: f64,
    /// Wavelength λ (m); must tile the domain length along x when x is periodic.
    pub wavelength: f64,
    /// What else the seed sets [default: `Displacement`].
    #[serde(default)]
    pub mode: SeedMode,
}

/// How a seeded wave starts.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum SeedMode {
    /// Only the particles are moved (a smooth volume-preserving displacement); the velocity is
    /// the case's initial velocity.
    #[default]
    Displacement,
    /// The particles are moved as for `Displacement` (on two layers that sine is the
    /// eigenmode's interface shape, so the mode is scaled to its amplitude and phase), and the
    /// velocity of the leading linear eigenmode of the two-layer channel (as `lamella
    /// stability` computes it) is added to the steady profile, so the run starts on the growing
    /// or decaying mode with no transient. Needs `initial_velocity: SteadyChannel` on a
    /// two-layer channel driven by a body force along x.
    Eigenmode,
}

/// Fluid velocity at time zero.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub enum InitialVelocity {
    /// All fluid at rest.
    #[default]
    Rest,
    /// Every fluid particle moves with the same velocity (m/s).
    Uniform {
        /// Velocity (m/s), one entry per dimension.
        velocity: Vec<f64>,
    },
    /// The Taylor–Green vortex: u = U sin(kx) cos(ky), v = −U cos(kx) sin(ky) (times cos(kz)
    /// in 3D, w = 0), k = 2π/L with L the domain length along x, measured from the lower corner.
    TaylorGreen {
        /// Peak speed U (m/s).
        amplitude: f64,
    },
    /// The steady profile of the channel for its body force or moving top wall: the layered
    /// profile of two layers (Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5),
    /// plane Poiseuille or Couette flow for one fluid. Needs a channel: periodic along x,
    /// walls at the bottom and top.
    SteadyChannel,
}

/// A side of the domain box.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Side {
    /// Low x.
    Left,
    /// High x.
    Right,
    /// Low y.
    Bottom,
    /// High y.
    Top,
    /// Low z (3D only).
    Back,
    /// High z (3D only).
    Front,
}

impl Side {
    /// Every side, in axis order (low before high).
    pub const ALL: [Side; 6] = [
        Side::Left,
        Side::Right,
        Side::Bottom,
        Side::Top,
        Side::Back,
        Side::Front,
    ];

    /// The axis this side is normal to.
    pub fn axis(self) -> Axis {
        match self {
            Side::Left | Side::Right => Axis::X,
            Side::Bottom | Side::Top => Axis::Y,
            Side::Back | Side::Front => Axis::Z,
        }
    }

    /// True for the high end of its axis (Right, Top, Front).
    pub fn is_high(self) -> bool {
        matches!(self, Side::Right | Side::Top | Side::Front)
    }
}

/// A solid wall on one side of the domain, built from layers of dummy particles.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Wall {
    /// Which side of the domain box.
    pub side: Side,
    /// Rows of wall particles; layers · dx must cover the kernel support [default: 3].
    #[serde(default = "default_wall_layers")]
    pub layers: u32,
    /// Wall velocity (m/s), e.g. a moving lid [default: None, at rest].
    #[serde(default)]
    pub velocity: Option<Vec<f64>>,
}

/// Characteristic scales of the flow.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Scales {
    /// The largest flow speed expected (m/s); sets the sound speed unless that is given.
    pub expected_max_speed: f64,
    /// Length for the Reynolds number and the sound-speed estimate (m)
    /// [default: the domain height, extent along y].
    #[serde(default)]
    pub reference_length: Option<f64>,
    /// Artificial sound speed c0 (m/s) [default: from the expected speed, see
    /// `Case::sound_speed`].
    #[serde(default)]
    pub sound_speed: Option<f64>,
}

/// Equation of state p(ρ).
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub enum EquationOfState {
    /// p = c0² (ρ − ρ0) + pb.
    Linear {
        /// Background pressure pb (Pa) [default: 0].
        #[serde(default)]
        background_pressure: f64,
    },
    /// p = ρ0 c0²/γ ((ρ/ρ0)^γ − 1) + pb (Monaghan 1994).
    Tait {
        /// Exponent γ [default: 7].
        #[serde(default = "default_tait_exponent")]
        exponent: f64,
        /// Background pressure pb (Pa) [default: 0].
        #[serde(default)]
        background_pressure: f64,
    },
}

impl Default for EquationOfState {
    fn default() -> Self {
        EquationOfState::Linear {
            background_pressure: 0.0,
        }
    }
}

/// Safety factors of the time-step limits (Morris, Fox & Zhu 1997; Monaghan 1992).
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct TimeStepFactors {
    /// Acoustic (CFL) factor: dt ≤ C · h/(c0 + U) [default: 0.25].
    #[serde(default = "default_acoustic_factor")]
    pub acoustic: f64,
    /// Viscous factor: dt ≤ C · h²/ν_max [default: 0.125].
    #[serde(default = "default_viscous_factor")]
    pub viscous: f64,
    /// Force factor: dt ≤ C · √(h/|a|) [default: 0.25].
    #[serde(default = "default_force_factor")]
    pub force: f64,
}

impl Default for TimeStepFactors {
    fn default() -> Self {
        TimeStepFactors {
            acoustic: default_acoustic_factor(),
            viscous: default_viscous_factor(),
            force: default_force_factor(),
        }
    }
}

/// End time and output intervals (simulated seconds).
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Time {
    /// Simulated end time (s).
    pub end: f64,
    /// Simulated time between snapshots (s).
    pub snapshot_interval: f64,
    /// Simulated time between probe and analysis samples (s) [default: the snapshot interval].
    #[serde(default)]
    pub sample_interval: Option<f64>,
}

/// Where and what a run writes besides snapshots.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct Output {
    /// Run folder, relative to the current directory; `lamella run --out` overrides it
    /// [default: None, `--out` is then required].
    #[serde(default)]
    pub folder: Option<String>,
    /// Wall-clock minutes between checkpoints [default: 15].
    #[serde(default = "default_checkpoint_minutes")]
    pub checkpoint_minutes: f64,
    /// Points and lines where the flow is sampled [default: none].
    #[serde(default)]
    pub probes: Vec<Probe>,
    /// Analyses recorded while running [default: none].
    #[serde(default)]
    pub analyses: Vec<Analysis>,
}

impl Default for Output {
    fn default() -> Self {
        Output {
            folder: None,
            checkpoint_minutes: default_checkpoint_minutes(),
            probes: Vec::new(),
            analyses: Vec::new(),
        }
    }
}

/// A place where the flow is sampled at every sample interval.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(deny_unknown_fields)]
pub enum Probe {
    /// One point.
    Point {
        /// Name used in the output table.
        name: String,
        /// Position (m).
        at: Vec<f64>,
    },
    /// Evenly spaced points on a segment, both ends included.
    Line {
        /// Name used in the output table.
        name: String,
        /// Start (m).
        from: Vec<f64>,
        /// End (m).
        to: Vec<f64>,
        /// Number of sample points, at least 2.
        samples: u32,
    },
}

impl Probe {
    /// The probe's name.
    pub fn name(&self) -> &str {
        match self {
            Probe::Point { name, .. } | Probe::Line { name, .. } => name,
        }
    }
}

/// Analyses a run can record as it goes.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Analysis {
    /// Total kinetic energy of the fluid.
    KineticEnergy,
    /// Largest and mean relative density deviation.
    DensityVariation,
    /// Velocity profile across the height, averaged along x.
    VelocityProfile,
    /// Amplitude of the interface displacement between phases (growth of a seeded wave).
    InterfaceAmplitude,
    /// Mixing measures between phases.
    Mixing,
}

fn default_dimension() -> u8 {
    2
}
fn default_density_tolerance() -> f64 {
    0.05
}
fn default_smoothing_ratio() -> f64 {
    1.3
}
fn default_shifting() -> f64 {
    2.0
}
fn default_wall_layers() -> u32 {
    3
}
fn default_tait_exponent() -> f64 {
    7.0
}
fn default_acoustic_factor() -> f64 {
    0.25
}
fn default_viscous_factor() -> f64 {
    0.125
}
fn default_force_factor() -> f64 {
    0.25
}
fn default_implicit_tolerance() -> f64 {
    1.0e-9
}
fn default_implicit_iterations() -> u32 {
    1000
}
fn default_checkpoint_minutes() -> f64 {
    15.0
}
