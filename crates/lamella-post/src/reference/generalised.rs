//! Steady, fully developed flow of stacked generalised Newtonian layers in a plane channel: a
//! numerical reference solver ([`GeneralisedChannel`]) and closed-form slit profiles of a
//! power-law fluid and a Bingham plastic to check it and SPH runs against.
//!
//! # The channel
//!
//! Layers listed bottom to top fill 0 = y_0 < y_1 < … < y_N = H. Layer i has the width
//! h_i = y_{i+1} − y_i, a force density f_i (N/m³) along +x (ρ_i g for a body force g per unit
//! mass, −dp/dx for a pressure gradient) and a generalised Newtonian law: shear stress
//! τ = μ_i(|γ̇|) γ̇ with the signed shear rate γ̇ = du/dy and a viscosity μ_i > 0. The walls do
//! not slip: u(0) = 0 and u(H) = U, the speed of the top wall (0 for a fixed wall). Velocity and
//! shear stress are continuous across the interfaces.
//!
//! # Method
//!
//! 1. Momentum balance. Steady and fully developed, the x-momentum balance is
//!    dτ/dy = −f(y), so τ(y) = τ_w − F(y) with F(y) = ∫₀^y f dy' (piecewise linear, continuous)
//!    and the unknown lower-wall stress τ_w = τ(0). Stress continuity at the interfaces holds
//!    by construction.
//! 2. The law, inverted. In layer i the signed shear rate has the sign of τ and the magnitude
//!    s that solves μ_i(s) s = |τ|. It is found in ln s by Brent's method on
//!    ψ(ln s) = ln μ_i(s) + ln s − ln |τ| (a straight line for a power law), with the bracket
//!    grown from s = 1 1/s in steps of ln s that double, and stops when ln s is known to 1e−13
//!    (γ̇ to a relative 1e−13). Where the law's stress at 1e−200 1/s already exceeds |τ| (a
//!    yield stress not reached, as in the plug of the Bingham law μ = μp + τ0/γ̇) the shear
//!    rate is taken as zero; where it stays below |τ| up to 1e200 1/s there is no solution and
//!    the solver says so. The viscosity is never asked for at γ̇ = 0.
//! 3. Velocity, one integral. u(y) = ∫₀^y γ̇ dy' runs through all the layers, so the velocity
//!    is continuous at the interfaces by construction. Each layer is cut into
//!    `points_per_layer − 1` equal intervals of width Δ. Where τ = 0 inside a layer, at
//!    y* = y_i + τ(y_i)/f_i, γ̇ ∝ |τ|^(1/n) has a kink or a singular derivative, and
//!    u − u(y*) ∝ |y − y*|^(1+1/n) has a fourth derivative without bound; so y* is a cut too,
//!    with 20 more on each side at y* ± Δ, y* ± Δ/2, …, y* ± Δ/2¹⁹. Every interval near y* is
//!    then no longer than its distance from it, and both the quadrature and the interpolation
//!    of step 5 stay accurate there (for n = 1.5 the cubic's error on [y*, y* + Δ] would be
//!    2 % of u(y* + Δ) − u(y*); on [y* + a, y* + 2a] it is 0.13 % of u(y* + a) − u(y*)). Each
//!    interval is integrated by 5-point Gauss–Legendre quadrature (Abramowitz & Stegun,
//!    Handbook of Mathematical Functions, 1964, Table 25.4), exact for a polynomial γ̇ of
//!    degree ≤ 9 in y, hence for the Newtonian profile up to rounding. On the two intervals
//!    that end at y* the substitution y = y* ± d t³ (d the interval's width) turns a behaviour
//!    |y − y*|^α into t^(3α+2) (t⁴ for n = 1.5, t⁸ for n = 0.5), smooth enough for the rule.
//!    Kinks of a law itself (the yield surfaces |τ| = τ0 of a Bingham law) are not cuts: an
//!    interval of width d holding one is integrated with an error O(d²).
//! 4. The wall stress. Whatever the law, τ_w = F_min (the least of F) gives τ ≤ 0 everywhere,
//!    so γ̇ ≤ 0 and u(H) ≤ 0, and τ_w = F_max gives u(H) ≥ 0. That bracket (for U = 0), or one
//!    widened on U's side by steps growing fourfold from a stress scale, holds u(H) = U, and
//!    Brent's method (R. P. Brent, Algorithms for Minimization without Derivatives, 1973,
//!    ch. 4) finds τ_w in it to a relative 1e−13. For a monotone flow curve every γ̇, hence
//!    u(H), grows with τ_w, and the root is unique.
//! 5. The table. The solved profile is kept at the cuts: y, u, γ̇ and ∫₀^y u dy'. Between cuts
//!    the velocity is the cubic Hermite interpolant through u and du/dy = γ̇ (exact for the
//!    Newtonian parabola, error O(Δ⁴) where the profile is smooth), the shear rate is linear
//!    between cuts, the flow rates are the exact integrals of the Hermite cubics and the stress
//!    is the linear τ(y) itself.
//!
//! A flow curve μ(γ̇)γ̇ that is not monotone gives some stresses more than one shear rate, and
//! the channel more than one steady profile; the solver then returns one of them (the one its
//! root searches converge to) without saying which.
//!
//! The closed forms are the slit flows of Chhabra & Richardson, Non-Newtonian Flow and Applied
//! Rheology, 2nd ed., 2008, chapter 3 (section recalled from memory), derived again in each
//! function's doc comment so that a reader can check them.

use thiserror::Error;

/// Largest number of table points, summed over the layers (each layer may add
/// 1 + 2 [`KINK_GRADING`] cuts around the height where τ = 0): 2²² points of four numbers each
/// are 128 MiB.
const MAX_TABLE_POINTS: usize = 1 << 22;

/// Number of cuts on each side of the height where τ = 0, at distances Δ, Δ/2, …, Δ/2¹⁹ from it
/// (Δ the spacing of the equal intervals).
const KINK_GRADING: usize = 20;

/// Bound on |ln γ̇| in the inversion of a law: shear rates run from 1e−200 to 1e200 1/s
/// (ln 1e200 ≈ 460.5).
const LOG_RATE_LIMIT: f64 = 460.0;

/// Absolute tolerance on ln γ̇ in the inversion of a law, a relative tolerance on γ̇.
const RATE_TOLERANCE: f64 = 1e-13;

/// Relative tolerance on the wall stress τ_w.
const STRESS_TOLERANCE: f64 = 1e-13;

/// Most iterations of Brent's method; it converges in far fewer (at worst about the square of
/// the bisection count, some 50² for the brackets here).
const MAX_ROOT_ITERATIONS: usize = 3000;

/// Factor by which the wall-stress bracket grows per step.
const BRACKET_GROWTH: f64 = 4.0;

/// Most steps of growth of the wall-stress bracket (4⁵²⁰ overflows an f64 long before).
const MAX_BRACKET_STEPS: usize = 520;

/// Abscissae of the 5-point Gauss–Legendre rule on [−1, 1] (Abramowitz & Stegun 1964,
/// Table 25.4): 0, ±(1/3)√(5 − 2√(10/7)), ±(1/3)√(5 + 2√(10/7)).
const GAUSS_NODES: [f64; 5] = [
    -0.906_179_845_938_664,
    -0.538_469_310_105_683_1,
    0.0,
    0.538_469_310_105_683_1,
    0.906_179_845_938_664,
];

/// Weights of the 5-point Gauss–Legendre rule, (322 ∓ 13√70)/900 and 128/225 (Abramowitz &
/// Stegun 1964, Table 25.4).
const GAUSS_WEIGHTS: [f64; 5] = [
    0.236_926_885_056_189_1,
    0.478_628_670_499_366_5,
    0.568_888_888_888_888_9,
    0.478_628_670_499_366_5,
    0.236_926_885_056_189_1,
];

/// One layer of the channel, listed bottom to top.
#[derive(Clone, Copy)]
pub struct FlowLayer<'a> {
    /// Width of the layer (m), positive.
    pub width: f64,
    /// Driving force density along +x (N/m³): ρ g for a body force g per unit mass, −dp/dx for
    /// a pressure gradient.
    pub force_density: f64,
    /// The layer's law: viscosity μ (Pa·s) at the shear-rate magnitude γ̇ > 0 (1/s), positive
    /// and finite; the stress is τ = μ(|γ̇|) γ̇. It is never called at γ̇ = 0.
    pub viscosity: &'a (dyn Fn(f64) -> f64 + Sync),
}

