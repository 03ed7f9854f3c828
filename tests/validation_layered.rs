//! Layered (two-fluid) plane Poiseuille flow against the steady solution of Bird, Stewart &
//! Lightfoot, Transport Phenomena, 2nd ed., §2.5 (two adjacent immiscible fluids), extended to
//! unequal layer widths (`lamella_post::reference::layered`).
//!
//! Channel of height H = 1.2 mm between fixed walls, periodic along x, driven by a body force;
//! the lower layer is 0.4 H thick and the upper 0.6 H (width ratio h1/h2 = 2/3). The flow starts
//! from rest and is run to 6 time constants of the slowest transient, H²/(π² ν_min), so the
//! start-up has decayed below 0.3 % (exp(−6)).
//!
//! Checks (bounds from the task):
//! - viscosity ratios μ1/μ2 = 1/4 and 4: relative L2 error of u(y) ≤ 3 %, interface velocity
//!   within 3 %, the peak velocity in the less viscous layer, and the gradient jump
//!   (du/dy)₂/(du/dy)₁ at the interface within 10 % of μ1/μ2 (shear-stress continuity); the
//!   tests hold each ratio to regression bounds about twice what it measures (2026-12-04) and
//!   name the task's bounds in their messages;
//! - convergence: the error at three resolutions falls with a fitted order ≥ 0.8 (about first
//!   order with simple walls is common practice);
//! - viscosity ratio 10 with harmonic and with arithmetic pair viscosity: both errors printed,
//!   and the harmonic mean is asserted to be the closer one (the measured outcome).

use std::time::Instant;

use glam::DVec2;
use lamella_case::{Case, PairViscosity};
use lamella_post::convergence::fit_observed_order;
use lamella_post::profile::compare_with_reference;
use lamella_post::reference::layered::LayeredChannel;
use lamella_run::runner::run_plain;
use lamella_sph::Kind;
use lamella_suite::layered::{self, DENSITY, HEIGHT, Layering};

/// Lower-layer share of the height: h1 = 0.4 H, h2 = 0.6 H.
const LOWER_SHARE: f64 = 0.4;
/// Periodic length in units of H/15, a whole number of spacings at 15, 20, 30 and 60 rows.
const LENGTH_UNITS: f64 = 6.0;
/// Viscosity of the less viscous layer (Pa·s); the other has `ratio` or `1/ratio` times more.
const THIN_VISCOSITY: f64 = 1.0e-3;

/// The bundled two-layer case rebuilt for `rows` particles across with μ1/μ2 = `ratio`.
fn layered_case(rows: usize, ratio: f64, pair: PairViscosity) -> (Case, LayeredChannel) {
    let (mu1, mu2) = if ratio >= 1.0 {
        (ratio * THIN_VISCOSITY, THIN_VISCOSITY)
    } else {
        (THIN_VISCOSITY, THIN_VISCOSITY / ratio)
    };
    let nu_min = THIN_VISCOSITY / DENSITY;
    layered::channel(
        rows,
        LENGTH_UNITS * HEIGHT / 15.0,
        Layering {
            lower_width: LOWER_SHARE * HEIGHT,
            lower_viscosity: mu1,
            upper_viscosity: mu2,
        },
        6.0 * HEIGHT * HEIGHT / (std::f64::consts::PI.powi(2) * nu_min),
        |case| case.pair_viscosity = pair,
    )
}

/// Measured quantities of one steady layered run.
struct Measured {
    relative_l2: f64,
    interface_velocity: f64,
    peak_y: f64,
    gradient_ratio: f64,
    max_density_deviation: f64,
    steps: u64,
    seconds: f64,
}

