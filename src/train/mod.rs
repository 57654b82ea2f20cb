//! Training by backpropagation and stochastic gradient descent.
//!
//! [`train`] runs mini-batch descent on one network with the options in
//! [`TrainingOptions`]: online updates (batch 1), mini-batches or full batch
//! ([`BatchSize`]); plain, momentum, Nesterov or Adam updates
//! ([`Optimiser`]); a learning-rate [`Schedule`]; L2 and L1 penalties;
//! shuffling every epoch; and [`EarlyStopping`] on validation rows with the
//! best weights restored. The per-epoch history goes into a
//! [`TrainingReport`]; the losses are in [`Loss`].

mod engine;
mod gradcheck;
mod loss;
mod options;
#[cfg(test)]
mod rules_tests;

#[doc(hidden)]
pub use gradcheck::check_gradients_in;
pub use gradcheck::{check_gradients, GradientCheck};
pub(crate) use loss::constant_loss;
pub use loss::Loss;
pub use options::{BatchSize, EarlyStopping, Optimiser, Schedule, TrainingOptions};

use crate::data::{Dataset, Target};
use crate::error::{Error, ErrorKind, Result};
use crate::network::{Arithmetic, Forward, Head, Network, Params, Precision, Real, EVAL_CHUNK};
use crate::observe::Event;
use crate::rng;
use engine::{evaluate, Backprop};
use ndarray::{Array2, ArrayView2};

use rand::RngCore;
use std::time::Instant;

/// One epoch of the training history.
#[derive(Clone, Debug)]
pub struct EpochRecord {
    /// The epoch, from 1.
    pub epoch: usize,
    /// Mean training loss during the epoch.
    pub training_loss: f64,
    /// Mean validation loss after the epoch.
    pub validation_loss: Option<f64>,
    /// Share of validation rows classified correctly after the epoch.
    pub validation_accuracy: Option<f64>,
    /// The learning rate used in the epoch.
    pub learning_rate: f64,
    /// Seconds since training started (wall clock; not part of equality, and
    /// never shown in default displays, since it differs between runs).
    pub elapsed_seconds: f64,
}

impl PartialEq for EpochRecord {
    fn eq(&self, other: &Self) -> bool {
        self.epoch == other.epoch
            && self.training_loss.to_bits() == other.training_loss.to_bits()
            && self.validation_loss.map(f64::to_bits) == other.validation_loss.map(f64::to_bits)
            && self.validation_accuracy.map(f64::to_bits)
                == other.validation_accuracy.map(f64::to_bits)
            && self.learning_rate.to_bits() == other.learning_rate.to_bits()
    }
}

/// What happened in training.
#[derive(Clone, Debug, PartialEq)]
pub struct TrainingReport {
    /// One record per epoch run.
    pub history: Vec<EpochRecord>,
    /// Epochs run.
    pub epochs_run: usize,
    /// The epoch whose weights were kept (the best validation loss with early
    /// stopping or validation rows; otherwise the last epoch).
    pub best_epoch: usize,
    /// The validation loss of the weights kept (the best epoch's with
    /// early stopping, the last epoch's without), when there were
    /// validation rows.
    pub best_validation_loss: Option<f64>,
    /// Whether early stopping ended training before the last epoch.
    pub stopped_early: bool,
    /// The loss that was minimised.
    pub loss: Loss,
    /// The last epoch's training loss.
    pub final_training_loss: f64,
}

impl TrainingReport {
    /// Training loss per epoch.
    pub fn training_losses(&self) -> Vec<f64> {
        self.history.iter().map(|e| e.training_loss).collect()
    }

    /// Validation loss per epoch (empty without validation rows).
    pub fn validation_losses(&self) -> Vec<f64> {
        self.history
            .iter()
            .filter_map(|e| e.validation_loss)
            .collect()
    }

