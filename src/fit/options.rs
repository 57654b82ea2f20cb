//! What [`fit`](super::fit) needs beyond the data: [`FitOptions`].

use super::ThresholdTarget;
use crate::data::{Dataset, Scaling, Target};
use crate::error::{Error, Result};
use crate::network::{Activation, Head, Init, Precision};
use crate::observe::{Event, Observer};
use crate::train::{BatchSize, EarlyStopping, Optimiser, TrainingOptions};
use std::fmt;
use std::str::FromStr;

/// How each class's rows weigh in the loss (for imbalanced classes).
///
/// Row `i` of class `c` contributes `w_c E_i` to the objective (the batch
/// loss is `(1/|B|) sum_i w_c(i) E_i`; see
/// [`TrainingOptions`]), and the validation loss is weighted alike; the
/// reported metrics stay unweighted. With `n` training rows, `k` classes
/// and `n_c` training rows of class `c` (counted on the fit's training rows,
/// so inside every fold):
///
/// ```text
/// none       w_c = 1
/// balanced   w_c = n / (k n_c)        (every class weighs as much in total;
///                                      the mean weight over the rows is 1)
/// given      w_c as listed
/// ```
/// Balanced weights: common practice, no source.
///
/// Text form: `none`, `balanced`, or `CLASS=W,CLASS=W,...` naming every
/// class with a finite weight above 0.
#[derive(Clone, Debug, Default, PartialEq)]
pub enum ClassWeights {
    /// Every row weighs 1.
    #[default]
    None,
    /// `n / (k n_c)`.
    Balanced,
    /// One weight per class name.
    Given(Vec<(String, f64)>),
}

impl fmt::Display for ClassWeights {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ClassWeights::None => f.write_str("none"),
            ClassWeights::Balanced => f.write_str("balanced"),
            ClassWeights::Given(list) => {
                let parts: Vec<String> = list.iter().map(|(c, w)| format!("{c}={w}")).collect();
                f.write_str(&parts.join(","))
            }
        }
    }
}

impl FromStr for ClassWeights {
    type Err = Error;

    fn from_str(text: &str) -> Result<ClassWeights> {
        match text.trim() {
            "none" => return Ok(ClassWeights::None),
            "balanced" => return Ok(ClassWeights::Balanced),
            _ => {}
        }
        let mut list: Vec<(String, f64)> = Vec::new();
        for part in text.split(',') {
            let Some((c, w)) = part.split_once('=') else {
                return Err(Error::option(
                    "class_weights",
                    text,
                    "must be none, balanced, or CLASS=WEIGHT pairs separated by commas (e.g. ok=1,fault=5)",
                ));
            };
            let c = c.trim();
            let w: f64 = w
                .trim()
                .parse()
                .ok()
                .filter(|v: &f64| v.is_finite() && *v > 0.0)
                .ok_or_else(|| {
                    Error::option(
                        "class_weights",
                        text,
                        format!("the weight of \"{c}\" must be a finite number above 0"),
                    )
                })?;
            if c.is_empty() || list.iter().any(|(n, _)| n == c) {
                return Err(Error::option(
                    "class_weights",
                    text,
                    format!("names class \"{c}\" twice or not at all"),
                ));
            }
            list.push((c.to_string(), w));
        }
        Ok(ClassWeights::Given(list))
    }
}

