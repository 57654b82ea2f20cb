//! Nested cross-validation outcomes: the outer folds' scores, each marked
//! with the configuration the inner search chose, and their mean.

use super::compare::{row_rules, INTERVAL, MEAN};
use super::draw::{
    finite_range, format_value, linear_ticks, pad_range, render, AxisSpec, Entry, Figure, Grid,
    Key, Mark, Panel, XyPanel,
};
use super::theme::{self, class_colour, class_marker, Marker};
use super::{Chart, ChartOptions};
use crate::{Error, Result};

/// One outer fold: its score and the configuration chosen inside it.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct OuterFold {
    /// The score on the outer fold's held-out rows.
    pub score: f64,
    /// The configuration the inner search chose on the fold's training rows.
    pub winner: String,
}

/// A nested cross-validation's outcome.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct NestedOutcome {
    /// The outer folds, in order.
    pub folds: Vec<OuterFold>,
    /// The metric's name.
    pub metric: String,
    /// Whether higher scores are better.
    pub higher_is_better: bool,
    /// The mean over outer folds and its interval, when computed.
    pub summary: Option<(f64, (f64, f64))>,
}

/// Draws a nested cross-validation: one row per outer fold with its score,
/// marked (colour and shape) by the configuration the inner search chose
/// there and named at the right, and a last row with the mean and its
/// interval. The legend counts how often each configuration won.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when there
/// are no folds or no finite score.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{nested_cross_validation, NestedOutcome, OuterFold};
/// use stratanet::chart::ChartOptions;
///
/// let fold = |s: f64, w: &str| OuterFold { score: s, winner: w.into() };
/// let outcome = NestedOutcome {
///     folds: vec![fold(0.86, "hidden 12"), fold(0.88, "hidden 12"), fold(0.83, "hidden 4")],
///     metric: "accuracy".into(),
///     higher_is_better: true,
///     summary: Some((0.857, (0.82, 0.89))),
/// };
/// let chart = nested_cross_validation(&outcome, &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("hidden 12 (won 2 of 3)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn nested_cross_validation(outcome: &NestedOutcome, options: &ChartOptions) -> Result<Chart> {
    render(&prepare(outcome, options)?, options)
}

pub(crate) fn prepare(outcome: &NestedOutcome, options: &ChartOptions) -> Result<Figure> {
    let what = "nested cross-validation";
    if outcome.folds.is_empty() {
        return Err(Error::input(what, "no outer folds given"));
    }
    let values = outcome
        .folds
        .iter()
        .map(|f| f.score)
        .chain(outcome.summary.iter().flat_map(|(m, (l, h))| [*m, *l, *h]));
    let Some(range) = finite_range(values) else {
        return Err(Error::input(what, "no finite score to draw"));
    };
    let range = pad_range(range, 0.06);
    // Configurations in order of first win.
    let mut winners: Vec<&str> = Vec::new();
    for f in &outcome.folds {
        if !winners.contains(&f.winner.as_str()) {
            winners.push(&f.winner);
        }
    }
    let k = outcome.folds.len();
    let mut names: Vec<String> = (1..=k).map(|i| format!("outer fold {i}")).collect();
    if outcome.summary.is_some() {
        names.push("mean of the folds".to_string());
    }
    let mut marks = row_rules(names.len());
    let mut right = Vec::new();
    for (i, f) in outcome.folds.iter().enumerate() {
        let w = winners.iter().position(|w| *w == f.winner).unwrap_or(0);
        marks.push(Mark::Points {
            points: vec![(f.score, i as f64)],
            shape: class_marker(w),
            fill: class_colour(w),
            outline: Some(theme::OUTLINE),
            radius: 4.5,
        });
        right.push((i as f64, format!("{}: {}", format_value(f.score), f.winner)));
    }
    let mut notes = Vec::new();
    if let Some((mean, (lo, hi))) = outcome.summary {
        let row = k as f64;
        marks.push(Mark::Interval {
            at: row,
            lo,
            hi,
            horizontal: true,
            colour: INTERVAL,
            width: 2.2,
            cap: 5.0,
        });
        marks.push(Mark::Points {
            points: vec![(mean, row)],
            shape: Marker::Diamond,
            fill: MEAN,
            outline: Some(theme::WHITE),
            radius: 5.0,
        });
        right.push((row, super::compare::mean_and_interval(mean, (lo, hi))));
        notes.push(
            "the mean scores the whole tuning procedure (search included) on rows it never saw"
                .to_string(),
        );
    }
    let direction = if outcome.higher_is_better {
        "higher is better"
    } else {
        "lower is better"
    };
    let x_label = options.x_label.clone().unwrap_or_else(|| {
        format!(
            "{} on the outer fold ({direction})",
            super::axis_label(&outcome.metric)
        )
    });
    let x = AxisSpec::linear(range, linear_ticks(range.0, range.1, 6), x_label);
    let mut panel = XyPanel::new(x, AxisSpec::categories(&names));
    panel.grid = Grid::Vertical;
    panel.marks = marks;
    panel.right = right;
    panel.row_height = Some(26.0);
    let mut legend: Vec<Entry> = winners
        .iter()
        .enumerate()
        .map(|(i, w)| {
            let won = outcome.folds.iter().filter(|f| f.winner == *w).count();
            Entry::new(
                format!("{w} (won {won} of {k})"),
                Key::Marker {
                    shape: class_marker(i),
                    colour: class_colour(i),
                    outline: theme::OUTLINE,
                },
            )
        })
        .collect();
    if outcome.summary.is_some() {
        legend.push(Entry::new(
            "mean",
            Key::Marker {
                shape: Marker::Diamond,
                colour: MEAN,
                outline: theme::WHITE,
            },
        ));
        legend.push(Entry::new(
            "95% interval",
            Key::Interval { colour: INTERVAL },
        ));
    }
    let frame = options.frame("Nested cross-validation", Vec::new(), legend, notes);
    Ok(Figure::single(frame, Panel::Xy(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    #[test]
    fn folds_are_marked_by_their_winner() {
        let fold = |s: f64, w: &str| OuterFold {
            score: s,
            winner: w.into(),
        };
        let outcome = NestedOutcome {
            folds: vec![
                fold(0.86, "hidden 12"),
                fold(0.9, "hidden 4-4"),
                fold(0.84, "hidden 12"),
                fold(0.87, "hidden 12"),
                fold(0.82, "none"),
            ],
            metric: "accuracy".into(),
            higher_is_better: true,
            summary: Some((0.858, (0.83, 0.886))),
        };
        let figure = prepare(&outcome, &ChartOptions::default()).unwrap();
        let labels: Vec<&str> = figure
            .frame
            .legend
            .iter()
            .map(|e| e.label.as_str())
            .collect();
        assert_eq!(
            labels,
            [
                "hidden 12 (won 3 of 5)",
                "hidden 4-4 (won 1 of 5)",
                "none (won 1 of 5)",
                "mean",
                "95% interval"
            ]
        );
        assert_eq!(figure.xy(0).y.ticks.len(), 6);
        check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "nested",
        );
        assert!(
            nested_cross_validation(&NestedOutcome::default(), &ChartOptions::default()).is_err()
        );
    }
}
