//! The 3D solver path: start-up plane Poiseuille flow in a box periodic in x and z, against the
//! series solution of Morris, Fox & Zhu 1997 (J. Comput. Phys. 136, §4.1), which does not
//! depend on z. Coarse (15 particles across the gap, 1 890 particles) so that it runs in
//! seconds. The task's bound is a relative L2 error of the velocity profile ≤ 3 % at the end
//! time, as for 2D; the test holds it to 0.3 %, twice the 0.150 % it measures (2026-12-04). A
//! 2D run at the same spacing gives 0.94 %, so a wrong 3D kernel normalisation, wall or
//! neighbour search (each of which shows up as a profile tens of per cent off) fails either.

use glam::DVec3;
use lamella_case::Axis;
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::startup::PlateGap;
use lamella_run::runner::run_plain;
use lamella_sph::Kind;

#[test]
fn startup_poiseuille_in_3d_follows_the_morris_series() {
    let mut case = lamella_case::load(&lamella_suite::cases_dir().join("poiseuille.ron"))
        .expect("bundled case loads");
    case.dimension = 3;
    case.domain.lower = vec![0.0, 0.0, 0.0];
    case.domain.upper = vec![1.2e-3, 1.2e-3, 4.8e-4];
    case.domain.periodic = vec![Axis::X, Axis::Z];
    case.particles.spacing = 8.0e-5;
    let force = case.body_force.as_ref().expect("body force")[0];
    case.body_force = Some(vec![force, 0.0, 0.0]);
    case.output.probes.clear();
    let problems = case.validate();
    assert!(problems.is_empty(), "{problems:?}");

    let mut sim = lamella_run::setup::simulation::<DVec3>(&case).expect("set-up");
    run_plain(&mut sim, case.time.end).expect("the 3D run finishes");

    let nu = case.phase_viscosity(0) / case.phases[0].density;
    let plates = PlateGap {
        gap: case.extent(1),
        nu,
    };
    let p = sim.particles();
    let (y, u): (Vec<f64>, Vec<f64>) = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.position[i].y, p.velocity[i].x))
        .unzip();
    let rows = case.lattice_counts()[1];
    assert_eq!(rows, 15);
    let t = case.time.end;
    let error = compare_with_reference(&y, &u, 0.0, plates.gap, rows, |y| {
        plates.poiseuille_startup(force, y, t)
    })
    .expect("profile")
    .relative_l2;
    println!(
        "3D start-up Poiseuille, t = {t} s: relative L2 error {:.3} %",
        100.0 * error
    );
    assert!(
        error <= 0.003,
        "3D profile: relative L2 error {:.3} % > the regression bound 0.3 % (measured 0.150 %; \
         the task's bound, against Morris, Fox & Zhu 1997, is 3 %)",
        100.0 * error
    );
    // Nothing may flow across the periodic z axis on average.
    let w_mean: f64 = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| p.velocity[i].z)
        .sum::<f64>()
        / u.len() as f64;
    let u_max = u.iter().cloned().fold(0.0, f64::max);
    assert!(w_mean.abs() < 1e-6 * u_max, "mean w = {w_mean}");
}
