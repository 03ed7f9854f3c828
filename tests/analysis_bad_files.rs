//! The analyses (`profile`, `mix`) on a run folder whose files were damaged or swapped: a
//! snapshot with a one-byte edit of its XML header, a 3D snapshot in a 2D run, a `.pvd` time
//! of NaN. Each is refused with exit code 2 and a message naming the file; nothing panics.

use std::path::Path;
use std::process::Output;

use glam::DVec3;
use lamella_run::output::{SnapshotMeta, read_snapshot, write_snapshot};
use lamella_sph::{Kind, Particles};

/// A small two-layer channel, 0.5 ms (a few snapshots).
const CASE: &str = r#"
#![enable(implicit_some)]
(
    title: "bad files",
    dimension: 2,
    domain: (lower: [0.0, 0.0], upper: [4.0e-4, 4.0e-4], periodic: [X]),
    particles: (spacing: 4.0e-5),
    phases: [
        (name: "syrup", density: 1000.0, viscosity_law: Newtonian(viscosity: 5.0e-3)),
        (name: "water", density: 1000.0, viscosity_law: Newtonian(viscosity: 1.0e-3)),
    ],
    regions: [
        Layer(phase: "syrup", bottom: 0.0, top: 2.4e-4),
        Layer(phase: "water", bottom: 2.4e-4, top: 4.0e-4),
    ],
    walls: [(side: Bottom), (side: Top)],
    body_force: [0.5, 0.0],
    scales: (expected_max_speed: 4.0e-3),
    time: (end: 5.0e-4, snapshot_interval: 2.5e-4),
)
"#;

fn lamella(args: &[&str]) -> Output {
    lamella_suite::run(
        env!("CARGO_BIN_EXE_lamella"),
        &[&["--quiet"], args].concat(),
    )
}

/// A finished run of [`CASE`] in `dir/run`.
fn finished_run(dir: &Path) -> std::path::PathBuf {
    let case = dir.join("layers.ron");
    std::fs::write(&case, CASE).unwrap();
    let out = dir.join("run");
    let ran = lamella(&[
        "run",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        ran.status.success(),
        "{}",
        String::from_utf8_lossy(&ran.stderr)
    );
    out
}

/// `profile` and `mix` on `run` exit 2 with every word of `words` in the message.
fn assert_analyses_refuse(run: &Path, words: &[&str]) {
    let analysis = run.parent().unwrap().join("analysis");
    for command in ["profile", "mix"] {
        let out = lamella(&[
            command,
            run.to_str().unwrap(),
            "--out",
            analysis.to_str().unwrap(),
        ]);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{command}: {stderr}");
        assert!(!stderr.contains("panicked"), "{command}: {stderr}");
        for word in words {
            assert!(stderr.contains(word), "{command}: {word:?} not in {stderr}");
        }
    }
}

fn last_snapshot(run: &Path) -> std::path::PathBuf {
    let mut files: Vec<_> = std::fs::read_dir(run.join("snapshots"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "vtp"))
        .collect();
    files.sort();
    files.pop().unwrap()
}

#[test]
fn analyses_refuse_damaged_or_foreign_snapshots_and_a_nan_time() {
    let dir = tempfile::tempdir().unwrap();
    let run = finished_run(dir.path());
    let analysis = dir.path().join("analysis");
    let profile = lamella(&[
        "profile",
        run.to_str().unwrap(),
        "--out",
        analysis.to_str().unwrap(),
    ]);
    assert!(profile.status.success(), "the intact run must be analysed");

    // One-byte edits of the XML header that made the reader panic or misread.
    let last = last_snapshot(&run);
    let name = last.file_name().unwrap().to_str().unwrap().to_string();
    let intact = std::fs::read_to_string(&last).unwrap();
    for (from, to) in [
        ("NumberOfComponents=\"3\"", "NumberOfComponents=\"0\""),
        ("header_type=\"UInt64\"", "header_type=\"UInt32\""),
        ("format=\"ascii\">2<", "format=\"ascii\"?2<"),
        ("<Piece NumberOfPoints=\"", "<Piece NumberOfPoints=\"9"),
    ] {
        assert!(intact.contains(from), "{from}");
        std::fs::write(&last, intact.replacen(from, to, 1)).unwrap();
        assert_analyses_refuse(&run, &[&name, "not a valid snapshot"]);
    }

    // A 3D snapshot (of another run) put in place of the 2D one.
    let snapshot = read_snapshot(&run.join("snapshots").join("state_000000.vtp")).unwrap();
    let n = snapshot.len();
    let at = |i: usize| DVec3::new(i as f64 * 1e-5, 1e-4, 1e-4);
    let particles = Particles {
        position: (0..n).map(at).collect(),
        velocity: vec![DVec3::ZERO; n],
        density: vec![1000.0; n],
        pressure: vec![0.0; n],
        mass: vec![1e-9; n],
        viscosity: vec![1e-3; n],
        phase: vec![0; n],
        kind: vec![Kind::Fluid; n],
        id: (0..n as u64).collect(),
        initial_position: (0..n).map(at).collect(),
    };
    let meta = SnapshotMeta {
        time: 5.0e-4,
        step: 9,
        case_name: "other".into(),
    };
    write_snapshot(&last, &particles, &vec![0.0; n], &meta).unwrap();
    assert_analyses_refuse(&run, &[&name, "3D snapshot", "2D"]);
    std::fs::write(&last, &intact).unwrap();

    // A time of NaN in the collection.
    let pvd = run.join("snapshots").join("snapshots.pvd");
    let text = std::fs::read_to_string(&pvd).unwrap();
    let damaged = text.replacen("timestep=\"0\"", "timestep=\"NaN\"", 1);
    assert_ne!(damaged, text);
    std::fs::write(&pvd, damaged).unwrap();
    assert_analyses_refuse(&run, &["snapshots.pvd", "timestep \"NaN\"", "finite"]);
}
