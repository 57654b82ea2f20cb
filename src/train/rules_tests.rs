//! The update rules, penalties, schedules and early stopping checked by value
//! on networks small enough to follow by hand (issue 19).
//!
//! Most checks use a single linear unit (identity activation and head, half
//! squared error), whose gradient for one row `x` with target `y` is
//!
//! ```text
//! z = w . x + b,   delta = z - y,   dE/dw = delta x,   dE/db = delta
//! ```
//! (Rumelhart, Hinton & Williams, Nature 1986, for a unit without a
//! squashing function). A row of zeros whose target equals the bias has no
//! loss gradient at all, so the penalties alone move the weights: with an L1
//! penalty the gradient is the constant `lambda_1 sign(w)` while no weight
//! crosses zero, and each optimiser's path has a closed form.

use super::*;
use crate::network::{Activation, Head, Layer};
use ndarray::{array, Array1, Array2};

/// A linear unit with weights `w` and bias `b`.
fn linear(w: &[f64], b: f64) -> Network {
    Network::from_layers(
        vec![Layer {
            weights: Array2::from_shape_vec((w.len(), 1), w.to_vec()).unwrap(),
            biases: Array1::from(vec![b]),
        }],
        Activation::Identity,
        Head::Identity,
    )
    .unwrap()
}

fn weights_of(net: &Network) -> Vec<f64> {
    net.layers()[0].weights.iter().copied().collect()
}

fn bias_of(net: &Network) -> f64 {
    net.layers()[0].biases[0]
}

/// Full batch, no shuffling, no early stopping, constant rate.
fn plain(optimiser: Optimiser, learning_rate: f64, epochs: usize) -> TrainingOptions {
    TrainingOptions {
        epochs,
        batch_size: Some(BatchSize::Full),
        learning_rate,
        optimiser,
        early_stopping: None,
        shuffle: false,
        ..Default::default()
    }
}

fn close(found: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (found - expected).abs() <= tolerance,
        "{what}: found {found:e}, expected {expected:e} (tolerance {tolerance:e})"
    );
}

/// Trains a linear unit `w, b` on rows of zeros whose target is `b` (no
/// loss gradient), so that only the penalties act; returns the weights, the
/// bias and the report.
fn penalties_only(w: &[f64], b: f64, options: &TrainingOptions) -> (Vec<f64>, f64, TrainingReport) {
    let mut net = linear(w, b);
    let x = Array2::zeros((3, w.len()));
    let y = Array2::from_elem((3, 1), b);
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        options,
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    (weights_of(&net), bias_of(&net), report)
}

// ---------------------------------------------------------------------------
// Plain gradient descent with a real loss gradient.

// One row x = (1, 2), y = 1, w = (0.5, -0.25), b = 0.1: z = 0.1, delta =
// -0.9, dE/dw = (-0.9, -1.8), dE/db = -0.9. With eta = 0.1 one step gives
// w = (0.59, -0.07), b = 0.19 (worked by hand from w <- w - eta g; the rule
// is gradient descent as in Rumelhart, Hinton & Williams 1986).
#[test]
fn sgd_one_step_by_hand() {
    let mut net = linear(&[0.5, -0.25], 0.1);
    let x = array![[1.0, 2.0]];
    let y = array![[1.0]];
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &plain(Optimiser::Sgd, 0.1, 1),
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    let w = weights_of(&net);
    close(w[0], 0.59, 1e-15, "w1");
    close(w[1], -0.07, 1e-15, "w2");
    close(bias_of(&net), 0.19, 1e-15, "b");
    // The epoch's loss is the half squared error before the update.
    close(report.final_training_loss, 0.405, 1e-15, "loss");
    assert_eq!(report.history[0].learning_rate, 0.1);
}

// The batch gradient is the mean over the batch's rows (TrainingOptions):
// rows x = 1 and x = 3 with y = 0 from w = 1, b = 0 give deltas 1 and 3,
// dE/dw = (1 * 1 + 3 * 3) / 2 = 5, dE/db = (1 + 3) / 2 = 2; eta = 0.01
// gives w = 0.95, b = -0.02 (worked by hand).
#[test]
fn the_batch_gradient_is_the_mean_over_rows() {
    let mut net = linear(&[1.0], 0.0);
    let x = array![[1.0], [3.0]];
    let y = array![[0.0], [0.0]];
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &plain(Optimiser::Sgd, 0.01, 1),
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    close(weights_of(&net)[0], 0.95, 1e-15, "w");
    close(bias_of(&net), -0.02, 1e-15, "b");
}

