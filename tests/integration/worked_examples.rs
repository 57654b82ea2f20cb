//! Published worked examples.

use crate::support::close;
use ndarray::{array, Array2};
use stratanet::data::Scaling;
use stratanet::network::{Activation, Head, Layer, Network};
use stratanet::prelude::*;
use stratanet::train::{mean_loss, train_arrays, Loss};
use stratanet::train::{Optimiser, TrainingOptions};

/// The 2-2-2 network of M. Mazur, "A Step by Step Backpropagation Example"
/// (2015): logistic units, E = sum 1/2 (t - o)^2, one example.
fn mazur_network() -> Network {
    let hidden = Layer {
        // rows = inputs (i1, i2), columns = hidden units (h1, h2): w1, w3 / w2, w4
        weights: array![[0.15, 0.25], [0.20, 0.30]],
        biases: array![0.35, 0.35],
    };
    let output = Layer {
        weights: array![[0.40, 0.50], [0.45, 0.55]],
        biases: array![0.60, 0.60],
    };
    Network::from_layers(vec![hidden, output], Activation::Sigmoid, Head::Logistic).unwrap()
}

fn mazur_data() -> (Array2<f64>, Array2<f64>) {
    (array![[0.05, 0.10]], array![[0.01, 0.99]])
}

fn one_step_options(epochs: usize, train_biases: bool) -> TrainingOptions {
    TrainingOptions {
        epochs,
        batch_size: Some(stratanet::train::BatchSize::Rows(1)),
        learning_rate: 0.5,
        optimiser: Optimiser::Sgd,
        loss: Some(Loss::SquaredError),
        early_stopping: None,
        train_biases,
        ..Default::default()
    }
}

// Mazur (2015), forward pass: out_h1, out_h2 = 0.593269992, 0.596884378;
// out_o1, out_o2 = 0.751365070, 0.772928465; E = 0.298371109.
#[test]
fn mazur_forward_pass() {
    let net = mazur_network();
    let (x, y) = mazur_data();
    let h = net.hidden_activations(x.view(), 1).unwrap();
    close(h[[0, 0]], 0.593269992, 1e-9, "out_h1");
    close(h[[0, 1]], 0.596884378, 1e-9, "out_h2");
    let o = net.predict(x.view()).unwrap();
    close(o[[0, 0]], 0.751365070, 1e-9, "out_o1");
    close(o[[0, 1]], 0.772928465, 1e-9, "out_o2");
    let e = mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
    close(e, 0.298371109, 1e-9, "E before the step");
}

// Mazur (2015), one step with learning rate 0.5, biases fixed as published:
// dE/dw5 = 0.082167041; w5..w8 = 0.358916480, 0.408666186, 0.511301270,
// 0.561370121; w1..w4 = 0.149780716, 0.199561432, 0.249751144, 0.299502287;
// E after = 0.2910277737 (recomputed; the post prints 0.291027924, checked loosely).
#[test]
fn mazur_one_step() {
    let mut net = mazur_network();
    let (x, y) = mazur_data();
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &one_step_options(1, false),
        &mut seeded_rng(0),
    )
    .unwrap();
    let w_out = &net.layers()[1].weights;
    let w_hid = &net.layers()[0].weights;
    close((0.40 - w_out[[0, 0]]) / 0.5, 0.082167041, 1e-9, "dE/dw5");
    close(w_out[[0, 0]], 0.358916480, 1e-9, "w5");
    close(w_out[[1, 0]], 0.408666186, 1e-9, "w6");
    close(w_out[[0, 1]], 0.511301270, 1e-9, "w7");
    close(w_out[[1, 1]], 0.561370121, 1e-9, "w8");
    close(w_hid[[0, 0]], 0.149780716, 1e-9, "w1");
    close(w_hid[[1, 0]], 0.199561432, 1e-9, "w2");
    close(w_hid[[0, 1]], 0.249751144, 1e-9, "w3");
    close(w_hid[[1, 1]], 0.299502287, 1e-9, "w4");
    assert_eq!(
        net.layers()[0].biases,
        array![0.35, 0.35],
        "biases stay fixed"
    );
    let e = mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
    close(e, 0.2910277737, 1e-10, "E after one step (recomputed)");
    close(e, 0.291027924, 1e-6, "E after one step (as printed)");
}

// Mazur (2015) output deltas 0.138498562, -0.038098237: with biases trained,
// each output bias moves by -0.5 * delta. E after one step with (per-unit)
// biases updated: 0.2804714468 (not in the post: recomputed in double
// precision from its setup, outside this crate).
#[test]
fn mazur_one_step_with_biases() {
    let mut net = mazur_network();
    let (x, y) = mazur_data();
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &one_step_options(1, true),
        &mut seeded_rng(0),
    )
    .unwrap();
    let b = &net.layers()[1].biases;
    close((0.60 - b[0]) / 0.5, 0.138498562, 1e-9, "delta o1");
    close((0.60 - b[1]) / 0.5, -0.038098237, 1e-9, "delta o2");
    let e = mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
    close(e, 0.2804714468, 1e-10, "E after one step, biases updated");
}

