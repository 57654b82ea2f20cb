//! Cross-validation comparisons: per-fold scores, mean and interval of
//! several configurations, one row each, best first.

use super::draw::{
    self, draw_axes, fit_text, format_value, linear_ticks, text_width, Align, Axis, Baseline,
    Canvas, Font, Grid, Page, Rect, Scale, ScaleKind,
};
use super::theme::{self, size, Marker};
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

/// Row height above which rows stop growing, in pixels.
const MAX_ROW: f64 = 80.0;
/// Row height below which rows are left out (the worst ones, noted).
const MIN_ROW: f64 = 16.0;

/// Colours of the three marks, kept apart from class colours' meaning.
const FOLD: theme::Rgb = theme::OKABE_ITO[5];
const INTERVAL: theme::Rgb = theme::OKABE_ITO[0];
const MEAN: theme::Rgb = theme::INK;

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
/// is not finite goes to the bottom without a diamond. When rows would be
/// shorter than 16 pixels, the worst configurations are left out (noted).
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
    let title = options.check("Cross-validation comparison")?;
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
    let Some(range) = draw::finite_range(all_values) else {
        return Err(Error::input(
            what,
            "no finite score, mean or interval to draw",
        ));
    };

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
    let direction = if higher_is_better {
        "higher is better"
    } else {
        "lower is better"
    };
    let x_label = options
        .x_label
        .clone()
        .unwrap_or_else(|| format!("{} ({direction})", super::axis_label(metric)));

    // How many rows fit (a pure function of the size), so the note is known before drawing.
    let fits = |notes: usize| {
        let placeholder = vec![String::new(); notes];
        let page = Page::sized(
            options.width as f64,
            options.height as f64,
            &title,
            placeholder,
        );
        let rows_space = page.content.height() - 28.0 - draw::bottom_gutter(true);
        ((rows_space / MIN_ROW).floor() as usize).max(1)
    };
    if order.len() > fits(notes.len()) {
        // The note itself takes a line.
        let fit = fits(notes.len() + 1);
        notes.push(format!(
            "showing the best {fit} of {} configurations",
            order.len()
        ));
        order.truncate(fit);
    }

    let summaries: Vec<String> = order
        .iter()
        .map(|&i| {
            let c = &configurations[i];
            let (lo, hi) = (
                c.interval.0.min(c.interval.1),
                c.interval.0.max(c.interval.1),
            );
            format!(
                "{} [{}, {}]",
                format_value(c.mean),
                format_value(lo),
                format_value(hi)
            )
        })
        .collect();
    // The axis covers the rows shown only.
    let shown_values = order.iter().flat_map(|&i| {
        let c = &configurations[i];
        c.fold_scores
            .iter()
            .copied()
            .chain([c.mean, c.interval.0, c.interval.1])
    });
    let ticks_range = draw::pad_range(draw::finite_range(shown_values).unwrap_or(range), 0.04);
    let ticks = linear_ticks(ticks_range.0, ticks_range.1, 6);

    draw::render(options.width, options.height, &title, |canvas| {
        let page = Page::new(canvas, &title, notes.clone());
        page.draw(canvas)?;
        let content = page.content;
        let key_bottom = draw_key(canvas, content.left, content.top)?;
        let name_width = order
            .iter()
            .map(|&i| text_width(&configurations[i].name, size::LABEL))
            .fold(0.0, f64::max)
            .min(content.width() * 0.36);
        let summary_width = summaries
            .iter()
            .map(|s| text_width(s, size::TICK))
            .fold(0.0, f64::max);
        let bottom = content.bottom - draw::bottom_gutter(true);
        let row = ((bottom - key_bottom - 8.0) / order.len() as f64).min(MAX_ROW);
        let plot = Rect {
            left: content.left + name_width + 14.0,
            top: key_bottom + 8.0,
            right: content.right - summary_width - 16.0,
            bottom: key_bottom + 8.0 + row * order.len() as f64,
        };
        let x = Axis {
            scale: Scale::new(ScaleKind::Linear, ticks_range, (plot.left, plot.right)),
            ticks: ticks.clone(),
            label: x_label.clone(),
        };
        let y = Axis {
            scale: Scale::new(ScaleKind::Linear, (0.0, 1.0), (plot.bottom, plot.top)),
            ticks: Vec::new(),
            label: String::new(),
        };
        // Alternate row bands help the eye follow a row to its numbers.
        for k in (1..order.len()).step_by(2) {
            let band = Rect {
                top: plot.top + k as f64 * row,
                bottom: plot.top + (k + 1) as f64 * row,
                left: plot.left,
                right: content.right,
            };
            canvas.fill_rect(band, theme::GRID, 0.45)?;
        }
        draw_axes(canvas, plot, &x, &y, Grid::None)?;
        for tick in &x.ticks {
            let px = x.scale.map(tick.value);
            canvas.line(&[(px, plot.top), (px, plot.bottom)], theme::GRID, 1.0, 1.0)?;
        }
        for (k, &i) in order.iter().enumerate() {
            let c = &configurations[i];
            let cy = plot.top + (k as f64 + 0.5) * row;
            let name_font = if k == 0 {
                Font::new(size::LABEL, theme::INK).bold()
            } else {
                Font::new(size::LABEL, theme::INK)
            };
            let name = fit_text(&c.name, size::LABEL, name_width);
            canvas.text(
                &name,
                plot.left - 10.0,
                cy,
                name_font,
                Align::Right,
                Baseline::Middle,
            )?;
            draw_row(canvas, c, cy, row, &x.scale)?;
            let summary_font = Font::new(size::TICK, theme::INK_SOFT);
            canvas.text(
                &summaries[k],
                plot.right + 12.0,
                cy,
                summary_font,
                Align::Left,
                Baseline::Middle,
            )?;
        }
        Ok(())
    })
}

