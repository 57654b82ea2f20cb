//! The graph the ONNX file holds, built from plain numbers ([`ExportModel`]),
//! and its encoding as an ONNX `ModelProto`. The public contract (inputs,
//! outputs, operators, refusals) is documented on [`crate::export`].
//!
//! Field numbers and types follow the open standard's `onnx.proto` (Open
//! Neural Network Exchange, "onnx.proto", IR version 7 messages
//! `ModelProto`, `GraphProto`, `NodeProto`, `TensorProto`, ...).

use super::protobuf::Message;

/// The ONNX operator set version the exported graph imports (default domain
/// only). See the module documentation for why 13.
pub(crate) const OPSET: i64 = 13;

/// The ONNX IR version written to the model: 7, the version that goes with
/// opset 13.
pub(crate) const IR_VERSION: i64 = 7;

/// The activation of the hidden layers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Activation {
    /// `f(z) = z`.
    Identity,
    /// The logistic sigmoid `1 / (1 + e^-z)`.
    Sigmoid,
    /// The hyperbolic tangent.
    Tanh,
    /// The rectifier `max(0, z)`.
    Relu,
    /// The leaky rectifier `z if z > 0, else s z`, with slope `s` in `(0, 1)`.
    LeakyRelu(f64),
}

/// The output head.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Head {
    /// A logistic sigmoid on each output; one output for two classes (the
    /// probability of the second class).
    Logistic,
    /// Softmax over the outputs, one per class.
    Softmax,
    /// Outputs as they are (regression).
    Identity,
}

/// The arithmetic of the network, and so the element type of the graph.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Precision {
    /// 32-bit floats (`float` in ONNX).
    F32,
    /// 64-bit floats (`double` in ONNX).
    F64,
}

/// One fully connected layer, `z = a W + b`.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Layer {
    /// Units feeding the layer.
    pub(crate) inputs: usize,
    /// Units of the layer.
    pub(crate) outputs: usize,
    /// `W`, row-major `inputs x outputs`: one row per input unit.
    pub(crate) weights: Vec<f64>,
    /// `b`, one per output unit.
    pub(crate) biases: Vec<f64>,
}

/// Everything the exporter needs to know about a fitted model.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct ExportModel {
    /// Network input names, in input order (one-hot columns expanded and
    /// named `column=level`).
    pub(crate) feature_names: Vec<String>,
    /// The network's arithmetic.
    pub(crate) precision: Precision,
    /// Per input column, the value that replaces a missing (`NaN`) input,
    /// before scaling; `None` leaves `NaN` as it is.
    pub(crate) fill_values: Option<Vec<f64>>,
    /// Per input column, subtracted before the network.
    pub(crate) input_offset: Vec<f64>,
    /// Per input column, divides the centred value (never 0).
    pub(crate) input_scale: Vec<f64>,
    /// The layers, input to output.
    pub(crate) layers: Vec<Layer>,
    /// The activation of every hidden layer.
    pub(crate) activation: Activation,
    /// The output head.
    pub(crate) head: Head,
    /// Class labels, in output order, for classifiers; `None` otherwise.
    pub(crate) class_labels: Option<Vec<String>>,
    /// Regression only: added after scaling each output.
    pub(crate) output_offset: Option<Vec<f64>>,
    /// Regression only: multiplies each output.
    pub(crate) output_scale: Option<Vec<f64>>,
    /// Model-level metadata (provenance: fingerprint, seed, version, ...).
    pub(crate) metadata: Vec<(String, String)>,
    /// The producing library's version, written as `producer_version`.
    pub(crate) producer_version: String,
}

/// Metadata keys the exporter writes itself; a caller's entry may not reuse them.
pub(crate) const RESERVED_METADATA_KEYS: [&str; 5] = [
    "feature_names",
    "class_labels",
    "precision",
    "activation",
    "head",
];

/// Encodes `model` as an ONNX `ModelProto` (the bytes of a `.onnx` file).
///
/// # Errors
/// When the model is inconsistent or cannot be expressed; the message names
/// the part at fault and how to fix it. See the module documentation for the
/// full list.
pub(crate) fn to_onnx_bytes(model: &ExportModel) -> Result<Vec<u8>, String> {
    let kind = validate(model).map_err(|e| format!("cannot export the model to ONNX: {e}"))?;
    let graph = build_graph(model, kind);
    Ok(encode_model(model, kind, &graph).into_bytes())
}

// ---------------------------------------------------------------------------
// Validation

/// What the graph's outputs are.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Outputs {
    /// `probabilities` from one logistic output, and `label`.
    LogisticClassifier,
    /// `probabilities` from softmax, and `label`.
    SoftmaxClassifier,
    /// `values`.
    Values,
}

/// The largest message protobuf implementations read (2 GiB - 1).
const MAX_MESSAGE_BYTES: u64 = i32::MAX as u64;

fn check_finite(what: &str, values: &[f64]) -> Result<(), String> {
    match values.iter().position(|v| !v.is_finite()) {
        Some(i) => Err(format!(
            "{what}: entry {} (counting from 1) is {}; every number must be finite",
            i + 1,
            values[i]
        )),
        None => Ok(()),
    }
}

fn check_len(what: &str, values: &[f64], expected: usize, of: &str) -> Result<(), String> {
    if values.len() == expected {
        Ok(())
    } else {
        Err(format!(
            "{what} has {} entries but the network has {expected} {of}; give one per {}",
            values.len(),
            of.trim_end_matches('s')
        ))
    }
}

fn check_nonzero(what: &str, values: &[f64]) -> Result<(), String> {
    match values.iter().position(|&v| v == 0.0) {
        Some(i) => Err(format!(
            "{what}: entry {} (counting from 1) is 0; a scale divides or multiplies and must not be 0 (a constant column gets scale 1)",
            i + 1
        )),
        None => Ok(()),
    }
}

fn check_unique(what: &str, names: &[String]) -> Result<(), String> {
    for (i, n) in names.iter().enumerate() {
        if let Some(j) = names[..i].iter().position(|m| m == n) {
            return Err(format!(
                "{what}: entries {} and {} (counting from 1) are both {n:?}; each must be distinct",
                j + 1,
                i + 1
            ));
        }
    }
    Ok(())
}

