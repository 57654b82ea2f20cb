//! Plots over two numeric (or category) axes: the marks a chart kind puts
//! there, in data coordinates, and how a panel lays them out and draws them.

use super::axes::{bottom_room, draw_axes, left_room, side_overhang, AxisSpec, Grid};
use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::svg::Stroke;
use super::text::fit_text;
use crate::chart::theme::{self, size, Marker, Rgb};

/// Something drawn inside a plot, in data coordinates.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Mark {
    /// A polyline; a non-finite point breaks it into pieces.
    Line {
        points: Vec<(f64, f64)>,
        stroke: Stroke,
    },
    /// Markers, one per point.
    Points {
        points: Vec<(f64, f64)>,
        shape: Marker,
        fill: Rgb,
        outline: Option<Rgb>,
        radius: f64,
    },
    /// Class-labelled points (x, y, class), in the order given, each
    /// coloured and shaped by its class.
    Classes {
        points: Vec<(f64, f64, usize)>,
        outline: Option<Rgb>,
        radius: f64,
    },
    /// Rings around points (e.g. the rows a model gets wrong).
    Rings {
        points: Vec<(f64, f64)>,
        stroke: Stroke,
        radius: f64,
    },
    /// Filled rectangles (x0, x1, y0, y1, colour): cells and bars.
    Cells {
        cells: Vec<(f64, f64, f64, f64, Rgb)>,
        opacity: f64,
    },
    /// An interval with end caps: horizontal at `at` (a y value) from `lo`
    /// to `hi` in x, or vertical at an x value.
    Interval {
        at: f64,
        lo: f64,
        hi: f64,
        horizontal: bool,
        colour: Rgb,
        width: f64,
        cap: f64,
    },
    /// A vertical line across the plot at x.
    VRule { x: f64, stroke: Stroke },
    /// A horizontal line across the plot at y.
    HRule { y: f64, stroke: Stroke },
}

/// A plot with its axes and marks.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct XyPanel {
    /// A heading over the plot (panels side by side or stacked).
    pub caption: Option<String>,
    pub x: AxisSpec,
    pub y: AxisSpec,
    pub grid: Grid,
    /// Equal scales on both axes (a square plot).
    pub square: bool,
    /// Drawn in this order (later on top).
    pub marks: Vec<Mark>,
    /// Text right of the plot at y values (numbers beside rows).
    pub right: Vec<(f64, String)>,
    /// Text above the plot at x values (e.g. the epoch kept).
    pub top: Vec<(f64, String)>,
    /// Natural plot height over plot width (when no height is asked for).
    pub aspect: f64,
    /// Natural height per category row, for category y axes.
    pub row_height: Option<f64>,
}

impl XyPanel {
    /// A panel with no marks yet, natural aspect 0.55.
    pub fn new(x: AxisSpec, y: AxisSpec) -> XyPanel {
        XyPanel {
            caption: None,
            x,
            y,
            grid: Grid::Horizontal,
            square: false,
            marks: Vec::new(),
            right: Vec::new(),
            top: Vec::new(),
            aspect: 0.55,
            row_height: None,
        }
    }
}

/// The most a category label may take of a panel's width.
const CATEGORY_SHARE: f64 = 0.38;
/// The largest square plot when the height is the chart's to choose.
const MAX_SQUARE: f64 = 420.0;

