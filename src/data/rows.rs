//! The one row reader behind every CSV input: training tables
//! ([`CsvOptions`](super::CsvOptions)), rows for a model
//! ([`FeatureOptions`](crate::model_file::FeatureOptions)) and the table
//! summary ([`Dataset::summary`](super::Dataset::summary)). It owns the dialect (delimiter,
//! decimal mark, missing-cell markers), the header checks, the limits that
//! keep hostile files from exhausting memory, and the reading of one cell as
//! missing, a number or text; the readers above it decide what a column is.
//!
//! Rules (documented here once, relied on everywhere):
//! - The first record is the header. A UTF-8 byte-order mark is ignored, CRLF
//!   and LF line ends both work, fields may be quoted (RFC 4180), and blank
//!   lines are skipped.
//! - **Delimiter.** Comma, semicolon or tab ([`Delimiter`]). Unless one is
//!   given, it is detected from the first [`SNIFF_BYTES`] of the file: each
//!   candidate splits the header and up to [`SNIFF_ROWS`] rows (quotes
//!   respected); the candidates that split the header into two or more
//!   columns are kept, and of those the ones that split every sampled row
//!   into the header's count. One candidate left is the delimiter; none
//!   splitting the header means a one-column file (read with commas); two or
//!   more left is an error asking for the delimiter. The decision is
//!   reported ([`Dataset::decisions`](super::Dataset::decisions)).
//! - **Decimal mark.** A point (`1.5`) by default, or a comma (`1,5`,
//!   [`DecimalMark::Comma`]); never guessed, but a column whose cells all
//!   read as numbers only with the other mark is an error that says so.
//!   Thousands separators are not read.
//! - **Missing cells.** After trimming spaces, a cell is missing when it is
//!   empty or equals one of the missing markers, case-sensitive: by default
//!   [`DEFAULT_MISSING_MARKERS`] (`NA`, `N/A`, `NaN`, `nan`, `?`, `null`,
//!   `NULL`); a list given replaces them (an empty cell is always missing).
//! - **Numbers** are finite decimal numbers as Rust's `f64` parser reads them
//!   (`1.5`, `-2`, `3e-4`, `.5`): `inf` and values that overflow `f64` are
//!   not numbers.
//! - Limits: a field holds at most [`MAX_FIELD_BYTES`] bytes, a record
//!   [`MAX_RECORD_BYTES`], a header at most [`MAX_COLUMNS`] columns.

use crate::error::{Error, ErrorKind, Result};
use std::collections::HashMap;
use std::io::{Chain, Cursor, Read};
use std::path::{Path, PathBuf};

/// The largest field accepted, in bytes (1 MiB).
pub const MAX_FIELD_BYTES: usize = 1 << 20;
/// The most columns accepted in a header.
pub const MAX_COLUMNS: usize = 10_000;
/// The most bytes one record (the header or a row, quoted newlines
/// included) may take: 64 MiB. The CSV parser buffers a whole record before
/// its cells can be checked, so without this bound a file with one endless
/// line (or one endless quoted cell) would be read into memory whole.
pub const MAX_RECORD_BYTES: u64 = 64 << 20;
/// How much of a file delimiter detection looks at: 64 KiB.
pub const SNIFF_BYTES: usize = 64 << 10;
/// How many rows after the header delimiter detection looks at.
pub const SNIFF_ROWS: usize = 20;
/// The missing-cell markers used when none are given (an empty cell is
/// always missing as well).
pub const DEFAULT_MISSING_MARKERS: [&str; 7] = ["NA", "N/A", "NaN", "nan", "?", "null", "NULL"];

/// The field delimiter.
///
/// Text form: `auto` (detected; see the [module docs](self)), `comma`,
/// `semicolon`, `tab`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Delimiter {
    /// Detected from the header and the first rows.
    #[default]
    Auto,
    /// `,`
    Comma,
    /// `;`
    Semicolon,
    /// A tab character.
    Tab,
}

crate::error::text_forms!(Delimiter, "delimiter", {
    Delimiter::Auto => "auto",
    Delimiter::Comma => "comma",
    Delimiter::Semicolon => "semicolon",
    Delimiter::Tab => "tab",
});

