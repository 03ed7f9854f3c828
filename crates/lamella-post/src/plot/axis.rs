//! Axis labels a person reads at a glance: the unit of an axis gets the SI prefix that brings
//! its values to between 1 and 1000 (1.2e-3 m becomes 1.2 mm, 0.1 s becomes 100 ms), and tick
//! labels are plain decimals with as many digits as the tick spacing needs (no e-notation, no
//! "-2.711e-20" for zero).

/// SI prefixes by power of ten (BIPM, The International System of Units, 9th ed., 2019, §3).
const PREFIXES: [(i32, &str); 5] = [(-9, "n"), (-6, "µ"), (-3, "m"), (0, ""), (3, "k")];

/// Units that take a prefix on the first symbol (the coherent SI units the charts use).
const PREFIXABLE: [&str; 10] = ["m", "s", "m/s", "m/s²", "m²", "Pa", "Pa·s", "J", "J/m", "N"];

/// Ticks a chart shows along an axis at most (plotters' default); the decimals of the labels
/// are chosen for the spacing of this many, and a tick that needs more gets more.
const TICKS: f64 = 10.0;

/// How one axis is labelled: the axis title with its (prefixed) unit and the tick format.
#[derive(Clone, Debug, PartialEq)]
pub struct AxisFormat {
    /// Axis title, with the unit in parentheses changed to the chosen prefix.
    pub label: String,
    /// Values are divided by this before they are printed (10⁻³ for a millimetre axis).
    factor: f64,
    /// Decimals of a tick label on a linear axis.
    decimals: usize,
    /// Logarithmic axis: ticks at powers of ten and their multiples, printed with up to three
    /// significant digits.
    log: bool,
}

impl AxisFormat {
    /// The format of an axis titled `label` (unit in the last parentheses, e.g. "time (s)")
    /// that shows values from `lo` to `hi`.
    pub fn new(label: &str, lo: f64, hi: f64, log: bool) -> Self {
        let largest = lo.abs().max(hi.abs());
        let (label, factor) = match unit_of(label) {
            Some((start, unit)) if PREFIXABLE.contains(&unit) && largest > 0.0 => {
                let (power, prefix) = prefix_for(largest);
                let relabelled = format!("{}({prefix}{unit})", &label[..start]);
                (relabelled, 10f64.powi(power))
            }
            _ => (label.to_string(), 1.0),
        };
        let step = (hi - lo).abs() / factor / TICKS;
        let decimals = if step > 0.0 && step.is_finite() {
            (-step.log10().floor()).clamp(0.0, 9.0) as usize
        } else {
            3
        };
        Self {
            label,
            factor,
            decimals,
            log,
        }
    }

    /// The label of a tick at `value` (in the axis' base unit).
    pub fn tick(&self, value: f64) -> String {
        let v = value / self.factor;
        if self.log {
            return significant(v, 3);
        }
        // Enough decimals to show the tick's value, starting from those of the spacing.
        let decimals = (self.decimals..self.decimals + 3)
            .find(|&d| {
                let unit = 10f64.powi(-(d as i32));
                ((v / unit).round() * unit - v).abs() <= 1e-6 * unit
            })
            .unwrap_or(self.decimals + 3);
        let text = format!("{v:.decimals$}");
        // "-0.00" for a value that is zero up to round-off.
        if text
            .trim_start_matches('-')
            .chars()
            .all(|c| c == '0' || c == '.')
        {
            text.trim_start_matches('-').to_string()
        } else {
            text
        }
    }
}

/// Tick values of a logarithmic axis over [`lo`, `hi`] (both positive): the powers of ten in
/// the range, or, where those are fewer than three, 1-2-5 multiples of them, or every integer
/// multiple; over many decades every k-th power, at most about ten ticks. (Plotters' own log
/// ticks start at the first power of ten above `lo`, so a range such as 0.2–0.8 had none.)
pub(crate) fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo > 0.0 && hi > lo && hi.is_finite()) {
        return Vec::new();
    }
    let first = lo.log10().floor() as i32;
    let last = hi.log10().ceil() as i32;
    let within = |mantissas: &[f64]| -> Vec<f64> {
        let mut ticks = Vec::new();
        for e in first..=last {
            for &m in mantissas {
                let v = m * 10f64.powi(e);
                if v >= lo * (1.0 - 1e-12) && v <= hi * (1.0 + 1e-12) {
                    ticks.push(v);
                }
            }
        }
        ticks
    };
    let decades = within(&[1.0]);
    if decades.len() > 10 {
        let stride = decades.len().div_ceil(8);
        return decades.into_iter().step_by(stride).collect();
    }
    for mantissas in [
        &[1.0][..],
        &[1.0, 2.0, 5.0][..],
        &[1.0, 2.0, 3.0, 5.0][..],
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0][..],
    ] {
        let ticks = within(mantissas);
        if ticks.len() >= 3 {
            return ticks;
        }
    }
    // A range narrower than one step of the integer multiples: its ends.
    vec![lo, hi]
}

