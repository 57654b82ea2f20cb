//! The SVG text itself: a small writer that owns every byte of the
//! document, so that the same drawing always gives the same bytes (numbers
//! are written with at most two decimals, no "-0", attributes in a fixed
//! order, clip-path identifiers numbered in drawing order).

use std::fmt::Write as _;

use super::geometry::Rect;
use crate::chart::theme::{Dash, Rgb};

/// The font family every text element asks for: the face shipped with the
/// crate (and embedded by the report page), then metric-compatible faces a
/// viewer is likely to have.
pub(crate) const FONT_FAMILY: &str = "'Liberation Sans', Arial, Helvetica, sans-serif";

/// Stands for the chart's clip-path prefix until the document is finished.
const CLIP_MARK: &str = "\u{1}clip\u{1}";

/// A number with at most two decimals, trailing zeros trimmed, never "-0".
pub(crate) fn num(v: f64) -> String {
    if !v.is_finite() {
        return "0".to_string();
    }
    let mut s = format!("{:.2}", v.clamp(-1e7, 1e7));
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" {
        s = "0".to_string();
    }
    s
}

/// Escapes text for XML character data and attribute values.
pub(crate) fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            // Control characters are not allowed in XML 1.0.
            c if (c as u32) < 0x20 && c != '\t' && c != '\n' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// How a line is stroked.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Stroke {
    pub colour: Rgb,
    pub width: f64,
    pub opacity: f64,
    pub dash: Dash,
}

impl Stroke {
    pub const fn solid(colour: Rgb, width: f64) -> Stroke {
        Stroke {
            colour,
            width,
            opacity: 1.0,
            dash: Dash::Solid,
        }
    }

    pub const fn dashed(self, dash: Dash) -> Stroke {
        Stroke { dash, ..self }
    }

    pub const fn faded(self, opacity: f64) -> Stroke {
        Stroke { opacity, ..self }
    }

    fn attributes(&self) -> String {
        let mut a = format!(
            " stroke=\"{}\" stroke-width=\"{}\"",
            self.colour.to_svg(),
            num(self.width)
        );
        if self.opacity < 1.0 {
            let _ = write!(a, " stroke-opacity=\"{}\"", num(self.opacity.max(0.0)));
        }
        if let Some(pattern) = self.dash.pattern(self.width) {
            let _ = write!(a, " stroke-dasharray=\"{pattern}\"");
        }
        a
    }
}

/// Horizontal anchor of a text element.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Anchor {
    Start,
    Middle,
    End,
}

/// An SVG document being written.
pub(crate) struct Svg {
    body: String,
    clips: usize,
}

impl Svg {
    pub fn new() -> Svg {
        Svg {
            body: String::new(),
            clips: 0,
        }
    }

    /// The finished document: `width` x `height` CSS pixels (1/96 inch),
    /// with a `<title>` for screen readers.
    pub fn finish(self, width: f64, height: f64, title: &str) -> String {
        let mut out = String::with_capacity(self.body.len() + 400);
        let _ = writeln!(
            out,
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" font-family=\"{FONT_FAMILY}\">",
            w = num(width),
            h = num(height)
        );
        let _ = writeln!(out, "<title>{}</title>", escape(title));
        let _ = writeln!(
            out,
            "<rect x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#FFFFFF\"/>",
            num(width),
            num(height)
        );
        // Clip-path identifiers must be unique in a page that shows many
        // charts inline: name them after a hash of this chart's content
        // (FNV-1a, 64 bits; Fowler, Noll & Vo), which is the same on
        // every run.
        if self.clips > 0 {
            let mut hash: u64 = 0xcbf2_9ce4_8422_2325;
            for b in self.body.as_bytes() {
                hash ^= *b as u64;
                hash = hash.wrapping_mul(0x0000_0100_0000_01b3);
            }
            let prefix = format!("c{:08x}-", (hash >> 32) as u32 ^ hash as u32);
            out.push_str(&self.body.replace(CLIP_MARK, &prefix));
        } else {
            out.push_str(&self.body);
        }
        out.push_str("</svg>\n");
        out
    }

    pub fn rect(&mut self, r: Rect, fill: Option<(Rgb, f64)>, stroke: Option<Stroke>) {
        let _ = write!(
            self.body,
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"",
            num(r.left),
            num(r.top),
            num(r.width().max(0.0)),
            num(r.height().max(0.0))
        );
        self.paint(fill, stroke);
        self.body.push_str("/>\n");
    }