/// Why a generalised channel cannot be solved.
#[derive(Debug, Error, PartialEq)]
pub enum GeneralisedError {
    /// The channel has no layer.
    #[error("a channel needs at least one layer")]
    NoLayers,
    /// Fewer than two points per layer.
    #[error("points_per_layer = {0}: each layer needs at least 2 (its two boundaries)")]
    TooFewPoints(usize),
    /// The table would exceed 2²² points in all (each layer adds up to 41 around τ = 0).
    #[error(
        "{points} points per layer over {layers} layers exceed the table limit of \
         {MAX_TABLE_POINTS} points"
    )]
    TooManyPoints {
        /// Points asked for per layer.
        points: usize,
        /// Number of layers.
        layers: usize,
    },
    /// A width is not a positive finite number.
    #[error("layer {layer}: width {width} m must be positive and finite")]
    InvalidWidth {
        /// Index of the layer, from 0 at the bottom.
        layer: usize,
        /// The width given (m).
        width: f64,
    },
    /// A force density is not finite.
    #[error("layer {layer}: force density {force_density} N/m³ is not finite")]
    InvalidForce {
        /// Index of the layer, from 0 at the bottom.
        layer: usize,
        /// The force density given (N/m³).
        force_density: f64,
    },
    /// The top wall speed is not finite.
    #[error("top wall speed {0} m/s is not finite")]
    InvalidWallSpeed(f64),
    /// A sum over the layers or the velocity overflowed.
    #[error("{quantity} is not finite ({value})")]
    NotFinite {
        /// What overflowed.
        quantity: &'static str,
        /// Its value.
        value: f64,
    },
    /// A law returned a viscosity that is not positive and finite.
    #[error(
        "layer {layer}: the law gives viscosity {viscosity} Pa·s at shear rate {shear_rate} 1/s; \
         it must be positive and finite"
    )]
    InvalidViscosity {
        /// Index of the layer, from 0 at the bottom.
        layer: usize,
        /// Shear rate the law was called at (1/s).
        shear_rate: f64,
        /// What it returned (Pa·s).
        viscosity: f64,
    },
    /// A law's stress μ(γ̇)γ̇ never reaches the stress the momentum balance asks for.
    #[error(
        "layer {layer}: the law's stress μ(γ̇)γ̇ stays below |τ| = {stress} Pa for every shear \
         rate up to 1e200 1/s"
    )]
    NoShearRate {
        /// Index of the layer, from 0 at the bottom.
        layer: usize,
        /// The stress magnitude asked for (Pa).
        stress: f64,
    },
    /// No wall stress was found that brackets the top wall speed.
    #[error(
        "no lower-wall stress found that moves the top wall at {wall_speed} m/s \
         (searched up to |τ_w| = {searched} Pa)"
    )]
    NoBracket {
        /// The top wall speed asked for (m/s).
        wall_speed: f64,
        /// Largest wall stress magnitude tried (Pa).
        searched: f64,
    },
}

/// One table point: height, velocity, signed shear rate (from the law of the layer that owns
/// the point) and the flow rate ∫₀^y u dy' below it.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Node {
    y: f64,
    velocity: f64,
    shear_rate: f64,
    volume: f64,
}

/// Steady profile of a stack of generalised Newtonian layers between a fixed lower wall and a
/// sliding (or fixed) upper wall, tabulated by [`GeneralisedChannel::solve`]; see the module
/// docs for the method.
#[derive(Clone, Debug, PartialEq)]
pub struct GeneralisedChannel {
    /// Stress at the lower wall τ_w = τ(0) (Pa).
    wall_stress: f64,
    /// Layer boundaries y_0 = 0 < … < y_N = H (m).
    boundaries: Vec<f64>,
    /// Force density of each layer (N/m³).
    force_densities: Vec<f64>,
    /// F(y_j) = ∫₀^{y_j} f dy at each boundary (Pa).
    forces_below: Vec<f64>,
    /// Table points of each layer, bottom to top; each layer's first and last points sit on
    /// its boundaries.
    layers: Vec<Vec<Node>>,
}

/// A bracket of a root: f(a) and f(b) of opposite signs, or one of them zero.
#[derive(Clone, Copy, Debug)]
struct Bracket {
    a: f64,
    fa: f64,
    b: f64,
    fb: f64,
}

/// Brent's method (Brent 1973, ch. 4, the algorithm "zeroin"): inverse quadratic
/// interpolation and secant steps, falling back on bisection, so the bracket always shrinks.
/// Stops when the bracket's half width is at most 2ε|b| + tolerance(b)/2 or f(b) = 0; after
/// [`MAX_ROOT_ITERATIONS`] it returns the best point so far.
fn brent<F, T>(mut f: F, start: Bracket, tolerance: T) -> Result<f64, GeneralisedError>
where
    F: FnMut(f64) -> Result<f64, GeneralisedError>,
    T: Fn(f64) -> f64,
{
    let Bracket {
        mut a,
        mut fa,
        mut b,
        mut fb,
    } = start;
    if fa == 0.0 {
        return Ok(a);
    }
    let (mut c, mut fc) = (b, fb);
    let (mut d, mut e) = (b - a, b - a);
    for _ in 0..MAX_ROOT_ITERATIONS {
        if (fb > 0.0 && fc > 0.0) || (fb < 0.0 && fc < 0.0) {
            (c, fc) = (a, fa);
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            (a, fa) = (b, fb);
            (b, fb) = (c, fc);
            (c, fc) = (a, fa);
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * tolerance(b);
        let half = 0.5 * (c - b);
        if half.abs() <= tol || fb == 0.0 {
            return Ok(b);
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q) = if a == c {
                (2.0 * half * s, 1.0 - s)
            } else {
                let (qa, r) = (fa / fc, fb / fc);
                (
                    s * (2.0 * half * qa * (qa - r) - (b - a) * (r - 1.0)),
                    (qa - 1.0) * (r - 1.0) * (s - 1.0),
                )
            };
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            if 2.0 * p < (3.0 * half * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = half;
                e = d;
            }
        } else {
            d = half;
            e = d;
        }
        (a, fa) = (b, fb);
        b += if d.abs() > tol { d } else { tol.copysign(half) };
        fb = f(b)?;
    }
    Ok(b)
}

/// A layer's law with the layer's index, for error messages.
struct Law<'l> {
    layer: usize,
    viscosity: &'l (dyn Fn(f64) -> f64 + Sync),
}

impl Law<'_> {
    /// μ(γ̇) (Pa·s), an error unless positive and finite.
    fn viscosity(&self, shear_rate: f64) -> Result<f64, GeneralisedError> {
        let viscosity = (self.viscosity)(shear_rate);
        if viscosity.is_finite() && viscosity > 0.0 {
            Ok(viscosity)
        } else {
            Err(GeneralisedError::InvalidViscosity {
                layer: self.layer,
                shear_rate,
                viscosity,
            })
        }
    }

    /// The signed shear rate γ̇ with μ(|γ̇|) γ̇ = τ: Brent's method on
    /// ψ(t) = ln μ(eᵗ) + t − ln |τ| over t = ln |γ̇| (module docs, step 2). Zero where the law's
    /// stress at e^(−460) 1/s already exceeds |τ|.
    fn shear_rate(&self, stress: f64) -> Result<f64, GeneralisedError> {
        if stress == 0.0 {
            return Ok(0.0);
        }
        let target = stress.abs().ln();
        let psi = |t: f64| Ok::<f64, GeneralisedError>(self.viscosity(t.exp())?.ln() + t - target);
        let Some(bracket) = self.log_rate_bracket(psi, stress)? else {
            return Ok(0.0);
        };
        let log_rate = brent(psi, bracket, |_| RATE_TOLERANCE)?;
        Ok(log_rate.exp().copysign(stress))
    }

    /// A bracket of ψ's root in t = ln γ̇, grown from t = 0 in steps 1, 2, 4, … up to
    /// |t| = [`LOG_RATE_LIMIT`]. `None` when ψ stays positive down to the lower limit (the
    /// shear rate is zero), an error when it stays negative up to the upper one.
    fn log_rate_bracket<P>(&self, psi: P, stress: f64) -> Result<Option<Bracket>, GeneralisedError>
    where
        P: Fn(f64) -> Result<f64, GeneralisedError>,
    {
        let (mut near, mut f_near) = (0.0_f64, psi(0.0)?);
        let direction = if f_near < 0.0 { 1.0 } else { -1.0 };
        let mut step = 1.0_f64;
        while f_near != 0.0 {
            let far = (near + direction * step).clamp(-LOG_RATE_LIMIT, LOG_RATE_LIMIT);
            let f_far = psi(far)?;
            if f_far == 0.0 || (f_far > 0.0) != (f_near > 0.0) {
                return Ok(Some(Bracket {
                    a: near,
                    fa: f_near,
                    b: far,
                    fb: f_far,
                }));
            }
            if far.abs() >= LOG_RATE_LIMIT {
                return if direction > 0.0 {
                    Err(GeneralisedError::NoShearRate {
                        layer: self.layer,
                        stress: stress.abs(),
                    })
                } else {
                    Ok(None)
                };
            }
            (near, f_near) = (far, f_far);
            step *= 2.0;
        }
        Ok(Some(Bracket {
            a: near,
            fa: 0.0,
            b: near,
            fb: 0.0,
        }))
    }
}

/// Where the τ = 0 kink sits relative to an interval of integration.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Kink {
    None,
    AtStart,
    AtEnd,
}

