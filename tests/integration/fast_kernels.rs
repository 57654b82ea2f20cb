//! The fast mode checked by value where it runs other code than the portable
//! mode (issue 19): a network whose products reach the size where the fast
//! mode hands them to another kernel (2^20 multiply-adds; a batch of 128
//! rows into a 128-64-1 network gives exactly that in the first layer's
//! forward product, weight gradient and back-propagated error).
//!
//! Both modes compute the same sums in a different order (and the fast mode
//! with fused multiply-add where the CPU has it), so they agree to rounding:
//! each sum of 128 products of terms below 1 in size is within 128 u
//! (Higham, "Accuracy and Stability of Numerical Algorithms", 2002, eq. 3.5;
//! u = 2^-53), about 1.4e-14, relative to the sum of the terms' sizes.
//! Through three epochs of training those differences grow, but stay below
//! the tolerances stated beside each check (set well above rounding and far
//! below what a sign, scale or indexing error in a kernel produces).

use ndarray::Array2;
use stratanet::network::{Activation, Arithmetic, Head, Init, Network, Precision};
use stratanet::prelude::*;
use stratanet::rng::uniform;
use stratanet::train::{mean_loss, train_arrays, BatchSize, Loss, Optimiser, TrainingOptions};

const ROWS: usize = 256;

fn table() -> (Array2<f64>, Array2<f64>) {
    let mut rng = seeded_rng(19);
    let x = Array2::from_shape_fn((ROWS, 128), |_| uniform(&mut rng, -1.0, 1.0));
    let y = Array2::from_shape_fn((ROWS, 1), |(i, _)| {
        f64::from(u8::from(x[[i, 0]] - x[[i, 1]] + 0.5 * x[[i, 2]] > 0.0))
    });
    (x, y)
}

fn network(precision: Precision) -> Network {
    Network::new(
        &[128, 64, 1],
        Activation::Tanh,
        Head::Logistic,
        Init::Auto,
        &mut seeded_rng(3),
    )
    .unwrap()
    .with_precision(precision)
}

fn options(arithmetic: Arithmetic, epochs: usize, optimiser: Optimiser) -> TrainingOptions {
    TrainingOptions {
        epochs,
        batch_size: Some(BatchSize::Rows(128)),
        learning_rate: 0.05,
        optimiser,
        early_stopping: None,
        shuffle: false,
        arithmetic,
        ..Default::default()
    }
}

fn flat(net: &Network) -> Vec<f64> {
    net.layers()
        .iter()
        .flat_map(|l| {
            l.weights
                .iter()
                .chain(l.biases.iter())
                .copied()
                .collect::<Vec<_>>()
        })
        .collect()
}

fn largest_difference(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q).abs())
        .fold(0.0, f64::max)
}

/// Trains a copy of the network and returns it with its training losses.
fn run(precision: Precision, options: &TrainingOptions) -> (Network, Vec<f64>) {
    let (x, y) = table();
    let mut net = network(precision);
    let report = train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        options,
        &mut seeded_rng(7),
    )
    .unwrap();
    (net, report.training_losses())
}

// One plain descent step on one batch of 128 rows (the first 128 of the
// table) moves each weight by -eta g, so (w_0 - w_1) / eta is the gradient
// the fast kernels computed. The central difference of the mean loss
// (computed by the portable forward pass) checks it (gradient checking by
// central differences: Bishop, "Neural Networks for Pattern Recognition",
// 1995, section 4.8.4).
#[test]
fn the_fast_gradient_agrees_with_central_differences() {
    let (x, y) = table();
    let (x, y) = (
        x.slice(ndarray::s![..128, ..]).to_owned(),
        y.slice(ndarray::s![..128, ..]).to_owned(),
    );
    let start = network(Precision::F64);
    let mut net = start.clone();
    let eta = 1.0;
    let opts = TrainingOptions {
        learning_rate: eta,
        ..options(Arithmetic::Fast, 1, Optimiser::Sgd)
    };
    train_arrays(
        &mut net,
        x.view(),
        y.view(),
        None,
        &opts,
        &mut seeded_rng(7),
    )
    .unwrap();
    let h = 1e-5;
    let loss_with = |layer: usize, i: usize, j: usize, delta: f64| {
        let mut layers = start.layers().to_vec();
        layers[layer].weights[[i, j]] += delta;
        let n = Network::from_layers(layers, Activation::Tanh, Head::Logistic).unwrap();
        mean_loss(&n, x.view(), y.view(), Loss::CrossEntropy).unwrap()
    };
    let mut checked = 0;
    for &(layer, i, j) in &[
        (0, 0, 0),
        (0, 1, 5),
        (0, 2, 63),
        (0, 127, 31),
        (0, 64, 10),
        (1, 0, 0),
        (1, 17, 0),
        (1, 63, 0),
    ] {
        let fast =
            (start.layers()[layer].weights[[i, j]] - net.layers()[layer].weights[[i, j]]) / eta;
        let numeric = (loss_with(layer, i, j, h) - loss_with(layer, i, j, -h)) / (2.0 * h);
        let relative = (fast - numeric).abs() / fast.abs().max(numeric.abs()).max(1e-8);
        // Central differences with h = 1e-5 are good to about 1e-8 relative
        // here; 1e-5 leaves room and still catches any sign or scale error.
        assert!(
            relative < 1e-5,
            "layer {layer} weight ({i}, {j}): fast {fast:e}, numeric {numeric:e}"
        );
        checked += 1;
    }
    assert_eq!(checked, 8);
}

// The same training in both modes, f64: the losses and weights agree to
// 1e-10.
#[test]
fn fast_training_follows_portable_training_in_f64() {
    for optimiser in [Optimiser::Sgd, Optimiser::ADAM] {
        let (fast, fast_losses) = run(Precision::F64, &options(Arithmetic::Fast, 3, optimiser));
        let (portable, portable_losses) =
            run(Precision::F64, &options(Arithmetic::Portable, 3, optimiser));
        let d = largest_difference(&fast_losses, &portable_losses);
        assert!(d < 1e-10, "{optimiser}: losses differ by {d:e}");
        let d = largest_difference(&flat(&fast), &flat(&portable));
        assert!(d < 1e-10, "{optimiser}: weights differ by {d:e}");
        // Training did something.
        assert!(fast_losses[2] < fast_losses[0] - 1e-3, "{fast_losses:?}");
    }
}

// In f32 (u = 2^-24, about 6e-8) the modes agree to 1e-4, and the fast run
// follows the f64 run to 1e-3.
#[test]
fn fast_training_follows_portable_training_in_f32() {
    let o = |a| options(a, 3, Optimiser::Sgd);
    let (fast, fast_losses) = run(Precision::F32, &o(Arithmetic::Fast));
    let (portable, portable_losses) = run(Precision::F32, &o(Arithmetic::Portable));
    let (reference, reference_losses) = run(Precision::F64, &o(Arithmetic::Portable));
    let d = largest_difference(&fast_losses, &portable_losses);
    assert!(d < 1e-4, "losses differ by {d:e}");
    assert!(largest_difference(&flat(&fast), &flat(&portable)) < 1e-4);
    assert!(largest_difference(&fast_losses, &reference_losses) < 1e-3);
    assert!(largest_difference(&flat(&fast), &flat(&reference)) < 1e-3);
}
