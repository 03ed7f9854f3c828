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

impl<V: Vector> Particles<V> {
    /// Rewrites `spare` as this state reordered so that entry k is old entry `permutation[k]`,
    /// then swaps it in. `spare` keeps its capacity, so repeated reordering does not allocate.
    pub fn reorder(&mut self, permutation: &[u32], spare: &mut Particles<V>) {
        fn gather<T: Copy>(out: &mut Vec<T>, source: &[T], permutation: &[u32]) {
            out.clear();
            out.extend(permutation.iter().map(|&k| source[k as usize]));
        }
        gather(&mut spare.position, &self.position, permutation);
        gather(&mut spare.velocity, &self.velocity, permutation);
        gather(&mut spare.density, &self.density, permutation);
        gather(&mut spare.pressure, &self.pressure, permutation);
        gather(&mut spare.mass, &self.mass, permutation);
        gather(&mut spare.viscosity, &self.viscosity, permutation);
        gather(&mut spare.phase, &self.phase, permutation);
        gather(&mut spare.kind, &self.kind, permutation);
        gather(&mut spare.id, &self.id, permutation);
        gather(
            &mut spare.initial_position,
            &self.initial_position,
            permutation,
        );
        std::mem::swap(self, spare);
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
