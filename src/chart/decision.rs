//! Decision maps: a classifier's predictions over a grid of two input
//! axes, with the data points on top.

use std::collections::BTreeMap;

use ndarray::{Array2, ArrayView2};

use super::contour::contour_lines;
use super::draw::{
    finite_range, linear_ticks, pad_range, render, AxisSpec, Entry, Figure, Grid, Key, Mark, Panel,
    Stroke, XyPanel,
};
use super::scatter;
use super::theme::{self, class_colour, Rgb, SUNSET};
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

/// Options for [`decision_map`] and
/// [`Model::decision_map_chart_with`](crate::Model::decision_map_chart_with).
#[derive(Clone, Debug, PartialEq)]
pub struct DecisionMapOptions {
    /// Size, headings and axis labels (default: the column names).
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
    /// For maps of a model: the values the inputs not mapped are held at,
    /// by source column name: a level of a text column (`("spindle",
    /// "north")`) or a number (`("roughness_ra_um", "0.8")`). Columns not
    /// listed are held at their most frequent level (text) or their median
    /// (numbers) in the rows given; the subtitle says which.
    pub hold: Vec<(String, String)>,
}

impl Default for DecisionMapOptions {
    fn default() -> DecisionMapOptions {
        DecisionMapOptions {
            chart: ChartOptions::default(),
            resolution: 150,
            x_range: None,
            y_range: None,
            notes: Vec::new(),
            hold: Vec::new(),
        }
    }
}

/// Draws what a classifier predicts over two input axes, with the data on top.
///
/// `predict` receives every grid-cell centre at once (rows of (x, y) in the
/// plotted axes' coordinates; the caller fixes the other inputs) and
/// returns one row of class probabilities per grid point (columns =
/// classes).
///
/// - **Two classes** (two columns, or one column read as P(class 1)): the
///   cells are coloured by P(class 1) on Tol's diverging "sunset" scale in
///   11 bands (blue: class 0 likely, red: class 1 likely), with the P = 0.5
///   boundary drawn as a dark line ([`CONTOUR_STROKE`], by marching squares)
///   and the colour scale in the legend.
/// - **Three or more classes**: each cell takes the colour of its most
///   probable class, lighter the less confident the prediction:
///
///   ```text
///   k = argmax_j p_j,  t = (p_k - 1/K) / (1 - 1/K),  shade = mix(white, colour_k, 0.15 + 0.15 * floor(4 t))
///   ```
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
    let figure = prepare(predict, data, options)?;
    render(&figure, &options.chart)
}

/// What the map will show: cells, boundary, points, legend and notes.
pub(crate) fn prepare(
    predict: &dyn Fn(ArrayView2<f64>) -> Result<Array2<f64>>,
    data: &ClassPoints,
    options: &DecisionMapOptions,
) -> Result<Figure> {
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
                    |acc, (j, &p)| {
                        if p > acc.1 {
                            (j, p)
                        } else {
                            acc
                        }
                    },
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
            theme::EMPTY
        } else if two_class {
            SUNSET[code as usize].mix(theme::WHITE, MAP_LIGHTEN)
        } else {
            let level = (code % 4) as f64;
            theme::WHITE.mix(class_colour(code as usize / 4), 0.15 + 0.15 * level)
        }
    };
    let cells: Vec<(f64, f64, f64, f64, Rgb)> = merged_cells(n, &codes)
        .into_iter()
        .map(|((i0, i1, code), (j0, j1))| {
            let xs = |i: usize| x_range.0 + (x_range.1 - x_range.0) * i as f64 / n as f64;
            let ys = |j: usize| y_range.0 + (y_range.1 - y_range.0) * j as f64 / n as f64;
            (xs(i0), xs(i1), ys(j0), ys(j1), colour_of(code))
        })
        .collect();

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
            "shading: the most probable class; paler where the model is less sure".to_string(),
        );
    }

    let mut legend = scatter::class_entries(&names, &prepared.per_class);
    let mut marks = vec![Mark::Cells {
        cells,
        opacity: 1.0,
    }];
    marks.push(scatter::class_mark(&prepared.points));
    if two_class {
        legend.push(Entry::new(
            "P = 0.5 boundary",
            Key::Line {
                colour: CONTOUR_STROKE,
                width: CONTOUR_WIDTH as f64,
                dash: theme::Dash::Solid,
            },
        ));
        legend.push(Entry::new(
            format!("P({})", names[1]),
            Key::Scale {
                stops: SUNSET
                    .iter()
                    .map(|c| c.mix(theme::WHITE, MAP_LIGHTEN))
                    .collect(),
                ticks: vec![(0.0, "0".into()), (0.5, "0.5".into()), (1.0, "1".into())],
            },
        ));
        // The boundary goes over the points, so dense clouds cannot hide it.
        let (dx, dy) = (
            (x_range.1 - x_range.0) / n as f64,
            (y_range.1 - y_range.0) / n as f64,
        );
        for line in contour_lines(&p_one, n, n, 0.5) {
            let points: Vec<(f64, f64)> = line
                .iter()
                .map(|&(gi, gj)| (x_range.0 + (gi + 0.5) * dx, y_range.0 + (gj + 0.5) * dy))
                .collect();
            marks.push(Mark::Line {
                points: points.clone(),
                stroke: Stroke::solid(theme::WHITE, CONTOUR_WIDTH as f64 + 2.0).faded(0.8),
            });
            marks.push(Mark::Line {
                points,
                stroke: Stroke::solid(CONTOUR_STROKE, CONTOUR_WIDTH as f64),
            });
        }
    }
    let x = AxisSpec::linear(
        x_range,
        linear_ticks(x_range.0, x_range.1, 6),
        options.chart.x_label_or(&data.x_name),
    );
    let y = AxisSpec::linear(
        y_range,
        linear_ticks(y_range.0, y_range.1, 6),
        options.chart.y_label_or(&data.y_name),
    );
    let mut panel = XyPanel::new(x, y);
    panel.grid = Grid::None;
    panel.marks = marks;
    panel.aspect = 0.7;
    let frame = options
        .chart
        .frame("Decision map", Vec::new(), legend, notes);
    Ok(Figure::single(frame, Panel::Xy(panel)))
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
        None => finite_range(values)
            .map(|r| pad_range(r, 0.05))
            .ok_or_else(|| {
                Error::input(
                    what,
                    format!("no finite points to take the {name} from; pass {name} in the options"),
                )
            }),
    }
}