// Mazur (2015): after 10,000 steps (biases fixed) E = 3.5101878e-5
// (recomputed; the post prints 3.51085e-5, the value after 9,999 steps) and
// the outputs are 0.015913620, 0.984064274.
#[test]
fn mazur_ten_thousand_steps() {
    let mut net = mazur_network();
    let (x, y) = mazur_data();
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &one_step_options(10_000, false),
        &mut seeded_rng(0),
    )
    .unwrap();
    assert_eq!(report.epochs_run, 10_000);
    let e = mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
    close(e, 3.5101878e-5, 1e-12, "E after 10,000 steps");
    let o = net.predict(x.view()).unwrap();
    close(o[[0, 0]], 0.015913620, 1e-9, "o1 after 10,000 steps");
    close(o[[0, 1]], 0.984064274, 1e-9, "o2 after 10,000 steps");
    // The running training loss of epoch 1 is the loss before the first update.
    close(
        report.history[0].training_loss,
        0.298371109,
        1e-9,
        "epoch 1 training loss",
    );
}

const TEMPERATURE: [f64; 23] = [
    66.0, 70.0, 69.0, 68.0, 67.0, 72.0, 73.0, 70.0, 57.0, 63.0, 70.0, 78.0, 67.0, 53.0, 67.0, 75.0,
    70.0, 81.0, 76.0, 79.0, 75.0, 76.0, 58.0,
];
const DISTRESS: [usize; 23] = [
    0, 1, 0, 0, 0, 0, 0, 0, 1, 1, 1, 0, 0, 1, 0, 0, 0, 0, 0, 0, 1, 0, 1,
];

fn oring() -> Dataset {
    let x = Array2::from_shape_vec((23, 1), TEMPERATURE.to_vec()).unwrap();
    Dataset::classification(x, DISTRESS.to_vec(), vec!["none".into(), "distress".into()])
        .unwrap()
        .with_feature_names(&["temperature_f"])
        .unwrap()
}

fn converge_logistic_unit(
    scaling: Scaling,
    epochs: usize,
    rate: f64,
    momentum: f64,
) -> stratanet::Fitted {
    let options = FitOptions {
        hidden_layers: vec![],
        scaling,
        validation_share: Some(0.0),
        training: TrainingOptions {
            epochs,
            batch_size: Some(stratanet::train::BatchSize::Rows(23)),
            learning_rate: rate,
            optimiser: Optimiser::Nesterov { mu: momentum },
            early_stopping: None,
            shuffle: false,
            ..Default::default()
        },
        ..Default::default()
    };
    fit(&oring(), &options, &mut seeded_rng(1986)).unwrap()
}

// Space Shuttle O-ring data (Dalal, Fowlkes & Hoadley, JASA 1989): maximum
// likelihood logistic regression of distress on temperature; standardised
// temperature (mean 69.5652173913, population SD 6.9019599419): intercept
// -1.107550, slope -1.602378; mean log-loss 0.441635.
#[test]
fn logistic_unit_is_logistic_regression_standardised() {
    let fitted = converge_logistic_unit(Scaling::Standardise, 3000, 0.5, 0.9);
    let layer = &fitted.model().network().layers()[0];
    close(
        fitted.model().scaler().offsets()[0],
        69.5652173913,
        1e-9,
        "mean temperature",
    );
    close(
        fitted.model().scaler().scales()[0],
        6.9019599419,
        1e-9,
        "population SD",
    );
    close(layer.biases[0], -1.107550, 1e-4, "intercept (standardised)");
    close(
        layer.weights[[0, 0]],
        -1.602378,
        1e-4,
        "slope (standardised)",
    );
    let x = fitted.model().scaler().scaled(oring().x()).unwrap();
    let y = Array2::from_shape_fn((23, 1), |(i, _)| DISTRESS[i] as f64);
    let loss = mean_loss(
        fitted.model().network(),
        x.view(),
        y.view(),
        Loss::CrossEntropy,
    )
    .unwrap();
    close(loss, 0.441635, 1e-6, "mean log-loss");
}

// Same source, raw temperature in degrees F: intercept 15.042902, slope
// -0.232163 per degree (log-likelihood -10.157596).
#[test]
fn logistic_unit_is_logistic_regression_raw() {
    // Raw temperatures make the problem ill-conditioned (condition number
    // near 5e5), so descent needs strong momentum and many epochs.
    let fitted = converge_logistic_unit(Scaling::None, 200_000, 0.001, 0.99);
    let layer = &fitted.model().network().layers()[0];
    close(layer.biases[0], 15.042902, 1e-4, "intercept (raw)");
    close(layer.weights[[0, 0]], -0.232163, 1e-4, "slope (raw)");
}