    /// Had the loss settled when training ended?
    ///
    /// The rule (common practice, no source): training that stopped early
    /// converged by its own criterion. Otherwise take the monitored loss,
    /// the validation loss with early stopping and the training loss
    /// without, over the `E` epochs run, and the window
    /// `w = min(max(1, floor(E / 10)), 50)` epochs; the loss is still
    /// falling when
    ///
    /// ```text
    /// L_{E-w} - L_E > 0.001 |L_{E-w}|     (a drop of more than 0.1% over the last w epochs)
    /// ```
    /// A run of a single epoch cannot show that it settled, and a report
    /// without its history (a trial file's) cannot be judged.
    pub fn convergence(&self, early_stopping: bool) -> Convergence {
        if self.stopped_early {
            return Convergence::Converged;
        }
        let series: Vec<f64> = if early_stopping {
            self.validation_losses()
        } else {
            self.training_losses()
        };
        let n = series.len();
        match n {
            0 => Convergence::Unknown,
            1 => Convergence::SingleEpoch,
            _ => {
                let window = (n / 10).clamp(1, 50);
                let before = series[n - 1 - window];
                let drop = (before - series[n - 1]) / before.abs().max(f64::MIN_POSITIVE);
                if drop > 1e-3 {
                    Convergence::StillFalling { drop, window }
                } else {
                    Convergence::Converged
                }
            }
        }
    }
}

/// Whether a run's loss had settled ([`TrainingReport::convergence`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Convergence {
    /// Stopped early, or the loss moved by at most 0.1% over the last window.
    Converged,
    /// The loss fell by `drop` (a share of its value) over the last
    /// `window` epochs.
    StillFalling {
        /// The relative drop.
        drop: f64,
        /// The window, in epochs.
        window: usize,
    },
    /// Only one epoch ran.
    SingleEpoch,
    /// The history was not kept.
    Unknown,
}

/// Encodes a target for a network head: one-hot rows for softmax, a 0/1
/// column for a single logistic output (class 1 is the positive class), the
/// values themselves for regression.
///
/// # Errors
/// When the head and target do not fit (e.g. softmax with the wrong number
/// of outputs, or a logistic output for more than two classes).
pub(crate) fn encode_target(target: &Target, head: Head, outputs: usize) -> Result<Array2<f64>> {
    match target {
        Target::Classes { labels, names } => {
            let k = names.len();
            match head {
                Head::Softmax if outputs == k => {
                    let mut y = Array2::zeros((labels.len(), k));
                    for (i, &l) in labels.iter().enumerate() {
                        y[[i, l]] = 1.0;
                    }
                    Ok(y)
                }
                Head::Logistic if outputs == 1 && k == 2 => Ok(Array2::from_shape_fn(
                    (labels.len(), 1),
                    |(i, _)| labels[i] as f64,
                )),
                _ => Err(Error::input(
                    "network and target",
                    format!(
                        "a {} head with {outputs} outputs cannot predict {k} classes; use softmax with {k} outputs{}",
                        head.name(),
                        if k == 2 { " or logistic with 1 output" } else { "" }
                    ),
                )),
            }
        }
        Target::Values { values, .. } => {
            if values.ncols() != outputs {
                return Err(Error::shape(
                    "targets for the network's outputs",
                    (values.nrows(), outputs),
                    values.dim(),
                ));
            }
            Ok(values.clone())
        }
    }
}

/// Trains `network` on `data` (features already scaled as wanted), stopping
/// early on `validation` when the options ask for it.
///
/// Each update computes the gradient of the mini-batch objective (see
/// [`TrainingOptions`]) by backpropagation (Rumelhart, Hinton & Williams,
/// "Learning representations by back-propagating errors", Nature 1986), for
/// a batch of `m` rows held as matrices, `a_0` the inputs:
///
/// ```text
/// forward    z_l = a_{l-1} W_l + b_l,   a_l = f_l(z_l)
/// output     delta_L = dE/dz_L          (a - y for a loss with its matching head; see Loss)
/// weights    dJ/dW_l = (1/m) a_{l-1}^T delta_l,   dJ/db_l = (1/m) column sums of delta_l
/// backward   delta_{l-1} = (delta_l W_l^T) * f'(a_{l-1})      (element-wise product)
/// ```
/// then applies the [`Optimiser`]'s rule with the [`Schedule`]'s rate. Rows
/// are shuffled every epoch (Fisher-Yates from `rng`) when the options ask.
///
/// # Errors
/// Invalid options, mismatched shapes, or divergence (a non-finite loss).
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// use stratanet::network::{Head, Init, Network};
/// use stratanet::train::{train, Optimiser, TrainingOptions};
/// use stratanet::ndarray::array;
/// let x = array![[0.0, 0.0], [0.0, 1.0], [1.0, 0.0], [1.0, 1.0]];
/// let data = Dataset::classification(x, vec![0, 1, 1, 1], vec!["no".into(), "yes".into()])?;
/// let mut rng = seeded_rng(3);
/// let mut net = Network::new(&[2, 1], Activation::Identity, Head::Logistic, Init::Auto, &mut rng)?;
/// let options = TrainingOptions { epochs: 2000, batch_size: Some(stratanet::train::BatchSize::Rows(4)), learning_rate: 0.5,
///     optimiser: Optimiser::Sgd, early_stopping: None, ..Default::default() };
/// let report = train(&mut net, &data, None, &options, &mut rng)?;
/// assert_eq!(net.predict_classes(data.x())?, vec![0, 1, 1, 1]); // a single unit fits OR
/// assert!(report.final_training_loss < 0.1);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn train<R: RngCore + ?Sized>(
    network: &mut Network,
    data: &Dataset,
    validation: Option<&Dataset>,
    options: &TrainingOptions,
    rng: &mut R,
) -> Result<TrainingReport> {
    options.validate()?;
    train_checked(
        network,
        data,
        validation,
        options,
        RowWeights::default(),
        Scope::default(),
        rng,
    )
}