/// A run of equal codes along a row: (first column, last column + 1, code).
type Run = (usize, usize, u16);
/// The rows a merged rectangle spans: (first row, last row + 1).
type Rows = (usize, usize);

/// Merges runs of equal codes along rows, then identical runs of
/// consecutive rows, into rectangles; bottom row first, then left to right.
fn merged_cells(n: usize, codes: &[u16]) -> Vec<(Run, Rows)> {
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
    done.sort_by_key(|&((i0, _, _), (j0, _))| (j0, i0));
    done
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
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
        let figure = prepare(&circle, &ring_points(), &options()).unwrap();
        let labels: Vec<&str> = figure
            .frame
            .legend
            .iter()
            .map(|e| e.label.as_str())
            .collect();
        assert_eq!(
            labels,
            [
                "inside (60)",
                "outside (60)",
                "P = 0.5 boundary",
                "P(outside)"
            ]
        );
        // One closed contour (with its halo).
        let contours = figure
            .xy(0)
            .marks
            .iter()
            .filter(|m| matches!(m, Mark::Line { stroke, .. } if stroke.colour == CONTOUR_STROKE))
            .count();
        assert_eq!(contours, 1);
        let chart = render(&figure, &options().chart).unwrap();
        let r = check(&chart, "decision-two-class-circle");
        assert!(r.has_text("bore (µm)") && r.has_text("temperature (°C)"));
        assert_eq!(r.filled_with(class_colour(0)), 61);
        assert_eq!(r.filled_with(class_colour(1)), 61);
        // Merged cells keep the SVG small: far fewer rectangles than 150 x 150.
        assert!(
            r.count("rect", &[]) < 2_000,
            "{} rects",
            r.count("rect", &[])
        );
    }

    #[cfg(feature = "export")]
    #[test]
    fn the_circle_rule_colours_inside_and_outside_as_expected() {
        use super::super::testing::distance;
        let data = ClassPoints {
            points: vec![],
            ..ring_points()
        };
        let chart = decision_map(&circle, &data, &options()).unwrap();
        let r = check(&chart, "decision-circle-colours");
        let plot = chart.boxes().plots[0];
        let at = |x: f64, y: f64| {
            let px = plot.left + (x + 2.0) / 4.0 * plot.width();
            let py = plot.top + (2.0 - y) / 4.0 * plot.height();
            r.pixel(px as u32, py as u32)
        };
        let low = SUNSET[0].mix(theme::WHITE, MAP_LIGHTEN);
        let high = SUNSET[10].mix(theme::WHITE, MAP_LIGHTEN);
        let (inside, outside) = (at(0.1, -0.2), at(1.7, 1.6));
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
        assert!(!r.has_text("P = 0.5 boundary"));
        for class in 0..3 {
            assert_eq!(r.filled_with(class_colour(class)), 31, "class {class}");
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
        let figure = prepare(&holes, &data, &options()).unwrap();
        let notes = &figure.frame.notes;
        assert!(
            notes.contains(&"skipped 1 point with a non-finite coordinate".to_string()),
            "{notes:?}"
        );
        assert!(notes.contains(&"the points hold only one class, \"outside\"".to_string()));
        assert!(notes
            .iter()
            .any(|n| n.contains("grid cells had no finite prediction")));
        check(
            &render(&figure, &options().chart).unwrap(),
            "decision-nan-one-class",
        );
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
        let figure = prepare(&circle, &data, &small).unwrap();
        assert!(figure
            .frame
            .notes
            .contains(&"showing 5,000 of 20,000 points (every 4th)".to_string()));
    }
}
