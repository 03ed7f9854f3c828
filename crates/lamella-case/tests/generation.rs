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
fn cavity_corners_belong_to_the_fixed_side_walls_and_the_lid_rests_next_to_them() {
    let c = case("cavity-re100.ron");
    let g = generate::<DVec2>(&c);
    // 40 × 40 fluid; left/right walls span the height plus the top and bottom rows: 3 × 46
    // each; bottom and top span the width: 3 × 40 each.
    assert_eq!(g.fluid_count_per_phase(1), vec![1600]);
    assert_eq!(g.wall_count(), 2 * 3 * 46 + 2 * 3 * 40);
    // The lid moves except within one kernel support (2.6 spacings) of the side walls' first
    // particle rows (at x = −dx/2 and L + dx/2): there its particles are at rest, two columns
    // at each end.
    let (dx, support) = (2.5e-5, c.support_radius());
    let mut moving = 0;
    for ((p, v), wall) in g.position.iter().zip(&g.wall_velocity).zip(&g.is_wall) {
        let to_side_rows = (p.x + 0.5 * dx).min(1.0e-3 + 0.5 * dx - p.x);
        let lid = *wall && p.y > 1.0e-3 && p.x > 0.0 && p.x < 1.0e-3;
        if *wall && *v != DVec2::ZERO {
            moving += 1;
            assert!(
                lid && to_side_rows > support,
                "moving wall particle at {p:?}"
            );
            assert_eq!(*v, DVec2::new(0.1, 0.0));
        } else if lid {
            assert!(to_side_rows < support, "resting lid particle at {p:?}");
        }
    }
    assert_eq!(moving, 3 * (40 - 2 * 2));
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
fn the_seed_moves_particles_not_phases_by_a_fraction_of_a_spacing() {
    // The seeded case: syrup (phase 0) below y0 = 0.8 mm, water above, walls at 0 and 1.2 mm,
    // A = 8e-6 m (a fifth of a spacing), λ = 4.8 mm. The seed carries each site (x0, y) along
    // w = ((A/k) cos(k x0) f'(y), A sin(k x0) f(y)) for unit time, f = (1 − cos(π s))/2 rising
    // from the wall (s = distance from the wall over its distance to y0): to first order in A
    // the displacement is w itself. The second-order part is about |w| |∇w| / 2: |w| reaches
    // A f'/k ≈ 1.5 A along x for this long wave and |∇w| ≈ A f' ≈ 0.03 in the thinner upper
    // band, about 0.02–0.04 A; measured at most 0.033 A, next to the interface where f'' jumps.
    let c = case("two-layer-channel-seeded.ron");
    let g = generate::<DVec2>(&c);
    let (a, lambda, dx, y0, top) = (8.0e-6, 4.8e-3, 4.0e-5, 0.8e-3, 1.2e-3);
    let k = std::f64::consts::TAU / lambda;
    let pi = std::f64::consts::PI;
    let shape = |y: f64| {
        let (s, width, sign) = if y < y0 {
            (y / y0, y0, 1.0)
        } else {
            ((top - y) / (top - y0), top - y0, -1.0)
        };
        (
            0.5 * (1.0 - (pi * s).cos()),
            sign * 0.5 * pi / width * (pi * s).sin(),
        )
    };
    let fluid: Vec<usize> = (0..g.len()).filter(|&i| !g.is_wall[i]).collect();
    assert_eq!(fluid.len(), 120 * 30);
    for (n, &i) in fluid.iter().enumerate() {
        // Fluid comes first, in lattice order with x fastest.
        let site = DVec2::new(((n % 120) as f64 + 0.5) * dx, ((n / 120) as f64 + 0.5) * dx);
        let (f, slope) = shape(site.y);
        let expected = DVec2::new(
            a / k * (k * site.x).cos() * slope,
            a * (k * site.x).sin() * f,
        );
        let moved = g.position[i] - site;
        // Up to the periodic wrap along x at the seam.
        let moved = DVec2::new(moved.x - (moved.x / 4.8e-3).round() * 4.8e-3, moved.y);
        assert!(
            (moved - expected).length() < 0.05 * a,
            "site {site}: moved {moved}, expected {expected}"
        );
        // The phase is the site's: below y0 syrup, above water.
        assert_eq!(g.phase[i], u16::from(site.y > y0), "site {site}");
    }
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