/// Loss weights of the training and validation rows (class weights), when
/// rows are weighted: each row's loss is multiplied by its weight, in the
/// gradient and in the reported losses.
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct RowWeights<'a> {
    /// One weight per training row.
    pub train: Option<&'a [f64]>,
    /// One weight per validation row.
    pub validation: Option<&'a [f64]>,
}

/// Where a network trains, for its progress events.
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct Scope {
    /// The cross-validation fold, if any.
    pub fold: Option<usize>,
    /// The restart.
    pub restart: usize,
}

/// [`train`] with options already validated.
pub(crate) fn train_checked<R: RngCore + ?Sized>(
    network: &mut Network,
    data: &Dataset,
    validation: Option<&Dataset>,
    options: &TrainingOptions,
    weights: RowWeights<'_>,
    scope: Scope,
    rng: &mut R,
) -> Result<TrainingReport> {
    let y = encode_target(&data.target, network.head(), network.n_outputs())?;
    let val = match validation {
        Some(v) => Some((
            v.features.view(),
            encode_target(&v.target, network.head(), network.n_outputs())?,
        )),
        None => None,
    };
    let classify = matches!(data.target, Target::Classes { .. });
    let val_ref = val.as_ref().map(|(x, y)| (x.view(), y.view()));
    train_arrays_inner(
        network,
        data.features.view(),
        y.view(),
        val_ref,
        classify,
        options,
        weights,
        scope,
        rng,
    )
}

/// Trains on plain arrays: `x` rows of inputs and `y` rows of targets in the
/// network's output encoding: one-hot rows for softmax, a 0/1 column for a
/// single logistic output, the values themselves for regression.
///
/// # Errors
/// As [`train`].
pub fn train_arrays<R: RngCore + ?Sized>(
    network: &mut Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    validation: Option<(ArrayView2<'_, f64>, ArrayView2<'_, f64>)>,
    options: &TrainingOptions,
    rng: &mut R,
) -> Result<TrainingReport> {
    options.validate()?;
    let classify = network.head() != Head::Identity;
    train_arrays_inner(
        network,
        x,
        y,
        validation,
        classify,
        options,
        RowWeights::default(),
        Scope::default(),
        rng,
    )
}

#[allow(clippy::too_many_arguments)]
fn train_arrays_inner<R: RngCore + ?Sized>(
    network: &mut Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    validation: Option<(ArrayView2<'_, f64>, ArrayView2<'_, f64>)>,
    classify: bool,
    options: &TrainingOptions,
    weights: RowWeights<'_>,
    scope: Scope,
    rng: &mut R,
) -> Result<TrainingReport> {
    let loss = options.loss_for(network.head())?;
    let batch = options.batch_rows(x.nrows())?;
    if options.early_stopping.is_some() && validation.is_none() {
        return Err(Error::option(
            "early_stopping",
            "on",
            format!(
                "needs validation rows; give some (in fit: {} above 0) or turn early stopping off",
                crate::error::opt("validation_share")
            ),
        ));
    }
    check_xy(network, x, y, "training")?;
    if let Some((vx, vy)) = validation {
        check_xy(network, vx, vy, "validation")?;
    }
    for (w, rows, what) in [
        (weights.train, x.nrows(), "training row weights"),
        (
            weights.validation,
            validation.map_or(0, |(vx, _)| vx.nrows()),
            "validation row weights",
        ),
    ] {
        if let Some(w) = w {
            if w.len() != rows {
                return Err(Error::shape(what, (rows, 1), (w.len(), 1)));
            }
        }
    }
    let run = Run {
        classify,
        loss,
        batch,
        scope,
    };
    match network.precision() {
        Precision::F64 => run_in::<f64, R>(network, x, y, validation, weights, options, run, rng),
        Precision::F32 => run_in::<f32, R>(network, x, y, validation, weights, options, run, rng),
    }
}

