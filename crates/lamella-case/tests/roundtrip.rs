//! Parse → serialise → parse gives the same case, and omitted fields take their defaults.

use std::path::PathBuf;

use lamella_case::{
    Case, EquationOfState, InitialVelocity, Kernel, PairViscosity, load, parse_str, to_ron,
};

fn bundled() -> Vec<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../cases");
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "ron"))
        .collect();
    files.sort();
    files
}

#[test]
fn every_bundled_case_survives_a_round_trip() {
    let files = bundled();
    assert!(
        files.len() >= 7,
        "expected the seven bundled cases, found {files:?}"
    );
    for path in files {
        let case = load(&path).unwrap_or_else(|err| panic!("{err}"));
        let text = to_ron(&case);
        let again: Case = parse_str(&text, "serialised").unwrap_or_else(|err| panic!("{err}"));
        assert_eq!(case, again, "{}", path.display());
    }
}

#[test]
fn omitted_fields_take_their_documented_defaults() {
    let text = r#"(
        domain: (lower: [0.0, 0.0], upper: [1.0, 1.0], periodic: [X, Y]),
        particles: (spacing: 0.05),
        phases: [(name: "water", density: 1000.0, viscosity_law: Newtonian(viscosity: 1.0e-3))],
        regions: [Fill(phase: "water")],
        scales: (expected_max_speed: 0.1),
        time: (end: 1.0, snapshot_interval: 0.1),
    )"#;
    let case = parse_str(text, "minimal").unwrap();
    assert_eq!(case.dimension, 2);
    assert_eq!(case.particles.smoothing_ratio, 1.3);
    assert_eq!(case.particles.kernel, Kernel::WendlandC2);
    assert_eq!(case.pair_viscosity, PairViscosity::Harmonic);
    assert_eq!(case.initial_velocity, InitialVelocity::Rest);
    assert_eq!(
        case.equation_of_state,
        EquationOfState::Linear {
            background_pressure: 0.0
        }
    );
    assert_eq!(case.density_tolerance, 0.05);
    assert_eq!(
        (
            case.time_step.acoustic,
            case.time_step.viscous,
            case.time_step.force
        ),
        (0.25, 0.125, 0.25)
    );
    assert_eq!(case.output.checkpoint_minutes, 15.0);
    assert!(case.walls.is_empty() && case.body_force.is_none());
}

#[test]
fn wall_layers_default_to_three_and_tait_exponent_to_seven() {
    let text = r#"(
        domain: (lower: [0.0, 0.0], upper: [1.0, 1.0], periodic: [X]),
        particles: (spacing: 0.05),
        phases: [(name: "water", density: 1000.0, viscosity_law: Newtonian(viscosity: 1.0e-3))],
        regions: [Fill(phase: "water")],
        walls: [(side: Bottom), (side: Top)],
        scales: (expected_max_speed: 0.1),
        equation_of_state: Tait(),
        time: (end: 1.0, snapshot_interval: 0.1),
    )"#;
    let case = parse_str(text, "walls").unwrap();
    assert!(
        case.walls
            .iter()
            .all(|w| w.layers == 3 && w.velocity.is_none())
    );
    assert_eq!(
        case.equation_of_state,
        EquationOfState::Tait {
            exponent: 7.0,
            background_pressure: 0.0
        }
    );
}
