//! Hidden-layer views: what a layer's units make of each sample, as a
//! scatter of two units (or of the first two principal components),
//! coloured and shaped by class.

use ndarray::{Array2, ArrayView2};

use super::draw::{
    finite_range, linear_ticks, pad_range, render, Arrangement, AxisSpec, Figure, Grid, Panel,
    XyPanel,
};
use super::pca::principal_components_2;
use super::scatter;
use super::{class_names, group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// Which two dimensions of a hidden layer to plot.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum HiddenView {
    /// Chosen from the layer's width: 1 unit, a strip per class along the
    /// unit; 2 units, the two units directly; 3 units, the three pairs side
    /// by side (0–1, 0–2, 1–2); more, the first two principal components.
    #[default]
    Auto,
    /// Two units by their column index (numbered from 0, as in the
    /// activation matrix), horizontal first.
    Units(usize, usize),
    /// The first two principal components of the activations
    /// ([`principal_components_2`]), labelled with their share of variance.
    PrincipalComponents,
}

/// One scatter panel: its points and axis labels.
struct PanelData {
    points: Vec<(f64, f64, usize)>,
    x_label: String,
    y_label: String,
}

/// Draws a hidden layer's activations, one point per sample, coloured and
/// shaped by class.
///
/// `activations` has one row per sample and one column per unit; `labels`
/// holds each sample's class index into `class_names`. See [`HiddenView`]
/// for which dimensions are drawn. For principal components, rows with a
/// non-finite activation are left out (noted) before the projection.
///
/// # Errors
///
/// [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch) when
/// `labels` and `activations` disagree in length;
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) for no rows,
/// no units, no class names, a unit index out of range, a label without a
/// class name, or principal components of a one-unit layer.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::hidden_layer;
/// use stratanet::chart::{ChartOptions, HiddenView};
/// use stratanet::ndarray::array;
///
/// let codes = array![[0.1, 0.9, 0.3], [0.2, 0.8, 0.4], [0.9, 0.1, 0.5], [0.8, 0.2, 0.6]];
/// let chart = hidden_layer(codes.view(), &[0, 0, 1, 1], &["pass", "fail"], HiddenView::Units(0, 1), &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("unit 1"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn hidden_layer<S: AsRef<str>>(
    activations: ArrayView2<f64>,
    labels: &[usize],
    class_names_given: &[S],
    view: HiddenView,
    options: &ChartOptions,
) -> Result<Chart> {
    let figure = prepare(activations, labels, class_names_given, view, options)?;
    render(&figure, options)
}

