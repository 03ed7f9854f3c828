//! Weakly-compressible SPH physics: kernels, equation of state, forces, walls, time stepping.

pub mod eos;
pub mod kernel;
pub mod particles;
pub mod time_step;

pub use eos::{EquationOfState, StateLaw};
pub use kernel::{Kernel, KernelKind};
pub use particles::{Kind, Particles};
pub use time_step::{Limit, TimeStepFactors, stable_time_step};
