//! Errors: one [`Error`] type wrapping an [`ErrorKind`] that carries where the
//! problem is (file, line, column, option) and what would fix it.
//!
//! Messages lead with *where*, then *what*, then the offending value, then the
//! fix, so that a notebook cell or a terminal shows the whole story on one line:
//!
//! ```text
//! parts.csv: line 14, column "bore_um" (3): cannot read "12a" as a number; correct the cell, or drop the column with `drop`
//! training options: learning_rate = -0.1: must be a finite number greater than 0
//! ```

use std::fmt;
use std::io;
use std::path::PathBuf;

/// `Display` and `FromStr` for an enum of plain choices, from one table of
/// (variant, text) pairs, so the two always agree and a refusal lists every
/// choice.
macro_rules! text_forms {
    ($ty:ty, $option:literal, { $($variant:path => $text:literal),+ $(,)? }) => {
        impl std::fmt::Display for $ty {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(match self {
                    $($variant => $text,)+
                })
            }
        }

        impl std::str::FromStr for $ty {
            type Err = $crate::error::Error;

            fn from_str(text: &str) -> $crate::error::Result<$ty> {
                match text.trim() {
                    $($text => Ok($variant),)+
                    _ => Err($crate::error::Error::choice(
                        $option,
                        text,
                        &[$($text),+].join(", "),
                    )),
                }
            }
        }
    };
}
pub(crate) use text_forms;

/// The result type of every fallible stratanet function.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// A stratanet error. Cheap to move (one box); see [`Error::kind`] for details.
pub struct Error(Box<Inner>);

struct Inner {
    kind: ErrorKind,
    /// What was being done, outermost first ("cross-validation fold 3").
    context: Vec<String>,
}

/// What went wrong, with the context needed to find and fix it.
#[non_exhaustive]
#[derive(Debug)]
pub enum ErrorKind {
    /// Reading or writing a file failed.
    Io {
        /// The file.
        path: PathBuf,
        /// The operation, e.g. "reading" or "writing".
        action: &'static str,
        /// The operating system's error.
        source: io::Error,
    },
    /// The CSV reader itself failed (bad UTF-8, an unterminated quote, ...).
    Csv {
        /// The file (or a source name for in-memory text).
        path: PathBuf,
        /// The 1-based line, when known.
        line: Option<u64>,
        /// The reader's error.
        source: csv::Error,
    },
    /// A JSON file (a sweep plan, a trial result) could not be read as what
    /// it should be.
    Json {
        /// The file.
        path: PathBuf,
        /// What the file should be ("a sweep plan").
        what: String,
        /// The JSON reader's error (with its line and column).
        source: serde_json::Error,
        /// How to get a good file.
        fix: String,
    },
    /// A cell could not be read as what its column needs.
    BadValue {
        /// The file.
        path: PathBuf,
        /// The 1-based line in the file.
        line: u64,
        /// The column's header name.
        column: String,
        /// The column's 0-based position in the header.
        index: usize,
        /// The cell's text.
        value: String,
        /// What the cell should have been and how to fix it.
        reason: String,
    },
    /// A cell is missing (empty, or a missing marker such as `NA`).
    MissingValue {
        /// The file.
        path: PathBuf,
        /// The 1-based line in the file.
        line: u64,
        /// The column's header name.
        column: String,
        /// The column's 0-based position in the header.
        index: usize,
        /// The cell's text (possibly empty).
        value: String,
        /// Whether filling the cell (`missing = impute`) is possible here.
        can_impute: bool,
    },
    /// A column's cells, taken together, do not say what the column is (a
    /// mix of numbers and text, numbers with the other decimal mark, no
    /// value at all); the reason lists the cells and how to decide.
    ColumnType {
        /// The file.
        path: PathBuf,
        /// The column's header name.
        column: String,
        /// The column's 0-based position in the header.
        index: usize,
        /// What the cells hold and how to decide.
        reason: String,
    },
    /// A named column does not exist.
    MissingColumn {
        /// The file (or model) that lacks it.
        path: PathBuf,
        /// The name asked for.
        column: String,
        /// The names that do exist.
        available: Vec<String>,
    },
    /// Two header cells carry the same name.
    DuplicateColumn {
        /// The file.
        path: PathBuf,
        /// The repeated name.
        column: String,
        /// 0-based positions of the first and second occurrence.
        positions: (usize, usize),
    },
    /// A data row has a different number of cells than the header.
    RaggedRow {
        /// The file.
        path: PathBuf,
        /// The 1-based line in the file.
        line: u64,
        /// Cells in the header.
        expected: usize,
        /// Cells in this row.
        found: usize,
    },
    /// The file has no header (it is empty).
    EmptyFile {
        /// The file.
        path: PathBuf,
    },
    /// The file has a header but no data rows (or none left after dropping).
    NoRows {
        /// The file.
        path: PathBuf,
        /// Why there are no rows.
        reason: String,
    },
    /// The target column holds only one class.
    SingleClass {
        /// The file.
        path: PathBuf,
        /// The target column.
        column: String,
        /// The one class present.
        class: String,
    },
    /// An option is outside its valid range.
    InvalidOption {
        /// The library option's name (`learning_rate`, `batch_size`); the
        /// command line shows its flag instead (`--learning-rate`).
        name: String,
        /// The value given.
        value: String,
        /// The valid range or the fix.
        reason: String,
    },
    /// Arrays whose sizes must agree do not.
    ShapeMismatch {
        /// What was being checked.
        what: String,
        /// The expected (rows, columns).
        expected: (usize, usize),
        /// The found (rows, columns).
        found: (usize, usize),
    },
    /// Training produced a loss that is not finite.
    Diverged {
        /// The 1-based epoch at which it happened.
        epoch: usize,
        /// The learning rate in force then.
        learning_rate: f64,
        /// The non-finite loss.
        loss: f64,
    },
    /// Input that is well-formed but unusable (e.g. a fold with a single class).
    InvalidInput {
        /// What was being done.
        what: String,
        /// Why it cannot be done, and the fix.
        reason: String,
    },
    /// A model file is malformed or inconsistent.
    ModelFile {
        /// The file.
        path: PathBuf,
        /// What is wrong with it.
        reason: String,
    },
}

