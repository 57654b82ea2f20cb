//! Classification and regression metrics: pure functions of truth and
//! predictions, with no training code.
//!
//! Inputs are plain data:
//!
//! - true and predicted class labels as `&[usize]`, each in `0..n_classes`;
//! - class probabilities as an [`ArrayView2<f64>`]: one row per sample, one
//!   column per class, each row summing to 1 (within 1e-6);
//! - for ranking metrics of one class against the rest, `&[f64]` scores
//!   (higher means "more likely positive") and `&[bool]` labels (`true` =
//!   positive). From `usize` labels: `labels.iter().map(|&l| l == positive)`;
//! - for regression, `&[f64]` truth and prediction, or [`ArrayView2<f64>`] with
//!   one column per output.
//!
//! # Undefined values
//!
//! Some metrics have no value for some inputs: the precision of a class that
//! is never predicted (0/0), the recall of a class absent from the truth, the
//! Matthews correlation when truth or predictions hold one class only, Cohen's
//! kappa when chance agreement is already 1, the AUC when the truth holds one
//! class only, R^2 when the truth is constant. stratanet never returns a silent
//! `NaN` for these. The convention, the same everywhere in this module:
//!
//! ```text
//! the value is set to 0, and a note says why (Score::undefined, or a Note in the summaries)
//! ```
//!
//! Averages over classes (macro F1, balanced accuracy, one-vs-rest AUC) and
//! over outputs (multi-output R^2) leave the undefined members out rather than
//! counting them as 0; each says which members it averages.
//!
//! # Metric names
//!
//! [`Metric`] names every headline number (`"accuracy"`, `"log_loss"`, ...),
//! says whether higher is better, and reads a name typed by the analyst, so that
//! cross-validation and sweeps can sort by a metric chosen at run time.
//!
//! # Example
//! ```
//! use stratanet::ndarray::array;
//! use stratanet::validate::metrics::{ClassificationMetrics, ConfusionMatrix};
//!
//! let truth = [0, 0, 1, 1, 2];
//! let probabilities = array![
//!     [0.8, 0.1, 0.1],
//!     [0.3, 0.6, 0.1],
//!     [0.2, 0.7, 0.1],
//!     [0.1, 0.8, 0.1],
//!     [0.1, 0.1, 0.8],
//! ];
//! let summary = ClassificationMetrics::from_probabilities(&truth, probabilities.view())?;
//! assert_eq!(summary.accuracy, 0.8);
//! assert_eq!(summary.value(stratanet::validate::Metric::MacroF1)?.value, summary.macro_f1);
//!
//! let confusion = ConfusionMatrix::from_labels(&truth, &[0, 1, 1, 1, 2], 3)?;
//! assert_eq!(confusion.counts()[0], vec![1, 1, 0]);
//! # Ok::<(), stratanet::Error>(())
//! ```

use std::cmp::Ordering;
use std::fmt;
use std::str::FromStr;

use ndarray::ArrayView2;

use crate::error::{Error, Result};

// The texts of the undefined-value conventions. Each says what happened and
// what value was used, so that a note can be shown as it is.
const NEVER_PREDICTED: &str = "class never predicted; precision set to 0 by convention";
const ABSENT_FROM_TRUTH: &str = "class absent from truth; recall set to 0 by convention";
const ABSENT_EVERYWHERE: &str =
    "class absent from truth and never predicted; F1 set to 0 by convention";
const MCC_ZERO_DENOMINATOR: &str = "truth or predictions hold a single class, so the Matthews correlation has a zero denominator; set to 0 by convention";
const KAPPA_NO_CHANCE_ROOM: &str = "expected chance agreement is 1 (truth and predictions are all one class); Cohen's kappa set to 0 by convention";
const AUC_ONE_CLASS: &str =
    "truth holds fewer than two classes, so there is no ROC curve; AUC set to 0 by convention";
const AUC_CLASS_ABSENT: &str =
    "class absent from truth (or the only class present); its one-vs-rest AUC set to 0 by convention";
const NO_SAMPLES: &str = "no samples; set to 0 by convention";
const R_SQUARED_CONSTANT: &str =
    "truth is constant (total sum of squares 0); R^2 set to 0 by convention";

// Rows of class probabilities must sum to 1 within this. Softmax outputs in
// f64 are within 1e-15; the slack admits probabilities that passed through
// f32 or were rounded for printing, but still catches raw scores.
const ROW_SUM_TOLERANCE: f64 = 1e-6;

// Log-loss clips probabilities to [EPSILON, 1 - EPSILON] so that one
// confident mistake costs -ln(1e-15) = 34.5 rather than infinity
// (common practice, no source).
const LOG_LOSS_EPSILON: f64 = 1e-15;

/// A metric's value, or the conventional 0 with the reason it is undefined.
///
/// ```text
/// defined:    Score { value, undefined: None }
/// undefined:  Score { value: 0.0, undefined: Some("why, and that 0 was used") }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Score {
    /// The value; 0 when undefined.
    pub value: f64,
    /// Why the value is undefined, if it is (`None` for an ordinary value).
    pub undefined: Option<&'static str>,
}

impl Score {
    /// A defined value.
    pub fn defined(value: f64) -> Score {
        Score {
            value,
            undefined: None,
        }
    }

    /// An undefined value: 0, with the reason.
    pub fn undefined(reason: &'static str) -> Score {
        Score {
            value: 0.0,
            undefined: Some(reason),
        }
    }

    /// Is the value defined (not the conventional 0)?
    pub fn is_defined(&self) -> bool {
        self.undefined.is_none()
    }
}

impl fmt::Display for Score {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.undefined {
            None => write!(f, "{}", self.value),
            Some(reason) => write!(f, "{} (undefined: {reason})", self.value),
        }
    }
}

// ---------------------------------------------------------------------------
// Input checks shared by the functions below.

fn check_not_empty(what: &str, n: usize) -> Result<()> {
    if n == 0 {
        return Err(Error::input(
            what,
            "no samples: the inputs are empty; at least one sample is needed",
        ));
    }
    Ok(())
}