impl Delimiter {
    /// The byte, or `None` for detection.
    pub fn byte(self) -> Option<u8> {
        match self {
            Delimiter::Auto => None,
            Delimiter::Comma => Some(b','),
            Delimiter::Semicolon => Some(b';'),
            Delimiter::Tab => Some(b'\t'),
        }
    }

    fn from_byte(b: u8) -> Delimiter {
        match b {
            b';' => Delimiter::Semicolon,
            b'\t' => Delimiter::Tab,
            _ => Delimiter::Comma,
        }
    }

    /// How the delimiter is shown in messages (`','`, `';'`, `tab`).
    fn shown(b: u8) -> &'static str {
        match b {
            b';' => "';'",
            b'\t' => "tab",
            _ => "','",
        }
    }
}

/// The decimal mark of numbers in the file.
///
/// Text form: `point` (`1.5`, the default), `comma` (`1,5`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum DecimalMark {
    /// `1.5`
    #[default]
    Point,
    /// `1,5` (a cell holding a point is then not a number).
    Comma,
}

crate::error::text_forms!(DecimalMark, "decimal", {
    DecimalMark::Point => "point",
    DecimalMark::Comma => "comma",
});

impl DecimalMark {
    /// The other mark.
    pub(crate) fn other(self) -> DecimalMark {
        match self {
            DecimalMark::Point => DecimalMark::Comma,
            DecimalMark::Comma => DecimalMark::Point,
        }
    }

    /// A finite number written with this mark (spaces around it allowed).
    pub(crate) fn parse(self, cell: &str) -> Option<f64> {
        let t = cell.trim();
        // Rust's parser accepts "inf", "infinity" and "nan"; those are not
        // measurements, so only finite results count.
        let finite = |s: &str| s.parse::<f64>().ok().filter(|v| v.is_finite());
        match self {
            DecimalMark::Point => finite(t),
            DecimalMark::Comma => {
                if t.contains('.') || t.matches(',').count() > 1 {
                    None
                } else {
                    finite(&t.replace(',', "."))
                }
            }
        }
    }
}

/// How cells are read: the decimal mark and the missing markers.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct CellRules {
    pub decimal: DecimalMark,
    pub markers: Vec<String>,
}

impl CellRules {
    /// The rules for a decimal mark and a marker list (`None`: the default
    /// markers).
    pub fn new(decimal: DecimalMark, markers: Option<&[String]>) -> CellRules {
        CellRules {
            decimal,
            markers: match markers {
                Some(m) => m.iter().map(|s| s.trim().to_string()).collect(),
                None => DEFAULT_MISSING_MARKERS
                    .iter()
                    .map(|s| s.to_string())
                    .collect(),
            },
        }
    }

    /// Is the cell missing?
    pub fn is_missing(&self, cell: &str) -> bool {
        let t = cell.trim();
        t.is_empty() || self.markers.iter().any(|m| m == t)
    }

    /// Checks a marker list given by the user.
    pub fn check_markers(markers: &[String]) -> Result<()> {
        for m in markers {
            let t = m.trim();
            if t.is_empty() {
                return Err(Error::option(
                    "missing_markers",
                    format!("{markers:?}"),
                    "holds an empty marker; an empty cell is always missing, so list only non-empty markers",
                ));
            }
            if DecimalMark::Point.parse(t).is_some() {
                return Err(Error::option(
                    "missing_markers",
                    format!("{markers:?}"),
                    format!("holds \"{t}\", which reads as a number; a marker must not be a number a column could hold"),
                ));
            }
        }
        Ok(())
    }
}

