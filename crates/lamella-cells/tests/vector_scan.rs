//! The AVX-512 candidate test against the portable one where their arithmetic could part:
//! pairs exactly at the radius, displacements of exactly half a period across a periodic
//! seam (where rounding half away from zero decides the image), coordinates several periods
//! outside the box, random clouds at the density of SPH, cells too crowded for one pass of the vector test, and clouds shorter
//! than one vector. Each visit (index, displacement, distance) must agree bit for bit.
//! On a processor without AVX-512 both lists use the portable test; the test says so.

use glam::{DVec2, DVec3};
use lamella_cells::{CellList, Domain, Vector, apply_permutation};

/// Builds a list over `domain`, reorders `points`, and compares every particle's visits
/// between the vector and the portable candidate test. Returns the number of visits.
fn compare<V: Vector>(domain: Domain<V>, radius: f64, points: &[V]) -> usize {
    let mut list = CellList::new(domain, radius).unwrap();
    list.rebuild(points).unwrap();
    let mut sorted = points.to_vec();
    apply_permutation(list.permutation(), &mut sorted, &mut Vec::new());
    let mut portable = list.clone();
    portable.use_portable_scan();
    assert!(!portable.uses_vector_scan());
    if !list.uses_vector_scan() {
        eprintln!("no AVX-512 on this processor: only the portable test runs");
    }
    let visits = |list: &CellList<V>, k: usize| {
        let mut seen = Vec::new();
        list.for_each_neighbour(&sorted, k, |j, r, d| {
            let bits: Vec<u64> = (0..V::DIM).map(|a| r.get(a).to_bits()).collect();
            seen.push((j, bits, d.to_bits()));
        });
        seen
    };
    let mut total = 0;
    for (k, x) in sorted.iter().enumerate() {
        let vector = visits(&list, k);
        assert_eq!(vector, visits(&portable, k), "particle {k} at {x:?}");
        total += vector.len();
    }
    total
}

#[test]
fn lattice_pairs_exactly_at_the_radius_agree() {
    // Spacing 0.25 and radius 0.5: the second neighbours along each axis are exactly at the
    // radius and must be left out by both tests (strictly closer than the radius).
    let points: Vec<DVec2> = (0..400)
        .map(|k| DVec2::new((k % 20) as f64 * 0.25, (k / 20) as f64 * 0.25))
        .collect();
    let domain = Domain::new(DVec2::ZERO, DVec2::splat(5.0), [false; 3]).unwrap();
    let visits = compare(domain, 0.5, &points);
    // Interior lattice points have 8 neighbours strictly inside 0.5 (distances 0.25, 0.354).
    assert!(visits > 0 && visits < 400 * 9);
}

#[test]
fn half_period_displacements_across_the_seam_agree() {
    // Period 4, radius 2: the periodic axes are exactly twice the radius (one cell each, 34
    // particles, so the vector test takes the whole cell), pairs 2 apart (d/L = ±1/2) sit at
    // the radius on either image, and pairs 3 apart are neighbours through the seam.
    let domain = Domain::new(DVec2::ZERO, DVec2::new(4.0, 4.0), [true, true, false]).unwrap();
    let mut points: Vec<DVec2> = (0..32)
        .map(|k| DVec2::new((k % 8) as f64 * 0.5, (k / 8) as f64 * 0.5))
        .collect();
    // Unwrapped copies several periods away (positions that moved without being wrapped),
    // shifted by a hair so they are not duplicates.
    points.push(DVec2::new(-8.0 + 1e-9, 12.0));
    points.push(DVec2::new(10.0, -6.0 - 1e-9));
    assert!(compare(domain, 2.0, &points) > 0);
}

/// A uniform random number in [0, 1) (xorshift; fixed seeds keep the tests reproducible).
fn uniform(state: &mut u64) -> f64 {
    *state ^= *state << 13;
    *state ^= *state >> 7;
    *state ^= *state << 17;
    (*state >> 11) as f64 / (1u64 << 53) as f64
}

#[test]
fn random_clouds_agree_in_2d_and_3d() {
    // About 20 neighbours per particle (the SPH density), periodic and bounded axes mixed:
    // the squared distances of random coordinates round differently under any change in the
    // order or fusing of operations, which shows in the distances' bits.
    let mut state = 0x9e37_79b9_7f4a_7c15u64;
    let side = 40.0;
    let domain = Domain::new(DVec2::ZERO, DVec2::splat(side), [true, false, false]).unwrap();
    let points: Vec<DVec2> = (0..1600)
        .map(|_| DVec2::new(uniform(&mut state), uniform(&mut state)) * side)
        .collect();
    assert!(compare(domain, 2.6, &points) > 1600 * 10);
    let side = 12.0;
    let domain = Domain::new(DVec3::ZERO, DVec3::splat(side), [false, true, true]).unwrap();
    let points: Vec<DVec3> = (0..1728)
        .map(|_| {
            DVec3::new(
                uniform(&mut state),
                uniform(&mut state),
                uniform(&mut state),
            ) * side
        })
        .collect();
    assert!(compare(domain, 1.7, &points) > 1728 * 10);
}

#[test]
fn crowded_cells_and_short_clouds_agree_in_3d() {
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let domain = Domain::new(DVec3::ZERO, DVec3::splat(3.0), [true, false, true]).unwrap();
    // 300 particles in one corner cell: far more candidates than one vector pass keeps.
    let crowded: Vec<DVec3> = (0..300)
        .map(|_| {
            DVec3::new(
                uniform(&mut state),
                uniform(&mut state),
                uniform(&mut state),
            ) * 0.9
        })
        .collect();
    assert!(compare(domain, 1.0, &crowded) > 300 * 200);
    // The crowded cell last in the stencil order (upper corner) behind cells of ordinary
    // density: queries keep neighbours from the first ranges with the vector test, then
    // finish the portable way.
    let mut mixed: Vec<DVec3> = (0..250)
        .map(|_| {
            DVec3::new(
                uniform(&mut state),
                uniform(&mut state),
                uniform(&mut state),
            ) * 0.8
                + DVec3::splat(2.1)
        })
        .collect();
    mixed.extend((0..300).map(|_| {
        DVec3::new(
            uniform(&mut state),
            uniform(&mut state),
            uniform(&mut state),
        ) * 3.0
    }));
    compare(domain, 1.0, &mixed);
    // Fewer particles than one vector: the loads at the end of the array are masked.
    for n in 1..10 {
        let few: Vec<DVec3> = (0..n)
            .map(|_| {
                DVec3::new(
                    uniform(&mut state),
                    uniform(&mut state),
                    uniform(&mut state),
                ) * 3.0
            })
            .collect();
        compare(domain, 1.0, &few);
    }
}