fn check_same_length(what: &str, first: (&str, usize), second: (&str, usize)) -> Result<()> {
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

fn check_n_classes(n_classes: usize) -> Result<()> {
    if n_classes < 2 {
        return Err(Error::option(
            "n_classes",
            n_classes,
            "must be at least 2: a classifier tells two or more classes apart",
        ));
    }
    Ok(())
}

fn check_labels(what: &str, which: &str, labels: &[usize], n_classes: usize) -> Result<()> {
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

fn check_finite(what: &str, which: &str, values: &[f64]) -> Result<()> {
    if let Some((position, value)) = values.iter().enumerate().find(|(_, v)| !v.is_finite()) {
        return Err(Error::input(
            what,
            format!("{which} value {value} at position {position} is not a finite number"),
        ));
    }
    Ok(())
}

/// Checks a probability matrix against the truth; returns the number of classes.
fn check_probabilities(
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

fn check_binary_ranking(what: &str, scores: &[f64], labels: &[bool]) -> Result<(u64, u64)> {
    check_same_length(what, ("scores", scores.len()), ("labels", labels.len()))?;
    check_not_empty(what, scores.len())?;
    check_finite(what, "score", scores)?;
    let positives = labels.iter().filter(|&&l| l).count() as u64;
    let negatives = labels.len() as u64 - positives;
    Ok((positives, negatives))
}

// ---------------------------------------------------------------------------
// Confusion matrix and the metrics read from it.

/// Counts of (true class, predicted class) pairs.
///
/// `counts()[i][j]` is the number of samples of true class `i` predicted as
/// class `j`: rows are the truth, columns the prediction. The matrix is square,
/// has at least 2 classes and at least one sample; the constructors check this.
///
/// It serialises as the nested list of counts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ConfusionMatrix {
    counts: Vec<Vec<u64>>,
}

/// Precision, recall, F1 and support of one class.
///
/// See [`ConfusionMatrix::per_class`] for formulas and conventions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClassScores {
    /// The class (0-based).
    pub class: usize,
    /// TP / (TP + FP); undefined when the class is never predicted.
    pub precision: Score,
    /// TP / (TP + FN); undefined when the class is absent from the truth.
    pub recall: Score,
    /// 2 TP / (2 TP + FP + FN); undefined when the class is in neither truth nor predictions.
    pub f1: Score,
    /// The number of samples whose true class this is.
    pub support: u64,
}

impl ConfusionMatrix {
    /// Counts true against predicted labels.
    ///
    /// ```text
    /// counts[i][j] = #{ s : truth[s] = i and predicted[s] = j }
    /// ```
    ///
    /// # Errors
    /// If the slices differ in length or are empty, if `n_classes < 2`, or if
    /// a label is not in `0..n_classes`.
    pub fn from_labels(truth: &[usize], predicted: &[usize], n_classes: usize) -> Result<Self> {
        const WHAT: &str = "confusion matrix";
        check_n_classes(n_classes)?;
        check_same_length(WHAT, ("truth", truth.len()), ("predicted", predicted.len()))?;
        check_not_empty(WHAT, truth.len())?;
        check_labels(WHAT, "true", truth, n_classes)?;
        check_labels(WHAT, "predicted", predicted, n_classes)?;
        let mut counts = vec![vec![0u64; n_classes]; n_classes];
        for (&t, &p) in truth.iter().zip(predicted) {
            counts[t][p] += 1;
        }
        Ok(ConfusionMatrix { counts })
    }

    /// A confusion matrix from its counts (rows = true class, columns = predicted).
    ///
    /// # Errors
    /// If the table is not square, has fewer than 2 classes, or holds no samples.
    pub fn from_counts(counts: Vec<Vec<u64>>) -> Result<Self> {
        const WHAT: &str = "confusion matrix counts";
        let n = counts.len();
        check_n_classes(n)?;
        if let Some((i, row)) = counts.iter().enumerate().find(|(_, r)| r.len() != n) {
            return Err(Error::input(
                WHAT,
                format!(
                    "row {i} has {} counts but there are {n} rows; the table must be square (one row and one column per class)",
                    row.len()
                ),
            ));
        }
        if counts.iter().flatten().all(|&c| c == 0) {
            return Err(Error::input(
                WHAT,
                "all counts are 0; at least one sample is needed",
            ));
        }
        Ok(ConfusionMatrix { counts })
    }

    /// The number of classes (rows, and columns).
    pub fn n_classes(&self) -> usize {
        self.counts.len()
    }

    /// The counts: `counts()[true_class][predicted_class]`.
    pub fn counts(&self) -> &[Vec<u64>] {
        &self.counts
    }

    /// The number of samples, the sum of all counts.
    pub fn total(&self) -> u64 {
        self.counts.iter().flatten().sum()
    }

    /// Samples per true class (row sums), the "support" of each class.
    pub fn supports(&self) -> Vec<u64> {
        self.counts.iter().map(|row| row.iter().sum()).collect()
    }

    /// Samples per predicted class (column sums).
    pub fn predicted_totals(&self) -> Vec<u64> {
        (0..self.n_classes())
            .map(|j| self.counts.iter().map(|row| row[j]).sum())
            .collect()
    }

    fn correct(&self) -> u64 {
        (0..self.n_classes()).map(|k| self.counts[k][k]).sum()
    }

    /// Each row divided by its sum: entry `[i][j]` is the fraction of class
    /// `i` predicted as `j`, so the diagonal holds the per-class recalls.
    ///
    /// ```text
    /// normalised[i][j] = counts[i][j] / sum_j counts[i][j]
    /// ```
    ///
    /// A class absent from the truth has a row of zeros by convention (not
    /// `NaN`); [`ConfusionMatrix::supports`] tells such rows apart.
    pub fn row_normalised(&self) -> Vec<Vec<f64>> {
        self.counts
            .iter()
            .map(|row| {
                let sum: u64 = row.iter().sum();
                row.iter()
                    .map(|&c| if sum == 0 { 0.0 } else { c as f64 / sum as f64 })
                    .collect()
            })
            .collect()
    }

    /// The fraction of samples predicted correctly.
    ///
    /// ```text
    /// accuracy = sum_k counts[k][k] / total
    /// ```
    ///
    /// Common practice, no source.
    pub fn accuracy(&self) -> f64 {
        self.correct() as f64 / self.total() as f64
    }

    /// The mean of the per-class recalls, over the classes present in the truth.
    ///
    /// ```text
    /// balanced_accuracy = (1 / |K|) sum_{k in K} counts[k][k] / support_k,   K = { k : support_k > 0 }
    /// ```
    ///
    /// Source: K. H. Brodersen, C. S. Ong, K. E. Stephan & J. M. Buhmann, "The
    /// balanced accuracy and its posterior distribution", ICPR 2010. Classes
    /// absent from the truth are left out (their recall is undefined), so a
    /// fold lacking a rare class is not penalised for it.
    pub fn balanced_accuracy(&self) -> f64 {
        let supports = self.supports();
        let recalls: Vec<f64> = (0..self.n_classes())
            .filter(|&k| supports[k] > 0)
            .map(|k| self.counts[k][k] as f64 / supports[k] as f64)
            .collect();
        // total > 0, so at least one class is present.
        recalls.iter().sum::<f64>() / recalls.len() as f64
    }

    /// Precision, recall and F1 of each class, treating it as "positive" and
    /// all others as "negative".
    ///
    /// ```text
    /// TP = counts[k][k]   FP = column sum - TP   FN = row sum (support) - TP
    /// precision = TP / (TP + FP)                  undefined if TP + FP = 0 (class never predicted)
    /// recall    = TP / (TP + FN)                  undefined if TP + FN = 0 (class absent from truth)
    /// F1        = 2 TP / (2 TP + FP + FN)         undefined if TP + FP + FN = 0
    /// ```
    ///
    /// F1 is the harmonic mean of precision and recall (C. J. van Rijsbergen,
    /// "Information Retrieval", 2nd ed., 1979, ch. 7, with beta = 1). Written as
    /// 2 TP / (2 TP + FP + FN) it stays defined, and 0, when TP = 0 but the class
    /// was predicted or is present. Undefined values are 0 with a note.
    /// Precision and recall: C. D. Manning, P. Raghavan & H. Schütze,
    /// "Introduction to Information Retrieval", 2008, ch. 8.3.
    pub fn per_class(&self) -> Vec<ClassScores> {
        let supports = self.supports();
        let predicted = self.predicted_totals();
        (0..self.n_classes())
            .map(|k| {
                let tp = self.counts[k][k] as f64;
                let precision = if predicted[k] == 0 {
                    Score::undefined(NEVER_PREDICTED)
                } else {
                    Score::defined(tp / predicted[k] as f64)
                };
                let recall = if supports[k] == 0 {
                    Score::undefined(ABSENT_FROM_TRUTH)
                } else {
                    Score::defined(tp / supports[k] as f64)
                };
                // 2 TP + FP + FN = predicted + support.
                let denominator = predicted[k] + supports[k];
                let f1 = if denominator == 0 {
                    Score::undefined(ABSENT_EVERYWHERE)
                } else {
                    Score::defined(2.0 * tp / denominator as f64)
                };
                ClassScores {
                    class: k,
                    precision,
                    recall,
                    f1,
                    support: supports[k],
                }
            })
            .collect()
    }

    /// The unweighted mean of the per-class F1 scores, over the classes that
    /// appear in the truth or the predictions.
    ///
    /// ```text
    /// macro_f1 = (1 / |K|) sum_{k in K} F1_k,   K = { k : support_k + predicted_k > 0 }
    /// ```
    ///
    /// Common practice, no source. This is the mean of per-class F1, not the F1 of
    /// macro-averaged precision and recall; the two differ (J. Opitz & S. Burst,
    /// "Macro F1 and Macro F1", 2019, arXiv:1911.03347).
    pub fn macro_f1(&self) -> f64 {
        let scores: Vec<f64> = self
            .per_class()
            .iter()
            .filter(|c| c.f1.is_defined())
            .map(|c| c.f1.value)
            .collect();
        scores.iter().sum::<f64>() / scores.len() as f64
    }

    /// The per-class F1 scores weighted by support (samples of each true class).
    ///
    /// ```text
    /// weighted_f1 = sum_k support_k F1_k / total
    /// ```
    ///
    /// Common practice, no source.
    pub fn weighted_f1(&self) -> f64 {
        let total = self.total() as f64;
        self.per_class()
            .iter()
            .map(|c| c.support as f64 * c.f1.value)
            .sum::<f64>()
            / total
    }

    /// Cohen's kappa: agreement between truth and prediction beyond chance.
    ///
    /// ```text
    /// p_o = sum_k counts[k][k] / n                    observed agreement (accuracy)
    /// p_e = sum_k (row_k / n) (column_k / n)          agreement expected by chance
    /// kappa = (p_o - p_e) / (1 - p_e)
    ///       = (n sum_k counts[k][k] - sum_k row_k column_k) / (n^2 - sum_k row_k column_k)
    /// ```
    ///
    /// Computed from the integer form, exactly up to the final division.
    /// Undefined (0 with a note) when p_e = 1, which happens only when truth
    /// and predictions are all one and the same class.
    ///
    /// Source: J. Cohen, "A coefficient of agreement for nominal scales",
    /// Educational and Psychological Measurement 20 (1960) 37-46.
    pub fn cohen_kappa(&self) -> Score {
        let n = self.total() as u128;
        let rows = self.supports();
        let columns = self.predicted_totals();
        let chance: u128 = rows
            .iter()
            .zip(&columns)
            .map(|(&r, &c)| r as u128 * c as u128)
            .sum();
        let numerator = (n * self.correct() as u128) as i128 - chance as i128;
        let denominator = n * n - chance;
        if denominator == 0 {
            return Score::undefined(KAPPA_NO_CHANCE_ROOM);
        }
        Score::defined(numerator as f64 / denominator as f64)
    }

    /// The Matthews correlation coefficient, in Gorodkin's K-class form.
    ///
    /// ```text
    /// c = sum_k counts[k][k]   s = total   t_k = row sum (truth)   p_k = column sum (predicted)
    /// MCC = (c s - sum_k p_k t_k) / sqrt((s^2 - sum_k p_k^2) (s^2 - sum_k t_k^2))
    /// ```
    ///
    /// For two classes this equals the binary formula
    /// (TP TN - FP FN) / sqrt((TP+FP)(TP+FN)(TN+FP)(TN+FN)) of
    /// [`BinaryCounts::matthews_correlation`]. It lies in [-1, 1] and is 0 for
    /// chance-level predictions. Undefined (0 with a note) when the
    /// denominator is 0: the truth or the predictions hold a single class.
    ///
    /// Sources: B. W. Matthews, "Comparison of the predicted and observed
    /// secondary structure of T4 phage lysozyme", Biochimica et Biophysica Acta
    /// 405 (1975) 442-451; J. Gorodkin, "Comparing two K-category assignments by
    /// a K-category correlation coefficient", Computational Biology and
    /// Chemistry 28 (2004) 367-374 (the R_K statistic).
    pub fn matthews_correlation(&self) -> Score {
        let s = self.total() as u128;
        let t = self.supports();
        let p = self.predicted_totals();
        let cross: u128 = t.iter().zip(&p).map(|(&a, &b)| a as u128 * b as u128).sum();
        let numerator = (self.correct() as u128 * s) as i128 - cross as i128;
        let predicted_spread = s * s - p.iter().map(|&x| x as u128 * x as u128).sum::<u128>();
        let truth_spread = s * s - t.iter().map(|&x| x as u128 * x as u128).sum::<u128>();
        if predicted_spread == 0 || truth_spread == 0 {
            return Score::undefined(MCC_ZERO_DENOMINATOR);
        }
        // One square root of the exact product where it fits (so that perfect
        // predictions give exactly 1); two roots where it might overflow u128.
        let denominator = match predicted_spread.checked_mul(truth_spread) {
            Some(product) => (product as f64).sqrt(),
            None => (predicted_spread as f64).sqrt() * (truth_spread as f64).sqrt(),
        };
        Score::defined(numerator as f64 / denominator)
    }

    /// The 2 x 2 counts of one class against the rest.
    ///
    /// ```text
    /// TP = counts[k][k]   FN = row k - TP   FP = column k - TP   TN = total - TP - FN - FP
    /// ```
    ///
    /// # Errors
    /// If `positive` is not a class.
    pub fn binary_counts(&self, positive: usize) -> Result<BinaryCounts> {
        let n = self.n_classes();
        if positive >= n {
            return Err(Error::option(
                "positive",
                positive,
                format!(
                    "is not a class; with {n} classes it must be in 0..{n} (0 to {})",
                    n - 1
                ),
            ));
        }
        let tp = self.counts[positive][positive];
        let false_negatives = self.supports()[positive] - tp;
        let false_positives = self.predicted_totals()[positive] - tp;
        Ok(BinaryCounts {
            true_positives: tp,
            false_positives,
            false_negatives,
            true_negatives: self.total() - tp - false_negatives - false_positives,
        })
    }
}

impl TryFrom<Vec<Vec<u64>>> for ConfusionMatrix {
    type Error = Error;
    fn try_from(counts: Vec<Vec<u64>>) -> Result<Self> {
        ConfusionMatrix::from_counts(counts)
    }
}

impl From<ConfusionMatrix> for Vec<Vec<u64>> {
    fn from(matrix: ConfusionMatrix) -> Self {
        matrix.counts
    }
}

/// The four counts of a two-class (positive against negative) confusion table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BinaryCounts {
    /// Positive samples predicted positive.
    pub true_positives: u64,
    /// Negative samples predicted positive.
    pub false_positives: u64,
    /// Positive samples predicted negative.
    pub false_negatives: u64,
    /// Negative samples predicted negative.
    pub true_negatives: u64,
}

