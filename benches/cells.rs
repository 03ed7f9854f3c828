//! Neighbour search speed: the `lamella-cells` cell list against the `kiddo` k-d tree.
//!
//! 2D jittered lattices of 1e4, 1e5 and 1e6 particles at spacing dx = 1 with h = 1.3 dx and
//! search radius (kernel support) 2h, about 21 neighbours each. One iteration = build the
//! structure + visit every neighbour pair of every particle, accumulating the pair count and
//! the sum of distances (the same work for both; kiddo with its fastest query, an unsorted
//! visitor, and with its default one, a sorted vector per particle). Positions are in cell
//! order, as the solver keeps them after its first rebuild. Single thread and all cores
//! (rayon pools); on a processor with AVX-512 the portable candidate test is timed too
//! (single thread). Then a 3D channel cloud (46³ particles, periodic in x and z, about 74
//! neighbours each), both candidate tests, single thread.
//!
//! Run: `cargo bench --bench cells`.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, Throughput, criterion_group, criterion_main};
use glam::{DVec2, DVec3};
use kiddo::{ImmutableKdTree, SquaredEuclidean};
use lamella_cells::{CellList, Domain, Vector, apply_permutation};
use rayon::prelude::*;

const SPACING: f64 = 1.0;
const SMOOTHING_LENGTH: f64 = 1.3 * SPACING;
const RADIUS: f64 = 2.0 * SMOOTHING_LENGTH;

/// A jittered lattice of `side` particles per axis in `V`'s dimension, x fastest (xorshift
/// jitter of ±0.25 dx on every coordinate), and the upper corner of its box.
fn lattice<V: Vector>(side: usize) -> (Vec<V>, V) {
    let mut state = 0x9e37_79b9_7f4a_7c15u64;
    let mut jitter = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 0.5 * SPACING
    };
    let points = (0..side.pow(V::DIM as u32))
        .map(|k| {
            V::from_fn(|axis| {
                let index = (k / side.pow(axis as u32)) % side;
                (index as f64 + 0.5) * SPACING + jitter()
            })
        })
        .collect();
    (points, V::from_fn(|_| side as f64 * SPACING))
}

/// Build + all-neighbour visit with the cell list; returns (pairs, sum of distances).
fn cells_pass<V: Vector>(list: &mut CellList<V>, positions: &[V]) -> (u64, f64) {
    list.rebuild(positions).unwrap();
    let list = &*list;
    (0..positions.len())
        .into_par_iter()
        .map(|i| {
            let (mut count, mut sum) = (0u64, 0.0);
            list.for_each_neighbour(positions, i, |_, _, d| {
                count += 1;
                sum += d;
            });
            (count, sum)
        })
        .reduce(|| (0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1))
}

/// Build + all-neighbour visit with kiddo (fixed-radius, unsorted, exclusive boundary).
fn kiddo_pass(points: &[[f64; 2]], parallel_build: bool) -> (u64, f64) {
    let tree = if parallel_build {
        ImmutableKdTree::<f64, 2>::new_from_slice_parallel(points).unwrap()
    } else {
        ImmutableKdTree::<f64, 2>::new_from_slice(points).unwrap()
    };
    points
        .par_iter()
        .enumerate()
        .map(|(i, p)| {
            let (mut count, mut sum) = (0u64, 0.0);
            tree.query(p)
                .within::<SquaredEuclidean<f64>>(RADIUS * RADIUS)
                .unsorted()
                .exclusive_boundaries()
                .visit(|item| {
                    if item.item as usize != i {
                        count += 1;
                        sum += item.distance.sqrt();
                    }
                });
            (count, sum)
        })
        .reduce(|| (0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1))
}

/// Build + all-neighbour visit with kiddo's default fixed-radius query: a vector of the
/// neighbours sorted by distance per particle (exclusive boundary).
fn kiddo_sorted_pass(points: &[[f64; 2]]) -> (u64, f64) {
    let tree = ImmutableKdTree::<f64, 2>::new_from_slice(points).unwrap();
    points
        .par_iter()
        .enumerate()
        .map(|(i, p)| {
            let (mut count, mut sum) = (0u64, 0.0);
            let found = tree
                .query(p)
                .within::<SquaredEuclidean<f64>>(RADIUS * RADIUS)
                .exclusive_boundaries()
                .execute();
            for item in found.iter().filter(|item| item.item as usize != i) {
                count += 1;
                sum += item.distance.sqrt();
            }
            (count, sum)
        })
        .reduce(|| (0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1))
}

