//! Reading a training table from CSV text: [`CsvOptions`].
//!
//! The dialect (delimiter, decimal mark, missing markers), quoting, limits
//! and what a cell is are the row reader's ([`rows`](super::rows)). On top of
//! it, this reader decides what each column is, from **the whole column**,
//! and reports every decision it had to make
//! ([`Dataset::decisions`](super::Dataset::decisions),
//! [`Dataset::warnings`](super::Dataset::warnings)):
//!
//! - **Column types.** A column listed in [`CsvOptions::categorical`] is
//!   text. Otherwise a column is numeric when every non-missing cell is a
//!   number, and categorical (one-hot encoded, levels in byte-wise sorted
//!   order) when every non-missing cell is text. A column holding both is an
//!   error that lists each distinct token of the smaller kind, how often it
//!   occurs and the first line where it does, and says how to decide (a
//!   missing marker, the column declared categorical, or the other decimal
//!   mark). A column whose cells are all missing is an error.
//! - **The task** ([`Task`]). Asked for, or decided from the target column:
//!   text labels are classes; numbers of which some are not whole are a
//!   regression target; whole numbers with at most [`MAX_AUTO_CLASSES`]
//!   distinct values are classes (reported, with how to ask for
//!   regression), and with more the task must be asked for. An automatic
//!   classification is refused when a class has a single row, or when there
//!   are more than two classes and fewer than [`MIN_ROWS_PER_CLASS`] rows
//!   per class on average; asking for classification goes ahead.
//! - **Identifiers.** A column named in [`CsvOptions::ids`] is carried with
//!   the rows ([`Dataset::row_ids`](super::Dataset::row_ids)) and never used
//!   as a feature. A column that looks like an identifier is left out of the
//!   features, with a warning saying how to keep it as an ID, drop it or
//!   use it, unless it is listed in [`CsvOptions::features`] or
//!   [`CsvOptions::categorical`]: a text column whose non-missing cells (at
//!   least [`MIN_ID_CELLS`]) are all different, or a numeric column whose
//!   cells (at least as many) are all different whole numbers forming a run
//!   (`max - min + 1` equals the count: a row number).
//! - **Missing cells** ([`Missing`]): an error naming the line and column
//!   (the default), the row dropped and counted, or (`impute`) kept as NaN
//!   for [`fit`](crate::fit::fit) to fill from the training rows only; with
//!   [`CsvOptions::missing_indicators`], each column with a missing cell
//!   gets a 0/1 column `name:missing` after it. A row whose target is
//!   missing is dropped under `impute` (the target is never filled).
//! - Class labels are ordered numerically when every label reads as an
//!   integer, otherwise byte-wise; [`CsvOptions::class_order`] sets the
//!   order explicitly.
//! - Warnings: an identifier left out, a constant column, a text column of
//!   more than [`HIGH_CARDINALITY_MIN`] levels and more than a
//!   tenth of the rows, a feature that determines the
//!   target exactly (each of its values goes with one target value and back:
//!   leakage).
//!
//! Only the target, the features and the ID columns are parsed; dropped
//! columns may hold anything. The file is read once, row by row; cells are
//! kept as numbers in one row-major buffer, so an all-numeric table becomes
//! its feature matrix without a copy.

use super::dataset::{ColumnReport, Missing, ReadReport, RowIds, Task};
use super::rows::{CellRules, DecimalMark, Delimiter, RowReader};
use super::{ColumnEncoding, Dataset, Target};
use crate::error::{opt, opt_is, Error, ErrorKind, Message, Result};
use ndarray::Array2;
use std::collections::HashMap;
use std::io::Read;
use std::path::Path;
use std::sync::Arc;

/// With [`Task::Auto`], a target of whole numbers is taken as classes only
/// up to this many distinct values (common practice, no source: a few
/// integer codes are classes far more often than counts).
pub const MAX_AUTO_CLASSES: usize = 10;
/// With [`Task::Auto`] and more than two classes, the fewest rows per class
/// on average (common practice, no source).
pub const MIN_ROWS_PER_CLASS: usize = 5;
/// A column is taken for an identifier only from this many non-missing
/// cells on (in a smaller table, all-different values are common by chance).
pub const MIN_ID_CELLS: usize = 10;
/// The most distinct target labels a classification may have.
pub const MAX_CLASSES: usize = 10_000;
/// A text column with more levels than this, and more than a tenth of the
/// rows, is warned about as high-cardinality (common practice, no source).
pub const HIGH_CARDINALITY_MIN: usize = 20;

/// How to read a CSV file into a [`Dataset`].
///
/// # Example
/// ```
/// use stratanet::data::{CsvOptions, Missing};
/// let text = "width_mm,colour,grade\n1.5,red,ok\n2.5,blue,bad\n,red,ok\n3.5,red,ok\n0.5,blue,bad\n";
/// let data = CsvOptions::new("grade").missing(Missing::Drop).read_str(text, "inline.csv")?;
/// assert_eq!(data.feature_names(), ["width_mm", "colour=blue", "colour=red"]);
/// assert_eq!(data.dropped_rows(), 1);
/// assert_eq!(data.class_names().unwrap(), ["bad", "ok"]);
/// // What the reader decided is reported, never silent.
/// assert_eq!(data.decisions()[1], "task: classification (the target \"grade\" holds text: 2 classes)");
/// # Ok::<(), stratanet::Error>(())
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct CsvOptions {
    /// The target column's name.
    pub target: String,
    /// Feature columns to use, in this order; `None` means every column but
    /// the target, the dropped columns, the ID columns and columns that look
    /// like identifiers, in file order.
    pub features: Option<Vec<String>>,
    /// Columns to leave out.
    pub drop: Vec<String>,
    /// Columns to read as text (categorical) even if they hold numbers.
    pub categorical: Vec<String>,
    /// Identifier columns: carried with the rows and into predictions, never
    /// used as features.
    pub ids: Vec<String>,
    /// Missing-cell policy.
    pub missing: Missing,
    /// With [`Missing::Impute`], add a 0/1 column `name:missing` after each
    /// column that has a missing cell.
    pub missing_indicators: bool,
    /// The missing-cell markers; `None` takes
    /// [`DEFAULT_MISSING_MARKERS`](super::DEFAULT_MISSING_MARKERS). An empty
    /// cell is always missing.
    pub missing_markers: Option<Vec<String>>,
    /// Classification, regression, or decided from the target.
    pub task: Task,
    /// An explicit class order (every label must be listed).
    pub class_order: Option<Vec<String>>,
    /// The field delimiter (detected by default).
    pub delimiter: Delimiter,
    /// The decimal mark of numbers.
    pub decimal: DecimalMark,
}

