//! Property tests: each states a law from a definition and checks it on
//! cases drawn by proptest (its own seeded generator, so a failure prints a
//! reproducible, shrunk case). `PROPTEST_CASES` raises the case count for
//! a long run (RELIABILITY.md); the default here is 256 per property, or
//! the smaller count given beside the slower ones.

use ndarray::Array2;
use proptest::prelude::*;
use proptest::test_runner::Config;
use stratanet::data::{stratified_folds, Dataset, Scaler, Scaling};
use stratanet::fit::{fit_with_seed, FitOptions};
use stratanet::network::{Activation, Head, Init, Network};
use stratanet::rng::{below, seeded_rng, uniform};
use stratanet::train::{check_gradients, train_arrays, Loss, TrainingOptions};
use stratanet::validate::ConfusionMatrix;

/// The configured case count, or `default` when `PROPTEST_CASES` is unset.
fn cases(default: u32) -> Config {
    let n = std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default);
    Config {
        cases: n,
        // No failure files in the source tree; a failure prints its case.
        failure_persistence: None,
        ..Config::default()
    }
}

/// A matrix of `rows x cols` with columns of very different magnitudes, and
/// sometimes a constant column.
fn matrix() -> impl Strategy<Value = Array2<f64>> {
    (
        1usize..40,
        1usize..6,
        any::<u64>(),
        -12i32..12,
        any::<bool>(),
    )
        .prop_map(|(rows, cols, seed, exponent, constant)| {
            let mut rng = seeded_rng(seed);
            let mut x = Array2::from_shape_fn((rows, cols), |(_, j)| {
                let magnitude = 10f64.powi(exponent + j as i32 * 3);
                uniform(&mut rng, -1.0, 1.0) * magnitude
            });
            if constant {
                x.column_mut(0).fill(3.25e5);
            }
            x
        })
}

