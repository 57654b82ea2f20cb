//! Classic small problems with known answers.

use crate::support::close;
use ndarray::{array, Array2};
use stratanet::network::{Activation, Head, Init, Network};
use stratanet::prelude::*;
use stratanet::train::{mean_loss, train_arrays, Loss};
use stratanet::train::{Optimiser, TrainingOptions};

fn xor() -> (Array2<f64>, Array2<f64>) {
    (
        array![[0.0, 0.0], [0.0, 1.0], [1.0, 0.0], [1.0, 1.0]],
        array![[0.0], [1.0], [1.0], [0.0]],
    )
}

fn full_batch(epochs: usize, rate: f64, loss: Loss) -> TrainingOptions {
    TrainingOptions {
        epochs,
        batch_size: Some(stratanet::train::BatchSize::Rows(4)),
        learning_rate: rate,
        optimiser: Optimiser::Sgd,
        loss: Some(loss),
        early_stopping: None,
        shuffle: false,
        ..Default::default()
    }
}

// Minsky & Papert, "Perceptrons" (1969): one logistic unit cannot separate
// XOR. With squared error its best mean error is exactly 0.25 *per output
// squared* (all outputs 0.5); our loss is 1/2 (t - o)^2 per row, so the floor
// is 0.125. With cross-entropy the optimum is w = b = 0, mean loss ln 2.
// (M. Minsky & S. Papert, "Perceptrons", 1969, for the impossibility; the
// floors follow by hand from the symmetry of the four points: common
// practice, no source.)
#[test]
fn a_single_unit_cannot_fit_xor() {
    let (x, y) = xor();
    for seed in 0..5 {
        let mut rng = seeded_rng(seed);
        let mut net = Network::new(
            &[2, 1],
            Activation::Identity,
            Head::Logistic,
            Init::SmallUniform { range: 1.0 },
            &mut rng,
        )
        .unwrap();
        train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &full_batch(20_000, 0.5, Loss::SquaredError),
            &mut rng,
        )
        .unwrap();
        let e = mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
        assert!(e >= 0.125 - 1e-12, "squared error {e} below the floor");
        // Mean squared error (without the 1/2) tends to the floor 0.25.
        close(
            2.0 * e,
            0.25,
            1e-3,
            "mean squared error of the best single unit",
        );
        let classes = net.predict_classes(x.view()).unwrap();
        assert_ne!(
            classes,
            vec![0, 1, 1, 0],
            "a single unit must not classify XOR"
        );

        let mut net = Network::new(
            &[2, 1],
            Activation::Identity,
            Head::Logistic,
            Init::SmallUniform { range: 1.0 },
            &mut rng,
        )
        .unwrap();
        train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &full_batch(20_000, 0.5, Loss::CrossEntropy),
            &mut rng,
        )
        .unwrap();
        let e = mean_loss(&net, x.view(), y.view(), Loss::CrossEntropy).unwrap();
        close(
            e,
            std::f64::consts::LN_2,
            1e-6,
            "cross-entropy optimum ln 2",
        );
        let layer = &net.layers()[0];
        for v in layer.weights.iter().chain(layer.biases.iter()) {
            close(*v, 0.0, 1e-3, "weights at the optimum");
        }
    }
}

const PINNED_XOR_SEED: u64 = 1;

// A 2-2-1 logistic network fits XOR from a pinned seed (that two hidden
// units suffice is common practice, no source). Some seeds stall: in an
// independent check outside this crate, 14 of 20 reached squared error below
// 0.01 with full-batch descent, learning rate 0.5, 20,000 epochs, start
// U(-1, 1).
#[test]
fn a_two_layer_network_fits_xor() {
    let (x, y) = xor();
    let mut fitted = 0;
    for seed in 0..20 {
        let mut rng = seeded_rng(seed);
        let mut net = Network::new(
            &[2, 2, 1],
            Activation::Sigmoid,
            Head::Logistic,
            Init::SmallUniform { range: 1.0 },
            &mut rng,
        )
        .unwrap();
        train_arrays(
            &mut net,
            x.view(),
            y.view(),
            None,
            &full_batch(20_000, 0.5, Loss::SquaredError),
            &mut rng,
        )
        .unwrap();
        let mse = 2.0 * mean_loss(&net, x.view(), y.view(), Loss::SquaredError).unwrap();
        if mse < 0.01 {
            fitted += 1;
            assert_eq!(net.predict_classes(x.view()).unwrap(), vec![0, 1, 1, 0]);
        }
        if seed == PINNED_XOR_SEED {
            assert!(
                mse < 0.01,
                "seed {seed} is pinned to fit XOR; mean squared error {mse}"
            );
        }
        eprintln!("xor seed {seed}: mean squared error {mse:.6}");
    }
    // Most starts succeed, some stall in a local minimum.
    assert!(
        (10..=20).contains(&fitted),
        "{fitted} of 20 seeds fitted XOR"
    );
    eprintln!("{fitted} of 20 seeds fitted XOR");
}

