//! Decision-boundary maps: a classifier's predictions over a grid of two
//! input axes, with the data points on top.

use std::collections::BTreeMap;

use ndarray::{Array2, ArrayView2};

use super::contour::contour_lines;
use super::draw::{
    self, draw_axes, draw_legend, legend_width, linear_ticks, split_legend, Align, Axis, Baseline,
    Canvas, Entry, Font, Grid, Key, Page, Rect, Scale, ScaleKind,
};
use super::scatter;
use super::theme::{self, class_colour, size, Rgb, SUNSET};
use super::{class_names, group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// Stroke colour of the P = 0.5 contour of a two-class map (drawn over a
/// white halo). Tests find the boundary as the `<polyline>` with this
/// `stroke` and `stroke-width="`[`CONTOUR_WIDTH`]`"`.
pub const CONTOUR_STROKE: Rgb = Rgb::hex(0x141414);

/// Stroke width in pixels of the P = 0.5 contour.
pub const CONTOUR_WIDTH: u32 = 2;

/// How far the map's colours are lightened towards white, so that the
/// points on top keep their contrast.
const MAP_LIGHTEN: f64 = 0.4;

/// No-prediction cells (NaN probabilities).
const NO_PREDICTION: Rgb = Rgb::hex(0xD9D9D9);

/// Class-labelled points in two dimensions, with what the axes are.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ClassPoints {
    /// (x, y, class index) per sample; the index points into `class_names`.
    pub points: Vec<(f64, f64, usize)>,
    /// One name per class, in class-index order.
    pub class_names: Vec<String>,
    /// The horizontal axis' column name (shown through [`axis_label`](super::axis_label)).
    pub x_name: String,
    /// The vertical axis' column name.
    pub y_name: String,
}

/// Options for [`decision_map`].
#[derive(Clone, Debug, PartialEq)]
pub struct DecisionMapOptions {
    /// Size, title ("Decision map") and axis labels (default: the column names).
    pub chart: ChartOptions,
    /// Grid cells along each axis, 10 to 400. Default 150 (150 x 150 = 22,500
    /// predictions).
    pub resolution: usize,
    /// The horizontal range to map; default the points' range padded by 5% each side.
    pub x_range: Option<(f64, f64)>,
    /// The vertical range to map; default the points' range padded by 5% each side.
    pub y_range: Option<(f64, f64)>,
    /// Extra notes printed under the chart (e.g. how other features were fixed).
    pub notes: Vec<String>,
}

impl Default for DecisionMapOptions {
    fn default() -> DecisionMapOptions {
        DecisionMapOptions {
            chart: ChartOptions::default(),
            resolution: 150,
            x_range: None,
            y_range: None,
            notes: Vec::new(),
        }
    }
}

