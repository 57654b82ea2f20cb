//! Hostile numbers and hostile files: each case either works correctly or
//! stops with an error that says what is wrong and what would fix it; no
//! metric is NaN without a reason (RELIABILITY.md lists them with figures).
//!
//! The limits of f64 are from IEEE 754-2019 (binary64: largest finite
//! 1.7976931348623157e308, smallest normal 2.2250738585072014e-308,
//! smallest subnormal 4.9e-324).

use ndarray::Array2;
use stratanet::data::{CsvOptions, Dataset, Scaler, Scaling};
use stratanet::fit::{fit_with_seed, FitOptions};
use stratanet::rng::{seeded_rng, uniform};
use stratanet::validate::{cross_validate, CvOptions, Metric, Scores};
use stratanet::ErrorKind;

/// A two-class table whose class is `x0 + x1 > 0`, with extra columns.
/// An extra column: its name and its value from the row index and a uniform draw.
type Column = (&'static str, fn(usize, f64) -> f64);

fn table_with(extra: &[Column], rows: usize, seed: u64) -> String {
    let mut rng = seeded_rng(seed);
    let mut text = String::from("x0,x1");
    for (name, _) in extra {
        text.push(',');
        text.push_str(name);
    }
    text.push_str(",class\n");
    for i in 0..rows {
        let a = uniform(&mut rng, -1.0, 1.0);
        let b = uniform(&mut rng, -1.0, 1.0);
        text.push_str(&format!("{a},{b}"));
        for (_, f) in extra {
            text.push_str(&format!(",{:e}", f(i, uniform(&mut rng, -1.0, 1.0))));
        }
        text.push_str(if a + b > 0.0 { ",high\n" } else { ",low\n" });
    }
    text
}

fn quick() -> FitOptions {
    FitOptions::default()
        .hidden(&[6])
        .epochs(60)
        .learning_rate(0.05)
        .batch_size(stratanet::train::BatchSize::Rows(16))
}

fn all_finite(v: &Array2<f64>) -> bool {
    v.iter().all(|x| x.is_finite())
}

#[test]
fn values_near_the_limits_of_f64_are_scaled_and_fitted() {
    let text = table_with(
        &[
            ("huge", |_, u| 1.7e308 * u),
            ("tiny", |_, u| 2.3e-308 * u),
            ("subnormal", |i, _| (i % 7) as f64 * 4.9e-324),
            ("constant", |_, _| 1.0e300),
        ],
        300,
        1,
    );
    let data = CsvOptions::new("class")
        .read_str(&text, "limits.csv")
        .unwrap();
    // Every column scales to finite values of ordinary size.
    let s = Scaler::from_rows(Scaling::Standardise, data.x(), None).unwrap();
    let z = s.scaled(data.x()).unwrap();
    assert!(all_finite(&z));
    for (j, name) in data.feature_names().iter().enumerate() {
        let col = z.column(j);
        let big = col.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        if name == "constant" {
            assert_eq!(big, 0.0, "a constant column becomes zeros");
        } else {
            assert!(big > 0.5 && big < 10.0, "{name}: largest |z| = {big}");
        }
    }
    let fitted = fit_with_seed(&data, &quick(), 3).unwrap();
    let p = fitted.model().predict_probabilities(data.x()).unwrap();
    assert!(all_finite(&p));
    let accuracy = Scores::of(fitted.model(), &data)
        .unwrap()
        .0
        .value(Metric::Accuracy)
        .unwrap();
    assert!(
        accuracy > 0.9,
        "accuracy {accuracy} with the signal columns intact"
    );
}

#[test]
fn min_max_scaling_beyond_the_range_of_f64_is_refused_by_name() {
    let x = ndarray::array![[1.0, 1.7e308], [2.0, -1.7e308]];
    let err = Scaler::from_rows(Scaling::MinMax, x.view(), None).unwrap_err();
    assert_eq!(
        err.to_string(),
        "min-max scaling of feature column 2: its values span -1.7e308 to 1.7e308, a range beyond the largest double; divide the column by a power of ten first, or use standardise"
    );
}

#[test]
fn values_that_overflow_f64_are_refused_with_line_and_column() {
    let err = CsvOptions::new("class")
        .read_str("x,class\n1,a\n1e309,b\n", "overflow.csv")
        .unwrap_err();
    let text = err.to_string();
    assert!(
        text.contains("overflow.csv") && text.contains("line 3") && text.contains("1e309"),
        "{text}"
    );
}

#[test]
fn one_positive_in_ten_thousand_fits_and_says_what_is_undefined() {
    let mut text = String::from("x0,x1,class\n");
    let mut rng = seeded_rng(5);
    for i in 0..10_000 {
        let (a, b) = (uniform(&mut rng, -1.0, 1.0), uniform(&mut rng, -1.0, 1.0));
        let class = if i == 4321 { "defect" } else { "good" };
        text.push_str(&format!("{a},{b},{class}\n"));
    }
    // A class of one row is refused unless classification is asked for.
    let refused = CsvOptions::new("class")
        .read_str(&text, "rare.csv")
        .unwrap_err();
    assert_eq!(
        refused.to_string(),
        "rare.csv: column \"class\" (2): 1 of its 2 classes has a single row: \"defect\" (line 4323); a class of one row cannot be both learnt and checked. If the target holds classes, set task = classification to go ahead anyway; if it is a number, set task = regression"
    );
    let data = CsvOptions::new("class")
        .task(stratanet::data::Task::Classification)
        .read_str(&text, "rare.csv")
        .unwrap();
    assert_eq!(data.class_counts(), [1, 9999]);
    // The one positive goes to the training rows; fitting works.
    let options = quick()
        .epochs(5)
        .batch_size(stratanet::train::BatchSize::Rows(256));
    let fitted = fit_with_seed(&data, &options, 9).unwrap();
    let (scores, _) = Scores::of(fitted.model(), &data).unwrap();
    for metric in scores.metrics() {
        let v = scores.value(metric).unwrap();
        assert!(v.is_finite(), "{} is {v}", metric.name());
    }
    // Precision of the rare class is undefined when it is never predicted:
    // the score says so rather than showing NaN.
    let notes = scores.notes().join("\n");
    assert!(!notes.contains("NaN"), "{notes}");
    // Five folds cannot each hold out a row of a class of one.
    let err =
        cross_validate(&data, &options, &CvOptions::default(), &mut seeded_rng(1)).unwrap_err();
    let text = err.to_string();
    assert!(
        matches!(err.kind(), ErrorKind::InvalidOption { .. })
            && text.contains("folds")
            && text.contains('1'),
        "{text}"
    );
}

#[test]
fn a_diverging_learning_rate_stops_with_the_epoch_and_the_rate() {
    let text = table_with(&[], 200, 2);
    let data = CsvOptions::new("class")
        .read_str(&text, "diverge.csv")
        .unwrap();
    let options = FitOptions::default()
        .hidden(&[8])
        .activation(stratanet::network::Activation::Relu)
        .learning_rate(1e12)
        .optimiser(stratanet::train::Optimiser::Sgd)
        .early_stopping(None)
        .validation_share(0.0)
        .epochs(50);
    let err = fit_with_seed(&data, &options, 4).unwrap_err();
    let text = err.to_string();
    assert!(
        matches!(err.kind(), ErrorKind::Diverged { .. }),
        "expected divergence, got {text}"
    );
    assert!(
        text.starts_with("training diverged at epoch ")
            && text.contains("learning_rate 1000000000000"),
        "{text}"
    );
}

#[test]
fn five_hundred_classes_fit_predict_and_cross_validate() {
    let classes = 500;
    let rows = classes * 4;
    let mut rng = seeded_rng(8);
    let x = Array2::from_shape_fn((rows, 3), |_| uniform(&mut rng, -1.0, 1.0));
    let labels: Vec<usize> = (0..rows).map(|i| i % classes).collect();
    let names: Vec<String> = (0..classes).map(|c| format!("type-{c:03}")).collect();
    let data = Dataset::classification(x, labels, names).unwrap();
    let options = FitOptions::default()
        .hidden(&[16])
        .epochs(3)
        .batch_size(stratanet::train::BatchSize::Rows(64))
        .validation_share(0.0)
        .early_stopping(None);
    let fitted = fit_with_seed(&data, &options, 2).unwrap();
    assert_eq!(fitted.model().network().sizes(), [3, 16, 500]);
    let p = fitted.model().predict_probabilities(data.x()).unwrap();
    assert_eq!(p.ncols(), 500);
    for row in p.rows() {
        let sum: f64 = row.sum();
        assert!((sum - 1.0).abs() < 1e-12 && row.iter().all(|v| v.is_finite()));
    }
    let cv = CvOptions {
        folds: 2,
        ..CvOptions::default()
    };
    let result = cross_validate(&data, &options, &cv, &mut seeded_rng(3)).unwrap();
    for s in &result.summary {
        assert!(s.summary.mean.is_finite(), "{}", s.metric.name());
    }
}

#[test]
fn an_input_far_outside_the_training_range_is_an_error_not_nan() {
    let text = table_with(&[], 200, 6);
    let data = CsvOptions::new("class")
        .read_str(&text, "train.csv")
        .unwrap();
    let options = quick().activation(stratanet::network::Activation::Relu);
    let model = fit_with_seed(&data, &options, 1).unwrap().into_model();
    // RELIABILITY.md, "Hostile numbers": refused, naming the row and the
    // feature. (The value 1.7e308 is near the largest binary64,
    // 1.7976931348623157e308, IEEE 754-2019; scaling it overflows.)
    let far = ndarray::array![[0.5, 0.5], [1.7e308, -1.7e308]];
    let err = model.predict_probabilities(far.view()).unwrap_err();
    assert_eq!(
        err.to_string(),
        "predicting row 2 (counting from 1), feature x0: the value 1.7e308 is so far outside the range the model was fitted on that scaling overflows; check the row's values and units"
    );
    // Finite after scaling (1.755e308, below the largest binary64), yet
    // large enough to overflow a rectifier layer: refused too. (Smaller
    // rows such as (1e306, 1e306) give finite outputs on this model, 0 or
    // 1, and are not refused.)
    let overflow = ndarray::array![[-1e308, 1e308]];
    let err = model.predict(overflow.view()).unwrap_err();
    assert_eq!(
        err.to_string(),
        "predicting row 1 (counting from 1): the network's output overflowed (f64 arithmetic); the row's largest input in magnitude is 1.7552197713516014e308 after scaling, far outside the range the model was fitted on; check the row's values and units"
    );
    let nan = ndarray::array![[f64::NAN, 0.0]];
    let err = model.predict(nan.view()).unwrap_err();
    assert!(
        err.to_string()
            == "predicting row 1 (counting from 1), feature x0: the value NaN is not a finite number; remove or fill the row first",
        "{err}"
    );
}

/// Hostile sweep plans: a hand-edited plan whose folds name rows beyond
/// the table, or that asks for an absurd number of trials, is refused
/// before anything runs.
#[test]
fn edited_sweep_plans_are_refused_before_any_trial_runs() {
    use stratanet::validate::{Grid, SweepPlan};
    let text = table_with(&[], 60, 7);
    let data = CsvOptions::new("class")
        .read_str(&text, "plan.csv")
        .unwrap();
    let grid = Grid {
        learning_rates: vec![0.01, 0.1],
        ..Grid::default()
    };
    let cv = CvOptions {
        folds: 3,
        ..CvOptions::default()
    };
    let plan = SweepPlan::new(
        &data,
        &quick(),
        &grid.clone().into(),
        &cv,
        Metric::Accuracy,
        &mut seeded_rng(1),
    )
    .unwrap();
    plan.check().unwrap();
    plan.folds.check(data.n_rows()).unwrap();

    let mut beyond = plan.clone();
    beyond.folds.folds[1].test.push(60);
    let err = beyond.run_trial(&data, 1).unwrap_err();
    assert_eq!(
        err.to_string(),
        "fold plan, fold 1: a held-out row is beyond the table's 60 rows; write the plan again from the same table"
    );
    let mut overlap = plan.clone();
    let row = overlap.folds.folds[0].test[0];
    overlap.folds.folds[0].train.push(row);
    overlap.folds.folds[0].train.sort_unstable();
    assert!(overlap
        .folds
        .check(60)
        .unwrap_err()
        .to_string()
        .contains(&format!("row {row} is both fitted on and held out")));

    let mut huge = plan.clone();
    let fold = huge.folds.folds[0].clone();
    huge.folds.folds = vec![fold; 1001];
    huge.folds.seeds = vec![1; 1001];
    huge.configurations = vec![huge.configurations[0].clone(); 1000];
    assert!(huge
        .check()
        .unwrap_err()
        .to_string()
        .contains("asks for 1001000 trials, above the limit of 1000000"));
}

// ------------------------------------------------------------- huge inputs

#[test]
fn a_ten_megabyte_cell_is_refused_by_line_and_column() {
    let mut text = String::from("x,class\n1,a\n");
    text.push_str(&"7".repeat(10_000_000));
    text.push_str(",b\n");
    let err = CsvOptions::new("class")
        .read_str(&text, "wide-cell.csv")
        .unwrap_err();
    let msg = err.to_string();
    assert!(
        msg.contains("wide-cell.csv") && msg.contains("line 3") && msg.contains("10000000 bytes"),
        "{msg}"
    );
}

#[test]
fn a_header_of_one_hundred_thousand_columns_is_refused() {
    let header: Vec<String> = (0..100_000).map(|i| format!("c{i}")).collect();
    let text = format!("{},class\n", header.join(","));
    let err = CsvOptions::new("class")
        .read_str(&text, "many-columns.csv")
        .unwrap_err();
    assert_eq!(
        err.to_string(),
        "many-columns.csv: line 1: the header has 100001 columns, more than the limit of 10000; select the columns you need before reading"
    );
}

/// One endless line (200 MiB of a digit, never a newline) or an endless
/// quoted cell is refused after at most the record limit of 64 MiB has been
/// buffered, not read into memory whole.
#[test]
fn an_endless_record_is_refused_at_the_record_limit() {
    use std::io::Read;
    let endless_line = b"x,class\n1,a\n"
        .chain(std::io::repeat(b'7').take(200 << 20))
        .chain(&b",b\n"[..]);
    let err = CsvOptions::new("class")
        .read_from(endless_line, std::path::Path::new("endless.csv"))
        .unwrap_err();
    assert_eq!(
        err.to_string(),
        "endless.csv: reading failed: the record starting on line 3 runs past 64 MiB without ending (the limit for one row); the file is not a table of rows, or a quote is never closed"
    );
    let endless_quote = b"x,class\n\"".chain(std::io::repeat(b'\n').take(200 << 20));
    let err = CsvOptions::new("class")
        .read_from(endless_quote, std::path::Path::new("quote.csv"))
        .unwrap_err();
    assert!(err.to_string().contains("runs past 64 MiB"), "{err}");
}

// ------------------------------------------------------------- hostile names

/// Names come from the table and travel in model files, charts and pages,
/// but never become paths: the chart files have fixed names, and markup or
/// path tricks in a column or class name are shown as text.
#[test]
fn path_tricks_and_markup_in_names_stay_text() {
    let hostile_class = "</text><script>alert(1)</script>";
    let mut text = String::from("\"<b>width</b>\",../../etc/passwd,class\n");
    let mut rng = seeded_rng(12);
    for i in 0..120 {
        let (a, b) = (uniform(&mut rng, -1.0, 1.0), uniform(&mut rng, -1.0, 1.0));
        let class = if a > 0.0 {
            hostile_class
        } else {
            "..\\..\\boot.ini"
        };
        text.push_str(&format!("{a},{b},\"{class}\"\n"));
        let _ = i;
    }
    let data = CsvOptions::new("class")
        .read_str(&text, "names.csv")
        .unwrap();
    let fitted = fit_with_seed(&data, &quick(), 1).unwrap();
    let dir = crate::support::scratch("hostile-names");
    let table = dir.join("names.csv");
    std::fs::write(&table, &text).unwrap();
    let charts = dir.join("charts");
    let run = std::process::Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args([
            "fit",
            table.to_str().unwrap(),
            "--target",
            "class",
            "--epochs",
            "40",
        ])
        .arg("--out")
        .arg(dir.join("model.json"))
        .arg("--charts")
        .arg(&charts)
        .arg("--quiet")
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let mut written: Vec<std::path::PathBuf> = std::fs::read_dir(&charts)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    written.sort();
    assert!(!written.is_empty());
    for path in &written {
        assert_eq!(path.parent(), Some(charts.as_path()), "{}", path.display());
        let svg = std::fs::read_to_string(path).unwrap();
        let doc = roxmltree::Document::parse(&svg)
            .unwrap_or_else(|e| panic!("{} is not well-formed XML: {e}", path.display()));
        assert!(
            doc.descendants().all(|n| n.tag_name().name() != "script"),
            "{} gained a script element",
            path.display()
        );
    }
    let html = fitted.to_html();
    assert!(
        !html.contains("<script>") && !html.contains("<b>width"),
        "{html}"
    );
    // The names survive a model file unchanged, as data.
    let json = fitted.model().to_json().unwrap();
    let back = stratanet::Model::from_json(&json, "names.json").unwrap();
    assert_eq!(back.target_names(), fitted.model().target_names());
    assert_eq!(back.feature_names(), ["<b>width</b>", "../../etc/passwd"]);
}
