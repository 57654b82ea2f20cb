//! The checks behind stratanet's fuzz targets; `harness.rs` is shared with
//! the integration tests, which replay the seed corpora and regressions.
#[path = "harness.rs"]
pub mod harness;
