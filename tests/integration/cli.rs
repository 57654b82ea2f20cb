//! The built `stratanet` binary, run as a user would.

use crate::support::{data_dir, scratch};
use serde_json::Value;
use std::path::Path;
use std::process::{Command, Output};
use stratanet::model_file::FeatureOptions;

fn stratanet(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .output()
        .expect("the binary runs")
}

fn json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout.clone()).unwrap();
    assert_eq!(
        text.trim_end().lines().count(),
        1,
        "--json prints exactly one line: {text}"
    );
    serde_json::from_str(&text).expect("stdout is one JSON object")
}

fn parts() -> String {
    concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv").to_string()
}

fn has_keys(v: &Value, keys: &[&str]) {
    for k in keys {
        assert!(v.get(k).is_some(), "JSON lacks key {k}: {v}");
    }
}

/// The demo table with its columns in another order (and the ids last).
fn reordered(dir: &Path) -> String {
    let text = std::fs::read_to_string(parts()).unwrap();
    let mut out = String::new();
    for line in text.lines() {
        let c: Vec<&str> = line.split(',').collect();
        out.push_str(&[c[4], c[3], c[1], c[2], c[5], c[0]].join(","));
        out.push('\n');
    }
    let path = dir.join("reordered.csv");
    std::fs::write(&path, out).unwrap();
    path.display().to_string()
}

