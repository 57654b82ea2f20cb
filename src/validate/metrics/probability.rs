//! Scores of predicted probabilities: log-loss and the Brier score.

use super::checks::check_probabilities;
use super::score::LOG_LOSS_EPSILON;
use crate::error::Result;
use ndarray::ArrayView2;

// ---------------------------------------------------------------------------
// Probability metrics.

/// The most probable class of each row (ties go to the lowest class index).
///
/// ```text
/// predicted[s] = argmax_k probabilities[s][k]
/// ```
pub fn most_probable_classes(probabilities: ArrayView2<f64>) -> Vec<usize> {
    probabilities
        .outer_iter()
        .map(|row| {
            let mut best = 0;
            for (k, &p) in row.iter().enumerate() {
                if p > row[best] {
                    best = k;
                }
            }
            best
        })
        .collect()
}

/// Log-loss: the mean negative log-likelihood of the true class.
///
/// ```text
/// log_loss = -(1 / n) sum_s ln( clip(p[s][truth[s]]) ),   clip(p) = min(max(p, 1e-15), 1 - 1e-15)
/// ```
///
/// The natural logarithm is used. Clipping bounds the cost of one confident
/// mistake at -ln(1e-15) = 34.54 instead of infinity; the other columns are
/// not renormalised. Common practice, no source, for the clipping bound.
/// Also called cross-entropy loss.
///
/// # Errors
/// If the rows do not match the labels, are empty, have fewer than 2 columns,
/// hold values outside [0, 1] or do not sum to 1, or a label is not a column.
pub fn log_loss(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<f64> {
    check_probabilities("log-loss", truth, probabilities)?;
    let total: f64 = truth
        .iter()
        .zip(probabilities.outer_iter())
        .map(|(&t, row)| -row[t].clamp(LOG_LOSS_EPSILON, 1.0 - LOG_LOSS_EPSILON).ln())
        .sum();
    Ok(total / truth.len() as f64)
}

/// The Brier score in its original multi-class form.
///
/// ```text
/// brier = (1 / n) sum_s sum_k (p[s][k] - y[s][k])^2,   y[s][k] = 1 if truth[s] = k else 0
/// ```
///
/// It lies in [0, 2]; lower is better. For two classes this is twice the
/// common binary form (1 / n) sum_s (p_s - y_s)^2 that uses the positive
/// column only; this function always uses the sum over all classes, as Brier
/// defined it. Source: G. W. Brier, "Verification of forecasts expressed in
/// terms of probability", Monthly Weather Review 78 (1950) 1-3.
///
/// # Errors
/// As [`log_loss`].
pub fn brier_score(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<f64> {
    check_probabilities("Brier score", truth, probabilities)?;
    let total: f64 = truth
        .iter()
        .zip(probabilities.outer_iter())
        .map(|(&t, row)| {
            row.iter()
                .enumerate()
                .map(|(k, &p)| {
                    let y = if k == t { 1.0 } else { 0.0 };
                    (p - y) * (p - y)
                })
                .sum::<f64>()
        })
        .sum();
    Ok(total / truth.len() as f64)
}
