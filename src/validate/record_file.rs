//! What the validation layer's small JSON record files (the hold-out
//! ledger, key results) share: how a refusal reads, and the header check
//! (`"format"` and `"format_version"`) before the typed parse, so that a
//! JSON file of another kind, or of another version, is refused by name
//! rather than reported as a missing field.

use crate::error::{Error, Result};
use serde::de::DeserializeOwned;
use std::path::Path;

/// One kind of record file.
pub(super) struct RecordFile {
    /// Said after the path in every refusal, e.g. "hold-out ledger".
    pub label: &'static str,
    /// The kind in a JSON syntax error, e.g. "a stratanet hold-out ledger".
    pub what: &'static str,
    /// The kind in a header refusal, e.g. "a hold-out ledger".
    pub noun: &'static str,
    /// The `"format"` value the file must carry.
    pub format: &'static str,
    /// The only `"format_version"` this library reads.
    pub version: u32,
    /// How to get a good file, said in every refusal.
    pub fix: &'static str,
}

impl RecordFile {
    /// A refusal of `path`: "PATH (label): reason; fix".
    pub fn refuse(&self, path: &Path, reason: impl std::fmt::Display) -> Error {
        Error::input(
            format!("{} ({})", path.display(), self.label),
            format!("{reason}; {}", self.fix),
        )
    }

    /// Parses `text` as this kind of file after checking its header;
    /// `path` names the file in messages.
    pub fn parse<T: DeserializeOwned>(&self, text: &str, path: &Path) -> Result<T> {
        let probe: serde_json::Value =
            serde_json::from_str(text).map_err(|e| Error::json(path, self.what, e, self.fix))?;
        if probe.get("format").and_then(|f| f.as_str()) != Some(self.format) {
            return Err(self.refuse(
                path,
                format!(
                    "this JSON is not {} (no \"format\": \"{}\")",
                    self.noun, self.format
                ),
            ));
        }
        if probe.get("format_version").and_then(|v| v.as_u64()) != Some(u64::from(self.version)) {
            return Err(self.refuse(
                path,
                format!(
                    "\"format_version\" is {}, but this library reads version {}",
                    probe
                        .get("format_version")
                        .unwrap_or(&serde_json::Value::Null),
                    self.version
                ),
            ));
        }
        serde_json::from_str(text).map_err(|e| Error::json(path, self.what, e, self.fix))
    }
}
