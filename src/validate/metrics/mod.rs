//! Classification and regression metrics: pure functions of truth and
//! predictions, with no training code.
//!
//! Inputs are plain data:
//!
//! - true and predicted class labels as `&[usize]`, each in `0..n_classes`;
//! - class probabilities as an [`ArrayView2<f64>`](ndarray::ArrayView2): one row per sample, one
//!   column per class, each row summing to 1 (within 1e-6);
//! - for ranking metrics of one class against the rest, `&[f64]` scores
//!   (higher means "more likely positive") and `&[bool]` labels (`true` =
//!   positive). From `usize` labels: `labels.iter().map(|&l| l == positive)`;
//! - for regression, `&[f64]` truth and prediction, or [`ArrayView2<f64>`](ndarray::ArrayView2) with
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

pub mod calibration;
mod checks;
mod confusion;
mod probability;
mod ranking;
mod registry;
mod regression;
mod score;
mod summary;
#[cfg(test)]
mod tests;

pub use calibration::{
    brier_partition, brier_partition_binned, reliability, Binning, BrierPartition, Forecast,
    Grouping, Reliability, ReliabilityBin,
};
pub use confusion::{BinaryCounts, ClassScores, ConfusionMatrix};
pub use probability::{brier_score, log_loss, most_probable_classes};
pub use ranking::{
    average_precision, one_vs_rest_auc, precision_recall_curve, roc_auc, roc_curve, OneVsRestAuc,
    PrecisionRecallCurve, PrecisionRecallPoint, RocCurve, RocPoint,
};
pub use registry::Metric;
pub use regression::{mean_absolute_error, mean_squared_error, r_squared, root_mean_squared_error};
pub use score::Score;
pub use summary::{ClassReport, ClassificationMetrics, Note, OutputReport, RegressionMetrics};
