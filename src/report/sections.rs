//! The sections of a report page, each from a library result: the table,
//! a fit (training, validation scores with intervals and baselines, what
//! the model learned), a cross-validation, a sweep, a comparison and a
//! hold-out score. The command line's `--report`, the demo's summary and
//! the notebook's analysis are put together from these.

use super::exhibits::{cv_exhibits, fit_exhibits, Exhibit};
use super::page::Page;
use crate::chart::{configuration_name, group_digits, named_reading, wilson, ChartOptions};
use crate::data::{Dataset, Target};
use crate::error::{ErrorKind, Result};
use crate::fit::Fitted;
use crate::notebook::{notes, table};
use crate::validate::{
    ClassificationMetrics, Comparison, CrossValidation, HoldOutScore, RegressionMetrics, Scores,
    Sweep,
};
use ndarray::Array2;

/// Adds the charts that could be drawn, skipping those that do not apply
/// (an `InvalidInput` refusal, such as ROC curves of a regression model).
///
/// # Errors
/// Any other charting error.
pub(crate) fn add_exhibits(
    page: &mut Page,
    exhibits: Vec<Exhibit>,
    folder: Option<&str>,
) -> Result<()> {
    for e in exhibits {
        match e.chart {
            Ok(chart) => {
                let file = folder.map(|f| format!("{f}/{}.svg", e.file));
                page.figure(&chart, &e.caption, file.as_deref());
            }
            Err(err) if matches!(err.kind(), ErrorKind::InvalidInput { .. }) => {}
            Err(err) => return Err(err),
        }
    }
    Ok(())
}

/// The table: its summary and its columns.
///
/// # Errors
/// A charting error other than a refusal.
pub(crate) fn table_section(page: &mut Page, data: &Dataset) -> Result<()> {
    page.section("The table");
    page.html(&data.to_html());
    let summary = data.summary(None);
    let (columns, rows_read) = summary.overview();
    let chart = summary.columns_chart();
    let missing: usize = columns.iter().map(|c| c.missing).sum();
    let mut caption = format!(
        "Each column read, but the target (columns dropped by option are not read): its role or decided type, its missing cells and its distinct values in the {} rows read",
        group_digits(rows_read)
    );
    caption.push_str(&match (missing, data.dropped_rows()) {
        (0, _) => " (no cell was missing).".to_string(),
        (_, 0) => format!(
            "; {} missing cells were kept and filled when fitting.",
            group_digits(missing)
        ),
        (_, dropped) => format!(
            "; {} rows with missing cells were dropped, leaving {}.",
            group_digits(dropped),
            group_digits(data.n_rows())
        ),
    });
    add_exhibits(
        page,
        vec![Exhibit {
            file: "columns",
            caption,
            chart,
        }],
        None,
    )
}

fn fmt(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.4}")
    } else {
        "undefined".to_string()
    }
}

fn interval(lo: f64, hi: f64) -> String {
    format!("[{}, {}]", fmt(lo), fmt(hi))
}

/// The class shares of `rows` of a labelled table, as the probability
/// rows of a predictor that always answers them (the baseline).
fn prior_predictions(
    labels: &[usize],
    classes: usize,
    train: &[usize],
    scored: usize,
) -> Array2<f64> {
    let mut counts = vec![0.0; classes];
    for &r in train {
        counts[labels[r]] += 1.0;
    }
    let total: f64 = counts.iter().sum::<f64>().max(1.0);
    Array2::from_shape_fn((scored, classes), |(_, c)| counts[c] / total)
}

/// The training rows' mean of each output, for every scored row.
fn mean_predictions(values: &Array2<f64>, train: &[usize], scored: usize) -> Array2<f64> {
    let outputs = values.ncols();
    let means: Vec<f64> = (0..outputs)
        .map(|j| train.iter().map(|&r| values[[r, j]]).sum::<f64>() / train.len().max(1) as f64)
        .collect();
    Array2::from_shape_fn((scored, outputs), |(_, j)| means[j])
}

