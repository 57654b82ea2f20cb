//! Drawing shared by every chart: a canvas over plotters' SVG backend, text,
//! markers, scales and ticks, axes, legends and the page layout (title at the
//! top left, notes at the foot, legend column at the right).
//!
//! All positions are SVG pixels with y growing downwards. plotters' backend
//! takes integer coordinates, so every position is rounded once, here.

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::FontDesc;

use super::theme::{self, size, Marker, Rgb};
use super::Chart;
use crate::{Error, Result};

/// A rectangle in pixels: left, top, right, bottom.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Rect {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl Rect {
    pub fn width(&self) -> f64 {
        self.right - self.left
    }
    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }
    pub fn centre_x(&self) -> f64 {
        (self.left + self.right) / 2.0
    }
    pub fn centre_y(&self) -> f64 {
        (self.top + self.bottom) / 2.0
    }
}

/// Horizontal text anchor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Align {
    Left,
    Centre,
    Right,
}

/// Vertical text anchor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Baseline {
    Top,
    Middle,
    Bottom,
}

/// How a piece of text looks.
#[derive(Clone, Copy, Debug)]
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
}

/// Estimated width of `text` in pixels at `font_size`.
///
/// A generous average advance of 0.6 em per character (DejaVu Sans, the
/// usual "sans-serif", averages about 0.55 em for mixed text and 0.64 em for
/// digits), so that layouts leave room rather than overlap.
pub(crate) fn text_width(text: &str, font_size: f64) -> f64 {
    text.chars().count() as f64 * font_size * 0.6
}

/// Shortens `text` with an ellipsis until its estimated width fits `max`.
pub(crate) fn fit_text(text: &str, font_size: f64, max: f64) -> String {
    if text_width(text, font_size) <= max {
        return text.to_string();
    }
    let keep = ((max / (font_size * 0.6)).floor() as usize).saturating_sub(1);
    let mut out: String = text.chars().take(keep).collect();
    out = out.trim_end().to_string();
    out.push('…');
    out
}

fn px(v: f64) -> i32 {
    if v.is_finite() {
        v.round().clamp(-1e6, 1e6) as i32
    } else {
        0
    }
}

fn drawing_error<E: std::error::Error + Send + Sync>(
    err: plotters::drawing::DrawingAreaErrorKind<E>,
) -> Error {
    Error::input("drawing the chart", err.to_string())
}

/// A drawing surface of known size over an SVG string.
pub(crate) struct Canvas<'a> {
    area: DrawingArea<SVGBackend<'a>, Shift>,
    pub width: f64,
    pub height: f64,
}

/// Draws a chart of `width` x `height` pixels with `draw`, and wraps the SVG.
///
/// The SVG gets a `<title>` element (read by screen readers and shown as a
/// tooltip) right after the opening tag.
pub(crate) fn render(
    width: u32,
    height: u32,
    title: &str,
    draw: impl FnOnce(&Canvas) -> Result<()>,
) -> Result<Chart> {
    let mut svg = String::new();
    {
        let area = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        area.fill(&WHITE).map_err(drawing_error)?;
        let canvas = Canvas {
            area,
            width: width as f64,
            height: height as f64,
        };
        draw(&canvas)?;
        canvas.area.present().map_err(drawing_error)?;
    }
    if let Some(end) = svg.find(">\n") {
        let mut escaped = String::new();
        for c in title.chars() {
            match c {
                '<' => escaped.push_str("&lt;"),
                '>' => escaped.push_str("&gt;"),
                '&' => escaped.push_str("&amp;"),
                other => escaped.push(other),
            }
        }
        svg.insert_str(end + 2, &format!("<title>{escaped}</title>\n"));
    }
    Ok(Chart::from_parts(svg, width, height, title))
}

fn style(colour: Rgb, alpha: f64, stroke_width: f64, filled: bool) -> ShapeStyle {
    ShapeStyle {
        color: colour.plotters().mix(alpha.clamp(0.0, 1.0)),
        filled,
        stroke_width: stroke_width.round().max(1.0) as u32,
    }
}

