//! Particle generation: lattice, walls and corners, phases, perturbation, markers.

use std::path::PathBuf;

use glam::{DVec2, DVec3};
use lamella_case::{Case, generate, load, parse_str};

fn case(name: &str) -> Case {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../cases")
        .join(name);
    load(&path).unwrap_or_else(|err| panic!("{err}"))
}

#[test]
fn channel_lattice_is_cell_centred_and_walls_lie_outside() {
    let c = case("poiseuille.ron");
    let g = generate::<DVec2>(&c);
    let dx = 4.0e-5;
    assert_eq!(g.fluid_count_per_phase(1), vec![30 * 30]);
    assert_eq!(g.wall_count(), 2 * 3 * 30);
    assert_eq!(g.len(), 900 + 180);
    let fluid: Vec<DVec2> = g
        .position
        .iter()
        .zip(&g.is_wall)
        .filter(|(_, w)| !**w)
        .map(|(p, _)| *p)
        .collect();
    let min_x = fluid.iter().map(|p| p.x).fold(f64::MAX, f64::min);
    let max_x = fluid.iter().map(|p| p.x).fold(f64::MIN, f64::max);
    assert!((min_x - 0.5 * dx).abs() < 1e-15 && (max_x - (1.2e-3 - 0.5 * dx)).abs() < 1e-15);
    // Periodic tiling: the gap across the periodic boundary is one spacing.
    assert!((min_x + 1.2e-3 - max_x - dx).abs() < 1e-15);
    for (p, wall) in g.position.iter().zip(&g.is_wall) {
        let inside = p.y > 0.0 && p.y < 1.2e-3;
        assert_eq!(inside, !wall, "{p:?}");
        if *wall {
            assert!(p.y > -3.0 * dx && p.y < 1.2e-3 + 3.0 * dx);
        }
    }
    assert!(
        g.interface_marker.iter().all(|m| !m),
        "one phase has no interface"
    );
    assert!(g.velocity.iter().all(|v| *v == DVec2::ZERO));
}

#[test]
fn cavity_corners_belong_to_the_fixed_side_walls() {
    let c = case("cavity-re100.ron");
    let g = generate::<DVec2>(&c);
    // 40 × 40 fluid; left/right walls span the height plus the top and bottom rows: 3 × 46
    // each; bottom and top span the width: 3 × 40 each.
    assert_eq!(g.fluid_count_per_phase(1), vec![1600]);
    assert_eq!(g.wall_count(), 2 * 3 * 46 + 2 * 3 * 40);
    let mut moving = 0;
    for ((p, v), wall) in g.position.iter().zip(&g.wall_velocity).zip(&g.is_wall) {
        if *wall && *v != DVec2::ZERO {
            moving += 1;
            assert!(
                p.y > 1.0e-3 && p.x > 0.0 && p.x < 1.0e-3,
                "lid particle at {p:?}"
            );
            assert_eq!(*v, DVec2::new(0.1, 0.0));
        }
    }
    assert_eq!(moving, 3 * 40);
    // Every wall site is distinct (corners filled once).
    let mut keys: Vec<(i64, i64)> = g
        .position
        .iter()
        .map(|p| {
            (
                (p.x / 1.25e-5).round() as i64,
                (p.y / 1.25e-5).round() as i64,
            )
        })
        .collect();
    keys.sort();
    keys.dedup();
    assert_eq!(keys.len(), g.len());
}

#[test]
fn layers_fill_by_height_and_mark_the_interface() {
    let c = case("two-layer-channel.ron");
    let g = generate::<DVec2>(&c);
    assert_eq!(g.fluid_count_per_phase(2), vec![20 * 30, 10 * 30]);
    // The two rows either side of y = 0.8 mm are the interface.
    let marked: Vec<f64> = g
        .position
        .iter()
        .zip(&g.interface_marker)
        .filter(|(_, m)| **m)
        .map(|(p, _)| p.y)
        .collect();
    assert_eq!(marked.len(), 2 * 30);
    assert!(marked.iter().all(|y| (y - 0.8e-3).abs() < 4.0e-5));
    // Wall particles take the phase of the fluid beside them.
    for ((p, phase), wall) in g.position.iter().zip(&g.phase).zip(&g.is_wall) {
        if *wall {
            assert_eq!(*phase, if p.y < 0.0 { 0 } else { 1 });
        }
    }
}

