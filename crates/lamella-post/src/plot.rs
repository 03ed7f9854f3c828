//! Line and scatter charts, and coloured maps of fields ([`field_map`]) and particles
//! ([`scatter_map`]), rendered to PNG bytes (plotters bitmap backend, PNG encoding by the `png`
//! crate), so callers decide where and how the file is written.
//!
//! Text uses DejaVu Sans, embedded through the `dejavu` crate (fonts under the DejaVu/Bitstream
//! Vera licence, the crate under MIT/Apache-2.0) and registered with plotters' `ab_glyph`
//! backend, so charts render the same on a machine with no system fonts.

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::ops::Range;
use std::sync::OnceLock;

use plotters::coord::ranged1d::{AsRangedCoord, ValueFormatter};
use plotters::prelude::*;
use thiserror::Error;

mod axis;
mod map;
pub use axis::AxisFormat;
pub use map::{MapFrame, field_map, scatter_map};

/// Family name the embedded font is registered under.
const FONT: &str = "sans-serif";

/// Why a chart cannot be drawn.
#[derive(Debug, Error, PartialEq)]
pub enum PlotError {
    /// Nothing finite to draw (or nothing positive on a log axis).
    #[error("chart \"{0}\" has no finite data to draw")]
    NoData(String),
    /// Drawing or encoding failed.
    #[error("cannot draw chart \"{title}\": {reason}")]
    Render {
        /// Chart title.
        title: String,
        /// What went wrong.
        reason: String,
    },
}

/// How a series is drawn.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Style {
    /// A polyline through the points.
    Line,
    /// A dashed-looking thin line (drawn as small dots), e.g. a fit or an analytical curve.
    Dashed,
    /// Filled circles.
    Points,
}

/// One labelled series.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text.
    pub label: String,
    /// Abscissae.
    pub x: Vec<f64>,
    /// Ordinates.
    pub y: Vec<f64>,
    /// Drawing style.
    pub style: Style,
}

/// A chart: title, axis labels (with units), axis scales and series.
#[derive(Clone, Debug, PartialEq)]
pub struct Chart {
    /// Title at the top.
    pub title: String,
    /// Label of the horizontal axis, with units.
    pub x_label: String,
    /// Label of the vertical axis, with units.
    pub y_label: String,
    /// Logarithmic horizontal axis.
    pub log_x: bool,
    /// Logarithmic vertical axis.
    pub log_y: bool,
    /// The series, drawn in order.
    pub series: Vec<Series>,
}

fn register_font() {
    static REGISTERED: OnceLock<bool> = OnceLock::new();
    REGISTERED.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, dejavu::sans::regular()).is_ok()
    });
}

/// Range of the finite (and, on a log axis, positive) values, padded a little.
fn axis_range(values: impl Iterator<Item = f64>, log: bool) -> Option<Range<f64>> {
    let (lo, hi) = values
        .filter(|v| v.is_finite() && (!log || *v > 0.0))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    if !(lo <= hi) {
        return None;
    }
    if log {
        let (lo, hi) = if lo == hi {
            (lo / 2.0, hi * 2.0)
        } else {
            (lo, hi)
        };
        Some(lo / 1.2..hi * 1.2)
    } else {
        let pad = if hi > lo {
            0.05 * (hi - lo)
        } else {
            lo.abs().max(1e-30) * 0.1
        };
        Some(lo - pad..hi + pad)
    }
}

const COLOURS: [RGBColor; 6] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
    RGBColor(23, 190, 207),
];

