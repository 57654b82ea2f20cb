//! Tile grids: a matrix of coloured cells with row and column names, text
//! in the cells when they are big enough, and a note beside each row (the
//! confusion matrix).

use super::canvas::{Align, Baseline, Canvas, Font};
use super::geometry::Rect;
use super::text::fit_text;
use crate::chart::theme::{self, size, Rgb};

/// One cell: its colour and up to two lines of text.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Tile {
    pub fill: Rgb,
    /// Bold, the cell's number.
    pub main: String,
    /// Under it when there is room.
    pub detail: String,
}

/// A grid of tiles with named rows and columns.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct TilePanel {
    pub rows: Vec<String>,
    pub columns: Vec<String>,
    /// Along the left (turned).
    pub row_title: String,
    /// Under the column names.
    pub column_title: String,
    /// `tiles[row][column]`.
    pub tiles: Vec<Vec<Tile>>,
    /// Right of each row (e.g. its total).
    pub row_notes: Vec<String>,
    /// The largest cell side, in pixels.
    pub max_cell: f64,
}

/// Cells at least this big show their number; at least `DETAIL_CELL`, the
/// detail line too.
pub(crate) const TEXT_CELL: f64 = 24.0;
pub(crate) const DETAIL_CELL: f64 = 44.0;

struct Geometry {
    grid: Rect,
    cell: f64,
    turned: bool,
    name_width: f64,
}

impl TilePanel {
    fn name_width(&self) -> f64 {
        self.rows
            .iter()
            .chain(&self.columns)
            .map(|n| Font::new(size::TICK, theme::INK).width(n))
            .fold(0.0, f64::max)
            .min(150.0)
    }

    fn notes_width(&self) -> f64 {
        self.row_notes
            .iter()
            .map(|n| Font::new(size::TICK, theme::INK_MUTED).width(n))
            .fold(0.0, f64::max)
    }

    fn left(&self, name_width: f64) -> f64 {
        size::LABEL * 1.2 + 6.0 + name_width + 6.0
    }

    fn right(&self) -> f64 {
        if self.row_notes.is_empty() {
            4.0
        } else {
            self.notes_width() + 10.0
        }
    }

    fn bottom(&self, turned: bool, name_width: f64) -> f64 {
        6.0 + if turned { name_width } else { size::TICK * 1.2 } + 6.0 + size::LABEL * 1.3
    }

    fn cell_for_width(&self, width: f64) -> f64 {
        let k = self.columns.len().max(1) as f64;
        ((width - self.left(self.name_width()) - self.right()) / k)
            .min(self.max_cell)
            .floor()
            .max(4.0)
    }

    fn turned(&self, cell: f64) -> bool {
        self.columns
            .iter()
            .any(|c| Font::new(size::TICK, theme::INK).width(c) > cell - 4.0)
    }

    /// The cell side the panel will have when `width` wide (at its
    /// natural height).
    pub fn cell_at(&self, width: f64) -> f64 {
        self.cell_for_width(width)
    }

    /// The width the grid and its labels take at their natural size.
    pub fn natural_width(&self, width: f64) -> f64 {
        let cell = self.cell_for_width(width);
        self.left(self.name_width()) + cell * self.columns.len() as f64 + self.right()
    }

    pub fn natural_height(&self, width: f64) -> f64 {
        let cell = self.cell_for_width(width);
        let turned = self.turned(cell);
        4.0 + cell * self.rows.len() as f64 + self.bottom(turned, self.name_width())
    }

    fn geometry(&self, area: Rect) -> Geometry {
        let name_width = self.name_width();
        let mut cell = self.cell_for_width(area.width());
        let mut turned = self.turned(cell);
        let rows = self.rows.len().max(1) as f64;
        let fit_h = ((area.height() - 4.0 - self.bottom(turned, name_width)) / rows).floor();
        if fit_h < cell {
            cell = fit_h.max(4.0);
            turned = self.turned(cell);
        }
        let k = self.columns.len() as f64;
        let total = self.left(name_width) + cell * k + self.right();
        // Centred across the area.
        let left = area.left + ((area.width() - total) / 2.0).max(0.0) + self.left(name_width);
        Geometry {
            grid: Rect::new(
                left,
                area.top + 4.0,
                left + cell * k,
                area.top + 4.0 + cell * rows,
            ),
            cell,
            turned,
            name_width,
        }
    }