proptest! {
    #![proptest_config(cases(256))]

    /// Scaling then unscaling returns the input, to rounding: the affine map
    /// x' = (x - offset) / scale and its inverse (z-scores and min-max
    /// rescaling: common practice, no source). The bound allows a few ulps
    /// of the column's largest magnitude and of its offset.
    #[test]
    fn scaling_then_unscaling_returns_the_input(x in matrix(), minmax in any::<bool>()) {
        let kind = if minmax { Scaling::MinMax } else { Scaling::Standardise };
        let s = Scaler::from_rows(kind, x.view(), None).unwrap();
        let mut y = s.scaled(x.view()).unwrap();
        prop_assert!(y.iter().all(|v| v.is_finite()));
        s.unscale_in_place(y.view_mut()).unwrap();
        for j in 0..x.ncols() {
            let col = x.column(j);
            let big = col.iter().fold(0.0f64, |m, v| m.max(v.abs()));
            for (a, b) in col.iter().zip(y.column(j)) {
                prop_assert!((a - b).abs() <= 8.0 * f64::EPSILON * big.max(f64::MIN_POSITIVE),
                    "column {j}: {a} came back as {b}");
            }
        }
    }

    /// Stratified k-fold (Kohavi 1995, "A study of cross-validation and
    /// bootstrap for accuracy estimation and model selection", IJCAI): the
    /// held-out parts partition the rows, each fold fits on exactly the
    /// rest, and each class's held-out count in every fold is within one
    /// row of its share n_c / k.
    #[test]
    fn stratified_folds_partition_and_keep_class_shares(
        extra in prop::collection::vec(0usize..36, 2..6),
        k in 2usize..6,
        seed in any::<u64>(),
    ) {
        // Every class holds at least k rows, as k-fold needs.
        let counts: Vec<usize> = extra.iter().map(|&e| e + k).collect();
        let mut labels = Vec::new();
        for (class, &c) in counts.iter().enumerate() {
            labels.extend(std::iter::repeat_n(class, c));
        }
        let mut rng = seeded_rng(seed);
        stratanet::rng::shuffle(&mut rng, &mut labels);
        let folds = stratified_folds(&labels, k, &mut rng).unwrap();
        prop_assert_eq!(folds.len(), k);
        let n = labels.len();
        let mut seen = vec![0usize; n];
        for f in &folds {
            for &r in &f.test {
                seen[r] += 1;
            }
            let mut all: Vec<usize> = f.train.iter().chain(&f.test).copied().collect();
            all.sort_unstable();
            prop_assert_eq!(all, (0..n).collect::<Vec<_>>());
            for (class, &c) in counts.iter().enumerate() {
                let held = f.test.iter().filter(|&&r| labels[r] == class).count() as f64;
                let share = c as f64 / k as f64;
                prop_assert!((held - share).abs() < 1.0,
                    "class {class}: {held} held out against a share of {share}");
            }
        }
        prop_assert!(seen.iter().all(|&s| s == 1), "a row is held out {seen:?} times");
    }

    /// Metrics on a random confusion matrix stay in range and equal their
    /// definitions: accuracy = trace / n; per-class precision TP/(TP+FP),
    /// recall TP/(TP+FN), F1 = 2TP/(2TP+FP+FN) (Sokolova & Lapalme 2009, "A
    /// systematic analysis of performance measures for classification
    /// tasks", Information Processing & Management 45); Cohen's kappa
    /// (Cohen 1960, Educational and Psychological Measurement 20) as
    /// (p_o - p_e) / (1 - p_e); the multi-class Matthews correlation
    /// (Gorodkin 2004, Computational Biology and Chemistry 28) as
    /// (c s - sum p_k t_k) / sqrt((s^2 - sum p_k^2)(s^2 - sum t_k^2)).
    #[test]
    fn metrics_match_their_definitions(
        k in 2usize..6,
        cells in prop::collection::vec(0u64..50, 36),
    ) {
        let counts: Vec<Vec<u64>> = (0..k).map(|i| cells[i * 6..i * 6 + k].to_vec()).collect();
        let total: u64 = counts.iter().flatten().sum();
        prop_assume!(total > 0);
        let m = ConfusionMatrix::from_counts(counts.clone()).unwrap();
        let n = total as f64;
        let trace: u64 = (0..k).map(|i| counts[i][i]).sum();
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * (1.0 + b.abs());
        prop_assert!(close(m.accuracy(), trace as f64 / n));
        let truth: Vec<f64> = (0..k).map(|i| counts[i].iter().sum::<u64>() as f64).collect();
        let pred: Vec<f64> = (0..k).map(|j| (0..k).map(|i| counts[i][j]).sum::<u64>() as f64).collect();
        for c in m.per_class() {
            let i = c.class;
            let tp = counts[i][i] as f64;
            let (fp, fn_) = (pred[i] - tp, truth[i] - tp);
            for s in [c.precision, c.recall, c.f1] {
                prop_assert!((0.0..=1.0).contains(&s.value));
            }
            if pred[i] > 0.0 { prop_assert!(close(c.precision.value, tp / (tp + fp))); }
            else { prop_assert!(!c.precision.is_defined()); }
            if truth[i] > 0.0 { prop_assert!(close(c.recall.value, tp / (tp + fn_))); }
            else { prop_assert!(!c.recall.is_defined()); }
            if tp + fp + fn_ > 0.0 { prop_assert!(close(c.f1.value, 2.0 * tp / (2.0 * tp + fp + fn_))); }
        }
        for v in [m.balanced_accuracy(), m.macro_f1(), m.weighted_f1()] {
            prop_assert!((0.0..=1.0).contains(&v), "{v}");
        }
        let p_o = trace as f64 / n;
        let p_e: f64 = (0..k).map(|i| truth[i] * pred[i]).sum::<f64>() / (n * n);
        let kappa = m.cohen_kappa();
        if (1.0 - p_e).abs() > 1e-12 {
            prop_assert!(close(kappa.value, (p_o - p_e) / (1.0 - p_e)), "{} against {}", kappa.value, (p_o - p_e) / (1.0 - p_e));
            prop_assert!(kappa.value <= 1.0 + 1e-12 && kappa.value >= -1.0 - 1e-12);
        } else {
            prop_assert!(!kappa.is_defined() && kappa.value == 0.0);
        }
        let s = n;
        let c = trace as f64;
        let pt: f64 = (0..k).map(|i| pred[i] * truth[i]).sum();
        let pp: f64 = pred.iter().map(|p| p * p).sum();
        let tt: f64 = truth.iter().map(|t| t * t).sum();
        let den = ((s * s - pp) * (s * s - tt)).sqrt();
        let mcc = m.matthews_correlation();
        if den > 0.0 {
            prop_assert!(close(mcc.value, (c * s - pt) / den), "{} against {}", mcc.value, (c * s - pt) / den);
            prop_assert!((-1.0 - 1e-12..=1.0 + 1e-12).contains(&mcc.value));
        } else {
            prop_assert!(!mcc.is_defined() && mcc.value == 0.0);
        }
    }
}

