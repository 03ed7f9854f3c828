//! Particle state as a structure of arrays.

use lamella_cells::Vector;

/// Whether a particle is free fluid or part of a wall.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[repr(u8)]
pub enum Kind {
    /// A fluid particle, moved by the equations of motion.
    Fluid = 0,
    /// A wall (dummy) particle, moved only by its prescribed wall velocity.
    Wall = 1,
}

/// The state of every particle, one array per quantity (structure of arrays).
///
/// All arrays have the same length. Particles are reordered by cell for locality; `id` is the
/// stable identity that snapshots, probes and analyses use.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Particles<V: Vector> {
    /// Position (m).
    pub position: Vec<V>,
    /// Velocity (m/s). For wall particles, the prescribed wall velocity.
    pub velocity: Vec<V>,
    /// Density (kg/m³).
    pub density: Vec<f64>,
    /// Pressure (Pa).
    pub pressure: Vec<f64>,
    /// Mass (kg in 3D, kg/m in 2D).
    pub mass: Vec<f64>,
    /// Dynamic viscosity of the particle (Pa·s).
    pub viscosity: Vec<f64>,
    /// Phase index into the case's phase list.
    pub phase: Vec<u16>,
    /// Fluid or wall.
    pub kind: Vec<Kind>,
    /// Stable particle identity, unchanged by reordering.
    pub id: Vec<u64>,
    /// Position at time zero (m), for deformation and mixing analyses.
    pub initial_position: Vec<V>,
}

impl<V: Vector> Particles<V> {
    /// Number of particles.
    pub fn len(&self) -> usize {
        self.position.len()
    }

    /// True when there are no particles.
    pub fn is_empty(&self) -> bool {
        self.position.is_empty()
    }
}