/// The unit in the last parentheses of an axis title, and where the parentheses start.
fn unit_of(label: &str) -> Option<(usize, &str)> {
    let open = label.rfind('(')?;
    let close = label[open..].find(')')? + open;
    (close == label.len() - 1).then(|| (open, label[open + 1..close].trim()))
}

/// The power of ten (a multiple of three) and prefix that bring `largest` to [1, 1000).
fn prefix_for(largest: f64) -> (i32, &'static str) {
    let power = (3.0 * (largest.log10() / 3.0).floor()) as i32;
    PREFIXES
        .iter()
        .copied()
        .min_by_key(|(p, _)| (p - power).abs())
        .unwrap_or((0, ""))
}

/// `value` with at most `digits` significant digits, without trailing zeros.
fn significant(value: f64, digits: i32) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (digits - 1 - magnitude).max(0) as usize;
    let text = format!("{value:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lengths_and_times_get_the_prefix_that_makes_them_readable() {
        let x = AxisFormat::new("x (m)", 0.0, 1.2e-3, false);
        assert_eq!(x.label, "x (mm)");
        assert_eq!(x.tick(0.6e-3), "0.6");
        let t = AxisFormat::new("time (s)", 0.0, 0.1, false);
        assert_eq!(t.label, "time (ms)");
        assert_eq!(t.tick(0.04), "40");
        let a = AxisFormat::new("amplitude (m)", 8e-6, 2.6e-5, true);
        assert_eq!(a.label, "amplitude (µm)");
        assert_eq!(a.tick(2e-5), "20");
        let u = AxisFormat::new("velocity u (m/s)", -1e-3, 3.5e-3, false);
        assert_eq!(u.label, "velocity u (mm/s)");
        assert_eq!(u.tick(2.5e-3), "2.5");
    }

    #[test]
    fn zero_reads_as_zero_and_no_tick_uses_e_notation() {
        let y = AxisFormat::new("y (m)", -6e-5, 1.26e-3, false);
        assert_eq!(y.tick(-2.711e-20), "0.0");
        for k in 0..=12 {
            let label = y.tick(k as f64 * 1e-4);
            assert!(!label.contains('e'), "{label}");
        }
    }

    #[test]
    fn units_without_a_prefix_keep_their_values() {
        let rate = AxisFormat::new("growth rate (1/s)", -5.8, 4.5, false);
        assert_eq!(rate.label, "growth rate (1/s)");
        assert_eq!(rate.tick(2.0), "2");
        assert_eq!(rate.tick(2.5), "2.5");
        let ratio = AxisFormat::new("width ratio n (-)", 0.1, 10.0, true);
        assert_eq!(ratio.label, "width ratio n (-)");
        assert_eq!(ratio.tick(0.2), "0.2");
        assert_eq!(AxisFormat::new("count", 0.0, 30.0, false).tick(20.0), "20");
    }

    #[test]
    fn log_axes_have_ticks_also_below_one() {
        let format = AxisFormat::new("width ratio n (-)", 0.2, 0.8, true);
        let labels: Vec<String> = log_ticks(0.2, 0.8)
            .iter()
            .map(|&v| format.tick(v))
            .collect();
        assert_eq!(labels, ["0.2", "0.3", "0.5"]);
        let labels: Vec<String> = log_ticks(0.1, 10.0)
            .iter()
            .map(|&v| format.tick(v))
            .collect();
        assert_eq!(labels, ["0.1", "1", "10"]);
        assert_eq!(log_ticks(0.15, 3.0), [0.2, 0.5, 1.0, 2.0]);
        let wide = log_ticks(1e-9, 1e9);
        assert!((3..=10).contains(&wide.len()), "{wide:?}");
    }

    #[test]
    fn significant_digits_are_trimmed() {
        assert_eq!(significant(0.000123456, 3), "0.000123");
        assert_eq!(significant(12345.0, 3), "12345");
        assert_eq!(significant(2.0, 3), "2");
    }
}
