//! ROC curves and precision-recall curves, one line per class (or model).

use super::draw::{
    linear_ticks, render, AxisSpec, Entry, Figure, Grid, Key, Mark, Panel, Stroke, XyPanel,
};
use super::theme::{self, class_colour, series_dash, Dash};
use super::{group_digits, stride, Chart, ChartOptions, MAX_POINTS};
use crate::{Error, Result};

/// One curve: its points, a label and its summary value.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Curve {
    /// Shown in the legend, e.g. the class name ("fail vs rest").
    pub label: String,
    /// (x, y) points in drawing order. ROC: (false-positive rate,
    /// true-positive rate); precision-recall: (recall, precision). Both in
    /// [0, 1].
    pub points: Vec<(f64, f64)>,
    /// The area under the ROC curve, or the average precision, shown in the
    /// legend when given.
    pub summary: Option<f64>,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Kind {
    Roc,
    PrecisionRecall,
}

/// Draws receiver operating characteristic curves, with the chance diagonal.
///
/// ```text
/// x = false-positive rate = FP / (FP + TN),   y = true-positive rate = TP / (TP + FN)
/// ```
///
/// Each curve's label and `summary` (its AUC, to 3 decimals) go in the
/// legend. Points are drawn in the order given; points that are not finite
/// or lie outside [0, 1] are left out (noted), and curves longer than
/// [`MAX_POINTS`] are thinned to every k-th point (noted, keeping the last).
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when `curves`
/// is empty or no curve has a drawable point.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{roc_curves, Curve};
/// use stratanet::chart::ChartOptions;
///
/// let curve = Curve {
///     label: "fail".into(),
///     points: vec![(0.0, 0.0), (0.1, 0.6), (0.3, 0.9), (1.0, 1.0)],
///     summary: Some(0.87),
/// };
/// let chart = roc_curves(&[curve], &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("fail (AUC 0.870)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn roc_curves(curves: &[Curve], options: &ChartOptions) -> Result<Chart> {
    draw_curves(curves, options, Kind::Roc)
}

/// Draws precision-recall curves.
///
/// ```text
/// x = recall = TP / (TP + FN),   y = precision = TP / (TP + FP)
/// ```
///
/// Each curve's label and `summary` (its average precision, to 3 decimals)
/// go in the legend. Points are handled as in [`roc_curves`].
///
/// # Errors
///
/// As [`roc_curves`].
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{precision_recall_curves, Curve};
/// use stratanet::chart::ChartOptions;
///
/// let curve = Curve {
///     label: "fail".into(),
///     points: vec![(0.0, 1.0), (0.5, 0.9), (0.8, 0.7), (1.0, 0.4)],
///     summary: Some(0.81),
/// };
/// let chart = precision_recall_curves(&[curve], &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("fail (AP 0.810)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn precision_recall_curves(curves: &[Curve], options: &ChartOptions) -> Result<Chart> {
    draw_curves(curves, options, Kind::PrecisionRecall)
}

fn draw_curves(curves: &[Curve], options: &ChartOptions, kind: Kind) -> Result<Chart> {
    let figure = prepare(curves, options, kind)?;
    render(&figure, options)
}

/// The steps of a precision-recall curve as average precision counts them:
/// from each point, up or down to the next point's precision at the same
/// recall, then across to the next recall, so the area under the drawn
/// line is the average precision.
///
/// ```text
/// AP = sum_n (R_n - R_{n-1}) P_n
/// ```
pub(crate) fn precision_recall_steps(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::with_capacity(points.len() * 2);
    for (i, &(r, p)) in points.iter().enumerate() {
        if i > 0 {
            let (r0, _) = points[i - 1];
            out.push((r0, p));
        }
        out.push((r, p));
    }
    out
}