fn validate(model: &ExportModel) -> Result<Outputs, String> {
    let layers = &model.layers;
    if layers.is_empty() {
        return Err("the network has no layers; it needs at least one (inputs to outputs)".into());
    }
    for (l, layer) in layers.iter().enumerate() {
        let n = l + 1;
        if layer.inputs == 0 || layer.outputs == 0 {
            return Err(format!(
                "layer {n} is {} x {}; every layer needs at least one input and one output",
                layer.inputs, layer.outputs
            ));
        }
        let expected = layer.inputs.checked_mul(layer.outputs).ok_or_else(|| {
            format!(
                "layer {n} is {} x {}, too large",
                layer.inputs, layer.outputs
            )
        })?;
        if layer.weights.len() != expected {
            return Err(format!(
                "layer {n} has {} weights but inputs x outputs = {} x {} = {expected}; the weights are stored row-major, one row of {} per input unit",
                layer.weights.len(),
                layer.inputs,
                layer.outputs,
                layer.outputs
            ));
        }
        if layer.biases.len() != layer.outputs {
            return Err(format!(
                "layer {n} has {} biases but {} outputs; give one bias per output unit",
                layer.biases.len(),
                layer.outputs
            ));
        }
        if l > 0 && layers[l - 1].outputs != layer.inputs {
            return Err(format!(
                "layer {} has {} outputs but layer {n} has {} inputs; consecutive layers must chain",
                l,
                layers[l - 1].outputs,
                layer.inputs
            ));
        }
        check_finite(&format!("layer {n} weights"), &layer.weights)?;
        check_finite(&format!("layer {n} biases"), &layer.biases)?;
        if model.precision == Precision::F32 {
            // The f32 network rounds each weight to the nearest f32 (as the
            // graph's initialisers do); only a value beyond the f32 range
            // cannot be expressed.
            for (what, values) in [("weight", &layer.weights), ("bias", &layer.biases)] {
                if let Some(i) = values.iter().position(|&v| !(v as f32).is_finite()) {
                    return Err(format!(
                        "layer {n} {what} {} (counting from 1) is {:e}, beyond the f32 range of an f32 network",
                        i + 1,
                        values[i]
                    ));
                }
            }
        }
    }
    let n_in = layers[0].inputs;
    let n_out = layers[layers.len() - 1].outputs;

    if model.feature_names.len() != n_in {
        return Err(format!(
            "there are {} feature names but the network has {n_in} inputs; give one name per input column, in input order",
            model.feature_names.len()
        ));
    }
    if let Some(i) = model.feature_names.iter().position(|n| n.is_empty()) {
        return Err(format!(
            "feature name {} (counting from 1) is empty; every input column needs a name",
            i + 1
        ));
    }
    check_unique("feature names", &model.feature_names)?;

    check_len("the input offset", &model.input_offset, n_in, "inputs")?;
    check_len("the input scale", &model.input_scale, n_in, "inputs")?;
    check_finite("input offset", &model.input_offset)?;
    check_finite("input scale", &model.input_scale)?;
    check_nonzero("input scale", &model.input_scale)?;
    if let Some(fill) = &model.fill_values {
        check_len("the fill values", fill, n_in, "inputs")?;
        check_finite("fill values", fill)?;
    }

    if let Activation::LeakyRelu(s) = model.activation {
        if !(s > 0.0 && s < 1.0) {
            return Err(format!(
                "the leaky_relu slope is {s}; it must be between 0 and 1 (exclusive)"
            ));
        }
    }

    let kind = match (model.head, &model.class_labels) {
        (Head::Softmax, None) => {
            return Err(
                "the softmax head needs class labels (one per output); pass class_labels".into(),
            )
        }
        (Head::Softmax, Some(labels)) => {
            if n_out < 2 {
                return Err(format!(
                    "the softmax head has {n_out} output; it needs at least two (one per class)"
                ));
            }
            if labels.len() != n_out {
                return Err(format!(
                    "there are {} class labels but the softmax head has {n_out} outputs; give one label per output, in output order",
                    labels.len()
                ));
            }
            Outputs::SoftmaxClassifier
        }
        (Head::Logistic, Some(labels)) => {
            if n_out != 1 {
                return Err(format!(
                    "a logistic classifier has one output (the probability of the second class), but this network has {n_out}; pass class_labels None to export the {n_out} sigmoid outputs as values"
                ));
            }
            if labels.len() != 2 {
                return Err(format!(
                    "there are {} class labels but a logistic classifier has exactly two classes; give the two labels, the first class then the second",
                    labels.len()
                ));
            }
            Outputs::LogisticClassifier
        }
        (Head::Logistic, None) => Outputs::Values,
        (Head::Identity, Some(_)) => return Err(
            "the identity head is for regression and takes no class labels; pass class_labels None"
                .into(),
        ),
        (Head::Identity, None) => Outputs::Values,
    };
    if let Some(labels) = &model.class_labels {
        check_unique("class labels", labels)?;
    }

    match (&model.output_offset, &model.output_scale) {
        (None, None) => {}
        (Some(offset), Some(scale)) => {
            if model.head != Head::Identity {
                return Err(format!(
                    "output offsets and scales de-standardise a regression target, but the head is {}; pass None for both",
                    head_name(model.head)
                ));
            }
            check_len("the output offset", offset, n_out, "outputs")?;
            check_len("the output scale", scale, n_out, "outputs")?;
            check_finite("output offset", offset)?;
            check_finite("output scale", scale)?;
            check_nonzero("output scale", scale)?;
        }
        _ => {
            return Err(
                "only one of output_offset and output_scale is given; de-standardising needs both, or neither"
                    .into(),
            )
        }
    }

    for (i, (key, _)) in model.metadata.iter().enumerate() {
        if key.is_empty() {
            return Err(format!(
                "metadata entry {} (counting from 1) has an empty key; give it a name",
                i + 1
            ));
        }
        if RESERVED_METADATA_KEYS.contains(&key.as_str()) {
            return Err(format!(
                "metadata key {key:?} is written by the exporter itself; rename the entry"
            ));
        }
        if model.metadata[..i].iter().any(|(k, _)| k == key) {
            return Err(format!(
                "metadata key {key:?} appears more than once; each key must be distinct"
            ));
        }
    }

    let bytes_per = match model.precision {
        Precision::F32 => 4u64,
        Precision::F64 => 8,
    };
    let numbers: u64 = layers
        .iter()
        .map(|l| (l.weights.len() + l.biases.len()) as u64)
        .sum::<u64>()
        + 4 * n_in as u64
        + 2 * n_out as u64;
    if numbers.saturating_mul(bytes_per) > MAX_MESSAGE_BYTES - (1 << 20) {
        return Err(format!(
            "the model holds {numbers} numbers, more than a 2 GiB protobuf message can carry; this exporter writes no external data files"
        ));
    }
    Ok(kind)
}

fn head_name(h: Head) -> &'static str {
    match h {
        Head::Logistic => "logistic",
        Head::Softmax => "softmax",
        Head::Identity => "identity",
    }
}

