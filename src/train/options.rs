//! What [`train`](super::train) does with a network: [`TrainingOptions`]
//! and the rules they choose ([`Optimiser`], [`Schedule`], [`BatchSize`],
//! [`EarlyStopping`]). Each public type documents its formula and source.

use crate::error::{Error, Result};
use crate::network::{Arithmetic, Head};
use crate::observe::Observer;
use crate::train::Loss;
use std::fmt;
use std::str::FromStr;

/// The update rule: how a mini-batch gradient changes the parameters.
///
/// For a parameter `w` with mini-batch gradient `g` at update `t` (counting
/// from 1) and learning rate `eta`:
///
/// ```text
/// sgd         w <- w - eta g
/// momentum    v <- mu v - eta g;  w <- w + v
///             (Rumelhart, Hinton & Williams 1986; Polyak, "Some methods of
///              speeding up the convergence of iteration methods", 1964)
/// nesterov    v' <- mu v - eta g;  w <- w - mu v + (1 + mu) v';  v <- v'
///             (Nesterov 1983, written for networks by Sutskever, Martens,
///              Dahl & Hinton, ICML 2013; this "look-ahead" form: Bengio,
///              Boulanger-Lewandowski & Pascanu, "Advances in optimizing
///              recurrent networks", ICASSP 2013)
/// adam        m <- b1 m + (1 - b1) g;  s <- b2 s + (1 - b2) g^2
///             w <- w - eta (m / (1 - b1^t)) / (sqrt(s / (1 - b2^t)) + eps)
///             (Kingma & Ba, "Adam: a method for stochastic optimization",
///              ICLR 2015, Algorithm 1)
/// ```
/// `v`, `m` and `s` start at 0. `g` includes the penalty gradient (see
/// [`TrainingOptions::weight_decay`]); with Adam the penalty enters the
/// moment estimates (the coupled form).
///
/// Text form ([`FromStr`] and [`Display`](fmt::Display) agree): `sgd`,
/// `momentum` or `momentum:MU`, `nesterov` or `nesterov:MU` (MU 0.9 when
/// left out), `adam` or `adam:BETA1:BETA2:EPSILON` (0.9, 0.999 and 1e-8, the
/// paper's values, when left out).
#[derive(Clone, Copy, Debug, PartialEq)]
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
        /// Decay of the first moment, in `[0, 1)` (0.9 in the paper).
        beta1: f64,
        /// Decay of the second moment, in `[0, 1)` (0.999 in the paper).
        beta2: f64,
        /// Added to the root of the second moment, > 0 (1e-8 in the paper).
        epsilon: f64,
    },
}

impl Optimiser {
    /// Adam with the paper's values (0.9, 0.999, 1e-8).
    pub const ADAM: Optimiser = Optimiser::Adam {
        beta1: 0.9,
        beta2: 0.999,
        epsilon: 1e-8,
    };

    /// The momentum coefficient used when none is given (common practice,
    /// no source).
    pub const MOMENTUM: f64 = 0.9;

    /// A short name: `sgd`, `momentum`, `nesterov` or `adam`.
    pub fn name(&self) -> &'static str {
        match self {
            Optimiser::Sgd => "sgd",
            Optimiser::Momentum { .. } => "momentum",
            Optimiser::Nesterov { .. } => "nesterov",
            Optimiser::Adam { .. } => "adam",
        }
    }

    fn check(&self) -> Result<()> {
        match *self {
            Optimiser::Sgd => Ok(()),
            Optimiser::Momentum { mu } | Optimiser::Nesterov { mu } => {
                unit_open("optimiser", *self, "its momentum coefficient", mu)
            }
            Optimiser::Adam {
                beta1,
                beta2,
                epsilon,
            } => {
                unit_open("optimiser", *self, "beta1", beta1)?;
                unit_open("optimiser", *self, "beta2", beta2)?;
                if !(epsilon > 0.0 && epsilon.is_finite()) {
                    return Err(Error::option(
                        "optimiser",
                        self,
                        "epsilon must be a finite number greater than 0",
                    ));
                }
                Ok(())
            }
        }
    }
}

impl Default for Optimiser {
    fn default() -> Self {
        Optimiser::ADAM
    }
}

