//! The analysis commands on real, coarse runs made with the `lamella` program itself.
//!
//! - `profile` on a finished layered channel reproduces the error that the solver validation
//!   (`tests/validation_layered.rs`) computes from the in-memory particles of the same case,
//!   against Bird, Stewart & Lightfoot, Transport Phenomena, 2nd ed., §2.5.
//! - `growth` refuses, with exit code 2 and a clear message, a run whose interface never moves.
//! - `mix` on a low-resolution two-phase run writes every output, each chart a real PNG.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::atomic::AtomicBool;

use glam::DVec2;
use lamella::runner::{NoObserver, ProgressMode, run_to_end};
use lamella_case::{Case, Region, ViscosityLaw};
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::layered::LayeredChannel;
use lamella_sph::Kind;

fn cases_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../cases")
}

fn lamella(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lamella"))
        .args(args)
        .output()
        .expect("lamella starts")
}

fn write_case(case: &Case, path: &Path) {
    let text = lamella_case::to_ron(case);
    lamella_case::parse_str(&text, "test case").expect("the modified case is valid");
    std::fs::write(path, text).unwrap();
}

fn is_png(path: &Path) -> bool {
    std::fs::read(path).is_ok_and(|b| b.len() > 1000 && b.starts_with(&[0x89, b'P', b'N', b'G']))
}

/// The bundled two-layer channel at 15 rows, 0.48 mm long, μ1/μ2 = 4, run to 6 time constants
/// of the slowest transient (as in the solver validation).
fn layered_case() -> (Case, LayeredChannel) {
    let mut case = lamella_case::load(&cases_dir().join("two-layer-channel.ron")).unwrap();
    let height = 1.2e-3;
    let h1 = 0.4 * height;
    case.particles.spacing = height / 15.0;
    case.domain.upper = vec![6.0 * height / 15.0, height];
    case.phases[0].viscosity_law = ViscosityLaw::Newtonian { viscosity: 4.0e-3 };
    case.phases[1].viscosity_law = ViscosityLaw::Newtonian { viscosity: 1.0e-3 };
    case.regions = vec![
        Region::Layer {
            phase: case.phases[0].name.clone(),
            bottom: 0.0,
            top: h1,
        },
        Region::Layer {
            phase: case.phases[1].name.clone(),
            bottom: h1,
            top: height,
        },
    ];
    let exact = LayeredChannel {
        lower_width: h1,
        upper_width: height - h1,
        lower_viscosity: 4.0e-3,
        upper_viscosity: 1.0e-3,
        force_density: 1000.0 * case.body_force.as_ref().unwrap()[0],
    };
    case.scales.expected_max_speed = 1.1 * exact.peak().velocity;
    case.time.end = 6.0 * height * height / (std::f64::consts::PI.powi(2) * 1e-6);
    case.time.snapshot_interval = case.time.end / 4.0;
    case.output.probes = Vec::new();
    (case, exact)
}