/// What a run settled before it starts.
#[derive(Clone, Copy)]
struct Run {
    classify: bool,
    loss: Loss,
    batch: usize,
    scope: Scope,
}

fn check_xy(
    net: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    what: &str,
) -> Result<()> {
    if x.ncols() != net.n_inputs() {
        return Err(Error::shape(
            format!("{what} inputs"),
            (x.nrows(), net.n_inputs()),
            x.dim(),
        ));
    }
    if y.dim() != (x.nrows(), net.n_outputs()) {
        return Err(Error::shape(
            format!("{what} targets"),
            (x.nrows(), net.n_outputs()),
            y.dim(),
        ));
    }
    if x.nrows() == 0 {
        return Err(Error::input(what, "there are no rows"));
    }
    // A contiguous table is checked as a slice (vectorised; W3's 47 million
    // inputs took a tenth of a second through the generic iterator).
    // Blocks without an early exit inside, so that the test vectorises.
    let finite = |a: ArrayView2<'_, f64>| match a.as_slice() {
        Some(s) => s
            .chunks(4096)
            .all(|c| c.iter().fold(true, |ok, v| ok & v.is_finite())),
        None => a.iter().all(|v| v.is_finite()),
    };
    if !(finite(x) && finite(y)) {
        return Err(Error::input(
            what,
            "inputs and targets must be finite numbers",
        ));
    }
    Ok(())
}

/// The rows of `a` as one row-major vector in `F`.
/// The matrix as a row-major slice of `F`: borrowed when it already is
/// one (f64 in standard layout), so a large table is not copied again.
fn to_real<'a, F: Real>(a: ArrayView2<'a, f64>) -> std::borrow::Cow<'a, [F]> {
    use std::borrow::Cow;
    match a.to_slice() {
        Some(s) => match F::borrow_f64(s) {
            Some(same) => Cow::Borrowed(same),
            None => Cow::Owned(s.iter().map(|&v| F::from_f64(v)).collect()),
        },
        None => Cow::Owned(a.iter().map(|&v| F::from_f64(v)).collect()),
    }
}

/// Optimiser state in the flat parameter layout.
struct State<F: Real> {
    first: Vec<F>,
    second: Vec<F>,
    updates: i32,
}