// The epoch's training loss is the mean over rows of the losses before each
// update: rows x = 1 and x = 3, y = 0, w = 1, b = 0 have half squared errors
// 0.5 and 4.5, mean 2.5 (worked by hand), whether in one batch or two.
#[test]
fn the_epoch_loss_is_the_mean_over_rows() {
    for batch in [BatchSize::Full, BatchSize::Rows(2)] {
        let mut net = linear(&[1.0], 0.0);
        let x = array![[1.0], [3.0]];
        let y = array![[0.0], [0.0]];
        let options = TrainingOptions {
            batch_size: Some(batch),
            ..plain(Optimiser::Sgd, 0.01, 1)
        };
        let report = train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &options,
            &mut crate::seeded_rng(1),
        )
        .unwrap();
        assert_eq!(report.final_training_loss, 2.5, "{batch}");
        assert_eq!(report.training_losses(), vec![2.5]);
    }
}

// Divergence is an error naming the epoch: with a rate of 1e200 the first
// row's update sends w to about -1e200, and the second row's loss overflows
// to infinity in epoch 1 (one row per update, rows in order).
#[test]
fn divergence_names_the_epoch() {
    let mut net = linear(&[1.0], 0.0);
    let x = array![[1.0], [1.0]];
    let y = array![[0.0], [0.0]];
    let options = TrainingOptions {
        batch_size: Some(BatchSize::Rows(1)),
        ..plain(Optimiser::Sgd, 1e200, 3)
    };
    let err = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap_err();
    match err.kind() {
        ErrorKind::Diverged {
            epoch,
            learning_rate,
            loss,
        } => {
            assert_eq!(*epoch, 1);
            assert_eq!(*learning_rate, 1e200);
            assert!(loss.is_infinite());
        }
        other => panic!("{other:?}"),
    }
    // The weights themselves overflow in epoch 2 when the loss of epoch 1
    // stays finite: one row, rate 1e300, x = 1e10.
    let mut net = linear(&[1.0], 0.0);
    let (x, y) = (array![[1e10]], array![[0.0]]);
    let options = TrainingOptions {
        batch_size: Some(BatchSize::Rows(1)),
        ..plain(Optimiser::Sgd, 1e300, 3)
    };
    let err = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::Diverged { epoch: 1, .. }),
        "{err:?}"
    );
}

#[test]
fn biases_stay_put_when_not_trained() {
    let mut net = linear(&[0.5, -0.25], 0.1);
    let x = array![[1.0, 2.0]];
    let y = array![[1.0]];
    for optimiser in [
        Optimiser::Sgd,
        Optimiser::Momentum { mu: 0.9 },
        Optimiser::ADAM,
    ] {
        let options = TrainingOptions {
            train_biases: false,
            ..plain(optimiser, 0.1, 3)
        };
        train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &options,
            &mut crate::seeded_rng(1),
        )
        .unwrap();
        assert_eq!(bias_of(&net).to_bits(), 0.1f64.to_bits(), "{optimiser}");
        assert_ne!(weights_of(&net)[0], 0.5, "{optimiser}");
    }
}

// ---------------------------------------------------------------------------
// Penalties: weights only, never biases (Krogh & Hertz, NIPS 1991, for
// weight decay; Tibshirani, JRSS B 1996, for the L1 penalty).

// L2 alone: the gradient is lambda_2 w, so plain descent multiplies each
// weight by (1 - eta lambda_2) per update: 0.95^3 = 0.857375 after three.
#[test]
fn weight_decay_shrinks_weights_geometrically_and_leaves_the_bias() {
    let options = TrainingOptions {
        weight_decay: 0.5,
        ..plain(Optimiser::Sgd, 0.1, 3)
    };
    let (w, b, _) = penalties_only(&[1.0, -2.0], 0.7, &options);
    close(w[0], 0.857375, 1e-15, "w1");
    close(w[1], -2.0 * 0.857375, 1e-15, "w2");
    assert_eq!(b.to_bits(), 0.7f64.to_bits(), "the bias was penalised");
}

// L1 alone: the gradient is lambda_1 sign(w), a constant step of eta
// lambda_1 towards zero: 3 * 0.01 * 0.5 = 0.015 after three updates.
#[test]
fn l1_moves_weights_towards_zero_by_a_constant_step_and_leaves_the_bias() {
    let options = TrainingOptions {
        l1_penalty: 0.5,
        ..plain(Optimiser::Sgd, 0.01, 3)
    };
    let (w, b, _) = penalties_only(&[1.0, -2.0, 0.0], -0.3, &options);
    close(w[0], 0.985, 1e-15, "w1");
    close(w[1], -1.985, 1e-15, "w2");
    // sign(0) = 0: a weight at zero stays there.
    assert_eq!(w[2], 0.0);
    assert_eq!(b.to_bits(), (-0.3f64).to_bits(), "the bias was penalised");
}