/// Fold circles, the interval bar and the mean diamond for one row.
fn draw_row(canvas: &Canvas, c: &ConfigurationScores, cy: f64, row: f64, x: &Scale) -> Result<()> {
    let (lo, hi) = (
        c.interval.0.min(c.interval.1),
        c.interval.0.max(c.interval.1),
    );
    if lo.is_finite() && hi.is_finite() {
        let (l, h) = (x.map(lo), x.map(hi));
        canvas.line(&[(l, cy), (h, cy)], INTERVAL, 1.0, 3.0)?;
        for end in [l, h] {
            canvas.line(&[(end, cy - 6.0), (end, cy + 6.0)], INTERVAL, 1.0, 2.0)?;
        }
    }
    let spread = (row * 0.5).min(22.0);
    for (f, &score) in c.fold_scores.iter().enumerate() {
        if score.is_finite() {
            let jitter = ((f as f64 * 0.618_033_988_75).fract() - 0.5) * spread;
            canvas.marker(
                Marker::Circle,
                x.map(score),
                cy + jitter,
                3.5,
                FOLD,
                Some(theme::OUTLINE),
            )?;
        }
    }
    if c.mean.is_finite() {
        canvas.marker(
            Marker::Diamond,
            x.map(c.mean),
            cy,
            5.5,
            MEAN,
            Some(theme::WHITE),
        )?;
    }
    Ok(())
}

/// The key as one line at the top: fold score, mean, 95% interval. Returns its bottom.
fn draw_key(canvas: &Canvas, x: f64, y: f64) -> Result<f64> {
    let font = Font::new(size::LEGEND, theme::INK_SOFT);
    let cy = y + 8.0;
    let mut px = x;
    canvas.marker(
        Marker::Circle,
        px + 6.0,
        cy,
        3.5,
        FOLD,
        Some(theme::OUTLINE),
    )?;
    canvas.text(
        "fold score",
        px + 16.0,
        cy,
        font,
        Align::Left,
        Baseline::Middle,
    )?;
    px += 16.0 + text_width("fold score", size::LEGEND) + 18.0;
    canvas.marker(Marker::Diamond, px + 6.0, cy, 5.5, MEAN, Some(theme::WHITE))?;
    canvas.text("mean", px + 16.0, cy, font, Align::Left, Baseline::Middle)?;
    px += 16.0 + text_width("mean", size::LEGEND) + 18.0;
    canvas.line(&[(px, cy), (px + 20.0, cy)], INTERVAL, 1.0, 3.0)?;
    for end in [px, px + 20.0] {
        canvas.line(&[(end, cy - 5.0), (end, cy + 5.0)], INTERVAL, 1.0, 2.0)?;
    }
    canvas.text(
        "95% interval of the mean",
        px + 28.0,
        cy,
        font,
        Align::Left,
        Baseline::Middle,
    )?;
    Ok(y + 20.0)
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
        assert!(r.has_text("Cross-validation comparison"));
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
