//! Results do not depend on the thread count, and a run rebuilt from its saved parts
//! (`Simulation::from_parts`) continues bit for bit as the uninterrupted one.

use glam::DVec2;
use lamella_case::{Case, Region};
use lamella_sph::{Particles, Simulation};

/// The two-layer channel (walls, two phases, body force) at 200 rows: about 41 000 particles,
/// enough that the neighbour search takes its parallel paths.
fn large_case() -> Case {
    let mut case = lamella_case::load(&lamella_suite::cases_dir().join("two-layer-channel.ron"))
        .expect("bundled case loads");
    case.particles.spacing = 1.2e-3 / 200.0;
    case.regions = vec![
        Region::Layer {
            phase: case.phases[0].name.clone(),
            bottom: 0.0,
            top: 0.78e-3,
        },
        Region::Layer {
            phase: case.phases[1].name.clone(),
            bottom: 0.78e-3,
            top: 1.2e-3,
        },
    ];
    let text = lamella_case::to_ron(&case);
    lamella_case::parse_str(&text, "determinism case").expect("valid case")
}

fn run_steps(sim: &mut Simulation<DVec2>, steps: usize) {
    for _ in 0..steps {
        sim.step(f64::INFINITY)
            .unwrap_or_else(|fault| panic!("{fault}"));
    }
}

/// Every particle array and the time as raw bits.
fn bits(sim: &Simulation<DVec2>) -> Vec<u64> {
    let p: &Particles<DVec2> = sim.particles();
    let mut out = vec![sim.time().to_bits(), sim.step_count()];
    for i in 0..p.len() {
        out.extend([
            p.position[i].x.to_bits(),
            p.position[i].y.to_bits(),
            p.velocity[i].x.to_bits(),
            p.velocity[i].y.to_bits(),
            p.density[i].to_bits(),
            p.pressure[i].to_bits(),
            p.id[i],
        ]);
    }
    out
}

fn run_with_threads(threads: usize, case: &Case, steps: usize) -> Vec<u64> {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("pool");
    pool.install(|| {
        let mut sim = lamella_run::setup::simulation::<DVec2>(case).expect("set-up");
        run_steps(&mut sim, steps);
        bits(&sim)
    })
}

#[test]
fn one_and_two_threads_give_identical_bytes() {
    let case = large_case();
    let one = run_with_threads(1, &case, 8);
    let two = run_with_threads(2, &case, 8);
    assert!(one.len() > 40_000 * 7, "a large case");
    assert!(one == two, "results differ between 1 and 2 threads");
}

#[test]
fn a_run_rebuilt_from_its_parts_continues_bit_for_bit() {
    let case = lamella_case::load(&lamella_suite::cases_dir().join("two-layer-channel.ron"))
        .expect("bundled case loads");
    let mut straight = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    run_steps(&mut straight, 40);
    let (config, particles, time, step) = straight.clone().into_parts();
    let mut resumed = Simulation::from_parts(config, particles, time, step).expect("restore");
    run_steps(&mut straight, 40);
    run_steps(&mut resumed, 40);
    assert!(bits(&straight) == bits(&resumed), "resumed run differs");
}
