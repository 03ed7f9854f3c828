//! Interface instability growth: marker displacement measures, onset detection, an exponential
//! fit with a confidence interval, and the dominant wavelength of the interface shape.
//!
//! A small disturbance of a layered flow grows as A(t) = A0 exp(σ t) in its linear stage
//! (Yih 1967, J. Fluid Mech. 27; Hooper 1985, Phys. Fluids 28); σ is found as the slope of
//! ln A against t by least squares.

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::f64::consts::PI;

use rustfft::FftPlanner;
use rustfft::num_complex::Complex;
use thiserror::Error;

use crate::fit::linear_fit;

/// Why a growth analysis cannot be made.
#[derive(Debug, Error, PartialEq)]
pub enum GrowthError {
    /// The amplitude never passes the onset threshold.
    #[error(
        "no instability onset: the largest interface displacement is {largest:.3e} m (at t = {at:.4} s), \
         never above the onset threshold {threshold:.3e} m; run longer, or lower the threshold"
    )]
    NoOnset {
        /// Onset threshold (m).
        threshold: f64,
        /// Largest amplitude seen (m).
        largest: f64,
        /// Time of the largest amplitude (s).
        at: f64,
    },
    /// Too few usable points for a fit with a confidence interval.
    #[error(
        "only {points} positive amplitudes in the fit window [{start:.4}, {end:.4}] s; at least 3 are needed"
    )]
    TooFewPoints {
        /// Points in the window.
        points: usize,
        /// Window start (s).
        start: f64,
        /// Window end (s).
        end: f64,
    },
    /// Times and amplitudes differ in length or times do not increase.
    #[error("the time series is malformed: {0}")]
    Malformed(&'static str),
    /// No markers, or no usable interface shape.
    #[error("no interface markers to analyse")]
    NoMarkers,
}

/// Largest and root-mean-square absolute displacement of the markers normal to the initial
/// interface, d_i = n·(x_i − x_i⁰) given as `normal_now[i] − normal_initial[i]` (m).
pub fn displacement_measures(
    normal_initial: &[f64],
    normal_now: &[f64],
) -> Result<(f64, f64), GrowthError> {
    if normal_initial.len() != normal_now.len() {
        return Err(GrowthError::Malformed(
            "initial and current marker counts differ",
        ));
    }
    if normal_initial.is_empty() {
        return Err(GrowthError::NoMarkers);
    }
    let mut max = 0.0f64;
    let mut sq = 0.0;
    for (a, b) in normal_initial.iter().zip(normal_now) {
        let d = b - a;
        max = max.max(d.abs());
        sq += d * d;
    }
    Ok((max, (sq / normal_initial.len() as f64).sqrt()))
}

fn check_series(time: &[f64], amplitude: &[f64]) -> Result<(), GrowthError> {
    if time.len() != amplitude.len() {
        return Err(GrowthError::Malformed(
            "times and amplitudes differ in length",
        ));
    }
    if time.windows(2).any(|w| !(w[1] > w[0])) {
        return Err(GrowthError::Malformed("times must increase strictly"));
    }
    Ok(())
}

/// Index of the first time the amplitude exceeds `threshold` (e.g. one particle spacing).
pub fn detect_onset(time: &[f64], amplitude: &[f64], threshold: f64) -> Result<usize, GrowthError> {
    check_series(time, amplitude)?;
    if let Some(i) = amplitude.iter().position(|&a| a > threshold) {
        return Ok(i);
    }
    let (at, largest) =
        time.iter()
            .zip(amplitude)
            .fold((f64::NAN, f64::NEG_INFINITY), |best, (&t, &a)| {
                if a > best.1 { (t, a) } else { best }
            });
    Err(GrowthError::NoOnset {
        threshold,
        largest: largest.max(0.0),
        at: if at.is_nan() { 0.0 } else { at },
    })
}

/// The exponential A = A0 exp(σ t) fitted over a time window.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GrowthFit {
    /// Growth rate σ (1/s).
    pub rate: f64,
    /// Half-width of the 95 % confidence interval of σ (Student t with n−2 degrees of freedom).
    pub rate_ci95: f64,
    /// A0, the fitted amplitude extrapolated to t = 0 (m).
    pub amplitude_at_zero: f64,
    /// R² of the fit of ln A against t.
    pub r_squared: f64,
    /// First time in the window (s).
    pub start: f64,
    /// Last time in the window (s).
    pub end: f64,
    /// Points in the window.
    pub points: usize,
}

