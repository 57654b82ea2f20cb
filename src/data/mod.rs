//! Tables of samples: reading CSV files, building from arrays, scaling,
//! splitting and folding.
//!
//! A [`Dataset`] holds a numeric feature matrix (one row per sample, one
//! column per encoded feature), the names of those columns, how they were
//! encoded from the source columns, and a [`Target`]: class labels for a
//! classifier or numeric values for regression.

pub(crate) mod csv;
mod dataset;
mod scale;
mod scored_rows;
pub(crate) mod split;

pub use self::csv::{
    CsvOptions, Missing, TargetKind, MAX_COLUMNS, MAX_FIELD_BYTES, MAX_RECORD_BYTES,
};
pub use dataset::{ColumnEncoding, Dataset, Target};
pub use scale::{Scaler, Scaling};
pub use scored_rows::ScoredRows;
pub use split::{
    kfold, random_split, repeated_stratified_folds, stratified_folds, stratified_split, Fold, Split,
};
