//! Searches built on the eigenvalue solver: growth-rate curves, the most unstable
//! wavenumber, neutral and critical Reynolds numbers, resolution checks, (m, n) maps.

use faer::c64;

use super::StabilityError;
use super::channel::LayeredChannel;
use super::spectrum::StabilityProblem;

fn leading(problem: &StabilityProblem) -> Result<c64, StabilityError> {
    problem.solve()?.leading().ok_or(StabilityError::NoMode)
}

/// A leading eigenvalue with its sensitivity to resolution.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CheckedMode {
    /// Leading wave speed at the problem's resolution.
    pub speed: c64,
    /// Temporal growth rate α c_i.
    pub growth_rate: f64,
    /// |Δc| when the points per layer are raised by half: an estimate of the error.
    pub resolution_change: f64,
}

/// Leading mode at the problem's resolution and at 1.5 times it, so a spurious or
/// unresolved leading eigenvalue shows up as a large `resolution_change`.
pub fn leading_checked(problem: &StabilityProblem) -> Result<CheckedMode, StabilityError> {
    let speed = leading(problem)?;
    let finer = problem.with_points(problem.points_per_layer * 3 / 2);
    let fine_speed = leading(&finer)?;
    Ok(CheckedMode {
        speed,
        growth_rate: problem.wavenumber * speed.im,
        resolution_change: (fine_speed - speed).norm(),
    })
}

/// One point of a growth-rate curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurvePoint {
    /// Wavenumber α.
    pub wavenumber: f64,
    /// Leading wave speed c.
    pub speed: c64,
    /// Temporal growth rate α c_i.
    pub growth_rate: f64,
}

fn curve_point(problem: &StabilityProblem, wavenumber: f64) -> Result<CurvePoint, StabilityError> {
    let speed = leading(&problem.with_wavenumber(wavenumber))?;
    Ok(CurvePoint {
        wavenumber,
        speed,
        growth_rate: wavenumber * speed.im,
    })
}

/// Leading mode at `steps` evenly spaced wavenumbers from `first` to `last` (inclusive).
pub fn growth_curve(
    problem: &StabilityProblem,
    first: f64,
    last: f64,
    steps: usize,
) -> Result<Vec<CurvePoint>, StabilityError> {
    growth_curve_observed(problem, first, last, steps, &mut |_| {})
}

/// [`growth_curve`], calling `done(points)` after each solved point (for a progress display).
#[allow(clippy::neg_cmp_op_on_partial_ord)] // `!(a > b)` also rejects NaN on purpose
pub fn growth_curve_observed(
    problem: &StabilityProblem,
    first: f64,
    last: f64,
    steps: usize,
    done: &mut dyn FnMut(usize),
) -> Result<Vec<CurvePoint>, StabilityError> {
    if steps < 2 || !(first > 0.0) || !(last > first) || !last.is_finite() {
        return Err(StabilityError::InvalidParameter(format!(
            "a wavenumber scan needs 0 < first < last and at least 2 steps, got {first}, {last}, {steps}"
        )));
    }
    (0..steps)
        .map(|k| {
            let t = k as f64 / (steps - 1) as f64;
            let point = curve_point(problem, first + t * (last - first));
            done(k + 1);
            point
        })
        .collect()
}

/// The most unstable wavenumber: the largest growth rate of `curve`, refined by golden-
/// section search between its neighbours (Press et al. 2007, *Numerical Recipes*, 3rd ed.,
/// §10.2) when it is an interior maximum.
pub fn most_unstable(
    problem: &StabilityProblem,
    curve: &[CurvePoint],
) -> Result<CurvePoint, StabilityError> {
    let best = (0..curve.len())
        .max_by(|&a, &b| curve[a].growth_rate.total_cmp(&curve[b].growth_rate))
        .ok_or_else(|| StabilityError::InvalidParameter("empty growth-rate curve".into()))?;
    if best == 0 || best == curve.len() - 1 {
        return Ok(curve[best]);
    }
    let ratio = (5.0_f64.sqrt() - 1.0) / 2.0;
    let (mut a, mut b) = (curve[best - 1].wavenumber, curve[best + 1].wavenumber);
    let mut x1 = b - ratio * (b - a);
    let mut x2 = a + ratio * (b - a);
    let mut p1 = curve_point(problem, x1)?;
    let mut p2 = curve_point(problem, x2)?;
    while b - a > 1e-7 * b {
        if p1.growth_rate > p2.growth_rate {
            b = x2;
            (x2, p2) = (x1, p1);
            x1 = b - ratio * (b - a);
            p1 = curve_point(problem, x1)?;
        } else {
            a = x1;
            (x1, p1) = (x2, p2);
            x2 = a + ratio * (b - a);
            p2 = curve_point(problem, x2)?;
        }
    }
    let refined = if p1.growth_rate > p2.growth_rate {
        p1
    } else {
        p2
    };
    Ok(if refined.growth_rate > curve[best].growth_rate {
        refined
    } else {
        curve[best]
    })
}

