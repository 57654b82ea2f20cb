//! What a fit learns from rows, it learns from its training rows only,
//! inside every cross-validation fold: the fill values of missing cells
//! and the target's scaling. Each is checked against the statistic
//! computed here, by its definition, on exactly the fold's training rows
//! (median: Hyndman & Fan, "Sample quantiles in statistical packages",
//! 1996, definition 7 at p = 1/2; mean and population standard deviation:
//! their textbook definitions, common practice, no source).

use crate::support::close;
use ndarray::Array2;
use stratanet::data::{CsvOptions, Missing};
use stratanet::fit::fit_with_seed;
use stratanet::prelude::*;
use stratanet::rng::uniform;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

/// 60 rows: x (every fifth cell missing), z, and a class from x + z.
fn table_with_gaps() -> (String, Vec<Option<f64>>) {
    let mut rng = seeded_rng(21);
    let mut text = String::from("x,z,class\n");
    let mut xs = Vec::new();
    for i in 0..60 {
        let (x, z) = (uniform(&mut rng, 0.0, 10.0), uniform(&mut rng, 0.0, 10.0));
        let class = if x + z > 10.0 { "high" } else { "low" };
        if i % 5 == 2 {
            text.push_str(&format!(",{z:.3},{class}\n"));
            xs.push(None);
        } else {
            text.push_str(&format!("{x:.3},{z:.3},{class}\n"));
            xs.push(Some(format!("{x:.3}").parse().unwrap()));
        }
    }
    (text, xs)
}

#[test]
fn each_fold_fills_missing_cells_from_its_own_training_rows() {
    let (text, xs) = table_with_gaps();
    let data = CsvOptions::new("class")
        .missing(Missing::Impute)
        .read_str(&text, "gaps.csv")
        .unwrap();
    assert_eq!(data.missing_cells(), 12);
    let options = FitOptions::default()
        .hidden(&[])
        .epochs(3)
        .early_stopping(None);
    let cv = cross_validate(&data, &options, &CvOptions::default(), &mut seeded_rng(4)).unwrap();
    let whole = median(xs.iter().flatten().copied().collect());
    let mut differs = 0;
    for fold in &cv.folds {
        let train: Vec<usize> = (0..60).filter(|r| !fold.test_rows.contains(r)).collect();
        assert_eq!(train.len(), fold.train_rows);
        let expected = median(train.iter().filter_map(|&r| xs[r]).collect());
        let fill = fold.imputer.as_ref().unwrap().fill_values()[0];
        assert_eq!(fill, expected, "fold {}", fold.index + 1);
        differs += usize::from(fill != whole);
    }
    assert!(
        differs > 0,
        "no fold's fill differs from the whole table's median"
    );
}

#[test]
fn a_fit_fills_from_its_training_rows_not_its_validation_rows() {
    let (text, xs) = table_with_gaps();
    let data = CsvOptions::new("class")
        .missing(Missing::Impute)
        .read_str(&text, "gaps.csv")
        .unwrap();
    let options = FitOptions::default()
        .hidden(&[])
        .epochs(3)
        .validation_share(0.3);
    let fitted = fit_with_seed(&data, &options, 8).unwrap();
    assert!(!fitted.split().validation.is_empty());
    let expected = median(fitted.split().train.iter().filter_map(|&r| xs[r]).collect());
    assert_eq!(fitted.model().imputer().unwrap().fill_values()[0], expected);
}

#[test]
fn each_fold_scales_the_target_on_its_own_training_rows() {
    let mut rng = seeded_rng(31);
    let x = Array2::from_shape_fn((50, 2), |_| uniform(&mut rng, -1.0, 1.0));
    let y = Array2::from_shape_fn((50, 1), |(i, _)| {
        1000.0 + 40.0 * x[[i, 0]] - 7.0 * x[[i, 1]] + i as f64
    });
    let data = Dataset::regression(x, y.clone()).unwrap();
    let options = FitOptions::default()
        .hidden(&[])
        .epochs(3)
        .early_stopping(None);
    let cv = cross_validate(&data, &options, &CvOptions::default(), &mut seeded_rng(6)).unwrap();
    for fold in &cv.folds {
        let train: Vec<f64> = (0..50)
            .filter(|r| !fold.test_rows.contains(r))
            .map(|r| y[[r, 0]])
            .collect();
        let n = train.len() as f64;
        let mean = train.iter().sum::<f64>() / n;
        let sd = (train.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / n).sqrt();
        let s = fold.target_scaler.as_ref().unwrap();
        close(
            s.offsets()[0],
            mean,
            1e-12 * mean.abs(),
            "fold's target mean",
        );
        close(
            s.scales()[0],
            sd,
            1e-12 * sd,
            "fold's target standard deviation",
        );
    }
    // The held-out predictions are in the target's own units.
    let first = &cv.folds[0];
    let held: Vec<f64> = first.test_rows.iter().map(|&r| y[[r, 0]]).collect();
    let p = first.predictions.column(0).to_vec();
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    assert!((mean(&p) - mean(&held)).abs() < 20.0, "{p:?} {held:?}");
}

