//! One call from a table to a fitted, scaled network: [`fit`].
//!
//! `fit` does, in order, with every random draw from one seed drawn from the
//! caller's generator (recorded as [`Model::seed`], so the fit can be
//! repeated from the seed alone):
//!
//! 1. settle the defaults that depend on the table: with the validation
//!    share left to its default and early stopping on, a table whose
//!    default validation rows would be fewer than
//!    [`FitOptions::MIN_VALIDATION_ROWS`] trains without early stopping on
//!    every row, and the fit says so ([`Fitted::notes`]);
//! 2. split off validation rows (stratified by class;
//!    [`FitOptions::validation_share`]),
//! 3. fill missing cells (a table read with missing cells imputed) with
//!    fill values learnt from the training rows only
//!    ([`crate::data::Imputer`]),
//! 4. fit the feature scaler on the training rows only and apply it to both
//!    parts, and for a numeric target with the identity head fit the target
//!    scaler ([`FitOptions::target_scaling`]) there too: the network learns
//!    the scaled target, its losses are in scaled units, and the model's
//!    predictions come back in the target's own units,
//! 5. pick the head from the target (two classes: one logistic output;
//!    more: softmax; numbers: identity) unless one is given,
//! 6. train `restarts` networks from independent seeds (in parallel; each
//!    restart depends on its own seed only), with the rows weighted by
//!    [`FitOptions::class_weights`], and keep the one with the lowest
//!    validation loss (lowest final training loss without validation rows;
//!    the earliest restart on ties),
//! 7. compare it with the [`Baseline`] that ignores the inputs (the
//!    training class shares, or the training mean) and check that its loss
//!    had settled ([`TrainingReport::convergence`]); what looks wrong is in
//!    [`Fitted::warnings`] and the model's provenance.

mod baseline;
pub mod decision;
mod model;
mod options;
mod provenance;
pub mod temperature;

pub use baseline::Baseline;
pub use decision::{
    choose_threshold, ChosenThreshold, CostMatrix, DecisionRule, Decisions, ThresholdTarget,
    MAX_COST_ENTRIES,
};
pub use model::Model;
pub(crate) use model::CAUTION;
pub use options::{Calibration, ClassWeights, FitOptions};
pub use provenance::Provenance;
pub use temperature::{fit_temperature, probabilities_at, Temperature, TEMPERATURE_BOUNDS};

use crate::data::{split, Dataset, Imputer, Scaler, Scaling, Target};
use crate::error::{opt, Message, Result};
use crate::network::{Head, Network};
use crate::observe::Event;
use crate::rng::{self, seeded_rng};
use crate::train::{self, Convergence, RowWeights, Scope, TrainingReport};
use rand::RngCore;
use rayon::prelude::*;
use std::borrow::Cow;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A fitted model and how its training went.
#[derive(Clone, Debug, PartialEq)]
pub struct Fitted {
    model: Model,
    report: TrainingReport,
    restarts: Vec<TrainingReport>,
    chosen_restart: usize,
    split: split::Split,
    baseline: Baseline,
    notes: Vec<Message>,
    warnings: Vec<Message>,
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

    /// The loss of predicting without the inputs, for comparison.
    pub fn baseline(&self) -> &Baseline {
        &self.baseline
    }

    /// What the fit decided about the table (early stopping switched off
    /// for a small table, the target scaled), one sentence each.
    pub fn notes(&self) -> &[Message] {
        &self.notes
    }

