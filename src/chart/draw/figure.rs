//! A figure: what a chart kind's preparing step hands to the drawing step.
//! It holds everything that will be drawn, in data terms (title, subtitle,
//! legend, notes, panels of marks), so a test can check what a chart will
//! show without reading SVG; [`render`] lays it out on a page and draws it.

use super::canvas::Canvas;
use super::geometry::Rect;
use super::legend::{draw_legend, legend_height, widest_entry};
use super::page::{Frame, Page};
use super::stair::StairPanel;
use super::tiles::TilePanel;
use super::xy::{Gutters, XyPanel};
use crate::chart::{Chart, ChartOptions};
use crate::error::Result;

/// One panel of a figure.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Panel {
    Xy(XyPanel),
    Tiles(TilePanel),
    Stair(StairPanel),
}

/// How several panels share the body.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Arrangement {
    /// Side by side, widths in these proportions; plots share top and bottom edges.
    Row(Vec<f64>),
    /// Stacked, natural heights in these proportions (when the chart's
    /// height is given); plots share left and right edges.
    Column(Vec<f64>),
}

/// Everything a chart will draw.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Figure {
    pub frame: Frame,
    pub panels: Vec<Panel>,
    pub arrangement: Arrangement,
}

const PANEL_GAP: f64 = 18.0;

impl Figure {
    /// One panel filling the body.
    pub fn single(frame: Frame, panel: Panel) -> Figure {
        Figure {
            frame,
            panels: vec![panel],
            arrangement: Arrangement::Row(vec![1.0]),
        }
    }

    /// The xy panels, for tests.
    #[cfg(test)]
    pub fn xy(&self, i: usize) -> &XyPanel {
        match &self.panels[i] {
            Panel::Xy(p) => p,
            other => panic!("panel {i} is not an xy panel: {other:?}"),
        }
    }

    /// The areas of the panels in `body`.
    fn areas(&self, body: Rect, heights: Option<&[f64]>) -> Vec<Rect> {
        let n = self.panels.len();
        match &self.arrangement {
            Arrangement::Row(weights) => {
                let total: f64 = weights.iter().take(n).sum::<f64>().max(f64::MIN_POSITIVE);
                let free = body.width() - PANEL_GAP * (n as f64 - 1.0);
                let mut x = body.left;
                (0..n)
                    .map(|i| {
                        let w = free * weights.get(i).copied().unwrap_or(1.0) / total;
                        let r = Rect::new(x, body.top, x + w, body.bottom);
                        x += w + PANEL_GAP;
                        r
                    })
                    .collect()
            }
            Arrangement::Column(weights) => {
                let shares: Vec<f64> = match heights {
                    Some(h) => h.to_vec(),
                    None => (0..n)
                        .map(|i| weights.get(i).copied().unwrap_or(1.0))
                        .collect(),
                };
                let total: f64 = shares.iter().sum::<f64>().max(f64::MIN_POSITIVE);
                let free = body.height() - PANEL_GAP * (n as f64 - 1.0);
                let mut y = body.top;
                shares
                    .iter()
                    .map(|s| {
                        let h = free * s / total;
                        let r = Rect::new(body.left, y, body.right, y + h);
                        y += h + PANEL_GAP;
                        r
                    })
                    .collect()
            }
        }
    }

    /// Gutters of the xy panels, harmonised so that side-by-side plots
    /// share top and bottom edges and stacked plots their left and right.
    fn gutters(&self, areas: &[Rect]) -> Vec<Option<Gutters>> {
        let mut g: Vec<Option<Gutters>> = self
            .panels
            .iter()
            .zip(areas)
            .map(|(p, a)| match p {
                Panel::Xy(x) => Some(x.gutters(a.width())),
                _ => None,
            })
            .collect();
        let all: Vec<Gutters> = g.iter().flatten().copied().collect();
        if all.len() > 1 {
            let max = |f: fn(&Gutters) -> f64| all.iter().map(f).fold(0.0, f64::max);
            let (top, bottom, left, right) = (
                max(|g| g.top),
                max(|g| g.bottom),
                max(|g| g.left),
                max(|g| g.right),
            );
            for gutters in g.iter_mut().flatten() {
                match self.arrangement {
                    Arrangement::Row(_) => {
                        gutters.top = top;
                        gutters.bottom = bottom;
                    }
                    Arrangement::Column(_) => {
                        gutters.left = left;
                        gutters.right = right;
                    }
                }
            }
        }
        g
    }

