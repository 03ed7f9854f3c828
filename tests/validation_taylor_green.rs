//! Taylor–Green vortex in a periodic square (Taylor & Green 1937, Proc. R. Soc. A 158): with
//! u = U sin(kx) cos(ky), v = −U cos(kx) sin(ky), k = 2π/L, the velocity decays as exp(−2νk²t)
//! and the kinetic energy as exp(−4νk²t). Bound: the fitted kinetic-energy decay rate within
//! 5 % of 4νk². Case: the bundled `taylor-green.ron` (Re = 5, 40 particles across).

use std::time::Instant;

use glam::DVec2;
use lamella_post::fit::linear_fit;
use lamella_post::reference::taylor_green::TaylorGreen;
use lamella_run::runner::run_plain;

#[test]
fn kinetic_energy_decays_at_the_viscous_rate() {
    let case = lamella_case::load(&lamella_suite::cases_dir().join("taylor-green.ron"))
        .expect("bundled case loads");
    let started = Instant::now();
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    let nu = case.phase_viscosity(0) / case.phases[0].density;
    let exact = TaylorGreen {
        side: case.extent(0),
        speed: 5.0e-3,
        nu,
    };
    let k = exact.wavenumber();
    let samples = 20;
    let (mut t, mut log_energy) = (Vec::new(), Vec::new());
    for s in 0..=samples {
        let time = case.time.end * s as f64 / samples as f64;
        if time > 0.0 {
            run_plain(&mut sim, time).unwrap_or_else(|failure| panic!("{failure}"));
        }
        t.push(sim.time());
        log_energy.push(sim.particles().fluid_kinetic_energy().ln());
    }
    let fit = linear_fit(&t, &log_energy).expect("fit");
    let measured = -fit.slope;
    let expected = 4.0 * nu * k * k;
    let error = (measured - expected).abs() / expected;
    println!(
        "Taylor–Green: decay rate {measured:.3} 1/s vs 4νk² = {expected:.3} 1/s ({:.2} %), \
         energy ratio at the end {:.4e} vs {:.4e}; {} steps in {:.1?}",
        100.0 * error,
        (log_energy[samples] - log_energy[0]).exp(),
        exact.energy_ratio(case.time.end),
        sim.step_count(),
        started.elapsed()
    );
    assert!(error <= 0.05, "decay rate off by {error}");
}
