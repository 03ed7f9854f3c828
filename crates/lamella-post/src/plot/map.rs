//! Coloured maps over a rectangle of the plane: a gridded field as a heat map, or scattered
//! points (particles) as small coloured squares; each with axes, a title and a colour bar.
//!
//! Colours follow the viridis map (van der Walt & Smith 2015, the matplotlib default; as
//! shipped by plotters), low values dark blue, high values yellow. Values that are not finite
//! (no data) are drawn light grey. The plot area keeps the aspect ratio of the rectangle, so a
//! square domain gives a square map. Signed quantities (a growth rate) use the diverging
//! [`Scale::Diverging`] instead, centred on zero.

// Negated comparisons are deliberate: a NaN must fail every check.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use plotters::coord::Shift;
use plotters::coord::ranged1d::{BoldPoints, Ranged};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::layout::{Layout, Recorder, Recording, Rect, Stage, stage};
use super::{AxisFormat, FONT, PlotError, encode_png, fit_text, register_font};

/// Height of the title band (px).
pub(crate) const TITLE_HEIGHT: u32 = 36;
/// Blank border around a chart or map and around the colour bar (px).
pub(crate) const MARGIN: u32 = 12;
/// Band under the map for the x tick labels and axis label (px).
const X_AXIS_HEIGHT: u32 = 48;
/// Band left of the map for the y tick labels and axis label (px).
const Y_AXIS_WIDTH: u32 = 84;
/// Width of the colour bar itself (px).
pub(crate) const BAR_THICKNESS: u32 = 22;
/// Band right of the colour bar for its tick labels and label (px).
pub(crate) const BAR_LABELS_WIDTH: u32 = 80;
/// Shortest side the plot area is given, whatever the aspect ratio (px): room for a few tick
/// labels and the colour bar's title (a thin strip is drawn thicker than it is).
const MIN_SIDE: u32 = 160;
/// Colour of a value that is not finite.
const NO_DATA: RGBColor = RGBColor(200, 200, 200);
/// Colour steps of the colour bar.
const BAR_STEPS: usize = 128;

/// The frame of a map: title, labels and the rectangle [lower, upper] of the plane it shows.
#[derive(Clone, Debug, PartialEq)]
pub struct MapFrame {
    /// Title at the top.
    pub title: String,
    /// Label of the horizontal axis, with units.
    pub x_label: String,
    /// Label of the vertical axis, with units.
    pub y_label: String,
    /// Label of the colour bar: the quantity and its units.
    pub value_label: String,
    /// Lower-left corner of the rectangle shown.
    pub lower: [f64; 2],
    /// Upper-right corner of the rectangle shown.
    pub upper: [f64; 2],
    /// Values mapped to the two ends of the colour bar [default: the range of the finite
    /// values]; values outside are drawn with the end colours.
    pub range: Option<[f64; 2]>,
}

impl MapFrame {
    /// Pixel size (width, height) of the image whose plot area has `long_side` pixels along the
    /// longer side of the rectangle and the rectangle's aspect ratio (the shorter side at least
    /// 160 px).
    pub fn image_size(&self, long_side: u32) -> (u32, u32) {
        let (w, h) = self.plot_size(long_side);
        (
            Y_AXIS_WIDTH + w + 4 * MARGIN + BAR_THICKNESS + BAR_LABELS_WIDTH,
            TITLE_HEIGHT + 2 * MARGIN + h + X_AXIS_HEIGHT,
        )
    }

    /// Width and height of the plot area (px).
    fn plot_size(&self, long_side: u32) -> (u32, u32) {
        let (lx, ly) = (self.upper[0] - self.lower[0], self.upper[1] - self.lower[1]);
        let long = long_side.max(MIN_SIDE);
        let short = |ratio: f64| ((long as f64 * ratio).round() as u32).max(MIN_SIDE);
        if lx >= ly {
            (long, short(ly / lx))
        } else {
            (short(lx / ly), long)
        }
    }

