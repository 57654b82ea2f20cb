//! A linear network reproduces ordinary least squares on the diabetes
//! data (Efron, Hastie, Johnstone & Tibshirani, "Least angle regression",
//! Annals of Statistics 32(2), 2004; 10 baseline measurements of 442
//! patients and a measure of disease progression one year later), as
//! shipped by the `linfa-datasets` crate (0.8.1, feature `diabetes`). That
//! crate's loader reads the first line of its headerless file as a
//! header, so it yields 441 rows; the reference below is computed on the
//! same 441.
//!
//! A network with no hidden layer and the identity head, trained on half
//! the squared error to convergence, minimises the least-squares criterion,
//! so its coefficients in raw units must be the OLS coefficients. The
//! reference is computed here independently: the normal equations
//! `(A^T A) b = A^T y` (A with a column of ones) solved by a Cholesky
//! factorisation in f64 (Golub & Van Loan, "Matrix Computations", 4th ed.,
//! 2013, algorithm 4.2.1). The target stays in its raw units (25 to 346);
//! the library standardises it inside training and undoes it.

use crate::support::close;
use ndarray::{Array1, Array2};
use stratanet::fit::fit_with_seed;
use stratanet::network::{Activation, Arithmetic};
use stratanet::prelude::*;
use stratanet::train::{BatchSize, Optimiser};
use stratanet::validate::Metric;

fn diabetes() -> (Array2<f64>, Array1<f64>) {
    let ds = linfa_datasets::diabetes();
    let r = ds.records();
    let x = Array2::from_shape_fn((r.nrows(), r.ncols()), |(i, j)| r[[i, j]]);
    let y = ds.targets().iter().copied().collect();
    (x, y)
}

/// Solves the symmetric positive definite system `m b = v` by Cholesky
/// (`m = L L^T`, then forward and back substitution).
fn cholesky_solve(m: &Array2<f64>, v: &[f64]) -> Vec<f64> {
    let n = v.len();
    let mut l = Array2::<f64>::zeros((n, n));
    for i in 0..n {
        for j in 0..=i {
            let s: f64 = (0..j).map(|k| l[[i, k]] * l[[j, k]]).sum();
            if i == j {
                l[[i, i]] = (m[[i, i]] - s).sqrt();
            } else {
                l[[i, j]] = (m[[i, j]] - s) / l[[j, j]];
            }
        }
    }
    let mut z = vec![0.0; n];
    for i in 0..n {
        let s: f64 = (0..i).map(|k| l[[i, k]] * z[k]).sum();
        z[i] = (v[i] - s) / l[[i, i]];
    }
    let mut b = vec![0.0; n];
    for i in (0..n).rev() {
        let s: f64 = (i + 1..n).map(|k| l[[k, i]] * b[k]).sum();
        b[i] = (z[i] - s) / l[[i, i]];
    }
    b
}

/// OLS with an intercept: (intercept, coefficients, R^2).
fn ols(x: &Array2<f64>, y: &Array1<f64>) -> (f64, Vec<f64>, f64) {
    let (n, d) = x.dim();
    let a = Array2::from_shape_fn(
        (n, d + 1),
        |(i, j)| if j == 0 { 1.0 } else { x[[i, j - 1]] },
    );
    let ata = a.t().dot(&a);
    let aty = a.t().dot(y);
    let b = cholesky_solve(&ata, aty.as_slice().unwrap());
    let fitted = a.dot(&Array1::from(b.clone()));
    let mean = y.sum() / n as f64;
    let sse: f64 = y.iter().zip(&fitted).map(|(t, f)| (t - f) * (t - f)).sum();
    let sst: f64 = y.iter().map(|t| (t - mean) * (t - mean)).sum();
    (b[0], b[1..].to_vec(), 1.0 - sse / sst)
}

#[test]
fn a_linear_network_reproduces_least_squares_in_raw_units() {
    let (x, y) = diabetes();
    assert_eq!(x.dim(), (441, 10));
    let (intercept, beta, r2) = ols(&x, &y);
    // The reference against the published fit (Efron et al. 2004, the OLS
    // end of the LARS path on all 442 patients: coefficients -10, -240,
    // 520, 324, -792, 476, 101, 177, 751, 68, R^2 0.518; values recalled
    // from memory). One patient fewer moves them a little.
    let published = [
        -10.0, -240.0, 520.0, 324.0, -792.0, 476.0, 101.0, 177.0, 751.0, 68.0,
    ];
    for (b, p) in beta.iter().zip(published) {
        close(*b, p, 25.0, "OLS coefficient against the published one");
    }
    close(r2, 0.518, 0.01, "OLS R^2 against the published one");

    let data = Dataset::regression(x.clone(), y.clone().insert_axis(ndarray::Axis(1))).unwrap();
    let options = FitOptions::default()
        .hidden(&[])
        .activation(Activation::Identity)
        .optimiser(Optimiser::Nesterov { mu: 0.9 })
        .learning_rate(0.1)
        .batch_size(BatchSize::Full)
        .early_stopping(None)
        .epochs(6000);
    let mut options = options;
    options.training.arithmetic = Arithmetic::Portable;
    let fitted = fit_with_seed(&data, &options, 7).unwrap();
    assert!(
        fitted.warnings().is_empty(),
        "trained to convergence: {:?}",
        fitted.warnings()
    );
    let model = fitted.model();
    // The model's coefficients in raw units, read off its predictions: a
    // linear model predicts b0 at the origin and b0 + b_j at unit vector j.
    let mut probe = Array2::<f64>::zeros((11, 10));
    for j in 0..10 {
        probe[[j + 1, j]] = 1.0;
    }
    let p = model.predict(probe.view()).unwrap();
    close(p[[0, 0]], intercept, 1e-4, "intercept");
    let mut worst = 0.0f64;
    for j in 0..10 {
        let b = p[[j + 1, 0]] - p[[0, 0]];
        close(b, beta[j], 1e-4, &format!("coefficient {j}"));
        worst = worst.max((b - beta[j]).abs());
    }
    println!("diabetes: largest coefficient difference from OLS {worst:e}");
    let (scores, _) = stratanet::validate::Scores::of(model, &data).unwrap();
    close(
        scores.value(Metric::RSquared).unwrap(),
        r2,
        1e-4,
        "R^2 of the network against OLS",
    );
}
