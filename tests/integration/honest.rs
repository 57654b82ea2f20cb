//! Honest numbers: nested cross-validation, calibration, costs and
//! permutation importance, each against its definition or a property any
//! correct implementation must have (sources beside each check).

use crate::support::demo_parts;
use stratanet::fit::{Calibration, CostMatrix, DecisionRule, ThresholdTarget};
use stratanet::prelude::*;
use stratanet::validate::{nested_cross_validate, sweep, Grid};

/// The demo table's first 300 rows.
fn parts() -> Dataset {
    let text: String = demo_parts()
        .lines()
        .take(301)
        .map(|l| format!("{l}\n"))
        .collect();
    CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read_str(&text, "parts.csv")
        .unwrap()
}

/// The winner of a sweep is chosen by the very scores it reports, so its
/// score is biased upward; nested cross-validation scores the chosen
/// configuration on rows no choice saw (Cawley & Talbot, JMLR 11, 2010;
/// Varma & Simon, BMC Bioinformatics 7, 2006). Averaged over seeds, the
/// nested estimate must not be above the plain sweep's best score.
#[test]
fn nested_estimates_are_not_above_the_sweep_winners_on_average() {
    let data = parts();
    let base = FitOptions::default().epochs(25);
    let grid = Grid {
        hidden_layers: vec![vec![2], vec![4], vec![8], vec![12]],
        learning_rates: vec![0.003, 0.03],
        ..Grid::default()
    };
    let cv = CvOptions {
        folds: 3,
        ..Default::default()
    };
    let (mut nested_sum, mut sweep_sum) = (0.0, 0.0);
    let seeds = [1u64, 2, 3, 4, 5, 6];
    for &seed in &seeds {
        let swept = sweep(
            &data,
            &base,
            &grid.clone().into(),
            &cv,
            Metric::Accuracy,
            &mut seeded_rng(seed),
        )
        .unwrap();
        let best = swept.table.rows[0].summary.mean;
        let nested = nested_cross_validate(
            &data,
            &base,
            &grid.clone().into(),
            &cv,
            &cv,
            Metric::Accuracy,
            &mut seeded_rng(seed),
        )
        .unwrap();
        let outer = nested.outer.metric(Metric::Accuracy).unwrap().summary.mean;
        assert_eq!(nested.choices.len(), 3);
        assert_eq!(nested.win_counts().iter().map(|(_, k)| k).sum::<usize>(), 3);
        println!("seed {seed}: sweep winner {best:.4}, nested {outer:.4}");
        nested_sum += outer;
        sweep_sum += best;
    }
    let n = seeds.len() as f64;
    println!(
        "mean over {} seeds: sweep winner {:.4}, nested {:.4}",
        seeds.len(),
        sweep_sum / n,
        nested_sum / n
    );
    assert!(
        nested_sum <= sweep_sum,
        "nested {nested_sum} > sweep {sweep_sum}"
    );
}

/// A table drawn from a known rule: the class depends on `signal` strongly
/// and on `weak` a little; `noise_a`, `noise_b` and the text column `batch`
/// are pure noise. (Simulation data for a property check, not a dataset.)
fn known_rule_table(rows: usize, seed: u64) -> Dataset {
    let mut rng = seeded_rng(seed);
    let mut u = || stratanet::rng::uniform(&mut rng, -1.0, 1.0);
    let mut text = String::from("signal,weak,noise_a,noise_b,batch,y\n");
    for _ in 0..rows {
        let (signal, weak, a, b, batch, e) = (u(), u(), u(), u(), u(), u());
        let batch = if batch < -0.33 {
            "b1"
        } else if batch < 0.33 {
            "b2"
        } else {
            "b3"
        };
        let y = if 2.0 * signal + 0.6 * weak + 0.4 * e > 0.0 {
            "yes"
        } else {
            "no"
        };
        text.push_str(&format!(
            "{signal:.4},{weak:.4},{a:.4},{b:.4},{batch},{y}\n"
        ));
    }
    CsvOptions::new("y")
        .read_str(&text, "known-rule.csv")
        .unwrap()
}