impl GrowthFit {
    /// One line for people: rate, 95 % interval, points, window and R².
    pub fn summary(&self) -> String {
        format!(
            "growth rate {:.4e} ± {:.2e} 1/s (95 %, {} points, t = {:.4}..{:.4} s, R² = {:.4})",
            self.rate, self.rate_ci95, self.points, self.start, self.end, self.r_squared
        )
    }

    /// Fitted amplitude at time t (m).
    pub fn amplitude(&self, t: f64) -> f64 {
        self.amplitude_at_zero * (self.rate * t).exp()
    }
}

fn fit_range(
    time: &[f64],
    amplitude: &[f64],
    lo: usize,
    hi: usize,
) -> Result<GrowthFit, GrowthError> {
    let (t, la): (Vec<f64>, Vec<f64>) = time[lo..=hi]
        .iter()
        .zip(&amplitude[lo..=hi])
        .filter(|(_, a)| **a > 0.0 && a.is_finite())
        .map(|(t, a)| (*t, a.ln()))
        .unzip();
    let too_few = GrowthError::TooFewPoints {
        points: t.len(),
        start: time[lo],
        end: time[hi],
    };
    if t.len() < 3 {
        return Err(too_few);
    }
    let fit = linear_fit(&t, &la).ok_or(too_few)?;
    Ok(GrowthFit {
        rate: fit.slope,
        rate_ci95: fit.slope_ci95_half_width().unwrap_or(f64::INFINITY),
        amplitude_at_zero: fit.intercept.exp(),
        r_squared: fit.r_squared,
        start: time[lo],
        end: time[hi],
        points: fit.points,
    })
}

/// Window length from which the R² floor of [`FitWindow::LogLinear`] applies.
const MIN_POINTS_FOR_R2: usize = 10;

/// How the fit window is chosen.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FitWindow {
    /// A given time range [start, end] (s).
    Times {
        /// Window start (s).
        start: f64,
        /// Window end (s).
        end: f64,
    },
    /// From the onset as long as the data stay log-linear: the window is extended one point at
    /// a time while the rate fitted over the window's trailing quarter (4 to 8 points) is at
    /// least half the whole-window rate (this stops the window at saturation), and, once the
    /// window holds 10 points, R² ≥ `min_r_squared` (shorter windows have an R² dominated by
    /// noise). Thresholds are common practice.
    LogLinear {
        /// Smallest acceptable R² (e.g. 0.98).
        min_r_squared: f64,
    },
}

/// Fits the growth rate after the onset index `onset` (from [`detect_onset`]).
pub fn fit_growth(
    time: &[f64],
    amplitude: &[f64],
    onset: usize,
    window: FitWindow,
) -> Result<GrowthFit, GrowthError> {
    check_series(time, amplitude)?;
    if onset >= time.len() {
        return Err(GrowthError::Malformed("onset index lies beyond the series"));
    }
    match window {
        FitWindow::Times { start, end } => {
            let lo = time.iter().position(|&t| t >= start).unwrap_or(time.len());
            let hi = time.iter().rposition(|&t| t <= end);
            match hi {
                Some(hi) if lo <= hi => fit_range(time, amplitude, lo, hi),
                _ => Err(GrowthError::TooFewPoints {
                    points: 0,
                    start,
                    end,
                }),
            }
        }
        FitWindow::LogLinear { min_r_squared } => {
            let last = time.len() - 1;
            let mut best = fit_range(time, amplitude, onset, (onset + 2).min(last))?;
            for hi in onset + 3..=last {
                let Ok(fit) = fit_range(time, amplitude, onset, hi) else {
                    break;
                };
                let span = hi - onset + 1;
                let tail = (span / 4).clamp(4, 8);
                let trailing = fit_range(time, amplitude, hi + 1 - tail, hi)?;
                let bent = span >= MIN_POINTS_FOR_R2 && fit.r_squared < min_r_squared;
                if bent || !(trailing.rate >= 0.5 * fit.rate) {
                    break;
                }
                best = fit;
            }
            Ok(best)
        }
    }
}

