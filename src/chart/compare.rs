//! Cross-validation comparisons: per-fold scores, mean and interval of
//! several configurations, one row each, best first.

use super::draw::{
    finite_range, format_value, linear_ticks, pad_range, render, AxisSpec, Entry, Figure, Grid,
    Key, Mark, Panel, Stroke, XyPanel,
};
use super::theme::{self, Marker};
use super::{group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// One configuration's cross-validation result.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ConfigurationScores {
    /// The configuration's name, e.g. "2 x 16 tanh, lr 0.05".
    pub name: String,
    /// The metric on each fold.
    pub fold_scores: Vec<f64>,
    /// The mean over folds.
    pub mean: f64,
    /// The 95% interval for the mean, (low, high).
    pub interval: (f64, f64),
}

/// Natural row height, in pixels.
const ROW: f64 = 30.0;
/// Rows shown at most; the worst beyond it are left out (noted).
const MAX_ROWS: usize = 40;

/// Colours of the three marks, kept apart from class colours' meaning.
pub(crate) const FOLD: theme::Rgb = theme::OKABE_ITO[5];
pub(crate) const INTERVAL: theme::Rgb = theme::OKABE_ITO[0];
pub(crate) const MEAN: theme::Rgb = theme::INK;

/// Draws several configurations' cross-validation scores, one row each,
/// sorted by mean with the best at the top.
///
/// Each row shows the fold scores as small circles (spread vertically by a
/// fixed golden-ratio sequence so that equal scores stay visible), the 95%
/// interval as a bar with end caps, the mean as a diamond, and the numbers
/// at the right: `mean [low, high]`. `higher_is_better` says which way
/// "best" lies (true for accuracy, false for a loss or an error rate).
///
/// Non-finite fold scores are skipped (noted); a configuration whose mean
/// is not finite goes to the bottom without a diamond. At most 40 rows
/// are shown (at a fixed height, as many as leave 16 pixels each); the
/// worst configurations beyond that are left out (noted). The chart's
/// natural height grows with the rows, so two configurations make a short
/// chart and forty a tall one.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when
/// `configurations` is empty or holds no finite value at all.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{cross_validation_comparison, ConfigurationScores};
/// use stratanet::chart::ChartOptions;
///
/// let small = ConfigurationScores {
///     name: "1 x 8".into(),
///     fold_scores: vec![0.90, 0.92, 0.88, 0.91, 0.89],
///     mean: 0.90,
///     interval: (0.885, 0.915),
/// };
/// let large = ConfigurationScores {
///     name: "2 x 32".into(),
///     fold_scores: vec![0.93, 0.95, 0.94, 0.92, 0.96],
///     mean: 0.94,
///     interval: (0.925, 0.955),
/// };
/// let chart = cross_validation_comparison(&[small, large], "accuracy", true, &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("0.940 [0.925, 0.955]"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn cross_validation_comparison(
    configurations: &[ConfigurationScores],
    metric: &str,
    higher_is_better: bool,
    options: &ChartOptions,
) -> Result<Chart> {
    let figure = prepare(configurations, metric, higher_is_better, options)?;
    render(&figure, options)
}

/// The legend of a ranking: fold score, mean, interval.
pub(crate) fn ranking_legend(fold: &str, interval: &str) -> Vec<Entry> {
    vec![
        Entry::new(
            fold,
            Key::Marker {
                shape: Marker::Circle,
                colour: FOLD,
                outline: theme::OUTLINE,
            },
        ),
        Entry::new(
            "mean",
            Key::Marker {
                shape: Marker::Diamond,
                colour: MEAN,
                outline: theme::WHITE,
            },
        ),
        Entry::new(interval, Key::Interval { colour: INTERVAL }),
    ]
}

/// The marks of one ranked row at category `row`: scattered values
/// (spread across the row by a fixed golden-ratio sequence, so equal
/// values stay visible), the interval with caps, and the mean diamond.
pub(crate) fn row_marks(row: f64, values: &[f64], mean: f64, interval: (f64, f64)) -> Vec<Mark> {
    let (lo, hi) = (interval.0.min(interval.1), interval.0.max(interval.1));
    let mut marks = vec![Mark::Interval {
        at: row,
        lo,
        hi,
        horizontal: true,
        colour: INTERVAL,
        width: 2.2,
        cap: 5.0,
    }];
    let scattered: Vec<(f64, f64)> = values
        .iter()
        .enumerate()
        .filter(|(_, v)| v.is_finite())
        .map(|(f, &v)| (v, row + ((f as f64 * 0.618_033_988_75).fract() - 0.5) * 0.5))
        .collect();
    if !scattered.is_empty() {
        marks.push(Mark::Points {
            points: scattered,
            shape: Marker::Circle,
            fill: FOLD,
            outline: Some(theme::OUTLINE),
            radius: 3.2,
        });
    }
    if mean.is_finite() {
        marks.push(Mark::Points {
            points: vec![(mean, row)],
            shape: Marker::Diamond,
            fill: MEAN,
            outline: Some(theme::WHITE),
            radius: 5.0,
        });
    }
    marks
}

