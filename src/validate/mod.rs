//! Validation: metrics on labelled sets and statistical tests for comparing models.
//!
//! - [`metrics`]: confusion matrix, accuracy, balanced accuracy, F1, Cohen's
//!   kappa, Matthews correlation, log-loss, Brier score, ROC and
//!   precision-recall curves, AUC, regression errors, one-call summaries
//!   ([`ClassificationMetrics`], [`RegressionMetrics`]) and metric names
//!   ([`Metric`]) for sorting folds and sweeps.
//! - [`stats`]: Student t, normal, chi-square and binomial distribution
//!   functions, the per-fold [`Summary`] with a t interval, McNemar's test and
//!   the corrected resampled t-test.
//!
//! Values that are undefined for the input (a class never predicted, a
//! constant truth, ...) are never a silent `NaN`: they are 0 with a note
//! saying why (see [`Score`]).
pub mod metrics;
pub mod stats;

pub use metrics::{ClassificationMetrics, ConfusionMatrix, Metric, RegressionMetrics, Score};
pub use stats::{
    corrected_resampled_t_test, mcnemar_test, IntervalMethod, McNemar, Range, ResampledTTest,
    Summary,
};
mod compare;
pub mod costs;
pub(crate) mod cv;
#[cfg(test)]
mod decision_scores_tests;
mod holdout;
pub mod holdout_ledger;
pub mod importance;
pub mod key_results;
pub(crate) mod nested;
pub mod out_of_fold;
mod record_file;
mod search;
pub(crate) mod sweep;
pub mod sweep_files;

pub use compare::{compare_configurations, compare_models, Comparison};
pub use costs::CostSummary;
pub use cv::{
    cross_validate, cross_validate_with_plan, CrossValidation, CvOptions, FoldBaseline, FoldPlan,
    FoldResult, MetricSummary, Scores, MAX_FOLD_FITS,
};
pub use holdout::{HoldOut, HoldOutScore};
pub use key_results::{Compared, KeyResult, KeyResults, KeyValue, Reproduction};
pub use nested::{nested_cross_validate, NestedChoice, NestedCrossValidation};
pub use out_of_fold::OutOfFold;
pub use search::{Candidates, Grid, Halving, RandomSearch, Search, MAX_CONFIGURATIONS};
pub use sweep::{
    sweep, Round, RoundSummary, Sweep, SweepPlan, SweepRow, SweepTable, Trial, MAX_TRIALS,
};
