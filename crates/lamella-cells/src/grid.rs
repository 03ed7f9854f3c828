//! Geometry of the uniform cell grid: which cell a position falls in. Cells are laid out
//! row-major (x fastest, then y, then z), so a row of stencil cells is one index range.

use crate::domain::wrap_coordinate;
use crate::prefetch::prefetch;
use crate::{CellError, Domain, Vector};

/// The most cells one grid may have (keeps cell indices and offsets within `u32`).
pub const MAX_CELLS: usize = 1 << 28;

/// A uniform grid over a domain: `dims[a]` cells of width at least the requested size on axis `a`.
#[derive(Debug, Clone)]
pub(crate) struct Grid {
    pub dims: [usize; 3],
    pub periodic: [bool; 3],
    lower: [f64; 3],
    upper: [f64; 3],
    inv_width: [f64; 3],
}

impl Grid {
    /// The grid with the most cells on each axis such that every cell is at least
    /// `min_width` wide (a relative safety of 1e-9 absorbs rounding in the cell index).
    pub fn new<V: Vector>(domain: &Domain<V>, min_width: f64) -> Result<Self, CellError> {
        let mut grid = Grid {
            dims: [1; 3],
            periodic: [false; 3],
            lower: [0.0; 3],
            upper: [1.0; 3],
            inv_width: [1.0; 3],
        };
        let mut total = 1.0f64;
        let safe_width = min_width * (1.0 + 1e-9);
        for axis in 0..V::DIM {
            let (lo, up) = (domain.lower.get(axis), domain.upper.get(axis));
            let extent = up - lo;
            let cells = (extent / safe_width).floor().max(1.0);
            total *= cells;
            if total > MAX_CELLS as f64 {
                continue;
            }
            let cells = cells as usize;
            grid.dims[axis] = cells;
            grid.periodic[axis] = domain.periodic[axis];
            grid.lower[axis] = lo;
            grid.upper[axis] = up;
            grid.inv_width[axis] = cells as f64 / extent;
        }
        if total > MAX_CELLS as f64 {
            return Err(CellError::TooManyCells {
                cells: total,
                limit: MAX_CELLS,
            });
        }
        Ok(grid)
    }

    /// Number of cells.
    #[inline]
    pub fn total(&self) -> usize {
        self.dims[0] * self.dims[1] * self.dims[2]
    }

    /// Row-major id of the cell holding `x` (the `index`-th particle, named in errors).
    /// Periodic coordinates are folded into the box first; non-periodic ones must lie in
    /// the closed box `[lower, upper]`.
    #[inline]
    pub fn cell_of<V: Vector>(&self, x: V, index: usize) -> Result<usize, CellError> {
        let mut id = 0;
        for axis in (0..V::DIM).rev() {
            let mut c = x.get(axis);
            if !c.is_finite() {
                return Err(CellError::NonFinite { index });
            }
            let (lo, up) = (self.lower[axis], self.upper[axis]);
            if self.periodic[axis] {
                c = wrap_coordinate(c, lo, up);
            } else if c < lo || c > up {
                return Err(CellError::OutsideDomain {
                    index,
                    position: (0..V::DIM).map(|a| x.get(a)).collect(),
                });
            }
            id = id * self.dims[axis] + self.axis_cell(axis, c) as usize;
        }
        Ok(id)
    }

    /// Cell index along `axis` of coordinate `c`: in `[0, n)` for `c` in the box, clamped to
    /// it otherwise (NaN gives 0). `c − lower` is in `[0, extent]` inside the box, so the
    /// product is in `[0, n]` (n < 2^28) and the clamp only guards the top edge; through
    /// `i32`, the float-to-integer conversion is one instruction.
    #[inline(always)]
    fn axis_cell(&self, axis: usize, c: f64) -> u32 {
        let last = self.dims[axis] as i32 - 1;
        (((c - self.lower[axis]) * self.inv_width[axis]) as i32).clamp(0, last) as u32
    }

    /// Writes the row-major cell id of each position of `block` into `keys` and returns
    /// whether all were inside the box (on periodic axes `[lower, upper)`, on the others
    /// `[lower, upper]`; non-finite coordinates are not). The ids are meaningful only then:
    /// the fast path of binning, without branches; [`cell_of`](Self::cell_of) handles the rest.
    pub fn cells_inside<V: Vector>(&self, block: &[V], keys: &mut [u32]) -> bool {
        let stride = [1, self.dims[0] as u32, (self.dims[0] * self.dims[1]) as u32];
        let mut all_inside = true;
        for (index, (key, &x)) in keys.iter_mut().zip(block).enumerate() {
            if index % 4 == 0 {
                // About 500 bytes ahead (measured: the hardware prefetcher falls behind).
                prefetch(block.as_ptr().wrapping_add(index + 32));
            }
            let mut id = 0u32;
            for (axis, &stride) in stride.iter().enumerate().take(V::DIM) {
                let (c, up) = (x.get(axis), self.upper[axis]);
                let below_top = if self.periodic[axis] { c < up } else { c <= up };
                all_inside &= (c >= self.lower[axis]) & below_top;
                id += self.axis_cell(axis, c) * stride;
            }
            *key = id;
        }
        all_inside
    }

