//! Conservation: the total mass is exact (every particle keeps its mass, none is lost), and in a
//! periodic box with no walls and no body force the total momentum stays at round-off, because
//! the pressure and viscous pair forces are antisymmetric (Monaghan 1992, Annu. Rev. Astron.
//! Astrophys. 30, §3). The box holds two phases of different viscosity and density-weighted
//! pressure averaging (Hu & Adams 2006), with a drift and a vortex so that momentum is non-zero.

use glam::DVec2;
use lamella_case::{InitialVelocity, Region, ViscosityLaw};
use lamella_run::runner::run_plain;

#[test]
fn mass_is_exact_and_momentum_stays_at_round_off() {
    let mut case = lamella_case::load(&lamella_suite::cases_dir().join("taylor-green.ron"))
        .expect("bundled case loads");
    let mut second = case.phases[0].clone();
    second.name = "thick".to_string();
    second.viscosity_law = ViscosityLaw::Newtonian { viscosity: 4.0e-3 };
    case.phases.push(second);
    case.regions.push(Region::Circle {
        phase: "thick".to_string(),
        centre: vec![0.3e-3, 0.6e-3],
        radius: 0.2e-3,
    });
    case.initial_velocity = InitialVelocity::TaylorGreen { amplitude: 5.0e-3 };
    case.time.end = 0.01;
    let text = lamella_case::to_ron(&case);
    let case = lamella_case::parse_str(&text, "conservation test case").expect("valid case");
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    // Add a uniform drift so the total momentum is not zero.
    let mut particles = sim.particles().clone();
    for v in &mut particles.velocity {
        *v += DVec2::new(1.0e-3, -0.5e-3);
    }
    let config = sim.config().clone();
    sim = lamella_sph::Simulation::new(config, particles).expect("set-up");

    let by_id = |p: &lamella_sph::Particles<DVec2>| {
        let mut masses: Vec<(u64, u64)> =
            p.id.iter()
                .zip(&p.mass)
                .map(|(&i, m)| (i, m.to_bits()))
                .collect();
        masses.sort_unstable();
        masses
    };
    let initial_masses = by_id(sim.particles());
    let p0 = sim.particles().fluid_momentum();
    let scale: f64 = {
        let p = sim.particles();
        (0..p.len())
            .map(|i| p.mass[i] * p.velocity[i].length())
            .sum()
    };
    run_plain(&mut sim, case.time.end).unwrap_or_else(|failure| panic!("{failure}"));
    let p1 = sim.particles().fluid_momentum();
    let drift = (p1 - p0).length() / scale;
    println!(
        "momentum change {drift:.3e} of Σ m|v| after {} steps; mass {} → {}",
        sim.step_count(),
        initial_masses.len(),
        sim.particles().len()
    );
    assert_eq!(
        by_id(sim.particles()),
        initial_masses,
        "every particle keeps its mass"
    );
    assert!(drift < 1e-12, "momentum drifted by {drift} of Σ m|v|");
}
