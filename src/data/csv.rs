//! Reading a table from CSV text.
//!
//! Rules (documented here once, relied on everywhere):
//! - The first record is the header. A UTF-8 byte-order mark is ignored, CRLF
//!   and LF line ends both work, fields may be quoted (RFC 4180).
//! - Only the target and the chosen feature columns are parsed; dropped
//!   columns may hold anything.
//! - A cell is *missing* when, after trimming spaces, it is empty or one of
//!   `NA`, `N/A`, `NaN`, `nan`, `?`, `null`, `NULL`. Missing cells are an
//!   error unless [`Missing::Drop`] is chosen, which drops the whole row and
//!   counts it in [`Dataset::dropped_rows`](super::Dataset::dropped_rows).
//! - A feature column is numeric when its first non-missing cell reads as a
//!   number; a later cell that does not is an error (it is far more often a
//!   typo than a category). A column whose first non-missing cell is text is
//!   categorical and is one-hot encoded, levels in byte-wise sorted order.
//!   Name a column in [`CsvOptions::categorical`] to force it categorical
//!   (for integer codes, say).
//! - Numbers must be finite: `inf` and values that overflow `f64` are refused.
//! - Class labels are ordered numerically when every label reads as an
//!   integer, otherwise byte-wise (so `"10"` sorts after `"9"` only in the
//!   first case); [`CsvOptions::class_order`] sets the order explicitly.
//! - Limits that keep hostile files from exhausting memory: a field may hold
//!   at most [`MAX_FIELD_BYTES`] bytes and a header at most [`MAX_COLUMNS`]
//!   columns.

use super::{ColumnEncoding, Dataset, Target};
use crate::error::{Error, ErrorKind, Result};
use ndarray::Array2;
use std::collections::HashMap;
use std::io::Read;
use std::path::Path;

/// The largest field accepted, in bytes (1 MiB).
pub const MAX_FIELD_BYTES: usize = 1 << 20;
/// The most columns accepted in a header.
pub const MAX_COLUMNS: usize = 10_000;

/// What to do with a row that has a missing cell in a used column.
///
/// Text form: `error`, `drop`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Missing {
    /// Stop with an error naming the line and column (the default).
    #[default]
    Error,
    /// Drop the row and count it.
    Drop,
}

crate::error::text_forms!(Missing, "missing", {
    Missing::Error => "error",
    Missing::Drop => "drop",
});

/// Whether the target holds classes or numbers.
///
/// Text form: `auto`, `classes`, `values`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum TargetKind {
    /// Classes when any label is text or every label is an integer; numbers
    /// when every label is a number and some are not integers.
    #[default]
    Auto,
    /// Always classes.
    Classes,
    /// Always numbers (regression).
    Values,
}

crate::error::text_forms!(TargetKind, "target_kind", {
    TargetKind::Auto => "auto",
    TargetKind::Classes => "classes",
    TargetKind::Values => "values",
});

/// How to read a CSV file into a [`Dataset`].
///
/// # Example
/// ```
/// use stratanet::data::{CsvOptions, Missing};
/// let text = "width_mm,colour,grade\n1.5,red,ok\n2.5,blue,bad\n,red,ok\n";
/// let data = CsvOptions::new("grade").missing(Missing::Drop).read_str(text, "inline.csv")?;
/// assert_eq!(data.feature_names(), ["width_mm", "colour=blue", "colour=red"]);
/// assert_eq!(data.dropped_rows(), 1);
/// assert_eq!(data.class_names().unwrap(), ["bad", "ok"]);
/// # Ok::<(), stratanet::Error>(())
/// ```
#[derive(Clone, Debug, PartialEq)]
pub struct CsvOptions {
    /// The target column's name.
    pub target: String,
    /// Feature columns to use, in this order; `None` means every column but
    /// the target and the dropped ones, in file order.
    pub features: Option<Vec<String>>,
    /// Columns to leave out.
    pub drop: Vec<String>,
    /// Columns to treat as categorical even if they read as numbers.
    pub categorical: Vec<String>,
    /// Missing-cell policy.
    pub missing: Missing,
    /// Classes or numbers.
    pub target_kind: TargetKind,
    /// An explicit class order (every label must be listed).
    pub class_order: Option<Vec<String>>,
    /// The field delimiter (default `,`).
    pub delimiter: u8,
}

