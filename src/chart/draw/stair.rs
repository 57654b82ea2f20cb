//! Weight matrices laid out as a staircase: one block of cells per layer,
//! each turned so that it shares its units with its neighbours. Block 1
//! (inputs down, units of the first hidden layer across) sits on top;
//! block 2 hangs under it with the same columns (those units, now its
//! inputs) and the next layer's units down; block 3 stands right of block
//! 2 with the same rows; and so on. A unit's incoming and outgoing weights
//! therefore line up, across one gap, at every step. Biases are a separate
//! line beside each block.

use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::text::fit_text;
use crate::chart::theme::{self, size, Rgb};

/// One layer's weights, `from x to`, and its biases (one per `to` unit).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Block {
    /// A short label drawn by the block (its number).
    pub caption: String,
    /// Cell colours, `from x to`, row-major.
    pub cells: Vec<Vec<Rgb>>,
    /// Bias colours, one per `to` unit.
    pub biases: Vec<Rgb>,
    /// Which cells are negative (marked with a short dash when big enough,
    /// so the sign reads in grey print).
    pub negative: Vec<Vec<bool>>,
    pub negative_bias: Vec<bool>,
}

/// The staircase.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct StairPanel {
    pub blocks: Vec<Block>,
    /// Names of the input units (rows of block 1).
    pub inputs: Vec<String>,
    /// Names of the output units.
    pub outputs: Vec<String>,
    /// The largest cell side, in pixels.
    pub max_cell: f64,
}

/// The gap between blocks and before a bias line, in cells.
const GAP: f64 = 0.6;
/// Cells at least this big carry the dash of a negative value.
pub(crate) const DASH_CELL: f64 = 12.0;

/// A block's place in cell units: (x, y) of its weight area's top left,
/// its size (columns, rows), and whether its rows are its `from` units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Slot {
    pub x: f64,
    pub y: f64,
    pub columns: f64,
    pub rows: f64,
    pub rows_are_from: bool,
}

impl StairPanel {
    /// Where each block goes, in cell units, and the bounding box
    /// (left, top, right, bottom) including bias lines.
    pub fn slots(&self) -> (Vec<Slot>, (f64, f64, f64, f64)) {
        let mut slots: Vec<Slot> = Vec::new();
        for (l, b) in self.blocks.iter().enumerate() {
            let from = b.cells.len() as f64;
            let to = b.cells.first().map_or(0, Vec::len) as f64;
            let slot = if l == 0 {
                Slot {
                    x: 0.0,
                    y: 0.0,
                    columns: to,
                    rows: from,
                    rows_are_from: true,
                }
            } else {
                let p = slots[l - 1];
                if l % 2 == 1 {
                    // Under the previous block, sharing its columns.
                    Slot {
                        x: p.x,
                        y: p.y + p.rows + GAP,
                        columns: from,
                        rows: to,
                        rows_are_from: false,
                    }
                } else {
                    // Right of the previous block, sharing its rows.
                    Slot {
                        x: p.x + p.columns + GAP,
                        y: p.y,
                        columns: to,
                        rows: from,
                        rows_are_from: true,
                    }
                }
            };
            slots.push(slot);
        }
        let mut bounds = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        for s in &slots {
            // The bias line: above a block whose rows are its inputs, left
            // of one whose columns are.
            let (left, top) = if s.rows_are_from {
                (s.x, s.y - 1.0 - GAP)
            } else {
                (s.x - 1.0 - GAP, s.y)
            };
            bounds.0 = bounds.0.min(left);
            bounds.1 = bounds.1.min(top);
            bounds.2 = bounds.2.max(s.x + s.columns);
            bounds.3 = bounds.3.max(s.y + s.rows);
        }
        (slots, bounds)
    }

    fn label_width(names: &[String]) -> f64 {
        names
            .iter()
            .map(|n| Font::new(size::TICK, theme::INK).width(n))
            .fold(0.0, f64::max)
            .min(140.0)
    }

    /// Room around the cells: left (input names), top (captions), right
    /// (output names), bottom (captions).
    fn room(&self) -> (f64, f64, f64, f64) {
        let number = size::TICK * 1.4 + 2.0;
        let outputs = Self::label_width(&self.outputs) + 8.0;
        let last_rows_are_to = self.blocks.len().is_multiple_of(2);
        (
            Self::label_width(&self.inputs) + 8.0,
            number,
            if last_rows_are_to {
                outputs.max(8.0)
            } else {
                8.0
            },
            if last_rows_are_to { 4.0 } else { outputs + 4.0 },
        )
    }

    fn cell_for(&self, width: f64, height: f64) -> f64 {
        let (_, (l, t, r, b)) = self.slots();
        let (left, top, right, bottom) = self.room();
        let across = (width - left - right) / (r - l).max(1.0);
        let down = (height - top - bottom) / (b - t).max(1.0);
        across.min(down).min(self.max_cell).max(1.0)
    }

