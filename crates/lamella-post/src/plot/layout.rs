//! Where a chart put its pieces, recorded while it is drawn: the box of every text (from the
//! embedded font's glyph layout, as plotters places it), the plot area, the legend box and the
//! data markers. The renderers return it beside the PNG bytes, use it to choose among layouts
//! (e.g. the legend corner that covers no data), and the tests check it ([`Layout::problems`]):
//! no text cut off at the image edge, no two texts over each other (an axis title over its tick
//! labels), no data under the legend.

use std::cell::RefCell;
use std::rc::Rc;

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingErrorKind,
};

/// A rectangle of pixels, `x0..x1` × `y0..y1` (ends excluded).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Rect {
    /// Left edge.
    pub x0: i32,
    /// Top edge.
    pub y0: i32,
    /// One past the right edge.
    pub x1: i32,
    /// One past the bottom edge.
    pub y1: i32,
}

impl Rect {
    /// The rectangle spanned by two corners, in any order.
    pub fn spanning(a: (i32, i32), b: (i32, i32)) -> Self {
        Self {
            x0: a.0.min(b.0),
            y0: a.1.min(b.1),
            x1: a.0.max(b.0),
            y1: a.1.max(b.1),
        }
    }

    /// Whether the two rectangles share a pixel.
    pub fn overlaps(&self, other: &Rect) -> bool {
        self.x0 < other.x1 && other.x0 < self.x1 && self.y0 < other.y1 && other.y0 < self.y1
    }

    /// Whether `self` lies inside `outer`.
    pub fn inside(&self, outer: &Rect) -> bool {
        self.x0 >= outer.x0 && self.y0 >= outer.y0 && self.x1 <= outer.x1 && self.y1 <= outer.y1
    }

    fn union(&self, other: &Rect) -> Rect {
        Rect {
            x0: self.x0.min(other.x0),
            y0: self.y0.min(other.y0),
            x1: self.x1.max(other.x1),
            y1: self.y1.max(other.y1),
        }
    }
}

/// What a text on a chart is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Role {
    /// The chart title.
    Title,
    /// A tick label of the horizontal axis.
    XTick,
    /// A tick label of the vertical axis.
    YTick,
    /// The title of the horizontal axis.
    XTitle,
    /// The title of the vertical axis.
    YTitle,
    /// A legend entry.
    Legend,
    /// A tick label of the colour bar.
    BarTick,
    /// The title of the colour bar.
    BarTitle,
}

/// One text as drawn.
#[derive(Clone, Debug, PartialEq)]
pub struct TextBox {
    /// What it is.
    pub role: Role,
    /// The text.
    pub text: String,
    /// Its box on the image.
    pub rect: Rect,
}

/// Where the pieces of a rendered chart are.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Layout {
    /// Image size (width, height).
    pub size: (u32, u32),
    /// The plot area of the (main) chart.
    pub plot: Option<Rect>,
    /// Every text drawn.
    pub texts: Vec<TextBox>,
    /// The legend box, if there is a legend.
    pub legend: Option<Rect>,
    /// The extent of every data marker (a point of a series, a marker of a map).
    pub markers: Vec<Rect>,
}

impl Layout {
    /// Texts that do not lie wholly inside the image, pairs of texts that overlap, and markers
    /// under the legend, each described in a sentence; empty when the layout is clean.
    pub fn problems(&self) -> Vec<String> {
        let image = Rect {
            x0: 0,
            y0: 0,
            x1: self.size.0 as i32,
            y1: self.size.1 as i32,
        };
        let mut found = Vec::new();
        for t in &self.texts {
            if !t.rect.inside(&image) {
                found.push(format!(
                    "{:?} \"{}\" at {:?} is cut off by the {}×{} image",
                    t.role, t.text, t.rect, self.size.0, self.size.1
                ));
            }
        }
        for (k, a) in self.texts.iter().enumerate() {
            for b in &self.texts[k + 1..] {
                if a.rect.overlaps(&b.rect) {
                    found.push(format!(
                        "{:?} \"{}\" at {:?} overlaps {:?} \"{}\" at {:?}",
                        a.role, a.text, a.rect, b.role, b.text, b.rect
                    ));
                }
            }
        }
        if let Some(legend) = &self.legend {
            let covered = self.covered_markers(legend);
            if covered > 0 {
                found.push(format!(
                    "the legend at {legend:?} covers {covered} data markers"
                ));
            }
        }
        found
    }

    /// How many markers the rectangle overlaps.
    pub fn covered_markers(&self, area: &Rect) -> usize {
        self.markers.iter().filter(|m| m.overlaps(area)).count()
    }

    /// The texts of one role.
    pub fn texts_of(&self, role: Role) -> impl Iterator<Item = &TextBox> {
        self.texts.iter().filter(move |t| t.role == role)
    }
}

/// Which part of a chart is being drawn, so recorded texts get their role.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) enum Stage {
    /// Nothing recorded (backgrounds, data).
    #[default]
    Quiet,
    /// The chart title.
    Title,
    /// Axes of a chart, with their titles (tick labels are told apart by their place).
    Axes { x_title: String, y_title: String },
    /// The legend: its texts and its box.
    Legend,
    /// A colour bar with its title.
    Bar { title: String },
}