    pub fn polyline(&mut self, points: &[(f64, f64)], stroke: Stroke) {
        if points.len() < 2 {
            return;
        }
        self.body.push_str("<polyline points=\"");
        self.points(points);
        let _ = writeln!(
            self.body,
            "\" fill=\"none\"{} stroke-linejoin=\"round\" stroke-linecap=\"butt\"/>",
            stroke.attributes()
        );
    }

    pub fn polygon(
        &mut self,
        points: &[(f64, f64)],
        fill: Option<(Rgb, f64)>,
        stroke: Option<Stroke>,
    ) {
        if points.len() < 3 {
            return;
        }
        self.body.push_str("<polygon points=\"");
        self.points(points);
        self.body.push('"');
        self.paint(fill, stroke);
        self.body.push_str(" stroke-linejoin=\"round\"/>\n");
    }

    pub fn circle(
        &mut self,
        x: f64,
        y: f64,
        r: f64,
        fill: Option<(Rgb, f64)>,
        stroke: Option<Stroke>,
    ) {
        let _ = write!(
            self.body,
            "<circle cx=\"{}\" cy=\"{}\" r=\"{}\"",
            num(x),
            num(y),
            num(r)
        );
        self.paint(fill, stroke);
        self.body.push_str("/>\n");
    }

    /// A text element with its baseline at `y`; `turned` reads upwards
    /// (turned a quarter anticlockwise about (x, y)).
    #[allow(clippy::too_many_arguments)]
    pub fn text(
        &mut self,
        text: &str,
        x: f64,
        y: f64,
        size: f64,
        bold: bool,
        colour: Rgb,
        anchor: Anchor,
        turned: bool,
    ) {
        let _ = write!(
            self.body,
            "<text x=\"{}\" y=\"{}\" font-size=\"{}\"",
            num(x),
            num(y),
            num(size)
        );
        if bold {
            self.body.push_str(" font-weight=\"bold\"");
        }
        match anchor {
            Anchor::Start => {}
            Anchor::Middle => self.body.push_str(" text-anchor=\"middle\""),
            Anchor::End => self.body.push_str(" text-anchor=\"end\""),
        }
        if turned {
            let _ = write!(
                self.body,
                " transform=\"rotate(-90 {} {})\"",
                num(x),
                num(y)
            );
        }
        let _ = writeln!(
            self.body,
            " fill=\"{}\">{}</text>",
            colour.to_svg(),
            escape(text)
        );
    }

    /// Opens a group clipped to `r`; close it with [`Svg::end_group`].
    pub fn begin_clip(&mut self, r: Rect) {
        self.clips += 1;
        let id = format!("{CLIP_MARK}{}", self.clips);
        let _ = writeln!(
            self.body,
            "<clipPath id=\"{id}\"><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/></clipPath>",
            num(r.left),
            num(r.top),
            num(r.width().max(0.0)),
            num(r.height().max(0.0))
        );
        let _ = writeln!(self.body, "<g clip-path=\"url(#{id})\">");
    }

    pub fn end_group(&mut self) {
        self.body.push_str("</g>\n");
    }

    fn points(&mut self, points: &[(f64, f64)]) {
        for (i, &(x, y)) in points.iter().enumerate() {
            if i > 0 {
                self.body.push(' ');
            }
            let _ = write!(self.body, "{},{}", num(x), num(y));
        }
    }

    fn paint(&mut self, fill: Option<(Rgb, f64)>, stroke: Option<Stroke>) {
        match fill {
            Some((colour, opacity)) => {
                let _ = write!(self.body, " fill=\"{}\"", colour.to_svg());
                if opacity < 1.0 {
                    let _ = write!(self.body, " fill-opacity=\"{}\"", num(opacity.max(0.0)));
                }
            }
            None => self.body.push_str(" fill=\"none\""),
        }
        if let Some(s) = stroke {
            self.body.push_str(&s.attributes());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_stable() {
        assert_eq!(num(1.0), "1");
        assert_eq!(num(1.2345), "1.23");
        assert_eq!(num(-0.001), "0");
        assert_eq!(num(10.5), "10.5");
        assert_eq!(num(f64::NAN), "0");
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
        assert_eq!(escape("x\u{1}y"), "x y");
    }
}
