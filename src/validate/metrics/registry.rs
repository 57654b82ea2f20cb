//! [`Metric`]: the names of the headline numbers.

use crate::error::{Error, Result};
use std::cmp::Ordering;
use std::fmt;
use std::str::FromStr;

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
    pub(super) fn from_name(name: &str) -> Result<Metric> {
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

    pub(super) fn list(metrics: &[Metric]) -> String {
        metrics
            .iter()
            .map(|m| m.name())
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The values the metric can take (intervals stay inside them).
    pub fn range(self) -> crate::validate::stats::Range {
        use crate::validate::stats::Range;
        match self {
            Metric::Accuracy
            | Metric::BalancedAccuracy
            | Metric::MacroF1
            | Metric::WeightedF1
            | Metric::Auc => Range::Unit,
            Metric::Mcc | Metric::Kappa => Range::Signed,
            Metric::RSquared => Range::AtMostOne,
            Metric::LogLoss
            | Metric::Brier
            | Metric::MeanSquaredError
            | Metric::RootMeanSquaredError
            | Metric::MeanAbsoluteError => Range::NonNegative,
        }
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
