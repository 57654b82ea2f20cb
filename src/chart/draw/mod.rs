//! The drawing layer every chart kind shares. A chart kind *prepares* a
//! [`Figure`] (plain data: title, subtitle, legend, notes and panels of
//! marks in data coordinates) and [`render`] draws it; nothing else in
//! `chart` writes SVG.
//!
//! | file | part |
//! |---|---|
//! | `geometry.rs` | rectangles |
//! | `svg.rs` | the SVG text: elements, numbers, escaping |
//! | `text.rs`, `font_widths.rs` | measuring text with the shipped font's widths |
//! | `canvas.rs` | drawing primitives that record their boxes |
//! | `scale.rs` | scales, ticks, number formats |
//! | `axes.rs` | axes and the room their labels need |
//! | `legend.rs` | the legend band (entries and colour scales) |
//! | `page.rs` | title, subtitle, legend and notes around the body |
//! | `xy.rs` | plots over two axes and their marks |
//! | `tiles.rs` | grids of coloured cells (confusion matrices) |
//! | `stair.rs` | weight matrices as a staircase |
//! | `figure.rs` | the figure and its layout on the page |
//!
//! The SVG is written here byte by byte rather than through a plotting
//! library's axes and legends: the layout needs the real widths of the
//! shipped font, boxes for every text and mark (to test that nothing
//! leaves the canvas and that legends cover no data), and a physical size
//! in the document, none of which a backend that rounds every position to
//! whole pixels and estimates text widths can give.

mod axes;
mod canvas;
mod figure;
mod font_widths;
mod geometry;
mod legend;
mod page;
mod scale;
mod stair;
mod svg;
mod text;
mod tiles;
mod xy;

pub(crate) use axes::{AxisSpec, Grid};
pub(crate) use canvas::Boxes;
pub(crate) use figure::{render, Arrangement, Figure, Panel};
pub(crate) use geometry::Rect;
pub(crate) use legend::{Entry, Key};
pub(crate) use page::Frame;
pub(crate) use scale::{
    finite_range, format_fixed, format_value, integer_ticks, linear_ticks, log_range, log_ticks,
    nice_range, pad_range,
};
pub(crate) use stair::{Block, StairPanel, DASH_CELL};
pub(crate) use svg::Stroke;
#[cfg(test)]
pub(crate) use tiles::text_colour;
pub(crate) use tiles::{Tile, TilePanel, TEXT_CELL};
pub(crate) use xy::{Mark, XyPanel};
