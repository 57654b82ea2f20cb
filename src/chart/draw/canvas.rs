//! The canvas: drawing primitives over the SVG writer, each of which
//! records where it drew, so that tests (and the layout itself) can check
//! that no text leaves the canvas and that legends cover no data.

use super::geometry::Rect;
use super::svg::{Anchor, Stroke, Svg};
use super::text::{ascent, cap_height, descent, text_width};
use crate::chart::theme::{Marker, Rgb};

/// How a piece of text looks.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Font {
    pub size: f64,
    pub bold: bool,
    pub colour: Rgb,
}

impl Font {
    pub const fn new(size: f64, colour: Rgb) -> Font {
        Font {
            size,
            bold: false,
            colour,
        }
    }

    pub const fn bold(self) -> Font {
        Font { bold: true, ..self }
    }

    /// The width of `text` in this font.
    pub fn width(&self, text: &str) -> f64 {
        text_width(text, self.size, self.bold)
    }
}

/// Horizontal text anchor.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Align {
    Left,
    Centre,
    Right,
}

/// Where the given y lies on the text: its top (the ascender line), the
/// middle of its capitals, or its baseline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Baseline {
    Top,
    Middle,
    Alphabetic,
}

/// One piece of text as laid out.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct PlacedText {
    pub text: String,
    pub size: f64,
    /// Its box: advance width by ascender to descender (turned text: turned).
    pub rect: Rect,
    /// Reads upwards.
    pub turned: bool,
}

/// What was drawn where: the boxes the layout promised.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Boxes {
    /// Every text element.
    pub texts: Vec<PlacedText>,
    /// The legend's area.
    pub legend: Option<Rect>,
    /// Every plot area (where data are drawn).
    pub plots: Vec<Rect>,
    /// Every data mark (markers, cells, bars), in pixels.
    pub marks: Vec<Rect>,
}

/// A drawing surface of known size.
pub(crate) struct Canvas {
    svg: Svg,
    pub width: f64,
    pub height: f64,
    pub boxes: Boxes,
}

impl Canvas {
    pub fn new(width: f64, height: f64) -> Canvas {
        Canvas {
            svg: Svg::new(),
            width,
            height,
            boxes: Boxes::default(),
        }
    }

    /// The SVG document and the boxes.
    pub fn finish(self, title: &str) -> (String, Boxes) {
        (self.svg.finish(self.width, self.height, title), self.boxes)
    }

    /// A filled rectangle.
    pub fn fill_rect(&mut self, rect: Rect, colour: Rgb, opacity: f64) {
        self.svg.rect(rect, Some((colour, opacity)), None);
    }

    /// A filled rectangle that shows data (a cell or a bar).
    pub fn data_rect(&mut self, rect: Rect, colour: Rgb, opacity: f64) {
        self.boxes.marks.push(rect);
        self.fill_rect(rect, colour, opacity);
    }

    /// A rectangle's outline.
    pub fn stroke_rect(&mut self, rect: Rect, stroke: Stroke) {
        self.svg.rect(rect, None, Some(stroke));
    }

    /// An open polyline.
    pub fn line(&mut self, points: &[(f64, f64)], stroke: Stroke) {
        self.svg.polyline(points, stroke);
    }

    /// A marker filled with `fill`, outlined with `outline`, centred on
    /// (x, y); recorded as a data mark unless `key` (a legend sample).
    #[allow(clippy::too_many_arguments)]
    pub fn marker(
        &mut self,
        shape: Marker,
        x: f64,
        y: f64,
        r: f64,
        fill: Rgb,
        outline: Option<Rgb>,
        key: bool,
    ) {
        let stroke = outline.map(|c| Stroke::solid(c, 0.8));
        match shape.polygon(x, y, r) {
            None => self.svg.circle(x, y, r, Some((fill, 1.0)), stroke),
            Some(points) => self.svg.polygon(&points, Some((fill, 1.0)), stroke),
        }
        if !key {
            let reach = r * 1.2;
            self.boxes
                .marks
                .push(Rect::new(x - reach, y - reach, x + reach, y + reach));
        }
    }

    /// A ring (an unfilled circle).
    pub fn ring(&mut self, x: f64, y: f64, r: f64, stroke: Stroke) {
        self.svg.circle(x, y, r, None, Some(stroke));
    }

    /// Text anchored at (x, y).
    pub fn text(
        &mut self,
        text: &str,
        x: f64,
        y: f64,
        font: Font,
        align: Align,
        baseline: Baseline,
    ) {
        self.place(text, x, y, font, align, baseline, false);
    }

    /// Text reading upwards, anchored at (x, y): `align` runs along the
    /// text (bottom to top), `baseline` across it (Top: the text lies to
    /// the right of x; Alphabetic: to its left).
    pub fn text_turned(
        &mut self,
        text: &str,
        x: f64,
        y: f64,
        font: Font,
        align: Align,
        baseline: Baseline,
    ) {
        self.place(text, x, y, font, align, baseline, true);
    }

    #[allow(clippy::too_many_arguments)]
    fn place(
        &mut self,
        text: &str,
        x: f64,
        y: f64,
        font: Font,
        align: Align,
        baseline: Baseline,
        turned: bool,
    ) {
        if text.is_empty() {
            return;
        }
        let width = font.width(text);
        let (up, down) = (ascent(font.size), descent(font.size));
        // Offset from the anchor to the baseline, across the text.
        let shift = match baseline {
            Baseline::Top => up,
            Baseline::Middle => cap_height(font.size) / 2.0,
            Baseline::Alphabetic => 0.0,
        };
        let (start, anchor) = match align {
            Align::Left => (0.0, Anchor::Start),
            Align::Centre => (-width / 2.0, Anchor::Middle),
            Align::Right => (-width, Anchor::End),
        };
        let (bx, by, rect) = if turned {
            // Reading upwards: along the text is -y, "down" is +x.
            let bx = x + shift;
            let rect = Rect::new(bx - up, y - start - width, bx + down, y - start);
            (bx, y, rect)
        } else {
            let by = y + shift;
            let rect = Rect::new(x + start, by - up, x + start + width, by + down);
            (x, by, rect)
        };
        self.svg.text(
            text,
            bx,
            by,
            font.size,
            font.bold,
            font.colour,
            anchor,
            turned,
        );
        self.boxes.texts.push(PlacedText {
            text: text.to_string(),
            size: font.size,
            rect,
            turned,
        });
    }

    /// Opens a group clipped to `rect`.
    pub fn begin_clip(&mut self, rect: Rect) {
        self.svg.begin_clip(rect);
    }

    /// Closes the group opened by [`Canvas::begin_clip`].
    pub fn end_clip(&mut self) {
        self.svg.end_group();
    }
}