    /// Cell coordinates of a row-major cell id.
    #[inline]
    pub fn coords(&self, id: usize) -> [usize; 3] {
        // 32-bit divisions (ids are below 2^28), and none for z when the grid is flat.
        let (id, nx, ny) = (id as u32, self.dims[0] as u32, self.dims[1] as u32);
        let (x, rest) = (id % nx, id / nx);
        if self.dims[2] == 1 {
            return [x as usize, rest as usize, 0];
        }
        [x as usize, (rest % ny) as usize, (rest / ny) as usize]
    }

    /// Row-major id of cell coordinates.
    #[inline]
    pub fn id(&self, c: [usize; 3]) -> usize {
        c[0] + self.dims[0] * (c[1] + self.dims[1] * c[2])
    }

    /// The distinct cells next to (and including) cell coordinate `c` on `axis`, ascending.
    /// On a periodic axis the neighbours wrap; with fewer than 3 cells every cell is listed once.
    #[inline]
    pub fn axis_neighbours(&self, axis: usize, c: usize) -> ([usize; 3], usize) {
        let n = self.dims[axis];
        if n <= 3 && (self.periodic[axis] || n == 1) {
            // Every cell of the axis is a neighbour (3 periodic cells, or a single cell).
            return ([0, 1, 2], n);
        }
        if self.periodic[axis] {
            if c == 0 {
                ([0, 1, n - 1], 3)
            } else if c == n - 1 {
                ([0, n - 2, n - 1], 3)
            } else {
                ([c - 1, c, c + 1], 3)
            }
        } else if c == 0 {
            ([0, 1, 0], 2)
        } else if c == n - 1 {
            ([c - 1, c, 0], 2)
        } else {
            ([c - 1, c, c + 1], 3)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    fn grid(periodic: [bool; 3]) -> Grid {
        let domain = Domain::new(DVec2::ZERO, DVec2::new(1.0, 0.5), periodic).unwrap();
        Grid::new(&domain, 0.1).unwrap()
    }

    #[test]
    fn cells_are_at_least_the_requested_width() {
        let g = grid([false; 3]);
        assert_eq!((g.dims[0], g.dims[1]), (9, 4));
        let exact = Domain::new(DVec2::ZERO, DVec2::new(1.0, 1.0), [false; 3]).unwrap();
        // 1.0 / 0.25 is exactly 4, but the safety factor keeps cells strictly wider.
        assert_eq!(Grid::new(&exact, 0.25).unwrap().dims[0], 3);
    }

    #[test]
    fn boundary_positions_land_in_the_edge_cells() {
        let g = grid([false; 3]);
        assert_eq!(g.cell_of(DVec2::new(1.0, 0.5), 0).unwrap(), g.total() - 1);
        assert_eq!(g.cell_of(DVec2::new(0.0, 0.0), 0).unwrap(), 0);
        assert!(matches!(
            g.cell_of(DVec2::new(1.0 + 1e-12, 0.2), 7),
            Err(CellError::OutsideDomain { index: 7, .. })
        ));
        let p = grid([true, false, false]);
        assert_eq!(p.cell_of(DVec2::new(-1e-18, 0.0), 0).unwrap(), 0);
        // The fast path agrees inside the box and flags what it cannot bin.
        let inside = [
            DVec2::new(0.0, 0.0),
            DVec2::new(0.55, 0.5),
            DVec2::new(0.999, 0.25),
        ];
        let mut keys = [0u32; 3];
        for grid in [&g, &p] {
            assert!(grid.cells_inside(&inside, &mut keys));
            for (x, &key) in inside.iter().zip(&keys) {
                assert_eq!(key as usize, grid.cell_of(*x, 0).unwrap());
            }
        }
        let mut key = [0u32; 1];
        assert!(g.cells_inside(&[DVec2::new(1.0, 0.5)], &mut key));
        assert_eq!(key[0] as usize, g.total() - 1);
        assert!(!p.cells_inside(&[DVec2::new(1.0, 0.5)], &mut key)); // periodic: upper is lower
        assert!(!p.cells_inside(&[DVec2::new(-1e-18, 0.0)], &mut key));
        assert!(!g.cells_inside(&[DVec2::new(0.5, 0.5 + 1e-12)], &mut key));
        assert!(!g.cells_inside(&[DVec2::new(f64::NAN, 0.2)], &mut key));
        assert_eq!(p.cell_of(DVec2::new(1.05, 0.0), 0).unwrap(), 0);
    }

    #[test]
    fn axis_neighbours_are_distinct() {
        let g = grid([true, false, false]);
        assert_eq!(g.axis_neighbours(0, 0), ([0, 1, 8], 3));
        assert_eq!(g.axis_neighbours(0, 8), ([0, 7, 8], 3));
        assert_eq!(g.axis_neighbours(1, 0).1, 2);
        assert_eq!(g.axis_neighbours(1, 3), ([2, 3, 0], 2));
    }
}