/// The baseline's scores on `scored` rows, predicting from `train` rows
/// only: the training class shares for classes (its most probable class is
/// the most frequent one), the training mean for numbers.
pub(crate) fn baseline_scores(data: &Dataset, train: &[usize], scored: &[usize]) -> Result<Scores> {
    let target = data.target().select(scored);
    let predictions = match data.target() {
        Target::Classes { labels, names } => {
            prior_predictions(labels, names.len(), train, scored.len())
        }
        Target::Values { values, .. } => mean_predictions(values, train, scored.len()),
    };
    Scores::from_predictions(&target, predictions.view())
}

fn classification_rows(
    m: &ClassificationMetrics,
    b: &ClassificationMetrics,
    n: usize,
) -> Vec<Vec<String>> {
    let (lo, hi) = wilson(m.accuracy, n);
    let opt = |v: Option<f64>| v.map_or("—".to_string(), fmt);
    vec![
        vec![
            "accuracy".into(),
            fmt(m.accuracy),
            interval(lo, hi),
            fmt(b.accuracy),
        ],
        vec![
            "balanced accuracy".into(),
            fmt(m.balanced_accuracy),
            "—".into(),
            fmt(b.balanced_accuracy),
        ],
        vec![
            "macro F1".into(),
            fmt(m.macro_f1),
            "—".into(),
            fmt(b.macro_f1),
        ],
        vec![
            "log loss".into(),
            opt(m.log_loss),
            "—".into(),
            opt(b.log_loss),
        ],
        vec!["Brier score".into(), opt(m.brier), "—".into(), opt(b.brier)],
        vec!["ROC AUC".into(), opt(m.auc), "—".into(), opt(b.auc)],
    ]
}

fn regression_rows(m: &RegressionMetrics, b: &RegressionMetrics) -> Vec<Vec<String>> {
    vec![
        vec![
            "root mean squared error".into(),
            fmt(m.root_mean_squared_error),
            "—".into(),
            fmt(b.root_mean_squared_error),
        ],
        vec![
            "mean absolute error".into(),
            fmt(m.mean_absolute_error),
            "—".into(),
            fmt(b.mean_absolute_error),
        ],
        vec!["R²".into(), fmt(m.r_squared), "—".into(), fmt(b.r_squared)],
    ]
}

/// A fit: how training went, the scores on the validation rows with their
/// interval and the baseline's, and every chart of the fit.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn fit_sections(
    page: &mut Page,
    data: &Dataset,
    fitted: &Fitted,
    folder: Option<&str>,
) -> Result<()> {
    let model = fitted.model();
    let split = fitted.split();
    page.section("Training");
    page.paragraph(&format!(
        "{}. {} of the {} rows were trained on and {} held out as validation rows, which chose the epoch to keep{}.",
        crate::chart::model_line(model),
        group_digits(split.train.len()),
        group_digits(data.n_rows()),
        group_digits(split.validation.len()),
        if fitted.restarts().len() > 1 {
            format!(" and the best of {} restarts", fitted.restarts().len())
        } else {
            String::new()
        }
    ));
    page.html(&fitted.report().to_html());
    let exhibits = fit_exhibits(data, fitted);
    let (training, rest): (Vec<Exhibit>, Vec<Exhibit>) = exhibits
        .into_iter()
        .partition(|e| e.file == "learning-curves");
    add_exhibits(page, training, folder)?;
    let (learned, scored): (Vec<Exhibit>, Vec<Exhibit>) = rest.into_iter().partition(|e| {
        matches!(
            e.file,
            "weights" | "decision-map" | "components" | "hidden-layer"
        )
    });
    if !split.validation.is_empty() {
        page.section("Scores on the validation rows");
        let val = data.select(&split.validation);
        let (scores, _) = Scores::of(model, &val)?;
        let base = baseline_scores(data, &split.train, &split.validation)?;
        let (rows, header) = match (&scores, &base) {
            (Scores::Classification(m), Scores::Classification(b)) => (
                classification_rows(m, b, split.validation.len()),
                "accuracy's interval: 95% Wilson score interval (Wilson 1927) over the validation rows; the other scores need resampling for an interval (use cv).",
            ),
            (Scores::Regression(m), Scores::Regression(b)) => (
                regression_rows(m, b),
                "intervals need resampling (use cv).",
            ),
            _ => (Vec::new(), ""),
        };
        page.html(&table(
            &format!(
                "Scores on the {} {}",
                group_digits(split.validation.len()),
                crate::data::ScoredRows::Validation.label()
            ),
            &["score", "model", "95% interval", "baseline"],
            &rows,
        ));
        let baseline = match data.target() {
            Target::Classes { .. } => "the baseline predicts the training rows' class shares for every row (its class is always the most frequent one)",
            Target::Values { .. } => "the baseline predicts the training rows' mean for every row",
        };
        let mut n = vec![
            format!("The validation rows were held out from training but chose the epoch kept, so the model's scores on them are a little optimistic; {baseline}."),
            header.to_string(),
        ];
        n.extend(scores.notes());
        page.html(&notes(&n));
    }
    add_exhibits(page, scored, folder)?;
    page.section("What the model learned");
    add_exhibits(page, learned, folder)
}