/// Draws what a classifier predicts over two input axes, with the data on top.
///
/// `predict` receives every grid-cell centre at once (rows of (x, y) in the
/// plotted axes' coordinates; the caller fixes other features, e.g. at their
/// medians, or maps back from principal components) and returns one row of
/// class probabilities per grid point (columns = classes).
///
/// - **Two classes** (two columns, or one column read as P(class 1)): the
///   cells are coloured by P(class 1) on Tol's diverging "sunset" scale in
///   11 bands (blue: class 0 likely, red: class 1 likely), with the P = 0.5
///   boundary drawn as a dark line ([`CONTOUR_STROKE`], by marching squares)
///   and a colour legend.
/// - **Three or more classes**: each cell takes the colour of its most
///   probable class, lighter the less confident the prediction:
///
///   ```text
///   k = argmax_j p_j,  t = (p_k - 1/K) / (1 - 1/K),  shade = mix(white, colour_k, 0.15 + 0.45 * t)
///   ```
///   (t in four steps).
///
/// Neighbouring cells of equal colour are merged into one rectangle, so the
/// SVG stays small. Points are coloured and shaped by class; above
/// [`MAX_POINTS`](super::MAX_POINTS) every k-th point is drawn (noted).
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when there
/// are fewer than two class names, a point's class index has no name, no
/// range can be found (no finite points and no `x_range`/`y_range`), or the
/// ranges are not finite; [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch)
/// when `predict` returns the wrong number of rows or columns;
/// [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption) for a
/// resolution outside 10 to 400; and any error `predict` returns.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{decision_map, ClassPoints};
/// use stratanet::chart::DecisionMapOptions;
/// use stratanet::ndarray::{Array2, ArrayView2};
///
/// // P(class 1) rises across the line x + y = 1.
/// let predict = |grid: ArrayView2<f64>| -> stratanet::Result<Array2<f64>> {
///     Ok(Array2::from_shape_fn((grid.nrows(), 2), |(i, j)| {
///         let p = 1.0 / (1.0 + (-(grid[[i, 0]] + grid[[i, 1]] - 1.0) * 8.0).exp());
///         if j == 1 { p } else { 1.0 - p }
///     }))
/// };
/// let data = ClassPoints {
///     points: vec![(0.1, 0.2, 0), (0.3, 0.1, 0), (0.9, 0.8, 1), (0.7, 0.9, 1)],
///     class_names: vec!["pass".into(), "fail".into()],
///     x_name: "bore_um".into(),
///     y_name: "roughness_um".into(),
/// };
/// let options = DecisionMapOptions { resolution: 60, ..Default::default() };
/// let chart = decision_map(&predict, &data, &options)?;
/// assert!(chart.as_svg().contains("bore (µm)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn decision_map(
    predict: &dyn Fn(ArrayView2<f64>) -> Result<Array2<f64>>,
    data: &ClassPoints,
    options: &DecisionMapOptions,
) -> Result<Chart> {
    let title = options.chart.check("Decision map")?;
    let what = "decision map";
    let names = class_names(what, &data.class_names)?;
    if names.len() < 2 {
        return Err(Error::input(
            what,
            format!(
                "only one class name (\"{}\"); a decision map needs at least two classes",
                names[0]
            ),
        ));
    }
    let n = options.resolution;
    if !(10..=400).contains(&n) {
        return Err(Error::option(
            "resolution",
            n,
            "must be between 10 and 400 cells per axis",
        ));
    }
    let prepared = scatter::prepare(what, &data.points, names.len())?;
    let x_range = axis_range(
        what,
        "x_range",
        options.x_range,
        prepared.points.iter().map(|p| p.0),
    )?;
    let y_range = axis_range(
        what,
        "y_range",
        options.y_range,
        prepared.points.iter().map(|p| p.1),
    )?;

    // Predict at every cell centre, row j (bottom to top) by column i.
    let cell = |(lo, hi): (f64, f64), i: usize| lo + (i as f64 + 0.5) * (hi - lo) / n as f64;
    let grid = Array2::from_shape_fn((n * n, 2), |(k, c)| {
        if c == 0 {
            cell(x_range, k % n)
        } else {
            cell(y_range, k / n)
        }
    });
    let probabilities = predict(grid.view())?;
    let (rows, columns) = probabilities.dim();
    let two_class = names.len() == 2;
    let expected_columns = if two_class && columns == 1 {
        1
    } else {
        names.len()
    };
    if rows != n * n || columns != expected_columns {
        return Err(Error::shape(
            "decision map: the predictor's output (one row per grid point, one column per class)",
            (n * n, names.len()),
            (rows, columns),
        ));
    }

    // Colour code per cell: two classes, 0..=10 sunset band; several, class * 4 + level.
    const NONE: u16 = u16::MAX;
    let mut codes = vec![NONE; n * n];
    let mut p_one = vec![f64::NAN; n * n];
    let mut missing = 0usize;
    for k in 0..n * n {
        let row = probabilities.row(k);
        if two_class {
            let p = row[row.len() - 1];
            if p.is_finite() {
                let p = p.clamp(0.0, 1.0);
                p_one[k] = p;
                codes[k] = ((p * 11.0).floor() as u16).min(10);
            } else {
                missing += 1;
            }
        } else if row.iter().all(|p| p.is_finite()) {
            let (best, p) = row
                .iter()
                .enumerate()
                .fold(
                    (0, f64::NEG_INFINITY),
                    |acc, (j, &p)| if p > acc.1 { (j, p) } else { acc },
                );
            let classes = names.len() as f64;
            let t = ((p.clamp(0.0, 1.0) - 1.0 / classes) / (1.0 - 1.0 / classes)).clamp(0.0, 1.0);
            codes[k] = (best * 4) as u16 + ((t * 4.0).floor() as u16).min(3);
        } else {
            missing += 1;
        }
    }
    let colour_of = |code: u16| -> Rgb {
        if code == NONE {
            NO_PREDICTION
        } else if two_class {
            SUNSET[code as usize].mix(theme::WHITE, MAP_LIGHTEN)
        } else {
            let level = (code % 4) as f64;
            theme::WHITE.mix(class_colour(code as usize / 4), 0.15 + 0.15 * level)
        }
    };

    let mut notes = prepared.notes.clone();
    notes.extend(options.notes.iter().cloned());
    if let Some(note) = scatter::class_note(&names, &prepared.per_class) {
        notes.push(note);
    }
    if missing > 0 {
        notes.push(format!(
            "{} of {} grid cells had no finite prediction (grey)",
            group_digits(missing),
            group_digits(n * n)
        ));
    }
    if !two_class {
        notes.push(
            "shading: the most probable class; lighter where the model is less sure".to_string(),
        );
    }

    let mut entries = scatter::class_entries(&names, &prepared.per_class);
    let bar_heading = format!("P({})", names[1]);
    if two_class {
        entries.push(Entry::new(
            "P = 0.5 boundary",
            Key::Line {
                colour: CONTOUR_STROKE,
                width: CONTOUR_WIDTH as f64,
                marker: None,
            },
        ));
    }
    let x_label = options.chart.x_label_or(&data.x_name);
    let y_label = options.chart.y_label_or(&data.y_name);
    let x_ticks = linear_ticks(x_range.0, x_range.1, 6);
    let y_ticks = linear_ticks(y_range.0, y_range.1, 6);

    draw::render(
        options.chart.width,
        options.chart.height,
        &title,
        |canvas| {
            let page = Page::new(canvas, &title, notes.clone());
            page.draw(canvas)?;
            let wanted = legend_width(&entries, Some(&bar_heading));
            let (body, legend) = split_legend(page.content, wanted, 0.34);
            let plot = Rect {
                left: body.left + draw::left_gutter(&y_ticks, true),
                top: body.top + 4.0,
                right: body.right - 4.0,
                bottom: body.bottom - draw::bottom_gutter(true),
            };
            let x = Axis {
                scale: Scale::new(ScaleKind::Linear, x_range, (plot.left, plot.right)),
                ticks: x_ticks.clone(),
                label: x_label.clone(),
            };
            let y = Axis {
                scale: Scale::new(ScaleKind::Linear, y_range, (plot.bottom, plot.top)),
                ticks: y_ticks.clone(),
                label: y_label.clone(),
            };
            draw_cells(canvas, plot, n, &codes, &colour_of)?;
            canvas.stroke_rect(plot, theme::AXIS)?;
            draw_axes(canvas, plot, &x, &y, Grid::None)?;
            scatter::draw_points(canvas, &prepared.points, &x.scale, &y.scale)?;
            // The boundary goes over the points, so dense clouds cannot hide it.
            if two_class {
                draw_boundary(canvas, plot, n, &p_one)?;
            }
            let used = draw_legend(
                canvas,
                legend.left,
                plot.top,
                legend.width(),
                legend.height(),
                None,
                &entries,
            )?;
            if two_class {
                draw_colour_bar(
                    canvas,
                    legend.left,
                    plot.top + used + 14.0,
                    &bar_heading,
                    legend.width(),
                )?;
            }
            Ok(())
        },
    )
}

