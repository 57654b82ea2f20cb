//! Sweeps split into trials and tasks: chunked, merged, resumed, and the
//! search kinds beyond grids, each giving a local sweep's numbers bit for
//! bit. (Common practice, no source: a split computation must equal the
//! whole.)

use crate::support::{demo_parts, scratch};
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn stratanet(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .output()
        .expect("the binary runs")
}

#[track_caller]
fn ok(args: &[&str]) -> String {
    let out = stratanet(args);
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap()
}

fn json(args: &[&str]) -> Value {
    serde_json::from_str(&ok(args)).expect("one JSON object")
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// A small table (the demo's first 240 rows) and the options of a quick sweep.
fn setup(name: &str) -> (PathBuf, PathBuf) {
    let dir = scratch(name);
    let table = dir.join("parts.csv");
    let text: String = demo_parts()
        .lines()
        .take(241)
        .map(|l| format!("{l}\n"))
        .collect();
    fs::write(&table, text).unwrap();
    (dir, table)
}

const COMMON: [&str; 10] = [
    "--target", "verdict", "--drop", "part_id", "--folds", "3", "--epochs", "12", "--seed", "5",
];

fn sweep_args<'a>(table: &'a str, search: &[&'a str]) -> Vec<&'a str> {
    let mut args = vec!["sweep", table];
    args.extend(COMMON);
    args.extend(search);
    args
}

fn files_in(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let p = e.unwrap().path();
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                fs::read(&p).unwrap(),
            )
        })
        .collect();
    v.sort();
    v
}

/// Chunked (task i of n, or a list) and one-by-one runs write the same
/// trial files byte for byte, and merging them gives the local sweep's
/// whole JSON and text.
#[test]
fn chunked_trials_equal_unchunked_and_merge_equals_a_local_sweep() {
    let (dir, table) = setup("sweeps-chunked");
    let search = ["--grid-hidden", "2,5", "--grid-learning-rate", "0.01,0.05"];
    let mut local_args = sweep_args(s(&table), &search);
    let local_text = ok(&local_args);
    local_args.push("--json");
    let local = json(&local_args);
    let plan = dir.join("plan.jsonl");
    let mut args = sweep_args(s(&table), &search);
    args.extend(["--write-plan", s(&plan)]);
    ok(&args);
    let trials = 4 * 3;
    // One by one.
    let one = dir.join("one");
    for t in 0..trials {
        ok(&[
            "sweep-trial",
            s(&plan),
            s(&table),
            "--trial",
            &t.to_string(),
            "--out-dir",
            s(&one),
        ]);
    }
    // Task i of 5 (stride), and two lists.
    let strided = dir.join("strided");
    for task in 0..5 {
        ok(&[
            "sweep-trial",
            s(&plan),
            s(&table),
            "--task",
            &task.to_string(),
            "--tasks",
            "5",
            "--out-dir",
            s(&strided),
        ]);
    }
    let listed = dir.join("listed");
    ok(&[
        "sweep-trial",
        s(&plan),
        s(&table),
        "--trials",
        "0-6",
        "--out-dir",
        s(&listed),
    ]);
    ok(&[
        "sweep-trial",
        s(&plan),
        s(&table),
        "--trials",
        "7-11",
        "--out-dir",
        s(&listed),
    ]);
    let reference = files_in(&one);
    assert_eq!(reference.len(), trials);
    assert_eq!(files_in(&strided), reference, "task i of n differs");
    assert_eq!(files_in(&listed), reference, "lists differ");
    // A rerun writes the same bytes (no clock in trial files).
    let again = dir.join("again");
    ok(&[
        "sweep-trial",
        s(&plan),
        s(&table),
        "--trials",
        "0-11",
        "--out-dir",
        s(&again),
    ]);
    assert_eq!(files_in(&again), reference, "a rerun differs");
    // Merging with the table gives the local sweep's whole JSON and text.
    let merged = json(&[
        "sweep-merge",
        s(&plan),
        s(&strided),
        "--data",
        s(&table),
        "--json",
    ]);
    assert_eq!(merged, local);
    assert_eq!(
        ok(&["sweep-merge", s(&plan), s(&strided), "--data", s(&table)]),
        local_text
    );
}