impl ClassWeights {
    /// The weight of each class (in class order) for training rows whose
    /// class counts are `counts`; `None` when rows are not weighted.
    ///
    /// # Errors
    /// Given weights that do not name every class, or name an unknown one.
    pub fn per_class(&self, names: &[String], counts: &[usize]) -> Result<Option<Vec<f64>>> {
        match self {
            ClassWeights::None => Ok(None),
            ClassWeights::Balanced => {
                let n: usize = counts.iter().sum();
                let k = counts.iter().filter(|&&c| c > 0).count();
                Ok(Some(
                    counts
                        .iter()
                        .map(|&c| {
                            if c == 0 {
                                0.0
                            } else {
                                n as f64 / (k as f64 * c as f64)
                            }
                        })
                        .collect(),
                ))
            }
            ClassWeights::Given(list) => {
                for (c, _) in list {
                    if !names.contains(c) {
                        return Err(Error::option(
                            "class_weights",
                            self,
                            format!(
                                "names \"{c}\", which is not a class; the classes are {}",
                                names.join(", ")
                            ),
                        ));
                    }
                }
                names
                    .iter()
                    .map(|n| {
                        list.iter()
                            .find(|(c, _)| c == n)
                            .map(|&(_, w)| w)
                            .ok_or_else(|| {
                                Error::option(
                                    "class_weights",
                                    self,
                                    format!(
                                        "gives no weight for class \"{n}\"; name every class ({})",
                                        names.join(", ")
                                    ),
                                )
                            })
                    })
                    .collect::<Result<Vec<f64>>>()
                    .map(Some)
            }
        }
    }
}

/// Everything [`fit`](super::fit()) needs beyond the data.
///
/// ```
/// use stratanet::prelude::*;
/// let options = FitOptions::default().hidden(&[8, 4]).epochs(300).learning_rate(0.02);
/// assert_eq!(options.hidden_layers, vec![8, 4]);
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct FitOptions {
    /// Widths of the hidden layers, input side first (empty: no hidden layer).
    pub hidden_layers: Vec<usize>,
    /// The hidden activation.
    pub activation: Activation,
    /// The output head; `None` picks it from the target.
    pub head: Option<Head>,
    /// How to draw starting weights.
    pub init: Init,
    /// Feature scaling, fitted on the training rows.
    pub scaling: Scaling,
    /// Scaling of a numeric target (regression with the identity head),
    /// fitted on the training rows (inside every fold): the network learns
    /// the scaled target and the model's predictions come back in the
    /// target's own units. Losses are reported in the scaled units. Other
    /// heads learn the target as given.
    pub target_scaling: Scaling,
    /// How each class's rows weigh in the loss ([`ClassWeights`]).
    pub class_weights: ClassWeights,
    /// Share of rows held out as validation rows (for early stopping and
    /// for choosing among restarts), in `[0, 1)`, stratified by class.
    /// `None` takes [`FitOptions::VALIDATION_SHARE`] with early stopping and
    /// 0 (every row trains) without it.
    pub validation_share: Option<f64>,
    /// Networks trained from different seeds; the best is kept (>= 1).
    pub restarts: usize,
    /// The float type.
    pub precision: Precision,
    /// The training options.
    pub training: TrainingOptions,
    /// Calibration of a classifier's probabilities after training, fitted
    /// on the validation rows only (inside every fold in cross-validation).
    pub calibration: Calibration,
    /// For two classes: a decision threshold chosen on the validation rows
    /// (after any calibration) to reach this recall or precision for the
    /// positive class; the model then decides with it.
    pub threshold_target: Option<ThresholdTarget>,
    /// The class `threshold_target` refers to; `None` takes the second
    /// class of the target (the classes sorted), and the fit says so.
    pub positive_class: Option<String>,
}

/// How a classifier's probabilities are calibrated after training.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Calibration {
    /// The network's probabilities as they are.
    #[default]
    None,
    /// One temperature dividing the output sums, fitted by maximum
    /// likelihood on the validation rows (Guo et al. 2017;
    /// [`fit_temperature`](super::fit_temperature)).
    Temperature,
}

crate::error::text_forms!(Calibration, "calibration", {
    Calibration::None => "none",
    Calibration::Temperature => "temperature",
});

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            hidden_layers: vec![16],
            activation: Activation::Tanh,
            head: None,
            init: Init::Auto,
            scaling: Scaling::Standardise,
            target_scaling: Scaling::Standardise,
            class_weights: ClassWeights::None,
            validation_share: None,
            restarts: 1,
            precision: Precision::F64,
            training: TrainingOptions::default(),
            calibration: Calibration::None,
            threshold_target: None,
            positive_class: None,
        }
    }
}

