//! Shared helpers for the integration tests.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

/// Asserts |a - b| <= tol with a readable message.
#[track_caller]
pub fn close(a: f64, b: f64, tol: f64, what: &str) {
    assert!(
        (a - b).abs() <= tol,
        "{what}: got {a:.12}, expected {b:.12} (tolerance {tol:e}, off by {:e})",
        (a - b).abs()
    );
}

/// The crate's `tests/data` folder.
pub fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("data")
}

/// A fresh scratch folder under the target directory.
pub fn scratch(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("test-scratch")
        .join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

/// The synthetic demo table `demo-data/parts.csv`, as text.
pub fn demo_parts() -> String {
    std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("demo-data")
            .join("parts.csv"),
    )
    .expect("demo-data/parts.csv")
}