impl CsvOptions {
    /// Options for predicting `target`, with every other column a feature.
    pub fn new(target: &str) -> CsvOptions {
        CsvOptions {
            target: target.to_string(),
            features: None,
            drop: Vec::new(),
            categorical: Vec::new(),
            missing: Missing::Error,
            target_kind: TargetKind::Auto,
            class_order: None,
            delimiter: b',',
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

    /// Treat these columns as categorical.
    pub fn categorical(mut self, names: &[&str]) -> Self {
        self.categorical = names.iter().map(|s| s.to_string()).collect();
        self
    }

    /// Set the missing-cell policy.
    pub fn missing(mut self, missing: Missing) -> Self {
        self.missing = missing;
        self
    }

    /// Set the target kind.
    pub fn target_kind(mut self, kind: TargetKind) -> Self {
        self.target_kind = kind;
        self
    }

    /// Set the class order explicitly.
    pub fn class_order(mut self, names: &[&str]) -> Self {
        self.class_order = Some(names.iter().map(|s| s.to_string()).collect());
        self
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
        let raw = read_columns(reader, name, self)?;
        build_dataset(raw, self, name)
    }
}

/// A missing-cell token?
pub(crate) fn is_missing(cell: &str) -> bool {
    matches!(
        cell.trim(),
        "" | "NA" | "N/A" | "NaN" | "nan" | "?" | "null" | "NULL"
    )
}

/// Parses a finite number (spaces around it allowed).
pub(crate) fn parse_number(cell: &str) -> Option<f64> {
    let t = cell.trim();
    // Rust's parser accepts "inf", "infinity" and "nan"; those are not
    // measurements, so only finite results count.
    t.parse::<f64>().ok().filter(|v| v.is_finite())
}

/// One parsed source column. Feature values live in [`RawTable::values`].
pub(crate) enum RawData {
    Numeric,
    /// Levels in order of first appearance; the target keeps its codes
    /// here, a feature column stores each row's code in `RawTable::values`.
    Text {
        codes: Vec<u32>,
        levels: Vec<String>,
        lookup: HashMap<String, u32>,
    },
    /// Not decided yet: every cell so far was missing (only with Missing::Drop
    /// can rows with missing cells be skipped, so this holds no rows).
    Undecided,
}

pub(crate) struct RawColumn {
    pub name: String,
    pub index: usize,
    pub data: RawData,
}

pub(crate) struct RawTable {
    /// Used columns: the target first, then the features in chosen order.
    pub columns: Vec<RawColumn>,
    /// Feature cells, row-major (one slot per feature column): numbers, or
    /// level codes of text columns. Row-major so that an all-numeric table
    /// becomes its feature matrix without a copy: the parse then peaks at
    /// about one f64 matrix (the vector grows by `realloc`, which moves
    /// large blocks by remapping pages, not by copying).
    pub values: Vec<f64>,
    pub rows: usize,
    pub dropped: usize,
}

/// The header's names, trimmed, a leading byte-order mark removed, checked
/// (at most [`MAX_COLUMNS`], none empty, none repeated).
pub(crate) fn header_names(record: &csv::StringRecord, path: &Path) -> Result<Vec<String>> {
    let mut names: Vec<String> = record.iter().map(|s| s.trim().to_string()).collect();
    if let Some(first) = names.first_mut() {
        if let Some(stripped) = first.strip_prefix('\u{feff}') {
            *first = stripped.trim().to_string();
        }
    }
    if names.len() > MAX_COLUMNS {
        return Err(Error::new(ErrorKind::NoRows {
            path: path.to_path_buf(),
            reason: format!(
                "line 1: the header has {} columns, more than the limit of {MAX_COLUMNS}; select the columns you need before reading",
                names.len()
            ),
        }));
    }
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (i, n) in names.iter().enumerate() {
        if n.is_empty() {
            return Err(Error::new(ErrorKind::BadValue {
                path: path.to_path_buf(),
                line: 1,
                column: String::new(),
                index: i,
                value: String::new(),
                reason: "the header cell is empty; give every column a name".into(),
            }));
        }
        if let Some(&first) = seen.get(n.as_str()) {
            return Err(Error::new(ErrorKind::DuplicateColumn {
                path: path.to_path_buf(),
                column: n.clone(),
                positions: (first, i),
            }));
        }
        seen.insert(n, i);
    }
    Ok(names)
}

/// The most bytes one record (the header or a row, quoted newlines
/// included) may take: 64 MiB. The CSV parser buffers a whole record before
/// its cells can be checked, so without this bound a file with one endless
/// line (or one endless quoted cell) would be read into memory whole.
pub const MAX_RECORD_BYTES: u64 = 64 << 20;

/// A reader that refuses to go more than [`MAX_RECORD_BYTES`] past the end
/// of the last complete record; [`next_row`] and [`read_header_record`]
/// mark each record's end.
pub(crate) struct Guarded<R> {
    inner: R,
    read: u64,
    record_end: std::cell::Cell<(u64, u64)>,
}

impl<R> Guarded<R> {
    fn mark(&self, byte: u64, line: u64) {
        self.record_end.set((byte, line));
    }
}

impl<R: Read> Read for Guarded<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let (end, line) = self.record_end.get();
        if self.read.saturating_sub(end) > MAX_RECORD_BYTES {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                format!(
                    "the record starting on line {line} runs past {} MiB without ending (the limit for one row); the file is not a table of rows, or a quote is never closed",
                    MAX_RECORD_BYTES >> 20
                ),
            ));
        }
        let n = self.inner.read(buf)?;
        self.read += n as u64;
        Ok(n)
    }
}