// Both together: one step of w - eta (lambda_2 w + lambda_1 sign(w)).
#[test]
fn both_penalties_add() {
    let options = TrainingOptions {
        weight_decay: 0.5,
        l1_penalty: 0.25,
        ..plain(Optimiser::Sgd, 0.1, 1)
    };
    let (w, _, _) = penalties_only(&[1.0, -2.0], 0.0, &options);
    close(w[0], 1.0 - 0.1 * (0.5 + 0.25), 1e-15, "w1");
    close(w[1], -2.0 - 0.1 * (-1.0 - 0.25), 1e-15, "w2");
}

// ---------------------------------------------------------------------------
// Optimisers under a constant gradient g = lambda_1 sign(w) (L1 alone, see
// the top of this file). Closed forms worked by hand from each rule:
//
// momentum (Polyak 1964; Sutskever, Martens, Dahl & Hinton, ICML 2013,
// eq. 1-2):   v_t = mu v_{t-1} - eta g,  w_t = w_{t-1} + v_t, so after t
// updates w_t - w_0 = -eta g (t + (t-1) mu + (t-2) mu^2 + ...):
//   t = 1: -eta g;  t = 2: -eta g (2 + mu);  t = 3: -eta g (3 + 2 mu + mu^2).
// Nesterov, in the form of Bengio, Boulanger-Lewandowski & Pascanu (ICASSP
// 2013, eq. 7): w_t = w_{t-1} - mu v_{t-1} + (1 + mu) v_t with v as above:
//   t = 1: -eta g (1 + mu);  t = 2: -eta g (1 + (1 + mu)^2).
// Adam (Kingma & Ba, ICLR 2015, Algorithm 1): with a constant g the bias
// corrected moments are exactly g and g^2, so every step is
// -eta g / (|g| + eps), within eps of -eta sign(g) (section 2.1 of the paper:
// the effective step is about eta). Without the bias corrections the first
// step would be eta * 0.1 / sqrt(0.001) = 3.16 eta.

fn constant_gradient_path(optimiser: Optimiser, epochs: usize) -> f64 {
    // w = 1, lambda_1 = 0.5 so g = 0.5; eta = 0.01 keeps w above 0.
    let options = TrainingOptions {
        l1_penalty: 0.5,
        ..plain(optimiser, 0.01, epochs)
    };
    let (w, b, _) = penalties_only(&[1.0], 0.25, &options);
    assert_eq!(b, 0.25, "{optimiser}: the bias moved");
    w[0] - 1.0
}

#[test]
fn sgd_under_a_constant_gradient() {
    let eg = 0.01 * 0.5;
    close(constant_gradient_path(Optimiser::Sgd, 1), -eg, 1e-15, "t=1");
    close(
        constant_gradient_path(Optimiser::Sgd, 3),
        -3.0 * eg,
        1e-15,
        "t=3",
    );
}

#[test]
fn momentum_under_a_constant_gradient() {
    let (eg, mu) = (0.01 * 0.5, 0.9);
    let m = Optimiser::Momentum { mu };
    close(constant_gradient_path(m, 1), -eg, 1e-15, "t=1");
    close(constant_gradient_path(m, 2), -eg * (2.0 + mu), 1e-15, "t=2");
    close(
        constant_gradient_path(m, 3),
        -eg * (3.0 + 2.0 * mu + mu * mu),
        1e-15,
        "t=3",
    );
}

#[test]
fn nesterov_under_a_constant_gradient() {
    let (eg, mu) = (0.01 * 0.5, 0.9);
    let n = Optimiser::Nesterov { mu };
    close(constant_gradient_path(n, 1), -eg * (1.0 + mu), 1e-15, "t=1");
    close(
        constant_gradient_path(n, 2),
        -eg * (1.0 + (1.0 + mu) * (1.0 + mu)),
        1e-15,
        "t=2",
    );
}

#[test]
fn adam_under_a_constant_gradient_steps_by_the_rate() {
    // |eta g / (|g| + eps) - eta| <= eta eps / |g| = 2e-10 per step.
    close(
        constant_gradient_path(Optimiser::ADAM, 1),
        -0.01,
        1e-9,
        "t=1",
    );
    close(
        constant_gradient_path(Optimiser::ADAM, 2),
        -0.02,
        2e-9,
        "t=2",
    );
}

// ---------------------------------------------------------------------------
// Every optimiser with a real, changing loss gradient and both penalties,
// against a scalar transcription of the published rule (independent of the
// engine: no shared code), three updates.

