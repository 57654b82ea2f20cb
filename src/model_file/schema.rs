//! The file schema: structs owned by this module, separate from the
//! in-memory [`Model`], and the conversions both ways with every
//! consistency check. Versions 1 and 2 share every part but
//! `training_options` (see [`options_schema`](super::options_schema)), so
//! [`File`] takes the options schema as a parameter.

use super::options_schema::{OptionsV1, OptionsV2};
use crate::data::rows::CellRules;
use crate::data::{ColumnEncoding, DecimalMark, Imputer, Scaler, Scaling, TablePart};
use crate::fit::{
    ChosenThreshold, CostMatrix, DecisionRule, FitOptions, Model, Provenance, Temperature,
    ThresholdTarget,
};
use crate::network::{Activation, Head, Layer, Network, Precision, MAX_PARAMETERS};
use ndarray::{Array1, Array2};
use serde::{Deserialize, Serialize};
use std::collections::HashSet;

/// The value of the `"format"` field.
pub const FORMAT_NAME: &str = "stratanet-model";
/// The format version this library writes; it reads this one and every
/// earlier one.
pub const FORMAT_VERSION: u32 = 2;

/// The options schema of each format version.
pub(super) trait OptionsSchema {
    /// The version whose files hold it.
    const VERSION: u32;
    /// The options, checked.
    fn into_options(self) -> Result<FitOptions, String>;
}

impl OptionsSchema for OptionsV1 {
    const VERSION: u32 = 1;
    fn into_options(self) -> Result<FitOptions, String> {
        OptionsV1::into_options(self)
    }
}

impl OptionsSchema for OptionsV2 {
    const VERSION: u32 = 2;
    fn into_options(self) -> Result<FitOptions, String> {
        OptionsV2::into_options(self)
    }
}

/// A whole model file, its `training_options` in schema `O`.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct File<O> {
    pub format: String,
    pub format_version: u32,
    pub target: TargetV1,
    pub columns: Vec<ColumnV1>,
    pub feature_names: Vec<String>,
    pub scaler: ScalerV1,
    /// Fill values for missing cells (version 2; a model fitted with
    /// missing cells imputed).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub imputer: Option<ImputerV2>,
    /// The target's scaler (version 2; regression with the identity head).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target_scaler: Option<ScalerV1>,
    /// How the training table was read (version 2; left out when it is
    /// the default: no ID columns, a decimal point, the default markers).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub table: Option<TableReadingV2>,
    pub training_options: O,
    pub seed: u64,
    pub provenance: ProvenanceV1,
    pub network: NetworkV1,
    /// The temperature dividing the output sums (version 2; a classifier
    /// fitted with temperature scaling).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature: Option<TemperatureV2>,
    /// How the model decides (version 2; costs or a threshold).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub decision: Option<DecisionV2>,
}

/// A fitted temperature as files hold it.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct TemperatureV2 {
    pub value: f64,
    pub rows: usize,
    pub log_loss_before: f64,
    pub log_loss_after: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// A decision rule as files hold it.
