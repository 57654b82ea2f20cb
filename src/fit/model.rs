//! A fitted model: the network with everything needed to use it on new
//! rows (the scaler, the column encoding, the class names) and where it came
//! from ([`Provenance`](super::Provenance)).

use super::probabilities_at;
use super::{CostMatrix, DecisionRule, Decisions, FitOptions, Provenance, Temperature};
use crate::data::rows::CellRules;
use crate::data::{ColumnEncoding, Dataset, Imputer, Scaler};
use crate::error::{Error, Result};
use crate::network::{Head, Network};
use ndarray::{Array2, ArrayView2};

/// A fitted network with everything needed to use it on new rows: the
/// scaler, the column encoding, the class names and how it was made.
#[derive(Clone, Debug, PartialEq)]
pub struct Model {
    /// The trained network (works on scaled features).
    pub(crate) network: Network,
    /// The scaler learnt from the training rows.
    pub(crate) scaler: Scaler,
    /// Fill values for missing cells, learnt from the training rows (a
    /// table read with missing cells imputed).
    pub(crate) imputer: Option<Imputer>,
    /// The target's scaler (regression with the identity head): the
    /// network predicts scaled values, the model's predictions are unscaled.
    pub(crate) target_scaler: Option<Scaler>,
    /// The training table's ID columns (carried into predictions).
    pub(crate) ids: Vec<String>,
    /// How the training table's cells were read (decimal mark, missing
    /// markers): new rows are read the same way unless told otherwise.
    pub(crate) cell_rules: CellRules,
    /// How source columns become features.
    pub(crate) columns: Vec<ColumnEncoding>,
    /// Feature names in network input order.
    pub(crate) feature_names: Vec<String>,
    /// The target column's name.
    pub(crate) target_name: String,
    /// Class names (classification) or output names (regression).
    pub(crate) target_names: Vec<String>,
    /// Whether the target holds classes.
    pub(crate) is_classifier: bool,
    /// The options used (nobody listening).
    pub(crate) options: FitOptions,
    /// The seed all of the fit's draws came from.
    pub(crate) seed: u64,
    /// How and from what the model was made.
    pub(crate) provenance: Provenance,
    /// The temperature dividing the output sums (a classifier fitted with
    /// [`Calibration::Temperature`](super::Calibration::Temperature)).
    pub(crate) temperature: Option<Temperature>,
    /// How the model turns probabilities into decisions, when it does more
    /// than take the most probable class.
    pub(crate) decision: Option<DecisionRule>,
}

impl Model {
    /// The trained network (it works on scaled features; the model's
    /// prediction methods scale for it).
    pub fn network(&self) -> &Network {
        &self.network
    }

    /// The scaler learnt from the training rows.
    pub fn scaler(&self) -> &Scaler {
        &self.scaler
    }

    /// The fill values for missing cells, when the model was fitted with
    /// missing cells imputed.
    pub fn imputer(&self) -> Option<&Imputer> {
        self.imputer.as_ref()
    }

    /// The target's scaler, when the network learnt a scaled target
    /// (predictions are returned in the target's own units).
    pub fn target_scaler(&self) -> Option<&Scaler> {
        self.target_scaler.as_ref()
    }

    /// The training table's ID columns, carried into predictions.
    pub fn id_columns(&self) -> &[String] {
        &self.ids
    }

    /// How the source columns become the network's inputs, in order.
    pub fn columns(&self) -> &[ColumnEncoding] {
        &self.columns
    }

    /// The network's input names, in order (one-hot columns read
    /// `column=level`).
    pub fn feature_names(&self) -> &[String] {
        &self.feature_names
    }

    /// The target column's name.
    pub fn target_name(&self) -> &str {
        &self.target_name
    }

    /// Class names (classification) or output names (regression).
    pub fn target_names(&self) -> &[String] {
        &self.target_names
    }

    /// Does the model predict classes?
    pub fn is_classifier(&self) -> bool {
        self.is_classifier
    }

    /// The options it was fitted with.
    pub fn options(&self) -> &FitOptions {
        &self.options
    }

    /// The seed every draw of its fit came from ([`fit_with_seed`](super::fit_with_seed)
    /// with it and the same table repeats the fit).
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// Where it came from.
    pub fn provenance(&self) -> &Provenance {
        &self.provenance
    }

    /// Class names, or `None` for regression.
    pub fn class_names(&self) -> Option<&[String]> {
        self.is_classifier.then_some(&self.target_names[..])
    }

    fn scaled(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        if x.ncols() != self.feature_names.len() {
            return Err(Error::shape(
                "model inputs",
                (x.nrows(), self.feature_names.len()),
                x.dim(),
            ));
        }
        let mut z = x.to_owned();
        if let Some(imputer) = &self.imputer {
            imputer.impute_in_place(z.view_mut())?;
        }
        self.scaler.scale_in_place(z.view_mut())?;
        if let Some(i) = z.iter().position(|v| !v.is_finite()) {
            let (row, col) = (i / z.ncols(), i % z.ncols());
            let value = x[[row, col]];
            return Err(Error::input(
                format!(
                    "predicting row {} (counting from 1), feature {}",
                    row + 1,
                    self.feature_names[col]
                ),
                if value.is_finite() {
                    format!("the value {value:e} is so far outside the range the model was fitted on that scaling overflows; check the row's values and units")
                } else {
                    format!(
                        "the value {value} is not a finite number; remove or fill the row first"
                    )
                },
            ));
        }
        Ok(z)
    }

    /// The fitted temperature, when the probabilities are calibrated.
    pub fn temperature(&self) -> Option<&Temperature> {
        self.temperature.as_ref()
    }

    /// The decision rule, when the model decides by costs or a threshold.
    pub fn decision_rule(&self) -> Option<&DecisionRule> {
        self.decision.as_ref()
    }

