//! The charts of a fit and of a cross-validation, each with the file name
//! the command line gives it and a caption saying what it shows: one list
//! for chart folders, report pages and the demo.

use crate::chart::{decision_features, Chart, ChartOptions, HiddenView};
use crate::data::{Dataset, ScoredRows};
use crate::error::Result;
use crate::fit::Fitted;
use crate::rng::seeded_rng;
use crate::validate::importance::ImportanceOptions;
use crate::validate::metrics::Binning;
use crate::validate::{CrossValidation, Metric, Scores};

/// A chart, its file name (without `.svg`) and its caption.
pub(crate) struct Exhibit {
    pub file: &'static str,
    pub caption: String,
    pub chart: Result<Chart>,
}

fn exhibit(file: &'static str, caption: impl Into<String>, chart: Result<Chart>) -> Exhibit {
    Exhibit {
        file,
        caption: caption.into(),
        chart,
    }
}

/// Every chart of one fit. A chart that does not apply (ROC for a
/// regression model) comes back as an error of kind `InvalidInput`, which
/// callers skip.
pub(crate) fn fit_exhibits(data: &Dataset, fitted: &Fitted) -> Vec<Exhibit> {
    let model = fitted.model();
    let split = fitted.split();
    let train = data.select(&split.train);
    let on_train = ChartOptions::default().scored(ScoredRows::Training);
    let on_validation = ChartOptions::default().scored(ScoredRows::Validation);
    let mut out = vec![
        exhibit(
            "learning-curves",
            if fitted.restarts().len() > 1 {
                "Loss per epoch on the training rows (solid) and on the validation rows (dashed): thin lines for each restart, bold lines their medians; dashed vertical lines mark the epoch each restart kept."
            } else {
                "Loss per epoch on the training rows (solid) and on the validation rows (dashed); the dashed vertical line is the epoch whose weights were kept."
            },
            fitted.learning_curves_chart(),
        ),
        exhibit(
            "weights",
            "Every weight and bias of the fitted network, one square each, coloured by sign and size; neighbouring blocks share the units along the edge they face.",
            model.weights_chart(),
        ),
    ];
    if model.is_classifier() {
        if let Some((x, y)) = decision_features(data) {
            out.push(exhibit(
                "decision-map",
                "The class the model predicts over two inputs, every other input held at one real value (its most frequent level or its median; listed in the subtitle); the points are the training rows.",
                model.decision_map_chart_with(&train, &x, &y, &crate::chart::DecisionMapOptions { chart: on_train.clone(), ..Default::default() }),
            ));
        }
        if data.n_features() > 2 {
            out.push(exhibit(
                "components",
                "The training rows in the first two principal components of the standardised inputs, ringed where the model predicts the wrong class, and how far each row lies from that plane.",
                model.components_chart_with(&train, &on_train),
            ));
        }
        if model.network().n_hidden_layers() > 0 {
            out.push(exhibit(
                "hidden-layer",
                "What the first hidden layer makes of the training rows, coloured by their true class.",
                model.hidden_layer_chart_with(&train, 1, HiddenView::Auto, &on_train),
            ));
        }
        if !split.validation.is_empty() {
            let val = data.select(&split.validation);
            let note = "These rows were held out from training but chose the stopping epoch and the restart, so their scores are a little optimistic.";
            if let Ok((Scores::Classification(m), _)) = Scores::of(model, &val) {
                out.push(exhibit(
                    "confusion-matrix-validation",
                    format!("True against predicted class on the validation rows, shaded by the share of each true class. {note}"),
                    m.confusion_chart_with(&on_validation),
                ));
            }
            out.push(exhibit(
                "roc-validation",
                format!("ROC curves on the validation rows, one class against the rest. {note}"),
                model.roc_chart_with(&val, &on_validation),
            ));
            out.push(exhibit(
                "precision-recall-validation",
                format!("Precision against recall on the validation rows; the steps enclose the average precision. {note}"),
                model.precision_recall_chart_with(&val, &on_validation),
            ));
        }
    } else {
        let (rows, options) = if split.validation.is_empty() {
            (train, ChartOptions::default().scored(ScoredRows::InSample))
        } else {
            (data.select(&split.validation), on_validation)
        };
        out.push(exhibit(
            "predicted-actual-validation",
            "Predicted against actual values; points on the dashed line are predicted exactly.",
            model.predicted_actual_chart_with(&rows, &options),
        ));
        out.push(exhibit(
            "residuals-validation",
            "Residuals (actual minus predicted) against predicted values; a pattern shows what the model misses.",
            model.residuals_chart_with(&rows, &options),
        ));
    }
    out
}

/// The metric a cross-validation's scores chart shows.
pub(crate) fn headline_metric(data: &Dataset) -> Metric {
    if data.labels().is_some() {
        Metric::Accuracy
    } else {
        Metric::RootMeanSquaredError
    }
}

/// Every chart of a cross-validation: the fold scores, the learning
/// curves, and what only the out-of-fold rows can say: permutation
/// importance (shuffles drawn from the fixed seed 1, so a rerun gives the
/// same chart) and, for classes, the reliability of the probabilities.
pub(crate) fn cv_exhibits(data: &Dataset, cv: &CrossValidation) -> Vec<Exhibit> {
    let metric = headline_metric(data);
    let mut out = vec![
        exhibit(
            "cv-scores",
            format!(
                "{} on each fold's held-out rows (dots), their mean (diamond) and its 95% interval.",
                crate::chart::axis_label(metric.name())
            ),
            cv.scores_chart(metric),
        ),
        exhibit(
            "cv-learning-curves",
            "Loss per epoch of every fold's fit; bold lines are medians over the folds up to the epoch where the first fold stopped.",
            cv.learning_curves_chart(),
        ),
    ];
    let options = ImportanceOptions::default();
    out.push(exhibit(
        "permutation-importance",
        format!(
            "How much the {} on each fold's held-out rows drops when one input column is shuffled ({} shuffles per fold, a text column's levels together), with its 95% interval across folds; grey where the interval holds zero.",
            crate::chart::axis_label(metric.name()),
            options.shuffles
        ),
        cv.permutation_importance(data, &options, &mut seeded_rng(1))
            .and_then(|i| i.chart()),
    ));
    if data.labels().is_some() {
        out.push(exhibit(
            "reliability",
            "Reliability of the out-of-fold probabilities: in each of ten bins of equal row counts, the observed share against the mean predicted probability, with 95% Wilson intervals; on the dashed diagonal they agree.",
            cv.reliability_chart(data, Binning::EqualCount(10)),
        ));
    }
    out
}

/// The charts of a fit as (file, chart) pairs, for chart folders.
pub(crate) fn fit_charts(data: &Dataset, fitted: &Fitted) -> Vec<(&'static str, Result<Chart>)> {
    fit_exhibits(data, fitted)
        .into_iter()
        .map(|e| (e.file, e.chart))
        .collect()
}

/// The charts of a cross-validation as (file, chart) pairs.
pub(crate) fn cv_charts(
    data: &Dataset,
    cv: &CrossValidation,
) -> Vec<(&'static str, Result<Chart>)> {
    cv_exhibits(data, cv)
        .into_iter()
        .map(|e| (e.file, e.chart))
        .collect()
}