/// Secant iteration for a root of `f` from two starting points (relative tolerance `tol`).
fn secant(
    mut f: impl FnMut(f64) -> Result<f64, StabilityError>,
    mut x0: f64,
    mut x1: f64,
    tol: f64,
    what: &str,
) -> Result<f64, StabilityError> {
    let mut f0 = f(x0)?;
    let mut f1 = f(x1)?;
    for _ in 0..60 {
        if f1 == 0.0 {
            return Ok(x1);
        }
        if f1 == f0 {
            break;
        }
        let x2 = x1 - f1 * (x1 - x0) / (f1 - f0);
        if !x2.is_finite() || x2 <= 0.0 {
            break;
        }
        (x0, f0) = (x1, f1);
        x1 = x2;
        f1 = f(x1)?;
        if (x1 - x0).abs() <= tol * x1.abs() {
            return Ok(x1);
        }
    }
    Err(StabilityError::SearchFailed(format!(
        "the search for {what} did not converge; try another starting guess"
    )))
}

/// Reynolds number at which the leading mode of `problem` (at its wavenumber) is neutral,
/// c_i = 0, by secant iteration from `guess`.
pub fn neutral_reynolds(problem: &StabilityProblem, guess: f64) -> Result<f64, StabilityError> {
    secant(
        |re| Ok(leading(&problem.with_reynolds(re))?.im),
        guess,
        guess * 1.02,
        1e-11,
        "the neutral Reynolds number",
    )
}

/// The lowest point of the neutral curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CriticalPoint {
    /// Critical Reynolds number.
    pub reynolds: f64,
    /// Wavenumber at the critical point.
    pub wavenumber: f64,
    /// Wave speed there (c_i = 0).
    pub speed: c64,
}

/// Critical point: where c_i = 0 and ∂c_i/∂α = 0 (the minimum of the neutral curve
/// Re(α), since dRe/dα = −(∂c_i/∂α)/(∂c_i/∂Re)). Secant iteration on α for the zero of
/// ∂c_i/∂α (central difference, step 1e-4 α) taken on the neutral curve, which is found
/// at each α by [`neutral_reynolds`].
pub fn critical_point(
    problem: &StabilityProblem,
    wavenumber_guess: f64,
    reynolds_guess: f64,
) -> Result<CriticalPoint, StabilityError> {
    let mut re_last = reynolds_guess;
    let slope = |alpha: f64, re_last: &mut f64| -> Result<f64, StabilityError> {
        let at = problem.with_wavenumber(alpha);
        let re = neutral_reynolds(&at, *re_last)?;
        *re_last = re;
        let step = 1e-4 * alpha;
        let up = leading(&at.with_reynolds(re).with_wavenumber(alpha + step))?.im;
        let down = leading(&at.with_reynolds(re).with_wavenumber(alpha - step))?.im;
        Ok((up - down) / (2.0 * step))
    };
    let wavenumber = secant(
        |alpha| slope(alpha, &mut re_last),
        wavenumber_guess,
        wavenumber_guess * 1.01,
        1e-9,
        "the critical wavenumber",
    )?;
    let at = problem.with_wavenumber(wavenumber);
    let reynolds = neutral_reynolds(&at, re_last)?;
    Ok(CriticalPoint {
        reynolds,
        wavenumber,
        speed: leading(&at.with_reynolds(reynolds))?,
    })
}

/// One cell of a stability map.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapPoint {
    /// Viscosity ratio m = μ_lower/μ_upper.
    pub m: f64,
    /// Width ratio n = d_lower/d_upper.
    pub n: f64,
    /// Leading wave speed.
    pub speed: c64,
    /// Temporal growth rate α c_i.
    pub growth_rate: f64,
}

/// Growth rates (scaled, U_max/h) no larger than this in size are neutral: round-off. The
/// leading mode of one liquid (m = 1, any n) comes out at up to ±1.4e-15 on a map at Re = 1,
/// k h = π.
pub const NEUTRAL_RATE: f64 = 1e-10;

impl MapPoint {
    /// Whether the pair is unstable: growth rate above [`NEUTRAL_RATE`].
    pub fn is_unstable(&self) -> bool {
        self.growth_rate > NEUTRAL_RATE
    }
}

/// Leading mode of the two-layer channel for every (m, n) pair, `m` varying fastest, at
/// the Reynolds number, wavenumber, tension and resolution of `problem` (whose channel is
/// replaced).
pub fn stability_map(
    problem: &StabilityProblem,
    ms: &[f64],
    ns: &[f64],
) -> Result<Vec<MapPoint>, StabilityError> {
    stability_map_observed(problem, ms, ns, &mut |_| {})
}

/// [`stability_map`], calling `done(points)` after each solved pair (for a progress display).
pub fn stability_map_observed(
    problem: &StabilityProblem,
    ms: &[f64],
    ns: &[f64],
    done: &mut dyn FnMut(usize),
) -> Result<Vec<MapPoint>, StabilityError> {
    let mut out = Vec::with_capacity(ms.len() * ns.len());
    for &n in ns {
        for &m in ms {
            let at = StabilityProblem {
                channel: LayeredChannel::two_layer(m, n)?,
                ..problem.clone()
            };
            let speed = leading(&at)?;
            out.push(MapPoint {
                m,
                n,
                speed,
                growth_rate: problem.wavenumber * speed.im,
            });
            done(out.len());
        }
    }
    Ok(out)
}
