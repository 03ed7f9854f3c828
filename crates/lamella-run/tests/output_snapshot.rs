//! Round trip of the snapshot writer through vtkio's reader, in 2D and 3D, and the shear-rate
//! field every snapshot carries.

use glam::{DVec2, DVec3};
use lamella_cells::{Domain, Vector};
use lamella_run::output::snapshot::shear_rate_field;
use lamella_run::output::{SnapshotMeta, read_snapshot, write_snapshot};
use lamella_sph::{Kernel, KernelKind, Kind, Particles};

/// A small, irregular state whose every value is distinct, so swapped arrays show.
fn sample<V: Vector>(n: usize) -> Particles<V> {
    let vector = |seed: f64| V::from_fn(|axis| seed + 0.125 * axis as f64);
    Particles {
        position: (0..n).map(|i| vector(i as f64 * 1.5e-3)).collect(),
        velocity: (0..n).map(|i| vector(-(i as f64) * 0.1)).collect(),
        density: (0..n).map(|i| 1000.0 + i as f64 * 0.01).collect(),
        pressure: (0..n).map(|i| 12.5 * i as f64 - 3.0).collect(),
        mass: (0..n).map(|i| 2.0e-3 + 1e-6 * i as f64).collect(),
        viscosity: (0..n).map(|i| if i % 2 == 0 { 0.1 } else { 2.5 }).collect(),
        phase: (0..n).map(|i| (i % 3) as u16).collect(),
        kind: (0..n)
            .map(|i| if i % 4 == 0 { Kind::Wall } else { Kind::Fluid })
            .collect(),
        id: (0..n).map(|i| 1000 + 7 * i as u64).rev().collect(),
        initial_position: (0..n).map(|i| vector(1.0 / (i as f64 + 1.0))).collect(),
    }
}

#[test]
fn a_2d_snapshot_reads_back_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("state_000003.vtp");
    let particles = sample::<DVec2>(57);
    let shear: Vec<f64> = (0..57).map(|i| 0.5 * i as f64).collect();
    let meta = SnapshotMeta {
        time: 0.123456789,
        step: 4321,
        case_name: "two layers".into(),
    };
    write_snapshot(&path, &particles, &shear, &meta).unwrap();

    let text = std::fs::read_to_string(&path).unwrap();
    assert!(text.contains("vtkZLibDataCompressor"), "not compressed");
    assert!(text.contains("format=\"binary\""), "not binary");

    let back = read_snapshot(&path).unwrap();
    assert_eq!(back.meta, meta);
    assert_eq!(back.dimension, 2);
    assert_eq!(back.shear_rate, shear);
    assert!(back.position.iter().all(|p| p[2] == 0.0));
    assert_eq!(back.to_particles::<DVec2>().unwrap(), particles);
    assert!(back.to_particles::<DVec3>().is_err());
}

#[test]
fn a_3d_snapshot_with_wall_nans_reads_back_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.vtp");
    let particles = sample::<DVec3>(1000);
    // Wall particles have no shear rate (NaN); it must come back as NaN, the rest bit for bit.
    let shear: Vec<f64> = (0..1000)
        .map(|i| match particles.kind[i] {
            Kind::Wall => f64::NAN,
            Kind::Fluid => 1e-3 * i as f64,
        })
        .collect();
    let meta = SnapshotMeta {
        time: 2.0,
        step: 0,
        case_name: "cavity".into(),
    };
    write_snapshot(&path, &particles, &shear, &meta).unwrap();
    let back = read_snapshot(&path).unwrap();
    assert_eq!(back.dimension, 3);
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&back.shear_rate), bits(&shear));
    assert_eq!(back.to_particles::<DVec3>().unwrap(), particles);
}

#[test]
fn the_shear_rate_field_follows_the_particles_and_reads_back() {
    // A 16 × 16 lattice, x periodic, the two bottom rows wall particles, stored in an order
    // unrelated to the cells (reversed rows). Fluid velocity u = (½ a y², 0), so γ̇ = a y; on
    // the rows with a full, symmetric support the quadratic term cancels and the corrected SPH
    // gradient is exact.
    let (n, dx, a) = (16usize, 1e-3, 40.0);
    let mut particles = Particles::<DVec2>::default();
    for k in (0..n * n).rev() {
        let (column, row) = (k % n, k / n);
        let x = DVec2::new((column as f64 + 0.5) * dx, (row as f64 + 0.5) * dx);
        let wall = row < 2;
        particles.position.push(x);
        particles.initial_position.push(x);
        particles.velocity.push(if wall {
            DVec2::new(9.0, 0.0)
        } else {
            DVec2::new(0.5 * a * x.y * x.y, 0.0)
        });
        particles.density.push(1000.0);
        particles.pressure.push(0.0);
        particles.mass.push(1000.0 * dx * dx);
        particles.viscosity.push(1e-3);
        particles.phase.push(0);
        particles
            .kind
            .push(if wall { Kind::Wall } else { Kind::Fluid });
        particles.id.push(k as u64);
    }
    let kernel = Kernel::new(KernelKind::WendlandC2, 1.3 * dx, 2);
    let length = n as f64 * dx;
    let domain = Domain::new(DVec2::ZERO, DVec2::splat(length), [true, false, false]).unwrap();
    let shear = shear_rate_field(&particles, domain, &kernel).unwrap();
    let mut checked = 0;
    for (i, &rate) in shear.iter().enumerate() {
        let row = (particles.position[i].y / dx) as usize;
        match particles.kind[i] {
            Kind::Wall => assert!(rate.is_nan(), "wall particle {i}: {rate}"),
            // Fluid rows 2..16; rows 5..13 are three spacings (more than the support
            // 2.6 dx) from the fluid's edges.
            Kind::Fluid if (5..13).contains(&row) => {
                let exact = a * particles.position[i].y;
                assert!(
                    (rate - exact).abs() < 1e-9 * exact,
                    "{i}: {rate} vs {exact}"
                );
                checked += 1;
            }
            Kind::Fluid => assert!(rate.is_finite() && rate > 0.0, "{i}: {rate}"),
        }
    }
    assert_eq!(checked, 8 * n);

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sheared.vtp");
    let meta = SnapshotMeta {
        time: 0.5,
        step: 7,
        case_name: "sheared".into(),
    };
    write_snapshot(&path, &particles, &shear, &meta).unwrap();
    let back = read_snapshot(&path).unwrap();
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&back.shear_rate), bits(&shear));
}

#[test]
fn a_damaged_snapshot_is_reported_with_its_path() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.vtp");
    write_snapshot(
        &path,
        &sample::<DVec2>(10),
        &[0.0; 10],
        &SnapshotMeta {
            time: 0.0,
            step: 0,
            case_name: "x".into(),
        },
    )
    .unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    std::fs::write(&path, &text[..text.len() / 2]).unwrap();
    let err = read_snapshot(&path).unwrap_err().to_string();
    assert!(
        err.contains("s.vtp") && err.contains("not a valid snapshot"),
        "{err}"
    );
}

#[test]
fn a_wrong_shear_rate_length_is_refused_before_writing() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.vtp");
    let meta = SnapshotMeta {
        time: 0.0,
        step: 0,
        case_name: "x".into(),
    };
    let err = write_snapshot(&path, &sample::<DVec2>(10), &[1.0], &meta).unwrap_err();
    assert!(err.to_string().contains("shear_rate"), "{err}");
    assert!(!path.exists());
}