impl FitOptions {
    /// The validation share used with early stopping when none is given
    /// (common practice, no source).
    pub const VALIDATION_SHARE: f64 = 0.2;

    /// The fewest validation rows early stopping works with when the
    /// validation share is left to the default: with fewer, the default
    /// switches early stopping off and trains on every row, and says so
    /// (common practice, no source).
    pub const MIN_VALIDATION_ROWS: usize = 10;

    /// Sets the class weights.
    pub fn class_weights(mut self, weights: ClassWeights) -> Self {
        self.class_weights = weights;
        self
    }

    /// Sets the hidden layer widths.
    pub fn hidden(mut self, widths: &[usize]) -> Self {
        self.hidden_layers = widths.to_vec();
        self
    }
    /// Sets the hidden activation.
    pub fn activation(mut self, activation: Activation) -> Self {
        self.activation = activation;
        self
    }
    /// Sets the maximum number of epochs.
    pub fn epochs(mut self, epochs: usize) -> Self {
        self.training.epochs = epochs;
        self
    }
    /// Sets the learning rate.
    pub fn learning_rate(mut self, rate: f64) -> Self {
        self.training.learning_rate = rate;
        self
    }
    /// Sets the rows per update (`BatchSize::Full` for full-batch descent).
    pub fn batch_size(mut self, batch: BatchSize) -> Self {
        self.training.batch_size = Some(batch);
        self
    }
    /// Sets the L2 weight decay.
    pub fn weight_decay(mut self, lambda: f64) -> Self {
        self.training.weight_decay = lambda;
        self
    }
    /// Sets the update rule.
    pub fn optimiser(mut self, optimiser: Optimiser) -> Self {
        self.training.optimiser = optimiser;
        self
    }
    /// Sets the number of restarts.
    pub fn restarts(mut self, restarts: usize) -> Self {
        self.restarts = restarts;
        self
    }
    /// Sets the share of rows held out as validation rows.
    pub fn validation_share(mut self, share: f64) -> Self {
        self.validation_share = Some(share);
        self
    }
    /// Sets early stopping (`None` turns it off).
    pub fn early_stopping(mut self, early_stopping: Option<EarlyStopping>) -> Self {
        self.training.early_stopping = early_stopping;
        self
    }
    /// Sets the calibration of the probabilities.
    pub fn calibration(mut self, calibration: Calibration) -> Self {
        self.calibration = calibration;
        self
    }
    /// Chooses a decision threshold for two classes on the validation rows.
    pub fn threshold_target(mut self, target: ThresholdTarget) -> Self {
        self.threshold_target = Some(target);
        self
    }
    /// Sets the float type.
    pub fn precision(mut self, precision: Precision) -> Self {
        self.precision = precision;
        self
    }

    /// Calls `f` with every progress [`Event`] of the fit (and of the
    /// cross-validation or sweep these options are given to); see
    /// [`observe`](crate::observe).
    pub fn observe(mut self, f: impl Fn(&Event) + Send + Sync + 'static) -> Self {
        self.training.observer = Observer::new(f);
        self
    }

    /// The validation share in force: the one given, or the default for
    /// the early-stopping setting.
    pub fn validation_share_or_default(&self) -> f64 {
        self.validation_share
            .unwrap_or(if self.training.early_stopping.is_some() {
                FitOptions::VALIDATION_SHARE
            } else {
                0.0
            })
    }

    /// The same options with nobody listening (what a model records).
    pub(crate) fn without_observer(&self) -> FitOptions {
        FitOptions {
            training: self.training.without_observer(),
            ..self.clone()
        }
    }