#[test]
fn fit_then_predict_with_reordered_columns() {
    let dir = scratch("cli-fit-predict");
    let model = dir.join("model.json").display().to_string();
    let fit = json(&stratanet(&[
        "fit",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--hidden",
        "6",
        "--epochs",
        "60",
        "--out",
        &model,
        "--json",
    ]));
    has_keys(
        &fit,
        &[
            "command",
            "model",
            "rows",
            "dropped_rows",
            "features",
            "target",
            "classes",
            "sizes",
            "parameters",
            "epochs_run",
            "best_epoch",
            "stopped_early",
            "best_validation_loss",
            "final_training_loss",
            "validation_accuracy",
            "seed",
            "table_fingerprint",
            "charts",
        ],
    );
    assert_eq!(fit["rows"], 600);
    let plain = dir.join("plain.csv").display().to_string();
    let moved = dir.join("moved.csv").display().to_string();
    let p1 = json(&stratanet(&[
        "predict",
        &model,
        &parts(),
        "--ignore-extra",
        "--out",
        &plain,
        "--json",
    ]));
    has_keys(&p1, &["command", "model", "data", "rows", "out", "columns"]);
    let p2 = json(&stratanet(&[
        "predict",
        &model,
        &reordered(&dir),
        "--ignore-extra",
        "--out",
        &moved,
        "--json",
    ]));
    assert_eq!(p2["rows"], 600);
    let a = std::fs::read_to_string(&plain).unwrap();
    let b = std::fs::read_to_string(&moved).unwrap();
    assert_eq!(a, b, "reordering columns changed the predictions");
    assert!(
        a.starts_with("line,predicted,p_accept,p_rework,p_scrap\n2,"),
        "{}",
        &a[..60]
    );
    let check = json(&stratanet(&[
        "check",
        &model,
        &reordered(&dir),
        "--ignore-extra",
        "--json",
    ]));
    has_keys(
        &check,
        &[
            "command",
            "model",
            "data",
            "rows",
            "metrics",
            "notes",
            "confusion",
            "classes",
        ],
    );
    assert!(check["metrics"]["accuracy"].as_f64().unwrap() > 0.7);
    // Without --ignore-extra the unused id column is refused, by name.
    let out = stratanet(&["predict", &model, &parts(), "--out", &plain]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&out.stderr).contains("part_id"),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // An output path equal to the input is refused and the input survives.
    let before = std::fs::read(parts()).unwrap();
    let out = stratanet(&[
        "predict",
        &model,
        &parts(),
        "--ignore-extra",
        "--out",
        &parts(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(std::fs::read(parts()).unwrap(), before);
}

#[test]
fn cv_json_has_per_fold_values_and_intervals() {
    let v = json(&stratanet(&[
        "cv",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--folds",
        "3",
        "--hidden",
        "4",
        "--epochs",
        "30",
        "--json",
    ]));
    has_keys(
        &v,
        &[
            "command", "data", "seed", "folds", "repeats", "rows", "metrics", "notes", "charts",
        ],
    );
    let acc = &v["metrics"]["accuracy"];
    has_keys(acc, &["folds", "mean", "std_dev", "ci_low", "ci_high"]);
    assert_eq!(acc["folds"].as_array().unwrap().len(), 3);
    let (lo, mean, hi) = (
        acc["ci_low"].as_f64().unwrap(),
        acc["mean"].as_f64().unwrap(),
        acc["ci_high"].as_f64().unwrap(),
    );
    assert!(lo <= mean && mean <= hi);
    // By hand from the printed fold scores: 3 stratified folds of the 600
    // rows hold out 200 and fit on 400 (n_test / n_train = 1/2); the
    // corrected resampled variance (C. Nadeau & Y. Bengio, "Inference for
    // the generalization error", Machine Learning 52, 2003) on the logit
    // scale; t_{0.975,2} = 4.302653, the closed form (2p - 1) sqrt(2 / (4p
    // (1 - p))) of the t quantile with 2 degrees of freedom (printed 4.303
    // in standard t tables, e.g. R. A. Fisher & F. Yates, "Statistical
    // Tables for Biological, Agricultural and Medical Research", 1963).
    let folds: Vec<f64> = acc["folds"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let m = folds.iter().sum::<f64>() / 3.0;
    let var = folds.iter().map(|x| (x - m).powi(2)).sum::<f64>() / 2.0;
    let t = 0.95 * (2.0 / (4.0 * 0.975 * 0.025f64)).sqrt();
    let half = t * ((1.0 / 3.0 + 0.5) * var).sqrt() / (m * (1.0 - m));
    let logit = (m / (1.0 - m)).ln();
    let back = |g: f64| 1.0 / (1.0 + (-g).exp());
    crate::support::close(mean, m, 1e-12, "mean");
    crate::support::close(acc["std_dev"].as_f64().unwrap(), var.sqrt(), 1e-12, "sd");
    crate::support::close(lo, back(logit - half), 1e-9, "interval low");
    crate::support::close(hi, back(logit + half), 1e-9, "interval high");
}

#[test]
fn sweep_plan_trials_and_merge_equal_a_local_sweep() {
    let dir = scratch("cli-sweep");
    let common = [
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--folds",
        "3",
        "--epochs",
        "20",
        "--grid-hidden",
        "2,6",
    ];
    let data = parts();
    let mut args = vec!["sweep", &data[..]];
    args.extend(common);
    args.push("--json");
    let local = json(&stratanet(&args));
    has_keys(&local, &["command", "metric", "rows", "best", "model"]);
    let plan = dir.join("plan.jsonl").display().to_string();
    let mut args = vec!["sweep", &data[..]];
    args.extend(common);
    args.extend(["--write-plan", &plan, "--json"]);
    let planned = json(&stratanet(&args));
    assert_eq!(planned["trials"], 6);
    assert_eq!(
        std::fs::read_to_string(&plan).unwrap().lines().count(),
        7,
        "a header line and one line per trial"
    );
    let mut files = Vec::new();
    for t in 0..6 {
        let out = dir.join(format!("trial-{t}.json")).display().to_string();
        json(&stratanet(&[
            "sweep-trial",
            &plan,
            &parts(),
            "--trial",
            &t.to_string(),
            "--out",
            &out,
            "--json",
        ]));
        files.push(out);
    }
    files.reverse();
    let table = parts();
    let mut args = vec!["sweep-merge", &plan[..]];
    args.extend(files.iter().map(String::as_str));
    args.extend(["--data", &table, "--json"]);
    let merged = json(&stratanet(&args));
    assert_eq!(merged, local, "merged trials differ from the local sweep");
}

#[test]
fn malformed_csvs_exit_2_naming_line_and_column() {
    let bad = data_dir().join("bad");
    let cases = [
        ("ragged.csv", "line 3"),
        ("not_a_number.csv", "column \"bore_um\" (0): 1 cell is a number but 1 is not: \"12a\" (1 cell, line 3)"),
        ("missing.csv", "line 3, column \"roughness_um\""),
        ("duplicate.csv", "line 1"),
        ("infinite.csv", "column \"roughness_um\" (1): 1 cell is a number but 1 is not: \"inf\" (1 cell, line 2)"),
        ("empty.csv", "empty"),
        ("header_only.csv", "no data rows"),
        ("single_class.csv", "only one class"),
        ("not_utf8.csv", "line 2"),
    ];
    let out_dir = scratch("cli-malformed");
    let never = out_dir.join("never-written.json").display().to_string();
    for (file, expected) in cases {
        let path = bad.join(file).display().to_string();
        for sub in ["fit", "cv"] {
            let mut args = vec![sub, &path[..], "--target", "verdict"];
            if sub == "fit" {
                args.extend(["--out", &never]);
            }
            let out = stratanet(&args);
            let stderr = String::from_utf8_lossy(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{sub} {file}: {stderr}");
            assert!(stderr.starts_with("stratanet: "), "{stderr}");
            assert!(stderr.contains(expected), "{sub} {file}: {stderr}");
            assert!(!stderr.contains("panicked"), "{stderr}");
            assert!(!Path::new(&never).exists(), "{sub} {file} wrote a model");
        }
    }
}

#[test]
fn usage_errors_exit_2_and_help_exits_0() {
    for args in [
        vec!["fit"],
        vec!["fit", "x.csv"],
        vec!["frobnicate"],
        vec!["cv", "x.csv", "--target", "y", "--folds", "many"],
    ] {
        let out = stratanet(&args);
        assert_eq!(
            out.status.code(),
            Some(2),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let out = stratanet(&[
        "fit",
        &parts(),
        "--target",
        "verdict",
        "--learning-rate=-1",
        "--out",
        scratch("cli-usage").join("x.json").to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr).trim_end(),
        "stratanet: option --learning-rate = -1: must be a finite number greater than 0"
    );
    for sub in [
        "fit",
        "check",
        "predict",
        "cv",
        "sweep",
        "sweep-trial",
        "sweep-merge",
        "sweep-status",
        "demo",
    ] {
        let out = stratanet(&[sub, "--help"]);
        assert_eq!(out.status.code(), Some(0), "{sub} --help");
        assert!(
            String::from_utf8_lossy(&out.stdout).contains("Example:"),
            "{sub} --help lacks an example"
        );
    }
}

#[test]
fn demo_writes_the_charts_and_summary() {
    let dir = scratch("cli-demo");
    let out_dir = dir.join("demo").display().to_string();
    let v = json(&stratanet(&["demo", "--out", &out_dir, "--json"]));
    has_keys(&v, &["command", "out", "files", "cv", "comparison"]);
    let summary = std::fs::read_to_string(Path::new(&out_dir).join("summary.html")).unwrap();
    assert!(summary.contains("Caution."));
    assert!(
        summary.matches("<svg").count() >= 8,
        "the summary embeds the charts"
    );
    assert!(v["files"]["charts"].as_array().unwrap().len() >= 8);
    // A rerun gives the same bytes.
    let again = dir.join("again").display().to_string();
    json(&stratanet(&["demo", "--out", &again, "--json"]));
    for f in [
        "parts-model.json",
        "charts/decision-map.svg",
        "charts/learning-curves.svg",
    ] {
        assert_eq!(
            std::fs::read(Path::new(&out_dir).join(f)).unwrap(),
            std::fs::read(Path::new(&again).join(f)).unwrap(),
            "{f} differs between two demo runs"
        );
    }
    // The looks at the held-out rows are counted in a ledger beside the
    // model: a fresh folder's run is the first look, a rerun into the same
    // folder (another process) the second.
    assert_eq!(v["test"]["times_scored"], 1);
    assert!(Path::new(&out_dir).join("holdout-ledger.json").is_file());
    let rerun = json(&stratanet(&["demo", "--out", &out_dir, "--json"]));
    assert_eq!(rerun["test"]["times_scored"], 2);
    let summary = std::fs::read_to_string(Path::new(&out_dir).join("summary.html")).unwrap();
    assert!(
        summary.contains("the held-out set has now been scored 2 times (counted in the ledger holdout-ledger.json, all of the same model)"),
        "the summary says the look is the second"
    );
}

/// The usage check builds every option without touching a file: the
/// README's command lines pass, a bad option is named (the file named in
/// them need not exist).
#[test]
fn check_arguments_validates_without_reading_files() {
    let ok = |line: &str| stratanet::check_command_line(line.split(' '));
    ok("fit absent.csv --target verdict --drop part_id --hidden 12 --out m.json").unwrap();
    ok("sweep absent.csv --target y --grid-hidden 8,16,32 --grid-learning-rate 0.003,0.01")
        .unwrap();
    let err = ok("fit absent.csv --target y --learning-rate 0").unwrap_err();
    assert_eq!(
        err,
        "option --learning-rate = 0: must be a finite number greater than 0"
    );
    let err = ok("cv absent.csv --target y --folds 1").unwrap_err();
    assert_eq!(err, "option --folds = 1: must be at least 2");
    let err = ok("fit").unwrap_err();
    assert!(
        err.starts_with("error: the following required arguments were not provided"),
        "{err}"
    );
}

fn table(file: &str) -> String {
    data_dir().join("tables").join(file).display().to_string()
}

/// The crafted tables through the command line: the decisions and
/// warnings reach the text and every `--json` output's `warnings`; IDs
/// reach the prediction CSV; `check` on the training table says it is
/// in-sample; an option without effect is refused by its flag.
#[test]
fn decisions_and_warnings_reach_text_json_and_predictions() {
    let dir = scratch("cli-tables");
    let model = dir.join("model.json").display().to_string();
    let ids = table("id-column.csv");
    // inspect
    let v = json(&stratanet(&[
        "inspect", &ids, "--target", "grade", "--json",
    ]));
    has_keys(
        &v,
        &[
            "command",
            "rows",
            "task",
            "target",
            "columns",
            "decisions",
            "warnings",
        ],
    );
    assert_eq!(
        v["columns"][0]["role"],
        "left out (looks like an identifier)"
    );
    assert!(v["warnings"][0].as_str().unwrap().contains("--id sample"));
    let out = stratanet(&["inspect", &ids, "--target", "grade"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("why: every non-missing cell is a number"),
        "{text}"
    );
    // fit: the ID carried, warnings in JSON
    let v = json(&stratanet(&[
        "fit", &ids, "--target", "grade", "--id", "sample", "--hidden", "2", "--epochs", "5",
        "--out", &model, "--json",
    ]));
    has_keys(
        &v,
        &[
            "warnings",
            "decisions",
            "notes",
            "baseline",
            "loss",
            "task",
            "ids",
        ],
    );
    assert_eq!(v["ids"][0], "sample");
    assert!(v["notes"][0]
        .as_str()
        .unwrap()
        .starts_with("early stopping is off"));
    // predict carries the IDs
    let preds = dir.join("p.csv").display().to_string();
    let v = json(&stratanet(&[
        "predict", &model, &ids, "--out", &preds, "--json",
    ]));
    has_keys(&v, &["warnings", "decisions", "columns"]);
    let p = std::fs::read_to_string(&preds).unwrap();
    assert!(
        p.starts_with("line,sample,predicted,p_bad,p_ok\n2,S-1000,"),
        "{p}"
    );
    // check on the training table is in-sample
    let v = json(&stratanet(&["check", &model, &ids, "--json"]));
    assert_eq!(v["in_sample"], true);
    assert!(v["warnings"][0]
        .as_str()
        .unwrap()
        .starts_with("these are the rows the model was fitted on"));
    // cv and sweep carry warnings
    let v = json(&stratanet(&[
        "cv", &ids, "--target", "grade", "--folds", "3", "--hidden", "2", "--epochs", "5", "--json",
    ]));
    has_keys(&v, &["warnings", "decisions", "fit_notes"]);
    assert!(v["warnings"][0]
        .as_str()
        .unwrap()
        .contains("looks like an identifier"));
    // --categorical outside --features is refused by its flag
    let out = stratanet(&[
        "fit",
        &ids,
        "--target",
        "grade",
        "--features",
        "width_mm",
        "--categorical",
        "height_mm",
        "--out",
        &model,
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr).trim_end(),
        "stratanet: option --categorical = height_mm: has no effect: the column is not among the --features (width_mm); add it there or leave it out"
    );
    // a regression target in raw units, asked for
    let v = json(&stratanet(&[
        "fit",
        &table("whole-number-target.csv"),
        "--target",
        "count",
        "--task",
        "regression",
        "--hidden",
        "none",
        "--out",
        &model,
        "--json",
    ]));
    assert_eq!(v["task"], "regression");
    assert_eq!(
        v["loss_definition"],
        "half the squared error of the scaled target, mean per row"
    );
}

/// `cv` names the rows its scores come from, puts the baseline and the
/// test against it beside every metric, reports calibration and costs, and
/// writes out-of-fold predictions whose pooled accuracy and Brier score
/// equal the folds' mean (600 rows in 5 equal folds; the pooled mean of
/// equal-sized folds is their mean: arithmetic, no source).
#[test]
fn cv_names_its_rows_with_baselines_calibration_costs_and_out_of_fold_rows() {
    let dir = scratch("cli-cv-honest");
    let oof = dir.join("oof.csv");
    let costs = dir.join("costs.csv");
    std::fs::write(
        &costs,
        "decision,accept,rework,scrap\nship,0,40,300\nrework,15,10,120\nscrap,60,50,20\n",
    )
    .unwrap();
    let out = json(&stratanet(&[
        "cv",
        &parts(),
        "--target",
        "verdict",
        "--id",
        "part_id",
        "--folds",
        "5",
        "--epochs",
        "30",
        "--costs",
        &costs.display().to_string(),
        "--out-of-fold",
        &oof.display().to_string(),
        "--json",
    ]));
    assert_eq!(out["scored_rows"], "out-of-fold");
    let accuracy = &out["metrics"]["accuracy"];
    assert_eq!(accuracy["scored_rows"], "out-of-fold");
    // The baseline predicts the training class shares: its accuracy is the
    // majority class's share of each fold's held-out rows (393 of 600
    // accept in the demo table, stratified folds).
    let base = accuracy["baseline"]["mean"].as_f64().unwrap();
    assert!((base - 393.0 / 600.0).abs() < 0.01, "{base}");
    assert!(accuracy["against_baseline"]["p_value"].as_f64().unwrap() < 0.05);
    let cal = &out["calibration"];
    let b = &cal["brier"];
    let f = |v: &Value| v.as_f64().unwrap();
    // Murphy (1973) with Stephenson et al.'s (2008) within-bin terms.
    let sum = f(&b["reliability"]) - f(&b["resolution"])
        + f(&b["uncertainty"])
        + f(&b["within_bin_variance"])
        - 2.0 * f(&b["within_bin_covariance"]);
    assert!((sum - f(&b["score"])).abs() < 1e-12);
    assert!((f(&b["score"]) - f(&out["metrics"]["brier"]["mean"])).abs() < 1e-12);
    let ece = f(&cal["expected_calibration_error"]);
    assert!((0.0..0.2).contains(&ece), "{ece}");
    assert_eq!(out["costs"]["decisions"][0], "ship");
    assert!(f(&out["costs"]["cost_per_row"]["mean"]) < f(&out["costs"]["baseline"]["mean"]));
    // The out-of-fold file: one line per row, the ID column, and pooled
    // scores equal to the folds' mean.
    let text = std::fs::read_to_string(&oof).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "table_row,part_id,repeat,fold,true_verdict,predicted,p_accept,p_rework,p_scrap"
    );
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 600);
    assert_eq!(rows[0][1], "P00001");
    let right = rows.iter().filter(|r| r[4] == r[5]).count() as f64 / 600.0;
    assert!((right - f(&accuracy["mean"])).abs() < 1e-12);
    let classes = ["accept", "rework", "scrap"];
    let brier: f64 = rows
        .iter()
        .map(|r| {
            (0..3)
                .map(|c| {
                    let y = f64::from(u8::from(r[4] == classes[c]));
                    (r[6 + c].parse::<f64>().unwrap() - y).powi(2)
                })
                .sum::<f64>()
        })
        .sum::<f64>()
        / 600.0;
    assert!((brier - f(&out["metrics"]["brier"]["mean"])).abs() < 1e-9);
}

/// `importance` prints the library's permutation importance for the same
/// table, options and seed, ranked, with the rows it was measured on.
#[test]
fn importance_shows_the_library_result_ranked() {
    use stratanet::prelude::*;
    use stratanet::validate::importance::ImportanceOptions;
    let out = json(&stratanet(&[
        "importance",
        &parts(),
        "--target",
        "verdict",
        "--id",
        "part_id",
        "--folds",
        "3",
        "--epochs",
        "20",
        "--shuffles",
        "2",
        "--seed",
        "7",
        "--json",
    ]));
    let data = CsvOptions::new("verdict")
        .ids(&["part_id"])
        .read(parts())
        .unwrap();
    let mut rng = seeded_rng(7);
    let cv = cross_validate(
        &data,
        &FitOptions::default().epochs(20),
        &CvOptions {
            folds: 3,
            ..Default::default()
        },
        &mut rng,
    )
    .unwrap();
    let imp = cv
        .permutation_importance(
            &data,
            &ImportanceOptions {
                metric: None,
                shuffles: 2,
            },
            &mut rng,
        )
        .unwrap();
    assert_eq!(out["scored_rows"], "out-of-fold");
    assert_eq!(out["metric"], "accuracy");
    let shown = out["columns"].as_array().unwrap();
    for (row, c) in shown.iter().zip(imp.ranked()) {
        assert_eq!(row["column"], c.column.as_str());
        assert_eq!(row["mean_drop"].as_f64().unwrap(), c.summary.mean);
        assert_eq!(row["clearly_used"], c.clearly_used());
    }
    assert_eq!(shown.len(), 4);
}

/// Reads a CSV written by the binary: the header and the rows as text.
fn csv_rows(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let rows = lines
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect();
    (header, rows)
}

/// Asserts that a cell the binary printed reads back as exactly `expected`
/// (Rust's `str::parse::<f64>` rounds correctly, so equal bits mean the
/// printed digits identify the library's double).
#[track_caller]
fn same_bits(cell: &str, expected: f64, what: &str) {
    let read: f64 = cell
        .parse()
        .unwrap_or_else(|e| panic!("{what}: {cell:?}: {e}"));
    assert_eq!(
        read.to_bits(),
        expected.to_bits(),
        "{what}: printed {cell}, the library has {expected:e}"
    );
}

/// `predict` writes the library's probabilities, every digit: each cell of
/// its output reads back to the very double `Model::predict_probabilities`
/// gives for the same rows, and its class is `Model::predict_classes`'.
#[test]
fn predict_writes_the_librarys_probabilities_bit_for_bit() {
    let dir = scratch("cli-predict-bits");
    let model_path = dir.join("model.json");
    let model = model_path.display().to_string();
    json(&stratanet(&[
        "fit",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--hidden",
        "5",
        "--epochs",
        "40",
        "--seed",
        "11",
        "--out",
        &model,
        "--json",
    ]));
    let out = dir.join("predictions.csv");
    json(&stratanet(&[
        "predict",
        &model,
        &parts(),
        "--ignore-extra",
        "--out",
        out.to_str().unwrap(),
        "--json",
    ]));
    let library = stratanet::Model::load(&model_path).unwrap();
    let rows = FeatureOptions::default()
        .ignore_extra(true)
        .read(&library, parts())
        .unwrap();
    let p = library.predict_probabilities(rows.x()).unwrap();
    let classes = library.predict_classes(rows.x()).unwrap();
    let names = library.class_names().unwrap();
    let (header, cells) = csv_rows(&out);
    assert_eq!(
        header,
        ["line", "predicted", "p_accept", "p_rework", "p_scrap"]
    );
    assert_eq!(cells.len(), 600);
    assert_eq!(p.dim(), (600, 3));
    let mut digits = 0;
    for (i, row) in cells.iter().enumerate() {
        assert_eq!(row[0], rows.lines[i].to_string(), "row {i}: line");
        assert_eq!(row[1], names[classes[i]], "row {i}: class");
        for k in 0..3 {
            same_bits(&row[2 + k], p[[i, k]], &format!("row {i}, class {k}"));
            digits = digits.max(row[2 + k].len());
        }
    }
    // Shortest round-trip digits, not a fixed short format: some cell needs
    // more than 15 significant digits.
    assert!(digits >= 17, "longest cell {digits} characters");
}

/// Regression from end to end on the demo's sensor table: fit, predict
/// (every value the library's, bit for bit), check and cross-validate with
/// per-fold scores whose summary is their mean.
#[test]
fn regression_from_fit_to_predict_and_cv() {
    let dir = scratch("cli-regression");
    let sensors = concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/sensors.csv");
    let model_path = dir.join("torque.json");
    let model = model_path.display().to_string();
    let common = [
        "--target",
        "torque_nm",
        "--task",
        "regression",
        "--id",
        "run_id",
        "--hidden",
        "4",
        "--epochs",
        "30",
        "--seed",
        "5",
    ];
    let fit = json(&stratanet(
        &[&["fit", sensors][..], &common, &["--out", &model, "--json"]].concat(),
    ));
    assert_eq!(fit["rows"], 1500);
    assert_eq!(fit["target"], "torque_nm");
    let out = dir.join("torque.csv");
    json(&stratanet(&[
        "predict",
        &model,
        sensors,
        "--ignore-extra",
        "--out",
        out.to_str().unwrap(),
        "--json",
    ]));
    let library = stratanet::Model::load(&model_path).unwrap();
    assert!(library.class_names().is_none());
    let rows = FeatureOptions::default()
        .ignore_extra(true)
        .read(&library, sensors)
        .unwrap();
    let values = library.predict(rows.x()).unwrap();
    let (header, cells) = csv_rows(&out);
    assert_eq!(header, ["line", "run_id", "predicted_torque_nm"]);
    assert_eq!(cells.len(), 1500);
    assert_eq!(cells[0][1], "R00001");
    for (i, row) in cells.iter().enumerate() {
        same_bits(&row[2], values[[i, 0]], &format!("row {i}"));
    }
    let check = json(&stratanet(&[
        "check",
        &model,
        sensors,
        "--ignore-extra",
        "--json",
    ]));
    assert!(
        check["metrics"]["r_squared"].as_f64().unwrap() > 0.5,
        "{check}"
    );
    let cv = json(&stratanet(
        &[&["cv", sensors][..], &common, &["--folds", "3", "--json"]].concat(),
    ));
    for name in [
        "root_mean_squared_error",
        "mean_absolute_error",
        "r_squared",
    ] {
        let m = &cv["metrics"][name];
        let folds: Vec<f64> = m["folds"]
            .as_array()
            .unwrap_or_else(|| panic!("{name}: {cv}"))
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        assert_eq!(folds.len(), 3, "{name}");
        let mean = folds.iter().sum::<f64>() / 3.0;
        crate::support::close(m["mean"].as_f64().unwrap(), mean, 1e-12, name);
    }
    assert!(cv["metrics"].get("accuracy").is_none());
}

/// `cv --charts DIR` writes its charts: each listed in the JSON, each a
/// well-formed SVG in the folder, and nothing else there.
#[test]
fn cv_charts_are_written_and_listed() {
    let dir = scratch("cli-cv-charts");
    let charts = dir.join("charts");
    let v = json(&stratanet(&[
        "cv",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--folds",
        "3",
        "--hidden",
        "4",
        "--epochs",
        "20",
        "--charts",
        charts.to_str().unwrap(),
        "--json",
    ]));
    let listed: Vec<String> = v["charts"]
        .as_array()
        .unwrap_or_else(|| panic!("{v}"))
        .iter()
        .map(|c| c.as_str().unwrap().to_string())
        .collect();
    assert!(!listed.is_empty(), "{v}");
    let mut written: Vec<String> = std::fs::read_dir(&charts)
        .unwrap()
        .map(|e| e.unwrap().path().display().to_string())
        .collect();
    written.sort();
    let mut expected = listed.clone();
    expected.sort();
    assert_eq!(written, expected);
    for path in &written {
        assert!(path.ends_with(".svg"), "{path}");
        let svg = std::fs::read_to_string(path).unwrap();
        let doc = roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{path}: {e}"));
        assert_eq!(doc.root_element().tag_name().name(), "svg", "{path}");
        assert!(
            doc.descendants().filter(|n| n.has_tag_name("text")).count() > 3,
            "{path}: a chart with no words"
        );
    }
}
