//! Model files: [`Model::save`] writes a fitted model as readable JSON,
//! [`Model::load`] reads it back with every field checked, and
//! [`FeatureOptions`] reads new rows for a model by column name.
//!
//! ```no_run
//! use stratanet::model_file::FeatureOptions;
//! use stratanet::Model;
//! # fn fitted() -> Model { unimplemented!() }
//! let model: Model = fitted();
//! model.save("parts-model.json")?;
//! let model = Model::load("parts-model.json")?;
//! let rows = FeatureOptions::default().read(&model, "new-parts.csv")?;
//! let classes = model.predict_classes(rows.x())?;
//! println!("{classes:?}");
//! # Ok::<(), stratanet::Error>(())
//! ```
//!
//! # The format (version 2)
//!
//! One JSON object (RFC 8259), written by `serde_json::to_writer_pretty`.
//! The schema is owned here, not derived from the in-memory types, so files
//! survive changes to the library and to ndarray. Weights are nested lists:
//! one list per input unit, one number per output unit (`z = a W + b`, see
//! [`network`](crate::network)). Abbreviated:
//!
//! ```json
//! {
//!   "format": "stratanet-model",
//!   "format_version": 2,
//!   "target": { "name": "verdict", "is_classifier": true, "classes": ["accept", "reject"] },
//!   "columns": [
//!     { "encoding": "numeric", "name": "bore_um" },
//!     { "encoding": "one_hot", "name": "shift", "levels": ["early", "late"] }
//!   ],
//!   "feature_names": ["bore_um", "shift=early", "shift=late"],
//!   "scaler": { "kind": "standardise", "offset": [12.5, 0.5, 0.5], "scale": [0.25, 0.5, 0.5] },
//!   "training_options": { "hidden_layers": [4], "activation": "tanh", "optimiser": "adam:0.9:0.999:1e-8", "...": "..." },
//!   "seed": 7,
//!   "provenance": {
//!     "library_version": "0.1.0", "table_fingerprint": "9f86d0...", "table_source": "parts.csv",
//!     "table_rows": 40, "training_rows": 32, "validation_rows": 8, "epochs_run": 200,
//!     "best_epoch": 180, "best_validation_loss": 0.21, "stopped_early": true,
//!     "final_training_loss": 0.18
//!   },
//!   "network": {
//!     "layer_sizes": [3, 4, 1],
//!     "hidden_activation": "tanh",
//!     "head": "logistic",
//!     "precision": "f64",
//!     "layers": [
//!       { "weights": [[0.1, -0.3, 0.2, 0.5], [...], [...]], "biases": [0.0, 0.1, -0.2, 0.3] },
//!       { "weights": [[1.2], [-0.7], [0.4], [0.9]], "biases": [-0.1] }
//!     ]
//!   }
//! }
//! ```
//!
//! A model fitted on one part of a table (the development subset of a
//! [`HoldOut::split`](crate::validate::HoldOut::split)) has
//! `"table_part": {"role": "development", "of_rows": 600}` in its
//! provenance (`"held_out"` for the other part), so `"table_rows"` is
//! never read as the whole file; like the other optional parts of version
//! 2, it is absent when it does not apply, and a version-1 file holding it
//! is refused.
//!
//! `"hidden_activation": "leaky_relu"` comes with `"leaky_relu_slope"`.
//! A model trained in the fast arithmetic mode adds
//! `"fused_multiply_add": true` (or `false`) to its provenance: whether the
//! training CPU fused its multiply-adds, on which the fast mode's bits depend
//! (see [`Arithmetic`](crate::network::Arithmetic)).
//! A regression model has `"is_classifier": false` and `"outputs"` (output
//! names) instead of `"classes"`. `training_options` holds every
//! [`FitOptions`](crate::FitOptions) field flat, each in the text form its
//! `FromStr` reads (`"optimiser": "adam:0.9:0.999:1e-8"`, `"batch_size":
//! "full"`, `null` for a default chosen from the data).
//!
//! **Version 1** files (written before version 2) differ only in
//! `training_options`, which held the in-memory types' serde form of the time
//! (nested, `"validation_fraction"`, `{"adam": {...}}`); they are still read,
//! and `tests/data/model-v1.json` keeps that reader honest.
//!
//! **Exact numbers.** serde_json writes every `f64` in its shortest form that
//! reads back to the same value, and this crate enables serde_json's
//! `float_roundtrip` feature, whose parser is correctly rounded ("makes
//! f64 -> JSON -> f64 produce output identical to the input", serde_json
//! 1.0.54 release notes). So a loaded model predicts bit for bit what the
//! saved one did; [`Model::save`] checks this by reading its output back
//! before writing it. f32 models hold f32 values, written as the f64 of the same
//! value. JSON has no NaN or infinity (RFC 8259, section 6), so a model with
//! one is refused when saving. The seed is written as a JSON integer;
//! serde_json reads all of `u64` exactly, though RFC 8259 notes that other
//! tools may not beyond 2^53.
//!
//! **Versions.** A file states `"format_version"`. This library writes
//! version [`FORMAT_VERSION`], reads it and every earlier version, and
//! refuses a newer or unknown one by name rather than guess. A change to the
//! schema gets a new version.
//!
//! # What loading refuses
//!
//! Every refusal is an [`ErrorKind::ModelFile`](crate::ErrorKind::ModelFile)
//! naming the file and the reason, in this order:
//! a file larger than [`MAX_FILE_BYTES`] (judged from its size before it is
//! read), an empty file, text that is not JSON, or JSON
//! that is damaged or cut short (with serde_json's line and column), nesting
//! deeper than serde_json's limit of 128 levels, numbers beyond the range of
//! `f64`, JSON that is not a stratanet model (no `"format": "stratanet-model"`),
//! an unknown or newer `"format_version"`, layer sizes that claim more than
//! [`MAX_PARAMETERS`](crate::network::MAX_PARAMETERS) weights (judged before
//! the weights are read), then missing, unknown or mistyped fields, and
//! every disagreement between shapes: weights against layer sizes, the
//! scaler and one-hot levels against the feature names, classes against the
//! head's outputs.
//!
//! Memory while loading stays within a small multiple of the file's size,
//! which the size limit bounds. Nothing in a file is ever used as a path:
//! column and class names are only compared with CSV headers and cells.

