//! [`Dataset`]: a table of samples ready for a network, with its column
//! encoding and its [`Target`].

use super::rows::{DecimalMark, Delimiter};
use super::split::TablePart;
use crate::error::{Error, Message, Result};
use ndarray::{Array2, ArrayView2, Axis};
use std::sync::Arc;

/// How one source column became feature columns.
#[derive(Clone, Debug, PartialEq)]
pub enum ColumnEncoding {
    /// A numeric column, used as it is.
    Numeric {
        /// The source column's name.
        name: String,
    },
    /// A text column, one-hot encoded: one 0/1 feature column per level, named
    /// `name=level`, levels in byte-wise sorted order.
    OneHot {
        /// The source column's name.
        name: String,
        /// The levels seen, sorted.
        levels: Vec<String>,
    },
    /// A 0/1 column that is 1 where the source column's cell is missing
    /// (with missing-cell imputation), named `name:missing`.
    MissingIndicator {
        /// The source column's name.
        name: String,
    },
}

impl ColumnEncoding {
    /// The source column's name.
    pub fn name(&self) -> &str {
        match self {
            ColumnEncoding::Numeric { name }
            | ColumnEncoding::OneHot { name, .. }
            | ColumnEncoding::MissingIndicator { name } => name,
        }
    }

    /// How many feature columns this source column produces.
    pub fn width(&self) -> usize {
        match self {
            ColumnEncoding::Numeric { .. } | ColumnEncoding::MissingIndicator { .. } => 1,
            ColumnEncoding::OneHot { levels, .. } => levels.len(),
        }
    }

    /// The generated feature column names.
    pub fn feature_names(&self) -> Vec<String> {
        match self {
            ColumnEncoding::Numeric { name } => vec![name.clone()],
            ColumnEncoding::OneHot { name, levels } => {
                levels.iter().map(|l| format!("{name}={l}")).collect()
            }
            ColumnEncoding::MissingIndicator { name } => vec![format!("{name}:missing")],
        }
    }
}

/// What to do with a row that has a missing cell in a used column.
///
/// Text form: `error`, `drop`, `impute`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Missing {
    /// Stop with an error naming the line and column (the default).
    #[default]
    Error,
    /// Drop the row and count it.
    Drop,
    /// Keep the row: a missing feature cell is filled when fitting, from
    /// the training rows only (inside every fold): the median of a numeric
    /// column, the most frequent level of a text column (see
    /// [`Imputer`](super::Imputer)). The model records the fill values
    /// and applies them to new rows.
    Impute,
}

crate::error::text_forms!(Missing, "missing", {
    Missing::Error => "error",
    Missing::Drop => "drop",
    Missing::Impute => "impute",
});

/// Classification or regression.
///
/// Text form: `auto`, `classification`, `regression`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Task {
    /// Decided from the target column (see [`CsvOptions`](super::CsvOptions));
    /// the decision is reported.
    #[default]
    Auto,
    /// Predict classes (the target's distinct cells are the classes).
    Classification,
    /// Predict numbers.
    Regression,
}

crate::error::text_forms!(Task, "task", {
    Task::Auto => "auto",
    Task::Classification => "classification",
    Task::Regression => "regression",
});

/// The identifier columns of a table, carried with its rows (and into
/// predictions), never used as features.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RowIds {
    /// The ID columns' names.
    pub(crate) names: Vec<String>,
    /// Their cells, row-major (trimmed text).
    pub(crate) values: Vec<String>,
}

impl RowIds {
    /// The ID columns' names.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        if self.names.is_empty() {
            0
        } else {
            self.values.len() / self.names.len()
        }
    }

    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The ID cells of row `row` (one per ID column).
    ///
    /// # Panics
    /// When `row` is out of range.
    pub fn row(&self, row: usize) -> &[String] {
        let k = self.names.len();
        &self.values[row * k..(row + 1) * k]
    }

    /// The rows at `rows`, in that order.
    pub fn select(&self, rows: &[usize]) -> RowIds {
        RowIds {
            names: self.names.clone(),
            values: rows
                .iter()
                .flat_map(|&r| self.row(r).iter().cloned())
                .collect(),
        }
    }
}

