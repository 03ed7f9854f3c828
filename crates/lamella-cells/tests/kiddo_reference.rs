//! Cross-check against an outside reference: the general-purpose `kiddo` k-d tree
//! (fixed-radius, exclusive-boundary queries) on random non-periodic clouds, in 2D and 3D,
//! including one large enough for the parallel build path.

use glam::{DVec2, DVec3};
use kiddo::{ImmutableKdTree, SquaredEuclidean};
use lamella_cells::{CellList, Domain, Vector, apply_permutation};
use proptest::prelude::*;

/// Neighbour sets (original indices, sorted) of every particle according to kiddo.
fn kiddo_neighbours<const K: usize>(points: &[[f64; K]], radius: f64) -> Vec<Vec<usize>> {
    let tree = ImmutableKdTree::<f64, K>::new_from_slice(points).unwrap();
    points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let mut found: Vec<usize> = Vec::new();
            tree.query(p)
                .within::<SquaredEuclidean<f64>>(radius * radius)
                .unsorted()
                .exclusive_boundaries()
                .visit(|item| found.push(item.item as usize));
            found.retain(|&j| j != i);
            found.sort_unstable();
            found
        })
        .collect()
}

/// Neighbour sets (original indices, sorted) of every particle according to the cell list.
fn cell_neighbours<V: Vector>(positions: &[V], lower: V, upper: V, radius: f64) -> Vec<Vec<usize>> {
    let domain = Domain::new(lower, upper, [false; 3]).unwrap();
    let mut list = CellList::new(domain, radius).unwrap();
    list.rebuild(positions).unwrap();
    let perm = list.permutation().to_vec();
    let mut sorted = positions.to_vec();
    apply_permutation(&perm, &mut sorted, &mut Vec::new());
    let mut result = vec![Vec::new(); positions.len()];
    for (k, &old) in perm.iter().enumerate() {
        let mut found = Vec::new();
        list.for_each_neighbour(&sorted, k, |j, _, _| found.push(perm[j] as usize));
        found.sort_unstable();
        result[old as usize] = found;
    }
    result
}

fn unit_cloud<const K: usize>(max: usize) -> impl Strategy<Value = Vec<[f64; K]>> {
    prop::collection::vec(prop::array::uniform(0.0..1.0f64), 0..max)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn agrees_with_kiddo_in_2d(points in unit_cloud::<2>(400), radius in 0.02..0.6f64) {
        let positions: Vec<DVec2> = points.iter().map(|&p| DVec2::from_array(p)).collect();
        prop_assert_eq!(
            cell_neighbours(&positions, DVec2::ZERO, DVec2::ONE, radius),
            kiddo_neighbours(&points, radius)
        );
    }

    #[test]
    fn agrees_with_kiddo_in_3d(points in unit_cloud::<3>(400), radius in 0.05..0.6f64) {
        let positions: Vec<DVec3> = points.iter().map(|&p| DVec3::from_array(p)).collect();
        prop_assert_eq!(
            cell_neighbours(&positions, DVec3::ZERO, DVec3::ONE, radius),
            kiddo_neighbours(&points, radius)
        );
    }
}

/// A jittered lattice large enough that the build runs in parallel blocks.
#[test]
fn agrees_with_kiddo_on_a_large_jittered_lattice() {
    let side = 230;
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let mut jitter = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    };
    let points: Vec<[f64; 2]> = (0..side * side)
        .map(|k| {
            let (i, j) = ((k % side) as f64, (k / side) as f64);
            [i + 0.5 + 0.3 * jitter(), j + 0.5 + 0.3 * jitter()]
        })
        .collect();
    let positions: Vec<DVec2> = points.iter().map(|&p| DVec2::from_array(p)).collect();
    let radius = 2.6;
    let upper = DVec2::splat(side as f64);
    assert_eq!(
        cell_neighbours(&positions, DVec2::ZERO, upper, radius),
        kiddo_neighbours(&points, radius)
    );
}
