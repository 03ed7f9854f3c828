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

use plotters::chart::SeriesAnno;
use plotters::coord::ranged1d::{AsRangedCoord, BoldPoints, Ranged, ValueFormatter};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use thiserror::Error;

mod axis;
mod layout;
mod map;
mod points;
pub use axis::AxisFormat;
pub use layout::{Layout, Rect, Role, TextBox};
use map::MARGIN;
pub use map::{MapFrame, field_map, field_map_layout, scatter_map, scatter_map_layout};
pub use points::{PointMap, ValuedPoint};

use layout::{Recorder, Recording, Stage, stage};

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
        self.render(width, height).map(|(png, _)| png)
    }

    /// Renders the chart to PNG bytes of `width` × `height` pixels, with the layout it drew.
    /// The legend goes into the corner of the plot area where it covers no data point (the
    /// corners are tried emptiest first); where every corner covers some, the vertical axis
    /// gets headroom for it (see `place_legend`).
    pub fn render(&self, width: u32, height: u32) -> Result<(Vec<u8>, Layout), PlotError> {
        register_font();
        let xs = self.series.iter().flat_map(|s| s.x.iter().copied());
        let ys = self.series.iter().flat_map(|s| s.y.iter().copied());
        let no_data = || PlotError::NoData(self.title.clone());
        let failed = |reason| PlotError::Render {
            title: self.title.clone(),
            reason,
        };
        let xr = axis_range(xs, self.log_x).ok_or_else(no_data)?;
        let yr = axis_range(ys, self.log_y).ok_or_else(no_data)?;
        let corners = self.corners_by_emptiness(&xr, &yr);
        let (pixels, layout) = place_legend(corners, &yr, self.log_y, |yr, corner| {
            let mut pixels = vec![255u8; width as usize * height as usize * 3];
            let axes = [
                AxisFormat::new(&self.x_label, xr.start, xr.end, self.log_x),
                AxisFormat::new(&self.y_label, yr.start, yr.end, self.log_y),
            ];
            let y_ticks = ticks(yr, self.log_y);
            let frame = Frame {
                size: (width, height),
                axes: &axes,
                y_ticks: &y_ticks,
                legend: corner.clone(),
            };
            let drawing = ChartDrawing {
                chart: self,
                pixels: &mut pixels,
                frame: &frame,
            };
            let layout =
                draw_on_axes(drawing, (&xr, self.log_x), (yr, self.log_y)).map_err(failed)?;
            Ok((pixels, layout))
        })?;
        let png = encode_png(&pixels, width, height).map_err(failed)?;
        Ok((png, layout))
    }

    /// The corners of the plot area, those with the fewest data points near them first (ties:
    /// upper right, upper left, lower right, lower left).
    fn corners_by_emptiness(&self, xr: &Range<f64>, yr: &Range<f64>) -> Vec<SeriesLabelPosition> {
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
        let mut order = [0, 1, 2, 3];
        order.sort_by_key(|&k| counts[k]);
        order.iter().map(|&k| corners[k].clone()).collect()
    }

    fn draw<X, Y>(
        &self,
        pixels: &mut [u8],
        frame: &Frame<'_>,
        xr: X,
        yr: Y,
    ) -> Result<Layout, String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>,
    {
        let [x_axis, y_axis] = frame.axes;
        let record = Recording::default();
        let backend = Recorder {
            inner: BitMapBackend::with_buffer(pixels, frame.size),
            record: record.clone(),
        };
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let (title, title_px) = fit_text(&self.title, frame.size.0.saturating_sub(2 * MARGIN), 22);
        stage(&record, Stage::Title);
        let mut chart = ChartBuilder::on(&root)
            .caption(&title, (FONT, title_px))
            .margin(MARGIN)
            .x_label_area_size(x_label_area(TICK_PX, DESC_PX))
            .y_label_area_size(y_label_area(y_axis, frame.y_ticks, TICK_PX, DESC_PX))
            .build_cartesian_2d(xr, yr)
            .map_err(|e| e.to_string())?;
        draw_axes(&mut chart, &record, x_axis, y_axis)?;
        let mut markers = Vec::new();
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
            let half = if s.style == Style::Points { 3 } else { 1 };
            markers.extend(points.iter().map(|p| {
                let (x, y) = chart.backend_coord(p);
                Rect::spanning((x - half, y - half), (x + half + 1, y + half + 1))
            }));
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
            // The legend shows each series as it is drawn: a dot, a dashed or a solid line.
            if s.style == Style::Points {
                anno.label(s.label.clone())
                    .legend(move |(x, y)| Circle::new((x + 9, y), 3, colour.filled()));
            } else {
                line_legend(anno, &s.label, colour, s.style == Style::Dashed);
            }
        }
        let plot = draw_legend(&mut chart, &record, &frame.legend, 0.85)?;
        root.present().map_err(|e| e.to_string())?;
        let layout = record.borrow().layout(frame.size, Some(plot), markers);
        Ok(layout)
    }
}