/// Permutation importance (Breiman 2001; Fisher, Rudin & Dominici 2019):
/// on held-out rows, shuffling an input the target does not depend on
/// cannot help or hurt a model on average, so its interval across folds
/// covers 0; shuffling the input the rule is built on costs clearly.
#[test]
fn permutation_importance_finds_the_signal_and_clears_the_noise() {
    use stratanet::validate::importance::ImportanceOptions;
    let data = known_rule_table(400, 11);
    let options = FitOptions::default().hidden(&[6]).epochs(60);
    let cv = cross_validate(
        &data,
        &options,
        &CvOptions {
            folds: 5,
            ..Default::default()
        },
        &mut seeded_rng(5),
    )
    .unwrap();
    for metric in [Metric::Accuracy, Metric::LogLoss] {
        let importance = cv
            .permutation_importance(
                &data,
                &ImportanceOptions {
                    metric: Some(metric),
                    shuffles: 5,
                },
                &mut seeded_rng(9),
            )
            .unwrap();
        let by_name = |name: &str| {
            importance
                .columns
                .iter()
                .find(|c| c.column == name)
                .unwrap()
        };
        let signal = by_name("signal");
        assert!(signal.clearly_used(), "{metric:?}: {signal:?}");
        assert!(signal.summary.mean > 0.1, "{metric:?}: {signal:?}");
        assert_eq!(importance.ranked()[0].column, "signal");
        for noise in ["noise_a", "noise_b", "batch"] {
            let c = by_name(noise);
            assert!(
                c.summary.ci_low <= 0.0 && c.summary.ci_high >= 0.0,
                "{metric:?}: {noise}: {:?}",
                c.summary
            );
        }
        // The text column's three one-hot inputs were shuffled as one.
        assert_eq!(by_name("batch").inputs.len(), 3);
        eprintln!(
            "{metric:?}: {}",
            importance
                .ranked()
                .iter()
                .map(|c| format!(
                    "{} {:.4} [{:.4}, {:.4}]",
                    c.column, c.summary.mean, c.summary.ci_low, c.summary.ci_high
                ))
                .collect::<Vec<_>>()
                .join("; ")
        );
    }
    // The same seeds give the same bits.
    let again = cv
        .permutation_importance(&data, &ImportanceOptions::default(), &mut seeded_rng(9))
        .unwrap();
    let once = cv
        .permutation_importance(&data, &ImportanceOptions::default(), &mut seeded_rng(9))
        .unwrap();
    assert_eq!(again, once);
}

