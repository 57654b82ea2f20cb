//! Learning curves: loss per epoch for one or more training runs, with an
//! optional validation-accuracy panel below.

use super::draw::{
    self, draw_axes, draw_legend, integer_ticks, legend_width, linear_ticks, log_ticks, nice_range,
    split_legend, Align, Axis, Baseline, Canvas, Entry, Font, Grid, Key, Page, Rect, Scale,
    ScaleKind,
};
use super::theme::{self, size, Marker, Rgb};
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
    /// Size, title ("Learning curves") and axis labels ("epoch", "loss").
    pub chart: ChartOptions,
    /// Linear (default) or logarithmic loss axis.
    pub y_scale: YScale,
    /// Draw validation accuracy in a second panel below the loss, when any
    /// run recorded it. Default `true`.
    pub accuracy_panel: bool,
}

impl Default for LearningCurveOptions {
    fn default() -> LearningCurveOptions {
        LearningCurveOptions {
            chart: ChartOptions::default(),
            y_scale: YScale::Linear,
            accuracy_panel: true,
        }
    }
}

#[derive(Clone, Copy, PartialEq)]
enum Panel {
    Loss,
    Accuracy,
}

/// One quantity (training loss, validation loss, validation accuracy)
/// across runs, after cleaning and block-averaging.
struct Series {
    name: &'static str,
    colour: Rgb,
    marker: Marker,
    panel: Panel,
    /// One line per run that recorded it: (epoch, value), NaN for a gap.
    lines: Vec<Vec<(f64, f64)>>,
    /// Median over runs per epoch (only with two or more runs).
    median: Option<Vec<(f64, f64)>>,
}