fn activation_name(a: Activation) -> String {
    match a {
        Activation::Identity => "identity".into(),
        Activation::Sigmoid => "sigmoid".into(),
        Activation::Tanh => "tanh".into(),
        Activation::Relu => "relu".into(),
        Activation::LeakyRelu(s) => format!("leaky_relu({s:?})"),
    }
}

// ---------------------------------------------------------------------------
// The graph, independent of its encoding

/// `TensorProto.DataType` codes from `onnx.proto`.
mod dtype {
    pub const FLOAT: i64 = 1;
    pub const INT64: i64 = 7;
    pub const STRING: i64 = 8;
    pub const DOUBLE: i64 = 11;
}

/// The contents of an initialiser.
#[derive(Debug, Clone, PartialEq)]
enum Data {
    F32(Vec<f32>),
    F64(Vec<f64>),
    I64(Vec<i64>),
    Str(Vec<String>),
}

#[derive(Debug, Clone, PartialEq)]
struct Initialiser {
    name: String,
    dims: Vec<i64>,
    data: Data,
}

/// A node attribute value (only the kinds used here).
#[derive(Debug, Clone, PartialEq)]
enum Attr {
    Int(i64),
    Float(f32),
}

#[derive(Debug, Clone, PartialEq)]
struct Node {
    name: String,
    op: &'static str,
    inputs: Vec<String>,
    outputs: Vec<String>,
    attrs: Vec<(&'static str, Attr)>,
}

/// One dimension of a graph input or output.
#[derive(Debug, Clone, PartialEq)]
enum Dim {
    Fixed(i64),
    Symbolic(&'static str),
}

#[derive(Debug, Clone, PartialEq)]
struct ValueInfo {
    name: String,
    elem_type: i64,
    dims: Vec<Dim>,
    doc: String,
}

#[derive(Debug, Clone, PartialEq, Default)]
struct Graph {
    nodes: Vec<Node>,
    initialisers: Vec<Initialiser>,
    inputs: Vec<ValueInfo>,
    outputs: Vec<ValueInfo>,
    doc: String,
}

/// The symbolic name of the row dimension.
const ROWS: &str = "rows";

struct Builder {
    graph: Graph,
    precision: Precision,
}

impl Builder {
    /// Adds a real initialiser in the model's precision; returns its name.
    fn real(&mut self, name: &str, dims: &[usize], values: &[f64]) -> String {
        let data = match self.precision {
            Precision::F32 => Data::F32(values.iter().map(|&v| v as f32).collect()),
            Precision::F64 => Data::F64(values.to_vec()),
        };
        self.init(name, dims, data)
    }

    /// Adds a `double` initialiser (the preprocessing and the outputs work
    /// in f64 whatever the network's precision); returns its name.
    fn double(&mut self, name: &str, dims: &[usize], values: &[f64]) -> String {
        self.init(name, dims, Data::F64(values.to_vec()))
    }

    fn init(&mut self, name: &str, dims: &[usize], data: Data) -> String {
        self.graph.initialisers.push(Initialiser {
            name: name.into(),
            dims: dims.iter().map(|&d| d as i64).collect(),
            data,
        });
        name.into()
    }

