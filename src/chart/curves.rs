//! ROC curves and precision-recall curves, one line per class (or model).

use super::draw::{
    self, draw_axes, draw_legend, legend_width, linear_ticks, split_legend, Axis, Entry, Grid, Key,
    Page, Rect, Scale, ScaleKind,
};
use super::theme::{self, class_colour, class_marker, size};
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

#[derive(Clone, Copy, PartialEq)]
enum Kind {
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
    let title = options.check(default_title)?;
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
    let mut entries: Vec<Entry> = curves
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let label = match c.summary {
                Some(v) if v.is_finite() => format!("{} ({summary_name} {v:.3})", c.label),
                _ => c.label.clone(),
            };
            Entry::new(
                label,
                Key::Line {
                    colour: class_colour(i),
                    width: 2.0,
                    marker: Some(class_marker(i)),
                },
            )
        })
        .collect();
    if kind == Kind::Roc {
        entries.push(Entry::new(
            "chance",
            Key::Dashed {
                colour: theme::AXIS,
            },
        ));
    }
    let x_label = options
        .x_label
        .clone()
        .unwrap_or_else(|| x_name.to_string());
    let y_label = options
        .y_label
        .clone()
        .unwrap_or_else(|| y_name.to_string());
    let ticks = linear_ticks(0.0, 1.0, 5);

    draw::render(options.width, options.height, &title, |canvas| {
        let page = Page::new(canvas, &title, notes.clone());
        page.draw(canvas)?;
        let (body, legend) = split_legend(page.content, legend_width(&entries, None), 0.42);
        let left = draw::left_gutter(&ticks, true);
        let bottom = draw::bottom_gutter(true);
        // A square plot: both axes are rates on the same [0, 1] scale.
        let side = (body.width() - left - 8.0)
            .min(body.height() - bottom - 8.0)
            .max(40.0);
        let plot = Rect {
            left: body.left + left,
            top: body.top + 8.0,
            right: body.left + left + side,
            bottom: body.top + 8.0 + side,
        };
        let x = Axis {
            scale: Scale::new(ScaleKind::Linear, (0.0, 1.0), (plot.left, plot.right)),
            ticks: ticks.clone(),
            label: x_label.clone(),
        };
        let y = Axis {
            scale: Scale::new(ScaleKind::Linear, (0.0, 1.0), (plot.bottom, plot.top)),
            ticks: ticks.clone(),
            label: y_label.clone(),
        };
        draw_axes(canvas, plot, &x, &y, Grid::Both)?;
        if kind == Kind::Roc {
            canvas.dashed_line(
                (plot.left, plot.bottom),
                (plot.right, plot.top),
                6.0,
                4.0,
                theme::AXIS,
                1.0,
            )?;
        }
        for (i, line) in lines.iter().enumerate() {
            let pixels: Vec<(f64, f64)> = line
                .iter()
                .map(|&(px, py)| (x.scale.map(px), y.scale.map(py)))
                .collect();
            canvas.line(&pixels, class_colour(i), 1.0, 2.0)?;
            // About eight markers per curve, shifted per curve so that curves
            // sharing a stretch do not hide each other's markers.
            let step = pixels.len().div_ceil(8).max(1);
            let offset = (i * step / 3) % step;
            for &(px, py) in pixels.iter().skip(offset).step_by(step) {
                canvas.marker(
                    class_marker(i),
                    px,
                    py,
                    size::MARKER,
                    class_colour(i),
                    Some(theme::WHITE),
                )?;
            }
        }
        draw_legend(
            canvas,
            legend.left,
            plot.top,
            legend.width(),
            legend.height(),
            None,
            &entries,
        )?;
        Ok(())
    })
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
        let chart = roc_curves(&three(), &ChartOptions::default()).unwrap();
        let r = check(&chart, "roc-three-class");
        assert!(r.has_text("ROC curves"));
        assert!(r.has_text("false-positive rate") && r.has_text("true-positive rate"));
        assert!(r.has_text("setosa (AUC 0.990)") && r.has_text("virginica (AUC 0.850)"));
        assert!(r.has_text("chance"));
        for i in 0..3 {
            // The curve and its legend key.
            let stroke = class_colour(i).to_svg();
            assert_eq!(
                r.count("polyline", &[("stroke", &stroke), ("stroke-width", "2")]),
                2,
                "curve {i}"
            );
        }
        let dashes = r.count("polyline", &[("stroke", &theme::AXIS.to_svg())]);
        assert!(dashes > 20, "chance line dashes: {dashes}");
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
        assert!(!r.has_text("chance"));
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