/// Per-fold baseline values of `metric` over a cross-validation's folds.
/// A cross-validation: every metric's mean and interval next to the
/// baseline's on the same folds, and its charts.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn cv_section(
    page: &mut Page,
    data: &Dataset,
    cv: &CrossValidation,
    folder: Option<&str>,
) -> Result<()> {
    page.section("Cross-validation");
    page.paragraph(&format!(
        "{}: {}-fold cross-validation{} on {} rows; every score is on rows the fold's model never saw.",
        configuration_name(&cv.options),
        cv.cv.folds,
        if cv.cv.repeats > 1 {
            format!(", repeated {} times", cv.cv.repeats)
        } else {
            String::new()
        },
        group_digits(cv.n_rows)
    ));
    let mut rows = Vec::new();
    for s in &cv.summary {
        let b = &s.baseline;
        rows.push(vec![
            s.metric.name().replace('_', " "),
            fmt(s.summary.mean),
            interval(s.summary.ci_low, s.summary.ci_high),
            fmt(b.mean),
            interval(b.ci_low, b.ci_high),
        ]);
    }
    page.html(&table(
        &format!(
            "Scores on the {} of {} folds",
            cv.scored_rows().label(),
            cv.folds.len()
        ),
        &[
            "score",
            "model mean",
            "95% interval",
            "baseline mean",
            "baseline interval",
        ],
        &rows,
    ));
    let mut n = vec![
        "The baseline predicts each fold's training class shares (or training mean) for every held-out row.".to_string(),
        "The 95% interval is the corrected resampled interval (Nadeau & Bengio 2003), which allows for the folds sharing training rows, kept within the metric's range.".to_string(),
    ];
    n.extend(cv.notes());
    page.html(&notes(&n));
    add_exhibits(page, cv_exhibits(data, cv), folder)
}

/// A sweep: its table, the baseline on the same folds, its ranking chart
/// and the refitted best configuration's learning curves.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn sweep_section(page: &mut Page, sweep: &Sweep) -> Result<()> {
    page.section("Sweep");
    let metric = sweep.table.metric;
    page.html(&sweep.table.to_html());
    if let Some(first) = sweep.table.rows.first() {
        let b = &first.cross_validation.metric(metric)?.baseline;
        page.html(&notes(&[
            format!(
                "Baseline on the same folds (training class shares, or the training mean): {} {} {}.",
                metric.name().replace('_', " "),
                fmt(b.mean),
                interval(b.ci_low, b.ci_high)
            ),
            "The best row's score is optimistic: it was chosen on these same folds; nested cross-validation scores the choice itself.".to_string(),
        ]));
    }
    let chart = sweep.table.scores_chart();
    add_exhibits(
        page,
        vec![Exhibit {
            file: "sweep-scores",
            caption: format!(
                "Every configuration ranked by {}: fold scores (dots), mean (diamond) and 95% interval, best at the top.",
                metric.name().replace('_', " ")
            ),
            chart,
        }],
        None,
    )?;
    page.section("The best configuration, refitted on every row");
    page.paragraph(&crate::chart::model_line(sweep.best.model()));
    add_exhibits(
        page,
        vec![Exhibit {
            file: "sweep-best-learning-curves",
            caption: "Loss per epoch of the refit of the best configuration.".to_string(),
            chart: sweep.best.learning_curves_chart(),
        }],
        None,
    )
}