    fn invalid(&self, reason: String) -> PlotError {
        PlotError::Render {
            title: self.title.clone(),
            reason,
        }
    }

    /// The colour range: the set one, else the range of the finite values (widened around a
    /// constant value).
    fn colour_range(&self, values: &[f64]) -> Result<[f64; 2], PlotError> {
        if let Some([lo, hi]) = self.range {
            if !(lo < hi) || !lo.is_finite() || !hi.is_finite() {
                return Err(self.invalid(format!("colour range [{lo}, {hi}] is not increasing")));
            }
            return Ok([lo, hi]);
        }
        let (lo, hi) = values
            .iter()
            .filter(|v| v.is_finite())
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                (a.min(v), b.max(v))
            });
        if !(lo <= hi) {
            return Err(PlotError::NoData(self.title.clone()));
        }
        if lo == hi {
            let pad = (0.05 * lo.abs()).max(1e-30);
            return Ok([lo - pad, hi + pad]);
        }
        Ok([lo, hi])
    }
}

/// Colour of `value` on the viridis map over `range`; light grey when not finite.
fn colour(value: f64, range: [f64; 2]) -> RGBColor {
    Scale::Sequential(range).colour(value)
}

/// The ColorBrewer "RdBu" scheme, 11 classes from dark red to dark blue (Cynthia Brewer,
/// colorbrewer2.org, Apache-2.0 licence; matplotlib's `RdBu` is these colours interpolated
/// linearly, as here). Reversed, so negative values are blue and positive ones red.
const RD_BU: [(u8, u8, u8); 11] = [
    (0x67, 0x00, 0x1f),
    (0xb2, 0x18, 0x2b),
    (0xd6, 0x60, 0x4d),
    (0xf4, 0xa5, 0x82),
    (0xfd, 0xdb, 0xc7),
    (0xf7, 0xf7, 0xf7),
    (0xd1, 0xe5, 0xf0),
    (0x92, 0xc5, 0xde),
    (0x43, 0x93, 0xc3),
    (0x21, 0x66, 0xac),
    (0x05, 0x30, 0x61),
];

/// Colour at `position` in [0, 1] of the reversed RdBu map: 0 dark blue, 0.5 the light grey
/// centre, 1 dark red; linear between the eleven ColorBrewer classes.
pub(crate) fn blue_red(position: f64) -> RGBColor {
    let t = (1.0 - position.clamp(0.0, 1.0)) * (RD_BU.len() - 1) as f64;
    let k = (t.floor() as usize).min(RD_BU.len() - 2);
    let f = t - k as f64;
    let mix = |a: u8, b: u8| (a as f64 + f * (b as f64 - a as f64)).round() as u8;
    let (a, b) = (RD_BU[k], RD_BU[k + 1]);
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// How values map to colours and where they sit on the colour bar (a position in [0, 1]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Scale {
    /// Viridis over [lo, hi], linear.
    Sequential([f64; 2]),
    /// Reversed RdBu centred on zero with a separate linear scale on each side (the
    /// "two-slope" normalisation of matplotlib's `TwoSlopeNorm`): `lo` (≤ 0) is the bluest,
    /// zero the centre, `hi` (≥ 0) the reddest, so the sign of a value reads from its hue
    /// however unequal the two sides are.
    Diverging { lo: f64, hi: f64 },
}

impl Scale {
    /// The diverging scale over the finite `values` (zero always included).
    pub(crate) fn diverging(values: impl Iterator<Item = f64>) -> Self {
        let (lo, hi) = values
            .filter(|v| v.is_finite())
            .fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
        Scale::Diverging { lo, hi }
    }

    /// Position of `value` on the bar, clamped to [0, 1].
    pub(crate) fn position(&self, value: f64) -> f64 {
        match *self {
            Scale::Sequential([lo, hi]) => ((value - lo) / (hi - lo)).clamp(0.0, 1.0),
            Scale::Diverging { lo, hi } => {
                if value < 0.0 && lo < 0.0 {
                    0.5 - 0.5 * (value / lo).min(1.0)
                } else if value > 0.0 && hi > 0.0 {
                    0.5 + 0.5 * (value / hi).min(1.0)
                } else {
                    0.5
                }
            }
        }
    }

