//! Legends: a band of entries above the plots, flowing left to right and
//! wrapping into rows, so that a legend never sits on the data and takes
//! no width from the plots. A colour scale is an entry like any other.

use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::svg::Stroke;
use super::text::fit_text;
use crate::chart::theme::{self, size, Dash, Marker, Rgb};

/// What an entry shows before its label.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Key {
    /// A line sample.
    Line { colour: Rgb, width: f64, dash: Dash },
    /// A marker alone.
    Marker {
        shape: Marker,
        colour: Rgb,
        outline: Rgb,
    },
    /// A filled square (cells, bars, bands).
    Swatch { colour: Rgb, opacity: f64 },
    /// An interval bar with end caps.
    Interval { colour: Rgb },
    /// A ring (an outline marking a point).
    Ring { colour: Rgb },
    /// A colour scale: a strip of `stops` (low to high) with labelled
    /// positions (0 to 1) beneath.
    Scale {
        stops: Vec<Rgb>,
        ticks: Vec<(f64, String)>,
    },
}

/// One legend entry.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Entry {
    pub label: String,
    pub key: Key,
}

impl Entry {
    pub fn new(label: impl Into<String>, key: Key) -> Entry {
        Entry {
            label: label.into(),
            key,
        }
    }
}

const KEY_WIDTH: f64 = 22.0;
const KEY_GAP: f64 = 5.0;
const ENTRY_GAP: f64 = 16.0;
const ROW: f64 = 17.0;
const SCALE_WIDTH: f64 = 120.0;
const SCALE_ROW: f64 = 30.0;

fn font() -> Font {
    Font::new(size::LEGEND, theme::INK_SOFT)
}

/// Where each entry goes: (entry, x offset, y offset of its row, row height).
struct Placement {
    items: Vec<(usize, f64, f64, f64, String)>,
    height: f64,
}

fn entry_width(e: &Entry, label: &str) -> f64 {
    match &e.key {
        Key::Scale { .. } => font().width(label) + KEY_GAP + SCALE_WIDTH + 10.0,
        _ => KEY_WIDTH + KEY_GAP + font().width(label),
    }
}

fn place(entries: &[Entry], width: f64) -> Placement {
    let mut items = Vec::new();
    let (mut x, mut y, mut row_height) = (0.0, 0.0, 0.0f64);
    for (i, e) in entries.iter().enumerate() {
        let room = match e.key {
            Key::Scale { .. } => width - SCALE_WIDTH - KEY_GAP - 10.0,
            _ => width - KEY_WIDTH - KEY_GAP,
        };
        let label = fit_text(&e.label, size::LEGEND, false, room.max(20.0));
        let w = entry_width(e, &label);
        let h = if matches!(e.key, Key::Scale { .. }) {
            SCALE_ROW
        } else {
            ROW
        };
        if x > 0.0 && x + w > width {
            y += row_height;
            x = 0.0;
            row_height = 0.0;
        }
        items.push((i, x, y, h, label));
        row_height = row_height.max(h);
        x += w + ENTRY_GAP;
    }
    Placement {
        items,
        height: y + row_height,
    }
}

/// The width of the widest entry: a legend this wide lists one entry per
/// row.
pub(crate) fn widest_entry(entries: &[Entry]) -> f64 {
    entries
        .iter()
        .map(|e| entry_width(e, &e.label))
        .fold(0.0, f64::max)
}

/// The height a legend of `entries` needs in a band `width` wide (0 when
/// there are none).
pub(crate) fn legend_height(entries: &[Entry], width: f64) -> f64 {
    if entries.is_empty() {
        0.0
    } else {
        place(entries, width).height
    }
}