// OR is linearly separable: a single logistic unit fits it (common practice).
#[test]
fn a_single_unit_fits_or() {
    let x = array![[0.0, 0.0], [0.0, 1.0], [1.0, 0.0], [1.0, 1.0]];
    let y = array![[0.0], [1.0], [1.0], [1.0]];
    let mut rng = seeded_rng(11);
    let mut net = Network::new(
        &[2, 1],
        Activation::Identity,
        Head::Logistic,
        Init::SmallUniform { range: 0.5 },
        &mut rng,
    )
    .unwrap();
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &full_batch(5_000, 0.5, Loss::CrossEntropy),
        &mut rng,
    )
    .unwrap();
    assert_eq!(net.predict_classes(x.view()).unwrap(), vec![0, 1, 1, 1]);
}

// Rumelhart, Hinton & Williams, "Learning internal representations by error
// propagation" (1986): an 8-3-8 network learns to reproduce each one-hot
// input through a 3-unit hidden layer. Checked by arg-max reconstruction of
// all 8 patterns and well-separated hidden codes (not exact hidden values).
#[test]
fn identity_encoder_8_3_8() {
    let x = Array2::from_shape_fn((8, 8), |(i, j)| f64::from(u8::from(i == j)));
    let mut rng = seeded_rng(8);
    let mut net = Network::new(
        &[8, 3, 8],
        Activation::Sigmoid,
        Head::Softmax,
        Init::GlorotUniform,
        &mut rng,
    )
    .unwrap();
    let options = TrainingOptions {
        epochs: 5_000,
        batch_size: Some(stratanet::train::BatchSize::Rows(8)),
        learning_rate: 0.05,
        optimiser: Optimiser::ADAM,
        early_stopping: None,
        ..Default::default()
    };
    train_arrays(&mut net, x.view(), x.view(), None, &options, &mut rng).unwrap();
    assert_eq!(
        net.predict_classes(x.view()).unwrap(),
        (0..8).collect::<Vec<_>>()
    );
    let codes = net.hidden_activations(x.view(), 1).unwrap();
    for i in 0..8 {
        for j in 0..i {
            let d: f64 = (0..3)
                .map(|k| (codes[[i, k]] - codes[[j, k]]).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(
                d > 0.1,
                "hidden codes of patterns {i} and {j} are only {d} apart"
            );
        }
    }
}

// A learning rate far too large makes the loss overflow: training stops with
// an error naming the epoch and suggesting a smaller rate, and no model is
// returned (common practice, no source).
#[test]
fn divergence_is_an_error_naming_the_epoch() {
    let x = Array2::from_shape_fn((40, 2), |(i, j)| (i * (j + 3)) as f64 * 100.0);
    let y = Array2::from_shape_fn((40, 1), |(i, _)| i as f64 * 1e3);
    let mut rng = seeded_rng(1);
    let mut net = Network::new(
        &[2, 4, 1],
        Activation::Relu,
        Head::Identity,
        Init::Auto,
        &mut rng,
    )
    .unwrap();
    let options = TrainingOptions {
        epochs: 100,
        batch_size: Some(stratanet::train::BatchSize::Rows(8)),
        learning_rate: 10.0,
        optimiser: Optimiser::Sgd,
        early_stopping: None,
        ..Default::default()
    };
    let e = train_arrays(&mut net, x.view(), y.view(), None, &options, &mut rng).unwrap_err();
    let text = e.to_string();
    assert!(text.starts_with("training diverged at epoch "), "{text}");
    assert!(text.contains("try a smaller learning_rate"), "{text}");
    assert!(matches!(e.kind(), stratanet::ErrorKind::Diverged { .. }));
}