    /// The value at `position` (the inverse of [`Scale::position`] inside the range).
    fn value(&self, position: f64) -> f64 {
        match *self {
            Scale::Sequential([lo, hi]) => lo + position * (hi - lo),
            Scale::Diverging { lo, hi } => {
                if position < 0.5 {
                    lo * (0.5 - position) / 0.5
                } else {
                    hi * (position - 0.5) / 0.5
                }
            }
        }
    }

    /// Colour of `value`; light grey when not finite.
    pub(crate) fn colour(&self, value: f64) -> RGBColor {
        if !value.is_finite() {
            return NO_DATA;
        }
        match self {
            Scale::Sequential(_) => ViridisRGB::get_color(self.position(value)),
            Scale::Diverging { .. } => blue_red(self.position(value)),
        }
    }

    /// The lowest and highest value the bar shows.
    fn ends(&self) -> [f64; 2] {
        match *self {
            Scale::Sequential(range) => range,
            Scale::Diverging { lo, hi } => [lo, hi],
        }
    }

    /// Values labelled on the bar: plotters' round values for about six ticks; on a diverging
    /// bar about three on each side and zero.
    fn ticks(&self) -> Vec<f64> {
        let round = |lo: f64, hi: f64, count: usize| -> Vec<f64> {
            if lo < hi {
                let coord: RangedCoordf64 = (lo..hi).into();
                coord.key_points(BoldPoints(count))
            } else {
                Vec::new()
            }
        };
        match *self {
            Scale::Sequential([lo, hi]) => round(lo, hi, 6),
            Scale::Diverging { lo, hi } => {
                // Round-off leaves ticks such as -3e-17 next to zero: drop them.
                let tiny = 1e-9 * (hi - lo);
                let mut ticks = round(lo, 0.0, 3);
                ticks.retain(|v| *v < -tiny);
                ticks.push(0.0);
                ticks.extend(round(0.0, hi, 3).into_iter().filter(|v| *v > tiny));
                ticks
            }
        }
    }
}

/// Tick label of a colour-bar value: fixed-point with as many decimals as the span of the
/// range needs when the values are of moderate size, scientific otherwise.
fn bar_tick(value: f64, range: [f64; 2]) -> String {
    let size = range[0].abs().max(range[1].abs());
    if (1e-2..1e4).contains(&size) {
        let decimals = (1.0 - (range[1] - range[0]).log10().floor()).clamp(0.0, 6.0) as usize;
        format!("{value:.decimals$}")
    } else {
        format!("{value:.2e}")
    }
}

/// A linear axis with the tick values given (plotters' `WithKeyPoints` over a linear f64 axis
/// takes no label formatter).
struct Ticked {
    inner: RangedCoordf64,
    ticks: Vec<f64>,
}

impl Ranged for Ticked {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<Hint: plotters::coord::ranged1d::KeyPointHint>(&self, _: Hint) -> Vec<f64> {
        self.ticks.clone()
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.inner.range()
    }
}

type MapChart<'a, 'b> =
    ChartContext<'a, Recorder<BitMapBackend<'b>>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draws the title of a chart of `width` pixels into the band `top`.
pub(crate) fn draw_title<DB: DrawingBackend>(
    top: &DrawingArea<DB, Shift>,
    record: &Recording,
    title: &str,
    width: u32,
) -> Result<(), String> {
    let (text, size) = fit_text(title, width.saturating_sub(2 * MARGIN), 20);
    let title_style = TextStyle::from((FONT, size).into_font())
        .pos(Pos::new(HPos::Center, VPos::Center))
        .color(&BLACK);
    stage(record, Stage::Title);
    top.draw_text(
        &text,
        &title_style,
        (width as i32 / 2, TITLE_HEIGHT as i32 / 2),
    )
    .map_err(|e| e.to_string())?;
    stage(record, Stage::Quiet);
    Ok(())
}