/// Draws the legend in `area` (as tall as [`legend_height`]) and records it.
pub(crate) fn draw_legend(canvas: &mut Canvas, area: Rect, entries: &[Entry]) {
    if entries.is_empty() {
        return;
    }
    let placement = place(entries, area.width());
    let mut used = Rect::new(area.left, area.top, area.left, area.top);
    for (i, dx, dy, h, label) in &placement.items {
        let e = &entries[*i];
        let x = area.left + dx;
        let cy = area.top + dy + ROW / 2.0;
        let right = x + entry_width(e, label);
        used = used.union(&Rect::new(x, area.top + dy, right, area.top + dy + h));
        match &e.key {
            Key::Scale { stops, ticks } => {
                canvas.text(label, x, cy, font(), Align::Left, Baseline::Middle);
                let left = x + font().width(label) + KEY_GAP;
                draw_scale(canvas, left, cy - 4.5, stops, ticks);
                continue;
            }
            Key::Line {
                colour,
                width,
                dash,
            } => {
                let stroke = Stroke::solid(*colour, *width).dashed(*dash);
                canvas.line(&[(x, cy), (x + KEY_WIDTH, cy)], stroke);
            }
            Key::Marker {
                shape,
                colour,
                outline,
            } => canvas.marker(
                *shape,
                x + KEY_WIDTH / 2.0,
                cy,
                size::MARKER,
                *colour,
                Some(*outline),
                true,
            ),
            Key::Swatch { colour, opacity } => {
                let r = Rect::new(x + 5.0, cy - 6.0, x + KEY_WIDTH - 5.0, cy + 6.0);
                canvas.fill_rect(r, *colour, *opacity);
            }
            Key::Interval { colour } => {
                let s = Stroke::solid(*colour, 2.0);
                canvas.line(&[(x + 2.0, cy), (x + KEY_WIDTH - 2.0, cy)], s);
                for end in [x + 2.0, x + KEY_WIDTH - 2.0] {
                    canvas.line(&[(end, cy - 4.0), (end, cy + 4.0)], s);
                }
            }
            Key::Ring { colour } => {
                canvas.ring(
                    x + KEY_WIDTH / 2.0,
                    cy,
                    size::MARKER + 2.5,
                    Stroke::solid(*colour, 1.6),
                );
            }
        }
        canvas.text(
            label,
            x + KEY_WIDTH + KEY_GAP,
            cy,
            font(),
            Align::Left,
            Baseline::Middle,
        );
    }
    canvas.boxes.legend = Some(used);
}

/// A horizontal colour strip at (x, top), ticks and labels beneath.
fn draw_scale(canvas: &mut Canvas, x: f64, top: f64, stops: &[Rgb], ticks: &[(f64, String)]) {
    let n = stops.len().max(1) as f64;
    for (i, colour) in stops.iter().enumerate() {
        let r = Rect::new(
            x + SCALE_WIDTH * i as f64 / n,
            top,
            x + SCALE_WIDTH * (i + 1) as f64 / n,
            top + 9.0,
        );
        canvas.fill_rect(r, *colour, 1.0);
    }
    canvas.stroke_rect(
        Rect::new(x, top, x + SCALE_WIDTH, top + 9.0),
        Stroke::solid(theme::AXIS, 0.6),
    );
    let tick = Font::new(size::SMALLEST, theme::INK_SOFT);
    for (at, label) in ticks {
        let px = x + SCALE_WIDTH * at.clamp(0.0, 1.0);
        canvas.line(
            &[(px, top + 9.0), (px, top + 12.0)],
            Stroke::solid(theme::AXIS, 0.8),
        );
        canvas.text(label, px, top + 13.0, tick, Align::Centre, Baseline::Top);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(label: &str) -> Entry {
        Entry::new(
            label,
            Key::Line {
                colour: theme::OKABE_ITO[0],
                width: 2.0,
                dash: Dash::Solid,
            },
        )
    }

    #[test]
    fn entries_wrap_into_rows() {
        let entries: Vec<Entry> = (0..6)
            .map(|i| line(&format!("series number {i}")))
            .collect();
        assert_eq!(legend_height(&entries, 2000.0), ROW);
        let narrow = legend_height(&entries, 260.0);
        assert!(narrow >= 3.0 * ROW, "{narrow}");
        assert_eq!(legend_height(&[], 300.0), 0.0);
    }

    #[test]
    fn the_legend_stays_in_its_band() {
        let entries: Vec<Entry> = (0..5).map(|i| line(&format!("entry {i}"))).collect();
        let mut canvas = Canvas::new(300.0, 200.0);
        let h = legend_height(&entries, 276.0);
        let area = Rect::new(12.0, 40.0, 288.0, 40.0 + h);
        draw_legend(&mut canvas, area, &entries);
        let used = canvas.boxes.legend.unwrap();
        assert!(area.contains(&used), "{used:?} in {area:?}");
        for t in &canvas.boxes.texts {
            assert!(area.contains(&t.rect), "{t:?}");
        }
    }
}
