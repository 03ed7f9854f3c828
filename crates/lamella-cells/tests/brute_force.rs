//! Property tests: the cell list finds exactly the neighbours an O(N²) brute-force search finds,
//! with the same minimum-image displacements, on random clouds with periodic and non-periodic
//! axes and the awkward cases (boundaries, one crowded cell, empty lists, one-cell-wide axes);
//! and the AVX-512 candidate test gives the portable test's visits bit for bit.

use glam::{DVec2, DVec3};
use lamella_cells::{CellList, Domain, Vector, apply_permutation};
use proptest::prelude::*;

/// Where one coordinate of a particle sits, relative to the grid.
#[derive(Debug, Clone)]
enum Place {
    /// Anywhere in the box (fraction of the extent).
    Inside(f64),
    /// Exactly on the boundary between cells `k - 1` and `k` (`k` taken modulo the cell count).
    CellBoundary(usize),
    /// Exactly on the lower face.
    Lower,
    /// Exactly on the upper face.
    Upper,
    /// Near the first cell corner (crowding many particles in one cell).
    Crowded(f64),
    /// Outside the box (used on periodic axes only): fraction in [-2, 3].
    Unwrapped(f64),
}

fn place() -> impl Strategy<Value = Place> {
    prop_oneof![
        4 => (0.0..1.0f64).prop_map(Place::Inside),
        1 => (0usize..8).prop_map(Place::CellBoundary),
        1 => Just(Place::Lower),
        1 => Just(Place::Upper),
        1 => (0.0..1e-3f64).prop_map(Place::Crowded),
        1 => (-2.0..3.0f64).prop_map(Place::Unwrapped),
    ]
}

#[derive(Debug, Clone)]
struct Cloud {
    /// Extent of each axis in units of the radius (0.5 gives a one-cell-wide axis).
    extents: [f64; 3],
    periodic: [bool; 3],
    lower: [f64; 3],
    radius: f64,
    places: Vec<[Place; 3]>,
}

fn extent_for(periodic: bool) -> BoxedStrategy<f64> {
    if periodic {
        // At least twice the radius (a hair more, so that rounding of lower + extent cannot
        // make it shorter); this gives one cell, 2..3 two cells.
        prop_oneof![Just(2.0 + 1e-12), 2.001..3.0f64, 3.0..9.0f64].boxed()
    } else {
        prop_oneof![0.3..1.0f64, 1.0..9.0f64].boxed()
    }
}

fn cloud(max_particles: usize) -> impl Strategy<Value = Cloud> {
    (
        prop::array::uniform3(any::<bool>()),
        prop::array::uniform3(-5.0..5.0f64),
        0.05..2.0f64,
    )
        .prop_flat_map(move |(periodic, lower, radius)| {
            (
                (
                    extent_for(periodic[0]),
                    extent_for(periodic[1]),
                    extent_for(periodic[2]),
                ),
                prop::collection::vec(prop::array::uniform3(place()), 0..max_particles),
            )
                .prop_map(move |((ex, ey, ez), places)| Cloud {
                    extents: [ex, ey, ez],
                    periodic,
                    lower,
                    radius,
                    places,
                })
        })
}

/// Builds the domain and positions of a cloud in `V`'s dimension.
fn realise<V: Vector>(c: &Cloud) -> (CellList<V>, Vec<V>) {
    let lower = V::from_fn(|a| c.lower[a]);
    let upper = V::from_fn(|a| c.lower[a] + c.extents[a] * c.radius);
    let domain = Domain::new(lower, upper, c.periodic).unwrap();
    let list = CellList::new(domain, c.radius).unwrap();
    let cells = list.cells_per_axis();
    let positions = c
        .places
        .iter()
        .map(|p| {
            V::from_fn(|a| {
                let (lo, up) = (lower.get(a), upper.get(a));
                let extent = up - lo;
                match p[a] {
                    Place::Inside(f) => lo + f * extent,
                    Place::CellBoundary(k) => {
                        let k = k % cells[a];
                        lo + extent * k as f64 / cells[a] as f64
                    }
                    Place::Lower => lo,
                    Place::Upper => up,
                    Place::Crowded(f) => lo + f * extent,
                    Place::Unwrapped(f) if c.periodic[a] => lo + f * extent,
                    Place::Unwrapped(f) => lo + f.clamp(0.0, 1.0) * extent,
                }
            })
        })
        .collect();
    (list, positions)
}

/// Every (j, r_ij) with j != i and |r_ij| < radius, by brute force over all pairs, sorted by j.
fn brute_force<V: Vector>(domain: &Domain<V>, radius: f64, x: &[V], i: usize) -> Vec<(usize, V)> {
    (0..x.len())
        .filter(|&j| j != i)
        .map(|j| (j, domain.minimum_image(x[i] - x[j])))
        .filter(|(_, r)| r.length_squared() < radius * radius)
        .collect()
}