impl Chart {
    /// Renders the chart to PNG bytes of `width` × `height` pixels.
    pub fn to_png(&self, width: u32, height: u32) -> Result<Vec<u8>, PlotError> {
        register_font();
        let xs = self.series.iter().flat_map(|s| s.x.iter().copied());
        let ys = self.series.iter().flat_map(|s| s.y.iter().copied());
        let no_data = || PlotError::NoData(self.title.clone());
        let xr = axis_range(xs, self.log_x).ok_or_else(no_data)?;
        let yr = axis_range(ys, self.log_y).ok_or_else(no_data)?;
        let axes = [
            AxisFormat::new(&self.x_label, xr.start, xr.end, self.log_x),
            AxisFormat::new(&self.y_label, yr.start, yr.end, self.log_y),
        ];
        let corner = self.emptiest_corner(&xr, &yr);
        let mut pixels = vec![255u8; width as usize * height as usize * 3];
        let frame = Frame {
            size: (width, height),
            axes: &axes,
            y_ticks: [yr.start, yr.end],
            legend: corner,
        };
        let drawn = match (self.log_x, self.log_y) {
            (false, false) => self.draw(&mut pixels, &frame, xr, yr),
            (true, false) => self.draw(&mut pixels, &frame, xr.log_scale(), yr),
            (false, true) => self.draw(&mut pixels, &frame, xr, yr.log_scale()),
            (true, true) => self.draw(&mut pixels, &frame, xr.log_scale(), yr.log_scale()),
        };
        drawn.map_err(|reason| PlotError::Render {
            title: self.title.clone(),
            reason,
        })?;
        encode_png(&pixels, width, height).map_err(|reason| PlotError::Render {
            title: self.title.clone(),
            reason,
        })
    }

    /// The corner of the plot area with the fewest data points near it (ties: upper right,
    /// upper left, lower right, lower left), where the legend hides the least.
    fn emptiest_corner(&self, xr: &Range<f64>, yr: &Range<f64>) -> SeriesLabelPosition {
        let unit = |v: f64, r: &Range<f64>, log: bool| {
            if log {
                (v.ln() - r.start.ln()) / (r.end.ln() - r.start.ln())
            } else {
                (v - r.start) / (r.end - r.start)
            }
        };
        let mut counts = [0usize; 4];
        for s in &self.series {
            for (&x, &y) in s.x.iter().zip(&s.y) {
                let (u, v) = (unit(x, xr, self.log_x), unit(y, yr, self.log_y));
                if !(u.is_finite() && v.is_finite()) {
                    continue;
                }
                // A legend box covers about 40 % of the width and 30 % of the height.
                let (left, right, low, high) = (u < 0.4, u > 0.6, v < 0.3, v > 0.7);
                counts[0] += usize::from(right && high);
                counts[1] += usize::from(left && high);
                counts[2] += usize::from(right && low);
                counts[3] += usize::from(left && low);
            }
        }
        let corners = [
            SeriesLabelPosition::UpperRight,
            SeriesLabelPosition::UpperLeft,
            SeriesLabelPosition::LowerRight,
            SeriesLabelPosition::LowerLeft,
        ];
        let best = (0..4).min_by_key(|&k| counts[k]).unwrap_or(0);
        corners[best].clone()
    }

    fn draw<X, Y>(&self, pixels: &mut [u8], frame: &Frame<'_>, xr: X, yr: Y) -> Result<(), String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>,
    {
        let [x_axis, y_axis] = frame.axes;
        let root = BitMapBackend::with_buffer(pixels, frame.size).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let mut chart = ChartBuilder::on(&root)
            .caption(&self.title, (FONT, title_size(&self.title, frame.size.0)))
            .margin(12)
            .x_label_area_size(48)
            .y_label_area_size(y_label_area(y_axis, frame.y_ticks))
            .build_cartesian_2d(xr, yr)
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .x_desc(&x_axis.label)
            .y_desc(&y_axis.label)
            .label_style((FONT, 14))
            .axis_desc_style((FONT, 16))
            .x_label_formatter(&|v| x_axis.tick(*v))
            .y_label_formatter(&|v| y_axis.tick(*v))
            .draw()
            .map_err(|e| e.to_string())?;
        for (k, s) in self.series.iter().enumerate() {
            let colour = COLOURS[k % COLOURS.len()];
            let points: Vec<(f64, f64)> =
                s.x.iter()
                    .zip(&s.y)
                    .filter(|(x, y)| {
                        x.is_finite()
                            && y.is_finite()
                            && (!self.log_x || **x > 0.0)
                            && (!self.log_y || **y > 0.0)
                    })
                    .map(|(x, y)| (*x, *y))
                    .collect();
            let anno = match s.style {
                Style::Line => chart.draw_series(LineSeries::new(points, colour.stroke_width(2))),
                Style::Dashed => {
                    chart.draw_series(DashedLineSeries::new(points, 6, 4, colour.stroke_width(2)))
                }
                Style::Points => chart.draw_series(
                    points
                        .into_iter()
                        .map(|p| Circle::new(p, 3, colour.filled())),
                ),
            }
            .map_err(|e| e.to_string())?;
            anno.label(s.label.clone()).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2))
            });
        }
        chart
            .configure_series_labels()
            .position(frame.legend.clone())
            .label_font((FONT, 14))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
        Ok(())
    }
}

