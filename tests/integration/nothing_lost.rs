//! Nothing lost: every file the command line writes (model, predictions,
//! charts) goes to a temporary file in the same folder and is renamed over
//! the target only when complete. Each test here kills a real `stratanet`
//! process in the middle of writing, by a file-size limit: past the limit
//! the kernel sends SIGXFSZ, whose default action ends the process
//! (POSIX.1-2017, setrlimit, RLIMIT_FSIZE; `ulimit -f` in the shell counts
//! 512-byte blocks). The previous file must be intact afterwards.
#![cfg(unix)]

use crate::support::{demo_parts, scratch};
use std::fs;
use std::os::unix::process::ExitStatusExt;
use std::path::Path;
use std::process::{Command, Output};

const SIGXFSZ: i32 = 25; // Linux x86-64 and aarch64

fn stratanet(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .current_dir(dir)
        .output()
        .unwrap()
}

/// Runs `stratanet` with files limited to 64 blocks of 512 bytes (32 KiB).
fn stratanet_limited(dir: &Path, args: &[&str]) -> Output {
    Command::new("sh")
        .arg("-c")
        .arg("ulimit -f 64 && exec \"$0\" \"$@\"")
        .arg(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .current_dir(dir)
        .output()
        .unwrap()
}

fn temporaries(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with('.') && n.contains(".tmp-"))
        .collect();
    names.sort();
    names
}

fn killed_by_the_size_limit(out: &Output) {
    assert_eq!(
        out.status.signal(),
        Some(SIGXFSZ),
        "expected death by SIGXFSZ, got {:?}; stderr: {}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
}

fn setup(name: &str) -> std::path::PathBuf {
    let dir = scratch(name);
    fs::write(dir.join("parts.csv"), demo_parts()).unwrap();
    dir
}

const TABLE: [&str; 5] = ["--target", "verdict", "--drop", "part_id", "--quiet"];

#[test]
fn a_model_save_killed_midway_leaves_the_previous_model() {
    let dir = setup("lost-model");
    let small = [
        &["fit", "parts.csv"][..],
        &TABLE,
        &["--hidden", "3", "--epochs", "5"],
    ]
    .concat();
    let out = stratanet(&dir, &small);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let before = fs::read(dir.join("model.json")).unwrap();
    assert!(
        before.len() < 16 << 10,
        "the first model must fit under the limit"
    );

    // A model of ~40,000 weights writes far more than 32 KiB.
    let big = [
        &["fit", "parts.csv"][..],
        &TABLE,
        &["--hidden", "200-200", "--epochs", "1"],
    ]
    .concat();
    killed_by_the_size_limit(&stratanet_limited(&dir, &big));
    assert_eq!(fs::read(dir.join("model.json")).unwrap(), before);
    stratanet::Model::load(dir.join("model.json")).unwrap();
    // The dead writer's partial temporary is left, hidden, beside it.
    let left = temporaries(&dir);
    assert_eq!(left.len(), 1, "{left:?}");
    assert!(left[0].starts_with(".model.json.tmp-"), "{left:?}");

    // The next complete save replaces the model and adds no temporary.
    let out = stratanet(&dir, &big);
    assert!(out.status.success());
    assert_ne!(fs::read(dir.join("model.json")).unwrap(), before);
    assert_eq!(temporaries(&dir), left);
}

#[test]
fn predictions_and_charts_killed_midway_leave_the_previous_files() {
    let dir = setup("lost-predictions");
    let fit = [
        &["fit", "parts.csv"][..],
        &TABLE,
        &["--hidden", "3", "--epochs", "5"],
    ]
    .concat();
    assert!(stratanet(&dir, &fit).status.success());

    // Predictions: the first table is short, the second (600 rows) is not.
    let head: String = demo_parts()
        .lines()
        .take(4)
        .map(|l| format!("{l}\n"))
        .collect();
    fs::write(dir.join("few.csv"), head).unwrap();
    let predict = |data: &str| {
        [
            "predict",
            "model.json",
            data,
            "--out",
            "predictions.csv",
            "--ignore-extra",
            "--quiet",
        ]
        .map(String::from)
    };
    let out = stratanet(&dir, &predict("few.csv").each_ref().map(String::as_str));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let before = fs::read(dir.join("predictions.csv")).unwrap();
    let many: String = demo_parts()
        + &demo_parts()
            .lines()
            .skip(1)
            .map(|l| format!("{l}\n"))
            .collect::<String>();
    fs::write(dir.join("many.csv"), many).unwrap();
    killed_by_the_size_limit(&stratanet_limited(
        &dir,
        &predict("many.csv").each_ref().map(String::as_str),
    ));
    assert_eq!(fs::read(dir.join("predictions.csv")).unwrap(), before);

    // Charts: a chart folder from a first fit, then a fit killed while its
    // charts are written. Every chart file is either the old one or absent.
    let charts = [&fit[..], &["--charts", "charts"]].concat();
    assert!(stratanet(&dir, &charts).status.success());
    let old: Vec<(String, Vec<u8>)> = fs::read_dir(dir.join("charts"))
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            (
                e.file_name().to_string_lossy().into_owned(),
                fs::read(e.path()).unwrap(),
            )
        })
        .collect();
    assert!(old.len() >= 3);
    let bigger = [
        &["fit", "parts.csv"][..],
        &TABLE,
        &[
            "--hidden", "12", "--seed", "9", "--epochs", "5", "--charts", "charts",
        ],
    ]
    .concat();
    killed_by_the_size_limit(&stratanet_limited(&dir, &bigger));
    for (name, bytes) in &old {
        let now = fs::read(dir.join("charts").join(name)).unwrap();
        assert!(now == *bytes || now.len() < 32 << 10, "{name} was damaged");
        // Complete SVG either way: the old file, or a new one that fitted
        // under the limit and was renamed whole.
        assert!(
            String::from_utf8(now)
                .unwrap()
                .trim_end()
                .ends_with("</svg>"),
            "{name}"
        );
    }
}

/// Output paths equal to an input are refused before anything is written.
#[test]
fn an_output_path_equal_to_an_input_is_refused() {
    let dir = setup("lost-overwrite");
    let before = fs::read(dir.join("parts.csv")).unwrap();
    let fit = [&["fit", "parts.csv"][..], &TABLE, &["--out", "parts.csv"]].concat();
    let out = stratanet(&dir, &fit);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("same file as the input"));
    assert_eq!(fs::read(dir.join("parts.csv")).unwrap(), before);
    let fit = [&["fit", "parts.csv"][..], &TABLE, &["--epochs", "3"]].concat();
    assert!(stratanet(&dir, &fit).status.success());
    for out_path in ["parts.csv", "model.json", "./parts.csv"] {
        let out = stratanet(
            &dir,
            &[
                "predict",
                "model.json",
                "parts.csv",
                "--out",
                out_path,
                "--ignore-extra",
            ],
        );
        assert_eq!(out.status.code(), Some(2), "{out_path}");
    }
    assert_eq!(fs::read(dir.join("parts.csv")).unwrap(), before);
}