impl fmt::Display for Optimiser {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Optimiser::Sgd => f.write_str("sgd"),
            Optimiser::Momentum { mu } => write!(f, "momentum:{mu}"),
            Optimiser::Nesterov { mu } => write!(f, "nesterov:{mu}"),
            Optimiser::Adam {
                beta1,
                beta2,
                epsilon,
            } => write!(f, "adam:{beta1}:{beta2}:{epsilon:e}"),
        }
    }
}

const OPTIMISERS: &str = "sgd, momentum[:MU], nesterov[:MU], adam[:BETA1:BETA2:EPSILON]";

impl FromStr for Optimiser {
    type Err = Error;

    fn from_str(text: &str) -> Result<Optimiser> {
        let bad = || Error::choice("optimiser", text, OPTIMISERS);
        let parts: Vec<&str> = text.trim().split(':').collect();
        let number = |s: &str| parse_number("optimiser", text, s);
        let optimiser = match parts.as_slice() {
            ["sgd"] => Optimiser::Sgd,
            ["momentum"] => Optimiser::Momentum {
                mu: Optimiser::MOMENTUM,
            },
            ["momentum", mu] => Optimiser::Momentum { mu: number(mu)? },
            ["nesterov"] => Optimiser::Nesterov {
                mu: Optimiser::MOMENTUM,
            },
            ["nesterov", mu] => Optimiser::Nesterov { mu: number(mu)? },
            ["adam"] => Optimiser::ADAM,
            ["adam", b1, b2, eps] => Optimiser::Adam {
                beta1: number(b1)?,
                beta2: number(b2)?,
                epsilon: number(eps)?,
            },
            _ => return Err(bad()),
        };
        optimiser.check()?;
        Ok(optimiser)
    }
}

/// How the learning rate changes over epochs.
///
/// For epoch `e` counted from 0 of at most `E` epochs and base rate `eta`:
///
/// ```text
/// constant     eta_e = eta
/// step         eta_e = eta * factor^floor(e / every)
/// exponential  eta_e = eta * gamma^e
/// cosine       eta_e = min + (eta - min) (1 + cos(pi e / E)) / 2
///              (Loshchilov & Hutter, "SGDR: stochastic gradient descent with
///               warm restarts", ICLR 2017, eq. 5 without restarts)
/// ```
/// Step and exponential decay: common practice, no source.
///
/// Text form: `constant`, `step:EVERY:FACTOR`, `exponential:GAMMA`,
/// `cosine:MIN` (for example `step:50:0.5`).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
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
    /// Half a cosine from the rate down to `min_rate` over the most epochs.
    Cosine {
        /// The rate reached at the end (>= 0, at most the base rate).
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

    fn check(&self) -> Result<()> {
        let bad = |why: &str| Err(Error::option("schedule", self, why));
        match *self {
            Schedule::Constant => Ok(()),
            Schedule::Step { every, factor } => {
                if every == 0 {
                    return bad("EVERY must be at least 1");
                }
                if !(factor > 0.0 && factor <= 1.0) {
                    return bad("FACTOR must be in (0, 1]");
                }
                Ok(())
            }
            Schedule::Exponential { gamma } => {
                if !(gamma > 0.0 && gamma <= 1.0) {
                    return bad("GAMMA must be in (0, 1]");
                }
                Ok(())
            }
            Schedule::Cosine { min_rate } => {
                if !(min_rate >= 0.0 && min_rate.is_finite()) {
                    return bad("MIN must be a finite number, 0 or greater");
                }
                Ok(())
            }
        }
    }
}

impl fmt::Display for Schedule {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Schedule::Constant => f.write_str("constant"),
            Schedule::Step { every, factor } => write!(f, "step:{every}:{factor}"),
            Schedule::Exponential { gamma } => write!(f, "exponential:{gamma}"),
            Schedule::Cosine { min_rate } => write!(f, "cosine:{min_rate}"),
        }
    }
}

const SCHEDULES: &str =
    "constant, step:EVERY:FACTOR, exponential:GAMMA, cosine:MIN (e.g. step:50:0.5)";

impl FromStr for Schedule {
    type Err = Error;