impl CsvOptions {
    /// Options for predicting `target`, with every other column a feature.
    pub fn new(target: &str) -> CsvOptions {
        CsvOptions {
            target: target.to_string(),
            features: None,
            drop: Vec::new(),
            categorical: Vec::new(),
            ids: Vec::new(),
            missing: Missing::Error,
            missing_indicators: false,
            missing_markers: None,
            task: Task::Auto,
            class_order: None,
            delimiter: Delimiter::Auto,
            decimal: DecimalMark::Point,
        }
    }

    /// Use only these feature columns, in this order.
    pub fn features(mut self, names: &[&str]) -> Self {
        self.features = Some(names.iter().map(|s| s.to_string()).collect());
        self
    }

    /// Leave these columns out.
    pub fn drop(mut self, names: &[&str]) -> Self {
        self.drop = names.iter().map(|s| s.to_string()).collect();
        self
    }

    /// Read these columns as text (categorical).
    pub fn categorical(mut self, names: &[&str]) -> Self {
        self.categorical = names.iter().map(|s| s.to_string()).collect();
        self
    }

    /// Carry these columns as row identifiers.
    pub fn ids(mut self, names: &[&str]) -> Self {
        self.ids = names.iter().map(|s| s.to_string()).collect();
        self
    }

    /// Set the missing-cell policy.
    pub fn missing(mut self, missing: Missing) -> Self {
        self.missing = missing;
        self
    }

    /// Add missing-indicator columns (with [`Missing::Impute`]).
    pub fn missing_indicators(mut self, on: bool) -> Self {
        self.missing_indicators = on;
        self
    }

    /// Set the missing-cell markers (replacing the default set).
    pub fn missing_markers(mut self, markers: &[&str]) -> Self {
        self.missing_markers = Some(markers.iter().map(|s| s.to_string()).collect());
        self
    }

    /// Set the task.
    pub fn task(mut self, task: Task) -> Self {
        self.task = task;
        self
    }

    /// Set the class order explicitly.
    pub fn class_order(mut self, names: &[&str]) -> Self {
        self.class_order = Some(names.iter().map(|s| s.to_string()).collect());
        self
    }

    /// Set the delimiter.
    pub fn delimiter(mut self, delimiter: Delimiter) -> Self {
        self.delimiter = delimiter;
        self
    }

    /// Set the decimal mark.
    pub fn decimal(mut self, decimal: DecimalMark) -> Self {
        self.decimal = decimal;
        self
    }

    /// Checks the options that do not need the file: markers, and options
    /// that would have no effect or contradict each other.
    ///
    /// # Errors
    /// The first such option, named, with the fix.
    pub fn validate(&self) -> Result<()> {
        if let Some(m) = &self.missing_markers {
            CellRules::check_markers(m)?;
        }
        let twice = |list: &[String], name: &str| -> Result<()> {
            for (i, c) in list.iter().enumerate() {
                if list[..i].contains(c) {
                    return Err(Error::option(name, c, "is listed twice"));
                }
            }
            Ok(())
        };
        twice(&self.drop, "drop")?;
        twice(&self.categorical, "categorical")?;
        twice(&self.ids, "ids")?;
        let clash = |name: &str, value: &str, why: String| Err(Error::option(name, value, why));
        for c in &self.categorical {
            if *c == self.target {
                return clash(
                    "categorical",
                    c,
                    format!(
                        "names the target, which is read as classes or numbers by {}; leave it out",
                        opt("task")
                    ),
                );
            }
            if let Some(f) = &self.features {
                if !f.contains(c) {
                    return clash(
                        "categorical",
                        c,
                        format!(
                            "has no effect: the column is not among the {} ({}); add it there or leave it out",
                            opt("features"),
                            f.join(", ")
                        ),
                    );
                }
            }
            if self.drop.contains(c) {
                return clash(
                    "categorical",
                    c,
                    format!(
                        "has no effect: the column is dropped ({}); leave one of the two out",
                        opt("drop")
                    ),
                );
            }
            if self.ids.contains(c) {
                return clash(
                    "categorical",
                    c,
                    format!(
                        "has no effect: the column is an ID ({}); leave one of the two out",
                        opt("ids")
                    ),
                );
            }
        }
        for c in &self.ids {
            if *c == self.target {
                return clash(
                    "ids",
                    c,
                    "names the target; an ID column cannot be predicted".into(),
                );
            }
            if self.drop.contains(c) {
                return clash(
                    "ids",
                    c,
                    format!(
                        "the column is also dropped ({}); leave one of the two out",
                        opt("drop")
                    ),
                );
            }
            if self.features.as_ref().is_some_and(|f| f.contains(c)) {
                return clash(
                    "ids",
                    c,
                    format!(
                        "the column is also listed in {}; an ID column is never a feature",
                        opt("features")
                    ),
                );
            }
        }
        for c in &self.drop {
            if *c == self.target {
                return clash(
                    "drop",
                    c,
                    "names the target; choose another target or keep the column".into(),
                );
            }
            if self.features.as_ref().is_some_and(|f| f.contains(c)) {
                return clash(
                    "drop",
                    c,
                    format!(
                        "the column is also listed in {}; leave one of the two out",
                        opt("features")
                    ),
                );
            }
        }
        if self.missing_indicators && self.missing != Missing::Impute {
            return Err(Error::option(
                "missing_indicators",
                "on",
                format!(
                    "has no effect unless missing cells are imputed; set {} or leave it out",
                    opt_is("missing", "impute")
                ),
            ));
        }
        if self.class_order.is_some() && self.task == Task::Regression {
            return Err(Error::option(
                "class_order",
                "given",
                format!(
                    "has no effect with {}; leave it out",
                    opt_is("task", "regression")
                ),
            ));
        }
        Ok(())
    }

