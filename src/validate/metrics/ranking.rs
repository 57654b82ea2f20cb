//! Ranking: ROC and precision-recall curves and the areas under them.

use super::checks::check_binary_ranking;
use super::checks::check_probabilities;
use super::score::Score;
use super::score::AUC_CLASS_ABSENT;
use super::score::AUC_ONE_CLASS;
use crate::error::{Error, Result};
use ndarray::ArrayView2;
use std::cmp::Ordering;

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
pub(super) fn tied_groups(scores: &[f64], labels: &[bool]) -> Vec<(f64, u64, u64)> {
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
/// As [`log_loss`](super::log_loss) for the probabilities.
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