mod features;
pub(crate) mod options_schema;
mod predictions;
mod schema;

pub use features::{FeatureOptions, FeatureTable, TargetColumn};
pub(crate) use predictions::{prediction_columns, write_predictions};
pub use schema::{FORMAT_NAME, FORMAT_VERSION};

use crate::error::{Error, Result};
use crate::fit::Model;
use options_schema::{OptionsV1, OptionsV2};
use schema::File;
use serde::de::{self, Deserializer, IgnoredAny, MapAccess, SeqAccess, Visitor};
use serde::Deserialize;
use serde_json::error::Category;
use serde_json::Value;
use std::fmt;
use std::io::Read;
use std::path::Path;

/// The largest model file [`Model::load`] reads: 256 MiB (far more than a
/// network of a few layers needs).
pub const MAX_FILE_BYTES: u64 = 256 << 20;

/// serde_json's default nesting limit, which loading keeps.
const MAX_DEPTH: usize = 128;

impl Model {
    /// Writes the model to `path` as a model file (the current version),
    /// atomically.
    ///
    /// The model is checked, serialised, read back and compared before
    /// anything is written; then the file is written to a temporary file in
    /// the same folder, synced and renamed over `path`, so a reader never
    /// sees half a file and a failure leaves a previous file as it was.
    ///
    /// # Errors
    /// A model that could not be loaded back (a NaN weight or loss, shapes
    /// that disagree: the reason names the field), or a failure to write
    /// `path`.
    pub fn save(&self, path: impl AsRef<Path>) -> Result<()> {
        let path = path.as_ref();
        let bytes = to_bytes(self, &format!("saving a model to {}", path.display()))?;
        crate::atomic::write_file(path, |w| {
            w.write_all(&bytes)
                .map_err(|e| Error::io(path, "writing", e))
        })
    }

