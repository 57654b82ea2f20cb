//! [`Dataset`]: a table of samples ready for a network, with its column
//! encoding and its [`Target`].

use crate::error::{Error, Result};
use ndarray::{Array2, ArrayView2, Axis};

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
}

impl ColumnEncoding {
    /// The source column's name.
    pub fn name(&self) -> &str {
        match self {
            ColumnEncoding::Numeric { name } | ColumnEncoding::OneHot { name, .. } => name,
        }
    }

    /// How many feature columns this source column produces.
    pub fn width(&self) -> usize {
        match self {
            ColumnEncoding::Numeric { .. } => 1,
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
        }
    }
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

    /// The rows at `rows` (in that order) as a new table.
    pub fn select(&self, rows: &[usize]) -> Dataset {
        Dataset {
            features: self.features.select(Axis(0), rows),
            feature_names: self.feature_names.clone(),
            columns: self.columns.clone(),
            target_name: self.target_name.clone(),
            target: self.target.select(rows),
            source: self.source.clone(),
            dropped_rows: self.dropped_rows,
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