/// One linear unit on one row: returns the weights and bias after `steps`
/// updates of `optimiser`, computed in plain f64 from the rules quoted at
/// the top of this section.
fn reference(
    optimiser: Optimiser,
    (w0, b0): ([f64; 2], f64),
    (x, y): ([f64; 2], f64),
    (eta, l2, l1): (f64, f64, f64),
    steps: usize,
) -> ([f64; 2], f64) {
    let (mut w, mut b) = (w0, b0);
    let mut v = [0.0; 3]; // velocity, or Adam's first moment
    let mut s = [0.0; 3]; // Adam's second moment
    let sign = |a: f64| {
        if a > 0.0 {
            1.0
        } else if a < 0.0 {
            -1.0
        } else {
            0.0
        }
    };
    for t in 1..=steps {
        let delta = w[0] * x[0] + w[1] * x[1] + b - y;
        let g = [
            delta * x[0] + l2 * w[0] + l1 * sign(w[0]),
            delta * x[1] + l2 * w[1] + l1 * sign(w[1]),
            delta, // biases are not penalised
        ];
        let mut p = [w[0], w[1], b];
        for k in 0..3 {
            match optimiser {
                Optimiser::Sgd => p[k] -= eta * g[k],
                Optimiser::Momentum { mu } => {
                    v[k] = mu * v[k] - eta * g[k];
                    p[k] += v[k];
                }
                Optimiser::Nesterov { mu } => {
                    let previous = v[k];
                    v[k] = mu * v[k] - eta * g[k];
                    p[k] += -mu * previous + (1.0 + mu) * v[k];
                }
                Optimiser::Adam {
                    beta1,
                    beta2,
                    epsilon,
                } => {
                    v[k] = beta1 * v[k] + (1.0 - beta1) * g[k];
                    s[k] = beta2 * s[k] + (1.0 - beta2) * g[k] * g[k];
                    let m_hat = v[k] / (1.0 - beta1.powi(t as i32));
                    let s_hat = s[k] / (1.0 - beta2.powi(t as i32));
                    p[k] -= eta * m_hat / (s_hat.sqrt() + epsilon);
                }
            }
        }
        w = [p[0], p[1]];
        b = p[2];
    }
    (w, b)
}

#[test]
fn every_optimiser_follows_its_published_rule_for_three_updates() {
    let start = ([0.5, -0.25], 0.1);
    let row = ([1.0, 2.0], 1.0);
    for optimiser in [
        Optimiser::Sgd,
        Optimiser::Momentum { mu: 0.9 },
        Optimiser::Nesterov { mu: 0.8 },
        Optimiser::ADAM,
        // Unequal betas, so that swapping them shows.
        Optimiser::Adam {
            beta1: 0.5,
            beta2: 0.75,
            epsilon: 1e-3,
        },
    ] {
        for (l2, l1) in [(0.0, 0.0), (0.3, 0.0), (0.0, 0.2), (0.3, 0.2)] {
            for steps in 1..=3 {
                let options = TrainingOptions {
                    weight_decay: l2,
                    l1_penalty: l1,
                    ..plain(optimiser, 0.05, steps)
                };
                let mut net = linear(&start.0, start.1);
                let x = array![[row.0[0], row.0[1]]];
                let y = array![[row.1]];
                train_arrays(
                    &mut net,
                    x.view(),
                    y.view(),
                    None,
                    &options,
                    &mut crate::seeded_rng(1),
                )
                .unwrap();
                let (w, b) = reference(optimiser, start, row, (0.05, l2, l1), steps);
                let what = format!("{optimiser}, l2 {l2}, l1 {l1}, step {steps}");
                let found = weights_of(&net);
                close(found[0], w[0], 1e-14, &format!("{what}: w1"));
                close(found[1], w[1], 1e-14, &format!("{what}: w2"));
                close(bias_of(&net), b, 1e-14, &format!("{what}: b"));
            }
        }
    }
}

// Adam's first two steps on the row above, worked by hand (Kingma & Ba
// 2015, Algorithm 1, beta1 = 0.9, beta2 = 0.999, eps = 1e-8, eta = 0.05):
// step 1: g = (-0.9, -1.8, -0.9); each corrected ratio m/sqrt(s) is sign(g),
// so every parameter moves by +0.05 (to within 1e-9): w = (0.55, -0.2),
// b = 0.15. Step 2: z = 0.55 - 0.4 + 0.15 = 0.3, delta = -0.7, so g2 =
// (7/9) g1 for every parameter. Then m = (0.9 * 0.1 + 0.1 * 7/9) g1,
// corrected by 1 - 0.9^2 = 0.19, and s = (0.999 * 0.001 + 0.001 * (7/9)^2)
// g1^2, corrected by 1 - 0.999^2 = 0.001999, so every parameter moves by
// eta m_hat / sqrt(s_hat) = 0.05 * 0.98581043 (worked by hand from these
// fractions; the f64 value below comes from the same fractions, not from
// the engine). Epsilon shortens each step by at most eta eps / |g|, about
// 1e-9 here, hence the tolerances.
#[test]
fn adam_first_two_steps_by_hand() {
    let mut net = linear(&[0.5, -0.25], 0.1);
    let x = array![[1.0, 2.0]];
    let y = array![[1.0]];
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &plain(Optimiser::ADAM, 0.05, 1),
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    let w = weights_of(&net);
    close(w[0], 0.55, 1e-9, "step 1, w1");
    close(w[1], -0.2, 1e-9, "step 1, w2");
    close(bias_of(&net), 0.15, 1e-9, "step 1, b");
    let mut net = linear(&[0.5, -0.25], 0.1);
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &plain(Optimiser::ADAM, 0.05, 2),
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    let r: f64 = 7.0 / 9.0;
    let ratio = ((0.09 + 0.1 * r) / 0.19) / ((0.000999 + 0.001 * r * r) / 0.001999).sqrt();
    assert!((ratio - 0.98581043).abs() < 1e-8, "{ratio}");
    let w = weights_of(&net);
    close(w[0], 0.55 + 0.05 * ratio, 4e-9, "step 2, w1");
    close(w[1], -0.2 + 0.05 * ratio, 4e-9, "step 2, w2");
    close(bias_of(&net), 0.15 + 0.05 * ratio, 4e-9, "step 2, b");
}

