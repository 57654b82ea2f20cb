//! Input checks shared by the metrics.

use super::score::ROW_SUM_TOLERANCE;
use crate::error::{Error, Result};
use ndarray::ArrayView2;

// ---------------------------------------------------------------------------
// Input checks shared by the functions below.

pub(super) fn check_not_empty(what: &str, n: usize) -> Result<()> {
    if n == 0 {
        return Err(Error::input(
            what,
            "no samples: the inputs are empty; at least one sample is needed",
        ));
    }
    Ok(())
}

pub(super) fn check_same_length(
    what: &str,
    first: (&str, usize),
    second: (&str, usize),
) -> Result<()> {
    if first.1 != second.1 {
        return Err(Error::input(
            what,
            format!(
                "{} has {} values but {} has {}; give one of each per sample",
                first.0, first.1, second.0, second.1
            ),
        ));
    }
    Ok(())
}

pub(super) fn check_n_classes(n_classes: usize) -> Result<()> {
    if n_classes < 2 {
        return Err(Error::option(
            "n_classes",
            n_classes,
            "must be at least 2: a classifier tells two or more classes apart",
        ));
    }
    Ok(())
}

pub(super) fn check_labels(
    what: &str,
    which: &str,
    labels: &[usize],
    n_classes: usize,
) -> Result<()> {
    if let Some((position, &label)) = labels.iter().enumerate().find(|(_, &l)| l >= n_classes) {
        return Err(Error::input(
            what,
            format!(
                "{which} label {label} at position {position} is not a class; with {n_classes} classes labels must be in 0..{n_classes} (0 to {})",
                n_classes - 1
            ),
        ));
    }
    Ok(())
}

pub(super) fn check_finite(what: &str, which: &str, values: &[f64]) -> Result<()> {
    if let Some((position, value)) = values.iter().enumerate().find(|(_, v)| !v.is_finite()) {
        return Err(Error::input(
            what,
            format!("{which} value {value} at position {position} is not a finite number"),
        ));
    }
    Ok(())
}

/// Checks a probability matrix against the truth; returns the number of classes.
pub(super) fn check_probabilities(
    what: &str,
    truth: &[usize],
    probabilities: ArrayView2<f64>,
) -> Result<usize> {
    let (rows, columns) = probabilities.dim();
    if rows != truth.len() {
        return Err(Error::shape(
            format!("{what}: class probabilities (one row per true label)"),
            (truth.len(), columns),
            (rows, columns),
        ));
    }
    check_not_empty(what, rows)?;
    if columns < 2 {
        return Err(Error::shape(
            format!("{what}: class probabilities need one column per class, at least 2"),
            (rows, 2),
            (rows, columns),
        ));
    }
    check_labels(what, "true", truth, columns)?;
    for (i, row) in probabilities.outer_iter().enumerate() {
        if let Some((j, p)) = row
            .iter()
            .enumerate()
            .find(|(_, p)| !(p.is_finite() && (0.0..=1.0).contains(*p)))
        {
            return Err(Error::input(
                what,
                format!("probability {p} at row {i}, column {j} is not in [0, 1]; pass class probabilities (e.g. softmax outputs), not raw scores"),
            ));
        }
        let sum: f64 = row.sum();
        if (sum - 1.0).abs() > ROW_SUM_TOLERANCE {
            return Err(Error::input(
                what,
                format!("row {i} of the class probabilities sums to {sum}, not 1 (within {ROW_SUM_TOLERANCE}); pass class probabilities (e.g. softmax outputs), not raw scores"),
            ));
        }
    }
    Ok(columns)
}

pub(super) fn check_binary_ranking(
    what: &str,
    scores: &[f64],
    labels: &[bool],
) -> Result<(u64, u64)> {
    check_same_length(what, ("scores", scores.len()), ("labels", labels.len()))?;
    check_not_empty(what, scores.len())?;
    check_finite(what, "score", scores)?;
    let positives = labels.iter().filter(|&&l| l).count() as u64;
    let negatives = labels.len() as u64 - positives;
    Ok((positives, negatives))
}