fn run_layered(rows: usize, ratio: f64, pair: PairViscosity) -> (Measured, LayeredChannel) {
    let (case, exact) = layered_case(rows, ratio, pair);
    let started = Instant::now();
    let mut sim = lamella_run::setup::simulation::<DVec2>(&case).expect("set-up");
    run_plain(&mut sim, case.time.end).unwrap_or_else(|failure| panic!("{failure}"));
    let p = sim.particles();
    let (y, u): (Vec<f64>, Vec<f64>) = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.position[i].y, p.velocity[i].x))
        .unzip();
    let cmp = compare_with_reference(&y, &u, 0.0, HEIGHT, rows, |yy| exact.velocity(yy))
        .expect("profile");
    let dx = HEIGHT / rows as f64;
    let row_u = &cmp.sampled.mean; // one bin per particle row, centres at (k + ½) dx
    let k1 = (exact.lower_width / dx).round() as usize; // first row of the upper layer
    // Each layer's profile is a parabola: fit one through three rows on each side and evaluate
    // it at the interface. The interface velocity uses the three rows nearest the interface; the
    // one-sided gradients skip the rows within the kernel support 2h = 2.6 dx of it, whose
    // particles feel both viscosities (the kernel smears the jump over its support), and use
    // the next three.
    let side_fit = |rows_k: [usize; 3]| -> (f64, f64) {
        let s: Vec<f64> = rows_k
            .iter()
            .map(|&k| (k as f64 + 0.5) * dx - exact.lower_width)
            .collect();
        let v: Vec<f64> = rows_k.iter().map(|&k| row_u[k]).collect();
        quadratic_at_zero(&s, &v)
    };
    let (lower_value, _) = side_fit([k1 - 3, k1 - 2, k1 - 1]);
    let (upper_value, _) = side_fit([k1, k1 + 1, k1 + 2]);
    let (_, lower_gradient) = side_fit([k1 - 6, k1 - 5, k1 - 4]);
    let (_, upper_gradient) = side_fit([k1 + 3, k1 + 4, k1 + 5]);
    let interface_velocity = 0.5 * (lower_value + upper_value);
    let max_density_deviation = (0..p.len())
        .filter(|&i| p.kind[i] == Kind::Fluid)
        .map(|i| (p.density[i] / DENSITY - 1.0).abs())
        .fold(0.0, f64::max);
    let peak_row = (0..row_u.len())
        .max_by(|&a, &b| row_u[a].total_cmp(&row_u[b]))
        .expect("rows");
    (
        Measured {
            relative_l2: cmp.relative_l2,
            interface_velocity,
            peak_y: (peak_row as f64 + 0.5) * dx,
            gradient_ratio: upper_gradient / lower_gradient,
            max_density_deviation,
            steps: sim.step_count(),
            seconds: started.elapsed().as_secs_f64(),
        },
        exact,
    )
}

/// Value and slope at s = 0 of the parabola through three points (Lagrange interpolation).
fn quadratic_at_zero(s: &[f64], v: &[f64]) -> (f64, f64) {
    let (s0, s1, s2) = (s[0], s[1], s[2]);
    let (d0, d1, d2) = (
        (s0 - s1) * (s0 - s2),
        (s1 - s0) * (s1 - s2),
        (s2 - s0) * (s2 - s1),
    );
    let value = v[0] * s1 * s2 / d0 + v[1] * s0 * s2 / d1 + v[2] * s0 * s1 / d2;
    let slope = -(v[0] * (s1 + s2) / d0 + v[1] * (s0 + s2) / d1 + v[2] * (s0 + s1) / d2);
    (value, slope)
}

/// Relative errors one layered run measured (2026-12-04) and its regression bounds, about
/// twice as large: (measured, bound) each.
struct Bounds {
    relative_l2: (f64, f64),
    interface_velocity: (f64, f64),
    gradient_jump: (f64, f64),
}