    /// Reads a model file written by [`Model::save`] (any version this
    /// library knows), refusing anything damaged or inconsistent (see the
    /// module docs).
    ///
    /// # Errors
    /// [`ErrorKind::ModelFile`](crate::ErrorKind::ModelFile) naming the file
    /// and the problem; [`ErrorKind::Io`](crate::ErrorKind::Io) when it
    /// cannot be read.
    pub fn load(path: impl AsRef<Path>) -> Result<Model> {
        load_with_limit(path.as_ref(), MAX_FILE_BYTES)
    }

    /// The model as model-file text (what [`Model::save`] writes).
    ///
    /// # Errors
    /// As [`Model::save`], without the writing.
    pub fn to_json(&self) -> Result<String> {
        let bytes = to_bytes(self, "serialising a model")?;
        Ok(String::from_utf8(bytes).expect("serde_json writes UTF-8"))
    }

    /// The model's fingerprint: the SHA-256 (FIPS 180-4) of its model-file
    /// text, in hex. It is the SHA-256 of the bytes [`Model::save`] writes,
    /// so `sha256sum model.json` gives the same value for a file this
    /// library saved; any change to a weight, the scaler, the options or
    /// the provenance changes it. Two models with one fingerprint predict
    /// the same, bit for bit.
    ///
    /// # Errors
    /// As [`Model::save`], without the writing (a model that cannot be
    /// stored has no file text to fingerprint).
    pub fn fingerprint(&self) -> Result<String> {
        use sha2::{Digest, Sha256};
        let bytes = to_bytes(self, "fingerprinting a model")?;
        Ok(Sha256::digest(&bytes)
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect())
    }

    /// A model from model-file text; `name` stands for the file in messages.
    ///
    /// # Errors
    /// As [`Model::load`], except for the size limit.
    pub fn from_json(text: &str, name: impl AsRef<Path>) -> Result<Model> {
        parse(text.as_bytes(), name.as_ref())
    }
}

/// Reads a model file of at most `max_bytes` bytes.
pub(crate) fn load_with_limit(path: &Path, max_bytes: u64) -> Result<Model> {
    let file = std::fs::File::open(path).map_err(|e| Error::io(path, "opening", e))?;
    let meta = file.metadata().map_err(|e| Error::io(path, "reading", e))?;
    if meta.is_dir() {
        return Err(Error::model_file(path, "it is a folder, not a file"));
    }
    if meta.len() > max_bytes {
        return Err(too_large(path, meta.len(), max_bytes));
    }
    // The size can change after the check, and some files report none:
    // never read more than the limit allows.
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| Error::io(path, "reading", e))?;
    if bytes.len() as u64 > max_bytes {
        return Err(too_large(path, bytes.len() as u64, max_bytes));
    }
    parse(&bytes, path)
}

fn too_large(path: &Path, size: u64, limit: u64) -> Error {
    Error::model_file(
        path,
        format!(
            "the file holds {size} bytes, more than the limit of {limit} bytes for model files; a model of a few layers is far smaller, so the file is not one, or is damaged"
        ),
    )
}

/// Checks, serialises and reads back `model`; `what` heads refusals.
fn to_bytes(model: &Model, what: &str) -> Result<Vec<u8>> {
    let file = File::from_model(model);
    file.check()
        .map_err(|reason| Error::input(what, format!("the model cannot be stored: {reason}")))?;
    let mut bytes = serde_json::to_vec_pretty(&file)
        .map_err(|e| Error::input(what, format!("serialising failed: {e}")))?;
    bytes.push(b'\n');
    let back = parse(&bytes, Path::new("the model file")).map_err(|e| {
        Error::input(
            what,
            format!(
                "the file would not load back ({e}); this is a bug in stratanet, please report it"
            ),
        )
    })?;
    if back != *model {
        return Err(Error::input(
            what,
            "the model read back differs from the one saved; this is a bug in stratanet, please report it",
        ));
    }
    Ok(bytes)
}

