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
            Err(e) if matches!(e.kind(), crate::ErrorKind::InvalidInput { .. }) => {}
            Err(e) => return Err(e),
        }
    }
    Ok(written)
}

/// The charts of one fit, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub fn fit_charts(data: &Dataset, fitted: &Fitted, dir: &Path) -> Result<Vec<PathBuf>> {
    let model = &fitted.model;
    let train = data.select(&fitted.split.train);
    let mut charts: Vec<(&str, Result<Chart>)> = vec![
        ("learning-curves", chart::training_curves(fitted)),
        ("network", chart::network(model)),
    ];
    if model.is_classifier {
        if let Some((x, y)) = chart::decision_features(data) {
            charts.push((
                "decision-map",
                chart::decision_boundary(model, &train, &x, &y),
            ));
        }
        if data.n_features() > 2 {
            charts.push((
                "decision-map-components",
                chart::decision_boundary_principal(model, &train),
            ));
        }
        if model.network.n_hidden_layers() > 0 {
            charts.push((
                "hidden-layer",
                chart::hidden_layer_view(model, &train, 1, HiddenView::Auto),
            ));
        }
        if !fitted.split.validation.is_empty() {
            let val = data.select(&fitted.split.validation);
            if let Ok((Scores::Classification(m), _)) = Scores::of(model, &val) {
                charts.push(("confusion-matrix-validation", chart::confusion(&m)));
            }
            charts.push(("roc-validation", chart::roc(model, &val)));
            charts.push((
                "precision-recall-validation",
                chart::precision_recall(model, &val),
            ));
        }
    }
    save_all(dir, charts)
}

/// The charts of a cross-validation, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub fn cv_charts(data: &Dataset, cv: &CrossValidation, dir: &Path) -> Result<Vec<PathBuf>> {
    let metric = if data.labels().is_some() {
        Metric::Accuracy
    } else {
        Metric::RootMeanSquaredError
    };
    let reports: Vec<_> = cv.folds.iter().map(|f| f.report.clone()).collect();
    let curves = chart::training_curves_with(
        &reports,
        &chart::LearningCurveOptions {
            chart: chart::ChartOptions::titled(format!(
                "Learning curves of {} folds",
                reports.len()
            )),
            ..Default::default()
        },
    );
    save_all(
        dir,
        vec![
            ("cv-learning-curves", curves),
            (
                "cv-scores",
                chart::cv_comparison(&[("this configuration", cv)], metric),
            ),
        ],
    )
}
