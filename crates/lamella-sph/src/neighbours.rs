//! The neighbour visitor the physics is written against.
//!
//! The physics loops only need "visit every particle j ≠ i within the kernel support of i, in a
//! fixed order, with r_ij = x_i − x_j (minimum image on periodic axes) and |r_ij|". The solver
//! uses the cell list of `lamella-cells`; unit tests use a brute-force visitor.

use lamella_cells::{CellList, Vector};

/// Visits the neighbours of a particle in a fixed, thread-independent order.
pub trait Neighbourhood<V: Vector>: Sync {
    /// Calls `visit(j, r_ij, |r_ij|)` for every j ≠ i with |r_ij| below the search radius.
    fn for_each_neighbour(&self, positions: &[V], i: usize, visit: impl FnMut(usize, V, f64));
}

impl<V: Vector> Neighbourhood<V> for CellList<V> {
    #[inline]
    fn for_each_neighbour(&self, positions: &[V], i: usize, visit: impl FnMut(usize, V, f64)) {
        CellList::for_each_neighbour(self, positions, i, visit);
    }
}

#[cfg(test)]
pub(crate) mod brute_force {
    //! An O(N²) visitor with optional periodic axes, for unit tests.
    use super::*;

    /// Every pair within `radius`; axis k periodic with length `period[k]` when it is > 0.
    pub struct BruteForce<V> {
        pub radius: f64,
        pub period: V,
    }

    impl<V: Vector> Neighbourhood<V> for BruteForce<V> {
        fn for_each_neighbour(
            &self,
            positions: &[V],
            i: usize,
            mut visit: impl FnMut(usize, V, f64),
        ) {
            for (j, &xj) in positions.iter().enumerate() {
                if j == i {
                    continue;
                }
                let mut d = positions[i] - xj;
                for axis in 0..V::DIM {
                    let l = self.period.get(axis);
                    if l > 0.0 {
                        let c = d.get(axis);
                        d.set(axis, c - l * (c / l).round());
                    }
                }
                let dist = d.length();
                if dist < self.radius {
                    visit(j, d, dist);
                }
            }
        }
    }
}