    /// What looks wrong with the fit (no better than the baseline, loss
    /// still falling at the last epoch), one sentence each.
    pub fn warnings(&self) -> &[Message] {
        &self.warnings
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

/// Validation rows the split would give `data` at `share` (per class,
/// `round(n_c share)`, as [`split::stratified_split`] deals them).
fn validation_rows(data: &Dataset, share: f64) -> usize {
    let round = |n: usize| (n as f64 * share).round() as usize;
    match data.labels() {
        Some(_) => data.class_counts().into_iter().map(round).sum(),
        None => round(data.n_rows()),
    }
}

/// The options in force for `data`: the defaults that depend on the table
/// settled (see the module docs), with a note for each change.
fn settle<'o>(
    options: &'o FitOptions,
    data: &Dataset,
    notes: &mut Vec<Message>,
) -> Cow<'o, FitOptions> {
    if options.validation_share.is_none() && options.training.early_stopping.is_some() {
        let v = validation_rows(data, FitOptions::VALIDATION_SHARE);
        if v < FitOptions::MIN_VALIDATION_ROWS {
            notes.push(Message::new(format!(
                "early stopping is off: the default validation share ({}) of {} rows gives {v} validation row{}, fewer than the {} early stopping needs; every row trains for all {} epochs (set {} to keep early stopping)",
                FitOptions::VALIDATION_SHARE,
                data.n_rows(),
                if v == 1 { "" } else { "s" },
                FitOptions::MIN_VALIDATION_ROWS,
                options.training.epochs,
                opt("validation_share")
            )));
            let mut o = options.clone();
            o.training.early_stopping = None;
            return Cow::Owned(o);
        }
    }
    Cow::Borrowed(options)
}

/// Each row's class weight (`None` when rows are not weighted), from the
/// class counts of the training rows `train`.
fn row_weights(options: &FitOptions, data: &Dataset, train: &[usize]) -> Result<Option<Vec<f64>>> {
    let (Some(labels), Some(names)) = (data.labels(), data.class_names()) else {
        if options.class_weights != ClassWeights::None {
            return Err(crate::Error::option(
                "class_weights",
                &options.class_weights,
                "has no effect on a numeric target (regression); leave it out",
            ));
        }
        return Ok(None);
    };
    let mut counts = vec![0usize; names.len()];
    train.iter().for_each(|&r| counts[labels[r]] += 1);
    Ok(options
        .class_weights
        .per_class(names, &counts)?
        .map(|w| labels.iter().map(|&l| w[l]).collect()))
}

