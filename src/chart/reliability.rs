//! Reliability diagrams: for bins of predicted probability, how often the
//! event happened, against the diagonal of perfect calibration.

use super::draw::{
    format_value, linear_ticks, nice_range, render, Arrangement, AxisSpec, Entry, Figure, Grid,
    Key, Mark, Panel, Stroke, XyPanel,
};
use super::theme::{self, Dash, Marker};
use super::{group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// One bin of predicted probabilities.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ReliabilityBin {
    /// The mean predicted probability of the rows in the bin.
    pub mean_predicted: f64,
    /// The share of those rows where the event happened.
    pub observed: f64,
    /// How many rows the bin holds.
    pub count: usize,
}

const BIN: theme::Rgb = theme::OKABE_ITO[0];
const BARS: theme::Rgb = theme::OKABE_ITO[5];

/// The 95% Wilson score interval for an observed share `p` of `n` rows
/// (Wilson, E. B. 1927, "Probable inference, the law of succession, and
/// statistical inference", Journal of the American Statistical
/// Association 22, 209-212):
///
/// ```text
/// z = 1.959964 (the normal 97.5% quantile)
/// centre = (p + z^2 / 2n) / (1 + z^2 / n)
/// half   = z / (1 + z^2 / n) * sqrt(p (1 - p) / n + z^2 / 4n^2)
/// ```
pub(crate) fn wilson(p: f64, n: usize) -> (f64, f64) {
    if n == 0 {
        return (0.0, 1.0);
    }
    let z = 1.959_963_984_540_054;
    let n = n as f64;
    let d = 1.0 + z * z / n;
    let centre = (p + z * z / (2.0 * n)) / d;
    let half = z / d * (p * (1.0 - p) / n + z * z / (4.0 * n * n)).sqrt();
    ((centre - half).max(0.0), (centre + half).min(1.0))
}

/// Draws a reliability diagram: each bin's observed frequency against its
/// mean predicted probability, with a 95% Wilson score interval (Wilson 1927),
/// the diagonal where they agree, and the bins' row counts in a panel
/// below. `event` names the probability ("P(scrap)").
///
/// The subtitle gives the expected calibration error over these bins
/// (Naeini, Cooper & Hauskrecht 2015, "Obtaining well calibrated
/// probabilities using Bayesian binning", AAAI):
///
/// ```text
/// ECE = sum_b (n_b / N) |observed_b - mean predicted_b|
/// ```
///
/// Bins with no rows or non-finite values are left out (noted).
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when no bin
/// holds rows, or a share lies outside [0, 1].
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{reliability_diagram, ReliabilityBin};
/// use stratanet::chart::ChartOptions;
///
/// let bins = vec![
///     ReliabilityBin { mean_predicted: 0.1, observed: 0.08, count: 120 },
///     ReliabilityBin { mean_predicted: 0.5, observed: 0.61, count: 40 },
///     ReliabilityBin { mean_predicted: 0.9, observed: 0.86, count: 90 },
/// ];
/// let chart = reliability_diagram(&bins, "P(scrap)", &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("expected calibration error"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn reliability_diagram(
    bins: &[ReliabilityBin],
    event: &str,
    options: &ChartOptions,
) -> Result<Chart> {
    render(&prepare(bins, event, options)?, options)
}

