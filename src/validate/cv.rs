//! Cross-validation without leaks, in parallel and bit-identical to a
//! sequential run.
//!
//! [`cross_validate`] draws, up front and in this order from the caller's
//! generator: the fold plan (stratified k-fold for classes, repeated when
//! asked; plain k-fold for numbers), then one seed per fold. Each fold then
//! depends only on its rows and its seed, so folds can run on any number of
//! threads in any order and give the same numbers. Inside a fold, [`fit`](crate::fit::fit)
//! sees only the fold's training rows: the validation split, the scaler and
//! early stopping are all fitted there, and the held-out rows are touched
//! only to be scored. (The one-hot level set is read from the whole table
//! when it is loaded; it carries no statistic of the target, and a level
//! absent from a fold's training rows is a column of zeros there.)
//!
//! Each metric is summarised over folds as mean, sample standard deviation
//! and a 95% interval that allows for the overlap of the folds' training
//! sets and stays inside the metric's range (the corrected resampled
//! variance of Nadeau & Bengio 2003, applied to repeated k-fold as Bouckaert
//! & Frank 2004; see [`Summary`] for the formula and the coverage check).

use super::metrics::{ClassificationMetrics, Metric, RegressionMetrics};
use super::stats::{corrected_resampled_t_test_named, ResampledTTest, Summary};
use crate::data::{
    kfold, repeated_stratified_folds, Dataset, Fold, Imputer, Scaler, ScoredRows, TablePart, Target,
};
use crate::error::{Error, Message, Result};
use crate::fit::{FitOptions, Model};
use crate::observe::{Event, Observer};
use crate::rng;
use crate::train::TrainingReport;
use ndarray::{Array2, ArrayView2};
use rand::RngCore;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// How to cross-validate.
#[derive(Clone, Debug, PartialEq)]
pub struct CvOptions {
    /// Folds per repeat, `k` (>= 2).
    pub folds: usize,
    /// Independent repeats of the k-fold plan (>= 1).
    pub repeats: usize,
    /// Run folds in parallel (the numbers are the same either way).
    pub parallel: bool,
}

/// The most fits one cross-validation may ask for (folds x repeats).
pub const MAX_FOLD_FITS: usize = 10_000;

impl CvOptions {
    /// Checks the counts without looking at data (the data-dependent check,
    /// folds against the smallest class, happens when folds are drawn).
    ///
    /// # Errors
    /// `folds < 2`, `repeats == 0`, or more than [`MAX_FOLD_FITS`] fits.
    pub fn validate(&self) -> Result<()> {
        if self.folds < 2 {
            return Err(Error::option("folds", self.folds, "must be at least 2"));
        }
        if self.repeats == 0 {
            return Err(Error::option("repeats", 0, "must be at least 1"));
        }
        if self.folds.saturating_mul(self.repeats) > MAX_FOLD_FITS {
            return Err(Error::option(
                "repeats",
                self.repeats,
                format!(
                    "asks for {} x {} fits, above the limit of {MAX_FOLD_FITS}; use fewer folds or repeats",
                    self.folds, self.repeats
                ),
            ));
        }
        Ok(())
    }
}

impl Default for CvOptions {
    fn default() -> Self {
        CvOptions {
            folds: 5,
            repeats: 1,
            parallel: true,
        }
    }
}

/// Scores of one set of predictions.
#[derive(Clone, Debug, PartialEq)]
pub enum Scores {
    /// A classifier's metrics.
    Classification(ClassificationMetrics),
    /// A regression model's metrics.
    Regression(RegressionMetrics),
}

