//! Reading new rows for a fitted model from CSV, by column name.
//!
//! The model's source columns are found by their header names, in any order,
//! and encoded as the model encoded them when it was fitted: numeric columns
//! as numbers, one-hot columns with the model's own levels (a category the
//! model never saw is an error, not a silent row of zeros), missing
//! indicators from the cells. The rows are read by the same row reader as
//! training tables ([`data::rows`](crate::data::rows)): the delimiter is
//! detected unless given, and the decimal mark and missing markers are the
//! model's training table's unless given. The model's ID columns are
//! carried along when the file has them.

use crate::data::rows::{CellRules, RowReader};
use crate::data::{ColumnEncoding, Dataset, DecimalMark, Delimiter, Missing, RowIds, Target};
use crate::error::{opt, Error, Message, Result};
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
/// # let data = CsvOptions::new("y").task(stratanet::data::Task::Classification).read_str(text, "or.csv")?;
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
    /// Missing-cell policy; `None` follows the model: impute when it was
    /// fitted with imputation, otherwise an error.
    pub missing: Option<Missing>,
    /// The field delimiter (detected by default).
    pub delimiter: Delimiter,
    /// The decimal mark; `None` takes the model's training table's.
    pub decimal: Option<DecimalMark>,
    /// The missing-cell markers; `None` takes the model's training table's.
    pub missing_markers: Option<Vec<String>>,
}

impl Default for FeatureOptions {
    fn default() -> Self {
        FeatureOptions {
            ignore_extra: false,
            target: TargetColumn::Skip,
            missing: None,
            delimiter: Delimiter::Auto,
            decimal: None,
            missing_markers: None,
        }
    }
}