    /// The width the blocks and their names take at their natural size.
    pub fn natural_width(&self, width: f64) -> f64 {
        let (_, (l, _, r, _)) = self.slots();
        let (left, _, right, _) = self.room();
        left + right + self.cell_for(width, f64::INFINITY) * (r - l)
    }

    pub fn natural_height(&self, width: f64) -> f64 {
        let (_, (_, t, _, b)) = self.slots();
        let (_, top, _, bottom) = self.room();
        let cell = self.cell_for(width, f64::INFINITY);
        top + bottom + cell * (b - t)
    }

    /// The cell side when drawn in `area`.
    pub fn cell_in(&self, area: Rect) -> f64 {
        self.cell_for(area.width(), area.height())
    }

    pub fn draw(&self, canvas: &mut Canvas, area: Rect) {
        let (slots, (l, t, r, b)) = self.slots();
        let (left, top, right, _) = self.room();
        let cell = self.cell_in(area);
        let total = left + (r - l) * cell + right;
        let origin_x = area.left + ((area.width() - total) / 2.0).max(0.0) + left - l * cell;
        let origin_y = area.top + top - t * cell;
        let at = |x: f64, y: f64| (origin_x + x * cell, origin_y + y * cell);
        canvas.boxes.plots.push(Rect::new(
            origin_x + l * cell,
            origin_y + t * cell,
            origin_x + r * cell,
            origin_y + b * cell,
        ));
        let inset = if cell >= 6.0 { 0.5 } else { 0.0 };
        let square = |canvas: &mut Canvas, x: f64, y: f64, fill: Rgb, negative: bool| {
            let (px, py) = at(x, y);
            let rect = Rect::new(px + inset, py + inset, px + cell - inset, py + cell - inset);
            canvas.data_rect(rect, fill, 1.0);
            if negative && cell >= DASH_CELL {
                let ink = super::tiles::text_colour(fill);
                let half = cell * 0.22;
                let cy = py + cell / 2.0;
                canvas.line(
                    &[(px + cell / 2.0 - half, cy), (px + cell / 2.0 + half, cy)],
                    super::svg::Stroke::solid(ink, (cell * 0.1).clamp(0.8, 2.0)),
                );
            }
        };
        let caption_font = Font::new(size::TICK, theme::INK).bold();
        for (block, s) in self.blocks.iter().zip(&slots) {
            for (i, row) in block.cells.iter().enumerate() {
                for (j, &fill) in row.iter().enumerate() {
                    let neg = block.negative[i][j];
                    let (x, y) = if s.rows_are_from {
                        (s.x + j as f64, s.y + i as f64)
                    } else {
                        (s.x + i as f64, s.y + j as f64)
                    };
                    square(canvas, x, y, fill, neg);
                }
            }
            for (j, &fill) in block.biases.iter().enumerate() {
                let neg = block.negative_bias[j];
                let (x, y) = if s.rows_are_from {
                    (s.x + j as f64, s.y - 1.0 - GAP)
                } else {
                    (s.x - 1.0 - GAP, s.y + j as f64)
                };
                square(canvas, x, y, fill, neg);
            }
            // The block's number: above the bias line of a block whose
            // rows are its inputs, left of the bias line of the others.
            let (px, py, align, baseline) = if s.rows_are_from {
                let (px, py) = at(s.x, s.y - 1.0 - GAP);
                (px, py - 3.0, Align::Left, Baseline::Alphabetic)
            } else {
                let (px, py) = at(s.x - 1.0 - GAP, s.y);
                (px - 4.0, py, Align::Right, Baseline::Top)
            };
            canvas.text(&block.caption, px, py, caption_font, align, baseline);
        }
        let names = Font::new(size::TICK, theme::INK);
        let first = slots[0];
        let pitch = (size::TICK * 1.15 / cell).ceil().max(1.0) as usize;
        for (i, name) in self.inputs.iter().enumerate().step_by(pitch) {
            let (px, py) = at(first.x, first.y + i as f64 + 0.5);
            let text = fit_text(name, size::TICK, false, left - 8.0);
            canvas.text(&text, px - 5.0, py, names, Align::Right, Baseline::Middle);
        }
        let last = slots[slots.len() - 1];
        for (j, name) in self.outputs.iter().enumerate().step_by(pitch) {
            if last.rows_are_from {
                // Outputs across: names turned, under the block.
                let (px, py) = at(last.x + j as f64 + 0.5, last.y + last.rows);
                let below = py + size::TICK * 1.4 + 6.0;
                let text = fit_text(name, size::TICK, false, 140.0);
                canvas.text_turned(&text, px, below, names, Align::Right, Baseline::Middle);
            } else {
                let (px, py) = at(last.x + last.columns, last.y + j as f64 + 0.5);
                let text = fit_text(name, size::TICK, false, right - 8.0);
                canvas.text(&text, px + 5.0, py, names, Align::Left, Baseline::Middle);
            }
        }
    }
}