/// Room around the plot: left, top, right, bottom.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Gutters {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl XyPanel {
    fn max_label(&self, width: f64) -> f64 {
        if self.y.categories {
            width * CATEGORY_SHARE
        } else {
            width * 0.3
        }
    }

    pub fn gutters(&self, width: f64) -> Gutters {
        let (over_left, over_right) = side_overhang(&self.x);
        let right_text = self
            .right
            .iter()
            .map(|(_, t)| Font::new(size::TICK, theme::INK_SOFT).width(t))
            .fold(0.0, f64::max);
        let mut top = 6.0;
        if self.caption.is_some() {
            top += size::LABEL * 1.5;
        }
        if !self.top.is_empty() {
            top += size::NOTE * 1.4;
        }
        Gutters {
            left: left_room(&self.y, self.max_label(width)).max(over_left),
            top,
            right: if right_text > 0.0 {
                right_text + 10.0
            } else {
                over_right.max(6.0)
            },
            bottom: bottom_room(&self.x),
        }
    }

    /// The width a square plot and its gutters take at their natural size
    /// (`None` for other plots, which fill their width).
    pub fn natural_width(&self, width: f64) -> Option<f64> {
        self.square.then(|| {
            let g = self.gutters(width);
            g.left + (width - g.left - g.right).clamp(40.0, MAX_SQUARE) + g.right
        })
    }

    /// The panel's height when the chart chooses it, `width` wide.
    pub fn natural_height(&self, width: f64, g: Gutters) -> f64 {
        let plot_w = (width - g.left - g.right).max(40.0);
        let plot_h = match self.row_height {
            Some(row) if self.y.categories => row * self.y.ticks.len().max(1) as f64,
            _ if self.square => plot_w.min(MAX_SQUARE),
            _ => plot_w * self.aspect,
        };
        plot_h + g.top + g.bottom
    }

    /// The plot rectangle inside `area` with gutters `g`.
    pub fn plot_rect(&self, area: Rect, g: Gutters) -> Rect {
        let mut plot = Rect::new(
            area.left + g.left,
            area.top + g.top,
            area.right - g.right,
            area.bottom - g.bottom,
        );
        if plot.width() < 20.0 {
            plot.right = plot.left + 20.0;
        }
        if plot.height() < 20.0 {
            plot.bottom = plot.top + 20.0;
        }
        if self.square {
            let side = plot.width().min(plot.height());
            // Centred across the room, top aligned.
            let slack = plot.width() - side;
            plot.left += slack / 2.0;
            plot.right = plot.left + side;
            plot.bottom = plot.top + side;
        }
        plot
    }

    /// Draws the panel in `area` with gutters `g`.
    pub fn draw(&self, canvas: &mut Canvas, area: Rect, g: Gutters) {
        let plot = self.plot_rect(area, g);
        canvas.boxes.plots.push(plot);
        if let Some(caption) = &self.caption {
            let font = Font::new(size::LABEL, theme::INK).bold();
            let text = fit_text(caption, size::LABEL, true, area.width());
            let y = area.top + 2.0;
            canvas.text(
                &text,
                plot.left.min(area.left + g.left),
                y,
                font,
                Align::Left,
                Baseline::Top,
            );
        }
        let xs = self.x.scale(plot.left, plot.right);
        let ys = self.y.scale(plot.bottom, plot.top);
        draw_axes(
            canvas,
            plot,
            &self.x,
            &self.y,
            self.grid,
            self.max_label(area.width()),
        );
        for mark in &self.marks {
            draw_mark(canvas, plot, mark, &|x| xs.map(x), &|y| ys.map(y));
        }
        let font = Font::new(size::TICK, theme::INK_SOFT);
        for (y, text) in &self.right {
            let text = fit_text(text, size::TICK, false, g.right - 8.0);
            canvas.text(
                &text,
                plot.right + 8.0,
                ys.map(*y),
                font,
                Align::Left,
                Baseline::Middle,
            );
        }
        let note = Font::new(size::NOTE, theme::INK_MUTED);
        for (x, text) in &self.top {
            let px = xs.map(*x);
            let w = note.width(text);
            let y = plot.top - 3.0;
            // Beside the mark, on whichever side has room.
            if px + 3.0 + w <= area.right {
                canvas.text(text, px + 3.0, y, note, Align::Left, Baseline::Alphabetic);
            } else {
                canvas.text(
                    text,
                    (px - 3.0).max(area.left + w),
                    y,
                    note,
                    Align::Right,
                    Baseline::Alphabetic,
                );
            }
        }
    }
}

/// Splits a line at non-finite points into pieces of pixels.
fn pieces(
    points: &[(f64, f64)],
    x: &dyn Fn(f64) -> f64,
    y: &dyn Fn(f64) -> f64,
) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut current = Vec::new();
    for &(px, py) in points {
        if px.is_finite() && py.is_finite() {
            current.push((x(px), y(py)));
        } else if !current.is_empty() {
            out.push(std::mem::take(&mut current));
        }
    }
    if !current.is_empty() {
        out.push(current);
    }
    out
}

