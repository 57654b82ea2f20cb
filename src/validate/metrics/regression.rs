//! Regression errors.

use super::checks::check_finite;
use super::checks::check_not_empty;
use super::checks::check_same_length;
use super::score::Score;
use super::score::R_SQUARED_CONSTANT;
use crate::error::Result;

// ---------------------------------------------------------------------------
// Regression.

pub(super) fn check_regression(what: &str, truth: &[f64], predicted: &[f64]) -> Result<()> {
    check_same_length(what, ("truth", truth.len()), ("predicted", predicted.len()))?;
    check_not_empty(what, truth.len())?;
    check_finite(what, "true", truth)?;
    check_finite(what, "predicted", predicted)
}

/// The mean squared error.
///
/// ```text
/// MSE = (1 / n) sum_s (truth_s - predicted_s)^2
/// ```
///
/// Common practice, no source.
///
/// # Errors
/// If the slices differ in length, are empty, or hold a non-finite value.
pub fn mean_squared_error(truth: &[f64], predicted: &[f64]) -> Result<f64> {
    check_regression("mean squared error", truth, predicted)?;
    Ok(sum_of_squares(truth, predicted) / truth.len() as f64)
}

pub(super) fn sum_of_squares(truth: &[f64], predicted: &[f64]) -> f64 {
    truth
        .iter()
        .zip(predicted)
        .map(|(t, p)| (t - p) * (t - p))
        .sum()
}

/// The root mean squared error, in the units of the target.
///
/// ```text
/// RMSE = sqrt(MSE)
/// ```
///
/// Common practice, no source.
///
/// # Errors
/// As [`mean_squared_error`].
pub fn root_mean_squared_error(truth: &[f64], predicted: &[f64]) -> Result<f64> {
    check_regression("root mean squared error", truth, predicted)?;
    Ok((sum_of_squares(truth, predicted) / truth.len() as f64).sqrt())
}

/// The mean absolute error.
///
/// ```text
/// MAE = (1 / n) sum_s |truth_s - predicted_s|
/// ```
///
/// Common practice, no source.
///
/// # Errors
/// As [`mean_squared_error`].
pub fn mean_absolute_error(truth: &[f64], predicted: &[f64]) -> Result<f64> {
    check_regression("mean absolute error", truth, predicted)?;
    let total: f64 = truth
        .iter()
        .zip(predicted)
        .map(|(t, p)| (t - p).abs())
        .sum();
    Ok(total / truth.len() as f64)
}

/// The coefficient of determination R^2.
///
/// ```text
/// SS_res = sum_s (truth_s - predicted_s)^2
/// SS_tot = sum_s (truth_s - mean(truth))^2
/// R^2    = 1 - SS_res / SS_tot
/// ```
///
/// 1 is a perfect fit, 0 is no better than predicting the mean, and it is
/// negative when worse. Undefined (0 with a note) when SS_tot = 0, i.e. the
/// truth is constant. Common practice, no source (the "fraction of variance
/// explained" of ordinary regression, here applied to any predictor).
///
/// # Errors
/// As [`mean_squared_error`].
pub fn r_squared(truth: &[f64], predicted: &[f64]) -> Result<Score> {
    check_regression("R^2", truth, predicted)?;
    Ok(r_squared_unchecked(truth, predicted))
}

pub(super) fn r_squared_unchecked(truth: &[f64], predicted: &[f64]) -> Score {
    let mean = truth.iter().sum::<f64>() / truth.len() as f64;
    let total: f64 = truth.iter().map(|t| (t - mean) * (t - mean)).sum();
    if total == 0.0 {
        return Score::undefined(R_SQUARED_CONSTANT);
    }
    Score::defined(1.0 - sum_of_squares(truth, predicted) / total)
}