fn check_layered(ratio: f64, bounds: Bounds) {
    let (m, exact) = run_layered(30, ratio, PairViscosity::Harmonic);
    let ui = exact.interface_velocity();
    let interface_error = (m.interface_velocity - ui).abs() / ui;
    let jump = exact.gradient_jump_ratio(); // μ1/μ2
    let jump_error = (m.gradient_ratio - jump).abs() / jump.abs();
    println!(
        "layered μ1/μ2 = {ratio}: L2 {:.3} %, interface velocity {:.3} %, gradient jump {:.3} vs \
         {:.3} ({:.2} %), peak at y = {:.3e} m (exact {:.3e}), max density deviation {:.2} %, {} steps in {:.1} s",
        100.0 * m.relative_l2,
        100.0 * interface_error,
        m.gradient_ratio,
        jump,
        100.0 * jump_error,
        m.peak_y,
        exact.peak().y,
        100.0 * m.max_density_deviation,
        m.steps,
        m.seconds
    );
    let check = |what: &str, error: f64, (measured, bound): (f64, f64), task: f64| {
        assert!(
            error <= bound,
            "μ1/μ2 = {ratio}: {what} {:.3} % > the regression bound {:.2} % (measured {:.3} %; \
             the task's bound, against Bird, Stewart & Lightfoot §2.5, is {:.0} %)",
            100.0 * error,
            100.0 * bound,
            100.0 * measured,
            100.0 * task
        );
    };
    check("relative L2 error", m.relative_l2, bounds.relative_l2, 0.03);
    check(
        "interface velocity error",
        interface_error,
        bounds.interface_velocity,
        0.03,
    );
    let peak_in_upper = m.peak_y > exact.lower_width;
    let upper_less_viscous = exact.upper_viscosity < exact.lower_viscosity;
    assert_eq!(
        peak_in_upper, upper_less_viscous,
        "peak must lie in the less viscous layer"
    );
    check(
        "gradient jump error",
        jump_error,
        bounds.gradient_jump,
        0.10,
    );
}

#[test]
fn layered_flow_with_a_viscous_lower_layer() {
    check_layered(
        4.0,
        Bounds {
            relative_l2: (0.0008, 0.0016),
            interface_velocity: (0.00425, 0.0085),
            gradient_jump: (0.0034, 0.007),
        },
    );
}

#[test]
fn layered_flow_with_a_viscous_upper_layer() {
    check_layered(
        0.25,
        Bounds {
            relative_l2: (0.0012, 0.0025),
            interface_velocity: (0.00093, 0.002),
            gradient_jump: (0.0313, 0.065),
        },
    );
}

/// Three resolutions above the floor of about 0.1 % that the profile error reaches from 30 rows
/// on (0.123 % at 60 rows; its causes are in DEVELOPERS.md, "Quadratic no slip"): the layered
/// profile's error falls at about first order or better (common practice for a kink in the
/// profile; measured 1.90).
#[test]
fn layered_flow_converges_at_about_first_order() {
    let rows = [15usize, 20, 30];
    let mut spacings = Vec::new();
    let mut errors = Vec::new();
    for &n in &rows {
        let (m, _) = run_layered(n, 4.0, PairViscosity::Harmonic);
        println!(
            "convergence μ1/μ2 = 4, {n} rows: L2 {:.3} % ({} steps, {:.1} s)",
            100.0 * m.relative_l2,
            m.steps,
            m.seconds
        );
        spacings.push(HEIGHT / n as f64);
        errors.push(m.relative_l2);
    }
    let fit = fit_observed_order(&spacings, &errors).expect("fit");
    println!("observed order {:.2} (R² {:.3})", fit.order, fit.r_squared);
    assert!(fit.order >= 0.8, "observed order {} < 0.8", fit.order);
}

#[test]
fn harmonic_and_arithmetic_pair_viscosity_at_ratio_ten() {
    let (harmonic, _) = run_layered(30, 10.0, PairViscosity::Harmonic);
    let (arithmetic, _) = run_layered(30, 10.0, PairViscosity::Arithmetic);
    println!(
        "μ1/μ2 = 10: harmonic L2 {:.2} %, arithmetic L2 {:.2} %",
        100.0 * harmonic.relative_l2,
        100.0 * arithmetic.relative_l2
    );
    assert!(
        harmonic.relative_l2 < arithmetic.relative_l2,
        "harmonic {} vs arithmetic {}",
        harmonic.relative_l2,
        arithmetic.relative_l2
    );
}
