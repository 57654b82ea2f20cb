//! Scratch folders for unit tests: a fresh folder per call, so that tests
//! running at once (threads of one run, or two runs of the suite) never
//! share or clear each other's files.

use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};

static NEXT: AtomicU64 = AtomicU64::new(0);

/// A new, empty folder `tmp/unit-NAME-PID-N` under the build's target
/// folder (`CARGO_TARGET_DIR` when set), unique to this call.
pub(crate) fn fresh_dir(name: &str) -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target"));
    let dir = target.join("tmp").join(format!(
        "unit-{name}-{}-{}",
        std::process::id(),
        NEXT.fetch_add(1, Ordering::Relaxed)
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}
