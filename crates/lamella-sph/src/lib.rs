//! Weakly-compressible SPH physics: kernels, equation of state, forces, walls, time stepping.
//!
//! [`Simulation`] holds a run (configuration + complete state) and advances it step by step;
//! the physics itself lives in small modules of pure functions over particle slices.

pub mod eos;
pub mod fault;
pub mod forces;
pub mod implicit_viscosity;
pub mod kernel;
pub mod neighbours;
pub mod particles;
pub mod shear_rate;
pub mod shifting;
pub mod simulation;
pub mod time_step;
pub mod velocity_fit;
pub mod viscosity;
pub mod walls;

pub use eos::{EquationOfState, StateLaw};
pub use fault::{Fault, FaultCause};
pub use forces::PairViscosity;
pub use implicit_viscosity::{ImplicitSettings, ViscosityTreatment};
pub use kernel::{Kernel, KernelKind};
pub use particles::{Field, FieldMut, Kind, Particles, ReorderScratch};
pub use shear_rate::shear_rates;
pub use shifting::Regularisation;
pub use simulation::{DEFAULT_DENSITY_DIFFUSION, SetupError, Simulation, SolverConfig, StepReport};
pub use time_step::{Limit, TimeStepFactors, stable_time_step};
pub use viscosity::{FlowCurve, ViscosityLaw};
pub use walls::NoSlip;
