//! Mixing measures: gridded phase volume fractions (Shepard-normalised SPH interpolation),
//! local neighbourhood composition and normalised mixing entropy, and the global scalars of
//! Danckwerts (intensity of segregation) and Lacey (mixing index).

use lamella_cells::Vector;
use thiserror::Error;

use crate::neighbours::Neighbours;

/// Why a mixing measure is undefined.
#[derive(Debug, Error, PartialEq)]
pub enum MixingError {
    /// No sample carries any weight.
    #[error("no occupied sample to measure mixing on")]
    NoSamples,
    /// The phase is absent or fills everything, so the measure's denominator is zero.
    #[error("the mean concentration is {0}: with a single phase present, mixing is undefined")]
    SinglePhase(f64),
    /// Slices of different lengths.
    #[error("{0} values but {1} weights")]
    LengthMismatch(usize, usize),
}

/// Volume fraction of each phase at each centre (grid node or particle),
/// φ_k(x) = Σ_b V_b W(|x − x_b|) [phase_b = k] / Σ_b V_b W(|x − x_b|)
/// (Shepard normalisation; Monaghan 1992, Annu. Rev. Astron. Astrophys. 30, SPH interpolation).
/// `self_weight` adds a centre's own particle (index = centre) with weight V_i W(0) when the
/// centres are the particles themselves; pass `None` for grid nodes.
/// Returns a flat array centre-major (`[c * phases + k]`) and the Shepard sum Σ V_b W per
/// centre; centres with no particle in reach get NaN fractions and a zero sum.
pub fn phase_fractions<V: Vector>(
    neighbours: &Neighbours<V>,
    volume: &[f64],
    phase: &[usize],
    phases: usize,
    kernel: impl Fn(f64) -> f64,
    self_weight: Option<f64>,
) -> (Vec<f64>, Vec<f64>) {
    let n = neighbours.len();
    let mut fractions = vec![0.0; n * phases];
    let mut sums = vec![0.0; n];
    for c in 0..n {
        let row = &mut fractions[c * phases..(c + 1) * phases];
        let mut total = 0.0;
        if let Some(w0) = self_weight {
            let w = volume[c] * w0;
            row[phase[c]] += w;
            total += w;
        }
        for (j, r) in neighbours.of(c) {
            let w = volume[j] * kernel(r.length());
            row[phase[j]] += w;
            total += w;
        }
        if total > 0.0 {
            row.iter_mut().for_each(|v| *v /= total);
        } else {
            row.iter_mut().for_each(|v| *v = f64::NAN);
        }
        sums[c] = total;
    }
    (fractions, sums)
}

/// Global volume fraction of each phase, X_k = Σ V_b [phase_b = k] / Σ V_b.
pub fn global_composition(volume: &[f64], phase: &[usize], phases: usize) -> Vec<f64> {
    let mut x = vec![0.0; phases];
    for (&v, &p) in volume.iter().zip(phase) {
        x[p] += v;
    }
    let total: f64 = x.iter().sum();
    if total > 0.0 {
        x.iter_mut().for_each(|v| *v /= total);
    }
    x
}

/// Shannon entropy −Σ x_k ln x_k of one composition (0 ln 0 = 0).
pub fn shannon_entropy(fractions: &[f64]) -> f64 {
    -fractions
        .iter()
        .filter(|&&x| x > 0.0)
        .map(|&x| x * x.ln())
        .sum::<f64>()
}

/// Normalised mixing entropy of each local composition (rows of `local`, `global.len()` phases
/// each): S_a / S_global with S = −Σ x_k ln x_k (Shannon 1948). 0 for a neighbourhood of one
/// phase, 1 for a neighbourhood with the global composition (it can exceed 1 where the local
/// mix is more even than the global one). NaN rows stay NaN; NaN everywhere if the global
/// composition has a single phase.
pub fn normalised_mixing_entropy(local: &[f64], global: &[f64]) -> Vec<f64> {
    let phases = global.len();
    let reference = shannon_entropy(global);
    local
        .chunks(phases)
        .map(|row| {
            if reference > 0.0 && row.iter().all(|v| v.is_finite()) {
                shannon_entropy(row) / reference
            } else {
                f64::NAN
            }
        })
        .collect()
}

