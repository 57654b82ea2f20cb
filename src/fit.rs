//! One call from a table to a fitted, scaled network: [`fit`].
//!
//! `fit` does, in order, with every random draw from one seed drawn from the
//! caller's generator (recorded as [`Model::seed`], so the fit can be
//! repeated from the seed alone):
//!
//! 1. split off validation rows (stratified by class; `validation_fraction`),
//! 2. fit the scaler on the training rows only and apply it to both parts,
//! 3. pick the head from the target (two classes: one logistic output;
//!    more: softmax; numbers: identity) unless one is given,
//! 4. train `restarts` networks from independent seeds (in parallel; each
//!    restart depends on its own seed only), and keep the one with the lowest
//!    validation loss (lowest final training loss without validation rows;
//!    the earliest restart on ties).

use crate::data::{split, ColumnEncoding, Dataset, Scaler, Scaling, Target};
use crate::error::{Error, Result};
use crate::network::{Activation, Head, Init, Network, Precision};
use crate::rng::{self, seeded_rng};
use crate::train::{self, EarlyStopping, Optimiser, TrainingOptions, TrainingReport};
use ndarray::{Array2, ArrayView2};
use rand::RngCore;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

/// Everything [`fit`] needs beyond the data.
///
/// ```
/// use stratanet::prelude::*;
/// let options = FitOptions::default().hidden(&[8, 4]).epochs(300).learning_rate(0.02);
/// assert_eq!(options.hidden_layers, vec![8, 4]);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct FitOptions {
    /// Widths of the hidden layers, input side first (empty: no hidden layer).
    pub hidden_layers: Vec<usize>,
    /// The hidden activation.
    pub activation: Activation,
    /// The output head; `None` picks it from the target.
    pub head: Option<Head>,
    /// How to draw starting weights.
    pub init: Init,
    /// Feature scaling, fitted on the training rows.
    pub scaling: Scaling,
    /// Share of rows held out for validation (early stopping), in `[0, 1)`.
    pub validation_fraction: f64,
    /// Networks trained from different seeds; the best is kept (>= 1).
    pub restarts: usize,
    /// The float type.
    pub precision: Precision,
    /// The training options.
    pub training: TrainingOptions,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            hidden_layers: vec![16],
            activation: Activation::Tanh,
            head: None,
            init: Init::Auto,
            scaling: Scaling::Standardise,
            validation_fraction: 0.2,
            restarts: 1,
            precision: Precision::F64,
            training: TrainingOptions::default(),
        }
    }
}

impl FitOptions {
    /// Sets the hidden layer widths.
    pub fn hidden(mut self, widths: &[usize]) -> Self {
        self.hidden_layers = widths.to_vec();
        self
    }
    /// Sets the hidden activation.
    pub fn activation(mut self, activation: Activation) -> Self {
        self.activation = activation;
        self
    }
    /// Sets the maximum number of epochs.
    pub fn epochs(mut self, epochs: usize) -> Self {
        self.training.epochs = epochs;
        self
    }
    /// Sets the learning rate.
    pub fn learning_rate(mut self, rate: f64) -> Self {
        self.training.learning_rate = rate;
        self
    }
    /// Sets the batch size.
    pub fn batch_size(mut self, rows: usize) -> Self {
        self.training.batch_size = rows;
        self
    }
    /// Sets the L2 weight decay.
    pub fn weight_decay(mut self, lambda: f64) -> Self {
        self.training.weight_decay = lambda;
        self
    }
    /// Sets the update rule.
    pub fn optimiser(mut self, optimiser: Optimiser) -> Self {
        self.training.optimiser = optimiser;
        self
    }
    /// Sets the number of restarts.
    pub fn restarts(mut self, restarts: usize) -> Self {
        self.restarts = restarts;
        self
    }
    /// Sets the validation share.
    pub fn validation_fraction(mut self, fraction: f64) -> Self {
        self.validation_fraction = fraction;
        self
    }
    /// Sets early stopping (`None` turns it off).
    pub fn early_stopping(mut self, early_stopping: Option<EarlyStopping>) -> Self {
        self.training.early_stopping = early_stopping;
        self
    }
    /// Sets the float type.
    pub fn precision(mut self, precision: Precision) -> Self {
        self.precision = precision;
        self
    }

    /// The network's layer sizes for `data`, and its head.
    ///
    /// # Errors
    /// A head that does not fit the target.
    pub fn architecture(&self, data: &Dataset) -> Result<(Vec<usize>, Head)> {
        let (head, outputs) = match (&data.target, self.head) {
            (Target::Classes { names, .. }, None) if names.len() == 2 => (Head::Logistic, 1),
            (Target::Classes { names, .. }, None) => (Head::Softmax, names.len()),
            (Target::Classes { names, .. }, Some(Head::Softmax)) => (Head::Softmax, names.len()),
            (Target::Classes { names, .. }, Some(Head::Logistic)) if names.len() == 2 => {
                (Head::Logistic, 1)
            }
            (Target::Values { values, .. }, None) => (Head::Identity, values.ncols()),
            (Target::Values { values, .. }, Some(h)) => (h, values.ncols()),
            (Target::Classes { names, .. }, Some(h)) => {
                return Err(Error::option(
                    "head",
                    h.name(),
                    format!(
                        "cannot predict {} classes; use softmax (or logistic for two classes)",
                        names.len()
                    ),
                ))
            }
        };
        let mut sizes = vec![data.n_features()];
        sizes.extend(&self.hidden_layers);
        sizes.push(outputs);
        Ok((sizes, head))
    }

