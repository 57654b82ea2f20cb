//! The page: the title and subtitle at the top left, the legend band under
//! them, the notes at the foot, and the body (the plots) in between.

use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::legend::{draw_legend, legend_height, Entry};
use super::text::wrap;
use crate::chart::theme::{self, size};

const TITLE_LINE: f64 = size::TITLE * 1.25;
const SUBTITLE_LINE: f64 = size::SUBTITLE * 1.35;
const NOTE_LINE: f64 = size::NOTE * 1.35;
const GAP: f64 = 8.0;

/// The text around the plots.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Frame {
    pub title: String,
    /// Lines under the title: what the chart shows and from which rows.
    pub subtitle: Vec<String>,
    pub legend: Vec<Entry>,
    pub notes: Vec<String>,
    /// Title and subtitle drawn (false for a figure captioned elsewhere).
    pub headings: bool,
}

/// Where everything goes on a page of a given size.
pub(crate) struct Page {
    title: Vec<String>,
    subtitle: Vec<String>,
    notes: Vec<String>,
    legend: Rect,
    pub body: Rect,
    top: f64,
    notes_top: f64,
}

impl Page {
    /// The height of everything but the body, for a page `width` wide.
    pub fn chrome_height(frame: &Frame, width: f64) -> f64 {
        let page = Page::lay_out(frame, width, 10_000.0);
        10_000.0 - page.body.height()
    }

    /// Lays out a `width` x `height` page.
    pub fn lay_out(frame: &Frame, width: f64, height: f64) -> Page {
        let m = size::MARGIN;
        let inner = width - 2.0 * m;
        let (title, subtitle) = if frame.headings {
            let mut title = wrap(&frame.title, size::TITLE, true, inner);
            title.truncate(2);
            let subtitle: Vec<String> = frame
                .subtitle
                .iter()
                .flat_map(|s| wrap(s, size::SUBTITLE, false, inner))
                .collect();
            (title, subtitle)
        } else {
            (Vec::new(), Vec::new())
        };
        let notes: Vec<String> = frame
            .notes
            .iter()
            .flat_map(|s| wrap(s, size::NOTE, false, inner))
            .collect();
        let mut y = m;
        y += title.len() as f64 * TITLE_LINE + subtitle.len() as f64 * SUBTITLE_LINE;
        if !title.is_empty() || !subtitle.is_empty() {
            y += GAP;
        }
        let legend_h = legend_height(&frame.legend, inner);
        let legend = Rect::new(m, y, width - m, y + legend_h);
        if legend_h > 0.0 {
            y += legend_h + GAP;
        }
        let notes_h = notes.len() as f64 * NOTE_LINE;
        let notes_top = height - m - notes_h;
        let body_bottom = notes_top - if notes.is_empty() { 0.0 } else { GAP };
        Page {
            title,
            subtitle,
            notes,
            legend,
            body: Rect::new(m, y, width - m, body_bottom.max(y + 20.0)),
            top: m,
            notes_top,
        }
    }

    /// Draws the title, subtitle, legend and notes.
    pub fn draw(&self, canvas: &mut Canvas, frame: &Frame) {
        let m = size::MARGIN;
        let mut y = self.top;
        for line in &self.title {
            let font = Font::new(size::TITLE, theme::INK).bold();
            canvas.text(line, m, y, font, Align::Left, Baseline::Top);
            y += TITLE_LINE;
        }
        for line in &self.subtitle {
            let font = Font::new(size::SUBTITLE, theme::INK_MUTED);
            canvas.text(line, m, y + 1.0, font, Align::Left, Baseline::Top);
            y += SUBTITLE_LINE;
        }
        draw_legend(canvas, self.legend, &frame.legend);
        let mut y = self.notes_top;
        for line in &self.notes {
            let font = Font::new(size::NOTE, theme::INK_MUTED);
            canvas.text(line, m, y, font, Align::Left, Baseline::Top);
            y += NOTE_LINE;
        }
    }
}
