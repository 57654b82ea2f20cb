//! Reading new rows for a fitted model from CSV, by column name.
//!
//! The model's source columns are found by their header names, in any order,
//! and encoded as the model encoded them when it was fitted: numeric columns
//! as numbers, one-hot columns with the model's own levels (a category the
//! model never saw is an error, not a silent row of zeros). The CSV rules are
//! those of [`CsvOptions`](crate::data::CsvOptions): header row, byte-order
//! mark ignored, quoting, missing-cell tokens, finite numbers only.

use crate::data::csv::{
    check_cell_size, csv_reader, header_names, is_missing, next_row, parse_number,
    read_header_record,
};
use crate::data::{ColumnEncoding, Dataset, Missing, Target};
use crate::error::{Error, ErrorKind, Result};
use crate::fit::Model;
use ndarray::{Array2, ArrayView2};
use std::collections::HashMap;
use std::io::Read;
use std::path::Path;

/// What to do with the model's target column(s) when reading rows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum TargetColumn {
    /// Do not read it, whether or not it is there (prediction).
    #[default]
    Skip,
    /// Read it when it is there.
    IfPresent,
    /// Read it; its absence is an error (scoring a labelled file).
    Require,
}

/// How to read a CSV file's rows for a model.
///
/// # Example
/// ```
/// # use stratanet::prelude::*;
/// use stratanet::model_file::{FeatureOptions, TargetColumn};
/// # let text = "a,b,y\n0,0,n\n0,1,y\n1,0,y\n1,1,y\n";
/// # let data = CsvOptions::new("y").read_str(text, "or.csv")?;
/// # let options = FitOptions::default().hidden(&[]).validation_share(0.0)
/// #     .early_stopping(None).epochs(5).batch_size(stratanet::train::BatchSize::Rows(4));
/// # let model = fit(&data, &options, &mut seeded_rng(1))?.into_model();
/// // Columns in another order, the target column present, a note column.
/// let new_rows = "note,y,b,a\nfirst,n,0,0\nsecond,y,1,1\n";
/// let rows = FeatureOptions::default()
///     .ignore_extra(true)
///     .target(TargetColumn::Require)
///     .read_str(&model, new_rows, "new.csv")?;
/// assert_eq!(rows.features, ndarray::array![[0.0, 0.0], [1.0, 1.0]]);
/// assert_eq!(rows.labels().unwrap(), [0, 1]);
/// assert_eq!(rows.lines, [2, 3]);
/// assert_eq!(rows.ignored_columns, ["note"]);
/// let classes = model.predict_classes(rows.x())?;
/// # assert_eq!(classes.len(), 2);
/// # Ok::<(), stratanet::Error>(())
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FeatureOptions {
    /// Read a file with columns the model does not use (default: refuse it,
    /// listing them, since an extra column often means a renamed one).
    pub ignore_extra: bool,
    /// Whether to read the target column(s).
    pub target: TargetColumn,
    /// Missing-cell policy for the columns read.
    pub missing: Missing,
    /// The field delimiter (default `,`).
    pub delimiter: u8,
}

impl Default for FeatureOptions {
    fn default() -> Self {
        FeatureOptions {
            ignore_extra: false,
            target: TargetColumn::Skip,
            missing: Missing::Error,
            delimiter: b',',
        }
    }
}

/// Rows read for a model: raw (unscaled) features in the model's input
/// order, ready for [`Model::predict`] and friends, which scale them.
#[derive(Clone, Debug, PartialEq)]
pub struct FeatureTable {
    /// One row per kept CSV row, one column per model feature (unscaled).
    pub features: Array2<f64>,
    /// The target, when it was read: class indices into the model's class
    /// names, or values (one column per model output).
    pub target: Option<Target>,
    /// The 1-based file line of each row.
    pub lines: Vec<u64>,
    /// Rows dropped because of missing cells ([`Missing::Drop`]).
    pub dropped_rows: usize,
    /// Header columns the model does not use, when they were allowed.
    pub ignored_columns: Vec<String>,
    /// Where the rows came from, for messages.
    pub source: String,
}