/// What the recording backend has seen.
#[derive(Debug, Default)]
pub(crate) struct Record {
    pub stage: Stage,
    /// Texts with the stage they were drawn in.
    pub texts: Vec<(Stage, String, Rect)>,
    /// Union of the rectangles drawn during the legend stage.
    pub legend: Option<Rect>,
}

impl Record {
    /// The layout of an image of `size` whose plot area is `plot`, with `markers`.
    pub fn layout(&self, size: (u32, u32), plot: Option<Rect>, markers: Vec<Rect>) -> Layout {
        let texts = self
            .texts
            .iter()
            .map(|(stage, text, rect)| {
                let role = match stage {
                    Stage::Title | Stage::Quiet => Role::Title,
                    Stage::Legend => Role::Legend,
                    Stage::Axes { x_title, .. } if text == x_title => Role::XTitle,
                    Stage::Axes { y_title, .. } if text == y_title => Role::YTitle,
                    Stage::Axes { .. } => match plot {
                        Some(p) if rect.y0 >= p.y1 => Role::XTick,
                        _ => Role::YTick,
                    },
                    Stage::Bar { title } if text == title => Role::BarTitle,
                    Stage::Bar { .. } => Role::BarTick,
                };
                TextBox {
                    role,
                    text: text.clone(),
                    rect: *rect,
                }
            })
            .collect();
        let legend = self
            .texts
            .iter()
            .filter(|(s, _, _)| *s == Stage::Legend)
            .fold(self.legend, |acc, (_, _, r)| {
                Some(acc.map_or(*r, |a| a.union(r)))
            });
        Layout {
            size,
            plot,
            texts,
            legend,
            markers,
        }
    }
}

/// Shared handle on a [`Record`]: the renderer switches stages, the backend writes.
pub(crate) type Recording = Rc<RefCell<Record>>;

/// A drawing backend that passes everything to `inner` and records the box of every text
/// (computed as plotters' default text drawing places the glyphs: the font's layout box moved
/// by the anchor, then rotated) and the rectangles of the legend.
pub(crate) struct Recorder<B> {
    pub inner: B,
    pub record: Recording,
}

impl<B: DrawingBackend> DrawingBackend for Recorder<B> {
    type ErrorType = B::ErrorType;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.present()
    }

    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.draw_pixel(point, color)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.draw_line(from, to, style)
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        let mut record = self.record.borrow_mut();
        if record.stage == Stage::Legend {
            let r = Rect::spanning(upper_left, (bottom_right.0 + 1, bottom_right.1 + 1));
            record.legend = Some(record.legend.map_or(r, |l| l.union(&r)));
        }
        drop(record);
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.draw_path(path, style)
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.fill_polygon(vert, style)
    }

    fn draw_text<TStyle: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &TStyle,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        if style.color().alpha > 0.0 && !text.is_empty() {
            let ((min_x, min_y), (max_x, max_y)) = style
                .layout_box(text)
                .map_err(|e| DrawingErrorKind::FontError(Box::new(e)))?;
            let (width, height) = (max_x - min_x, max_y - min_y);
            let dx = match style.anchor().h_pos {
                HPos::Left => 0,
                HPos::Right => -width,
                HPos::Center => -width / 2,
            };
            let dy = match style.anchor().v_pos {
                VPos::Top => 0,
                VPos::Center => -height / 2,
                VPos::Bottom => -height,
            };
            let t = style.transform();
            let a = t.transform(dx, dy);
            let b = t.transform(dx + width, dy + height);
            let rect = Rect::spanning((pos.0 + a.0, pos.1 + a.1), (pos.0 + b.0, pos.1 + b.1));
            let mut record = self.record.borrow_mut();
            let stage = record.stage.clone();
            if stage != Stage::Quiet {
                record.texts.push((stage, text.to_string(), rect));
            }
        }
        self.inner.draw_text(text, style, pos)
    }

    fn estimate_text_size<TStyle: BackendTextStyle>(
        &self,
        text: &str,
        style: &TStyle,
    ) -> Result<(u32, u32), DrawingErrorKind<Self::ErrorType>> {
        self.inner.estimate_text_size(text, style)
    }

    fn blit_bitmap(
        &mut self,
        pos: BackendCoord,
        size: (u32, u32),
        src: &[u8],
    ) -> Result<(), DrawingErrorKind<Self::ErrorType>> {
        self.inner.blit_bitmap(pos, size, src)
    }
}

/// Sets the stage of `record`.
pub(crate) fn stage(record: &Recording, stage: Stage) {
    record.borrow_mut().stage = stage;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rectangles_overlap_only_when_they_share_pixels() {
        let a = Rect::spanning((0, 0), (10, 10));
        assert!(a.overlaps(&Rect::spanning((9, 9), (20, 20))));
        assert!(!a.overlaps(&Rect::spanning((10, 0), (20, 10))));
        assert!(Rect::spanning((2, 2), (3, 3)).inside(&a));
        assert!(!Rect::spanning((-1, 2), (3, 3)).inside(&a));
    }
}
