//! Regression charts: predicted against actual values, and residuals
//! against predicted values, one panel per output.

use super::draw::{
    finite_range, format_value, linear_ticks, nice_range, render, Arrangement, AxisSpec, Entry,
    Figure, Grid, Key, Mark, Panel, Stroke, XyPanel,
};
use super::theme::{self, Dash, Marker};
use super::{group_digits, stride, Chart, ChartOptions, MAX_POINTS};
use crate::validate::metrics::{r_squared, root_mean_squared_error};
use crate::{Error, Result};

/// One output's actual and predicted values, in the same row order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PredictedActual {
    /// The output's name (the target column).
    pub name: String,
    /// The true values.
    pub actual: Vec<f64>,
    /// The model's predictions.
    pub predicted: Vec<f64>,
}

/// At most this many outputs get a panel each.
const MAX_PANELS: usize = 4;

const POINT: theme::Rgb = theme::OKABE_ITO[0];

/// The pairs both finite, thinned to [`MAX_POINTS`]; notes on what was left out.
fn usable(output: &PredictedActual, notes: &mut Vec<String>) -> Result<Vec<(f64, f64)>> {
    if output.actual.len() != output.predicted.len() {
        return Err(Error::shape(
            format!("{}: predicted values (one per actual value)", output.name),
            (output.actual.len(), 1),
            (output.predicted.len(), 1),
        ));
    }
    let pairs: Vec<(f64, f64)> = output
        .actual
        .iter()
        .zip(&output.predicted)
        .map(|(&a, &p)| (a, p))
        .filter(|(a, p)| a.is_finite() && p.is_finite())
        .collect();
    let dropped = output.actual.len() - pairs.len();
    if dropped > 0 {
        notes.push(format!(
            "{}: left out {} row{} with a non-finite value",
            output.name,
            group_digits(dropped),
            if dropped == 1 { "" } else { "s" }
        ));
    }
    if pairs.is_empty() {
        return Err(Error::input(
            "regression chart",
            format!(
                "{}: no row has a finite actual and predicted value",
                output.name
            ),
        ));
    }
    let k = stride(pairs.len(), MAX_POINTS);
    if k > 1 {
        notes.push(format!(
            "{}: showing every {k}th of {} rows",
            output.name,
            group_digits(pairs.len())
        ));
    }
    Ok(pairs.into_iter().step_by(k).collect())
}

fn check_outputs(outputs: &[PredictedActual], notes: &mut Vec<String>) -> Result<usize> {
    if outputs.is_empty() {
        return Err(Error::input(
            "regression chart",
            "no outputs given; pass one PredictedActual per output",
        ));
    }
    if outputs.len() > MAX_PANELS {
        notes.push(format!(
            "showing the first {MAX_PANELS} of {} outputs",
            outputs.len()
        ));
    }
    Ok(outputs.len().min(MAX_PANELS))
}

/// R² and RMSE of one output over its finite pairs, for the caption.
fn caption(output: &PredictedActual, pairs_all: &[(f64, f64)]) -> String {
    let (a, p): (Vec<f64>, Vec<f64>) = pairs_all.iter().copied().unzip();
    let r2 = r_squared(&a, &p)
        .map(|s| format_value(s.value))
        .unwrap_or_else(|_| "n/a".into());
    let rmse = root_mean_squared_error(&a, &p)
        .map(format_value)
        .unwrap_or_else(|_| "n/a".into());
    format!("{}: R² {r2}, RMSE {rmse}", super::axis_label(&output.name))
}

fn all_pairs(output: &PredictedActual) -> Vec<(f64, f64)> {
    output
        .actual
        .iter()
        .zip(&output.predicted)
        .map(|(&a, &p)| (a, p))
        .filter(|(a, p)| a.is_finite() && p.is_finite())
        .collect()
}

/// Draws predicted against actual values, one square panel per output
/// (up to four), with the line where they are equal.
///
/// Each panel's caption gives R² and the root mean squared error over
/// every row with finite values ([`r_squared`], [`root_mean_squared_error`]);
/// both axes share one range, so distance from the line reads the same
/// across and up. Above [`MAX_POINTS`] rows every k-th is drawn (noted).
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when no
/// output is given or an output has no finite pair;
/// [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch) when an
/// output's two lists differ in length.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{predicted_actual, PredictedActual};
/// use stratanet::chart::ChartOptions;
///
/// let y = PredictedActual { name: "yield_pct".into(), actual: vec![1.0, 2.0, 3.0, 4.0], predicted: vec![1.1, 1.9, 3.2, 3.9] };
/// let chart = predicted_actual(&[y], &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("actual yield (%)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn predicted_actual(outputs: &[PredictedActual], options: &ChartOptions) -> Result<Chart> {
    render(&prepare_predicted_actual(outputs, options)?, options)
}