    /// The same model deciding by the least expected cost under `costs`
    /// (Elkan 2001), whose classes must be the model's (any order).
    ///
    /// # Errors
    /// A regression model, classes that differ from the model's, or a model
    /// that already decides by a threshold (one rule per model).
    pub fn with_costs(mut self, costs: &CostMatrix) -> Result<Model> {
        let Some(classes) = self.class_names() else {
            return Err(Error::input(
                "cost matrix",
                "the model predicts numbers; costs are for classifiers",
            ));
        };
        if matches!(self.decision, Some(DecisionRule::Threshold { .. })) {
            return Err(Error::option(
                "costs",
                "given",
                format!(
                    "the model already decides by a threshold chosen for {}; a model decides by one rule: leave out the threshold target or the costs",
                    match &self.decision {
                        Some(DecisionRule::Threshold { chosen, .. }) => chosen.target.to_string(),
                        _ => String::new(),
                    }
                ),
            ));
        }
        let m = costs.for_classes(classes)?;
        self.decision = Some(DecisionRule::Costs(m));
        Ok(self)
    }

    /// The model's decisions for raw feature rows: by its decision rule, or
    /// the most probable class when it has none.
    ///
    /// # Errors
    /// Wrong column count, or a regression model.
    pub fn decide(&self, x: ArrayView2<'_, f64>) -> Result<Decisions> {
        match &self.decision {
            Some(rule) => rule.decide(self.predict_probabilities(x)?.view(), &self.target_names),
            None => Ok(Decisions {
                names: self.target_names.clone(),
                chosen: self.predict_classes(x)?,
                expected_cost: None,
            }),
        }
    }

    /// Network outputs for raw (unscaled) feature rows: class probabilities
    /// or a logistic output for a classifier, values in the target's own
    /// units for regression (the target scaling undone). Missing (NaN) cells
    /// are filled first when the model was fitted with imputation.
    ///
    /// # Errors
    /// Wrong column count; a NaN the model cannot fill.
    pub fn predict(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        if let Some(t) = &self.temperature {
            let p = probabilities_at(
                self.network.output_sums(self.scaled(x)?.view())?.view(),
                self.network.head(),
                t.value,
            )?;
            // A logistic head's one output is the second class's probability.
            return Ok(if self.network.head() == Head::Logistic {
                p.slice(ndarray::s![.., 1..]).to_owned()
            } else {
                p
            });
        }
        let mut out = self.network.predict(self.scaled(x)?.view())?;
        if let Some(t) = &self.target_scaler {
            t.unscale_in_place(out.view_mut())?;
        }
        Ok(out)
    }

    /// Class probabilities (one column per class) for raw feature rows.
    ///
    /// # Errors
    /// Wrong column count, or a regression model.
    pub fn predict_probabilities(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        match &self.temperature {
            Some(t) => probabilities_at(
                self.network.output_sums(self.scaled(x)?.view())?.view(),
                self.network.head(),
                t.value,
            ),
            None => self.network.predict_probabilities(self.scaled(x)?.view()),
        }
    }

    /// Predicted class indices for raw feature rows.
    ///
    /// # Errors
    /// Wrong column count, or a regression model.
    pub fn predict_classes(&self, x: ArrayView2<'_, f64>) -> Result<Vec<usize>> {
        self.network.predict_classes(self.scaled(x)?.view())
    }

    /// Activations of hidden layer `layer` (from 1) for raw feature rows.
    ///
    /// # Errors
    /// Wrong column count or no such layer.
    pub fn hidden_activations(&self, x: ArrayView2<'_, f64>, layer: usize) -> Result<Array2<f64>> {
        self.network
            .hidden_activations(self.scaled(x)?.view(), layer)
    }

    /// A copy of `data` with its missing cells filled by the model's fill
    /// values (for charts and other uses that need every cell); the table
    /// itself when it has none.
    ///
    /// # Errors
    /// Missing cells and no imputer, or a width unlike the model's.
    pub fn filled<'d>(&self, data: &'d Dataset) -> Result<std::borrow::Cow<'d, Dataset>> {
        if data.missing_cells == 0 {
            return Ok(std::borrow::Cow::Borrowed(data));
        }
        let Some(imputer) = &self.imputer else {
            return Err(Error::input(
                format!("{}: filling missing cells", data.source),
                "the model was fitted without imputation, so it has no fill values",
            ));
        };
        let mut d = data.clone();
        imputer.impute_in_place(d.features.view_mut())?;
        d.missing_cells = 0;
        Ok(std::borrow::Cow::Owned(d))
    }

    /// Checks that a table's feature columns are this model's, in order.
    ///
    /// # Errors
    /// Lists the missing and unexpected names.
    pub fn check_features(&self, data: &Dataset) -> Result<()> {
        if data.feature_names == self.feature_names {
            return Ok(());
        }
        let missing: Vec<&str> = self
            .feature_names
            .iter()
            .filter(|n| !data.feature_names.contains(n))
            .map(String::as_str)
            .collect();
        let extra: Vec<&str> = data
            .feature_names
            .iter()
            .filter(|n| !self.feature_names.contains(n))
            .map(String::as_str)
            .collect();
        Err(Error::input(
            format!("{}: features", data.source),
            format!(
                "do not match the model's (missing: [{}]; unexpected: [{}]; the model expects, in order: {})",
                missing.join(", "),
                extra.join(", "),
                self.feature_names.join(", ")
            ),
        ))
    }
}

/// The usual caution, printed by every command whose output could drive a
/// decision (the demo prints its own, for its invented scenario).
pub(crate) const CAUTION: &str = "A model fitted here supports, and never replaces, qualified judgement, the applicable standards and local practice. Do not take a decision that matters on its output alone.";
