//! Nested cross-validation: an honest estimate of a tuned procedure.
//!
//! A sweep reports the best configuration's cross-validated score, but that
//! score was also used to choose the configuration, so it is biased upward
//! by the choice itself (G. C. Cawley & N. L. C. Talbot, "On over-fitting
//! in model selection and subsequent selection bias in performance
//! evaluation", JMLR 11, 2010). Nested cross-validation estimates the whole
//! procedure "sweep, then refit the winner": an outer loop of folds, and
//! inside each outer training set the entire sweep (its own inner folds),
//! whose winner, refitted on the outer training rows, is scored once on the
//! outer held-out rows (M. Stone, "Cross-validatory choice and assessment
//! of statistical predictions", JRSS B 36, 1974; S. Varma & R. Simon, "Bias
//! in error estimation when using cross-validation for model selection",
//! BMC Bioinformatics 7, 2006).
//!
//! **Draw order**: the outer fold plan and one seed per outer fold from the
//! caller's generator; each outer fold's sweep draws everything it needs
//! (inner folds, refit seed, random configurations) from its own seed, so
//! outer folds run in parallel and give the same numbers on any thread
//! count.

use super::cv::{
    summarise_folds, CrossValidation, CvOptions, FoldBaseline, FoldPlan, FoldResult, Scores,
};
use super::metrics::Metric;
use super::search::{Candidates, Search};
use super::sweep::{sweep_plan_checked, SweepPlan};
use crate::data::Dataset;
use crate::error::Result;
use crate::fit::FitOptions;
use crate::observe::{Event, Observer};
use crate::rng::seeded_rng;
use rand::RngCore;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// What the sweep inside one outer fold chose.
#[derive(Clone, Debug, PartialEq)]
pub struct NestedChoice {
    /// The outer fold (from 0).
    pub fold: usize,
    /// The winning configuration's name.
    pub configuration: String,
    /// Its inner cross-validated score (optimistic, as every winner's is).
    pub inner_score: f64,
}

/// The outcome of [`nested_cross_validate`].
#[derive(Clone, Debug, PartialEq)]
pub struct NestedCrossValidation {
    /// The tuned procedure's outer folds: each fold's scores on its
    /// held-out rows, which neither the sweep nor the refit saw, and every
    /// metric summarised with its interval.
    pub outer: CrossValidation,
    /// What each outer fold's sweep chose.
    pub choices: Vec<NestedChoice>,
    /// The metric the sweeps chose by.
    pub metric: Metric,
    /// How many configurations each sweep tried.
    pub configurations: usize,
}

impl NestedCrossValidation {
    /// The rows its scores come from: the outer folds' held-out rows.
    pub fn scored_rows(&self) -> crate::data::ScoredRows {
        crate::data::ScoredRows::OuterFold
    }

    /// How often each configuration won, most often first (ties: the
    /// earlier name).
    pub fn win_counts(&self) -> Vec<(String, usize)> {
        let mut counts: Vec<(String, usize)> = Vec::new();
        for c in &self.choices {
            match counts.iter_mut().find(|(n, _)| *n == c.configuration) {
                Some((_, k)) => *k += 1,
                None => counts.push((c.configuration.clone(), 1)),
            }
        }
        counts.sort_by(|a, b| b.1.cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        counts
    }
}

/// Nested cross-validation of "sweep `search` around `base`, choose by
/// `metric`, refit the winner" (see the module docs): `outer` folds around
/// sweeps with `inner` folds.
///
/// # Errors
/// Invalid options, counts or ranges (named); folds the table's classes
/// cannot fill; any fit's error, naming its outer fold.
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// use stratanet::validate::{nested_cross_validate, Grid};
/// let data = CsvOptions::new("verdict").drop(&["part_id"])
///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
/// let grid = Grid { hidden_layers: vec![vec![2], vec![6]], ..Grid::default() };
/// let small = CvOptions { folds: 3, ..Default::default() };
/// let nested = nested_cross_validate(&data, &FitOptions::default().epochs(20),
///     &grid.into(), &small, &small, Metric::Accuracy, &mut seeded_rng(1))?;
/// assert_eq!(nested.choices.len(), 3);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn nested_cross_validate<R: RngCore + ?Sized>(
    data: &Dataset,
    base: &FitOptions,
    search: &Search,
    outer: &CvOptions,
    inner: &CvOptions,
    metric: Metric,
    rng: &mut R,
) -> Result<NestedCrossValidation> {
    base.validate()?;
    search.validate()?;
    outer.validate()?;
    inner.validate().map_err(|e| e.context("inner folds"))?;
    if let Candidates::Grid(grid) = &search.candidates {
        for (name, o) in grid.configurations(base)? {
            o.validate()
                .map_err(|e| e.context(format!("sweep configuration \"{name}\"")))?;
        }
    }
    nested_cross_validate_checked(data, base, search, outer, inner, metric, rng)
}