    fn from_str(text: &str) -> Result<Schedule> {
        let parts: Vec<&str> = text.trim().split(':').collect();
        let number = |s: &str| parse_number("schedule", text, s);
        let schedule = match parts.as_slice() {
            ["constant"] => Schedule::Constant,
            ["step", every, factor] => Schedule::Step {
                every: every.trim().parse().map_err(|_| {
                    Error::option("schedule", text, "EVERY must be a whole number of epochs")
                })?,
                factor: number(factor)?,
            },
            ["exponential", gamma] => Schedule::Exponential {
                gamma: number(gamma)?,
            },
            ["cosine", min] => Schedule::Cosine {
                min_rate: number(min)?,
            },
            _ => return Err(Error::choice("schedule", text, SCHEDULES)),
        };
        schedule.check()?;
        Ok(schedule)
    }
}

/// Rows per update.
///
/// One row is online learning, all training rows full-batch descent, and
/// anything between mini-batch descent (common practice, no source). The
/// gradient of an update is the mean over its rows.
///
/// Text form: a whole number of rows, or `full`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BatchSize {
    /// This many rows (at least 1, at most the training rows).
    Rows(usize),
    /// Every training row in one batch (also per fold in cross-validation).
    Full,
}

impl BatchSize {
    /// The rows per batch used when none is asked for, at most the training
    /// rows (common practice, no source).
    pub const DEFAULT: usize = 32;
}

impl fmt::Display for BatchSize {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BatchSize::Rows(n) => write!(f, "{n}"),
            BatchSize::Full => f.write_str("full"),
        }
    }
}

impl FromStr for BatchSize {
    type Err = Error;

    fn from_str(text: &str) -> Result<BatchSize> {
        match text.trim() {
            "full" => Ok(BatchSize::Full),
            t => match t.parse::<usize>() {
                Ok(0) => Err(Error::option("batch_size", text, "must be at least 1")),
                Ok(n) => Ok(BatchSize::Rows(n)),
                Err(_) => Err(Error::option(
                    "batch_size",
                    text,
                    "must be a whole number of rows, or full",
                )),
            },
        }
    }
}

/// When to stop on the validation loss, and which weights to keep.
///
/// After each epoch the validation loss `L_e` is compared with the best so
/// far, `L*`; it counts as an improvement when
///
/// ```text
/// L_e < L* - min_improvement
/// ```
/// Training stops after `patience` epochs in a row without improvement, and
/// the weights of the best epoch are restored (Prechelt, "Early stopping -
/// but when?", in Orr & Mueller (eds.), Neural Networks: Tricks of the
/// Trade, 1998).
#[derive(Clone, Copy, Debug, PartialEq)]
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
/// The objective of one mini-batch `B` is its mean loss plus the penalties,
/// over the weights only:
///
/// ```text
/// J = (1/|B|) sum_{i in B} E_i  +  (lambda_2 / 2) sum w^2  +  lambda_1 sum |w|
/// ```
/// **Biases are never penalised**, and the penalty is added **once per
/// update**, not per row, so its strength does not change with the batch
/// size. The gradient gains `lambda_2 w + lambda_1 sign(w)` (with
/// `sign(0) = 0`). Sources: weight decay, Krogh & Hertz, "A simple weight
/// decay can improve generalization", NIPS 1991; the L1 penalty, Tibshirani,
/// "Regression shrinkage and selection via the lasso", JRSS B 1996. The
/// per-row loss `E_i` is in [`Loss`].
///
/// **Reported losses.** An epoch's training loss is the mean of the per-row
/// losses computed during that epoch's forward passes, each before its
/// batch's update (no extra pass); its validation loss is the mean loss over
/// the validation rows after the epoch. Neither includes the penalties.
///
/// ```
/// use stratanet::train::{Optimiser, TrainingOptions};
/// let options = TrainingOptions { epochs: 300, learning_rate: 0.05, optimiser: Optimiser::Sgd, ..Default::default() };
/// assert_eq!(options.batch_size, None); // 32 rows, or every row of a smaller table
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct TrainingOptions {
    /// The most epochs (passes over the training rows) to run (> 0).
    pub epochs: usize,
    /// Rows per update; `None` takes [`BatchSize::DEFAULT`] rows, or every
    /// training row when there are fewer.
    pub batch_size: Option<BatchSize>,
    /// The base learning rate `eta` (> 0).
    pub learning_rate: f64,
    /// How the rate changes over epochs.
    pub schedule: Schedule,
    /// The update rule.
    pub optimiser: Optimiser,
    /// The L2 penalty `lambda_2` on the weights (>= 0); see above.
    pub weight_decay: f64,
    /// The L1 penalty `lambda_1` on the weights (>= 0); see above.
    pub l1_penalty: f64,
    /// The loss; `None` takes [`Loss::default_for`] the head.
    pub loss: Option<Loss>,
    /// Early stopping on validation rows (`None`: every epoch runs and the
    /// last weights are kept).
    pub early_stopping: Option<EarlyStopping>,
    /// Shuffle the row order every epoch (from the training generator).
    pub shuffle: bool,
    /// Update the biases (true); false keeps them at their starting values.
    pub train_biases: bool,
    /// How the products are summed: the same bits on every machine, or the
    /// fastest kernels for this one (see [`Arithmetic`]).
    pub arithmetic: Arithmetic,
    /// Who hears about each epoch (nobody by default); see
    /// [`observe`](crate::observe).
    pub observer: Observer,
}

