//! Validation: metrics on labelled sets and statistical tests for comparing models.
pub mod metrics;
pub mod stats;
