//! A state's particles sorted by the cells of a `lamella_cells::CellList` over the solver's
//! search domain, for output quantities that sum over each particle's neighbours (interface
//! statistics, shear rate). Neighbours on periodic axes are found across the seam with their
//! minimum-image separation, as in the solver. Holds no neighbour lists, so it costs a copy of
//! the state whatever the particle count.

use lamella_cells::{CallerOrder, CellError, CellList, Domain, Vector};
use lamella_sph::{Particles, ReorderScratch};

/// The particles in cell order with their cell list (and [`CallerOrder`]'s way back).
pub(crate) struct CellOrdered<V: Vector> {
    order: CallerOrder<V>,
    /// The particles in cell order.
    pub particles: Particles<V>,
}

impl<V: Vector> CellOrdered<V> {
    /// Sorts `particles` by the cells of a list over `domain` for neighbours closer than
    /// `radius`.
    pub fn new(
        particles: &Particles<V>,
        domain: Domain<V>,
        radius: f64,
    ) -> Result<Self, CellError> {
        let order = CallerOrder::new(&particles.position, domain, radius)?;
        let mut sorted = particles.clone();
        sorted.reorder(order.permutation(), &mut ReorderScratch::default());
        Ok(CellOrdered {
            order,
            particles: sorted,
        })
    }

    /// The cell list; its queries speak of [`Self::particles`].
    pub fn cells(&self) -> &CellList<V> {
        self.order.cells()
    }

    /// Per-particle `values` in cell order, put back in the order of the particles given to
    /// [`Self::new`].
    pub fn to_given_order<T: Copy + Default>(&self, values: &[T]) -> Vec<T> {
        self.order.to_caller_order(values)
    }
}