/// A drawing on a horizontal and a vertical axis, each linear or logarithmic: `draw` is
/// generic over the axes' coordinate types, which [`draw_on_axes`] picks at run time.
trait OnAxes {
    /// Draws with `x` and `y` as the coordinates of the axes and returns the layout drawn.
    fn draw<X, Y>(self, x: X, y: Y) -> Result<Layout, String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>;
}

/// Draws `drawing` over the ranges `x` and `y`, each on a logarithmic scale (with the ticks of
/// [`ticks`] as its key points) where its flag is set, else on a linear one.
fn draw_on_axes(
    drawing: impl OnAxes,
    (x, log_x): (&Range<f64>, bool),
    (y, log_y): (&Range<f64>, bool),
) -> Result<Layout, String> {
    let log = |range: &Range<f64>| {
        range
            .clone()
            .log_scale()
            .with_key_points(ticks(range, true))
    };
    match (log_x, log_y) {
        (false, false) => drawing.draw(x.clone(), y.clone()),
        (true, false) => drawing.draw(log(x), y.clone()),
        (false, true) => drawing.draw(x.clone(), log(y)),
        (true, true) => drawing.draw(log(x), log(y)),
    }
}

/// A [`Chart`] to draw into `pixels` in `frame`.
struct ChartDrawing<'a> {
    chart: &'a Chart,
    pixels: &'a mut [u8],
    frame: &'a Frame<'a>,
}

impl OnAxes for ChartDrawing<'_> {
    fn draw<X, Y>(self, x: X, y: Y) -> Result<Layout, String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>,
    {
        self.chart.draw(self.pixels, self.frame, x, y)
    }
}

/// Draws the axes, grid and tick labels of `chart` in the two axis formats, telling the layout
/// `record` which texts are the axis titles.
pub(crate) fn draw_axes<DB, X, Y>(
    chart: &mut ChartContext<'_, DB, Cartesian2d<X, Y>>,
    record: &Recording,
    x_axis: &AxisFormat,
    y_axis: &AxisFormat,
) -> Result<(), String>
where
    DB: DrawingBackend,
    X: Ranged<ValueType = f64> + ValueFormatter<f64>,
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    stage(
        record,
        Stage::Axes {
            x_title: x_axis.label.clone(),
            y_title: y_axis.label.clone(),
        },
    );
    chart
        .configure_mesh()
        .x_desc(&x_axis.label)
        .y_desc(&y_axis.label)
        .label_style((FONT, TICK_PX))
        .axis_desc_style((FONT, DESC_PX))
        .x_label_formatter(&|v| x_axis.tick(*v))
        .y_label_formatter(&|v| y_axis.tick(*v))
        .draw()
        .map_err(|e| e.to_string())?;
    stage(record, Stage::Quiet);
    Ok(())
}