    /// Checks the options that `fit` adds to the training options.
    ///
    /// # Errors
    /// The first invalid option, named.
    pub fn validate(&self) -> Result<()> {
        if !(0.0..1.0).contains(&self.validation_fraction) {
            return Err(Error::option(
                "validation_fraction",
                self.validation_fraction,
                "must be at least 0 and below 1",
            ));
        }
        if self.restarts == 0 {
            return Err(Error::option("restarts", 0, "must be at least 1"));
        }
        if self.restarts > 1000 {
            return Err(Error::option(
                "restarts",
                self.restarts,
                "must be at most 1000",
            ));
        }
        if let Some(i) = self.hidden_layers.iter().position(|&w| w == 0) {
            return Err(Error::option(
                "hidden_layers",
                format!("{:?}", self.hidden_layers),
                format!(
                    "layer {} has width 0; every hidden layer needs at least one unit",
                    i + 1
                ),
            ));
        }
        if self.training.early_stopping.is_some() && self.validation_fraction == 0.0 {
            return Err(Error::option(
                "validation_fraction",
                0,
                "early stopping needs validation rows: set validation_fraction above 0 (0.2 is usual) or turn early stopping off",
            ));
        }
        // Everything but the batch size against the row count, which needs data.
        self.training
            .validate(usize::MAX, self.validation_fraction > 0.0)
    }
}

/// A fitted network with everything needed to use it on new rows: the
/// scaler, the column encoding, the class names and how it was made.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Model {
    /// The trained network (works on scaled features).
    pub network: Network,
    /// The scaler fitted on the training rows.
    pub scaler: Scaler,
    /// How source columns become features.
    pub columns: Vec<ColumnEncoding>,
    /// Feature names in network input order.
    pub feature_names: Vec<String>,
    /// The target column's name.
    pub target_name: String,
    /// Class names (classification) or output names (regression).
    pub target_names: Vec<String>,
    /// Whether the target holds classes.
    pub is_classifier: bool,
    /// The options used.
    pub options: FitOptions,
    /// The seed all of the fit's draws came from.
    pub seed: u64,
    /// How and from what the model was made.
    pub provenance: Provenance,
}

/// Where a model came from: the library, the table and a summary of training.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Provenance {
    /// The stratanet version that trained the model.
    pub library_version: String,
    /// [`Dataset::fingerprint`] of the whole table given to `fit`.
    pub table_fingerprint: String,
    /// Rows in that table.
    pub table_rows: usize,
    /// Where the table came from (its path, or a description).
    pub table_source: String,
    /// Rows used for training and for validation.
    pub rows_used: (usize, usize),
    /// Epochs run by the kept restart.
    pub epochs_run: usize,
    /// The epoch whose weights were kept.
    pub best_epoch: usize,
    /// The best validation loss, when there were validation rows.
    pub best_validation_loss: Option<f64>,
    /// Whether early stopping ended training.
    pub stopped_early: bool,
    /// The final training loss of the kept restart.
    pub final_training_loss: f64,
}

impl Model {
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
        let z = self.scaler.transform(x)?;
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

    /// Network outputs for raw (unscaled) feature rows.
    ///
    /// # Errors
    /// Wrong column count.
    pub fn predict(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        self.network.predict(self.scaled(x)?.view())
    }

