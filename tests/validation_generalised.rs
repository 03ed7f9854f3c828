//! Generalised Newtonian channels: shear-thinning and shear-thickening power laws and a
//! Bingham plastic, driven from rest by a body force between fixed walls, against the closed-form
//! slit profiles (Chhabra & Richardson, Non-Newtonian Flow and Applied Rheology, 2nd ed. 2008,
//! ch. 3; chapter recalled from memory), and a Newtonian layer under a shear-thinning one against
//! the numerically integrated 1D solution of `lamella_post::reference::generalised`.
//!
//! The bundled cases run at 30 particles across; the tests run them at 20 (spacing 6e-5 m) to
//! keep the suite short. The task's bounds are a relative L2 error ≤ 5 % for the power laws and
//! the plug width within 10 % for the Bingham plastic; the tests also hold each to a regression
//! bound about twice what it measured (2026-12-04).

use glam::DVec2;
use lamella_case::Case;
use lamella_post::fit::linear_fit;
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::generalised::{bingham_slit_velocity, power_law_slit_velocity};
use lamella_run::runner::run_plain;
use lamella_sph::{Kind, Simulation};

/// Particles across the channel in these tests.
const ROWS: usize = 20;

fn load_coarse(name: &str) -> Case {
    let mut case = lamella_case::load(&lamella_suite::cases_dir().join(name)).expect("case loads");
    case.particles.spacing = case.extent(1) / ROWS as f64;
    case
}

/// Runs `case` from rest to its end time.
fn run(case: &Case) -> Simulation<DVec2> {
    let mut sim = lamella_run::setup::simulation::<DVec2>(case).expect("set-up");
    if let Err(failure) = run_plain(&mut sim, case.time.end) {
        panic!("{failure}");
    }
    sim
}

/// Heights (m) and streamwise velocities (m/s) of the fluid particles.
fn fluid_profile(sim: &Simulation<DVec2>) -> (Vec<f64>, Vec<f64>) {
    let p = sim.particles();
    (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.position[i].y, p.velocity[i].x))
        .unzip()
}

fn force_density(case: &Case) -> f64 {
    case.phases[0].density * case.body_force.as_ref().expect("a body force")[0]
}

/// A power-law liquid of index `index` and consistency `consistency` in the bundled
/// shear-thinning channel, run to `end`: relative L2 error of the row-averaged profile against
/// the closed-form slit profile.
fn power_law_error(index: f64, consistency: f64, end: f64) -> f64 {
    let mut case = load_coarse("shear-thinning-channel.ron");
    let lamella_case::ViscosityLaw::PowerLaw {
        min_viscosity,
        max_viscosity,
        ..
    } = case.phases[0].viscosity_law
    else {
        panic!("the bundled case has a power law");
    };
    case.phases[0].viscosity_law = lamella_case::ViscosityLaw::PowerLaw {
        consistency,
        index,
        min_viscosity,
        max_viscosity,
    };
    case.time.end = end;
    let sim = run(&case);
    let (y, u) = fluid_profile(&sim);
    let (gap, g) = (case.extent(1), force_density(&case));
    let exact = |y: f64| power_law_slit_velocity(consistency, index, g, gap, y);
    let error = compare_with_reference(&y, &u, 0.0, gap, ROWS, exact)
        .expect("profile")
        .relative_l2;
    println!(
        "power law n = {index}: relative L2 {:.3} % after {} steps",
        100.0 * error,
        sim.step_count()
    );
    error
}

/// The task's bound on the power-law profiles.
const POWER_LAW_BOUND: f64 = 0.05;

#[test]
fn a_shear_thinning_power_law_matches_the_slit_profile() {
    // n = 0.5, the bundled case at 20 across: measured 2.11 % (30 across: 1.12 %).
    let error = power_law_error(0.5, 2.68e-3, 2.5);
    assert!(error <= POWER_LAW_BOUND, "{:.3} % > 5 %", 100.0 * error);
    assert!(
        error <= 0.036,
        "{:.3} % > the regression bound 3.6 % (measured 2.11 %)",
        100.0 * error
    );
}

#[test]
fn a_shear_thickening_power_law_matches_the_slit_profile() {
    // n = 1.5 with K for the same 4 mm/s peak; steady within 1 s. Measured 0.494 %.
    let error = power_law_error(1.5, 3.24e-4, 1.0);
    assert!(error <= POWER_LAW_BOUND, "{:.3} % > 5 %", 100.0 * error);
    assert!(
        error <= 0.012,
        "{:.3} % > the regression bound 1.2 % (measured 0.494 %)",
        100.0 * error
    );
}