    /// The rules cells are read with.
    pub(crate) fn cell_rules(&self) -> CellRules {
        CellRules::new(self.decimal, self.missing_markers.as_deref())
    }

    /// Reads a file.
    ///
    /// # Errors
    /// See the module docs; every error names the file, and the line and
    /// column where there is one.
    pub fn read(&self, path: impl AsRef<Path>) -> Result<Dataset> {
        let path = path.as_ref();
        let file = std::fs::File::open(path).map_err(|e| Error::io(path, "opening", e))?;
        self.read_from(std::io::BufReader::with_capacity(1 << 16, file), path)
    }

    /// Reads CSV text held in memory; `name` stands for the file in messages.
    ///
    /// # Errors
    /// As [`CsvOptions::read`].
    pub fn read_str(&self, text: &str, name: &str) -> Result<Dataset> {
        self.read_from(text.as_bytes(), Path::new(name))
    }

    /// Reads from any reader; `name` stands for the file in messages.
    ///
    /// # Errors
    /// As [`CsvOptions::read`].
    pub fn read_from<R: Read>(&self, reader: R, name: &Path) -> Result<Dataset> {
        self.validate()?;
        let rows = RowReader::open(reader, name, self.delimiter, self.cell_rules())?;
        let raw = read_columns(rows, self)?;
        build_dataset(raw, self)
    }
}

/// A NaN standing for a missing cell in the row-major buffer.
const MISSING_BITS: u64 = 0x7ff8_0000_0000_0001;
/// Text cells are stored as NaNs carrying their level code.
const TEXT_TAG: u64 = 0x7ff8_0001_0000_0000;

fn text_slot(code: u32) -> f64 {
    f64::from_bits(TEXT_TAG | u64::from(code))
}

fn slot_code(v: f64) -> Option<u32> {
    let bits = v.to_bits();
    (bits & 0xffff_ffff_0000_0000 == TEXT_TAG).then_some(bits as u32)
}

/// Distinct text cells of a column in order of first appearance, with
/// their counts and first lines.
#[derive(Default)]
struct Levels {
    names: Vec<String>,
    lookup: HashMap<String, u32>,
    counts: Vec<usize>,
    lines: Vec<u64>,
}

impl Levels {
    fn code(&mut self, key: &str, line: u64) -> u32 {
        match self.lookup.get(key) {
            Some(&c) => {
                self.counts[c as usize] += 1;
                c
            }
            None => {
                let c = self.names.len() as u32;
                self.names.push(key.to_string());
                self.lookup.insert(key.to_string(), c);
                self.counts.push(1);
                self.lines.push(line);
                c
            }
        }
    }

    /// Up to `max` tokens in order of first appearance: `"t" (3 cells, first on line 2)`.
    fn listed(&self, max: usize) -> String {
        let mut parts: Vec<String> = (0..self.names.len().min(max))
            .map(|i| {
                let n = self.counts[i];
                if n == 1 {
                    format!("\"{}\" (1 cell, line {})", self.names[i], self.lines[i])
                } else {
                    format!(
                        "\"{}\" ({n} cells, first on line {})",
                        self.names[i], self.lines[i]
                    )
                }
            })
            .collect();
        if self.names.len() > max {
            parts.push(format!("and {} more", self.names.len() - max));
        }
        parts.join(", ")
    }
}

/// What the reader saw of one used feature column.
struct Tally {
    name: String,
    index: usize,
    declared_text: bool,
    explicit: bool,
    numbers: usize,
    missing: usize,
    integers: bool,
    min: f64,
    max: f64,
    /// Text cells (every non-missing cell of a declared-text column).
    texts: Levels,
    /// The first few distinct number cells, with their lines (for messages).
    number_examples: Vec<(String, u64)>,
}

/// The target column as read.
struct TargetTally {
    index: usize,
    name: String,
    /// Each row's number (NaN for a text cell).
    values: Vec<f64>,
    /// Each row's label code (`u32::MAX` once there are more than
    /// [`MAX_CLASSES`] labels).
    codes: Vec<u32>,
    labels: Levels,
    numbers: usize,
    texts: usize,
    integers: bool,
    overflow: bool,
    /// Distinct text cells (for messages about a numeric target).
    text_cells: Levels,
    number_examples: Vec<(String, u64)>,
}

struct RawTable {
    path: std::path::PathBuf,
    header: Vec<String>,
    delimiter: Delimiter,
    detected: Option<String>,
    target: TargetTally,
    columns: Vec<Tally>,
    /// Feature cells, row-major (one slot per used feature column).
    values: Vec<f64>,
    ids: Option<RowIds>,
    rows: usize,
    dropped: usize,
    target_dropped: usize,
    rules: CellRules,
}

/// Resolves the columns: (target index, feature indices in order, whether
/// each was listed explicitly, ID indices).
#[allow(clippy::type_complexity)]
fn resolve(
    names: &[String],
    opts: &CsvOptions,
    path: &Path,
) -> Result<(usize, Vec<(usize, bool)>, Vec<usize>)> {
    let find = |name: &str| -> Result<usize> {
        names.iter().position(|n| n == name).ok_or_else(|| {
            Error::new(ErrorKind::MissingColumn {
                path: path.to_path_buf(),
                column: name.to_string(),
                available: names.to_vec(),
            })
        })
    };
    let target = find(&opts.target)?;
    for d in opts.drop.iter().chain(&opts.categorical) {
        find(d)?;
    }
    let ids: Vec<usize> = opts.ids.iter().map(|c| find(c)).collect::<Result<_>>()?;
    let mut used = Vec::new();
    match &opts.features {
        Some(list) => {
            for f in list {
                let i = find(f)?;
                if i == target {
                    return Err(Error::option(
                        "features",
                        f,
                        "the target column cannot also be a feature",
                    ));
                }
                if used.iter().any(|&(u, _)| u == i) {
                    return Err(Error::option("features", f, "listed twice"));
                }
                used.push((i, true));
            }
        }
        None => {
            for (i, n) in names.iter().enumerate() {
                if i != target && !opts.drop.contains(n) && !ids.contains(&i) {
                    used.push((i, opts.categorical.contains(n)));
                }
            }
        }
    }
    if used.is_empty() {
        return Err(Error::new(ErrorKind::NoRows {
            path: path.to_path_buf(),
            reason:
                "no feature columns are left once the target, ID and dropped columns are taken out"
                    .into(),
        }));
    }
    Ok((target, used, ids))
}