impl Canvas<'_> {
    /// A filled rectangle.
    pub fn fill_rect(&self, rect: Rect, colour: Rgb, alpha: f64) -> Result<()> {
        let element = Rectangle::new(
            [
                (px(rect.left), px(rect.top)),
                (px(rect.right), px(rect.bottom)),
            ],
            style(colour, alpha, 1.0, true),
        );
        self.area.draw(&element).map_err(drawing_error)
    }

    /// A rectangle's outline, one pixel wide.
    pub fn stroke_rect(&self, rect: Rect, colour: Rgb) -> Result<()> {
        let element = Rectangle::new(
            [
                (px(rect.left), px(rect.top)),
                (px(rect.right), px(rect.bottom)),
            ],
            style(colour, 1.0, 1.0, false),
        );
        self.area.draw(&element).map_err(drawing_error)
    }

    /// An open polyline.
    pub fn line(&self, points: &[(f64, f64)], colour: Rgb, alpha: f64, width: f64) -> Result<()> {
        if points.len() < 2 {
            return Ok(());
        }
        let points: Vec<(i32, i32)> = points.iter().map(|&(x, y)| (px(x), px(y))).collect();
        let element = PathElement::new(points, style(colour, alpha, width, false));
        self.area.draw(&element).map_err(drawing_error)
    }

    /// A straight dashed line made of short segments.
    pub fn dashed_line(
        &self,
        from: (f64, f64),
        to: (f64, f64),
        dash: f64,
        gap: f64,
        colour: Rgb,
        width: f64,
    ) -> Result<()> {
        let length = ((to.0 - from.0).powi(2) + (to.1 - from.1).powi(2)).sqrt();
        if length.is_nan() || length <= 0.0 {
            return Ok(());
        }
        let (dx, dy) = ((to.0 - from.0) / length, (to.1 - from.1) / length);
        let mut s = 0.0;
        while s < length {
            let e = (s + dash).min(length);
            self.line(
                &[
                    (from.0 + dx * s, from.1 + dy * s),
                    (from.0 + dx * e, from.1 + dy * e),
                ],
                colour,
                1.0,
                width,
            )?;
            s += dash + gap;
        }
        Ok(())
    }

    /// A filled polygon.
    pub fn polygon(&self, points: &[(f64, f64)], colour: Rgb, alpha: f64) -> Result<()> {
        let points: Vec<(i32, i32)> = points.iter().map(|&(x, y)| (px(x), px(y))).collect();
        let element = Polygon::new(points, style(colour, alpha, 1.0, true));
        self.area.draw(&element).map_err(drawing_error)
    }

    /// A filled circle.
    pub fn circle(&self, x: f64, y: f64, r: f64, colour: Rgb, alpha: f64) -> Result<()> {
        let element = Circle::new(
            (px(x), px(y)),
            px(r).max(1),
            style(colour, alpha, 1.0, true),
        );
        self.area.draw(&element).map_err(drawing_error)
    }

    /// A circle's outline.
    pub fn ring(&self, x: f64, y: f64, r: f64, colour: Rgb, alpha: f64, width: f64) -> Result<()> {
        let element = Circle::new(
            (px(x), px(y)),
            px(r).max(1),
            style(colour, alpha, width, false),
        );
        self.area.draw(&element).map_err(drawing_error)
    }

    /// A marker filled with `fill` and outlined with `outline`, centred on (x, y).
    pub fn marker(
        &self,
        shape: Marker,
        x: f64,
        y: f64,
        r: f64,
        fill: Rgb,
        outline: Option<Rgb>,
    ) -> Result<()> {
        match shape.polygon(x, y, r) {
            None => {
                self.circle(x, y, r, fill, 1.0)?;
                if let Some(outline) = outline {
                    self.ring(x, y, r, outline, 1.0, 1.0)?;
                }
            }
            Some(points) => {
                self.polygon(&points, fill, 1.0)?;
                if let Some(outline) = outline {
                    let mut closed = points.clone();
                    closed.push(points[0]);
                    self.line(&closed, outline, 1.0, 1.0)?;
                }
            }
        }
        Ok(())
    }

    /// Text anchored at (x, y).
    pub fn text(
        &self,
        text: &str,
        x: f64,
        y: f64,
        font: Font,
        align: Align,
        baseline: Baseline,
    ) -> Result<()> {
        self.text_turned(text, x, y, font, align, baseline, false)
    }

    /// Text turned a quarter turn anticlockwise (reading upwards) when `turned`.
    #[allow(clippy::too_many_arguments)]
    pub fn text_turned(
        &self,
        text: &str,
        x: f64,
        y: f64,
        font: Font,
        align: Align,
        baseline: Baseline,
        turned: bool,
    ) -> Result<()> {
        if text.is_empty() {
            return Ok(());
        }
        // plotters writes font-size = size / 1.24 into the SVG.
        let weight = if font.bold {
            FontStyle::Bold
        } else {
            FontStyle::Normal
        };
        let mut desc = FontDesc::new(FontFamily::SansSerif, font.size * 1.24, weight);
        if turned {
            desc = desc.transform(FontTransform::Rotate270);
        }
        let h = match align {
            Align::Left => HPos::Left,
            Align::Centre => HPos::Center,
            Align::Right => HPos::Right,
        };
        let v = match baseline {
            Baseline::Top => VPos::Top,
            Baseline::Middle => VPos::Center,
            Baseline::Bottom => VPos::Bottom,
        };
        let style = TextStyle {
            font: desc,
            color: font.colour.plotters().to_backend_color(),
            pos: Pos::new(h, v),
        };
        let element = Text::new(text.to_string(), (px(x), px(y)), style);
        self.area.draw(&element).map_err(drawing_error)
    }
}