/// Every fold scores the baseline (the training rows' class shares for every
/// held-out row) beside the model. Its accuracy is the held-out share of the
/// training majority class, its log-loss the mean of -ln(share of the true
/// class), its AUC 0.5 (the definitions; common practice, no source); the
/// model is tested against it on the same folds (Nadeau & Bengio 2003).
#[test]
fn every_fold_scores_the_baseline_beside_the_model() {
    let data = known_rule_table(300, 4);
    let labels = data.labels().unwrap().to_vec();
    let options = FitOptions::default().hidden(&[4]).epochs(40);
    let cv = cross_validate(
        &data,
        &options,
        &CvOptions {
            folds: 4,
            ..Default::default()
        },
        &mut seeded_rng(8),
    )
    .unwrap();
    for fold in &cv.folds {
        let test_rows = &fold.test_rows;
        let train_rows: Vec<usize> = (0..labels.len())
            .filter(|r| !test_rows.contains(r))
            .collect();
        let yes =
            train_rows.iter().filter(|&&r| labels[r] == 1).count() as f64 / train_rows.len() as f64;
        let no =
            train_rows.iter().filter(|&&r| labels[r] == 0).count() as f64 / train_rows.len() as f64;
        assert_eq!(fold.baseline.prediction, vec![no, yes]);
        let majority = usize::from(yes > 0.5);
        let accuracy = test_rows.iter().filter(|&&r| labels[r] == majority).count() as f64
            / test_rows.len() as f64;
        let log_loss = test_rows
            .iter()
            .map(|&r| -(if labels[r] == 1 { yes } else { 1.0 - yes }).ln())
            .sum::<f64>()
            / test_rows.len() as f64;
        let scores = &fold.baseline.scores;
        assert!((scores.value(Metric::Accuracy).unwrap() - accuracy).abs() < 1e-15);
        assert!((scores.value(Metric::LogLoss).unwrap() - log_loss).abs() < 1e-12);
        assert_eq!(scores.value(Metric::Auc).unwrap(), 0.5);
    }
    let accuracy = cv.metric(Metric::Accuracy).unwrap();
    assert_eq!(accuracy.baseline_values.len(), 4);
    let test = accuracy.against_baseline.as_ref().unwrap();
    assert!(
        test.mean_difference > 0.2 && test.p_value < 0.01,
        "{test:?}"
    );
    assert!(
        test.reading.starts_with("the model scored"),
        "{}",
        test.reading
    );

    // A target unrelated to the inputs: the model cannot beat the baseline.
    let mut text = String::from("a,b,y\n");
    let mut rng = seeded_rng(21);
    for _ in 0..200 {
        let (a, b, y) = (
            stratanet::rng::uniform01(&mut rng),
            stratanet::rng::uniform01(&mut rng),
            stratanet::rng::uniform01(&mut rng) < 0.3,
        );
        text.push_str(&format!("{a:.4},{b:.4},{}\n", if y { "p" } else { "q" }));
    }
    let noise = CsvOptions::new("y").read_str(&text, "noise.csv").unwrap();
    let cv = cross_validate(&noise, &options, &CvOptions::default(), &mut seeded_rng(8)).unwrap();
    let test = cv
        .metric(Metric::Accuracy)
        .unwrap()
        .against_baseline
        .clone()
        .unwrap();
    assert!(test.p_value > 0.05, "{test:?}");
}

/// Out-of-fold predictions: in every repeat each row is predicted exactly
/// once, by the fold model that held it out, and is the same prediction
/// that fold's model gives for it (the definition of k-fold
/// cross-validation; common practice, no source).
#[test]
fn out_of_fold_predictions_cover_every_row_once_per_repeat() {
    use stratanet::validate::metrics::Binning;
    let data = parts();
    let cv = cross_validate(
        &data,
        &FitOptions::default().hidden(&[4]).epochs(15),
        &CvOptions {
            folds: 3,
            repeats: 2,
            ..Default::default()
        },
        &mut seeded_rng(3),
    )
    .unwrap();
    for repeat in 0..2 {
        let oof = cv.out_of_fold(repeat).unwrap();
        assert_eq!(oof.predictions.nrows(), data.n_rows());
        for row in [0, 57, 299] {
            let fold = &cv.folds[oof.fold_of_row[row]];
            assert_eq!(fold.index / 3, repeat);
            let model = fold.model.as_ref().unwrap();
            let again = model
                .predict_probabilities(data.x().slice(stratanet::ndarray::s![row..row + 1, ..]))
                .unwrap();
            assert_eq!(oof.predictions.row(row), again.row(0));
        }
    }
    assert!(cv
        .out_of_fold(2)
        .unwrap_err()
        .to_string()
        .contains("repeat"));
    let r = cv.reliability(&data, Binning::default()).unwrap();
    assert_eq!(r.rows, 2 * data.n_rows());
    let part = cv.brier_partition(&data, Binning::default()).unwrap();
    assert!((part.total() - part.brier).abs() < 1e-12);
}