fn draw_mark(
    canvas: &mut Canvas,
    plot: Rect,
    mark: &Mark,
    x: &dyn Fn(f64) -> f64,
    y: &dyn Fn(f64) -> f64,
) {
    match mark {
        Mark::Line { points, stroke } => {
            canvas.begin_clip(Rect::new(
                plot.left - 2.0,
                plot.top - 2.0,
                plot.right + 2.0,
                plot.bottom + 2.0,
            ));
            for piece in pieces(points, x, y) {
                if piece.len() == 1 {
                    let (px, py) = piece[0];
                    canvas.line(&[(px - 1.5, py), (px + 1.5, py)], *stroke);
                } else {
                    canvas.line(&piece, *stroke);
                }
            }
            canvas.end_clip();
        }
        Mark::Points {
            points,
            shape,
            fill,
            outline,
            radius,
        } => {
            for &(px, py) in points {
                if px.is_finite() && py.is_finite() {
                    canvas.marker(*shape, x(px), y(py), *radius, *fill, *outline, false);
                }
            }
        }
        Mark::Classes {
            points,
            outline,
            radius,
        } => {
            for &(px, py, class) in points {
                if px.is_finite() && py.is_finite() {
                    let (shape, fill) = (theme::class_marker(class), theme::class_colour(class));
                    canvas.marker(shape, x(px), y(py), *radius, fill, *outline, false);
                }
            }
        }
        Mark::Rings {
            points,
            stroke,
            radius,
        } => {
            for &(px, py) in points {
                if px.is_finite() && py.is_finite() {
                    canvas.ring(x(px), y(py), *radius, *stroke);
                }
            }
        }
        Mark::Cells { cells, opacity } => {
            // Edges on whole pixels: neighbouring cells share an edge
            // exactly, so antialiasing leaves no seam between them.
            let bounds = Rect::new(
                plot.left.round(),
                plot.top.round(),
                plot.right.round(),
                plot.bottom.round(),
            );
            for &(x0, x1, y0, y1, colour) in cells {
                let (a, b, c, d) = (x(x0).round(), x(x1).round(), y(y0).round(), y(y1).round());
                let r = Rect::new(
                    a.min(b).max(bounds.left),
                    c.min(d).max(bounds.top),
                    a.max(b).min(bounds.right),
                    c.max(d).min(bounds.bottom),
                );
                if r.width() > 0.0 && r.height() > 0.0 {
                    canvas.data_rect(r, colour, *opacity);
                }
            }
        }
        Mark::Interval {
            at,
            lo,
            hi,
            horizontal,
            colour,
            width,
            cap,
        } => {
            if !(lo.is_finite() && hi.is_finite() && at.is_finite()) {
                return;
            }
            let s = Stroke::solid(*colour, *width);
            if *horizontal {
                let (l, h, cy) = (x(*lo), x(*hi), y(*at));
                canvas.line(&[(l, cy), (h, cy)], s);
                for end in [l, h] {
                    canvas.line(&[(end, cy - cap), (end, cy + cap)], s);
                }
                canvas
                    .boxes
                    .marks
                    .push(Rect::new(l.min(h), cy - cap, l.max(h), cy + cap));
            } else {
                let (l, h, cx) = (y(*lo), y(*hi), x(*at));
                canvas.line(&[(cx, l), (cx, h)], s);
                for end in [l, h] {
                    canvas.line(&[(cx - cap, end), (cx + cap, end)], s);
                }
                canvas
                    .boxes
                    .marks
                    .push(Rect::new(cx - cap, l.min(h), cx + cap, l.max(h)));
            }
        }
        Mark::VRule { x: at, stroke } => {
            let px = x(*at);
            if px >= plot.left - 0.5 && px <= plot.right + 0.5 {
                canvas.line(&[(px, plot.top), (px, plot.bottom)], *stroke);
            }
        }
        Mark::HRule { y: at, stroke } => {
            let py = y(*at);
            if py >= plot.top - 0.5 && py <= plot.bottom + 0.5 {
                canvas.line(&[(plot.left, py), (plot.right, py)], *stroke);
            }
        }
    }
}