/// How one source column of a CSV table was read: for
/// [`Dataset::report`] and the table summary.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnReport {
    /// The header name.
    pub name: String,
    /// Its 0-based position in the header.
    pub index: usize,
    /// `feature`, or `left out (looks like an identifier)`.
    pub role: String,
    /// `numeric` or `categorical`.
    pub kind: String,
    /// Why it got that kind.
    pub why: String,
    /// Missing cells seen (in dropped rows too).
    pub missing: usize,
    /// The smallest and largest number (numeric columns).
    pub min_max: Option<(f64, f64)>,
    /// The most frequent levels with their counts, at most 20 (categorical
    /// columns).
    pub levels: Vec<(String, usize)>,
    /// Distinct levels (categorical columns).
    pub distinct: Option<usize>,
}

/// How a table was read from CSV: the dialect, each column's decision, and
/// every decision and warning the reader reported.
#[derive(Clone, Debug, PartialEq)]
pub struct ReadReport {
    /// The file.
    pub source: String,
    /// The header's names.
    pub header: Vec<String>,
    /// The delimiter in use.
    pub delimiter: Delimiter,
    /// The decimal mark.
    pub decimal: DecimalMark,
    /// The missing-cell policy.
    pub missing: Missing,
    /// The missing-cell markers in force (besides the empty cell).
    pub missing_markers: Vec<String>,
    /// The task as asked for ([`Task::Auto`] when decided).
    pub task: Task,
    /// The target column.
    pub target: String,
    /// Every candidate feature column, in order.
    pub columns: Vec<ColumnReport>,
    /// The ID columns.
    pub ids: Vec<String>,
    /// The dropped columns.
    pub dropped: Vec<String>,
    /// Decisions the reader made (delimiter, task, rows dropped, cells to
    /// impute), one sentence each.
    pub decisions: Vec<Message>,
    /// What looks wrong (an identifier left out, a constant column, a
    /// high-cardinality text column, a feature that determines the target).
    pub warnings: Vec<Message>,
}

/// Missing source cells in an encoded matrix: a NaN in the first column of
/// each encoding (a one-hot column's missing cell is NaN in all its columns).
pub(crate) fn count_missing(features: &Array2<f64>, columns: &[ColumnEncoding]) -> usize {
    let mut n = 0;
    let mut offset = 0;
    for c in columns {
        if !matches!(c, ColumnEncoding::MissingIndicator { .. }) && offset < features.ncols() {
            n += features
                .column(offset)
                .iter()
                .filter(|v| v.is_nan())
                .count();
        }
        offset += c.width();
    }
    n
}

/// What the network is asked to predict.
#[derive(Clone, Debug, PartialEq)]
pub enum Target {
    /// Class labels `0..names.len()`, one per row.
    Classes {
        /// The class index of each row.
        labels: Vec<usize>,
        /// The class names, in index order.
        names: Vec<String>,
    },
    /// Numeric targets, one row per sample, one column per output.
    Values {
        /// The target values.
        values: Array2<f64>,
        /// The output names.
        names: Vec<String>,
    },
}

impl Target {
    /// Number of rows.
    pub fn len(&self) -> usize {
        match self {
            Target::Classes { labels, .. } => labels.len(),
            Target::Values { values, .. } => values.nrows(),
        }
    }

    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The class labels, for a classification target.
    pub fn labels(&self) -> Option<&[usize]> {
        match self {
            Target::Classes { labels, .. } => Some(labels),
            Target::Values { .. } => None,
        }
    }

    /// The class names (classification) or output names (regression).
    pub fn names(&self) -> &[String] {
        match self {
            Target::Classes { names, .. } | Target::Values { names, .. } => names,
        }
    }

    /// The rows at `rows`, in that order.
    pub fn select(&self, rows: &[usize]) -> Target {
        match self {
            Target::Classes { labels, names } => Target::Classes {
                labels: rows.iter().map(|&r| labels[r]).collect(),
                names: names.clone(),
            },
            Target::Values { values, names } => Target::Values {
                values: values.select(Axis(0), rows),
                names: names.clone(),
            },
        }
    }
}

