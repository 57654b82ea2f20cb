//! Both arithmetic modes by value: products wide enough to be split across
//! threads against the naive loop, in f32 and f64; a gradient check and a
//! training run in the fast mode against the portable one; and the same
//! bits on 1, 2 and 3 threads for products and training with wide layers.

use ndarray::Array2;
use stratanet::network::{matrix_product_f32, matrix_product_f64, Arithmetic};
use stratanet::network::{Activation, Head, Init, Network, Precision};
use stratanet::prelude::*;
use stratanet::rng::uniform;
use stratanet::train::{check_gradients_in, train_arrays, BatchSize, Loss, Optimiser};
use stratanet::train::{TrainingOptions, TrainingReport};

fn pool(threads: usize) -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .unwrap()
}

/// Products at and above the size the engine splits across threads (2^20
/// multiply-adds), with a narrow output (the transposed path) and odd
/// sizes (partial tiles).
const WIDE: [(usize, usize, usize); 4] = [
    (128, 256, 784),
    (1000, 10, 300),
    (200, 130, 67),
    (64, 128, 128),
];

/// The exact product's bound for any summation of `p` terms in one order:
/// `|computed - exact| <= gamma_p * sum_q |a_q b_q|`, `gamma_p = p u / (1 - p u)`
/// with `u` the unit roundoff; it holds with or without fused multiply-add
/// (N. J. Higham, "Accuracy and Stability of Numerical Algorithms", 2nd
/// ed., SIAM 2002, section 3.1, equation 3.5).
fn gamma(p: usize, u: f64) -> f64 {
    p as f64 * u / (1.0 - p as f64 * u)
}

/// `(sum_q a[r][q] b[q][j] + bias[j], sum_q |a[r][q] b[q][j]|)` for each
/// output, summed in f64 in the documented order (exact enough for f32
/// inputs: the error of an f64 sum of 784 f32 products is far below an f32
/// ulp).
fn reference(
    (m, n, p): (usize, usize, usize),
    a: &[f64],
    b: &[f64],
    bias: &[f64],
) -> (Vec<f64>, Vec<f64>) {
    let mut out = vec![0.0; m * n];
    let mut size = vec![0.0; m * n];
    for r in 0..m {
        for j in 0..n {
            let (mut acc, mut abs) = (0.0, 0.0);
            for q in 0..p {
                acc += a[r * p + q] * b[q * n + j];
                abs += (a[r * p + q] * b[q * n + j]).abs();
            }
            out[r * n + j] = acc + bias[j];
            size[r * n + j] = abs + bias[j].abs();
        }
    }
    (out, size)
}

fn operands(seed: u64, (m, n, p): (usize, usize, usize)) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut rng = seeded_rng(seed);
    let mut draw = |len: usize| -> Vec<f64> {
        (0..len)
            .map(|_| uniform(&mut rng, -1.0, 1.0) as f32 as f64)
            .collect()
    };
    (draw(m * p), draw(p * n), draw(n))
}

#[test]
fn wide_products_in_f64_the_portable_mode_is_the_naive_loop_and_fast_is_within_the_bound() {
    for (i, &shape) in WIDE.iter().enumerate() {
        let (m, n, p) = shape;
        let (a, b, bias) = operands(i as u64, shape);
        let (naive, size) = reference(shape, &a, &b, &bias);
        let mut by_threads = Vec::new();
        for threads in [1, 2, 3] {
            let mut portable = vec![0.0; m * n];
            let mut fast = vec![0.0; m * n];
            pool(threads).install(|| {
                matrix_product_f64(
                    Arithmetic::Portable,
                    shape,
                    &a,
                    &b,
                    Some(&bias),
                    &mut portable,
                );
                matrix_product_f64(Arithmetic::Fast, shape, &a, &b, Some(&bias), &mut fast);
            });
            // The reference sums in the documented order without fused
            // multiply-add: the portable mode is it, bit for bit.
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&portable), bits(&naive), "{shape:?}");
            // Both are within the bound of the exact value, so within twice
            // it of each other (plus the bias's rounding).
            let tolerance = 2.0 * gamma(p + 1, f64::EPSILON / 2.0);
            for ((f, q), s) in fast.iter().zip(&portable).zip(&size) {
                assert!((f - q).abs() <= tolerance * s, "{shape:?}: {f} vs {q}");
            }
            by_threads.push((bits(&portable), bits(&fast)));
        }
        assert!(
            by_threads.windows(2).all(|w| w[0] == w[1]),
            "{shape:?}: the thread count changed a bit"
        );
    }
}