/// The loading pipeline (see the module docs for the order of checks).
fn parse(bytes: &[u8], path: &Path) -> Result<Model> {
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let Some(first) = bytes.iter().copied().find(|b| !b.is_ascii_whitespace()) else {
        return Err(Error::model_file(
            path,
            "the file is empty; a model file is JSON text written by stratanet's save",
        ));
    };
    // 1. Syntax, depth and number range, without keeping anything.
    serde_json::from_slice::<Skim>(bytes).map_err(|e| json_error(path, first, &e))?;
    // 2. Is it a stratanet model, and of a version we read?
    if first != b'{' {
        return Err(Error::model_file(
            path,
            format!(
                "this is a JSON file but not a stratanet model (it holds {}, not an object with \"format\": \"{FORMAT_NAME}\")",
                json_kind(first)
            ),
        ));
    }
    let header: FormatProbe =
        serde_json::from_slice(bytes).map_err(|e| json_error(path, first, &e))?;
    let version = check_format(&header).map_err(|reason| Error::model_file(path, reason))?;
    // 3. Layer sizes, before any weight is allocated.
    let sizes: SizeProbe =
        serde_json::from_slice(bytes).map_err(|e| json_error(path, first, &e))?;
    let sizes = sizes
        .network
        .ok_or_else(|| Error::model_file(path, "the model has no field \"network\""))?
        .layer_sizes
        .ok_or_else(|| Error::model_file(path, "\"network\" has no field \"layer_sizes\""))?;
    schema::check_layer_sizes(&sizes).map_err(|reason| Error::model_file(path, reason))?;
    // 4. Everything, then every consistency check.
    let model = if version == 1 {
        let file: File<OptionsV1> =
            serde_json::from_slice(bytes).map_err(|e| json_error(path, first, &e))?;
        file.into_model()
    } else {
        let file: File<OptionsV2> =
            serde_json::from_slice(bytes).map_err(|e| json_error(path, first, &e))?;
        file.into_model()
    };
    model.map_err(|reason| Error::model_file(path, reason))
}

/// What a JSON document holds, from its first byte (it parsed).
fn json_kind(first: u8) -> &'static str {
    match first {
        b'[' => "an array",
        b'"' => "a string",
        b't' | b'f' => "a boolean",
        b'n' => "null",
        _ => "a number",
    }
}

/// The `"format"` and `"format_version"` fields, whatever their type.
#[derive(Deserialize)]
struct FormatProbe {
    #[serde(default)]
    format: Option<Value>,
    #[serde(default)]
    format_version: Option<Value>,
}

#[derive(Deserialize)]
struct SizeProbe {
    #[serde(default)]
    network: Option<NetworkProbe>,
}

#[derive(Deserialize)]
#[serde(expecting = "an object with layer_sizes, hidden_activation, head, precision and layers")]
struct NetworkProbe {
    #[serde(default)]
    layer_sizes: Option<Vec<u64>>,
}

/// A short JSON rendering of a value, for messages.
fn show(v: &Value) -> String {
    let text = v.to_string();
    if text.chars().count() > 40 {
        format!("{}...", text.chars().take(40).collect::<String>())
    } else {
        text
    }
}