/// A plan changed after it was written (here a fold seed rounded the way
/// a JSON tool that reads numbers as doubles rounds 64-bit integers) is
/// refused by sweep-trial before any trial runs.
#[test]
fn an_altered_plan_is_refused() {
    let (dir, table) = setup("sweeps-altered");
    let plan = dir.join("plan.jsonl");
    let mut args = sweep_args(s(&table), &["--grid-hidden", "2,5"]);
    args.extend(["--write-plan", s(&plan)]);
    ok(&args);
    let text = fs::read_to_string(&plan).unwrap();
    let header: Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    let seed = header["plan"]["folds"][0]["seed"]
        .as_str()
        .unwrap()
        .to_string();
    // What a double-reading JSON tool writes back for a 64-bit integer.
    let rounded = format!("{}", seed.parse::<u64>().unwrap() as f64 as u128);
    assert_ne!(rounded, seed, "pick a seed that doubles cannot hold");
    let altered = dir.join("altered.jsonl");
    fs::write(&altered, text.replacen(&seed, &rounded, 1)).unwrap();
    let out = stratanet(&[
        "sweep-trial",
        s(&altered),
        s(&table),
        "--trial",
        "0",
        "--out-dir",
        s(&dir.join("t")),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr).trim_end(),
        format!(
            "stratanet: {}: line 1: the plan's content does not match its checksum: it was changed after it was written (a JSON tool may have rounded a number); write the plan again instead of editing it",
            altered.display()
        )
    );
    assert!(!dir.join("t").exists());
}

/// The status command lists exactly the missing trials and the array
/// tasks to resubmit; a file from another plan is stale, not done.
#[test]
fn status_lists_exactly_the_missing_trials_and_tasks() {
    let (dir, table) = setup("sweeps-status");
    let plan = dir.join("plan.jsonl");
    let mut args = sweep_args(s(&table), &["--grid-hidden", "2,3,5"]);
    args.extend(["--write-plan", s(&plan)]);
    ok(&args);
    let out = dir.join("trials");
    // 9 trials over 4 tasks; tasks 1 and 3 never ran.
    for task in [0, 2] {
        ok(&[
            "sweep-trial",
            s(&plan),
            s(&table),
            "--task",
            &task.to_string(),
            "--tasks",
            "4",
            "--out-dir",
            s(&out),
        ]);
    }
    // A result of another plan (another seed) in the same folder.
    let other = dir.join("other.jsonl");
    ok(&[
        "sweep",
        s(&table),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--folds",
        "3",
        "--epochs",
        "12",
        "--seed",
        "6",
        "--grid-hidden",
        "2,3,5",
        "--write-plan",
        s(&other),
    ]);
    ok(&[
        "sweep-trial",
        s(&other),
        s(&table),
        "--trial",
        "1",
        "--out",
        s(&out.join("foreign.json")),
    ]);
    let v = json(&["sweep-status", s(&plan), s(&out), "--tasks", "4", "--json"]);
    // Task 1 ran trials 1, 5; task 3 ran 3, 7.
    assert_eq!(v["missing"], serde_json::json!([1, 3, 5, 7]));
    assert_eq!(v["done"], 5);
    assert_eq!(v["rerun_tasks"], "1,3");
    assert_eq!(v["rerun_trials"], "1,3,5,7");
    assert_eq!(v["stale"].as_array().unwrap().len(), 1);
    let merge = stratanet(&["sweep-merge", s(&plan), s(&out)]);
    assert_eq!(merge.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&merge.stderr)
            .contains("this trial result was made from a different plan"),
        "{}",
        String::from_utf8_lossy(&merge.stderr)
    );
    fs::remove_file(out.join("foreign.json")).unwrap();
    let merge = stratanet(&["sweep-merge", s(&plan), s(&out)]);
    assert_eq!(
        String::from_utf8_lossy(&merge.stderr).trim_end(),
        "stratanet: merging sweep trials: no results for trials 1,3,5,7; run them (sweep-trial --trials 1,3,5,7) and merge again"
    );
    for task in [1, 3] {
        ok(&[
            "sweep-trial",
            s(&plan),
            s(&table),
            "--task",
            &task.to_string(),
            "--tasks",
            "4",
            "--out-dir",
            s(&out),
        ]);
    }
    let v = json(&["sweep-status", s(&plan), s(&out), "--json"]);
    assert_eq!(v["missing"], serde_json::json!([]));
    ok(&["sweep-merge", s(&plan), s(&out)]);
}