/// The strongest Fourier mode of an interface shape.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DominantMode {
    /// Wavelength (m), period / mode.
    pub wavelength: f64,
    /// Mode number k (whole waves per period).
    pub mode: usize,
    /// Amplitude of that mode (m), 2|X_k|/N.
    pub amplitude: f64,
}

/// Dominant wavelength of the displacement `d(s)` of markers at positions `s` along a periodic
/// interface of length `period`: the markers are averaged into `samples` equal bins (empty bins
/// filled by periodic linear interpolation), the mean is removed, and the largest |X_k|,
/// 1 ≤ k ≤ samples/2, of the discrete Fourier transform is taken (rustfft).
pub fn dominant_wavelength(
    position: &[f64],
    displacement: &[f64],
    period: f64,
    samples: usize,
) -> Result<DominantMode, GrowthError> {
    if position.len() != displacement.len() {
        return Err(GrowthError::Malformed(
            "marker positions and displacements differ in length",
        ));
    }
    if position.is_empty() || samples < 4 || !(period > 0.0) {
        return Err(GrowthError::NoMarkers);
    }
    let width = period / samples as f64;
    let mut sum = vec![0.0; samples];
    let mut count = vec![0usize; samples];
    for (&s, &d) in position.iter().zip(displacement) {
        let k = ((s.rem_euclid(period) / width) as usize).min(samples - 1);
        sum[k] += d;
        count[k] += 1;
    }
    let filled: Vec<usize> = (0..samples).filter(|&k| count[k] > 0).collect();
    if filled.is_empty() {
        return Err(GrowthError::NoMarkers);
    }
    let mut shape = vec![0.0; samples];
    for &k in &filled {
        shape[k] = sum[k] / count[k] as f64;
    }
    // Periodic linear interpolation over runs of empty bins.
    for k in 0..samples {
        if count[k] > 0 {
            continue;
        }
        let prev = *filled
            .iter()
            .rev()
            .find(|&&j| j < k)
            .unwrap_or(filled.last().unwrap());
        let next = *filled.iter().find(|&&j| j > k).unwrap_or(&filled[0]);
        let gap = (next + samples - prev) % samples;
        let offset = (k + samples - prev) % samples;
        let w = if gap == 0 {
            0.0
        } else {
            offset as f64 / gap as f64
        };
        shape[k] = shape[prev] + w * (shape[next] - shape[prev]);
    }
    let mean = shape.iter().sum::<f64>() / samples as f64;
    let mut buffer: Vec<Complex<f64>> =
        shape.iter().map(|&v| Complex::new(v - mean, 0.0)).collect();
    FftPlanner::new()
        .plan_fft_forward(samples)
        .process(&mut buffer);
    let (mode, magnitude) = (1..=samples / 2)
        .map(|k| (k, buffer[k].norm()))
        .fold((1, -1.0), |best, m| if m.1 > best.1 { m } else { best });
    Ok(DominantMode {
        wavelength: period / mode as f64,
        mode,
        amplitude: 2.0 * magnitude / samples as f64,
    })
}

