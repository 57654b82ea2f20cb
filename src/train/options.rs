//! Training options: update rule, schedule, penalties, early stopping.
//!
//! Update rules, for a parameter `w` with mini-batch gradient `g` at update `t`
//! (counting from 1) and learning rate `eta`:
//!
//! ```text
//! plain SGD   w <- w - eta g
//! momentum    v <- mu v - eta g;  w <- w + v
//!             (Rumelhart, Hinton & Williams 1986; Polyak 1964)
//! Nesterov    v' <- mu v - eta g;  w <- w - mu v + (1 + mu) v';  v <- v'
//!             (Nesterov 1983 as written for networks by Sutskever, Martens, Dahl &
//!              Hinton, ICML 2013; this "look-ahead" form: Bengio, Boulanger-Lewandowski
//!              & Pascanu, "Advances in optimizing recurrent networks", 2013)
//! Adam        m <- b1 m + (1 - b1) g;  s <- b2 s + (1 - b2) g^2
//!             w <- w - eta (m / (1 - b1^t)) / (sqrt(s / (1 - b2^t)) + eps)
//!             (Kingma & Ba, "Adam: a method for stochastic optimization", ICLR 2015)
//! ```
//!
//! Penalties (conventions): the objective of one mini-batch is
//!
//! ```text
//! J = (1/|B|) sum_{i in B} E_i  +  (lambda_2 / 2) sum w^2  +  lambda_1 sum |w|
//! ```
//! over the weights only: **biases are never penalised**, and the penalty is
//! added **once per update (per batch)**, not per sample, so its strength
//! does not change with the batch size. The gradient gains `lambda_2 w +
//! lambda_1 sign(w)` (sign(0) = 0). With Adam the penalty gradient enters the
//! moment estimates (the coupled form). Sources: weight decay, Krogh & Hertz,
//! "A simple weight decay can improve generalization", NIPS 1991; L1, Tibshirani,
//! "Regression shrinkage and selection via the lasso", 1996.
//!
//! Learning-rate schedules, for epoch `e` counted from 0 of `E` epochs:
//!
//! ```text
//! constant     eta_e = eta
//! step         eta_e = eta * factor^floor(e / every)
//! exponential  eta_e = eta * gamma^e
//! cosine       eta_e = min + (eta - min) (1 + cos(pi e / E)) / 2
//!              (Loshchilov & Hutter, "SGDR", ICLR 2017, without restarts)
//! ```
//!
//! Early stopping (Prechelt, "Early stopping - but when?", 1998): after each
//! epoch the validation loss is compared with the best so far; it counts as
//! an improvement when it is below `best - min_improvement`. Training stops
//! after `patience` epochs without improvement, and the weights of the best
//! epoch are restored.

use crate::error::{Error, Result};
use crate::network::Arithmetic;
use crate::train::Loss;
use serde::{Deserialize, Serialize};

/// The update rule.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Optimiser {
    /// Plain stochastic gradient descent.
    Sgd,
    /// Classical momentum with coefficient `mu` in `[0, 1)`.
    Momentum {
        /// The momentum coefficient.
        mu: f64,
    },
    /// Nesterov momentum with coefficient `mu` in `[0, 1)`.
    Nesterov {
        /// The momentum coefficient.
        mu: f64,
    },
    /// Adam.
    Adam {
        /// Decay of the first moment (0.9 in the paper).
        beta1: f64,
        /// Decay of the second moment (0.999 in the paper).
        beta2: f64,
        /// Added to the root of the second moment (1e-8 in the paper).
        epsilon: f64,
    },
}

impl Optimiser {
    /// Adam with the paper's defaults (0.9, 0.999, 1e-8).
    pub const ADAM: Optimiser = Optimiser::Adam {
        beta1: 0.9,
        beta2: 0.999,
        epsilon: 1e-8,
    };

    /// A short name.
    pub fn name(&self) -> &'static str {
        match self {
            Optimiser::Sgd => "sgd",
            Optimiser::Momentum { .. } => "momentum",
            Optimiser::Nesterov { .. } => "nesterov",
            Optimiser::Adam { .. } => "adam",
        }
    }
}

impl Default for Optimiser {
    fn default() -> Self {
        Optimiser::ADAM
    }
}