/// Draws the colour bar of `scale` titled `label` into `area` (whose lower `x_axis_height`
/// pixels are left blank, level with the map's x axis band).
pub(crate) fn draw_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    record: &Recording,
    scale: &Scale,
    label: &str,
    x_axis_height: u32,
) -> Result<(), String> {
    let [lo, hi] = scale.ends();
    let span = scale.position(lo)..scale.position(hi);
    let ticks: Vec<f64> = scale.ticks().iter().map(|&v| scale.position(v)).collect();
    let mut bar = ChartBuilder::on(area)
        .margin(MARGIN)
        .x_label_area_size(x_axis_height)
        .right_y_label_area_size(BAR_LABELS_WIDTH)
        .build_cartesian_2d(
            0.0..1.0,
            Ticked {
                inner: span.clone().into(),
                ticks,
            },
        )
        .map_err(|e| e.to_string())?;
    let step = (span.end - span.start) / BAR_STEPS as f64;
    bar.draw_series((0..BAR_STEPS).map(|k| {
        let p = span.start + k as f64 * step;
        Rectangle::new(
            [(0.0, p), (1.0, p + step)],
            scale.colour(scale.value(p + 0.5 * step)).filled(),
        )
    }))
    .map_err(|e| e.to_string())?;
    stage(
        record,
        Stage::Bar {
            title: label.to_string(),
        },
    );
    let range = [lo, hi];
    bar.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc(label)
        .label_style((FONT, 13))
        .axis_desc_style((FONT, 15))
        .y_label_formatter(&|p| bar_tick(scale.value(*p), range))
        .draw()
        .map_err(|e| e.to_string())?;
    stage(record, Stage::Quiet);
    Ok(())
}

/// Draws the frame (title, axes, colour bar over `range`) of a `long_side` map, lets `paint`
/// fill the plot area (returning the extents of what it drew), and encodes the image.
fn render(
    frame: &MapFrame,
    range: [f64; 2],
    long_side: u32,
    paint: impl FnOnce(&mut MapChart<'_, '_>) -> Result<Vec<Rect>, String>,
) -> Result<(Vec<u8>, Layout), PlotError> {
    register_font();
    let (width, height) = frame.image_size(long_side);
    let mut pixels = vec![255u8; width as usize * height as usize * 3];
    let record = Recording::default();
    let draw = |pixels: &mut [u8]| -> Result<Layout, String> {
        let backend = Recorder {
            inner: BitMapBackend::with_buffer(pixels, (width, height)),
            record: record.clone(),
        };
        let root = backend.into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let (top, body) = root.split_vertically(TITLE_HEIGHT);
        draw_title(&top, &record, &frame.title, width)?;
        let bar_width = 2 * MARGIN + BAR_THICKNESS + BAR_LABELS_WIDTH;
        let (map_area, bar_area) = body.split_horizontally(width - bar_width);

        let mut chart = ChartBuilder::on(&map_area)
            .margin(MARGIN)
            .x_label_area_size(X_AXIS_HEIGHT)
            .y_label_area_size(Y_AXIS_WIDTH)
            .build_cartesian_2d(
                frame.lower[0]..frame.upper[0],
                frame.lower[1]..frame.upper[1],
            )
            .map_err(|e| e.to_string())?;
        let markers = paint(&mut chart)?;
        let x_axis = AxisFormat::new(&frame.x_label, frame.lower[0], frame.upper[0], false);
        let y_axis = AxisFormat::new(&frame.y_label, frame.lower[1], frame.upper[1], false);
        stage(
            &record,
            Stage::Axes {
                x_title: x_axis.label.clone(),
                y_title: y_axis.label.clone(),
            },
        );
        chart
            .configure_mesh()
            .disable_mesh()
            .x_labels(5)
            .y_labels(5)
            .x_desc(&x_axis.label)
            .y_desc(&y_axis.label)
            .label_style((FONT, 13))
            .axis_desc_style((FONT, 15))
            .x_label_formatter(&|v| x_axis.tick(*v))
            .y_label_formatter(&|v| y_axis.tick(*v))
            .draw()
            .map_err(|e| e.to_string())?;
        stage(&record, Stage::Quiet);
        let (px, py) = chart.plotting_area().get_pixel_range();
        let plot = Rect::spanning((px.start, py.start), (px.end, py.end));
        draw_bar(
            &bar_area,
            &record,
            &Scale::Sequential(range),
            &frame.value_label,
            X_AXIS_HEIGHT,
        )?;
        root.present().map_err(|e| e.to_string())?;
        let layout = record.borrow().layout((width, height), Some(plot), markers);
        Ok(layout)
    };
    let layout = draw(&mut pixels).map_err(|reason| frame.invalid(reason))?;
    let png = encode_png(&pixels, width, height).map_err(|reason| frame.invalid(reason))?;
    Ok((png, layout))
}