/// Draws loss per epoch for one or more runs, with validation loss, the
/// early-stopping epoch and (optionally) validation accuracy.
///
/// With several runs each run is a thin line and a bold line shows the
/// median over runs at each epoch, so the spread between seeds stays visible:
///
/// ```text
/// median_e = median { value_e of run r : run r has a finite value at epoch e }
/// ```
///
/// The median stops at epochs where fewer than half of the runs have a value
/// (runs that stopped early), rather than following the longest run alone.
///
/// Runs longer than [`MAX_EPOCHS`] epochs are averaged in blocks of k epochs
/// (k = ceil(epochs / MAX_EPOCHS), mean of the finite values of the block,
/// drawn at the block's middle epoch) and a note says so. Non-finite values
/// (and, on a log scale, values at or below zero) are skipped and counted in
/// a note. Each run's `best_epoch` is drawn as a dashed vertical line.
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
/// assert!(chart.as_svg().contains("best epoch 3"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn learning_curves(runs: &[TrainingHistory], options: &LearningCurveOptions) -> Result<Chart> {
    let title = options.chart.check("Learning curves")?;
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

    let mut non_finite = 0usize;
    let mut non_positive = 0usize;
    let mut prepare = |values: &[f64], loss: bool| -> Vec<(f64, f64)> {
        let cleaned: Vec<f64> = values
            .iter()
            .map(|&v| {
                if !v.is_finite() {
                    non_finite += 1;
                    f64::NAN
                } else if loss && log && v <= 0.0 {
                    non_positive += 1;
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
    };

    let training: Vec<_> = runs
        .iter()
        .map(|r| prepare(&r.training_loss, true))
        .collect();
    let validation: Vec<_> = runs
        .iter()
        .filter_map(|r| r.validation_loss.as_deref())
        .map(|v| prepare(v, true))
        .collect();
    let accuracy: Vec<_> = if options.accuracy_panel {
        runs.iter()
            .filter_map(|r| r.validation_accuracy.as_deref())
            .map(|v| prepare(v, false))
            .collect()
    } else {
        Vec::new()
    };

    let mut series = Vec::new();
    for (name, colour, marker, panel, lines) in [
        (
            "training loss",
            theme::OKABE_ITO[0],
            Marker::Circle,
            Panel::Loss,
            training,
        ),
        (
            "validation loss",
            theme::OKABE_ITO[1],
            Marker::Square,
            Panel::Loss,
            validation,
        ),
        (
            "validation accuracy",
            theme::OKABE_ITO[2],
            Marker::Triangle,
            Panel::Accuracy,
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
            marker,
            panel,
            lines,
            median,
        });
    }
    if !series.iter().any(|s| s.panel == Panel::Loss) {
        let mut reason = String::from("no finite loss value to draw");
        if non_positive > 0 {
            reason.push_str(&format!(
                " ({} at or below zero cannot go on a log scale; use YScale::Linear)",
                group_digits(non_positive)
            ));
        } else {
            reason.push_str(&format!(
                " ({} NaN or infinite values)",
                group_digits(non_finite)
            ));
        }
        return Err(Error::input(what, reason));
    }
    let with_accuracy = series.iter().any(|s| s.panel == Panel::Accuracy);

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
                    "run {}: best epoch {epoch} is outside 1 to {epochs}; not marked",
                    k + 1
                ));
            }
        }
    }
    best.sort_unstable();

    // Legend.
    let several = runs.len() > 1;
    let mut entries: Vec<Entry> = series
        .iter()
        .map(|s| {
            let label = if several {
                format!("{} (median)", s.name)
            } else {
                s.name.to_string()
            };
            Entry::new(
                label,
                Key::Line {
                    colour: s.colour,
                    width: 3.0,
                    marker: Some(s.marker),
                },
            )
        })
        .collect();
    if several {
        entries.push(Entry::new(
            format!("single run (of {})", runs.len()),
            Key::Line {
                colour: theme::AXIS,
                width: 1.0,
                marker: None,
            },
        ));
    }
    if !best.is_empty() {
        let label = if best.len() > 1 {
            "best epoch of a run"
        } else {
            "best epoch"
        };
        entries.push(Entry::new(
            label,
            Key::Dashed {
                colour: theme::INK_MUTED,
            },
        ));
    }

    let x_label = options
        .chart
        .x_label
        .clone()
        .unwrap_or_else(|| "epoch".to_string());
    let y_label = options.chart.y_label.clone().unwrap_or_else(|| {
        if log {
            "loss (log scale)".to_string()
        } else {
            "loss".to_string()
        }
    });

    // Ranges and ticks.
    let values = |panel: Panel| {
        series
            .iter()
            .filter(move |s| s.panel == panel)
            .flat_map(|s| s.lines.iter().flatten().map(|p| p.1))
    };
    let (loss_lo, loss_hi) = draw::finite_range(values(Panel::Loss)).unwrap_or((0.0, 1.0));
    let (loss_range, loss_ticks, kind) = if log {
        let (lo, hi) = draw::log_range(loss_lo, loss_hi);
        ((lo, hi), log_ticks(lo, hi), ScaleKind::Log10)
    } else {
        let (mut lo, hi) = nice_range(loss_lo, loss_hi, 5);
        if loss_lo >= 0.0 && lo < 0.0 {
            lo = 0.0;
        }
        ((lo, hi), linear_ticks(lo, hi, 5), ScaleKind::Linear)
    };
    let accuracy_range = draw::finite_range(values(Panel::Accuracy)).map(|(lo, hi)| {
        let (mut lo, mut hi) = nice_range(lo, hi, 4);
        if lo < 0.0
            && values(Panel::Accuracy)
                .filter(|v| v.is_finite())
                .all(|v| v >= 0.0)
        {
            lo = 0.0;
        }
        if hi > 1.0
            && values(Panel::Accuracy)
                .filter(|v| v.is_finite())
                .all(|v| v <= 1.0)
        {
            hi = 1.0;
        }
        (lo, hi)
    });
    let accuracy_ticks = accuracy_range.map(|(lo, hi)| linear_ticks(lo, hi, 4));
    let x_range = if epochs <= 1 {
        (0.0, 2.0)
    } else {
        (1.0, epochs as f64)
    };
    let x_ticks: Vec<_> = integer_ticks(x_range.0, x_range.1, 8)
        .into_iter()
        .filter(|t| t.value >= 1.0)
        .collect();

    draw::render(
        options.chart.width,
        options.chart.height,
        &title,
        |canvas| {
            let page = Page::new(canvas, &title, notes.clone());
            page.draw(canvas)?;
            let (body, legend) = split_legend(page.content, legend_width(&entries, None), 0.34);
            let mut left_width = draw::left_gutter(&loss_ticks, true);
            if let Some(ticks) = &accuracy_ticks {
                left_width = left_width.max(draw::left_gutter(ticks, true));
            }
            let top = body.top
                + if best.is_empty() {
                    4.0
                } else {
                    size::NOTE + 8.0
                };
            let bottom = body.bottom - draw::bottom_gutter(true);
            let (loss_plot, accuracy_plot) = if with_accuracy {
                let gap = draw::bottom_gutter(false) + 14.0;
                let loss_height = (bottom - top - gap) * 0.62;
                (
                    Rect {
                        left: body.left + left_width,
                        top,
                        right: body.right - 8.0,
                        bottom: top + loss_height,
                    },
                    Some(Rect {
                        left: body.left + left_width,
                        top: top + loss_height + gap,
                        right: body.right - 8.0,
                        bottom,
                    }),
                )
            } else {
                (
                    Rect {
                        left: body.left + left_width,
                        top,
                        right: body.right - 8.0,
                        bottom,
                    },
                    None,
                )
            };
            let x_scale =
                |plot: Rect| Scale::new(ScaleKind::Linear, x_range, (plot.left, plot.right));
            let loss_axis = Axis {
                scale: Scale::new(kind, loss_range, (loss_plot.bottom, loss_plot.top)),
                ticks: loss_ticks.clone(),
                label: y_label.clone(),
            };
            let x_axis = |plot: Rect, label: &str| Axis {
                scale: x_scale(plot),
                ticks: x_ticks.clone(),
                label: label.to_string(),
            };
            let loss_x = x_axis(loss_plot, if with_accuracy { "" } else { &x_label });
            draw_axes(canvas, loss_plot, &loss_x, &loss_axis, Grid::Horizontal)?;
            draw_best_epochs(canvas, loss_plot, &loss_x.scale, &best, true)?;
            draw_series(
                canvas,
                &series,
                Panel::Loss,
                &loss_x.scale,
                &loss_axis.scale,
                several,
            )?;
            if let (Some(plot), Some(range), Some(ticks)) =
                (accuracy_plot, accuracy_range, &accuracy_ticks)
            {
                let axis = Axis {
                    scale: Scale::new(ScaleKind::Linear, range, (plot.bottom, plot.top)),
                    ticks: ticks.clone(),
                    label: "accuracy".to_string(),
                };
                let x = x_axis(plot, &x_label);
                draw_axes(canvas, plot, &x, &axis, Grid::Horizontal)?;
                draw_best_epochs(canvas, plot, &x.scale, &best, false)?;
                draw_series(
                    canvas,
                    &series,
                    Panel::Accuracy,
                    &x.scale,
                    &axis.scale,
                    several,
                )?;
            }
            draw_legend(
                canvas,
                legend.left,
                loss_plot.top,
                legend.width(),
                legend.height(),
                None,
                &entries,
            )?;
            Ok(())
        },
    )
}

