//! Tables of samples: reading CSV files (one row reader, [`rows`], behind
//! every CSV input; training tables and what they decide in [`CsvOptions`];
//! a first look in [`Dataset::summary`]), building from arrays, filling
//! missing cells, scaling, splitting and folding.
//!
//! A [`Dataset`] holds a numeric feature matrix (one row per sample, one
//! column per encoded feature), the names of those columns, how they were
//! encoded from the source columns, and a [`Target`]: class labels for a
//! classifier or numeric values for regression.

pub(crate) mod csv;
mod dataset;
mod impute;
pub mod rows;
mod scale;
mod scored_rows;
pub(crate) mod split;
mod summary;

pub use self::csv::{
    CsvOptions, HIGH_CARDINALITY_MIN, MAX_AUTO_CLASSES, MAX_CLASSES, MIN_ID_CELLS,
    MIN_ROWS_PER_CLASS,
};
pub use dataset::{
    ColumnEncoding, ColumnReport, Dataset, Missing, ReadReport, RowIds, Target, Task,
};
pub use impute::Imputer;
pub use rows::{
    DecimalMark, Delimiter, DEFAULT_MISSING_MARKERS, MAX_COLUMNS, MAX_FIELD_BYTES,
    MAX_RECORD_BYTES, SNIFF_BYTES, SNIFF_ROWS,
};
pub use scale::{Scaler, Scaling};
pub use scored_rows::ScoredRows;
pub use split::{
    kfold, random_split, repeated_stratified_folds, stratified_folds, stratified_split, Fold,
    Split, TablePart,
};
pub use summary::{ColumnSummary, TableSummary};
