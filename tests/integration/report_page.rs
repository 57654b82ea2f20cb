//! The `--report` pages of `fit`, `cv` and `sweep`, read as a person
//! would: self-contained, every chart captioned, and opened in a real
//! headless Chromium (Debian's `chromium` package) with a screenshot, no
//! console error and every image loaded.
//!
//! The browser step runs when `chromium` is installed (CI installs it);
//! with `STRATANET_BROWSER=required` (set by `.ci/run`) a missing browser
//! is a failure rather than a skip.

use crate::support::scratch;
use std::path::Path;
use std::process::{Command, Output};

fn stratanet(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_stratanet"))
        .args(args)
        .output()
        .expect("the binary runs")
}

fn parts() -> String {
    concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv").to_string()
}

#[track_caller]
fn ok(out: &Output) {
    assert!(
        out.status.success(),
        "failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// No fetch leaves the page: no http(s) in a src, href or CSS url (the
/// SVG namespace `xmlns="http://www.w3.org/2000/svg"` is a name, never
/// fetched).
#[track_caller]
fn self_contained(html: &str) {
    for pattern in [
        "src=\"http",
        "href=\"http",
        "url(http",
        "@import",
        "<script src",
        "<link ",
    ] {
        assert!(
            !html.contains(pattern),
            "the page fetches something: {pattern}"
        );
    }
    assert!(
        html.contains("@font-face{font-family:'Liberation Sans'"),
        "the font is embedded"
    );
    assert_eq!(
        html.matches("<figure>").count(),
        html.matches("<figcaption>").count(),
        "every figure has a caption"
    );
}

/// Opens the page in Chromium through tests/browser/check_page.py.
fn in_browser(page: &Path, name: &str) {
    let chromium = ["chromium", "chromium-browser"].iter().find(|c| {
        Command::new(c)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    });
    let required = std::env::var("STRATANET_BROWSER").is_ok_and(|v| v == "required");
    let Some(chromium) = chromium else {
        assert!(
            !required,
            "STRATANET_BROWSER=required, but no chromium is installed"
        );
        eprintln!("skipping the browser check of {name}: no chromium (apt-get install chromium)");
        return;
    };
    let shots = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("report-screenshots");
    std::fs::create_dir_all(&shots).unwrap();
    let shot = shots.join(format!("{name}.png"));
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/browser/check_page.py");
    let out = Command::new("python3")
        .arg(&script)
        .arg(page)
        .arg(&shot)
        .arg(chromium)
        .output()
        .expect("python3 runs");
    let said = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{name} in Chromium: {said}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: serde_json::Value = serde_json::from_str(said.trim()).expect("one JSON line");
    assert_eq!(report["ok"], true, "{said}");
    assert!(
        std::fs::metadata(&shot).unwrap().len() > 10_000,
        "a screenshot was saved"
    );
}

#[test]
fn fit_writes_a_report_a_browser_shows_whole() {
    let dir = scratch("report-fit");
    let page = dir.join("fit.html");
    let model = dir.join("model.json");
    ok(&stratanet(&[
        "fit",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--hidden",
        "6",
        "--epochs",
        "80",
        "--out",
        model.to_str().unwrap(),
        "--report",
        page.to_str().unwrap(),
        "--quiet",
    ]));
    let html = std::fs::read_to_string(&page).unwrap();
    self_contained(&html);
    for part in [
        "The table",
        "Scores on the 120 validation rows",
        "baseline",
        "ROC curves on the validation rows",
        "Confusion matrix on the validation rows",
        "Decision map over bore dev (µm) and roundness (µm)",
        "Seed 42",
    ] {
        assert!(html.contains(part), "the fit report lacks {part:?}");
    }
    assert!(html.matches("<figure>").count() >= 8);
    in_browser(&page, "fit");
}

#[test]
fn cv_and_sweep_write_reports_too() {
    let dir = scratch("report-cv-sweep");
    let cv = dir.join("cv.html");
    ok(&stratanet(&[
        "cv",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--hidden",
        "4",
        "--epochs",
        "40",
        "--folds",
        "3",
        "--report",
        cv.to_str().unwrap(),
        "--quiet",
    ]));
    let html = std::fs::read_to_string(&cv).unwrap();
    self_contained(&html);
    for part in [
        "baseline mean",
        "Accuracy on the out-of-fold rows",
        "Permutation importance: drop in accuracy",
        "Reliability of hidden 4 (tanh) on the out-of-fold rows",
    ] {
        assert!(html.contains(part), "the cv report lacks {part:?}");
    }
    in_browser(&cv, "cv");
    let sweep = dir.join("sweep.html");
    ok(&stratanet(&[
        "sweep",
        &parts(),
        "--target",
        "verdict",
        "--drop",
        "part_id",
        "--grid-hidden",
        "none,4",
        "--epochs",
        "30",
        "--folds",
        "3",
        "--report",
        sweep.to_str().unwrap(),
        "--quiet",
    ]));
    let html = std::fs::read_to_string(&sweep).unwrap();
    self_contained(&html);
    assert!(html.contains("Sweep of 2 configurations, ranked by accuracy"));
    in_browser(&sweep, "sweep");
}

#[test]
fn a_report_is_an_output_checked_against_the_inputs() {
    let dir = scratch("report-safety");
    let table = dir.join("table.html");
    std::fs::copy(parts(), &table).unwrap();
    // The input itself as the report: refused before any work.
    let out = stratanet(&[
        "fit",
        table.to_str().unwrap(),
        "--target",
        "verdict",
        "--report",
        table.to_str().unwrap(),
    ]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--report") && err.contains("the same file as the input"),
        "{err}"
    );
    // Not a web page.
    let out = stratanet(&[
        "cv",
        &parts(),
        "--target",
        "verdict",
        "--report",
        dir.join("r.txt").to_str().unwrap(),
    ]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("option --report") && err.contains(".html"),
        "{err}"
    );
    // With --write-plan nothing would be reported.
    let out = stratanet(&[
        "sweep",
        &parts(),
        "--target",
        "verdict",
        "--write-plan",
        dir.join("p.jsonl").to_str().unwrap(),
        "--report",
        dir.join("s.html").to_str().unwrap(),
    ]);
    assert!(!out.status.success());
}