#[derive(Debug, Serialize, Deserialize)]
#[serde(tag = "rule", rename_all = "snake_case", deny_unknown_fields)]
pub(super) enum DecisionV2 {
    /// The least expected cost: `costs[d][c]`, columns in `classes` order.
    Costs {
        decisions: Vec<String>,
        classes: Vec<String>,
        costs: Vec<Vec<f64>>,
    },
    /// Two classes: `positive` when its probability is at least `threshold`.
    Threshold {
        positive: String,
        threshold: f64,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        target_recall: Option<f64>,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        target_precision: Option<f64>,
        recall: f64,
        precision: f64,
        rows: usize,
        positives: usize,
    },
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ImputerV2 {
    /// One fill value per feature.
    pub fill: Vec<f64>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct TableReadingV2 {
    /// ID columns carried into predictions.
    pub ids: Vec<String>,
    /// `point` or `comma`.
    pub decimal: String,
    /// The missing-cell markers (besides the empty cell).
    pub missing_markers: Vec<String>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct TargetV1 {
    pub name: String,
    pub is_classifier: bool,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub classes: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outputs: Option<Vec<String>>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(tag = "encoding", rename_all = "snake_case", deny_unknown_fields)]
pub(super) enum ColumnV1 {
    Numeric {
        name: String,
    },
    OneHot {
        name: String,
        levels: Vec<String>,
    },
    /// Version 2: a 0/1 column, 1 where the named column's cell is missing.
    MissingIndicator {
        name: String,
    },
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum ScalingV1 {
    None,
    Standardise,
    MinMax,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ScalerV1 {
    pub kind: ScalingV1,
    pub offset: Vec<f64>,
    pub scale: Vec<f64>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ProvenanceV1 {
    pub library_version: String,
    pub table_fingerprint: String,
    pub table_source: String,
    pub table_rows: usize,
    pub training_rows: usize,
    pub validation_rows: usize,
    pub epochs_run: usize,
    pub best_epoch: usize,
    pub best_validation_loss: Option<f64>,
    pub stopped_early: bool,
    pub final_training_loss: f64,
    /// How a sweep chose the options (version 2 only; absent otherwise).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub selected_by: Option<String>,
    /// Version 2: the baseline's losses and the fit's warnings.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baseline_training_loss: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub baseline_validation_loss: Option<f64>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
    /// Fast arithmetic only: whether the training CPU fused multiply-adds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fused_multiply_add: Option<bool>,
    /// Version 2: which part of a larger table the training table was
    /// (a hold-out split's development subset); absent for a whole table.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub table_part: Option<TablePartV2>,
}

/// Which part of a larger table the training table was, as files hold it.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct TablePartV2 {
    pub role: TablePartRoleV2,
    /// Rows in the whole table the part was taken from.
    pub of_rows: usize,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum TablePartRoleV2 {
    Development,
    HeldOut,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum ActivationV1 {
    Identity,
    Sigmoid,
    Tanh,
    Relu,
    LeakyRelu,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum HeadV1 {
    Logistic,
    Softmax,
    Identity,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum PrecisionV1 {
    F64,
    F32,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct NetworkV1 {
    pub layer_sizes: Vec<usize>,
    pub hidden_activation: ActivationV1,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub leaky_relu_slope: Option<f64>,
    pub head: HeadV1,
    pub precision: PrecisionV1,
    pub layers: Vec<LayerV1>,
}

#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct LayerV1 {
    /// One row per input unit, one number per output unit.
    pub weights: Vec<Vec<f64>>,
    /// One per output unit.
    pub biases: Vec<f64>,
}

/// Weights and biases of a network with these layer sizes (saturating, so
/// any claim, however absurd, gives a number to compare with the limit).
pub(super) fn parameter_count(sizes: &[u64]) -> u128 {
    sizes
        .windows(2)
        .map(|p| (u128::from(p[0]) + 1).saturating_mul(u128::from(p[1])))
        .fold(0u128, u128::saturating_add)
}

/// Checks layer sizes before anything is allocated for them.
pub(super) fn check_layer_sizes(sizes: &[u64]) -> Result<(), String> {
    let shown = || show_sizes(sizes);
    if sizes.len() < 2 {
        return Err(format!(
            "network: \"layer_sizes\" is {}; a network needs at least an input size and an output size",
            shown()
        ));
    }
    if let Some(i) = sizes.iter().position(|&s| s == 0) {
        return Err(format!(
            "network: \"layer_sizes\" {}: size {i} is 0; every layer needs at least one unit",
            shown()
        ));
    }
    let params = parameter_count(sizes);
    if params > MAX_PARAMETERS as u128 {
        return Err(format!(
            "network: \"layer_sizes\" {} give {params} weights and biases, more than the limit of {MAX_PARAMETERS}; the file is damaged or not meant for stratanet",
            shown()
        ));
    }
    Ok(())
}

fn show_sizes(sizes: &[u64]) -> String {
    const MAX: usize = 12;
    let mut parts: Vec<String> = sizes.iter().take(MAX).map(u64::to_string).collect();
    if sizes.len() > MAX {
        parts.push(format!("... ({} sizes)", sizes.len()));
    }
    format!("[{}]", parts.join(", "))
}

/// The first non-finite number, as "entry i" (1-based) of a list.
fn first_non_finite<'a>(values: impl IntoIterator<Item = &'a f64>) -> Option<usize> {
    values
        .into_iter()
        .position(|v| !v.is_finite())
        .map(|i| i + 1)
}

/// The first (1-based) value that is not finite in the network's float
/// type: an f32 network rounds its weights to f32 on loading, so a finite
/// f64 beyond f32's range would become infinite.
fn first_unstorable<'a>(
    values: impl IntoIterator<Item = &'a f64>,
    f32_network: bool,
) -> Option<usize> {
    values
        .into_iter()
        .position(|&v| !v.is_finite() || (f32_network && !(v as f32).is_finite()))
        .map(|i| i + 1)
}

fn first_repeat(names: &[String]) -> Option<&str> {
    let mut seen = HashSet::new();
    names
        .iter()
        .find(|n| !seen.insert(n.as_str()))
        .map(String::as_str)
}

impl File<OptionsV2> {
    /// The file form of a model, in the version written now (no checks;
    /// see [`File::check`]).
    pub fn from_model(model: &Model) -> File<OptionsV2> {
        let net = &model.network;
        let (hidden_activation, leaky_relu_slope) = match net.activation() {
            Activation::Identity => (ActivationV1::Identity, None),
            Activation::Sigmoid => (ActivationV1::Sigmoid, None),
            Activation::Tanh => (ActivationV1::Tanh, None),
            Activation::Relu => (ActivationV1::Relu, None),
            Activation::LeakyRelu(s) => (ActivationV1::LeakyRelu, Some(s)),
        };
        let network = NetworkV1 {
            layer_sizes: net.sizes(),
            hidden_activation,
            leaky_relu_slope,
            head: match net.head() {
                Head::Logistic => HeadV1::Logistic,
                Head::Softmax => HeadV1::Softmax,
                Head::Identity => HeadV1::Identity,
            },
            precision: match net.precision() {
                Precision::F64 => PrecisionV1::F64,
                Precision::F32 => PrecisionV1::F32,
            },
            layers: net
                .layers()
                .iter()
                .map(|l| LayerV1 {
                    weights: l.weights.rows().into_iter().map(|r| r.to_vec()).collect(),
                    biases: l.biases.to_vec(),
                })
                .collect(),
        };
        let names = model.target_names.clone();
        let p = &model.provenance;
        File {
            format: FORMAT_NAME.to_string(),
            format_version: FORMAT_VERSION,
            target: TargetV1 {
                name: model.target_name.clone(),
                is_classifier: model.is_classifier,
                classes: model.is_classifier.then(|| names.clone()),
                outputs: (!model.is_classifier).then_some(names),
            },
            columns: model
                .columns
                .iter()
                .map(|c| match c {
                    ColumnEncoding::Numeric { name } => ColumnV1::Numeric { name: name.clone() },
                    ColumnEncoding::OneHot { name, levels } => ColumnV1::OneHot {
                        name: name.clone(),
                        levels: levels.clone(),
                    },
                    ColumnEncoding::MissingIndicator { name } => {
                        ColumnV1::MissingIndicator { name: name.clone() }
                    }
                })
                .collect(),
            feature_names: model.feature_names.clone(),
            scaler: ScalerV1 {
                kind: scaling_v1(model.scaler.kind()),
                offset: model.scaler.offsets().to_vec(),
                scale: model.scaler.scales().to_vec(),
            },
            imputer: model.imputer.as_ref().map(|i| ImputerV2 {
                fill: i.fill_values().to_vec(),
            }),
            target_scaler: model.target_scaler.as_ref().map(|t| ScalerV1 {
                kind: scaling_v1(t.kind()),
                offset: t.offsets().to_vec(),
                scale: t.scales().to_vec(),
            }),
            table: {
                let r = &model.cell_rules;
                let default = CellRules::new(DecimalMark::Point, None);
                (!model.ids.is_empty() || *r != default).then(|| TableReadingV2 {
                    ids: model.ids.clone(),
                    decimal: r.decimal.to_string(),
                    missing_markers: r.markers.clone(),
                })
            },
            training_options: OptionsV2::from_options(&model.options),
            seed: model.seed,
            provenance: ProvenanceV1 {
                library_version: p.library_version.clone(),
                table_fingerprint: p.table_fingerprint.clone(),
                table_source: p.table_source.clone(),
                table_rows: p.table_rows,
                training_rows: p.rows_used.0,
                validation_rows: p.rows_used.1,
                epochs_run: p.epochs_run,
                best_epoch: p.best_epoch,
                best_validation_loss: p.best_validation_loss,
                stopped_early: p.stopped_early,
                final_training_loss: p.final_training_loss,
                selected_by: p.selected_by.clone(),
                baseline_training_loss: p.baseline_training_loss,
                baseline_validation_loss: p.baseline_validation_loss,
                warnings: p.warnings.clone(),
                fused_multiply_add: p.fused_multiply_add,
                table_part: p.table_part.map(|part| TablePartV2 {
                    role: match part {
                        TablePart::Development { .. } => TablePartRoleV2::Development,
                        TablePart::HeldOut { .. } => TablePartRoleV2::HeldOut,
                    },
                    of_rows: part.of_rows(),
                }),
            },
            network,
            temperature: model.temperature.as_ref().map(|t| TemperatureV2 {
                value: t.value,
                rows: t.rows,
                log_loss_before: t.log_loss_before,
                log_loss_after: t.log_loss_after,
                note: t.note.clone(),
            }),
            decision: model.decision.as_ref().map(|d| match d {
                DecisionRule::Costs(m) => DecisionV2::Costs {
                    decisions: m.decisions().to_vec(),
                    classes: m.classes().to_vec(),
                    costs: m.costs().to_vec(),
                },
                DecisionRule::Threshold { positive, chosen } => DecisionV2::Threshold {
                    positive: model.target_names[*positive].clone(),
                    threshold: chosen.threshold,
                    target_recall: match chosen.target {
                        ThresholdTarget::Recall(v) => Some(v),
                        ThresholdTarget::Precision(_) => None,
                    },
                    target_precision: match chosen.target {
                        ThresholdTarget::Precision(v) => Some(v),
                        ThresholdTarget::Recall(_) => None,
                    },
                    recall: chosen.recall,
                    precision: chosen.precision,
                    rows: chosen.rows,
                    positives: chosen.positives,
                },
            }),
        }
    }
}

fn scaling_v1(s: Scaling) -> ScalingV1 {
    match s {
        Scaling::None => ScalingV1::None,
        Scaling::Standardise => ScalingV1::Standardise,
        Scaling::MinMax => ScalingV1::MinMax,
    }
}

fn scaling_of(s: ScalingV1) -> Scaling {
    match s {
        ScalingV1::None => Scaling::None,
        ScalingV1::Standardise => Scaling::Standardise,
        ScalingV1::MinMax => Scaling::MinMax,
    }
}

impl<O: OptionsSchema> File<O> {
    /// Every consistency check; the reason names the field.
    pub fn check(&self) -> Result<(), String> {
        if self.format != FORMAT_NAME {
            return Err(format!(
                "\"format\" is \"{}\", not \"{FORMAT_NAME}\"",
                self.format
            ));
        }
        if self.format_version != O::VERSION {
            return Err(format!(
                "\"format_version\" is {}, but the file was read as version {}",
                self.format_version,
                O::VERSION
            ));
        }
        self.check_network()?;
        self.check_columns()?;
        self.check_scaler()?;
        self.check_target()?;
        self.check_version_2_parts()?;
        self.check_provenance()
    }

    /// The imputer, the target scaler and the table reading (version 2).
    fn check_version_2_parts(&self) -> Result<(), String> {
        if O::VERSION < 2
            && (self.imputer.is_some()
                || self.target_scaler.is_some()
                || self.table.is_some()
                || self.temperature.is_some()
                || self.decision.is_some()
                || self.provenance.table_part.is_some()
                || self
                    .columns
                    .iter()
                    .any(|c| matches!(c, ColumnV1::MissingIndicator { .. })))
        {
            return Err("the file is version 1 but holds parts of version 2 (\"imputer\", \"target_scaler\", \"table\", \"temperature\", \"decision\", \"table_part\" or a missing_indicator column)".into());
        }
        let n = self.feature_names.len();
        if let Some(i) = &self.imputer {
            if i.fill.len() != n {
                return Err(format!(
                    "\"imputer\" has {} fill values, but the model has {n} features",
                    i.fill.len()
                ));
            }
            if let Some(k) = first_non_finite(&i.fill) {
                return Err(format!(
                    "\"imputer\": fill value {k} is not a finite number"
                ));
            }
            let mut offset = 0;
            for c in &self.columns {
                let enc = to_encoding(c);
                if let ColumnV1::OneHot { name, levels } = c {
                    let part = &i.fill[offset..offset + levels.len()];
                    if part.iter().filter(|&&v| v == 1.0).count() != 1
                        || part.iter().any(|&v| v != 0.0 && v != 1.0)
                    {
                        return Err(format!(
                            "\"imputer\": the fill values of column \"{name}\" are not one level's 0/1 row"
                        ));
                    }
                }
                offset += enc.width();
            }
        } else if self
            .columns
            .iter()
            .any(|c| matches!(c, ColumnV1::MissingIndicator { .. }))
        {
            return Err("\"columns\" hold a missing_indicator column, but the model has no \"imputer\" to fill the cells it marks".into());
        }
        if let Some(t) = &self.target_scaler {
            let outputs = *self.network.layer_sizes.last().expect("checked: two sizes");
            if self.target.is_classifier {
                return Err("\"target_scaler\" is given, but the model is a classifier".into());
            }
            if t.offset.len() != outputs || t.scale.len() != outputs {
                return Err(format!(
                    "\"target_scaler\" has {} offsets and {} scales, but the network has {outputs} outputs",
                    t.offset.len(),
                    t.scale.len()
                ));
            }
            if let Some(k) = first_non_finite(&t.offset) {
                return Err(format!(
                    "\"target_scaler\": offset {k} is not a finite number"
                ));
            }
            if let Some(k) = t.scale.iter().position(|v| !v.is_finite() || *v == 0.0) {
                return Err(format!(
                    "\"target_scaler\": scale {} is {}; every scale must be a finite number other than 0",
                    k + 1,
                    t.scale[k]
                ));
            }
        }
        if let Some(t) = &self.table {
            t.decimal
                .parse::<DecimalMark>()
                .map_err(|e| format!("\"table\": \"decimal\": {e}"))?;
            CellRules::check_markers(&t.missing_markers)
                .map_err(|e| format!("\"table\": \"missing_markers\": {e}"))?;
            if let Some(c) = first_repeat(&t.ids) {
                return Err(format!("\"table\": ID column \"{c}\" appears twice"));
            }
        }
        Ok(())
    }

    fn check_network(&self) -> Result<(), String> {
        let net = &self.network;
        let sizes = &net.layer_sizes;
        let sizes64: Vec<u64> = sizes.iter().map(|&s| s as u64).collect();
        check_layer_sizes(&sizes64)?;
        let shown = show_sizes(&sizes64);
        if net.layers.len() != sizes.len() - 1 {
            return Err(format!(
                "network: \"layer_sizes\" {shown} call for {} layers, but \"layers\" holds {}",
                sizes.len() - 1,
                net.layers.len()
            ));
        }
        let f32_network = matches!(net.precision, PrecisionV1::F32);
        for (k, layer) in net.layers.iter().enumerate() {
            let (n_in, n_out) = (sizes[k], sizes[k + 1]);
            let at = format!("network: layer {}", k + 1);
            if layer.weights.len() != n_in {
                return Err(format!(
                    "{at}: \"weights\" has {} rows, but \"layer_sizes\" {shown} call for {n_in} (one row per input unit)",
                    layer.weights.len()
                ));
            }
            for (r, row) in layer.weights.iter().enumerate() {
                if row.len() != n_out {
                    return Err(format!(
                        "{at}: \"weights\" row {} holds {} numbers, but \"layer_sizes\" {shown} call for {n_out} (one per output unit)",
                        r + 1,
                        row.len()
                    ));
                }
                if let Some(c) = first_unstorable(row, f32_network) {
                    return Err(format!(
                        "{at}: \"weights\" row {}, entry {c} is not a finite number{}",
                        r + 1,
                        if f32_network {
                            " in f32 (the network's precision)"
                        } else {
                            ""
                        }
                    ));
                }
            }
            if layer.biases.len() != n_out {
                return Err(format!(
                    "{at}: \"biases\" holds {} numbers, but \"layer_sizes\" {shown} call for {n_out} (one per output unit)",
                    layer.biases.len()
                ));
            }
            if let Some(c) = first_unstorable(&layer.biases, f32_network) {
                return Err(format!(
                    "{at}: \"biases\" entry {c} is not a finite number{}",
                    if f32_network {
                        " in f32 (the network's precision)"
                    } else {
                        ""
                    }
                ));
            }
        }
        match (net.hidden_activation, net.leaky_relu_slope) {
            (ActivationV1::LeakyRelu, Some(s)) if s > 0.0 && s < 1.0 => {}
            (ActivationV1::LeakyRelu, Some(s)) => {
                return Err(format!(
                    "network: \"leaky_relu_slope\" is {s}; it must be between 0 and 1"
                ))
            }
            (ActivationV1::LeakyRelu, None) => {
                return Err(
                    "network: \"hidden_activation\" is \"leaky_relu\" but there is no \"leaky_relu_slope\""
                        .into(),
                )
            }
            (other, Some(_)) => {
                return Err(format!(
                    "network: \"leaky_relu_slope\" is given, but \"hidden_activation\" is \"{}\", which has no slope",
                    activation_name(other)
                ))
            }
            (_, None) => {}
        }
        if net.head == HeadV1::Softmax && sizes[sizes.len() - 1] < 2 {
            return Err(
                "network: the softmax head needs at least two outputs (one per class)".into(),
            );
        }
        Ok(())
    }

    fn check_columns(&self) -> Result<(), String> {
        let mut names = Vec::with_capacity(self.columns.len());
        for c in &self.columns {
            if let ColumnV1::OneHot { name, levels } = c {
                if levels.is_empty() {
                    return Err(format!(
                        "\"columns\": the one_hot column \"{name}\" has no levels"
                    ));
                }
                if let Some(l) = first_repeat(levels) {
                    return Err(format!(
                        "\"columns\": level \"{l}\" appears twice in column \"{name}\""
                    ));
                }
            }
            if !matches!(c, ColumnV1::MissingIndicator { .. }) {
                names.push(column_name(c).to_string());
            }
        }
        if let Some(n) = first_repeat(&names) {
            return Err(format!("\"columns\": column \"{n}\" appears twice"));
        }
        let indicators: Vec<String> = self
            .columns
            .iter()
            .filter(|c| matches!(c, ColumnV1::MissingIndicator { .. }))
            .map(|c| column_name(c).to_string())
            .collect();
        if let Some(n) = first_repeat(&indicators) {
            return Err(format!(
                "\"columns\": the missing indicator of \"{n}\" appears twice"
            ));
        }
        if let Some(n) = indicators.iter().find(|n| !names.contains(n)) {
            return Err(format!(
                "\"columns\": a missing indicator names \"{n}\", which is not one of the columns"
            ));
        }
        let encoded: Vec<String> = self
            .columns
            .iter()
            .flat_map(|c| to_encoding(c).feature_names())
            .collect();
        if encoded.len() != self.feature_names.len() {
            return Err(format!(
                "\"columns\" encode {} features, but \"feature_names\" lists {}",
                encoded.len(),
                self.feature_names.len()
            ));
        }
        if let Some(i) = (0..encoded.len()).find(|&i| encoded[i] != self.feature_names[i]) {
            return Err(format!(
                "\"feature_names\" entry {} is \"{}\", but \"columns\" make it \"{}\"",
                i + 1,
                self.feature_names[i],
                encoded[i]
            ));
        }
        if let Some(n) = first_repeat(&self.feature_names) {
            return Err(format!("\"feature_names\": \"{n}\" appears twice"));
        }
        let inputs = self.network.layer_sizes[0];
        if self.feature_names.len() != inputs {
            return Err(format!(
                "\"feature_names\" lists {} features, but the network has {inputs} inputs",
                self.feature_names.len()
            ));
        }
        Ok(())
    }

    fn check_scaler(&self) -> Result<(), String> {
        let s = &self.scaler;
        let n = self.feature_names.len();
        if s.offset.len() != n || s.scale.len() != n {
            return Err(format!(
                "\"scaler\" has {} offsets and {} scales, but the model has {n} features",
                s.offset.len(),
                s.scale.len()
            ));
        }
        if let Some(i) = first_non_finite(&s.offset) {
            return Err(format!("\"scaler\": offset {i} is not a finite number"));
        }
        if let Some(i) = s.scale.iter().position(|v| !v.is_finite() || *v == 0.0) {
            return Err(format!(
                "\"scaler\": scale {} is {}; every scale must be a finite number other than 0",
                i + 1,
                s.scale[i]
            ));
        }
        Ok(())
    }

    fn check_target(&self) -> Result<(), String> {
        let t = &self.target;
        let outputs = *self.network.layer_sizes.last().expect("checked: two sizes");
        let head = self.network.head;
        if t.is_classifier {
            if t.outputs.is_some() {
                return Err(
                    "\"target\" is a classifier (\"is_classifier\": true) but lists \"outputs\"; a classifier lists \"classes\""
                        .into(),
                );
            }
            let Some(classes) = &t.classes else {
                return Err(
                    "\"target\" is a classifier (\"is_classifier\": true) but has no \"classes\""
                        .into(),
                );
            };
            if classes.len() < 2 {
                return Err(format!(
                    "\"target\" lists {} class(es); a classifier needs at least two",
                    classes.len()
                ));
            }
            if let Some(c) = first_repeat(classes) {
                return Err(format!("\"target\": class \"{c}\" appears twice"));
            }
            let k = classes.len();
            match head {
                HeadV1::Softmax if outputs != k => Err(format!(
                    "\"target\" lists {k} classes, but the softmax head has {outputs} outputs (it needs one output per class)"
                )),
                HeadV1::Logistic if k != 2 => Err(format!(
                    "\"target\" lists {k} classes, but the logistic head serves exactly two classes"
                )),
                HeadV1::Logistic if outputs != 1 => Err(format!(
                    "the logistic head of a two-class model needs one output, but the network has {outputs}"
                )),
                HeadV1::Identity => Err(
                    "\"target\" is a classifier, but the head is \"identity\"; a classifier needs a logistic or softmax head"
                        .into(),
                ),
                _ => Ok(()),
            }
        } else {
            if t.classes.is_some() {
                return Err(
                    "\"target\" is not a classifier (\"is_classifier\": false) but lists \"classes\"; a regression model lists \"outputs\""
                        .into(),
                );
            }
            let Some(names) = &t.outputs else {
                return Err(
                    "\"target\" is not a classifier (\"is_classifier\": false) but has no \"outputs\""
                        .into(),
                );
            };
            if names.len() != outputs {
                return Err(format!(
                    "\"target\" lists {} outputs, but the network has {outputs}",
                    names.len()
                ));
            }
            if let Some(c) = first_repeat(names) {
                return Err(format!("\"target\": output \"{c}\" appears twice"));
            }
            Ok(())
        }
    }

    fn check_provenance(&self) -> Result<(), String> {
        let p = &self.provenance;
        if !p.final_training_loss.is_finite() {
            return Err(format!(
                "\"provenance\": \"final_training_loss\" is {}, which JSON cannot hold (it has no NaN or infinity)",
                p.final_training_loss
            ));
        }
        if let Some(v) = p.best_validation_loss.filter(|v| !v.is_finite()) {
            return Err(format!(
                "\"provenance\": \"best_validation_loss\" is {v}, which JSON cannot hold (it has no NaN or infinity)"
            ));
        }
        if let Some(part) = &p.table_part {
            if part.of_rows <= p.table_rows {
                return Err(format!(
                    "\"provenance\": \"table_part\" says the training table's {} rows were part of a table of {} rows; a part must be smaller than the whole",
                    p.table_rows, part.of_rows
                ));
            }
        }
        Ok(())
    }

    /// The in-memory model, after [`File::check`].
    pub fn into_model(self) -> Result<Model, String> {
        self.check()?;
        let net = self.network;
        let activation = match net.hidden_activation {
            ActivationV1::Identity => Activation::Identity,
            ActivationV1::Sigmoid => Activation::Sigmoid,
            ActivationV1::Tanh => Activation::Tanh,
            ActivationV1::Relu => Activation::Relu,
            ActivationV1::LeakyRelu => {
                Activation::LeakyRelu(net.leaky_relu_slope.expect("checked"))
            }
        };
        let head = match net.head {
            HeadV1::Logistic => Head::Logistic,
            HeadV1::Softmax => Head::Softmax,
            HeadV1::Identity => Head::Identity,
        };
        let precision = match net.precision {
            PrecisionV1::F64 => Precision::F64,
            PrecisionV1::F32 => Precision::F32,
        };
        let layers = net
            .layers
            .into_iter()
            .map(|l| {
                let (rows, cols) = (l.weights.len(), l.biases.len());
                let flat: Vec<f64> = l.weights.into_iter().flatten().collect();
                Layer {
                    weights: Array2::from_shape_vec((rows, cols), flat).expect("checked shape"),
                    biases: Array1::from(l.biases),
                }
            })
            .collect();
        // Everything from_layers checks was checked above with the file's
        // field names; a refusal here would be a gap in those checks.
        let network = Network::from_layers(layers, activation, head)
            .map_err(|e| format!("network: {e}"))?
            .with_precision(precision);
        let options = self
            .training_options
            .into_options()
            .map_err(|e| format!("\"training_options\": {e}"))?;
        let t = self.target;
        let p = self.provenance;
        let scaler = Scaler::from_parts(
            scaling_of(self.scaler.kind),
            self.scaler.offset,
            self.scaler.scale,
        )
        .map_err(|e| format!("\"scaler\": {e}"))?;
        let imputer = self
            .imputer
            .map(|i| Imputer::from_parts(i.fill))
            .transpose()
            .map_err(|e| format!("\"imputer\": {e}"))?;
        let target_scaler = self
            .target_scaler
            .map(|t| Scaler::from_parts(scaling_of(t.kind), t.offset, t.scale))
            .transpose()
            .map_err(|e| format!("\"target_scaler\": {e}"))?;
        let (ids, cell_rules) = match self.table {
            Some(t) => (
                t.ids,
                CellRules::new(
                    t.decimal.parse().expect("checked"),
                    Some(&t.missing_markers),
                ),
            ),
            None => (Vec::new(), CellRules::new(DecimalMark::Point, None)),
        };
        let classes: Vec<String> = if t.is_classifier {
            t.classes.clone().expect("checked")
        } else {
            t.outputs.clone().expect("checked")
        };
        let temperature =
            match self.temperature {
                None => None,
                Some(_) if !t.is_classifier => return Err(
                    "\"temperature\": the model predicts numbers; a temperature is for classifiers"
                        .into(),
                ),
                Some(v) => {
                    let (lo, hi) = crate::fit::TEMPERATURE_BOUNDS;
                    if !(v.value >= lo && v.value <= hi) {
                        return Err(format!(
                            "\"temperature\": \"value\" is {}, outside [{lo}, {hi}]",
                            v.value
                        ));
                    }
                    Some(Temperature {
                        value: v.value,
                        rows: v.rows,
                        log_loss_before: v.log_loss_before,
                        log_loss_after: v.log_loss_after,
                        note: v.note,
                    })
                }
            };
        let decision = match self.decision {
            None => None,
            Some(_) if !t.is_classifier => {
                return Err(
                    "\"decision\": the model predicts numbers; decisions are for classifiers"
                        .into(),
                )
            }
            Some(DecisionV2::Costs {
                decisions,
                classes: columns,
                costs,
            }) => {
                let m = CostMatrix::new(decisions, columns, costs)
                    .and_then(|m| m.for_classes(&classes))
                    .map_err(|e| format!("\"decision\": {e}"))?;
                Some(DecisionRule::Costs(m))
            }
            Some(DecisionV2::Threshold {
                positive,
                threshold,
                target_recall,
                target_precision,
                recall,
                precision,
                rows,
                positives,
            }) => {
                if classes.len() != 2 {
                    return Err(format!(
                        "\"decision\": a threshold is for two classes; the model has {}",
                        classes.len()
                    ));
                }
                let Some(index) = classes.iter().position(|c| *c == positive) else {
                    return Err(format!("\"decision\": \"positive\" is \"{positive}\", not a class of the model ({})", classes.join(", ")));
                };
                let target = match (target_recall, target_precision) {
                    (Some(r), None) => ThresholdTarget::Recall(r),
                    (None, Some(q)) => ThresholdTarget::Precision(q),
                    _ => return Err("\"decision\": give exactly one of \"target_recall\" and \"target_precision\"".into()),
                };
                target
                    .validate()
                    .map_err(|e| format!("\"decision\": {e}"))?;
                if !threshold.is_finite() {
                    return Err("\"decision\": \"threshold\" is not a finite number".into());
                }
                Some(DecisionRule::Threshold {
                    positive: index,
                    chosen: ChosenThreshold {
                        target,
                        threshold,
                        recall,
                        precision,
                        rows,
                        positives,
                    },
                })
            }
        };
        Ok(Model {
            temperature,
            decision,
            network,
            scaler,
            imputer,
            target_scaler,
            ids,
            cell_rules,
            columns: self.columns.iter().map(to_encoding).collect(),
            feature_names: self.feature_names,
            target_name: t.name,
            target_names: if t.is_classifier {
                t.classes.expect("checked")
            } else {
                t.outputs.expect("checked")
            },
            is_classifier: t.is_classifier,
            options,
            seed: self.seed,
            provenance: Provenance {
                library_version: p.library_version,
                table_fingerprint: p.table_fingerprint,
                table_rows: p.table_rows,
                table_source: p.table_source,
                rows_used: (p.training_rows, p.validation_rows),
                epochs_run: p.epochs_run,
                best_epoch: p.best_epoch,
                best_validation_loss: p.best_validation_loss,
                stopped_early: p.stopped_early,
                final_training_loss: p.final_training_loss,
                selected_by: p.selected_by,
                baseline_training_loss: p.baseline_training_loss,
                baseline_validation_loss: p.baseline_validation_loss,
                warnings: p.warnings,
                fused_multiply_add: p.fused_multiply_add,
                table_part: p.table_part.map(|part| match part.role {
                    TablePartRoleV2::Development => TablePart::Development {
                        of_rows: part.of_rows,
                    },
                    TablePartRoleV2::HeldOut => TablePart::HeldOut {
                        of_rows: part.of_rows,
                    },
                }),
            },
        })
    }
}

fn column_name(c: &ColumnV1) -> &str {
    match c {
        ColumnV1::Numeric { name }
        | ColumnV1::OneHot { name, .. }
        | ColumnV1::MissingIndicator { name } => name,
    }
}

fn to_encoding(c: &ColumnV1) -> ColumnEncoding {
    match c {
        ColumnV1::Numeric { name } => ColumnEncoding::Numeric { name: name.clone() },
        ColumnV1::OneHot { name, levels } => ColumnEncoding::OneHot {
            name: name.clone(),
            levels: levels.clone(),
        },
        ColumnV1::MissingIndicator { name } => {
            ColumnEncoding::MissingIndicator { name: name.clone() }
        }
    }
}

fn activation_name(a: ActivationV1) -> &'static str {
    match a {
        ActivationV1::Identity => "identity",
        ActivationV1::Sigmoid => "sigmoid",
        ActivationV1::Tanh => "tanh",
        ActivationV1::Relu => "relu",
        ActivationV1::LeakyRelu => "leaky_relu",
    }
}
