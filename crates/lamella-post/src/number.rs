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

#[cfg(test)]
mod tests {
    use super::significant;

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
}