impl Scores {
    /// Scores a model on a labelled table. A classifier with a decision rule
    /// that chooses among its classes is scored on the classes it chooses
    /// ([`Model::decide`]); otherwise on the most probable class.
    ///
    /// # Errors
    /// When the table's features or target do not fit the model.
    pub fn of(model: &Model, data: &Dataset) -> Result<(Scores, Array2<f64>)> {
        model.check_features(data)?;
        let predictions = match &data.target {
            Target::Classes { .. } => model.predict_probabilities(data.x())?,
            Target::Values { .. } => model.predict(data.x())?,
        };
        // A model whose decision rule chooses among its classes (a
        // threshold, or costs whose decisions are the classes) is scored on
        // the classes it would choose, not the most probable ones. Costs
        // with other decisions (say "inspect") leave the class metrics on
        // the most probable class; their cost is reported on its own.
        // The rule decides from the probabilities already computed (what
        // `Model::decide` would compute again).
        let decided = match (&data.target, model.decision_rule()) {
            (Target::Classes { .. }, Some(rule)) => {
                let d = rule.decide(predictions.view(), model.target_names())?;
                (d.names == model.target_names()).then_some(d.chosen)
            }
            _ => None,
        };
        let scores = match (&data.target, decided) {
            (Target::Classes { labels, names }, Some(chosen)) => Scores::Classification(
                ClassificationMetrics::from_probabilities_and_decisions(
                    labels,
                    predictions.view(),
                    &chosen,
                )?
                .with_class_names(names)?,
            ),
            _ => Scores::from_predictions(&data.target, predictions.view())?,
        };
        Ok((scores, predictions))
    }

    /// Scores predictions against a target: class probabilities (one column
    /// per class) for classes, values for numbers.
    ///
    /// # Errors
    /// Shapes that disagree, probabilities that are not a distribution.
    pub fn from_predictions(target: &Target, predictions: ArrayView2<'_, f64>) -> Result<Scores> {
        Ok(match target {
            Target::Classes { labels, names } => Scores::Classification(
                ClassificationMetrics::from_probabilities(labels, predictions)?
                    .with_class_names(names)?,
            ),
            Target::Values { values, .. } => {
                Scores::Regression(RegressionMetrics::from_arrays(values.view(), predictions)?)
            }
        })
    }

    /// The value of one metric (undefined values are 0 and carry a note).
    ///
    /// # Errors
    /// A metric that does not apply (e.g. R^2 for a classifier).
    pub fn value(&self, metric: Metric) -> Result<f64> {
        Ok(match self {
            Scores::Classification(m) => m.value(metric)?.value,
            Scores::Regression(m) => m.value(metric)?.value,
        })
    }

    /// Notes on undefined values.
    pub fn notes(&self) -> Vec<String> {
        match self {
            Scores::Classification(m) => m.note_lines(),
            Scores::Regression(m) => m.notes.iter().map(|n| n.to_string()).collect(),
        }
    }

    /// The metrics that apply to this kind of model, in display order.
    pub fn metrics(&self) -> Vec<Metric> {
        match self {
            Scores::Classification(_) => Metric::ALL
                .iter()
                .copied()
                .filter(|m| !m.is_regression())
                .collect(),
            Scores::Regression(_) => Metric::ALL
                .iter()
                .copied()
                .filter(|m| m.is_regression())
                .collect(),
        }
    }
}

/// One fold's outcome.
#[derive(Clone, Debug, PartialEq)]
pub struct FoldResult {
    /// The fold's index in the plan (from 0; repeat r's folds follow repeat r-1's).
    pub index: usize,
    /// The seed the fold's fit drew from.
    pub seed: u64,
    /// Number of rows the fold trained on (before its validation split).
    pub train_rows: usize,
    /// The held-out rows (indices into the table).
    pub test_rows: Vec<usize>,
    /// Scores on the held-out rows.
    pub scores: Scores,
    /// Predictions on the held-out rows: class probabilities or values.
    pub predictions: Array2<f64>,
    /// What the baseline predicts for every held-out row: the class shares
    /// of the fold's training rows, or their mean (see [`FoldBaseline`]).
    pub baseline: FoldBaseline,
    /// The fold's training history.
    pub report: TrainingReport,
    /// The model fitted on the fold's training rows (`None` for a result
    /// read back from a sweep's trial file, which keeps predictions but not
    /// the network).
    pub model: Option<Model>,
    /// The fill values the fold's fit learnt from its own training rows
    /// (a table with missing cells imputed).
    pub imputer: Option<Imputer>,
    /// The target scaler the fold's fit learnt from its own training rows
    /// (regression with the identity head).
    pub target_scaler: Option<Scaler>,
    /// What the fold's fit decided ([`Fitted::notes`](crate::fit::Fitted::notes)).
    pub notes: Vec<Message>,
    /// What the fold's fit flagged ([`Fitted::warnings`](crate::fit::Fitted::warnings)).
    pub warnings: Vec<Message>,
}

