//! A run that goes bad stops with a message that names the particle, the time, the position
//! and the likely cause, keeps the last good state, and is a fault (the binary exits with code 1
//! for it, see `Failure::exit_code`).

use glam::DVec2;
use lamella_run::RunError;
use lamella_run::runner::run_plain;

#[test]
fn a_far_too_low_sound_speed_fails_naming_the_particle() {
    let mut case = lamella_case::load(&lamella_suite::cases_dir().join("poiseuille.ron"))
        .expect("bundled case loads");
    // Sound speed a hundredth of the flow speed: density errors grow far past the bound.
    case.scales.sound_speed = Some(4.0e-5);
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    let outcome = run_plain(&mut sim, case.time.end);
    let Err(failure) = outcome else {
        panic!("the run should have failed");
    };
    let message = failure.to_string();
    println!("{message}");
    assert!(matches!(failure, RunError::Fault(_)), "{failure:?}");
    assert!(message.contains("particle "), "{message}");
    assert!(message.contains("t = "), "{message}");
    assert!(message.contains("sound speed"), "{message}");
    // The last good state is kept: finite and within the density bound.
    let p = sim.particles();
    assert!(sim.time() < case.time.end);
    for i in 0..p.len() {
        assert!(p.position[i].is_finite() && p.velocity[i].is_finite());
        if p.kind[i] == lamella_sph::Kind::Fluid {
            assert!((p.density[i] / 1000.0 - 1.0).abs() <= case.density_tolerance + 1e-12);
        }
    }
}