impl Error {
    /// Wraps a kind.
    pub fn new(kind: ErrorKind) -> Error {
        Error(Box::new(Inner {
            kind,
            context: Vec::new(),
        }))
    }

    /// The kind of error, with its context.
    pub fn kind(&self) -> &ErrorKind {
        &self.0.kind
    }

    /// Unwraps the kind.
    pub fn into_kind(self) -> ErrorKind {
        self.0.kind
    }

    /// The same error, said to have happened while doing `what` (shown
    /// before the message: "cross-validation fold 3: ..."). The kind and its
    /// place are kept.
    pub fn context(mut self, what: impl Into<String>) -> Error {
        self.0.context.insert(0, what.into());
        self
    }

    /// Is this an operating-system input/output failure?
    pub fn is_io(&self) -> bool {
        matches!(self.0.kind, ErrorKind::Io { .. })
    }

    /// Shorthand for [`ErrorKind::InvalidOption`].
    pub fn option(
        name: impl Into<String>,
        value: impl fmt::Display,
        reason: impl Into<String>,
    ) -> Error {
        Error::new(ErrorKind::InvalidOption {
            name: name.into(),
            value: value.to_string(),
            reason: reason.into(),
        })
    }

    /// An option whose text is none of the valid choices, listed.
    pub(crate) fn choice(name: &str, value: impl fmt::Display, choices: &str) -> Error {
        Error::option(name, value, format!("must be one of {choices}"))
    }

    /// Shorthand for [`ErrorKind::InvalidInput`].
    pub fn input(what: impl Into<String>, reason: impl Into<String>) -> Error {
        Error::new(ErrorKind::InvalidInput {
            what: what.into(),
            reason: reason.into(),
        })
    }