/// A small random classification table.
fn table(seed: u64, rows: usize, cols: usize, classes: usize) -> Dataset {
    let mut rng = seeded_rng(seed);
    let x = Array2::from_shape_fn((rows, cols), |_| uniform(&mut rng, -3.0, 3.0));
    let mut labels: Vec<usize> = (0..rows).map(|i| i % classes).collect();
    stratanet::rng::shuffle(&mut rng, &mut labels);
    let names: Vec<String> = (0..classes).map(|c| format!("class {c}")).collect();
    Dataset::classification(x, labels, names).unwrap()
}

fn bits(net: &Network) -> Vec<u64> {
    net.layers()
        .iter()
        .flat_map(|l| l.weights.iter().chain(l.biases.iter()))
        .map(|v| v.to_bits())
        .collect()
}

proptest! {
    #![proptest_config(cases(32))]

    /// A saved and loaded model predicts exactly what the original predicts
    /// (the file stores shortest round-trip decimals; IEEE 754-2019, 5.12.2,
    /// requires that these convert back to the same double).
    #[test]
    fn a_saved_and_loaded_model_predicts_identically(
        seed in any::<u64>(),
        hidden in prop::collection::vec(1usize..6, 0..3),
        classes in 2usize..4,
        activation in 0usize..5,
    ) {
        let data = table(seed, 40, 3, classes);
        let options = FitOptions::default()
            .hidden(&hidden)
            .activation(Activation::ALL[activation])
            .epochs(3)
            .batch_size(stratanet::train::BatchSize::Rows(8));
        let model = fit_with_seed(&data, &options, seed).unwrap().into_model();
        let text = model.to_json().unwrap();
        let back = stratanet::Model::from_json(&text, "roundtrip.json").unwrap();
        let probe = table(seed ^ 1, 25, 3, classes);
        let a = model.predict(probe.x()).unwrap();
        let b = back.predict(probe.x()).unwrap();
        prop_assert_eq!(a.iter().map(|v| v.to_bits()).collect::<Vec<_>>(),
                        b.iter().map(|v| v.to_bits()).collect::<Vec<_>>());
        prop_assert_eq!(back.to_json().unwrap(), text);
    }

    /// Training visits rows in an order drawn from the seed. A table
    /// permuted by that very order, trained without shuffling, therefore
    /// sees the same rows in the same batches as the original table trained
    /// with shuffling, and must give bit-identical weights (one epoch: the
    /// engine reshuffles its order at each epoch). Over several epochs of
    /// full-batch descent the order of rows only reorders sums, so any
    /// permutation gives the same weights to rounding (floating addition
    /// is not associative: Goldberg 1991, "What every computer scientist
    /// should know about floating-point arithmetic", ACM Computing Surveys
    /// 23).
    #[test]
    fn a_permuted_table_gives_the_same_model(
        seed in any::<u64>(),
        rows in 8usize..40,
        batch in 1usize..9,
        hidden in 1usize..6,
    ) {
        let mut rng = seeded_rng(seed);
        let x = Array2::from_shape_fn((rows, 3), |_| uniform(&mut rng, -2.0, 2.0));
        let y = Array2::from_shape_fn((rows, 1), |_| below(&mut rng, 2) as f64);
        let net = Network::new(&[3, hidden, 1], Activation::Tanh, Head::Logistic,
            Init::GlorotUniform, &mut rng).unwrap();
        let options = TrainingOptions { epochs: 1, batch_size: Some(stratanet::train::BatchSize::Rows(batch.min(rows))), learning_rate: 0.3, early_stopping: None, ..Default::default() };
        // The order the engine draws from this generator state.
        let shuffle_seed = stratanet::rng::child_seed(&mut rng);
        let mut order: Vec<usize> = (0..rows).collect();
        stratanet::rng::shuffle(&mut seeded_rng(shuffle_seed), &mut order);

        let mut shuffled = net.clone();
        train_arrays(&mut shuffled, x.view(), y.view(), None, &options, &mut seeded_rng(shuffle_seed)).unwrap();

        let px = x.select(ndarray::Axis(0), &order);
        let py = y.select(ndarray::Axis(0), &order);
        let mut in_order = net.clone();
        let fixed = TrainingOptions { shuffle: false, ..options.clone() };
        train_arrays(&mut in_order, px.view(), py.view(), None, &fixed, &mut seeded_rng(0)).unwrap();
        prop_assert_eq!(bits(&shuffled), bits(&in_order));

        // Full batch, several epochs, an arbitrary permutation.
        let full = TrainingOptions { epochs: 20, batch_size: Some(stratanet::train::BatchSize::Rows(rows)), shuffle: false, learning_rate: 0.3, early_stopping: None, ..Default::default() };
        let mut perm: Vec<usize> = (0..rows).collect();
        stratanet::rng::shuffle(&mut seeded_rng(seed ^ 7), &mut perm);
        let (qx, qy) = (x.select(ndarray::Axis(0), &perm), y.select(ndarray::Axis(0), &perm));
        let mut a = net.clone();
        let mut b = net.clone();
        train_arrays(&mut a, x.view(), y.view(), None, &full, &mut seeded_rng(1)).unwrap();
        train_arrays(&mut b, qx.view(), qy.view(), None, &full, &mut seeded_rng(2)).unwrap();
        for (la, lb) in a.layers().iter().zip(b.layers()) {
            for (u, v) in la.weights.iter().chain(la.biases.iter()).zip(lb.weights.iter().chain(lb.biases.iter())) {
                prop_assert!((u - v).abs() <= 1e-9 * (1.0 + u.abs()), "{u} against {v}");
            }
        }
    }

    /// Backpropagation agrees with five-point central differences
    /// (Abramowitz & Stegun 1964, 25.3.6) on random architectures, to the
    /// relative error of 1e-7 (common practice, no source, for double
    /// precision); parameters whose
    /// steps cross a rectifier kink are left out by the check and counted.
    #[test]
    fn gradients_match_finite_differences_on_random_architectures(
        seed in any::<u64>(),
        inputs in 1usize..5,
        hidden in prop::collection::vec(1usize..6, 0..3),
        activation in 0usize..5,
        head in 0usize..3,
        outputs in 1usize..4,
        rows in 1usize..7,
    ) {
        let mut rng = seeded_rng(seed);
        let (head, outputs, loss) = match head {
            0 => (Head::Logistic, outputs, Loss::CrossEntropy),
            1 => (Head::Softmax, outputs + 1, Loss::CrossEntropy),
            _ => (Head::Identity, outputs, Loss::SquaredError),
        };
        let mut sizes = vec![inputs];
        sizes.extend(&hidden);
        sizes.push(outputs);
        let net = Network::new(&sizes, Activation::ALL[activation], head,
            Init::SmallUniform { range: 1.0 }, &mut rng).unwrap();
        let x = Array2::from_shape_fn((rows, inputs), |_| uniform(&mut rng, -1.5, 1.5));
        let y = match head {
            Head::Softmax => {
                let mut y = Array2::zeros((rows, outputs));
                for i in 0..rows { y[[i, below(&mut rng, outputs)]] = 1.0; }
                y
            }
            Head::Logistic => Array2::from_shape_fn((rows, outputs), |_| below(&mut rng, 2) as f64),
            Head::Identity => Array2::from_shape_fn((rows, outputs), |_| uniform(&mut rng, -2.0, 2.0)),
        };
        let check = check_gradients(&net, x.view(), y.view(), loss, 1e-3).unwrap();
        prop_assert!(check.max_relative_error < 1e-6,
            "{sizes:?} {:?}: relative error {} at {:?}", Activation::ALL[activation], check.max_relative_error, check.worst);
    }
}