/// Costs under cross-validation. With the zero-one matrix each fold's cost
/// per row is its error rate, 1 - accuracy, for the model and for the
/// baseline alike (Elkan 2001: zero-one costs give the most probable class).
/// With unequal costs the decisions move towards the cheap mistakes, and the
/// cost per row is the mean of C[decision][truth] recomputed here by hand.
#[test]
fn cross_validated_costs_follow_their_definition() {
    use stratanet::fit::CostMatrix;
    let data = parts();
    let classes = data.class_names().unwrap().to_vec();
    let cv = cross_validate(
        &data,
        &FitOptions::default().hidden(&[6]).epochs(25),
        &CvOptions {
            folds: 4,
            ..Default::default()
        },
        &mut seeded_rng(12),
    )
    .unwrap();
    let zero_one = cv
        .costs(&data, &CostMatrix::zero_one(&classes).unwrap())
        .unwrap();
    let accuracy = cv.metric(Metric::Accuracy).unwrap();
    for (k, cost) in zero_one.fold_costs.iter().enumerate() {
        assert!((cost - (1.0 - accuracy.values[k])).abs() < 1e-12);
        assert!((zero_one.baseline_costs[k] - (1.0 - accuracy.baseline_values[k])).abs() < 1e-12);
    }
    // Scrapping a good part is dear, accepting a bad one dearer still.
    let text = "decision,accept,rework,scrap\naccept,0,40,300\nrework,15,10,120\nscrap,60,50,20\n";
    let matrix = CostMatrix::from_csv_str(text, "costs.csv").unwrap();
    let summary = cv.costs(&data, &matrix).unwrap();
    let labels = data.labels().unwrap();
    let c = |d: usize, t: usize| matrix.for_classes(&classes).unwrap().costs()[d][t];
    for (k, fold) in cv.folds.iter().enumerate() {
        let mut total = 0.0;
        for (i, &row) in fold.test_rows.iter().enumerate() {
            let p = fold.predictions.row(i);
            let expected: Vec<f64> = (0..3)
                .map(|d| (0..3).map(|t| p[t] * c(d, t)).sum())
                .collect();
            let d = (0..3).fold(0, |b, d| if expected[d] < expected[b] { d } else { b });
            total += c(d, labels[row]);
        }
        assert!((summary.fold_costs[k] - total / fold.test_rows.len() as f64).abs() < 1e-9);
    }
    assert!(summary.summary.ci_low >= 0.0);
    let test = summary.against_baseline.as_ref().unwrap();
    assert!(test.mean_difference < 0.0, "{test:?}");
    assert_eq!(summary.decision_counts.iter().sum::<usize>(), data.n_rows());
}

/// Rows drawn from a known logistic model, p(y = 1) = sigma(2 x1 - x2),
/// with three pure-noise inputs (the generator of the simulation; the
/// checks below rest on Guo et al. 2017, not on these numbers).
fn logistic_rows(n: usize, seed: u64) -> Dataset {
    use rand::Rng;
    let mut rng = seeded_rng(seed);
    let mut x = ndarray::Array2::zeros((n, 5));
    let mut labels = Vec::with_capacity(n);
    for i in 0..n {
        for j in 0..5 {
            // A sum of 12 uniforms less 6: near-normal, mean 0, variance 1.
            x[[i, j]] = (0..12).map(|_| rng.random::<f64>()).sum::<f64>() - 6.0;
        }
        let p = 1.0 / (1.0 + (-(2.0 * x[[i, 0]] - x[[i, 1]])).exp());
        labels.push(usize::from(rng.random::<f64>() < p));
    }
    Dataset::classification(x, labels, vec!["no".into(), "yes".into()]).unwrap()
}

fn fresh_log_loss(model: &Model, rows: &Dataset) -> f64 {
    let p = model.predict_probabilities(rows.x()).unwrap();
    let labels = rows.labels().unwrap();
    -labels
        .iter()
        .enumerate()
        .map(|(i, &y)| p[[i, y]].max(1e-300).ln())
        .sum::<f64>()
        / labels.len() as f64
}