pub(crate) fn prepare_predicted_actual(
    outputs: &[PredictedActual],
    options: &ChartOptions,
) -> Result<Figure> {
    let mut notes = Vec::new();
    let n = check_outputs(outputs, &mut notes)?;
    let mut panels = Vec::new();
    for output in &outputs[..n] {
        let pairs = usable(output, &mut notes)?;
        let (lo, hi) = finite_range(pairs.iter().flat_map(|&(a, p)| [a, p])).unwrap_or((0.0, 1.0));
        let range = nice_range(lo, hi, 5);
        let ticks = linear_ticks(range.0, range.1, 5);
        let label = super::axis_label(&output.name);
        let x = AxisSpec::linear(
            range,
            ticks.clone(),
            options
                .x_label
                .clone()
                .unwrap_or_else(|| format!("actual {label}")),
        );
        let y = AxisSpec::linear(
            range,
            ticks,
            options
                .y_label
                .clone()
                .unwrap_or_else(|| format!("predicted {label}")),
        );
        let mut panel = XyPanel::new(x, y);
        panel.grid = Grid::Both;
        panel.square = true;
        panel.caption = Some(caption(output, &all_pairs(output)));
        panel.marks = vec![
            Mark::Line {
                points: vec![(range.0, range.0), (range.1, range.1)],
                stroke: Stroke::solid(theme::INK_SOFT, 1.0).dashed(Dash::Dashed),
            },
            Mark::Points {
                points: pairs,
                shape: Marker::Circle,
                fill: POINT,
                outline: Some(theme::WHITE),
                radius: 3.0,
            },
        ];
        panels.push(Panel::Xy(panel));
    }
    let legend = vec![
        Entry::new(
            "one row",
            Key::Marker {
                shape: Marker::Circle,
                colour: POINT,
                outline: theme::WHITE,
            },
        ),
        Entry::new(
            "predicted = actual",
            Key::Line {
                colour: theme::INK_SOFT,
                width: 1.0,
                dash: Dash::Dashed,
            },
        ),
    ];
    let frame = options.frame("Predicted against actual values", Vec::new(), legend, notes);
    Ok(Figure {
        frame,
        arrangement: Arrangement::Row(vec![1.0; panels.len()]),
        panels,
    })
}

/// Draws residuals (actual minus predicted) against predicted values, one
/// panel per output (up to four), with the zero line.
///
/// ```text
/// residual = actual - predicted      (above zero: the model predicted too low)
/// ```
///
/// A pattern (a curve, a funnel) shows what the model misses; a shapeless
/// band around zero is what a good fit leaves. Captions as for
/// [`predicted_actual`].
///
/// # Errors
///
/// As [`predicted_actual`].
pub fn residuals(outputs: &[PredictedActual], options: &ChartOptions) -> Result<Chart> {
    render(&prepare_residuals(outputs, options)?, options)
}