/// What a model is compared with in every fold: one prediction for every
/// row, whatever its inputs, learnt from the fold's training rows only.
///
/// ```text
/// classes   p_c = n_c / n, the training rows' class shares, for every row
///           (its accuracy is the majority class's share, its log-loss the
///            entropy of the shares on the held-out rows, its AUC 0.5)
/// numbers   the training rows' mean of each output (R^2 at most 0 on other rows)
/// ```
///
/// A model that does not beat this has learnt nothing usable from the
/// inputs (common practice, no source).
#[derive(Clone, Debug, PartialEq)]
pub struct FoldBaseline {
    /// The constant prediction: class shares, or output means.
    pub prediction: Vec<f64>,
    /// Its scores on the fold's held-out rows.
    pub scores: Scores,
}

impl FoldBaseline {
    /// The baseline learnt from `train` and scored on `test`.
    ///
    /// # Errors
    /// Targets of different kinds or widths.
    pub fn of(train: &Target, test: &Target) -> Result<FoldBaseline> {
        let prediction = match train {
            Target::Classes { labels, names } => {
                let mut shares = vec![0.0; names.len()];
                labels.iter().for_each(|&l| shares[l] += 1.0);
                shares.iter().map(|c| c / labels.len() as f64).collect()
            }
            Target::Values { values, .. } => values
                .columns()
                .into_iter()
                .map(|c| c.sum() / c.len() as f64)
                .collect(),
        };
        FoldBaseline::scored(prediction, test)
    }

    /// Scores a constant `prediction` on `test`.
    ///
    /// # Errors
    /// A prediction of the wrong width for the target.
    pub fn scored(prediction: Vec<f64>, test: &Target) -> Result<FoldBaseline> {
        let every_row =
            Array2::from_shape_fn((test.len(), prediction.len()), |(_, j)| prediction[j]);
        let scores = Scores::from_predictions(test, every_row.view())
            .map_err(|e| e.context("the baseline"))?;
        Ok(FoldBaseline { prediction, scores })
    }
}

/// One metric summarised over folds.
#[derive(Clone, Debug, PartialEq)]
pub struct MetricSummary {
    /// The metric.
    pub metric: Metric,
    /// Its value in each fold, in fold order.
    pub values: Vec<f64>,
    /// Mean, standard deviation and 95% interval.
    pub summary: Summary,
    /// The baseline's value in each fold (see [`FoldBaseline`]).
    pub baseline_values: Vec<f64>,
    /// The baseline's mean and interval over the same folds.
    pub baseline: Summary,
    /// The corrected resampled t-test of model against baseline on the
    /// same folds (differences model - baseline); `None` with one fold.
    pub against_baseline: Option<ResampledTTest>,
}

/// The outcome of [`cross_validate`].
#[derive(Clone, Debug, PartialEq)]
pub struct CrossValidation {
    /// What was validated.
    pub options: FitOptions,
    /// How.
    pub cv: CvOptions,
    /// Rows in the table.
    pub n_rows: usize,
    /// Which part of a larger table it was (the development subset of a
    /// hold-out split), so `n_rows` is never read as the whole file.
    pub table_part: Option<TablePart>,
    /// Class names (empty for regression).
    pub class_names: Vec<String>,
    /// Every fold's result, in plan order.
    pub folds: Vec<FoldResult>,
    /// Every applicable metric over the folds.
    pub summary: Vec<MetricSummary>,
}

