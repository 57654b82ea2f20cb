//! Learning curves: loss per epoch for one or more training runs, with an
//! optional validation-accuracy panel below.

use super::draw::{
    finite_range, integer_ticks, linear_ticks, log_range, log_ticks, nice_range, render,
    Arrangement, AxisSpec, Entry, Figure, Grid, Key, Mark, Panel, Stroke, XyPanel,
};
use super::theme::{self, Dash, Rgb};
use super::{group_digits, stride, Chart, ChartOptions, MAX_EPOCHS};
use crate::{Error, Result};

/// The per-epoch history of one training run (one restart or seed).
///
/// Values are indexed by epoch, the first entry being epoch 1. Non-finite
/// values (a diverged epoch) are skipped and counted in a note.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TrainingHistory {
    /// Training loss per epoch.
    pub training_loss: Vec<f64>,
    /// Validation loss per epoch, when a validation set was used.
    pub validation_loss: Option<Vec<f64>>,
    /// Validation accuracy (0 to 1) per epoch, for classifiers.
    pub validation_accuracy: Option<Vec<f64>>,
    /// The 1-based epoch whose weights were kept (early stopping's best
    /// epoch), marked on the chart with a dashed line.
    pub best_epoch: Option<usize>,
}

impl TrainingHistory {
    /// A run with training loss only.
    pub fn new(training_loss: Vec<f64>) -> TrainingHistory {
        TrainingHistory {
            training_loss,
            ..TrainingHistory::default()
        }
    }
}

/// How the loss axis is scaled.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum YScale {
    /// Evenly spaced values.
    #[default]
    Linear,
    /// Evenly spaced powers of ten; losses at or below zero cannot be shown
    /// and are skipped with a note.
    Log,
}

/// Options for [`learning_curves`].
#[derive(Clone, Debug, PartialEq)]
pub struct LearningCurveOptions {
    /// Size, headings and axis labels ("epoch", "loss").
    pub chart: ChartOptions,
    /// Linear (default) or logarithmic loss axis.
    pub y_scale: YScale,
    /// Draw validation accuracy in a second panel below the loss, when any
    /// run recorded it. Default `true`.
    pub accuracy_panel: bool,
    /// What one run is, for the subtitle and legend ("restart", "fold").
    /// Default "run".
    pub run_name: String,
}

impl Default for LearningCurveOptions {
    fn default() -> LearningCurveOptions {
        LearningCurveOptions {
            chart: ChartOptions::default(),
            y_scale: YScale::Linear,
            accuracy_panel: true,
            run_name: "run".to_string(),
        }
    }
}

/// One quantity across runs, after cleaning and block-averaging.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Series {
    pub name: &'static str,
    pub colour: Rgb,
    pub dash: Dash,
    pub accuracy: bool,
    /// One line per run that recorded it: (epoch, value), NaN for a gap.
    pub lines: Vec<Vec<(f64, f64)>>,
    /// The median over runs at each epoch every run reached (two or more runs).
    pub median: Option<Vec<(f64, f64)>>,
}

/// Draws loss per epoch for one or more runs, with validation loss, the
/// epoch each run kept and (optionally) validation accuracy.
///
/// Training loss is a solid line, validation loss a dashed one (so the two
/// differ in grey print too). With several runs each run is a thin line
/// and a bold line shows the median over runs at each epoch:
///
/// ```text
/// median_e = median { value_e of run r : r = 1..R, value_e finite }   for e <= E_first
/// E_first  = the last epoch of the run that stopped first
/// ```
///
/// The median is drawn only up to `E_first`, where every run is still
/// training, so it never jumps as runs stop; when runs stopped at
/// different epochs a dotted line marks `E_first` ("medians end"), and the
/// thin lines go on. (Where fewer than half the runs have a finite value
/// at an epoch, the median is left out there.)
///
/// Runs longer than [`MAX_EPOCHS`] epochs are averaged in blocks of k
/// epochs (k = ceil(epochs / MAX_EPOCHS), mean of the finite values of the
/// block, drawn at the block's middle epoch) and a note says so.
/// Non-finite values (and, on a log scale, values at or below zero) are
/// skipped and counted in a note. Each run's `best_epoch` is a dashed
/// vertical line.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when `runs`
/// is empty, every run's `training_loss` is empty, or no loss value is
/// finite; [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption) for
/// a size out of range.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{learning_curves, TrainingHistory, YScale};
/// use stratanet::chart::LearningCurveOptions;
///
/// let run = TrainingHistory {
///     training_loss: vec![0.9, 0.5, 0.3, 0.2, 0.15],
///     validation_loss: Some(vec![0.95, 0.6, 0.45, 0.47, 0.5]),
///     validation_accuracy: Some(vec![0.5, 0.7, 0.8, 0.8, 0.78]),
///     best_epoch: Some(3),
/// };
/// let options = LearningCurveOptions { y_scale: YScale::Log, ..Default::default() };
/// let chart = learning_curves(&[run], &options)?;
/// assert!(chart.as_svg().contains("epoch kept (3)"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn learning_curves(runs: &[TrainingHistory], options: &LearningCurveOptions) -> Result<Chart> {
    let figure = prepare(runs, options)?;
    render(&figure, &options.chart)
}