/// Class weights enter the loss. With one input that is always 0, only the
/// output's bias learns, and the weighted cross-entropy
/// `sum_i w_i CE(p, y_i)` is smallest at the weighted share of the second
/// class, `p = sum_{y=1} w / sum w` (set its derivative to 0; common
/// practice, no source). Three rows of `a` and one of `b`: unweighted
/// `p = 1/4`; balanced weights `n / (k n_c)` give `a` 4/6 and `b` 2, so
/// `p = 2 / (3 * 4/6 + 2) = 1/2`; weights `a=1,b=3` give `p = 3/6 = 1/2`.
#[test]
fn class_weights_move_the_optimum_to_the_weighted_share() {
    use stratanet::fit::ClassWeights;
    use stratanet::train::{BatchSize, Optimiser};
    let data = Dataset::classification(
        Array2::zeros((4, 1)),
        vec![0, 0, 0, 1],
        vec!["a".into(), "b".into()],
    )
    .unwrap();
    let p_b = |weights: ClassWeights| {
        let options = FitOptions::default()
            .hidden(&[])
            .optimiser(Optimiser::Sgd)
            .learning_rate(1.0)
            .batch_size(BatchSize::Full)
            .early_stopping(None)
            .epochs(400)
            .class_weights(weights);
        let fitted = fit_with_seed(&data, &options, 2).unwrap();
        fitted
            .model()
            .predict_probabilities(Array2::zeros((1, 1)).view())
            .unwrap()[[0, 1]]
    };
    close(p_b(ClassWeights::None), 0.25, 1e-9, "unweighted share");
    close(p_b(ClassWeights::Balanced), 0.5, 1e-9, "balanced weights");
    close(p_b("a=1,b=3".parse().unwrap()), 0.5, 1e-9, "given weights");
    assert_eq!(
        "a=1,b=0".parse::<ClassWeights>().unwrap_err().to_string(),
        "option class_weights = a=1,b=0: the weight of \"b\" must be a finite number above 0"
    );
    let options = FitOptions::default().class_weights("a=1".parse().unwrap());
    assert_eq!(
        fit_with_seed(&data, &options, 2).unwrap_err().to_string(),
        "option class_weights = a=1: gives no weight for class \"b\"; name every class (a, b)"
    );
}

/// A fold whose training rows have no gap still learns fill values, so the
/// gaps in its held-out rows are filled (from its own training rows).
#[test]
fn a_fold_without_gaps_in_its_training_rows_fills_its_held_out_rows() {
    let mut text = String::from("x,z,class\n");
    let mut xs = Vec::new();
    for i in 0..20 {
        let x = (i * 7 % 20) as f64 / 2.0;
        let class = if i % 2 == 0 { "even" } else { "odd" };
        if i == 3 {
            text.push_str(&format!(",{i},{class}\n"));
        } else {
            text.push_str(&format!("{x},{i},{class}\n"));
        }
        xs.push(x);
    }
    let data = CsvOptions::new("class")
        .missing(Missing::Impute)
        .read_str(&text, "one-gap.csv")
        .unwrap();
    let plan = stratanet::validate::FoldPlan {
        folds: vec![
            stratanet::data::Fold {
                train: (10..20).collect(),
                test: (0..10).collect(),
            },
            stratanet::data::Fold {
                train: (0..10).collect(),
                test: (10..20).collect(),
            },
        ],
        seeds: vec![1, 2],
    };
    let options = FitOptions::default()
        .hidden(&[])
        .epochs(2)
        .early_stopping(None);
    let cv_options = CvOptions {
        folds: 2,
        ..CvOptions::default()
    };
    let cv =
        stratanet::validate::cross_validate_with_plan(&data, &options, &cv_options, &plan).unwrap();
    let fill = cv.folds[0].imputer.as_ref().unwrap().fill_values()[0];
    assert_eq!(fill, median(xs[10..20].to_vec()));
    assert!(cv.folds[0].predictions.iter().all(|v| v.is_finite()));
}
