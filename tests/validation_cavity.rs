//! Lid-driven square cavity at Re = 100 against the centre-line tables of Ghia, Ghia & Shin
//! 1982 (J. Comput. Phys. 48, Tables I and II; values as recalled in
//! `lamella_post::reference::cavity`). Bound: the largest deviation of u on the vertical centre
//! line and of v on the horizontal centre line ≤ 0.05 of the lid speed. Case: the bundled
//! `cavity-re100.ron` (40 particles across, c0 = 10 U, no particle shifting, run to 20
//! lid-transit times L/U). The centre lines are averaged over five states 0.01 s (one lid
//! transit) apart at the end: one state alone carries particle noise of about 0.01–0.03 U,
//! and two runs that differ only in the order of floating-point sums were measured 0.0345 U and
//! 0.0183 U from the table.

use std::time::Instant;

use glam::DVec2;
use lamella_post::reference::cavity::{CentrelineTable, GHIA_RE100_U, GHIA_RE100_V};
use lamella_run::runner::run_plain;
use lamella_sph::{Kind, Particles};

/// Velocity of the fluid at `x` by a kernel-weighted linear least-squares fit over the fluid
/// particles (moving least squares of first order, Liu & Liu 2003, "Smoothed Particle
/// Hydrodynamics: a meshfree particle method", §5): exact for linear fields, also next to a wall
/// where the kernel support is cut.
fn velocity_at(p: &Particles<DVec2>, kernel: &lamella_sph::Kernel, x: DVec2) -> DVec2 {
    // Normal equations of u(x_j) ≈ a + b·(x_j − x), weights W(|x_j − x|).
    let mut m = [[0.0f64; 3]; 3];
    let mut rhs = [[0.0f64; 2]; 3];
    for i in 0..p.len() {
        if p.kind[i] != Kind::Fluid {
            continue;
        }
        let d = p.position[i] - x;
        let w = kernel.value(d.length());
        if w == 0.0 {
            continue;
        }
        let basis = [1.0, d.x, d.y];
        for r in 0..3 {
            for c in 0..3 {
                m[r][c] += w * basis[r] * basis[c];
            }
            rhs[r][0] += w * basis[r] * p.velocity[i].x;
            rhs[r][1] += w * basis[r] * p.velocity[i].y;
        }
    }
    let solve = |col: usize| -> f64 {
        // Cramer's rule for the constant term a.
        let det = |a: [[f64; 3]; 3]| {
            a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
                - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
                + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0])
        };
        let mut a0 = m;
        for r in 0..3 {
            a0[r][0] = rhs[r][col];
        }
        det(a0) / det(m)
    };
    DVec2::new(solve(0), solve(1))
}

/// Largest |sampled − table| over the interior table points, and where it occurs; `sampled`
/// holds one value per table point.
fn deviation(table: &CentrelineTable, sampled: &[f64]) -> (f64, f64) {
    let n = table.coordinate.len();
    (1..n - 1)
        .map(|i| ((sampled[i] - table.value[i]).abs(), table.coordinate[i]))
        .fold((0.0, 0.0), |a, b| if b.0 > a.0 { b } else { a })
}

#[test]
fn centreline_velocities_match_ghia_at_re_100() {
    let case = lamella_case::load(&lamella_suite::cases_dir().join("cavity-re100.ron"))
        .expect("bundled case loads");
    let started = Instant::now();
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    let side = case.extent(0);
    let lid = 0.1;
    let transit = side / lid;
    let kernel = sim.config().kernel;
    // The table points' sampled velocities, summed over the states averaged.
    let mut u_sum = vec![0.0; GHIA_RE100_U.coordinate.len()];
    let mut v_sum = vec![0.0; GHIA_RE100_V.coordinate.len()];
    const STATES: usize = 5;
    for k in (0..STATES).rev() {
        let t = case.time.end - k as f64 * transit;
        run_plain(&mut sim, t).unwrap_or_else(|failure| panic!("{failure}"));
        let p = sim.particles();
        for (sum, &s) in u_sum.iter_mut().zip(GHIA_RE100_U.coordinate) {
            *sum += velocity_at(p, &kernel, DVec2::new(0.5 * side, s * side)).x / lid;
        }
        for (sum, &s) in v_sum.iter_mut().zip(GHIA_RE100_V.coordinate) {
            *sum += velocity_at(p, &kernel, DVec2::new(s * side, 0.5 * side)).y / lid;
        }
    }
    let mean = |sums: Vec<f64>| -> Vec<f64> { sums.iter().map(|s| s / STATES as f64).collect() };
    let (du, at_u) = deviation(&GHIA_RE100_U, &mean(u_sum));
    let (dv, at_v) = deviation(&GHIA_RE100_V, &mean(v_sum));
    println!(
        "cavity Re = 100, mean of the last {STATES} transits: max |Δu|/U = {du:.4} (at y/L = \
         {at_u}), max |Δv|/U = {dv:.4} (at x/L = {at_v}); {} steps in {:.1?}",
        sim.step_count(),
        started.elapsed()
    );
    assert!(
        du <= 0.05,
        "u on the vertical centre line off by {du} of the lid speed"
    );
    assert!(
        dv <= 0.05,
        "v on the horizontal centre line off by {dv} of the lid speed"
    );
}