/// The median over lines at each index, NaN where no line has a finite value.
fn median_line(lines: &[Vec<(f64, f64)>]) -> Vec<(f64, f64)> {
    let length = lines.iter().map(Vec::len).max().unwrap_or(0);
    (0..length)
        .map(|k| {
            let x = lines
                .iter()
                .find_map(|l| l.get(k))
                .map_or(k as f64 + 1.0, |p| p.0);
            let mut values: Vec<f64> = lines
                .iter()
                .filter_map(|l| l.get(k))
                .map(|p| p.1)
                .filter(|v| v.is_finite())
                .collect();
            values.sort_by(f64::total_cmp);
            let n = values.len();
            // Where fewer than half the runs are still going, the median
            // would jump to whichever run is longest: stop it there.
            let median = match n {
                _ if 2 * n < lines.len() => f64::NAN,
                _ if n % 2 == 1 => values[n / 2],
                _ => (values[n / 2 - 1] + values[n / 2]) / 2.0,
            };
            (x, median)
        })
        .collect()
}

/// Splits a line at its gaps into pieces of finite points, in pixels.
fn pieces(line: &[(f64, f64)], x: &Scale, y: &Scale) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut current = Vec::new();
    for &(ex, v) in line {
        if v.is_finite() {
            current.push((x.map(ex), y.map(v)));
        } else if !current.is_empty() {
            out.push(std::mem::take(&mut current));
        }
    }
    if !current.is_empty() {
        out.push(current);
    }
    out
}

fn draw_series(
    canvas: &Canvas,
    series: &[Series],
    panel: Panel,
    x: &Scale,
    y: &Scale,
    several: bool,
) -> Result<()> {
    let shown: Vec<(usize, &Series)> = series
        .iter()
        .enumerate()
        .filter(|(_, s)| s.panel == panel)
        .collect();
    if several {
        for (_, s) in &shown {
            for line in &s.lines {
                for piece in pieces(line, x, y) {
                    if piece.len() == 1 {
                        canvas.circle(piece[0].0, piece[0].1, 1.5, s.colour, 0.5)?;
                    } else {
                        canvas.line(&piece, s.colour, 0.35, 1.0)?;
                    }
                }
            }
        }
    }
    for (index, s) in &shown {
        let bold = match &s.median {
            Some(median) => median,
            None => &s.lines[0],
        };
        let pieces = pieces(bold, x, y);
        for piece in &pieces {
            canvas.line(piece, s.colour, 1.0, if several { 3.0 } else { 2.0 })?;
        }
        // Sparse markers, shifted per series so that they do not coincide.
        let points: Vec<(f64, f64)> = pieces.into_iter().flatten().collect();
        let step = points.len().div_ceil(10).max(1);
        let offset = (index * step / 3) % step;
        for &(px, py) in points.iter().skip(offset).step_by(step) {
            canvas.marker(s.marker, px, py, size::MARKER, s.colour, Some(theme::WHITE))?;
        }
    }
    Ok(())
}

