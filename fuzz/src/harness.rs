//! What each fuzz target feeds to stratanet and what it checks.
//!
//! Every reader of outside input must either return a value that keeps its
//! invariants or return an error with a message; it must never panic, loop,
//! or allocate without bound. A panic anywhere here is a finding. The same
//! functions replay the seed corpora and every saved crash in `cargo test`
//! (tests/integration/fuzz_replay.rs), so a fixed crash stays fixed.
//!
//! Option choices come from the first bytes of the input, so one corpus
//! explores the reader's options as well as its text.

use ndarray::Array2;
use std::path::Path;
use std::sync::OnceLock;
use stratanet::data::Dataset;
use stratanet::data::{
    CsvOptions, DecimalMark, Delimiter, Imputer, Missing, Scaler, Scaling, Target, Task,
};
use stratanet::fit::{fit_with_seed, FitOptions, Model};
use stratanet::model_file::{FeatureOptions, TargetColumn};
use stratanet::validate::{metrics::Metric, CvOptions, Grid, SweepPlan};

const DELIMITERS: [Delimiter; 4] = [
    Delimiter::Auto,
    Delimiter::Comma,
    Delimiter::Semicolon,
    Delimiter::Tab,
];

/// The byte a delimiter choice splits names on (detection: a comma).
fn delimiter_byte(d: Delimiter) -> u8 {
    d.byte().unwrap_or(b',')
}

/// An error must say something, and say where.
fn check_error(e: &stratanet::Error, name: &str) {
    let text = e.to_string();
    assert!(!text.trim().is_empty(), "an empty error message");
    // (Messages echo the input, so they may hold any text, "NaN" included:
    // an early version of this check flagged a column named "NaNacc".)
    let _ = name;
}

/// The columns of the first line, split loosely (for choosing names).
fn header_names(text: &str, delimiter: u8) -> Vec<String> {
    let first = text.lines().next().unwrap_or("");
    first
        .split(delimiter as char)
        .map(|s| {
            s.trim_matches(|c: char| c == '"' || c.is_whitespace())
                .to_string()
        })
        .collect()
}

fn pick(names: &[String], byte: u8) -> String {
    if names.is_empty() {
        "y".to_string()
    } else {
        names[byte as usize % names.len()].clone()
    }
}

/// Invariants of a table that was read without error.
fn check_dataset(d: &Dataset) {
    let (rows, cols) = d.x().dim();
    assert!(rows > 0, "a table with no rows was accepted");
    assert_eq!(
        d.feature_names().len(),
        cols,
        "feature names and columns differ"
    );
    assert_eq!(
        d.columns().iter().map(|c| c.width()).sum::<usize>(),
        cols,
        "column encodings and feature width differ"
    );
    let nan = d.x().iter().filter(|v| v.is_nan()).count();
    assert!(
        d.x().iter().all(|v| v.is_finite() || v.is_nan()),
        "an infinite feature was accepted"
    );
    assert_eq!(
        nan > 0,
        d.missing_cells() > 0,
        "NaN cells and the missing-cell count disagree"
    );
    assert_eq!(d.target().len(), rows, "target and features differ in rows");
    match &d.target() {
        Target::Classes { labels, names } => {
            assert!(names.len() >= 2, "fewer than two classes were accepted");
            assert!(
                labels.iter().all(|&l| l < names.len()),
                "a label out of range"
            );
            assert_eq!(d.class_counts().iter().sum::<usize>(), rows);
        }
        Target::Values { values, .. } => {
            assert!(values.iter().all(|v| v.is_finite()), "a non-finite target");
        }
    }
    if let Some(ids) = d.row_ids() {
        assert_eq!(ids.len(), rows, "IDs and rows differ");
    }
    let _ = d.fingerprint();
    let summary = d.summary(Some(5));
    assert!(!summary.columns.is_empty(), "a summary without columns");
    let mut x = d.x().to_owned();
    if nan > 0 {
        match Imputer::from_rows(d.columns(), d.x(), None) {
            Ok(imputer) => {
                imputer.impute_in_place(x.view_mut()).expect("same width");
                assert!(
                    x.iter().all(|v| v.is_finite()),
                    "imputing left a non-finite value"
                );
            }
            Err(e) => {
                check_error(&e, "imputing");
                return;
            }
        }
    }
    for kind in [Scaling::Standardise, Scaling::MinMax] {
        let s = Scaler::from_rows(kind, x.view(), None).expect("a finite table scales");
        let t = s.scaled(x.view()).expect("the same width transforms");
        assert!(
            t.iter().all(|v| v.is_finite()),
            "scaling made a non-finite value"
        );
    }
}

