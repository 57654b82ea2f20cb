//! Comparing two configurations on the same folds, and two fitted models on
//! one shared test set.

use super::cv::{run_plan, CrossValidation, CvOptions, FoldPlan};
use super::metrics::Metric;
use super::stats::{corrected_resampled_t_test, mcnemar_test, McNemar, ResampledTTest};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::{FitOptions, Model};
use rand::RngCore;

/// Two configurations cross-validated on the same folds with the same fold
/// seeds, and the corrected resampled t-test on their per-fold differences.
#[derive(Clone, Debug, PartialEq)]
pub struct Comparison {
    /// The metric compared.
    pub metric: Metric,
    /// Configuration A's cross-validation.
    pub a: CrossValidation,
    /// Configuration B's cross-validation.
    pub b: CrossValidation,
    /// Per-fold `A - B`.
    pub differences: Vec<f64>,
    /// The test (Nadeau & Bengio 2003), with its plain-language reading.
    pub test: ResampledTTest,
}

/// Cross-validates `a` and `b` on one fold plan drawn from `rng` and tests
/// the per-fold differences of `metric` with the corrected resampled t-test
/// (`n_train` and `n_test` are the mean training and held-out rows per fold).
///
/// # Errors
/// As [`cross_validate`](super::cross_validate); a metric that does not apply.
pub fn compare_configurations<R: RngCore + ?Sized>(
    data: &Dataset,
    a: &FitOptions,
    b: &FitOptions,
    cv: &CvOptions,
    metric: Metric,
    rng: &mut R,
) -> Result<Comparison> {
    a.validate().map_err(|e| e.context("configuration A"))?;
    b.validate().map_err(|e| e.context("configuration B"))?;
    cv.validate()?;
    let plan = FoldPlan::draw_checked(data, cv, rng)?;
    let ra = run_plan(data, a, cv, &plan)?;
    let rb = run_plan(data, b, cv, &plan)?;
    let va = &ra.metric(metric)?.values;
    let vb = &rb.metric(metric)?.values;
    let differences: Vec<f64> = va.iter().zip(vb).map(|(x, y)| x - y).collect();
    let (n_train, n_test) = ra.mean_rows();
    let test = corrected_resampled_t_test(
        &differences,
        n_train.round() as usize,
        n_test.round() as usize,
    )?;
    Ok(Comparison {
        metric,
        a: ra,
        b: rb,
        differences,
        test,
    })
}

/// McNemar's test for two fitted classifiers on one shared labelled table
/// (both continuity-corrected and exact; see [`McNemar`]).
///
/// # Errors
/// When either model's features do not match the table, or it is not a classifier.
pub fn compare_models(first: &Model, second: &Model, data: &Dataset) -> Result<McNemar> {
    let truth = data.labels().ok_or_else(|| {
        Error::input(
            "comparing models",
            "McNemar's test needs class labels; the table's target holds numbers",
        )
    })?;
    first.check_features(data)?;
    second.check_features(data)?;
    let a = first.predict_classes(data.x())?;
    let b = second.predict_classes(data.x())?;
    mcnemar_test(truth, &a, &b)
}
