//! The cell list: particles counting-sorted by cell, and fixed-radius neighbour visits.

use rayon::prelude::*;

use crate::domain::fold;
use crate::grid::Grid;
#[cfg(target_arch = "x86_64")]
use crate::scan::scan_avx512;
use crate::scan::{Query, avx512_available, scan};
use crate::{CellError, Domain, Vector};

/// Particles per block when binning in parallel.
const BIN_BLOCK: usize = 4096;
/// Fewer particles than this are binned on one thread.
const PARALLEL_THRESHOLD: usize = 1 << 15;
/// Upper bound on the per-thread cell histograms kept between rebuilds (memory guard).
const MAX_HISTOGRAMS: usize = 4;
/// Largest particle count a list accepts (indices and offsets are `u32`).
pub const MAX_PARTICLES: usize = u32::MAX as usize - 1;

/// A uniform grid of cells at least `radius` wide with the particles sorted by cell.
///
/// After [`rebuild`](Self::rebuild), particle `k` of the sorted order is the particle
/// `permutation()[k]` of the slice given. Queries speak of the sorted order: reorder every
/// particle array with [`apply_permutation`](crate::apply_permutation) and pass the
/// reordered positions; the particles of one cell are then a contiguous index range.
#[derive(Debug, Clone)]
pub struct CellList<V: Vector> {
    domain: Domain<V>,
    radius: f64,
    radius_squared: f64,
    grid: Grid,
    /// Period and half period of each periodic axis (zero on the others).
    period: [f64; 3],
    half_period: [f64; 3],
    /// `cell_start[c]..cell_start[c + 1]` are the sorted particles of the row-major cell `c`.
    cell_start: Vec<u32>,
    /// Old index of the `k`-th sorted particle.
    permutation: Vec<u32>,
    /// Row-major cell of the `k`-th sorted particle (holds sort keys during a rebuild).
    sorted_cell: Vec<u32>,
    /// Per-block cell histograms, reused between rebuilds.
    histograms: Vec<u32>,
    /// Test candidates with the AVX-512 scan (same results as the portable one).
    vector_scan: bool,
}

impl<V: Vector> CellList<V> {
    /// An empty list over `domain` for neighbours closer than `radius`.
    pub fn new(domain: Domain<V>, radius: f64) -> Result<Self, CellError> {
        let domain = Domain::new(domain.lower, domain.upper, domain.periodic)?;
        if !(radius.is_finite() && radius > 0.0) {
            return Err(CellError::InvalidRadius { radius });
        }
        let mut period = [0.0; 3];
        let mut half_period = [0.0; 3];
        for axis in (0..V::DIM).filter(|&a| domain.periodic[a]) {
            let extent = domain.extent().get(axis);
            if extent < 2.0 * radius {
                return Err(CellError::PeriodicTooShort {
                    axis,
                    extent,
                    radius,
                });
            }
            period[axis] = extent;
            half_period[axis] = 0.5 * extent;
        }
        let grid = Grid::new(&domain, radius)?;
        let cell_start = vec![0; grid.total() + 1];
        Ok(Self {
            domain,
            radius,
            radius_squared: radius * radius,
            grid,
            period,
            half_period,
            cell_start,
            permutation: Vec::new(),
            sorted_cell: Vec::new(),
            histograms: Vec::new(),
            vector_scan: avx512_available(),
        })
    }

    /// The search radius.
    pub fn radius(&self) -> f64 {
        self.radius
    }

    /// The domain.
    pub fn domain(&self) -> &Domain<V> {
        &self.domain
    }

    /// Number of particles binned by the last rebuild.
    pub fn len(&self) -> usize {
        self.permutation.len()
    }

    /// True when the last rebuild had no particles (or failed).
    pub fn is_empty(&self) -> bool {
        self.permutation.is_empty()
    }

    /// Cells per axis (1 on axes beyond `V::DIM`).
    pub fn cells_per_axis(&self) -> [usize; 3] {
        self.grid.dims
    }