/// How values map to positions along an axis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum ScaleKind {
    Linear,
    Log10,
}

/// A map from data values in [lo, hi] to pixels in [start, end].
#[derive(Clone, Copy, Debug)]
pub(crate) struct Scale {
    pub kind: ScaleKind,
    pub lo: f64,
    pub hi: f64,
    pub start: f64,
    pub end: f64,
}

impl Scale {
    pub fn new(kind: ScaleKind, (lo, hi): (f64, f64), (start, end): (f64, f64)) -> Scale {
        Scale {
            kind,
            lo,
            hi,
            start,
            end,
        }
    }

    /// The fraction of the way from lo to hi.
    pub fn fraction(&self, v: f64) -> f64 {
        match self.kind {
            ScaleKind::Linear => (v - self.lo) / (self.hi - self.lo),
            ScaleKind::Log10 => (v.log10() - self.lo.log10()) / (self.hi.log10() - self.lo.log10()),
        }
    }

    pub fn map(&self, v: f64) -> f64 {
        self.start + self.fraction(v) * (self.end - self.start)
    }
}

/// A tick: its value and label.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Tick {
    pub value: f64,
    pub label: String,
}

/// Widens a degenerate or reversed range so that it can be drawn.
pub(crate) fn usable_range(lo: f64, hi: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if hi - lo > 1e-12 * lo.abs().max(hi.abs()).max(1e-300) {
        (lo, hi)
    } else {
        let pad = if lo == 0.0 { 0.5 } else { lo.abs() * 0.1 };
        (lo - pad, hi + pad)
    }
}

/// A step of 1, 2 or 5 times a power of ten, near `range / target`.
fn nice_step(range: f64, target: usize) -> f64 {
    let raw = range / target.max(1) as f64;
    let magnitude = 10f64.powf(raw.log10().floor());
    let norm = raw / magnitude;
    let nice = if norm < 1.5 {
        1.0
    } else if norm < 3.0 {
        2.0
    } else if norm < 7.0 {
        5.0
    } else {
        10.0
    };
    nice * magnitude
}

/// Expands [lo, hi] outwards to multiples of a nice step (about `target`
/// intervals).
pub(crate) fn nice_range(lo: f64, hi: f64, target: usize) -> (f64, f64) {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target);
    (
        (lo / step - 1e-9).floor() * step,
        (hi / step + 1e-9).ceil() * step,
    )
}

/// Linear ticks at multiples of a 1-2-5 step inside [lo, hi], about `target` of them.
///
/// Labels use as many decimals as the step needs, so one axis never mixes
/// "0.5" with "1.25".
pub(crate) fn linear_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target);
    let decimals = (-(step.log10() + 1e-9).floor()).max(0.0) as usize;
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    (first..=last)
        .take(100)
        .map(|k| {
            let value = k as f64 * step;
            Tick {
                value,
                label: format_fixed(value, decimals),
            }
        })
        .collect()
}