/// What the view will show: one panel per pair of dimensions.
pub(crate) fn prepare<S: AsRef<str>>(
    activations: ArrayView2<f64>,
    labels: &[usize],
    class_names_given: &[S],
    view: HiddenView,
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "hidden-layer view";
    let names = class_names(what, class_names_given)?;
    let (rows, units) = activations.dim();
    if labels.len() != rows {
        return Err(Error::shape(
            "hidden-layer view: one label per activation row",
            (rows, 1),
            (labels.len(), 1),
        ));
    }
    if rows == 0 || units == 0 {
        return Err(Error::input(
            what,
            format!("the activation matrix is empty ({rows} rows x {units} units)"),
        ));
    }
    let unit = |u: usize| -> Result<usize> {
        if u < units {
            Ok(u)
        } else {
            Err(Error::input(
                what,
                format!(
                    "unit index {u} is out of range: the layer has {units} units (0 to {})",
                    units - 1
                ),
            ))
        }
    };
    let pair = |a: usize, b: usize| PanelData {
        points: (0..rows)
            .map(|r| (activations[[r, a]], activations[[r, b]], labels[r]))
            .collect(),
        x_label: format!("unit {a}"),
        y_label: format!("unit {b}"),
    };
    let mut notes = Vec::new();
    let mut strip = false;
    let panels: Vec<PanelData> = match view {
        HiddenView::Units(a, b) => vec![pair(unit(a)?, unit(b)?)],
        HiddenView::Auto if units == 1 => {
            strip = true;
            vec![PanelData {
                points: (0..rows)
                    .map(|r| (activations[[r, 0]], labels[r] as f64, labels[r]))
                    .collect(),
                x_label: "unit 0".to_string(),
                y_label: String::new(),
            }]
        }
        HiddenView::Auto if units == 2 => vec![pair(0, 1)],
        HiddenView::Auto if units == 3 => vec![pair(0, 1), pair(0, 2), pair(1, 2)],
        HiddenView::Auto | HiddenView::PrincipalComponents => {
            if units < 2 {
                return Err(Error::input(
                    what,
                    "principal components need at least 2 units; this layer has 1 (use HiddenView::Auto)",
                ));
            }
            let keep: Vec<usize> = (0..rows)
                .filter(|&r| activations.row(r).iter().all(|v| v.is_finite()))
                .collect();
            if keep.len() < rows {
                notes.push(format!(
                    "left out {} of {} rows with a non-finite activation",
                    group_digits(rows - keep.len()),
                    group_digits(rows)
                ));
            }
            let finite =
                Array2::from_shape_fn((keep.len(), units), |(i, j)| activations[[keep[i], j]]);
            let pca = principal_components_2(finite.view()).map_err(|e| {
                Error::input(what, format!("cannot project on principal components: {e}"))
            })?;
            let share = |k: usize| {
                if pca.total_variance > 0.0 {
                    format!(
                        " ({:.0}% of variance)",
                        100.0 * pca.variances[k] / pca.total_variance
                    )
                } else {
                    String::new()
                }
            };
            notes.push(format!("principal components of {units} units"));
            vec![PanelData {
                points: keep
                    .iter()
                    .enumerate()
                    .map(|(i, &r)| (pca.projection[[i, 0]], pca.projection[[i, 1]], labels[r]))
                    .collect(),
                x_label: format!("PC1{}", share(0)),
                y_label: format!("PC2{}", share(1)),
            }]
        }
    };
    // Prepare (check labels, drop non-finite, thin) each panel alike.
    let mut prepared = Vec::new();
    for panel in &panels {
        let p = scatter::prepare(what, &panel.points, names.len())?;
        prepared.push(p);
    }
    for note in &prepared[0].notes {
        notes.push(note.clone());
    }
    if let Some(note) = scatter::class_note(&names, &prepared[0].per_class) {
        notes.push(note);
    }
    let legend = scatter::class_entries(&names, &prepared[0].per_class);
    let count = panels.len();
    let built: Vec<Panel> = panels
        .iter()
        .zip(&prepared)
        .map(|(panel, points)| {
            let x_label = options
                .x_label
                .clone()
                .unwrap_or_else(|| panel.x_label.clone());
            let y_label = options
                .y_label
                .clone()
                .unwrap_or_else(|| panel.y_label.clone());
            Panel::Xy(if strip {
                strip_panel(&points.points, &names, &x_label)
            } else {
                scatter_panel(
                    &points.points,
                    &x_label,
                    &y_label,
                    if count > 1 { 4 } else { 6 },
                )
            })
        })
        .collect();
    let frame = options.frame("Hidden layer", Vec::new(), legend, notes);
    Ok(Figure {
        frame,
        arrangement: Arrangement::Row(vec![1.0; built.len()]),
        panels: built,
    })
}

/// A scatter panel of two dimensions.
fn scatter_panel(
    points: &[(f64, f64, usize)],
    x_label: &str,
    y_label: &str,
    target_ticks: usize,
) -> XyPanel {
    let x_range = pad_range(
        finite_range(points.iter().map(|p| p.0)).unwrap_or((0.0, 1.0)),
        0.05,
    );
    let y_range = pad_range(
        finite_range(points.iter().map(|p| p.1)).unwrap_or((0.0, 1.0)),
        0.05,
    );
    let x = AxisSpec::linear(
        x_range,
        linear_ticks(x_range.0, x_range.1, target_ticks),
        x_label,
    );
    let y = AxisSpec::linear(
        y_range,
        linear_ticks(y_range.0, y_range.1, target_ticks),
        y_label,
    );
    let mut p = XyPanel::new(x, y);
    p.grid = Grid::Both;
    p.marks = vec![scatter::class_mark(points)];
    p.aspect = 0.7;
    p
}