    /// Shorthand for [`ErrorKind::ShapeMismatch`].
    pub fn shape(
        what: impl Into<String>,
        expected: (usize, usize),
        found: (usize, usize),
    ) -> Error {
        Error::new(ErrorKind::ShapeMismatch {
            what: what.into(),
            expected,
            found,
        })
    }

    /// Shorthand for [`ErrorKind::Io`].
    pub fn io(path: impl Into<PathBuf>, action: &'static str, source: io::Error) -> Error {
        Error::new(ErrorKind::Io {
            path: path.into(),
            action,
            source,
        })
    }

    /// A CSV reader's error for `path`: an I/O failure stays
    /// [`ErrorKind::Io`], anything else is [`ErrorKind::Csv`] with its line.
    pub fn csv(path: impl Into<PathBuf>, e: csv::Error) -> Error {
        let path = path.into();
        let line = e.position().map(|p| p.line());
        if let csv::ErrorKind::Io(_) = e.kind() {
            if let csv::ErrorKind::Io(io) = e.into_kind() {
                return Error::io(path, "reading", io);
            }
            unreachable!("the kind was checked")
        }
        Error::new(ErrorKind::Csv {
            path,
            line,
            source: e,
        })
    }

    /// Shorthand for [`ErrorKind::Json`].
    pub fn json(
        path: impl Into<PathBuf>,
        what: impl Into<String>,
        source: serde_json::Error,
        fix: impl Into<String>,
    ) -> Error {
        Error::new(ErrorKind::Json {
            path: path.into(),
            what: what.into(),
            source,
            fix: fix.into(),
        })
    }

    /// Shorthand for [`ErrorKind::ModelFile`].
    pub fn model_file(path: impl Into<PathBuf>, reason: impl Into<String>) -> Error {
        Error::new(ErrorKind::ModelFile {
            path: path.into(),
            reason: reason.into(),
        })
    }
}

/// serde_json's message without its own " at line L column C" suffix.
fn json_message(e: &serde_json::Error) -> String {
    let text = e.to_string();
    text.strip_suffix(&format!(" at line {} column {}", e.line(), e.column()))
        .unwrap_or(&text)
        .to_string()
}

fn list(names: &[String]) -> String {
    const MAX: usize = 30;
    let mut out: Vec<&str> = names.iter().take(MAX).map(String::as_str).collect();
    if names.len() > MAX {
        out.push("...");
    }
    out.join(", ")
}

impl Error {
    /// The message with every option named by `name` (the library's own
    /// names by default; the command line passes its flags).
    pub(crate) fn render(&self, name: &dyn Fn(&str, Option<&str>) -> String) -> String {
        let raw = Raw(self).to_string();
        unmark(&raw, name)
    }
}

impl Error {
    /// For an option error, only its reason (what the valid values are),
    /// with options named by `name`; for other errors the whole message.
    pub(crate) fn reason_with(&self, name: &dyn Fn(&str, Option<&str>) -> String) -> String {
        match &self.0.kind {
            ErrorKind::InvalidOption { reason, .. } if self.0.context.is_empty() => {
                unmark(reason, name)
            }
            _ => self.render(name),
        }
    }
}

/// A sentence about the user's data or a fit (a decision the library made,
/// or a warning) that may name options and the fix. It shows the library's
/// option names (`missing = impute`); the command line shows its flags
/// (`--missing impute`) instead.
#[derive(Clone)]
pub struct Message(String);

/// Two messages are equal when they read the same (a message read back
/// from a file has its options written out).
impl PartialEq for Message {
    fn eq(&self, other: &Message) -> bool {
        self.to_string() == other.to_string()
    }
}

impl Eq for Message {}

impl Message {
    /// A message whose options are marked with `opt` / `opt_is`.
    pub(crate) fn new(marked: impl Into<String>) -> Message {
        Message(marked.into())
    }

    /// The message with every option named by `name`.
    pub(crate) fn render(&self, name: &dyn Fn(&str, Option<&str>) -> String) -> String {
        unmark(&self.0, name)
    }