/// The CSV table reader, with every option chosen by the first six bytes:
/// the target (byte 0); the missing-cell policy (error, drop, impute,
/// impute with indicators), the delimiter (detected, comma, semicolon,
/// tab) and the task (auto, classification, regression) (byte 1); a
/// categorical column, a dropped column, an explicit feature list, an ID
/// column, the decimal comma and custom missing markers (byte 4, picks
/// from bytes 2, 3 and 5).
pub fn csv_table(data: &[u8]) {
    if data.len() < 6 {
        return;
    }
    let (head, body) = data.split_at(6);
    let (f1, f2) = (head[1], head[4]);
    let delimiter = DELIMITERS[((f1 >> 2) & 3) as usize];
    let lossy = String::from_utf8_lossy(body);
    let names = header_names(&lossy, delimiter_byte(delimiter));
    let target = pick(&names, head[0]);
    let mut o = CsvOptions::new(&target).delimiter(delimiter);
    o = o.missing(match f1 & 3 {
        0 => Missing::Error,
        1 => Missing::Drop,
        _ => Missing::Impute,
    });
    o.missing_indicators = f1 & 3 == 3;
    o = o.task(match (f1 >> 4) & 3 {
        1 => Task::Classification,
        2 => Task::Regression,
        _ => Task::Auto,
    });
    if f2 & 1 != 0 {
        o = o.categorical(&[&pick(&names, head[2])]);
    }
    if f2 & 2 != 0 {
        o = o.drop(&[&pick(&names, head[3])]);
    }
    if f2 & 4 != 0 {
        let chosen: Vec<&str> = names
            .iter()
            .filter(|n| **n != target)
            .take(1 + head[2] as usize % 4)
            .map(String::as_str)
            .collect();
        o = o.features(&chosen);
    }
    if f2 & 8 != 0 {
        o = o.ids(&[&pick(&names, head[5])]);
    }
    if f2 & 16 != 0 {
        o = o.decimal(DecimalMark::Comma);
    }
    if f2 & 32 != 0 {
        o = o.missing_markers(&["n.a.", "-", &pick(&names, head[5])]);
    }
    match o.read_from(body, Path::new("fuzz.csv")) {
        Ok(d) => check_dataset(&d),
        Err(e) => check_error(&e, "fuzz.csv"),
    }
}

/// A small classifier with a numeric and a text column, fitted once.
fn fixed_model() -> &'static Model {
    static MODEL: OnceLock<Model> = OnceLock::new();
    MODEL.get_or_init(|| {
        let mut text = String::from("length,colour,width,grade\n");
        for i in 0..40 {
            let colour = ["red", "blue", "green", "NA"][i % 4];
            let grade = if i % 2 == 0 { "pass" } else { "fail" };
            let length = if i % 9 == 4 {
                String::new()
            } else {
                format!("{}", i as f64 * 0.25)
            };
            text.push_str(&format!("{length},{colour},{},{grade}\n", (i % 7) as f64));
        }
        let data = CsvOptions::new("grade")
            .missing(Missing::Impute)
            .missing_indicators(true)
            .read_str(&text, "fixed.csv")
            .expect("the fixed table reads");
        let options = FitOptions::default()
            .hidden(&[3])
            .epochs(5)
            .batch_size(stratanet::train::BatchSize::Rows(8));
        fit_with_seed(&data, &options, 7)
            .expect("the fixed model fits")
            .into_model()
    })
}

