//! An analysis's key results as a small file, and the verdict of a rerun
//! that recomputes them: "reproduced: same" or "reproduced: differs", and
//! what.
//!
//! The author records what the analysis stands on (fingerprints of the
//! tables and the model file, the figures reported) in [`KeyResults`] and
//! saves them next to the analysis. A reviewer recomputes the same entries
//! from the committed files, under the same names, and
//! [`KeyResults::compare`] gives a [`Reproduction`]: every entry side by
//! side, the ones that differ named with both values.
//!
//! **Exact comparison.** The library gives the same bits for the same seed
//! on any machine (portable arithmetic), so "same" means identical:
//! numbers bit for bit, fingerprints character for character. A figure
//! that moved in its last digit differs, and says so.
//!
//! **The file** (JSON, written atomically) carries a SHA-256 (FIPS 180-4)
//! checksum of its entries, so figures edited by hand after the analysis
//! wrote them are refused by name rather than compared:
//!
//! ```json
//! {
//!   "format": "stratanet-key-results",
//!   "format_version": 1,
//!   "analysis": "parts-classifier.ipynb",
//!   "checksum": "9d1c...",
//!   "results": [
//!     { "name": "model file (SHA-256)", "fingerprint": "a41f..." },
//!     { "name": "cross-validated accuracy, mean", "number": 0.9354166666666667 },
//!     { "name": "development rows", "count": 480 }
//!   ]
//! }
//! ```
//!
//! Numbers are written in serde_json's shortest form that reads back to the
//! same `f64` (this crate reads JSON with correct rounding), so a saved
//! figure loads bit for bit.

use super::record_file::RecordFile;
use crate::atomic::write_text;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::Path;

const RESULTS_FORMAT: &str = "stratanet-key-results";
/// The version of key-results files this library writes and reads.
pub const RESULTS_VERSION: u32 = 1;
/// The largest key-results file read: 16 MiB.
const MAX_RESULTS_BYTES: u64 = 16 << 20;

/// One recorded value.
#[derive(Clone, Debug, PartialEq)]
pub enum KeyValue {
    /// A fingerprint (a SHA-256 in hex, or any identifying text), compared
    /// character for character.
    Fingerprint(String),
    /// A figure, compared bit for bit.
    Number(f64),
    /// A count, compared exactly.
    Count(u64),
}

impl KeyValue {
    /// Identical: the same kind and the same text, bits or count.
    pub fn is_identical(&self, other: &KeyValue) -> bool {
        match (self, other) {
            (KeyValue::Fingerprint(a), KeyValue::Fingerprint(b)) => a == b,
            (KeyValue::Number(a), KeyValue::Number(b)) => a.to_bits() == b.to_bits(),
            (KeyValue::Count(a), KeyValue::Count(b)) => a == b,
            _ => false,
        }
    }
}

impl std::fmt::Display for KeyValue {
    /// Fingerprints in full, numbers in their shortest exact form (so two
    /// different numbers never print alike), counts as integers.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            KeyValue::Fingerprint(s) => f.write_str(s),
            KeyValue::Number(v) => write!(f, "{v:?}"),
            KeyValue::Count(n) => write!(f, "{n}"),
        }
    }
}

/// One named entry of [`KeyResults`].
#[derive(Clone, Debug, PartialEq)]
pub struct KeyResult {
    /// What it is ("model file (SHA-256)").
    pub name: String,
    /// Its value.
    pub value: KeyValue,
}

/// An entry as files hold it: the name and exactly one of the values.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct EntryV1 {
    name: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    fingerprint: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    number: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    count: Option<u64>,
}

impl EntryV1 {
    fn from_result(r: &KeyResult) -> EntryV1 {
        let mut e = EntryV1 {
            name: r.name.clone(),
            fingerprint: None,
            number: None,
            count: None,
        };
        match &r.value {
            KeyValue::Fingerprint(s) => e.fingerprint = Some(s.clone()),
            KeyValue::Number(v) => e.number = Some(*v),
            KeyValue::Count(n) => e.count = Some(*n),
        }
        e
    }

    fn into_result(self, index: usize) -> std::result::Result<KeyResult, String> {
        let value = match (self.fingerprint, self.number, self.count) {
            (Some(s), None, None) => KeyValue::Fingerprint(s),
            (None, Some(v), None) => KeyValue::Number(v),
            (None, None, Some(n)) => KeyValue::Count(n),
            _ => {
                return Err(format!(
                    "entry {} (\"{}\") must hold exactly one of \"fingerprint\", \"number\" and \"count\"",
                    index + 1,
                    self.name
                ))
            }
        };
        Ok(KeyResult {
            name: self.name,
            value,
        })
    }
}