// ---------------------------------------------------------------------------
// Schedules: the rate each epoch uses, in the history and in the weights.

// L1 alone with plain descent moves w by eta_e lambda_1 in epoch e (one
// update per epoch), so the weight records the sum of the rates.
#[test]
fn schedules_set_each_epochs_rate() {
    let cases: [(Schedule, usize, Vec<f64>); 4] = [
        (Schedule::Constant, 3, vec![0.1, 0.1, 0.1]),
        // eta 0.5^floor(e / 2): 0.1, 0.1, 0.05, 0.05, 0.025.
        (
            Schedule::Step {
                every: 2,
                factor: 0.5,
            },
            5,
            vec![0.1, 0.1, 0.05, 0.05, 0.025],
        ),
        // eta 0.5^e.
        (
            Schedule::Exponential { gamma: 0.5 },
            4,
            vec![0.1, 0.05, 0.025, 0.0125],
        ),
        // Loshchilov & Hutter 2017, eq. 5 with E = 4 and min 0.02:
        // 0.02 + 0.08 (1 + cos(pi e / 4)) / 2.
        (
            Schedule::Cosine { min_rate: 0.02 },
            4,
            vec![
                0.1,
                0.02 + 0.04 * (1.0 + std::f64::consts::FRAC_1_SQRT_2),
                0.06,
                0.02 + 0.04 * (1.0 - std::f64::consts::FRAC_1_SQRT_2),
            ],
        ),
    ];
    for (schedule, epochs, rates) in cases {
        let options = TrainingOptions {
            schedule,
            l1_penalty: 1.0,
            ..plain(Optimiser::Sgd, 0.1, epochs)
        };
        let (w, _, report) = penalties_only(&[10.0], 0.0, &options);
        let used: Vec<f64> = report.history.iter().map(|e| e.learning_rate).collect();
        assert_eq!(used.len(), rates.len());
        for (e, (u, r)) in used.iter().zip(&rates).enumerate() {
            close(*u, *r, 1e-15, &format!("{schedule}, epoch {}", e + 1));
        }
        let total: f64 = rates.iter().sum();
        close(w[0], 10.0 - total, 1e-13, &format!("{schedule}: weight"));
    }
}

// ---------------------------------------------------------------------------
// Early stopping (Prechelt, "Early stopping - but when?", 1998): the weights
// of the best epoch are restored.
//
// One weight w from 0, the bias fixed at 0, one training row x = 1, y = 2,
// plain descent with eta = 0.25: w_e = w_{e-1} + 0.25 (2 - w_{e-1}), so w =
// 0.5, 0.875, 1.15625, 1.3671875, 1.525390625 after epochs 1..5 (exact in
// binary). A validation row x = 1, y = 1 has half squared error (w - 1)^2 / 2
// = 0.125, 0.0078125, 0.01220703125, 0.067413330078125, ... : best at epoch 2.
// The training loss of epoch 4 is (2 - 1.15625)^2 / 2 = 0.35595703125.

fn early_stopping_run(
    early_stopping: Option<EarlyStopping>,
    epochs: usize,
) -> (f64, TrainingReport) {
    let mut net = linear(&[0.0], 0.0);
    let options = TrainingOptions {
        early_stopping,
        train_biases: false,
        ..plain(Optimiser::Sgd, 0.25, epochs)
    };
    let (x, y) = (array![[1.0]], array![[2.0]]);
    let (vx, vy) = (array![[1.0]], array![[1.0]]);
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        Some((vx.view(), vy.view())),
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    (weights_of(&net)[0], report)
}

fn patience(patience: usize) -> Option<EarlyStopping> {
    Some(EarlyStopping {
        patience,
        min_improvement: 0.0,
    })
}

