//! Round trip of the snapshot writer through vtkio's reader, in 2D and 3D.

use glam::{DVec2, DVec3};
use lamella::output::{SnapshotMeta, read_snapshot, write_snapshot};
use lamella_cells::Vector;
use lamella_sph::{Kind, Particles};

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
    write_snapshot(&path, &particles, Some(&shear), &meta).unwrap();

    let text = std::fs::read_to_string(&path).unwrap();
    assert!(text.contains("vtkZLibDataCompressor"), "not compressed");
    assert!(text.contains("format=\"binary\""), "not binary");

    let back = read_snapshot(&path).unwrap();
    assert_eq!(back.meta, meta);
    assert_eq!(back.dimension, 2);
    assert_eq!(back.shear_rate.as_deref(), Some(shear.as_slice()));
    assert!(back.position.iter().all(|p| p[2] == 0.0));
    assert_eq!(back.to_particles::<DVec2>().unwrap(), particles);
    assert!(back.to_particles::<DVec3>().is_err());
}

#[test]
fn a_3d_snapshot_without_shear_rate_reads_back_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.vtp");
    let particles = sample::<DVec3>(1000);
    let meta = SnapshotMeta {
        time: 2.0,
        step: 0,
        case_name: "cavity".into(),
    };
    write_snapshot(&path, &particles, None, &meta).unwrap();
    let back = read_snapshot(&path).unwrap();
    assert_eq!(back.dimension, 3);
    assert_eq!(back.shear_rate, None);
    assert_eq!(back.to_particles::<DVec3>().unwrap(), particles);
}

#[test]
fn a_damaged_snapshot_is_reported_with_its_path() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.vtp");
    write_snapshot(
        &path,
        &sample::<DVec2>(10),
        None,
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
    let err = write_snapshot(&path, &sample::<DVec2>(10), Some(&[1.0]), &meta).unwrap_err();
    assert!(err.to_string().contains("shear_rate"), "{err}");
    assert!(!path.exists());
}
