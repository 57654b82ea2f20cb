//! Shared helpers for the integration tests.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

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

/// A fresh, empty scratch folder for one test: `NAME-PID-N` under the
/// folder Cargo gives integration tests for temporary files
/// (`CARGO_TARGET_TMPDIR`), unique to this call, so that tests running at
/// once, or two runs of the suite, never share or clear each other's files.
pub fn scratch(name: &str) -> PathBuf {
    static NEXT: AtomicU64 = AtomicU64::new(0);
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!(
        "{name}-{}-{}",
        std::process::id(),
        NEXT.fetch_add(1, Ordering::Relaxed)
    ));
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