#[test]
fn early_stopping_restores_the_best_epochs_weights() {
    let (w, report) = early_stopping_run(patience(2), 10);
    assert_eq!(w, 0.875, "the weights kept are not the best epoch's");
    assert_eq!(report.best_epoch, 2);
    assert_eq!(report.best_validation_loss, Some(0.0078125));
    // Epochs 3 and 4 do not improve: patience 2 ends training after epoch 4.
    assert_eq!(report.epochs_run, 4);
    let epochs: Vec<usize> = report.history.iter().map(|e| e.epoch).collect();
    assert_eq!(epochs, vec![1, 2, 3, 4], "epochs are counted from 1");
    assert!(report.stopped_early);
    assert_eq!(report.final_training_loss, 0.35595703125);
    assert_eq!(
        report.validation_losses(),
        vec![0.125, 0.0078125, 0.01220703125, 0.067413330078125]
    );
}

#[test]
fn patience_counts_the_epochs_without_improvement() {
    let (w, report) = early_stopping_run(patience(3), 10);
    assert_eq!(w, 0.875);
    assert_eq!(report.epochs_run, 5);
    assert!(report.stopped_early);
    let (_, report) = early_stopping_run(patience(1), 10);
    assert_eq!(report.epochs_run, 3);
}

// Patience runs out on the last epoch: training did not stop early, but the
// best weights are still restored.
#[test]
fn running_out_of_patience_on_the_last_epoch_is_not_stopping_early() {
    let (w, report) = early_stopping_run(patience(2), 4);
    assert_eq!(w, 0.875);
    assert_eq!(report.epochs_run, 4);
    assert!(!report.stopped_early);
    let (w, report) = early_stopping_run(patience(5), 3);
    assert_eq!(w, 0.875);
    assert_eq!(report.best_epoch, 2);
    assert!(!report.stopped_early);
}

// Without early stopping every epoch runs and the last weights are kept,
// with the last epoch's validation loss.
#[test]
fn without_early_stopping_the_last_weights_are_kept() {
    let (w, report) = early_stopping_run(None, 4);
    assert_eq!(w, 1.3671875);
    assert_eq!(report.epochs_run, 4);
    assert_eq!(report.best_epoch, 4);
    assert_eq!(report.best_validation_loss, Some(0.067413330078125));
    assert!(!report.stopped_early);
}

// An improvement must beat the best by more than min_improvement: with 0.2,
// epoch 2's 0.0078125 is not below 0.125 - 0.2, so epoch 1 stays best and
// patience 2 ends training after epoch 3; with 0.1 it is below 0.025.
#[test]
fn min_improvement_is_subtracted_from_the_best() {
    let es = |min_improvement| {
        Some(EarlyStopping {
            patience: 2,
            min_improvement,
        })
    };
    let (w, report) = early_stopping_run(es(0.2), 10);
    assert_eq!(w, 0.5);
    assert_eq!(report.best_epoch, 1);
    assert_eq!(report.epochs_run, 3);
    let (w, report) = early_stopping_run(es(0.1), 10);
    assert_eq!(w, 0.875);
    assert_eq!(report.best_epoch, 2);
    assert_eq!(report.epochs_run, 4);
    // Equal to the best is not better: 0.125 - 0.1171875 = 0.0078125 exactly.
    let (_, report) = early_stopping_run(es(0.1171875), 10);
    assert_eq!(report.best_epoch, 1);
}

#[test]
fn early_stopping_without_validation_rows_is_refused() {
    let mut net = linear(&[0.0], 0.0);
    let options = TrainingOptions {
        early_stopping: patience(2),
        ..plain(Optimiser::Sgd, 0.25, 3)
    };
    let (x, y) = (array![[1.0]], array![[2.0]]);
    let err = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap_err();
    assert!(err.to_string().contains("needs validation rows"), "{err}");
}

// ---------------------------------------------------------------------------
// f32 against f64: the same run in both precisions. Single precision rounds
// at about 6e-8 relative (IEEE 754-2008, binary32); over 40 epochs of a
// small tanh network the training losses agree to 1e-4 relative (a bound
// well above that rounding, and far below the effect of a lost update).

#[test]
fn f32_training_follows_f64() {
    let mut rng = crate::seeded_rng(11);
    let x = Array2::from_shape_fn((60, 3), |_| crate::rng::uniform(&mut rng, -1.0, 1.0));
    let y = Array2::from_shape_fn((60, 1), |(i, _)| {
        f64::from(u8::from(x[[i, 0]] + 0.5 * x[[i, 1]] * x[[i, 2]] > 0.0))
    });
    let base = Network::new(
        &[3, 6, 1],
        Activation::Tanh,
        Head::Logistic,
        crate::network::Init::Auto,
        &mut crate::seeded_rng(4),
    )
    .unwrap();
    let options = TrainingOptions {
        epochs: 40,
        learning_rate: 0.01,
        early_stopping: None,
        ..Default::default()
    };
    let run = |precision| {
        let mut net = base.clone().with_precision(precision);
        let report = train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &options,
            &mut crate::seeded_rng(5),
        )
        .unwrap();
        (net, report)
    };
    let (n64, r64) = run(Precision::F64);
    let (n32, r32) = run(Precision::F32);
    assert_eq!(n32.precision(), Precision::F32);
    let mut largest = 0.0f64;
    for (a, b) in r64.training_losses().iter().zip(r32.training_losses()) {
        largest = largest.max((a - b).abs() / a.abs());
    }
    assert!(largest < 1e-4, "f32 and f64 losses differ by {largest:e}");
    // Training moved the losses well beyond that bound.
    let l = r64.training_losses();
    assert!((l[0] - l[39]) / l[0] > 1e-2, "{l:?}");
    for (a, b) in n64.layers().iter().zip(n32.layers()) {
        for (p, q) in a.weights.iter().zip(b.weights.iter()) {
            assert!((p - q).abs() < 1e-4, "weights {p} and {q}");
        }
    }
}