/// Random search draws the same configurations from the same seed, within
/// their ranges, and gives the same table locally and through trial files.
#[test]
fn random_search_reproduces_locally_and_through_trial_files() {
    let (dir, table) = setup("sweeps-random");
    let search = [
        "--random",
        "4",
        "--range-learning-rate",
        "0.001:0.1",
        "--range-hidden",
        "2:12",
    ];
    let mut args = sweep_args(s(&table), &search);
    args.push("--json");
    let local = json(&args);
    assert_eq!(json(&args), local, "a rerun differs");
    let rows = local["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 4);
    for r in rows {
        let name = r["name"].as_str().unwrap();
        assert!(
            name.starts_with("draw ") && name.contains("rate ") && name.contains("hidden "),
            "{name}"
        );
    }
    let plan = dir.join("plan.jsonl");
    let mut args = sweep_args(s(&table), &search);
    args.extend(["--write-plan", s(&plan)]);
    ok(&args);
    let out = dir.join("trials");
    ok(&[
        "sweep-trial",
        s(&plan),
        s(&table),
        "--task",
        "0",
        "--tasks",
        "2",
        "--out-dir",
        s(&out),
    ]);
    ok(&[
        "sweep-trial",
        s(&plan),
        s(&table),
        "--task",
        "1",
        "--tasks",
        "2",
        "--out-dir",
        s(&out),
    ]);
    assert_eq!(
        json(&[
            "sweep-merge",
            s(&plan),
            s(&out),
            "--data",
            s(&table),
            "--json"
        ]),
        local
    );
}

/// Successive halving gives the same rounds and final table locally and
/// as one plan per round run through trial files; the model refitted at
/// the merge says which plan chose it.
#[test]
fn successive_halving_reproduces_locally_and_round_by_round() {
    let (dir, table) = setup("sweeps-halving");
    let search = [
        "--grid-hidden",
        "2,3,4,5",
        "--grid-learning-rate",
        "0.01,0.05",
        "--halving",
        "2",
    ];
    let mut args = sweep_args(s(&table), &search);
    let local_text = ok(&args);
    args.push("--json");
    let local = json(&args);
    let rounds = local["rounds"].as_array().unwrap();
    // 8 configurations, factor 2: rounds of 8, 4 and 2 at 3, 6 and 12 epochs.
    assert_eq!(rounds.len(), 2);
    assert_eq!(
        (
            rounds[0]["configurations"].clone(),
            rounds[0]["epochs"].clone()
        ),
        (8.into(), 3.into())
    );
    assert_eq!(
        (
            rounds[1]["configurations"].clone(),
            rounds[1]["epochs"].clone()
        ),
        (4.into(), 6.into())
    );
    assert_eq!(local["rows"].as_array().unwrap().len(), 2);
    let mut plan = dir.join("round-1.jsonl");
    let mut args = sweep_args(s(&table), &search);
    args.extend(["--write-plan", s(&plan)]);
    ok(&args);
    for round in 1..=3 {
        let out = dir.join(format!("trials-{round}"));
        ok(&[
            "sweep-trial",
            s(&plan),
            s(&table),
            "--task",
            "0",
            "--tasks",
            "1",
            "--out-dir",
            s(&out),
        ]);
        if round < 3 {
            let next = dir.join(format!("round-{}.jsonl", round + 1));
            ok(&["sweep-merge", s(&plan), s(&out), "--next-plan", s(&next)]);
            plan = next;
        } else {
            assert_eq!(
                json(&[
                    "sweep-merge",
                    s(&plan),
                    s(&out),
                    "--data",
                    s(&table),
                    "--json"
                ]),
                local
            );
            assert_eq!(
                ok(&["sweep-merge", s(&plan), s(&out), "--data", s(&table)]),
                local_text
            );
            let model = dir.join("best.json");
            ok(&[
                "sweep-merge",
                s(&plan),
                s(&out),
                "--data",
                s(&table),
                "--out",
                s(&model),
            ]);
            let m: Value = serde_json::from_str(&fs::read_to_string(&model).unwrap()).unwrap();
            let how = m["provenance"]["selected_by"].as_str().unwrap();
            assert!(
                how.contains("successive halving") && how.contains("round-3.jsonl"),
                "{how}"
            );
        }
    }
}
