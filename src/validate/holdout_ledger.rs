//! The hold-out ledger: how many times a held-out set has been scored, kept
//! in a small JSON file so that the count outlives the process.
//!
//! A held-out set gives an honest estimate only on its first look: once a
//! score has steered a choice, the set has become part of model selection
//! and its score is optimistic (Cawley & Talbot, "On over-fitting in model
//! selection and subsequent selection bias in performance evaluation",
//! JMLR 11, 2010). A counter in memory forgets every earlier run, so each
//! rerun would call its look the first. The ledger remembers them.
//!
//! The file (written atomically; one ledger may count several held-out
//! sets):
//!
//! ```json
//! {
//!   "format": "stratanet-holdout-ledger",
//!   "format_version": 1,
//!   "held_out_sets": [
//!     {
//!       "held_out": "5e0c...",
//!       "rows": 120,
//!       "table_source": "demo-data/parts.csv",
//!       "looks": [ { "look": 1, "model": "a41f..." } ]
//!     }
//!   ]
//! }
//! ```
//!
//! `held_out` identifies the rows: the SHA-256 (FIPS 180-4) of their
//! indices in the table and of their content
//! ([`Dataset::fingerprint`](crate::data::Dataset::fingerprint)), so another
//! split, or the same indices of another table, starts its own count at 1.
//! Each look records the scored model's
//! [`Model::fingerprint`](crate::fit::Model::fingerprint), so a reader can
//! tell one model scored twice from several models compared on the set.
//! Nothing depends on the clock: the same looks write the same bytes.
//!
//! A ledger that cannot be read, or that contradicts itself, is an error
//! naming the file and the way out; it is never reset silently, since a
//! reset would turn later looks into "first" ones.
//!
//! Two processes scoring one set at the same instant may record one look
//! between them (each reads, adds its look and replaces the file); the
//! ledger counts looks by people, which do not come that close together.

use super::record_file::RecordFile;
use crate::atomic::write_text;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::Path;

const LEDGER_FORMAT: &str = "stratanet-holdout-ledger";
/// The version of ledger files this library writes and reads.
pub const LEDGER_VERSION: u32 = 1;
/// The largest ledger read: 16 MiB (a look takes about 100 bytes).
const MAX_LEDGER_BYTES: u64 = 16 << 20;

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct LedgerFile {
    format: String,
    format_version: u32,
    held_out_sets: Vec<SetEntry>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct SetEntry {
    held_out: String,
    rows: usize,
    table_source: String,
    looks: Vec<Look>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct Look {
    look: usize,
    model: String,
}

/// Which held-out set a ledger entry counts.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct SetIdentity {
    /// SHA-256 of the row indices and the rows' content (hex).
    pub held_out: String,
    pub rows: usize,
    pub table_source: String,
}

impl SetIdentity {
    /// The identity of the rows at `indices` whose content has the
    /// fingerprint `content`.
    pub(crate) fn new(indices: &[usize], content: &str, table_source: &str) -> SetIdentity {
        use sha2::{Digest, Sha256};
        let mut h = Sha256::new();
        h.update(b"stratanet held-out rows\n");
        h.update((content.len() as u64).to_le_bytes());
        h.update(content.as_bytes());
        h.update((indices.len() as u64).to_le_bytes());
        for &i in indices {
            h.update((i as u64).to_le_bytes());
        }
        SetIdentity {
            held_out: h.finalize().iter().map(|b| format!("{b:02x}")).collect(),
            rows: indices.len(),
            table_source: table_source.to_string(),
        }
    }
}

/// What the ledger says after a look was recorded.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Recorded {
    /// Looks at this set, this one included.
    pub times_scored: usize,
    /// Different models among them.
    pub models: usize,
}

/// The ledger's kind: its header, and how a refusal reads (with the way
/// out of a bad ledger).
const LEDGER: RecordFile = RecordFile {
    label: "hold-out ledger",
    what: "a stratanet hold-out ledger",
    noun: "a hold-out ledger",
    format: LEDGER_FORMAT,
    version: LEDGER_VERSION,
    fix: "a ledger is never reset silently, because a reset would make the next look count as the first: restore the file from where you keep it (a backup, version control), or, accepting that the earlier looks are forgotten, move it away and record the fact in your notes before scoring again",
};

fn refuse(path: &Path, reason: impl std::fmt::Display) -> Error {
    LEDGER.refuse(path, reason)
}

/// One held-out set as a ledger counts it ([`read_ledger`]).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LedgerEntry {
    /// The held-out rows' fingerprint
    /// ([`HoldOut::fingerprint`](super::HoldOut::fingerprint)).
    pub held_out: String,
    /// Rows in the set.
    pub rows: usize,
    /// Where the table came from.
    pub table_source: String,
    /// Looks recorded.
    pub looks: usize,
    /// Different models among them (by fingerprint).
    pub models: usize,
}

impl From<&SetEntry> for LedgerEntry {
    fn from(e: &SetEntry) -> LedgerEntry {
        LedgerEntry {
            held_out: e.held_out.clone(),
            rows: e.rows,
            table_source: e.table_source.clone(),
            looks: e.looks.len(),
            models: e
                .looks
                .iter()
                .map(|l| l.model.as_str())
                .collect::<std::collections::HashSet<_>>()
                .len(),
        }
    }
}

/// What the ledger file at `path` counts, one entry per held-out set.
///
/// # Errors
/// A file that cannot be read, is not a ledger, or contradicts itself (the
/// message names the file and the way out).
pub fn read_ledger(path: impl AsRef<Path>) -> Result<Vec<LedgerEntry>> {
    let path = path.as_ref();
    match read(path)? {
        Some(file) => Ok(file.held_out_sets.iter().map(LedgerEntry::from).collect()),
        None => Err(Error::io(
            path,
            "reading",
            std::io::Error::from(std::io::ErrorKind::NotFound),
        )),
    }
}