/// The values an analysis stands on, by name, in the order recorded.
#[derive(Clone, Debug, PartialEq)]
pub struct KeyResults {
    /// Which analysis they come from ("parts-classifier.ipynb").
    pub analysis: String,
    /// The entries, in the order recorded.
    pub results: Vec<KeyResult>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct ResultsFile {
    format: String,
    format_version: u32,
    analysis: String,
    checksum: String,
    results: Vec<EntryV1>,
}

/// The key-results file's kind: its header, and how a refusal reads (with
/// how to get a good file).
const RESULTS: RecordFile = RecordFile {
    label: "key results",
    what: "a stratanet key-results file",
    noun: "a key-results file",
    format: RESULTS_FORMAT,
    version: RESULTS_VERSION,
    fix: "write the results again by running the analysis that records them",
};

fn refuse(path: &Path, reason: impl std::fmt::Display) -> Error {
    RESULTS.refuse(path, reason)
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

impl KeyResults {
    /// No entries yet, for the analysis named `analysis`.
    pub fn new(analysis: impl Into<String>) -> KeyResults {
        KeyResults {
            analysis: analysis.into(),
            results: Vec::new(),
        }
    }

    /// Adds a fingerprint (a SHA-256 in hex, or other identifying text).
    pub fn fingerprint(self, name: impl Into<String>, value: impl Into<String>) -> KeyResults {
        self.with(name, KeyValue::Fingerprint(value.into()))
    }

    /// Adds a figure.
    pub fn number(self, name: impl Into<String>, value: f64) -> KeyResults {
        self.with(name, KeyValue::Number(value))
    }

    /// Adds a count.
    pub fn count(self, name: impl Into<String>, value: u64) -> KeyResults {
        self.with(name, KeyValue::Count(value))
    }

    fn with(mut self, name: impl Into<String>, value: KeyValue) -> KeyResults {
        self.results.push(KeyResult {
            name: name.into(),
            value,
        });
        self
    }

    /// The value recorded under `name`.
    pub fn get(&self, name: &str) -> Option<&KeyValue> {
        self.results
            .iter()
            .find(|r| r.name == name)
            .map(|r| &r.value)
    }

    /// Names that are empty or recorded twice, and numbers JSON cannot
    /// hold: what would make a comparison ambiguous.
    fn check(&self) -> std::result::Result<(), String> {
        let mut seen = std::collections::HashSet::new();
        for (i, r) in self.results.iter().enumerate() {
            if r.name.trim().is_empty() {
                return Err(format!("entry {} has an empty name", i + 1));
            }
            if !seen.insert(r.name.as_str()) {
                return Err(format!("\"{}\" is recorded twice", r.name));
            }
            if let KeyValue::Number(v) = r.value {
                if !v.is_finite() {
                    return Err(format!(
                        "\"{}\" is {v}, which JSON cannot hold (it has no NaN or infinity)",
                        r.name
                    ));
                }
            }
        }
        Ok(())
    }

    /// The fingerprint of the entries: the SHA-256 (hex) of the analysis
    /// name and the entries as compact JSON, the checksum a saved file
    /// carries.
    ///
    /// # Errors
    /// Entries that [`KeyResults::save`] would refuse.
    pub fn checksum(&self) -> Result<String> {
        self.check()
            .map_err(|reason| Error::input("key results", reason))?;
        let entries: Vec<EntryV1> = self.results.iter().map(EntryV1::from_result).collect();
        let body = serde_json::to_vec(&(&self.analysis, &entries))
            .map_err(|e| Error::input("key results", e.to_string()))?;
        Ok(sha256_hex(&body))
    }

    /// The results as key-results file text (what [`KeyResults::save`]
    /// writes), with their checksum.
    ///
    /// # Errors
    /// An empty or repeated name, or a number that is not finite.
    pub fn to_json(&self) -> Result<String> {
        let checksum = self.checksum()?;
        let file = ResultsFile {
            format: RESULTS_FORMAT.to_string(),
            format_version: RESULTS_VERSION,
            analysis: self.analysis.clone(),
            checksum,
            results: self.results.iter().map(EntryV1::from_result).collect(),
        };
        let mut text = serde_json::to_string_pretty(&file)
            .map_err(|e| Error::input("key results", e.to_string()))?;
        text.push('\n');
        Ok(text)
    }

    /// Writes the results to `path` (JSON, with their checksum), atomically.
    ///
    /// # Errors
    /// An empty or repeated name, a number that is not finite, or a failure
    /// to write.
    pub fn save(&self, path: impl AsRef<Path>) -> Result<()> {
        let path = path.as_ref();
        let text = self
            .to_json()
            .map_err(|e| e.context(format!("writing {}", path.display())))?;
        write_text(path, &text)
    }

    /// Reads results written by [`KeyResults::save`], checking their
    /// checksum.
    ///
    /// # Errors
    /// A file that cannot be read, is not a key-results file, or whose
    /// entries no longer match their checksum (edited after they were
    /// written); each message names the file and how to get a good one.
    pub fn load(path: impl AsRef<Path>) -> Result<KeyResults> {
        let path = path.as_ref();
        let meta = std::fs::metadata(path).map_err(|e| Error::io(path, "reading", e))?;
        if meta.is_dir() {
            return Err(refuse(path, "it is a folder, not a file"));
        }
        if meta.len() > MAX_RESULTS_BYTES {
            return Err(refuse(
                path,
                format!(
                    "it holds {} bytes, more than the limit of {MAX_RESULTS_BYTES} for key results",
                    meta.len()
                ),
            ));
        }
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
        KeyResults::from_json(&text, path)
    }

    /// Results from key-results file text; `name` stands for the file in
    /// messages.
    ///
    /// # Errors
    /// As [`KeyResults::load`], except for reading the file.
    pub fn from_json(text: &str, name: impl AsRef<Path>) -> Result<KeyResults> {
        let path = name.as_ref();
        let file: ResultsFile = RESULTS.parse(text, path)?;
        let results = KeyResults {
            analysis: file.analysis,
            results: file
                .results
                .into_iter()
                .enumerate()
                .map(|(i, e)| e.into_result(i))
                .collect::<std::result::Result<_, _>>()
                .map_err(|reason| refuse(path, reason))?,
        };
        results.check().map_err(|reason| refuse(path, reason))?;
        let checksum = results.checksum()?;
        if checksum != file.checksum {
            return Err(refuse(
                path,
                format!(
                    "the entries do not match the file's checksum (it says {}, they give {checksum}): they were changed after they were written",
                    file.checksum
                ),
            ));
        }
        Ok(results)
    }

    /// Compares these results (the author's, expected) with `rerun` (the
    /// same entries recomputed): every entry of either side, in the
    /// author's order, then any the rerun added.
    pub fn compare(&self, rerun: &KeyResults) -> Reproduction {
        let mut rows: Vec<Compared> = self
            .results
            .iter()
            .map(|r| Compared {
                name: r.name.clone(),
                expected: Some(r.value.clone()),
                got: rerun.get(&r.name).cloned(),
            })
            .collect();
        rows.extend(
            rerun
                .results
                .iter()
                .filter(|r| self.get(&r.name).is_none())
                .map(|r| Compared {
                    name: r.name.clone(),
                    expected: None,
                    got: Some(r.value.clone()),
                }),
        );
        Reproduction {
            analysis: self.analysis.clone(),
            rerun: rerun.analysis.clone(),
            results_checksum: self.checksum().ok(),
            rows,
        }
    }
}

/// One entry of a [`Reproduction`]: the author's value and the rerun's.
#[derive(Clone, Debug, PartialEq)]
pub struct Compared {
    /// The entry's name.
    pub name: String,
    /// The author's value (`None`: only the rerun has it).
    pub expected: Option<KeyValue>,
    /// The rerun's value (`None`: the rerun did not recompute it).
    pub got: Option<KeyValue>,
}

impl Compared {
    /// Both sides hold it, identically.
    pub fn is_same(&self) -> bool {
        matches!((&self.expected, &self.got), (Some(a), Some(b)) if a.is_identical(b))
    }

    /// What differs, in a few words: "expected X, got Y", "not recomputed
    /// by the rerun" or "not among the author's results".
    pub fn difference(&self) -> Option<String> {
        if self.is_same() {
            return None;
        }
        Some(match (&self.expected, &self.got) {
            (Some(a), Some(b)) => format!("expected {a}, got {b}"),
            (Some(_), None) => "not recomputed by the rerun".to_string(),
            (None, _) => "not among the author's results".to_string(),
        })
    }
}

/// The verdict of a rerun against the author's key results
/// ([`KeyResults::compare`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Reproduction {
    /// The analysis the author's results come from.
    pub analysis: String,
    /// What recomputed them.
    pub rerun: String,
    /// The author's results' checksum ([`KeyResults::checksum`]).
    pub results_checksum: Option<String>,
    /// Every entry, the author's order first.
    pub rows: Vec<Compared>,
}

impl Reproduction {
    /// Every entry is on both sides, identical (and there is at least one).
    pub fn is_same(&self) -> bool {
        !self.rows.is_empty() && self.rows.iter().all(Compared::is_same)
    }

