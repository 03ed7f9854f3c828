//! Error measures between sampled values and a reference at the same points.

use thiserror::Error;

/// Why two series cannot be compared.
#[derive(Debug, Error, PartialEq)]
pub enum NormError {
    /// The two slices differ in length.
    #[error("cannot compare {sampled} sampled values with {reference} reference values")]
    LengthMismatch {
        /// Number of sampled values.
        sampled: usize,
        /// Number of reference values.
        reference: usize,
    },
    /// Nothing to compare.
    #[error("no values to compare")]
    Empty,
    /// The reference is zero everywhere, so a relative error is undefined.
    #[error("the reference is zero everywhere; a relative error is undefined")]
    ZeroReference,
    /// A value is NaN or infinite.
    #[error("value {index} is not finite")]
    NotFinite {
        /// Position of the offending value.
        index: usize,
    },
}

fn check(sampled: &[f64], reference: &[f64]) -> Result<(), NormError> {
    if sampled.len() != reference.len() {
        return Err(NormError::LengthMismatch {
            sampled: sampled.len(),
            reference: reference.len(),
        });
    }
    if sampled.is_empty() {
        return Err(NormError::Empty);
    }
    if let Some(index) = sampled.iter().chain(reference).position(|v| !v.is_finite()) {
        return Err(NormError::NotFinite {
            index: index % sampled.len(),
        });
    }
    Ok(())
}

/// Relative L2 error ‖s − r‖₂ / ‖r‖₂ = sqrt(Σ (sᵢ − rᵢ)² / Σ rᵢ²) (discrete L2 norm).
pub fn relative_l2_error(sampled: &[f64], reference: &[f64]) -> Result<f64, NormError> {
    check(sampled, reference)?;
    let num: f64 = sampled
        .iter()
        .zip(reference)
        .map(|(s, r)| (s - r) * (s - r))
        .sum();
    let den: f64 = reference.iter().map(|r| r * r).sum();
    if den == 0.0 {
        return Err(NormError::ZeroReference);
    }
    Ok((num / den).sqrt())
}

/// Maximum absolute error max |sᵢ − rᵢ| (L∞ norm of the difference), in the values' units.
pub fn max_abs_error(sampled: &[f64], reference: &[f64]) -> Result<f64, NormError> {
    check(sampled, reference)?;
    Ok(sampled
        .iter()
        .zip(reference)
        .map(|(s, r)| (s - r).abs())
        .fold(0.0, f64::max))
}

/// Maximum error relative to the largest reference magnitude, max |sᵢ − rᵢ| / max |rᵢ|.
pub fn relative_max_error(sampled: &[f64], reference: &[f64]) -> Result<f64, NormError> {
    let max_err = max_abs_error(sampled, reference)?;
    let scale = reference.iter().map(|r| r.abs()).fold(0.0, f64::max);
    if scale == 0.0 {
        return Err(NormError::ZeroReference);
    }
    Ok(max_err / scale)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_values() {
        let r = [3.0, 4.0];
        let s = [3.0, 4.5];
        assert!((relative_l2_error(&s, &r).unwrap() - 0.5 / 5.0).abs() < 1e-15);
        assert_eq!(max_abs_error(&s, &r).unwrap(), 0.5);
        assert!((relative_max_error(&s, &r).unwrap() - 0.125).abs() < 1e-15);
        assert_eq!(relative_l2_error(&r, &r).unwrap(), 0.0);
    }

    #[test]
    fn refuses_bad_input() {
        assert_eq!(
            relative_l2_error(&[1.0], &[1.0, 2.0]),
            Err(NormError::LengthMismatch {
                sampled: 1,
                reference: 2
            })
        );
        assert_eq!(max_abs_error(&[], &[]), Err(NormError::Empty));
        assert_eq!(
            relative_l2_error(&[1.0], &[0.0]),
            Err(NormError::ZeroReference)
        );
        assert_eq!(
            max_abs_error(&[1.0, f64::NAN], &[1.0, 1.0]),
            Err(NormError::NotFinite { index: 1 })
        );
    }
}