/// How the learning rate changes over epochs.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Schedule {
    /// The same rate throughout.
    #[default]
    Constant,
    /// Multiply by `factor` every `every` epochs.
    Step {
        /// Epochs between reductions (> 0).
        every: usize,
        /// The multiplier, in `(0, 1]`.
        factor: f64,
    },
    /// Multiply by `gamma` every epoch.
    Exponential {
        /// The multiplier, in `(0, 1]`.
        gamma: f64,
    },
    /// Half a cosine from the rate down to `min_rate` over the maximum epochs.
    Cosine {
        /// The rate reached at the end (>= 0).
        min_rate: f64,
    },
}

impl Schedule {
    /// The learning rate at epoch `epoch` (from 0) of `epochs`.
    pub fn rate(&self, base: f64, epoch: usize, epochs: usize) -> f64 {
        match *self {
            Schedule::Constant => base,
            Schedule::Step { every, factor } => base * factor.powi((epoch / every) as i32),
            Schedule::Exponential { gamma } => base * gamma.powi(epoch as i32),
            Schedule::Cosine { min_rate } => {
                let phase = std::f64::consts::PI * epoch as f64 / epochs as f64;
                min_rate + (base - min_rate) * (1.0 + libm::cos(phase)) / 2.0
            }
        }
    }
}

/// When to stop on the validation loss.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct EarlyStopping {
    /// Epochs without improvement before stopping (> 0).
    pub patience: usize,
    /// How much lower the validation loss must be to count as better (>= 0).
    pub min_improvement: f64,
}

impl Default for EarlyStopping {
    fn default() -> Self {
        EarlyStopping {
            patience: 30,
            min_improvement: 0.0,
        }
    }
}

/// Options for training one network.
///
/// ```
/// use stratanet::train::{Optimiser, TrainingOptions};
/// let options = TrainingOptions { epochs: 300, learning_rate: 0.05, optimiser: Optimiser::Sgd, ..Default::default() };
/// assert_eq!(options.batch_size, 32);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct TrainingOptions {
    /// The most epochs (passes over the training rows) to run (> 0).
    pub epochs: usize,
    /// Rows per update: 1 is online learning; a batch at least the number of
    /// rows is full-batch descent (> 0).
    pub batch_size: usize,
    /// The base learning rate (> 0).
    pub learning_rate: f64,
    /// How the rate changes over epochs.
    pub schedule: Schedule,
    /// The update rule.
    pub optimiser: Optimiser,
    /// L2 penalty `lambda_2` on the weights (>= 0).
    pub weight_decay: f64,
    /// L1 penalty `lambda_1` on the weights (>= 0).
    pub l1_penalty: f64,
    /// The loss; `None` picks [`Loss::default_for`] the head.
    pub loss: Option<Loss>,
    /// Early stopping on the validation rows; needs validation rows.
    pub early_stopping: Option<EarlyStopping>,
    /// Shuffle the row order every epoch (from the training generator).
    pub shuffle: bool,
    /// Update the biases (true); false keeps them at their starting values.
    pub train_biases: bool,
    /// Print one progress line every this many epochs (0: silent).
    pub progress_every: usize,
    /// Fast (CPU-specific kernels) or portable (fixed-order) sums. Written
    /// to JSON (and so to model files) only when portable: a file without
    /// the field was trained in the fast mode, as every version-1 file
    /// written before the field existed was.
    #[serde(skip_serializing_if = "Arithmetic::is_fast")]
    pub arithmetic: Arithmetic,
}

impl Default for TrainingOptions {
    fn default() -> Self {
        TrainingOptions {
            epochs: 500,
            batch_size: 32,
            learning_rate: 0.01,
            schedule: Schedule::Constant,
            optimiser: Optimiser::default(),
            weight_decay: 0.0,
            l1_penalty: 0.0,
            loss: None,
            early_stopping: Some(EarlyStopping::default()),
            shuffle: true,
            train_biases: true,
            progress_every: 0,
            arithmetic: Arithmetic::Fast,
        }
    }
}

fn positive(name: &str, v: f64) -> Result<()> {
    if v > 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::option(
            name,
            v,
            "must be a finite number greater than 0",
        ))
    }
}

fn non_negative(name: &str, v: f64) -> Result<()> {
    if v >= 0.0 && v.is_finite() {
        Ok(())
    } else {
        Err(Error::option(
            name,
            v,
            "must be a finite number, 0 or greater",
        ))
    }
}

fn unit_open(name: &str, v: f64) -> Result<()> {
    if (0.0..1.0).contains(&v) {
        Ok(())
    } else {
        Err(Error::option(name, v, "must be at least 0 and below 1"))
    }
}