pub(crate) fn prepare(
    bins: &[ReliabilityBin],
    event: &str,
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "reliability diagram";
    if let Some(b) = bins.iter().find(|b| {
        (b.mean_predicted.is_finite() && !(0.0..=1.0).contains(&b.mean_predicted))
            || (b.observed.is_finite() && !(0.0..=1.0).contains(&b.observed))
    }) {
        return Err(Error::input(
            what,
            format!(
                "a bin has mean predicted {} and observed {}; both are shares between 0 and 1",
                b.mean_predicted, b.observed
            ),
        ));
    }
    let usable: Vec<&ReliabilityBin> = bins
        .iter()
        .filter(|b| b.count > 0 && b.mean_predicted.is_finite() && b.observed.is_finite())
        .collect();
    if usable.is_empty() {
        return Err(Error::input(what, "no bin holds rows with finite values"));
    }
    let mut notes = Vec::new();
    if usable.len() < bins.len() {
        notes.push(format!(
            "left out {} empty or non-finite bin{}",
            bins.len() - usable.len(),
            if bins.len() - usable.len() == 1 {
                ""
            } else {
                "s"
            }
        ));
    }
    notes.push("intervals: 95% Wilson score interval of each bin's observed share".to_string());
    let total: usize = usable.iter().map(|b| b.count).sum();
    let ece: f64 = usable
        .iter()
        .map(|b| b.count as f64 / total as f64 * (b.observed - b.mean_predicted).abs())
        .sum();
    let points: Vec<(f64, f64)> = usable
        .iter()
        .map(|b| (b.mean_predicted, b.observed))
        .collect();
    let mut marks = vec![Mark::Line {
        points: vec![(0.0, 0.0), (1.0, 1.0)],
        stroke: Stroke::solid(theme::INK_SOFT, 1.0).dashed(Dash::Dashed),
    }];
    for b in &usable {
        let (lo, hi) = wilson(b.observed, b.count);
        marks.push(Mark::Interval {
            at: b.mean_predicted,
            lo,
            hi,
            horizontal: false,
            colour: BIN,
            width: 1.4,
            cap: 3.5,
        });
    }
    marks.push(Mark::Line {
        points: points.clone(),
        stroke: Stroke::solid(BIN, 1.4),
    });
    marks.push(Mark::Points {
        points,
        shape: Marker::Circle,
        fill: BIN,
        outline: Some(theme::WHITE),
        radius: 4.0,
    });
    let ticks = linear_ticks(0.0, 1.0, 5);
    let x = AxisSpec::linear(
        (0.0, 1.0),
        ticks.clone(),
        options
            .x_label
            .clone()
            .unwrap_or_else(|| format!("mean predicted {event}")),
    );
    let y = AxisSpec::linear(
        (0.0, 1.0),
        ticks,
        options
            .y_label
            .clone()
            .unwrap_or_else(|| "observed share".to_string()),
    );
    let mut top = XyPanel::new(x.clone(), y);
    top.grid = Grid::Both;
    top.marks = marks;
    top.aspect = 0.75;
    let most = usable.iter().map(|b| b.count).max().unwrap_or(1) as f64;
    let count_range = nice_range(0.0, most, 3);
    let half = 0.012;
    let bars: Vec<(f64, f64, f64, f64, theme::Rgb)> = usable
        .iter()
        .map(|b| {
            (
                b.mean_predicted - half,
                b.mean_predicted + half,
                0.0,
                b.count as f64,
                BARS,
            )
        })
        .collect();
    let mut counts = XyPanel::new(
        x,
        AxisSpec::linear(
            count_range,
            linear_ticks(count_range.0, count_range.1, 3),
            "rows",
        ),
    );
    counts.grid = Grid::Horizontal;
    counts.marks = vec![Mark::Cells {
        cells: bars,
        opacity: 1.0,
    }];
    counts.aspect = 0.16;
    let mut top_x = top.x.clone();
    top_x.label.clear();
    top.x = top_x;
    let legend = vec![
        Entry::new(
            "one bin",
            Key::Marker {
                shape: Marker::Circle,
                colour: BIN,
                outline: theme::WHITE,
            },
        ),
        Entry::new("95% interval", Key::Interval { colour: BIN }),
        Entry::new(
            "perfect calibration",
            Key::Line {
                colour: theme::INK_SOFT,
                width: 1.0,
                dash: Dash::Dashed,
            },
        ),
        Entry::new(
            "rows in the bin",
            Key::Swatch {
                colour: BARS,
                opacity: 1.0,
            },
        ),
    ];
    let subtitle = vec![format!(
        "{} bins, {} rows; expected calibration error {}",
        usable.len(),
        group_digits(total),
        format_value(ece)
    )];
    let frame = options.frame(format!("Reliability of {event}"), subtitle, legend, notes);
    Ok(Figure {
        frame,
        panels: vec![Panel::Xy(top), Panel::Xy(counts)],
        arrangement: Arrangement::Column(vec![0.8, 0.2]),
    })
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    /// Wilson (1927) interval against the worked example in Newcombe, R. G.
    /// (1998), "Two-sided confidence intervals for the single proportion:
    /// comparison of seven methods", Statistics in Medicine 17, 857-872,
    /// table II: 81 of 263 gives 0.2553 to 0.3662, 0 of 10 gives 0 to 0.2775
    /// (method 3; figures recalled from memory of the table, and the
    /// formula reproduces both to four decimals).
    #[test]
    fn wilson_matches_newcombe() {
        let (lo, hi) = wilson(81.0 / 263.0, 263);
        assert!((lo - 0.2553).abs() < 5e-5, "{lo}");
        assert!((hi - 0.3662).abs() < 5e-5, "{hi}");
        let (lo, hi) = wilson(0.0, 10);
        assert_eq!(lo, 0.0);
        assert!((hi - 0.2775).abs() < 5e-5, "{hi}");
    }

    #[test]
    fn bins_become_points_intervals_and_counts() {
        let bins: Vec<ReliabilityBin> = (0..10)
            .map(|i| {
                let p = (i as f64 + 0.5) / 10.0;
                ReliabilityBin {
                    mean_predicted: p,
                    observed: (p * 1.15).min(1.0),
                    count: 20 + i * 7,
                }
            })
            .chain([ReliabilityBin {
                mean_predicted: 0.5,
                observed: 0.5,
                count: 0,
            }])
            .collect();
        let figure = prepare(&bins, "P(scrap)", &ChartOptions::default()).unwrap();
        assert!(figure
            .frame
            .notes
            .contains(&"left out 1 empty or non-finite bin".to_string()));
        let total: usize = bins.iter().map(|b| b.count).sum();
        let ece: f64 = bins
            .iter()
            .map(|b| b.count as f64 / total as f64 * (b.observed - b.mean_predicted).abs())
            .sum();
        assert_eq!(
            figure.frame.subtitle[0],
            format!(
                "10 bins, {total} rows; expected calibration error {}",
                format_value(ece)
            )
        );
        let intervals = figure
            .xy(0)
            .marks
            .iter()
            .filter(|m| matches!(m, Mark::Interval { .. }))
            .count();
        assert_eq!(intervals, 10);
        check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "reliability",
        );
        check(
            &reliability_diagram(&bins, "P(scrap)", &ChartOptions::single_column()).unwrap(),
            "reliability-column",
        );
    }

    #[test]
    fn bad_bins_are_refused() {
        let bad = [ReliabilityBin {
            mean_predicted: 1.2,
            observed: 0.5,
            count: 3,
        }];
        assert!(reliability_diagram(&bad, "P", &ChartOptions::default())
            .unwrap_err()
            .to_string()
            .contains("between 0 and 1"));
        let empty = [ReliabilityBin {
            mean_predicted: 0.2,
            observed: 0.5,
            count: 0,
        }];
        assert!(reliability_diagram(&empty, "P", &ChartOptions::default()).is_err());
    }
}