fn neighbour_search(c: &mut Criterion) {
    let all_cores = rayon::current_num_threads();
    let pools: Vec<(String, rayon::ThreadPool)> = [1, all_cores]
        .iter()
        .map(|&threads| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            (format!("{threads}t"), pool)
        })
        .collect();
    for n in [10_000usize, 100_000, 1_000_000] {
        let (raw, upper) = lattice::<DVec2>((n as f64).sqrt().round() as usize);
        let domain = Domain::new(DVec2::ZERO, upper, [false; 3]).unwrap();
        let mut list = CellList::new(domain, RADIUS).unwrap();
        list.rebuild(&raw).unwrap();
        let mut positions = raw.clone();
        apply_permutation(list.permutation(), &mut positions, &mut Vec::new());
        let points: Vec<[f64; 2]> = positions.iter().map(|p| p.to_array()).collect();
        let (mut cells_result, kiddo_result) = (
            cells_pass(&mut list.clone(), &positions),
            kiddo_pass(&points, false),
        );
        assert_eq!(cells_result.0, kiddo_result.0, "same pairs found");
        assert_eq!(
            cells_result.0,
            kiddo_sorted_pass(&points).0,
            "same pairs found"
        );
        let count = raw.len();
        let pairs = cells_result.0;
        println!(
            "n = {count}: {pairs} neighbour pairs visited, {:.2} per particle; cell list {} B/particle",
            pairs as f64 / count as f64,
            list.heap_bytes() as f64 / count as f64
        );
        let mut group = c.benchmark_group(format!("neighbours_2d_n{count}"));
        group
            .sample_size(10)
            .warm_up_time(Duration::from_millis(500))
            .measurement_time(Duration::from_secs(if n >= 1_000_000 { 8 } else { 2 }))
            .throughput(Throughput::Elements(pairs));
        for (threads, pool) in &pools {
            let mut timed = list.clone();
            group.bench_function(BenchmarkId::new("cells", threads), |b| {
                b.iter(|| {
                    pool.install(|| cells_result = cells_pass(&mut timed, black_box(&positions)))
                })
            });
            if threads == "1t" && list.uses_vector_scan() {
                // The same list with the portable candidate test (what a processor without
                // AVX-512 runs).
                let mut portable = list.clone();
                portable.use_portable_scan();
                group.bench_function(BenchmarkId::new("cells_portable", threads), |b| {
                    b.iter(|| {
                        pool.install(|| {
                            cells_result = cells_pass(&mut portable, black_box(&positions))
                        })
                    })
                });
            }
            group.bench_function(BenchmarkId::new("kiddo", threads), |b| {
                b.iter(|| {
                    pool.install(|| black_box(kiddo_pass(black_box(&points), threads != "1t")))
                })
            });
            if threads == "1t" {
                group.bench_function(BenchmarkId::new("kiddo_sorted", threads), |b| {
                    b.iter(|| pool.install(|| black_box(kiddo_sorted_pass(black_box(&points)))))
                });
            }
        }
        black_box(cells_result);
        group.finish();
    }
}

/// 3D: a jittered cubic lattice of 46³ particles, periodic in x and z (a channel), the same
/// h and radius (about 73 neighbours each); the AVX-512 and the portable candidate test on
/// one thread (no kiddo: the comparison is 2D).
fn neighbour_search_3d(c: &mut Criterion) {
    let (points, extent) = lattice::<DVec3>(46);
    let domain = Domain::new(DVec3::ZERO, extent, [true, false, true]).unwrap();
    let mut list = CellList::new(domain, RADIUS).unwrap();
    list.rebuild(&points).unwrap();
    let mut positions = points.clone();
    apply_permutation(list.permutation(), &mut positions, &mut Vec::new());
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let pairs = pool.install(|| cells_pass(&mut list.clone(), &positions)).0;
    println!(
        "3D n = {}: {pairs} neighbour pairs visited, {:.2} per particle",
        positions.len(),
        pairs as f64 / positions.len() as f64
    );
    let mut group = c.benchmark_group(format!("neighbours_3d_n{}", positions.len()));
    group
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(3))
        .throughput(Throughput::Elements(pairs));
    let mut portable = list.clone();
    portable.use_portable_scan();
    for (name, list) in [("cells", list), ("cells_portable", portable)] {
        if name == "cells" && !list.uses_vector_scan() {
            continue;
        }
        let mut list = list;
        group.bench_function(BenchmarkId::new(name, "1t"), |b| {
            b.iter(|| pool.install(|| black_box(cells_pass(&mut list, black_box(&positions)))))
        });
    }
    group.finish();
}

criterion_group!(benches, neighbour_search, neighbour_search_3d);
criterion_main!(benches);