/// Cleans one quantity of one run and averages it in blocks of `block`.
fn clean(
    values: &[f64],
    block: usize,
    log: bool,
    non_finite: &mut usize,
    non_positive: &mut usize,
) -> Vec<(f64, f64)> {
    let cleaned: Vec<f64> = values
        .iter()
        .map(|&v| {
            if !v.is_finite() {
                *non_finite += 1;
                f64::NAN
            } else if log && v <= 0.0 {
                *non_positive += 1;
                f64::NAN
            } else {
                v
            }
        })
        .collect();
    cleaned
        .chunks(block)
        .enumerate()
        .map(|(b, chunk)| {
            let finite: Vec<f64> = chunk.iter().copied().filter(|v| v.is_finite()).collect();
            let mean = if finite.is_empty() {
                f64::NAN
            } else {
                finite.iter().sum::<f64>() / finite.len() as f64
            };
            let first = (b * block + 1) as f64;
            (first + (chunk.len() as f64 - 1.0) / 2.0, mean)
        })
        .collect()
}

/// The median over lines at each point up to the end of the shortest
/// line; NaN where fewer than half the lines have a finite value.
pub(crate) fn median_line(lines: &[Vec<(f64, f64)>]) -> Vec<(f64, f64)> {
    let length = lines.iter().map(Vec::len).min().unwrap_or(0);
    (0..length)
        .map(|k| {
            let x = lines[0][k].0;
            let mut values: Vec<f64> = lines
                .iter()
                .map(|l| l[k].1)
                .filter(|v| v.is_finite())
                .collect();
            values.sort_by(f64::total_cmp);
            let n = values.len();
            let median = match n {
                _ if 2 * n < lines.len() => f64::NAN,
                _ if n % 2 == 1 => values[n / 2],
                _ => (values[n / 2 - 1] + values[n / 2]) / 2.0,
            };
            (x, median)
        })
        .collect()
}

fn plural(n: usize, one: &str) -> String {
    if n == 1 {
        one.to_string()
    } else {
        format!("{one}s")
    }
}

