//! The command line's chart folders: every chart of a fit or a
//! cross-validation written as SVG into one folder.

use crate::chart::Chart;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::Fitted;
use crate::validate::CrossValidation;
use std::path::{Path, PathBuf};

pub(crate) fn ensure_dir(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, "creating the folder", e))
}

pub(crate) fn save_all(
    dir: &Path,
    charts: Vec<(&'static str, Result<Chart>)>,
) -> Result<Vec<PathBuf>> {
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
pub(crate) const FIT_CHART_FILES: [&str; 10] = [
    "learning-curves",
    "weights",
    "decision-map",
    "components",
    "hidden-layer",
    "confusion-matrix-validation",
    "roc-validation",
    "precision-recall-validation",
    "predicted-actual-validation",
    "residuals-validation",
];

/// The names (without `.svg`) of every chart [`cv_charts`] may write.
pub(crate) const CV_CHART_FILES: [&str; 4] = [
    "cv-learning-curves",
    "cv-scores",
    "permutation-importance",
    "reliability",
];

/// The charts of one fit, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub(crate) fn fit_charts(data: &Dataset, fitted: &Fitted, dir: &Path) -> Result<Vec<PathBuf>> {
    save_all(dir, crate::report::fit_charts(data, fitted))
}

/// The charts of a cross-validation, written as SVG into `dir`.
///
/// # Errors
/// A folder or file that cannot be written.
pub(crate) fn cv_charts(data: &Dataset, cv: &CrossValidation, dir: &Path) -> Result<Vec<PathBuf>> {
    save_all(dir, crate::report::cv_charts(data, cv))
}