/// A log-axis range around [lo, hi] (both > 0) ending on 1, 2 or 5 times a
/// power of ten.
pub(crate) fn log_range(lo: f64, hi: f64) -> (f64, f64) {
    let below = |v: f64| {
        let e = v.log10().floor();
        let base = 10f64.powf(e);
        let m = [5.0, 2.0, 1.0]
            .into_iter()
            .find(|m| m * base <= v * (1.0 + 1e-9))
            .unwrap_or(1.0);
        m * base
    };
    let above = |v: f64| {
        let e = v.log10().floor();
        let base = 10f64.powf(e);
        let m = [1.0, 2.0, 5.0, 10.0]
            .into_iter()
            .find(|m| m * base >= v * (1.0 - 1e-9))
            .unwrap_or(10.0);
        m * base
    };
    let (lo, hi) = (below(lo), above(hi));
    if hi > lo {
        (lo, hi)
    } else {
        (lo, lo * 10.0)
    }
}

/// Ticks at whole numbers (a 1-2-5 step of at least 1) inside [lo, hi].
pub(crate) fn integer_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target).max(1.0);
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    (first..=last)
        .take(100)
        .map(|k| {
            let value = k as f64 * step;
            Tick {
                value,
                label: format_fixed(value, 0),
            }
        })
        .collect()
}

/// Ticks at powers of ten (and at 2 and 5 times them when the range spans
/// two decades or fewer; at every other power when it spans more than eight).
pub(crate) fn log_ticks(lo: f64, hi: f64) -> Vec<Tick> {
    let first = lo.log10().floor() as i32;
    let last = hi.log10().ceil() as i32;
    let decades = last - first;
    let multiples: &[f64] = if decades <= 2 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let every = if decades > 8 { 2 } else { 1 };
    let mut ticks = Vec::new();
    for e in first..=last {
        if (e - first) % every != 0 {
            continue;
        }
        for &m in multiples {
            let value = m * 10f64.powi(e);
            if value >= lo * (1.0 - 1e-9) && value <= hi * (1.0 + 1e-9) {
                ticks.push(Tick {
                    value,
                    label: format_power(m, e),
                });
            }
        }
    }
    ticks
}

fn format_power(m: f64, e: i32) -> String {
    if (-4..=4).contains(&e) {
        let value = m * 10f64.powi(e);
        format_fixed(value, (-e).max(0) as usize)
    } else if m == 1.0 {
        format!("1e{e}")
    } else {
        format!("{m}e{e}")
    }
}

/// `value` with `decimals` decimals, never "-0", digits grouped above 9,999
/// and exponent form for huge values.
pub(crate) fn format_fixed(value: f64, decimals: usize) -> String {
    if value.abs() >= 1e9 {
        return format!("{value:.2e}");
    }
    let mut text = format!("{value:.decimals$}");
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text = text.trim_start_matches('-').to_string();
    }
    if decimals == 0 && value.abs() >= 10_000.0 {
        let negative = text.starts_with('-');
        let digits: usize = text.trim_start_matches('-').parse().unwrap_or(0);
        text = super::group_digits(digits);
        if negative {
            text.insert(0, '-');
        }
    }
    text
}

/// A short, fixed-width-ish rendering of any number: 3 significant digits.
pub(crate) fn format_value(value: f64) -> String {
    if !value.is_finite() {
        return "n/a".to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs().log10().floor() as i32;
    if !(-4..6).contains(&magnitude) {
        return format!("{value:.2e}");
    }
    let decimals = (2 - magnitude).max(0) as usize;
    format_fixed(value, decimals)
}

/// One axis to draw: its scale, ticks and label.
pub(crate) struct Axis {
    pub scale: Scale,
    pub ticks: Vec<Tick>,
    pub label: String,
}

/// Which grid lines to draw inside the plot.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Grid {
    None,
    Horizontal,
    Both,
}

/// The width the tick labels of a vertical axis need.
pub(crate) fn tick_label_width(ticks: &[Tick]) -> f64 {
    ticks
        .iter()
        .map(|t| text_width(&t.label, size::TICK))
        .fold(0.0, f64::max)
}

/// Space to keep left of the plot for a vertical axis with these ticks and a label.
pub(crate) fn left_gutter(ticks: &[Tick], has_label: bool) -> f64 {
    tick_label_width(ticks) + 10.0 + if has_label { size::LABEL + 10.0 } else { 0.0 }
}