/// The prediction-table reader (a CSV read against a saved model's columns;
/// the model imputes and has missing indicators), with `ignore_extra`, the
/// target-column rule, the missing-cell policy (the model's, error, drop,
/// impute), the delimiter and the decimal mark chosen by the first byte;
/// predictions of what it accepts must be finite.
pub fn feature_table(data: &[u8]) {
    let Some((&flags, body)) = data.split_first() else {
        return;
    };
    let model = fixed_model();
    let options = FeatureOptions::default()
        .ignore_extra(flags & 1 != 0)
        .target(match (flags >> 1) & 3 {
            1 => TargetColumn::IfPresent,
            2 => TargetColumn::Require,
            _ => TargetColumn::Skip,
        })
        .delimiter(DELIMITERS[((flags >> 4) & 3) as usize]);
    let mut options = options;
    options.missing = match (flags >> 3) & 1 | (flags >> 5) & 2 {
        0 => None,
        1 => Some(Missing::Drop),
        2 => Some(Missing::Error),
        _ => Some(Missing::Impute),
    };
    if flags & 0x80 != 0 {
        options = options.decimal(DecimalMark::Comma);
    }
    match options.read_from(model, body, Path::new("fuzz.csv")) {
        Ok(t) => {
            assert_eq!(t.features.ncols(), model.network().sizes()[0]);
            assert_eq!(t.lines.len(), t.n_rows());
            assert!(t.features.iter().all(|v| v.is_finite() || v.is_nan()));
            let p = model
                .predict_probabilities(t.x())
                .expect("accepted rows predict");
            assert!(p.iter().all(|v| v.is_finite() && (0.0..=1.0).contains(v)));
        }
        Err(e) => check_error(&e, "fuzz.csv"),
    }
}

/// The model-file loader: whatever it accepts must predict finite numbers
/// on a few rows of zeros, and write back to text that loads to the same
/// model and writes the same text again.
pub fn model_file(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    match stratanet::Model::from_json(text, "fuzz.json") {
        Ok(m) => {
            let inputs = m.network().sizes()[0];
            let x = Array2::<f64>::zeros((3, inputs));
            if let Ok(out) = m.predict(x.view()) {
                assert!(
                    out.iter().all(|v| v.is_finite()),
                    "a loaded model predicts non-finite"
                );
            }
            let again = m.to_json().expect("a loaded model writes");
            let back =
                stratanet::Model::from_json(&again, "again.json").expect("written text loads");
            assert_eq!(back.to_json().expect("writes"), again);
        }
        Err(e) => check_error(&e, "fuzz.json"),
    }
}

/// A table and a two-configuration plan on it, made once, for the trial
/// files to be checked against.
fn fixed_plan() -> &'static (Dataset, SweepPlan) {
    static PLAN: OnceLock<(Dataset, SweepPlan)> = OnceLock::new();
    PLAN.get_or_init(|| {
        let mut text = String::from("a,b,class\n");
        for i in 0..30 {
            text.push_str(&format!(
                "{},{},{}\n",
                i % 5,
                (i * 7) % 11,
                ["x", "y", "z"][i % 3]
            ));
        }
        let data = CsvOptions::new("class")
            .read_str(&text, "plan.csv")
            .expect("reads");
        let base = FitOptions::default()
            .hidden(&[2])
            .epochs(2)
            .batch_size(stratanet::train::BatchSize::Rows(4));
        let grid = Grid {
            learning_rates: vec![0.1, 0.2],
            ..Grid::default()
        };
        let cv = CvOptions {
            folds: 3,
            ..CvOptions::default()
        };
        let mut rng = stratanet::rng::seeded_rng(11);
        let plan = SweepPlan::new(
            &data,
            &base,
            &grid.clone().into(),
            &cv,
            Metric::Accuracy,
            &mut rng,
        )
        .expect("the fixed plan draws");
        (data, plan)
    })
}