#[allow(clippy::too_many_arguments)]
fn run_in<F: Real, R: RngCore + ?Sized>(
    network: &mut Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    validation: Option<(ArrayView2<'_, f64>, ArrayView2<'_, f64>)>,
    weights: RowWeights<'_>,
    options: &TrainingOptions,
    run: Run,
    rng: &mut R,
) -> Result<TrainingReport> {
    let Run {
        classify,
        loss,
        batch,
        scope,
    } = run;
    let start = Instant::now();
    let (activation, head) = (network.activation(), network.head());
    let mut params = Params::<F>::from_network(network);
    let xf = to_real::<F>(x);
    let yf = to_real::<F>(y);
    let val = validation.map(|(vx, vy)| (to_real::<F>(vx), to_real::<F>(vy)));
    let to_f = |w: &[f64]| -> Vec<F> { w.iter().map(|&v| F::from_f64(v)).collect() };
    let train_w = weights.train.map(to_f);
    let val_w = weights.validation.map(to_f);
    let n = x.nrows();
    let network_outputs = y.ncols();
    let arithmetic = options.arithmetic;
    let mut bp = Backprop::new(&params, batch, arithmetic);
    let mut eval_ws =
        validation.map(|(vx, _)| Forward::new(&params, EVAL_CHUNK.min(vx.nrows()), arithmetic));
    let mut state = State {
        first: vec![F::zero(); params.data.len()],
        second: match options.optimiser {
            Optimiser::Adam { .. } => vec![F::zero(); params.data.len()],
            _ => Vec::new(),
        },
        updates: 0,
    };
    let mut order: Vec<usize> = (0..n).collect();
    let mut history = Vec::with_capacity(options.epochs.min(100_000));
    let mut best: Option<(f64, usize, Vec<F>)> = None;
    let mut since_best = 0;
    let mut stopped_early = false;
    for epoch in 0..options.epochs {
        let rate = options
            .schedule
            .rate(options.learning_rate, epoch, options.epochs);
        if options.shuffle {
            rng::shuffle(rng, &mut order);
        }
        let mut epoch_loss = 0.0f64;
        for rows in order.chunks(batch) {
            bp.gather(&xf, &yf, train_w.as_deref(), rows);
            let batch_loss = bp
                .pass(&params, rows.len(), activation, head, loss)
                .as_f64();
            if !batch_loss.is_finite() {
                return Err(diverged(epoch + 1, rate, batch_loss));
            }
            epoch_loss += batch_loss;
            update(
                &mut params,
                &bp.grad,
                &mut state,
                options,
                F::from_f64(rate),
            );
        }
        let training_loss = epoch_loss / n as f64;
        if !training_loss.is_finite() || params.data.iter().any(|v| !v.is_finite()) {
            return Err(diverged(epoch + 1, rate, training_loss));
        }
        let (validation_loss, validation_accuracy) = match (&val, eval_ws.as_mut()) {
            (Some((vx, vy)), Some(ws)) => {
                let (total, correct) = evaluate(
                    &params,
                    ws,
                    vx,
                    vy,
                    val_w.as_deref(),
                    activation,
                    head,
                    loss,
                    classify,
                );
                let val_rows = vy.len() / network_outputs;
                let mean = total / val_rows as f64;
                if !mean.is_finite() {
                    return Err(diverged(epoch + 1, rate, mean));
                }
                (
                    Some(mean),
                    classify.then(|| correct as f64 / val_rows as f64),
                )
            }
            _ => (None, None),
        };
        history.push(EpochRecord {
            epoch: epoch + 1,
            training_loss,
            validation_loss,
            validation_accuracy,
            learning_rate: rate,
            elapsed_seconds: start.elapsed().as_secs_f64(),
        });
        options.observer.notify(|| Event::Epoch {
            fold: scope.fold,
            restart: scope.restart,
            epoch: epoch + 1,
            epochs: options.epochs,
            training_loss,
            validation_loss,
        });
        if let Some(v) = validation_loss {
            let min_improvement = options.early_stopping.map_or(0.0, |e| e.min_improvement);
            let improved = match &best {
                None => true,
                Some((b, _, _)) => v < b - min_improvement,
            };
            if improved {
                match &mut best {
                    Some((b, e, w)) => {
                        *b = v;
                        *e = epoch + 1;
                        w.copy_from_slice(&params.data);
                    }
                    None => best = Some((v, epoch + 1, params.data.clone())),
                }
                since_best = 0;
            } else {
                since_best += 1;
            }
            if let Some(es) = options.early_stopping {
                if since_best >= es.patience {
                    stopped_early = epoch + 1 < options.epochs;
                    break;
                }
            }
        }
    }
    let epochs_run = history.len();
    let (best_epoch, best_validation_loss) = match best {
        Some((v, e, w)) if options.early_stopping.is_some() => {
            params.data = w;
            (e, Some(v))
        }
        // Validation rows without early stopping: the last weights are
        // kept, so the loss reported is theirs.
        Some(_) => (epochs_run, history.last().and_then(|e| e.validation_loss)),
        None => (epochs_run, None),
    };
    params.write_to_network(network);
    let final_training_loss = history.last().map_or(f64::NAN, |e| e.training_loss);
    Ok(TrainingReport {
        history,
        epochs_run,
        best_epoch,
        best_validation_loss,
        stopped_early,
        loss,
        final_training_loss,
    })
}

fn diverged(epoch: usize, learning_rate: f64, loss: f64) -> Error {
    Error::new(ErrorKind::Diverged {
        epoch,
        learning_rate,
        loss,
    })
}