/// What the curves chart will show.
pub(crate) fn prepare(curves: &[Curve], options: &ChartOptions, kind: Kind) -> Result<Figure> {
    let (default_title, what, x_name, y_name, summary_name) = match kind {
        Kind::Roc => (
            "ROC curves",
            "ROC curves",
            "false-positive rate",
            "true-positive rate",
            "AUC",
        ),
        Kind::PrecisionRecall => (
            "Precision-recall curves",
            "precision-recall curves",
            "recall",
            "precision",
            "AP",
        ),
    };
    if curves.is_empty() {
        return Err(Error::input(
            what,
            "no curves given; pass at least one Curve",
        ));
    }
    let mut notes = Vec::new();
    let mut outside = 0usize;
    let mut lines: Vec<Vec<(f64, f64)>> = Vec::new();
    for curve in curves {
        let usable: Vec<(f64, f64)> = curve
            .points
            .iter()
            .copied()
            .filter(|&(x, y)| {
                let ok = x.is_finite()
                    && y.is_finite()
                    && (0.0..=1.0).contains(&x)
                    && (0.0..=1.0).contains(&y);
                if !ok {
                    outside += 1;
                }
                ok
            })
            .collect();
        let k = stride(usable.len(), MAX_POINTS);
        let mut thinned: Vec<(f64, f64)> = usable.iter().copied().step_by(k).collect();
        if k > 1 {
            if let (Some(last), Some(kept)) = (usable.last(), thinned.last()) {
                if last != kept {
                    thinned.push(*last);
                }
            }
            notes.push(format!(
                "{}: showing {} of {} points",
                curve.label,
                group_digits(thinned.len()),
                group_digits(usable.len())
            ));
        }
        if thinned.is_empty() {
            notes.push(format!("{}: no drawable points", curve.label));
        }
        lines.push(thinned);
    }
    if outside > 0 {
        notes.push(format!(
            "left out {} point{} not finite or outside [0, 1]",
            group_digits(outside),
            if outside == 1 { "" } else { "s" }
        ));
    }
    if lines.iter().all(Vec::is_empty) {
        return Err(Error::input(
            what,
            "no curve has a drawable point (finite, inside [0, 1])",
        ));
    }
    let mut legend: Vec<Entry> = Vec::new();
    let mut marks = Vec::new();
    if kind == Kind::Roc {
        marks.push(Mark::Line {
            points: vec![(0.0, 0.0), (1.0, 1.0)],
            stroke: Stroke::solid(theme::AXIS, 1.0).dashed(Dash::Dotted),
        });
    }
    for (i, (c, line)) in curves.iter().zip(&lines).enumerate() {
        let label = match c.summary {
            Some(v) if v.is_finite() => format!("{} ({summary_name} {v:.3})", c.label),
            _ => c.label.clone(),
        };
        let stroke = Stroke::solid(class_colour(i), 1.8).dashed(series_dash(i));
        legend.push(Entry::new(
            label,
            Key::Line {
                colour: stroke.colour,
                width: stroke.width,
                dash: stroke.dash,
            },
        ));
        let points = match kind {
            Kind::Roc => line.clone(),
            Kind::PrecisionRecall => precision_recall_steps(line),
        };
        marks.push(Mark::Line { points, stroke });
    }
    if kind == Kind::Roc {
        legend.push(Entry::new(
            "chance (random scores)",
            Key::Line {
                colour: theme::AXIS,
                width: 1.0,
                dash: Dash::Dotted,
            },
        ));
    }
    let ticks = linear_ticks(0.0, 1.0, 5);
    let x = AxisSpec::linear(
        (0.0, 1.0),
        ticks.clone(),
        options
            .x_label
            .clone()
            .unwrap_or_else(|| x_name.to_string()),
    );
    let y = AxisSpec::linear(
        (0.0, 1.0),
        ticks,
        options
            .y_label
            .clone()
            .unwrap_or_else(|| y_name.to_string()),
    );
    let mut panel = XyPanel::new(x, y);
    panel.grid = Grid::Both;
    panel.square = true;
    panel.marks = marks;
    let frame = options.frame(default_title, Vec::new(), legend, notes);
    Ok(Figure::single(frame, Panel::Xy(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    /// A smooth ROC-like curve y = x^(1/b) with `n` points.
    fn roc(b: f64, n: usize) -> Vec<(f64, f64)> {
        (0..n)
            .map(|k| {
                let x = k as f64 / (n - 1) as f64;
                (x, x.powf(1.0 / b))
            })
            .collect()
    }

    fn three() -> Vec<Curve> {
        vec![
            Curve {
                label: "setosa".into(),
                points: roc(8.0, 40),
                summary: Some(0.99),
            },
            Curve {
                label: "versicolor".into(),
                points: roc(3.0, 40),
                summary: Some(0.9),
            },
            Curve {
                label: "virginica".into(),
                points: roc(2.0, 40),
                summary: Some(0.85),
            },
        ]
    }

    #[test]
    fn roc_curves_show_legend_values_and_the_chance_line() {
        let figure = prepare(&three(), &ChartOptions::default(), Kind::Roc).unwrap();
        let labels: Vec<&str> = figure
            .frame
            .legend
            .iter()
            .map(|e| e.label.as_str())
            .collect();
        assert_eq!(
            labels,
            [
                "setosa (AUC 0.990)",
                "versicolor (AUC 0.900)",
                "virginica (AUC 0.850)",
                "chance (random scores)"
            ]
        );
        // No markers on the curves: lines only.
        assert!(figure
            .xy(0)
            .marks
            .iter()
            .all(|m| matches!(m, Mark::Line { .. })));
        let chart = render(&figure, &ChartOptions::default()).unwrap();
        let r = check(&chart, "roc-three-class");
        assert!(r.has_text("ROC curves"));
        assert!(r.has_text("false-positive rate") && r.has_text("true-positive rate"));
        for i in 0..3 {
            let stroke = class_colour(i).to_svg();
            assert_eq!(
                r.count("polyline", &[("stroke", &stroke)]),
                2,
                "curve {i} and its key"
            );
        }
    }

    /// The drawn steps enclose exactly the average precision (Manning,
    /// Raghavan & Schütze 2008, "Introduction to Information Retrieval",
    /// section 8.4: precision at each relevant item, averaged), here for
    /// the ranking relevant, irrelevant, relevant: AP = (1 + 2/3) / 2.
    #[test]
    fn precision_recall_steps_enclose_the_average_precision() {
        let points = [(0.0, 1.0), (0.5, 1.0), (0.5, 0.5), (1.0, 2.0 / 3.0)];
        let steps = precision_recall_steps(&points);
        let area: f64 = steps.windows(2).map(|w| (w[1].0 - w[0].0) * w[1].1).sum();
        assert!((area - (1.0 + 2.0 / 3.0) / 2.0).abs() < 1e-12, "{area}");
        // Every segment is horizontal or vertical.
        assert!(steps
            .windows(2)
            .all(|w| w[0].0 == w[1].0 || w[0].1 == w[1].1));
    }

    #[test]
    fn precision_recall_curves_show_average_precision() {
        let curves: Vec<Curve> = three()
            .into_iter()
            .map(|c| Curve {
                points: c.points.iter().map(|&(x, y)| (y, 1.0 - 0.6 * x)).collect(),
                ..c
            })
            .collect();
        let chart = precision_recall_curves(&curves, &ChartOptions::default()).unwrap();
        let r = check(&chart, "pr-three-class");
        assert!(
            r.has_text("Precision-recall curves")
                && r.has_text("recall")
                && r.has_text("precision")
        );
        assert!(r.has_text("versicolor (AP 0.900)"));
        assert!(!r.has_text_containing("chance"));
    }

    #[test]
    fn bad_points_are_left_out_with_a_note() {
        let mut curves = three();
        curves[0].points.push((f64::NAN, 0.5));
        curves[1].points.push((1.5, 0.5));
        curves[2].points.clear();
        curves[2].summary = None;
        let chart = roc_curves(&curves, &ChartOptions::default()).unwrap();
        let r = check(&chart, "roc-bad-points");
        assert!(
            r.has_text("left out 2 points not finite or outside [0, 1]"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("virginica: no drawable points") && r.has_text("virginica"));
        assert!(roc_curves(&[], &ChartOptions::default()).is_err());
        let empty = Curve {
            label: "x".into(),
            points: vec![],
            summary: None,
        };
        assert!(roc_curves(&[empty], &ChartOptions::default()).is_err());
    }

    #[test]
    fn long_curves_are_thinned() {
        let curves = vec![Curve {
            label: "big".into(),
            points: roc(3.0, 12_001),
            summary: Some(0.8),
        }];
        let chart = roc_curves(&curves, &ChartOptions::default()).unwrap();
        let r = check(&chart, "roc-long");
        assert!(
            r.has_text("big: showing 4,001 of 12,001 points"),
            "{:?}",
            r.texts
        );
    }

    #[test]
    fn output_is_byte_identical() {
        let a = roc_curves(&three(), &ChartOptions::default()).unwrap();
        let b = roc_curves(&three(), &ChartOptions::default()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