/// One unit: a horizontal strip per class, points spread vertically inside
/// their strip by a fixed golden-ratio sequence (deterministic jitter).
fn strip_panel(points: &[(f64, f64, usize)], names: &[String], x_label: &str) -> XyPanel {
    let x_range = pad_range(
        finite_range(points.iter().map(|p| p.0)).unwrap_or((0.0, 1.0)),
        0.05,
    );
    let x = AxisSpec::linear(x_range, linear_ticks(x_range.0, x_range.1, 6), x_label);
    let y = AxisSpec::categories(names);
    let jittered: Vec<(f64, f64, usize)> = points
        .iter()
        .enumerate()
        .map(|(k, &(v, _, class))| {
            let jitter = ((k as f64 * 0.618_033_988_75).fract() - 0.5) * 0.6;
            (v, class as f64 + jitter, class)
        })
        .collect();
    let mut p = XyPanel::new(x, y);
    p.grid = Grid::Vertical;
    p.marks = vec![scatter::class_mark(&jittered)];
    p.row_height = Some(46.0);
    p
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::super::theme::class_colour;
    use super::*;

    /// Activations of `units` units for 3 well-separated classes.
    fn codes(units: usize) -> (Array2<f64>, Vec<usize>) {
        let rows = 90;
        let labels: Vec<usize> = (0..rows).map(|r| r % 3).collect();
        let data = Array2::from_shape_fn((rows, units), |(r, u)| {
            let class = labels[r] as f64;
            let wobble = (((r * 31 + u * 17) % 23) as f64 / 23.0 - 0.5) * 0.4;
            ((class + 1.0) * (u as f64 + 1.0) * 0.7).sin() + wobble
        });
        (data, labels)
    }

    const NAMES: [&str; 3] = ["low", "medium", "high"];

    #[test]
    fn two_given_units() {
        let (data, labels) = codes(6);
        let chart = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Units(2, 4),
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "hidden-units");
        assert!(r.has_text("Hidden layer") && r.has_text("unit 2") && r.has_text("unit 4"));
        assert!(r.has_text("low (30)") && r.has_text("high (30)"));
        for class in 0..3 {
            assert_eq!(r.filled_with(class_colour(class)), 31);
        }
    }

    #[test]
    fn wide_layers_use_principal_components() {
        let (data, labels) = codes(8);
        let chart = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Auto,
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "hidden-pca");
        assert!(
            r.has_text_containing("PC1 (") && r.has_text_containing("% of variance)"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("principal components of 8 units"));
    }

    #[test]
    fn three_units_show_the_three_pairs() {
        let (data, labels) = codes(3);
        let chart = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Auto,
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "hidden-three-units");
        assert_eq!(r.texts.iter().filter(|t| *t == "unit 0").count(), 2);
        assert_eq!(r.texts.iter().filter(|t| *t == "unit 2").count(), 2);
        assert_eq!(r.filled_with(class_colour(0)), 3 * 30 + 1);
    }

    #[test]
    fn one_unit_shows_strips() {
        let (data, labels) = codes(1);
        let chart = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Auto,
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "hidden-one-unit");
        assert!(r.has_text("unit 0") && r.has_text("medium"));
        let err = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::PrincipalComponents,
            &ChartOptions::default(),
        )
        .unwrap_err();
        assert!(err.to_string().contains("at least 2 units"), "{err}");
    }

    #[test]
    fn bad_input_is_refused_and_gaps_noted() {
        let (mut data, labels) = codes(5);
        let options = ChartOptions::default();
        let err = hidden_layer(
            data.view(),
            &labels[..10],
            &NAMES,
            HiddenView::Auto,
            &options,
        )
        .unwrap_err();
        assert!(
            err.to_string().contains("one label per activation row"),
            "{err}"
        );
        let err = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Units(0, 9),
            &options,
        )
        .unwrap_err();
        assert!(err.to_string().contains("unit index 9"), "{err}");
        let empty = Array2::<f64>::zeros((0, 4));
        assert!(hidden_layer(empty.view(), &[], &NAMES, HiddenView::Auto, &options).is_err());
        data[[3, 1]] = f64::NAN;
        let chart = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::PrincipalComponents,
            &options,
        )
        .unwrap();
        let r = check(&chart, "hidden-nan");
        assert!(
            r.has_text("left out 1 of 90 rows with a non-finite activation"),
            "{:?}",
            r.texts
        );
        let one_class = vec![0; 90];
        let chart = hidden_layer(
            data.view(),
            &one_class,
            &NAMES,
            HiddenView::Units(0, 1),
            &options,
        )
        .unwrap();
        let r = check(&chart, "hidden-one-class");
        assert!(r.has_text("the points hold only one class, \"low\""));
        assert!(r.has_text("skipped 1 point with a non-finite coordinate"));
    }

    #[test]
    fn output_is_byte_identical() {
        let (data, labels) = codes(7);
        let a = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Auto,
            &ChartOptions::default(),
        )
        .unwrap();
        let b = hidden_layer(
            data.view(),
            &labels,
            &NAMES,
            HiddenView::Auto,
            &ChartOptions::default(),
        )
        .unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