/// Light rules between category rows.
pub(crate) fn row_rules(rows: usize) -> Vec<Mark> {
    (1..rows)
        .map(|k| Mark::HRule {
            y: k as f64 - 0.5,
            stroke: Stroke::solid(theme::GRID, 0.8),
        })
        .collect()
}

/// `mean [low, high]` for the numbers beside a row.
pub(crate) fn mean_and_interval(mean: f64, interval: (f64, f64)) -> String {
    let (lo, hi) = (interval.0.min(interval.1), interval.0.max(interval.1));
    format!(
        "{} [{}, {}]",
        format_value(mean),
        format_value(lo),
        format_value(hi)
    )
}

/// What the ranking will show.
pub(crate) fn prepare(
    configurations: &[ConfigurationScores],
    metric: &str,
    higher_is_better: bool,
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "cross-validation comparison";
    if configurations.is_empty() {
        return Err(Error::input(
            what,
            "no configurations given; pass at least one ConfigurationScores",
        ));
    }
    let all_values = configurations.iter().flat_map(|c| {
        c.fold_scores
            .iter()
            .copied()
            .chain([c.mean, c.interval.0, c.interval.1])
    });
    if finite_range(all_values).is_none() {
        return Err(Error::input(
            what,
            "no finite score, mean or interval to draw",
        ));
    }
    // Best first; non-finite means last; ties keep the given order.
    let mut order: Vec<usize> = (0..configurations.len()).collect();
    order.sort_by(|&a, &b| {
        let (ma, mb) = (configurations[a].mean, configurations[b].mean);
        match (ma.is_finite(), mb.is_finite()) {
            (true, true) if higher_is_better => mb.total_cmp(&ma),
            (true, true) => ma.total_cmp(&mb),
            (x, y) => y.cmp(&x),
        }
        .then(a.cmp(&b))
    });
    let mut notes = Vec::new();
    let skipped: usize = configurations
        .iter()
        .map(|c| c.fold_scores.iter().filter(|v| !v.is_finite()).count())
        .sum();
    if skipped > 0 {
        notes.push(format!(
            "skipped {} non-finite fold score{}",
            group_digits(skipped),
            if skipped == 1 { "" } else { "s" }
        ));
    }
    for c in configurations.iter().filter(|c| !c.mean.is_finite()) {
        notes.push(format!("{}: the mean is not a number; shown last", c.name));
    }
    // Rows that fit: all at the natural height (up to MAX_ROWS); at a
    // given height, as many as leave 16 px each.
    let fit = match options.height {
        Some(h) => (((h as f64 - 150.0) / 16.0).floor() as usize).max(1),
        None => MAX_ROWS,
    };
    if order.len() > fit {
        notes.push(format!(
            "showing the best {fit} of {} configurations",
            order.len()
        ));
        order.truncate(fit);
    }
    let direction = if higher_is_better {
        "higher is better"
    } else {
        "lower is better"
    };
    let x_label = options
        .x_label
        .clone()
        .unwrap_or_else(|| format!("{} ({direction})", super::axis_label(metric)));
    // The axis covers the rows shown only.
    let shown_values = order.iter().flat_map(|&i| {
        let c = &configurations[i];
        c.fold_scores
            .iter()
            .copied()
            .chain([c.mean, c.interval.0, c.interval.1])
    });
    let range = pad_range(finite_range(shown_values).unwrap_or((0.0, 1.0)), 0.04);
    let names: Vec<String> = order
        .iter()
        .map(|&i| configurations[i].name.clone())
        .collect();
    let mut marks = row_rules(order.len());
    let mut right = Vec::new();
    for (k, &i) in order.iter().enumerate() {
        let c = &configurations[i];
        marks.extend(row_marks(k as f64, &c.fold_scores, c.mean, c.interval));
        right.push((k as f64, mean_and_interval(c.mean, c.interval)));
    }
    let x = AxisSpec::linear(range, linear_ticks(range.0, range.1, 6), x_label);
    let mut panel = XyPanel::new(x, AxisSpec::categories(&names));
    panel.grid = Grid::Vertical;
    panel.marks = marks;
    panel.right = right;
    panel.row_height = Some(ROW);
    let legend = ranking_legend("fold score", "95% interval of the mean");
    let frame = options.frame(
        "Configurations compared by cross-validation",
        Vec::new(),
        legend,
        notes,
    );
    Ok(Figure::single(frame, Panel::Xy(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    fn configuration(name: &str, centre: f64, folds: usize) -> ConfigurationScores {
        let fold_scores: Vec<f64> = (0..folds)
            .map(|f| centre + (((f * 37 + name.len() * 11) % 17) as f64 / 17.0 - 0.5) * 0.04)
            .collect();
        let mean = fold_scores.iter().sum::<f64>() / folds as f64;
        ConfigurationScores {
            name: name.into(),
            fold_scores,
            mean,
            interval: (mean - 0.012, mean + 0.012),
        }
    }

    fn four() -> Vec<ConfigurationScores> {
        vec![
            configuration("1 x 8 tanh", 0.90, 10),
            configuration("2 x 16 tanh", 0.94, 10),
            configuration("1 x 32 relu, weight decay 1e-4", 0.92, 10),
            configuration("linear (no hidden layer)", 0.84, 10),
        ]
    }

    #[test]
    fn rows_are_sorted_best_first() {
        let chart =
            cross_validation_comparison(&four(), "accuracy", true, &ChartOptions::default())
                .unwrap();
        let r = check(&chart, "compare-accuracy");
        assert!(r.has_text("Configurations compared by cross-validation"));
        assert!(r.has_text("accuracy (higher is better)"));
        let names: Vec<&String> = r
            .texts
            .iter()
            .filter(|t| t.contains("tanh") || t.contains("linear") || t.contains("relu"))
            .collect();
        assert_eq!(names[0], "2 x 16 tanh");
        assert_eq!(names[3], "linear (no hidden layer)");
        // 40 fold circles plus the key's, 4 mean diamonds plus the key's.
        assert_eq!(r.filled_with(FOLD), 41);
        assert!(
            r.has_text("fold score")
                && r.has_text("mean")
                && r.has_text("95% interval of the mean")
        );
        let best = four()[1].clone();
        let summary = format!(
            "{} [{}, {}]",
            format_value(best.mean),
            format_value(best.interval.0),
            format_value(best.interval.1)
        );
        assert!(r.has_text(&summary), "{summary} in {:?}", r.texts);
    }

    #[test]
    fn lower_is_better_reverses_the_order() {
        let errors: Vec<ConfigurationScores> = four()
            .into_iter()
            .map(|c| ConfigurationScores {
                fold_scores: c.fold_scores.iter().map(|s| 1.0 - s).collect(),
                mean: 1.0 - c.mean,
                interval: (1.0 - c.interval.1, 1.0 - c.interval.0),
                ..c
            })
            .collect();
        let chart =
            cross_validation_comparison(&errors, "error_rate", false, &ChartOptions::default())
                .unwrap();
        let r = check(&chart, "compare-error-rate");
        assert!(r.has_text("error rate (lower is better)"));
        let first = r.texts.iter().position(|t| t == "2 x 16 tanh").unwrap();
        let last = r
            .texts
            .iter()
            .position(|t| t == "linear (no hidden layer)")
            .unwrap();
        assert!(first < last);
    }

    #[test]
    fn edge_cases() {
        assert!(
            cross_validation_comparison(&[], "accuracy", true, &ChartOptions::default()).is_err()
        );
        let nothing = ConfigurationScores {
            name: "empty".into(),
            fold_scores: vec![f64::NAN],
            mean: f64::NAN,
            interval: (f64::NAN, f64::NAN),
        };
        assert!(cross_validation_comparison(
            std::slice::from_ref(&nothing),
            "accuracy",
            true,
            &ChartOptions::default()
        )
        .is_err());
        let mut configurations = four();
        configurations.push(nothing);
        configurations[0].fold_scores[3] = f64::INFINITY;
        let chart = cross_validation_comparison(
            &configurations,
            "accuracy",
            true,
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "compare-nan");
        assert!(
            r.has_text("skipped 2 non-finite fold scores"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("empty: the mean is not a number; shown last"));
        let one_fold = vec![ConfigurationScores {
            name: "only".into(),
            fold_scores: vec![0.8],
            mean: 0.8,
            interval: (0.8, 0.8),
        }];
        let chart =
            cross_validation_comparison(&one_fold, "accuracy", true, &ChartOptions::default())
                .unwrap();
        check(&chart, "compare-one-fold");
    }

    #[test]
    fn many_configurations_keep_the_best() {
        let many: Vec<ConfigurationScores> = (0..60)
            .map(|i| configuration(&format!("config {i}"), 0.8 + i as f64 * 0.002, 5))
            .collect();
        let chart =
            cross_validation_comparison(&many, "accuracy", true, &ChartOptions::default()).unwrap();
        let r = check(&chart, "compare-many");
        assert!(
            r.has_text_containing("configurations") && r.has_text_containing("showing the best"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("config 59") && !r.has_text("config 0"));
    }

    #[test]
    fn output_is_byte_identical() {
        let a = cross_validation_comparison(&four(), "accuracy", true, &ChartOptions::default())
            .unwrap();
        let b = cross_validation_comparison(&four(), "accuracy", true, &ChartOptions::default())
            .unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
