//! How fit options are written in files: the `training_options` of a model
//! file and each configuration of a sweep plan.
//!
//! Version 2 ([`OptionsV2`]) writes every option flat, in its text form
//! (the one its `FromStr` reads: `"adam:0.9:0.999:1e-8"`, `"leaky_relu:0.01"`),
//! and refuses unknown or missing fields. Version 1 ([`OptionsV1`]) is what
//! files written before version 2 hold, read leniently as they were
//! written: missing fields take the defaults of the time, unknown ones are
//! ignored.

use crate::data::Scaling;
use crate::fit::{Calibration, ClassWeights, FitOptions, ThresholdTarget};
use crate::network::{Activation, Arithmetic, Head, Init, Precision};
use crate::train::{BatchSize, EarlyStopping, Loss, Optimiser, Schedule, TrainingOptions};
use serde::{Deserialize, Serialize};
use std::str::FromStr;

/// Fit options as version-2 files write them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct OptionsV2 {
    pub hidden_layers: Vec<usize>,
    pub activation: String,
    pub head: Option<String>,
    pub init: String,
    pub scaling: String,
    #[serde(default = "standardise")]
    pub target_scaling: String,
    #[serde(default = "no_weights")]
    pub class_weights: String,
    pub validation_share: Option<f64>,
    pub restarts: usize,
    pub precision: String,
    pub epochs: usize,
    /// A number of rows, `"full"`, or null for the default.
    pub batch_size: Option<BatchSizeV2>,
    pub learning_rate: f64,
    pub schedule: String,
    pub optimiser: String,
    pub weight_decay: f64,
    pub l1_penalty: f64,
    pub loss: Option<String>,
    pub early_stopping: Option<EarlyStoppingV2>,
    pub shuffle: bool,
    pub train_biases: bool,
    pub arithmetic: String,
    /// `none` or `temperature` (absent in files written before calibration).
    #[serde(default = "no_calibration")]
    pub calibration: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target_recall: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target_precision: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub positive_class: Option<String>,
}

fn no_calibration() -> String {
    Calibration::None.to_string()
}

/// A batch size as files write it: a number of rows, or `"full"`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub(crate) enum BatchSizeV2 {
    Rows(usize),
    Text(String),
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct EarlyStoppingV2 {
    pub patience: usize,
    pub min_improvement: f64,
}

fn standardise() -> String {
    Scaling::Standardise.to_string()
}

fn no_weights() -> String {
    ClassWeights::None.to_string()
}

fn parse<T: FromStr<Err = crate::Error>>(field: &str, text: &str) -> Result<T, String> {
    text.parse()
        .map_err(|e: crate::Error| format!("\"{field}\": {e}"))
}

impl OptionsV2 {
    /// The file form of fit options.
    pub fn from_options(o: &FitOptions) -> OptionsV2 {
        let t = &o.training;
        OptionsV2 {
            hidden_layers: o.hidden_layers.clone(),
            activation: o.activation.to_string(),
            head: o.head.map(|h| h.to_string()),
            init: o.init.to_string(),
            scaling: o.scaling.to_string(),
            target_scaling: o.target_scaling.to_string(),
            class_weights: o.class_weights.to_string(),
            validation_share: o.validation_share,
            restarts: o.restarts,
            precision: o.precision.to_string(),
            epochs: t.epochs,
            batch_size: t.batch_size.map(|b| match b {
                BatchSize::Rows(n) => BatchSizeV2::Rows(n),
                BatchSize::Full => BatchSizeV2::Text(b.to_string()),
            }),
            learning_rate: t.learning_rate,
            schedule: t.schedule.to_string(),
            optimiser: t.optimiser.to_string(),
            weight_decay: t.weight_decay,
            l1_penalty: t.l1_penalty,
            loss: t.loss.map(|l| l.to_string()),
            early_stopping: t.early_stopping.map(|e| EarlyStoppingV2 {
                patience: e.patience,
                min_improvement: e.min_improvement,
            }),
            shuffle: t.shuffle,
            train_biases: t.train_biases,
            arithmetic: t.arithmetic.to_string(),
            calibration: o.calibration.to_string(),
            target_recall: match o.threshold_target {
                Some(ThresholdTarget::Recall(v)) => Some(v),
                _ => None,
            },
            target_precision: match o.threshold_target {
                Some(ThresholdTarget::Precision(v)) => Some(v),
                _ => None,
            },
            positive_class: o.positive_class.clone(),
        }
    }