/// A table of samples ready for a network.
#[derive(Clone, PartialEq)]
pub struct Dataset {
    /// Encoded features: one row per sample.
    pub(crate) features: Array2<f64>,
    /// One name per feature column (one-hot columns read `column=level`).
    pub(crate) feature_names: Vec<String>,
    /// How the source columns were encoded, in order.
    pub(crate) columns: Vec<ColumnEncoding>,
    /// The name of the target column.
    pub(crate) target_name: String,
    /// The target.
    pub(crate) target: Target,
    /// Where the data came from (a file path or a description), for messages.
    pub(crate) source: String,
    /// Rows dropped while reading because of missing cells.
    pub(crate) dropped_rows: usize,
    /// Missing feature cells kept as NaN (with missing-cell imputation).
    pub(crate) missing_cells: usize,
    /// The identifier columns, when there are any.
    pub(crate) ids: Option<RowIds>,
    /// How the table was read (CSV tables only).
    pub(crate) report: Option<Arc<ReadReport>>,
    /// Which part of a larger table this is, when a hold-out split made it
    /// (never carried over by [`Dataset::select`]: a selection of a part is
    /// another set of rows).
    pub(crate) part: Option<TablePart>,
}

impl std::fmt::Debug for Dataset {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "Dataset {{ source: {:?}, rows: {}, features: {:?}, target: {:?}",
            self.source,
            self.n_rows(),
            self.feature_names,
            self.target_name
        )?;
        match &self.target {
            Target::Classes { names, .. } => write!(f, ", classes: {names:?}")?,
            Target::Values { names, .. } => write!(f, ", outputs: {names:?}")?,
        }
        if self.dropped_rows > 0 {
            write!(f, ", dropped_rows: {}", self.dropped_rows)?;
        }
        write!(f, " }}")
    }
}

impl Dataset {
    /// A classification table from arrays. Labels must be `< class_names.len()`.
    ///
    /// # Errors
    /// Mismatched lengths, labels out of range, non-finite features.
    pub fn classification(
        features: Array2<f64>,
        labels: Vec<usize>,
        class_names: Vec<String>,
    ) -> Result<Dataset> {
        if labels.len() != features.nrows() {
            return Err(Error::shape(
                "class labels",
                (features.nrows(), 1),
                (labels.len(), 1),
            ));
        }
        if class_names.len() < 2 {
            return Err(Error::input(
                "classification table",
                format!(
                    "needs at least two class names, found {}",
                    class_names.len()
                ),
            ));
        }
        if let Some((row, &l)) = labels
            .iter()
            .enumerate()
            .find(|(_, &l)| l >= class_names.len())
        {
            return Err(Error::input(
                "classification table",
                format!(
                    "row {row} has label {l}, but labels must be below the number of class names ({})",
                    class_names.len()
                ),
            ));
        }
        Dataset::from_parts(
            features,
            Target::Classes {
                labels,
                names: class_names,
            },
            "y",
        )
    }

    /// A regression table from arrays (one column of `values` per output).
    ///
    /// # Errors
    /// Mismatched lengths, non-finite numbers.
    pub fn regression(features: Array2<f64>, values: Array2<f64>) -> Result<Dataset> {
        if values.nrows() != features.nrows() {
            return Err(Error::shape(
                "target values",
                (features.nrows(), values.ncols()),
                values.dim(),
            ));
        }
        if values.iter().any(|v| !v.is_finite()) {
            return Err(Error::input(
                "regression table",
                "target values must be finite numbers (no NaN or infinity)",
            ));
        }
        let names = if values.ncols() == 1 {
            vec!["y".to_string()]
        } else {
            (0..values.ncols()).map(|i| format!("y{i}")).collect()
        };
        Dataset::from_parts(features, Target::Values { values, names }, "y")
    }

    fn from_parts(features: Array2<f64>, target: Target, target_name: &str) -> Result<Dataset> {
        if features.nrows() == 0 || features.ncols() == 0 {
            return Err(Error::input(
                "table",
                format!(
                    "needs at least one row and one feature column, found {} x {}",
                    features.nrows(),
                    features.ncols()
                ),
            ));
        }
        if let Some(pos) = features.iter().position(|v| !v.is_finite()) {
            let (r, c) = (pos / features.ncols(), pos % features.ncols());
            return Err(Error::input(
                "table",
                format!("feature row {r}, column {c} is not a finite number"),
            ));
        }
        let feature_names: Vec<String> = (0..features.ncols()).map(|i| format!("x{i}")).collect();
        let columns = feature_names
            .iter()
            .map(|n| ColumnEncoding::Numeric { name: n.clone() })
            .collect();
        Ok(Dataset {
            features,
            feature_names,
            columns,
            target_name: target_name.to_string(),
            target,
            source: "in-memory table".to_string(),
            dropped_rows: 0,
            missing_cells: 0,
            ids: None,
            report: None,
            part: None,
        })
    }