fn draw_best_epochs(
    canvas: &Canvas,
    plot: Rect,
    x: &Scale,
    best: &[usize],
    label: bool,
) -> Result<()> {
    let mut distinct = best.to_vec();
    distinct.dedup();
    for &epoch in &distinct {
        let px = x.map(epoch as f64);
        canvas.dashed_line(
            (px, plot.top - 2.0),
            (px, plot.bottom),
            5.0,
            3.0,
            theme::INK_MUTED,
            1.0,
        )?;
    }
    if !label || best.is_empty() {
        return Ok(());
    }
    let median = best[best.len() / 2];
    let text = if best.len() == 1 {
        format!("best epoch {}", best[0])
    } else if distinct.len() == 1 {
        format!("best epoch {} (all {} runs)", best[0], best.len())
    } else {
        format!(
            "best epochs {}–{}, median {median}",
            best[0],
            best[best.len() - 1]
        )
    };
    let px = x.map(median as f64);
    let width = draw::text_width(&text, size::NOTE);
    let font = Font::new(size::NOTE, theme::INK_MUTED);
    let y = plot.top - 4.0;
    if px + width + 4.0 <= plot.right {
        canvas.text(&text, px + 3.0, y, font, Align::Left, Baseline::Bottom)
    } else {
        canvas.text(&text, px - 3.0, y, font, Align::Right, Baseline::Bottom)
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
        let chart =
            learning_curves(&[run(1, 120, Some(48))], &LearningCurveOptions::default()).unwrap();
        let r = check(&chart, "learning-one-run");
        assert!(r.has_text("Learning curves"));
        assert!(r.has_text("epoch") && r.has_text("loss") && r.has_text("accuracy"));
        assert!(
            r.has_text("validation accuracy"),
            "legend entry in full: {:?}",
            r.texts
        );
        assert!(r.has_text("training loss") && r.has_text("validation loss"));
        assert!(r.has_text("best epoch 48"));
        // One bold polyline per series.
        for colour in [
            theme::OKABE_ITO[0],
            theme::OKABE_ITO[1],
            theme::OKABE_ITO[2],
        ] {
            assert_eq!(
                r.count(
                    "polyline",
                    &[("stroke", &colour.to_svg()), ("stroke-width", "2")]
                ),
                1
            );
        }
        assert!(r.ink_share() > 0.02);
    }

    #[test]
    fn several_runs_show_thin_lines_and_a_median() {
        let runs: Vec<_> = (0..5)
            .map(|s| run(s, 80 + 5 * s as usize, Some(30 + 4 * s as usize)))
            .collect();
        let options = LearningCurveOptions {
            y_scale: YScale::Log,
            accuracy_panel: false,
            chart: ChartOptions::titled("Five seeds"),
        };
        let chart = learning_curves(&runs, &options).unwrap();
        let r = check(&chart, "learning-five-runs-log");
        assert!(r.has_text("Five seeds") && r.has_text("loss (log scale)"));
        assert!(r.has_text("training loss (median)") && r.has_text("single run (of 5)"));
        assert!(r.has_text("best epochs 30–46, median 38"), "{:?}", r.texts);
        let blue = theme::OKABE_ITO[0].to_svg();
        assert_eq!(
            r.count("polyline", &[("stroke", &blue), ("stroke-width", "1")]),
            5
        );
        // The median line and its legend key.
        assert_eq!(
            r.count("polyline", &[("stroke", &blue), ("stroke-width", "3")]),
            2
        );
        assert!(!r.has_text("validation accuracy"));
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
        assert!(r.has_text("best epoch 1"));
        assert!(
            r.filled_with(theme::OKABE_ITO[0]) >= 1,
            "the lone epoch is a visible marker"
        );
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
        let chart = learning_curves(&[a], &options).unwrap();
        let r = check(&chart, "learning-nan-log");
        assert!(
            r.has_text("skipped 2 non-finite values (NaN or infinite)"),
            "{:?}",
            r.texts
        );
        assert!(r.has_text("skipped 1 loss value at or below zero (not shown on a log scale)"));
        // The gaps split the training line into three pieces.
        let blue = theme::OKABE_ITO[0].to_svg();
        assert_eq!(
            r.count("polyline", &[("stroke", &blue), ("stroke-width", "2")]),
            3
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
        let chart = learning_curves(&[a], &LearningCurveOptions::default()).unwrap();
        let r = check(&chart, "learning-bad-best-epoch");
        assert!(r.has_text("run 1: best epoch 99 is outside 1 to 3; not marked"));
    }
}
