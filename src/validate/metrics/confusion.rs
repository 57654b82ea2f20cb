//! Confusion counts and the metrics read from them.

use super::checks::check_labels;
use super::checks::check_n_classes;
use super::checks::check_not_empty;
use super::checks::check_same_length;
use super::score::Score;
use super::score::ABSENT_EVERYWHERE;
use super::score::ABSENT_FROM_TRUTH;
use super::score::KAPPA_NO_CHANCE_ROOM;
use super::score::MCC_ZERO_DENOMINATOR;
use super::score::NEVER_PREDICTED;
use super::score::NO_SAMPLES;
use crate::error::{Error, Result};

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
