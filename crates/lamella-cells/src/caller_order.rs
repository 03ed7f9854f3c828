//! Neighbours in the caller's order: a [`CellList`] answers queries about particles sorted by
//! cell; [`CallerOrder`] sorts a copy of the caller's positions, keeps the way back, and speaks
//! of the caller's indices. The one adapter of the workspace for searches outside the solver
//! (analyses, output quantities), which must not reorder the caller's arrays.

use crate::{CellError, CellList, Domain, Vector};

/// Positions sorted by the cells of a [`CellList`], with the way back to the caller's order.
pub struct CallerOrder<V: Vector> {
    cells: CellList<V>,
    sorted: Vec<V>,
    /// Sorted index of each of the caller's positions.
    rank: Vec<u32>,
}

impl<V: Vector> CallerOrder<V> {
    /// Sorts a copy of `positions` by the cells of a list over `domain` for neighbours closer
    /// than `radius`.
    pub fn new(positions: &[V], domain: Domain<V>, radius: f64) -> Result<Self, CellError> {
        let mut cells = CellList::new(domain, radius)?;
        cells.rebuild(positions)?;
        let sorted = cells
            .permutation()
            .iter()
            .map(|&k| positions[k as usize])
            .collect();
        let mut rank = vec![0u32; positions.len()];
        for (k, &given) in cells.permutation().iter().enumerate() {
            // `rebuild` refuses more than `MAX_PARTICLES` (< 2^32) positions.
            rank[given as usize] = k as u32;
        }
        Ok(CallerOrder {
            cells,
            sorted,
            rank,
        })
    }

    /// The cell list; its queries speak of the sorted order.
    pub fn cells(&self) -> &CellList<V> {
        &self.cells
    }

    /// `permutation()[k]` = the caller's index of the k-th sorted position (to reorder other
    /// per-particle arrays the same way).
    pub fn permutation(&self) -> &[u32] {
        self.cells.permutation()
    }

    /// Calls `visit(j, r_ij)` for the neighbours j of the caller's position i, in the cell
    /// list's fixed order, with indices in the caller's order and r_ij = x_i − x_j (minimum
    /// image).
    pub fn for_each_neighbour(&self, i: usize, mut visit: impl FnMut(usize, V)) {
        let perm = self.cells.permutation();
        self.cells
            .for_each_neighbour(&self.sorted, self.rank[i] as usize, |k, r, _| {
                visit(perm[k] as usize, r)
            });
    }

    /// Per-particle `values` in the sorted order, put back in the caller's order.
    pub fn to_caller_order<T: Copy + Default>(&self, values: &[T]) -> Vec<T> {
        let mut out = vec![T::default(); values.len()];
        for (&given, &value) in self.cells.permutation().iter().zip(values) {
            out[given as usize] = value;
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use glam::DVec2;

    use super::*;

    #[test]
    fn neighbours_and_values_come_back_in_the_callers_order() {
        // Positions given against the cell order (right to left).
        let positions: Vec<DVec2> = (0..10)
            .map(|k| DVec2::new(0.95 - 0.1 * k as f64, 0.5))
            .collect();
        let domain = Domain::new(DVec2::ZERO, DVec2::ONE, [false; 3]).unwrap();
        let order = CallerOrder::new(&positions, domain, 0.15).unwrap();
        for i in 0..positions.len() {
            let mut seen = Vec::new();
            order.for_each_neighbour(i, |j, r| {
                assert!((r - (positions[i] - positions[j])).length() < 1e-12);
                seen.push(j);
            });
            seen.sort();
            let expected: Vec<usize> = [i.wrapping_sub(1), i + 1]
                .into_iter()
                .filter(|&j| j < positions.len())
                .collect();
            assert_eq!(seen, expected, "position {i}");
        }
        let sorted_x: Vec<f64> = order
            .permutation()
            .iter()
            .map(|&k| positions[k as usize].x)
            .collect();
        let back = order.to_caller_order(&sorted_x);
        let given: Vec<f64> = positions.iter().map(|p| p.x).collect();
        assert_eq!(back, given);
    }
}