    /// The options, every text form read and every option checked; the
    /// reason names the field.
    pub fn into_options(self) -> Result<FitOptions, String> {
        let options = FitOptions {
            hidden_layers: self.hidden_layers,
            activation: parse::<Activation>("activation", &self.activation)?,
            head: self.head.map(|h| parse::<Head>("head", &h)).transpose()?,
            init: parse::<Init>("init", &self.init)?,
            scaling: parse::<Scaling>("scaling", &self.scaling)?,
            target_scaling: parse::<Scaling>("target_scaling", &self.target_scaling)?,
            class_weights: parse::<ClassWeights>("class_weights", &self.class_weights)?,
            validation_share: self.validation_share,
            restarts: self.restarts,
            precision: parse::<Precision>("precision", &self.precision)?,
            training: TrainingOptions {
                epochs: self.epochs,
                batch_size: match self.batch_size {
                    None => None,
                    Some(BatchSizeV2::Rows(0)) => {
                        return Err("\"batch_size\": must be at least 1".into())
                    }
                    Some(BatchSizeV2::Rows(n)) => Some(BatchSize::Rows(n)),
                    Some(BatchSizeV2::Text(t)) => Some(parse::<BatchSize>("batch_size", &t)?),
                },
                learning_rate: self.learning_rate,
                schedule: parse::<Schedule>("schedule", &self.schedule)?,
                optimiser: parse::<Optimiser>("optimiser", &self.optimiser)?,
                weight_decay: self.weight_decay,
                l1_penalty: self.l1_penalty,
                loss: self.loss.map(|l| parse::<Loss>("loss", &l)).transpose()?,
                early_stopping: self.early_stopping.map(|e| EarlyStopping {
                    patience: e.patience,
                    min_improvement: e.min_improvement,
                }),
                shuffle: self.shuffle,
                train_biases: self.train_biases,
                arithmetic: parse::<Arithmetic>("arithmetic", &self.arithmetic)?,
                observer: Default::default(),
            },
            calibration: parse::<Calibration>("calibration", &self.calibration)?,
            threshold_target: match (self.target_recall, self.target_precision) {
                (Some(_), Some(_)) => {
                    return Err(
                        "\"target_recall\" and \"target_precision\": at most one may be given"
                            .into(),
                    )
                }
                (Some(r), None) => Some(ThresholdTarget::Recall(r)),
                (None, Some(p)) => Some(ThresholdTarget::Precision(p)),
                (None, None) => None,
            },
            positive_class: self.positive_class,
        };
        options.validate().map_err(|e| e.to_string())?;
        Ok(options)
    }
}

/// Fit options as version-1 files wrote them: the serde form the in-memory
/// types had then (externally tagged enums in snake case, `#[serde(default)]`
/// on both structs).
#[derive(Debug, Deserialize)]
#[serde(default)]
pub(crate) struct OptionsV1 {
    hidden_layers: Vec<usize>,
    activation: ActivationV1,
    head: Option<HeadV1>,
    init: InitV1,
    scaling: ScalingV1,
    validation_fraction: f64,
    restarts: usize,
    precision: PrecisionV1,
    training: TrainingV1,
}

impl Default for OptionsV1 {
    fn default() -> Self {
        // The defaults of version 1 (what a file lacking a field meant).
        OptionsV1 {
            hidden_layers: vec![16],
            activation: ActivationV1::Tanh,
            head: None,
            init: InitV1::Auto,
            scaling: ScalingV1::Standardise,
            validation_fraction: 0.2,
            restarts: 1,
            precision: PrecisionV1::F64,
            training: TrainingV1::default(),
        }
    }
}

#[derive(Debug, Deserialize)]
#[serde(default)]
struct TrainingV1 {
    epochs: usize,
    batch_size: usize,
    learning_rate: f64,
    schedule: ScheduleV1,
    optimiser: OptimiserV1,
    weight_decay: f64,
    l1_penalty: f64,
    loss: Option<LossV1>,
    early_stopping: Option<EarlyStoppingV2>,
    shuffle: bool,
    train_biases: bool,
    /// A file without it was trained in the fast mode.
    arithmetic: ArithmeticV1,
}