/// The sweep files: the first byte chooses a plan file (read, checked, and
/// its folds checked against a table of its claimed size) or a trial file
/// (read against a fixed plan, then merged as if every trial had returned
/// it).
pub fn sweep_files(data: &[u8]) {
    let Some((&mode, body)) = data.split_first() else {
        return;
    };
    let Ok(text) = std::str::from_utf8(body) else {
        return;
    };
    if mode & 1 == 0 {
        match stratanet::validate::sweep_files::parse_plan(text, Path::new("fuzz.plan")) {
            Ok(file) => {
                let plan = &file.plan;
                let rows = plan
                    .folds
                    .folds
                    .iter()
                    .flat_map(|f| f.train.iter().chain(&f.test))
                    .max()
                    .map_or(0, |&m| m + 1);
                if plan.folds.check(rows).is_ok() {
                    assert!(!plan.trials().is_empty());
                }
            }
            Err(e) => check_error(&e, "fuzz.plan"),
        }
    } else {
        let (data, plan) = fixed_plan();
        let checksum = fixed_plan_checksum();
        let trials = plan.trials().len();
        match stratanet::validate::sweep_files::parse_trial(
            text,
            Path::new("fuzz.trial"),
            &checksum,
            trials,
        ) {
            Ok(t) => {
                assert!(t.trial < trials);
                let all = vec![t.result; trials];
                match plan.merge(t.rows, &t.classes, all) {
                    Ok(table) => assert_eq!(table.rows.len(), plan.configurations.len()),
                    Err(e) => check_error(&e, "fuzz.trial"),
                }
                let _ = data;
            }
            Err(e) => check_error(&e, "fuzz.trial"),
        }
    }
}

/// The command-line parser and option checks: NUL-separated arguments,
/// parsed and turned into every option the subcommand would use, with no
/// file read or written.
pub fn cli_args(data: &[u8]) {
    let args: Vec<std::ffi::OsString> = data
        .split(|&b| b == 0)
        .map(|a| {
            #[cfg(unix)]
            {
                use std::os::unix::ffi::OsStrExt;
                std::ffi::OsStr::from_bytes(a).to_os_string()
            }
            #[cfg(not(unix))]
            {
                String::from_utf8_lossy(a).into_owned().into()
            }
        })
        .collect();
    if let Err(message) = stratanet::check_command_line(args) {
        assert!(!message.trim().is_empty(), "an empty error message");
    }
}

/// `record_files`: 1 mode byte + a hold-out ledger (even) or a key-results
/// file (odd), the records a reviewer's rerun reads. A ledger accepted
/// counts at least one look per set and no more models than looks; key
/// results accepted write back to text that reads as the same results, and
/// compare with themselves as "same" (when they hold an entry).
pub fn record_files(data: &[u8]) {
    let Some((&mode, body)) = data.split_first() else {
        return;
    };
    let Ok(text) = std::str::from_utf8(body) else {
        return;
    };
    if mode & 1 == 0 {
        match stratanet::validate::holdout_ledger::parse_ledger(text, "fuzz.ledger") {
            Ok(sets) => {
                for set in &sets {
                    assert!(set.looks >= 1, "a set with no look was accepted");
                    assert!((1..=set.looks).contains(&set.models));
                    assert_eq!(set.held_out.len(), 64);
                }
            }
            Err(e) => check_error(&e, "fuzz.ledger"),
        }
    } else {
        match stratanet::validate::KeyResults::from_json(text, "fuzz.results") {
            Ok(results) => {
                let again = results.to_json().expect("accepted results write back");
                let back = stratanet::validate::KeyResults::from_json(&again, "written")
                    .expect("written results read back");
                assert_eq!(back, results);
                assert_eq!(
                    results.compare(&back).is_same(),
                    !results.results.is_empty()
                );
            }
            Err(e) => check_error(&e, "fuzz.results"),
        }
    }
}

/// How the fixed plan's table is read.
pub fn fixed_plan_table() -> CsvOptions {
    CsvOptions::new("class")
}

/// The checksum of the fixed plan's file, which trial files name.
pub fn fixed_plan_checksum() -> String {
    let (_, plan) = fixed_plan();
    stratanet::validate::sweep_files::plan_checksum(plan, &fixed_plan_table())
}

/// The fixed table and plan that trial files are checked against (for
/// writing seed trial files that carry the right plan checksum).
pub fn fixed_plan_parts() -> (Dataset, SweepPlan) {
    let (data, plan) = fixed_plan();
    (data.clone(), plan.clone())
}