    /// The same message with `prefix` before it.
    pub(crate) fn prefixed(&self, prefix: &str) -> Message {
        Message(format!("{prefix}{}", self.0))
    }

    /// The text with its options still marked.
    pub(crate) fn marked(&self) -> &str {
        &self.0
    }

    /// Does the text start with `s` (the options still marked)?
    pub(crate) fn starts_with(&self, s: &str) -> bool {
        self.0.starts_with(s)
    }
}

impl fmt::Display for Message {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.render(&library_name))
    }
}

impl fmt::Debug for Message {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:?}", self.to_string())
    }
}

impl PartialEq<&str> for Message {
    fn eq(&self, other: &&str) -> bool {
        self.to_string().as_str() == *other
    }
}

impl PartialEq<str> for Message {
    fn eq(&self, other: &str) -> bool {
        self.to_string().as_str() == other
    }
}

/// Marks an option's name inside a message, so that [`Error::render`] can
/// show it as the caller names it (`batch_size` in the library,
/// `--batch-size` on the command line).
pub(crate) fn opt(name: &str) -> String {
    format!("{MARK}{name}{MARK}")
}

/// Marks "option `name` set to `value`" inside a message (`missing = drop`
/// in the library, `--missing drop` on the command line).
pub(crate) fn opt_is(name: &str, value: &str) -> String {
    format!("{MARK}{name}{VALUE}{value}{MARK}")
}

/// Private-use characters that never occur in a rendered message.
const MARK: char = '\u{E000}';
const VALUE: char = '\u{E001}';

/// Replaces every marked option with `name(option, value)`.
fn unmark(text: &str, name: &dyn Fn(&str, Option<&str>) -> String) -> String {
    let mut out = String::with_capacity(text.len());
    let mut parts = text.split(MARK);
    if let Some(first) = parts.next() {
        out.push_str(first);
    }
    let rest: Vec<&str> = parts.collect();
    for (i, part) in rest.iter().enumerate() {
        if i % 2 == 0 && i + 1 < rest.len() {
            match part.split_once(VALUE) {
                Some((n, v)) => out.push_str(&name(n, Some(v))),
                None => out.push_str(&name(part, None)),
            }
        } else {
            out.push_str(part);
        }
    }
    out
}

/// The library's own naming: `batch_size`, `missing = drop`.
fn library_name(name: &str, value: Option<&str>) -> String {
    match value {
        Some(v) => format!("{name} = {v}"),
        None => name.to_string(),
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.render(&library_name))
    }
}

/// The message with option markers still in it.
struct Raw<'a>(&'a Error);