/// Rows read for a model: raw (unscaled) features in the model's input
/// order, ready for [`Model::predict`] and friends, which fill missing
/// cells (a model fitted with imputation) and scale them.
#[derive(Clone, Debug, PartialEq)]
pub struct FeatureTable {
    /// One row per kept CSV row, one column per model feature (unscaled;
    /// NaN where a cell is missing and the model imputes).
    pub features: Array2<f64>,
    /// The target, when it was read: class indices into the model's class
    /// names, or values (one column per model output).
    pub target: Option<Target>,
    /// The 1-based file line of each row.
    pub lines: Vec<u64>,
    /// Rows dropped because of missing cells ([`Missing::Drop`], or a
    /// missing target when scoring).
    pub dropped_rows: usize,
    /// Missing feature cells left for the model to fill.
    pub missing_cells: usize,
    /// The model's ID columns, when the file has them.
    pub ids: Option<RowIds>,
    /// Header columns the model does not use, when they were allowed.
    pub ignored_columns: Vec<String>,
    /// What the reader decided (the delimiter, ID columns not found), one
    /// sentence each.
    pub decisions: Vec<Message>,
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
            missing_cells: self.missing_cells,
            ids: self.ids,
            report: None,
            part: None,
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
        self.missing = Some(missing);
        self
    }

    /// Sets the field delimiter.
    pub fn delimiter(mut self, delimiter: Delimiter) -> Self {
        self.delimiter = delimiter;
        self
    }

    /// Sets the decimal mark.
    pub fn decimal(mut self, decimal: DecimalMark) -> Self {
        self.decimal = Some(decimal);
        self
    }

    /// Sets the missing-cell markers.
    pub fn missing_markers(mut self, markers: &[&str]) -> Self {
        self.missing_markers = Some(markers.iter().map(|s| s.to_string()).collect());
        self
    }

    /// Checks the options that do not need a file.
    ///
    /// # Errors
    /// A marker that is empty or a number.
    pub fn validate(&self) -> Result<()> {
        if let Some(m) = &self.missing_markers {
            CellRules::check_markers(m)?;
        }
        Ok(())
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
        self.validate()?;
        let missing = match self.missing {
            Some(Missing::Impute) if model.imputer.is_none() => {
                return Err(Error::option(
                    "missing",
                    Missing::Impute,
                    "the model was fitted without imputation, so it has no fill values; fit it with missing cells imputed, or drop the rows with missing cells",
                ))
            }
            Some(m) => m,
            None if model.imputer.is_some() => Missing::Impute,
            None => Missing::Error,
        };
        let rules = CellRules::new(
            self.decimal.unwrap_or(model.cell_rules.decimal),
            Some(
                self.missing_markers
                    .as_deref()
                    .unwrap_or(&model.cell_rules.markers),
            ),
        );
        let mut rdr = RowReader::open(reader, name, self.delimiter, rules)?;
        let path = name;
        let names = rdr.names().to_vec();
        let plan = Plan::new(model, &names, self, path)?;
        let mut decisions = Vec::new();
        if let Some(d) = rdr.detected() {
            decisions.push(Message::new(d));
        }
        if !plan.absent_ids.is_empty() {
            decisions.push(Message::new(format!(
                "the model's ID column{} {} not in the file; rows are named by line only",
                if plan.absent_ids.len() == 1 { "" } else { "s" },
                plan.absent_ids.join(", ")
            )));
        }
        let n_features = model.feature_names.len();
        let mut features: Vec<f64> = Vec::new();
        let mut labels: Vec<usize> = Vec::new();
        let mut values: Vec<f64> = Vec::new();
        let mut lines: Vec<u64> = Vec::new();
        let mut ids = (!plan.ids.is_empty()).then(|| RowIds {
            names: plan.ids.iter().map(|&(_, n)| n.to_string()).collect(),
            values: Vec::new(),
        });
        let mut dropped = 0usize;
        let mut missing_cells = 0usize;
        let mut row = vec![0.0; n_features];
        'rows: while let Some(line) = rdr.next_row()? {
            // Sizes and missing cells first, so a dropped row leaves nothing behind.
            for &(index, is_target) in &plan.used {
                let cell = rdr.cell(index, line)?;
                if rdr.cells.is_missing(cell) {
                    match (missing, is_target) {
                        (Missing::Error, _) => {
                            return Err(rdr.missing_error(
                                index,
                                line,
                                !is_target && model.imputer.is_some(),
                            ))
                        }
                        (Missing::Drop, _) | (Missing::Impute, true) => {
                            dropped += 1;
                            continue 'rows;
                        }
                        (Missing::Impute, false) => {}
                    }
                }
            }
            for &(index, _) in &plan.ids {
                rdr.cell(index, line)?;
            }
            row.fill(0.0);
            for col in &plan.columns {
                let cell = rdr.cell(col.index, line)?;
                let absent = rdr.cells.is_missing(cell);
                match &col.kind {
                    Kind::Indicator => row[col.offset] = if absent { 1.0 } else { 0.0 },
                    _ if absent => {
                        missing_cells += 1;
                        let width = match &col.kind {
                            Kind::Levels(levels) => levels.len(),
                            _ => 1,
                        };
                        row[col.offset..col.offset + width].fill(f64::NAN);
                    }
                    Kind::Number => {
                        row[col.offset] = rdr.number(col.index, line, "the model's column is numeric")?
                    }
                    Kind::Levels(levels) => match levels.get(cell.trim()) {
                        Some(&k) => row[col.offset + k] = 1.0,
                        None => {
                            return Err(rdr.bad_value(
                                col.index,
                                line,
                                format!(
                                    "the model knows only the levels {} of this column; a new category cannot be encoded",
                                    list(col.known)
                                ),
                            ))
                        }
                    },
                }
            }
            features.extend_from_slice(&row);
            match &plan.target {
                None => {}
                Some(TargetPlan::Classes { index, classes }) => {
                    let cell = rdr.cell(*index, line)?;
                    match classes.get(cell.trim()) {
                        Some(&k) => labels.push(k),
                        None => {
                            return Err(rdr.bad_value(
                                *index,
                                line,
                                format!(
                                "the model knows only the classes {}; a new class cannot be scored",
                                list(&model.target_names)
                            ),
                            ))
                        }
                    }
                }
                Some(TargetPlan::Values { columns }) => {
                    for &index in columns {
                        values.push(rdr.number(index, line, "the model's target is numeric")?);
                    }
                }
            }
            if let Some(ids) = ids.as_mut() {
                for &(index, _) in &plan.ids {
                    ids.values.push(rdr.cell(index, line)?.trim().to_string());
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
            return Err(Error::new(crate::ErrorKind::NoRows {
                path: path.to_path_buf(),
                reason,
            }));
        }
        if dropped > 0 {
            decisions.push(Message::new(format!(
                "dropped {dropped} row{} with a missing cell{}",
                if dropped == 1 { "" } else { "s" },
                if missing == Missing::Impute {
                    " in the target (targets are never imputed)"
                } else {
                    ""
                }
            )));
        }
        if missing_cells > 0 {
            decisions.push(Message::new(format!(
                "{missing_cells} missing cell{} filled with the model's fill values (learnt from its training rows)",
                if missing_cells == 1 { "" } else { "s" }
            )));
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
            missing_cells,
            ids,
            ignored_columns: plan.ignored,
            decisions,
            source: path.display().to_string(),
        })
    }
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