/// What a chart is drawn into and how its axes read.
struct Frame<'a> {
    size: (u32, u32),
    axes: &'a [AxisFormat; 2],
    /// The ends of the vertical axis, whose tick labels set the room left for them.
    y_ticks: [f64; 2],
    legend: SeriesLabelPosition,
}

/// Title font size (px) that fits `title` into `width` pixels: 22 px, smaller for a long title
/// (DejaVu Sans averages about 0.55 em a character; common practice for a text estimate).
fn title_size(title: &str, width: u32) -> u32 {
    let fit = (width.saturating_sub(24)) as f64 / (0.55 * title.chars().count().max(1) as f64);
    fit.clamp(10.0, 22.0) as u32
}

/// Width (px) of the area left of the plot: the longest tick label at 14 px (about 8 px a
/// character) plus the axis title and gaps, so the title never overlaps the labels.
fn y_label_area(axis: &AxisFormat, ends: [f64; 2]) -> u32 {
    let mid = 0.5 * (ends[0] + ends[1]);
    let longest = [ends[0], mid, ends[1]]
        .iter()
        .map(|&v| axis.tick(v).chars().count())
        .max()
        .unwrap_or(4)
        .max(4);
    8 * longest as u32 + 40
}

fn encode_png(pixels: &[u8], width: u32, height: u32) -> Result<Vec<u8>, String> {
    let mut bytes = Vec::new();
    let mut encoder = png::Encoder::new(&mut bytes, width, height);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder.write_header().map_err(|e| e.to_string())?;
    writer.write_image_data(pixels).map_err(|e| e.to_string())?;
    writer.finish().map_err(|e| e.to_string())?;
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn chart(log_y: bool) -> Chart {
        let x: Vec<f64> = (0..50).map(|k| k as f64 * 0.1).collect();
        Chart {
            title: "growth".into(),
            x_label: "time t (s)".into(),
            y_label: "displacement (m)".into(),
            log_x: false,
            log_y,
            series: vec![
                Series {
                    label: "data".into(),
                    x: x.clone(),
                    y: x.iter().map(|t| 1e-6 * (2.0 * t).exp()).collect(),
                    style: Style::Points,
                },
                Series {
                    label: "fit".into(),
                    x: x.clone(),
                    y: x.iter().map(|t| 1.1e-6 * (2.0 * t).exp()).collect(),
                    style: Style::Dashed,
                },
            ],
        }
    }

    #[test]
    fn renders_a_decodable_png_with_ink() {
        for log_y in [false, true] {
            let bytes = chart(log_y).to_png(640, 420).unwrap();
            let decoder = png::Decoder::new(std::io::Cursor::new(&bytes));
            let mut reader = decoder.read_info().unwrap();
            let mut buf = vec![0; reader.output_buffer_size()];
            let info = reader.next_frame(&mut buf).unwrap();
            assert_eq!((info.width, info.height), (640, 420));
            let dark = buf.chunks(3).filter(|p| p.iter().all(|&c| c < 100)).count();
            // Axes, ticks and text leave many dark pixels; a blank image would have none.
            assert!(dark > 2000, "only {dark} dark pixels");
        }
    }

    #[test]
    fn empty_chart_is_refused() {
        let mut c = chart(true);
        c.series
            .iter_mut()
            .for_each(|s| s.y.iter_mut().for_each(|v| *v = -1.0));
        assert_eq!(c.to_png(100, 100), Err(PlotError::NoData("growth".into())));
    }
}