/// Space to keep below the plot for a horizontal axis with tick labels and a label.
pub(crate) fn bottom_gutter(has_label: bool) -> f64 {
    size::TICK + 10.0 + if has_label { size::LABEL + 10.0 } else { 0.0 }
}

/// Draws grid lines, the left and bottom axis lines, ticks, tick labels
/// and axis labels around `plot`.
pub(crate) fn draw_axes(canvas: &Canvas, plot: Rect, x: &Axis, y: &Axis, grid: Grid) -> Result<()> {
    let tick_font = Font::new(size::TICK, theme::INK_SOFT);
    let label_font = Font::new(size::LABEL, theme::INK);
    if grid != Grid::None {
        for tick in &y.ticks {
            let py = y.scale.map(tick.value);
            if (py - plot.bottom).abs() > 0.5 {
                canvas.line(&[(plot.left, py), (plot.right, py)], theme::GRID, 1.0, 1.0)?;
            }
        }
    }
    if grid == Grid::Both {
        for tick in &x.ticks {
            let px = x.scale.map(tick.value);
            if (px - plot.left).abs() > 0.5 {
                canvas.line(&[(px, plot.top), (px, plot.bottom)], theme::GRID, 1.0, 1.0)?;
            }
        }
    }
    canvas.line(
        &[
            (plot.left, plot.top),
            (plot.left, plot.bottom),
            (plot.right, plot.bottom),
        ],
        theme::AXIS,
        1.0,
        1.0,
    )?;
    // Horizontal tick labels: skip any that would touch the previous one.
    let mut last_right = f64::NEG_INFINITY;
    for tick in &x.ticks {
        let px = x.scale.map(tick.value);
        canvas.line(
            &[(px, plot.bottom), (px, plot.bottom + 4.0)],
            theme::AXIS,
            1.0,
            1.0,
        )?;
        let half = text_width(&tick.label, size::TICK) / 2.0;
        if px - half > last_right + 6.0 {
            canvas.text(
                &tick.label,
                px,
                plot.bottom + 7.0,
                tick_font,
                Align::Centre,
                Baseline::Top,
            )?;
            last_right = px + half;
        }
    }
    // Vertical tick labels: skip any closer than a line to the previous one.
    let mut last_y = f64::NAN;
    for tick in &y.ticks {
        let py = y.scale.map(tick.value);
        canvas.line(
            &[(plot.left - 4.0, py), (plot.left, py)],
            theme::AXIS,
            1.0,
            1.0,
        )?;
        if last_y.is_nan() || (py - last_y).abs() >= size::TICK + 2.0 {
            canvas.text(
                &tick.label,
                plot.left - 7.0,
                py,
                tick_font,
                Align::Right,
                Baseline::Middle,
            )?;
            last_y = py;
        }
    }
    if !x.label.is_empty() {
        let text = fit_text(&x.label, size::LABEL, plot.width());
        canvas.text(
            &text,
            plot.centre_x(),
            plot.bottom + size::TICK + 16.0,
            label_font,
            Align::Centre,
            Baseline::Top,
        )?;
    }
    if !y.label.is_empty() {
        let text = fit_text(&y.label, size::LABEL, plot.height());
        let gx = plot.left - tick_label_width(&y.ticks) - 12.0;
        canvas.text_turned(
            &text,
            gx,
            plot.centre_y(),
            label_font,
            Align::Centre,
            Baseline::Bottom,
            true,
        )?;
    }
    Ok(())
}

/// What a legend entry shows before its label.
#[derive(Clone, Debug)]
pub(crate) enum Key {
    /// A line sample, optionally with a marker on it.
    Line {
        colour: Rgb,
        width: f64,
        marker: Option<Marker>,
    },
    /// A dashed line sample.
    Dashed { colour: Rgb },
    /// A marker alone.
    Marker { shape: Marker, colour: Rgb },
}

/// One legend line.
#[derive(Clone, Debug)]
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

/// Height of one legend line.
pub(crate) const LEGEND_LINE: f64 = 20.0;
/// Width of the key in front of a legend label, including its gap.
const KEY_WIDTH: f64 = 30.0;