    /// The entries that differ.
    pub fn differences(&self) -> Vec<&Compared> {
        self.rows.iter().filter(|r| !r.is_same()).collect()
    }

    /// The verdict in one line: "reproduced: same (5 of 5 ...)" or
    /// "reproduced: differs: NAME (expected X, got Y); ...".
    pub fn verdict(&self) -> String {
        if self.rows.is_empty() {
            return "reproduced: differs: the author's results hold no entry, so nothing was compared".to_string();
        }
        if self.is_same() {
            return format!(
                "reproduced: same ({} of {} results identical: fingerprints character for character, numbers bit for bit)",
                self.rows.len(),
                self.rows.len()
            );
        }
        let what: Vec<String> = self
            .differences()
            .iter()
            .map(|r| format!("{} ({})", r.name, r.difference().unwrap_or_default()))
            .collect();
        format!("reproduced: differs: {}", what.join("; "))
    }
}

impl std::fmt::Display for Reproduction {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.verdict())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    /// A fresh folder for one test (under the target folder; never shared).
    fn scratch(name: &str) -> PathBuf {
        let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("target")
            .join("test-scratch")
            .join(format!("key-results-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("scratch folder");
        dir
    }

    fn author() -> KeyResults {
        KeyResults::new("analysis.ipynb")
            .fingerprint("model file (SHA-256)", "ab".repeat(32))
            .number("accuracy", 0.1 + 0.2)
            .count("rows", 480)
    }

    #[test]
    fn the_same_results_say_same() {
        let v = author().compare(&author());
        assert!(v.is_same());
        assert_eq!(
            v.verdict(),
            "reproduced: same (3 of 3 results identical: fingerprints character for character, numbers bit for bit)"
        );
    }

    #[test]
    fn a_number_one_bit_off_differs_and_shows_both_values() {
        let mut rerun = author();
        rerun.results[1].value = KeyValue::Number(0.3);
        let v = author().compare(&rerun);
        assert!(!v.is_same());
        assert_eq!(
            v.verdict(),
            "reproduced: differs: accuracy (expected 0.30000000000000004, got 0.3)"
        );
    }

    #[test]
    fn missing_and_extra_entries_differ() {
        let rerun = KeyResults::new("rerun")
            .fingerprint("model file (SHA-256)", "ab".repeat(32))
            .number("accuracy", 0.1 + 0.2)
            .count("epochs", 3);
        let v = author().compare(&rerun);
        assert_eq!(
            v.verdict(),
            "reproduced: differs: rows (not recomputed by the rerun); epochs (not among the author's results)"
        );
        assert!(!KeyResults::new("a")
            .compare(&KeyResults::new("b"))
            .is_same());
    }

    #[test]
    fn saved_results_load_bit_for_bit() {
        let dir = scratch("roundtrip");
        let path = dir.join("results.json");
        author().save(&path).unwrap();
        assert_eq!(KeyResults::load(&path).unwrap(), author());
        // The same results write the same bytes.
        let first = std::fs::read(&path).unwrap();
        author().save(&path).unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), first);
    }

    #[test]
    fn edited_results_are_refused_by_name() {
        let dir = scratch("edited");
        let path = dir.join("results.json");
        author().save(&path).unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::write(&path, text.replace("480", "481")).unwrap();
        let e = KeyResults::load(&path).unwrap_err().to_string();
        assert!(
            e.starts_with(&format!(
                "{} (key results): the entries do not match the file's checksum",
                path.display()
            )),
            "{e}"
        );
        assert!(e.ends_with("they were changed after they were written; write the results again by running the analysis that records them"), "{e}");
        std::fs::write(&path, "{").unwrap();
        let e = KeyResults::load(&path).unwrap_err().to_string();
        assert!(e.contains("not a stratanet key-results file"), "{e}");
    }

    #[test]
    fn ambiguous_results_are_refused_when_saving() {
        let dir = scratch("ambiguous");
        let twice = KeyResults::new("a").count("x", 1).count("x", 2);
        let e = twice.save(dir.join("r.json")).unwrap_err().to_string();
        assert!(e.ends_with("\"x\" is recorded twice"), "{e}");
        let nan = KeyResults::new("a").number("x", f64::NAN);
        assert!(nan.save(dir.join("r.json")).is_err());
        assert!(!dir.join("r.json").exists());
    }
}