/// Two configurations compared on shared folds, under the names the
/// chart uses too.
///
/// # Errors
/// A metric that does not apply, or a charting error.
pub(crate) fn comparison_section(
    page: &mut Page,
    comparison: &Comparison,
    a_name: &str,
    b_name: &str,
) -> Result<()> {
    page.section("Comparing two configurations");
    page.html(&comparison.to_html_named(a_name, b_name));
    let metric = comparison.metric;
    add_exhibits(
        page,
        vec![Exhibit {
            file: "cv-comparison",
            caption: format!(
                "{} of \"{a_name}\" and \"{b_name}\" on the same folds: {}",
                crate::chart::axis_label(metric.name()),
                named_reading(&comparison.test.reading, a_name, b_name)
            ),
            chart: comparison.scores_chart(metric, a_name, b_name),
        }],
        Some("charts"),
    )
}

/// The one look at the held-out test rows, and its charts.
///
/// # Errors
/// A charting error.
pub(crate) fn holdout_section(
    page: &mut Page,
    fitted: &Fitted,
    test_rows: &Dataset,
    score: &HoldOutScore,
) -> Result<()> {
    page.section("One look at the held-out test rows");
    page.html(&score.to_html());
    let options = ChartOptions::default().scored(score.scored_rows());
    let mut exhibits = Vec::new();
    if let Scores::Classification(m) = &score.scores {
        exhibits.push(Exhibit {
            file: "confusion-matrix-test",
            caption: format!(
                "True against predicted class on the held-out test rows ({}).",
                score.caution()
            ),
            chart: m.confusion_chart_with(&options),
        });
        exhibits.push(Exhibit {
            file: "roc-test",
            caption: "ROC curves on the held-out test rows, one class against the rest."
                .to_string(),
            chart: fitted.model().roc_chart_with(test_rows, &options),
        });
    }
    add_exhibits(page, exhibits, Some("charts"))
}

/// The page of `stratanet fit --report`.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn fit_report(data: &Dataset, fitted: &Fitted, footer: Vec<String>) -> Result<String> {
    let mut page = Page::new(format!(
        "Fit on {}",
        crate::chart::source_name(data.source())
    ));
    table_section(&mut page, data)?;
    fit_sections(&mut page, data, fitted, None)?;
    Ok(page.finish(&lede(), &footer))
}

/// The page of `stratanet cv --report`.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn cv_report(
    data: &Dataset,
    cv: &CrossValidation,
    footer: Vec<String>,
) -> Result<String> {
    let mut page = Page::new(format!(
        "Cross-validation on {}",
        crate::chart::source_name(data.source())
    ));
    table_section(&mut page, data)?;
    cv_section(&mut page, data, cv, None)?;
    Ok(page.finish(&lede(), &footer))
}

/// The page of `stratanet sweep --report`.
///
/// # Errors
/// A scoring or charting error.
pub(crate) fn sweep_report(data: &Dataset, sweep: &Sweep, footer: Vec<String>) -> Result<String> {
    let mut page = Page::new(format!(
        "Sweep on {}",
        crate::chart::source_name(data.source())
    ));
    table_section(&mut page, data)?;
    sweep_section(&mut page, sweep)?;
    Ok(page.finish(&lede(), &footer))
}