/// The range to map along one axis: the caller's, or the points' padded by 5%.
fn axis_range(
    what: &str,
    name: &str,
    given: Option<(f64, f64)>,
    values: impl Iterator<Item = f64>,
) -> Result<(f64, f64)> {
    match given {
        Some((lo, hi)) if lo.is_finite() && hi.is_finite() && lo < hi => Ok((lo, hi)),
        Some((lo, hi)) => Err(Error::option(
            name,
            format!("({lo}, {hi})"),
            "must be two finite numbers, low < high",
        )),
        None => draw::finite_range(values)
            .map(|r| draw::pad_range(r, 0.05))
            .ok_or_else(|| {
                Error::input(
                    what,
                    format!("no finite points to take the {name} from; pass {name} in the options"),
                )
            }),
    }
}

/// Pixel edge `i` of `n` cells across [start, end], rounded so that
/// neighbouring cells share edges exactly (no seams).
fn edge(start: f64, end: f64, i: usize, n: usize) -> f64 {
    (start + (end - start) * i as f64 / n as f64).round()
}

/// Fills the plot with the cells, merging runs of equal colour along rows
/// and then identical runs of consecutive rows into one rectangle.
fn draw_cells(
    canvas: &Canvas,
    plot: Rect,
    n: usize,
    codes: &[u16],
    colour_of: &dyn Fn(u16) -> Rgb,
) -> Result<()> {
    // A run (first column, last column + 1, code) spans rows (first, last + 1).
    type Run = (usize, usize, u16);
    type Rows = (usize, usize);
    let mut open: BTreeMap<Run, Rows> = BTreeMap::new();
    let mut done: Vec<(Run, Rows)> = Vec::new();
    for j in 0..n {
        let row = &codes[j * n..(j + 1) * n];
        let mut runs = Vec::new();
        let mut start = 0;
        for i in 1..=n {
            if i == n || row[i] != row[start] {
                runs.push((start, i, row[start]));
                start = i;
            }
        }
        let mut next: BTreeMap<Run, Rows> = BTreeMap::new();
        for run in runs {
            let rows = match open.remove(&run) {
                Some((first, _)) => (first, j + 1),
                None => (j, j + 1),
            };
            next.insert(run, rows);
        }
        done.extend(std::mem::take(&mut open));
        open = next;
    }
    done.extend(open);
    // Draw in a fixed order: bottom row first, then left to right.
    done.sort_by_key(|&((i0, _, _), (j0, _))| (j0, i0));
    for ((i0, i1, code), (j0, j1)) in done {
        let rect = Rect {
            left: edge(plot.left, plot.right, i0, n),
            right: edge(plot.left, plot.right, i1, n),
            top: edge(plot.bottom, plot.top, j1, n),
            bottom: edge(plot.bottom, plot.top, j0, n),
        };
        canvas.fill_rect(rect, colour_of(code), 1.0)?;
    }
    Ok(())
}