/// The header's names, trimmed, a leading byte-order mark removed, checked
/// (at most [`MAX_COLUMNS`], none empty, none repeated).
fn header_names(record: &csv::StringRecord, path: &Path) -> Result<Vec<String>> {
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

/// A reader that refuses to go more than [`MAX_RECORD_BYTES`] past the end
/// of the last complete record; the row reader marks each record's end.
struct Guarded<R> {
    inner: R,
    read: u64,
    record_end: std::cell::Cell<(u64, u64)>,
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

/// The first bytes of the input, and whether they are all of it.
fn read_prefix<R: Read>(reader: &mut R, path: &Path) -> Result<(Vec<u8>, bool)> {
    let mut prefix = vec![0u8; SNIFF_BYTES];
    let mut filled = 0;
    while filled < prefix.len() {
        match reader.read(&mut prefix[filled..]) {
            Ok(0) => {
                prefix.truncate(filled);
                return Ok((prefix, true));
            }
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(Error::io(path, "reading", e)),
        }
    }
    Ok((prefix, false))
}

/// Field counts of the header and the first rows of `prefix` split on
/// `delimiter` (blank lines skipped; a record cut by the end of an
/// incomplete prefix is left out unless it is the header).
fn field_counts(prefix: &[u8], complete: bool, delimiter: u8) -> Vec<usize> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(delimiter)
        .from_reader(prefix);
    let mut record = csv::ByteRecord::new();
    let mut counts = Vec::new();
    while counts.len() <= SNIFF_ROWS {
        match rdr.read_byte_record(&mut record) {
            Ok(true) => {}
            _ => break,
        }
        let at_end = rdr.position().byte() as usize >= prefix.len();
        if at_end && !complete && !counts.is_empty() {
            break;
        }
        if record.len() == 1 && record[0].iter().all(u8::is_ascii_whitespace) {
            continue;
        }
        counts.push(record.len());
    }
    counts
}

/// Detects the delimiter from a prefix (see the module docs); returns the
/// byte and the sentence that reports the decision.
fn detect_delimiter(prefix: &[u8], complete: bool, path: &Path) -> Result<(u8, String)> {
    let candidates = [b',', b';', b'\t'];
    let counts: Vec<Vec<usize>> = candidates
        .iter()
        .map(|&d| field_counts(prefix, complete, d))
        .collect();
    let splitting: Vec<usize> = (0..candidates.len())
        .filter(|&i| counts[i].first().is_some_and(|&c| c >= 2))
        .collect();
    let consistent: Vec<usize> = splitting
        .iter()
        .copied()
        .filter(|&i| counts[i].iter().all(|&c| c == counts[i][0]))
        .collect();
    let rows = counts[0].len().saturating_sub(1);
    let sample = if rows == 0 {
        "the header".to_string()
    } else {
        format!(
            "the header and the first {rows} row{}",
            if rows == 1 { "" } else { "s" }
        )
    };
    let described = |i: usize| {
        format!(
            "{} ({} columns)",
            Delimiter::shown(candidates[i]),
            counts[i][0]
        )
    };
    let chosen = match (splitting.len(), consistent.len()) {
        (0, _) => {
            return Ok((
                b',',
                "delimiter ',' (the header is one column under comma, semicolon and tab alike)"
                    .into(),
            ))
        }
        (1, _) => splitting[0],
        (_, 1) => consistent[0],
        _ => {
            let list: Vec<String> = (if consistent.is_empty() {
                &splitting
            } else {
                &consistent
            })
            .iter()
            .map(|&i| described(i))
            .collect();
            return Err(Error::input(
                path.display().to_string(),
                format!(
                    "cannot tell the delimiter: {sample} split alike on {}; set {} (comma, semicolon or tab)",
                    list.join(" and "),
                    crate::error::opt("delimiter")
                ),
            ));
        }
    };
    let d = candidates[chosen];
    let why = if splitting.len() == 1 {
        "the only one that splits the header"
    } else {
        "the only one that splits every sampled row like the header"
    };
    Ok((
        d,
        format!(
            "delimiter {} (detected from {sample}: {} columns; {why})",
            Delimiter::shown(d),
            counts[chosen][0]
        ),
    ))
}

/// The stream a row reader parses: the sniffed prefix, then the rest.
type Stream<R> = Guarded<Chain<Cursor<Vec<u8>>, R>>;

/// Reads a CSV stream row by row: the header, then each row's cells, with
/// the dialect and limits of the module docs. Nothing is held but the
/// current row (and the first [`SNIFF_BYTES`] while detecting).
pub(crate) struct RowReader<R: Read> {
    rdr: csv::Reader<Stream<R>>,
    record: csv::StringRecord,
    path: PathBuf,
    names: Vec<String>,
    delimiter: u8,
    detected: Option<String>,
    /// How cells are read.
    pub cells: CellRules,
}

impl<R: Read> RowReader<R> {
    /// Opens a stream: detects the delimiter when asked, reads and checks
    /// the header.
    ///
    /// # Errors
    /// An empty file, an undecidable delimiter, a bad header, or the CSV
    /// reader's errors; each names the file.
    pub fn open(
        mut reader: R,
        path: &Path,
        delimiter: Delimiter,
        cells: CellRules,
    ) -> Result<RowReader<R>> {
        let (prefix, complete) = read_prefix(&mut reader, path)?;
        let (byte, detected) = match delimiter.byte() {
            Some(b) => (b, None),
            None => {
                let (b, why) = detect_delimiter(&prefix, complete, path)?;
                (b, Some(why))
            }
        };
        let mut rdr = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .delimiter(byte)
            .from_reader(Guarded {
                inner: Cursor::new(prefix).chain(reader),
                read: 0,
                record_end: std::cell::Cell::new((0, 0)),
            });
        let mut record = csv::StringRecord::new();
        let got = rdr
            .read_record(&mut record)
            .map_err(|e| Error::csv(path, e))?;
        mark_record(&rdr);
        if !got || (record.len() == 1 && record[0].trim().trim_start_matches('\u{feff}').is_empty())
        {
            return Err(Error::new(ErrorKind::EmptyFile {
                path: path.to_path_buf(),
            }));
        }
        let names = header_names(&record, path)?;
        Ok(RowReader {
            rdr,
            record,
            path: path.to_path_buf(),
            names,
            delimiter: byte,
            detected,
            cells,
        })
    }

    /// The header's names.
    pub fn names(&self) -> &[String] {
        &self.names
    }

    /// The file, for messages.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The delimiter in use.
    pub fn delimiter(&self) -> Delimiter {
        Delimiter::from_byte(self.delimiter)
    }

    /// The sentence reporting a detected delimiter (`None` when it was given).
    pub fn detected(&self) -> Option<&str> {
        self.detected.as_deref()
    }

    /// Reads the next data row, skipping blank lines, and returns its
    /// 1-based line (`None` at the end of the file).
    ///
    /// # Errors
    /// A row whose cell count is not the header's, or the CSV reader's errors.
    pub fn next_row(&mut self) -> Result<Option<u64>> {
        let width = self.names.len();
        loop {
            let got = self.rdr.read_record(&mut self.record);
            mark_record(&self.rdr);
            match got {
                Ok(true) => {}
                Ok(false) => return Ok(None),
                Err(e) => return Err(Error::csv(&self.path, e)),
            }
            let line = self.record.position().map_or(0, |p| p.line());
            // A completely blank line reads as one empty field: skip it.
            if self.record.len() == 1 && self.record[0].trim().is_empty() && width > 1 {
                continue;
            }
            if self.record.len() != width {
                return Err(Error::new(ErrorKind::RaggedRow {
                    path: self.path.clone(),
                    line,
                    expected: width,
                    found: self.record.len(),
                }));
            }
            return Ok(Some(line));
        }
    }

    /// Cell `index` of the current row, refused when it is larger than
    /// [`MAX_FIELD_BYTES`].
    ///
    /// # Errors
    /// A cell over the size limit, naming the line and column.
    pub fn cell(&self, index: usize, line: u64) -> Result<&str> {
        let cell = &self.record[index];
        if cell.len() > MAX_FIELD_BYTES {
            return Err(Error::new(ErrorKind::BadValue {
                path: self.path.clone(),
                line,
                column: self.names[index].clone(),
                index,
                value: format!("{}...", cell.chars().take(20).collect::<String>()),
                reason: format!(
                    "the cell holds {} bytes, more than the limit of {MAX_FIELD_BYTES}",
                    cell.len()
                ),
            }));
        }
        Ok(cell)
    }

    /// The error for a missing cell in column `index` on `line`
    /// (`can_impute`: whether to offer filling it).
    pub fn missing_error(&self, index: usize, line: u64, can_impute: bool) -> Error {
        Error::new(ErrorKind::MissingValue {
            path: self.path.clone(),
            line,
            column: self.names[index].clone(),
            index,
            value: self.record[index].to_string(),
            can_impute,
        })
    }

    /// The error for a cell of column `index` on `line` that is not what
    /// it should be.
    pub fn bad_value(&self, index: usize, line: u64, reason: String) -> Error {
        Error::new(ErrorKind::BadValue {
            path: self.path.clone(),
            line,
            column: self.names[index].clone(),
            index,
            value: self.record[index].to_string(),
            reason,
        })
    }

    /// A cell that should be a number, or why it is not one; `whose` says
    /// whose column it is ("the model's column is numeric").
    pub fn number(&self, index: usize, line: u64, whose: &str) -> Result<f64> {
        let cell = &self.record[index];
        match self.cells.decimal.parse(cell) {
            Some(v) => Ok(v),
            None => Err(self.bad_value(index, line, not_a_number(cell, &self.cells, whose))),
        }
    }
}

/// Why a cell is not a number, with the fix.
pub(crate) fn not_a_number(cell: &str, rules: &CellRules, whose: &str) -> String {
    let t = cell.trim();
    if t.parse::<f64>().is_ok() || t.replace(',', ".").parse::<f64>().is_ok() {
        if rules.decimal.other().parse(t).is_some() && rules.decimal.parse(t).is_none() {
            return format!(
                "cannot read the cell as a number with a decimal {}, and {whose}; it reads as one with a decimal {}: set {}",
                rules.decimal,
                rules.decimal.other(),
                crate::error::opt_is("decimal", &rules.decimal.other().to_string())
            );
        }
        return format!("is not a finite number, and {whose}; measurements must be finite (check the exporter's overflow marker)");
    }
    format!("cannot read the cell as a number, and {whose}")
}

/// Notes where the record just read ends.
fn mark_record<R: Read>(rdr: &csv::Reader<Stream<R>>) {
    let p = rdr.position();
    rdr.get_ref().record_end.set((p.byte(), p.line()));
}

#[cfg(test)]
mod tests {
    use super::*;

    fn detect(text: &str) -> Result<(u8, String)> {
        detect_delimiter(text.as_bytes(), true, Path::new("t.csv"))
    }

    #[test]
    fn delimiters_are_detected_and_reported() {
        let (d, why) = detect("a;b;y\n1,5;2;x\n2,5;3;z\n").unwrap();
        assert_eq!(d, b';');
        assert_eq!(
            why,
            "delimiter ';' (detected from the header and the first 2 rows: 3 columns; the only one that splits the header)"
        );
        assert_eq!(detect("a\tb\n1\t2\n").unwrap().0, b'\t');
        assert_eq!(detect("a,b,y\n1,2,x\n").unwrap().0, b',');
        let (d, why) = detect("value\n1\n2\n").unwrap();
        assert_eq!(d, b',');
        assert!(why.contains("one column"), "{why}");
        assert_eq!(
            detect("a,b;c\n1,2;3\n").unwrap_err().to_string(),
            "t.csv: cannot tell the delimiter: the header and the first 1 row split alike on ',' (2 columns) and ';' (2 columns); set delimiter (comma, semicolon or tab)"
        );
        // A quoted delimiter does not count; a ragged row is left for the reader.
        assert_eq!(detect("\"a;b\",c\n1,2\n").unwrap().0, b',');
        assert_eq!(detect("a,b,c\n1,2\n").unwrap().0, b',');
    }

    #[test]
    fn cells_are_missing_numbers_or_text() {
        let point = CellRules::new(DecimalMark::Point, None);
        assert!(point.is_missing(" NA "));
        assert!(point.is_missing(""));
        assert_eq!(point.decimal.parse("1.5"), Some(1.5));
        assert_eq!(point.decimal.parse("1,5"), None);
        assert_eq!(point.decimal.parse("inf"), None);
        assert_eq!(point.decimal.parse("1e400"), None);
        let comma = CellRules::new(DecimalMark::Comma, Some(&["n.a.".to_string()]));
        assert_eq!(comma.decimal.parse("1,5"), Some(1.5));
        assert_eq!(comma.decimal.parse("1.5"), None);
        assert!(comma.is_missing("n.a."));
        assert!(!comma.is_missing("NA"));
        assert!(CellRules::check_markers(&["-1".to_string()]).is_err());
    }
}