/// A heat map of a field on `cells[0]` × `cells[1]` equal cells over the frame's rectangle,
/// `values` x fastest (VTK image-data order), rendered to PNG bytes of
/// [`MapFrame::image_size`]`(long_side)`.
pub fn field_map(
    frame: &MapFrame,
    cells: [usize; 2],
    values: &[f64],
    long_side: u32,
) -> Result<Vec<u8>, PlotError> {
    field_map_layout(frame, cells, values, long_side).map(|(png, _)| png)
}

/// [`field_map`] with the layout it drew (no markers: a field fills the plot area).
pub fn field_map_layout(
    frame: &MapFrame,
    cells: [usize; 2],
    values: &[f64],
    long_side: u32,
) -> Result<(Vec<u8>, Layout), PlotError> {
    if cells.contains(&0) || values.len() != cells[0] * cells[1] {
        return Err(frame.invalid(format!(
            "{} values for a grid of {} × {} cells",
            values.len(),
            cells[0],
            cells[1]
        )));
    }
    let range = frame.colour_range(values)?;
    let d = [
        (frame.upper[0] - frame.lower[0]) / cells[0] as f64,
        (frame.upper[1] - frame.lower[1]) / cells[1] as f64,
    ];
    render(frame, range, long_side, |chart| {
        chart
            .draw_series(values.iter().enumerate().map(|(k, &v)| {
                let (i, j) = ((k % cells[0]) as f64, (k / cells[0]) as f64);
                let x = frame.lower[0] + i * d[0];
                let y = frame.lower[1] + j * d[1];
                Rectangle::new([(x, y), (x + d[0], y + d[1])], colour(v, range).filled())
            }))
            .map(|_| Vec::new())
            .map_err(|e| e.to_string())
    })
}

/// Points coloured by value, each drawn as a filled square of side `marker` (in the units of
/// the axes, at least 2 px), rendered to PNG bytes of [`MapFrame::image_size`]`(long_side)`.
pub fn scatter_map(
    frame: &MapFrame,
    points: &[[f64; 2]],
    values: &[f64],
    marker: f64,
    long_side: u32,
) -> Result<Vec<u8>, PlotError> {
    scatter_map_layout(frame, points, values, marker, long_side).map(|(png, _)| png)
}