impl FeatureTable {
    /// A view of the features.
    pub fn x(&self) -> ArrayView2<'_, f64> {
        self.features.view()
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.features.nrows()
    }

    /// The class labels, when a classifier's target was read.
    pub fn labels(&self) -> Option<&[usize]> {
        self.target.as_ref().and_then(Target::labels)
    }

    /// The rows as a [`Dataset`] with the model's columns (for scoring).
    ///
    /// # Errors
    /// When no target was read.
    pub fn into_dataset(self, model: &Model) -> Result<Dataset> {
        let Some(target) = self.target else {
            return Err(Error::input(
                format!("{}: rows for scoring", self.source),
                "no target column was read; read the file with TargetColumn::Require",
            ));
        };
        Ok(Dataset {
            features: self.features,
            feature_names: model.feature_names.clone(),
            columns: model.columns.clone(),
            target_name: model.target_name.clone(),
            target,
            source: self.source,
            dropped_rows: self.dropped_rows,
        })
    }
}

impl FeatureOptions {
    /// Refuse (false, the default) or allow (true) columns the model does not use.
    pub fn ignore_extra(mut self, ignore: bool) -> Self {
        self.ignore_extra = ignore;
        self
    }

    /// Sets what happens to the target column.
    pub fn target(mut self, target: TargetColumn) -> Self {
        self.target = target;
        self
    }

    /// Sets the missing-cell policy.
    pub fn missing(mut self, missing: Missing) -> Self {
        self.missing = missing;
        self
    }

    /// Sets the field delimiter.
    pub fn delimiter(mut self, delimiter: u8) -> Self {
        self.delimiter = delimiter;
        self
    }

    /// Reads a CSV file's rows for `model`.
    ///
    /// # Errors
    /// Missing model columns (all listed), columns the model does not use
    /// (listed; unless allowed), a category or class the model does not know
    /// (with the known ones), cells that are not numbers or are missing, and
    /// the CSV reader's errors; each names the file, and the line and column
    /// where there is one.
    pub fn read(&self, model: &Model, path: impl AsRef<Path>) -> Result<FeatureTable> {
        let path = path.as_ref();
        let file = std::fs::File::open(path).map_err(|e| Error::io(path, "opening", e))?;
        self.read_from(
            model,
            std::io::BufReader::with_capacity(1 << 16, file),
            path,
        )
    }

    /// Reads CSV text held in memory; `name` stands for the file in messages.
    ///
    /// # Errors
    /// As [`FeatureOptions::read`].
    pub fn read_str(&self, model: &Model, text: &str, name: &str) -> Result<FeatureTable> {
        self.read_from(model, text.as_bytes(), Path::new(name))
    }