impl Default for TrainingOptions {
    fn default() -> Self {
        TrainingOptions {
            epochs: 500,
            batch_size: None,
            learning_rate: 0.01,
            schedule: Schedule::Constant,
            optimiser: Optimiser::default(),
            weight_decay: 0.0,
            l1_penalty: 0.0,
            loss: None,
            early_stopping: Some(EarlyStopping::default()),
            shuffle: true,
            train_biases: true,
            arithmetic: Arithmetic::default(),
            observer: Observer::none(),
        }
    }
}

fn parse_number(option: &str, whole: &str, part: &str) -> Result<f64> {
    part.trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| Error::option(option, whole, format!("\"{part}\" is not a finite number")))
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

fn unit_open(name: &str, whole: impl fmt::Display, what: &str, v: f64) -> Result<()> {
    if (0.0..1.0).contains(&v) {
        Ok(())
    } else {
        Err(Error::option(
            name,
            whole,
            format!("{what} must be at least 0 and below 1"),
        ))
    }
}

impl TrainingOptions {
    /// Checks every option that does not depend on the data, once, before
    /// any work (the front door of [`train`](super::train),
    /// [`fit`](crate::fit::fit), cross-validation and sweeps calls it).
    ///
    /// # Errors
    /// The first invalid option, named, with its valid range.
    pub fn validate(&self) -> Result<()> {
        if self.epochs == 0 {
            return Err(Error::option("epochs", 0, "must be at least 1"));
        }
        if self.batch_size == Some(BatchSize::Rows(0)) {
            return Err(Error::option("batch_size", 0, "must be at least 1"));
        }
        positive("learning_rate", self.learning_rate)?;
        non_negative("weight_decay", self.weight_decay)?;
        non_negative("l1_penalty", self.l1_penalty)?;
        self.optimiser.check()?;
        self.schedule.check()?;
        if let Schedule::Cosine { min_rate } = self.schedule {
            if min_rate > self.learning_rate {
                return Err(Error::option(
                    "schedule",
                    self.schedule,
                    format!(
                        "MIN must not exceed the learning rate ({})",
                        self.learning_rate
                    ),
                ));
            }
        }
        if let Some(es) = self.early_stopping {
            if es.patience == 0 {
                return Err(Error::option("patience", 0, "must be at least 1"));
            }
            non_negative("min_improvement", es.min_improvement)?;
        }
        Ok(())
    }

    /// The rows per batch for `rows` training rows.
    ///
    /// # Errors
    /// An explicit batch larger than the training rows.
    pub fn batch_rows(&self, rows: usize) -> Result<usize> {
        match self.batch_size {
            None => Ok(BatchSize::DEFAULT.min(rows).max(1)),
            Some(BatchSize::Full) => Ok(rows.max(1)),
            Some(BatchSize::Rows(n)) if n <= rows => Ok(n),
            Some(BatchSize::Rows(n)) => Err(Error::option(
                "batch_size",
                n,
                format!(
                    "must be at most the number of training rows ({rows}); for full-batch descent use {}",
                    crate::error::opt_is("batch_size", "full")
                ),
            )),
        }
    }

    /// The loss for a head (explicit or default), checked against it.
    ///
    /// # Errors
    /// Cross-entropy with the identity head.
    pub fn loss_for(&self, head: Head) -> Result<Loss> {
        let loss = self.loss.unwrap_or(Loss::default_for(head));
        loss.check_head(head)?;
        Ok(loss)
    }