impl BinaryCounts {
    fn total(&self) -> u64 {
        self.true_positives + self.false_positives + self.false_negatives + self.true_negatives
    }

    /// (TP + TN) / total; undefined (0 with a note) when all counts are 0.
    ///
    /// ```text
    /// accuracy = (TP + TN) / (TP + FP + FN + TN)
    /// ```
    ///
    /// Common practice, no source.
    pub fn accuracy(&self) -> Score {
        match self.total() {
            0 => Score::undefined(NO_SAMPLES),
            n => Score::defined((self.true_positives + self.true_negatives) as f64 / n as f64),
        }
    }

    /// TP / (TP + FP); undefined (0 with a note) when nothing is predicted positive.
    ///
    /// ```text
    /// precision = TP / (TP + FP)
    /// ```
    ///
    /// Source: Manning, Raghavan & Schütze, "Introduction to Information Retrieval", 2008, ch. 8.3.
    pub fn precision(&self) -> Score {
        match self.true_positives + self.false_positives {
            0 => Score::undefined(NEVER_PREDICTED),
            d => Score::defined(self.true_positives as f64 / d as f64),
        }
    }

    /// TP / (TP + FN); undefined (0 with a note) when there are no positives.
    ///
    /// ```text
    /// recall = TP / (TP + FN)
    /// ```
    ///
    /// Source: Manning, Raghavan & Schütze, "Introduction to Information Retrieval", 2008, ch. 8.3.
    pub fn recall(&self) -> Score {
        match self.true_positives + self.false_negatives {
            0 => Score::undefined(ABSENT_FROM_TRUTH),
            d => Score::defined(self.true_positives as f64 / d as f64),
        }
    }

    /// 2 TP / (2 TP + FP + FN), the harmonic mean of precision and recall;
    /// undefined (0 with a note) when TP + FP + FN = 0.
    ///
    /// ```text
    /// F1 = 2 TP / (2 TP + FP + FN)
    /// ```
    ///
    /// Source: van Rijsbergen, "Information Retrieval", 2nd ed., 1979, ch. 7 (beta = 1).
    pub fn f1(&self) -> Score {
        match 2 * self.true_positives + self.false_positives + self.false_negatives {
            0 => Score::undefined(ABSENT_EVERYWHERE),
            d => Score::defined(2.0 * self.true_positives as f64 / d as f64),
        }
    }

    /// The Matthews correlation (the phi coefficient of the 2 x 2 table).
    ///
    /// ```text
    /// MCC = (TP TN - FP FN) / sqrt((TP + FP) (TP + FN) (TN + FP) (TN + FN))
    /// ```
    ///
    /// Undefined (0 with a note) when a factor of the denominator is 0.
    /// Source: B. W. Matthews, Biochimica et Biophysica Acta 405 (1975) 442-451.
    pub fn matthews_correlation(&self) -> Score {
        let (tp, fp, fn_, tn) = (
            self.true_positives as f64,
            self.false_positives as f64,
            self.false_negatives as f64,
            self.true_negatives as f64,
        );
        let factors = [tp + fp, tp + fn_, tn + fp, tn + fn_];
        if factors.contains(&0.0) {
            return Score::undefined(MCC_ZERO_DENOMINATOR);
        }
        let numerator = self.true_positives as i128 * self.true_negatives as i128
            - self.false_positives as i128 * self.false_negatives as i128;
        let denominator = factors.iter().product::<f64>().sqrt();
        Score::defined(numerator as f64 / denominator)
    }
}

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

// ---------------------------------------------------------------------------
// Ranking: ROC and precision-recall curves.

/// One point of a ROC curve: the rates when every sample scoring at least
/// `threshold` is called positive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RocPoint {
    /// The score cut; the first point uses `+infinity` (nothing called positive).
    pub threshold: f64,
    /// FP / N: the fraction of negatives scoring at least `threshold`.
    pub false_positive_rate: f64,
    /// TP / P: the fraction of positives scoring at least `threshold`.
    pub true_positive_rate: f64,
}

/// A ROC curve: points from (0, 0) to (1, 1), one per distinct score.
#[derive(Debug, Clone, PartialEq)]
pub struct RocCurve {
    /// The points, from the highest threshold (`+infinity`, at (0, 0)) down to
    /// the lowest score (at (1, 1)).
    pub points: Vec<RocPoint>,
    /// The number of positive samples, P.
    pub positives: u64,
    /// The number of negative samples, N.
    pub negatives: u64,
    /// The area under the curve by the trapezoid rule; see [`roc_curve`].
    pub auc: f64,
}

/// The ROC curve of binary scores, ties handled as one step.
///
/// ```text
/// sort samples by score, highest first; for each distinct score t (highest first):
///     TP(t) = #{positives with score >= t}   FP(t) = #{negatives with score >= t}
///     point (FP(t) / N, TP(t) / P)
/// AUC = sum over consecutive points of (x_i - x_{i-1}) (y_i + y_{i-1}) / 2
///     = U / (P N),   U = #{(positive, negative) pairs with the positive scored higher}
///                        + 1/2 #{such pairs with equal scores}
/// ```
///
/// Samples with equal scores enter the curve together, so a tie between a
/// positive and a negative is one diagonal segment, not an arbitrary
/// staircase; the trapezoid then counts each tied pair as one half. The area is
/// summed in integers and divided once, so it equals U / (P N) exactly up to
/// that division.
///
/// Sources: T. Fawcett, "An introduction to ROC analysis", Pattern Recognition
/// Letters 27 (2006) 861-874, Algorithms 1 and 2 (points and area); J. A.
/// Hanley & B. J. McNeil, "The meaning and use of the area under a receiver
/// operating characteristic (ROC) curve", Radiology 143 (1982) 29-36 (AUC = U
/// of H. B. Mann & D. R. Whitney, Annals of Mathematical Statistics 18, 1947,
/// over P N).
///
/// # Errors
/// If the slices differ in length or are empty, a score is not finite, or the
/// labels hold no positive or no negative sample.
pub fn roc_curve(scores: &[f64], labels: &[bool]) -> Result<RocCurve> {
    const WHAT: &str = "ROC curve";
    let (positives, negatives) = check_binary_ranking(WHAT, scores, labels)?;
    if positives == 0 || negatives == 0 {
        return Err(Error::input(
            WHAT,
            format!(
                "the labels hold {positives} positive and {negatives} negative samples; a ROC curve needs at least one of each"
            ),
        ));
    }
    let (p, n) = (positives as f64, negatives as f64);
    let mut points = vec![RocPoint {
        threshold: f64::INFINITY,
        false_positive_rate: 0.0,
        true_positive_rate: 0.0,
    }];
    // twice the area, times P N: sum of (FP_i - FP_{i-1}) (TP_i + TP_{i-1})
    let mut doubled_area: u128 = 0;
    let (mut tp, mut fp) = (0u64, 0u64);
    for (threshold, group_tp, group_fp) in tied_groups(scores, labels) {
        let (previous_tp, previous_fp) = (tp, fp);
        tp += group_tp;
        fp += group_fp;
        doubled_area += (fp - previous_fp) as u128 * (tp + previous_tp) as u128;
        points.push(RocPoint {
            threshold,
            false_positive_rate: fp as f64 / n,
            true_positive_rate: tp as f64 / p,
        });
    }
    let auc = doubled_area as f64 / (2.0 * p * n);
    Ok(RocCurve {
        points,
        positives,
        negatives,
        auc,
    })
}

/// Groups samples by equal score, highest score first: (score, positives, negatives).
fn tied_groups(scores: &[f64], labels: &[bool]) -> Vec<(f64, u64, u64)> {
    let mut order: Vec<usize> = (0..scores.len()).collect();
    // Scores are finite here, so partial_cmp always answers; it also treats
    // -0.0 and 0.0 as tied, which total_cmp would not.
    order.sort_by(|&a, &b| scores[b].partial_cmp(&scores[a]).unwrap_or(Ordering::Equal));
    let mut groups: Vec<(f64, u64, u64)> = Vec::new();
    for i in order {
        let positive = labels[i] as u64;
        match groups.last_mut() {
            Some(last) if last.0 == scores[i] => {
                last.1 += positive;
                last.2 += 1 - positive;
            }
            _ => groups.push((scores[i], positive, 1 - positive)),
        }
    }
    groups
}

/// The area under the ROC curve of binary scores (see [`roc_curve`]).
///
/// ```text
/// AUC = U / (P N), ties counted 1/2
/// ```
///
/// # Errors
/// As [`roc_curve`].
pub fn roc_auc(scores: &[f64], labels: &[bool]) -> Result<f64> {
    Ok(roc_curve(scores, labels)?.auc)
}

/// One-vs-rest AUC of each class and their unweighted mean.
#[derive(Debug, Clone, PartialEq)]
pub struct OneVsRestAuc {
    /// AUC of column k against truth == k; undefined for a class absent from the
    /// truth (or the only class present).
    pub per_class: Vec<Score>,
    /// The mean over the classes whose AUC is defined; undefined when the truth
    /// holds fewer than two classes.
    pub macro_average: Score,
}

