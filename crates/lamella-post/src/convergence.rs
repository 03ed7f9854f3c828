//! Observed order of convergence from errors at several particle spacings: the least-squares
//! slope of ln(error) against ln(spacing), e ≈ C Δxᵖ (Roache 1998, Verification and Validation
//! in Computational Science and Engineering, ch. 5, observed order of accuracy).

use thiserror::Error;

use crate::fit::linear_fit;
use crate::plot::{Chart, Series, Style};

/// The fitted power law e = C Δxᵖ.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OrderFit {
    /// Observed order p (slope on log–log axes).
    pub order: f64,
    /// Prefactor C (error units per mᵖ).
    pub prefactor: f64,
    /// R² of the log–log fit.
    pub r_squared: f64,
    /// Number of spacings used.
    pub points: usize,
}

/// Why no order can be fitted.
#[derive(Debug, Error, PartialEq)]
pub enum ConvergenceError {
    /// Fewer than two spacings.
    #[error("a convergence study needs at least two spacings, got {0}")]
    TooFewSpacings(usize),
    /// The two lists differ in length.
    #[error("{spacings} spacings but {errors} errors")]
    LengthMismatch {
        /// Number of spacings.
        spacings: usize,
        /// Number of errors.
        errors: usize,
    },
    /// A spacing or error is zero, negative or not finite, so its logarithm is undefined.
    #[error("spacing {spacing} with error {error}: both must be positive and finite")]
    NotPositive {
        /// The spacing (m).
        spacing: f64,
        /// The error.
        error: f64,
    },
    /// All spacings are equal.
    #[error("all spacings are equal; give at least two different spacings")]
    EqualSpacings,
}

/// Fits e = C Δxᵖ by least squares on (ln Δx, ln e).
pub fn fit_observed_order(spacings: &[f64], errors: &[f64]) -> Result<OrderFit, ConvergenceError> {
    if spacings.len() != errors.len() {
        return Err(ConvergenceError::LengthMismatch {
            spacings: spacings.len(),
            errors: errors.len(),
        });
    }
    if spacings.len() < 2 {
        return Err(ConvergenceError::TooFewSpacings(spacings.len()));
    }
    for (&spacing, &error) in spacings.iter().zip(errors) {
        if !(spacing > 0.0 && error > 0.0 && spacing.is_finite() && error.is_finite()) {
            return Err(ConvergenceError::NotPositive { spacing, error });
        }
    }
    let lx: Vec<f64> = spacings.iter().map(|v| v.ln()).collect();
    let ly: Vec<f64> = errors.iter().map(|v| v.ln()).collect();
    let fit = linear_fit(&lx, &ly).ok_or(ConvergenceError::EqualSpacings)?;
    Ok(OrderFit {
        order: fit.slope,
        prefactor: fit.intercept.exp(),
        r_squared: fit.r_squared,
        points: fit.points,
    })
}

impl OrderFit {
    /// Error predicted by the fit at spacing `dx`.
    pub fn predict(&self, dx: f64) -> f64 {
        self.prefactor * dx.powf(self.order)
    }

    /// One-line verdict. Thresholds are common practice: p ≥ 0.5 with R² ≥ 0.9 is counted as
    /// converging; a positive but smaller or irregular slope as slow; otherwise not converging.
    pub fn verdict(&self) -> String {
        let p = self.order;
        let r2 = self.r_squared;
        if p >= 0.5 && r2 >= 0.9 {
            format!(
                "converging: observed order {p:.2} (R² = {r2:.3}, {} spacings)",
                self.points
            )
        } else if p > 0.0 {
            format!(
                "converging slowly or irregularly: observed order {p:.2} (R² = {r2:.3}, {} spacings)",
                self.points
            )
        } else {
            format!(
                "not converging: the error does not fall as the spacing shrinks (slope {p:.2}, R² = {r2:.3})"
            )
        }
    }
}

/// The convergence chart: the relative L2 error of each run against its spacing on log–log
/// axes, with the fitted power law; the title is `title` and the fit's observed order.
pub fn convergence_chart(title: &str, spacings: &[f64], errors: &[f64], fit: &OrderFit) -> Chart {
    let fitted: Vec<f64> = spacings.iter().map(|&d| fit.predict(d)).collect();
    Chart {
        title: format!("{title}: observed order {:.2}", fit.order),
        x_label: "particle spacing (m)".into(),
        y_label: "relative L2 error of the profile (1)".into(),
        log_x: true,
        log_y: true,
        series: vec![
            Series {
                label: "runs".into(),
                x: spacings.to_vec(),
                y: errors.to_vec(),
                style: Style::Points,
            },
            Series {
                label: format!("fit, slope {:.2}", fit.order),
                x: spacings.to_vec(),
                y: fitted,
                style: Style::Dashed,
            },
        ],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn power_law_is_recovered() {
        let dx = [4e-5, 2e-5, 1e-5, 5e-6];
        let e: Vec<f64> = dx.iter().map(|d: &f64| 3.0 * d.powf(1.3)).collect();
        let f = fit_observed_order(&dx, &e).unwrap();
        assert!((f.order - 1.3).abs() < 1e-10);
        assert!((f.prefactor - 3.0).abs() < 1e-8);
        assert!((f.predict(1e-5) - e[2]).abs() < 1e-12 * e[2]);
        assert!(f.verdict().starts_with("converging: observed order 1.30"));
    }

    #[test]
    fn rising_error_is_not_convergence() {
        let f = fit_observed_order(&[1.0, 0.5, 0.25], &[0.1, 0.2, 0.4]).unwrap();
        assert!((f.order + 1.0).abs() < 1e-12);
        assert!(f.verdict().starts_with("not converging"));
    }

    #[test]
    fn bad_input_is_refused() {
        assert_eq!(
            fit_observed_order(&[1.0], &[1.0]),
            Err(ConvergenceError::TooFewSpacings(1))
        );
        assert!(matches!(
            fit_observed_order(&[1.0, 0.5], &[0.1, 0.0]),
            Err(ConvergenceError::NotPositive { .. })
        ));
        assert_eq!(
            fit_observed_order(&[1.0, 1.0], &[0.1, 0.2]),
            Err(ConvergenceError::EqualSpacings)
        );
    }
}