    /// The same options with nobody listening (what a model records).
    pub(crate) fn without_observer(&self) -> TrainingOptions {
        TrainingOptions {
            observer: Observer::none(),
            ..self.clone()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // What a model records has nobody listening, and every other option as
    // it was.
    #[test]
    fn without_observer_drops_only_the_observer() {
        let listening = TrainingOptions {
            epochs: 7,
            observer: Observer::new(|_| {}),
            ..Default::default()
        };
        assert!(listening.observer.is_listening());
        let recorded = listening.without_observer();
        assert!(!recorded.observer.is_listening());
        assert_eq!(recorded.epochs, 7);
        assert_eq!(
            TrainingOptions {
                observer: Observer::none(),
                ..listening
            },
            recorded
        );
    }

    #[test]
    fn refusals_name_the_option() {
        let o = TrainingOptions {
            epochs: 0,
            ..Default::default()
        };
        assert_eq!(
            o.validate().unwrap_err().to_string(),
            "option epochs = 0: must be at least 1"
        );
        let o = TrainingOptions {
            learning_rate: -0.1,
            ..Default::default()
        };
        assert_eq!(
            o.validate().unwrap_err().to_string(),
            "option learning_rate = -0.1: must be a finite number greater than 0"
        );
        let o = TrainingOptions {
            batch_size: Some(BatchSize::Rows(64)),
            ..Default::default()
        };
        assert_eq!(
            o.batch_rows(10).unwrap_err().to_string(),
            "option batch_size = 64: must be at most the number of training rows (10); for full-batch descent use batch_size = full"
        );
        assert_eq!(TrainingOptions::default().batch_rows(24).unwrap(), 24);
        assert_eq!(TrainingOptions::default().batch_rows(100).unwrap(), 32);
        let o = TrainingOptions {
            weight_decay: -1.0,
            ..Default::default()
        };
        assert_eq!(
            o.validate().unwrap_err().to_string(),
            "option weight_decay = -1: must be a finite number, 0 or greater"
        );
    }

    #[test]
    fn text_forms_round_trip_and_refusals_list_the_choices() {
        for text in [
            "sgd",
            "momentum:0.8",
            "nesterov:0.95",
            "adam:0.9:0.999:1e-8",
        ] {
            let o: Optimiser = text.parse().unwrap();
            assert_eq!(o.to_string(), text);
        }
        assert_eq!("adam".parse::<Optimiser>().unwrap(), Optimiser::ADAM);
        assert_eq!(
            "momentum".parse::<Optimiser>().unwrap(),
            Optimiser::Momentum { mu: 0.9 }
        );
        assert_eq!(
            "rmsprop".parse::<Optimiser>().unwrap_err().to_string(),
            "option optimiser = rmsprop: must be one of sgd, momentum[:MU], nesterov[:MU], adam[:BETA1:BETA2:EPSILON]"
        );
        assert_eq!(
            "momentum:1.5".parse::<Optimiser>().unwrap_err().to_string(),
            "option optimiser = momentum:1.5: its momentum coefficient must be at least 0 and below 1"
        );
        for text in [
            "constant",
            "step:50:0.5",
            "exponential:0.99",
            "cosine:0.001",
        ] {
            let s: Schedule = text.parse().unwrap();
            assert_eq!(s.to_string(), text);
        }
        assert_eq!(
            "step:0:0.5".parse::<Schedule>().unwrap_err().to_string(),
            "option schedule = step:0:0.5: EVERY must be at least 1"
        );
        assert_eq!(
            "exponential:1.5"
                .parse::<Schedule>()
                .unwrap_err()
                .to_string(),
            "option schedule = exponential:1.5: GAMMA must be in (0, 1]"
        );
        assert_eq!("full".parse::<BatchSize>().unwrap(), BatchSize::Full);
        assert_eq!("16".parse::<BatchSize>().unwrap(), BatchSize::Rows(16));
        assert!("0".parse::<BatchSize>().is_err());
    }

    // Rates at chosen epochs, from the formulas on `Schedule` (step: 1 *
    // 0.5^floor(25/10) = 0.25; exponential: 0.5^3; cosine at the half-way
    // epoch: (1 + cos(pi/2)) / 2 = 0.5).
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