/// The width a legend column needs (before clamping).
pub(crate) fn legend_width(entries: &[Entry], heading: Option<&str>) -> f64 {
    let labels = entries
        .iter()
        .map(|e| KEY_WIDTH + text_width(&e.label, size::LEGEND))
        .fold(0.0, f64::max);
    let heading = heading.map_or(0.0, |h| text_width(h, size::LEGEND));
    // A little slack so that a label measured here is never shortened later.
    labels.max(heading) + 2.0
}

/// Draws a legend column at (x, y) no wider than `width` and no taller than
/// `max_height`; entries that do not fit become a "+N more" line. Returns
/// the height used.
pub(crate) fn draw_legend(
    canvas: &Canvas,
    x: f64,
    y: f64,
    width: f64,
    max_height: f64,
    heading: Option<&str>,
    entries: &[Entry],
) -> Result<f64> {
    let font = Font::new(size::LEGEND, theme::INK_SOFT);
    let mut cy = y + LEGEND_LINE / 2.0;
    if let Some(heading) = heading {
        let text = fit_text(heading, size::LEGEND, width);
        canvas.text(&text, x, cy, font.bold(), Align::Left, Baseline::Middle)?;
        cy += LEGEND_LINE;
    }
    let fits = ((max_height - (cy - y) + LEGEND_LINE / 2.0) / LEGEND_LINE)
        .floor()
        .max(0.0) as usize;
    let shown = if entries.len() > fits {
        fits.saturating_sub(1)
    } else {
        entries.len()
    };
    for entry in &entries[..shown] {
        match entry.key {
            Key::Line {
                colour,
                width: line_width,
                marker,
            } => {
                canvas.line(&[(x, cy), (x + 22.0, cy)], colour, 1.0, line_width)?;
                if let Some(shape) = marker {
                    canvas.marker(
                        shape,
                        x + 11.0,
                        cy,
                        size::MARKER - 0.5,
                        colour,
                        Some(theme::WHITE),
                    )?;
                }
            }
            Key::Dashed { colour } => {
                canvas.dashed_line((x, cy), (x + 22.0, cy), 4.0, 3.0, colour, 1.0)?;
            }
            Key::Marker { shape, colour } => {
                canvas.marker(
                    shape,
                    x + 11.0,
                    cy,
                    size::MARKER,
                    colour,
                    Some(theme::OUTLINE),
                )?;
            }
        }
        let text = fit_text(&entry.label, size::LEGEND, width - KEY_WIDTH);
        canvas.text(
            &text,
            x + KEY_WIDTH,
            cy,
            font,
            Align::Left,
            Baseline::Middle,
        )?;
        cy += LEGEND_LINE;
    }
    if shown < entries.len() {
        let more = format!("+{} more", entries.len() - shown);
        canvas.text(
            &more,
            x + KEY_WIDTH,
            cy,
            Font::new(size::LEGEND, theme::INK_MUTED),
            Align::Left,
            Baseline::Middle,
        )?;
        cy += LEGEND_LINE;
    }
    Ok(cy - LEGEND_LINE / 2.0 - y)
}

/// The page: title at the top left, notes at the foot, and the content
/// rectangle between them.
pub(crate) struct Page {
    pub content: Rect,
    title: String,
    notes: Vec<String>,
}

impl Page {
    /// Lays out a page of the canvas' size.
    pub fn new(canvas: &Canvas, title: &str, notes: Vec<String>) -> Page {
        Page::sized(canvas.width, canvas.height, title, notes)
    }

    /// Lays out a page of `width` x `height` pixels.
    pub fn sized(width: f64, height: f64, title: &str, notes: Vec<String>) -> Page {
        let m = size::MARGIN;
        let notes_height = notes.len() as f64 * (size::NOTE + 5.0);
        Page {
            content: Rect {
                left: m,
                top: m + size::TITLE + 14.0,
                right: width - m,
                bottom: height - m - notes_height - if notes.is_empty() { 0.0 } else { 4.0 },
            },
            title: title.to_string(),
            notes,
        }
    }

    /// Draws the title and notes.
    pub fn draw(&self, canvas: &Canvas) -> Result<()> {
        let m = size::MARGIN;
        let title = fit_text(&self.title, size::TITLE, canvas.width - 2.0 * m);
        canvas.text(
            &title,
            m,
            m,
            Font::new(size::TITLE, theme::INK).bold(),
            Align::Left,
            Baseline::Top,
        )?;
        let note_font = Font::new(size::NOTE, theme::INK_MUTED);
        let mut y = canvas.height - m - (self.notes.len() as f64 - 1.0) * (size::NOTE + 5.0);
        for note in &self.notes {
            let text = fit_text(note, size::NOTE, canvas.width - 2.0 * m);
            canvas.text(&text, m, y, note_font, Align::Left, Baseline::Bottom)?;
            y += size::NOTE + 5.0;
        }
        Ok(())
    }
}