    /// Renames the feature columns (for tables built from arrays).
    ///
    /// # Errors
    /// When the count differs from the number of columns or names repeat.
    pub fn with_feature_names(mut self, names: &[&str]) -> Result<Dataset> {
        if names.len() != self.features.ncols() {
            return Err(Error::shape(
                "feature names",
                (1, self.features.ncols()),
                (1, names.len()),
            ));
        }
        for (i, n) in names.iter().enumerate() {
            if names[..i].contains(n) {
                return Err(Error::input(
                    "feature names",
                    format!("\"{n}\" appears twice"),
                ));
            }
        }
        self.feature_names = names.iter().map(|s| s.to_string()).collect();
        self.columns = self
            .feature_names
            .iter()
            .map(|n| ColumnEncoding::Numeric { name: n.clone() })
            .collect();
        Ok(self)
    }

    /// The names of the feature columns, in order (one-hot columns read
    /// `column=level`).
    pub fn feature_names(&self) -> &[String] {
        &self.feature_names
    }

    /// How the source columns were encoded into feature columns, in order.
    pub fn columns(&self) -> &[ColumnEncoding] {
        &self.columns
    }

    /// The target column's name.
    pub fn target_name(&self) -> &str {
        &self.target_name
    }

    /// The target: class labels or values.
    pub fn target(&self) -> &Target {
        &self.target
    }

    /// Where the table came from (a file path or a description).
    pub fn source(&self) -> &str {
        &self.source
    }

    /// Rows dropped while reading because of missing cells.
    pub fn dropped_rows(&self) -> usize {
        self.dropped_rows
    }

    /// Missing feature cells kept as NaN (read with
    /// [`Missing::Impute`](super::Missing::Impute)); [`fit`](crate::fit::fit)
    /// fills them from its training rows.
    pub fn missing_cells(&self) -> usize {
        self.missing_cells
    }

    /// The identifier columns and each row's IDs (tables read with
    /// [`CsvOptions::ids`](super::CsvOptions::ids)); row `i` here is row `i`
    /// of the table, also after [`Dataset::select`].
    pub fn row_ids(&self) -> Option<&RowIds> {
        self.ids.as_ref()
    }

    /// How the table was read from CSV (`None` for tables built from arrays).
    pub fn report(&self) -> Option<&ReadReport> {
        self.report.as_deref()
    }

    /// The decisions the CSV reader made about this table (delimiter, task,
    /// rows dropped, cells to impute), one sentence each.
    pub fn decisions(&self) -> &[Message] {
        self.report.as_deref().map_or(&[], |r| &r.decisions[..])
    }

    /// What looks wrong in the table (an identifier left out, a constant
    /// column, a high-cardinality text column, a feature that determines
    /// the target), one sentence each.
    pub fn warnings(&self) -> &[Message] {
        self.report.as_deref().map_or(&[], |r| &r.warnings[..])
    }

    /// Which part of a larger table this is: the development subset or the
    /// held-out set of a [`HoldOut::split`](crate::validate::HoldOut::split);
    /// `None` for a whole table (or any other selection of rows).
    pub fn part(&self) -> Option<TablePart> {
        self.part
    }

    /// The rows in words: "600 rows", or for a part of a hold-out split
    /// "480 of 600 rows: development subset; 120 held out".
    pub fn rows_described(&self) -> String {
        match self.part {
            Some(part) => part.describe(self.n_rows()),
            None => format!("{} rows", self.n_rows()),
        }
    }

    /// Number of rows (samples).
    pub fn n_rows(&self) -> usize {
        self.features.nrows()
    }

    /// Number of encoded feature columns.
    pub fn n_features(&self) -> usize {
        self.features.ncols()
    }

