//! Do the cross-validation intervals hold their stated 95% coverage?
//!
//! A simulation with a generator whose truth is known exactly: two classes
//! of equal size, each a bivariate normal with identity covariance, means
//! `-m` and `+m` (Bayes error Phi(-|m|) = 0.2). The procedure is a single
//! logistic unit fitted by stratanet (standardised inputs, full batch, no
//! early stopping); it is a linear rule `w x + b >= 0`, whose accuracy on the
//! generator is exact (common practice, no source; a normal linear form):
//!
//! ```text
//! acc(w, b) = 1/2 Phi((w.m + b) / |w|) + 1/2 Phi((w.m - b) / |w|)
//! ```
//! What k-fold cross-validation estimates is the expected accuracy of the
//! procedure fitted on `n (k - 1) / k` rows from the generator (S. Bates, T.
//! Hastie & R. Tibshirani, "Cross-validation: what does it estimate and how
//! well does it do it?", JASA 2023, section 2). That truth is computed by
//! fitting the procedure on many fresh samples of that size and averaging
//! their exact accuracies. Then for each of many simulated tables the 95%
//! interval of 5-fold (and 10 x repeated 5-fold) cross-validated accuracy
//! is computed both ways, and the share of intervals that cover the truth is
//! counted: the corrected interval must land in [0.90, 0.99]; the plain t
//! interval over folds is reported beside it (it does not hold its level,
//! the more so with repeats).
//!
//! Sizes: `STRATANET_COVERAGE_TABLES` tables (200 by default) of 200 rows;
//! the truth from 1,000 fits. A run prints the figures.

use ndarray::Array2;
use stratanet::prelude::*;
use stratanet::rng::{seeded_rng, uniform01};
use stratanet::train::{BatchSize, Optimiser};
use stratanet::validate::{IntervalMethod, Summary};

const ROWS: usize = 200;
const FOLDS: usize = 5;

/// The class means are -M and +M with M along (1, 1) / sqrt(2), |M| = 0.8416
/// (Phi(-0.8416) = 0.2: the Bayes error is 0.2).
const HALF_GAP: f64 = 0.841_621_233_572_914_3;

fn phi(z: f64) -> f64 {
    0.5 * libm::erfc(-z / std::f64::consts::SQRT_2)
}

fn normal<R: rand::RngCore>(rng: &mut R) -> f64 {
    // Box-Muller (G. E. P. Box & M. E. Muller, Ann. Math. Statist. 29, 1958).
    let u1 = uniform01(rng).max(f64::MIN_POSITIVE);
    let u2 = uniform01(rng);
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

fn mean_vector() -> [f64; 2] {
    let c = HALF_GAP / std::f64::consts::SQRT_2;
    [c, c]
}

/// `n` rows, half of each class, from the generator.
fn table<R: rand::RngCore>(n: usize, rng: &mut R) -> Dataset {
    let m = mean_vector();
    let mut x = Array2::zeros((n, 2));
    let mut labels = Vec::with_capacity(n);
    for i in 0..n {
        let class = i % 2;
        let sign = if class == 1 { 1.0 } else { -1.0 };
        for j in 0..2 {
            x[[i, j]] = sign * m[j] + normal(rng);
        }
        labels.push(class);
    }
    Dataset::classification(x, labels, vec!["a".into(), "b".into()]).unwrap()
}

fn options() -> FitOptions {
    FitOptions::default()
        .hidden(&[])
        .early_stopping(None)
        .epochs(60)
        .learning_rate(0.1)
        .batch_size(BatchSize::Full)
        .optimiser(Optimiser::ADAM)
}

/// The exact accuracy of a fitted logistic unit on the generator.
fn exact_accuracy(model: &Model) -> f64 {
    let layer = &model.network().layers()[0];
    let scaler = model.scaler();
    // Back to raw units: score = sum_j w_j (x_j - o_j) / s_j + b.
    let w: Vec<f64> = (0..2)
        .map(|j| layer.weights[[j, 0]] / scaler.scales()[j])
        .collect();
    let b = layer.biases[0]
        - (0..2)
            .map(|j| layer.weights[[j, 0]] * scaler.offsets()[j] / scaler.scales()[j])
            .sum::<f64>();
    let m = mean_vector();
    let norm = (w[0] * w[0] + w[1] * w[1]).sqrt();
    let wm = w[0] * m[0] + w[1] * m[1];
    // Class b (label 1, mean +m) is predicted when the score is >= 0.
    0.5 * phi((wm + b) / norm) + 0.5 * phi((wm - b) / norm)
}

struct Coverage {
    corrected: usize,
    plain: usize,
    width_corrected: f64,
    width_plain: f64,
}

fn cover(truth: f64, tables: usize, repeats: usize, seed: u64) -> Coverage {
    let mut rng = seeded_rng(seed);
    let mut c = Coverage {
        corrected: 0,
        plain: 0,
        width_corrected: 0.0,
        width_plain: 0.0,
    };
    for _ in 0..tables {
        let data = table(ROWS, &mut rng);
        let cv = CvOptions {
            folds: FOLDS,
            repeats,
            ..Default::default()
        };
        let result = cross_validate(&data, &options(), &cv, &mut rng).unwrap();
        let acc = result.metric(Metric::Accuracy).unwrap();
        assert!(matches!(
            acc.summary.method,
            IntervalMethod::CorrectedResampled { .. }
        ));
        let s = &acc.summary;
        c.corrected += usize::from(s.ci_low <= truth && truth <= s.ci_high);
        c.width_corrected += (s.ci_high - s.ci_low) / tables as f64;
        let plain = Summary::from_values(&acc.values).unwrap();
        c.plain += usize::from(plain.ci_low <= truth && truth <= plain.ci_high);
        c.width_plain += (plain.ci_high - plain.ci_low) / tables as f64;
    }
    c
}

#[test]
fn cross_validation_intervals_hold_their_coverage() {
    let tables: usize = std::env::var("STRATANET_COVERAGE_TABLES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(200);
    // The truth: the procedure's expected exact accuracy when fitted on the
    // rows a fold fits on.
    let n_train = ROWS * (FOLDS - 1) / FOLDS;
    let mut rng = seeded_rng(2024);
    let fits = 1000;
    let truth = (0..fits)
        .map(|_| {
            let data = table(n_train, &mut rng);
            let fitted = fit(&data, &options(), &mut rng).unwrap();
            exact_accuracy(fitted.model())
        })
        .sum::<f64>()
        / fits as f64;
    assert!((0.75..0.80).contains(&truth), "truth {truth}");
    println!(
        "truth: expected accuracy of the procedure on {n_train} rows = {truth:.4} (Bayes 0.8000)"
    );
    for (repeats, seed) in [(1, 7), (10, 8)] {
        let c = cover(truth, tables, repeats, seed);
        let share = |k: usize| k as f64 / tables as f64;
        println!(
            "{FOLDS}-fold x {repeats}: corrected interval covers {:.3} (mean width {:.4}); plain t over folds covers {:.3} (mean width {:.4}); {tables} tables",
            share(c.corrected),
            c.width_corrected,
            share(c.plain),
            c.width_plain
        );
        assert!(
            (0.90..=0.99).contains(&share(c.corrected)),
            "corrected interval coverage {} with {repeats} repeats",
            share(c.corrected)
        );
    }
}