/// ∫_a^b γ̇(τ(y)) dy by 5-point Gauss–Legendre, with the substitution y = y* ± (b − a) t³
/// (dy = 3 (b − a) t² dt, t ∈ [0, 1]) when the kink y* is an end of the interval.
fn interval_integral<S>(
    law: &Law,
    stress: &S,
    a: f64,
    b: f64,
    kink: Kink,
) -> Result<f64, GeneralisedError>
where
    S: Fn(f64) -> f64,
{
    let width = b - a;
    let mut sum = 0.0;
    for (x, w) in GAUSS_NODES.iter().zip(GAUSS_WEIGHTS) {
        let t = 0.5 * (1.0 + x);
        let (y, jacobian) = match kink {
            Kink::None => (a + width * t, width),
            Kink::AtStart => (a + width * t.powi(3), 3.0 * width * t * t),
            Kink::AtEnd => (b - width * t.powi(3), 3.0 * width * t * t),
        };
        sum += 0.5 * w * jacobian * law.shear_rate(stress(y))?;
    }
    Ok(sum)
}

/// One layer's place in the stack: its boundaries, force density and F at its bottom.
#[derive(Clone, Copy, Debug)]
struct Slab {
    bottom: f64,
    top: f64,
    force_density: f64,
    force_below: f64,
}

impl Slab {
    /// F at the layer's top, F(bottom) + f (top − bottom) (Pa).
    fn force_above(&self) -> f64 {
        self.force_below + self.force_density * (self.top - self.bottom)
    }
}

/// The cuts of a layer: `points` equally spaced heights from bottom to top, Δ apart, and where
/// τ = 0 inside the layer (y*, flagged) also y* itself and the [`KINK_GRADING`] heights
/// y* ± Δ, y* ± Δ/2, y* ± Δ/4, … that lie inside the layer; sorted, without repeats.
fn layer_cuts(slab: &Slab, stress_bottom: f64, points: usize) -> Vec<(f64, bool)> {
    let steps = (points - 1) as f64;
    let spacing = (slab.top - slab.bottom) / steps;
    let mut cuts: Vec<(f64, bool)> = (0..points)
        .map(|k| {
            let y = if k + 1 == points {
                slab.top
            } else {
                slab.bottom + (slab.top - slab.bottom) * (k as f64 / steps)
            };
            (y, false)
        })
        .collect();
    let star = slab.bottom + stress_bottom / slab.force_density;
    if slab.force_density == 0.0 || !(slab.bottom..=slab.top).contains(&star) {
        return cuts;
    }
    let mut offset = spacing;
    for _ in 0..KINK_GRADING {
        for y in [star - offset, star + offset] {
            if slab.bottom < y && y < slab.top {
                cuts.push((y, false));
            }
        }
        offset *= 0.5;
    }
    cuts.push((star, true));
    // Equal heights: the flagged one first, and kept.
    cuts.sort_by(|p, q| p.0.total_cmp(&q.0).then(q.1.cmp(&p.1)));
    cuts.dedup_by(|later, earlier| later.0 == earlier.0);
    cuts
}

/// The table points of one layer for the lower-wall stress `wall_stress`, starting from the
/// velocity at its bottom; volumes are left at zero.
fn layer_nodes(
    law: &Law,
    slab: &Slab,
    wall_stress: f64,
    velocity_bottom: f64,
    points: usize,
) -> Result<Vec<Node>, GeneralisedError> {
    let stress_bottom = wall_stress - slab.force_below;
    let stress = |y: f64| stress_bottom - slab.force_density * (y - slab.bottom);
    let cuts = layer_cuts(slab, stress_bottom, points);
    let mut nodes = Vec::with_capacity(cuts.len());
    let mut velocity = velocity_bottom;
    for (k, &(y, _)) in cuts.iter().enumerate() {
        if k > 0 {
            let (a, kink_a) = cuts[k - 1];
            let kink = match (kink_a, cuts[k].1) {
                (true, _) => Kink::AtStart,
                (_, true) => Kink::AtEnd,
                _ => Kink::None,
            };
            velocity += interval_integral(law, &stress, a, y, kink)?;
        }
        nodes.push(Node {
            y,
            velocity,
            shear_rate: law.shear_rate(stress(y))?,
            volume: 0.0,
        });
    }
    Ok(nodes)
}

/// The whole profile for the lower-wall stress `wall_stress`, layer by layer.
fn profile(
    laws: &[Law],
    slabs: &[Slab],
    wall_stress: f64,
    points: usize,
) -> Result<Vec<Vec<Node>>, GeneralisedError> {
    let mut layers: Vec<Vec<Node>> = Vec::with_capacity(slabs.len());
    for (law, slab) in laws.iter().zip(slabs) {
        let bottom = layers
            .last()
            .and_then(|nodes| nodes.last())
            .map_or(0.0, |node| node.velocity);
        layers.push(layer_nodes(law, slab, wall_stress, bottom, points)?);
    }
    Ok(layers)
}

/// Velocity of the top table point, an error unless finite.
fn top_velocity(layers: &[Vec<Node>]) -> Result<f64, GeneralisedError> {
    let velocity = layers
        .last()
        .and_then(|nodes| nodes.last())
        .map_or(0.0, |node| node.velocity);
    if velocity.is_finite() {
        Ok(velocity)
    } else {
        Err(GeneralisedError::NotFinite {
            quantity: "the velocity at the top wall",
            value: velocity,
        })
    }
}

/// A bracket of u(H; τ_w) − U in τ_w (module docs, step 4): [F_min, F_max], its end on U's
/// side pushed out by `scale`, 4 `scale`, 16 `scale`, … until the mismatch changes sign.
fn wall_stress_bracket<M>(
    mismatch: &mut M,
    low: f64,
    high: f64,
    scale: f64,
    wall_speed: f64,
) -> Result<Bracket, GeneralisedError>
where
    M: FnMut(f64) -> Result<f64, GeneralisedError>,
{
    let (mut a, mut b) = (low, high);
    let (mut fa, mut fb) = (mismatch(a)?, mismatch(b)?);
    let mut reach = scale;
    for _ in 0..MAX_BRACKET_STEPS {
        if fa <= 0.0 && fb >= 0.0 {
            return Ok(Bracket { a, fa, b, fb });
        }
        let (new_a, new_b) = (low - reach, high + reach);
        if !(new_a.is_finite() && new_b.is_finite()) {
            break;
        }
        if fb < 0.0 {
            (a, fa) = (b, fb);
            b = new_b;
            fb = mismatch(b)?;
        } else {
            (b, fb) = (a, fa);
            a = new_a;
            fa = mismatch(a)?;
        }
        reach *= BRACKET_GROWTH;
    }
    Err(GeneralisedError::NoBracket {
        wall_speed,
        searched: a.abs().max(b.abs()),
    })
}

/// Checks the input and returns each layer's slab and law.
fn validate<'l>(
    layers: &[FlowLayer<'l>],
    top_wall_speed: f64,
    points: usize,
) -> Result<(Vec<Slab>, Vec<Law<'l>>), GeneralisedError> {
    if layers.is_empty() {
        return Err(GeneralisedError::NoLayers);
    }
    if points < 2 {
        return Err(GeneralisedError::TooFewPoints(points));
    }
    let table = points
        .checked_add(1 + 2 * KINK_GRADING)
        .and_then(|per_layer| per_layer.checked_mul(layers.len()));
    if table.is_none_or(|table| table > MAX_TABLE_POINTS) {
        return Err(GeneralisedError::TooManyPoints {
            points,
            layers: layers.len(),
        });
    }
    if !top_wall_speed.is_finite() {
        return Err(GeneralisedError::InvalidWallSpeed(top_wall_speed));
    }
    let mut slabs = Vec::with_capacity(layers.len());
    let (mut bottom, mut force_below) = (0.0_f64, 0.0_f64);
    for (layer, l) in layers.iter().enumerate() {
        if !(l.width.is_finite() && l.width > 0.0) {
            return Err(GeneralisedError::InvalidWidth {
                layer,
                width: l.width,
            });
        }
        if !l.force_density.is_finite() {
            return Err(GeneralisedError::InvalidForce {
                layer,
                force_density: l.force_density,
            });
        }
        let slab = Slab {
            bottom,
            top: bottom + l.width,
            force_density: l.force_density,
            force_below,
        };
        bottom = slab.top;
        force_below = slab.force_above();
        if !bottom.is_finite() {
            return Err(GeneralisedError::NotFinite {
                quantity: "the gap",
                value: bottom,
            });
        }
        if !force_below.is_finite() {
            return Err(GeneralisedError::NotFinite {
                quantity: "the force per unit area summed over the layers",
                value: force_below,
            });
        }
        slabs.push(slab);
    }
    let laws = layers
        .iter()
        .enumerate()
        .map(|(layer, l)| Law {
            layer,
            viscosity: l.viscosity,
        })
        .collect();
    Ok((slabs, laws))
}

/// Fills in each table point's ∫₀^y u dy' from the Hermite cubics.
fn accumulate_volumes(layers: &mut [Vec<Node>]) {
    let mut volume = 0.0;
    for nodes in layers.iter_mut() {
        if let Some(first) = nodes.first_mut() {
            first.volume = volume;
        }
        for k in 1..nodes.len() {
            volume += hermite_integral(&nodes[k - 1], &nodes[k], nodes[k].y);
            nodes[k].volume = volume;
        }
    }
}