/// Applies one update to every parameter (see [`options`] for the rules).
fn update<F: Real>(
    params: &mut Params<F>,
    grad: &[F],
    state: &mut State<F>,
    options: &TrainingOptions,
    rate: F,
) {
    state.updates += 1;
    let decay = F::from_f64(options.weight_decay);
    let l1 = F::from_f64(options.l1_penalty);
    let penalised = options.weight_decay > 0.0 || options.l1_penalty > 0.0;
    if options.optimiser == Optimiser::Sgd && !penalised && options.train_biases {
        // The common plain case in one pass over the flat vector (the same
        // operations as below, `+ 0` included, so the same bits).
        for (wi, &gi) in params.data.iter_mut().zip(grad) {
            *wi = *wi - rate * (gi + F::zero());
        }
        return;
    }
    for l in 0..params.n_layers() {
        let (wr, br) = params.ranges(l);
        for (range, is_weight) in [(wr, true), (br, false)] {
            if !is_weight && !options.train_biases {
                continue;
            }
            let w = &mut params.data[range.clone()];
            let g = &grad[range.clone()];
            let v = &mut state.first[range.clone()];
            let penalty = |wi: F| -> F {
                if is_weight && penalised {
                    let sign = if wi > F::zero() {
                        F::one()
                    } else if wi < F::zero() {
                        -F::one()
                    } else {
                        F::zero()
                    };
                    decay * wi + l1 * sign
                } else {
                    F::zero()
                }
            };
            match options.optimiser {
                Optimiser::Sgd => {
                    for (wi, &gi) in w.iter_mut().zip(g) {
                        *wi = *wi - rate * (gi + penalty(*wi));
                    }
                }
                Optimiser::Momentum { mu } => {
                    let mu = F::from_f64(mu);
                    for ((wi, &gi), vi) in w.iter_mut().zip(g).zip(v.iter_mut()) {
                        *vi = mu * *vi - rate * (gi + penalty(*wi));
                        *wi = *wi + *vi;
                    }
                }
                Optimiser::Nesterov { mu } => {
                    let mu = F::from_f64(mu);
                    for ((wi, &gi), vi) in w.iter_mut().zip(g).zip(v.iter_mut()) {
                        let previous = *vi;
                        *vi = mu * *vi - rate * (gi + penalty(*wi));
                        *wi = *wi - mu * previous + (F::one() + mu) * *vi;
                    }
                }
                Optimiser::Adam {
                    beta1,
                    beta2,
                    epsilon,
                } => {
                    let (b1, b2, eps) =
                        (F::from_f64(beta1), F::from_f64(beta2), F::from_f64(epsilon));
                    let (c1, c2) = adam_corrections::<F>(beta1, beta2, state.updates);
                    let s = &mut state.second[range.clone()];
                    for (((wi, &gi), mi), si) in
                        w.iter_mut().zip(g).zip(v.iter_mut()).zip(s.iter_mut())
                    {
                        let gt = gi + penalty(*wi);
                        *mi = b1 * *mi + (F::one() - b1) * gt;
                        *si = b2 * *si + (F::one() - b2) * gt * gt;
                        *wi = *wi - rate * (*mi / c1) / ((*si / c2).sqrt() + eps);
                    }
                }
            }
        }
    }
}

/// Adam's bias corrections `1 - beta^t`. Out of line on purpose: LLVM treats
/// `powi` as free of side effects and hoisted it out of the optimiser match,
/// so every plain-SGD update paid for two `powi` loops (14% of W1's time).
#[inline(never)]
fn adam_corrections<F: Real>(beta1: f64, beta2: f64, t: i32) -> (F, F) {
    (
        F::one() - F::from_f64(beta1.powi(t)),
        F::one() - F::from_f64(beta2.powi(t)),
    )
}

/// The mean loss of `network` over rows `x` with targets `y` (network output
/// encoding), without penalties.
///
/// # Errors
/// Mismatched shapes; cross-entropy with the identity head.
pub fn mean_loss(
    network: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    loss: Loss,
) -> Result<f64> {
    check_xy(network, x, y, "loss")?;
    loss.check_head(network.head())?;
    Ok(match network.precision() {
        Precision::F64 => mean_loss_in::<f64>(network, x, y, loss),
        Precision::F32 => mean_loss_in::<f32>(network, x, y, loss),
    })
}

fn mean_loss_in<F: Real>(
    network: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    loss: Loss,
) -> f64 {
    let params = Params::<F>::from_network(network);
    // The mean loss of a finished network uses the portable kernel, as
    // predictions do.
    let mut ws = Forward::new(&params, EVAL_CHUNK.min(x.nrows()), Arithmetic::Portable);
    let (total, _) = evaluate(
        &params,
        &mut ws,
        &to_real::<F>(x),
        &to_real::<F>(y),
        None,
        network.activation(),
        network.head(),
        loss,
        false,
    );
    total / x.nrows() as f64
}