#[test]
fn profile_reproduces_the_validation_error_and_growth_refuses_a_still_interface() {
    let dir = tempfile::tempdir().unwrap();
    let (case, exact) = layered_case();
    let case_path = dir.path().join("layered.ron");
    write_case(&case, &case_path);
    let run_dir = dir.path().join("run");
    let out = lamella(&[
        "--quiet",
        "run",
        case_path.to_str().unwrap(),
        "--out",
        run_dir.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "run failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );

    // The validation's own measurement, from the in-memory particles of the same case.
    let case = lamella_case::parse_str(&lamella_case::to_ron(&case), "again").unwrap();
    let mut sim = lamella::setup::simulation::<DVec2>(&case).unwrap();
    run_to_end(
        &mut sim,
        case.time.end,
        &mut NoObserver,
        &AtomicBool::new(false),
        ProgressMode::Silent,
    )
    .unwrap();
    let p = sim.particles();
    let (y, u): (Vec<f64>, Vec<f64>) = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.position[i].y, p.velocity[i].x))
        .unzip();
    let expected =
        compare_with_reference(&y, &u, 0.0, 1.2e-3, 15, |yy| exact.velocity(yy)).unwrap();
    // The validation bound on the layered profile (tests/validation_layered.rs).
    assert!(
        expected.relative_l2 < 0.03,
        "validation error {}",
        expected.relative_l2
    );

    let figure = dir.path().join("figure.png");
    let out = lamella(&[
        "profile",
        run_dir.to_str().unwrap(),
        "--figure",
        figure.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "profile failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    let reported: f64 = text
        .split("relative L2 error ")
        .nth(1)
        .and_then(|rest| rest.split(',').next())
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("no error in the output: {text}"));
    assert!(
        (reported - expected.relative_l2).abs() <= 1e-4 * expected.relative_l2,
        "profile reports {reported}, the validation measures {}",
        expected.relative_l2
    );
    let analysis = run_dir.join("analysis");
    assert!(is_png(&analysis.join("profile.png")) && is_png(&figure));
    let csv = std::fs::read_to_string(analysis.join("profile.csv")).unwrap();
    assert!(csv.starts_with("y_m,u_m_per_s,u_reference_m_per_s,particles\n"));
    assert_eq!(csv.lines().count(), 16);

    // Layers without a seeded disturbance stay flat: no onset to fit, said clearly.
    let out = lamella(&["growth", run_dir.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("no instability onset"), "{err}");
}

/// Mixing outputs on a coarse two-phase run. The two-phase cavity at a coarse spacing (1e-4 m)
/// currently stops in the solver (density bound at the lid corner), so the two-layer channel,
/// also two phases, is used here.
#[test]
fn mix_on_a_coarse_two_phase_run_writes_every_output() {
    let dir = tempfile::tempdir().unwrap();
    let (case, _) = layered_case();
    let case_path = dir.path().join("layers.ron");
    write_case(&case, &case_path);
    let run_dir = dir.path().join("run");
    let out = lamella(&[
        "--quiet",
        "run",
        case_path.to_str().unwrap(),
        "--out",
        run_dir.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "run failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = lamella(&["mix", run_dir.to_str().unwrap(), "--grid", "6,6"]);
    assert!(
        out.status.success(),
        "mix failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let analysis = run_dir.join("analysis");
    for png in ["mixing.png", "ftle.png"] {
        assert!(is_png(&analysis.join(png)), "{png}");
    }
    let csv = std::fs::read_to_string(analysis.join("mixing.csv")).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("time_s,intensity_of_segregation,lacey_index,mean_mixing_entropy,mean_ftle_per_s")
    );
    let rows: Vec<Vec<f64>> = lines
        .map(|l| {
            l.split(',')
                .map(|c| c.parse().unwrap_or(f64::NAN))
                .collect()
        })
        .collect();
    assert_eq!(
        rows.len(),
        5,
        "one row per snapshot at t = 0, 0.025, ..., 0.1 s"
    );
    for row in &rows {
        assert!(row[1] > 0.0 && row[1] <= 1.0 + 1e-9, "intensity {}", row[1]);
        assert!(row[3] >= 0.0 && row[3].is_finite());
    }
    // At t = 0 the FTLE is undefined (no elapsed time); later it is finite.
    assert!(rows[0][4].is_nan() && rows[4][4].is_finite());
    for field in ["mix_fields.vti", "mix_particles.vtp"] {
        let text = std::fs::read_to_string(analysis.join(field)).unwrap();
        assert!(
            text.starts_with("<?xml") || text.contains("<VTKFile"),
            "{field}"
        );
    }
    let vti = std::fs::read_to_string(analysis.join("mix_fields.vti")).unwrap();
    assert!(vti.contains("volume_fraction_syrup") && vti.contains("volume_fraction_water"));
    let vtp = std::fs::read_to_string(analysis.join("mix_particles.vtp")).unwrap();
    assert!(vtp.contains("\"ftle\"") && vtp.contains("mixing_entropy"));
}