fn lede() -> String {
    format!(
        "{} Every chart below is captioned with what it shows and from which rows.",
        crate::fit::CAUTION
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chart::testing::check;
    use crate::data::CsvOptions;
    use crate::fit::{fit, FitOptions};
    use crate::rng::seeded_rng;
    use crate::validate::{cross_validate, CvOptions};

    fn parts() -> Dataset {
        CsvOptions::new("verdict")
            .drop(&["part_id"])
            .read_str(
                include_str!("../../demo-data/parts.csv"),
                "demo-data/parts.csv",
            )
            .unwrap()
    }

    /// Every chart of a fit, a cross-validation and a regression fit, drawn
    /// from real results and checked as a reader would (text inside the
    /// canvas, legend over no data; see `chart::testing`).
    #[test]
    fn every_chart_of_a_job_reads_well() {
        let data = parts();
        let fitted = fit(
            &data,
            &FitOptions::default().hidden(&[6]).epochs(60).restarts(2),
            &mut seeded_rng(1),
        )
        .unwrap();
        let cv = cross_validate(
            &data,
            &FitOptions::default().hidden(&[4]).epochs(30),
            &CvOptions {
                folds: 3,
                ..CvOptions::default()
            },
            &mut seeded_rng(2),
        )
        .unwrap();
        let mut drawn = 0;
        for e in fit_exhibits(&data, &fitted)
            .into_iter()
            .chain(cv_exhibits(&data, &cv))
        {
            if let Ok(chart) = e.chart {
                check(&chart, &format!("job-{}", e.file));
                drawn += 1;
            }
        }
        assert_eq!(drawn, 12, "learning curves, weights, decision map, components, hidden layer, 3 validation charts, 4 cv charts (scores, learning curves, importance, reliability)");
        let sensors = CsvOptions::new("power_kw")
            .drop(&["run_id", "condition"])
            .read_str(
                include_str!("../../demo-data/sensors.csv"),
                "demo-data/sensors.csv",
            )
            .unwrap();
        let regression = fit(
            &sensors,
            &FitOptions::default().hidden(&[4]).epochs(40),
            &mut seeded_rng(3),
        )
        .unwrap();
        let files: Vec<&str> = fit_exhibits(&sensors, &regression)
            .into_iter()
            .filter_map(|e| {
                let chart = e.chart.ok()?;
                check(&chart, &format!("job-regression-{}", e.file));
                Some(e.file)
            })
            .collect();
        assert_eq!(
            files,
            [
                "learning-curves",
                "weights",
                "predicted-actual-validation",
                "residuals-validation"
            ]
        );
    }

    /// Fitting and charting under rayon pools of one and of two threads
    /// gives the same bytes: every chart of the fit and of the
    /// cross-validation, and the whole report page.
    #[test]
    fn charts_are_the_same_on_one_and_two_threads() {
        let run = |threads: usize| -> Vec<String> {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap();
            pool.install(|| {
                let data = parts();
                let fitted = fit(
                    &data,
                    &FitOptions::default().hidden(&[5]).epochs(40).restarts(3),
                    &mut seeded_rng(42),
                )
                .unwrap();
                let cv = cross_validate(
                    &data,
                    &FitOptions::default().hidden(&[3]).epochs(20),
                    &CvOptions {
                        folds: 3,
                        ..CvOptions::default()
                    },
                    &mut seeded_rng(43),
                )
                .unwrap();
                let mut out: Vec<String> = fit_exhibits(&data, &fitted)
                    .into_iter()
                    .chain(cv_exhibits(&data, &cv))
                    .filter_map(|e| e.chart.ok().map(|c| c.into_svg()))
                    .collect();
                out.push(fit_report(&data, &fitted, vec!["Seed 42".into()]).unwrap());
                out
            })
        };
        let (one, two) = (run(1), run(2));
        assert_eq!(one.len(), two.len());
        for (a, b) in one.iter().zip(&two) {
            assert!(a == b, "a chart differs between 1 and 2 threads");
        }
    }

    /// Baselines predict from the training rows only: the class shares of
    /// the training rows, whose accuracy on the scored rows is the scored
    /// rows' share of the training rows' most frequent class.
    #[test]
    fn the_baseline_uses_the_training_rows() {
        let data = parts();
        let labels = data.labels().unwrap();
        let train: Vec<usize> = (0..400).collect();
        let scored: Vec<usize> = (400..600).collect();
        let Scores::Classification(b) = baseline_scores(&data, &train, &scored).unwrap() else {
            panic!()
        };
        let mut counts = [0usize; 3];
        for &r in &train {
            counts[labels[r]] += 1;
        }
        let majority = (0..3)
            .max_by_key(|&c| (counts[c], std::cmp::Reverse(c)))
            .unwrap();
        let share = scored.iter().filter(|&&r| labels[r] == majority).count() as f64 / 200.0;
        assert!(
            (b.accuracy - share).abs() < 1e-12,
            "{} vs {share}",
            b.accuracy
        );
    }
}