/// Temperature scaling (Guo, Pleiss, Sun & Weinberger, "On calibration of
/// modern neural networks", ICML 2017): a wide network trained far past
/// its best epoch on 240 noisy rows is over-confident, so the temperature
/// fitted on its validation rows is above 1 and the log-loss on 20,000
/// fresh rows falls; a logistic unit (no hidden layer) on the same kind of
/// rows is already calibrated (it is the true model's form), so its
/// temperature is near 1.
#[test]
fn temperature_scaling_cools_an_over_confident_network_and_leaves_a_calibrated_one() {
    let train = logistic_rows(240, 11);
    let fresh = logistic_rows(20_000, 12);
    let over = FitOptions::default()
        .hidden(&[64])
        .early_stopping(None)
        .validation_share(0.3)
        .epochs(1500)
        .learning_rate(0.05);
    let plain = fit(&train, &over, &mut seeded_rng(3)).unwrap();
    let scaled = fit(
        &train,
        &over.clone().calibration(Calibration::Temperature),
        &mut seeded_rng(3),
    )
    .unwrap();
    // Temperature scaling does not change the network.
    assert_eq!(plain.model().network(), scaled.model().network());
    let t = scaled.model().temperature().unwrap().value;
    let (before, after) = (
        fresh_log_loss(plain.model(), &fresh),
        fresh_log_loss(scaled.model(), &fresh),
    );
    assert!(t > 1.5, "over-confident: T = {t}");
    assert!(after < before, "fresh log-loss {before} -> {after}");
    // The temperature travels in the model file.
    let path = crate::support::scratch("honest-temperature").join("scaled.json");
    scaled.model().save(&path).unwrap();
    assert_eq!(&Model::load(&path).unwrap(), scaled.model());
    // The same classes either way: dividing by T keeps the order.
    assert_eq!(
        plain.model().predict_classes(fresh.x()).unwrap(),
        scaled.model().predict_classes(fresh.x()).unwrap()
    );

    let big = logistic_rows(4000, 13);
    let unit = FitOptions::default()
        .hidden(&[])
        .validation_share(0.5)
        .epochs(200)
        .calibration(Calibration::Temperature);
    let calibrated = fit(&big, &unit, &mut seeded_rng(4)).unwrap();
    let t = calibrated.model().temperature().unwrap().value;
    assert!((0.9..1.1).contains(&t), "already calibrated: T = {t}");
}

/// A cost matrix and a threshold travel in the model file and decide the
/// same way after loading; a zero-one matrix decides the most probable
/// class (Elkan 2001, section 2).
#[test]
fn decision_rules_survive_the_model_file_and_zero_one_costs_pick_the_most_probable_class() {
    let train = logistic_rows(400, 21);
    let fresh = logistic_rows(500, 22);
    let fitted = fit(
        &train,
        &FitOptions::default()
            .epochs(60)
            .threshold_target(ThresholdTarget::Recall(0.95)),
        &mut seeded_rng(5),
    )
    .unwrap();
    let model = fitted.model();
    let Some(DecisionRule::Threshold { positive, chosen }) = model.decision_rule() else {
        panic!("a threshold rule");
    };
    assert_eq!(*positive, 1);
    assert!(chosen.recall >= 0.95);
    let dir = crate::support::scratch("honest-decisions");
    let path = dir.join("threshold.json");
    model.save(&path).unwrap();
    let back = Model::load(&path).unwrap();
    assert_eq!(&back, model);
    let d = back.decide(fresh.x()).unwrap();
    let p = back.predict_probabilities(fresh.x()).unwrap();
    for (i, &c) in d.chosen.iter().enumerate() {
        assert_eq!(c, usize::from(p[[i, 1]] >= chosen.threshold));
    }
    let zero_one = CostMatrix::zero_one(&["no".to_string(), "yes".to_string()]).unwrap();
    let plain = fit(
        &train,
        &FitOptions::default().epochs(60),
        &mut seeded_rng(5),
    )
    .unwrap();
    let costed = plain.model().clone().with_costs(&zero_one).unwrap();
    let path = dir.join("costs.json");
    costed.save(&path).unwrap();
    let back = Model::load(&path).unwrap();
    let d = back.decide(fresh.x()).unwrap();
    assert_eq!(d.chosen, back.predict_classes(fresh.x()).unwrap());
    assert!(d
        .expected_cost
        .unwrap()
        .iter()
        .all(|c| (0.0..=0.5).contains(c)));
    // One rule per model.
    assert!(model.clone().with_costs(&zero_one).is_err());
}
