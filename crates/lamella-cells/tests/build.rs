//! The build: same result whatever the thread count, clear errors for bad particles, and the
//! memory the structure holds.

use glam::{DVec2, DVec3};
use lamella_cells::{CellError, CellList, Domain, apply_permutation};

/// A square jittered lattice at spacing 1 (xorshift jitter of ±0.25), `side²` particles,
/// listed in a scrambled order so that the sort has work to do.
fn scrambled_lattice(side: usize) -> Vec<DVec2> {
    let mut state = 0x853c_49e6_748f_ea9bu64;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let mut points: Vec<DVec2> = (0..side * side)
        .map(|k| {
            let (i, j) = ((k % side) as f64, (k / side) as f64);
            let jx = (next() >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            let jy = (next() >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            DVec2::new(i + 0.5 + 0.5 * jx, j + 0.5 + 0.5 * jy)
        })
        .collect();
    for k in (1..points.len()).rev() {
        points.swap(k, (next() % (k as u64 + 1)) as usize);
    }
    points
}

fn in_pool<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
        .install(f)
}

/// Permutation and full visit order (sorted indices, displacements) built in a pool.
fn build_and_visit(threads: usize) -> (Vec<u32>, Vec<(usize, usize, DVec2)>) {
    let raw = scrambled_lattice(250);
    in_pool(threads, || {
        let domain = Domain::new(DVec2::ZERO, DVec2::splat(250.0), [true, false, false]).unwrap();
        let mut list = CellList::new(domain, 2.6).unwrap();
        list.rebuild(&raw).unwrap();
        let perm = list.permutation().to_vec();
        let mut x = raw.clone();
        apply_permutation(&perm, &mut x, &mut Vec::new());
        let mut visits = Vec::new();
        for i in 0..x.len() {
            list.for_each_neighbour(&x, i, |j, r, _| visits.push((i, j, r)));
        }
        (perm, visits)
    })
}

#[test]
fn result_does_not_depend_on_the_thread_count() {
    let reference = build_and_visit(1);
    assert!(reference.1.len() > 62_500 * 20);
    for threads in [2, 3, 4] {
        assert_eq!(build_and_visit(threads), reference, "{threads} threads");
    }
}

#[test]
fn sorted_order_is_by_cell_then_by_index() {
    let raw = scrambled_lattice(200);
    let domain = Domain::new(DVec2::ZERO, DVec2::splat(200.0), [false; 3]).unwrap();
    let mut list = CellList::new(domain, 2.6).unwrap();
    in_pool(2, || list.rebuild(&raw)).unwrap();
    let dims = list.cells_per_axis();
    let width = 200.0 / dims[0] as f64;
    let cell = |p: DVec2| {
        let c = |v: f64| ((v / width) as usize).min(dims[0] - 1);
        c(p.x) + dims[0] * c(p.y)
    };
    let key: Vec<(usize, u32)> = list
        .permutation()
        .iter()
        .map(|&old| (cell(raw[old as usize]), old))
        .collect();
    assert!(key.windows(2).all(|w| w[0] < w[1]));
}

#[test]
fn the_first_bad_particle_is_reported_even_in_a_parallel_build() {
    let mut raw = scrambled_lattice(250);
    let domain = Domain::new(DVec2::ZERO, DVec2::splat(250.0), [false; 3]).unwrap();
    let mut list = CellList::new(domain, 2.6).unwrap();
    raw[50_000] = DVec2::new(f64::NAN, 1.0);
    raw[30_001] = DVec2::new(3.0, 250.5);
    let error = in_pool(2, || list.rebuild(&raw)).unwrap_err();
    assert_eq!(
        error,
        CellError::OutsideDomain {
            index: 30_001,
            position: vec![3.0, 250.5]
        }
    );
    let message = error.to_string();
    assert!(
        message.contains("particle 30001") && message.contains("250.5"),
        "{message}"
    );
    assert!(message.contains("enlarge the domain"), "{message}");
    assert!(list.is_empty(), "a failed rebuild leaves the list empty");
    raw[30_001] = DVec2::new(3.0, 250.0);
    assert_eq!(
        in_pool(2, || list.rebuild(&raw)),
        Err(CellError::NonFinite { index: 50_000 })
    );
    raw[50_000] = DVec2::new(0.0, 0.0);
    assert!(list.rebuild(&raw).is_ok());
}

#[test]
fn bad_settings_are_refused_with_the_reason() {
    let domain = Domain::new(DVec3::ZERO, DVec3::ONE, [false, false, true]).unwrap();
    assert_eq!(
        CellList::new(domain, 0.6).unwrap_err(),
        CellError::PeriodicTooShort {
            axis: 2,
            extent: 1.0,
            radius: 0.6
        }
    );
    assert!(matches!(
        CellList::new(domain, -1.0),
        Err(CellError::InvalidRadius { .. })
    ));
    assert!(matches!(
        CellList::new(domain, f64::NAN),
        Err(CellError::InvalidRadius { .. })
    ));
    assert!(matches!(
        CellList::new(domain, 1e-4),
        Err(CellError::TooManyCells { .. })
    ));
    let mut inverted = domain;
    inverted.upper.x = -1.0;
    assert!(matches!(
        CellList::new(inverted, 0.1),
        Err(CellError::InvalidDomain { axis: 0, .. })
    ));
}

/// Memory overhead beyond the positions, measured as the heap bytes the structure holds
/// (capacity × element size of every buffer) after a rebuild, on the benchmark's cloud
/// (2D lattice, h = 1.3 dx, radius 2h) in pools of 1, 2 and 4 threads (the build keeps one
/// cell histogram per thread, at most 4).
#[test]
fn memory_overhead_is_at_most_16_bytes_per_particle() {
    let raw = scrambled_lattice(316);
    for threads in [1, 2, 4] {
        let domain = Domain::new(DVec2::ZERO, DVec2::splat(316.0), [true, false, false]).unwrap();
        let mut list = CellList::new(domain, 2.6).unwrap();
        in_pool(threads, || list.rebuild(&raw)).unwrap();
        in_pool(threads, || list.rebuild(&raw)).unwrap();
        let per_particle = list.heap_bytes() as f64 / raw.len() as f64;
        assert!(
            per_particle <= 16.0,
            "{per_particle} B/particle with {threads} threads"
        );
        assert!(per_particle >= 8.0, "counts the two per-particle arrays");
    }
}