/// Notes where the record just read ends.
fn mark_record<R: Read>(rdr: &csv::Reader<Guarded<R>>) {
    let p = rdr.position();
    rdr.get_ref().mark(p.byte(), p.line());
}

/// A CSV reader with stratanet's settings: the header is read as a record
/// (see [`read_header_record`]), rows may be ragged (so that [`next_row`]
/// can report them by line), and no record may exceed [`MAX_RECORD_BYTES`].
pub(crate) fn csv_reader<R: Read>(reader: R, delimiter: u8) -> csv::Reader<Guarded<R>> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(delimiter)
        .from_reader(Guarded {
            inner: reader,
            read: 0,
            record_end: std::cell::Cell::new((0, 0)),
        })
}

/// Reads the header record into `record`; an empty file is an error.
pub(crate) fn read_header_record<R: Read>(
    rdr: &mut csv::Reader<Guarded<R>>,
    record: &mut csv::StringRecord,
    path: &Path,
) -> Result<()> {
    let got = rdr.read_record(record).map_err(|e| Error::csv(path, e))?;
    mark_record(rdr);
    if !got || (record.len() == 1 && record[0].trim().trim_start_matches('\u{feff}').is_empty()) {
        return Err(Error::new(ErrorKind::EmptyFile {
            path: path.to_path_buf(),
        }));
    }
    Ok(())
}

/// Reads the next data row into `record`, skipping blank lines, and returns
/// its 1-based line (`None` at the end of the file). A row whose cell count
/// is not `width` is an error.
pub(crate) fn next_row<R: Read>(
    rdr: &mut csv::Reader<Guarded<R>>,
    record: &mut csv::StringRecord,
    path: &Path,
    width: usize,
) -> Result<Option<u64>> {
    loop {
        let got = rdr.read_record(record);
        mark_record(rdr);
        match got {
            Ok(true) => {}
            Ok(false) => return Ok(None),
            Err(e) => return Err(Error::csv(path, e)),
        }
        let line = record.position().map_or(0, |p| p.line());
        // A completely blank line reads as one empty field: skip it.
        if record.len() == 1 && record[0].trim().is_empty() && width > 1 {
            continue;
        }
        if record.len() != width {
            return Err(Error::new(ErrorKind::RaggedRow {
                path: path.to_path_buf(),
                line,
                expected: width,
                found: record.len(),
            }));
        }
        return Ok(Some(line));
    }
}

