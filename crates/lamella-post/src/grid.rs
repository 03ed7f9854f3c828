//! A uniform grid of cells over a box, for gridded analysis fields (VTK image data).

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use lamella_cells::Vector;

/// `cells[axis]` equal cells over [lower, upper]; the field nodes are the cell centres.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Grid<V: Vector> {
    /// Lower corner of the box (m).
    pub lower: V,
    /// Upper corner of the box (m).
    pub upper: V,
    /// Cells per axis (1 on axes beyond the dimension).
    pub cells: [usize; 3],
}

impl<V: Vector> Grid<V> {
    /// A grid of `cells` per axis; `None` if a count is zero or the box is empty.
    pub fn new(lower: V, upper: V, cells: &[usize]) -> Option<Self> {
        if cells.len() != V::DIM || cells.contains(&0) {
            return None;
        }
        if (0..V::DIM).any(|a| !(upper.get(a) > lower.get(a))) {
            return None;
        }
        let mut c = [1; 3];
        c[..V::DIM].copy_from_slice(cells);
        Some(Grid {
            lower,
            upper,
            cells: c,
        })
    }

    /// Cell width on each axis (m).
    pub fn spacing(&self) -> V {
        V::from_fn(|a| (self.upper.get(a) - self.lower.get(a)) / self.cells[a] as f64)
    }

    /// Number of cells (= nodes).
    pub fn len(&self) -> usize {
        self.cells.iter().product()
    }

    /// True when the grid has no cells (never, for a grid made by [`Grid::new`]).
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Node positions (cell centres), x fastest, then y, then z (VTK image-data order).
    pub fn nodes(&self) -> Vec<V> {
        let d = self.spacing();
        (0..self.len())
            .map(|k| {
                let idx = [
                    k % self.cells[0],
                    (k / self.cells[0]) % self.cells[1],
                    k / (self.cells[0] * self.cells[1]),
                ];
                V::from_fn(|a| self.lower.get(a) + (idx[a] as f64 + 0.5) * d.get(a))
            })
            .collect()
    }

    /// Flat index of the cell holding `x`, or `None` outside the box (the upper faces belong
    /// to the last cells).
    pub fn cell_of(&self, x: V) -> Option<usize> {
        let d = self.spacing();
        let mut flat = 0;
        let mut stride = 1;
        for a in 0..V::DIM {
            let s = (x.get(a) - self.lower.get(a)) / d.get(a);
            if !(s >= 0.0 && s <= self.cells[a] as f64) {
                return None;
            }
            flat += (s as usize).min(self.cells[a] - 1) * stride;
            stride *= self.cells[a];
        }
        Some(flat)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    #[test]
    fn nodes_and_cells_agree() {
        let g = Grid::new(DVec2::ZERO, DVec2::new(2.0, 1.0), &[4, 2]).unwrap();
        assert_eq!(g.len(), 8);
        let nodes = g.nodes();
        assert_eq!(nodes[0], DVec2::new(0.25, 0.25));
        assert_eq!(nodes[5], DVec2::new(0.75, 0.75));
        for (k, &n) in nodes.iter().enumerate() {
            assert_eq!(g.cell_of(n), Some(k));
        }
        assert_eq!(g.cell_of(DVec2::new(2.0, 1.0)), Some(7));
        assert_eq!(g.cell_of(DVec2::new(-0.1, 0.5)), None);
        assert!(Grid::new(DVec2::ZERO, DVec2::ONE, &[0, 2]).is_none());
    }
}