/// Splits a legend column off the right of `content`, at most `max_share` of
/// its width. Returns (rest, legend column).
pub(crate) fn split_legend(content: Rect, wanted: f64, max_share: f64) -> (Rect, Rect) {
    let width = wanted.min(content.width() * max_share).max(0.0);
    let gap = if width > 0.0 { 18.0 } else { 0.0 };
    (
        Rect {
            right: content.right - width - gap,
            ..content
        },
        Rect {
            left: content.right - width,
            ..content
        },
    )
}

/// Finite values only, with the count of those dropped.
pub(crate) fn finite_range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let mut range: Option<(f64, f64)> = None;
    for v in values.filter(|v| v.is_finite()) {
        range = Some(match range {
            None => (v, v),
            Some((lo, hi)) => (lo.min(v), hi.max(v)),
        });
    }
    range
}

/// Pads a range by `share` of its width on both sides.
pub(crate) fn pad_range((lo, hi): (f64, f64), share: f64) -> (f64, f64) {
    let (lo, hi) = usable_range(lo, hi);
    let pad = (hi - lo) * share;
    (lo - pad, hi + pad)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_ticks_are_round() {
        let labels: Vec<String> = linear_ticks(0.0, 1.0, 5)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
        let labels: Vec<String> = linear_ticks(1.0, 300.0, 6)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["50", "100", "150", "200", "250", "300"]);
        let labels: Vec<String> = linear_ticks(-0.3, 0.3, 6)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["-0.3", "-0.2", "-0.1", "0.0", "0.1", "0.2", "0.3"]);
        assert!(!linear_ticks(5.0, 5.0, 5).is_empty());
        assert!(!linear_ticks(f64::NAN, 1.0, 5).is_empty());
    }

    #[test]
    fn log_ranges_end_on_round_values() {
        assert_eq!(log_range(0.09, 0.9), (0.05, 1.0));
        assert_eq!(log_range(0.3, 0.45), (0.2, 0.5));
        assert_eq!(log_range(1.0, 1.0), (1.0, 10.0));
    }

    #[test]
    fn log_ticks_are_powers() {
        let labels: Vec<String> = log_ticks(0.001, 10.0)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["0.001", "0.01", "0.1", "1", "10"]);
        let labels: Vec<String> = log_ticks(0.2, 3.0).into_iter().map(|t| t.label).collect();
        assert_eq!(labels, ["0.2", "0.5", "1", "2"]);
        let labels: Vec<String> = log_ticks(1e-7, 1.0).into_iter().map(|t| t.label).collect();
        assert_eq!(
            labels,
            ["1e-7", "1e-6", "1e-5", "0.0001", "0.001", "0.01", "0.1", "1"]
        );
    }

    #[test]
    fn numbers_format_plainly() {
        assert_eq!(format_fixed(-0.0001, 2), "0.00");
        assert_eq!(format_fixed(25_000.0, 0), "25,000");
        assert_eq!(format_value(0.91234), "0.912");
        assert_eq!(format_value(12.345), "12.3");
        assert_eq!(format_value(f64::NAN), "n/a");
    }

    #[test]
    fn text_is_fitted() {
        assert_eq!(fit_text("short", 12.0, 200.0), "short");
        let fitted = fit_text("a rather long legend label indeed", 12.0, 80.0);
        assert!(
            fitted.ends_with('…') && text_width(&fitted, 12.0) <= 80.0,
            "{fitted}"
        );
    }

    #[test]
    fn scales_map_both_ways() {
        let s = Scale::new(ScaleKind::Log10, (0.01, 1.0), (100.0, 0.0));
        assert!((s.map(0.1) - 50.0).abs() < 1e-9);
        let s = Scale::new(ScaleKind::Linear, (0.0, 10.0), (0.0, 200.0));
        assert!((s.map(2.5) - 50.0).abs() < 1e-9);
    }
}
