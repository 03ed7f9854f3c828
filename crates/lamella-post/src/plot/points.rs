//! A map of points coloured by a signed value (a growth rate) on a diverging colour map centred
//! on zero, with a colour bar: positive values as filled circles, the others as filled squares
//! (both outlined, so the light colours near zero stay visible), named in a legend together
//! with any curves drawn over them (e.g. neutral curves).

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use std::ops::Range;

use plotters::coord::ranged1d::{AsRangedCoord, ValueFormatter};
use plotters::element::{Drawable, PointCollection};
use plotters::prelude::*;
use plotters_backend::{BackendCoord, DrawingErrorKind};

use super::layout::{Layout, Recorder, Recording, Rect};
use super::map::{
    BAR_LABELS_WIDTH, BAR_THICKNESS, MARGIN, Scale, TITLE_HEIGHT, draw_bar, draw_title,
};
use super::{
    AxisFormat, COLOURS, DESC_PX, OnAxes, PlotError, Series, Style, TICK_PX, axis_range, draw_axes,
    draw_legend, draw_on_axes, encode_png, line_legend, place_legend, register_font, ticks,
    x_label_area, y_label_area,
};

/// Radius of a circle marker and half the side of a square one (px).
const MARKER: i32 = 5;

/// One point of a [`PointMap`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ValuedPoint {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// The signed value that colours it.
    pub value: f64,
}

/// Points coloured by a signed value, with curves over them.
#[derive(Clone, Debug, PartialEq)]
pub struct PointMap {
    /// Title at the top.
    pub title: String,
    /// Label of the horizontal axis, with units.
    pub x_label: String,
    /// Label of the vertical axis, with units.
    pub y_label: String,
    /// Label of the colour bar: the quantity and its units.
    pub value_label: String,
    /// Logarithmic horizontal axis.
    pub log_x: bool,
    /// Logarithmic vertical axis.
    pub log_y: bool,
    /// The points.
    pub points: Vec<ValuedPoint>,
    /// Legend text of the points with a positive value (circles).
    pub positive_label: String,
    /// Legend text of the other points (squares).
    pub other_label: String,
    /// Curves drawn over the points (lines or dashed lines), with their legend text.
    pub curves: Vec<Series>,
}

impl PointMap {
    /// The colour scale: reversed ColorBrewer RdBu centred on zero over the points' values.
    pub(crate) fn scale(&self) -> Scale {
        Scale::diverging(self.points.iter().map(|p| p.value))
    }

    /// The colour of a point of value `value` (dark red for the largest positive value,
    /// dark blue for the most negative, light grey at zero).
    pub fn colour_of(&self, value: f64) -> (u8, u8, u8) {
        let RGBColor(r, g, b) = self.scale().colour(value);
        (r, g, b)
    }

    /// Renders the map to PNG bytes of `width` × `height` pixels.
    pub fn to_png(&self, width: u32, height: u32) -> Result<Vec<u8>, PlotError> {
        self.render(width, height).map(|(png, _)| png)
    }

    /// Renders the map to PNG bytes of `width` × `height` pixels, with the layout it drew; the
    /// legend goes into the corner where it covers the fewest points (none if it can).
    pub fn render(&self, width: u32, height: u32) -> Result<(Vec<u8>, Layout), PlotError> {
        register_font();
        let no_data = || PlotError::NoData(self.title.clone());
        let failed = |reason| PlotError::Render {
            title: self.title.clone(),
            reason,
        };
        let xs = self.points.iter().map(|p| p.x);
        let ys = self.points.iter().map(|p| p.y);
        let xr = axis_range(xs, self.log_x).ok_or_else(no_data)?;
        let yr = axis_range(ys, self.log_y).ok_or_else(no_data)?;
        let corners = vec![
            SeriesLabelPosition::UpperRight,
            SeriesLabelPosition::UpperLeft,
            SeriesLabelPosition::LowerRight,
            SeriesLabelPosition::LowerLeft,
        ];
        let (pixels, layout) = place_legend(corners, &yr, self.log_y, |yr, corner| {
            let mut pixels = vec![255u8; width as usize * height as usize * 3];
            let drawing = MapDrawing {
                map: self,
                pixels: &mut pixels,
                size: (width, height),
                corner,
                ranges: (&xr, yr),
            };
            let layout =
                draw_on_axes(drawing, (&xr, self.log_x), (yr, self.log_y)).map_err(failed)?;
            Ok((pixels, layout))
        })?;
        let png = encode_png(&pixels, width, height).map_err(failed)?;
        Ok((png, layout))
    }