/// Every visit of a query for particle `k`: index, then the bits of `r_ij` and `|r_ij|`.
fn visits<V: Vector>(list: &CellList<V>, positions: &[V], k: usize) -> Vec<(usize, Vec<u64>)> {
    let mut seen = Vec::new();
    list.for_each_neighbour(positions, k, |j, r, d| {
        let mut bits: Vec<u64> = (0..V::DIM).map(|a| r.get(a).to_bits()).collect();
        bits.push(d.to_bits());
        seen.push((j, bits));
    });
    seen
}

/// Checks the cell list against brute force, in original indices, for every particle.
fn check<V: Vector>(c: &Cloud) -> Result<(), TestCaseError> {
    let (mut list, positions) = realise::<V>(c);
    list.rebuild(&positions).unwrap();
    let perm = list.permutation().to_vec();
    let mut seen = perm.clone();
    seen.sort_unstable();
    prop_assert_eq!(seen, (0..positions.len() as u32).collect::<Vec<_>>());
    let mut sorted = positions.clone();
    apply_permutation(&perm, &mut sorted, &mut Vec::new());
    let mut pair_count = 0;
    for k in 0..sorted.len() {
        let mut found = Vec::new();
        list.for_each_neighbour(&sorted, k, |j, r, d| {
            assert!((d - r.length()).abs() <= 1e-12 * d.max(1.0));
            found.push((perm[j] as usize, r));
        });
        found.sort_by_key(|&(j, _)| j);
        let expected = brute_force(list.domain(), c.radius, &positions, perm[k] as usize);
        prop_assert_eq!(&found, &expected, "particle {} (sorted {})", perm[k], k);
        let mut above = 0;
        list.for_each_neighbour_above(&sorted, k, |j, _, _| {
            assert!(j > k);
            above += 1;
        });
        pair_count += above;
        prop_assert_eq!(
            above,
            found
                .iter()
                .filter(|&&(j, _)| {
                    let sorted_j = perm.iter().position(|&p| p as usize == j).unwrap();
                    sorted_j > k
                })
                .count()
        );
    }
    // The AVX-512 candidate test (where this processor has it) against the portable one:
    // the same visits in the same order, bit for bit.
    let mut portable = list.clone();
    portable.use_portable_scan();
    for k in 0..sorted.len() {
        prop_assert_eq!(visits(&list, &sorted, k), visits(&portable, &sorted, k));
    }
    let mut pairs = 0;
    list.for_each_pair(&sorted, |i, j, _, _| {
        assert!(i < j);
        pairs += 1;
    });
    prop_assert_eq!(pairs, pair_count);
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn matches_brute_force_in_2d(c in cloud(120)) {
        check::<DVec2>(&c)?;
    }

    #[test]
    fn matches_brute_force_in_3d(c in cloud(120)) {
        check::<DVec3>(&c)?;
    }
}

#[test]
fn no_particles_and_one_particle() {
    let domain = Domain::new(DVec2::ZERO, DVec2::ONE, [true, false, false]).unwrap();
    let mut list = CellList::new(domain, 0.1).unwrap();
    list.rebuild(&[]).unwrap();
    assert!(list.is_empty() && list.permutation().is_empty());
    let one = [DVec2::new(0.5, 0.5)];
    list.rebuild(&one).unwrap();
    assert_eq!(list.permutation(), &[0]);
    list.for_each_neighbour(&one, 0, |_, _, _| {
        panic!("a lone particle has no neighbour")
    });
}

#[test]
fn periodic_neighbour_across_the_seam_is_found_once_with_the_short_displacement() {
    // Two cells on the periodic axis: both stencil offsets -1 and +1 name the same cell.
    let domain = Domain::new(DVec2::ZERO, DVec2::new(2.5, 1.0), [true, false, false]).unwrap();
    let mut list = CellList::new(domain, 1.0).unwrap();
    assert_eq!(list.cells_per_axis()[0], 2);
    let x = [DVec2::new(0.1, 0.5), DVec2::new(2.4, 0.5)];
    list.rebuild(&x).unwrap();
    let mut found = Vec::new();
    list.for_each_neighbour(&x, 0, |j, r, d| found.push((j, r, d)));
    assert_eq!(found.len(), 1);
    let (j, r, d) = found[0];
    assert_eq!(j, 1);
    assert!((r.x - 0.2).abs() < 1e-12 && r.y == 0.0 && (d - 0.2).abs() < 1e-12);
}