/// [`fit_with_seed`] with options already validated (the front door did
/// it), on a table that may be owned: a fold's fitting rows, which with no
/// validation rows are scaled in place rather than copied (the numbers are
/// the same). `fold` names the cross-validation fold in progress events.
pub(crate) fn fit_checked(
    data: Cow<'_, Dataset>,
    options: &FitOptions,
    seed: u64,
    fold: Option<usize>,
) -> Result<Fitted> {
    let mut notes = Vec::new();
    let options = settle(options, &data, &mut notes);
    let options = options.as_ref();
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
    let all_weights = row_weights(options, &data, &split.train)?;
    let pick = |rows: &[usize]| {
        all_weights
            .as_ref()
            .map(|w| rows.iter().map(|&r| w[r]).collect::<Vec<f64>>())
    };
    let (train_weights, validation_weights) = (pick(&split.train), pick(&split.validation));
    if let (ClassWeights::Balanced, Some(names)) = (&options.class_weights, data.class_names()) {
        let counts = {
            let labels = data.labels().expect("classes");
            let mut c = vec![0usize; names.len()];
            split.train.iter().for_each(|&r| c[labels[r]] += 1);
            c
        };
        let w = options
            .class_weights
            .per_class(names, &counts)?
            .expect("balanced");
        notes.push(Message::new(format!(
            "balanced class weights n / (k n_c) from the {} training rows: {}",
            split.train.len(),
            names
                .iter()
                .zip(&w)
                .map(|(n, w)| format!("{n} {w:.4}"))
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    // A table read with missing cells imputed gets fill values even when
    // these training rows have no gap: a cross-validation fold's held-out
    // rows may have one.
    let imputes = data
        .report
        .as_deref()
        .is_some_and(|r| r.missing == crate::data::Missing::Impute);
    let imputer = if data.missing_cells > 0 || imputes {
        Some(Imputer::from_rows(
            &data.columns,
            data.x(),
            Some(&split.train),
        )?)
    } else {
        None
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
    let table_part = data.part();
    let ids = data
        .ids
        .as_ref()
        .map(|i| i.names().to_vec())
        .unwrap_or_default();
    let cell_rules = data
        .report
        .as_deref()
        .map(|r| crate::data::rows::CellRules::new(r.decimal, Some(&r.missing_markers)))
        .unwrap_or_else(|| crate::data::rows::CellRules::new(Default::default(), None));
    let mut validation_part = if split.validation.is_empty() {
        None
    } else {
        let mut v = data.select(&split.validation);
        if let Some(i) = &imputer {
            i.impute_in_place(v.features.view_mut())?;
        }
        Some(v)
    };
    let every_row_in_order = split.validation.is_empty()
        && split.train.len() == data.n_rows()
        && split.train.iter().enumerate().all(|(i, &r)| i == r);
    let mut train_part = match data {
        Cow::Owned(table) if every_row_in_order => table,
        table => table.select(&split.train),
    };
    if let Some(i) = &imputer {
        i.impute_in_place(train_part.features.view_mut())?;
    }
    let scaler = Scaler::from_rows(options.scaling, train_part.x(), None)?;
    scaler.scale_in_place(train_part.features.view_mut())?;
    if let Some(v) = validation_part.as_mut() {
        scaler.scale_in_place(v.features.view_mut())?;
    }
    // The target scaler: numbers predicted through the identity head.
    let target_scaler = match &mut train_part.target {
        Target::Values { values, .. }
            if head == Head::Identity && options.target_scaling != Scaling::None =>
        {
            let s = Scaler::from_rows(options.target_scaling, values.view(), None)?;
            s.scale_in_place(values.view_mut())?;
            if let Some(Target::Values { values, .. }) =
                validation_part.as_mut().map(|v| &mut v.target)
            {
                s.scale_in_place(values.view_mut())?;
            }
            Some(s)
        }
        _ => None,
    };
    if let Some(s) = &target_scaler {
        notes.push(Message::new(format!(
            "the target is {} on the {} training rows ({}); training and validation losses are in those units, predictions in the target's own",
            match s.kind() {
                Scaling::MinMax => "min-max scaled",
                _ => "standardised",
            },
            split.train.len(),
            target_names
                .iter()
                .zip(s.offsets().iter().zip(s.scales()))
                .map(|(n, (o, sc))| match s.kind() {
                    Scaling::MinMax => format!("{n}: minimum {o:.6}, range {sc:.6}"),
                    _ => format!("{n}: mean {o:.6}, standard deviation {sc:.6}"),
                })
                .collect::<Vec<_>>()
                .join("; ")
        )));
    }
    let loss = options.training.loss_for(head)?;
    let baseline = Baseline::of(
        head,
        loss,
        &train_part.target,
        validation_part.as_ref().map(|v| &v.target),
        train_weights.as_deref(),
        validation_weights.as_deref(),
        target_scaler.is_some(),
    );
    let seeds: Vec<u64> = (0..options.restarts)
        .map(|_| rng::child_seed(&mut rng))
        .collect();
    let finished = AtomicUsize::new(0);
    let weights = RowWeights {
        train: train_weights.as_deref(),
        validation: validation_weights.as_deref(),
    };
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
                weights,
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
    let (temperature, decision) = choose_on_validation_rows(
        &network,
        validation_part.as_ref(),
        options,
        &target_names,
        &mut notes,
    )?;
    let warnings = fit_warnings(&report, &baseline, options);
    let model = Model {
        network,
        scaler,
        imputer,
        target_scaler,
        columns,
        feature_names,
        target_name,
        target_names,
        is_classifier,
        ids,
        cell_rules,
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
            baseline_training_loss: baseline.training_loss,
            baseline_validation_loss: baseline.validation_loss,
            warnings: warnings.iter().map(ToString::to_string).collect(),
            fused_multiply_add: options
                .training
                .arithmetic
                .is_fast()
                .then(crate::network::fast_mode_fuses),
            table_part,
        },
        temperature,
        decision,
    };
    Ok(Fitted {
        model,
        report,
        restarts,
        chosen_restart: chosen,
        split,
        baseline,
        notes,
        warnings,
    })
}

/// The temperature ([`FitOptions::calibration`]) and the threshold
/// ([`FitOptions::threshold_target`]) fitted on the validation rows
/// `validation` (scaled) of the kept network, each with a note.
fn choose_on_validation_rows(
    network: &Network,
    validation: Option<&Dataset>,
    options: &FitOptions,
    classes: &[String],
    notes: &mut Vec<Message>,
) -> Result<(Option<Temperature>, Option<DecisionRule>)> {
    let calibrate = options.calibration == Calibration::Temperature;
    if !calibrate && options.threshold_target.is_none() {
        return Ok((None, None));
    }
    let what = if calibrate {
        crate::error::opt_is("calibration", "temperature")
    } else {
        "a threshold target".to_string()
    };
    let Some(v) = validation else {
        return Err(crate::Error::option(
            "validation_share",
            options.validation_share_or_default(),
            format!(
                "{what} is fitted on validation rows, and this fit has none (a small table switches early stopping and its validation rows off); set {} above 0",
                opt("validation_share")
            ),
        ));
    };
    let Some(labels) = v.labels() else {
        return Err(crate::Error::input(
            v.source(),
            format!("{what} is for classifiers; the target holds numbers"),
        ));
    };
    let head = network.head();
    let sums = network.output_sums(v.x())?;
    let temperature = if calibrate {
        let t = fit_temperature(sums.view(), labels, head)?;
        notes.push(Message::new(format!(
            "temperature scaling: T = {:.4} fitted on the {} validation rows (their log-loss {:.4} at T = 1, {:.4} at T){}",
            t.value,
            t.rows,
            t.log_loss_before,
            t.log_loss_after,
            t.note.as_deref().map_or(String::new(), |n| format!("; {n}"))
        )));
        Some(t)
    } else {
        None
    };
    let Some(target) = options.threshold_target else {
        return Ok((temperature, None));
    };
    let flag = match target {
        ThresholdTarget::Recall(_) => "target_recall",
        ThresholdTarget::Precision(_) => "target_precision",
    };
    if classes.len() != 2 {
        return Err(crate::Error::option(
            flag,
            match target {
                ThresholdTarget::Recall(v) | ThresholdTarget::Precision(v) => v,
            },
            format!(
                "a threshold is for two classes; this target has {} ({}): use {} for more classes",
                classes.len(),
                classes.join(", "),
                opt("costs")
            ),
        ));
    }
    let positive = match &options.positive_class {
        Some(name) => classes.iter().position(|c| c == name).ok_or_else(|| {
            crate::Error::option(
                "positive_class",
                name,
                format!(
                    "is not a class of the target; give one of {}",
                    classes.join(", ")
                ),
            )
        })?,
        None => {
            notes.push(Message::new(format!(
                "the positive class for {} is \"{}\", the second of the sorted classes ({}); set {} to choose",
                opt(flag),
                classes[1],
                classes.join(", "),
                opt("positive_class")
            )));
            1
        }
    };
    let p = probabilities_at(
        sums.view(),
        head,
        temperature.as_ref().map_or(1.0, |t| t.value),
    )?;
    let scores: Vec<f64> = p.column(positive).to_vec();
    let truth: Vec<bool> = labels.iter().map(|&l| l == positive).collect();
    let chosen = choose_threshold(&scores, &truth, target)
        .map_err(|e| e.context(format!("{} on the validation rows", opt(flag))))?;
    let rule = DecisionRule::Threshold { positive, chosen };
    notes.push(Message::new(format!(
        "decisions by {}",
        rule.describe(classes)
    )));
    Ok((temperature, Some(rule)))
}

/// What looks wrong with a finished fit: no better than the baseline, or
/// the loss still falling at the last epoch.
fn fit_warnings(
    report: &TrainingReport,
    baseline: &Baseline,
    options: &FitOptions,
) -> Vec<Message> {
    let mut w = Vec::new();
    let loss_name = match report.loss {
        crate::train::Loss::SquaredError => "half the squared error",
        crate::train::Loss::CrossEntropy => "cross-entropy",
    };
    match (report.best_validation_loss, baseline.validation_loss) {
        (Some(v), Some(b)) if v >= b => w.push(format!(
            "the validation loss ({v:.5}, {loss_name}) is no better than the baseline's ({b:.5}, {}): the network learnt nothing the inputs add; try a smaller {}, more epochs, or check the columns",
            baseline.description,
            opt("learning_rate")
        )),
        (None, _) => {
            if let Some(b) = baseline.training_loss.filter(|&b| report.final_training_loss >= b) {
                w.push(format!(
                    "the final training loss ({:.5}, {loss_name}) is no better than the baseline's ({b:.5}, {}): the network learnt nothing the inputs add; try a smaller {}, more epochs, or check the columns",
                    report.final_training_loss,
                    baseline.description,
                    opt("learning_rate")
                ));
            }
        }
        _ => {}
    }
    let early = options.training.early_stopping.is_some();
    match report.convergence(early) {
        Convergence::StillFalling { drop, window } => w.push(format!(
            "not converged: the {} loss fell by {:.2}% over the last {window} epoch{} of {}; give more {} (or a larger {})",
            if early { "validation" } else { "training" },
            100.0 * drop,
            if window == 1 { "" } else { "s" },
            report.epochs_run,
            opt("epochs"),
            opt("learning_rate")
        )),
        Convergence::SingleEpoch => w.push(format!(
            "not converged: one epoch cannot show that the loss settled; give more {}",
            opt("epochs")
        )),
        Convergence::Converged | Convergence::Unknown => {}
    }
    w.into_iter().map(Message::new).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::train::{EpochRecord, Loss};

    fn report(validation: &[f64], stopped_early: bool) -> TrainingReport {
        let history: Vec<EpochRecord> = validation
            .iter()
            .enumerate()
            .map(|(i, &v)| EpochRecord {
                epoch: i + 1,
                training_loss: v,
                validation_loss: Some(v),
                validation_accuracy: None,
                learning_rate: 50.0,
                elapsed_seconds: 0.0,
            })
            .collect();
        TrainingReport {
            epochs_run: history.len(),
            best_epoch: history.len(),
            best_validation_loss: validation.iter().copied().reduce(f64::min),
            stopped_early,
            loss: Loss::CrossEntropy,
            final_training_loss: *validation.last().unwrap(),
            history,
        }
    }

    // The case seen with a learning rate of 50: a validation loss of 182
    // against 1.79 for predicting the class shares.
    #[test]
    fn a_fit_no_better_than_its_baseline_is_flagged() {
        let baseline = Baseline {
            description: "predicting the training class shares for every row".into(),
            training_loss: Some(1.8),
            validation_loss: Some(1.79),
        };
        let w = fit_warnings(
            &report(&[190.0, 182.0, 185.0], true),
            &baseline,
            &FitOptions::default(),
        );
        assert_eq!(
            w.iter().map(ToString::to_string).collect::<Vec<_>>(),
            ["the validation loss (182.00000, cross-entropy) is no better than the baseline's (1.79000, predicting the training class shares for every row): the network learnt nothing the inputs add; try a smaller learning_rate, more epochs, or check the columns"]
        );
    }

    // The rule of TrainingReport::convergence: over E = 100 epochs the
    // window is 10; a drop of 1% over it is "still falling", of 0.05% not.
    #[test]
    fn a_loss_still_falling_at_the_end_is_not_converged() {
        let falling: Vec<f64> = (0..100).map(|e| 1.0 - 0.001 * e as f64).collect();
        let r = report(&falling, false);
        assert!(matches!(
            r.convergence(true),
            Convergence::StillFalling { window: 10, .. }
        ));
        let w = fit_warnings(
            &r,
            &Baseline {
                description: String::new(),
                training_loss: None,
                validation_loss: None,
            },
            &FitOptions::default(),
        );
        assert_eq!(
            w[0].to_string(),
            "not converged: the validation loss fell by 1.10% over the last 10 epochs of 100; give more epochs (or a larger learning_rate)"
        );
        let flat: Vec<f64> = (0..100).map(|e| 1.0 - 0.00005 * e as f64).collect();
        assert_eq!(
            report(&flat, false).convergence(true),
            Convergence::Converged
        );
        assert_eq!(
            report(&falling, true).convergence(true),
            Convergence::Converged
        );
        assert_eq!(
            report(&[1.0], false).convergence(true),
            Convergence::SingleEpoch
        );
    }
}