/// Refuses a cell longer than [`MAX_FIELD_BYTES`].
pub(crate) fn check_cell_size(
    cell: &str,
    path: &Path,
    line: u64,
    column: &str,
    index: usize,
) -> Result<()> {
    if cell.len() > MAX_FIELD_BYTES {
        return Err(Error::new(ErrorKind::BadValue {
            path: path.to_path_buf(),
            line,
            column: column.to_string(),
            index,
            value: format!("{}...", cell.chars().take(20).collect::<String>()),
            reason: format!(
                "the cell holds {} bytes, more than the limit of {MAX_FIELD_BYTES}",
                cell.len()
            ),
        }));
    }
    Ok(())
}

/// Checks the header and resolves which columns are used.
/// Returns (header names, used column indices: target first).
pub(crate) fn resolve_header(
    record: &csv::StringRecord,
    path: &Path,
    target: Option<&str>,
    features: Option<&[String]>,
    drop: &[String],
) -> Result<(Vec<String>, Vec<usize>)> {
    let names = header_names(record, path)?;
    let seen: HashMap<&str, usize> = names
        .iter()
        .enumerate()
        .map(|(i, n)| (n.as_str(), i))
        .collect();
    let find = |name: &str| -> Result<usize> {
        seen.get(name).copied().ok_or_else(|| {
            Error::new(ErrorKind::MissingColumn {
                path: path.to_path_buf(),
                column: name.to_string(),
                available: names.clone(),
            })
        })
    };
    let mut used = Vec::new();
    let target_index = match target {
        Some(t) => {
            let i = find(t)?;
            used.push(i);
            Some(i)
        }
        None => None,
    };
    for d in drop {
        find(d)?;
    }
    match features {
        Some(list) => {
            for f in list {
                let i = find(f)?;
                if Some(i) == target_index {
                    return Err(Error::option(
                        "features",
                        f,
                        "the target column cannot also be a feature",
                    ));
                }
                if used.contains(&i) {
                    return Err(Error::option("features", f, "listed twice"));
                }
                used.push(i);
            }
        }
        None => {
            for (i, n) in names.iter().enumerate() {
                if Some(i) != target_index && !drop.contains(n) {
                    used.push(i);
                }
            }
        }
    }
    if used.len() == target_index.map_or(0, |_| 1) {
        return Err(Error::new(ErrorKind::NoRows {
            path: path.to_path_buf(),
            reason: "no feature columns are left once the target and dropped columns are taken out"
                .into(),
        }));
    }
    Ok((names, used))
}