impl CrossValidation {
    /// The summary of one metric.
    ///
    /// # Errors
    /// When the metric does not apply to this kind of model.
    pub fn metric(&self, metric: Metric) -> Result<&MetricSummary> {
        self.summary
            .iter()
            .find(|s| s.metric == metric)
            .ok_or_else(|| {
                Error::option(
                    "metric",
                    metric.name(),
                    format!(
                        "does not apply here; available: {}",
                        self.summary
                            .iter()
                            .map(|s| s.metric.name())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                )
            })
    }

    /// The rows its scores come from: out-of-fold.
    pub fn scored_rows(&self) -> ScoredRows {
        ScoredRows::OutOfFold
    }

    /// Mean training and held-out row counts per fold.
    pub fn mean_rows(&self) -> (f64, f64) {
        let k = self.folds.len() as f64;
        let train = self.folds.iter().map(|f| f.train_rows as f64).sum::<f64>() / k;
        let test = self
            .folds
            .iter()
            .map(|f| f.test_rows.len() as f64)
            .sum::<f64>()
            / k;
        (train, test)
    }

    /// What the folds' fits flagged (no better than the baseline, not
    /// converged), each prefixed with its fold.
    pub fn warnings(&self) -> Vec<Message> {
        self.folds
            .iter()
            .flat_map(|f| {
                f.warnings
                    .iter()
                    .map(move |w| w.prefixed(&format!("fold {}: ", f.index + 1)))
            })
            .collect()
    }

    /// What the folds' fits decided (early stopping switched off for few
    /// rows), each distinct sentence once, with the folds it applies to.
    pub fn fit_notes(&self) -> Vec<Message> {
        let mut out: Vec<(Message, Vec<usize>)> = Vec::new();
        for f in &self.folds {
            for n in &f.notes {
                // The target scaling is certain and documented; its numbers
                // differ by fold.
                if n.starts_with("the target is ") {
                    continue;
                }
                match out.iter_mut().find(|(m, _)| m == n) {
                    Some((_, folds)) => folds.push(f.index + 1),
                    None => out.push((n.clone(), vec![f.index + 1])),
                }
            }
        }
        out.into_iter()
            .map(|(n, folds)| {
                if folds.len() == self.folds.len() {
                    n.prefixed("every fold: ")
                } else {
                    let list: Vec<String> = folds.iter().map(usize::to_string).collect();
                    n.prefixed(&format!(
                        "fold{} {}: ",
                        if folds.len() == 1 { "" } else { "s" },
                        list.join(", ")
                    ))
                }
            })
            .collect()
    }

    /// Notes on undefined values in any fold, prefixed with the fold.
    pub fn notes(&self) -> Vec<String> {
        self.folds
            .iter()
            .flat_map(|f| {
                f.scores
                    .notes()
                    .into_iter()
                    .map(move |n| format!("fold {}: {n}", f.index + 1))
            })
            .collect()
    }
}

/// A fold plan and the seed of each fold, drawn from one generator.
#[derive(Clone, Debug, PartialEq)]
pub struct FoldPlan {
    /// The folds.
    pub folds: Vec<Fold>,
    /// One seed per fold.
    pub seeds: Vec<u64>,
}

impl FoldPlan {
    /// Draws the plan for `data` (stratified for classes).
    ///
    /// # Errors
    /// Invalid fold or repeat counts for the data (named, with the valid range).
    pub fn draw<R: RngCore + ?Sized>(
        data: &Dataset,
        cv: &CvOptions,
        rng: &mut R,
    ) -> Result<FoldPlan> {
        cv.validate()?;
        FoldPlan::draw_checked(data, cv, rng)
    }

    /// [`FoldPlan::draw`] with the counts already validated.
    pub(crate) fn draw_checked<R: RngCore + ?Sized>(
        data: &Dataset,
        cv: &CvOptions,
        rng: &mut R,
    ) -> Result<FoldPlan> {
        if let (Some(names), Some(_)) = (data.class_names(), data.labels()) {
            let counts = data.class_counts();
            let smallest = counts
                .iter()
                .enumerate()
                .filter(|&(_, &n)| n > 0)
                .min_by_key(|&(_, &n)| n);
            if let Some((c, &n)) = smallest {
                if n < cv.folds {
                    return Err(Error::option(
                        "folds",
                        cv.folds,
                        format!(
                            "must be at most {n}, the row count of the smallest class, \"{}\": stratified folds put every class in every fold; use at most {n} folds, or collect more rows of \"{}\"",
                            names[c], names[c]
                        ),
                    ));
                }
            }
        }
        let folds = match data.labels() {
            Some(labels) => repeated_stratified_folds(labels, cv.folds, cv.repeats, rng)?,
            None => {
                let mut all = Vec::new();
                for _ in 0..cv.repeats {
                    all.extend(kfold(data.n_rows(), cv.folds, rng)?);
                }
                all
            }
        };
        let seeds = folds.iter().map(|_| rng::child_seed(rng)).collect();
        Ok(FoldPlan { folds, seeds })
    }