    pub fn draw(&self, canvas: &mut Canvas, area: Rect) {
        let Geometry {
            grid,
            cell,
            turned,
            name_width,
        } = self.geometry(area);
        canvas.boxes.plots.push(grid);
        for (r, row) in self.tiles.iter().enumerate() {
            for (c, tile) in row.iter().enumerate() {
                let rect = Rect::new(
                    grid.left + c as f64 * cell + 1.0,
                    grid.top + r as f64 * cell + 1.0,
                    grid.left + (c + 1) as f64 * cell - 1.0,
                    grid.top + (r + 1) as f64 * cell - 1.0,
                );
                canvas.data_rect(rect, tile.fill, 1.0);
                draw_tile_text(canvas, rect, tile, cell);
            }
        }
        let tick = Font::new(size::TICK, theme::INK);
        let muted = Font::new(size::TICK, theme::INK_MUTED);
        for (i, name) in self.rows.iter().enumerate() {
            let cy = grid.top + (i as f64 + 0.5) * cell;
            let text = fit_text(name, size::TICK, false, name_width);
            canvas.text(
                &text,
                grid.left - 6.0,
                cy,
                tick,
                Align::Right,
                Baseline::Middle,
            );
            if let Some(note) = self.row_notes.get(i) {
                canvas.text(
                    note,
                    grid.right + 8.0,
                    cy,
                    muted,
                    Align::Left,
                    Baseline::Middle,
                );
            }
        }
        for (i, name) in self.columns.iter().enumerate() {
            let cx = grid.left + (i as f64 + 0.5) * cell;
            let text = fit_text(name, size::TICK, false, name_width);
            if turned {
                canvas.text_turned(
                    &text,
                    cx,
                    grid.bottom + 6.0,
                    tick,
                    Align::Right,
                    Baseline::Middle,
                );
            } else {
                canvas.text(
                    &text,
                    cx,
                    grid.bottom + 6.0,
                    tick,
                    Align::Centre,
                    Baseline::Top,
                );
            }
        }
        let label = Font::new(size::LABEL, theme::INK);
        let below = grid.bottom + 6.0 + if turned { name_width } else { size::TICK * 1.2 } + 6.0;
        canvas.text(
            &self.column_title,
            grid.centre_x(),
            below,
            label,
            Align::Centre,
            Baseline::Top,
        );
        canvas.text_turned(
            &self.row_title,
            grid.left - 6.0 - name_width - 6.0 - size::LABEL * 1.2,
            grid.centre_y(),
            label,
            Align::Centre,
            Baseline::Top,
        );
    }
}

/// The cell's number (bold) and, when there is room, its detail below.
fn draw_tile_text(canvas: &mut Canvas, rect: Rect, tile: &Tile, cell: f64) {
    if cell < TEXT_CELL || tile.main.is_empty() {
        return;
    }
    let ink = text_colour(tile.fill);
    let (cx, cy) = (rect.centre_x(), rect.centre_y());
    let room = rect.width() - 4.0;
    if cell >= DETAIL_CELL && !tile.detail.is_empty() {
        let main = Font::new(12.5, ink).bold();
        canvas.text(
            &fit_text(&tile.main, 12.5, true, room),
            cx,
            cy - 1.0,
            main,
            Align::Centre,
            Baseline::Alphabetic,
        );
        let detail = Font::new(size::SMALLEST, ink);
        canvas.text(
            &fit_text(&tile.detail, size::SMALLEST, false, room),
            cx,
            cy + 2.5,
            detail,
            Align::Centre,
            Baseline::Top,
        );
    } else {
        let main = Font::new(size::SMALLEST, ink).bold();
        canvas.text(
            &fit_text(&tile.main, size::SMALLEST, true, room),
            cx,
            cy,
            main,
            Align::Centre,
            Baseline::Middle,
        );
    }
}

/// White or near-black, whichever has the higher WCAG 2.x contrast ratio
/// on `fill`:
///
/// ```text
/// contrast(a, b) = (L_lighter + 0.05) / (L_darker + 0.05)
/// ```
pub(crate) fn text_colour(fill: Rgb) -> Rgb {
    let l = fill.luminance();
    let on_white = 1.05 / (l + 0.05);
    let on_ink = (l + 0.05) / (theme::INK.luminance() + 0.05);
    if on_white > on_ink {
        theme::WHITE
    } else {
        theme::INK
    }
}
