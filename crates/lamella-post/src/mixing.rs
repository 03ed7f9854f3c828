//! Mixing measures: gridded phase volume fractions (Shepard-normalised SPH interpolation),
//! local neighbourhood composition and normalised mixing entropy, and the global scalars of
//! Danckwerts (intensity of segregation), Lacey (mixing index) and the mixing-entropy index on
//! box counts. The box-count indices are measured against the same particles' unmixed
//! arrangement on the same grid, so that separated liquids measure exactly 0 whatever the grid
//! (see [`lacey_index`]).

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
    /// The boxes are too small to tell a mixed state from the segregated one (a box of one
    /// particle is pure however well mixed the liquids are).
    #[error(
        "the grid cells hold {0:.2} particles on average, too few to tell a mixed state from the \
         segregated start (a cell of one particle is pure however well mixed); use a coarser \
         grid, e.g. cells of two particle spacings or more"
    )]
    TooFewPerBox(f64),
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

/// Particles counted in the boxes (grid cells) of a sample grid, per phase: the samples of
/// [`lacey_index`] and [`entropy_index`].
#[derive(Clone, Debug, PartialEq)]
pub struct BoxCounts {
    phases: usize,
    /// Particles in each box.
    total: Vec<f64>,
    /// Particles of each phase in each box, box-major (`[box * phases + k]`).
    of_phase: Vec<f64>,
}

impl BoxCounts {
    /// `boxes` empty boxes for `phases` phases.
    pub fn new(boxes: usize, phases: usize) -> Self {
        BoxCounts {
            phases,
            total: vec![0.0; boxes],
            of_phase: vec![0.0; boxes * phases],
        }
    }

    /// Counts one particle of phase `phase` in box `index`; indices out of range are ignored
    /// (a particle outside the grid is in no box).
    pub fn add(&mut self, index: usize, phase: usize) {
        if index < self.total.len() && phase < self.phases {
            self.total[index] += 1.0;
            self.of_phase[index * self.phases + phase] += 1.0;
        }
    }

    /// Particles counted, N.
    pub fn particles(&self) -> f64 {
        self.total.iter().sum()
    }

    /// Boxes holding at least one particle.
    pub fn occupied(&self) -> usize {
        self.total.iter().filter(|&&n| n > 0.0).count()
    }

    /// Mean particles per occupied box, N / (occupied boxes); 0 with no particle.
    pub fn per_box(&self) -> f64 {
        let occupied = self.occupied();
        if occupied == 0 {
            0.0
        } else {
            self.particles() / occupied as f64
        }
    }

    /// Overall share of each phase among the counted particles, p_k = Σ_j n_jk / N.
    pub fn composition(&self) -> Vec<f64> {
        let n = self.particles();
        (0..self.phases)
            .map(|k| {
                let nk: f64 = self.of_phase.iter().skip(k).step_by(self.phases).sum();
                if n > 0.0 { nk / n } else { 0.0 }
            })
            .collect()
    }

    /// Count-weighted variance of the boxes' share of phase `k` about its overall share,
    /// σ² = Σ_j (n_j/N) (x_jk − p_k)², the box samples of Lacey (1954).
    pub fn variance(&self, k: usize) -> f64 {
        let n = self.particles();
        let p = self.composition()[k];
        self.boxes()
            .map(|(nj, row)| nj / n * (row[k] / nj - p).powi(2))
            .sum()
    }

    /// Count-weighted mean entropy of the boxes' compositions, Σ_j (n_j/N) H(x_j) with
    /// H(x) = −Σ_k x_k ln x_k: the conditional entropy of the phase given the box.
    pub fn conditional_entropy(&self) -> f64 {
        let n = self.particles();
        self.boxes()
            .map(|(nj, row)| {
                let x: Vec<f64> = row.iter().map(|c| c / nj).collect();
                nj / n * shannon_entropy(&x)
            })
            .sum()
    }

