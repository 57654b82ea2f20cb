//! A fitted [`Model`] as an ONNX file: the open standard for exchanging
//! trained networks (Open Neural Network Exchange, "ONNX Operators"
//! specification, opset 13, and "onnx.proto", IR version 7), so that a model
//! fitted here can be deployed by any runtime that implements the standard
//! operators, without Rust.
//!
//! [`to_onnx`] returns the bytes of the file, [`write_onnx`] writes them
//! atomically (a reader sees the old file or the whole new one). The
//! command line's `stratanet export-onnx MODEL --out FILE.onnx` calls the
//! same function.
//!
//! # Versions
//! The graph imports [`OPSET`] 13 of the default domain (`ai.onnx`; nothing
//! from `ai.onnx.ml`), in a file of [`IR_VERSION`] 7, the IR version that
//! introduced opset 13 (ONNX "Versioning", table of IR versions and opsets).
//! 13 is the lowest opset at which every operator used has the meaning relied
//! on: `Softmax`-13 normalises along the given axis only (earlier versions
//! flattened the input to two dimensions first), `ArgMax` has
//! `select_last_index` (since 12), `GreaterOrEqual` exists (since 12) and
//! `Squeeze` takes its axes as an input (13). The lower the opset, the more
//! runtimes load the file.
//!
//! # Inputs and outputs
//! One input, `features`, `double`, of shape `[rows, F]`: the network's
//! inputs before imputation and scaling, in the order of the model's
//! [`feature_names`](Model::feature_names) (a categorical column is already
//! one-hot, one input per level named `column=level`), also stored as the
//! `feature_names` metadata entry (a JSON array of strings). `rows` is
//! symbolic. The input is `double` whatever the network's precision, because
//! the model itself reads, imputes and scales rows in f64.
//!
//! Outputs, all `double` except `label`:
//! - a classifier: `probabilities` `[rows, K]`, one column per class in the
//!   order of the `class_labels` metadata entry, and `label` `[rows]`
//!   (strings), the predicted class;
//! - a regression model: `values` `[rows, outputs]`, in the target's own
//!   units.
//!
//! # Operators, stage by stage (ONNX Operators specification, opset 13)
//! | stage | stratanet | ONNX operators |
//! |---|---|---|
//! | missing cells (models fitted with imputation) | each `NaN` becomes its column's fill value | `IsNaN`, `Where` |
//! | input scaling | `x' = (x - offset) / scale` in f64, column by column | `Sub`, `Div` (no node for `--scaling none`) |
//! | f32 networks only | the scaled f64 value rounded to the nearest f32 | `Cast` to `float` |
//! | each layer | `z = a W + b` | `MatMul`, `Add` |
//! | hidden activation `sigmoid`, `tanh`, `relu` | as documented on [`Activation`] | `Sigmoid`, `Tanh`, `Relu` |
//! | hidden activation `identity` | `f(z) = z` | none |
//! | hidden activation `leaky_relu` (slope `s`) | `z` if `z > 0`, else `s z` | f32: `LeakyRelu` with `alpha = s` rounded to f32, as the f32 network rounds it; f64: `Greater`, `Mul`, `Where` (see below) |
//! | head `softmax` | softmax over the outputs | `Softmax` (axis 1) |
//! | head `logistic` | `p = 1 / (1 + e^-z)`, probabilities `1 - p`, `p` | `Sigmoid`, `Sub`, `Concat` |
//! | head `identity` | the output sums | none |
//! | f32 networks only | the f32 outputs widened exactly | `Cast` to `double` |
//! | regression target scaling | `y = y' * scale + offset` in f64 | `Mul`, `Add` |
//! | softmax class | the largest probability, the first class on ties | `ArgMax` (`select_last_index = 0`), `Gather` |
//! | logistic class | the second class exactly when `p >= 0.5` | `GreaterOrEqual`, `Cast`, `Squeeze`, `Gather` |
//!
//! The leaky rectifier of an f64 network is spelled out as
//! `Where(Greater(z, 0), z, Mul(z, s))`, the network's own formula, because
//! `LeakyRelu`'s `alpha` attribute is a 32-bit float (it would round an f64
//! slope) and because runtimes need not run `LeakyRelu` on `double`
//! (its opset-13 type constraint lists `float16`, `float` and `double`, but
//! the reference runtime's CPU provider refuses `double` at opset 13).
//!
//! Scaling is not folded into the first layer's weights: the graph does the
//! same two operations in the same order as the model, so an f64 export
//! reproduces the model's predictions up to the runtime's summation order in
//! `MatMul` and its `exp`/`tanh` (a few units in the last place).
//!
//! Initialisers and nodes carry readable names (`scale.offset`,
//! `layer1.weights`, `label.classes`, ...). The model's metadata holds
//! `feature_names`, `class_labels` (classifiers), `precision`, `activation`,
//! `head`, and from the model's provenance `target`, `seed`,
//! `table_fingerprint` and `library_version`.
//!
//! # What is not exported, and what is refused
//! - A model with a fitted temperature or a decision rule (costs or a
//!   threshold) is refused: the graph does not yet carry them, and a graph
//!   whose probabilities or decisions differ from the model's would be a
//!   silent change. Export a model fitted without them and apply the
//!   calibration or decision in the caller.
//! - Without imputation a `NaN` input is not replaced: it travels through
//!   the arithmetic (the model itself refuses such a row with an error; a
//!   runtime cannot raise one), so do not pass `NaN` to such a graph.
//! - Refused, with an error saying why: a network weight beyond the f32
//!   range in an f32 network, any non-finite number, a zero scale, and a
//!   model too large for one protobuf message (2 GiB; no external data files
//!   are written).