/// How one model input column is read.
enum Kind<'m> {
    Number,
    /// One-hot: level -> position.
    Levels(HashMap<&'m str, usize>),
    Indicator,
}

/// One model encoding found in the header.
struct ColumnPlan<'m> {
    /// Position in the header.
    index: usize,
    /// First feature column it fills.
    offset: usize,
    kind: Kind<'m>,
    /// One-hot levels in order, for messages.
    known: &'m [String],
}

enum TargetPlan<'m> {
    Classes {
        index: usize,
        classes: HashMap<&'m str, usize>,
    },
    Values {
        columns: Vec<usize>,
    },
}

/// Which header columns are read, and how.
struct Plan<'m> {
    columns: Vec<ColumnPlan<'m>>,
    target: Option<TargetPlan<'m>>,
    /// Every cell read in a row that may be missing: (header index, is it
    /// the target).
    used: Vec<(usize, bool)>,
    /// The model's ID columns found: (header index, name).
    ids: Vec<(usize, &'m str)>,
    absent_ids: Vec<&'m str>,
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
                    let (kind, known): (Kind<'m>, &'m [String]) = match enc {
                        ColumnEncoding::Numeric { .. } => (Kind::Number, &[]),
                        ColumnEncoding::MissingIndicator { .. } => (Kind::Indicator, &[]),
                        ColumnEncoding::OneHot { levels, .. } => (
                            Kind::Levels(
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
                        index: i,
                        offset,
                        kind,
                        known,
                    });
                }
                None => {
                    if !missing.iter().any(|m| m == enc.name()) {
                        missing.push(enc.name().to_string());
                    }
                }
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
        let mut ids = Vec::new();
        let mut absent_ids = Vec::new();
        for n in &model.ids {
            match index.get(n.as_str()) {
                Some(&i) => ids.push((i, n.as_str())),
                None => absent_ids.push(n.as_str()),
            }
        }
        let extra: Vec<String> = names
            .iter()
            .filter(|n| {
                !is_feature(n) && !target_names.contains(&n.as_str()) && !model.ids.contains(n)
            })
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
                    "the file has columns the model does not use: {}; remove them, or allow them with {}",
                    list(&extra),
                    opt("ignore_extra")
                ),
            ));
        }
        let target = if read_target {
            let found: Vec<usize> = present.iter().map(|p| p.expect("present")).collect();
            Some(if model.is_classifier {
                TargetPlan::Classes {
                    index: found[0],
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
        let mut used: Vec<(usize, bool)> = Vec::new();
        for c in &columns {
            if !matches!(c.kind, Kind::Indicator) && !used.iter().any(|&(i, _)| i == c.index) {
                used.push((c.index, false));
            }
        }
        match &target {
            Some(TargetPlan::Classes { index, .. }) => used.push((*index, true)),
            Some(TargetPlan::Values { columns }) => used.extend(columns.iter().map(|&i| (i, true))),
            None => {}
        }
        Ok(Plan {
            columns,
            target,
            used,
            ids,
            absent_ids,
            ignored: extra,
        })
    }
}
