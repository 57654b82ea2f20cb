//! The command line never destroys an input and never panics on a closed
//! pipe.
//!
//! Every output option is tried with an input as its path: the command must
//! stop with exit code 2 before any work, naming the flag, and leave the
//! input's bytes as they were. (Common practice, no source: an output is
//! never an input.)

use crate::support::{demo_parts, scratch};
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn stratanet(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .output()
        .expect("the binary runs")
}

const TABLE: [&str; 4] = ["--target", "verdict", "--drop", "part_id"];

/// Runs `args`, expects a refusal naming `flag` that comes before any work
/// (well under the time any fit takes), and checks that `input` still holds
/// `before`.
fn refused(args: &[&str], flag: &str, input: &Path, before: &[u8]) {
    let start = Instant::now();
    let out = stratanet(args);
    let took = start.elapsed();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
    assert!(
        stderr.starts_with(&format!("stratanet: option {flag} = ")),
        "{args:?}: {stderr}"
    );
    assert!(
        stderr.contains("which writing would destroy") || stderr.contains("is also written for"),
        "{args:?}: {stderr}"
    );
    assert_eq!(
        fs::read(input).unwrap(),
        before,
        "{args:?} changed {}",
        input.display()
    );
    // Refused in preparation: no epoch ran (a fit of the demo table takes
    // far longer than this on any machine).
    assert!(took < Duration::from_secs(20), "{args:?} took {took:?}");
}

fn setup(name: &str) -> (PathBuf, PathBuf, Vec<u8>) {
    let dir = scratch(name);
    let table = dir.join("parts.csv");
    fs::write(&table, demo_parts()).unwrap();
    let bytes = fs::read(&table).unwrap();
    (dir, table, bytes)
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

#[test]
fn fit_refuses_its_input_as_the_model_or_a_chart() {
    let (dir, table, before) = setup("safety-fit");
    let mut args = vec!["fit", s(&table)];
    args.extend(TABLE);
    args.extend(["--out", s(&table)]);
    refused(&args, "--out", &table, &before);
    // The same file under another spelling.
    let spelled = dir.join(".").join("parts.csv");
    let mut args = vec!["fit", s(&table)];
    args.extend(TABLE);
    args.extend(["--out", s(&spelled)]);
    refused(&args, "--out", &table, &before);
    // A chart the folder would receive.
    let as_chart = dir.join("weights.svg");
    fs::copy(&table, &as_chart).unwrap();
    let model = dir.join("model.json");
    let mut args = vec!["fit", s(&as_chart)];
    args.extend(TABLE);
    args.extend(["--out", s(&model), "--charts", s(&dir)]);
    refused(&args, "--charts", &as_chart, &before);
    assert!(!model.exists());
    // Two outputs on one path: the model where a chart goes.
    let mut args = vec!["fit", s(&table)];
    args.extend(TABLE);
    let charts = dir.join("charts");
    let clash = charts.join("weights.svg");
    fs::create_dir_all(&charts).unwrap();
    args.extend(["--charts", s(&charts), "--out", s(&clash)]);
    refused(&args, "--charts", &table, &before);
}

#[test]
fn predict_refuses_the_model_or_the_rows_as_its_output() {
    let (dir, table, before) = setup("safety-predict");
    let model = dir.join("model.json");
    let mut args = vec!["fit", s(&table)];
    args.extend(TABLE);
    args.extend(["--out", s(&model), "--epochs", "5", "--quiet"]);
    assert!(stratanet(&args).status.success());
    let model_bytes = fs::read(&model).unwrap();
    refused(
        &[
            "predict",
            s(&model),
            s(&table),
            "--ignore-extra",
            "--out",
            s(&table),
        ],
        "--out",
        &table,
        &before,
    );
    refused(
        &[
            "predict",
            s(&model),
            s(&table),
            "--ignore-extra",
            "--out",
            s(&model),
        ],
        "--out",
        &model,
        &model_bytes,
    );
}

#[test]
fn cv_refuses_its_input_as_a_chart() {
    let (dir, table, before) = setup("safety-cv");
    let as_chart = dir.join("cv-scores.svg");
    fs::copy(&table, &as_chart).unwrap();
    let mut args = vec!["cv", s(&as_chart)];
    args.extend(TABLE);
    args.extend(["--charts", s(&dir)]);
    refused(&args, "--charts", &as_chart, &before);
}

#[test]
fn sweep_refuses_its_input_as_the_plan_or_the_model() {
    let (_dir, table, before) = setup("safety-sweep");
    for flag in ["--write-plan", "--out"] {
        let mut args = vec!["sweep", s(&table)];
        args.extend(TABLE);
        args.extend(["--grid-hidden", "2,4", flag, s(&table)]);
        refused(&args, flag, &table, &before);
    }
}

#[test]
fn sweep_trial_refuses_the_plan_or_the_table_as_its_result() {
    let (dir, table, before) = setup("safety-trial");
    let plan = dir.join("plan.jsonl");
    let mut args = vec!["sweep", s(&table)];
    args.extend(TABLE);
    args.extend([
        "--grid-hidden",
        "2,4",
        "--epochs",
        "3",
        "--write-plan",
        s(&plan),
    ]);
    let out = stratanet(&args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let plan_bytes = fs::read(&plan).unwrap();
    for (target, bytes) in [(&plan, &plan_bytes), (&table, &before)] {
        refused(
            &[
                "sweep-trial",
                s(&plan),
                s(&table),
                "--trial",
                "0",
                "--out",
                s(target),
            ],
            "--out",
            target,
            bytes,
        );
    }
}

#[test]
fn demo_refuses_a_folder_holding_other_files() {
    let dir = scratch("safety-demo");
    let mine = dir.join("parts.csv");
    fs::write(&mine, "my own table\n").unwrap();
    let out = stratanet(&["demo", "--out", s(&dir)]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.starts_with(&format!(
            "stratanet: option --out = {}: holds files of its own (parts.csv)",
            dir.display()
        )),
        "{stderr}"
    );
    assert_eq!(fs::read_to_string(&mine).unwrap(), "my own table\n");
}

/// Runs `args` with stdout or stderr connected to a pipe whose reading end
/// is already closed (as `stratanet ... | head -0` would leave it).
fn into_closed_pipe(args: &[&str], stdout: bool) -> Output {
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_stratanet"));
    cmd.args(args);
    if stdout {
        cmd.stdout(writer).stderr(Stdio::piped());
    } else {
        cmd.stderr(writer).stdout(Stdio::piped());
    }
    cmd.output().unwrap()
}

/// A closed pipe ends the program quietly with the exit code it would have
/// had: 2 for a usage error, 0 for help and for a success; never a panic
/// (exit code 101).
#[test]
fn closed_pipes_end_quietly_with_the_usual_exit_code() {
    let out = into_closed_pipe(&["fit", "--bogus"], false);
    assert_eq!(out.status.code(), Some(2));
    let out = into_closed_pipe(&["--help"], true);
    assert_eq!(out.status.code(), Some(0));
    let out = into_closed_pipe(&["fit", "--help"], true);
    assert_eq!(out.status.code(), Some(0));
    let (dir, table, _) = setup("safety-pipe");
    let model = dir.join("model.json");
    let mut args = vec!["fit", s(&table)];
    args.extend(TABLE);
    args.extend(["--out", s(&model), "--epochs", "3", "--json", "--progress"]);
    let out = into_closed_pipe(&args, true);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(model.exists());
    let out = into_closed_pipe(&args, false);
    assert_eq!(out.status.code(), Some(0));
}