/// Draws the legend of `chart` in `corner` on a white box of `opacity`, telling the layout
/// `record` which texts are the legend's, and returns the plot area's rectangle.
pub(crate) fn draw_legend<'a, DB, X, Y>(
    chart: &mut ChartContext<'a, DB, Cartesian2d<X, Y>>,
    record: &Recording,
    corner: &SeriesLabelPosition,
    opacity: f64,
) -> Result<Rect, String>
where
    DB: DrawingBackend + 'a,
    X: Ranged,
    Y: Ranged,
{
    stage(record, Stage::Legend);
    chart
        .configure_series_labels()
        .position(corner.clone())
        .label_font((FONT, TICK_PX))
        .background_style(WHITE.mix(opacity))
        .border_style(BLACK)
        .draw()
        .map_err(|e| e.to_string())?;
    stage(record, Stage::Quiet);
    let (px, py) = chart.plotting_area().get_pixel_range();
    Ok(Rect::spanning((px.start, py.start), (px.end, py.end)))
}

/// Labels a line series in the legend with a short solid or dashed stroke of its colour.
pub(crate) fn line_legend<DB: DrawingBackend>(
    anno: &mut SeriesAnno<'_, DB>,
    label: &str,
    colour: RGBColor,
    dashed: bool,
) {
    let anno = anno.label(label);
    if dashed {
        anno.legend(move |(x, y)| {
            plotters::element::DashedPathElement::new(
                vec![(x, y), (x + 18, y)],
                5,
                3,
                colour.stroke_width(2),
            )
        });
    } else {
        anno.legend(move |(x, y)| {
            PathElement::new(vec![(x, y), (x + 18, y)], colour.stroke_width(2))
        });
    }
}

/// Draws a chart (through `draw`, given the vertical range and the legend corner) with the
/// legend in each of `corners` in turn until it covers no data marker. If it covers some in
/// every corner, the vertical range is extended upwards by the legend's height (headroom, on a
/// log axis in decades) and the upper corners are tried again. Returns the pixels and layout
/// of the drawing whose legend covers the fewest markers.
fn place_legend(
    corners: Vec<SeriesLabelPosition>,
    y_range: &Range<f64>,
    log_y: bool,
    mut draw: impl FnMut(&Range<f64>, &SeriesLabelPosition) -> Result<(Vec<u8>, Layout), PlotError>,
) -> Result<(Vec<u8>, Layout), PlotError> {
    let covered = |layout: &Layout| layout.legend.map_or(0, |l| layout.covered_markers(&l));
    let mut best: Option<(Vec<u8>, Layout, usize)> = None;
    let mut attempt = |range: &Range<f64>,
                       corners: &[SeriesLabelPosition],
                       best: &mut Option<(Vec<u8>, Layout, usize)>|
     -> Result<(), PlotError> {
        for corner in corners {
            let (pixels, layout) = draw(range, corner)?;
            let count = covered(&layout);
            if best.as_ref().is_none_or(|b| count < b.2) {
                *best = Some((pixels, layout, count));
            }
            if count == 0 {
                break;
            }
        }
        Ok(())
    };
    attempt(y_range, &corners, &mut best)?;
    let room = best.as_ref().and_then(|(_, layout, count)| {
        let (legend, plot) = (layout.legend?, layout.plot?);
        let needed = (legend.y1 - legend.y0 + 20) as f64 / (plot.y1 - plot.y0).max(1) as f64;
        (*count > 0).then_some(needed.min(0.6))
    });
    if let Some(fraction) = room {
        let taller = headroom(y_range, log_y, fraction);
        let upper = [
            SeriesLabelPosition::UpperRight,
            SeriesLabelPosition::UpperLeft,
        ];
        attempt(&taller, &upper, &mut best)?;
    }
    best.map(|(pixels, layout, _)| (pixels, layout))
        .ok_or_else(|| PlotError::Render {
            title: String::new(),
            reason: "no legend corner tried".into(),
        })
}

