//! The shape of an interface between layers, measured from the particles as the Fourier
//! coefficients of its height, with no binning and below one spacing.
//!
//! For a lower layer between a flat bottom at y_b and the interface y_b + H + η(x) in a
//! channel periodic along x with length L, the Fourier coefficient of the interface height is
//!
//!   c_m = (2/L) ∫ η(x) e^{−i k_m (x − x0)} dx = (2/L) ∫∫_{lower layer} e^{−i k_m (x − x0)} dy dx,
//!
//! k_m = 2π m/L, m ≥ 1 (the flat part of the layer integrates to zero). The area integral is a
//! sum over the lower layer's particles with their volumes V_a = m_a/ρ_a, so
//! c_m ≈ (2/L) Σ_a V_a e^{−i k_m (x_a − x0)} (in 3D, divided by the depth as well: the mean
//! over z). Each particle carries its own volume along, so a smooth displacement of a fraction
//! of a spacing moves c_m smoothly. The height is then η(x) ≈ Σ_m A_m cos(k_m (x − x0) + φ_m)
//! with A_m = |c_m| and φ_m = arg c_m; a wave travelling at speed c has φ_m = φ_m(0) − k_m c t.

use std::f64::consts::TAU;

/// Amplitude and phase of one Fourier mode of the interface height.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InterfaceWave {
    /// A_m = |c_m| (m).
    pub amplitude: f64,
    /// φ_m = arg c_m in (−π, π] (rad): η ≈ A_m cos(k_m (x − x0) + φ_m).
    pub phase: f64,
    /// Root mean square of the amplitudes of the other resolved modes m = 1 … `modes`
    /// (m): the level below which the tracked amplitude is not told from particle noise.
    pub noise: f64,
}

/// The periodic strip an interface lies across.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strip {
    /// Lower end x0 of the periodic axis (m).
    pub x0: f64,
    /// Period L along x (m).
    pub length: f64,
    /// Depth along z in 3D (m); 1 in 2D (volumes are then areas).
    pub depth: f64,
}

/// The wave of mode `tracked` (1 = one wavelength over the period) of the interface that
/// bounds the particles with `below[a]` true, from their positions `x` along the periodic axis
/// and volumes `volume` (m³, or m² in 2D), with the noise over modes 1 … `modes` (see the
/// module docs). `tracked` must lie in 1 ..= `modes`. Sums run in the order given, so the
/// result does not depend on threads.
pub fn interface_wave(
    x: &[f64],
    volume: &[f64],
    below: &[bool],
    strip: Strip,
    tracked: usize,
    modes: usize,
) -> InterfaceWave {
    let mut sums = vec![(0.0f64, 0.0f64); modes];
    let k1 = TAU / strip.length;
    for ((&xa, &va), _) in x.iter().zip(volume).zip(below).filter(|(_, b)| **b) {
        // e^{−i k_m ξ} for m = 1, 2, … by repeated multiplication with e^{−i k_1 ξ}.
        let (s, c) = (k1 * (xa - strip.x0)).sin_cos();
        let (step_re, step_im) = (c, -s);
        let (mut re, mut im) = (step_re, step_im);
        for sum in sums.iter_mut() {
            sum.0 += va * re;
            sum.1 += va * im;
            (re, im) = (re * step_re - im * step_im, re * step_im + im * step_re);
        }
    }
    let scale = 2.0 / (strip.length * strip.depth);
    let coefficient = |m: usize| {
        let (re, im) = sums[m - 1];
        (scale * re, scale * im)
    };
    let (re, im) = coefficient(tracked);
    let others: Vec<f64> = (1..=modes)
        .filter(|&m| m != tracked)
        .map(|m| {
            let (re, im) = coefficient(m);
            re * re + im * im
        })
        .collect();
    let noise = if others.is_empty() {
        0.0
    } else {
        (others.iter().sum::<f64>() / others.len() as f64).sqrt()
    };
    InterfaceWave {
        amplitude: re.hypot(im),
        phase: im.atan2(re),
        noise,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A lower layer of depth `depth` under the interface depth + η(x), filled with particles
    /// on a lattice of spacing `dx` whose columns are cut at the interface with the exact
    /// fractional area of the top cell (the quadrature the module docs describe, done exactly
    /// per column), over one period of length `length`.
    fn layer(eta: impl Fn(f64) -> f64, length: f64, dx: f64) -> (Vec<f64>, Vec<f64>, Vec<bool>) {
        let (mut x, mut v, mut b) = (Vec::new(), Vec::new(), Vec::new());
        let columns = (length / dx).round() as usize;
        for i in 0..columns {
            let xc = (i as f64 + 0.5) * dx;
            let height = 1.0 + eta(xc);
            x.push(xc);
            v.push(height * dx);
            b.push(true);
            // Particles of the upper layer never count.
            x.push(xc);
            v.push(dx * dx);
            b.push(false);
        }
        (x, v, b)
    }

    #[test]
    fn a_sine_gives_its_amplitude_and_phase_and_no_noise() {
        // η = A cos(k x + φ) sampled at the column midpoints: the midpoint rule integrates a
        // trigonometric polynomial of degree below the column count exactly.
        let (length, dx) = (2.0, 0.02);
        let (a, phi) = (3.0e-3, 0.7);
        let k = TAU * 2.0 / length;
        let (x, v, b) = layer(|x| a * (k * x + phi).cos(), length, dx);
        let strip = Strip {
            x0: 0.0,
            length,
            depth: 1.0,
        };
        let wave = interface_wave(&x, &v, &b, strip, 2, 16);
        assert!((wave.amplitude - a).abs() < 1e-12 * a.max(1.0), "{wave:?}");
        assert!((wave.phase - phi).abs() < 1e-9, "{wave:?}");
        assert!(wave.noise < 1e-12, "{wave:?}");
        // A wave that has travelled by c t has its phase lowered by k c t.
        let shift = 0.05;
        let (x, v, b) = layer(|x| a * (k * (x - shift) + phi).cos(), length, dx);
        let moved = interface_wave(&x, &v, &b, strip, 2, 16);
        assert!((moved.phase - (phi - k * shift)).abs() < 1e-9, "{moved:?}");
    }

    #[test]
    fn other_modes_count_as_noise() {
        let (length, dx) = (1.0, 0.01);
        let k = TAU / length;
        let (x, v, b) = layer(
            |x| 1e-3 * (k * x).sin() + 2e-4 * (3.0 * k * x).cos(),
            length,
            dx,
        );
        let strip = Strip {
            x0: 0.0,
            length,
            depth: 1.0,
        };
        let wave = interface_wave(&x, &v, &b, strip, 1, 5);
        assert!((wave.amplitude - 1e-3).abs() < 1e-12);
        // sin = cos(· − π/2).
        assert!((wave.phase + 0.5 * std::f64::consts::PI).abs() < 1e-9);
        // One other mode of 2e-4 among four: rms = 2e-4/2.
        assert!((wave.noise - 1e-4).abs() < 1e-12, "{wave:?}");
    }
}