    /// `permutation()[k]` = index, in the slice given to the last rebuild, of the particle
    /// that goes `k`-th: sorted by cell, and by index within a cell.
    pub fn permutation(&self) -> &[u32] {
        &self.permutation
    }

    /// Makes queries test candidates with the portable scan even where the AVX-512 one
    /// could run (both give the same neighbours, in the same order, bit for bit; this is
    /// for comparing them).
    pub fn use_portable_scan(&mut self) {
        self.vector_scan = false;
    }

    /// True when queries test candidates eight at a time with AVX-512 (detected when the
    /// list is made).
    pub fn uses_vector_scan(&self) -> bool {
        self.vector_scan
    }

    /// Heap bytes held by the structure (capacity × element size of every buffer).
    pub fn heap_bytes(&self) -> usize {
        [
            &self.cell_start,
            &self.permutation,
            &self.sorted_cell,
            &self.histograms,
        ]
        .iter()
        .map(|buffer| buffer.capacity() * std::mem::size_of::<u32>())
        .sum()
    }

    /// Bins `positions` by cell (in parallel; the result does not depend on the thread
    /// count), reusing the allocations of earlier rebuilds.
    ///
    /// On error the list is left empty and the error names the first offending particle.
    pub fn rebuild(&mut self, positions: &[V]) -> Result<(), CellError> {
        let n = positions.len();
        if n > MAX_PARTICLES {
            self.clear();
            return Err(CellError::TooManyParticles {
                count: n,
                limit: MAX_PARTICLES,
            });
        }
        self.sorted_cell.resize(n, 0);
        self.permutation.resize(n, 0);
        if let Err(error) = self.compute_keys(positions) {
            self.clear();
            return Err(error);
        }
        self.counting_sort();
        self.record_sorted_cells();
        Ok(())
    }

    /// Forgets every particle, keeping the allocations.
    fn clear(&mut self) {
        self.permutation.clear();
        self.sorted_cell.clear();
        self.cell_start.fill(0);
    }

    /// Writes the sort key (row-major cell) of every particle into `sorted_cell`, in input order.
    fn compute_keys(&mut self, positions: &[V]) -> Result<(), CellError> {
        let grid = &self.grid;
        let key_block = |start: usize, keys: &mut [u32], block: &[V]| -> Option<CellError> {
            // Fast path without branches; the checked one (wrapping periodic coordinates,
            // naming the first bad particle) only for a block with a particle outside.
            if !grid.cells_inside(block, keys) {
                for (offset, (key, &x)) in keys.iter_mut().zip(block).enumerate() {
                    match grid.cell_of(x, start + offset) {
                        Ok(id) => *key = id as u32,
                        Err(error) => return Some(error),
                    }
                }
            }
            None
        };
        let error = if positions.len() < PARALLEL_THRESHOLD {
            key_block(0, &mut self.sorted_cell, positions)
        } else {
            self.sorted_cell
                .par_chunks_mut(BIN_BLOCK)
                .zip(positions.par_chunks(BIN_BLOCK))
                .enumerate()
                .find_map_first(|(b, (keys, block))| key_block(b * BIN_BLOCK, keys, block))
        };
        error.map_or(Ok(()), Err)
    }

