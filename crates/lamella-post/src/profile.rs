//! Bin-averaged profiles across a channel and their comparison with a reference profile.

use thiserror::Error;

use crate::norms::{NormError, max_abs_error, relative_l2_error};

/// Means of a quantity in equal bins of a coordinate.
#[derive(Clone, Debug, PartialEq)]
pub struct BinnedProfile {
    /// Bin centres (coordinate units).
    pub centres: Vec<f64>,
    /// Mean of the values in each bin (NaN for an empty bin).
    pub mean: Vec<f64>,
    /// Number of samples in each bin.
    pub count: Vec<usize>,
}

/// Why a profile cannot be made or compared.
#[derive(Debug, Error, PartialEq)]
pub enum ProfileError {
    /// Zero bins requested.
    #[error("the number of bins must be at least 1")]
    NoBins,
    /// The range is empty or not finite.
    #[error("the profile range [{lower}, {upper}] is empty; the upper end must exceed the lower")]
    EmptyRange {
        /// Lower end.
        lower: f64,
        /// Upper end.
        upper: f64,
    },
    /// Coordinates and values differ in length.
    #[error("{coordinates} coordinates but {values} values")]
    LengthMismatch {
        /// Number of coordinates.
        coordinates: usize,
        /// Number of values.
        values: usize,
    },
    /// No sample fell inside the range.
    #[error("no sample lies inside the profile range")]
    NoSamples,
    /// The comparison failed.
    #[error(transparent)]
    Norm(#[from] NormError),
}

/// Averages `value` in `bins` equal bins of `coordinate` over [lower, upper]; samples outside
/// the range (or with a non-finite coordinate) are ignored, the upper end belongs to the last bin.
pub fn bin_average(
    coordinate: &[f64],
    value: &[f64],
    lower: f64,
    upper: f64,
    bins: usize,
) -> Result<BinnedProfile, ProfileError> {
    if bins == 0 {
        return Err(ProfileError::NoBins);
    }
    if !(upper > lower && lower.is_finite() && upper.is_finite()) {
        return Err(ProfileError::EmptyRange { lower, upper });
    }
    if coordinate.len() != value.len() {
        return Err(ProfileError::LengthMismatch {
            coordinates: coordinate.len(),
            values: value.len(),
        });
    }
    let width = (upper - lower) / bins as f64;
    let mut sum = vec![0.0; bins];
    let mut count = vec![0usize; bins];
    for (&c, &v) in coordinate.iter().zip(value) {
        if !(lower..=upper).contains(&c) {
            continue;
        }
        let k = (((c - lower) / width) as usize).min(bins - 1);
        sum[k] += v;
        count[k] += 1;
    }
    if count.iter().all(|&n| n == 0) {
        return Err(ProfileError::NoSamples);
    }
    let centres = (0..bins)
        .map(|k| lower + (k as f64 + 0.5) * width)
        .collect();
    let mean = sum
        .iter()
        .zip(&count)
        .map(|(&s, &n)| if n > 0 { s / n as f64 } else { f64::NAN })
        .collect();
    Ok(BinnedProfile {
        centres,
        mean,
        count,
    })
}

/// A sampled profile beside its reference, bin by bin.
#[derive(Clone, Debug, PartialEq)]
pub struct ProfileComparison {
    /// The sampled profile.
    pub sampled: BinnedProfile,
    /// Bin means of the reference evaluated at the same sample coordinates (so bin-averaging
    /// itself adds no error).
    pub reference: Vec<f64>,
    /// Relative L2 error over the non-empty bins.
    pub relative_l2: f64,
    /// Largest absolute error over the non-empty bins (value units).
    pub max_abs: f64,
}

/// Bins `value` and `reference(coordinate)` alike and compares them with
/// [`relative_l2_error`] and [`max_abs_error`] over the non-empty bins.
pub fn compare_with_reference(
    coordinate: &[f64],
    value: &[f64],
    lower: f64,
    upper: f64,
    bins: usize,
    reference: impl Fn(f64) -> f64,
) -> Result<ProfileComparison, ProfileError> {
    let sampled = bin_average(coordinate, value, lower, upper, bins)?;
    let exact: Vec<f64> = coordinate.iter().map(|&c| reference(c)).collect();
    let reference_bins = bin_average(coordinate, &exact, lower, upper, bins)?;
    let (s, r): (Vec<f64>, Vec<f64>) = sampled
        .mean
        .iter()
        .zip(&reference_bins.mean)
        .zip(&sampled.count)
        .filter(|(_, n)| **n > 0)
        .map(|((s, r), _)| (*s, *r))
        .unzip();
    let relative_l2 = relative_l2_error(&s, &r)?;
    let max_abs = max_abs_error(&s, &r)?;
    Ok(ProfileComparison {
        sampled,
        reference: reference_bins.mean,
        relative_l2,
        max_abs,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bins_average_their_samples() {
        let c = [0.05, 0.15, 0.1, 0.95, 1.0, 2.0, -0.1];
        let v = [1.0, 3.0, 2.0, 10.0, 20.0, 99.0, 99.0];
        let p = bin_average(&c, &v, 0.0, 1.0, 2).unwrap();
        assert_eq!(p.count, vec![3, 2]);
        assert_eq!(p.mean, vec![2.0, 15.0]);
        assert_eq!(p.centres, vec![0.25, 0.75]);
    }

    #[test]
    fn exact_samples_have_zero_error_and_perturbed_ones_do_not() {
        let n = 400;
        let c: Vec<f64> = (0..n).map(|k| (k as f64 + 0.5) / n as f64).collect();
        let f = |y: f64| y * (1.0 - y);
        let v: Vec<f64> = c.iter().map(|&y| f(y)).collect();
        let cmp = compare_with_reference(&c, &v, 0.0, 1.0, 20, f).unwrap();
        assert!(cmp.relative_l2 < 1e-14 && cmp.max_abs < 1e-15);
        let scaled: Vec<f64> = v.iter().map(|x| 1.02 * x).collect();
        let cmp = compare_with_reference(&c, &scaled, 0.0, 1.0, 20, f).unwrap();
        assert!((cmp.relative_l2 - 0.02).abs() < 1e-12);
        assert!((cmp.max_abs - 0.02 * 0.25).abs() < 1e-4);
    }

    #[test]
    fn bad_requests_are_refused() {
        assert_eq!(
            bin_average(&[0.5], &[1.0], 0.0, 1.0, 0),
            Err(ProfileError::NoBins)
        );
        assert!(matches!(
            bin_average(&[0.5], &[1.0], 1.0, 1.0, 3),
            Err(ProfileError::EmptyRange { .. })
        ));
        assert_eq!(
            bin_average(&[5.0], &[1.0], 0.0, 1.0, 3),
            Err(ProfileError::NoSamples)
        );
    }
}