pub(crate) fn prepare_residuals(
    outputs: &[PredictedActual],
    options: &ChartOptions,
) -> Result<Figure> {
    let mut notes = Vec::new();
    let n = check_outputs(outputs, &mut notes)?;
    let mut panels = Vec::new();
    for output in &outputs[..n] {
        let pairs = usable(output, &mut notes)?;
        let points: Vec<(f64, f64)> = pairs.iter().map(|&(a, p)| (p, a - p)).collect();
        let (xl, xh) = finite_range(points.iter().map(|p| p.0)).unwrap_or((0.0, 1.0));
        let reach = finite_range(points.iter().map(|p| p.1.abs())).map_or(1.0, |r| r.1);
        let x_range = nice_range(xl, xh, 5);
        let y_range = nice_range(-reach, reach, 5);
        let label = super::axis_label(&output.name);
        let x = AxisSpec::linear(
            x_range,
            linear_ticks(x_range.0, x_range.1, 5),
            options
                .x_label
                .clone()
                .unwrap_or_else(|| format!("predicted {label}")),
        );
        let y = AxisSpec::linear(
            y_range,
            linear_ticks(y_range.0, y_range.1, 5),
            options
                .y_label
                .clone()
                .unwrap_or_else(|| "actual − predicted".to_string()),
        );
        let mut panel = XyPanel::new(x, y);
        panel.grid = Grid::Both;
        panel.caption = Some(caption(output, &all_pairs(output)));
        panel.aspect = 0.7;
        panel.marks = vec![
            Mark::HRule {
                y: 0.0,
                stroke: Stroke::solid(theme::INK_SOFT, 1.0).dashed(Dash::Dashed),
            },
            Mark::Points {
                points,
                shape: Marker::Circle,
                fill: POINT,
                outline: Some(theme::WHITE),
                radius: 3.0,
            },
        ];
        panels.push(Panel::Xy(panel));
    }
    let legend = vec![
        Entry::new(
            "one row",
            Key::Marker {
                shape: Marker::Circle,
                colour: POINT,
                outline: theme::WHITE,
            },
        ),
        Entry::new(
            "no error",
            Key::Line {
                colour: theme::INK_SOFT,
                width: 1.0,
                dash: Dash::Dashed,
            },
        ),
    ];
    let frame = options.frame(
        "Residuals against predicted values",
        Vec::new(),
        legend,
        notes,
    );
    Ok(Figure {
        frame,
        arrangement: Arrangement::Row(vec![1.0; panels.len()]),
        panels,
    })
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    fn output() -> PredictedActual {
        let actual: Vec<f64> = (0..200)
            .map(|i| 10.0 + (i as f64 * 0.37).sin() * 5.0 + i as f64 * 0.05)
            .collect();
        let predicted: Vec<f64> = actual
            .iter()
            .enumerate()
            .map(|(i, a)| a + ((i * 7919) % 13) as f64 / 13.0 - 0.5)
            .collect();
        PredictedActual {
            name: "bore_dev_um".into(),
            actual,
            predicted,
        }
    }

    /// R² and RMSE in the caption are the crate's own metrics (checked
    /// there against published examples) on the same pairs.
    #[test]
    fn predicted_actual_has_equal_axes_and_its_scores() {
        let o = output();
        let figure =
            prepare_predicted_actual(std::slice::from_ref(&o), &ChartOptions::default()).unwrap();
        let p = figure.xy(0);
        assert!(p.square);
        assert_eq!(p.x.range, p.y.range);
        let r2 = r_squared(&o.actual, &o.predicted).unwrap().value;
        let rmse = root_mean_squared_error(&o.actual, &o.predicted).unwrap();
        assert_eq!(
            p.caption.as_deref(),
            Some(
                format!(
                    "bore dev (µm): R² {}, RMSE {}",
                    format_value(r2),
                    format_value(rmse)
                )
                .as_str()
            )
        );
        let r = check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "regression-predicted-actual",
        );
        assert!(r.has_text("actual bore dev (µm)") && r.has_text("predicted bore dev (µm)"));
    }

    #[test]
    fn residuals_are_actual_minus_predicted() {
        let o = PredictedActual {
            name: "y".into(),
            actual: vec![1.0, 2.0, f64::NAN],
            predicted: vec![1.5, 1.0, 2.0],
        };
        let figure = prepare_residuals(&[o], &ChartOptions::default()).unwrap();
        let Mark::Points { points, .. } = &figure.xy(0).marks[1] else {
            panic!()
        };
        assert_eq!(points, &[(1.5, -0.5), (1.0, 1.0)]);
        assert_eq!(
            figure.frame.notes,
            ["y: left out 1 row with a non-finite value"]
        );
        check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "regression-residuals",
        );
        let two = [
            output(),
            PredictedActual {
                name: "other_mm".into(),
                ..output()
            },
        ];
        check(
            &residuals(&two, &ChartOptions::default()).unwrap(),
            "regression-residuals-two",
        );
    }

    #[test]
    fn bad_input_is_refused() {
        assert!(predicted_actual(&[], &ChartOptions::default()).is_err());
        let short = PredictedActual {
            name: "y".into(),
            actual: vec![1.0],
            predicted: vec![],
        };
        assert!(predicted_actual(&[short], &ChartOptions::default())
            .unwrap_err()
            .to_string()
            .contains("predicted values"));
        let nan = PredictedActual {
            name: "y".into(),
            actual: vec![f64::NAN],
            predicted: vec![1.0],
        };
        assert!(residuals(&[nan], &ChartOptions::default()).is_err());
    }
}