/// Position t ∈ [0, 1] of y in the interval [a.y, b.y] and its width (t = 0 for a zero width).
fn interval_position(a: &Node, b: &Node, y: f64) -> (f64, f64) {
    let width = b.y - a.y;
    let t = if width > 0.0 {
        ((y - a.y) / width).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (t, width)
}

/// Cubic Hermite interpolant through (u, du/dy) at both ends of an interval:
/// u = h00 u_a + h10 Δ u'_a + h01 u_b + h11 Δ u'_b with h00 = 2t³ − 3t² + 1, h10 = t³ − 2t² + t,
/// h01 = −2t³ + 3t², h11 = t³ − t².
fn hermite_value(a: &Node, b: &Node, y: f64) -> f64 {
    let (t, width) = interval_position(a, b, y);
    let (t2, t3) = (t * t, t * t * t);
    (2.0 * t3 - 3.0 * t2 + 1.0) * a.velocity
        + (t3 - 2.0 * t2 + t) * width * a.shear_rate
        + (-2.0 * t3 + 3.0 * t2) * b.velocity
        + (t3 - t2) * width * b.shear_rate
}

/// ∫ from a.y to y of the Hermite cubic of [`hermite_value`]: Δ times the integrals of the
/// basis, t⁴/2 − t³ + t, t⁴/4 − 2t³/3 + t²/2, −t⁴/2 + t³, t⁴/4 − t³/3 (over the whole interval
/// Δ (u_a + u_b)/2 + Δ² (u'_a − u'_b)/12).
fn hermite_integral(a: &Node, b: &Node, y: f64) -> f64 {
    let (t, width) = interval_position(a, b, y);
    let (t2, t3, t4) = (t * t, t * t * t, t * t * t * t);
    width
        * ((0.5 * t4 - t3 + t) * a.velocity
            + (0.25 * t4 - 2.0 * t3 / 3.0 + 0.5 * t2) * width * a.shear_rate
            + (-0.5 * t4 + t3) * b.velocity
            + (0.25 * t4 - t3 / 3.0) * width * b.shear_rate)
}

impl GeneralisedChannel {
    /// Solves the steady channel of `layers` (bottom to top) with the top wall sliding at
    /// `top_wall_speed` (m/s) along +x, tabulating `points_per_layer` equally spaced points in
    /// each layer (both boundaries included; 41 more around the height where τ = 0, if it lies
    /// in the layer). See the module docs for the method. With a Newtonian law the result is
    /// exact up to rounding and the 1e−13 tolerances; for other laws the error of the integral
    /// falls as Δ^10 with the spacing Δ where γ̇ is smooth.
    ///
    /// Errors (never a panic): no layers, fewer than 2 points per layer (or more than 2²² in
    /// all), a width that is not positive and finite, a force density or wall speed that is not
    /// finite, a gap or summed force that overflows, a law returning a viscosity that is not
    /// positive and finite (naming the layer and shear rate), a stress a law cannot carry, or
    /// no wall stress bracketing the top wall speed.
    pub fn solve(
        layers: &[FlowLayer<'_>],
        top_wall_speed: f64,
        points_per_layer: usize,
    ) -> Result<Self, GeneralisedError> {
        let (slabs, laws) = validate(layers, top_wall_speed, points_per_layer)?;
        let gap = slabs.last().map_or(0.0, |slab| slab.top);
        let forces_below: Vec<f64> = slabs
            .iter()
            .map(|s| s.force_below)
            .chain(slabs.last().map(Slab::force_above))
            .collect();
        let low = forces_below.iter().copied().fold(f64::INFINITY, f64::min);
        let high = forces_below
            .iter()
            .copied()
            .fold(f64::NEG_INFINITY, f64::max);
        let scale = Self::stress_scale(&laws, high - low, top_wall_speed, gap)?;
        let mut mismatch = |wall_stress: f64| {
            Ok::<f64, GeneralisedError>(
                top_velocity(&profile(&laws, &slabs, wall_stress, points_per_layer)?)?
                    - top_wall_speed,
            )
        };
        let bracket = wall_stress_bracket(&mut mismatch, low, high, scale, top_wall_speed)?;
        let floor = f64::EPSILON * bracket.a.abs().max(bracket.b.abs());
        let wall_stress = brent(&mut mismatch, bracket, |b| {
            STRESS_TOLERANCE * b.abs() + floor
        })?;
        let mut table = profile(&laws, &slabs, wall_stress, points_per_layer)?;
        accumulate_volumes(&mut table);
        Ok(Self {
            wall_stress,
            boundaries: std::iter::once(0.0)
                .chain(slabs.iter().map(|s| s.top))
                .collect(),
            force_densities: slabs.iter().map(|s| s.force_density).collect(),
            forces_below,
            layers: table,
        })
    }

    /// A stress scale for growing the wall-stress bracket (Pa): the spread F_max − F_min of the
    /// forces, or the lowest layer's Couette stress μ(|U|/H) |U|/H if that is larger, kept
    /// between the smallest normal f64 and the largest f64.
    fn stress_scale(
        laws: &[Law],
        spread: f64,
        wall_speed: f64,
        gap: f64,
    ) -> Result<f64, GeneralisedError> {
        let rate = wall_speed.abs() / gap;
        let couette = match laws.first() {
            Some(law) if rate > 0.0 && rate.is_finite() => law.viscosity(rate)? * rate,
            _ => 0.0,
        };
        Ok(spread.max(couette).clamp(f64::MIN_POSITIVE, f64::MAX))
    }

    /// Gap between the walls H = Σ h_i (m).
    pub fn gap(&self) -> f64 {
        self.boundaries.last().copied().unwrap_or(0.0)
    }

    /// Index of the layer that holds y (already inside the gap); a boundary belongs to the
    /// layer below it.
    fn layer_at(&self, y: f64) -> usize {
        let tops = self.boundaries.get(1..).unwrap_or(&[]);
        tops.partition_point(|&top| top < y)
            .min(self.layers.len().saturating_sub(1))
    }

    /// The table interval [a, b] of the layer that holds y, y clamped to the gap; `None` for a
    /// y that is NaN.
    fn interval_at(&self, y: f64) -> Option<(&Node, &Node, f64)> {
        if y.is_nan() {
            return None;
        }
        let y = y.clamp(0.0, self.gap());
        let nodes = self.layers.get(self.layer_at(y))?;
        let k = nodes
            .partition_point(|node| node.y <= y)
            .saturating_sub(1)
            .min(nodes.len().saturating_sub(2));
        Some((nodes.get(k)?, nodes.get(k + 1)?, y))
    }

    /// Velocity u(y) (m/s) at the height y above the lower wall: the cubic Hermite interpolant
    /// of the table through u and du/dy (module docs, step 5). y is clamped to the gap, so the
    /// wall speeds are returned outside it; NaN for a NaN y.
    pub fn velocity(&self, y: f64) -> f64 {
        self.interval_at(y)
            .map_or(f64::NAN, |(a, b, y)| hermite_value(a, b, y))
    }

    /// Shear stress τ_xy(y) = τ_w − F(y) (Pa), exact: linear in each layer, continuous. y is
    /// clamped to the gap; NaN for a NaN y.
    pub fn shear_stress(&self, y: f64) -> f64 {
        if y.is_nan() {
            return f64::NAN;
        }
        let y = y.clamp(0.0, self.gap());
        let layer = self.layer_at(y);
        match (
            self.boundaries.get(layer),
            self.forces_below.get(layer),
            self.force_densities.get(layer),
        ) {
            (Some(bottom), Some(below), Some(f)) => self.wall_stress - below - f * (y - bottom),
            _ => f64::NAN,
        }
    }

    /// Signed shear rate du/dy (1/s) at y, linear between table points; at an interface, the
    /// value on the side of the layer below. y is clamped to the gap; NaN for a NaN y.
    pub fn shear_rate(&self, y: f64) -> f64 {
        self.interval_at(y).map_or(f64::NAN, |(a, b, y)| {
            let (t, _) = interval_position(a, b, y);
            a.shear_rate + t * (b.shear_rate - a.shear_rate)
        })
    }

    /// Flow rate per unit depth Q = ∫₀^H u dy (m²/s), the exact integral of the Hermite
    /// interpolant.
    pub fn flow_rate(&self) -> f64 {
        self.volume_below(self.gap())
    }

    /// ∫_{y0}^{y1} u dy (m²/s) with both limits clamped to the gap; negative when y1 < y0.
    pub fn flow_rate_between(&self, y0: f64, y1: f64) -> f64 {
        self.volume_below(y1) - self.volume_below(y0)
    }

    /// ∫₀^y u dy' with y clamped to the gap (m²/s).
    fn volume_below(&self, y: f64) -> f64 {
        self.interval_at(y)
            .map_or(f64::NAN, |(a, b, y)| a.volume + hermite_integral(a, b, y))
    }

    /// Velocity at each internal layer boundary, bottom to top (m/s); empty for one layer.
    pub fn interface_velocities(&self) -> Vec<f64> {
        self.layers
            .iter()
            .skip(1)
            .filter_map(|nodes| nodes.first().map(|node| node.velocity))
            .collect()
    }
}

/// Velocity (m/s) of a power-law fluid, τ = K |γ̇|^(n−1) γ̇, in a plane slit of gap H with no
/// slip at y = 0 and y = H, driven by the force density G = −dp/dx (N/m³) along +x
/// (Chhabra & Richardson, Non-Newtonian Flow and Applied Rheology, 2nd ed., 2008, ch. 3, flow
/// between parallel plates; section recalled from memory):
///
/// u(y) = n/(n+1) (G/K)^(1/n) [ (H/2)^(1+1/n) − |y − H/2|^(1+1/n) ].
///
/// Derivation: dτ/dy = −G and symmetry (τ = 0 on the centre line) give τ = G (H/2 − y). Below
/// the centre line γ̇ > 0, so K γ̇ⁿ = G (H/2 − y), γ̇ = (G/K)^(1/n) (H/2 − y)^(1/n); integrating
/// from u(0) = 0, u = (G/K)^(1/n) n/(n+1) [ (H/2)^(1+1/n) − (H/2 − y)^(1+1/n) ], and the upper
/// half is its mirror image. n = 1, K = μ gives G y (H − y)/(2μ). A negative G reverses the
/// flow (u is odd in G); zero outside 0 ≤ y ≤ H. Arguments: K = `consistency` (Pa·sⁿ),
/// n = `index`, G = `force_density`, H = `gap`.
pub fn power_law_slit_velocity(
    consistency: f64,
    index: f64,
    force_density: f64,
    gap: f64,
    y: f64,
) -> f64 {
    if !(0.0..=gap).contains(&y) {
        return 0.0;
    }
    let half = 0.5 * gap;
    let exponent = 1.0 + 1.0 / index;
    let scale = (force_density.abs() / consistency).powf(1.0 / index);
    force_density.signum() * index / (index + 1.0)
        * scale
        * (half.powf(exponent) - (y - half).abs().powf(exponent))
}

/// Half-width y0 (m) of the unyielded plug of a Bingham plastic in a plane slit driven by the
/// force density G (Chhabra & Richardson 2008, ch. 3, section recalled from memory):
/// y0 = min(τ0/|G|, H/2). The stress |τ| = |G| |y − H/2| (see [`bingham_slit_velocity`]) stays
/// below the yield stress τ0 within y0 of the centre line; y0 = H/2 (the whole gap, no flow)
/// once τ0 ≥ |G| H/2, and for G = 0.
pub fn bingham_plug_half_width(yield_stress: f64, force_density: f64, gap: f64) -> f64 {
    (yield_stress / force_density.abs()).min(0.5 * gap)
}

/// Velocity (m/s) of a Bingham plastic, τ = ±τ0 + μp γ̇ where |τ| > τ0 and γ̇ = 0 elsewhere,
/// in a plane slit of gap H with no slip at both walls, driven by the force density G along +x
/// (Chhabra & Richardson 2008, ch. 3, flow between parallel plates; section recalled from
/// memory). With s = |y − H/2| and the plug half-width y0 = [`bingham_plug_half_width`]:
///
/// u = G/(2μp) [ (H/2 − s)(H/2 + s) − 2 y0 (H/2 − s) ]   for s ≥ y0 (yielded),
/// u = G/(2μp) (H/2 − y0)²                               for s < y0 (the plug).
///
/// Derivation: τ = G (H/2 − y) as for any law (momentum balance and symmetry), so |τ| = G s
/// exceeds τ0 where s > y0 = τ0/G. There, below the centre line, μp γ̇ = G s − τ0 = G (s − y0),
/// and with du = −γ̇ ds and u = 0 at the wall (s = H/2),
/// u(s) = ∫_s^{H/2} G (s' − y0)/μp ds' = G/(2μp) [ (H/2)² − s² − 2 y0 (H/2 − s) ], the form
/// above; at s = y0 it equals G/(2μp)(H/2 − y0)², which the rigid plug keeps. τ0 = 0 gives the
/// Newtonian G y (H − y)/(2μp). A negative G reverses the flow; zero outside 0 ≤ y ≤ H.
/// Arguments: τ0 = `yield_stress` (Pa), μp = `plastic_viscosity` (Pa·s), G = `force_density`,
/// H = `gap`.
pub fn bingham_slit_velocity(
    yield_stress: f64,
    plastic_viscosity: f64,
    force_density: f64,
    gap: f64,
    y: f64,
) -> f64 {
    if !(0.0..=gap).contains(&y) {
        return 0.0;
    }
    let half = 0.5 * gap;
    let plug = bingham_plug_half_width(yield_stress, force_density, gap);
    let s = (y - half).abs().max(plug);
    force_density / (2.0 * plastic_viscosity) * ((half - s) * (half + s) - 2.0 * plug * (half - s))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::reference::layered::LayeredChannel;
    use proptest::prelude::*;

    /// A constant viscosity μ.
    fn newtonian(mu: f64) -> impl Fn(f64) -> f64 + Sync {
        move |_| mu
    }

    /// The power law μ = K γ̇^(n−1).
    fn power_law(consistency: f64, index: f64) -> impl Fn(f64) -> f64 + Sync {
        move |rate: f64| consistency * rate.powf(index - 1.0)
    }

    /// Papanastasiou's regularised Bingham law μ = μp + τ0 (1 − e^(−m γ̇))/γ̇ (Papanastasiou
    /// 1987, J. Rheol. 31, pp. 385–404), written with expm1 so that it keeps μp + τ0 m at tiny γ̇.
    fn papanastasiou(plastic: f64, yield_stress: f64, m: f64) -> impl Fn(f64) -> f64 + Sync {
        move |rate: f64| plastic - yield_stress * (-m * rate).exp_m1() / rate
    }

    /// The ideal Bingham law μ = μp + τ0/γ̇ (its stress never falls below τ0 for γ̇ > 0).
    fn bingham(plastic: f64, yield_stress: f64) -> impl Fn(f64) -> f64 + Sync {
        move |rate: f64| plastic + yield_stress / rate
    }

    fn layer(width: f64, force_density: f64, law: &(dyn Fn(f64) -> f64 + Sync)) -> FlowLayer<'_> {
        FlowLayer {
            width,
            force_density,
            viscosity: law,
        }
    }

    /// Heights at which profiles are compared: both walls and 97 points off the table's cuts.
    fn samples(gap: f64) -> Vec<f64> {
        let inner = (0..97).map(|k| gap * (k as f64 + 0.37) / 97.0);
        std::iter::once(0.0)
            .chain(inner)
            .chain(std::iter::once(gap))
            .collect()
    }

    /// Largest |u − exact| over [`samples`], relative to the largest |exact|.
    fn relative_max_error(channel: &GeneralisedChannel, exact: impl Fn(f64) -> f64) -> f64 {
        let ys = samples(channel.gap());
        let peak = ys.iter().map(|&y| exact(y).abs()).fold(0.0, f64::max);
        let error = ys
            .iter()
            .map(|&y| (channel.velocity(y) - exact(y)).abs())
            .fold(0.0, f64::max);
        error / peak
    }

    /// Composite 5-point Gauss–Legendre quadrature of `f` over [a, b] in `n` intervals.
    fn quadrature(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
        let h = (b - a) / n as f64;
        (0..n)
            .map(|k| {
                let start = a + h * k as f64;
                GAUSS_NODES
                    .iter()
                    .zip(GAUSS_WEIGHTS)
                    .map(|(x, w)| 0.5 * h * w * f(start + 0.5 * h * (1.0 + x)))
                    .sum::<f64>()
            })
            .sum()
    }

    /// Power-law slit flow rate Q = 2n/(2n+1) (G/K)^(1/n) (H/2)^(2+1/n) (Chhabra & Richardson
    /// 2008, ch. 3: twice ∫₀^{H/2} u dy of [`power_law_slit_velocity`]).
    fn power_law_slit_flow_rate(consistency: f64, index: f64, force_density: f64, gap: f64) -> f64 {
        2.0 * index / (2.0 * index + 1.0)
            * (force_density / consistency).powf(1.0 / index)
            * (0.5 * gap).powf(2.0 + 1.0 / index)
    }

    #[test]
    fn gauss_legendre_rule_is_exact_to_degree_nine() {
        for degree in 0..=9 {
            let rule: f64 = GAUSS_NODES
                .iter()
                .zip(GAUSS_WEIGHTS)
                .map(|(x, w)| w * x.powi(degree))
                .sum();
            let exact = if degree % 2 == 0 {
                2.0 / (degree as f64 + 1.0)
            } else {
                0.0
            };
            assert!((rule - exact).abs() < 1e-15, "degree {degree}: {rule}");
        }
    }

    #[test]
    fn brent_finds_the_root_of_a_cubic_to_the_tolerance() {
        // x³ − 2x − 5 = 0, Wallis's example, root 2.0945514815423265.
        let f = |x: f64| Ok(x * x * x - 2.0 * x - 5.0);
        let bracket = Bracket {
            a: 2.0,
            fa: -1.0,
            b: 3.0,
            fb: 16.0,
        };
        let root = brent(f, bracket, |_| 1e-14).expect("root");
        assert!((root - 2.094_551_481_542_326_5).abs() < 1e-14, "{root}");
    }

    #[test]
    fn newtonian_single_layer_matches_plane_poiseuille() {
        // u = G y (H − y)/(2μ), τ = G (H/2 − y), Q = G H³/(12 μ) (Bird, Stewart & Lightfoot §2.3).
        let (mu, g, h) = (0.3, 50.0, 1.0e-3);
        let law = newtonian(mu);
        let channel = GeneralisedChannel::solve(&[layer(h, g, &law)], 0.0, 11).expect("solves");
        let error = relative_max_error(&channel, |y| g * y * (h - y) / (2.0 * mu));
        assert!(error < 1e-13, "relative error {error:e}");
        let q = g * h.powi(3) / (12.0 * mu);
        assert!((channel.flow_rate() - q).abs() < 1e-13 * q);
        for y in samples(h) {
            let tau = g * (0.5 * h - y);
            assert!((channel.shear_stress(y) - tau).abs() < 1e-12 * g * h);
            assert!((channel.shear_rate(y) - tau / mu).abs() < 1e-12 * g * h / mu);
        }
        assert!(channel.interface_velocities().is_empty());
    }

    #[test]
    fn newtonian_two_layers_match_the_layered_channel() {
        // Bird, Stewart & Lightfoot §2.5 as implemented in `layered`: viscosity ratios 20 and
        // 1/4, unequal widths, equal and unequal force densities (one layer even driven back).
        let cases = [
            (2.0, 0.1, 0.3e-3, 0.7e-3, 50.0, 50.0),
            (0.05, 0.2, 0.6e-3, 0.25e-3, 50.0, 50.0),
            (2.0, 0.1, 0.3e-3, 0.7e-3, 1300.0 * 0.4, 1000.0 * 0.4),
            (0.05, 0.2, 0.6e-3, 0.25e-3, 80.0, -30.0),
        ];
        for (m1, m2, h1, h2, f1, f2) in cases {
            let reference = LayeredChannel {
                lower_width: h1,
                upper_width: h2,
                lower_viscosity: m1,
                upper_viscosity: m2,
                force_density: f1,
                upper_force_density: f2,
            };
            let (lower, upper) = (newtonian(m1), newtonian(m2));
            let stack = [layer(h1, f1, &lower), layer(h2, f2, &upper)];
            let channel = GeneralisedChannel::solve(&stack, 0.0, 21).expect("solves");
            let error = relative_max_error(&channel, |y| reference.velocity(y));
            assert!(
                error < 1e-13,
                "{m1}/{m2}, f {f1}/{f2}: relative error {error:e}"
            );
            let peak = reference.peak().velocity.abs();
            let interface = channel.interface_velocities();
            assert_eq!(interface.len(), 1);
            assert!((interface[0] - reference.interface_velocity()).abs() < 1e-13 * peak);
            let q = reference.flow_rate();
            assert!((channel.flow_rate() - q).abs() < 1e-13 * q.abs());
            let tau = reference.lower_wall_stress().abs();
            for y in samples(channel.gap()) {
                assert!((channel.shear_stress(y) - reference.shear_stress(y)).abs() < 1e-12 * tau);
            }
        }
    }

    #[test]
    fn couette_flow_is_linear_for_any_law() {
        // No force: the stress is one constant across the gap, so each layer shears uniformly.
        let (u, h) = (0.02, 2.0e-3);
        let water = newtonian(0.7);
        let channel = GeneralisedChannel::solve(&[layer(h, 0.0, &water)], u, 5).expect("solves");
        let error = relative_max_error(&channel, |y| u * y / h);
        assert!(error < 1e-13, "Newtonian: {error:e}");
        assert!((channel.shear_stress(0.3 * h) - 0.7 * u / h).abs() < 1e-13 * 0.7 * u / h);

        let thinning = power_law(0.4, 0.5);
        let channel =
            GeneralisedChannel::solve(&[layer(h, 0.0, &thinning)], -u, 5).expect("solves");
        let error = relative_max_error(&channel, |y| -u * y / h);
        assert!(error < 1e-13, "power law: {error:e}");

        // Two Newtonian layers: τ = U/(h1/μ1 + h2/μ2), u = τ y/μ1 below, U − τ (H − y)/μ2 above.
        let (m1, m2, h1, h2) = (1.0, 0.05, 0.8e-3, 1.2e-3);
        let (lower, upper) = (newtonian(m1), newtonian(m2));
        let stack = [layer(h1, 0.0, &lower), layer(h2, 0.0, &upper)];
        let channel = GeneralisedChannel::solve(&stack, u, 5).expect("solves");
        let tau = u / (h1 / m1 + h2 / m2);
        let exact = |y: f64| {
            if y <= h1 {
                tau * y / m1
            } else {
                u - tau * (h1 + h2 - y) / m2
            }
        };
        let error = relative_max_error(&channel, exact);
        assert!(error < 1e-13, "two layers: {error:e}");
    }

    #[test]
    fn power_law_matches_the_slit_profile() {
        // n = 0.5: γ̇ ∝ τ|τ| is quadratic in y on each side of the centre line, a cut, so the
        // quadrature and the Hermite cubics are exact up to rounding. n = 1.5: γ̇ ∝ |τ|^(2/3);
        // at the table points the integral is good to 3e−13 of the peak, between them the
        // cubics near the centre line limit the error to 1e−7 (it falls about 40-fold for each
        // 4-fold finer table), the flow rate to 4e−9.
        let (k, g, h) = (0.8, 200.0, 1.0e-2);
        let points = 201;
        for (n, between, at_points, flow) in [(0.5, 1e-13, 1e-13, 1e-13), (1.5, 3e-7, 1e-12, 1e-8)]
        {
            let law = power_law(k, n);
            let channel =
                GeneralisedChannel::solve(&[layer(h, g, &law)], 0.0, points).expect("solves");
            let exact = |y: f64| power_law_slit_velocity(k, n, g, h, y);
            let error = relative_max_error(&channel, exact);
            assert!(error < between, "n = {n}: relative error {error:e}");
            let peak = exact(0.5 * h);
            for j in 0..points {
                let y = h * (j as f64 / (points - 1) as f64);
                let error = (channel.velocity(y) - exact(y)).abs() / peak;
                assert!(
                    error < at_points,
                    "n = {n}, y = {y}: relative error {error:e}"
                );
            }
            let q = power_law_slit_flow_rate(k, n, g, h);
            let q_error = (channel.flow_rate() - q).abs() / q;
            assert!(q_error < flow, "n = {n}: flow rate error {q_error:e}");
            // Wall shear rate (G H/(2K))^(1/n), a table point.
            let wall = (g * h / (2.0 * k)).powf(1.0 / n);
            assert!((channel.shear_rate(0.0) - wall).abs() < 1e-12 * wall);
            assert!((channel.shear_rate(h) + wall).abs() < 1e-12 * wall);
        }
    }

    #[test]
    fn one_fluid_split_into_layers_gives_the_one_layer_profile() {
        // Interfaces inside one fluid change nothing: the same power law in three unequal layers.
        let (k, n, g, h) = (0.8, 1.5, 200.0, 1.0e-2);
        let law = power_law(k, n);
        let stack = [
            layer(0.2 * h, g, &law),
            layer(0.5 * h, g, &law),
            layer(0.3 * h, g, &law),
        ];
        let channel = GeneralisedChannel::solve(&stack, 0.0, 81).expect("solves");
        // Measured 3.5e−7 between table points (the cubics near the centre line, as in
        // `power_law_matches_the_slit_profile`) and 5e−14 at the interfaces, table points.
        let error = relative_max_error(&channel, |y| power_law_slit_velocity(k, n, g, h, y));
        assert!(error < 1e-6, "relative error {error:e}");
        let interfaces = channel.interface_velocities();
        assert_eq!(interfaces.len(), 2);
        for (u, y) in interfaces.iter().zip([0.2 * h, 0.7 * h]) {
            let exact = power_law_slit_velocity(k, n, g, h, y);
            assert!((u - exact).abs() < 1e-12 * exact, "{u} vs {exact}");
        }
    }

    /// The Bingham slit of the tests: H = 1 cm, G = 1000 N/m³, τ0 = 2 Pa,
    /// μp = 0.1 Pa·s, so y0 = 2 mm (0.4 of the half gap), the wall shear rate is
    /// G (H/2 − y0)/μp = 30 1/s and the plug moves at 0.045 m/s.
    const SLIT: (f64, f64, f64, f64) = (1.0e-2, 1.0e3, 2.0, 0.1);

    /// Largest |u − u_Bingham| of the regularised law with parameter `m` on the [`SLIT`].
    fn regularised_bingham_error(m: f64) -> f64 {
        let (h, g, tau0, mu_p) = SLIT;
        let law = papanastasiou(mu_p, tau0, m);
        let channel = GeneralisedChannel::solve(&[layer(h, g, &law)], 0.0, 2000).expect("solves");
        samples(h)
            .iter()
            .map(|&y| (channel.velocity(y) - bingham_slit_velocity(tau0, mu_p, g, h, y)).abs())
            .fold(0.0, f64::max)
    }

    #[test]
    fn regularised_bingham_approaches_the_ideal_slit_profile() {
        let (h, g, tau0, mu_p) = SLIT;
        let y0 = bingham_plug_half_width(tau0, g, h);
        let wall_rate = g * (0.5 * h - y0) / mu_p;
        let m = 1e4 / wall_rate;
        // The regularised law shears faster than the ideal one at every stress, so the two
        // profiles part most on the centre line, by Δu = (1/G) ∫₀^τw (γ̇_reg − γ̇_ideal) dτ
        // (dy = −dτ/G). With dτ = τ'(γ̇) dγ̇, ∫ γ̇ dτ is μp γ̇²/2 + (τ0/m)(1 − (1 + mγ̇) e^(−mγ̇))
        // for the regularised law and μp γ̇²/2 for the ideal one, up to the wall, where both
        // carry τw at shear rates that differ by (τ0/μp) e^(−m γ̇w), e^(−10⁴) here. So
        // Δu = τ0/(m G) = y0/m (1.3e−4 of the plug speed here) up to e^(−10⁴). The quadrature's
        // own error at the yield surfaces, which are not cuts, is O(Δ²) G/μp with Δ = 5 µm,
        // 2.5e−7 m/s at most, 4 % of y0/m. Measured: Δu/(y0/m) − 1 = −2.4e−5; 1e−3 is allowed.
        let error = regularised_bingham_error(m);
        let expected = y0 / m;
        assert!(
            (error / expected - 1.0).abs() < 1e-3,
            "error {error:e} vs y0/m = {expected:e}"
        );
        // And it is O(1/m): doubling m halves it.
        let ratio = error / regularised_bingham_error(2.0 * m);
        assert!((ratio - 2.0).abs() < 1e-3, "ratio {ratio}");
    }

    #[test]
    fn regularised_bingham_has_the_plug_half_width() {
        // Where yielded the regularised shear rate is the ideal G (s − y0)/μp up to
        // (τ0/μp) e^(−m γ̇) (e^(−5000) and less at the two heights used), so the straight line
        // through the shear rates at the wall and half way to the plug meets zero at the plug
        // edge y0. Measured: 1.3e−15 of y0 off.
        let (h, g, tau0, mu_p) = SLIT;
        let y0 = bingham_plug_half_width(tau0, g, h);
        let m = 1e4 / 30.0;
        let law = papanastasiou(mu_p, tau0, m);
        let channel = GeneralisedChannel::solve(&[layer(h, g, &law)], 0.0, 2000).expect("solves");
        let (y1, y2) = (0.0, 0.5 * (0.5 * h - y0));
        let (r1, r2) = (channel.shear_rate(y1), channel.shear_rate(y2));
        let edge = y1 - r1 * (y2 - y1) / (r2 - r1);
        let measured = 0.5 * h - edge;
        assert!((measured - y0).abs() < 1e-12 * y0, "{measured} vs {y0}");
        // The plug is nearly rigid: its speed varies by about y0/m across it (from the plug edge
        // to the centre line γ̇ ≈ −ln(1 − |τ|/τ0)/m integrates to y0/m).
        let plug: Vec<f64> = (0..=20)
            .map(|k| channel.velocity(0.5 * h - y0 + 2.0 * y0 * k as f64 / 20.0))
            .collect();
        let spread = plug.iter().fold(f64::NEG_INFINITY, |a, &b| a.max(b))
            - plug.iter().fold(f64::INFINITY, |a, &b| a.min(b));
        assert!(
            spread < 3.0 * y0 / m,
            "plug spread {spread:e} vs y0/m = {:e}",
            y0 / m
        );
    }

    #[test]
    fn ideal_bingham_law_gives_a_rigid_plug() {
        // μ = μp + τ0/γ̇ never reaches a stress below τ0, so the solver sets γ̇ = 0 in the plug.
        // The yield surfaces are not cuts (2000 points put them inside intervals), and γ̇ has a
        // slope jump G/μp at each: the interval holding one is integrated to O((G/μp) Δ²), at
        // most 2.5e−7 m/s (6e−6 of the plug speed) with Δ = 5 µm. Measured: 8.6e−9 of the plug
        // speed, falling 16-fold for a 4-fold finer table; 1e−7 is allowed.
        let (h, g, tau0, mu_p) = SLIT;
        let law = bingham(mu_p, tau0);
        let channel = GeneralisedChannel::solve(&[layer(h, g, &law)], 0.0, 2000).expect("solves");
        let error = relative_max_error(&channel, |y| bingham_slit_velocity(tau0, mu_p, g, h, y));
        assert!(error < 1e-7, "relative error {error:e}");
        assert_eq!(channel.shear_rate(0.5 * h), 0.0);
    }

    #[test]
    fn wall_stresses_balance_the_driving_forces() {
        // Three different laws, forces of both signs, a sliding top wall: τ(0) − τ(H) = Σ f_i h_i,
        // the laws hold at the walls, the walls do not slip and the flow rates add up.
        let (first, second, third) = (
            newtonian(0.02),
            power_law(0.3, 0.6),
            papanastasiou(0.05, 0.5, 100.0),
        );
        let stack = [
            layer(1.0e-3, 400.0, &first),
            layer(2.5e-3, -150.0, &second),
            layer(1.5e-3, 900.0, &third),
        ];
        let wall_speed = -0.01;
        let channel = GeneralisedChannel::solve(&stack, wall_speed, 101).expect("solves");
        let h = channel.gap();
        assert!((h - 5.0e-3).abs() < 1e-18);
        let driving: f64 = stack.iter().map(|l| l.force_density * l.width).sum();
        let balance = channel.shear_stress(0.0) - channel.shear_stress(h);
        assert!(
            (balance - driving).abs() < 1e-12 * driving.abs(),
            "{balance} vs {driving}"
        );
        for (y, law) in [(0.0, &first as &dyn Fn(f64) -> f64), (h, &third)] {
            let rate = channel.shear_rate(y);
            let stress = law(rate.abs()) * rate;
            let tau = channel.shear_stress(y);
            assert!(
                (stress - tau).abs() < 1e-13 * tau.abs(),
                "y = {y}: {stress} vs {tau}"
            );
        }
        assert_eq!(channel.velocity(0.0), 0.0);
        assert!((channel.velocity(h) - wall_speed).abs() < 1e-12 * wall_speed.abs());
        let split = channel.flow_rate_between(0.0, 1.7e-3) + channel.flow_rate_between(1.7e-3, h);
        assert!((split - channel.flow_rate()).abs() < 1e-15 * channel.flow_rate().abs().max(1e-12));
        assert_eq!(
            channel.flow_rate_between(2e-3, 1e-3),
            -channel.flow_rate_between(1e-3, 2e-3)
        );
        let summed = quadrature(|y| channel.velocity(y), 0.0, h, 2000);
        assert!((summed - channel.flow_rate()).abs() < 1e-12 * channel.flow_rate().abs());
    }

    #[test]
    fn invalid_input_is_an_error() {
        let water = newtonian(1e-3);
        let ok = layer(1e-3, 10.0, &water);
        let solve = |layers: &[FlowLayer<'_>], u: f64, points: usize| {
            GeneralisedChannel::solve(layers, u, points).map(|_| ())
        };
        assert_eq!(solve(&[], 0.0, 10), Err(GeneralisedError::NoLayers));
        assert_eq!(solve(&[ok], 0.0, 1), Err(GeneralisedError::TooFewPoints(1)));
        assert_eq!(solve(&[ok], 0.0, 0), Err(GeneralisedError::TooFewPoints(0)));
        for points in [MAX_TABLE_POINTS, usize::MAX] {
            assert_eq!(
                solve(&[ok], 0.0, points),
                Err(GeneralisedError::TooManyPoints { points, layers: 1 })
            );
        }
        for width in [0.0, -1e-3, f64::NAN, f64::INFINITY] {
            let result = solve(&[ok, layer(width, 10.0, &water)], 0.0, 10);
            assert!(
                matches!(result, Err(GeneralisedError::InvalidWidth { layer: 1, .. })),
                "{width}: {result:?}"
            );
        }
        for force in [f64::NAN, f64::NEG_INFINITY] {
            let result = solve(&[layer(1e-3, force, &water)], 0.0, 10);
            assert!(
                matches!(result, Err(GeneralisedError::InvalidForce { layer: 0, .. })),
                "{force}: {result:?}"
            );
        }
        assert!(matches!(
            solve(&[ok], f64::NAN, 10),
            Err(GeneralisedError::InvalidWallSpeed(_))
        ));
        let wide = layer(1e308, 0.0, &water);
        assert!(matches!(
            solve(&[wide, wide], 0.0, 10),
            Err(GeneralisedError::NotFinite { .. })
        ));
        let pushed = layer(1e10, 1e300, &water);
        assert!(matches!(
            solve(&[pushed], 0.0, 10),
            Err(GeneralisedError::NotFinite { .. })
        ));
        for bad in [-1.0, 0.0, f64::NAN, f64::INFINITY] {
            let law = newtonian(bad);
            let result = solve(&[ok, layer(1e-3, 10.0, &law)], 0.0, 10);
            assert!(
                matches!(
                    result,
                    Err(GeneralisedError::InvalidViscosity { layer: 1, shear_rate, .. })
                        if shear_rate > 0.0
                ),
                "{bad}: {result:?}"
            );
        }
        // A law whose stress γ̇/(1 + γ̇) never exceeds 1 Pa, asked for up to 5 Pa.
        let saturating = |rate: f64| 1.0 / (1.0 + rate);
        let result = solve(&[layer(1.0, 10.0, &saturating)], 0.0, 10);
        assert!(
            matches!(result, Err(GeneralisedError::NoShearRate { layer: 0, stress }) if stress > 1.0),
            "{result:?}"
        );
        // Moving the wall at 1e10 m/s through a fluid of 1e300 Pa·s needs a stress beyond f64.
        let stiff = newtonian(1e300);
        assert!(matches!(
            solve(&[layer(1e-3, 0.0, &stiff)], 1e10, 10),
            Err(GeneralisedError::NoBracket { .. })
        ));
        let error = solve(&[ok, layer(1e-3, 1.0, &newtonian(-2.0))], 0.0, 10).unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with("layer 1: the law gives viscosity -2"),
            "{error}"
        );
    }

    /// A law picked by proptest: constant, power law or Papanastasiou, from its parameters.
    fn picked_law(kind: u8, a: f64, b: f64) -> Box<dyn Fn(f64) -> f64 + Sync> {
        match kind % 3 {
            0 => Box::new(newtonian(a)),
            1 => Box::new(power_law(a, b)),
            _ => Box::new(papanastasiou(a, b, 50.0)),
        }
    }

    proptest! {
        #[test]
        fn any_input_gives_a_result_or_an_error_without_panicking(
            params in prop::collection::vec(
                (any::<f64>(), any::<f64>(), any::<u8>(), any::<f64>(), any::<f64>()),
                0..4,
            ),
            wall_speed in any::<f64>(),
            points in 0usize..12,
            y in any::<f64>(),
        ) {
            let laws: Vec<_> = params.iter().map(|&(_, _, kind, a, b)| picked_law(kind, a, b)).collect();
            let stack: Vec<_> = params
                .iter()
                .zip(&laws)
                .map(|(&(width, force, ..), law)| layer(width, force, law.as_ref()))
                .collect();
            if let Ok(channel) = GeneralisedChannel::solve(&stack, wall_speed, points) {
                let _ = (channel.velocity(y), channel.shear_rate(y), channel.shear_stress(y));
                let _ = (channel.flow_rate_between(y, 0.5), channel.interface_velocities());
            }
        }

        #[test]
        fn valid_stacks_satisfy_the_wall_conditions_and_the_force_balance(
            params in prop::collection::vec(
                (1e-4..1e-2f64, -1e3..1e3f64, any::<u8>(), 1e-3..1.0f64, 0.4..1.6f64),
                1..4,
            ),
            wall_speed in -0.1..0.1f64,
        ) {
            let laws: Vec<_> = params
                .iter()
                .map(|&(_, _, kind, a, b)| picked_law(kind, a, b))
                .collect();
            let stack: Vec<_> = params
                .iter()
                .zip(&laws)
                .map(|(&(width, force, ..), law)| layer(width, force, law.as_ref()))
                .collect();
            let channel = GeneralisedChannel::solve(&stack, wall_speed, 16).expect("solves");
            let h = channel.gap();
            let scale = samples(h).iter().map(|&y| channel.velocity(y).abs()).fold(0.0, f64::max);
            prop_assert_eq!(channel.velocity(0.0), 0.0);
            prop_assert!((channel.velocity(h) - wall_speed).abs() <= 1e-10 * scale);
            let driving: f64 = stack.iter().map(|l| l.force_density * l.width).sum();
            let (lower, upper) = (channel.shear_stress(0.0), channel.shear_stress(h));
            // Rounding: the sum of |f_i h_i|, and the wall stresses themselves, which a
            // sliding wall can make far larger than the difference.
            let total: f64 = stack.iter().map(|l| (l.force_density * l.width).abs()).sum();
            let rounding = 1e-12 * (total + lower.abs() + upper.abs());
            prop_assert!((lower - upper - driving).abs() <= rounding);
            prop_assert_eq!(channel.interface_velocities().len(), stack.len() - 1);
        }
    }

    #[test]
    fn power_law_slit_is_zero_at_the_walls_symmetric_and_peaks_on_the_centre_line() {
        let (k, g, h) = (0.8, 200.0, 1.0e-2);
        for n in [0.3, 0.5, 1.0, 1.5, 2.5] {
            let u = |y: f64| power_law_slit_velocity(k, n, g, h, y);
            let centre = n / (n + 1.0) * (g / k).powf(1.0 / n) * (0.5 * h).powf(1.0 + 1.0 / n);
            assert!((u(0.5 * h) - centre).abs() < 1e-14 * centre);
            assert_eq!(u(0.0), 0.0);
            assert!(u(h).abs() < 1e-14 * centre);
            for y in samples(h) {
                assert!((u(y) - u(h - y)).abs() < 1e-12 * centre, "n = {n}, y = {y}");
                assert!(u(y) <= centre * (1.0 + 1e-15));
                let reversed = power_law_slit_velocity(k, n, -g, h, y);
                assert_eq!(reversed, -u(y));
            }
            assert_eq!(u(-1e-9), 0.0);
            assert_eq!(u(h + 1e-9), 0.0);
        }
    }

    #[test]
    fn power_law_slit_with_unit_index_is_the_newtonian_parabola() {
        let (mu, g, h) = (0.3, 50.0, 1.0e-3);
        for y in samples(h) {
            let exact = g * y * (h - y) / (2.0 * mu);
            let u = power_law_slit_velocity(mu, 1.0, g, h, y);
            assert!((u - exact).abs() < 1e-14 * g * h * h / mu, "y = {y}");
        }
    }

    #[test]
    fn power_law_slit_satisfies_the_law_and_its_flow_rate() {
        // K |γ̇|ⁿ = |τ| = G |H/2 − y| from central differences of the closed form, and
        // ∫ u dy by composite Gauss–Legendre against Q = 2n/(2n+1) (G/K)^(1/n) (H/2)^(2+1/n)
        // (each half integrated on its own, so the kink at the centre line is a cut).
        let (k, g, h) = (0.8, 200.0, 1.0e-2);
        for n in [0.5, 1.5] {
            let u = |y: f64| power_law_slit_velocity(k, n, g, h, y);
            let d = 1e-7 * h;
            for y in [0.1 * h, 0.3 * h, 0.8 * h] {
                let rate = (u(y + d) - u(y - d)) / (2.0 * d);
                let tau = g * (0.5 * h - y);
                assert!((k * rate.abs().powf(n) - tau.abs()).abs() < 1e-6 * tau.abs());
                assert_eq!(rate.signum(), tau.signum());
            }
            let q = quadrature(u, 0.0, 0.5 * h, 400) + quadrature(u, 0.5 * h, h, 400);
            let exact = power_law_slit_flow_rate(k, n, g, h);
            assert!((q - exact).abs() < 1e-10 * exact, "n = {n}: {q} vs {exact}");
        }
    }

    #[test]
    fn bingham_slit_without_yield_stress_is_the_newtonian_parabola() {
        let (mu, g, h) = (0.3, 50.0, 1.0e-3);
        assert_eq!(bingham_plug_half_width(0.0, g, h), 0.0);
        for y in samples(h) {
            let exact = g * y * (h - y) / (2.0 * mu);
            let u = bingham_slit_velocity(0.0, mu, g, h, y);
            assert!((u - exact).abs() < 1e-14 * g * h * h / mu, "y = {y}");
        }
    }

    #[test]
    fn bingham_slit_has_a_rigid_plug_and_satisfies_the_law_where_yielded() {
        let (h, g, tau0, mu_p) = SLIT;
        let y0 = bingham_plug_half_width(tau0, g, h);
        assert_eq!(y0, tau0 / g);
        let u = |y: f64| bingham_slit_velocity(tau0, mu_p, g, h, y);
        let plug = g / (2.0 * mu_p) * (0.5 * h - y0).powi(2);
        for k in 0..=10 {
            let y = 0.5 * h - y0 + 2.0 * y0 * k as f64 / 10.0;
            assert!((u(y) - plug).abs() < 1e-15 * plug);
        }
        assert_eq!(u(0.0), 0.0);
        assert!(u(h).abs() < 1e-15 * plug);
        // Where yielded, τ0 + μp |γ̇| = |τ| = G |H/2 − y| from central differences, and the
        // profile is symmetric and odd in G.
        let d = 1e-7 * h;
        for y in [0.05 * h, 0.2 * h, 0.75 * h, 0.95 * h] {
            let rate = (u(y + d) - u(y - d)) / (2.0 * d);
            let tau = g * (0.5 * h - y);
            assert!((tau0 + mu_p * rate.abs() - tau.abs()).abs() < 1e-7 * tau.abs());
            assert!((u(y) - u(h - y)).abs() < 1e-14 * plug);
            assert_eq!(bingham_slit_velocity(tau0, mu_p, -g, h, y), -u(y));
        }
        // No flow once τ0 ≥ G H/2: the plug fills the gap.
        assert_eq!(bingham_plug_half_width(g * h, g, h), 0.5 * h);
        assert_eq!(bingham_plug_half_width(tau0, 0.0, h), 0.5 * h);
        for y in samples(h) {
            assert_eq!(bingham_slit_velocity(0.5 * g * h, mu_p, g, h, y), 0.0);
        }
    }
}