/// Weighted mean and variance of the samples with positive weight and a finite value.
fn weighted_moments(value: &[f64], weight: &[f64]) -> Result<(f64, f64, usize), MixingError> {
    if value.len() != weight.len() {
        return Err(MixingError::LengthMismatch(value.len(), weight.len()));
    }
    let used = || {
        value
            .iter()
            .zip(weight)
            .filter(|(v, w)| **w > 0.0 && v.is_finite())
    };
    let total: f64 = used().map(|(_, w)| w).sum();
    let count = used().count();
    if count == 0 || total <= 0.0 {
        return Err(MixingError::NoSamples);
    }
    let mean = used().map(|(v, w)| v * w).sum::<f64>() / total;
    let var = used()
        .map(|(v, w)| w * (v - mean) * (v - mean))
        .sum::<f64>()
        / total;
    Ok((mean, var, count))
}

/// Danckwerts' intensity of segregation I = σ²/(c̄(1 − c̄)) of the concentration samples
/// `concentration` (volume fraction of one phase) with weights `weight` (e.g. sample volume;
/// zero-weight or NaN samples are skipped). 1 for complete segregation, 0 for a uniform mix
/// (Danckwerts 1952, "The definition and measurement of some characteristics of mixtures",
/// Appl. Sci. Res. A3, pp. 279–296).
pub fn intensity_of_segregation(concentration: &[f64], weight: &[f64]) -> Result<f64, MixingError> {
    let (mean, var, _) = weighted_moments(concentration, weight)?;
    let scale = mean * (1.0 - mean);
    if scale <= 0.0 {
        return Err(MixingError::SinglePhase(mean));
    }
    Ok(var / scale)
}