/// What the chart will show: the series, axes, legend and notes.
pub(crate) fn prepare(runs: &[TrainingHistory], options: &LearningCurveOptions) -> Result<Figure> {
    let what = "learning curves";
    if runs.is_empty() {
        return Err(Error::input(
            what,
            "no runs given; pass at least one TrainingHistory",
        ));
    }
    if runs.iter().all(|r| r.training_loss.is_empty()) {
        return Err(Error::input(
            what,
            format!(
                "the training_loss of every run ({}) is empty; record at least one epoch",
                runs.len()
            ),
        ));
    }
    let log = options.y_scale == YScale::Log;
    let epochs = runs
        .iter()
        .flat_map(|r| {
            [
                Some(r.training_loss.len()),
                r.validation_loss.as_ref().map(Vec::len),
                r.validation_accuracy.as_ref().map(Vec::len),
            ]
        })
        .flatten()
        .max()
        .unwrap_or(0);
    let block = stride(epochs, MAX_EPOCHS);
    let (mut non_finite, mut non_positive) = (0usize, 0usize);
    let mut lines_of =
        |pick: &dyn Fn(&TrainingHistory) -> Option<&[f64]>, loss: bool| -> Vec<Vec<(f64, f64)>> {
            runs.iter()
                .filter_map(pick)
                .map(|v| clean(v, block, log && loss, &mut non_finite, &mut non_positive))
                .collect()
        };
    let training = lines_of(&|r| Some(&r.training_loss[..]), true);
    let validation = lines_of(&|r| r.validation_loss.as_deref(), true);
    let accuracy = if options.accuracy_panel {
        lines_of(&|r| r.validation_accuracy.as_deref(), false)
    } else {
        Vec::new()
    };
    let several = runs.len() > 1;
    let mut series = Vec::new();
    for (name, colour, dash, is_accuracy, lines) in [
        (
            "training loss",
            theme::OKABE_ITO[0],
            Dash::Solid,
            false,
            training,
        ),
        (
            "validation loss",
            theme::OKABE_ITO[1],
            Dash::Dashed,
            false,
            validation,
        ),
        (
            "validation accuracy",
            theme::OKABE_ITO[2],
            Dash::Solid,
            true,
            accuracy,
        ),
    ] {
        if lines.iter().all(|l| l.iter().all(|p| !p.1.is_finite())) {
            continue;
        }
        let median = (lines.len() > 1).then(|| median_line(&lines));
        series.push(Series {
            name,
            colour,
            dash,
            accuracy: is_accuracy,
            lines,
            median,
        });
    }
    if !series.iter().any(|s| !s.accuracy) {
        let reason = if non_positive > 0 {
            format!(
                "no finite loss value to draw ({} at or below zero cannot go on a log scale; use YScale::Linear)",
                group_digits(non_positive)
            )
        } else {
            format!(
                "no finite loss value to draw ({} NaN or infinite values)",
                group_digits(non_finite)
            )
        };
        return Err(Error::input(what, reason));
    }

    let mut notes = Vec::new();
    if block > 1 {
        notes.push(format!(
            "showing {} of {} epochs: each point is the mean of {block} epochs",
            group_digits(epochs.div_ceil(block)),
            group_digits(epochs)
        ));
    }
    if non_finite > 0 {
        notes.push(format!(
            "skipped {} non-finite value{} (NaN or infinite)",
            group_digits(non_finite),
            if non_finite == 1 { "" } else { "s" }
        ));
    }
    if non_positive > 0 {
        notes.push(format!(
            "skipped {} loss value{} at or below zero (not shown on a log scale)",
            group_digits(non_positive),
            if non_positive == 1 { "" } else { "s" }
        ));
    }
    let mut best: Vec<usize> = Vec::new();
    for (k, run) in runs.iter().enumerate() {
        if let Some(epoch) = run.best_epoch {
            if epoch >= 1 && epoch <= epochs {
                best.push(epoch);
            } else {
                notes.push(format!(
                    "{} {}: epoch kept {epoch} is outside 1 to {epochs}; not marked",
                    options.run_name,
                    k + 1
                ));
            }
        }
    }
    best.sort_unstable();
    // Where the medians end: the end of the first run to stop.
    let lengths: Vec<usize> = runs.iter().map(|r| r.training_loss.len()).collect();
    let first_stop = lengths.iter().copied().min().unwrap_or(0);
    let medians_end = (several && lengths.iter().any(|&l| l != first_stop))
        .then(|| {
            series[0]
                .median
                .as_ref()
                .and_then(|m| m.last())
                .map(|p| p.0)
        })
        .flatten();

    // Legend.
    let bold = if several { 2.4 } else { 2.0 };
    let mut legend: Vec<Entry> = series
        .iter()
        .map(|s| {
            Entry::new(
                s.name,
                Key::Line {
                    colour: s.colour,
                    width: bold,
                    dash: s.dash,
                },
            )
        })
        .collect();
    if !best.is_empty() {
        let mut distinct = best.clone();
        distinct.dedup();
        let label = match distinct.as_slice() {
            [one] if best.len() == 1 => format!("epoch kept ({one})"),
            [one] => format!(
                "epoch kept ({one}, all {} {})",
                best.len(),
                plural(best.len(), &options.run_name)
            ),
            _ => format!(
                "epoch kept by each {} ({}–{}, median {})",
                options.run_name,
                best[0],
                best[best.len() - 1],
                best[best.len() / 2]
            ),
        };
        legend.push(Entry::new(
            label,
            Key::Line {
                colour: theme::INK_MUTED,
                width: 1.0,
                dash: Dash::Dashed,
            },
        ));
    }
    let subtitle = if several {
        vec![format!(
            "{} {}: bold lines are the median over them, thin lines each {}; {}",
            runs.len(),
            plural(runs.len(), &options.run_name),
            options.run_name,
            match medians_end {
                Some(e) => format!(
                    "the medians end at epoch {}, where the first {} stopped",
                    e.round(),
                    options.run_name
                ),
                None => "every one ran the same epochs".to_string(),
            }
        )]
    } else {
        Vec::new()
    };

    // Axes.
    let loss_values = series
        .iter()
        .filter(|s| !s.accuracy)
        .flat_map(|s| s.lines.iter().flatten().map(|p| p.1));
    let (lo, hi) = finite_range(loss_values).unwrap_or((0.0, 1.0));
    let y_label = options.chart.y_label.clone().unwrap_or_else(|| {
        if log {
            "loss (log scale)".to_string()
        } else {
            "loss".to_string()
        }
    });
    let loss_axis = if log {
        let range = log_range(lo, hi);
        AxisSpec::log(range, log_ticks(range.0, range.1), y_label)
    } else {
        let (mut a, b) = nice_range(lo, hi, 5);
        if lo >= 0.0 && a < 0.0 {
            a = 0.0;
        }
        AxisSpec::linear((a, b), linear_ticks(a, b, 5), y_label)
    };
    let x_range = if epochs <= 1 {
        (0.0, 2.0)
    } else {
        (1.0, epochs as f64)
    };
    let x_ticks: Vec<_> = integer_ticks(x_range.0, x_range.1, 8)
        .into_iter()
        .filter(|t| t.value >= 1.0)
        .collect();
    let x_label = options
        .chart
        .x_label
        .clone()
        .unwrap_or_else(|| "epoch".to_string());
    let x_axis = AxisSpec::linear(x_range, x_ticks, x_label);
    let with_accuracy = series.iter().any(|s| s.accuracy);

    let panel = |accuracy: bool, y: AxisSpec, x: AxisSpec| -> XyPanel {
        let mut marks = Vec::new();
        let mut distinct = best.clone();
        distinct.dedup();
        for &e in &distinct {
            marks.push(Mark::VRule {
                x: e as f64,
                stroke: Stroke::solid(theme::INK_MUTED, 1.0).dashed(Dash::Dashed),
            });
        }
        if let Some(e) = medians_end {
            marks.push(Mark::VRule {
                x: e,
                stroke: Stroke::solid(theme::INK_SOFT, 1.0).dashed(Dash::Dotted),
            });
        }
        for s in series.iter().filter(|s| s.accuracy == accuracy) {
            if several {
                for line in &s.lines {
                    marks.push(Mark::Line {
                        points: line.clone(),
                        stroke: Stroke::solid(s.colour, 0.9).faded(0.5),
                    });
                }
            }
            let main = s.median.as_ref().unwrap_or(&s.lines[0]);
            marks.push(Mark::Line {
                points: main.clone(),
                stroke: Stroke::solid(s.colour, bold).dashed(s.dash),
            });
        }
        let mut p = XyPanel::new(x, y);
        p.grid = Grid::Horizontal;
        p.marks = marks;
        if !accuracy {
            if let Some(e) = medians_end {
                p.top.push((e, "medians end".to_string()));
            }
        }
        p
    };
    let frame = options
        .chart
        .frame("Learning curves", subtitle, legend, notes);
    if with_accuracy {
        let values = series
            .iter()
            .filter(|s| s.accuracy)
            .flat_map(|s| s.lines.iter().flatten().map(|p| p.1));
        let (lo, hi) = finite_range(values).unwrap_or((0.0, 1.0));
        let (mut a, mut b) = nice_range(lo, hi, 4);
        if lo >= 0.0 {
            a = a.max(0.0);
        }
        if hi <= 1.0 {
            b = b.min(1.0);
        }
        let accuracy_axis = AxisSpec::linear((a, b), linear_ticks(a, b, 4), "accuracy");
        let mut top_x = x_axis.clone().unlabelled();
        top_x.tick_labels = true;
        top_x.label.clear();
        Ok(Figure {
            frame,
            panels: vec![
                Panel::Xy(panel(false, loss_axis, top_x)),
                Panel::Xy({
                    let mut p = panel(true, accuracy_axis, x_axis);
                    p.aspect = 0.25;
                    p
                }),
            ],
            arrangement: Arrangement::Column(vec![0.64, 0.36]),
        })
    } else {
        Ok(Figure::single(
            frame,
            Panel::Xy(panel(false, loss_axis, x_axis)),
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    /// A decaying loss with a little deterministic wiggle, per seed.
    fn run(seed: u64, epochs: usize, best: Option<usize>) -> TrainingHistory {
        let wiggle =
            |e: usize| (((e as u64 * 7919 + seed * 104_729) % 1000) as f64 / 1000.0 - 0.5) * 0.03;
        let train: Vec<f64> = (1..=epochs)
            .map(|e| 0.05 + 0.9 * (-(e as f64) / (15.0 + seed as f64)).exp() + wiggle(e))
            .collect();
        let validation: Vec<f64> = (1..=epochs)
            .map(|e| {
                0.12 + 0.85 * (-(e as f64) / (12.0 + seed as f64)).exp()
                    + 0.0015 * e as f64
                    + wiggle(e + 3)
            })
            .collect();
        let accuracy: Vec<f64> = (1..=epochs)
            .map(|e| 0.95 - 0.45 * (-(e as f64) / 10.0).exp() + wiggle(e) / 2.0)
            .collect();
        TrainingHistory {
            training_loss: train,
            validation_loss: Some(validation),
            validation_accuracy: Some(accuracy),
            best_epoch: best,
        }
    }

    #[test]
    fn one_run_with_validation_and_accuracy() {
        let figure = prepare(&[run(1, 120, Some(48))], &LearningCurveOptions::default()).unwrap();
        assert_eq!(figure.panels.len(), 2);
        let labels: Vec<&str> = figure
            .frame
            .legend
            .iter()
            .map(|e| e.label.as_str())
            .collect();
        assert_eq!(
            labels,
            [
                "training loss",
                "validation loss",
                "validation accuracy",
                "epoch kept (48)"
            ]
        );
        // One line per series, no thin lines, no median.
        let lines = |p: &XyPanel| {
            p.marks
                .iter()
                .filter(|m| matches!(m, Mark::Line { .. }))
                .count()
        };
        assert_eq!(lines(figure.xy(0)), 2);
        assert_eq!(lines(figure.xy(1)), 1);
        let chart = render(&figure, &ChartOptions::default()).unwrap();
        let r = check(&chart, "learning-one-run");
        assert!(r.has_text("Learning curves") && r.has_text("epoch") && r.has_text("accuracy"));
    }

    /// The medians stop where the first run stopped, never jumping as runs
    /// end, and the chart says so.
    #[test]
    fn medians_end_where_the_first_run_stops() {
        let runs: Vec<_> = (0..4)
            .map(|s| run(s, 50 + 20 * s as usize, Some(30 + 4 * s as usize)))
            .collect();
        let options = LearningCurveOptions {
            run_name: "restart".into(),
            ..Default::default()
        };
        let figure = prepare(&runs, &options).unwrap();
        let median = |p: &XyPanel| -> Vec<(f64, f64)> {
            match p
                .marks
                .iter()
                .rev()
                .find(|m| matches!(m, Mark::Line { stroke, .. } if stroke.width > 2.0))
            {
                Some(Mark::Line { points, .. }) => points.clone(),
                _ => panic!("no median"),
            }
        };
        let m = median(figure.xy(1));
        assert_eq!(m.len(), 50, "the median runs to the shortest run's end");
        // At epoch 10 the median of four values is the mean of the middle two.
        let mut at10: Vec<f64> = runs
            .iter()
            .map(|r| r.validation_accuracy.as_ref().unwrap()[9])
            .collect();
        at10.sort_by(f64::total_cmp);
        assert!((m[9].1 - (at10[1] + at10[2]) / 2.0).abs() < 1e-12);
        assert_eq!(figure.xy(0).top, vec![(50.0, "medians end".to_string())]);
        assert!(
            figure.frame.subtitle[0]
                .contains("the medians end at epoch 50, where the first restart stopped"),
            "{:?}",
            figure.frame.subtitle
        );
        let thin = figure
            .xy(0)
            .marks
            .iter()
            .filter(|m| matches!(m, Mark::Line { stroke, .. } if stroke.width < 1.0))
            .count();
        assert_eq!(thin, 8, "four thin lines per loss series");
        let chart = render(&figure, &options.chart).unwrap();
        check(&chart, "learning-four-restarts");
    }

    #[test]
    fn output_is_byte_identical() {
        let runs: Vec<_> = (0..3).map(|s| run(s, 60, Some(20))).collect();
        let a = learning_curves(&runs, &LearningCurveOptions::default()).unwrap();
        let b = learning_curves(&runs, &LearningCurveOptions::default()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }

    #[test]
    fn empty_input_is_an_error() {
        let err = learning_curves(&[], &LearningCurveOptions::default()).unwrap_err();
        assert!(err.to_string().contains("no runs"), "{err}");
        let err = learning_curves(
            &[TrainingHistory::default()],
            &LearningCurveOptions::default(),
        )
        .unwrap_err();
        assert!(err.to_string().contains("empty"), "{err}");
        let nan = TrainingHistory::new(vec![f64::NAN; 4]);
        let err = learning_curves(&[nan], &LearningCurveOptions::default()).unwrap_err();
        assert!(err.to_string().contains("no finite loss"), "{err}");
    }

    #[test]
    fn a_single_epoch_works() {
        let one = TrainingHistory {
            best_epoch: Some(1),
            ..TrainingHistory::new(vec![0.7])
        };
        let chart = learning_curves(&[one], &LearningCurveOptions::default()).unwrap();
        let r = check(&chart, "learning-single-epoch");
        assert!(r.has_text("epoch kept (1)"));
    }

    #[test]
    fn nan_and_non_positive_values_are_skipped_with_a_note() {
        let mut a = run(2, 50, None);
        a.training_loss[10] = f64::NAN;
        a.training_loss[11] = f64::INFINITY;
        a.training_loss[30] = 0.0;
        let options = LearningCurveOptions {
            y_scale: YScale::Log,
            ..Default::default()
        };
        let figure = prepare(&[a], &options).unwrap();
        assert!(figure
            .frame
            .notes
            .contains(&"skipped 2 non-finite values (NaN or infinite)".to_string()));
        assert!(figure.frame.notes.contains(
            &"skipped 1 loss value at or below zero (not shown on a log scale)".to_string()
        ));
        check(
            &render(&figure, &options.chart).unwrap(),
            "learning-nan-log",
        );
    }

    #[test]
    fn long_runs_are_averaged_in_blocks() {
        let long = TrainingHistory::new((1..=10_000).map(|e| 1.0 / (e as f64).sqrt()).collect());
        let chart = learning_curves(&[long], &LearningCurveOptions::default()).unwrap();
        let r = check(&chart, "learning-long-run");
        assert!(
            r.has_text("showing 2,000 of 10,000 epochs: each point is the mean of 5 epochs"),
            "{:?}",
            r.texts
        );
        assert!(r.svg.len() < 200_000);
    }

    #[test]
    fn a_bad_best_epoch_is_reported_not_drawn() {
        let a = TrainingHistory {
            best_epoch: Some(99),
            ..TrainingHistory::new(vec![0.5, 0.4, 0.3])
        };
        let figure = prepare(&[a], &LearningCurveOptions::default()).unwrap();
        assert_eq!(
            figure.frame.notes,
            ["run 1: epoch kept 99 is outside 1 to 3; not marked"]
        );
    }
}
