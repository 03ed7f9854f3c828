//! Weakly-compressible SPH physics: kernels, equation of state, forces, walls, time stepping.

pub mod particles;

pub use particles::{Kind, Particles};