    /// Class names, or `None` for a regression table.
    pub fn class_names(&self) -> Option<&[String]> {
        match &self.target {
            Target::Classes { names, .. } => Some(names),
            Target::Values { .. } => None,
        }
    }

    /// Class labels, or `None` for a regression table.
    pub fn labels(&self) -> Option<&[usize]> {
        self.target.labels()
    }

    /// Number of rows in each class (empty for regression).
    pub fn class_counts(&self) -> Vec<usize> {
        match &self.target {
            Target::Classes { labels, names } => {
                let mut counts = vec![0; names.len()];
                for &l in labels {
                    counts[l] += 1;
                }
                counts
            }
            Target::Values { .. } => Vec::new(),
        }
    }

    /// A view of the features.
    pub fn x(&self) -> ArrayView2<'_, f64> {
        self.features.view()
    }

    /// The rows at `rows` (in that order) as a new table (with their IDs).
    pub fn select(&self, rows: &[usize]) -> Dataset {
        let features = self.features.select(Axis(0), rows);
        let missing_cells = if self.missing_cells == 0 {
            0
        } else {
            count_missing(&features, &self.columns)
        };
        Dataset {
            features,
            feature_names: self.feature_names.clone(),
            columns: self.columns.clone(),
            target_name: self.target_name.clone(),
            target: self.target.select(rows),
            source: self.source.clone(),
            dropped_rows: self.dropped_rows,
            missing_cells,
            ids: self.ids.as_ref().map(|i| i.select(rows)),
            report: self.report.clone(),
            part: None,
        }
    }

    /// A SHA-256 fingerprint (hex) of the table's content: feature names,
    /// target name and names, every feature value's bits and every target.
    /// Two tables with the same fingerprint hold the same numbers in the
    /// same order (FIPS 180-4 SHA-256, via the `sha2` crate).
    pub fn fingerprint(&self) -> String {
        use sha2::{Digest, Sha256};
        let mut h = Sha256::new();
        let mut text = |s: &str| {
            h.update((s.len() as u64).to_le_bytes());
            h.update(s.as_bytes());
        };
        for n in &self.feature_names {
            text(n);
        }
        text(&self.target_name);
        for n in self.target.names() {
            text(n);
        }
        h.update((self.features.nrows() as u64).to_le_bytes());
        h.update((self.features.ncols() as u64).to_le_bytes());
        for v in self.features.iter() {
            h.update(v.to_bits().to_le_bytes());
        }
        match &self.target {
            Target::Classes { labels, .. } => labels
                .iter()
                .for_each(|&l| h.update((l as u64).to_le_bytes())),
            Target::Values { values, .. } => values
                .iter()
                .for_each(|v| h.update(v.to_bits().to_le_bytes())),
        }
        h.finalize().iter().map(|b| format!("{b:02x}")).collect()
    }

    /// The index of a feature column by name.
    ///
    /// # Errors
    /// An error listing the feature names when there is no such column.
    pub fn feature_index(&self, name: &str) -> Result<usize> {
        self.feature_names
            .iter()
            .position(|n| n == name)
            .ok_or_else(|| {
                Error::new(crate::ErrorKind::MissingColumn {
                    path: self.source.clone().into(),
                    column: name.to_string(),
                    available: self.feature_names.clone(),
                })
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn classification_refuses_bad_labels() {
        let x = array![[1.0], [2.0]];
        let e = Dataset::classification(x.clone(), vec![0, 2], vec!["a".into(), "b".into()])
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "classification table: row 1 has label 2, but labels must be below the number of class names (2)"
        );
        let e = Dataset::classification(x, vec![0], vec!["a".into(), "b".into()]).unwrap_err();
        assert_eq!(
            e.to_string(),
            "class labels: expected 2 rows x 1 columns, found 1 x 1"
        );
    }

    #[test]
    fn select_keeps_order() {
        let d = Dataset::classification(
            array![[1.0], [2.0], [3.0]],
            vec![0, 1, 0],
            vec!["a".into(), "b".into()],
        )
        .unwrap();
        let s = d.select(&[2, 0]);
        assert_eq!(s.features, array![[3.0], [1.0]]);
        assert_eq!(s.labels().unwrap(), &[0, 0]);
        assert_eq!(d.class_counts(), vec![2, 1]);
    }
}
