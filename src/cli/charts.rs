//! The command line's chart folders: every chart of a fit or a
//! cross-validation written as SVG into one folder.

use crate::chart::{self, Chart, HiddenView};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::Fitted;
use crate::validate::{CrossValidation, Metric, Scores};
use std::path::{Path, PathBuf};

pub(crate) fn ensure_dir(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, "creating the folder", e))
}

pub(crate) fn save_all(dir: &Path, charts: Vec<(&str, Result<Chart>)>) -> Result<Vec<PathBuf>> {
    ensure_dir(dir)?;
    let mut written = Vec::new();
    for (name, c) in charts {
        // A chart that cannot be drawn for this data (e.g. ROC for a
        // regression model) is skipped, not fatal; other errors are.
        match c {
            Ok(c) => {
                let path = dir.join(format!("{name}.svg"));
                c.save(&path)?;
                written.push(path);
            }
            Err(e) if matches!(e.kind(), crate::error::ErrorKind::InvalidInput { .. }) => {}
            Err(e) => return Err(e),
        }
    }
    Ok(written)
}

/// The names (without `.svg`) of every chart [`fit_charts`] may write.
pub(crate) const FIT_CHART_FILES: [&str; 8] = [
    "learning-curves",
    "network",
    "decision-map",
    "decision-map-components",
    "hidden-layer",
    "confusion-matrix-validation",
    "roc-validation",
    "precision-recall-validation",
];

/// The names (without `.svg`) of every chart [`cv_charts`] may write.
pub(crate) const CV_CHART_FILES: [&str; 2] = ["cv-learning-curves", "cv-scores"];

/// The charts of one fit, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub(crate) fn fit_charts(data: &Dataset, fitted: &Fitted, dir: &Path) -> Result<Vec<PathBuf>> {
    let model = fitted.model();
    let split = fitted.split();
    let train = data.select(&split.train);
    let mut charts: Vec<(&str, Result<Chart>)> = vec![
        ("learning-curves", fitted.learning_curves_chart()),
        ("network", model.network_chart()),
    ];
    if model.is_classifier() {
        if let Some((x, y)) = chart::decision_features(data) {
            charts.push(("decision-map", model.decision_map_chart(&train, &x, &y)));
        }
        if data.n_features() > 2 {
            charts.push((
                "decision-map-components",
                model.decision_map_components_chart(&train),
            ));
        }
        if model.network().n_hidden_layers() > 0 {
            charts.push((
                "hidden-layer",
                model.hidden_layer_chart(&train, 1, HiddenView::Auto),
            ));
        }
        if !split.validation.is_empty() {
            let val = data.select(&split.validation);
            if let Ok((Scores::Classification(m), _)) = Scores::of(model, &val) {
                charts.push(("confusion-matrix-validation", m.confusion_chart()));
            }
            charts.push(("roc-validation", model.roc_chart(&val)));
            charts.push((
                "precision-recall-validation",
                model.precision_recall_chart(&val),
            ));
        }
    }
    save_all(dir, charts)
}

/// The charts of a cross-validation, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub(crate) fn cv_charts(data: &Dataset, cv: &CrossValidation, dir: &Path) -> Result<Vec<PathBuf>> {
    let metric = if data.labels().is_some() {
        Metric::Accuracy
    } else {
        Metric::RootMeanSquaredError
    };
    save_all(
        dir,
        vec![
            ("cv-learning-curves", cv.learning_curves_chart()),
            ("cv-scores", cv.scores_chart(metric)),
        ],
    )
}