/// What ledger text counts; `name` stands for the file in messages.
///
/// # Errors
/// As [`read_ledger`], except for reading the file.
pub fn parse_ledger(text: &str, name: impl AsRef<Path>) -> Result<Vec<LedgerEntry>> {
    let file = parse(text, name.as_ref())?;
    Ok(file.held_out_sets.iter().map(LedgerEntry::from).collect())
}

/// Reads and checks the ledger at `path`; `None` when there is no file yet.
fn read(path: &Path) -> Result<Option<LedgerFile>> {
    let meta = match std::fs::metadata(path) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(path, "reading", e)),
    };
    if meta.is_dir() {
        return Err(refuse(path, "it is a folder, not a ledger file"));
    }
    if meta.len() > MAX_LEDGER_BYTES {
        return Err(refuse(
            path,
            format!(
                "it holds {} bytes, more than a ledger's limit of {MAX_LEDGER_BYTES}; it is not a ledger, or is damaged",
                meta.len()
            ),
        ));
    }
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
    parse(&text, path).map(Some)
}

/// Parses and checks ledger text; `path` names the file in messages.
fn parse(text: &str, path: &Path) -> Result<LedgerFile> {
    if text.trim().is_empty() {
        return Err(refuse(path, "the file is empty"));
    }
    let file: LedgerFile = LEDGER.parse(text, path)?;
    check(&file).map_err(|reason| refuse(path, reason))?;
    Ok(file)
}

/// The ledger's own rules: one entry per set, looks numbered 1, 2, ...
fn check(file: &LedgerFile) -> std::result::Result<(), String> {
    let hex = |s: &str| s.len() == 64 && s.bytes().all(|b| b.is_ascii_hexdigit());
    let mut seen = std::collections::HashSet::new();
    for (n, set) in file.held_out_sets.iter().enumerate() {
        if !hex(&set.held_out) {
            return Err(format!(
                "held-out set {}: \"held_out\" is not a SHA-256 in hex",
                n + 1
            ));
        }
        if !seen.insert(set.held_out.as_str()) {
            return Err(format!(
                "held-out set {} is listed twice ({})",
                n + 1,
                set.held_out
            ));
        }
        if set.looks.is_empty() {
            return Err(format!("held-out set {} lists no look", n + 1));
        }
        for (k, look) in set.looks.iter().enumerate() {
            if look.look != k + 1 {
                return Err(format!(
                    "held-out set {}: look {} is numbered {}; looks are numbered 1, 2, ... in order",
                    n + 1,
                    k + 1,
                    look.look
                ));
            }
            if !hex(&look.model) {
                return Err(format!(
                    "held-out set {}, look {}: \"model\" is not a SHA-256 in hex",
                    n + 1,
                    k + 1
                ));
            }
        }
    }
    Ok(())
}

/// Checks the ledger at `path` (an absent file is a new ledger) and that
/// its entry for `set`, if any, is about the same rows; says whether the
/// file is there.
pub(crate) fn check_ledger(path: &Path, set: &SetIdentity) -> Result<bool> {
    match read(path)? {
        Some(file) => {
            entry_for(path, &file, set)?;
            Ok(true)
        }
        None => Ok(false),
    }
}

fn entry_for(path: &Path, file: &LedgerFile, set: &SetIdentity) -> Result<Option<usize>> {
    let Some(index) = file
        .held_out_sets
        .iter()
        .position(|e| e.held_out == set.held_out)
    else {
        return Ok(None);
    };
    let entry = &file.held_out_sets[index];
    if entry.rows != set.rows {
        return Err(refuse(
            path,
            format!(
                "its entry for this held-out set ({}) says {} rows, but the set has {}",
                set.held_out, entry.rows, set.rows
            ),
        ));
    }
    Ok(Some(index))
}

/// Records one look at `set` by the model with fingerprint `model` in the
/// ledger at `path`, atomically, and returns the counts. An absent file is
/// a new ledger, unless `must_exist` (it was there before): then it is
/// refused, since starting afresh would forget the earlier looks.
pub(crate) fn record(
    path: &Path,
    set: &SetIdentity,
    model: &str,
    must_exist: bool,
) -> Result<Recorded> {
    let mut file = match read(path)? {
        Some(file) => file,
        None if must_exist => {
            return Err(refuse(
                path,
                "the ledger was there when this hold-out set was opened (or has recorded a look since) and is gone now",
            ))
        }
        None => LedgerFile {
            format: LEDGER_FORMAT.to_string(),
            format_version: LEDGER_VERSION,
            held_out_sets: Vec::new(),
        },
    };
    let index = match entry_for(path, &file, set)? {
        Some(i) => i,
        None => {
            file.held_out_sets.push(SetEntry {
                held_out: set.held_out.clone(),
                rows: set.rows,
                table_source: set.table_source.clone(),
                looks: Vec::new(),
            });
            file.held_out_sets.len() - 1
        }
    };
    let entry = &mut file.held_out_sets[index];
    entry.looks.push(Look {
        look: entry.looks.len() + 1,
        model: model.to_string(),
    });
    let summary = LedgerEntry::from(&*entry);
    let recorded = Recorded {
        times_scored: summary.looks,
        models: summary.models,
    };
    let mut text = serde_json::to_string_pretty(&file)
        .map_err(|e| Error::input(format!("writing {}", path.display()), e.to_string()))?;
    text.push('\n');
    write_text(path, &text)?;
    Ok(recorded)
}