/// Wavenumber 2π/λ of a wavelength (1/m).
pub fn wavenumber(wavelength: f64) -> f64 {
    2.0 * PI / wavelength
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Deterministic standard normal numbers (xorshift64 + Box–Muller) for synthetic noise.
    struct Noise(u64);
    impl Noise {
        fn uniform(&mut self) -> f64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            (self.0 >> 11) as f64 / (1u64 << 53) as f64
        }
        fn normal(&mut self) -> f64 {
            let (u1, u2) = (self.uniform().max(1e-300), self.uniform());
            (-2.0 * u1.ln()).sqrt() * (2.0 * PI * u2).cos()
        }
    }

    #[test]
    fn displacement_measures_of_known_shifts() {
        let (max, rms) =
            displacement_measures(&[0.0, 1.0, 2.0, 3.0], &[0.1, 0.9, 2.0, 3.0]).unwrap();
        assert!((max - 0.1).abs() < 1e-15);
        assert!((rms - (0.02f64 / 4.0).sqrt()).abs() < 1e-15);
        assert_eq!(displacement_measures(&[], &[]), Err(GrowthError::NoMarkers));
    }

    #[test]
    fn known_rate_is_recovered_from_noisy_synthetic_growth() {
        // A = 1e-7 exp(σ t) with 2 % multiplicative Gaussian noise: the fit must give σ to 1 %
        // and its 95 % interval must hold the true rate.
        let sigma = 3.7;
        let mut noise = Noise(0x9e3779b97f4a7c15);
        let time: Vec<f64> = (0..120).map(|k| k as f64 * 0.025).collect();
        let amp: Vec<f64> = time
            .iter()
            .map(|t| 1e-7 * (sigma * t).exp() * (1.0 + 0.02 * noise.normal()))
            .collect();
        let onset = detect_onset(&time, &amp, 2e-7).unwrap();
        let fit = fit_growth(
            &time,
            &amp,
            onset,
            FitWindow::LogLinear {
                min_r_squared: 0.98,
            },
        )
        .unwrap();
        assert!((fit.rate - sigma).abs() < 0.01 * sigma, "rate {}", fit.rate);
        assert!(
            (fit.rate - sigma).abs() < fit.rate_ci95,
            "interval ±{}",
            fit.rate_ci95
        );
        assert!(fit.r_squared > 0.99);
        assert_eq!(fit.end, *time.last().unwrap());
    }

    #[test]
    fn automatic_window_stops_at_saturation() {
        // Logistic growth: exponential with rate 4 early, saturating at 1e-3 after t ≈ 2.9.
        let time: Vec<f64> = (0..200).map(|k| k as f64 * 0.025).collect();
        let amp: Vec<f64> = time
            .iter()
            .map(|t| {
                let e = 1e-8 * (4.0 * t).exp();
                e / (1.0 + e / 1e-3)
            })
            .collect();
        let onset = detect_onset(&time, &amp, 1e-7).unwrap();
        let fit = fit_growth(
            &time,
            &amp,
            onset,
            FitWindow::LogLinear {
                min_r_squared: 0.98,
            },
        )
        .unwrap();
        assert!(fit.end < 3.2, "window ran into saturation: end {}", fit.end);
        assert!((fit.rate - 4.0).abs() < 0.1 * 4.0, "rate {}", fit.rate);
    }

    #[test]
    fn no_onset_is_refused_with_a_clear_message() {
        let time = [0.0, 1.0, 2.0];
        let amp = [1e-6, 2e-6, 1.5e-6];
        let err = detect_onset(&time, &amp, 1e-5).unwrap_err();
        assert_eq!(
            err,
            GrowthError::NoOnset {
                threshold: 1e-5,
                largest: 2e-6,
                at: 1.0
            }
        );
        let text = err.to_string();
        assert!(text.contains("no instability onset") && text.contains("lower the threshold"));
    }

    #[test]
    fn explicit_window_with_too_few_points_is_refused() {
        let time = [0.0, 1.0, 2.0, 3.0];
        let amp = [1.0, 2.0, 4.0, 8.0];
        let err = fit_growth(
            &time,
            &amp,
            0,
            FitWindow::Times {
                start: 1.0,
                end: 2.0,
            },
        )
        .unwrap_err();
        assert!(matches!(err, GrowthError::TooFewPoints { points: 2, .. }));
        let fit = fit_growth(
            &time,
            &amp,
            0,
            FitWindow::Times {
                start: 0.0,
                end: 3.0,
            },
        )
        .unwrap();
        assert!((fit.rate - 2f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn dominant_wavelength_of_a_noisy_three_wave_interface() {
        let period = 4e-3;
        let mut noise = Noise(12345);
        let s: Vec<f64> = (0..300).map(|_| noise.uniform() * period).collect();
        let d: Vec<f64> = s
            .iter()
            .map(|x| 2e-5 * (2.0 * PI * 3.0 * x / period).sin() + 2e-6 * noise.normal())
            .collect();
        let m = dominant_wavelength(&s, &d, period, 64).unwrap();
        assert_eq!(m.mode, 3);
        assert!((m.wavelength - period / 3.0).abs() < 1e-15);
        assert!(
            (m.amplitude - 2e-5).abs() < 0.2 * 2e-5,
            "amplitude {}",
            m.amplitude
        );
        assert!((wavenumber(m.wavelength) - 2.0 * PI * 3.0 / period).abs() < 1e-9);
    }
}