    /// Natural heights of the panels for a body `width` wide.
    fn natural_heights(&self, width: f64) -> Vec<f64> {
        let body = Rect::new(0.0, 0.0, width, 1000.0);
        let areas = self.areas(body, None);
        let gutters = self.gutters(&areas);
        self.panels
            .iter()
            .zip(&areas)
            .zip(&gutters)
            .map(|((p, a), g)| match (p, g) {
                (Panel::Xy(x), Some(g)) => x.natural_height(a.width(), *g),
                (Panel::Tiles(t), _) => t.natural_height(a.width()),
                (Panel::Stair(s), _) => s.natural_height(a.width()),
                (Panel::Xy(x), None) => x.natural_height(a.width(), x.gutters(a.width())),
            })
            .collect()
    }

    /// The body height the figure wants when `width` wide.
    fn natural_body(&self, width: f64) -> (f64, Vec<f64>) {
        let heights = self.natural_heights(width);
        let gaps = PANEL_GAP * (heights.len() as f64 - 1.0);
        let body = match self.arrangement {
            Arrangement::Row(_) => heights.iter().copied().fold(0.0, f64::max),
            Arrangement::Column(_) => heights.iter().sum::<f64>() + gaps,
        };
        (body, heights)
    }
}

/// When a single panel of fixed proportions (a square plot, a grid of
/// tiles) leaves room beside it for the legend as a column, the panel's
/// width; the legend then goes there instead of above, so the canvas is
/// used rather than left blank at the sides.
fn legend_beside(figure: &Figure, inner: f64) -> Option<f64> {
    if figure.panels.len() != 1 || figure.frame.legend.is_empty() {
        return None;
    }
    let used = match &figure.panels[0] {
        Panel::Xy(p) => p.natural_width(inner)?,
        Panel::Tiles(t) => t.natural_width(inner),
        Panel::Stair(s) => s.natural_width(inner),
    };
    let needed = widest_entry(&figure.frame.legend);
    (inner - used >= needed + BESIDE_GAP).then_some(used)
}

/// The gap between a panel and a legend beside it.
const BESIDE_GAP: f64 = 24.0;

/// Lays the figure out on a page of the options' size (its natural height
/// when none is given) and draws it.
pub(crate) fn render(figure: &Figure, options: &ChartOptions) -> Result<Chart> {
    options.check_size()?;
    let width = options.width as f64;
    let inner = width - 2.0 * crate::chart::theme::size::MARGIN;
    let beside = legend_beside(figure, inner);
    let top_frame = match beside {
        Some(_) => Frame {
            legend: Vec::new(),
            ..figure.frame.clone()
        },
        None => figure.frame.clone(),
    };
    let (mut natural, heights) = figure.natural_body(inner);
    if let Some(used) = beside {
        let column = inner - used - BESIDE_GAP;
        natural = natural.max(legend_height(&figure.frame.legend, column) + 8.0);
    }
    let height = match options.height {
        Some(h) => h as f64,
        None => (Page::chrome_height(&top_frame, width) + natural)
            .ceil()
            .clamp(160.0, 4096.0),
    };
    let mut page = Page::lay_out(&top_frame, width, height);
    let mut canvas = Canvas::new(width, height);
    page.draw(&mut canvas, &top_frame);
    if let Some(used) = beside {
        let body = page.body;
        let left = body.left + used + BESIDE_GAP;
        let column = body.right - left;
        let area = Rect::new(
            left,
            body.top + 6.0,
            body.right,
            body.top + 6.0 + legend_height(&figure.frame.legend, column),
        );
        draw_legend(&mut canvas, area, &figure.frame.legend);
        page.body = Rect::new(body.left, body.top, body.left + used, body.bottom);
    }
    let column_heights = match (&figure.arrangement, options.height) {
        (Arrangement::Column(_), None) => Some(heights.as_slice()),
        _ => None,
    };
    let areas = figure.areas(page.body, column_heights);
    let gutters = figure.gutters(&areas);
    for ((panel, area), g) in figure.panels.iter().zip(&areas).zip(&gutters) {
        match (panel, g) {
            (Panel::Xy(p), Some(g)) => p.draw(&mut canvas, *area, *g),
            (Panel::Xy(p), None) => p.draw(&mut canvas, *area, p.gutters(area.width())),
            (Panel::Tiles(t), _) => t.draw(&mut canvas, *area),
            (Panel::Stair(s), _) => s.draw(&mut canvas, *area),
        }
    }
    let (svg, boxes) = canvas.finish(&figure.frame.title);
    Ok(Chart::from_parts(
        svg,
        options.width,
        height as u32,
        &figure.frame.title,
        boxes,
    ))
}