#[test]
fn wide_products_in_f32_both_modes_are_within_the_bound_and_portable_is_the_naive_loop() {
    for (i, &shape) in WIDE.iter().enumerate() {
        let (m, n, p) = shape;
        let (a, b, bias) = operands(10 + i as u64, shape);
        let (exact, size) = reference(shape, &a, &b, &bias);
        let (a32, b32, bias32): (Vec<f32>, Vec<f32>, Vec<f32>) = (
            a.iter().map(|&v| v as f32).collect(),
            b.iter().map(|&v| v as f32).collect(),
            bias.iter().map(|&v| v as f32).collect(),
        );
        // The documented loop in f32 itself.
        let mut naive = vec![0f32; m * n];
        for r in 0..m {
            for j in 0..n {
                let mut acc = 0f32;
                for q in 0..p {
                    acc += a32[r * p + q] * b32[q * n + j];
                }
                naive[r * n + j] = acc + bias32[j];
            }
        }
        let mut by_threads = Vec::new();
        for threads in [1, 2, 3] {
            let mut portable = vec![0f32; m * n];
            let mut fast = vec![0f32; m * n];
            pool(threads).install(|| {
                matrix_product_f32(
                    Arithmetic::Portable,
                    shape,
                    &a32,
                    &b32,
                    Some(&bias32),
                    &mut portable,
                );
                matrix_product_f32(
                    Arithmetic::Fast,
                    shape,
                    &a32,
                    &b32,
                    Some(&bias32),
                    &mut fast,
                );
            });
            let bits = |v: &[f32]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&portable), bits(&naive), "{shape:?}");
            let tolerance = gamma(p + 1, f32::EPSILON as f64 / 2.0);
            for (((&f, &q), &e), &s) in fast.iter().zip(&portable).zip(&exact).zip(&size) {
                assert!(
                    (f as f64 - e).abs() <= tolerance * s,
                    "{shape:?}: fast {f} vs {e}"
                );
                assert!(
                    (q as f64 - e).abs() <= tolerance * s,
                    "{shape:?}: portable {q} vs {e}"
                );
            }
            by_threads.push((bits(&portable), bits(&fast)));
        }
        assert!(
            by_threads.windows(2).all(|w| w[0] == w[1]),
            "{shape:?}: the thread count changed a bit"
        );
    }
}

/// Rows of a smooth two-class problem with `d` features.
fn table(seed: u64, rows: usize, d: usize) -> (Array2<f64>, Array2<f64>) {
    let mut rng = seeded_rng(seed);
    let x = Array2::from_shape_fn((rows, d), |_| uniform(&mut rng, -1.0, 1.0));
    let y = Array2::from_shape_fn((rows, 2), |(i, k)| {
        let s: f64 = x.row(i).iter().take(8).sum();
        f64::from(usize::from(s > 0.0) == k)
    });
    (x, y)
}

// The fast mode's gradients agree with finite differences as well as the
// portable mode's (the threshold of `check_gradients`' documentation).
#[test]
fn fast_mode_gradients_pass_the_gradient_check() {
    let (x, y) = table(3, 50, 24);
    let net = Network::new(
        &[24, 40, 2],
        Activation::Tanh,
        Head::Softmax,
        Init::Auto,
        &mut seeded_rng(4),
    )
    .unwrap();
    for arithmetic in [Arithmetic::Portable, Arithmetic::Fast] {
        let check = check_gradients_in(
            &net,
            x.view(),
            y.view(),
            Loss::CrossEntropy,
            1e-3,
            arithmetic,
        )
        .unwrap();
        assert!(check.max_relative_error < 1e-7, "{arithmetic}: {check:?}");
    }
}

fn train_wide(
    arithmetic: Arithmetic,
    precision: Precision,
    threads: usize,
) -> (Network, TrainingReport) {
    // Batches of 64 rows through a 128 x 128 layer: 2^20 multiply-adds, so
    // the forward and both gradient products are split across threads.
    let (x, y) = table(5, 256, 128);
    let mut net = Network::new(
        &[128, 128, 2],
        Activation::Relu,
        Head::Softmax,
        Init::Auto,
        &mut seeded_rng(6),
    )
    .unwrap()
    .with_precision(precision);
    let options = TrainingOptions {
        epochs: 4,
        batch_size: Some(BatchSize::Rows(64)),
        learning_rate: 0.05,
        optimiser: Optimiser::Sgd,
        early_stopping: None,
        arithmetic,
        ..Default::default()
    };
    let report = pool(threads)
        .install(|| {
            train_arrays(
                &mut net,
                x.view(),
                y.view(),
                None,
                &options,
                &mut seeded_rng(7),
            )
        })
        .unwrap();
    (net, report)
}

fn weight_bits(net: &Network) -> Vec<u64> {
    net.layers()
        .iter()
        .flat_map(|l| l.weights.iter().chain(l.biases.iter()).map(|v| v.to_bits()))
        .collect()
}

#[test]
fn training_with_wide_layers_gives_the_same_bits_on_1_2_and_3_threads() {
    for arithmetic in [Arithmetic::Portable, Arithmetic::Fast] {
        for precision in [Precision::F64, Precision::F32] {
            let runs: Vec<_> = [1, 2, 3]
                .iter()
                .map(|&t| train_wide(arithmetic, precision, t))
                .collect();
            for (net, report) in &runs[1..] {
                assert_eq!(
                    weight_bits(net),
                    weight_bits(&runs[0].0),
                    "{arithmetic} {precision}"
                );
                assert_eq!(report, &runs[0].1);
            }
        }
    }
}

// Fast against portable: the same training, rounded differently. Stated
// tolerance: in f64 the per-epoch mean losses agree to 1e-9 relative and
// every weight to 1e-7 absolute; in f32 the losses to 1e-3 relative
// (rounding differences of 2^-24 grow through 16 updates; common practice,
// no source, as in the benchmark's equal-work check).
#[test]
fn fast_training_agrees_with_portable_training() {
    for (precision, loss_tol, weight_tol) in
        [(Precision::F64, 1e-9, 1e-7), (Precision::F32, 1e-3, 1e-3)]
    {
        let (fast, fr) = train_wide(Arithmetic::Fast, precision, 2);
        let (portable, pr) = train_wide(Arithmetic::Portable, precision, 2);
        for (f, p) in fr.training_losses().iter().zip(pr.training_losses()) {
            assert!(
                (f - p).abs() <= loss_tol * p.abs(),
                "{precision}: {f} vs {p}"
            );
        }
        for (lf, lp) in fast.layers().iter().zip(portable.layers()) {
            for (f, p) in lf.weights.iter().zip(lp.weights.iter()) {
                assert!((f - p).abs() <= weight_tol, "{precision}: {f} vs {p}");
            }
        }
    }
}