/// Lacey's mixing index M = (σ0² − σ²)/(σ0² − σR²) of sample fractions counted in boxes:
/// `fraction[j]` the share of one phase among the `count[j]` particles of box j (boxes with
/// no particle skipped), σ² their count-weighted variance, σ0² = p(1 − p) the fully segregated
/// variance, σR² = p(1 − p)/n̄ that of a random mix with n̄ particles per box. 0 segregated,
/// about 1 randomly mixed (Lacey 1954, "Developments in the theory of particle mixing",
/// J. Appl. Chem. 4, pp. 257–268).
pub fn lacey_index(fraction: &[f64], count: &[f64]) -> Result<f64, MixingError> {
    let (p, var, boxes) = weighted_moments(fraction, count)?;
    let s0 = p * (1.0 - p);
    if s0 <= 0.0 {
        return Err(MixingError::SinglePhase(p));
    }
    let n_mean = count.iter().filter(|&&c| c > 0.0).sum::<f64>() / boxes as f64;
    let sr = s0 / n_mean;
    if s0 - sr <= 0.0 {
        // One particle per box: segregated and random are indistinguishable.
        return Err(MixingError::NoSamples);
    }
    Ok((s0 - var) / (s0 - sr))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::neighbours::brute_force;
    use glam::DVec2;

    struct Uniform(u64);
    impl Uniform {
        fn next(&mut self) -> f64 {
            self.0 ^= self.0 << 13;
            self.0 ^= self.0 >> 7;
            self.0 ^= self.0 << 17;
            (self.0 >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    /// Box counts of phase 0 among `per_box` particles in each of `boxes` boxes.
    fn boxed(phases: &[usize], per_box: usize) -> (Vec<f64>, Vec<f64>) {
        phases
            .chunks(per_box)
            .map(|c| {
                (
                    c.iter().filter(|&&p| p == 0).count() as f64 / c.len() as f64,
                    c.len() as f64,
                )
            })
            .unzip()
    }

    #[test]
    fn segregated_field_has_intensity_one_and_lacey_zero() {
        // Danckwerts 1952: I = 1 when every sample is pure; Lacey 1954: M = 0 there.
        let c = [1.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0];
        let w = [1.0; 8];
        assert!((intensity_of_segregation(&c, &w).unwrap() - 1.0).abs() < 1e-14);
        let n = [50.0; 8];
        assert!(lacey_index(&c, &n).unwrap().abs() < 1e-14);
    }

    #[test]
    fn random_mix_tends_to_intensity_zero_and_lacey_one() {
        // Phases drawn at random (fraction 0.3): box fractions scatter binomially, σ² ≈ σR²,
        // so M → 1 and I = σR²/σ0² = 1/n → 0 as boxes fill (Danckwerts 1952; Lacey 1954).
        let mut rng = Uniform(0x2545f4914f6cdd1d);
        let mut previous = f64::INFINITY;
        for &per_box in &[10usize, 100, 1000] {
            let phases: Vec<usize> = (0..400 * per_box)
                .map(|_| if rng.next() < 0.3 { 0 } else { 1 })
                .collect();
            let (frac, count) = boxed(&phases, per_box);
            let i = intensity_of_segregation(&frac, &count).unwrap();
            assert!(
                (i * per_box as f64 - 1.0).abs() < 0.25,
                "I = {i} with {per_box} per box"
            );
            assert!(i < previous);
            previous = i;
            let m = lacey_index(&frac, &count).unwrap();
            assert!((m - 1.0).abs() < 0.2, "M = {m} with {per_box} per box");
        }
        assert!(previous < 2e-3);
    }

    #[test]
    fn single_phase_is_refused() {
        assert_eq!(
            intensity_of_segregation(&[1.0, 1.0], &[1.0, 1.0]),
            Err(MixingError::SinglePhase(1.0))
        );
        assert_eq!(
            intensity_of_segregation(&[0.5], &[0.0]),
            Err(MixingError::NoSamples)
        );
    }

    #[test]
    fn entropy_limits() {
        let global = [0.5, 0.5];
        let s = normalised_mixing_entropy(&[1.0, 0.0, 0.5, 0.5, 0.25, 0.75], &global);
        assert_eq!(s[0], 0.0);
        assert!((s[1] - 1.0).abs() < 1e-15);
        // −(¼ ln ¼ + ¾ ln ¾)/ln 2 = 0.811278 (binary entropy of 1/4).
        assert!((s[2] - 0.8112781244591328).abs() < 1e-12);
    }

    #[test]
    fn shepard_fractions_of_a_two_layer_lattice() {
        // Lower half phase 0, upper half phase 1: far from the interface the fractions are pure,
        // on it they are one half by symmetry, and every row sums to one (Shepard normalisation).
        let n = 20;
        let dx = 0.05;
        let pos: Vec<DVec2> = (0..n * n)
            .map(|k| DVec2::new(((k % n) as f64 + 0.5) * dx, ((k / n) as f64 + 0.5) * dx))
            .collect();
        let phase: Vec<usize> = pos.iter().map(|p| usize::from(p.y > 0.5)).collect();
        let volume = vec![dx * dx; pos.len()];
        let h = 1.3 * dx;
        let kernel = |r: f64| {
            let q = r / h;
            if q < 2.0 {
                (1.0 - 0.5 * q).powi(4) * (2.0 * q + 1.0)
            } else {
                0.0
            }
        };
        let nodes = [
            DVec2::new(0.5, 0.5),
            DVec2::new(0.5, 0.1),
            DVec2::new(0.5, 0.9),
            DVec2::new(5.0, 5.0),
        ];
        let nb = brute_force(&nodes, &pos, 2.0 * h, false);
        let (f, sums) = phase_fractions(&nb, &volume, &phase, 2, kernel, None);
        assert!((f[0] - 0.5).abs() < 1e-12);
        assert_eq!((f[2], f[3]), (1.0, 0.0));
        assert_eq!((f[4], f[5]), (0.0, 1.0));
        assert!(f[6].is_nan() && sums[3] == 0.0);
        let own = brute_force(&pos, &pos, 2.0 * h, true);
        let (local, _) = phase_fractions(&own, &volume, &phase, 2, kernel, Some(kernel(0.0)));
        for row in local.chunks(2) {
            assert!((row[0] + row[1] - 1.0).abs() < 1e-12);
        }
        assert_eq!(global_composition(&volume, &phase, 2), vec![0.5, 0.5]);
    }
}