#[test]
fn perturbation_displaces_the_interface_along_a_sine() {
    let c = case("two-layer-channel-seeded.ron");
    let g = generate::<DVec2>(&c);
    let (a, lambda, dx) = (6.0e-5, 4.8e-3, 4.0e-5);
    for column in 0..120 {
        let x = (column as f64 + 0.5) * dx;
        let top_syrup = g
            .position
            .iter()
            .zip(&g.phase)
            .zip(&g.is_wall)
            .filter(|((p, phase), wall)| !**wall && **phase == 0 && (p.x - x).abs() < 1e-12)
            .map(|((p, _), _)| p.y)
            .fold(f64::MIN, f64::max);
        let interface = 0.8e-3 + a * (std::f64::consts::TAU * x / lambda).sin();
        // The highest syrup particle sits within one spacing below the displaced interface.
        assert!(
            top_syrup < interface && top_syrup >= interface - dx,
            "column {column}: top syrup {top_syrup}, interface {interface}"
        );
    }
    let counts = g.fluid_count_per_phase(2);
    assert_eq!(counts[0] + counts[1], 120 * 30);
}

#[test]
fn later_regions_override_earlier_ones() {
    let c = case("two-phase-cavity.ron");
    let g = generate::<DVec2>(&c);
    let counts = g.fluid_count_per_phase(2);
    assert_eq!(counts[0] + counts[1], 900);
    assert_eq!(g.uncovered_sites, 0);
    // Syrup: 10 rows of the layer plus the drop of radius 5 spacings (about π·25 ≈ 79 sites).
    let drop = counts[1] - 300;
    assert!((70..=90).contains(&drop), "drop has {drop} particles");
}

#[test]
fn taylor_green_velocity_field() {
    let c = case("taylor-green.ron");
    let g = generate::<DVec2>(&c);
    let k = std::f64::consts::TAU / 1.0e-3;
    let u0 = 5.0e-3;
    assert_eq!(g.len(), 1600);
    let mut divergence_free_sum = DVec2::ZERO;
    for (p, v) in g.position.iter().zip(&g.velocity) {
        let expected = DVec2::new(
            u0 * (k * p.x).sin() * (k * p.y).cos(),
            -u0 * (k * p.x).cos() * (k * p.y).sin(),
        );
        assert!((*v - expected).length() < 1e-15);
        divergence_free_sum += *v;
    }
    // Zero net momentum on a symmetric lattice.
    assert!(divergence_free_sum.length() < 1e-15 * 1600.0);
}

#[test]
fn three_dimensional_box_with_all_walls_fills_edges_and_corners_once() {
    let text = r#"(
        dimension: 3,
        domain: (lower: [0.0, 0.0, 0.0], upper: [1.0, 1.0, 1.0]),
        particles: (spacing: 0.1),
        phases: [(name: "water", density: 1000.0, viscosity_law: Newtonian(viscosity: 1.0e-3))],
        regions: [Fill(phase: "water")],
        walls: [(side: Left), (side: Right), (side: Bottom), (side: Top), (side: Back), (side: Front)],
        scales: (expected_max_speed: 0.1),
        time: (end: 1.0, snapshot_interval: 0.1),
    )"#;
    let c = parse_str(text, "box").unwrap();
    let g = generate::<DVec3>(&c);
    // Walls fill the shell between the 10³ domain and the 16³ box around it.
    assert_eq!(g.fluid_count_per_phase(1), vec![1000]);
    assert_eq!(g.wall_count(), 16 * 16 * 16 - 1000);
    let mut keys: Vec<(i64, i64, i64)> = g
        .position
        .iter()
        .map(|p| {
            (
                (p.x * 20.0).round() as i64,
                (p.y * 20.0).round() as i64,
                (p.z * 20.0).round() as i64,
            )
        })
        .collect();
    keys.sort();
    keys.dedup();
    assert_eq!(keys.len(), g.len());
}