    /// The occupied boxes: particle count and per-phase counts.
    fn boxes(&self) -> impl Iterator<Item = (f64, &[f64])> {
        self.total
            .iter()
            .zip(self.of_phase.chunks(self.phases.max(1)))
            .filter(|(n, _)| **n > 0.0)
            .map(|(n, row)| (*n, row))
    }
}

/// Why a box-count index cannot tell mixing apart at this box size.
fn unresolved(per_box: f64) -> MixingError {
    MixingError::TooFewPerBox(per_box)
}

/// Lacey's mixing index of phase `k`, M = (σ0² − σ²)/(σ0² − σR²) (Lacey 1954, "Developments
/// in the theory of particle mixing", J. Appl. Chem. 4, pp. 257–268), on box counts:
/// σ² = [`BoxCounts::variance`] of `boxes`; σR² = p(1 − p)/n̄, the variance a random mixture
/// of the same particles gives, n̄ = N/(occupied boxes) (for unequal boxes
/// Σ_j (n_j/N) p(1 − p)/n_j, which is the same); σ0² the variance of the *segregated* state.
///
/// Lacey takes σ0² = p(1 − p), the variance when every box is pure. Boxes straddling the
/// interface of two separated layers are not pure, so with that σ0² the index of separated
/// liquids is above 0 by an amount set by the grid (0.089 for equal layers whose interface
/// runs through one row of 15 rows of 2 × 2-particle cells, 0 when it lies on cell edges; see
/// the test `textbook_lacey_counts_a_straddled_interface_as_mixing`). Here σ0²
/// is the variance of `segregated`, the same particles counted in the same boxes in their
/// unmixed arrangement (`lamella mix` counts them at their initial positions): the index is
/// then exactly 0 for the unmixed start on any grid, and still 1 on average for a random
/// mixture. Taking the measured initial variance as σ0² is common practice in mixing studies
/// (recalled from memory, not from one source). Like Lacey's own index it can exceed 1 for a
/// mixture more even than a random one (σ² < σR², at most σ0²/(σ0² − σR²) for σ² = 0).
///
/// Errors: no particle ([`MixingError::NoSamples`]); one phase only
/// ([`MixingError::SinglePhase`]); boxes too small to tell a random mix from the segregated
/// start, σ0² ≤ σR² ([`MixingError::TooFewPerBox`], e.g. one particle per box).
pub fn lacey_index(
    boxes: &BoxCounts,
    segregated: &BoxCounts,
    k: usize,
) -> Result<f64, MixingError> {
    let n = boxes.particles();
    if n <= 0.0 || segregated.particles() <= 0.0 {
        return Err(MixingError::NoSamples);
    }
    let p = boxes.composition()[k];
    let scale = p * (1.0 - p);
    if scale <= 0.0 {
        return Err(MixingError::SinglePhase(p));
    }
    let random = scale / boxes.per_box();
    let s0 = segregated.variance(k);
    if s0 - random <= 1e-12 * scale {
        return Err(unresolved(boxes.per_box()));
    }
    Ok((s0 - boxes.variance(k)) / (s0 - random))
}