// ---------------------------------------------------------------------------
// Option validation: every range in the documentation is enforced, with the
// edges that are allowed accepted.

#[test]
fn option_ranges_are_enforced() {
    let refused = |o: TrainingOptions| o.validate().unwrap_err().to_string();
    let d = TrainingOptions::default;
    assert_eq!(
        refused(TrainingOptions {
            l1_penalty: -0.1,
            ..d()
        }),
        "option l1_penalty = -0.1: must be a finite number, 0 or greater"
    );
    assert_eq!(
        refused(TrainingOptions {
            weight_decay: f64::INFINITY,
            ..d()
        }),
        "option weight_decay = inf: must be a finite number, 0 or greater"
    );
    assert_eq!(
        refused(TrainingOptions {
            learning_rate: 0.0,
            ..d()
        }),
        "option learning_rate = 0: must be a finite number greater than 0"
    );
    assert!(TrainingOptions {
        learning_rate: f64::NAN,
        ..d()
    }
    .validate()
    .is_err());
    assert!(TrainingOptions {
        learning_rate: f64::INFINITY,
        ..d()
    }
    .validate()
    .is_err());
    assert_eq!(
        refused(TrainingOptions {
            batch_size: Some(BatchSize::Rows(0)),
            ..d()
        }),
        "option batch_size = 0: must be at least 1"
    );
    assert_eq!(
        refused(TrainingOptions {
            early_stopping: Some(EarlyStopping {
                patience: 0,
                min_improvement: 0.0
            }),
            ..d()
        }),
        "option patience = 0: must be at least 1"
    );
    assert_eq!(
        refused(TrainingOptions {
            early_stopping: Some(EarlyStopping {
                patience: 3,
                min_improvement: -0.5
            }),
            ..d()
        }),
        "option min_improvement = -0.5: must be a finite number, 0 or greater"
    );
    // Schedules built directly (not parsed) are checked too.
    for (schedule, why) in [
        (
            Schedule::Step {
                every: 0,
                factor: 0.5,
            },
            "EVERY must be at least 1",
        ),
        (
            Schedule::Step {
                every: 5,
                factor: 0.0,
            },
            "FACTOR must be in (0, 1]",
        ),
        (
            Schedule::Step {
                every: 5,
                factor: 1.5,
            },
            "FACTOR must be in (0, 1]",
        ),
        (
            Schedule::Exponential { gamma: 0.0 },
            "GAMMA must be in (0, 1]",
        ),
        (
            Schedule::Exponential { gamma: 1.01 },
            "GAMMA must be in (0, 1]",
        ),
        (
            Schedule::Cosine { min_rate: -0.001 },
            "MIN must be a finite number, 0 or greater",
        ),
        (
            Schedule::Cosine { min_rate: 0.5 },
            "MIN must not exceed the learning rate (0.01)",
        ),
    ] {
        let message = refused(TrainingOptions { schedule, ..d() });
        assert_eq!(message, format!("option schedule = {schedule}: {why}"));
    }
    for optimiser in [
        Optimiser::Momentum { mu: -0.1 },
        Optimiser::Momentum { mu: 1.0 },
        Optimiser::Nesterov { mu: 1.0 },
        Optimiser::Adam {
            beta1: 1.0,
            beta2: 0.999,
            epsilon: 1e-8,
        },
        Optimiser::Adam {
            beta1: 0.9,
            beta2: -0.1,
            epsilon: 1e-8,
        },
        Optimiser::Adam {
            beta1: 0.9,
            beta2: 0.999,
            epsilon: 0.0,
        },
        Optimiser::Adam {
            beta1: 0.9,
            beta2: 0.999,
            epsilon: f64::INFINITY,
        },
    ] {
        assert!(
            TrainingOptions { optimiser, ..d() }.validate().is_err(),
            "{optimiser} was accepted"
        );
    }
    // The edges that are allowed.
    for ok in [
        TrainingOptions {
            weight_decay: 0.0,
            l1_penalty: 0.0,
            ..d()
        },
        TrainingOptions {
            schedule: Schedule::Step {
                every: 1,
                factor: 1.0,
            },
            ..d()
        },
        TrainingOptions {
            schedule: Schedule::Exponential { gamma: 1.0 },
            ..d()
        },
        TrainingOptions {
            schedule: Schedule::Cosine { min_rate: 0.01 },
            ..d()
        },
        TrainingOptions {
            schedule: Schedule::Cosine { min_rate: 0.0 },
            ..d()
        },
        TrainingOptions {
            optimiser: Optimiser::Momentum { mu: 0.0 },
            ..d()
        },
        TrainingOptions {
            early_stopping: Some(EarlyStopping {
                patience: 1,
                min_improvement: 0.0,
            }),
            ..d()
        },
    ] {
        ok.validate().unwrap();
    }
}

