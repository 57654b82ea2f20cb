//! [`Score`]: a metric's value, or the conventional 0 with the reason it
//! is undefined; the texts of those conventions.

use std::fmt;

// The texts of the undefined-value conventions. Each says what happened and
// what value was used, so that a note can be shown as it is.
pub(super) const NEVER_PREDICTED: &str = "class never predicted; precision set to 0 by convention";
pub(super) const ABSENT_FROM_TRUTH: &str = "class absent from truth; recall set to 0 by convention";
pub(super) const ABSENT_EVERYWHERE: &str =
    "class absent from truth and never predicted; F1 set to 0 by convention";
pub(super) const MCC_ZERO_DENOMINATOR: &str = "truth or predictions hold a single class, so the Matthews correlation has a zero denominator; set to 0 by convention";
pub(super) const KAPPA_NO_CHANCE_ROOM: &str = "expected chance agreement is 1 (truth and predictions are all one class); Cohen's kappa set to 0 by convention";
pub(super) const AUC_ONE_CLASS: &str =
    "truth holds fewer than two classes, so there is no ROC curve; AUC set to 0 by convention";
pub(super) const AUC_CLASS_ABSENT: &str =
    "class absent from truth (or the only class present); its one-vs-rest AUC set to 0 by convention";
pub(super) const NO_SAMPLES: &str = "no samples; set to 0 by convention";
pub(super) const R_SQUARED_CONSTANT: &str =
    "truth is constant (total sum of squares 0); R^2 set to 0 by convention";

// Rows of class probabilities must sum to 1 within this. Softmax outputs in
// f64 are within 1e-15; the slack admits probabilities that passed through
// f32 or were rounded for printing, but still catches raw scores.
pub(super) const ROW_SUM_TOLERANCE: f64 = 1e-6;

// Log-loss clips probabilities to [EPSILON, 1 - EPSILON] so that one
// confident mistake costs -ln(1e-15) = 34.5 rather than infinity
// (common practice, no source).
pub(super) const LOG_LOSS_EPSILON: f64 = 1e-15;

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