    /// Checks a plan read from a file against a table of `rows` rows: one
    /// seed per fold, and in each fold sorted, distinct, in-range row
    /// indices with no row both fitted on and held out, and neither side
    /// empty. A plan drawn by [`FoldPlan::draw`] always passes.
    ///
    /// # Errors
    /// The first fold that breaks a rule, named.
    pub fn check(&self, rows: usize) -> Result<()> {
        if self.seeds.len() != self.folds.len() {
            return Err(Error::input(
                "fold plan",
                format!(
                    "has {} folds but {} seeds; write the plan again",
                    self.folds.len(),
                    self.seeds.len()
                ),
            ));
        }
        for (i, fold) in self.folds.iter().enumerate() {
            let bad = |why: &str| {
                Err(Error::input(
                    format!("fold plan, fold {i}"),
                    format!("{why}; write the plan again from the same table"),
                ))
            };
            for (side, list) in [("fitting", &fold.train), ("held-out", &fold.test)] {
                if list.is_empty() {
                    return bad(&format!("the {side} rows are empty"));
                }
                if list.windows(2).any(|w| w[0] >= w[1]) {
                    return bad(&format!("the {side} rows are not sorted and distinct"));
                }
                if list.last().is_some_and(|&r| r >= rows) {
                    return bad(&format!("a {side} row is beyond the table's {rows} rows"));
                }
            }
            let (mut a, mut b) = (fold.train.iter().peekable(), fold.test.iter().peekable());
            while let (Some(&&x), Some(&&y)) = (a.peek(), b.peek()) {
                match x.cmp(&y) {
                    std::cmp::Ordering::Less => {
                        a.next();
                    }
                    std::cmp::Ordering::Greater => {
                        b.next();
                    }
                    std::cmp::Ordering::Equal => {
                        return bad(&format!("row {x} is both fitted on and held out"));
                    }
                }
            }
        }
        Ok(())
    }
}

/// Cross-validates `options` on `data` (see the module docs).
///
/// # Errors
/// Invalid options; a fold whose training rows lack a class; divergence in any fold.
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// use stratanet::validate::{cross_validate, CvOptions, Metric};
/// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
/// let options = FitOptions::default().hidden(&[6]).epochs(30);
/// let cv = cross_validate(&data, &options, &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
/// assert_eq!(cv.folds.len(), 3);
/// assert!(cv.metric(Metric::Accuracy)?.summary.mean > 0.5);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn cross_validate<R: RngCore + ?Sized>(
    data: &Dataset,
    options: &FitOptions,
    cv: &CvOptions,
    rng: &mut R,
) -> Result<CrossValidation> {
    options.validate()?;
    cv.validate()?;
    cross_validate_checked(data, options, cv, rng)
}

/// [`cross_validate`] with options already validated.
pub(crate) fn cross_validate_checked<R: RngCore + ?Sized>(
    data: &Dataset,
    options: &FitOptions,
    cv: &CvOptions,
    rng: &mut R,
) -> Result<CrossValidation> {
    let plan = FoldPlan::draw_checked(data, cv, rng)?;
    run_plan(data, options, cv, &plan)
}

/// Cross-validates on a given plan (the same plan for several configurations
/// makes their fold scores paired).
///
/// # Errors
/// As [`cross_validate`].
pub fn cross_validate_with_plan(
    data: &Dataset,
    options: &FitOptions,
    cv: &CvOptions,
    plan: &FoldPlan,
) -> Result<CrossValidation> {
    options.validate()?;
    cv.validate()?;
    plan.check(data.n_rows())?;
    run_plan(data, options, cv, plan)
}

/// Runs every fold of a plan already checked against `data`.
pub(crate) fn run_plan(
    data: &Dataset,
    options: &FitOptions,
    cv: &CvOptions,
    plan: &FoldPlan,
) -> Result<CrossValidation> {
    let progress = FoldProgress::new(&options.training.observer, plan.folds.len());
    let run = |k: usize| -> Result<FoldResult> {
        let result = run_fold(data, options, plan, k)?;
        progress.fold_finished(k);
        Ok(result)
    };
    let results: Vec<Result<FoldResult>> = if cv.parallel {
        (0..plan.folds.len()).into_par_iter().map(run).collect()
    } else {
        (0..plan.folds.len()).map(run).collect()
    };
    let folds: Vec<FoldResult> = results.into_iter().collect::<Result<_>>()?;
    let summary = summarise_folds(&folds)?;
    Ok(CrossValidation {
        options: options.without_observer(),
        cv: cv.clone(),
        n_rows: data.n_rows(),
        table_part: data.part(),
        class_names: data
            .class_names()
            .map(<[String]>::to_vec)
            .unwrap_or_default(),
        folds,
        summary,
    })
}

