//! Charts of stability results, drawn with the shared [`crate::plot`] helper.

use super::search::{CurvePoint, MapPoint, NEUTRAL_RATE};
use crate::plot::{Chart, PointMap, Series, Style, ValuedPoint};

/// Growth rate α c_i against wavenumber α (scaled units), with the zero line.
pub fn growth_curve_chart(curve: &[CurvePoint]) -> Chart {
    let x: Vec<f64> = curve.iter().map(|p| p.wavenumber).collect();
    let y: Vec<f64> = curve.iter().map(|p| p.growth_rate).collect();
    let zero = vec![0.0; 2];
    let ends = match (x.first(), x.last()) {
        (Some(a), Some(b)) => vec![*a, *b],
        _ => vec![],
    };
    Chart {
        title: "Linear stability: growth rate of the leading mode".into(),
        x_label: "wavenumber k h (-)".into(),
        y_label: "growth rate k c_i (U_max/h)".into(),
        log_x: false,
        log_y: false,
        series: vec![
            Series {
                label: "leading mode".into(),
                x,
                y,
                style: Style::Line,
            },
            Series {
                label: "neutral".into(),
                x: ends,
                y: zero,
                style: Style::Dashed,
            },
        ],
    }
}

/// Stability map over (m, n): every point coloured by its growth rate α c_i (scaled units,
/// U_max/h) on a diverging map centred on zero, unstable points (α c_i > [`NEUTRAL_RATE`]) as
/// circles and stable or neutral ones as squares (see [`ratio_map`]).
pub fn map_chart(map: &[MapPoint], reynolds: f64, wavenumber: f64) -> PointMap {
    let points: Vec<RatioPoint> = map
        .iter()
        .map(|p| RatioPoint {
            m: p.m,
            n: p.n,
            // Round-off around a neutral mode is neither growth nor decay.
            value: if p.growth_rate.abs() <= NEUTRAL_RATE {
                0.0
            } else {
                p.growth_rate
            },
        })
        .collect();
    ratio_map(
        &points,
        format!("Stability map at Re = {reynolds}, k h = {wavenumber}"),
        "growth rate k c_i (U_max/h)",
        ("unstable (k c_i > 0)", "stable (k c_i ≤ 0)"),
    )
}

/// A point of an (m, n) map with the signed value that colours it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RatioPoint {
    /// Viscosity ratio m = μ_lower/μ_upper.
    pub m: f64,
    /// Width ratio n = d_lower/d_upper.
    pub n: f64,
    /// The value (a growth rate): positive values are drawn as circles, the others as squares.
    pub value: f64,
}

/// Points over (n, m) on log axes coloured by their value (`value_label`, with units) on a
/// diverging map centred on zero, positive ones as circles and the others as squares (legend
/// texts `labels`: positive, other), with the long-wave neutral curves m = 1 and m = n² of
/// Yih 1967 for orientation.
pub fn ratio_map(
    points: &[RatioPoint],
    title: String,
    value_label: &str,
    labels: (&str, &str),
) -> PointMap {
    let n_lo = points.iter().map(|p| p.n).fold(f64::INFINITY, f64::min);
    let n_hi = points.iter().map(|p| p.n).fold(0.0, f64::max);
    let m_lo = points.iter().map(|p| p.m).fold(f64::INFINITY, f64::min);
    let m_hi = points.iter().map(|p| p.m).fold(0.0, f64::max);
    let steps = 50;
    let n_curve: Vec<f64> = (0..=steps)
        .map(|k| n_lo * (n_hi / n_lo).powf(k as f64 / steps as f64))
        .filter(|n| n * n >= m_lo && n * n <= m_hi)
        .collect();
    let mut curves = vec![Series {
        label: "long-wave neutral m = n²".into(),
        y: n_curve.iter().map(|n| n * n).collect(),
        x: n_curve,
        style: Style::Dashed,
    }];
    if m_lo <= 1.0 && 1.0 <= m_hi {
        curves.push(Series {
            label: "long-wave neutral m = 1".into(),
            x: vec![n_lo, n_hi],
            y: vec![1.0, 1.0],
            style: Style::Line,
        });
    }
    PointMap {
        title,
        x_label: "width ratio n = d_lower/d_upper (-)".into(),
        y_label: "viscosity ratio m = μ_lower/μ_upper (-)".into(),
        value_label: value_label.into(),
        log_x: true,
        log_y: true,
        points: points
            .iter()
            .map(|p| ValuedPoint {
                x: p.n,
                y: p.m,
                value: p.value,
            })
            .collect(),
        positive_label: labels.0.into(),
        other_label: labels.1.into(),
        curves,
    }
}