impl fmt::Display for Raw<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for c in &self.0 .0.context {
            write!(f, "{c}: ")?;
        }
        match &self.0 .0.kind {
            ErrorKind::Io {
                path,
                action,
                source,
            } => write!(f, "{}: {action} failed: {source}", path.display()),
            ErrorKind::Csv { path, line, source } => {
                write!(f, "{}", path.display())?;
                if let Some(line) = line {
                    write!(f, ": line {line}")?;
                }
                match source.kind() {
                    csv::ErrorKind::Utf8 { .. } => {
                        write!(f, ": the file is not valid UTF-8; save it as UTF-8 text")
                    }
                    _ => write!(f, ": cannot parse as CSV: {source}"),
                }
            }
            ErrorKind::Json {
                path,
                what,
                source,
                fix,
            } => write!(
                f,
                "{}: line {}, column {}: not {what}: {}; {fix}",
                path.display(),
                source.line(),
                source.column(),
                json_message(source)
            ),
            ErrorKind::BadValue {
                path,
                line,
                column,
                index,
                value,
                reason,
            } => write!(
                f,
                "{}: line {line}, column \"{column}\" ({index}): {reason} (found \"{value}\")",
                path.display()
            ),
            ErrorKind::MissingValue {
                path,
                line,
                column,
                index,
                value,
                can_impute,
            } => {
                write!(
                    f,
                    "{}: line {line}, column \"{column}\" ({index}): missing value \"{value}\"; fill the cell, or set {} to drop rows with missing cells",
                    path.display(),
                    opt_is("missing", "drop"),
                )?;
                if *can_impute {
                    write!(
                        f,
                        ", or {} to fill them from the training rows",
                        opt_is("missing", "impute")
                    )?;
                }
                Ok(())
            }
            ErrorKind::ColumnType {
                path,
                column,
                index,
                reason,
            } => write!(
                f,
                "{}: column \"{column}\" ({index}): {reason}",
                path.display()
            ),
            ErrorKind::MissingColumn {
                path,
                column,
                available,
            } => write!(
                f,
                "{}: no column \"{column}\"; columns are: {}",
                path.display(),
                list(available)
            ),
            ErrorKind::DuplicateColumn {
                path,
                column,
                positions,
            } => write!(
                f,
                "{}: line 1: column name \"{column}\" appears twice (columns {} and {}); give every column a distinct name",
                path.display(),
                positions.0,
                positions.1
            ),
            ErrorKind::RaggedRow {
                path,
                line,
                expected,
                found,
            } => write!(
                f,
                "{}: line {line}: found {found} cells but the header has {expected}; every row needs one cell per column (check for a stray or missing comma)",
                path.display()
            ),
            ErrorKind::EmptyFile { path } => write!(
                f,
                "{}: the file is empty; a header row naming the columns is needed, then one row per sample",
                path.display()
            ),
            ErrorKind::NoRows { path, reason } => write!(f, "{}: {reason}", path.display()),
            ErrorKind::SingleClass {
                path,
                column,
                class,
            } => write!(
                f,
                "{}: target column \"{column}\" holds only one class (\"{class}\"); a classifier needs at least two classes",
                path.display()
            ),
            ErrorKind::InvalidOption {
                name,
                value,
                reason,
            } => write!(f, "option {} = {value}: {reason}", opt(name)),
            ErrorKind::ShapeMismatch {
                what,
                expected,
                found,
            } => write!(
                f,
                "{what}: expected {} rows x {} columns, found {} x {}",
                expected.0, expected.1, found.0, found.1
            ),
            ErrorKind::Diverged {
                epoch,
                learning_rate,
                loss,
            } => write!(
                f,
                "training diverged at epoch {epoch}: the loss became {loss} with {} {learning_rate}; try a smaller {} (e.g. a tenth), standardised inputs, or gradient-friendlier activations",
                opt("learning_rate"),
                opt("learning_rate")
            ),
            ErrorKind::InvalidInput { what, reason } => write!(f, "{what}: {reason}"),
            ErrorKind::ModelFile { path, reason } => {
                write!(f, "{}: not a usable model file: {reason}", path.display())
            }
        }
    }
}

// Debug is what `.unwrap()` and a notebook's fallback display show: make it
// the readable message plus the kind's name, not a nested struct dump.
impl fmt::Debug for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let name = format!("{:?}", self.0.kind);
        let name = name.split([' ', '{', '(']).next().unwrap_or("Error");
        write!(f, "Error({name}: {self})")
    }
}

impl std::error::Error for Error {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match &self.0.kind {
            ErrorKind::Io { source, .. } => Some(source),
            ErrorKind::Csv { source, .. } => Some(source),
            ErrorKind::Json { source, .. } => Some(source),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn option_message_names_the_option_and_range() {
        let e = Error::option(
            "learning_rate",
            -0.1,
            "must be a finite number greater than 0",
        );
        assert_eq!(
            e.to_string(),
            "option learning_rate = -0.1: must be a finite number greater than 0"
        );
        assert_eq!(
            format!("{e:?}"),
            "Error(InvalidOption: option learning_rate = -0.1: must be a finite number greater than 0)"
        );
    }

    #[test]
    fn long_column_lists_are_cut() {
        let names: Vec<String> = (0..40).map(|i| format!("c{i}")).collect();
        let e = Error::new(ErrorKind::MissingColumn {
            path: "a.csv".into(),
            column: "x".into(),
            available: names,
        });
        assert!(e.to_string().ends_with("c29, ..."));
    }
}
