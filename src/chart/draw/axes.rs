//! Axes: what an axis shows (scale, ticks, label) and drawing it along the
//! left and bottom of a plot, with the room its labels need.

use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::scale::{Scale, ScaleKind, Tick};
use super::svg::Stroke;
use super::text::fit_text;
use crate::chart::theme::{self, size};

/// One axis: its scale, ticks and label, in data terms.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct AxisSpec {
    pub kind: ScaleKind,
    /// The values at the two ends (low to high).
    pub range: (f64, f64),
    pub ticks: Vec<Tick>,
    pub label: String,
    /// Tick labels drawn (false for an axis shared with a neighbour).
    pub tick_labels: bool,
    /// High values at the bottom (or left): category rows read top down.
    pub reversed: bool,
    /// Named categories rather than numbers: no grid lines at the ticks,
    /// labels in the label colour.
    pub categories: bool,
}

impl AxisSpec {
    /// A linear axis over `range` with `ticks`.
    pub fn linear(range: (f64, f64), ticks: Vec<Tick>, label: impl Into<String>) -> AxisSpec {
        AxisSpec {
            kind: ScaleKind::Linear,
            range,
            ticks,
            label: label.into(),
            tick_labels: true,
            reversed: false,
            categories: false,
        }
    }

    /// A logarithmic axis.
    pub fn log(range: (f64, f64), ticks: Vec<Tick>, label: impl Into<String>) -> AxisSpec {
        AxisSpec {
            kind: ScaleKind::Log10,
            ..AxisSpec::linear(range, ticks, label)
        }
    }

    /// Named categories at 0, 1, 2, ..., the first at the top.
    pub fn categories(names: &[String]) -> AxisSpec {
        AxisSpec {
            kind: ScaleKind::Linear,
            range: (-0.5, names.len() as f64 - 0.5),
            ticks: names
                .iter()
                .enumerate()
                .map(|(i, n)| Tick {
                    value: i as f64,
                    label: n.clone(),
                })
                .collect(),
            label: String::new(),
            tick_labels: true,
            reversed: true,
            categories: true,
        }
    }

    /// Without tick labels or axis label (shared with a neighbour).
    pub fn unlabelled(mut self) -> AxisSpec {
        self.tick_labels = false;
        self.label.clear();
        self
    }

    /// The scale onto pixels `start` (low end) to `end`.
    pub fn scale(&self, start: f64, end: f64) -> Scale {
        let (a, b) = if self.reversed {
            (end, start)
        } else {
            (start, end)
        };
        Scale::new(self.kind, self.range, (a, b))
    }

    fn tick_font(&self) -> Font {
        Font::new(
            size::TICK,
            if self.categories {
                theme::INK
            } else {
                theme::INK_SOFT
            },
        )
    }

    /// The widest tick label, in pixels (0 without tick labels).
    pub fn widest_tick(&self, max: f64) -> f64 {
        if !self.tick_labels {
            return 0.0;
        }
        self.ticks
            .iter()
            .map(|t| self.tick_font().width(&t.label).min(max))
            .fold(0.0, f64::max)
    }
}

/// Grid lines inside the plot.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Grid {
    None,
    Horizontal,
    Vertical,
    Both,
}

const TICK_LENGTH: f64 = 3.0;
const TICK_GAP: f64 = 5.0;

/// Room left of a plot for a vertical axis (tick labels at most
/// `max_label` wide).
pub(crate) fn left_room(y: &AxisSpec, max_label: f64) -> f64 {
    let ticks = if y.tick_labels {
        y.widest_tick(max_label) + TICK_GAP + TICK_LENGTH
    } else {
        TICK_LENGTH
    };
    ticks
        + if y.label.is_empty() {
            0.0
        } else {
            size::LABEL * 1.2 + 4.0
        }
}

/// Room below a plot for a horizontal axis.
pub(crate) fn bottom_room(x: &AxisSpec) -> f64 {
    let ticks = if x.tick_labels {
        TICK_LENGTH + 3.0 + size::TICK * 1.2
    } else {
        TICK_LENGTH
    };
    ticks
        + if x.label.is_empty() {
            0.0
        } else {
            size::LABEL * 1.25 + 3.0
        }
}