/// [`scatter_map`] with the layout it drew (no markers listed: there is no legend to avoid).
pub fn scatter_map_layout(
    frame: &MapFrame,
    points: &[[f64; 2]],
    values: &[f64],
    marker: f64,
    long_side: u32,
) -> Result<(Vec<u8>, Layout), PlotError> {
    if points.len() != values.len() {
        return Err(frame.invalid(format!(
            "{} values for {} points",
            values.len(),
            points.len()
        )));
    }
    if !(marker > 0.0) {
        return Err(frame.invalid(format!("marker side {marker} is not positive")));
    }
    let range = frame.colour_range(values)?;
    let (plot_width, _) = frame.plot_size(long_side);
    let pixel = (frame.upper[0] - frame.lower[0]) / plot_width as f64;
    let half = 0.5 * marker.max(2.0 * pixel);
    render(frame, range, long_side, |chart| {
        chart
            .draw_series(points.iter().zip(values).map(|(p, &v)| {
                Rectangle::new(
                    [(p[0] - half, p[1] - half), (p[0] + half, p[1] + half)],
                    colour(v, range).filled(),
                )
            }))
            .map(|_| Vec::new())
            .map_err(|e| e.to_string())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn frame(upper: [f64; 2]) -> MapFrame {
        MapFrame {
            title: "field".into(),
            x_label: "x (m)".into(),
            y_label: "y (m)".into(),
            value_label: "value (1)".into(),
            lower: [0.0, 0.0],
            upper,
            range: None,
        }
    }

    /// Width, height and RGB pixels of PNG bytes.
    fn decode(bytes: &[u8]) -> (u32, u32, Vec<u8>) {
        let mut reader = png::Decoder::new(std::io::Cursor::new(bytes))
            .read_info()
            .unwrap();
        let mut buf = vec![0; reader.output_buffer_size()];
        let info = reader.next_frame(&mut buf).unwrap();
        buf.truncate(info.buffer_size());
        (info.width, info.height, buf)
    }

    /// Colour of the image pixel at the point (x, y) of the frame's rectangle.
    fn pixel_at(image: &(u32, u32, Vec<u8>), f: &MapFrame, long: u32, x: f64, y: f64) -> RGBColor {
        let (w, h) = f.plot_size(long);
        let u = (x - f.lower[0]) / (f.upper[0] - f.lower[0]);
        let v = (y - f.lower[1]) / (f.upper[1] - f.lower[1]);
        let col = MARGIN + Y_AXIS_WIDTH + (u * w as f64) as u32;
        let row = TITLE_HEIGHT + MARGIN + ((1.0 - v) * h as f64) as u32;
        let at = 3 * (row as usize * image.0 as usize + col as usize);
        RGBColor(image.2[at], image.2[at + 1], image.2[at + 2])
    }

    fn distinct_colours(pixels: &[u8]) -> usize {
        let mut seen: Vec<&[u8]> = pixels.chunks(3).collect();
        seen.sort_unstable();
        seen.dedup();
        seen.len()
    }

    #[test]
    fn image_keeps_the_aspect_ratio_of_the_rectangle() {
        let extra = (
            Y_AXIS_WIDTH + 4 * MARGIN + BAR_THICKNESS + BAR_LABELS_WIDTH,
            TITLE_HEIGHT + 2 * MARGIN + X_AXIS_HEIGHT,
        );
        let square = frame([1e-3, 1e-3]).image_size(500);
        assert_eq!(square, (500 + extra.0, 500 + extra.1));
        let wide = frame([2e-3, 1e-3]).image_size(500);
        assert_eq!(wide, (500 + extra.0, 250 + extra.1));
        let tall = frame([1e-3, 2e-3]).image_size(500);
        assert_eq!(tall, (250 + extra.0, 500 + extra.1));
        let strip = frame([1.0, 1e-4]).image_size(500);
        assert_eq!(strip.1, MIN_SIDE + extra.1);
    }

    #[test]
    fn field_map_puts_each_cell_in_its_place() {
        // 4 × 2 cells over a 2:1 rectangle, the value rising with x; the top-right cell has no
        // data.
        let f = frame([2e-3, 1e-3]);
        let values = [0.0, 1.0, 2.0, 3.0, 0.0, 1.0, 2.0, f64::NAN];
        let bytes = field_map(&f, [4, 2], &values, 400).unwrap();
        let image = decode(&bytes);
        assert_eq!((image.0, image.1), f.image_size(400));
        assert!(
            distinct_colours(&image.2) > 50,
            "a field, a colour bar and text"
        );
        let range = [0.0, 3.0];
        for (x, y, v) in [(0.25e-3, 0.25e-3, 0.0), (1.25e-3, 0.75e-3, 2.0)] {
            assert_eq!(
                pixel_at(&image, &f, 400, x, y),
                colour(v, range),
                "({x}, {y})"
            );
        }
        assert_eq!(
            pixel_at(&image, &f, 400, 1.75e-3, 0.25e-3),
            ViridisRGB::get_color(1.0)
        );
        assert_eq!(pixel_at(&image, &f, 400, 1.75e-3, 0.75e-3), NO_DATA);
    }

    #[test]
    fn field_map_refuses_a_wrong_count_and_an_empty_field() {
        let f = frame([1.0, 1.0]);
        assert!(matches!(
            field_map(&f, [2, 2], &[0.0; 3], 100),
            Err(PlotError::Render { .. })
        ));
        assert_eq!(
            field_map(&f, [1, 1], &[f64::NAN], 100),
            Err(PlotError::NoData("field".into()))
        );
    }

    #[test]
    fn scatter_map_colours_each_point_by_value_within_a_set_range() {
        let mut f = frame([1.0, 1.0]);
        f.range = Some([0.0, 10.0]);
        let points = [[0.2, 0.2], [0.8, 0.8], [0.8, 0.2]];
        let values = [0.0, 10.0, 25.0];
        let bytes = scatter_map(&f, &points, &values, 0.1, 300).unwrap();
        let image = decode(&bytes);
        assert_eq!((image.0, image.1), f.image_size(300));
        assert_eq!(
            pixel_at(&image, &f, 300, 0.2, 0.2),
            ViridisRGB::get_color(0.0)
        );
        assert_eq!(
            pixel_at(&image, &f, 300, 0.8, 0.8),
            ViridisRGB::get_color(1.0)
        );
        // Above the range: the top colour. Between the points: background.
        assert_eq!(
            pixel_at(&image, &f, 300, 0.8, 0.2),
            ViridisRGB::get_color(1.0)
        );
        assert_eq!(pixel_at(&image, &f, 300, 0.5, 0.5), WHITE);
        assert!(matches!(
            scatter_map(&f, &points, &values[..2], 0.1, 300),
            Err(PlotError::Render { .. })
        ));
    }

    #[test]
    fn diverging_scale_is_blue_below_zero_red_above_and_light_at_zero() {
        let scale = Scale::diverging([-4.0, 0.5, 1.0].into_iter());
        assert_eq!(scale, Scale::Diverging { lo: -4.0, hi: 1.0 });
        // Each side has its own slope: -4 and 1 are the ends, -2 and 0.5 the middles.
        assert_eq!(scale.position(-4.0), 0.0);
        assert_eq!(scale.position(-2.0), 0.25);
        assert_eq!(scale.position(0.0), 0.5);
        assert_eq!(scale.position(0.5), 0.75);
        assert_eq!(scale.colour(1.0), RGBColor(0x67, 0x00, 0x1f));
        assert_eq!(scale.colour(-4.0), RGBColor(0x05, 0x30, 0x61));
        assert_eq!(scale.colour(0.0), RGBColor(0xf7, 0xf7, 0xf7));
        let RGBColor(r, _, b) = scale.colour(0.3);
        assert!(r > b, "a small growth is still red");
        let RGBColor(r, _, b) = scale.colour(-0.5);
        assert!(b > r, "a small decay is still blue");
        let ticks = scale.ticks();
        assert!(ticks.contains(&0.0) && ticks.iter().all(|v| (-4.0..=1.0).contains(v)));
    }

    #[test]
    fn bar_ticks_have_the_decimals_the_range_needs() {
        assert_eq!(bar_tick(0.5, [0.0, 1.0]), "0.5");
        assert_eq!(bar_tick(0.925, [0.9, 0.95]), "0.925");
        assert_eq!(bar_tick(120.0, [0.0, 300.0]), "120");
        assert_eq!(bar_tick(3e-4, [0.0, 1e-3]), "3.00e-4");
    }
}