/// Reads the used columns of a CSV stream, row by row (the whole file is
/// never held as text).
fn read_columns<R: Read>(mut rdr: RowReader<R>, opts: &CsvOptions) -> Result<RawTable> {
    let path = rdr.path().to_path_buf();
    let header = rdr.names().to_vec();
    let (target_index, used, id_indices) = resolve(&header, opts, &path)?;
    let mut columns: Vec<Tally> = used
        .iter()
        .map(|&(i, explicit)| Tally {
            name: header[i].clone(),
            index: i,
            declared_text: opts.categorical.contains(&header[i]),
            explicit,
            numbers: 0,
            missing: 0,
            integers: true,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            texts: Levels::default(),
            number_examples: Vec::new(),
        })
        .collect();
    let mut target = TargetTally {
        index: target_index,
        name: header[target_index].clone(),
        values: Vec::new(),
        codes: Vec::new(),
        labels: Levels::default(),
        numbers: 0,
        texts: 0,
        integers: true,
        overflow: false,
        text_cells: Levels::default(),
        number_examples: Vec::new(),
    };
    let mut ids = (!id_indices.is_empty()).then(|| RowIds {
        names: id_indices.iter().map(|&i| header[i].clone()).collect(),
        values: Vec::new(),
    });
    let mut rows = 0usize;
    let mut dropped = 0usize;
    let mut target_dropped = 0usize;
    let mut values: Vec<f64> = Vec::new();
    while let Some(line) = rdr.next_row()? {
        // First the sizes and missing cells, so a dropped row leaves no
        // partial values behind.
        let target_cell = rdr.cell(target_index, line)?;
        let target_missing = rdr.cells.is_missing(target_cell);
        let mut feature_missing = None;
        for col in &columns {
            let cell = rdr.cell(col.index, line)?;
            if feature_missing.is_none() && rdr.cells.is_missing(cell) {
                feature_missing = Some(col.index);
            }
        }
        for &i in &id_indices {
            rdr.cell(i, line)?;
        }
        match opts.missing {
            Missing::Error => {
                if target_missing {
                    return Err(rdr.missing_error(target_index, line, false));
                }
                if let Some(i) = feature_missing {
                    return Err(rdr.missing_error(i, line, true));
                }
            }
            Missing::Drop => {
                if target_missing || feature_missing.is_some() {
                    for col in columns.iter_mut() {
                        if rdr.cells.is_missing(rdr.cell(col.index, line)?) {
                            col.missing += 1;
                        }
                    }
                    dropped += 1;
                    continue;
                }
            }
            Missing::Impute => {
                if target_missing {
                    target_dropped += 1;
                    continue;
                }
            }
        }
        for col in columns.iter_mut() {
            let cell = rdr.cell(col.index, line)?;
            let t = cell.trim();
            if rdr.cells.is_missing(t) {
                col.missing += 1;
                values.push(f64::from_bits(MISSING_BITS));
                continue;
            }
            if col.declared_text {
                values.push(text_slot(col.texts.code(t, line)));
                continue;
            }
            match rdr.cells.decimal.parse(t) {
                Some(v) => {
                    col.numbers += 1;
                    if col.integers && !(v.fract() == 0.0 && v.abs() < 9.007_199_254_740_992e15) {
                        col.integers = false;
                    }
                    col.min = col.min.min(v);
                    col.max = col.max.max(v);
                    if col.number_examples.len() < 5
                        && !col.number_examples.iter().any(|(s, _)| s == t)
                    {
                        col.number_examples.push((t.to_string(), line));
                    }
                    values.push(v);
                }
                None => values.push(text_slot(col.texts.code(t, line))),
            }
        }
        let t = target_cell.trim();
        let number = rdr.cells.decimal.parse(t);
        match number {
            Some(v) => {
                target.numbers += 1;
                if target.integers && !(v.fract() == 0.0 && v.abs() < 9.007_199_254_740_992e15) {
                    target.integers = false;
                }
                if target.number_examples.len() < 5
                    && !target.number_examples.iter().any(|(s, _)| s == t)
                {
                    target.number_examples.push((t.to_string(), line));
                }
                target.values.push(v);
            }
            None => {
                target.texts += 1;
                target.text_cells.code(t, line);
                target.values.push(f64::NAN);
            }
        }
        if !target.overflow
            && target.labels.names.len() >= MAX_CLASSES
            && !target.labels.lookup.contains_key(t)
        {
            target.overflow = true;
            target.labels = Levels::default();
        }
        target.codes.push(if target.overflow {
            u32::MAX
        } else {
            target.labels.code(t, line)
        });
        if let Some(ids) = ids.as_mut() {
            for &i in &id_indices {
                ids.values.push(rdr.cell(i, line)?.trim().to_string());
            }
        }
        rows += 1;
    }
    if rows == 0 {
        let reason = if dropped > 0 {
            format!(
                "all {dropped} data rows have missing cells, so none are left after dropping them"
            )
        } else if target_dropped > 0 {
            format!(
                "the target is missing in all {target_dropped} data rows, so none are left to learn from"
            )
        } else {
            "the file has a header but no data rows; add one row per sample below the header"
                .to_string()
        };
        return Err(Error::new(ErrorKind::NoRows { path, reason }));
    }
    Ok(RawTable {
        path,
        header,
        delimiter: rdr.delimiter(),
        detected: rdr.detected().map(str::to_string),
        target,
        columns,
        values,
        ids,
        rows,
        dropped,
        target_dropped,
        rules: rdr.cells.clone(),
    })
}

