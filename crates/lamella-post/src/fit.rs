//! Ordinary least-squares straight-line fit y = a + b x, with the slope's standard error and
//! a Student-t confidence interval (e.g. Montgomery & Runger, Applied Statistics and
//! Probability for Engineers, ch. 11, simple linear regression).

use statrs::distribution::{ContinuousCDF, StudentsT};

/// Result of a straight-line fit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LinearFit {
    /// Slope b.
    pub slope: f64,
    /// Intercept a.
    pub intercept: f64,
    /// Coefficient of determination R² = 1 − SS_res/SS_tot (1 when SS_tot = 0).
    pub r_squared: f64,
    /// Standard error of the slope, sqrt(SS_res/(n−2) / Sxx); 0 for n = 2.
    pub slope_std_error: f64,
    /// Number of points.
    pub points: usize,
}

/// Least-squares line through (x, y). `None` when fewer than two points, lengths differ,
/// a value is not finite or all x coincide.
pub fn linear_fit(x: &[f64], y: &[f64]) -> Option<LinearFit> {
    let n = x.len();
    if n < 2 || y.len() != n || x.iter().chain(y).any(|v| !v.is_finite()) {
        return None;
    }
    let nf = n as f64;
    let mx = x.iter().sum::<f64>() / nf;
    let my = y.iter().sum::<f64>() / nf;
    let sxx: f64 = x.iter().map(|v| (v - mx) * (v - mx)).sum();
    if sxx <= 0.0 {
        return None;
    }
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let slope = sxy / sxx;
    let intercept = my - slope * mx;
    let ss_res: f64 = x
        .iter()
        .zip(y)
        .map(|(a, b)| {
            let r = b - (intercept + slope * a);
            r * r
        })
        .sum();
    let ss_tot: f64 = y.iter().map(|b| (b - my) * (b - my)).sum();
    let r_squared = if ss_tot > 0.0 {
        1.0 - ss_res / ss_tot
    } else {
        1.0
    };
    let slope_std_error = if n > 2 {
        (ss_res / (nf - 2.0) / sxx).sqrt()
    } else {
        0.0
    };
    Some(LinearFit {
        slope,
        intercept,
        r_squared,
        slope_std_error,
        points: n,
    })
}

impl LinearFit {
    /// Half-width of the two-sided 95 % confidence interval of the slope,
    /// t_{0.975, n−2} · SE(b). `None` for two points (no degrees of freedom left).
    pub fn slope_ci95_half_width(&self) -> Option<f64> {
        if self.points < 3 {
            return None;
        }
        let t = StudentsT::new(0.0, 1.0, (self.points - 2) as f64).ok()?;
        Some(t.inverse_cdf(0.975) * self.slope_std_error)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_line_is_recovered() {
        let x = [0.0, 1.0, 2.0, 3.0];
        let y: Vec<f64> = x.iter().map(|v| 2.0 - 0.5 * v).collect();
        let f = linear_fit(&x, &y).unwrap();
        assert!((f.slope + 0.5).abs() < 1e-14 && (f.intercept - 2.0).abs() < 1e-14);
        assert!((f.r_squared - 1.0).abs() < 1e-14);
        assert!(f.slope_ci95_half_width().unwrap() < 1e-12);
    }

    #[test]
    fn textbook_regression_numbers() {
        // x = 1..5, y = (1, 2, 1.3, 3.75, 2.25): b = 0.425, a = 0.785,
        // SS_res = 2.79075, SE(b) = sqrt(2.79075/3/10) (hand calculation).
        let x = [1.0, 2.0, 3.0, 4.0, 5.0];
        let y = [1.0, 2.0, 1.3, 3.75, 2.25];
        let f = linear_fit(&x, &y).unwrap();
        assert!((f.slope - 0.425).abs() < 1e-12);
        assert!((f.intercept - 0.785).abs() < 1e-12);
        assert!((f.slope_std_error - (2.79075f64 / 30.0).sqrt()).abs() < 1e-9);
        // t_{0.975,3} = 3.182446 (Student t tables, e.g. Montgomery & Runger, Table V).
        let half = f.slope_ci95_half_width().unwrap();
        assert!((half / f.slope_std_error - 3.182446).abs() < 1e-5);
    }

    #[test]
    fn degenerate_input_is_refused() {
        assert!(linear_fit(&[1.0], &[1.0]).is_none());
        assert!(linear_fit(&[1.0, 1.0], &[1.0, 2.0]).is_none());
        assert!(linear_fit(&[1.0, 2.0], &[1.0, f64::NAN]).is_none());
    }
}