    /// Stable counting sort of the particles by key: fills `cell_start` and `permutation`.
    ///
    /// The particles are split into `parts` contiguous parts, each with its own histogram;
    /// a stable sort has one result, so the split (and the thread count) does not change it.
    fn counting_sort(&mut self) {
        let n = self.sorted_cell.len();
        let cells = self.grid.total();
        let parts = if n < PARALLEL_THRESHOLD {
            1
        } else {
            rayon::current_num_threads().clamp(1, MAX_HISTOGRAMS)
        };
        let part_len = n.div_ceil(parts).max(1);
        self.histograms.clear();
        self.histograms.resize(parts * cells, 0);
        let keys = &self.sorted_cell;
        self.histograms
            .par_chunks_mut(cells)
            .zip(keys.par_chunks(part_len))
            .for_each(|(histogram, part)| {
                for &key in part {
                    histogram[key as usize] += 1;
                }
            });
        // Exclusive prefix sum over (cell, part): each part's cursor into the sorted order.
        let mut running = 0u32;
        for cell in 0..cells {
            self.cell_start[cell] = running;
            for part in 0..parts {
                let slot = &mut self.histograms[part * cells + cell];
                let count = *slot;
                *slot = running;
                running += count;
            }
        }
        self.cell_start[cells] = running;
        let permutation = SharedSlots(self.permutation.as_mut_ptr());
        self.histograms
            .par_chunks_mut(cells)
            .zip(keys.par_chunks(part_len))
            .enumerate()
            .for_each(|(part, (cursor, part_keys))| {
                let base = part * part_len;
                for (offset, &key) in part_keys.iter().enumerate() {
                    let slot = cursor[key as usize] as usize;
                    cursor[key as usize] += 1;
                    debug_assert!(slot < n);
                    // SAFETY: the cursors of all parts start at disjoint offsets of the
                    // prefix sum and each advances once per particle counted for it, so
                    // every slot in 0..n is written exactly once, by one thread, and
                    // `permutation` has length n.
                    unsafe { permutation.write(slot, (base + offset) as u32) };
                }
            });
    }

    /// Overwrites the keys with the row-major cell of each sorted particle.
    fn record_sorted_cells(&mut self) {
        let cells = self.grid.total();
        for cell in 0..cells {
            let (a, b) = (
                self.cell_start[cell] as usize,
                self.cell_start[cell + 1] as usize,
            );
            if a < b {
                self.sorted_cell[a..b].fill(cell as u32);
            }
        }
    }

    /// Visits every particle `j != i` with `|r_ij| < radius`, where `r_ij = x_i − x_j` is the
    /// minimum-image displacement, calling `f(j, r_ij, |r_ij|)` in a fixed order (by stencil
    /// cell, then by index). Indices and `positions` are in the sorted order of the last
    /// rebuild, at the places given to it.
    ///
    /// Panics if `positions.len()` differs from the count given to the last rebuild.
    #[inline]
    pub fn for_each_neighbour<F: FnMut(usize, V, f64)>(&self, positions: &[V], i: usize, f: F) {
        self.visit(positions, i, 0, f);
    }

    /// Like [`for_each_neighbour`](Self::for_each_neighbour) but only neighbours `j > i`:
    /// the half stencil, for work that handles each pair once.
    #[inline]
    pub fn for_each_neighbour_above<F: FnMut(usize, V, f64)>(
        &self,
        positions: &[V],
        i: usize,
        f: F,
    ) {
        self.visit(positions, i, i + 1, f);
    }

    /// Visits every pair `i < j` closer than the radius once, as `f(i, j, r_ij, |r_ij|)`,
    /// in increasing `i` (sequential).
    pub fn for_each_pair<F: FnMut(usize, usize, V, f64)>(&self, positions: &[V], mut f: F) {
        for i in 0..positions.len() {
            self.visit(positions, i, i + 1, |j, r, d| f(i, j, r, d));
        }
    }

    /// Candidates are the particles of the stencil cells with index `>= first`.
    #[inline]
    fn visit<F: FnMut(usize, V, f64)>(&self, positions: &[V], i: usize, first: usize, mut f: F) {
        assert_eq!(
            positions.len(),
            self.permutation.len(),
            "neighbour query with {} positions, but the cell list was rebuilt with {}",
            positions.len(),
            self.permutation.len()
        );
        let xi = positions[i];
        let id = self.sorted_cell[i] as usize;
        if self.grid.periodic[..V::DIM].iter().any(|&p| p) {
            let image = |mut r: V| {
                for axis in 0..V::DIM {
                    if self.grid.periodic[axis] {
                        let (l, h) = (self.period[axis], self.half_period[axis]);
                        r.set(axis, fold(r.get(axis), l, h));
                    }
                }
                r
            };
            self.gather(positions, xi, i, first, id, image, &mut f);
        } else {
            self.gather(positions, xi, i, first, id, |r| r, &mut f);
        }
    }

