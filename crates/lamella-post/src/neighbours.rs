//! Neighbour lists in compressed rows, in the caller's particle order, built with
//! `lamella_cells::CellList` (minimum-image separations on periodic axes).

use lamella_cells::{CallerOrder, CellError, Domain, Vector};

/// For each centre, the points closer than the search radius and the separations
/// r = x_centre − x_point (minimum image). A centre is never its own neighbour.
#[derive(Clone, Debug, PartialEq)]
pub struct Neighbours<V: Vector> {
    offsets: Vec<usize>,
    index: Vec<usize>,
    separation: Vec<V>,
}

impl<V: Vector> Neighbours<V> {
    /// Builds the lists centre by centre: `visit(i, push)` calls `push(j, r_ij)` for each
    /// neighbour j of centre i.
    pub fn from_visits(
        centres: usize,
        mut visit: impl FnMut(usize, &mut dyn FnMut(usize, V)),
    ) -> Self {
        let mut offsets = Vec::with_capacity(centres + 1);
        let mut index = Vec::new();
        let mut separation = Vec::new();
        offsets.push(0);
        for i in 0..centres {
            visit(i, &mut |j, r| {
                index.push(j);
                separation.push(r);
            });
            offsets.push(index.len());
        }
        Neighbours {
            offsets,
            index,
            separation,
        }
    }

    /// Neighbours among `positions` of each of `positions`, closer than `radius`, searched with a
    /// [`lamella_cells::CellList`] over `domain`. Indices refer to the order of `positions`.
    pub fn among(positions: &[V], domain: Domain<V>, radius: f64) -> Result<Self, CellError> {
        let sorted = CallerOrder::new(positions, domain, radius)?;
        Ok(Self::from_visits(positions.len(), |i, push| {
            sorted.for_each_neighbour(i, &mut *push);
        }))
    }

    /// Neighbours among `points` of each of `centres` (e.g. grid nodes or probe places),
    /// closer than `radius`. Only the centres' lists are kept, so a few centres among many
    /// points cost memory for the few.
    pub fn of_centres(
        centres: &[V],
        points: &[V],
        domain: Domain<V>,
        radius: f64,
    ) -> Result<Self, CellError> {
        let mut all: Vec<V> = points.to_vec();
        all.extend_from_slice(centres);
        let sorted = CallerOrder::new(&all, domain, radius)?;
        let n = points.len();
        Ok(Self::from_visits(centres.len(), |c, push| {
            sorted.for_each_neighbour(n + c, |j, r| {
                if j < n {
                    push(j, r);
                }
            });
        }))
    }

    /// Number of centres.
    pub fn len(&self) -> usize {
        self.offsets.len() - 1
    }

    /// True when there are no centres.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The neighbours of centre `i` with their separations r = x_i − x_j.
    pub fn of(&self, i: usize) -> impl Iterator<Item = (usize, V)> + '_ {
        let range = self.offsets[i]..self.offsets[i + 1];
        self.index[range.clone()]
            .iter()
            .copied()
            .zip(self.separation[range].iter().copied())
    }
}

/// Brute-force lists for small tests (all pairs, no periodicity).
#[cfg(test)]
pub(crate) fn brute_force<V: Vector>(
    centres: &[V],
    points: &[V],
    radius: f64,
    skip_same: bool,
) -> Neighbours<V> {
    Neighbours::from_visits(centres.len(), |i, push| {
        for (j, &p) in points.iter().enumerate() {
            let r = centres[i] - p;
            if r.length() < radius && !(skip_same && i == j) {
                push(j, r);
            }
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    fn lattice(n: usize, dx: f64) -> Vec<DVec2> {
        (0..n * n)
            .map(|k| {
                DVec2::new(
                    (k % n) as f64 * dx + 0.5 * dx,
                    (k / n) as f64 * dx + 0.5 * dx,
                )
            })
            .collect()
    }

    #[test]
    fn cell_list_lists_match_brute_force() {
        let pos = lattice(12, 0.1);
        let domain = Domain::new(DVec2::ZERO, DVec2::splat(1.2), [false; 3]).unwrap();
        let fast = Neighbours::among(&pos, domain, 0.25).unwrap();
        let slow = brute_force(&pos, &pos, 0.25, true);
        for i in 0..pos.len() {
            let mut a: Vec<usize> = fast.of(i).map(|(j, _)| j).collect();
            let mut b: Vec<usize> = slow.of(i).map(|(j, _)| j).collect();
            a.sort();
            b.sort();
            assert_eq!(a, b, "centre {i}");
            for (j, r) in fast.of(i) {
                assert!((r - (pos[i] - pos[j])).length() < 1e-12);
            }
        }
    }

    #[test]
    fn grid_centres_see_only_particles() {
        let pos = lattice(6, 0.2);
        let nodes = vec![DVec2::new(0.6, 0.6), DVec2::new(0.05, 1.15)];
        let domain = Domain::new(DVec2::ZERO, DVec2::splat(1.2), [false; 3]).unwrap();
        let n = Neighbours::of_centres(&nodes, &pos, domain, 0.3).unwrap();
        let slow = brute_force(&nodes, &pos, 0.3, false);
        for c in 0..nodes.len() {
            let mut a: Vec<usize> = n.of(c).map(|(j, _)| j).collect();
            let mut b: Vec<usize> = slow.of(c).map(|(j, _)| j).collect();
            a.sort();
            b.sort();
            assert_eq!(a, b);
        }
    }

    #[test]
    fn periodic_axes_use_the_minimum_image() {
        let pos = vec![DVec2::new(0.05, 0.5), DVec2::new(0.95, 0.5)];
        let domain = Domain::new(DVec2::ZERO, DVec2::ONE, [true, false, false]).unwrap();
        let n = Neighbours::among(&pos, domain, 0.2).unwrap();
        let list: Vec<(usize, DVec2)> = n.of(0).collect();
        assert_eq!(list.len(), 1);
        assert!((list[0].1 - DVec2::new(0.1, 0.0)).length() < 1e-12);
    }

    #[test]
    fn a_centre_on_a_periodic_seam_sees_both_sides() {
        let points = vec![
            DVec2::new(0.05, 0.5),
            DVec2::new(0.95, 0.5),
            DVec2::new(0.5, 0.5),
        ];
        let domain = Domain::new(DVec2::ZERO, DVec2::ONE, [true, false, false]).unwrap();
        let n = Neighbours::of_centres(&[DVec2::new(0.0, 0.5)], &points, domain, 0.2).unwrap();
        let mut list: Vec<(usize, DVec2)> = n.of(0).collect();
        list.sort_by_key(|&(j, _)| j);
        assert_eq!(list.len(), 2);
        assert!((list[0].1 - DVec2::new(-0.05, 0.0)).length() < 1e-12);
        assert!((list[1].1 - DVec2::new(0.05, 0.0)).length() < 1e-12);
    }
}