/// Reads the used columns of a CSV stream, row by row (the whole file is
/// never held as text).
pub(crate) fn read_columns<R: Read>(reader: R, path: &Path, opts: &CsvOptions) -> Result<RawTable> {
    let mut rdr = csv_reader(reader, opts.delimiter);
    let mut record = csv::StringRecord::new();
    read_header_record(&mut rdr, &mut record, path)?;
    let (names, used) = resolve_header(
        &record,
        path,
        Some(&opts.target),
        opts.features.as_deref(),
        &opts.drop,
    )?;
    for c in &opts.categorical {
        if !names.contains(c) {
            return Err(Error::new(ErrorKind::MissingColumn {
                path: path.to_path_buf(),
                column: c.clone(),
                available: names.clone(),
            }));
        }
    }
    let width = names.len();
    let mut columns: Vec<RawColumn> = used
        .iter()
        .enumerate()
        .map(|(k, &i)| {
            // The target is always read as text first: its kind is decided
            // once every label is known.
            let forced_text = k == 0 || opts.categorical.iter().any(|c| c == &names[i]);
            RawColumn {
                name: names[i].clone(),
                index: i,
                data: if forced_text {
                    RawData::Text {
                        codes: Vec::new(),
                        levels: Vec::new(),
                        lookup: HashMap::new(),
                    }
                } else {
                    RawData::Undecided
                },
            }
        })
        .collect();
    let mut rows = 0usize;
    let mut dropped = 0usize;
    let mut values: Vec<f64> = Vec::new();
    while let Some(line) = next_row(&mut rdr, &mut record, path, width)? {
        // First pass over the used cells: check sizes and missing cells, so a
        // dropped row leaves no partial values behind.
        let mut missing_here = None;
        for col in &columns {
            let cell = &record[col.index];
            check_cell_size(cell, path, line, &col.name, col.index)?;
            if is_missing(cell) {
                missing_here = Some(col);
                break;
            }
        }
        if let Some(col) = missing_here {
            match opts.missing {
                Missing::Error => {
                    return Err(Error::new(ErrorKind::MissingValue {
                        path: path.to_path_buf(),
                        line,
                        column: col.name.clone(),
                        index: col.index,
                        value: record[col.index].to_string(),
                    }))
                }
                Missing::Drop => {
                    dropped += 1;
                    continue;
                }
            }
        }
        for (slot, col) in columns.iter_mut().enumerate() {
            let cell = &record[col.index];
            if let RawData::Undecided = col.data {
                // Any number, finite or not, makes the column numeric, so that
                // an overflow marker such as "inf" is reported, not encoded.
                col.data = match cell.trim().parse::<f64>() {
                    Ok(_) => RawData::Numeric,
                    Err(_) => RawData::Text {
                        codes: Vec::new(),
                        levels: Vec::new(),
                        lookup: HashMap::new(),
                    },
                };
            }
            match &mut col.data {
                RawData::Numeric => match parse_number(cell) {
                    Some(v) => values.push(v),
                    None => {
                        let reason = if cell.trim().parse::<f64>().is_ok() {
                            "is not a finite number; measurements must be finite (check the exporter's overflow marker)".to_string()
                        } else {
                            "cannot read the cell as a number, and the column is numeric (its first value was a number); correct the cell, drop the column, or list it as categorical (`categorical`)".to_string()
                        };
                        return Err(Error::new(ErrorKind::BadValue {
                            path: path.to_path_buf(),
                            line,
                            column: col.name.clone(),
                            index: col.index,
                            value: cell.to_string(),
                            reason,
                        }));
                    }
                },
                RawData::Text {
                    codes,
                    levels,
                    lookup,
                } => {
                    let key = cell.trim();
                    let code = match lookup.get(key) {
                        Some(&c) => c,
                        None => {
                            let c = levels.len() as u32;
                            levels.push(key.to_string());
                            lookup.insert(key.to_string(), c);
                            c
                        }
                    };
                    if slot == 0 {
                        codes.push(code);
                    } else {
                        // Codes below 2^32 are exact in an f64.
                        values.push(code as f64);
                    }
                }
                RawData::Undecided => unreachable!("decided above"),
            }
        }
        rows += 1;
    }
    if rows == 0 {
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
    Ok(RawTable {
        columns,
        values,
        rows,
        dropped,
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

fn build_dataset(raw: RawTable, opts: &CsvOptions, path: &Path) -> Result<Dataset> {
    let n = raw.rows;
    let mut cols = raw.columns.into_iter();
    let target_col = cols.next().expect("target column is always first");
    let (codes, levels) = match target_col.data {
        RawData::Text { codes, levels, .. } => (codes, levels),
        _ => unreachable!("target is read as text"),
    };
    let all_numbers = levels.iter().all(|l| parse_number(l).is_some());
    let all_integers = levels.iter().all(|l| l.parse::<i64>().is_ok());
    let regression = match opts.target_kind {
        TargetKind::Values => true,
        TargetKind::Classes => false,
        TargetKind::Auto => all_numbers && !all_integers,
    };
    let target = if regression {
        let mut values = Vec::with_capacity(n);
        let level_values: Vec<Option<f64>> = levels.iter().map(|l| parse_number(l)).collect();
        for (row, &c) in codes.iter().enumerate() {
            match level_values[c as usize] {
                Some(v) => values.push(v),
                None => {
                    return Err(Error::new(ErrorKind::BadValue {
                        path: path.to_path_buf(),
                        line: 0,
                        column: target_col.name.clone(),
                        index: target_col.index,
                        value: levels[c as usize].clone(),
                        reason: format!(
                            "data row {} of the target cannot be read as a number, and the target kind is numeric values",
                            row + 1
                        ),
                    }))
                }
            }
        }
        Target::Values {
            values: Array2::from_shape_vec((n, 1), values).expect("one value per row"),
            names: vec![target_col.name.clone()],
        }
    } else {
        let (remap, names) = match &opts.class_order {
            Some(order) => {
                for l in &levels {
                    if !order.contains(l) {
                        return Err(Error::option(
                            "class_order",
                            format!("{order:?}"),
                            format!(
                                "does not list the label \"{l}\" found in column \"{}\"",
                                target_col.name
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
            None => sorted_levels(&levels, all_integers),
        };
        if names.len() < 2 {
            return Err(Error::new(ErrorKind::SingleClass {
                path: path.to_path_buf(),
                column: target_col.name.clone(),
                class: names.first().cloned().unwrap_or_default(),
            }));
        }
        Target::Classes {
            labels: codes.iter().map(|&c| remap[c as usize] as usize).collect(),
            names,
        }
    };

    let mut encodings = Vec::new();
    let mut blocks: Vec<(RawData, Vec<u32>)> = Vec::new();
    for col in cols {
        match col.data {
            RawData::Numeric | RawData::Undecided => {
                encodings.push(ColumnEncoding::Numeric { name: col.name });
                blocks.push((col.data, Vec::new()));
            }
            RawData::Text { ref levels, .. } => {
                let (remap, sorted) = sorted_levels(levels, false);
                encodings.push(ColumnEncoding::OneHot {
                    name: col.name,
                    levels: sorted,
                });
                blocks.push((col.data, remap));
            }
        }
    }
    let stride = blocks.len();
    let width: usize = encodings.iter().map(ColumnEncoding::width).sum();
    let features = if width == stride && blocks.iter().all(|(d, _)| matches!(d, RawData::Numeric)) {
        // Every feature is a number: the parsed cells are the matrix.
        let mut values = raw.values;
        values.shrink_to_fit();
        Array2::from_shape_vec((n, stride), values).expect("one value per cell")
    } else {
        let mut features = Array2::<f64>::zeros((n, width));
        let mut offset = 0;
        for (slot, ((data, remap), enc)) in blocks.iter().zip(&encodings).enumerate() {
            let cells = raw.values.iter().skip(slot).step_by(stride.max(1));
            match data {
                RawData::Numeric => {
                    for (r, &v) in cells.enumerate() {
                        features[[r, offset]] = v;
                    }
                }
                RawData::Text { .. } => {
                    for (r, &c) in cells.enumerate() {
                        features[[r, offset + remap[c as usize] as usize]] = 1.0;
                    }
                }
                RawData::Undecided => unreachable!("rows exist, so every column was decided"),
            }
            offset += enc.width();
        }
        features
    };
    let feature_names = encodings
        .iter()
        .flat_map(ColumnEncoding::feature_names)
        .collect();
    Ok(Dataset {
        features,
        feature_names,
        columns: encodings,
        target_name: target_col.name,
        target,
        source: path.display().to_string(),
        dropped_rows: raw.dropped,
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
    fn bom_crlf_and_quotes() {
        let d = read("\u{feff}a,\"b, quoted\",y\r\n1,2,x\r\n3,4,\"z\"\r\n").unwrap();
        assert_eq!(d.feature_names, ["a", "b, quoted"]);
        assert_eq!(d.features, ndarray::array![[1.0, 2.0], [3.0, 4.0]]);
        assert_eq!(d.class_names().unwrap(), ["x", "z"]);
    }

    #[test]
    fn integer_labels_sort_numerically() {
        let d = read("a,y\n1,10\n2,9\n3,10\n").unwrap();
        assert_eq!(d.class_names().unwrap(), ["9", "10"]);
        assert_eq!(d.labels().unwrap(), &[1, 0, 1]);
    }

    #[test]
    fn fractional_target_is_regression() {
        let d = read("a,y\n1,0.5\n2,1.5\n").unwrap();
        assert!(matches!(d.target, Target::Values { .. }));
    }

    #[test]
    fn dropped_columns_are_not_parsed() {
        let d = CsvOptions::new("y")
            .drop(&["junk"])
            .read_str("a,junk,y\n1,??,p\n2,,q\n", "t.csv")
            .unwrap();
        assert_eq!(d.feature_names, ["a"]);
    }
}