    /// Tests the candidates of every stencil range of cell `id` (from index `first` on).
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    fn gather<F: FnMut(usize, V, f64)>(
        &self,
        positions: &[V],
        xi: V,
        i: usize,
        first: usize,
        id: usize,
        image: impl Fn(V) -> V + Copy,
        f: &mut F,
    ) {
        let mut ranges = [(0u32, 0u32); 27];
        let mut count = 0;
        self.for_each_stencil_range(id, |a, b| {
            ranges[count] = (a.max(first) as u32, b as u32);
            count += 1;
        });
        let query = Query {
            i,
            xi,
            radius_squared: self.radius_squared,
        };
        #[cfg(target_arch = "x86_64")]
        if self.vector_scan {
            // SAFETY: `vector_scan` is set only when the processor has AVX-512F, and the
            // ranges come from `cell_start`, whose entries are at most the particle count,
            // which `visit` checked equals `positions.len()`.
            unsafe { scan_avx512(positions, query, &ranges[..count], self.period, image, f) };
            return;
        }
        scan(positions, query, &ranges[..count], image, f);
    }

    /// Calls `range(a, b)` for the sorted-index ranges of the stencil cells around cell
    /// coordinates `c`, in a fixed order; no cell twice.
    #[inline(always)]
    fn for_each_stencil_range(&self, id: usize, mut range: impl FnMut(usize, usize)) {
        let c = self.grid.coords(id);
        let dims = self.grid.dims;
        let interior = (0..V::DIM).all(|a| c[a] >= 1 && c[a] + 2 <= dims[a]);
        if interior {
            // Row-major interior cell: each stencil row is cells id-1..=id+1 of that row.
            let (row, plane) = (dims[0], dims[0] * dims[1]);
            let planes: &[isize] = if V::DIM > 2 { &[-1, 0, 1] } else { &[0] };
            for &dz in planes {
                for dy in [-1isize, 0, 1] {
                    let centre = (id as isize + dz * plane as isize + dy * row as isize) as usize;
                    range(
                        self.cell_start[centre - 1] as usize,
                        self.cell_start[centre + 2] as usize,
                    );
                }
            }
            return;
        }
        let (zs, nz) = if V::DIM > 2 {
            self.grid.axis_neighbours(2, c[2])
        } else {
            ([0, 0, 0], 1)
        };
        let (ys, ny) = self.grid.axis_neighbours(1, c[1]);
        let (xs, nx) = self.grid.axis_neighbours(0, c[0]);
        for &z in &zs[..nz] {
            for &y in &ys[..ny] {
                // Consecutive x cells of a row are one index range.
                let row = self.grid.id([0, y, z]);
                let mut k = 0;
                while k < nx {
                    let mut end = k;
                    while end + 1 < nx && xs[end + 1] == xs[end] + 1 {
                        end += 1;
                    }
                    let a = self.cell_start[row + xs[k]] as usize;
                    let b = self.cell_start[row + xs[end] + 1] as usize;
                    range(a, b);
                    k = end + 1;
                }
            }
        }
    }
}

/// A raw pointer to the permutation shared by the threads of a counting sort.
#[derive(Clone, Copy)]
struct SharedSlots(*mut u32);

// SAFETY: threads write disjoint slots only (see `counting_sort`).
unsafe impl Send for SharedSlots {}
unsafe impl Sync for SharedSlots {}

impl SharedSlots {
    /// # Safety
    /// `slot` is in bounds and no other thread touches it concurrently.
    #[inline]
    unsafe fn write(self, slot: usize, value: u32) {
        unsafe { *self.0.add(slot) = value };
    }
}
