//! Particle state as a structure of arrays.

use lamella_cells::{Vector, apply_permutation};

/// Whether a particle is free fluid or part of a wall.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[repr(u8)]
pub enum Kind {
    /// A fluid particle, moved by the equations of motion.
    Fluid = 0,
    /// A wall (dummy) particle, moved only by its prescribed wall velocity.
    Wall = 1,
}

/// Buffers [`Particles::reorder`] gathers into: one per element type.
#[derive(Clone, Debug, Default)]
pub struct ReorderScratch<V> {
    vectors: Vec<V>,
    scalars: Vec<f64>,
    phases: Vec<u16>,
    kinds: Vec<Kind>,
    ids: Vec<u64>,
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

impl<V: Vector> Particles<V> {
    /// Reorders every array so that entry k becomes old entry `permutation[k]` (a parallel
    /// gather per array). `scratch` lends one buffer per element type and keeps its
    /// capacity, so repeated reordering does not allocate and needs far less memory than a
    /// second copy of the state.
    pub fn reorder(&mut self, permutation: &[u32], scratch: &mut ReorderScratch<V>) {
        let vectors = &mut scratch.vectors;
        apply_permutation(permutation, &mut self.position, vectors);
        apply_permutation(permutation, &mut self.velocity, vectors);
        apply_permutation(permutation, &mut self.initial_position, vectors);
        let scalars = &mut scratch.scalars;
        apply_permutation(permutation, &mut self.density, scalars);
        apply_permutation(permutation, &mut self.pressure, scalars);
        apply_permutation(permutation, &mut self.mass, scalars);
        apply_permutation(permutation, &mut self.viscosity, scalars);
        apply_permutation(permutation, &mut self.phase, &mut scratch.phases);
        apply_permutation(permutation, &mut self.kind, &mut scratch.kinds);
        apply_permutation(permutation, &mut self.id, &mut scratch.ids);
    }

    /// The first array whose length differs from `position`'s, if any (its field name).
    pub fn inconsistent_field(&self) -> Option<&'static str> {
        let n = self.len();
        [
            ("velocity", self.velocity.len()),
            ("density", self.density.len()),
            ("pressure", self.pressure.len()),
            ("mass", self.mass.len()),
            ("viscosity", self.viscosity.len()),
            ("phase", self.phase.len()),
            ("kind", self.kind.len()),
            ("id", self.id.len()),
            ("initial_position", self.initial_position.len()),
        ]
        .into_iter()
        .find(|&(_, len)| len != n)
        .map(|(name, _)| name)
    }

    /// Total mass Σ m (kg, or kg/m in 2D) of the fluid particles, summed in array order.
    pub fn fluid_mass(&self) -> f64 {
        self.fluid_indices().map(|i| self.mass[i]).sum()
    }

    /// Total momentum Σ m v of the fluid particles, summed in array order.
    pub fn fluid_momentum(&self) -> V {
        self.fluid_indices()
            .fold(V::ZERO, |sum, i| sum + self.velocity[i] * self.mass[i])
    }

    /// Kinetic energy Σ ½ m |v|² of the fluid particles, summed in array order.
    pub fn fluid_kinetic_energy(&self) -> f64 {
        self.fluid_indices()
            .map(|i| 0.5 * self.mass[i] * self.velocity[i].length_squared())
            .sum()
    }

    fn fluid_indices(&self) -> impl Iterator<Item = usize> + '_ {
        (0..self.len()).filter(|&i| self.kind[i] == Kind::Fluid)
    }
}