mod graph;
mod protobuf;

use crate::atomic;
use crate::data::Scaling;
use crate::error::{Error, Result};
use crate::fit::Model;
use crate::network::{Activation, Head, Precision};
use std::io::Write;
use std::path::Path;

/// The ONNX operator set version the graph imports (default domain only).
pub const OPSET: i64 = graph::OPSET;

/// The ONNX IR version of the file: 7, the version that goes with opset 13.
pub const IR_VERSION: i64 = graph::IR_VERSION;

/// The model as an ONNX file's bytes (a serialised `ModelProto`); see the
/// [module documentation](self) for the graph, its operators and opset.
///
/// The bytes depend only on the model: the same model gives the same file.
///
/// # Errors
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when the model
/// cannot be expressed (see "What is not exported" in the module docs); the
/// message says what and why.
pub fn to_onnx(model: &Model) -> Result<Vec<u8>> {
    if let Some(t) = model.temperature() {
        return Err(Error::input(
            "ONNX export",
            format!("the model divides its output sums by a fitted temperature ({:.4}), which the graph does not carry yet; export a model fitted with calibration none and divide the sums in the caller", t.value),
        ));
    }
    if let Some(rule) = model.decision_rule() {
        return Err(Error::input(
            "ONNX export",
            format!("the model decides by {}, which the graph does not carry yet; export a model without a decision rule and apply it in the caller", rule.describe(model.target_names())),
        ));
    }
    graph::to_onnx_bytes(&export_model(model)).map_err(|e| Error::input("ONNX export", e))
}

/// Writes the model's ONNX file to `path` atomically (a temporary file
/// renamed over `path`), after [`to_onnx`] has succeeded; nothing is
/// written on error.
///
/// # Errors
/// As [`to_onnx`], or when the file cannot be written (naming the path).
pub fn write_onnx(model: &Model, path: impl AsRef<Path>) -> Result<()> {
    let path = path.as_ref();
    let bytes = to_onnx(model)?;
    atomic::write_file(path, |w: &mut dyn Write| {
        w.write_all(&bytes)
            .map_err(|e| Error::io(path, "writing", e))
    })
}

/// The plain numbers the graph builder needs, read from the model.
fn export_model(model: &Model) -> graph::ExportModel {
    let network = model.network();
    let n_in = network.n_inputs();
    let (input_offset, input_scale) = scaler_parts(model.scaler(), n_in);
    let (output_offset, output_scale) = match model.target_scaler() {
        Some(t) if t.kind() != Scaling::None => {
            (Some(t.offsets().to_vec()), Some(t.scales().to_vec()))
        }
        _ => (None, None),
    };
    let layers = network
        .layers()
        .iter()
        .map(|l| graph::Layer {
            inputs: l.inputs(),
            outputs: l.outputs(),
            weights: l.weights.iter().copied().collect(),
            biases: l.biases.to_vec(),
        })
        .collect();
    let provenance = model.provenance();
    graph::ExportModel {
        feature_names: model.feature_names().to_vec(),
        precision: match network.precision() {
            Precision::F32 => graph::Precision::F32,
            Precision::F64 => graph::Precision::F64,
        },
        fill_values: model.imputer().map(|i| i.fill_values().to_vec()),
        input_offset,
        input_scale,
        layers,
        activation: match network.activation() {
            Activation::Identity => graph::Activation::Identity,
            Activation::Sigmoid => graph::Activation::Sigmoid,
            Activation::Tanh => graph::Activation::Tanh,
            Activation::Relu => graph::Activation::Relu,
            Activation::LeakyRelu(s) => graph::Activation::LeakyRelu(s),
        },
        head: match network.head() {
            Head::Logistic => graph::Head::Logistic,
            Head::Softmax => graph::Head::Softmax,
            Head::Identity => graph::Head::Identity,
        },
        class_labels: model.class_names().map(<[String]>::to_vec),
        output_offset,
        output_scale,
        metadata: vec![
            ("target".into(), model.target_name().to_string()),
            ("seed".into(), model.seed().to_string()),
            (
                "table_fingerprint".into(),
                provenance.table_fingerprint.clone(),
            ),
            ("library_version".into(), provenance.library_version.clone()),
        ],
        producer_version: env!("CARGO_PKG_VERSION").to_string(),
    }
}

/// Offsets and scales of a scaler; `--scaling none` becomes offset 0 and
/// scale 1, which leave every value exactly as it is.
fn scaler_parts(scaler: &crate::data::Scaler, n: usize) -> (Vec<f64>, Vec<f64>) {
    if scaler.kind() == Scaling::None {
        (vec![0.0; n], vec![1.0; n])
    } else {
        (scaler.offsets().to_vec(), scaler.scales().to_vec())
    }
}