/// [`nested_cross_validate`] with every option already validated.
pub(crate) fn nested_cross_validate_checked<R: RngCore + ?Sized>(
    data: &Dataset,
    base: &FitOptions,
    search: &Search,
    outer: &CvOptions,
    inner: &CvOptions,
    metric: Metric,
    rng: &mut R,
) -> Result<NestedCrossValidation> {
    let plan = FoldPlan::draw_checked(data, outer, rng)?;
    let observer = &base.training.observer;
    let finished = AtomicUsize::new(0);
    let quiet = FitOptions {
        training: base.training.without_observer(),
        ..base.clone()
    };
    let folds = plan.folds.len();
    let results: Vec<Result<(FoldResult, NestedChoice, usize)>> = (0..folds)
        .into_par_iter()
        .map(|k| {
            let fold = &plan.folds[k];
            let train = data.select(&fold.train);
            let test = data.select(&fold.test);
            let context = |e: crate::Error| e.context(format!("outer fold {}", k + 1));
            let mut fold_rng = seeded_rng(plan.seeds[k]);
            let sweep_plan =
                SweepPlan::new_checked(&train, &quiet, search, inner, metric, &mut fold_rng)
                    .map_err(context)?;
            let configurations = sweep_plan.configurations.len();
            let swept =
                sweep_plan_checked(&train, sweep_plan, &Observer::none()).map_err(context)?;
            let winner = &swept.table.rows[0];
            let (scores, predictions) = Scores::of(swept.best.model(), &test).map_err(context)?;
            let baseline = FoldBaseline::of(train.target(), test.target()).map_err(context)?;
            let result = FoldResult {
                baseline,
                index: k,
                seed: plan.seeds[k],
                train_rows: fold.train.len(),
                test_rows: fold.test.clone(),
                scores,
                predictions,
                report: swept.best.report().clone(),
                imputer: swept.best.model().imputer().cloned(),
                target_scaler: swept.best.model().target_scaler().cloned(),
                notes: swept.best.notes().to_vec(),
                warnings: swept.best.warnings().to_vec(),
                model: Some(swept.best.model().clone()),
            };
            let choice = NestedChoice {
                fold: k,
                configuration: winner.name.clone(),
                inner_score: winner.summary.mean,
            };
            let done = finished.fetch_add(1, Ordering::Relaxed) + 1;
            observer.notify(|| Event::FoldFinished {
                fold: k,
                folds,
                finished: done,
            });
            Ok((result, choice, configurations))
        })
        .collect();
    let mut fold_results = Vec::with_capacity(folds);
    let mut choices = Vec::with_capacity(folds);
    let mut configurations = 0;
    for r in results {
        let (result, choice, n) = r?;
        fold_results.push(result);
        choices.push(choice);
        configurations = n;
    }
    let summary = summarise_folds(&fold_results)?;
    Ok(NestedCrossValidation {
        outer: CrossValidation {
            options: quiet,
            cv: outer.clone(),
            n_rows: data.n_rows(),
            table_part: data.part(),
            class_names: data
                .class_names()
                .map(<[String]>::to_vec)
                .unwrap_or_default(),
            folds: fold_results,
            summary,
        },
        choices,
        metric,
        configurations,
    })
}