/// How far horizontal tick labels at the ends of the axis reach beyond the
/// plot (left, right): half their width.
pub(crate) fn side_overhang(x: &AxisSpec) -> (f64, f64) {
    if !x.tick_labels {
        return (0.0, 0.0);
    }
    let font = x.tick_font();
    let scale = x.scale(0.0, 1.0);
    let (mut left, mut right) = (0.0f64, 0.0f64);
    for t in &x.ticks {
        let f = scale.map(t.value);
        let half = font.width(&t.label) / 2.0;
        if f < 0.05 {
            left = left.max(half);
        }
        if f > 0.95 {
            right = right.max(half);
        }
    }
    (left, right)
}

/// Draws grid lines, axis lines, ticks, tick labels and axis labels around
/// `plot`; category labels are fitted to `max_label` pixels.
pub(crate) fn draw_axes(
    canvas: &mut Canvas,
    plot: Rect,
    x: &AxisSpec,
    y: &AxisSpec,
    grid: Grid,
    max_label: f64,
) {
    let xs = x.scale(plot.left, plot.right);
    let ys = y.scale(plot.bottom, plot.top);
    let grid_stroke = Stroke::solid(theme::GRID, 0.8);
    let axis_stroke = Stroke::solid(theme::AXIS, 0.8);
    if matches!(grid, Grid::Horizontal | Grid::Both) {
        for t in &y.ticks {
            let py = ys.map(t.value);
            if (py - plot.bottom).abs() > 0.5 && py >= plot.top - 0.5 {
                canvas.line(&[(plot.left, py), (plot.right, py)], grid_stroke);
            }
        }
    }
    if matches!(grid, Grid::Vertical | Grid::Both) {
        for t in &x.ticks {
            let px = xs.map(t.value);
            if (px - plot.left).abs() > 0.5 && px <= plot.right + 0.5 {
                canvas.line(&[(px, plot.top), (px, plot.bottom)], grid_stroke);
            }
        }
    }
    canvas.line(
        &[
            (plot.left, plot.top),
            (plot.left, plot.bottom),
            (plot.right, plot.bottom),
        ],
        axis_stroke,
    );
    let tick_font = x.tick_font();
    let mut last_right = f64::NEG_INFINITY;
    for t in &x.ticks {
        let px = xs.map(t.value);
        canvas.line(
            &[(px, plot.bottom), (px, plot.bottom + TICK_LENGTH)],
            axis_stroke,
        );
        if !x.tick_labels {
            continue;
        }
        let half = tick_font.width(&t.label) / 2.0;
        if px - half > last_right + 5.0 {
            canvas.text(
                &t.label,
                px,
                plot.bottom + TICK_LENGTH + 3.0,
                tick_font,
                Align::Centre,
                Baseline::Top,
            );
            last_right = px + half;
        }
    }
    let y_font = y.tick_font();
    let mut last_y = f64::NAN;
    for t in &y.ticks {
        let py = ys.map(t.value);
        if !y.categories {
            canvas.line(
                &[(plot.left - TICK_LENGTH, py), (plot.left, py)],
                axis_stroke,
            );
        }
        if !y.tick_labels {
            continue;
        }
        if last_y.is_nan() || (py - last_y).abs() >= size::TICK + 1.0 {
            let label = fit_text(&t.label, size::TICK, false, max_label);
            canvas.text(
                &label,
                plot.left - TICK_LENGTH - TICK_GAP,
                py,
                y_font,
                Align::Right,
                Baseline::Middle,
            );
            last_y = py;
        }
    }
    let label_font = Font::new(size::LABEL, theme::INK);
    if !x.label.is_empty() {
        let text = fit_text(&x.label, size::LABEL, false, plot.width() + 40.0);
        let top = plot.bottom + bottom_room(x) - size::LABEL * 1.25;
        canvas.text(
            &text,
            plot.centre_x(),
            top,
            label_font,
            Align::Centre,
            Baseline::Top,
        );
    }
    if !y.label.is_empty() {
        let text = fit_text(&y.label, size::LABEL, false, plot.height() + 20.0);
        let gx = plot.left - left_room(y, max_label);
        canvas.text_turned(
            &text,
            gx,
            plot.centre_y(),
            label_font,
            Align::Centre,
            Baseline::Top,
        );
    }
}