// The validation loss is the mean over validation rows of the per-row loss
// summed over outputs: one input, two outputs with weights (1, 2) and no
// bias; rows x = 1 and x = 2 with targets 0 give half squared errors
// (1 + 4) / 2 = 2.5 and (4 + 16) / 2 = 10, mean 6.25 (worked by hand). The
// training rows are zeros with target 0, so nothing moves.
#[test]
fn the_validation_loss_is_the_mean_over_rows() {
    let mut net = Network::from_layers(
        vec![Layer {
            weights: array![[1.0, 2.0]],
            biases: Array1::zeros(2),
        }],
        Activation::Identity,
        Head::Identity,
    )
    .unwrap();
    let (x, y) = (Array2::zeros((2, 1)), Array2::zeros((2, 2)));
    let (vx, vy) = (array![[1.0], [2.0]], Array2::zeros((2, 2)));
    let options = TrainingOptions {
        early_stopping: patience(3),
        ..plain(Optimiser::Sgd, 0.1, 2)
    };
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        Some((vx.view(), vy.view())),
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    assert_eq!(report.validation_losses(), vec![6.25, 6.25]);
    assert_eq!(report.best_validation_loss, Some(6.25));
    assert_eq!(report.best_epoch, 1);
    // A validation loss that overflows is divergence, in the epoch it happens.
    let (vx, vy) = (array![[1e200], [0.0]], Array2::zeros((2, 2)));
    let err = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        Some((vx.view(), vy.view())),
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap_err();
    assert!(
        matches!(err.kind(), ErrorKind::Diverged { epoch: 1, .. }),
        "{err:?}"
    );
}

// The validation accuracy is the share of validation rows whose class is
// right, and the observer hears each epoch numbered from 1 with the
// history's losses. A logistic unit with weight 1 and bias 0 on training
// rows x = 0 with targets 1 and 0 (mean gradient zero: nothing moves);
// validation rows x = 1, 2, -1, 3 with targets 1, 0, 0, 1 are classed
// 1, 1, 0, 1 (output at least 0.5 when x >= 0): 3 of 4 right, 0.75 (by
// hand).
#[test]
fn validation_accuracy_and_the_observer_by_hand() {
    use crate::observe::{Event, Observer};
    use std::sync::{Arc, Mutex};
    let mut net = Network::from_layers(
        vec![Layer {
            weights: array![[1.0]],
            biases: Array1::zeros(1),
        }],
        Activation::Identity,
        Head::Logistic,
    )
    .unwrap();
    let heard = Arc::new(Mutex::new(Vec::new()));
    let sink = heard.clone();
    let options = TrainingOptions {
        observer: Observer::new(move |e| {
            if let Event::Epoch { .. } = e {
                sink.lock().unwrap().push(e.clone());
            }
        }),
        ..plain(Optimiser::Sgd, 0.5, 3)
    };
    let (x, y) = (array![[0.0], [0.0]], array![[1.0], [0.0]]);
    let (vx, vy) = (
        array![[1.0], [2.0], [-1.0], [3.0]],
        array![[1.0], [0.0], [0.0], [1.0]],
    );
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        Some((vx.view(), vy.view())),
        &options,
        &mut crate::seeded_rng(1),
    )
    .unwrap();
    assert_eq!(weights_of(&net), [1.0]);
    let accuracy: Vec<Option<f64>> = report
        .history
        .iter()
        .map(|e| e.validation_accuracy)
        .collect();
    assert_eq!(accuracy, [Some(0.75); 3]);
    let heard = heard.lock().unwrap();
    let expected: Vec<Event> = report
        .history
        .iter()
        .map(|e| Event::Epoch {
            fold: None,
            restart: 0,
            epoch: e.epoch,
            epochs: 3,
            training_loss: e.training_loss,
            validation_loss: e.validation_loss,
        })
        .collect();
    assert_eq!(*heard, expected);
    let epochs: Vec<usize> = heard
        .iter()
        .map(|e| match e {
            Event::Epoch { epoch, .. } => *epoch,
            _ => unreachable!(),
        })
        .collect();
    assert_eq!(epochs, [1, 2, 3]);
}