/// The plug half-width of a run of the bundled yield-stress channel, from the velocity outside
/// the plug. With s the distance from the centre line, the stress is G s; where the Bingham
/// liquid has yielded G s = τ0 + μp |du/ds|, so |du/ds| = (G/μp)(s − y0) with y0 = τ0/G: the
/// row-to-row slope of the velocity is linear in s and crosses zero at the plug's edge. A straight-line fit of the
/// slope over the rows with s ≥ H/4 (clear of the expected plug, y0 = H/6) extrapolates to y0;
/// no fit of the yield stress or the plastic viscosity goes in.
fn plug_half_width(y: &[f64], u: &[f64], gap: f64) -> f64 {
    let binned = lamella_post::profile::bin_average(y, u, 0.0, gap, ROWS).expect("bins");
    let dy = gap / ROWS as f64;
    let centre = |i: usize| (i as f64 + 0.5) * dy;
    // Fold both halves onto s = |y − H/2|; slope taken towards the centre line.
    let (mut s, mut slope) = (Vec::new(), Vec::new());
    for i in 0..ROWS - 1 {
        let mid = 0.5 * (centre(i) + centre(i + 1));
        let distance = (mid - 0.5 * gap).abs();
        if distance < 0.25 * gap {
            continue;
        }
        let du_dy = (binned.mean[i + 1] - binned.mean[i]) / dy;
        s.push(distance);
        slope.push(if mid < 0.5 * gap { du_dy } else { -du_dy });
    }
    let fit = linear_fit(&s, &slope).expect("a straight line through the slopes");
    -fit.intercept / fit.slope
}

#[test]
fn a_bingham_plastic_flows_around_a_plug_of_the_analytical_width() {
    let case = load_coarse("yield-stress-channel.ron");
    let lamella_case::ViscosityLaw::Bingham {
        yield_stress,
        plastic_viscosity,
        ..
    } = case.phases[0].viscosity_law
    else {
        panic!("the bundled case is a Bingham plastic");
    };
    let sim = run(&case);
    let (y, u) = fluid_profile(&sim);
    let (gap, g) = (case.extent(1), force_density(&case));
    // Bird, Stewart & Lightfoot §8.3 / Chhabra & Richardson ch. 3 (sections recalled from
    // memory): the plug reaches from the centre line to where the stress G s falls to τ0.
    let expected = yield_stress / g;
    let measured = plug_half_width(&y, &u, gap);
    let plug_error = (measured - expected).abs() / expected;
    let exact = |y: f64| bingham_slit_velocity(yield_stress, plastic_viscosity, g, gap, y);
    let l2 = compare_with_reference(&y, &u, 0.0, gap, ROWS, exact)
        .expect("profile")
        .relative_l2;
    println!(
        "Bingham: plug half-width {measured:.4e} m against {expected:.4e} ({:+.2} %), profile \
         relative L2 {:.3} % against the ideal (unregularised) Bingham profile",
        100.0 * (measured / expected - 1.0),
        100.0 * l2
    );
    assert!(
        plug_error <= 0.10,
        "plug width {:.2} % off > 10 %",
        100.0 * plug_error
    );
    // Measured: plug half-width −0.18 %, profile 1.46 % from the ideal Bingham profile (the
    // regularised law creeps in the plug; at 30 across 0.8 %).
    assert!(
        plug_error <= 0.01,
        "plug width {:.2} % off > the regression bound 1 % (measured −0.18 %)",
        100.0 * plug_error
    );
    assert!(
        l2 <= 0.026,
        "profile {:.3} % > the regression bound 2.6 % (measured 1.46 %)",
        100.0 * l2
    );
}

#[test]
fn a_newtonian_layer_under_a_shear_thinning_one_matches_the_1d_solution() {
    let case = load_coarse("sauce-over-syrup.ron");
    let reference = lamella_run::reference::channel_reference_or_why(&case)
        .unwrap_or_else(|why| panic!("the case has a reference: {why}"));
    let lamella_run::reference::Reference::Generalised(channel) = &reference else {
        panic!("a generalised channel, not {}", reference.name());
    };
    let sim = run(&case);
    let (y, u) = fluid_profile(&sim);
    let gap = case.extent(1);
    let comparison =
        compare_with_reference(&y, &u, 0.0, gap, ROWS, |y| channel.velocity(y)).expect("profile");
    // The interface velocity: the row-averaged profile interpolated linearly to the interface
    // height, against the 1D solution there.
    let interface = case.layer_pairs()[0].interface;
    let dy = gap / ROWS as f64;
    let below = ((interface / dy) - 0.5).floor() as usize;
    let (y0, y1) = ((below as f64 + 0.5) * dy, (below as f64 + 1.5) * dy);
    let (u0, u1) = (
        comparison.sampled.mean[below],
        comparison.sampled.mean[below + 1],
    );
    let measured = u0 + (u1 - u0) * (interface - y0) / (y1 - y0);
    let expected = channel.interface_velocities()[0];
    let interface_error = (measured / expected - 1.0).abs();
    println!(
        "sauce over syrup: relative L2 {:.3} %, interface velocity {measured:.5e} m/s against \
         {expected:.5e} ({:+.3} %)",
        100.0 * comparison.relative_l2,
        100.0 * (measured / expected - 1.0)
    );
    // The task asks that the interface velocity match the 1D solution; 2 % is the bound chosen
    // here (common practice for a coarse SPH profile), the rest regression bounds.
    assert!(
        interface_error <= 0.02,
        "interface velocity {:.3} % off > 2 %",
        100.0 * interface_error
    );
    // Measured: interface −0.86 %, profile 2.09 % (30 across: profile 1.25 %).
    assert!(
        interface_error <= 0.013,
        "interface velocity {:.3} % off > the regression bound 1.3 % (measured −0.86 %)",
        100.0 * interface_error
    );
    assert!(
        comparison.relative_l2 <= 0.035,
        "profile {:.3} % > the regression bound 3.5 % (measured 2.09 %)",
        100.0 * comparison.relative_l2
    );
}
