//! `stratanet::run`, the command line inside a notebook: every subcommand,
//! compared with the built binary's `--json` output for the same line (the
//! same parser, the same job), and `fit` with the library call it stands
//! for.

use crate::support::scratch;
use serde_json::Value;
use std::process::Command;
use stratanet::prelude::*;

fn parts() -> String {
    concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv").to_string()
}

/// The binary's `--json` object for `line`.
fn binary(line: &str) -> Value {
    let mut args: Vec<&str> = line.split_whitespace().collect();
    args.push("--json");
    args.push("--quiet");
    let out = Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(&args)
        .output()
        .expect("the binary runs");
    assert!(
        out.status.success(),
        "{line}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("one JSON object")
}

/// Runs `line` through the magic, checks it shows as HTML, and returns it.
fn magic(line: &str) -> stratanet::CommandOutput {
    let out = stratanet::run(line).unwrap_or_else(|e| panic!("{line}: {e}"));
    assert!(out.to_html().contains("<table"), "{line}: no table");
    out
}

/// The same line through the magic and the binary gives the same JSON
/// (the magic runs first; the binary then rewrites the same files).
fn same_as_binary(line: &str) -> stratanet::CommandOutput {
    let out = magic(line);
    assert_eq!(out.json(), &binary(line), "{line}");
    out
}

#[test]
fn every_subcommand_runs_as_the_binary_does() {
    let dir = scratch("magic-every");
    let d = |name: &str| dir.join(name).display().to_string();
    let p = parts();
    let net = "--target verdict --drop part_id --hidden 4 --epochs 20";
    same_as_binary(&format!("inspect {p} --target verdict"));
    let fit = same_as_binary(&format!(
        "fit {p} {net} --out {} --charts {}",
        d("model.json"),
        d("charts")
    ));
    assert!(fit.model().is_some(), "fit keeps the model");
    assert!(!fit.charts().is_empty(), "fit shows its charts");
    assert!(fit.to_html().contains("<svg"));
    same_as_binary(&format!("check {} {p} --ignore-extra", d("model.json")));
    same_as_binary(&format!(
        "predict {} {p} --ignore-extra --out {}",
        d("model.json"),
        d("predictions.csv")
    ));
    same_as_binary(&format!(
        "export-onnx {} --out {}",
        d("model.json"),
        d("model.onnx")
    ));
    same_as_binary(&format!("cv {p} {net} --folds 2"));
    same_as_binary(&format!("sweep {p} {net} --folds 2 --grid-hidden 2,3"));
    same_as_binary(&format!(
        "nested {p} {net} --folds 2 --inner-folds 2 --grid-hidden 2,3"
    ));
    same_as_binary(&format!(
        "sweep {p} {net} --folds 2 --grid-hidden 2,3 --write-plan {}",
        d("plan.jsonl")
    ));
    std::fs::create_dir_all(dir.join("trials")).unwrap();
    same_as_binary(&format!("sweep-status {} {}", d("plan.jsonl"), d("trials")));
    for trial in 0..4 {
        same_as_binary(&format!(
            "sweep-trial {} {p} --trial {trial} --out {}",
            d("plan.jsonl"),
            d(&format!("trials/trial-{trial}.json"))
        ));
    }

    same_as_binary(&format!("sweep-merge {} {}", d("plan.jsonl"), d("trials")));
    let demo = magic(&format!("demo --out {}", d("demo")));
    assert_eq!(demo.json()["command"], "demo");
}

#[test]
fn fit_gives_the_library_model() {
    let dir = scratch("magic-fit");
    let path = dir.join("model.json");
    let out = magic(&format!(
        "stratanet fit {} --target verdict --drop part_id --hidden 4 --epochs 20 --seed 7 --out {}",
        parts(),
        path.display()
    ));
    let data = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read(parts())
        .unwrap();
    // As the binary does: `fit` with the generator seeded from `--seed`.
    let library = fit(
        &data,
        &FitOptions::default().hidden(&[4]).epochs(20),
        &mut seeded_rng(7),
    )
    .unwrap();
    let model = out.model().expect("the saved model");
    assert_eq!(model.network(), library.model().network());
    assert_eq!(model.scaler(), library.model().scaler());
}

#[test]
fn errors_are_the_binary_messages() {
    let e = stratanet::run(&format!("cv {} --target verdict --folds 1", parts())).unwrap_err();
    let out = Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(["cv", &parts(), "--target", "verdict", "--folds", "1"])
        .output()
        .unwrap();
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert_eq!(stderr.trim_end(), format!("stratanet: {}", e.message()));
    assert!(e.to_html().contains("--folds"));
    let e = stratanet::run("fit 'unclosed").unwrap_err();
    assert!(e.message().contains("not closed"), "{e}");
    // An output is never an input (cli/paths.rs), for the export too.
    let e = stratanet::run("export-onnx model.json --out ./model.json").unwrap_err();
    assert!(e.message().contains("--out"), "{e}");
    let e = stratanet::run("fit --bogus").unwrap_err();
    assert!(e.message().contains("--bogus"), "{e}");
}
