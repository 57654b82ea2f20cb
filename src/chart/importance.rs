//! Permutation importance: how much a score drops when one input column
//! is shuffled, with an interval, one row per column.

use super::compare::{mean_and_interval, row_rules, INTERVAL, MEAN};
use super::draw::{
    finite_range, linear_ticks, pad_range, render, AxisSpec, Entry, Figure, Grid, Key, Mark, Panel,
    Stroke, XyPanel,
};
use super::theme::{self, Dash, Marker};
use super::{Chart, ChartOptions};
use crate::{Error, Result};

/// One input column's importance.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct FeatureImportance {
    /// The column's name (a text column's one-hot columns count as one).
    pub name: String,
    /// The mean drop in the score when the column is shuffled.
    pub mean_drop: f64,
    /// The interval for the mean drop (e.g. 95% across folds), (low, high).
    pub interval: (f64, f64),
}

/// Rows whose interval holds zero: no clear effect.
const UNCLEAR: theme::Rgb = theme::AXIS;

/// Draws permutation importances (Breiman 2001, "Random forests", Machine
/// Learning 45; Fisher, Rudin & Dominici 2019, JMLR 20): one row per
/// input column, largest mean drop first, each with its interval and the
/// numbers at the right. A column whose interval holds zero is drawn grey
/// (its shuffling made no clear difference); the zero line is marked.
/// `metric` names the score whose drop is shown.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when no
/// column is given or none has a finite mean.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{permutation_importance, FeatureImportance};
/// use stratanet::chart::ChartOptions;
///
/// let f = |name: &str, m: f64| FeatureImportance { name: name.into(), mean_drop: m, interval: (m - 0.02, m + 0.02) };
/// let chart = permutation_importance(&[f("bore_dev_um", 0.21), f("spindle", 0.01)], "accuracy", &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("bore dev (µm)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn permutation_importance(
    features: &[FeatureImportance],
    metric: &str,
    options: &ChartOptions,
) -> Result<Chart> {
    render(&prepare(features, metric, options)?, options)
}

pub(crate) fn prepare(
    features: &[FeatureImportance],
    metric: &str,
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "permutation importance";
    if features.is_empty() {
        return Err(Error::input(
            what,
            "no columns given; pass one FeatureImportance per input column",
        ));
    }
    let mut order: Vec<usize> = (0..features.len())
        .filter(|&i| features[i].mean_drop.is_finite())
        .collect();
    if order.is_empty() {
        return Err(Error::input(what, "no column has a finite mean drop"));
    }
    let mut notes = Vec::new();
    if order.len() < features.len() {
        notes.push(format!(
            "left out {} column(s) without a finite mean drop",
            features.len() - order.len()
        ));
    }
    order.sort_by(|&a, &b| {
        features[b]
            .mean_drop
            .total_cmp(&features[a].mean_drop)
            .then(a.cmp(&b))
    });
    let values = order.iter().flat_map(|&i| {
        let f = &features[i];
        [f.mean_drop, f.interval.0, f.interval.1, 0.0]
    });
    let range = pad_range(finite_range(values).unwrap_or((0.0, 1.0)), 0.05);
    let names: Vec<String> = order
        .iter()
        .map(|&i| super::axis_label(&features[i].name))
        .collect();
    let mut marks = row_rules(order.len());
    marks.push(Mark::VRule {
        x: 0.0,
        stroke: Stroke::solid(theme::INK_SOFT, 1.0).dashed(Dash::Dashed),
    });
    let mut right = Vec::new();
    let mut unclear = 0;
    for (k, &i) in order.iter().enumerate() {
        let f = &features[i];
        let (lo, hi) = (
            f.interval.0.min(f.interval.1),
            f.interval.0.max(f.interval.1),
        );
        let clear = !(lo <= 0.0 && hi >= 0.0);
        if !clear {
            unclear += 1;
        }
        let colour = if clear { INTERVAL } else { UNCLEAR };
        marks.push(Mark::Interval {
            at: k as f64,
            lo,
            hi,
            horizontal: true,
            colour,
            width: 2.2,
            cap: 5.0,
        });
        marks.push(Mark::Points {
            points: vec![(f.mean_drop, k as f64)],
            shape: Marker::Diamond,
            fill: if clear { MEAN } else { UNCLEAR },
            outline: Some(theme::WHITE),
            radius: 5.0,
        });
        right.push((k as f64, mean_and_interval(f.mean_drop, f.interval)));
    }
    if unclear > 0 {
        notes.push(format!("{unclear} column(s) in grey: the interval holds zero, so shuffling made no clear difference"));
    }
    let x_label = options.x_label.clone().unwrap_or_else(|| {
        format!(
            "drop in {} when the column is shuffled",
            super::axis_label(metric)
        )
    });
    let x = AxisSpec::linear(range, linear_ticks(range.0, range.1, 6), x_label);
    let mut panel = XyPanel::new(x, AxisSpec::categories(&names));
    panel.grid = Grid::Vertical;
    panel.marks = marks;
    panel.right = right;
    panel.row_height = Some(26.0);
    let legend = vec![
        Entry::new(
            "mean drop",
            Key::Marker {
                shape: Marker::Diamond,
                colour: MEAN,
                outline: theme::WHITE,
            },
        ),
        Entry::new("interval", Key::Interval { colour: INTERVAL }),
        Entry::new("interval holds zero", Key::Interval { colour: UNCLEAR }),
        Entry::new(
            "no effect",
            Key::Line {
                colour: theme::INK_SOFT,
                width: 1.0,
                dash: Dash::Dashed,
            },
        ),
    ];
    let frame = options.frame("Permutation importance", Vec::new(), legend, notes);
    Ok(Figure::single(frame, Panel::Xy(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    fn f(name: &str, m: f64, half: f64) -> FeatureImportance {
        FeatureImportance {
            name: name.into(),
            mean_drop: m,
            interval: (m - half, m + half),
        }
    }

    #[test]
    fn rows_are_sorted_and_unclear_ones_grey() {
        let features = [
            f("noise_a", 0.002, 0.01),
            f("bore_dev_um", 0.21, 0.03),
            f("roundness_um", 0.08, 0.02),
            f("spindle", -0.004, 0.006),
        ];
        let figure = prepare(&features, "accuracy", &ChartOptions::default()).unwrap();
        let p = figure.xy(0);
        let names: Vec<&str> = p.y.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(
            names,
            ["bore dev (µm)", "roundness (µm)", "noise a", "spindle"]
        );
        let greys = p
            .marks
            .iter()
            .filter(|m| matches!(m, Mark::Interval { colour, .. } if *colour == UNCLEAR))
            .count();
        assert_eq!(greys, 2);
        let r = check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "importance",
        );
        assert!(r.has_text("drop in accuracy when the column is shuffled"));
    }

    #[test]
    fn bad_input_is_refused() {
        assert!(permutation_importance(&[], "accuracy", &ChartOptions::default()).is_err());
        assert!(permutation_importance(
            &[f("x", f64::NAN, 0.1)],
            "accuracy",
            &ChartOptions::default()
        )
        .is_err());
    }
}
