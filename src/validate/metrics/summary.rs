//! One-call summaries: [`ClassificationMetrics`] and [`RegressionMetrics`].

use super::checks::check_finite;
use super::checks::check_not_empty;
use super::checks::check_probabilities;
use super::confusion::ConfusionMatrix;
use super::probability::brier_score;
use super::probability::log_loss;
use super::probability::most_probable_classes;
use super::ranking::one_vs_rest_auc;
use super::ranking::roc_auc;
use super::registry::Metric;
use super::regression::check_regression;
use super::regression::r_squared_unchecked;
use super::regression::sum_of_squares;
use super::score::Score;
use super::score::AUC_ONE_CLASS;
use super::score::KAPPA_NO_CHANCE_ROOM;
use super::score::MCC_ZERO_DENOMINATOR;
use super::score::R_SQUARED_CONSTANT;
use crate::error::{Error, Result};
use ndarray::ArrayView2;
use std::fmt;

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
    pub(super) fn new(metric: &str, class: Option<usize>, text: &str) -> Note {
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
    /// See [`log_loss`](super::log_loss); `None` without probabilities.
    pub log_loss: Option<f64>,
    /// See [`brier_score`](super::brier_score); `None` without probabilities.
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
    /// As [`log_loss`](super::log_loss).
    pub fn from_probabilities(truth: &[usize], probabilities: ArrayView2<f64>) -> Result<Self> {
        let predicted = most_probable_classes(probabilities);
        ClassificationMetrics::from_probabilities_and_decisions(truth, probabilities, &predicted)
    }

    /// All headline metrics, when the predicted classes come from a decision
    /// rule (a probability threshold or a cost matrix) rather than the most
    /// probable class: the confusion matrix and the metrics read from it use
    /// `predicted`; log loss, Brier score and AUC use the probabilities.
    ///
    /// # Errors
    /// As [`log_loss`](super::log_loss); `predicted` of another length than
    /// `truth`, or naming a class the probabilities do not have.
    pub fn from_probabilities_and_decisions(
        truth: &[usize],
        probabilities: ArrayView2<f64>,
        predicted: &[usize],
    ) -> Result<Self> {
        let n_classes = check_probabilities("classification metrics", truth, probabilities)?;
        let mut summary = ClassificationMetrics::from_labels(truth, predicted, n_classes)?;
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
    /// See [`mean_squared_error`](super::mean_squared_error).
    pub mean_squared_error: f64,
    /// See [`root_mean_squared_error`](super::root_mean_squared_error).
    pub root_mean_squared_error: f64,
    /// See [`mean_absolute_error`](super::mean_absolute_error).
    pub mean_absolute_error: f64,
    /// See [`r_squared`](super::r_squared); 0 with a note when undefined.
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
    /// Mean over outputs of [`mean_squared_error`](super::mean_squared_error).
    pub mean_squared_error: f64,
    /// Mean over outputs of [`root_mean_squared_error`](super::root_mean_squared_error).
    pub root_mean_squared_error: f64,
    /// Mean over outputs of [`mean_absolute_error`](super::mean_absolute_error).
    pub mean_absolute_error: f64,
    /// Mean of [`r_squared`](super::r_squared) over the outputs where it is defined; 0 with a
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
    /// As [`mean_squared_error`](super::mean_squared_error).
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