    /// Reads from any reader; `name` stands for the file in messages.
    ///
    /// # Errors
    /// As [`FeatureOptions::read`].
    pub fn read_from<R: Read>(
        &self,
        model: &Model,
        reader: R,
        name: &Path,
    ) -> Result<FeatureTable> {
        let path = name;
        let mut rdr = csv_reader(reader, self.delimiter);
        let mut record = csv::StringRecord::new();
        read_header_record(&mut rdr, &mut record, path)?;
        let names = header_names(&record, path)?;
        let plan = Plan::new(model, &names, self, path)?;
        let width = names.len();
        let n_features = model.feature_names.len();
        let mut features: Vec<f64> = Vec::new();
        let mut labels: Vec<usize> = Vec::new();
        let mut values: Vec<f64> = Vec::new();
        let mut lines: Vec<u64> = Vec::new();
        let mut dropped = 0usize;
        let mut row = vec![0.0; n_features];
        'rows: while let Some(line) = next_row(&mut rdr, &mut record, path, width)? {
            // Sizes and missing cells first, so a dropped row leaves nothing behind.
            for &(index, column) in &plan.used {
                let cell = &record[index];
                check_cell_size(cell, path, line, column, index)?;
                if is_missing(cell) {
                    match self.missing {
                        Missing::Error => {
                            return Err(Error::new(ErrorKind::MissingValue {
                                path: path.to_path_buf(),
                                line,
                                column: column.to_string(),
                                index,
                                value: cell.to_string(),
                            }))
                        }
                        Missing::Drop => {
                            dropped += 1;
                            continue 'rows;
                        }
                    }
                }
            }
            row.fill(0.0);
            for col in &plan.columns {
                let cell = &record[col.index];
                let bad = |reason: String| {
                    Error::new(ErrorKind::BadValue {
                        path: path.to_path_buf(),
                        line,
                        column: col.name.to_string(),
                        index: col.index,
                        value: cell.to_string(),
                        reason,
                    })
                };
                match &col.levels {
                    None => row[col.offset] = number(cell).map_err(bad)?,
                    Some(levels) => match levels.get(cell.trim()) {
                        Some(&k) => row[col.offset + k] = 1.0,
                        None => {
                            return Err(bad(format!(
                                "the model knows only the levels {} of this column; a new category cannot be encoded",
                                list(col.known)
                            )))
                        }
                    },
                }
            }
            features.extend_from_slice(&row);
            match &plan.target {
                None => {}
                Some(TargetPlan::Classes {
                    index,
                    column,
                    classes,
                }) => {
                    let cell = &record[*index];
                    match classes.get(cell.trim()) {
                        Some(&k) => labels.push(k),
                        None => {
                            return Err(Error::new(ErrorKind::BadValue {
                                path: path.to_path_buf(),
                                line,
                                column: column.to_string(),
                                index: *index,
                                value: cell.to_string(),
                                reason: format!(
                                "the model knows only the classes {}; a new class cannot be scored",
                                list(&model.target_names)
                            ),
                            }))
                        }
                    }
                }
                Some(TargetPlan::Values { columns }) => {
                    for &(index, column) in columns {
                        let cell = &record[index];
                        let v = number(cell).map_err(|reason| {
                            Error::new(ErrorKind::BadValue {
                                path: path.to_path_buf(),
                                line,
                                column: column.to_string(),
                                index,
                                value: cell.to_string(),
                                reason,
                            })
                        })?;
                        values.push(v);
                    }
                }
            }
            lines.push(line);
        }
        let n = lines.len();
        if n == 0 {
            let reason = if dropped > 0 {
                format!(
                    "all {dropped} data rows have missing cells, so none are left after dropping them"
                )
            } else {
                "the file has a header but no data rows; add one row per sample below the header"
                    .to_string()
            };
            return Err(Error::new(ErrorKind::NoRows {
                path: path.to_path_buf(),
                reason,
            }));
        }
        let target = match &plan.target {
            None => None,
            Some(TargetPlan::Classes { .. }) => Some(Target::Classes {
                labels,
                names: model.target_names.clone(),
            }),
            Some(TargetPlan::Values { columns }) => Some(Target::Values {
                values: Array2::from_shape_vec((n, columns.len()), values)
                    .expect("one value per row and output"),
                names: model.target_names.clone(),
            }),
        };
        Ok(FeatureTable {
            features: Array2::from_shape_vec((n, n_features), features)
                .expect("one row of features per kept row"),
            target,
            lines,
            dropped_rows: dropped,
            ignored_columns: plan.ignored,
            source: path.display().to_string(),
        })
    }
}

/// A numeric cell, or the reason it is not one.
fn number(cell: &str) -> std::result::Result<f64, String> {
    parse_number(cell).ok_or_else(|| {
        if cell.trim().parse::<f64>().is_ok() {
            "is not a finite number; measurements must be finite (check the exporter's overflow marker)".to_string()
        } else {
            "cannot read the cell as a number, and the model's column is numeric".to_string()
        }
    })
}

/// Names joined by ", ", cut after 30.
fn list<S: AsRef<str>>(names: &[S]) -> String {
    const MAX: usize = 30;
    let mut out: Vec<&str> = names.iter().take(MAX).map(AsRef::as_ref).collect();
    if names.len() > MAX {
        out.push("...");
    }
    out.join(", ")
}

/// One model source column found in the header.
struct ColumnPlan<'m> {
    name: &'m str,
    /// Position in the header.
    index: usize,
    /// First feature column it fills.
    offset: usize,
    /// One-hot: level -> position; `None` for numeric columns.
    levels: Option<HashMap<&'m str, usize>>,
    /// One-hot levels in order, for messages.
    known: &'m [String],
}

enum TargetPlan<'m> {
    Classes {
        index: usize,
        column: &'m str,
        classes: HashMap<&'m str, usize>,
    },
    Values {
        columns: Vec<(usize, &'m str)>,
    },
}

