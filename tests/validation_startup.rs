//! Start-up flows between parallel plates against the series solutions of Morris, Fox & Zhu 1997
//! ("Modeling low Reynolds number incompressible flows using SPH", J. Comput. Phys. 136,
//! §4.1–4.2): plane Poiseuille flow driven by a body force, and Couette flow driven by a sliding
//! upper wall, both from rest, 30 particles across the gap (the bundled cases). The task's
//! bound is a relative L2 error of the velocity profile ≤ 3 % at the steady state; the tests
//! hold each case to regression bounds about twice what it measures (2026-12-04, with the
//! second-order fit of the quadratic no slip), during the transient and at the steady state,
//! and name the task's bound in their messages. The steady Poiseuille profile's 0.10 % is the
//! floor described in DEVELOPERS.md ("Quadratic no slip"), not the walls.

use std::time::Instant;

use glam::DVec2;
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::startup::PlateGap;
use lamella_run::runner::run_plain;
use lamella_sph::{Kind, Simulation};

fn advance_to(sim: &mut Simulation<DVec2>, t: f64) {
    if let Err(failure) = run_plain(sim, t) {
        panic!("{failure}");
    }
}

/// Relative L2 error of the bin-averaged fluid velocity u_x(y) (one bin per particle row).
fn profile_error(
    sim: &Simulation<DVec2>,
    gap: f64,
    rows: usize,
    exact: impl Fn(f64) -> f64,
) -> f64 {
    let p = sim.particles();
    let (y, u): (Vec<f64>, Vec<f64>) = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.position[i].y, p.velocity[i].x))
        .unzip();
    compare_with_reference(&y, &u, 0.0, gap, rows, exact)
        .expect("profile")
        .relative_l2
}

fn load(name: &str) -> lamella_case::Case {
    lamella_case::load(&lamella_suite::cases_dir().join(name)).expect("bundled case loads")
}

/// The task's bound on the steady profile's relative L2 error (Morris, Fox & Zhu 1997 as the
/// reference).
const TASK_BOUND: f64 = 0.03;

/// Regression bounds on the relative L2 error of a start-up case: about twice the largest
/// error measured during the transient and at the steady state.
struct Bounds {
    /// The largest measured during the transient (t < end) and its bound.
    transient: (f64, f64),
    /// Measured at the steady state (the end time) and its bound.
    steady: (f64, f64),
}

/// Runs a bundled start-up case with 30 particles across and compares its profile with the
/// series `reference(plates, y, t)` at several times, against `bounds`.
fn check_startup(
    name: &str,
    label: &str,
    bounds: Bounds,
    reference: impl Fn(&lamella_case::Case, &PlateGap, f64, f64) -> f64,
) {
    let case = load(name);
    let started = Instant::now();
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    let nu = case.phase_viscosity(0) / case.phases[0].density;
    let plates = PlateGap {
        gap: case.extent(1),
        nu,
    };
    let rows = case.lattice_counts()[1];
    assert_eq!(rows, 30, "30 particles across the channel");
    let mut last = f64::NAN;
    for t in [0.05, 0.1, 0.2, 0.4, case.time.end] {
        advance_to(&mut sim, t);
        last = profile_error(&sim, plates.gap, rows, |y| reference(&case, &plates, y, t));
        println!(
            "{label} t = {t:.2} s: relative L2 error {:.3} %",
            100.0 * last
        );
        let (measured, bound) = bounds.transient;
        assert!(
            last <= bound,
            "{label} at t = {t} s: relative L2 error {:.3} % > the regression bound {:.2} % \
             (measured at most {:.3} % during the start-up; the task's steady-state bound is \
             {:.0} %)",
            100.0 * last,
            100.0 * bound,
            100.0 * measured,
            100.0 * TASK_BOUND
        );
    }
    println!(
        "{label}: {} steps in {:.1?}",
        sim.step_count(),
        started.elapsed()
    );
    let (measured, bound) = bounds.steady;
    assert!(
        last <= bound,
        "steady {label} profile: relative L2 error {:.3} % > the regression bound {:.2} % \
         (measured {:.3} %; the task's bound, against Morris, Fox & Zhu 1997, is {:.0} %)",
        100.0 * last,
        100.0 * bound,
        100.0 * measured,
        100.0 * TASK_BOUND
    );
}

#[test]
fn startup_poiseuille_follows_the_morris_series() {
    let bounds = Bounds {
        transient: (0.00102, 0.0021),
        steady: (0.00102, 0.0021),
    };
    check_startup(
        "poiseuille.ron",
        "Poiseuille",
        bounds,
        |case, plates, y, t| {
            let force = case.body_force.as_ref().expect("body force")[0];
            plates.poiseuille_startup(force, y, t)
        },
    );
}

#[test]
fn startup_couette_follows_the_morris_series() {
    let bounds = Bounds {
        transient: (0.00161, 0.0033),
        steady: (0.00012, 0.00025),
    };
    check_startup("couette.ron", "Couette", bounds, |case, plates, y, t| {
        let lid = case
            .walls
            .iter()
            .find_map(|w| w.velocity.as_ref())
            .expect("a moving wall")[0];
        plates.couette_startup(lid, y, t)
    });
}