    /// The network's layer sizes for `data`, and its head.
    ///
    /// # Errors
    /// A head that does not fit the target.
    pub fn architecture(&self, data: &Dataset) -> Result<(Vec<usize>, Head)> {
        let (head, outputs) = match (&data.target, self.head) {
            (Target::Classes { names, .. }, None) if names.len() == 2 => (Head::Logistic, 1),
            (Target::Classes { names, .. }, None) => (Head::Softmax, names.len()),
            (Target::Classes { names, .. }, Some(Head::Softmax)) => (Head::Softmax, names.len()),
            (Target::Classes { names, .. }, Some(Head::Logistic)) if names.len() == 2 => {
                (Head::Logistic, 1)
            }
            (Target::Values { values, .. }, None) => (Head::Identity, values.ncols()),
            (Target::Values { values, .. }, Some(h)) => (h, values.ncols()),
            (Target::Classes { names, .. }, Some(h)) => {
                return Err(Error::option(
                    "head",
                    h,
                    format!(
                        "cannot predict {} classes; use softmax (or logistic for two classes)",
                        names.len()
                    ),
                ))
            }
        };
        let mut sizes = vec![data.n_features()];
        sizes.extend(&self.hidden_layers);
        sizes.push(outputs);
        Ok((sizes, head))
    }

    /// Checks every option that does not depend on the data, once, before
    /// any work: the front door of [`fit`](super::fit), cross-validation and
    /// sweeps calls it, and nothing checks again.
    ///
    /// # Errors
    /// The first invalid option, named, with its valid range.
    pub fn validate(&self) -> Result<()> {
        if let Some(share) = self.validation_share {
            if !(0.0..1.0).contains(&share) {
                return Err(Error::option(
                    "validation_share",
                    share,
                    "must be at least 0 and below 1",
                ));
            }
            if share == 0.0 && self.training.early_stopping.is_some() {
                return Err(Error::option(
                    "validation_share",
                    0,
                    format!(
                        "early stopping needs validation rows: set it above 0 ({} is usual) or turn early stopping off",
                        FitOptions::VALIDATION_SHARE
                    ),
                ));
            }
        }
        if self.restarts == 0 {
            return Err(Error::option("restarts", 0, "must be at least 1"));
        }
        if self.restarts > 1000 {
            return Err(Error::option(
                "restarts",
                self.restarts,
                "must be at most 1000",
            ));
        }
        if let Some(i) = self.hidden_layers.iter().position(|&w| w == 0) {
            return Err(Error::option(
                "hidden_layers",
                format!("{:?}", self.hidden_layers),
                format!(
                    "layer {} has width 0; every hidden layer needs at least one unit",
                    i + 1
                ),
            ));
        }
        if let Some(head) = self.head {
            if let Some(loss) = self.training.loss {
                loss.check_head(head)?;
            }
        }
        if let Some(target) = self.threshold_target {
            target.validate()?;
        }
        let chooses = self.calibration != Calibration::None || self.threshold_target.is_some();
        if chooses && self.validation_share_or_default() == 0.0 {
            let (name, value) = match (self.calibration, self.threshold_target) {
                (Calibration::Temperature, _) => ("calibration", self.calibration.to_string()),
                (_, Some(ThresholdTarget::Recall(v))) => ("target_recall", v.to_string()),
                (_, Some(ThresholdTarget::Precision(v))) => ("target_precision", v.to_string()),
                (Calibration::None, None) => unreachable!("something is chosen"),
            };
            return Err(Error::option(
                name,
                value,
                format!(
                    "is fitted on validation rows, and there are none: set {} above 0 ({} is usual) or turn on early stopping",
                    crate::error::opt("validation_share"),
                    FitOptions::VALIDATION_SHARE
                ),
            ));
        }
        if self.positive_class.is_some() && self.threshold_target.is_none() {
            return Err(Error::option(
                "positive_class",
                self.positive_class.as_deref().unwrap_or_default(),
                format!(
                    "names the class a threshold target refers to; give {} or {} too, or leave it out",
                    crate::error::opt("target_recall"),
                    crate::error::opt("target_precision")
                ),
            ));
        }
        self.training.validate()
    }
}