/// Sorted level order: the permutation old code -> new code, and the sorted names.
fn sorted_levels(levels: &[String], numeric_order: bool) -> (Vec<u32>, Vec<String>) {
    let mut order: Vec<usize> = (0..levels.len()).collect();
    if numeric_order {
        order.sort_by(|&a, &b| {
            let (x, y) = (
                levels[a].parse::<i64>().unwrap_or(0),
                levels[b].parse::<i64>().unwrap_or(0),
            );
            x.cmp(&y).then_with(|| levels[a].cmp(&levels[b]))
        });
    } else {
        order.sort_by(|&a, &b| levels[a].as_bytes().cmp(levels[b].as_bytes()));
    }
    let mut remap = vec![0u32; levels.len()];
    for (new, &old) in order.iter().enumerate() {
        remap[old] = new as u32;
    }
    (remap, order.iter().map(|&i| levels[i].clone()).collect())
}

fn column_error(path: &Path, name: &str, index: usize, reason: String) -> Error {
    Error::new(ErrorKind::ColumnType {
        path: path.to_path_buf(),
        column: name.to_string(),
        index,
        reason,
    })
}

fn plural(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("{n} {one}")
    } else {
        format!("{n} {many}")
    }
}

fn examples(list: &[(String, u64)]) -> String {
    list.iter()
        .map(|(s, l)| format!("\"{s}\" (line {l})"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Does every token read as a number with the other decimal mark?
fn other_mark(levels: &Levels, rules: &CellRules) -> bool {
    !levels.names.is_empty()
        && levels
            .names
            .iter()
            .all(|t| rules.decimal.other().parse(t).is_some())
}

/// Why the odd text tokens of a mostly numeric column are there.
fn odd_hint(levels: &Levels, rules: &CellRules) -> String {
    if other_mark(levels, rules) {
        return format!(
            "; they read as numbers with a decimal {}: set {}",
            rules.decimal.other(),
            opt_is("decimal", &rules.decimal.other().to_string())
        );
    }
    if levels
        .names
        .iter()
        .all(|t| t.parse::<f64>().is_ok_and(|v| !v.is_finite()))
    {
        return "; they are not finite numbers (check the exporter's overflow marker)".into();
    }
    String::new()
}

/// The kind of a feature column, decided from the whole column, or why it
/// cannot be decided.
fn decide_column(col: &Tally, rules: &CellRules, path: &Path) -> Result<(bool, String)> {
    let texts: usize = col.texts.counts.iter().sum();
    if col.declared_text && texts > 0 {
        return Ok((true, "declared categorical".to_string()));
    }
    match (col.numbers, texts) {
        (0, 0) => Err(column_error(
            path,
            &col.name,
            col.index,
            format!(
                "every one of its {} cells is missing, so it holds nothing to learn from; drop it ({})",
                col.missing,
                opt_is("drop", &col.name)
            ),
        )),
        (_, 0) => Ok((false, "every non-missing cell is a number".into())),
        (0, _) if other_mark(&col.texts, rules) => Err(column_error(
            path,
            &col.name,
            col.index,
            format!(
                "every cell reads as a number only with a decimal {} (such as \"{}\" on line {}); set {}, or list the column in {} if it holds categories",
                rules.decimal.other(),
                col.texts.names[0],
                col.texts.lines[0],
                opt_is("decimal", &rules.decimal.other().to_string()),
                opt("categorical")
            ),
        )),
        (0, _) => Ok((true, "every non-missing cell is text".into())),
        (n, t) if n >= t => Err(column_error(
            path,
            &col.name,
            col.index,
            format!(
                "{} but {} not: {}{}; if these mark missing cells, list them in {} (and choose what happens to missing cells with {}); if the column holds categories, list it in {}; otherwise correct the cells",
                plural(n, "cell is a number", "cells are numbers"),
                plural(t, "is", "are"),
                col.texts.listed(10),
                odd_hint(&col.texts, rules),
                opt("missing_markers"),
                opt("missing"),
                opt("categorical")
            ),
        )),
        (n, t) => Err(column_error(
            path,
            &col.name,
            col.index,
            format!(
                "{} but {} numbers, such as {}; if the column holds categories (its numbers included), list it in {}; otherwise correct the cells",
                plural(t, "cell is text", "cells are text"),
                plural(n, "is", "are"),
                examples(&col.number_examples),
                opt("categorical")
            ),
        )),
    }
}

/// Is the column an identifier (see the module docs)? Returns the reason.
fn looks_like_id(col: &Tally, text: bool, slots: impl Iterator<Item = f64>) -> Option<String> {
    if col.explicit || col.declared_text {
        return None;
    }
    if text {
        let cells: usize = col.texts.counts.iter().sum();
        return (cells >= MIN_ID_CELLS && col.texts.names.len() == cells)
            .then(|| format!("every one of its {cells} cells is a different text"));
    }
    let n = col.numbers;
    if n < MIN_ID_CELLS || !col.integers || col.max - col.min + 1.0 != n as f64 {
        return None;
    }
    let mut v: Vec<f64> = slots.filter(|x| !x.is_nan()).collect();
    v.sort_by(f64::total_cmp);
    v.windows(2).all(|w| w[0] != w[1]).then(|| {
        format!(
            "its {n} cells are the whole numbers {} to {}, each once: a row number",
            col.min, col.max
        )
    })
}

/// The task and the target, decided from the whole target column.
fn decide_target(
    t: &TargetTally,
    opts: &CsvOptions,
    path: &Path,
    rows: usize,
    decisions: &mut Vec<String>,
    warnings: &mut Vec<String>,
) -> Result<Target> {
    let err = |reason: String| Err(column_error(path, &t.name, t.index, reason));
    let regression = match opts.task {
        Task::Regression => true,
        Task::Classification => false,
        Task::Auto => match (t.numbers, t.texts) {
            (_, 0) if !t.integers => {
                decisions.push(format!(
                    "task: regression (every cell of the target \"{}\" is a number, and not all are whole numbers; set {} to predict classes)",
                    t.name,
                    opt_is("task", "classification")
                ));
                true
            }
            (_, 0) => {
                let k = if t.overflow { MAX_CLASSES + 1 } else { t.labels.names.len() };
                if k > MAX_AUTO_CLASSES {
                    return err(format!(
                        "the target holds {} distinct whole numbers in {rows} rows: they may be counts or measurements (set {}) or class codes (set {})",
                        if t.overflow { format!("more than {MAX_CLASSES}") } else { k.to_string() },
                        opt_is("task", "regression"),
                        opt_is("task", "classification")
                    ));
                }
                false
            }
            (0, _) => false,
            (n, x) if n >= x => {
                return err(format!(
                    "{} but {} not: {}; if these mark missing cells, list them in {}; if the target holds classes, set {}; otherwise correct the cells",
                    plural(n, "cell is a number", "cells are numbers"),
                    plural(x, "is", "are"),
                    t.text_cells.listed(10),
                    opt("missing_markers"),
                    opt_is("task", "classification")
                ))
            }
            (n, x) => {
                return err(format!(
                    "{} but {} numbers, such as {}; if the target holds classes (its numbers included), set {}; otherwise correct the cells",
                    plural(x, "cell is text", "cells are text"),
                    plural(n, "is", "are"),
                    examples(&t.number_examples),
                    opt_is("task", "classification")
                ))
            }
        },
    };
    if regression {
        if t.texts > 0 {
            return err(format!(
                "the task is regression, but {} not numbers: {}{}; if these mark missing cells, list them in {}; otherwise correct the cells",
                plural(t.texts, "cell is", "cells are"),
                t.text_cells.listed(10),
                odd_hint(&t.text_cells, &opts.cell_rules()),
                opt("missing_markers")
            ));
        }
        if opts.task == Task::Regression {
            decisions.push(format!(
                "task: regression (asked for; target \"{}\")",
                t.name
            ));
        }
        return Ok(Target::Values {
            values: Array2::from_shape_vec((rows, 1), t.values.clone()).expect("one value per row"),
            names: vec![t.name.clone()],
        });
    }
    if t.overflow {
        return err(format!(
            "the target holds more than {MAX_CLASSES} distinct labels, too many classes; if it is a number, set {}",
            opt_is("task", "regression")
        ));
    }
    let levels = &t.labels.names;
    let all_integers = levels.iter().all(|l| l.parse::<i64>().is_ok());
    let (remap, names) = match &opts.class_order {
        Some(order) => {
            for l in levels {
                if !order.contains(l) {
                    return Err(Error::option(
                        "class_order",
                        format!("{order:?}"),
                        format!(
                            "does not list the label \"{l}\" found in column \"{}\"",
                            t.name
                        ),
                    ));
                }
            }
            let remap = levels
                .iter()
                .map(|l| order.iter().position(|o| o == l).expect("checked") as u32)
                .collect();
            (remap, order.clone())
        }
        None => sorted_levels(levels, all_integers),
    };
    if names.len() < 2 {
        return Err(Error::new(ErrorKind::SingleClass {
            path: path.to_path_buf(),
            column: t.name.clone(),
            class: names.first().cloned().unwrap_or_default(),
        }));
    }
    let k = names.len();
    let singles: Vec<usize> = (0..levels.len())
        .filter(|&c| t.labels.counts[c] == 1)
        .collect();
    let single_list = || {
        let mut s: Vec<String> = singles
            .iter()
            .take(5)
            .map(|&c| format!("\"{}\" (line {})", levels[c], t.labels.lines[c]))
            .collect();
        if singles.len() > 5 {
            s.push(format!("and {} more", singles.len() - 5));
        }
        s.join(", ")
    };
    if opts.task == Task::Auto {
        if !singles.is_empty() {
            return err(format!(
                "{} of its {k} classes {} a single row: {}; a class of one row cannot be both learnt and checked. If the target holds classes, set {} to go ahead anyway; if it is a number, set {}",
                singles.len(),
                if singles.len() == 1 { "has" } else { "have" },
                single_list(),
                opt_is("task", "classification"),
                opt_is("task", "regression")
            ));
        }
        if k > 2 && rows < MIN_ROWS_PER_CLASS * k {
            return err(format!(
                "the target has {k} classes in {rows} rows, fewer than {MIN_ROWS_PER_CLASS} rows per class on average, too few to learn them; if the target holds classes, set {} to go ahead anyway; if it is a number, set {}",
                opt_is("task", "classification"),
                opt_is("task", "regression")
            ));
        }
        let why = if t.texts > 0 {
            format!("the target \"{}\" holds text: {k} classes", t.name)
        } else {
            format!(
                "the target \"{}\" holds {k} distinct whole numbers ({}), at most {MAX_AUTO_CLASSES}; set {} to predict them as numbers",
                t.name,
                names.join(", "),
                opt_is("task", "regression")
            )
        };
        decisions.push(format!("task: classification ({why})"));
    } else {
        decisions.push(format!(
            "task: classification (asked for; target \"{}\", {k} classes)",
            t.name
        ));
        if !singles.is_empty() {
            warnings.push(format!(
                "{} of the {k} classes {} a single row ({}): such a class cannot be both learnt and checked",
                singles.len(),
                if singles.len() == 1 { "has" } else { "have" },
                single_list()
            ));
        }
    }
    Ok(Target::Classes {
        labels: t
            .codes
            .iter()
            .map(|&c| remap[c as usize] as usize)
            .collect(),
        names,
    })
}

/// Does feature slot `slot` determine the target exactly (a one-to-one
/// pairing of its values with the target's), on rows where it is present?
fn determines_target(values: &[f64], stride: usize, slot: usize, target: &Target) -> bool {
    let cells = values.iter().skip(slot).step_by(stride);
    match target {
        Target::Values { values: y, .. } => {
            let mut any = false;
            for (v, t) in cells.zip(y.iter()) {
                if v.is_nan() {
                    continue;
                }
                if v != t {
                    return false;
                }
                any = true;
            }
            any
        }
        Target::Classes { labels, names } => {
            let mut forward: HashMap<u64, usize> = HashMap::new();
            let mut back: Vec<Option<u64>> = vec![None; names.len()];
            for (v, &l) in cells.zip(labels) {
                let key = v.to_bits();
                if key == MISSING_BITS {
                    continue;
                }
                match forward.get(&key) {
                    Some(&c) if c != l => return false,
                    Some(_) => {}
                    None => {
                        if back[l].is_some() {
                            return false;
                        }
                        forward.insert(key, l);
                        back[l] = Some(key);
                    }
                }
            }
            forward.len() == names.len()
        }
    }
}

fn build_dataset(raw: RawTable, opts: &CsvOptions) -> Result<Dataset> {
    let RawTable {
        path,
        header,
        delimiter,
        detected,
        target: target_tally,
        columns,
        values,
        ids,
        rows: n,
        dropped,
        target_dropped,
        rules,
    } = raw;
    let mut decisions = Vec::new();
    let mut warnings = Vec::new();
    if let Some(d) = detected {
        decisions.push(d);
    }
    let stride = columns.len();
    // Column kinds, from the whole column (the first undecidable column in
    // header order is the error).
    let mut kinds = Vec::with_capacity(stride);
    for col in &columns {
        kinds.push(decide_column(col, &rules, &path)?);
    }
    let target = decide_target(&target_tally, opts, &path, n, &mut decisions, &mut warnings)?;
    drop(target_tally);
    let mut reports: Vec<ColumnReport> = Vec::new();
    let mut kept: Vec<usize> = Vec::new();
    for (slot, (col, (text, why))) in columns.iter().zip(&kinds).enumerate() {
        let id_reason = looks_like_id(
            col,
            *text,
            values.iter().skip(slot).step_by(stride).copied(),
        );
        let mut report = ColumnReport {
            name: col.name.clone(),
            index: col.index,
            role: if id_reason.is_some() {
                "left out (looks like an identifier)".into()
            } else {
                "feature".into()
            },
            kind: if *text { "categorical" } else { "numeric" }.into(),
            why: why.clone(),
            missing: col.missing,
            min_max: (!*text && col.numbers > 0).then_some((col.min, col.max)),
            levels: Vec::new(),
            distinct: text.then_some(col.texts.names.len()),
        };
        if *text {
            let mut order: Vec<usize> = (0..col.texts.names.len()).collect();
            order.sort_by(|&a, &b| {
                col.texts.counts[b]
                    .cmp(&col.texts.counts[a])
                    .then(col.texts.names[a].cmp(&col.texts.names[b]))
            });
            report.levels = order
                .iter()
                .take(20)
                .map(|&i| (col.texts.names[i].clone(), col.texts.counts[i]))
                .collect();
        }
        match id_reason {
            Some(reason) => warnings.push(format!(
                "column \"{}\" looks like an identifier ({reason}) and is not used as a feature; to carry it into predictions set {}, to silence this set {}, to use it as a feature list it in {}",
                col.name,
                opt_is("ids", &col.name),
                opt_is("drop", &col.name),
                opt("features")
            )),
            None => {
                kept.push(slot);
                if *text && col.texts.names.len() == 1 || !*text && col.min == col.max {
                    warnings.push(format!(
                        "column \"{}\" is constant (every non-missing cell is \"{}\"): it carries no information; drop it",
                        col.name,
                        if *text { col.texts.names[0].clone() } else { format!("{}", col.min) }
                    ));
                }
                let high = HIGH_CARDINALITY_MIN.max(n / 10);
                if *text && col.texts.names.len() > high {
                    warnings.push(format!(
                        "column \"{}\" has {} levels in {n} rows (more than {high}): one-hot encoding makes {} inputs, most seen in few rows; group rare levels, or drop it",
                        col.name,
                        col.texts.names.len(),
                        col.texts.names.len()
                    ));
                }
                if determines_target(&values, stride, slot, &target) {
                    warnings.push(format!(
                        "feature \"{}\" determines the target exactly (each of its values goes with one target value and back): it is probably the target under another name (leakage); drop it",
                        col.name
                    ));
                }
            }
        }
        reports.push(report);
    }
    if kept.is_empty() {
        return Err(Error::new(ErrorKind::NoRows {
            path,
            reason: format!(
                "no feature columns are left: every candidate looks like an identifier ({}); list the ones to use in {}",
                columns.iter().map(|c| c.name.as_str()).collect::<Vec<_>>().join(", "),
                opt("features")
            ),
        }));
    }
    // Encodings of the kept columns, with indicators after columns that
    // have missing cells (when asked).
    let mut encodings = Vec::new();
    let mut remaps: Vec<Option<Vec<u32>>> = Vec::new();
    let mut missing_cells = 0usize;
    let indicator = |slot: usize| {
        opts.missing_indicators && opts.missing == Missing::Impute && columns[slot].missing > 0
    };
    for &slot in &kept {
        let col = &columns[slot];
        let (text, _) = &kinds[slot];
        if opts.missing == Missing::Impute {
            missing_cells += col.missing;
        }
        if *text {
            let (remap, sorted) = sorted_levels(&col.texts.names, false);
            encodings.push(ColumnEncoding::OneHot {
                name: col.name.clone(),
                levels: sorted,
            });
            remaps.push(Some(remap));
        } else {
            encodings.push(ColumnEncoding::Numeric {
                name: col.name.clone(),
            });
            remaps.push(None);
        }
        if indicator(slot) {
            encodings.push(ColumnEncoding::MissingIndicator {
                name: col.name.clone(),
            });
        }
    }
    let feature_names: Vec<String> = encodings
        .iter()
        .flat_map(ColumnEncoding::feature_names)
        .collect();
    for (i, f) in feature_names.iter().enumerate() {
        if feature_names[..i].contains(f)
            || (header.contains(f)
                && !encodings
                    .iter()
                    .any(|e| matches!(e, ColumnEncoding::Numeric { name } if name == f)))
        {
            return Err(Error::input(
                path.display().to_string(),
                format!("two features would be named \"{f}\" (a column's encoding and another column); rename a column"),
            ));
        }
    }
    let width: usize = encodings.iter().map(ColumnEncoding::width).sum();
    let all_plain = kept.len() == stride && width == stride && remaps.iter().all(Option::is_none);
    let features = if all_plain {
        // Every feature is a number: the parsed cells are the matrix.
        let mut values = values;
        if missing_cells > 0 {
            values
                .iter_mut()
                .filter(|v| v.is_nan())
                .for_each(|v| *v = f64::NAN);
        }
        values.shrink_to_fit();
        Array2::from_shape_vec((n, stride), values).expect("one value per cell")
    } else {
        let mut features = Array2::<f64>::zeros((n, width));
        let mut offset = 0;
        let mut enc = encodings.iter();
        for (&slot, remap) in kept.iter().zip(&remaps) {
            let e = enc.next().expect("one encoding per kept column");
            let cells = values.iter().skip(slot).step_by(stride);
            match (e, remap) {
                (ColumnEncoding::OneHot { levels, .. }, Some(remap)) => {
                    for (r, &v) in cells.enumerate() {
                        match slot_code(v) {
                            Some(c) => features[[r, offset + remap[c as usize] as usize]] = 1.0,
                            None => {
                                (0..levels.len()).for_each(|k| features[[r, offset + k]] = f64::NAN)
                            }
                        }
                    }
                }
                _ => {
                    for (r, &v) in cells.enumerate() {
                        features[[r, offset]] = if v.is_nan() { f64::NAN } else { v };
                    }
                }
            }
            offset += e.width();
            if indicator(slot) {
                enc.next().expect("an indicator after its column");
                for (r, &v) in values.iter().skip(slot).step_by(stride).enumerate() {
                    features[[r, offset]] = if v.to_bits() == MISSING_BITS {
                        1.0
                    } else {
                        0.0
                    };
                }
                offset += 1;
            }
        }
        features
    };
    if dropped > 0 {
        decisions.push(format!(
            "dropped {} with a missing cell ({})",
            plural(dropped, "row", "rows"),
            opt_is("missing", "drop")
        ));
    }
    if target_dropped > 0 {
        decisions.push(format!(
            "dropped {} whose target is missing (missing targets are never imputed)",
            plural(target_dropped, "row", "rows")
        ));
    }
    if missing_cells > 0 {
        let cols: Vec<String> = kept
            .iter()
            .filter(|&&s| columns[s].missing > 0)
            .map(|&s| format!("{} ({})", columns[s].name, columns[s].missing))
            .collect();
        decisions.push(format!(
            "{} missing: {}; they are filled when fitting, from the training rows only (median of a numeric column, most frequent level of a text column)",
            plural(missing_cells, "cell is", "cells are"),
            cols.join(", ")
        ));
    }
    let report = ReadReport {
        source: path.display().to_string(),
        header,
        delimiter,
        decimal: opts.decimal,
        missing: opts.missing,
        missing_markers: rules.markers.clone(),
        task: opts.task,
        target: opts.target.clone(),
        columns: reports,
        ids: opts.ids.clone(),
        dropped: opts.drop.clone(),
        decisions: decisions.into_iter().map(Message::new).collect(),
        warnings: warnings.into_iter().map(Message::new).collect(),
    };
    Ok(Dataset {
        features,
        feature_names,
        columns: encodings,
        target_name: opts.target.clone(),
        target,
        source: path.display().to_string(),
        dropped_rows: dropped + target_dropped,
        missing_cells,
        ids,
        report: Some(Arc::new(report)),
        part: None,
    })
}

impl Dataset {
    /// Reads a CSV file with a header row, predicting column `target`.
    ///
    /// Shorthand for `CsvOptions::new(target).read(path)`; see [`CsvOptions`]
    /// for choosing columns, missing cells and class order.
    ///
    /// # Errors
    /// Any problem with the file, naming its path, line and column.
    pub fn from_csv(path: impl AsRef<Path>, target: &str) -> Result<Dataset> {
        CsvOptions::new(target).read(path)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<Dataset> {
        CsvOptions::new("y").read_str(text, "t.csv")
    }

    #[test]
    fn small_tables_keep_their_columns() {
        let d = CsvOptions::new("y")
            .task(Task::Classification)
            .read_str("a,y\n1,10\n2,9\n3,10\n", "t.csv")
            .unwrap();
        assert_eq!(d.feature_names, ["a"]);
    }

    #[test]
    fn bom_crlf_and_quotes() {
        let d =
            read("\u{feff}a,\"b, quoted\",y\r\n1,2,x\r\n3,4,\"z\"\r\n5,6,x\r\n7,8,z\r\n").unwrap();
        assert_eq!(d.feature_names, ["a", "b, quoted"]);
        assert_eq!(d.features.row(1).to_vec(), [3.0, 4.0]);
        assert_eq!(d.class_names().unwrap(), ["x", "z"]);
    }

    #[test]
    fn integer_labels_sort_numerically() {
        let d = CsvOptions::new("y")
            .task(Task::Classification)
            .read_str("a,y\n1,10\n2,9\n3,10\n", "t.csv")
            .unwrap();
        assert_eq!(d.class_names().unwrap(), ["9", "10"]);
        assert_eq!(d.labels().unwrap(), &[1, 0, 1]);
        assert_eq!(d.warnings(), ["1 of the 2 classes has a single row (\"9\" (line 3)): such a class cannot be both learnt and checked"]);
    }

    #[test]
    fn fractional_target_is_regression() {
        let d = read("a,y\n1,0.5\n2,1.5\n").unwrap();
        assert!(matches!(d.target, Target::Values { .. }));
        assert!(
            d.decisions()[1].starts_with("task: regression"),
            "{:?}",
            d.decisions()
        );
    }

    #[test]
    fn dropped_columns_are_not_parsed() {
        let d = CsvOptions::new("y")
            .drop(&["junk"])
            .read_str("a,junk,y\n1,??,p\n2,,q\n1,x,p\n2,,q\n", "t.csv")
            .unwrap();
        assert_eq!(d.feature_names, ["a"]);
    }

    // Found by fuzzing (fuzz/regressions/csv_table/declared-categorical-all-missing).
    #[test]
    fn a_declared_column_without_a_value_is_refused() {
        let e = CsvOptions::new("y")
            .categorical(&["c"])
            .missing(Missing::Impute)
            .read_str("a,c,y\n1,,0.5\n2,NA,1.5\n", "t.csv")
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "t.csv: column \"c\" (1): every one of its 2 cells is missing, so it holds nothing to learn from; drop it (drop = c)"
        );
    }

    #[test]
    fn text_slots_round_trip() {
        assert_eq!(slot_code(text_slot(7)), Some(7));
        assert_eq!(slot_code(f64::from_bits(MISSING_BITS)), None);
        assert_eq!(slot_code(1.5), None);
        assert_eq!(slot_code(f64::NAN), None);
    }
}