/// Checks the format name and returns the version (one this library reads).
fn check_format(header: &FormatProbe) -> std::result::Result<u32, String> {
    match &header.format {
        Some(Value::String(s)) if s == FORMAT_NAME => {}
        None | Some(Value::Null) => {
            return Err(format!(
                "this is a JSON file but not a stratanet model (no \"format\": \"{FORMAT_NAME}\")"
            ))
        }
        Some(other) => {
            return Err(format!(
                "this is a JSON file but not a stratanet model (\"format\" is {}, not \"{FORMAT_NAME}\")",
                show(other)
            ))
        }
    }
    let supported = format!(
        "stratanet {} reads format versions 1 to {FORMAT_VERSION}",
        env!("CARGO_PKG_VERSION")
    );
    match &header.format_version {
        None | Some(Value::Null) => Err(format!("no \"format_version\" ({supported})")),
        Some(Value::Number(n)) => match n.as_u64() {
            Some(v) if (1..=u64::from(FORMAT_VERSION)).contains(&v) => Ok(v as u32),
            Some(v) if v > u64::from(FORMAT_VERSION) => Err(format!(
                "format_version {v} is newer than this library knows ({supported}); load the file with a newer stratanet"
            )),
            Some(v) => Err(format!(
                "format_version {v} is not a known version ({supported})"
            )),
            None => Err(format!(
                "\"format_version\" is {n}, not a version number ({supported})"
            )),
        },
        Some(other) => Err(format!(
            "\"format_version\" is {}, not a version number ({supported})",
            show(other)
        )),
    }
}

/// A serde_json error as a model-file refusal with its line and column.
fn json_error(path: &Path, first: u8, e: &serde_json::Error) -> Error {
    let (line, column) = (e.line(), e.column());
    let text = e.to_string();
    let message = text
        .strip_suffix(&format!(" at line {line} column {column}"))
        .unwrap_or(&text);
    let at = format!("line {line}, column {column}");
    let reason = match e.classify() {
        Category::Eof => format!(
            "the file ends early, at {at} ({message}): it is truncated, perhaps by an interrupted copy; save the model again"
        ),
        Category::Syntax if message == "recursion limit exceeded" => format!(
            "the JSON nests more than {MAX_DEPTH} levels deep (at {at}); a stratanet model nests only a few, so this is not one"
        ),
        Category::Syntax if message == "number out of range" => format!(
            "{at}: a number is beyond the range of 64-bit floats (about 1.8e308); every number in a model must be finite"
        ),
        Category::Syntax if first != b'{' && first != b'[' => format!(
            "this is not a JSON file ({at}: {message}); a stratanet model file is JSON text beginning with {{"
        ),
        Category::Syntax | Category::Io => {
            format!("the JSON is damaged at {at}: {message}")
        }
        Category::Data => match missing_field(message) {
            Some(field) => format!("the object ending at {at} has no field \"{field}\""),
            None => format!("{at}: {message}"),
        },
    };
    Error::model_file(path, reason)
}

/// The field named by serde's "missing field `x`" message.
fn missing_field(message: &str) -> Option<&str> {
    message.strip_prefix("missing field `")?.strip_suffix('`')
}

/// Any JSON value, checked and thrown away. Unlike `IgnoredAny` (which
/// serde_json skips without a depth limit or reading numbers), this goes
/// through `deserialize_any`, so the nesting limit applies and every number
/// is parsed (an out-of-range one is refused).
#[derive(Debug)]
struct Skim;

impl<'de> Deserialize<'de> for Skim {
    fn deserialize<D: Deserializer<'de>>(d: D) -> std::result::Result<Skim, D::Error> {
        d.deserialize_any(SkimVisitor)
    }
}

struct SkimVisitor;

impl<'de> Visitor<'de> for SkimVisitor {
    type Value = Skim;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("any JSON value")
    }
    fn visit_bool<E: de::Error>(self, _: bool) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_i64<E: de::Error>(self, _: i64) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_u64<E: de::Error>(self, _: u64) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_f64<E: de::Error>(self, _: f64) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_str<E: de::Error>(self, _: &str) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_unit<E: de::Error>(self) -> std::result::Result<Skim, E> {
        Ok(Skim)
    }
    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> std::result::Result<Skim, A::Error> {
        while seq.next_element::<Skim>()?.is_some() {}
        Ok(Skim)
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> std::result::Result<Skim, A::Error> {
        while map.next_entry::<IgnoredAny, Skim>()?.is_some() {}
        Ok(Skim)
    }
}

#[cfg(test)]
mod tests;
