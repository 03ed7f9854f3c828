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

/// One per-particle array of [`Particles`], by element type (see [`Particles::for_each_field`]).
#[derive(Debug)]
pub enum Field<'a, V> {
    /// Vectors (position, velocity, initial position).
    Vectors(&'a [V]),
    /// Real scalars (density, pressure, mass, viscosity).
    Scalars(&'a [f64]),
    /// Phase indices.
    Phases(&'a [u16]),
    /// Fluid or wall.
    Kinds(&'a [Kind]),
    /// Stable identities.
    Ids(&'a [u64]),
}

impl<V> Field<'_, V> {
    /// Number of entries.
    pub fn len(&self) -> usize {
        match self {
            Field::Vectors(v) => v.len(),
            Field::Scalars(v) => v.len(),
            Field::Phases(v) => v.len(),
            Field::Kinds(v) => v.len(),
            Field::Ids(v) => v.len(),
        }
    }

    /// True when the array is empty.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Bytes the array's entries take (its length times the size of an entry).
    pub fn bytes(&self) -> usize {
        match self {
            Field::Vectors(v) => size_of_val(*v),
            Field::Scalars(v) => size_of_val(*v),
            Field::Phases(v) => size_of_val(*v),
            Field::Kinds(v) => size_of_val(*v),
            Field::Ids(v) => size_of_val(*v),
        }
    }
}

/// One per-particle array of [`Particles`], mutably (see [`Particles::for_each_field_mut`]).
#[derive(Debug)]
pub enum FieldMut<'a, V> {
    /// Vectors (position, velocity, initial position).
    Vectors(&'a mut Vec<V>),
    /// Real scalars (density, pressure, mass, viscosity).
    Scalars(&'a mut Vec<f64>),
    /// Phase indices.
    Phases(&'a mut Vec<u16>),
    /// Fluid or wall.
    Kinds(&'a mut Vec<Kind>),
    /// Stable identities.
    Ids(&'a mut Vec<u64>),
}

/// The list of per-particle fields, once: visits each array of a [`Particles`] with its name,
/// wrapped in `$wrap` ([`Field`] or [`FieldMut`]). The destructuring names every field, so
/// adding one to the struct fails to compile here until it is listed.
macro_rules! particle_fields {
    ($particles:expr, $wrap:ident, $visit:ident) => {{
        let Particles {
            position,
            velocity,
            density,
            pressure,
            mass,
            viscosity,
            phase,
            kind,
            id,
            initial_position,
        } = $particles;
        $visit("position", $wrap::Vectors(position));
        $visit("velocity", $wrap::Vectors(velocity));
        $visit("density", $wrap::Scalars(density));
        $visit("pressure", $wrap::Scalars(pressure));
        $visit("mass", $wrap::Scalars(mass));
        $visit("viscosity", $wrap::Scalars(viscosity));
        $visit("phase", $wrap::Phases(phase));
        $visit("kind", $wrap::Kinds(kind));
        $visit("id", $wrap::Ids(id));
        $visit("initial_position", $wrap::Vectors(initial_position));
    }};
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
        self.for_each_field_mut(|_, field| match field {
            FieldMut::Vectors(v) => apply_permutation(permutation, v, &mut scratch.vectors),
            FieldMut::Scalars(v) => apply_permutation(permutation, v, &mut scratch.scalars),
            FieldMut::Phases(v) => apply_permutation(permutation, v, &mut scratch.phases),
            FieldMut::Kinds(v) => apply_permutation(permutation, v, &mut scratch.kinds),
            FieldMut::Ids(v) => apply_permutation(permutation, v, &mut scratch.ids),
        });
    }

    /// The first array whose length differs from `position`'s, if any (its field name).
    pub fn inconsistent_field(&self) -> Option<&'static str> {
        let n = self.len();
        let mut found = None;
        self.for_each_field(|name, field| {
            if found.is_none() && field.len() != n {
                found = Some(name);
            }
        });
        found
    }

    /// Calls `visit(name, array)` for every per-particle array, in declaration order. With
    /// [`Particles::for_each_field_mut`] this is the one list of the fields: reordering,
    /// checkpoints (save and restore) and the consistency check go through it, so a new field
    /// is handled everywhere once it is added to the struct and to `particle_fields!`, and
    /// the exhaustive destructuring there does not compile until it is.
    pub fn for_each_field(&self, mut visit: impl FnMut(&'static str, Field<'_, V>)) {
        particle_fields!(self, Field, visit);
    }

    /// Calls `visit(name, array)` for every per-particle array, mutably, in declaration order
    /// (see [`Particles::for_each_field`]).
    pub fn for_each_field_mut(&mut self, mut visit: impl FnMut(&'static str, FieldMut<'_, V>)) {
        particle_fields!(self, FieldMut, visit);
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