/// Draws the P = 0.5 level line over a white halo.
fn draw_boundary(canvas: &Canvas, plot: Rect, n: usize, p_one: &[f64]) -> Result<()> {
    let (cw, ch) = (plot.width() / n as f64, plot.height() / n as f64);
    for line in contour_lines(p_one, n, n, 0.5) {
        let points: Vec<(f64, f64)> = line
            .iter()
            .map(|&(gi, gj)| (plot.left + (gi + 0.5) * cw, plot.bottom - (gj + 0.5) * ch))
            .collect();
        canvas.line(&points, theme::WHITE, 0.8, CONTOUR_WIDTH as f64 + 2.0)?;
        canvas.line(&points, CONTOUR_STROKE, 1.0, CONTOUR_WIDTH as f64)?;
    }
    Ok(())
}

/// The colour legend of a two-class map: 11 bands from 1 (top) to 0.
fn draw_colour_bar(canvas: &Canvas, x: f64, y: f64, heading: &str, width: f64) -> Result<()> {
    let font = Font::new(size::LEGEND, theme::INK_SOFT);
    let text = draw::fit_text(heading, size::LEGEND, width);
    canvas.text(&text, x, y, font.bold(), Align::Left, Baseline::Top)?;
    let top = y + size::LEGEND + 8.0;
    let band = 9.0;
    for (b, colour) in SUNSET.iter().enumerate() {
        let rect = Rect {
            left: x + 4.0,
            right: x + 20.0,
            top: top + (10 - b) as f64 * band,
            bottom: top + (11 - b) as f64 * band,
        };
        canvas.fill_rect(rect, colour.mix(theme::WHITE, MAP_LIGHTEN), 1.0)?;
    }
    let whole = Rect {
        left: x + 4.0,
        right: x + 20.0,
        top,
        bottom: top + 11.0 * band,
    };
    canvas.stroke_rect(whole, theme::AXIS)?;
    let tick = Font::new(size::TICK, theme::INK_SOFT);
    for (value, label) in [(1.0, "1"), (0.5, "0.5"), (0.0, "0")] {
        let py = whole.bottom - value * whole.height();
        canvas.line(&[(x + 20.0, py), (x + 24.0, py)], theme::AXIS, 1.0, 1.0)?;
        canvas.text(label, x + 27.0, py, tick, Align::Left, Baseline::Middle)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::testing::{check, distance};
    use super::*;

    fn logistic(z: f64) -> f64 {
        1.0 / (1.0 + (-z).exp())
    }

    /// The exact circle rule: P(class 1) = logistic((r - 1) * 20).
    fn circle(grid: ArrayView2<f64>) -> Result<Array2<f64>> {
        Ok(Array2::from_shape_fn((grid.nrows(), 2), |(i, j)| {
            let r = (grid[[i, 0]].powi(2) + grid[[i, 1]].powi(2)).sqrt();
            let p = logistic((r - 1.0) * 20.0);
            if j == 1 {
                p
            } else {
                1.0 - p
            }
        }))
    }

    /// A deterministic ring-and-disc sample: class 0 inside r = 1, class 1 outside.
    fn ring_points() -> ClassPoints {
        let mut points = Vec::new();
        for k in 0..120 {
            let angle = k as f64 * 2.399963; // golden angle, radians
            let r = if k % 2 == 0 {
                0.25 + 0.6 * ((k * 37 % 100) as f64 / 100.0)
            } else {
                1.2 + 0.6 * ((k * 53 % 100) as f64 / 100.0)
            };
            points.push((r * angle.cos(), r * angle.sin(), k % 2));
        }
        ClassPoints {
            points,
            class_names: vec!["inside".into(), "outside".into()],
            x_name: "bore_um".into(),
            y_name: "temperature_c".into(),
        }
    }

    fn options() -> DecisionMapOptions {
        DecisionMapOptions {
            x_range: Some((-2.0, 2.0)),
            y_range: Some((-2.0, 2.0)),
            ..Default::default()
        }
    }

    #[test]
    fn two_classes_show_the_boundary_and_a_colour_scale() {
        let chart = decision_map(&circle, &ring_points(), &options()).unwrap();
        let r = check(&chart, "decision-two-class-circle");
        assert!(r.has_text("Decision map"));
        assert!(r.has_text("bore (µm)") && r.has_text("temperature (°C)"));
        assert!(r.has_text("inside (60)") && r.has_text("outside (60)"));
        assert!(r.has_text("P(outside)") && r.has_text("P = 0.5 boundary"));
        let stroke = CONTOUR_STROKE.to_svg();
        let width = CONTOUR_WIDTH.to_string();
        // One closed contour in the plot, plus the legend key.
        assert_eq!(
            r.count("polyline", &[("stroke", &stroke), ("stroke-width", &width)]),
            2
        );
        // Points: 60 circles (class 0) and 60 squares (class 1) in the plot, one of each in the legend.
        assert_eq!(r.filled_with(class_colour(0)), 61);
        assert_eq!(r.filled_with(class_colour(1)), 61);
        // Merged cells keep the SVG small: far fewer rectangles than 150 x 150.
        assert!(
            r.count("rect", &[]) < 2_000,
            "{} rects",
            r.count("rect", &[])
        );
    }

    #[test]
    fn the_circle_rule_colours_inside_and_outside_as_expected() {
        // No points, so the map is visible everywhere.
        let data = ClassPoints {
            points: vec![],
            ..ring_points()
        };
        let chart = decision_map(&circle, &data, &options()).unwrap();
        let r = check(&chart, "decision-circle-colours");
        // Recover the plot's pixel geometry from the frame rectangle (the
        // outlined rect with the axis colour).
        let doc = roxmltree::Document::parse(&r.svg).unwrap();
        let frame = doc
            .descendants()
            .find(|n| n.has_tag_name("rect") && n.attribute("fill") == Some("none"))
            .unwrap();
        let num = |a: &str| frame.attribute(a).unwrap().parse::<f64>().unwrap();
        let (left, top, width, height) = (num("x"), num("y"), num("width"), num("height"));
        let at = |x: f64, y: f64| {
            let px = left + (x + 2.0) / 4.0 * width;
            let py = top + (2.0 - y) / 4.0 * height;
            r.pixel(px as u32, py as u32)
        };
        let low = SUNSET[0].mix(theme::WHITE, MAP_LIGHTEN);
        let high = SUNSET[10].mix(theme::WHITE, MAP_LIGHTEN);
        let inside = at(0.1, -0.2);
        let outside = at(1.7, 1.6);
        assert!(
            distance(inside, low) < distance(inside, high),
            "inside {inside:?}"
        );
        assert!(
            distance(outside, high) < distance(outside, low),
            "outside {outside:?}"
        );
        assert_eq!(inside, low);
        assert_eq!(outside, high);
        assert!(r.has_text("no points to show"));
    }

    #[test]
    fn several_classes_colour_regions_by_the_likeliest_class() {
        // Three sectors by angle, softer near the centre.
        let sectors = |grid: ArrayView2<f64>| -> Result<Array2<f64>> {
            Ok(Array2::from_shape_fn((grid.nrows(), 3), |(i, j)| {
                let (x, y) = (grid[[i, 0]], grid[[i, 1]]);
                let r = (x * x + y * y).sqrt();
                let centres = [0.0f64, 2.094, 4.189];
                let angle = y.atan2(x).rem_euclid(std::f64::consts::TAU);
                let scores: Vec<f64> = centres
                    .iter()
                    .map(|c| (angle - c).cos() * r * 3.0)
                    .collect();
                let total: f64 = scores.iter().map(|s| s.exp()).sum();
                scores[j].exp() / total
            }))
        };
        let points: Vec<(f64, f64, usize)> = (0..90)
            .map(|k| {
                let class = k % 3;
                let angle = class as f64 * 2.094 + ((k * 7 % 10) as f64 - 4.5) * 0.08;
                let r = 0.4 + (k * 13 % 15) as f64 / 10.0;
                (r * angle.cos(), r * angle.sin(), class)
            })
            .collect();
        let data = ClassPoints {
            points,
            class_names: vec!["setosa".into(), "versicolor".into(), "virginica".into()],
            x_name: "PC1".into(),
            y_name: "PC2".into(),
        };
        let chart = decision_map(&sectors, &data, &options()).unwrap();
        let r = check(&chart, "decision-three-class");
        assert!(r.has_text("setosa (30)") && r.has_text("virginica (30)"));
        assert!(r.has_text("PC1") && r.has_text("PC2"));
        assert!(!r.has_text("P = 0.5 boundary"));
        // Markers: circles, squares, triangles, 30 each plus the legend.
        for class in 0..3 {
            assert_eq!(r.filled_with(class_colour(class)), 31, "class {class}");
        }
        // Regions: a shade of each class colour somewhere in the map.
        for class in 0..3 {
            let shade = theme::WHITE
                .mix(class_colour(class), 0.15 + 0.15 * 3.0)
                .to_svg();
            assert!(r.count("rect", &[("fill", &shade)]) > 0, "class {class}");
        }
    }

    #[test]
    fn output_is_byte_identical() {
        let a = decision_map(&circle, &ring_points(), &options()).unwrap();
        let b = decision_map(&circle, &ring_points(), &options()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }

    #[test]
    fn bad_input_is_refused_clearly() {
        let one = ClassPoints {
            class_names: vec!["only".into()],
            ..ring_points()
        };
        let err = decision_map(&circle, &one, &options()).unwrap_err();
        assert!(err.to_string().contains("at least two classes"), "{err}");
        let bad_index = ClassPoints {
            points: vec![(0.0, 0.0, 5)],
            ..ring_points()
        };
        let err = decision_map(&circle, &bad_index, &options()).unwrap_err();
        assert!(err.to_string().contains("class index 5"), "{err}");
        let empty = ClassPoints {
            points: vec![],
            ..ring_points()
        };
        let err = decision_map(&circle, &empty, &DecisionMapOptions::default()).unwrap_err();
        assert!(err.to_string().contains("x_range"), "{err}");
        let wrong =
            |grid: ArrayView2<f64>| -> Result<Array2<f64>> { Ok(Array2::zeros((grid.nrows(), 3))) };
        let err = decision_map(&wrong, &ring_points(), &options()).unwrap_err();
        assert!(err.to_string().contains("predictor"), "{err}");
        let failing = |_: ArrayView2<f64>| -> Result<Array2<f64>> {
            Err(Error::input("model", "not trained"))
        };
        let err = decision_map(&failing, &ring_points(), &options()).unwrap_err();
        assert!(err.to_string().contains("not trained"), "{err}");
        let coarse = DecisionMapOptions {
            resolution: 2,
            ..options()
        };
        assert!(decision_map(&circle, &ring_points(), &coarse).is_err());
    }

    #[test]
    fn nan_predictions_and_points_and_one_class_are_noted() {
        let holes = |grid: ArrayView2<f64>| -> Result<Array2<f64>> {
            let mut p = circle(grid)?;
            for i in 0..grid.nrows() {
                if grid[[i, 0]] > 1.5 {
                    p[[i, 1]] = f64::NAN;
                }
            }
            Ok(p)
        };
        let mut data = ring_points();
        data.points.retain(|p| p.2 == 1);
        data.points.push((f64::NAN, 0.0, 1));
        let chart = decision_map(&holes, &data, &options()).unwrap();
        let r = check(&chart, "decision-nan-one-class");
        assert!(
            r.has_text("skipped 1 point with a non-finite coordinate"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("the points hold only one class, \"outside\""));
        assert!(r.has_text_containing("grid cells had no finite prediction"));
    }

    #[test]
    fn many_points_are_thinned_with_a_note() {
        let points: Vec<(f64, f64, usize)> = (0..20_000)
            .map(|k| {
                let a = k as f64 * 0.618;
                let r = (k % 200) as f64 / 100.0;
                (r * a.cos(), r * a.sin(), usize::from(r > 1.0))
            })
            .collect();
        let data = ClassPoints {
            points,
            ..ring_points()
        };
        let small = DecisionMapOptions {
            resolution: 80,
            ..options()
        };
        let chart = decision_map(&circle, &data, &small).unwrap();
        let r = check(&chart, "decision-many-points");
        assert!(
            r.has_text("showing 5,000 of 20,000 points (every 4th)"),
            "{:?}",
            r.texts
        );
    }
}
