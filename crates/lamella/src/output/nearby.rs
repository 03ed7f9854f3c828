//! A uniform bucket grid for "which particles lie within r of this point" queries of the
//! output layer (interface statistics, probes). Serial and deterministic: candidates are
//! visited cell by cell in a fixed order and, within a cell, in particle order.

use std::collections::HashMap;

use lamella_cells::Vector;

/// Particle indices bucketed by cubic cells of edge `radius`.
pub struct Buckets {
    radius: f64,
    cells: HashMap<[i64; 3], Vec<usize>>,
}

impl Buckets {
    /// Buckets `positions` for queries of radius `radius` (> 0).
    pub fn new<V: Vector>(positions: &[V], radius: f64) -> Self {
        let mut cells: HashMap<[i64; 3], Vec<usize>> = HashMap::new();
        for (i, &p) in positions.iter().enumerate() {
            cells.entry(cell_of(p, radius)).or_default().push(i);
        }
        Buckets { radius, cells }
    }

    /// Calls `visit(j, r)` for every particle `j` with distance r = |x_j − `at`| < radius,
    /// in a fixed order.
    pub fn for_each_within<V: Vector>(
        &self,
        positions: &[V],
        at: V,
        mut visit: impl FnMut(usize, f64),
    ) {
        let centre = cell_of(at, self.radius);
        let span = |axis: usize| if axis < V::DIM { -1..=1 } else { 0..=0 };
        for dx in span(0) {
            for dy in span(1) {
                for dz in span(2) {
                    let key = [centre[0] + dx, centre[1] + dy, centre[2] + dz];
                    for &j in self.cells.get(&key).into_iter().flatten() {
                        let r = (positions[j] - at).length();
                        if r < self.radius {
                            visit(j, r);
                        }
                    }
                }
            }
        }
    }
}

fn cell_of<V: Vector>(p: V, radius: f64) -> [i64; 3] {
    let mut key = [0i64; 3];
    for (axis, k) in key.iter_mut().enumerate().take(V::DIM) {
        *k = (p.get(axis) / radius).floor() as i64;
    }
    key
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec3;

    #[test]
    fn finds_exactly_the_brute_force_neighbours() {
        let points: Vec<DVec3> = (0..300)
            .map(|i| {
                let t = i as f64;
                DVec3::new(
                    (t * 0.37).sin() * 2.0,
                    (t * 0.71).cos() * 2.0,
                    (t * 0.13).sin(),
                )
            })
            .collect();
        let buckets = Buckets::new(&points, 0.4);
        for &at in points.iter().step_by(17) {
            let mut found = Vec::new();
            buckets.for_each_within(&points, at, |j, _| found.push(j));
            found.sort();
            let brute: Vec<usize> = (0..points.len())
                .filter(|&j| (points[j] - at).length() < 0.4)
                .collect();
            assert_eq!(found, brute);
        }
    }
}