    /// Adds a node with one output; returns the output's name.
    fn node(
        &mut self,
        name: &str,
        op: &'static str,
        inputs: &[&str],
        output: &str,
        attrs: Vec<(&'static str, Attr)>,
    ) -> String {
        self.graph.nodes.push(Node {
            name: name.into(),
            op,
            inputs: inputs.iter().map(|s| s.to_string()).collect(),
            outputs: vec![output.into()],
            attrs,
        });
        output.into()
    }

    /// Renames the output of the last node (it must be `current`).
    fn rename_last_output(&mut self, current: &str, new: &str) -> String {
        let last = self.graph.nodes.last_mut().expect("the graph has nodes");
        assert_eq!(
            last.outputs[0], current,
            "the last node produces the value renamed"
        );
        last.outputs[0] = new.into();
        new.into()
    }
}

fn json_string_array(items: &[String]) -> String {
    let mut s = String::from("[");
    for (i, item) in items.iter().enumerate() {
        if i > 0 {
            s.push_str(", ");
        }
        s.push('"');
        for c in item.chars() {
            // Escapes from RFC 8259 (Bray, "The JavaScript Object Notation
            // (JSON) Data Interchange Format", 2017), section 7.
            match c {
                '"' => s.push_str("\\\""),
                '\\' => s.push_str("\\\\"),
                '\n' => s.push_str("\\n"),
                '\r' => s.push_str("\\r"),
                '\t' => s.push_str("\\t"),
                c if (c as u32) < 0x20 => s.push_str(&format!("\\u{:04x}", c as u32)),
                c => s.push(c),
            }
        }
        s.push('"');
    }
    s.push(']');
    s
}

fn build_graph(model: &ExportModel, kind: Outputs) -> Graph {
    let mut b = Builder {
        graph: Graph::default(),
        precision: model.precision,
    };
    let n_in = model.layers[0].inputs;
    let n_out = model.layers[model.layers.len() - 1].outputs;
    let n_layers = model.layers.len();

    let mut x = "features".to_string();
    if let Some(fill) = &model.fill_values {
        let fill = b.double("impute.fill_values", &[n_in], fill);
        let missing = b.node(
            "impute.is_missing",
            "IsNaN",
            &[&x],
            "impute.missing",
            vec![],
        );
        x = b.node(
            "impute.fill",
            "Where",
            &[&missing, &fill, &x],
            "imputed",
            vec![],
        );
    }
    let offset = b.double("scale.offset", &[n_in], &model.input_offset);
    let scale = b.double("scale.scale", &[n_in], &model.input_scale);
    let centred = b.node(
        "scale.subtract_offset",
        "Sub",
        &[&x, &offset],
        "centred",
        vec![],
    );
    let mut a = b.node(
        "scale.divide_by_scale",
        "Div",
        &[&centred, &scale],
        "standardised",
        vec![],
    );
    if model.precision == Precision::F32 {
        // The f32 network reads the f64 scaled values and rounds each to
        // the nearest f32: `Cast` to float does the same (round to nearest
        // even, ONNX Cast specification).
        a = b.node(
            "network.to_float",
            "Cast",
            &[&a],
            "standardised.float",
            vec![("to", Attr::Int(dtype::FLOAT))],
        );
    }

    let mut leaky_constants: Option<(String, String)> = None;
    for (l, layer) in model.layers.iter().enumerate() {
        let n = l + 1;
        let w = b.real(
            &format!("layer{n}.weights"),
            &[layer.inputs, layer.outputs],
            &layer.weights,
        );
        let bias = b.real(&format!("layer{n}.biases"), &[layer.outputs], &layer.biases);
        let product = b.node(
            &format!("layer{n}.matmul"),
            "MatMul",
            &[&a, &w],
            &format!("layer{n}.product"),
            vec![],
        );
        let sum = b.node(
            &format!("layer{n}.add_bias"),
            "Add",
            &[&product, &bias],
            &format!("layer{n}.sum"),
            vec![],
        );
        a = sum.clone();
        if n == n_layers {
            break;
        }
        let out = format!("layer{n}.activation");
        a = match model.activation {
            Activation::Identity => sum,
            Activation::Sigmoid => b.node(
                &format!("layer{n}.sigmoid"),
                "Sigmoid",
                &[&sum],
                &out,
                vec![],
            ),
            Activation::Tanh => b.node(&format!("layer{n}.tanh"), "Tanh", &[&sum], &out, vec![]),
            Activation::Relu => b.node(&format!("layer{n}.relu"), "Relu", &[&sum], &out, vec![]),
            Activation::LeakyRelu(s) => match model.precision {
                Precision::F32 => b.node(
                    &format!("layer{n}.leaky_relu"),
                    "LeakyRelu",
                    &[&sum],
                    &out,
                    vec![("alpha", Attr::Float(s as f32))],
                ),
                Precision::F64 => {
                    let (zero, slope) = match &leaky_constants {
                        Some(c) => c.clone(),
                        None => {
                            let zero = b.real("leaky_relu.zero", &[], &[0.0]);
                            let slope = b.real("leaky_relu.slope", &[], &[s]);
                            leaky_constants = Some((zero.clone(), slope.clone()));
                            (zero, slope)
                        }
                    };
                    let positive = b.node(
                        &format!("layer{n}.leaky_relu.is_positive"),
                        "Greater",
                        &[&sum, &zero],
                        &format!("layer{n}.positive"),
                        vec![],
                    );
                    let negative_side = b.node(
                        &format!("layer{n}.leaky_relu.times_slope"),
                        "Mul",
                        &[&sum, &slope],
                        &format!("layer{n}.times_slope"),
                        vec![],
                    );
                    b.node(
                        &format!("layer{n}.leaky_relu.select"),
                        "Where",
                        &[&positive, &sum, &negative_side],
                        &out,
                        vec![],
                    )
                }
            },
        };
    }
    let z = a;
    // Everything after the network is f64, as in the model's own prediction
    // (the f32 network's outputs are widened exactly, then used in f64).
    let widen = |b: &mut Builder, v: &str, name: &str| -> String {
        if model.precision == Precision::F32 {
            b.node(
                &format!("{name}.to_double"),
                "Cast",
                &[v],
                &format!("{name}.double"),
                vec![("to", Attr::Int(dtype::DOUBLE))],
            )
        } else {
            v.to_string()
        }
    };

    let features_doc = format!(
        "{n_in} network inputs per row, before imputation and scaling, in this order: {}",
        json_string_array(&model.feature_names)
    );
    b.graph.inputs.push(ValueInfo {
        name: "features".into(),
        elem_type: dtype::DOUBLE,
        dims: vec![Dim::Symbolic(ROWS), Dim::Fixed(n_in as i64)],
        doc: features_doc,
    });

    match kind {
        Outputs::LogisticClassifier | Outputs::SoftmaxClassifier => {
            let labels = model
                .class_labels
                .as_ref()
                .expect("classifiers have labels");
            let classes = b.init("label.classes", &[labels.len()], Data::Str(labels.clone()));
            let index = if kind == Outputs::SoftmaxClassifier {
                let f32 = model.precision == Precision::F32;
                let p = b.node(
                    "head.softmax",
                    "Softmax",
                    &[&z],
                    if f32 { "head.softmax" } else { "probabilities" },
                    vec![("axis", Attr::Int(1))],
                );
                let p = if f32 {
                    b.node(
                        "head.to_double",
                        "Cast",
                        &[&p],
                        "probabilities",
                        vec![("to", Attr::Int(dtype::DOUBLE))],
                    )
                } else {
                    p
                };
                b.node(
                    "label.argmax",
                    "ArgMax",
                    &[&p],
                    "label.index",
                    vec![
                        ("axis", Attr::Int(1)),
                        ("keepdims", Attr::Int(0)),
                        ("select_last_index", Attr::Int(0)),
                    ],
                )
            } else {
                let one = b.double("head.one", &[], &[1.0]);
                let half = b.double("label.threshold", &[], &[0.5]);
                let axes = b.init("label.squeeze_axes", &[1], Data::I64(vec![1]));
                let p = b.node("head.sigmoid", "Sigmoid", &[&z], "head.probability", vec![]);
                let p = widen(&mut b, &p, "head.probability");
                let q = b.node(
                    "head.complement",
                    "Sub",
                    &[&one, &p],
                    "head.complement",
                    vec![],
                );
                b.node(
                    "head.concat",
                    "Concat",
                    &[&q, &p],
                    "probabilities",
                    vec![("axis", Attr::Int(1))],
                );
                let second = b.node(
                    "label.at_least_half",
                    "GreaterOrEqual",
                    &[&p, &half],
                    "label.is_second_class",
                    vec![],
                );
                let column = b.node(
                    "label.to_index",
                    "Cast",
                    &[&second],
                    "label.index_column",
                    vec![("to", Attr::Int(dtype::INT64))],
                );
                b.node(
                    "label.squeeze",
                    "Squeeze",
                    &[&column, &axes],
                    "label.index",
                    vec![],
                )
            };
            b.node(
                "label.gather",
                "Gather",
                &[&classes, &index],
                "label",
                vec![("axis", Attr::Int(0))],
            );
            let k = labels.len() as i64;
            b.graph.outputs.push(ValueInfo {
                name: "probabilities".into(),
                elem_type: dtype::DOUBLE,
                dims: vec![Dim::Symbolic(ROWS), Dim::Fixed(k)],
                doc: format!(
                    "class probabilities, one column per class in this order: {}",
                    json_string_array(labels)
                ),
            });
            b.graph.outputs.push(ValueInfo {
                name: "label".into(),
                elem_type: dtype::STRING,
                dims: vec![Dim::Symbolic(ROWS)],
                doc: if kind == Outputs::SoftmaxClassifier {
                    "the class of the largest probability (the first such class on ties)".into()
                } else {
                    "the second class when its probability is at least 0.5, else the first".into()
                },
            });
        }
        Outputs::Values => {
            let v = if model.head == Head::Logistic {
                b.node("head.sigmoid", "Sigmoid", &[&z], "head.values", vec![])
            } else {
                z
            };
            let mut v = widen(&mut b, &v, "head.values");
            if let (Some(offset), Some(scale)) = (&model.output_offset, &model.output_scale) {
                let s = b.double("output.scale", &[n_out], scale);
                let o = b.double("output.offset", &[n_out], offset);
                let scaled = b.node(
                    "output.multiply_by_scale",
                    "Mul",
                    &[&v, &s],
                    "output.scaled",
                    vec![],
                );
                v = b.node("output.add_offset", "Add", &[&scaled, &o], "values", vec![]);
            }
            b.rename_last_output(&v, "values");
            b.graph.outputs.push(ValueInfo {
                name: "values".into(),
                elem_type: dtype::DOUBLE,
                dims: vec![Dim::Symbolic(ROWS), Dim::Fixed(n_out as i64)],
                doc: match (model.head, model.output_offset.is_some()) {
                    (Head::Logistic, _) => "the sigmoid of each output".into(),
                    (_, true) => "predicted values, de-standardised: z * scale + offset".into(),
                    (_, false) => "predicted values".into(),
                },
            });
        }
    }

    let hidden: Vec<String> = model.layers[..n_layers - 1]
        .iter()
        .map(|l| l.outputs.to_string())
        .collect();
    b.graph.doc = format!(
        "stratanet multi-layer perceptron: {n_in} inputs, hidden layers [{}] with {} activation, {} head with {n_out} output{}, {} arithmetic; missing inputs {}.",
        hidden.join(", "),
        activation_name(model.activation),
        head_name(model.head),
        if n_out == 1 { "" } else { "s" },
        match model.precision {
            Precision::F32 => "f32",
            Precision::F64 => "f64",
        },
        if model.fill_values.is_some() {
            "are replaced by per-column fill values before scaling"
        } else {
            "are not replaced (NaN propagates)"
        }
    );
    b.graph
}

// ---------------------------------------------------------------------------
// Encoding (field numbers from onnx.proto; fields are written in field-number
// order, the order a protobuf library's serialiser uses, so a decode and
// re-encode by one reproduces the same bytes)

fn encode_tensor(t: &Initialiser) -> Message {
    // TensorProto: dims = 1, data_type = 2, string_data = 6, int64_data = 7
    // (packed), name = 8, raw_data = 9 (little-endian, per onnx.proto).
    let mut m = Message::new();
    for &d in &t.dims {
        m.int64(1, d);
    }
    let data_type = match &t.data {
        Data::F32(_) => dtype::FLOAT,
        Data::F64(_) => dtype::DOUBLE,
        Data::I64(_) => dtype::INT64,
        Data::Str(_) => dtype::STRING,
    };
    m.int64(2, data_type);
    if let Data::Str(items) = &t.data {
        for s in items {
            m.string(6, s);
        }
    }
    if let Data::I64(values) = &t.data {
        m.packed_int64(7, values);
    }
    m.string(8, &t.name);
    match &t.data {
        Data::F32(values) => {
            let raw: Vec<u8> = values.iter().flat_map(|v| v.to_le_bytes()).collect();
            m.bytes(9, &raw);
        }
        Data::F64(values) => {
            let raw: Vec<u8> = values.iter().flat_map(|v| v.to_le_bytes()).collect();
            m.bytes(9, &raw);
        }
        Data::I64(_) | Data::Str(_) => {}
    }
    m
}

fn encode_attribute(name: &str, value: &Attr) -> Message {
    // AttributeProto: name = 1, f = 2, i = 3, type = 20 (FLOAT = 1, INT = 2).
    let mut m = Message::new();
    m.string(1, name);
    let kind = match value {
        Attr::Float(f) => {
            m.float(2, *f);
            1
        }
        Attr::Int(i) => {
            m.int64(3, *i);
            2
        }
    };
    m.int64(20, kind);
    m
}

fn encode_node(n: &Node) -> Message {
    // NodeProto: input = 1, output = 2, name = 3, op_type = 4, attribute = 5,
    // domain = 7 (empty: the default ai.onnx domain).
    let mut m = Message::new();
    for i in &n.inputs {
        m.string(1, i);
    }
    for o in &n.outputs {
        m.string(2, o);
    }
    m.string(3, &n.name);
    m.string(4, n.op);
    for (name, value) in &n.attrs {
        m.message(5, encode_attribute(name, value));
    }
    m.string(7, "");
    m
}

fn encode_value_info(v: &ValueInfo) -> Message {
    // TensorShapeProto.Dimension: dim_value = 1, dim_param = 2.
    let mut shape = Message::new();
    for d in &v.dims {
        let mut dim = Message::new();
        match d {
            Dim::Fixed(n) => dim.int64(1, *n),
            Dim::Symbolic(s) => dim.string(2, s),
        }
        shape.message(1, dim);
    }
    // TypeProto.Tensor: elem_type = 1, shape = 2; TypeProto: tensor_type = 1.
    let mut tensor = Message::new();
    tensor.int64(1, v.elem_type);
    tensor.message(2, shape);
    let mut ty = Message::new();
    ty.message(1, tensor);
    // ValueInfoProto: name = 1, type = 2, doc_string = 3.
    let mut m = Message::new();
    m.string(1, &v.name);
    m.message(2, ty);
    m.string(3, &v.doc);
    m
}

fn encode_graph(g: &Graph) -> Message {
    // GraphProto: node = 1, name = 2, initializer = 5, doc_string = 10,
    // input = 11, output = 12.
    let mut m = Message::new();
    for n in &g.nodes {
        m.message(1, encode_node(n));
    }
    m.string(2, "stratanet");
    for t in &g.initialisers {
        m.message(5, encode_tensor(t));
    }
    m.string(10, &g.doc);
    for v in &g.inputs {
        m.message(11, encode_value_info(v));
    }
    for v in &g.outputs {
        m.message(12, encode_value_info(v));
    }
    m
}

fn string_entry(key: &str, value: &str) -> Message {
    // StringStringEntryProto: key = 1, value = 2.
    let mut m = Message::new();
    m.string(1, key);
    m.string(2, value);
    m
}

fn encode_model(model: &ExportModel, kind: Outputs, graph: &Graph) -> Message {
    // ModelProto: ir_version = 1, producer_name = 2, producer_version = 3,
    // doc_string = 6, graph = 7, opset_import = 8, metadata_props = 14.
    let mut m = Message::new();
    m.int64(1, IR_VERSION);
    m.string(2, "stratanet");
    m.string(3, &model.producer_version);
    let outputs = match kind {
        Outputs::Values => "`values` [rows, outputs]",
        _ => "`probabilities` [rows, classes] and `label` [rows]",
    };
    m.string(
        6,
        &format!(
            "A network fitted by stratanet. Input `features` [rows, {}] (names and order in the feature_names metadata); outputs {outputs}.",
            model.layers[0].inputs
        ),
    );
    m.message(7, encode_graph(graph));
    // OperatorSetIdProto: domain = 1 (empty: ai.onnx), version = 2.
    let mut opset = Message::new();
    opset.string(1, "");
    opset.int64(2, OPSET);
    m.message(8, opset);
    let mut props: Vec<(String, String)> = vec![(
        "feature_names".into(),
        json_string_array(&model.feature_names),
    )];
    if let Some(labels) = &model.class_labels {
        props.push(("class_labels".into(), json_string_array(labels)));
    }
    props.push((
        "precision".into(),
        match model.precision {
            Precision::F32 => "f32".into(),
            Precision::F64 => "f64".into(),
        },
    ));
    props.push(("activation".into(), activation_name(model.activation)));
    props.push(("head".into(), head_name(model.head).into()));
    props.extend(model.metadata.iter().cloned());
    for (k, v) in &props {
        m.message(14, string_entry(k, v));
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::export::protobuf::decode::{fields, int, len_fields, strings, Value};

    fn layer(inputs: usize, outputs: usize, seed: u64) -> Layer {
        // Exactly-f32 values (multiples of 1/64) so both precisions accept them.
        let v = |i: usize| ((i as u64 * 7 + seed * 13) % 29) as f64 / 64.0 - 13.0 / 64.0;
        Layer {
            inputs,
            outputs,
            weights: (0..inputs * outputs).map(v).collect(),
            biases: (0..outputs).map(|i| v(i + 100)).collect(),
        }
    }

    fn softmax_model() -> ExportModel {
        ExportModel {
            feature_names: vec!["a".into(), "b".into(), "colour=red".into()],
            precision: Precision::F64,
            fill_values: Some(vec![0.5, 1.0, 0.0]),
            input_offset: vec![1.0, 2.0, 0.25],
            input_scale: vec![2.0, 0.5, 1.0],
            layers: vec![layer(3, 4, 1), layer(4, 3, 2)],
            activation: Activation::LeakyRelu(0.01),
            head: Head::Softmax,
            class_labels: Some(vec!["cat".into(), "dog".into(), "bird \"x\"".into()]),
            output_offset: None,
            output_scale: None,
            metadata: vec![("seed".into(), "42".into())],
            producer_version: "0.1.0".into(),
        }
    }

    fn regression_model() -> ExportModel {
        ExportModel {
            feature_names: vec!["x".into(), "y".into()],
            precision: Precision::F32,
            fill_values: None,
            input_offset: vec![0.1, -3.0],
            input_scale: vec![1.5, 2.0],
            layers: vec![layer(2, 3, 3), layer(3, 2, 4)],
            activation: Activation::Tanh,
            head: Head::Identity,
            class_labels: None,
            output_offset: Some(vec![10.0, -1.0]),
            output_scale: Some(vec![3.0, 0.5]),
            metadata: vec![],
            producer_version: "0.1.0".into(),
        }
    }

    fn logistic_model() -> ExportModel {
        ExportModel {
            feature_names: vec!["x".into()],
            precision: Precision::F32,
            fill_values: None,
            input_offset: vec![0.0],
            input_scale: vec![1.0],
            layers: vec![layer(1, 2, 5), layer(2, 1, 6)],
            activation: Activation::Relu,
            head: Head::Logistic,
            class_labels: Some(vec!["no".into(), "yes".into()]),
            output_offset: None,
            output_scale: None,
            metadata: vec![],
            producer_version: "0.1.0".into(),
        }
    }

    /// The graph message of an encoded model.
    fn graph_of(bytes: &[u8]) -> Vec<u8> {
        len_fields(bytes, 7).pop().expect("a graph")
    }

    fn node_ops(graph: &[u8]) -> Vec<(String, String)> {
        len_fields(graph, 1)
            .iter()
            .map(|n| (strings(n, 3)[0].clone(), strings(n, 4)[0].clone()))
            .collect()
    }

    fn initialiser(graph: &[u8], name: &str) -> Vec<u8> {
        len_fields(graph, 5)
            .into_iter()
            .find(|t| strings(t, 8) == [name.to_string()])
            .unwrap_or_else(|| panic!("no initialiser {name}"))
    }

    fn metadata(bytes: &[u8]) -> Vec<(String, String)> {
        len_fields(bytes, 14)
            .iter()
            .map(|e| (strings(e, 1)[0].clone(), strings(e, 2)[0].clone()))
            .collect()
    }

    #[test]
    fn model_header_fields() {
        let bytes = to_onnx_bytes(&softmax_model()).unwrap();
        assert_eq!(int(&bytes, 1), Some(IR_VERSION));
        assert_eq!(strings(&bytes, 2), ["stratanet"]);
        assert_eq!(strings(&bytes, 3), ["0.1.0"]);
        let opsets = len_fields(&bytes, 8);
        assert_eq!(opsets.len(), 1);
        assert_eq!(strings(&opsets[0], 1), [""]);
        assert_eq!(int(&opsets[0], 2), Some(OPSET));
        assert!(!strings(&bytes, 6)[0].is_empty(), "a doc string");
    }

    #[test]
    fn metadata_holds_names_labels_and_provenance() {
        let bytes = to_onnx_bytes(&softmax_model()).unwrap();
        let meta = metadata(&bytes);
        let get = |k: &str| {
            meta.iter()
                .find(|(key, _)| key == k)
                .map(|(_, v)| v.clone())
        };
        assert_eq!(get("feature_names").unwrap(), r#"["a", "b", "colour=red"]"#);
        assert_eq!(
            get("class_labels").unwrap(),
            r#"["cat", "dog", "bird \"x\""]"#
        );
        assert_eq!(get("precision").unwrap(), "f64");
        assert_eq!(get("activation").unwrap(), "leaky_relu(0.01)");
        assert_eq!(get("head").unwrap(), "softmax");
        assert_eq!(get("seed").unwrap(), "42");
    }

    #[test]
    fn softmax_graph_nodes_in_order() {
        let bytes = to_onnx_bytes(&softmax_model()).unwrap();
        let ops: Vec<String> = node_ops(&graph_of(&bytes))
            .into_iter()
            .map(|(_, op)| op)
            .collect();
        assert_eq!(
            ops,
            [
                "IsNaN", "Where", "Sub", "Div", // impute, scale
                "MatMul", "Add", "Greater", "Mul", "Where", // layer 1, leaky (f64)
                "MatMul", "Add", // layer 2
                "Softmax", "ArgMax", "Gather"
            ]
        );
    }

    #[test]
    fn f32_leaky_relu_is_one_node_with_float_alpha() {
        let mut m = softmax_model();
        m.precision = Precision::F32;
        m.activation = Activation::LeakyRelu(0.1);
        let g = graph_of(&to_onnx_bytes(&m).unwrap());
        let node = len_fields(&g, 1)
            .into_iter()
            .find(|n| strings(n, 4) == ["LeakyRelu"])
            .expect("a LeakyRelu node");
        let attr = &len_fields(&node, 5)[0];
        assert_eq!(strings(attr, 1), ["alpha"]);
        assert_eq!(fields(attr, 2), [Value::Fixed32(0.1f32.to_le_bytes())]);
        assert_eq!(int(attr, 20), Some(1), "AttributeType FLOAT");
    }

    #[test]
    fn logistic_graph_uses_at_least_half_rule() {
        let g = graph_of(&to_onnx_bytes(&logistic_model()).unwrap());
        let ops: Vec<String> = node_ops(&g).into_iter().map(|(_, op)| op).collect();
        assert_eq!(
            ops,
            [
                "Sub",
                "Div",
                "Cast",
                "MatMul",
                "Add",
                "Relu",
                "MatMul",
                "Add",
                "Sigmoid",
                "Cast",
                "Sub",
                "Concat",
                "GreaterOrEqual",
                "Cast",
                "Squeeze",
                "Gather"
            ]
        );
        let axes = initialiser(&g, "label.squeeze_axes");
        assert_eq!(int(&axes, 2), Some(dtype::INT64));
        // int64_data is declared packed in onnx.proto: one LEN record.
        assert_eq!(len_fields(&axes, 7), [vec![1u8]]);
    }

    #[test]
    fn every_node_input_is_defined_before_use() {
        for m in [softmax_model(), regression_model(), logistic_model()] {
            let g = graph_of(&to_onnx_bytes(&m).unwrap());
            let mut known: Vec<String> = len_fields(&g, 5)
                .iter()
                .map(|t| strings(t, 8)[0].clone())
                .collect();
            known.push("features".into());
            for n in len_fields(&g, 1) {
                for i in strings(&n, 1) {
                    assert!(known.contains(&i), "{i} used before it is defined");
                }
                known.extend(strings(&n, 2));
            }
            for out in len_fields(&g, 12) {
                assert!(known.contains(&strings(&out, 1)[0]));
            }
        }
    }

    #[test]
    fn weights_are_raw_little_endian_in_model_precision() {
        let m = softmax_model();
        let g = graph_of(&to_onnx_bytes(&m).unwrap());
        let t = initialiser(&g, "layer1.weights");
        let dims: Vec<i64> = fields(&t, 1)
            .into_iter()
            .map(|v| match v {
                Value::Varint(x) => x as i64,
                _ => panic!("dims are varints"),
            })
            .collect();
        assert_eq!(dims, [3, 4]);
        assert_eq!(int(&t, 2), Some(dtype::DOUBLE));
        let raw = &len_fields(&t, 9)[0];
        let back: Vec<f64> = raw
            .chunks(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
            .collect();
        assert_eq!(back, m.layers[0].weights);

        let r = regression_model();
        let g = graph_of(&to_onnx_bytes(&r).unwrap());
        let t = initialiser(&g, "layer2.weights");
        assert_eq!(int(&t, 2), Some(dtype::FLOAT));
        let raw = &len_fields(&t, 9)[0];
        let back: Vec<f64> = raw
            .chunks(4)
            .map(|c| f64::from(f32::from_le_bytes(c.try_into().unwrap())))
            .collect();
        assert_eq!(back, r.layers[1].weights);
    }

    #[test]
    fn class_labels_are_a_string_tensor() {
        let g = graph_of(&to_onnx_bytes(&softmax_model()).unwrap());
        let t = initialiser(&g, "label.classes");
        assert_eq!(int(&t, 2), Some(dtype::STRING));
        assert_eq!(strings(&t, 6), ["cat", "dog", "bird \"x\""]);
    }

    #[test]
    fn graph_inputs_and_outputs() {
        let g = graph_of(&to_onnx_bytes(&regression_model()).unwrap());
        let names = |field| -> Vec<String> {
            len_fields(&g, field)
                .iter()
                .map(|v| strings(v, 1)[0].clone())
                .collect()
        };
        assert_eq!(names(11), ["features"]);
        assert_eq!(names(12), ["values"]);
        let ops: Vec<String> = node_ops(&g).into_iter().map(|(_, op)| op).collect();
        assert_eq!(
            ops,
            [
                "Sub", "Div", "Cast", "MatMul", "Add", "Tanh", "MatMul", "Add", "Cast", "Mul",
                "Add"
            ]
        );
        // The symbolic row dimension and the fixed feature count.
        let input = &len_fields(&g, 11)[0];
        let ty = &len_fields(input, 2)[0];
        let tensor = &len_fields(ty, 1)[0];
        // double input even for an f32 network: the model reads f64 rows.
        assert_eq!(int(tensor, 1), Some(dtype::DOUBLE));
        let dims = len_fields(&len_fields(tensor, 2)[0], 1);
        assert_eq!(strings(&dims[0], 2), [ROWS]);
        assert_eq!(int(&dims[1], 1), Some(2));

        let s = graph_of(&to_onnx_bytes(&softmax_model()).unwrap());
        let outs: Vec<String> = len_fields(&s, 12)
            .iter()
            .map(|v| strings(v, 1)[0].clone())
            .collect();
        assert_eq!(outs, ["probabilities", "label"]);
    }

    #[test]
    fn values_without_destandardisation_end_at_the_last_add() {
        let mut m = regression_model();
        m.precision = Precision::F64;
        m.output_offset = None;
        m.output_scale = None;
        let g = graph_of(&to_onnx_bytes(&m).unwrap());
        let last = len_fields(&g, 1).pop().unwrap();
        assert_eq!(strings(&last, 4), ["Add"]);
        assert_eq!(strings(&last, 2), ["values"]);
    }

    #[test]
    fn json_arrays_escape_quotes_backslashes_and_controls() {
        let items = vec![
            "a\"b".to_string(),
            "c\\d".into(),
            "e\nf\u{1}".into(),
            "ü".into(),
        ];
        assert_eq!(
            json_string_array(&items),
            r#"["a\"b", "c\\d", "e\nf\u0001", "ü"]"#
        );
        assert_eq!(json_string_array(&[]), "[]");
    }

    fn refused(m: &ExportModel, needle: &str) {
        let e = to_onnx_bytes(m).expect_err("the model must be refused");
        assert!(e.starts_with("cannot export the model to ONNX: "), "{e}");
        assert!(e.contains(needle), "{e:?} does not mention {needle:?}");
    }

    #[test]
    fn refuses_inconsistent_shapes() {
        let mut m = softmax_model();
        m.layers[0].weights.pop();
        refused(
            &m,
            "layer 1 has 11 weights but inputs x outputs = 3 x 4 = 12",
        );

        let mut m = softmax_model();
        m.layers[1].biases.push(0.0);
        refused(&m, "layer 2 has 4 biases but 3 outputs");

        let mut m = softmax_model();
        m.layers[1] = layer(5, 3, 2);
        refused(&m, "layer 1 has 4 outputs but layer 2 has 5 inputs");

        let mut m = softmax_model();
        m.layers.clear();
        refused(&m, "no layers");

        let mut m = softmax_model();
        m.layers[0] = Layer {
            inputs: 3,
            outputs: 0,
            weights: vec![],
            biases: vec![],
        };
        refused(&m, "at least one input and one output");

        let mut m = softmax_model();
        m.feature_names.pop();
        refused(&m, "2 feature names but the network has 3 inputs");

        let mut m = softmax_model();
        m.input_scale.pop();
        refused(
            &m,
            "the input scale has 2 entries but the network has 3 inputs",
        );

        let mut m = softmax_model();
        m.fill_values = Some(vec![0.0]);
        refused(&m, "the fill values has 1 entries");
    }

    #[test]
    fn refuses_bad_numbers() {
        let mut m = softmax_model();
        m.layers[1].weights[2] = f64::NAN;
        refused(&m, "layer 2 weights: entry 3 (counting from 1) is NaN");

        let mut m = softmax_model();
        m.input_offset[0] = f64::INFINITY;
        refused(&m, "input offset: entry 1 (counting from 1) is inf");

        let mut m = softmax_model();
        m.input_scale[1] = 0.0;
        refused(&m, "input scale: entry 2 (counting from 1) is 0");

        let mut m = regression_model();
        m.output_scale = Some(vec![1.0, 0.0]);
        refused(&m, "output scale: entry 2 (counting from 1) is 0");

        let mut m = softmax_model();
        m.fill_values = Some(vec![0.0, f64::NAN, 1.0]);
        refused(&m, "fill values: entry 2");

        for s in [0.0, 1.0, -0.5, f64::NAN] {
            let mut m = softmax_model();
            m.activation = Activation::LeakyRelu(s);
            refused(&m, "leaky_relu slope");
        }
    }

    #[test]
    fn f32_networks_round_weights_and_refuse_only_overflow() {
        // A weight that is not an f32 is rounded to the nearest, as the f32
        // network rounds it; preprocessing stays f64, so large offsets and
        // tiny scales are kept as they are.
        let mut m = regression_model();
        m.layers[0].weights[4] = 0.1;
        m.input_offset[0] = 1e300;
        m.input_scale[1] = 1e-60;
        let g = graph_of(&to_onnx_bytes(&m).unwrap());
        let offset = initialiser(&g, "scale.offset");
        assert_eq!(int(&offset, 2), Some(dtype::DOUBLE));
        let w = initialiser(&g, "layer1.weights");
        assert_eq!(int(&w, 2), Some(dtype::FLOAT));
        let raw = &len_fields(&w, 9)[0];
        assert_eq!(raw[16..20], 0.1f32.to_le_bytes());

        let mut m = regression_model();
        m.layers[1].biases[1] = 1e300;
        refused(
            &m,
            "layer 2 bias 2 (counting from 1) is 1e300, beyond the f32 range",
        );
    }

    #[test]
    fn refuses_inconsistent_heads_and_labels() {
        let mut m = softmax_model();
        m.class_labels = None;
        refused(&m, "softmax head needs class labels");

        let mut m = softmax_model();
        m.class_labels = Some(vec!["a".into(), "b".into()]);
        refused(&m, "2 class labels but the softmax head has 3 outputs");

        let mut m = softmax_model();
        m.class_labels = Some(vec!["a".into(), "b".into(), "a".into()]);
        refused(&m, "entries 1 and 3 (counting from 1) are both \"a\"");

        let mut m = softmax_model();
        m.layers[1] = layer(4, 1, 2);
        m.class_labels = Some(vec!["a".into()]);
        refused(&m, "needs at least two");

        let mut m = softmax_model();
        m.head = Head::Logistic;
        refused(
            &m,
            "pass class_labels None to export the 3 sigmoid outputs as values",
        );

        let mut m = logistic_model();
        m.class_labels = Some(vec!["only".into()]);
        refused(&m, "exactly two classes");

        let mut m = regression_model();
        m.class_labels = Some(vec!["a".into(), "b".into()]);
        refused(&m, "takes no class labels");

        let mut m = logistic_model();
        m.output_offset = Some(vec![0.0]);
        m.output_scale = Some(vec![1.0]);
        refused(&m, "but the head is logistic");

        let mut m = regression_model();
        m.output_scale = None;
        refused(&m, "only one of output_offset and output_scale");

        let mut m = regression_model();
        m.output_offset = Some(vec![1.0]);
        refused(
            &m,
            "the output offset has 1 entries but the network has 2 outputs",
        );
    }

    #[test]
    fn logistic_without_labels_exports_values() {
        let mut m = softmax_model();
        m.head = Head::Logistic;
        m.class_labels = None;
        let g = graph_of(&to_onnx_bytes(&m).unwrap());
        let ops: Vec<String> = node_ops(&g).into_iter().map(|(_, op)| op).collect();
        assert_eq!(ops.last().unwrap(), "Sigmoid");
        let outs: Vec<String> = len_fields(&g, 12)
            .iter()
            .map(|v| strings(v, 1)[0].clone())
            .collect();
        assert_eq!(outs, ["values"]);
    }

    #[test]
    fn refuses_bad_names_and_metadata() {
        let mut m = softmax_model();
        m.feature_names[1] = String::new();
        refused(&m, "feature name 2 (counting from 1) is empty");

        let mut m = softmax_model();
        m.feature_names[2] = "a".into();
        refused(&m, "feature names: entries 1 and 3");

        let mut m = softmax_model();
        m.metadata.push(("class_labels".into(), "x".into()));
        refused(&m, "\"class_labels\" is written by the exporter itself");

        let mut m = softmax_model();
        m.metadata.push(("seed".into(), "1".into()));
        refused(&m, "\"seed\" appears more than once");

        let mut m = softmax_model();
        m.metadata.push((String::new(), "1".into()));
        refused(&m, "empty key");
    }

    #[test]
    fn encoding_is_deterministic() {
        let a = to_onnx_bytes(&softmax_model()).unwrap();
        let b = to_onnx_bytes(&softmax_model()).unwrap();
        assert_eq!(a, b);
    }
}