/// One-vs-rest AUC from class probabilities: class k's column as the score,
/// `truth == k` as the label, then the unweighted mean over classes.
///
/// ```text
/// AUC_k = roc_auc(probabilities[.., k], truth == k)
/// macro = (1 / |K|) sum_{k in K} AUC_k,   K = classes present in truth (when at least two are)
/// ```
///
/// Source: Fawcett 2006, section 10.2, which gives this one-vs-rest
/// construction with the class AUCs weighted by prevalence (after F. Provost
/// & P. Domingos, "Well-trained PETs: improving probability estimation
/// trees", NYU CeDER working paper IS-00-04, 2000). This function takes the
/// unweighted mean instead (common practice, no source), so that rare
/// classes count as much as common ones.
///
/// # Errors
/// As [`log_loss`] for the probabilities.
pub fn one_vs_rest_auc(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<OneVsRestAuc> {
    let n_classes = check_probabilities("one-vs-rest AUC", truth, probabilities)?;
    let mut per_class = Vec::with_capacity(n_classes);
    for k in 0..n_classes {
        let labels: Vec<bool> = truth.iter().map(|&t| t == k).collect();
        let column: Vec<f64> = probabilities.column(k).to_vec();
        per_class.push(match roc_auc(&column, &labels) {
            Ok(auc) => Score::defined(auc),
            Err(_) => Score::undefined(AUC_CLASS_ABSENT),
        });
    }
    let defined: Vec<f64> = per_class
        .iter()
        .filter(|s| s.is_defined())
        .map(|s| s.value)
        .collect();
    let macro_average = if defined.is_empty() {
        Score::undefined(AUC_ONE_CLASS)
    } else {
        Score::defined(defined.iter().sum::<f64>() / defined.len() as f64)
    };
    Ok(OneVsRestAuc {
        per_class,
        macro_average,
    })
}

/// One point of a precision-recall curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PrecisionRecallPoint {
    /// Every sample scoring at least this is called positive.
    pub threshold: f64,
    /// TP / (TP + FP) at this threshold.
    pub precision: f64,
    /// TP / P at this threshold.
    pub recall: f64,
}

/// A precision-recall curve: one point per distinct score, highest first.
#[derive(Debug, Clone, PartialEq)]
pub struct PrecisionRecallCurve {
    /// The points, from the highest score down; recall rises to 1 at the last.
    pub points: Vec<PrecisionRecallPoint>,
    /// The number of positive samples, P.
    pub positives: u64,
    /// Average precision, step-wise; see [`precision_recall_curve`].
    pub average_precision: f64,
}

/// The precision-recall curve of binary scores and its average precision.
///
/// ```text
/// for each distinct score t, highest first (tied samples enter together):
///     TP(t) = #{positives with score >= t}   FP(t) = #{negatives with score >= t}
///     P_t = TP(t) / (TP(t) + FP(t))           R_t = TP(t) / P
/// AP = sum_t (R_t - R_{t-1}) P_t,   R before the first threshold = 0
/// ```
///
/// Average precision is the step-wise sum, without interpolation: each gain
/// in recall is weighted by the precision reached with it. With no ties it is
/// the mean of the precision at each positive's rank (Manning, Raghavan &
/// Schütze, "Introduction to Information Retrieval", 2008, ch. 8.4, "average
/// precision"); grouping tied scores into one step is common practice, no
/// source. No point is added at recall 0.
///
/// # Errors
/// If the slices differ in length or are empty, a score is not finite, or there
/// is no positive sample (recall is then undefined).
pub fn precision_recall_curve(scores: &[f64], labels: &[bool]) -> Result<PrecisionRecallCurve> {
    const WHAT: &str = "precision-recall curve";
    let (positives, _) = check_binary_ranking(WHAT, scores, labels)?;
    if positives == 0 {
        return Err(Error::input(
            WHAT,
            "the labels hold no positive sample; recall needs at least one",
        ));
    }
    let mut points = Vec::new();
    let mut average_precision = 0.0;
    let (mut tp, mut fp) = (0u64, 0u64);
    for (threshold, group_tp, group_fp) in tied_groups(scores, labels) {
        tp += group_tp;
        fp += group_fp;
        let precision = tp as f64 / (tp + fp) as f64;
        average_precision += group_tp as f64 / positives as f64 * precision;
        points.push(PrecisionRecallPoint {
            threshold,
            precision,
            recall: tp as f64 / positives as f64,
        });
    }
    Ok(PrecisionRecallCurve {
        points,
        positives,
        average_precision,
    })
}

/// Average precision of binary scores (see [`precision_recall_curve`]).
///
/// ```text
/// AP = sum_t (R_t - R_{t-1}) P_t
/// ```
///
/// # Errors
/// As [`precision_recall_curve`].
pub fn average_precision(scores: &[f64], labels: &[bool]) -> Result<f64> {
    Ok(precision_recall_curve(scores, labels)?.average_precision)
}

// ---------------------------------------------------------------------------
// Regression.