/// `range` extended upwards so that its old extent fills `1 - fraction` of the new one (in
/// decades on a log axis).
fn headroom(range: &Range<f64>, log: bool, fraction: f64) -> Range<f64> {
    let stretch = 1.0 / (1.0 - fraction);
    if log {
        let (lo, hi) = (range.start.ln(), range.end.ln());
        range.start..(lo + (hi - lo) * stretch).exp()
    } else {
        range.start..range.start + (range.end - range.start) * stretch
    }
}

/// Font size of tick labels and legend entries (px).
const TICK_PX: u32 = 14;
/// Font size of axis titles (px).
const DESC_PX: u32 = 16;

/// What a chart is drawn into and how its axes read.
struct Frame<'a> {
    size: (u32, u32),
    axes: &'a [AxisFormat; 2],
    /// The tick values of the vertical axis, whose labels set the room left for them.
    y_ticks: &'a [f64],
    legend: SeriesLabelPosition,
}

/// The tick values plotters draws on an axis over `range`: on a log axis those of
/// [`axis::log_ticks`] (passed to plotters as key points), on a linear one plotters' own for at
/// most ten labels (the mesh default).
fn ticks(range: &Range<f64>, log: bool) -> Vec<f64> {
    if log {
        axis::log_ticks(range.start, range.end)
    } else {
        let coord: RangedCoordf64 = range.clone().into();
        coord.key_points(BoldPoints(10))
    }
}

/// Width and height (px) of `text` in the embedded font at `size` px.
pub(crate) fn text_size(text: &str, size: u32) -> (u32, u32) {
    register_font();
    FontDesc::new(FontFamily::Name(FONT), size as f64, FontStyle::Normal)
        .box_size(text)
        .unwrap_or((0, 0))
}

/// `text` at the largest font size up to `largest` (at least 10 px) whose measured width fits
/// `width` pixels; a text too long even at 10 px is shortened with an ellipsis.
pub(crate) fn fit_text(text: &str, width: u32, largest: u32) -> (String, u32) {
    for size in (10..=largest.max(10)).rev() {
        if text_size(text, size).0 <= width {
            return (text.to_string(), size);
        }
    }
    let mut chars: Vec<char> = text.chars().collect();
    while !chars.is_empty() {
        chars.pop();
        let short = format!("{}…", chars.iter().collect::<String>().trim_end());
        if text_size(&short, 10).0 <= width {
            return (short, 10);
        }
    }
    (String::new(), 10)
}

/// Distance from the axis line to the box of a tick label: twice plotters' default tick mark
/// of 5 px (its `draw_axis_and_labels`).
const LABEL_GAP: u32 = 10;
/// Gap between the tick labels and the axis title (px).
const TITLE_GAP: u32 = 8;

/// Height (px) of the band under the plot: tick labels at `tick_px`, the axis title at
/// `desc_px`, and the gaps.
pub(crate) fn x_label_area(tick_px: u32, desc_px: u32) -> u32 {
    LABEL_GAP + text_size("0123456789", tick_px).1 + TITLE_GAP + text_size("Agy(µ)", desc_px).1 + 2
}

/// Width (px) of the band left of the plot: the widest of the labels of `ticks` (measured in
/// the embedded font at `tick_px`), the gaps, and the height of the rotated axis title at
/// `desc_px`, so the title never overlaps the labels.
pub(crate) fn y_label_area(axis: &AxisFormat, ticks: &[f64], tick_px: u32, desc_px: u32) -> u32 {
    let widest = ticks
        .iter()
        .map(|&v| text_size(&axis.tick(v), tick_px).0)
        .max()
        .unwrap_or(0)
        .max(text_size("0.0", tick_px).0);
    LABEL_GAP + widest + TITLE_GAP + text_size(&axis.label, desc_px).1 + 2
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
