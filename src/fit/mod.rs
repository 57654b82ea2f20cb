//! One call from a table to a fitted, scaled network: [`fit`].
//!
//! `fit` does, in order, with every random draw from one seed drawn from the
//! caller's generator (recorded as [`Model::seed`], so the fit can be
//! repeated from the seed alone):
//!
//! 1. split off validation rows (stratified by class;
//!    [`FitOptions::validation_share`]),
//! 2. fit the scaler on the training rows only and apply it to both parts,
//! 3. pick the head from the target (two classes: one logistic output;
//!    more: softmax; numbers: identity) unless one is given,
//! 4. train `restarts` networks from independent seeds (in parallel; each
//!    restart depends on its own seed only), and keep the one with the lowest
//!    validation loss (lowest final training loss without validation rows;
//!    the earliest restart on ties).

mod decision;
mod model;
mod options;
mod provenance;
mod temperature;

pub use decision::{
    choose_threshold, ChosenThreshold, CostMatrix, ThresholdTarget, MAX_COST_ENTRIES,
};
pub use model::Model;
pub(crate) use model::CAUTION;
pub use options::FitOptions;
pub use provenance::Provenance;
pub use temperature::{fit_temperature, probabilities_at, Temperature, TEMPERATURE_BOUNDS};

use crate::data::{split, Dataset, Scaler};
use crate::error::Result;
use crate::network::Network;
use crate::observe::Event;
use crate::rng::{self, seeded_rng};
use crate::train::{self, Scope, TrainingReport};
use rand::RngCore;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A fitted model and how its training went.
#[derive(Clone, Debug, PartialEq)]
pub struct Fitted {
    model: Model,
    report: TrainingReport,
    restarts: Vec<TrainingReport>,
    chosen_restart: usize,
    split: split::Split,
}

impl Fitted {
    /// The model kept.
    pub fn model(&self) -> &Model {
        &self.model
    }

    /// The model kept, taken out of the result.
    pub fn into_model(self) -> Model {
        self.model
    }

    /// The kept restart's training report.
    pub fn report(&self) -> &TrainingReport {
        &self.report
    }

    /// Every restart's training report, in restart order.
    pub fn restarts(&self) -> &[TrainingReport] {
        &self.restarts
    }

    /// Which restart was kept (from 0): the lowest validation loss (the
    /// lowest final training loss without validation rows), the earliest on
    /// ties.
    pub fn chosen_restart(&self) -> usize {
        self.chosen_restart
    }

    /// Records how a sweep chose the options (in the model's provenance).
    pub(crate) fn set_selected_by(&mut self, how: String) {
        self.model.provenance.selected_by = Some(how);
    }

    /// The rows trained on and the validation rows (indices into the table
    /// given to [`fit`]; the validation rows chose the stopping epoch and
    /// the restart, so scores on them are not fresh).
    pub fn split(&self) -> &split::Split {
        &self.split
    }
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
/// let options = FitOptions::default().hidden(&[])
///     .early_stopping(None).epochs(500).learning_rate(0.1);
/// let fitted = fit(&data, &options, &mut seeded_rng(1))?;
/// assert_eq!(fitted.model().predict_classes(data.x())?, data.labels().unwrap());
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn fit<R: RngCore + ?Sized>(
    data: &Dataset,
    options: &FitOptions,
    rng: &mut R,
) -> Result<Fitted> {
    fit_with_seed(data, options, rng::child_seed(rng))
}

/// [`fit`] from a recorded seed: the seed a [`fit`] drew is
/// [`Model::seed`], so the same table, options and seed repeat a fit bit
/// for bit.
///
/// # Errors
/// As [`fit`].
pub fn fit_with_seed(data: &Dataset, options: &FitOptions, seed: u64) -> Result<Fitted> {
    options.validate()?;
    fit_checked(std::borrow::Cow::Borrowed(data), options, seed, None)
}

/// [`fit_with_seed`] with options already validated (the front door did
/// it), on a table that may be owned: a fold's fitting rows, which with no
/// validation rows are scaled in place rather than copied (the numbers are
/// the same). `fold` names the cross-validation fold in progress events.
pub(crate) fn fit_checked(
    data: std::borrow::Cow<'_, Dataset>,
    options: &FitOptions,
    seed: u64,
    fold: Option<usize>,
) -> Result<Fitted> {
    let (sizes, head) = options.architecture(&data)?;
    let mut rng = seeded_rng(seed);
    let share = options.validation_share_or_default();
    let split = if share > 0.0 {
        match data.labels() {
            Some(labels) => split::stratified_split(labels, share, 0.0, &mut rng)?,
            None => split::random_split(data.n_rows(), share, 0.0, &mut rng)?,
        }
    } else {
        split::Split {
            train: (0..data.n_rows()).collect(),
            validation: Vec::new(),
            test: Vec::new(),
        }
    };
    let scaler = Scaler::from_rows(options.scaling, data.x(), Some(&split.train))?;
    let validation_part = if split.validation.is_empty() {
        None
    } else {
        let mut v = data.select(&split.validation);
        scaler.scale_in_place(v.features.view_mut())?;
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
    scaler.scale_in_place(train_part.features.view_mut())?;
    let seeds: Vec<u64> = (0..options.restarts)
        .map(|_| rng::child_seed(&mut rng))
        .collect();
    let finished = AtomicUsize::new(0);
    let runs: Vec<Result<(Network, TrainingReport)>> = seeds
        .par_iter()
        .enumerate()
        .map(|(restart, &s)| {
            let mut r = seeded_rng(s);
            let mut net = Network::new(&sizes, options.activation, head, options.init, &mut r)?
                .with_precision(options.precision);
            let report = train::train_checked(
                &mut net,
                &train_part,
                validation_part.as_ref(),
                &options.training,
                Scope { fold, restart },
                &mut r,
            )?;
            let done = finished.fetch_add(1, Ordering::Relaxed) + 1;
            options.training.observer.notify(|| Event::RestartFinished {
                fold,
                restart,
                restarts: options.restarts,
                finished: done,
            });
            Ok((net, report))
        })
        .collect();
    let runs: Vec<(Network, TrainingReport)> = runs.into_iter().collect::<Result<_>>()?;
    let score = |r: &TrainingReport| r.best_validation_loss.unwrap_or(r.final_training_loss);
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
        options: options.without_observer(),
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
            final_training_loss: report.final_training_loss,
            selected_by: None,
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