/// Which header columns are read, and how.
struct Plan<'m> {
    columns: Vec<ColumnPlan<'m>>,
    target: Option<TargetPlan<'m>>,
    /// Every cell read in a row: (header index, name).
    used: Vec<(usize, &'m str)>,
    ignored: Vec<String>,
}

impl<'m> Plan<'m> {
    fn new(
        model: &'m Model,
        names: &[String],
        options: &FeatureOptions,
        path: &Path,
    ) -> Result<Plan<'m>> {
        let index: HashMap<&str, usize> = names
            .iter()
            .enumerate()
            .map(|(i, n)| (n.as_str(), i))
            .collect();
        let mut missing: Vec<String> = Vec::new();
        let mut columns = Vec::with_capacity(model.columns.len());
        let mut offset = 0;
        for enc in &model.columns {
            match index.get(enc.name()) {
                Some(&i) => {
                    let (levels, known): (_, &[String]) = match enc {
                        ColumnEncoding::Numeric { .. } => (None, &[]),
                        ColumnEncoding::OneHot { levels, .. } => (
                            Some(
                                levels
                                    .iter()
                                    .enumerate()
                                    .map(|(k, l)| (l.as_str(), k))
                                    .collect(),
                            ),
                            levels,
                        ),
                    };
                    columns.push(ColumnPlan {
                        name: enc.name(),
                        index: i,
                        offset,
                        levels,
                        known,
                    });
                }
                None => missing.push(enc.name().to_string()),
            }
            offset += enc.width();
        }
        // A classifier's target is one column of class names; a regression
        // model's outputs are its output names (the target's name for one).
        let target_names: Vec<&str> = if model.is_classifier {
            vec![model.target_name.as_str()]
        } else {
            model.target_names.iter().map(String::as_str).collect()
        };
        let is_feature = |n: &str| model.columns.iter().any(|c| c.name() == n);
        let target_names: Vec<&str> = target_names
            .into_iter()
            .filter(|n| !is_feature(n))
            .collect();
        let present: Vec<Option<usize>> =
            target_names.iter().map(|n| index.get(n).copied()).collect();
        let read_target = match options.target {
            TargetColumn::Skip => false,
            TargetColumn::IfPresent => !present.is_empty() && present.iter().all(Option::is_some),
            TargetColumn::Require => {
                for (n, p) in target_names.iter().zip(&present) {
                    if p.is_none() {
                        missing.push(format!("{n} (the target)"));
                    }
                }
                !present.is_empty()
            }
        };
        let extra: Vec<String> = names
            .iter()
            .filter(|n| !is_feature(n) && !target_names.contains(&n.as_str()))
            .cloned()
            .collect();
        let at = format!("{}: line 1", path.display());
        if !missing.is_empty() {
            let mut reason = format!("the file lacks columns the model needs: {}", list(&missing));
            if extra.is_empty() {
                reason.push_str(&format!("; its columns are: {}", list(names)));
            } else {
                reason.push_str(&format!(
                    "; it has columns the model does not use: {}",
                    list(&extra)
                ));
            }
            return Err(Error::input(at, reason));
        }
        if !extra.is_empty() && !options.ignore_extra {
            return Err(Error::input(
                at,
                format!(
                    "the file has columns the model does not use: {}; remove them, or allow them with FeatureOptions::ignore_extra(true)",
                    list(&extra)
                ),
            ));
        }
        let target = if read_target {
            let found: Vec<(usize, &'m str)> = present
                .iter()
                .zip(&target_names)
                .map(|(p, n)| (p.expect("present"), *n))
                .collect();
            Some(if model.is_classifier {
                TargetPlan::Classes {
                    index: found[0].0,
                    column: found[0].1,
                    classes: model
                        .target_names
                        .iter()
                        .enumerate()
                        .map(|(k, c)| (c.as_str(), k))
                        .collect(),
                }
            } else {
                TargetPlan::Values { columns: found }
            })
        } else {
            None
        };
        let mut used: Vec<(usize, &'m str)> = columns.iter().map(|c| (c.index, c.name)).collect();
        match &target {
            Some(TargetPlan::Classes { index, column, .. }) => used.push((*index, column)),
            Some(TargetPlan::Values { columns }) => used.extend(columns.iter().copied()),
            None => {}
        }
        Ok(Plan {
            columns,
            target,
            used,
            ignored: extra,
        })
    }
}