impl TrainingOptions {
    /// Checks every option once, before any work.
    ///
    /// `rows` is the number of training rows and `has_validation` whether
    /// validation rows are given.
    ///
    /// # Errors
    /// The first invalid option, named, with its valid range.
    pub fn validate(&self, rows: usize, has_validation: bool) -> Result<()> {
        if self.epochs == 0 {
            return Err(Error::option("epochs", 0, "must be at least 1"));
        }
        if self.batch_size == 0 {
            return Err(Error::option("batch_size", 0, "must be at least 1"));
        }
        if self.batch_size > rows {
            return Err(Error::option(
                "batch_size",
                self.batch_size,
                format!("must be at most the number of training rows ({rows}); for full-batch descent use batch_size = {rows}"),
            ));
        }
        positive("learning_rate", self.learning_rate)?;
        non_negative("weight_decay", self.weight_decay)?;
        non_negative("l1_penalty", self.l1_penalty)?;
        match self.optimiser {
            Optimiser::Sgd => {}
            Optimiser::Momentum { mu } | Optimiser::Nesterov { mu } => {
                unit_open("momentum mu", mu)?
            }
            Optimiser::Adam {
                beta1,
                beta2,
                epsilon,
            } => {
                unit_open("adam beta1", beta1)?;
                unit_open("adam beta2", beta2)?;
                positive("adam epsilon", epsilon)?;
            }
        }
        match self.schedule {
            Schedule::Constant => {}
            Schedule::Step { every, factor } => {
                if every == 0 {
                    return Err(Error::option("schedule every", 0, "must be at least 1"));
                }
                if !(factor > 0.0 && factor <= 1.0) {
                    return Err(Error::option(
                        "schedule factor",
                        factor,
                        "must be in (0, 1]",
                    ));
                }
            }
            Schedule::Exponential { gamma } => {
                if !(gamma > 0.0 && gamma <= 1.0) {
                    return Err(Error::option("schedule gamma", gamma, "must be in (0, 1]"));
                }
            }
            Schedule::Cosine { min_rate } => {
                non_negative("schedule min_rate", min_rate)?;
                if min_rate > self.learning_rate {
                    return Err(Error::option(
                        "schedule min_rate",
                        min_rate,
                        format!("must not exceed learning_rate ({})", self.learning_rate),
                    ));
                }
            }
        }
        if let Some(es) = self.early_stopping {
            if !has_validation {
                return Err(Error::option(
                    "early_stopping",
                    format!("patience {}", es.patience),
                    "needs validation rows; give a validation set (validation_fraction > 0) or turn early stopping off",
                ));
            }
            if es.patience == 0 {
                return Err(Error::option(
                    "early_stopping patience",
                    0,
                    "must be at least 1",
                ));
            }
            non_negative("early_stopping min_improvement", es.min_improvement)?;
        }
        Ok(())
    }

    /// The loss for a head (explicit or default).
    pub fn loss_for(&self, head: crate::network::Head) -> Loss {
        self.loss.unwrap_or(Loss::default_for(head))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refusals_name_the_option() {
        let o = TrainingOptions {
            epochs: 0,
            ..Default::default()
        };
        assert_eq!(
            o.validate(10, true).unwrap_err().to_string(),
            "option epochs = 0: must be at least 1"
        );
        let o = TrainingOptions {
            learning_rate: -0.1,
            ..Default::default()
        };
        assert_eq!(
            o.validate(100, true).unwrap_err().to_string(),
            "option learning_rate = -0.1: must be a finite number greater than 0"
        );
        let o = TrainingOptions {
            batch_size: 64,
            ..Default::default()
        };
        assert_eq!(
            o.validate(10, true).unwrap_err().to_string(),
            "option batch_size = 64: must be at most the number of training rows (10); for full-batch descent use batch_size = 10"
        );
        let o = TrainingOptions::default();
        assert_eq!(
            o.validate(100, false).unwrap_err().to_string(),
            "option early_stopping = patience 30: needs validation rows; give a validation set (validation_fraction > 0) or turn early stopping off"
        );
    }

    #[test]
    fn schedules() {
        assert_eq!(
            Schedule::Step {
                every: 10,
                factor: 0.5
            }
            .rate(1.0, 25, 100),
            0.25
        );
        assert_eq!(
            Schedule::Exponential { gamma: 0.5 }.rate(1.0, 3, 100),
            0.125
        );
        assert_eq!(Schedule::Cosine { min_rate: 0.0 }.rate(1.0, 0, 100), 1.0);
        assert!((Schedule::Cosine { min_rate: 0.0 }.rate(1.0, 50, 100) - 0.5).abs() < 1e-15);
    }
}