fn check_regression(what: &str, truth: &[f64], predicted: &[f64]) -> Result<()> {
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

fn sum_of_squares(truth: &[f64], predicted: &[f64]) -> f64 {
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

fn r_squared_unchecked(truth: &[f64], predicted: &[f64]) -> Score {
    let mean = truth.iter().sum::<f64>() / truth.len() as f64;
    let total: f64 = truth.iter().map(|t| (t - mean) * (t - mean)).sum();
    if total == 0.0 {
        return Score::undefined(R_SQUARED_CONSTANT);
    }
    Score::defined(1.0 - sum_of_squares(truth, predicted) / total)
}

// ---------------------------------------------------------------------------
// Metric names.

/// A headline metric, by name: for sorting folds and sweeps by a metric the
/// analyst chooses.
///
/// | name | meaning | better |
/// |---|---|---|
/// | `accuracy` | fraction correct | higher |
/// | `balanced_accuracy` | mean per-class recall | higher |
/// | `macro_f1` | mean per-class F1 | higher |
/// | `weighted_f1` | support-weighted F1 | higher |
/// | `log_loss` | mean negative log-likelihood (needs probabilities) | lower |
/// | `brier` | multi-class Brier score (needs probabilities) | lower |
/// | `auc` | ROC AUC, one-vs-rest macro for several classes (needs probabilities) | higher |
/// | `mcc` | Matthews correlation | higher |
/// | `kappa` | Cohen's kappa | higher |
/// | `mean_squared_error` (`mse`) | regression | lower |
/// | `root_mean_squared_error` (`rmse`) | regression | lower |
/// | `mean_absolute_error` (`mae`) | regression | lower |
/// | `r_squared` (`r2`) | regression | higher |
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Metric {
    /// Fraction of samples classified correctly.
    Accuracy,
    /// Mean recall over the classes present in the truth.
    BalancedAccuracy,
    /// Mean per-class F1.
    MacroF1,
    /// Per-class F1 weighted by support.
    WeightedF1,
    /// Mean negative log-likelihood of the true class.
    LogLoss,
    /// Multi-class Brier score.
    Brier,
    /// ROC AUC (one-vs-rest macro average for more than two classes).
    Auc,
    /// Matthews correlation coefficient.
    Mcc,
    /// Cohen's kappa.
    Kappa,
    /// Mean squared error.
    MeanSquaredError,
    /// Root mean squared error.
    RootMeanSquaredError,
    /// Mean absolute error.
    MeanAbsoluteError,
    /// Coefficient of determination.
    RSquared,
}

impl Metric {
    /// Every metric, classification ones first.
    pub const ALL: [Metric; 13] = [
        Metric::Accuracy,
        Metric::BalancedAccuracy,
        Metric::MacroF1,
        Metric::WeightedF1,
        Metric::LogLoss,
        Metric::Brier,
        Metric::Auc,
        Metric::Mcc,
        Metric::Kappa,
        Metric::MeanSquaredError,
        Metric::RootMeanSquaredError,
        Metric::MeanAbsoluteError,
        Metric::RSquared,
    ];

    /// The metric's name, as its `FromStr` reads it and
    /// [`Display`](std::fmt::Display) writes it.
    pub fn name(self) -> &'static str {
        match self {
            Metric::Accuracy => "accuracy",
            Metric::BalancedAccuracy => "balanced_accuracy",
            Metric::MacroF1 => "macro_f1",
            Metric::WeightedF1 => "weighted_f1",
            Metric::LogLoss => "log_loss",
            Metric::Brier => "brier",
            Metric::Auc => "auc",
            Metric::Mcc => "mcc",
            Metric::Kappa => "kappa",
            Metric::MeanSquaredError => "mean_squared_error",
            Metric::RootMeanSquaredError => "root_mean_squared_error",
            Metric::MeanAbsoluteError => "mean_absolute_error",
            Metric::RSquared => "r_squared",
        }
    }

    /// Reads a metric name: one of the names in the table above, or the
    /// short forms `mse`, `rmse`, `mae`, `r2`. Case and surrounding spaces
    /// are ignored, and `-` may stand for `_`; an unknown name is refused
    /// with the list of valid names.
    fn from_name(name: &str) -> Result<Metric> {
        let wanted = name.trim().to_ascii_lowercase().replace('-', "_");
        let alias = match wanted.as_str() {
            "mse" => Some(Metric::MeanSquaredError),
            "rmse" => Some(Metric::RootMeanSquaredError),
            "mae" => Some(Metric::MeanAbsoluteError),
            "r2" => Some(Metric::RSquared),
            _ => None,
        };
        alias
            .or_else(|| Metric::ALL.into_iter().find(|m| m.name() == wanted))
            .ok_or_else(|| Error::choice("metric", name, &Metric::list(&Metric::ALL)))
    }

    fn list(metrics: &[Metric]) -> String {
        metrics
            .iter()
            .map(|m| m.name())
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// Is a higher value better? (False for the losses and errors.)
    pub fn higher_is_better(self) -> bool {
        !matches!(
            self,
            Metric::LogLoss
                | Metric::Brier
                | Metric::MeanSquaredError
                | Metric::RootMeanSquaredError
                | Metric::MeanAbsoluteError
        )
    }

    /// Is this a regression metric (rather than a classification one)?
    pub fn is_regression(self) -> bool {
        matches!(
            self,
            Metric::MeanSquaredError
                | Metric::RootMeanSquaredError
                | Metric::MeanAbsoluteError
                | Metric::RSquared
        )
    }

    /// Does this metric need class probabilities (not only predicted labels)?
    pub fn needs_probabilities(self) -> bool {
        matches!(self, Metric::LogLoss | Metric::Brier | Metric::Auc)
    }

    /// Orders two values of this metric best first, for `sort_by`.
    ///
    /// ```
    /// use stratanet::validate::metrics::Metric;
    /// let mut losses = vec![0.5, 0.2, 0.9];
    /// losses.sort_by(|a, b| Metric::LogLoss.best_first(*a, *b));
    /// assert_eq!(losses, vec![0.2, 0.5, 0.9]);
    /// ```
    pub fn best_first(self, a: f64, b: f64) -> Ordering {
        if self.higher_is_better() {
            b.total_cmp(&a)
        } else {
            a.total_cmp(&b)
        }
    }
}

impl fmt::Display for Metric {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Metric {
    type Err = Error;
    fn from_str(name: &str) -> Result<Metric> {
        Metric::from_name(name)
    }
}

// ---------------------------------------------------------------------------
// Summaries.

/// Why a value in a summary is undefined (and was set to 0).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Note {
    /// The metric: a [`Metric`] name, or `precision`, `recall`, `f1` for per-class values.
    pub metric: String,
    /// The class (0-based) or output for a per-class or per-output value.
    pub class: Option<usize>,
    /// What happened and what value was used.
    pub text: String,
}

impl Note {
    fn new(metric: &str, class: Option<usize>, text: &str) -> Note {
        Note {
            metric: metric.to_string(),
            class,
            text: text.to_string(),
        }
    }
}

impl fmt::Display for Note {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.class {
            Some(class) => write!(f, "{} of {class}: {}", self.metric, self.text),
            None => write!(f, "{}: {}", self.metric, self.text),
        }
    }
}

/// Precision, recall, F1 and support of one class, for a summary.
#[derive(Debug, Clone, PartialEq)]
pub struct ClassReport {
    /// The class's name (its index as text unless names were given).
    pub name: String,
    /// Precision; 0 with a note when undefined.
    pub precision: f64,
    /// Recall; 0 with a note when undefined.
    pub recall: f64,
    /// F1; 0 with a note when undefined.
    pub f1: f64,
    /// Samples of this true class.
    pub support: u64,
}

/// The headline classification metrics, computed in one call.
///
/// Undefined values are 0 and listed in `notes`. `log_loss`, `brier` and `auc`
/// are `None` when only predicted labels were given.
#[derive(Debug, Clone, PartialEq)]
pub struct ClassificationMetrics {
    /// The number of samples.
    pub n_samples: usize,
    /// The class names (indices as text unless given).
    pub class_names: Vec<String>,
    /// See [`ConfusionMatrix::accuracy`].
    pub accuracy: f64,
    /// See [`ConfusionMatrix::balanced_accuracy`].
    pub balanced_accuracy: f64,
    /// See [`ConfusionMatrix::macro_f1`].
    pub macro_f1: f64,
    /// See [`ConfusionMatrix::weighted_f1`].
    pub weighted_f1: f64,
    /// See [`log_loss`]; `None` without probabilities.
    pub log_loss: Option<f64>,
    /// See [`brier_score`]; `None` without probabilities.
    pub brier: Option<f64>,
    /// Binary ROC AUC of class 1's probability ([`roc_auc`]), or with more
    /// classes the one-vs-rest macro average ([`one_vs_rest_auc`]); `None`
    /// without probabilities.
    pub auc: Option<f64>,
    /// See [`ConfusionMatrix::matthews_correlation`].
    pub mcc: f64,
    /// See [`ConfusionMatrix::cohen_kappa`].
    pub kappa: f64,
    /// Per-class precision, recall, F1 and support.
    pub per_class: Vec<ClassReport>,
    /// The confusion matrix (predictions are the most probable class).
    pub confusion: ConfusionMatrix,
    /// One note for each value that is undefined and was set to 0.
    pub notes: Vec<Note>,
}

impl ClassificationMetrics {
    /// All headline metrics from true labels and class probabilities. The
    /// predicted class is the most probable one ([`most_probable_classes`]).
    ///
    /// # Errors
    /// As [`log_loss`].
    pub fn from_probabilities(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<Self> {
        let n_classes = check_probabilities("classification metrics", truth, probabilities)?;
        let predicted = most_probable_classes(probabilities);
        let mut summary = ClassificationMetrics::from_labels(truth, &predicted, n_classes)?;
        summary.log_loss = Some(log_loss(truth, probabilities)?);
        summary.brier = Some(brier_score(truth, probabilities)?);
        let auc = if n_classes == 2 {
            let labels: Vec<bool> = truth.iter().map(|&t| t == 1).collect();
            match roc_auc(&probabilities.column(1).to_vec(), &labels) {
                Ok(auc) => Score::defined(auc),
                Err(_) => Score::undefined(AUC_ONE_CLASS),
            }
        } else {
            one_vs_rest_auc(truth, probabilities)?.macro_average
        };
        if let Some(text) = auc.undefined {
            summary.notes.push(Note::new("auc", None, text));
        }
        summary.auc = Some(auc.value);
        Ok(summary)
    }

    /// The metrics that need only predicted labels; `log_loss`, `brier` and
    /// `auc` are `None`.
    ///
    /// # Errors
    /// As [`ConfusionMatrix::from_labels`].
    pub fn from_labels(truth: &[usize], predicted: &[usize], n_classes: usize) -> Result<Self> {
        let confusion = ConfusionMatrix::from_labels(truth, predicted, n_classes)?;
        let mut notes = Vec::new();
        let per_class = confusion
            .per_class()
            .iter()
            .map(|c| {
                for (metric, score) in [
                    ("precision", c.precision),
                    ("recall", c.recall),
                    ("f1", c.f1),
                ] {
                    if let Some(text) = score.undefined {
                        notes.push(Note::new(metric, Some(c.class), text));
                    }
                }
                ClassReport {
                    name: c.class.to_string(),
                    precision: c.precision.value,
                    recall: c.recall.value,
                    f1: c.f1.value,
                    support: c.support,
                }
            })
            .collect();
        let mcc = confusion.matthews_correlation();
        let kappa = confusion.cohen_kappa();
        for (metric, score) in [("mcc", mcc), ("kappa", kappa)] {
            if let Some(text) = score.undefined {
                notes.push(Note::new(metric, None, text));
            }
        }
        Ok(ClassificationMetrics {
            n_samples: truth.len(),
            class_names: (0..n_classes).map(|k| k.to_string()).collect(),
            accuracy: confusion.accuracy(),
            balanced_accuracy: confusion.balanced_accuracy(),
            macro_f1: confusion.macro_f1(),
            weighted_f1: confusion.weighted_f1(),
            log_loss: None,
            brier: None,
            auc: None,
            mcc: mcc.value,
            kappa: kappa.value,
            per_class,
            confusion,
            notes,
        })
    }

    /// Names the classes (in class-index order).
    ///
    /// # Errors
    /// If the number of names differs from the number of classes.
    pub fn with_class_names<S: AsRef<str>>(mut self, names: &[S]) -> Result<Self> {
        let n = self.class_names.len();
        if names.len() != n {
            return Err(Error::input(
                "classification metrics: class names",
                format!(
                    "{} names given for {n} classes; give one name per class",
                    names.len()
                ),
            ));
        }
        self.class_names = names.iter().map(|s| s.as_ref().to_string()).collect();
        for (report, name) in self.per_class.iter_mut().zip(&self.class_names) {
            report.name.clone_from(name);
        }
        Ok(self)
    }

    /// The notes as lines of text, with class names.
    pub fn note_lines(&self) -> Vec<String> {
        self.notes
            .iter()
            .map(|note| match note.class {
                Some(k) => format!(
                    "{} of class {k} (\"{}\"): {}",
                    note.metric, self.class_names[k], note.text
                ),
                None => note.to_string(),
            })
            .collect()
    }

    /// The value of a metric, with its undefined note if it has one.
    ///
    /// # Errors
    /// For a regression metric, or a metric that needs probabilities when
    /// only predicted labels were given.
    pub fn value(&self, metric: Metric) -> Result<Score> {
        let missing = || {
            Error::input(
                format!("metric {metric}"),
                "needs class probabilities, but these metrics were computed from predicted labels only; use ClassificationMetrics::from_probabilities",
            )
        };
        let value = match metric {
            Metric::Accuracy => self.accuracy,
            Metric::BalancedAccuracy => self.balanced_accuracy,
            Metric::MacroF1 => self.macro_f1,
            Metric::WeightedF1 => self.weighted_f1,
            Metric::LogLoss => self.log_loss.ok_or_else(missing)?,
            Metric::Brier => self.brier.ok_or_else(missing)?,
            Metric::Auc => self.auc.ok_or_else(missing)?,
            Metric::Mcc => self.mcc,
            Metric::Kappa => self.kappa,
            _ => {
                return Err(Error::input(
                    format!("metric {metric}"),
                    format!(
                        "is a regression metric; classification metrics are: {}",
                        Metric::list(&Metric::ALL[..9])
                    ),
                ))
            }
        };
        // Only mcc, kappa and auc can be undefined, each for one reason.
        let undefined = self
            .notes
            .iter()
            .find(|n| n.class.is_none() && n.metric == metric.name())
            .map(|_| match metric {
                Metric::Mcc => MCC_ZERO_DENOMINATOR,
                Metric::Kappa => KAPPA_NO_CHANCE_ROOM,
                _ => AUC_ONE_CLASS,
            });
        Ok(Score { value, undefined })
    }
}

/// Regression errors of one output (one target column).
#[derive(Debug, Clone, PartialEq)]
pub struct OutputReport {
    /// See [`mean_squared_error`].
    pub mean_squared_error: f64,
    /// See [`root_mean_squared_error`].
    pub root_mean_squared_error: f64,
    /// See [`mean_absolute_error`].
    pub mean_absolute_error: f64,
    /// See [`r_squared`]; 0 with a note when undefined.
    pub r_squared: f64,
}

/// The headline regression metrics, computed in one call.
///
/// With several outputs (target columns), each headline number is the
/// unweighted mean of the per-output values; R^2 averages over the outputs
/// where it is defined. (So RMSE is the mean of per-output RMSEs, not the root
/// of the mean MSE; common practice, no source.)
#[derive(Debug, Clone, PartialEq)]
pub struct RegressionMetrics {
    /// The number of samples (rows).
    pub n_samples: usize,
    /// Mean over outputs of [`mean_squared_error`].
    pub mean_squared_error: f64,
    /// Mean over outputs of [`root_mean_squared_error`].
    pub root_mean_squared_error: f64,
    /// Mean over outputs of [`mean_absolute_error`].
    pub mean_absolute_error: f64,
    /// Mean of [`r_squared`] over the outputs where it is defined; 0 with a
    /// note when it is defined for none.
    pub r_squared: f64,
    /// One entry per output.
    pub per_output: Vec<OutputReport>,
    /// One note per undefined value (`class` holds the output index).
    pub notes: Vec<Note>,
}

impl RegressionMetrics {
    /// Metrics for one output.
    ///
    /// # Errors
    /// As [`mean_squared_error`].
    pub fn from_slices(truth: &[f64], predicted: &[f64]) -> Result<Self> {
        check_regression("regression metrics", truth, predicted)?;
        let ndarray_truth = ArrayView2::from_shape((truth.len(), 1), truth)
            .map_err(|e| Error::input("regression metrics", e.to_string()))?;
        let ndarray_predicted = ArrayView2::from_shape((predicted.len(), 1), predicted)
            .map_err(|e| Error::input("regression metrics", e.to_string()))?;
        RegressionMetrics::from_arrays(ndarray_truth, ndarray_predicted)
    }

    /// Metrics for one or more outputs: rows are samples, columns outputs.
    ///
    /// # Errors
    /// If the shapes differ, there are no rows or no columns, or a value is not finite.
    pub fn from_arrays(truth: ArrayView2<f64>, predicted: ArrayView2<f64>) -> Result<Self> {
        const WHAT: &str = "regression metrics";
        if truth.dim() != predicted.dim() {
            return Err(Error::shape(
                "regression metrics: predictions (shaped like the truth)",
                truth.dim(),
                predicted.dim(),
            ));
        }
        let (rows, columns) = truth.dim();
        check_not_empty(WHAT, rows)?;
        if columns == 0 {
            return Err(Error::input(WHAT, "no outputs: the arrays have no columns"));
        }
        let mut per_output = Vec::with_capacity(columns);
        let mut notes = Vec::new();
        let mut defined_r_squared = Vec::new();
        for j in 0..columns {
            let t = truth.column(j).to_vec();
            let p = predicted.column(j).to_vec();
            check_finite(WHAT, "true", &t)?;
            check_finite(WHAT, "predicted", &p)?;
            let mse = sum_of_squares(&t, &p) / rows as f64;
            let mae = t.iter().zip(&p).map(|(a, b)| (a - b).abs()).sum::<f64>() / rows as f64;
            let r2 = r_squared_unchecked(&t, &p);
            match r2.undefined {
                Some(text) => notes.push(Note::new("r_squared", Some(j), text)),
                None => defined_r_squared.push(r2.value),
            }
            per_output.push(OutputReport {
                mean_squared_error: mse,
                root_mean_squared_error: mse.sqrt(),
                mean_absolute_error: mae,
                r_squared: r2.value,
            });
        }
        let mean =
            |f: fn(&OutputReport) -> f64| per_output.iter().map(f).sum::<f64>() / columns as f64;
        let r_squared = if defined_r_squared.is_empty() {
            notes.push(Note::new("r_squared", None, R_SQUARED_CONSTANT));
            0.0
        } else {
            defined_r_squared.iter().sum::<f64>() / defined_r_squared.len() as f64
        };
        Ok(RegressionMetrics {
            n_samples: rows,
            mean_squared_error: mean(|o| o.mean_squared_error),
            root_mean_squared_error: mean(|o| o.root_mean_squared_error),
            mean_absolute_error: mean(|o| o.mean_absolute_error),
            r_squared,
            per_output,
            notes,
        })
    }

    /// The value of a metric, with its undefined note if it has one.
    ///
    /// # Errors
    /// For a classification metric.
    pub fn value(&self, metric: Metric) -> Result<Score> {
        let value = match metric {
            Metric::MeanSquaredError => self.mean_squared_error,
            Metric::RootMeanSquaredError => self.root_mean_squared_error,
            Metric::MeanAbsoluteError => self.mean_absolute_error,
            Metric::RSquared => self.r_squared,
            _ => {
                return Err(Error::input(
                    format!("metric {metric}"),
                    format!(
                        "is a classification metric; regression metrics are: {}",
                        Metric::list(&Metric::ALL[9..])
                    ),
                ))
            }
        };
        let undefined = (metric == Metric::RSquared
            && self
                .notes
                .iter()
                .any(|n| n.class.is_none() && n.metric == "r_squared"))
        .then_some(R_SQUARED_CONSTANT);
        Ok(Score { value, undefined })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::{below, seeded_rng};
    use ndarray::{array, Array2};

    fn close(a: f64, b: f64, tolerance: f64) -> bool {
        (a - b).abs() <= tolerance
    }

    // Fawcett 2006, Fig. 3: 20 instances (10 positive, 10 negative).
    const FAWCETT_SCORES: [f64; 20] = [
        0.9, 0.8, 0.7, 0.6, 0.55, 0.54, 0.53, 0.52, 0.51, 0.505, 0.4, 0.39, 0.38, 0.37, 0.36, 0.35,
        0.34, 0.33, 0.30, 0.1,
    ];
    const FAWCETT_LABELS: [u8; 20] = [1, 1, 0, 1, 1, 1, 0, 0, 1, 0, 1, 0, 1, 0, 0, 0, 1, 0, 1, 0];

    fn fawcett_labels() -> Vec<bool> {
        FAWCETT_LABELS.iter().map(|&l| l == 1).collect()
    }

    /// Mann-Whitney U by brute force over all (positive, negative) pairs, ties 1/2.
    fn brute_force_u(scores: &[f64], labels: &[bool]) -> f64 {
        let mut u = 0.0;
        for i in 0..scores.len() {
            for j in 0..scores.len() {
                if labels[i] && !labels[j] {
                    u += match scores[i].partial_cmp(&scores[j]).unwrap() {
                        Ordering::Greater => 1.0,
                        Ordering::Equal => 0.5,
                        Ordering::Less => 0.0,
                    };
                }
            }
        }
        u
    }

    #[test]
    fn fawcett_2006_auc_is_0_68_and_equals_u_over_n1_n0() {
        // Source: Fawcett, "An introduction to ROC analysis", PRL 27 (2006), Fig. 3: AUC 0.68,
        // U = 68 (REFERENCES.md, "Ranking and classification metrics").
        let labels = fawcett_labels();
        let curve = roc_curve(&FAWCETT_SCORES, &labels).unwrap();
        assert!(close(curve.auc, 0.68, 1e-12), "{}", curve.auc);
        assert_eq!(brute_force_u(&FAWCETT_SCORES, &labels), 68.0);
        assert_eq!((curve.positives, curve.negatives), (10, 10));
        // No ties: one point per instance plus (0, 0); Fawcett's Fig. 3 starts
        // at (0, 0.1) for threshold .9 and ends at (1, 1).
        assert_eq!(curve.points.len(), 21);
        assert_eq!(curve.points[1].true_positive_rate, 0.1);
        assert_eq!(curve.points[1].false_positive_rate, 0.0);
        let last = curve.points.last().unwrap();
        assert_eq!(
            (last.false_positive_rate, last.true_positive_rate),
            (1.0, 1.0)
        );
        assert_eq!(last.threshold, 0.1);
    }

    #[test]
    fn auc_equals_mann_whitney_u_on_random_data_with_many_ties() {
        // AUC = U / (n1 n0) with ties counted 1/2: Hanley & McNeil, Radiology 143 (1982).
        let mut rng = seeded_rng(2024);
        for trial in 0..20 {
            let n = 30 + below(&mut rng, 170);
            // Scores on a coarse grid of 6 values: many ties within and across classes.
            let scores: Vec<f64> = (0..n).map(|_| below(&mut rng, 6) as f64 / 5.0).collect();
            let mut labels: Vec<bool> = (0..n).map(|_| below(&mut rng, 3) == 0).collect();
            labels[0] = true;
            labels[1] = false;
            let n1 = labels.iter().filter(|&&l| l).count() as f64;
            let n0 = n as f64 - n1;
            let expected = brute_force_u(&scores, &labels) / (n1 * n0);
            let auc = roc_auc(&scores, &labels).unwrap();
            assert!(
                close(auc, expected, 1e-14),
                "trial {trial}: {auc} vs {expected}"
            );
        }
    }

    #[test]
    fn roc_all_ties_is_one_diagonal_and_auc_one_half() {
        // Fawcett 2006, section 5 / Algorithm 1: equal scores make one diagonal step.
        let scores = [0.3; 7];
        let labels = [true, false, false, true, false, true, false];
        let curve = roc_curve(&scores, &labels).unwrap();
        assert_eq!(curve.auc, 0.5);
        assert_eq!(curve.points.len(), 2);
        assert_eq!(curve.points[1].threshold, 0.3);
    }

    #[test]
    fn roc_perfect_and_reversed_separation() {
        let scores = [0.9, 0.8, 0.7, 0.2, 0.1];
        let labels = [true, true, true, false, false];
        assert_eq!(roc_auc(&scores, &labels).unwrap(), 1.0);
        let reversed: Vec<bool> = labels.iter().map(|l| !l).collect();
        assert_eq!(roc_auc(&scores, &reversed).unwrap(), 0.0);
    }

    #[test]
    fn roc_tie_between_classes_counts_one_half() {
        // By hand: positives {0.8, 0.5}, negatives {0.5, 0.2}. Pairs: (0.8>0.5)=1, (0.8>0.2)=1,
        // (0.5=0.5)=1/2, (0.5>0.2)=1 -> U = 3.5, AUC = 3.5 / 4 = 0.875.
        let scores = [0.8, 0.5, 0.5, 0.2];
        let labels = [true, true, false, false];
        let curve = roc_curve(&scores, &labels).unwrap();
        assert_eq!(curve.auc, 0.875);
        // Points: (0,0) +inf, (0,0.5) 0.8, (0.5,1) 0.5 (the diagonal), (1,1) 0.2.
        let xy: Vec<(f64, f64)> = curve
            .points
            .iter()
            .map(|p| (p.false_positive_rate, p.true_positive_rate))
            .collect();
        assert_eq!(xy, vec![(0.0, 0.0), (0.0, 0.5), (0.5, 1.0), (1.0, 1.0)]);
        // -0.0 and 0.0 are the same score.
        assert_eq!(roc_auc(&[0.0, -0.0], &[true, false]).unwrap(), 0.5);
    }

    #[test]
    fn precision_recall_small_example_by_hand() {
        // By hand: scores .9 .8 .7 .7 .3, labels T F T F T (P = 3).
        //   t=.9: TP 1 FP 0 -> P 1,   R 1/3
        //   t=.8: TP 1 FP 1 -> P 1/2, R 1/3
        //   t=.7: TP 2 FP 2 -> P 1/2, R 2/3   (the tie enters together)
        //   t=.3: TP 3 FP 2 -> P 3/5, R 1
        // AP = 1/3 * 1 + 0 * 1/2 + 1/3 * 1/2 + 1/3 * 3/5 = (1 + 0.5 + 0.6) / 3 = 0.7
        let scores = [0.9, 0.8, 0.7, 0.7, 0.3];
        let labels = [true, false, true, false, true];
        let curve = precision_recall_curve(&scores, &labels).unwrap();
        let got: Vec<(f64, f64, f64)> = curve
            .points
            .iter()
            .map(|p| (p.threshold, p.precision, p.recall))
            .collect();
        assert_eq!(
            got,
            vec![
                (0.9, 1.0, 1.0 / 3.0),
                (0.8, 0.5, 1.0 / 3.0),
                (0.7, 0.5, 2.0 / 3.0),
                (0.3, 0.6, 1.0)
            ]
        );
        assert!(
            close(curve.average_precision, 0.7, 1e-15),
            "{}",
            curve.average_precision
        );
        // Without ties AP is the mean precision at each positive's rank (Manning et al. 2008,
        // ch. 8.4): ranks 1, 3, 5 of T F T F T -> (1 + 2/3 + 3/5) / 3.
        let distinct = [0.9, 0.8, 0.7, 0.6, 0.3];
        let ap = average_precision(&distinct, &labels).unwrap();
        assert!(close(ap, (1.0 + 2.0 / 3.0 + 0.6) / 3.0, 1e-15));
    }

    #[test]
    fn kappa_of_the_published_two_by_two_table() {
        // REFERENCES.md: table [[20, 5], [10, 15]]: observed 0.7, expected 0.5, kappa 0.4
        // (Cohen, Educ. Psych. Meas. 20, 1960, formula).
        let m = ConfusionMatrix::from_counts(vec![vec![20, 5], vec![10, 15]]).unwrap();
        assert_eq!(m.accuracy(), 0.7);
        let kappa = m.cohen_kappa();
        assert!(close(kappa.value, 0.4, 1e-15) && kappa.is_defined());
    }

    #[test]
    fn matthews_f1_accuracy_of_the_published_counts() {
        // REFERENCES.md: TP 90, FN 5, FP 4, TN 1 -> MCC 0.135242, F1 0.952381, accuracy 0.91
        // (Matthews 1975; the phi coefficient of the 2 x 2 table).
        let counts = BinaryCounts {
            true_positives: 90,
            false_positives: 4,
            false_negatives: 5,
            true_negatives: 1,
        };
        assert!(close(counts.matthews_correlation().value, 0.135242, 5e-7));
        assert!(close(counts.f1().value, 0.952381, 5e-7));
        assert!(close(counts.accuracy().value, 0.91, 1e-15));
        // The same table as a confusion matrix (class 1 positive): Gorodkin's R_K agrees
        // with the binary formula for two classes.
        let m = ConfusionMatrix::from_counts(vec![vec![1, 4], vec![5, 90]]).unwrap();
        assert_eq!(m.binary_counts(1).unwrap(), counts);
        let general = m.matthews_correlation().value;
        assert!(close(general, counts.matthews_correlation().value, 1e-15));
        assert!(close(m.per_class()[1].f1.value, 0.952381, 5e-7));
        assert!(close(m.accuracy(), 0.91, 1e-15));
    }

    #[test]
    fn gorodkin_agrees_with_binary_formula_on_random_tables() {
        let mut rng = seeded_rng(5);
        for _ in 0..200 {
            let c: Vec<u64> = (0..4).map(|_| below(&mut rng, 50) as u64 + 1).collect();
            let m = ConfusionMatrix::from_counts(vec![vec![c[0], c[1]], vec![c[2], c[3]]]).unwrap();
            let binary = m.binary_counts(1).unwrap().matthews_correlation().value;
            assert!(close(m.matthews_correlation().value, binary, 1e-14));
        }
    }

    #[test]
    fn multiclass_matthews_by_hand() {
        // By hand: [[2,1,0],[0,2,1],[1,0,3]], s = 10, c = 7, t = (3,3,4), p = (3,3,4).
        // cov = 7*10 - (9+9+16) = 36; spreads = 100 - 34 = 66 each; MCC = 36/66.
        let m = ConfusionMatrix::from_counts(vec![vec![2, 1, 0], vec![0, 2, 1], vec![1, 0, 3]])
            .unwrap();
        assert!(close(m.matthews_correlation().value, 36.0 / 66.0, 1e-15));
        // Perfect predictions give 1, and a reversed binary table -1.
        let perfect = ConfusionMatrix::from_labels(&[0, 1, 2, 2], &[0, 1, 2, 2], 3).unwrap();
        assert_eq!(perfect.matthews_correlation().value, 1.0);
        let reversed = ConfusionMatrix::from_counts(vec![vec![0, 3], vec![2, 0]]).unwrap();
        assert!(close(reversed.matthews_correlation().value, -1.0, 1e-15));
    }

    #[test]
    fn undefined_values_are_zero_with_a_note_never_nan() {
        // Class 2 absent from truth and never predicted; class 1 never predicted.
        let m = ConfusionMatrix::from_labels(&[0, 0, 1], &[0, 0, 0], 3).unwrap();
        let per_class = m.per_class();
        assert_eq!(per_class[1].precision, Score::undefined(NEVER_PREDICTED));
        assert_eq!(per_class[1].recall, Score::defined(0.0));
        assert_eq!(per_class[1].f1, Score::defined(0.0));
        assert_eq!(per_class[2].recall, Score::undefined(ABSENT_FROM_TRUTH));
        assert_eq!(per_class[2].f1, Score::undefined(ABSENT_EVERYWHERE));
        // Predictions all one class: MCC has a zero denominator; kappa is defined (0).
        assert_eq!(
            m.matthews_correlation(),
            Score::undefined(MCC_ZERO_DENOMINATOR)
        );
        assert_eq!(m.cohen_kappa(), Score::defined(0.0));
        // Macro F1 over classes 0 and 1 (class 2 appears nowhere): (0.8 + 0) / 2.
        assert!(close(m.macro_f1(), 0.4, 1e-15));
        // Balanced accuracy over classes present in truth: (1 + 0) / 2.
        assert_eq!(m.balanced_accuracy(), 0.5);
        // All one class everywhere: kappa's expected agreement is 1.
        let single = ConfusionMatrix::from_labels(&[1, 1], &[1, 1], 2).unwrap();
        assert_eq!(single.cohen_kappa(), Score::undefined(KAPPA_NO_CHANCE_ROOM));
        let normalised = single.row_normalised();
        assert_eq!(normalised, vec![vec![0.0, 0.0], vec![0.0, 1.0]]);
        assert!(!format!("{}", single.cohen_kappa()).contains("NaN"));
    }

    #[test]
    fn per_class_and_averages_by_hand() {
        // truth    0 0 0 1 1 2
        // predict  0 0 1 1 2 2
        // class 0: TP 2, FP 0, FN 1 -> P 1, R 2/3, F1 4/5
        // class 1: TP 1, FP 1, FN 1 -> P 1/2, R 1/2, F1 1/2
        // class 2: TP 1, FP 1, FN 0 -> P 1/2, R 1, F1 2/3
        let m = ConfusionMatrix::from_labels(&[0, 0, 0, 1, 1, 2], &[0, 0, 1, 1, 2, 2], 3).unwrap();
        let f1: Vec<f64> = m.per_class().iter().map(|c| c.f1.value).collect();
        assert_eq!(f1, vec![0.8, 0.5, 2.0 / 3.0]);
        assert!(close(m.macro_f1(), (0.8 + 0.5 + 2.0 / 3.0) / 3.0, 1e-15));
        assert!(close(
            m.weighted_f1(),
            (3.0 * 0.8 + 2.0 * 0.5 + 2.0 / 3.0) / 6.0,
            1e-15
        ));
        assert!(close(
            m.balanced_accuracy(),
            (2.0 / 3.0 + 0.5 + 1.0) / 3.0,
            1e-15
        ));
        assert_eq!(m.total(), 6);
        assert_eq!(m.supports(), vec![3, 2, 1]);
        assert_eq!(m.predicted_totals(), vec![2, 2, 2]);
        assert_eq!(m.row_normalised()[1], vec![0.0, 0.5, 0.5]);
    }

    #[test]
    fn log_loss_and_brier_by_hand() {
        // An illustration recomputed from the definition (log-loss, Good
        // 1952): p = [0.01544932, 0.63116335, 0.35338733], true class 2,
        // loss 1.04019057 = -ln(0.35338733).
        let p = array![[0.01544932, 0.63116335, 0.35338733]];
        assert!(close(log_loss(&[2], p.view()).unwrap(), 1.04019057, 1e-7));
        // Brier by hand: 0.01544932^2 + 0.63116335^2 + (1 - 0.35338733)^2.
        let expected = 0.01544932f64.powi(2) + 0.63116335f64.powi(2) + 0.64661267f64.powi(2);
        assert!(close(brier_score(&[2], p.view()).unwrap(), expected, 1e-12));
        // Clipping: a certain mistake costs -ln(1e-15), not infinity.
        let certain = array![[1.0, 0.0]];
        assert!(close(
            log_loss(&[1], certain.view()).unwrap(),
            -(1e-15f64).ln(),
            1e-9
        ));
        // Brier of a certain mistake is 2, the top of its range.
        assert_eq!(brier_score(&[1], certain.view()).unwrap(), 2.0);
    }

    #[test]
    fn one_vs_rest_auc_with_a_class_absent() {
        let truth = [0, 0, 1, 1];
        let p = array![
            [0.7, 0.2, 0.1],
            [0.5, 0.3, 0.2],
            [0.2, 0.7, 0.1],
            [0.4, 0.5, 0.1]
        ];
        let auc = one_vs_rest_auc(&truth, p.view()).unwrap();
        assert_eq!(auc.per_class[0], Score::defined(1.0));
        assert_eq!(auc.per_class[1], Score::defined(1.0));
        assert_eq!(auc.per_class[2], Score::undefined(AUC_CLASS_ABSENT));
        assert_eq!(auc.macro_average, Score::defined(1.0));
    }

    #[test]
    fn classification_summary_in_one_call() {
        let truth = [0, 0, 1, 1, 1];
        let p = array![[0.9, 0.1], [0.4, 0.6], [0.3, 0.7], [0.2, 0.8], [0.6, 0.4]];
        let s = ClassificationMetrics::from_probabilities(&truth, p.view())
            .unwrap()
            .with_class_names(&["no", "yes"])
            .unwrap();
        assert_eq!(s.accuracy, 0.6);
        assert_eq!(s.confusion.counts(), &[vec![1, 1], vec![1, 2]]);
        // AUC by hand from column 1: positives (truth 1) .7 .8 .4, negatives .1 .6 -> pairs: .7>.1,.7>.6,.8>.1,.8>.6,.4>.1,.4<.6 -> U = 5, AUC 5/6.
        assert!(close(s.auc.unwrap(), 5.0 / 6.0, 1e-15));
        assert_eq!(s.per_class[1].name, "yes");
        assert_eq!(
            s.value("auc".parse().unwrap()).unwrap(),
            Score::defined(s.auc.unwrap())
        );
        assert_eq!(
            s.value(" Balanced-Accuracy ".parse().unwrap())
                .unwrap()
                .value,
            s.balanced_accuracy
        );
        assert!(s.notes.is_empty());
        // A malformed confusion matrix is refused.
        assert!(ConfusionMatrix::from_counts(vec![vec![1, 1], vec![1]]).is_err());
    }

    #[test]
    fn classification_summary_notes_and_labels_only() {
        let s = ClassificationMetrics::from_labels(&[0, 0], &[0, 0], 2).unwrap();
        let lines = s.note_lines();
        assert!(lines
            .iter()
            .any(|l| l.starts_with("precision of class 1 (\"1\"): class never predicted")));
        let mcc = s.value("mcc".parse().unwrap()).unwrap();
        assert_eq!(mcc, Score::undefined(MCC_ZERO_DENOMINATOR));
        let kappa = s.value("kappa".parse().unwrap()).unwrap();
        assert_eq!(kappa, Score::undefined(KAPPA_NO_CHANCE_ROOM));
        let err = s
            .value("log_loss".parse().unwrap())
            .unwrap_err()
            .to_string();
        assert!(err.contains("needs class probabilities"), "{err}");
        let err = s.value("rmse".parse().unwrap()).unwrap_err().to_string();
        assert!(err.contains("is a regression metric"), "{err}");
        // The binary AUC of a one-class truth is flagged, not an error.
        let p = array![[0.9, 0.1], [0.4, 0.6]];
        let s = ClassificationMetrics::from_probabilities(&[0, 0], p.view()).unwrap();
        assert_eq!(
            s.value("auc".parse().unwrap()).unwrap(),
            Score::undefined(AUC_ONE_CLASS)
        );
    }

    #[test]
    fn metric_names_round_trip_and_direction() {
        for m in Metric::ALL {
            assert_eq!(Metric::from_name(m.name()).unwrap(), m);
            assert_eq!(m.to_string().parse::<Metric>().unwrap(), m);
        }
        assert_eq!(
            Metric::from_name("RMSE").unwrap(),
            Metric::RootMeanSquaredError
        );
        assert!(!Metric::LogLoss.higher_is_better());
        assert!(!Metric::Brier.higher_is_better());
        assert!(Metric::Auc.higher_is_better() && Metric::Auc.needs_probabilities());
        assert!(Metric::RSquared.is_regression() && Metric::RSquared.higher_is_better());
        let err = Metric::from_name("acuracy").unwrap_err().to_string();
        assert!(
            err.starts_with("option metric = acuracy: must be one of accuracy, balanced_accuracy, macro_f1, weighted_f1, log_loss, brier, auc, mcc, kappa, mean_squared_error"),
            "{err}"
        );
        let mut aucs = vec![0.6, 0.9, 0.7];
        aucs.sort_by(|a, b| Metric::Auc.best_first(*a, *b));
        assert_eq!(aucs, vec![0.9, 0.7, 0.6]);
    }

    #[test]
    fn regression_by_hand() {
        // truth 1 2 3 4, predicted 1 2 3 5: SS_res 1, mean 2.5, SS_tot 5.
        let truth = [1.0, 2.0, 3.0, 4.0];
        let predicted = [1.0, 2.0, 3.0, 5.0];
        assert_eq!(mean_squared_error(&truth, &predicted).unwrap(), 0.25);
        assert_eq!(root_mean_squared_error(&truth, &predicted).unwrap(), 0.5);
        assert_eq!(mean_absolute_error(&truth, &predicted).unwrap(), 0.25);
        assert_eq!(r_squared(&truth, &predicted).unwrap(), Score::defined(0.8));
        let s = RegressionMetrics::from_slices(&truth, &predicted).unwrap();
        assert_eq!(s.value("r2".parse().unwrap()).unwrap(), Score::defined(0.8));
        assert_eq!(s.value("mae".parse().unwrap()).unwrap().value, 0.25);
        assert!(s.value("accuracy".parse().unwrap()).is_err());
        // Constant truth: R^2 flagged.
        assert_eq!(
            r_squared(&[2.0, 2.0], &[2.0, 3.0]).unwrap(),
            Score::undefined(R_SQUARED_CONSTANT)
        );
    }

    #[test]
    fn regression_multi_output_averages_columns() {
        let truth = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0], [4.0, 5.0]];
        let predicted = array![[1.0, 5.0], [2.0, 5.0], [3.0, 5.0], [5.0, 7.0]];
        let s = RegressionMetrics::from_arrays(truth.view(), predicted.view()).unwrap();
        // Column 0: MSE 0.25, RMSE 0.5; column 1: MSE 1, RMSE 1, R^2 undefined (constant).
        assert_eq!(s.mean_squared_error, 0.625);
        assert_eq!(s.root_mean_squared_error, 0.75);
        assert_eq!(s.r_squared, 0.8);
        assert_eq!(
            s.notes,
            vec![Note::new("r_squared", Some(1), R_SQUARED_CONSTANT)]
        );
        assert!(s.value("r_squared".parse().unwrap()).unwrap().is_defined());
    }

    #[test]
    fn errors_name_what_is_wrong_and_the_valid_range() {
        let e = ConfusionMatrix::from_labels(&[0, 1], &[0], 2)
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "confusion matrix: truth has 2 values but predicted has 1; give one of each per sample"
        );
        let e = ConfusionMatrix::from_labels(&[0, 3], &[0, 1], 3)
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "confusion matrix: true label 3 at position 1 is not a class; with 3 classes labels must be in 0..3 (0 to 2)"
        );
        let e = ConfusionMatrix::from_labels(&[], &[], 2)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no samples"), "{e}");
        let e = ConfusionMatrix::from_labels(&[0], &[0], 1)
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("option n_classes = 1: must be at least 2"),
            "{e}"
        );
        let e = ConfusionMatrix::from_counts(vec![vec![1, 2], vec![3]])
            .unwrap_err()
            .to_string();
        assert!(e.contains("row 1 has 1 counts but there are 2 rows"), "{e}");

        let p = array![[0.5, 0.5], [0.2, 0.8]];
        let e = log_loss(&[0], p.view()).unwrap_err().to_string();
        assert_eq!(
            e,
            "log-loss: class probabilities (one row per true label): expected 1 rows x 2 columns, found 2 x 2"
        );
        let e = log_loss(&[0, 2], p.view()).unwrap_err().to_string();
        assert!(
            e.contains(
                "true label 2 at position 1 is not a class; with 2 classes labels must be in 0..2"
            ),
            "{e}"
        );
        let raw = array![[2.0, -1.0]];
        let e = brier_score(&[0], raw.view()).unwrap_err().to_string();
        assert!(
            e.contains("probability 2 at row 0, column 0 is not in [0, 1]"),
            "{e}"
        );
        let unnormalised = array![[0.5, 0.4]];
        let e = log_loss(&[0], unnormalised.view()).unwrap_err().to_string();
        assert!(
            e.contains("row 0 of the class probabilities sums to 0.9, not 1"),
            "{e}"
        );
        let narrow = Array2::<f64>::ones((2, 1));
        let e = log_loss(&[0, 0], narrow.view()).unwrap_err().to_string();
        assert!(e.contains("one column per class, at least 2"), "{e}");

        let e = roc_curve(&[0.1, 0.2], &[true, true])
            .unwrap_err()
            .to_string();
        assert_eq!(
            e,
            "ROC curve: the labels hold 2 positive and 0 negative samples; a ROC curve needs at least one of each"
        );
        let e = roc_curve(&[0.1, f64::NAN], &[true, false])
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("score value NaN at position 1 is not a finite number"),
            "{e}"
        );
        let e = precision_recall_curve(&[0.1], &[false])
            .unwrap_err()
            .to_string();
        assert!(e.contains("no positive sample"), "{e}");
        let e = mean_squared_error(&[1.0], &[]).unwrap_err().to_string();
        assert!(e.contains("truth has 1 values but predicted has 0"), "{e}");
        let e = ClassificationMetrics::from_labels(&[0, 1], &[0, 1], 2)
            .unwrap()
            .with_class_names(&["a"])
            .unwrap_err()
            .to_string();
        assert!(e.contains("1 names given for 2 classes"), "{e}");
        let m = ConfusionMatrix::from_labels(&[0, 1], &[0, 1], 2).unwrap();
        let e = m.binary_counts(2).unwrap_err().to_string();
        assert!(e.contains("must be in 0..2"), "{e}");
    }
}