/// Counts finished folds for [`Event::FoldFinished`].
struct FoldProgress<'a> {
    observer: &'a Observer,
    folds: usize,
    finished: AtomicUsize,
}

impl<'a> FoldProgress<'a> {
    fn new(observer: &'a Observer, folds: usize) -> FoldProgress<'a> {
        FoldProgress {
            observer,
            folds,
            finished: AtomicUsize::new(0),
        }
    }

    fn fold_finished(&self, fold: usize) {
        let finished = self.finished.fetch_add(1, Ordering::Relaxed) + 1;
        self.observer.notify(|| Event::FoldFinished {
            fold,
            folds: self.folds,
            finished,
        });
    }
}

/// Fits and scores fold `k` of `plan` (options already validated).
pub(crate) fn run_fold(
    data: &Dataset,
    options: &FitOptions,
    plan: &FoldPlan,
    k: usize,
) -> Result<FoldResult> {
    let fold = &plan.folds[k];
    let train = data.select(&fold.train);
    let test = data.select(&fold.test);
    if let (Some(all), Some(labels)) = (data.class_names(), train.labels()) {
        let mut seen = vec![false; all.len()];
        labels.iter().for_each(|&l| seen[l] = true);
        if let Some(missing) = seen.iter().position(|s| !s) {
            return Err(Error::input(
                format!("cross-validation fold {}", k + 1),
                format!(
                    "its training rows hold no row of class \"{}\"; use fewer folds (at most the smallest class count)",
                    all[missing]
                ),
            ));
        }
    }
    let fitted = crate::fit::fit_checked(
        std::borrow::Cow::Owned(train),
        options,
        plan.seeds[k],
        Some(k),
    )
    .map_err(|e| e.context(format!("cross-validation fold {}", k + 1)))?;
    let (scores, predictions) = Scores::of(fitted.model(), &test)?;
    let baseline = FoldBaseline::of(&data.target().select(&fold.train), test.target())?;
    Ok(FoldResult {
        baseline,
        index: k,
        seed: plan.seeds[k],
        train_rows: fold.train.len(),
        test_rows: fold.test.clone(),
        scores,
        predictions,
        report: fitted.report().clone(),
        imputer: fitted.model().imputer().cloned(),
        target_scaler: fitted.model().target_scaler().cloned(),
        notes: fitted.notes().to_vec(),
        warnings: fitted.warnings().to_vec(),
        model: Some(fitted.into_model()),
    })
}

pub(crate) fn summarise_folds(folds: &[FoldResult]) -> Result<Vec<MetricSummary>> {
    let Some(first) = folds.first() else {
        return Err(Error::input("cross-validation", "there are no folds"));
    };
    let k = folds.len() as f64;
    let n_train = folds.iter().map(|f| f.train_rows as f64).sum::<f64>() / k;
    let n_test = folds.iter().map(|f| f.test_rows.len() as f64).sum::<f64>() / k;
    first
        .scores
        .metrics()
        .into_iter()
        .map(|metric| {
            let values = folds
                .iter()
                .map(|f| f.scores.value(metric))
                .collect::<Result<Vec<f64>>>()?;
            let baseline_values = folds
                .iter()
                .map(|f| f.baseline.scores.value(metric))
                .collect::<Result<Vec<f64>>>()?;
            let against_baseline = against_baseline(
                &values,
                &baseline_values,
                (n_train, n_test),
                ("the model", "the baseline"),
            )?;
            Ok(MetricSummary {
                metric,
                summary: Summary::for_cross_validation(&values, n_train, n_test, metric.range())?,
                values,
                baseline: Summary::for_cross_validation(
                    &baseline_values,
                    n_train,
                    n_test,
                    metric.range(),
                )?,
                baseline_values,
                against_baseline,
            })
        })
        .collect()
}

/// The corrected resampled t-test of per-fold `model` scores against the
/// baseline's on the same folds (`None` with fewer than two folds);
/// `rows` are the mean training and held-out rows of a fold.
pub(crate) fn against_baseline(
    model: &[f64],
    baseline: &[f64],
    rows: (f64, f64),
    names: (&str, &str),
) -> Result<Option<ResampledTTest>> {
    let differences: Vec<f64> = model.iter().zip(baseline).map(|(m, b)| m - b).collect();
    if differences.len() < 2 {
        return Ok(None);
    }
    Ok(Some(corrected_resampled_t_test_named(
        &differences,
        rows.0.round().max(1.0) as usize,
        rows.1.round().max(1.0) as usize,
        names,
    )?))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::train::Loss;
    use crate::validate::stats::{IntervalMethod, Range};
    use ndarray::Array2;

    /// A regression fold: `train` fitted rows, `test` held-out rows with
    /// truth 0, 1, 2, ... and predictions off by `model` (the model) and
    /// `baseline` (the baseline), so that each's mean absolute error is
    /// that offset.
    fn fold(index: usize, train: usize, test: usize, model: f64, baseline: f64) -> FoldResult {
        let truth = Array2::from_shape_fn((test, 1), |(i, _)| i as f64);
        let scores = |offset: f64| {
            let predicted = truth.mapv(|t| t + offset);
            Scores::Regression(
                RegressionMetrics::from_arrays(truth.view(), predicted.view()).unwrap(),
            )
        };
        FoldResult {
            index,
            seed: 0,
            train_rows: train,
            test_rows: (0..test).collect(),
            scores: scores(model),
            predictions: truth.mapv(|t| t + model),
            baseline: FoldBaseline {
                prediction: vec![0.0],
                scores: scores(baseline),
            },
            report: TrainingReport {
                history: Vec::new(),
                epochs_run: 0,
                best_epoch: 0,
                best_validation_loss: None,
                stopped_early: false,
                loss: Loss::SquaredError,
                final_training_loss: 0.0,
            },
            model: None,
            imputer: None,
            target_scaler: None,
            notes: Vec::new(),
            warnings: Vec::new(),
        }
    }

    // Fold summaries by hand. Three folds fitted on 8, 9 and 10 rows and
    // holding out 4, 3 and 2: means 9 and 3, so n_test / n_train = 1/3.
    // Mean absolute errors 0.5, 1.0, 1.5 (model) and 1.0, 1.25, 2.0
    // (baseline). The interval (the corrected resampled variance of
    // C. Nadeau & Y. Bengio, "Inference for the generalization error",
    // Machine Learning 52, 2003; on the log scale for an error, as in
    // `Summary`'s docs): model mean 1, s = 0.5, se = sqrt((1/3 + 1/3) 0.25);
    // t_{0.975,2} = 4.302653 (printed 4.303 in standard t tables, e.g.
    // R. A. Fisher & F. Yates, "Statistical Tables for Biological,
    // Agricultural and Medical Research", 1963; with 2 degrees of freedom
    // the t distribution function is 1/2 + t / (2 sqrt(2 + t^2)), so the
    // quantile has the closed form (2p - 1) sqrt(2 / (4 p (1 - p)))). The
    // test of model against baseline: differences -0.5, -0.25, -0.5, mean
    // -5/12, variance 1/48, t = -3.5355339 (= -5 / sqrt 2), two-sided
    // p = 1 - |t| / sqrt(2 + t^2) = 0.0715233. The ends were computed from
    // these formulas outside this crate (double precision).
    #[test]
    fn fold_summaries_by_hand() {
        let folds = [
            fold(0, 8, 4, 0.5, 1.0),
            fold(1, 9, 3, 1.0, 1.25),
            fold(2, 10, 2, 1.5, 2.0),
        ];
        let summaries = summarise_folds(&folds).unwrap();
        let names: Vec<Metric> = summaries.iter().map(|s| s.metric).collect();
        assert_eq!(names, folds[0].scores.metrics());
        let mae = summaries
            .iter()
            .find(|s| s.metric == Metric::MeanAbsoluteError)
            .unwrap();
        assert_eq!(mae.values, [0.5, 1.0, 1.5]);
        assert_eq!(mae.baseline_values, [1.0, 1.25, 2.0]);
        let close = |a: f64, b: f64, what: &str| {
            assert!(
                (a - b).abs() <= 1e-12 * b.abs().max(1.0),
                "{what}: {a} vs {b}"
            );
        };
        let s = &mae.summary;
        close(s.mean, 1.0, "mean");
        close(s.std_dev, 0.5, "sd");
        close(s.ci_low, 0.172_639_336_389_071_03, "low");
        close(s.ci_high, 5.792_422_636_208_101_5, "high");
        assert!(matches!(
            s.method,
            IntervalMethod::CorrectedResampled { test_train_ratio, range: Range::NonNegative }
                if (test_train_ratio - 1.0 / 3.0).abs() < 1e-15
        ));
        let b = &mae.baseline;
        close(b.mean, 1.416_666_666_666_666_7, "baseline mean");
        close(b.ci_low, 0.389_753_431_674_585_8, "baseline low");
        close(b.ci_high, 5.149_266_898_873_873, "baseline high");
        let t = mae.against_baseline.as_ref().unwrap();
        close(t.mean_difference, -5.0 / 12.0, "difference");
        close(t.t, -3.535_533_905_932_737_8, "t");
        close(t.p_value, 0.071_523_309_114_740_7, "p");
        close(t.naive_t, -5.0, "naive t");
        assert_eq!(t.degrees_of_freedom, 2.0);
        // One fold: no test against the baseline. Two folds: a test with
        // 1 degree of freedom.
        assert!(against_baseline(&[0.5], &[1.0], (9.0, 3.0), ("a", "b"))
            .unwrap()
            .is_none());
        let two = against_baseline(&[0.5, 1.0], &[1.0, 1.0], (9.0, 3.0), ("a", "b"))
            .unwrap()
            .unwrap();
        assert_eq!((two.n_folds, two.degrees_of_freedom), (2, 1.0));
        assert!(summarise_folds(&[]).is_err());
    }

    /// A plan of two folds over 6 rows that keeps every rule.
    fn good_plan() -> FoldPlan {
        FoldPlan {
            folds: vec![
                Fold {
                    train: vec![0, 1, 2],
                    test: vec![3, 4, 5],
                },
                Fold {
                    train: vec![3, 4, 5],
                    test: vec![0, 1, 2],
                },
            ],
            seeds: vec![1, 2],
        }
    }

    // Each rule of a plan read from a file, broken in turn, is refused by
    // name; the rows' bounds are checked exactly (row 5 of 6 is the last).
    #[test]
    fn fold_plan_rules_are_each_refused() {
        good_plan().check(6).unwrap();
        let refused = |edit: &dyn Fn(&mut FoldPlan), rows: usize| {
            let mut plan = good_plan();
            edit(&mut plan);
            plan.check(rows).unwrap_err().to_string()
        };
        assert_eq!(
            refused(
                &|p| {
                    p.seeds.pop();
                },
                6
            ),
            "fold plan: has 2 folds but 1 seeds; write the plan again"
        );
        let tail = "; write the plan again from the same table";
        assert_eq!(
            refused(&|p| p.folds[1].train.clear(), 6),
            format!("fold plan, fold 1: the fitting rows are empty{tail}")
        );
        assert_eq!(
            refused(&|p| p.folds[0].test = vec![3, 3, 5], 6),
            format!("fold plan, fold 0: the held-out rows are not sorted and distinct{tail}")
        );
        assert_eq!(
            refused(&|p| p.folds[0].train = vec![2, 1], 6),
            format!("fold plan, fold 0: the fitting rows are not sorted and distinct{tail}")
        );
        assert_eq!(
            refused(&|_| {}, 5),
            format!("fold plan, fold 0: a held-out row is beyond the table's 5 rows{tail}")
        );
        assert_eq!(
            refused(&|p| p.folds[1].train = vec![3, 4, 6], 6),
            format!("fold plan, fold 1: a fitting row is beyond the table's 6 rows{tail}")
        );
        assert_eq!(
            refused(&|p| p.folds[0].train = vec![0, 1, 4], 6),
            format!("fold plan, fold 0: row 4 is both fitted on and held out{tail}")
        );
    }
}