/// Mixing-entropy index of box counts, E = (S − S0)/(S_max − S0), with S the count-weighted
/// mean of the boxes' Shannon entropies ([`BoxCounts::conditional_entropy`]), S_max = H(p)
/// the entropy of the overall composition, and S0 that of `segregated` (the same particles
/// in their unmixed arrangement, as in [`lacey_index`]).
///
/// S/S_max is the entropic mixing index of Camesasca, Kaufman & Manas-Zloczower (2006),
/// "Quantifying fluid mixing with the Shannon entropy", Macromol. Theory Simul. 15: the
/// conditional entropy of the species given the bin over the entropy of the species (recalled
/// from memory; their bins and weights may differ in detail). Since the overall composition is
/// the count-weighted mean of the box compositions and H is concave, S ≤ S_max (Jensen's
/// inequality), so E ≤ 1, with equality when every box holds the overall composition (a
/// perfect mix); E = 0 for the unmixed arrangement on any grid (S = S0) and is below 0 only
/// for a state more segregated than it. A random mixture of n̄ particles per box stays below 1
/// by about (K − 1)/(2 n̄ S_max) for K phases, the bias of the plug-in entropy (Miller 1955,
/// recalled from memory): 0.78 for two equal phases at four per box.
///
/// Errors as [`lacey_index`]: no particle, one phase, or boxes too small
/// ([`MixingError::TooFewPerBox`]: fewer than two particles per box on average, where boxes are
/// pure whatever the mix, or a segregated state already as even as a perfect mix).
pub fn entropy_index(boxes: &BoxCounts, segregated: &BoxCounts) -> Result<f64, MixingError> {
    if boxes.particles() <= 0.0 || segregated.particles() <= 0.0 {
        return Err(MixingError::NoSamples);
    }
    let composition = boxes.composition();
    let s_max = shannon_entropy(&composition);
    if s_max <= 0.0 {
        return Err(MixingError::SinglePhase(composition[0]));
    }
    let s0 = segregated.conditional_entropy();
    if boxes.per_box() < 2.0 || s_max - s0 <= 1e-12 * s_max {
        return Err(unresolved(boxes.per_box()));
    }
    // S ≤ S_max holds exactly (Jensen); min() only removes a rounding excess.
    let s = boxes.conditional_entropy().min(s_max);
    Ok((s - s0) / (s_max - s0))
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

    /// `phases[i]` counted in box `i / per_box` (two phases).
    fn boxed(phases: &[usize], per_box: usize) -> BoxCounts {
        let mut b = BoxCounts::new(phases.len().div_ceil(per_box), 2);
        for (i, &p) in phases.iter().enumerate() {
            b.add(i / per_box, p);
        }
        b
    }

    /// The same phases sorted, phase 0 first: the segregated arrangement in the same boxes.
    fn sorted(phases: &[usize]) -> Vec<usize> {
        let mut s = phases.to_vec();
        s.sort_unstable();
        s
    }

    /// Phase 0 with probability `p0`.
    fn random_phases(rng: &mut Uniform, n: usize, p0: f64) -> Vec<usize> {
        (0..n).map(|_| usize::from(rng.next() >= p0)).collect()
    }

    #[test]
    fn segregated_field_has_intensity_one() {
        // Danckwerts 1952: I = 1 when every sample is pure.
        let c = [1.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0];
        let w = [1.0; 8];
        assert!((intensity_of_segregation(&c, &w).unwrap() - 1.0).abs() < 1e-14);
    }

    #[test]
    fn separated_layers_measure_zero_on_any_grid() {
        // Two layers on a 24 × 24 lattice, interface 10 rows up, counted on grids whose cells
        // straddle the interface: Lacey's σ0² = p(1 − p) gives more than 0 there, the indices
        // against the segregated arrangement give exactly 0.
        let n = 24;
        for cells in [1usize, 3, 5, 7, 12] {
            let mut b = BoxCounts::new(cells * cells, 2);
            for row in 0..n {
                for col in 0..n {
                    let cell = (row * cells / n) * cells + col * cells / n;
                    b.add(cell, usize::from(row >= 10));
                }
            }
            if cells == 1 {
                // One box holding everything: no contrast at all.
                assert_eq!(
                    lacey_index(&b, &b, 0),
                    Err(MixingError::TooFewPerBox(576.0))
                );
                continue;
            }
            assert_eq!(lacey_index(&b, &b, 0), Ok(0.0), "{cells} cells");
            assert_eq!(lacey_index(&b, &b, 1), Ok(0.0));
            assert_eq!(entropy_index(&b, &b), Ok(0.0));
            let p = b.composition()[0];
            let textbook =
                (p * (1.0 - p) - b.variance(0)) / (p * (1.0 - p) * (1.0 - 1.0 / b.per_box()));
            if cells == 7 {
                assert!(textbook > 0.01, "cells straddle the interface: {textbook}");
            }
        }
    }

    #[test]
    fn textbook_lacey_counts_a_straddled_interface_as_mixing() {
        // Two equal layers of 15 rows each on a 30 × 30 lattice, 15 × 15 cells of 2 × 2
        // particles: the row of cells holding rows 14 and 15 is half and half. By hand,
        // σ² = σ0² − (1/15)(1/4) with σ0² = 1/4 and σR² = σ0²/4, so Lacey's own index
        // (σ0² = p(1 − p)) is (1/60)/(3/16) = 0.0889 for separated liquids; against the
        // segregated arrangement itself it is 0.
        let mut b = BoxCounts::new(15 * 15, 2);
        for row in 0..30 {
            for col in 0..30 {
                b.add((row / 2) * 15 + col / 2, usize::from(row >= 15));
            }
        }
        let s0 = 0.25;
        let textbook = (s0 - b.variance(0)) / (s0 - s0 / b.per_box());
        assert!((textbook - 4.0 / 45.0).abs() < 1e-12, "{textbook}");
        assert_eq!(lacey_index(&b, &b, 0), Ok(0.0));
    }

    #[test]
    fn random_mix_tends_to_intensity_zero_and_indices_one() {
        // Phases drawn at random (fraction 0.3): box fractions scatter binomially, σ² ≈ σR²,
        // so M → 1 and I = σR²/σ0² = 1/n → 0 as boxes fill (Danckwerts 1952; Lacey 1954). The
        // entropy index approaches 1 from below, by about 1/(2 n S_max) (plug-in bias).
        let mut rng = Uniform(0x2545f4914f6cdd1d);
        let mut previous = f64::INFINITY;
        for &per_box in &[10usize, 100, 1000] {
            let phases = random_phases(&mut rng, 400 * per_box, 0.3);
            let b = boxed(&phases, per_box);
            let frac: Vec<f64> = (0..400)
                .map(|j| {
                    1.0 - phases[j * per_box..(j + 1) * per_box].iter().sum::<usize>() as f64
                        / per_box as f64
                })
                .collect();
            let i = intensity_of_segregation(&frac, &vec![per_box as f64; 400]).unwrap();
            assert!(
                (i * per_box as f64 - 1.0).abs() < 0.25,
                "I = {i} with {per_box} per box"
            );
            assert!(i < previous);
            previous = i;
            let segregated = boxed(&sorted(&phases), per_box);
            let m = lacey_index(&b, &segregated, 0).unwrap();
            assert!((m - 1.0).abs() < 0.2, "M = {m} with {per_box} per box");
            let e = entropy_index(&b, &segregated).unwrap();
            let s_max = shannon_entropy(&b.composition());
            let bias = 1.0 / (2.0 * per_box as f64 * s_max);
            assert!(
                e <= 1.0 && (1.0 - e - bias).abs() < 0.5 * bias + 2e-3,
                "E = {e} with {per_box} per box"
            );
        }
        assert!(previous < 2e-3);
    }

    #[test]
    fn perfect_mix_has_entropy_index_one_and_lacey_at_its_bound() {
        // Every box holds 3 of phase 0 and 7 of phase 1: S = S_max, E = 1 exactly; σ² = 0, so
        // M = σ0²/(σ0² − σR²), above 1 (an ordered mix is more even than a random one).
        let phases: Vec<usize> = (0..500).map(|i| usize::from(i % 10 >= 3)).collect();
        let b = boxed(&phases, 10);
        let segregated = boxed(&sorted(&phases), 10);
        assert_eq!(entropy_index(&b, &segregated), Ok(1.0));
        let s0 = segregated.variance(0);
        let sr = 0.21 / 10.0;
        let m = lacey_index(&b, &segregated, 0).unwrap();
        assert!((m - s0 / (s0 - sr)).abs() < 1e-12 && m > 1.0, "M = {m}");
    }

    #[test]
    fn one_particle_per_box_is_refused_with_the_fix() {
        let phases = [0usize, 1, 0, 1, 1, 0];
        let b = boxed(&phases, 1);
        let err = lacey_index(&b, &boxed(&sorted(&phases), 1), 0).unwrap_err();
        assert_eq!(err, MixingError::TooFewPerBox(1.0));
        assert!(err.to_string().contains("use a coarser grid"), "{err}");
        assert_eq!(entropy_index(&b, &b), Err(MixingError::TooFewPerBox(1.0)));
        let one = boxed(&[0, 0, 0, 0], 2);
        assert_eq!(
            lacey_index(&one, &one, 0),
            Err(MixingError::SinglePhase(1.0))
        );
        assert_eq!(
            lacey_index(&BoxCounts::new(3, 2), &one, 0),
            Err(MixingError::NoSamples)
        );
    }

    proptest::proptest! {
        /// Any arrangement of up to three phases on any grid: the entropy index never exceeds 1
        /// (Jensen), both indices are exactly 0 against themselves, and the conditional entropy
        /// lies in [0, S_max].
        #[test]
        fn entropy_index_never_exceeds_one(
            cells in 1usize..40,
            phases in 2usize..4,
            labels in proptest::collection::vec((0usize..40, 0usize..3), 2..400),
        ) {
            let mut b = BoxCounts::new(cells, phases);
            let members: Vec<(usize, usize)> =
                labels.iter().map(|&(c, p)| (c % cells, p % phases)).collect();
            for &(c, p) in &members {
                b.add(c, p);
            }
            // The segregated arrangement: the same particles sorted by phase into the boxes.
            let mut sizes: Vec<usize> = members.iter().map(|m| m.0).collect();
            sizes.sort_unstable();
            let mut ps: Vec<usize> = members.iter().map(|m| m.1).collect();
            ps.sort_unstable();
            let mut segregated = BoxCounts::new(cells, phases);
            for (c, p) in sizes.iter().zip(&ps) {
                segregated.add(*c, *p);
            }
            let s_max = shannon_entropy(&b.composition());
            let s = b.conditional_entropy();
            proptest::prop_assert!(s >= 0.0 && s <= s_max * (1.0 + 1e-12) + 1e-15);
            if let Ok(e) = entropy_index(&b, &segregated) {
                proptest::prop_assert!(e <= 1.0, "E = {}", e);
            }
            if let Ok(e) = entropy_index(&b, &b) {
                proptest::prop_assert_eq!(e, 0.0);
            }
            if let Ok(m) = lacey_index(&b, &b, 0) {
                proptest::prop_assert_eq!(m, 0.0);
            }
        }

        /// Random mixtures of 20 to 200 particles per box in 16 to 64 boxes, phase share 0.1 to
        /// 0.9: Lacey's index is 1 within 0.1 (its spread is about √(2/B)/n, under 0.02 here)
        /// and the entropy index below 1 by no more than twice its plug-in bias plus 0.02.
        #[test]
        fn random_mixtures_measure_about_one(
            seed in 1u64..u64::MAX,
            boxes in 16usize..64,
            per_box in 20usize..200,
            p0 in 0.1f64..0.9,
        ) {
            let mut rng = Uniform(seed);
            let phases = random_phases(&mut rng, boxes * per_box, p0);
            let b = boxed(&phases, per_box);
            let segregated = boxed(&sorted(&phases), per_box);
            let m = lacey_index(&b, &segregated, 0).unwrap();
            proptest::prop_assert!((m - 1.0).abs() < 0.1, "M = {}", m);
            let e = entropy_index(&b, &segregated).unwrap();
            let bias = 1.0 / (2.0 * per_box as f64 * shannon_entropy(&b.composition()));
            proptest::prop_assert!(e <= 1.0 && e > 1.0 - 2.0 * bias - 0.02, "E = {}", e);
        }
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
