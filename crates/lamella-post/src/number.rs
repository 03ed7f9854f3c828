//! Numbers written for a person to read: rounded to a few significant digits, plain where
//! that is short and in scientific notation otherwise, with no trailing zeros and no float
//! noise ("0.15", not "1.5000000000000002e-1").

/// `x` rounded to `digits` significant digits (at least 1), written plainly when
/// 1e-3 ≤ |rounded| < 1e5 and as `{:e}` otherwise, in the shortest form that reads back to the
/// rounded value. Zero and non-finite values are written as Rust writes them.
pub fn significant(x: f64, digits: usize) -> String {
    if !x.is_finite() || x == 0.0 {
        return format!("{x}");
    }
    let precision = digits.max(1) - 1;
    let rounded: f64 = format!("{x:.precision$e}").parse().unwrap_or(x);
    if (1e-3..1e5).contains(&rounded.abs()) {
        format!("{rounded}")
    } else {
        format!("{rounded:e}")
    }
}

/// `value ± uncertainty` with the uncertainty rounded to two significant digits and the value
/// to the same decimal place ("4.90 ± 0.14"; Taylor, An Introduction to Error Analysis, 2nd ed.
/// 1997, §2.2: the last significant figure of an answer sits in the decimal place of its
/// uncertainty). Falls back to [`significant`] for both when the uncertainty is not a finite
/// positive number or the numbers are too large or small to write plainly.
pub fn with_uncertainty(value: f64, uncertainty: f64) -> String {
    let plain = |x: f64| x == 0.0 || (1e-6..1e6).contains(&x.abs());
    let writable = uncertainty.is_finite()
        && uncertainty > 0.0
        && value.is_finite()
        && plain(value)
        && plain(uncertainty);
    if !writable {
        return format!(
            "{} ± {}",
            significant(value, 4),
            significant(uncertainty, 2)
        );
    }
    let decimals = (1 - uncertainty.log10().floor() as i32).max(0) as usize;
    format!("{value:.decimals$} ± {uncertainty:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::{significant, with_uncertainty};

    #[test]
    fn rounds_to_significant_digits_without_float_noise() {
        assert_eq!(significant(0.15000000000000002, 9), "0.15");
        assert_eq!(significant(0.077459666, 4), "0.07746");
        assert_eq!(significant(6.76e-5, 4), "6.76e-5");
        assert_eq!(significant(100.0, 4), "100");
        assert_eq!(significant(4.8, 4), "4.8");
        assert_eq!(significant(2.5e6, 4), "2.5e6");
        assert_eq!(significant(-0.0123456, 3), "-0.0123");
        assert_eq!(significant(0.002, 9), "0.002");
        assert_eq!(significant(0.0, 4), "0");
        assert_eq!(significant(f64::NAN, 4), "NaN");
        assert_eq!(significant(123.456, 0), "100");
    }

    #[test]
    fn a_value_carries_the_decimals_of_its_uncertainty() {
        assert_eq!(with_uncertainty(4.8974, 0.137), "4.90 ± 0.14");
        assert_eq!(with_uncertainty(-5.096, 0.189), "-5.10 ± 0.19");
        assert_eq!(with_uncertainty(0.011206, 1.45e-5), "0.011206 ± 0.000015");
        assert_eq!(with_uncertainty(123.4, 12.0), "123 ± 12");
        assert_eq!(with_uncertainty(1234.0, 560.0), "1234 ± 560");
        assert_eq!(with_uncertainty(4.9, f64::NAN), "4.9 ± NaN");
        assert_eq!(with_uncertainty(2.0e-9, 1.0e-10), "2e-9 ± 1e-10");
    }
}