    /// Class probabilities (one column per class) for raw feature rows.
    ///
    /// # Errors
    /// Wrong column count, or a regression model.
    pub fn predict_probabilities(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        self.network.predict_probabilities(self.scaled(x)?.view())
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

/// A fitted model and how its training went.
#[derive(Clone, Debug, PartialEq)]
pub struct Fitted {
    /// The model kept.
    pub model: Model,
    /// The kept restart's training report.
    pub report: TrainingReport,
    /// Every restart's report, in restart order.
    pub restarts: Vec<TrainingReport>,
    /// Index of the kept restart.
    pub chosen_restart: usize,
    /// The rows used for training and for validation (indices into the table).
    pub split: split::Split,
}

/// Fits a network to `data` (see the module docs for the steps).
///
/// # Errors
/// Invalid options (named), too few rows for the split, divergence.
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// let text = "a,b,y\n0,0,n\n0,1,y\n1,0,y\n1,1,y\n0,0.1,n\n0.1,0,n\n0.9,1,y\n1,0.9,y\n";
/// let data = CsvOptions::new("y").read_str(text, "or.csv")?;
/// let options = FitOptions::default().hidden(&[]).validation_fraction(0.0)
///     .early_stopping(None).epochs(500).batch_size(8).learning_rate(0.1);
/// let fitted = fit(&data, &options, &mut seeded_rng(1))?;
/// assert_eq!(fitted.model.predict_classes(data.x())?, data.labels().unwrap());
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn fit<R: RngCore + ?Sized>(
    data: &Dataset,
    options: &FitOptions,
    rng: &mut R,
) -> Result<Fitted> {
    fit_with_seed(data, options, rng::child_seed(rng))
}

/// [`fit`] from a recorded seed.
///
/// # Errors
/// As [`fit`].
pub fn fit_with_seed(data: &Dataset, options: &FitOptions, seed: u64) -> Result<Fitted> {
    fit_table(std::borrow::Cow::Borrowed(data), options, seed)
}

/// [`fit_with_seed`] on a table the caller no longer needs (a fold's
/// fitting rows): with no validation rows it is scaled in place rather
/// than copied. The numbers are the same as [`fit_with_seed`]'s.
pub(crate) fn fit_owned(data: Dataset, options: &FitOptions, seed: u64) -> Result<Fitted> {
    fit_table(std::borrow::Cow::Owned(data), options, seed)
}

fn fit_table(
    data: std::borrow::Cow<'_, Dataset>,
    options: &FitOptions,
    seed: u64,
) -> Result<Fitted> {
    options.validate()?;
    let (sizes, head) = options.architecture(&data)?;
    let mut rng = seeded_rng(seed);
    let split = if options.validation_fraction > 0.0 {
        match data.labels() {
            Some(labels) => {
                split::stratified_split(labels, options.validation_fraction, 0.0, &mut rng)?
            }
            None => split::random_split(data.n_rows(), options.validation_fraction, 0.0, &mut rng)?,
        }
    } else {
        split::Split {
            train: (0..data.n_rows()).collect(),
            validation: Vec::new(),
            test: Vec::new(),
        }
    };
    let scaler = Scaler::fit(options.scaling, data.x(), Some(&split.train))?;
    let validation_part = if split.validation.is_empty() {
        None
    } else {
        let mut v = data.select(&split.validation);
        scaler.apply(v.features.view_mut())?;
        Some(v)
    };
    // What the model records of the table, taken before it may be scaled.
    let columns = data.columns.clone();
    let feature_names = data.feature_names.clone();
    let target_name = data.target_name.clone();
    let target_names = data.target.names().to_vec();
    let is_classifier = data.labels().is_some();
    let table_fingerprint = data.fingerprint();
    let table_rows = data.n_rows();
    let table_source = data.source.clone();
    let every_row_in_order = split.validation.is_empty()
        && split.train.len() == data.n_rows()
        && split.train.iter().enumerate().all(|(i, &r)| i == r);
    let mut train_part = match data {
        std::borrow::Cow::Owned(table) if every_row_in_order => table,
        table => table.select(&split.train),
    };
    scaler.apply(train_part.features.view_mut())?;
    options
        .training
        .validate(train_part.n_rows(), validation_part.is_some())?;
    let seeds: Vec<u64> = (0..options.restarts)
        .map(|_| rng::child_seed(&mut rng))
        .collect();
    let runs: Vec<Result<(Network, TrainingReport)>> = seeds
        .par_iter()
        .map(|&s| {
            let mut r = seeded_rng(s);
            let mut net = Network::new(&sizes, options.activation, head, options.init, &mut r)?
                .with_precision(options.precision);
            let report = train::train(
                &mut net,
                &train_part,
                validation_part.as_ref(),
                &options.training,
                &mut r,
            )?;
            Ok((net, report))
        })
        .collect();
    let runs: Vec<(Network, TrainingReport)> = runs.into_iter().collect::<Result<_>>()?;
    let score = |r: &TrainingReport| {
        r.best_validation_loss
            .unwrap_or_else(|| r.final_training_loss())
    };
    let mut chosen = 0;
    for (i, (_, r)) in runs.iter().enumerate() {
        if score(r) < score(&runs[chosen].1) {
            chosen = i;
        }
    }
    let restarts: Vec<TrainingReport> = runs.iter().map(|(_, r)| r.clone()).collect();
    let (network, report) = runs.into_iter().nth(chosen).expect("at least one restart");
    let model = Model {
        network,
        scaler,
        columns,
        feature_names,
        target_name,
        target_names,
        is_classifier,
        options: options.clone(),
        seed,
        provenance: Provenance {
            library_version: env!("CARGO_PKG_VERSION").to_string(),
            table_fingerprint,
            table_rows,
            table_source,
            rows_used: (split.train.len(), split.validation.len()),
            epochs_run: report.epochs_run,
            best_epoch: report.best_epoch,
            best_validation_loss: report.best_validation_loss,
            stopped_early: report.stopped_early,
            final_training_loss: report.final_training_loss(),
        },
    };
    Ok(Fitted {
        model,
        report,
        restarts,
        chosen_restart: chosen,
        split,
    })
}