    fn draw<X, Y>(
        &self,
        pixels: &mut [u8],
        size: (u32, u32),
        corner: &SeriesLabelPosition,
        (xc, yc): (X, Y),
        (xr, yr): (&Range<f64>, &Range<f64>),
    ) -> Result<Layout, String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>,
    {
        let x_axis = AxisFormat::new(&self.x_label, xr.start, xr.end, self.log_x);
        let y_axis = AxisFormat::new(&self.y_label, yr.start, yr.end, self.log_y);
        let scale = self.scale();
        let record = Recording::default();
        let backend = Recorder {
            inner: BitMapBackend::with_buffer(pixels, size),
            record: record.clone(),
        };
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let (top, body) = root.split_vertically(TITLE_HEIGHT);
        draw_title(&top, &record, &self.title, size.0)?;
        let bar_width = 2 * MARGIN + BAR_THICKNESS + BAR_LABELS_WIDTH;
        let (map_area, bar_area) = body.split_horizontally(size.0.saturating_sub(bar_width));
        let x_area = x_label_area(TICK_PX, DESC_PX);
        let mut chart = ChartBuilder::on(&map_area)
            .margin(MARGIN)
            .x_label_area_size(x_area)
            .y_label_area_size(y_label_area(
                &y_axis,
                &ticks(yr, self.log_y),
                TICK_PX,
                DESC_PX,
            ))
            .build_cartesian_2d(xc, yc)
            .map_err(|e| e.to_string())?;
        draw_axes(&mut chart, &record, &x_axis, &y_axis)?;
        let shown = |x: f64, y: f64| {
            x.is_finite() && y.is_finite() && (!self.log_x || x > 0.0) && (!self.log_y || y > 0.0)
        };
        for (k, s) in self.curves.iter().enumerate() {
            let colour = COLOURS[(k + 2) % COLOURS.len()];
            let points: Vec<(f64, f64)> =
                s.x.iter()
                    .zip(&s.y)
                    .filter(|(x, y)| shown(**x, **y))
                    .map(|(x, y)| (*x, *y))
                    .collect();
            let style = colour.stroke_width(2);
            let anno = match s.style {
                Style::Dashed => chart.draw_series(DashedLineSeries::new(points, 6, 4, style)),
                Style::Line | Style::Points => chart.draw_series(LineSeries::new(points, style)),
            }
            .map_err(|e| e.to_string())?;
            line_legend(anno, &s.label, colour, s.style == Style::Dashed);
        }
        let mut markers = Vec::new();
        for positive in [true, false] {
            let chosen: Vec<&ValuedPoint> = self
                .points
                .iter()
                .filter(|p| shown(p.x, p.y) && (p.value > 0.0) == positive)
                .collect();
            markers.extend(chosen.iter().map(|p| {
                let (x, y) = chart.backend_coord(&(p.x, p.y));
                Rect::spanning((x - MARKER, y - MARKER), (x + MARKER + 1, y + MARKER + 1))
            }));
            let anno = chart
                .draw_series(
                    chosen
                        .iter()
                        .map(|p| marker((p.x, p.y), positive, scale.colour(p.value))),
                )
                .map_err(|e| e.to_string())?;
            let (label, swatch) = if positive {
                (&self.positive_label, scale.colour(scale_end(&scale, true)))
            } else {
                (&self.other_label, scale.colour(scale_end(&scale, false)))
            };
            anno.label(label.clone())
                .legend(move |(x, y)| marker((x + 9, y), positive, swatch));
        }
        let plot = draw_legend(&mut chart, &record, corner, 0.9)?;
        draw_bar(&bar_area, &record, &scale, &self.value_label, x_area)?;
        root.present().map_err(|e| e.to_string())?;
        let layout = record.borrow().layout(size, Some(plot), markers);
        Ok(layout)
    }
}

/// A [`PointMap`] to draw into `pixels` of `size`, with the legend in `corner`, over the
/// horizontal and vertical `ranges`.
struct MapDrawing<'a> {
    map: &'a PointMap,
    pixels: &'a mut [u8],
    size: (u32, u32),
    corner: &'a SeriesLabelPosition,
    ranges: (&'a Range<f64>, &'a Range<f64>),
}

impl OnAxes for MapDrawing<'_> {
    fn draw<X, Y>(self, x: X, y: Y) -> Result<Layout, String>
    where
        X: AsRangedCoord<Value = f64>,
        Y: AsRangedCoord<Value = f64>,
        X::CoordDescType: ValueFormatter<f64>,
        Y::CoordDescType: ValueFormatter<f64>,
    {
        self.map
            .draw(self.pixels, self.size, self.corner, (x, y), self.ranges)
    }
}

/// A value at the given end of the scale for a legend swatch: the middle of the positive or the
/// negative side (zero's grey if a side is empty).
fn scale_end(scale: &Scale, positive: bool) -> f64 {
    match *scale {
        Scale::Diverging { lo, hi } => 0.6 * if positive { hi } else { lo },
        Scale::Sequential([lo, hi]) => 0.5 * (lo + hi),
    }
}

/// The marker at `at` (data or pixel coordinates): an outlined filled circle for a positive
/// value, an outlined filled square otherwise.
fn marker<C>(at: C, positive: bool, fill: RGBColor) -> Marker<C> {
    Marker { at, positive, fill }
}

/// A point marker (see [`marker`]).
struct Marker<C> {
    at: C,
    positive: bool,
    fill: RGBColor,
}

impl<'a, C> PointCollection<'a, C> for &'a Marker<C> {
    type Point = &'a C;
    type IntoIter = std::iter::Once<&'a C>;
    fn point_iter(self) -> Self::IntoIter {
        std::iter::once(&self.at)
    }
}

impl<C, DB: DrawingBackend> Drawable<DB> for Marker<C> {
    fn draw<I: Iterator<Item = BackendCoord>>(
        &self,
        mut points: I,
        backend: &mut DB,
        _: (u32, u32),
    ) -> Result<(), DrawingErrorKind<DB::ErrorType>> {
        let Some((x, y)) = points.next() else {
            return Ok(());
        };
        let outline = RGBColor(40, 40, 40);
        if self.positive {
            backend.draw_circle((x, y), MARKER as u32, &self.fill.filled(), true)?;
            backend.draw_circle((x, y), MARKER as u32, &outline, false)
        } else {
            let r = MARKER - 1;
            let (a, b) = ((x - r, y - r), (x + r, y + r));
            backend.draw_rect(a, b, &self.fill.filled(), true)?;
            backend.draw_rect(a, b, &outline, false)
        }
    }
}