impl Default for TrainingV1 {
    fn default() -> Self {
        TrainingV1 {
            epochs: 500,
            batch_size: 32,
            learning_rate: 0.01,
            schedule: ScheduleV1::Constant,
            optimiser: OptimiserV1::Adam {
                beta1: 0.9,
                beta2: 0.999,
                epsilon: 1e-8,
            },
            weight_decay: 0.0,
            l1_penalty: 0.0,
            loss: None,
            early_stopping: Some(EarlyStoppingV2 {
                patience: 30,
                min_improvement: 0.0,
            }),
            shuffle: true,
            train_biases: true,
            arithmetic: ArithmeticV1::Fast,
        }
    }
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum ActivationV1 {
    Identity,
    Sigmoid,
    Tanh,
    Relu,
    LeakyRelu(f64),
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum HeadV1 {
    Logistic,
    Softmax,
    Identity,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum InitV1 {
    Auto,
    SmallUniform { range: f64 },
    GlorotUniform,
    HeUniform,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum ScalingV1 {
    None,
    Standardise,
    MinMax,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum PrecisionV1 {
    F64,
    F32,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum ScheduleV1 {
    Constant,
    Step { every: usize, factor: f64 },
    Exponential { gamma: f64 },
    Cosine { min_rate: f64 },
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum OptimiserV1 {
    Sgd,
    Momentum {
        mu: f64,
    },
    Nesterov {
        mu: f64,
    },
    Adam {
        beta1: f64,
        beta2: f64,
        epsilon: f64,
    },
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum LossV1 {
    SquaredError,
    CrossEntropy,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum ArithmeticV1 {
    Fast,
    Portable,
}

impl OptionsV1 {
    /// The options of today that mean what the version-1 file said.
    pub fn into_options(self) -> Result<FitOptions, String> {
        let t = self.training;
        let options = FitOptions {
            hidden_layers: self.hidden_layers,
            activation: match self.activation {
                ActivationV1::Identity => Activation::Identity,
                ActivationV1::Sigmoid => Activation::Sigmoid,
                ActivationV1::Tanh => Activation::Tanh,
                ActivationV1::Relu => Activation::Relu,
                ActivationV1::LeakyRelu(s) => Activation::LeakyRelu(s),
            },
            head: self.head.map(|h| match h {
                HeadV1::Logistic => Head::Logistic,
                HeadV1::Softmax => Head::Softmax,
                HeadV1::Identity => Head::Identity,
            }),
            init: match self.init {
                InitV1::Auto => Init::Auto,
                InitV1::SmallUniform { range } => Init::SmallUniform { range },
                InitV1::GlorotUniform => Init::GlorotUniform,
                InitV1::HeUniform => Init::HeUniform,
            },
            scaling: match self.scaling {
                ScalingV1::None => Scaling::None,
                ScalingV1::Standardise => Scaling::Standardise,
                ScalingV1::MinMax => Scaling::MinMax,
            },
            // Version 1 never scaled the target or weighted classes.
            target_scaling: Scaling::None,
            class_weights: ClassWeights::None,
            // Version 1 always stated the share, so it is kept as given.
            validation_share: Some(self.validation_fraction),
            restarts: self.restarts,
            precision: match self.precision {
                PrecisionV1::F64 => Precision::F64,
                PrecisionV1::F32 => Precision::F32,
            },
            training: TrainingOptions {
                epochs: t.epochs,
                batch_size: Some(BatchSize::Rows(t.batch_size)),
                learning_rate: t.learning_rate,
                schedule: match t.schedule {
                    ScheduleV1::Constant => Schedule::Constant,
                    ScheduleV1::Step { every, factor } => Schedule::Step { every, factor },
                    ScheduleV1::Exponential { gamma } => Schedule::Exponential { gamma },
                    ScheduleV1::Cosine { min_rate } => Schedule::Cosine { min_rate },
                },
                optimiser: match t.optimiser {
                    OptimiserV1::Sgd => Optimiser::Sgd,
                    OptimiserV1::Momentum { mu } => Optimiser::Momentum { mu },
                    OptimiserV1::Nesterov { mu } => Optimiser::Nesterov { mu },
                    OptimiserV1::Adam {
                        beta1,
                        beta2,
                        epsilon,
                    } => Optimiser::Adam {
                        beta1,
                        beta2,
                        epsilon,
                    },
                },
                weight_decay: t.weight_decay,
                l1_penalty: t.l1_penalty,
                loss: t.loss.map(|l| match l {
                    LossV1::SquaredError => Loss::SquaredError,
                    LossV1::CrossEntropy => Loss::CrossEntropy,
                }),
                early_stopping: t.early_stopping.map(|e| EarlyStopping {
                    patience: e.patience,
                    min_improvement: e.min_improvement,
                }),
                shuffle: t.shuffle,
                train_biases: t.train_biases,
                arithmetic: match t.arithmetic {
                    ArithmeticV1::Fast => Arithmetic::Fast,
                    ArithmeticV1::Portable => Arithmetic::Portable,
                },
                observer: Default::default(),
            },
            // Version 1 had no calibration or threshold.
            calibration: Calibration::None,
            threshold_target: None,
            positive_class: None,
        };
        options.validate().map_err(|e| e.to_string())?;
        Ok(options)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn version_2_options_round_trip_through_their_text_forms() {
        let options = FitOptions {
            activation: Activation::LeakyRelu(0.05),
            head: Some(Head::Softmax),
            init: Init::SmallUniform { range: 0.3 },
            scaling: Scaling::MinMax,
            validation_share: Some(0.25),
            ..FitOptions::default()
                .hidden(&[8, 4])
                .batch_size(BatchSize::Full)
                .optimiser(Optimiser::Nesterov { mu: 0.8 })
        };
        let file = OptionsV2::from_options(&options);
        assert_eq!(file.optimiser, "nesterov:0.8");
        assert_eq!(file.batch_size, Some(BatchSizeV2::Text("full".into())));
        let json = serde_json::to_string(&file).unwrap();
        let back: OptionsV2 = serde_json::from_str(&json).unwrap();
        assert_eq!(back.into_options().unwrap(), options);
    }

    #[test]
    fn a_bad_text_form_names_the_field() {
        let mut file = OptionsV2::from_options(&FitOptions::default());
        file.optimiser = "rmsprop".into();
        assert_eq!(
            file.into_options().unwrap_err(),
            "\"optimiser\": option optimiser = rmsprop: must be one of sgd, momentum[:MU], nesterov[:MU], adam[:BETA1:BETA2:EPSILON]"
        );
    }
}
