//! Sweeps: many configurations under the same cross-validation folds.
//!
//! A sweep is a [`SweepPlan`]: the configurations (a grid, or random draws;
//! see [`Search`]), one fold plan and one seed per fold, all drawn up front.
//! Its unit of work is a *trial*, one configuration on one fold; trials are
//! independent, so they run in parallel here, or in any grouping anywhere
//! else (see [`SweepPlan::run_trial`] and [`SweepPlan::merge`]), and give
//! the same table bit for bit. Every configuration sees the same folds and
//! the same fold seeds, so their fold scores are paired.
//!
//! With successive halving ([`Halving`]) a sweep runs in rounds: each round
//! is a plan of its own, and [`SweepPlan::next_round`] derives the next
//! round's plan from a round's table, so rounds can run here or as one array
//! job each.
//!
//! **Draw order** (part of the value-stability contract), from the
//! generator given to [`SweepPlan::new`]: the fold plan and the fold seeds,
//! then the refit seed, then (random search only) the configurations.

use super::cv::{run_fold, summarise_folds, CrossValidation, CvOptions, FoldPlan, FoldResult};
use super::metrics::Metric;
use super::search::{Candidates, Halving, Search};
use super::stats::Summary;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::{FitOptions, Fitted};
use crate::observe::Event;
use rand::RngCore;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// One configuration's line in the results table.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepRow {
    /// The configuration's index in the plan.
    pub index: usize,
    /// Its readable name.
    pub name: String,
    /// The sorting metric over folds.
    pub summary: Summary,
    /// Its cross-validation (every fold, every metric).
    pub cross_validation: CrossValidation,
}

/// A sweep's results, best first.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepTable {
    /// The metric the table is sorted by.
    pub metric: Metric,
    /// Rows, best mean first (ties: the earlier configuration first).
    pub rows: Vec<SweepRow>,
}

/// What one round of successive halving found.
#[derive(Clone, Debug, PartialEq)]
pub struct RoundSummary {
    /// The round (from 0).
    pub round: usize,
    /// Epochs each configuration trained in it.
    pub epochs: usize,
    /// Every configuration's name and mean score, best first.
    pub results: Vec<(String, f64)>,
    /// How many of them went on to the next round (the first ones).
    pub kept: usize,
}

/// Where a plan stands in successive halving.
#[derive(Clone, Debug, PartialEq)]
pub struct Round {
    /// This round (from 0).
    pub index: usize,
    /// Rounds in all.
    pub total: usize,
    /// The halving factor.
    pub halving: Halving,
    /// The full budget: epochs of the last round.
    pub full_epochs: usize,
    /// The rounds before this one.
    pub history: Vec<RoundSummary>,
}

/// A sweep's outcome: the table and the best configuration refitted on all rows.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// The results table (of the last round, with successive halving).
    pub table: SweepTable,
    /// Every earlier round of successive halving (empty without it).
    pub rounds: Vec<RoundSummary>,
    /// The best configuration, refitted on every row given to the sweep.
    pub best: Fitted,
}

/// One trial: a configuration on a fold.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Trial {
    /// The trial's index in the plan.
    pub index: usize,
    /// The configuration index.
    pub configuration: usize,
    /// The fold index.
    pub fold: usize,
}

/// The most trials (configurations x folds) one sweep plan may hold.
pub const MAX_TRIALS: usize = 1_000_000;

/// Everything fixed before a sweep runs.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepPlan {
    /// Named configurations.
    pub configurations: Vec<(String, FitOptions)>,
    /// The cross-validation options.
    pub cv: CvOptions,
    /// Folds and fold seeds, shared by every configuration.
    pub folds: FoldPlan,
    /// The sorting metric.
    pub metric: Metric,
    /// The seed for refitting the best configuration.
    pub refit_seed: u64,
    /// The table's fingerprint ([`Dataset::fingerprint`]), so trials run
    /// elsewhere can check they see the same data.
    pub table_fingerprint: String,
    /// With successive halving: this plan's round.
    pub round: Option<Round>,
}

impl SweepPlan {
    /// Draws a plan (see the module docs for the draw order); with
    /// successive halving, the plan of its first round.
    ///
    /// # Errors
    /// An empty grid, bad ranges, a metric that does not fit the target,
    /// invalid options or folds.
    pub fn new<R: RngCore + ?Sized>(
        data: &Dataset,
        base: &FitOptions,
        search: &Search,
        cv: &CvOptions,
        metric: Metric,
        rng: &mut R,
    ) -> Result<SweepPlan> {
        base.validate()?;
        search.validate()?;
        cv.validate()?;
        if let Candidates::Grid(grid) = &search.candidates {
            for (name, o) in grid.configurations(base)? {
                o.validate()
                    .map_err(|e| e.context(format!("sweep configuration \"{name}\"")))?;
            }
        }
        SweepPlan::new_checked(data, base, search, cv, metric, rng)
    }

    /// [`SweepPlan::new`] with the options, the search and the counts
    /// already validated.
    pub(crate) fn new_checked<R: RngCore + ?Sized>(
        data: &Dataset,
        base: &FitOptions,
        search: &Search,
        cv: &CvOptions,
        metric: Metric,
        rng: &mut R,
    ) -> Result<SweepPlan> {
        if metric.is_regression() == data.labels().is_some() {
            return Err(Error::option(
                "metric",
                metric,
                if data.labels().is_some() {
                    "is a regression metric, but the target holds classes"
                } else {
                    "is a classification metric, but the target holds numbers"
                },
            ));
        }
        let folds = FoldPlan::draw_checked(data, cv, rng)?;
        let refit_seed = crate::rng::child_seed(rng);
        let mut configurations = match &search.candidates {
            Candidates::Grid(grid) => grid.configurations(base)?,
            Candidates::Random(random) => random.configurations(base, rng),
        };
        if configurations.is_empty() {
            return Err(Error::option(
                "grid",
                "empty",
                "needs at least one configuration",
            ));
        }
        let round = search.halving.map(|halving| {
            let total = halving.rounds(configurations.len());
            let full_epochs = base.training.epochs;
            let epochs = halving.epochs(0, total, full_epochs);
            for (_, o) in configurations.iter_mut() {
                o.training.epochs = epochs;
            }
            Round {
                index: 0,
                total,
                halving,
                full_epochs,
                history: Vec::new(),
            }
        });
        Ok(SweepPlan {
            configurations,
            cv: cv.clone(),
            folds,
            metric,
            refit_seed,
            table_fingerprint: data.fingerprint(),
            round,
        })
    }

    /// The plan of the next round of successive halving, from this round's
    /// table: the best configurations (see [`Halving`]) with the next
    /// round's epochs, the same folds and seeds, and this round added to the
    /// history. `None` after the last round, or without halving.
    pub fn next_round(&self, table: &SweepTable) -> Option<SweepPlan> {
        let round = self.round.as_ref()?;
        if round.index + 1 >= round.total {
            return None;
        }
        let kept = round.halving.kept(table.rows.len());
        let epochs = round
            .halving
            .epochs(round.index + 1, round.total, round.full_epochs);
        let configurations = table.rows[..kept]
            .iter()
            .map(|r| {
                let (name, o) = &self.configurations[r.index];
                let mut o = o.clone();
                o.training.epochs = epochs;
                (name.clone(), o)
            })
            .collect();
        let mut history = round.history.clone();
        history.push(RoundSummary {
            round: round.index,
            epochs: self.configurations[0].1.training.epochs,
            results: table
                .rows
                .iter()
                .map(|r| (r.name.clone(), r.summary.mean))
                .collect(),
            kept,
        });
        Some(SweepPlan {
            configurations,
            round: Some(Round {
                index: round.index + 1,
                history,
                ..round.clone()
            }),
            ..self.clone()
        })
    }

    /// Checks a plan read from a file before anything runs: at least one
    /// configuration, every configuration's options valid, the CV counts
    /// valid, at most [`MAX_TRIALS`] trials, and one fold seed per fold.
    /// (The folds' rows are checked against the table by
    /// [`FoldPlan::check`] when a trial runs.)
    ///
    /// # Errors
    /// The first rule broken, named.
    pub fn check(&self) -> Result<()> {
        if self.configurations.is_empty() {
            return Err(Error::input(
                "sweep plan",
                "holds no configurations; write the plan again",
            ));
        }
        self.cv.validate()?;
        for (name, options) in &self.configurations {
            options
                .validate()
                .map_err(|e| e.context(format!("sweep plan, configuration {name}")))?;
        }
        let trials = self
            .configurations
            .len()
            .saturating_mul(self.folds.folds.len());
        if trials > MAX_TRIALS {
            return Err(Error::input(
                "sweep plan",
                format!("asks for {trials} trials, above the limit of {MAX_TRIALS}"),
            ));
        }
        if self.folds.seeds.len() != self.folds.folds.len() || self.folds.folds.is_empty() {
            return Err(Error::input(
                "sweep plan",
                "its fold plan is empty or has a seed count unlike its fold count; write the plan again",
            ));
        }
        Ok(())
    }

    /// Every trial, configuration-major.
    pub fn trials(&self) -> Vec<Trial> {
        let k = self.folds.folds.len();
        (0..self.configurations.len() * k)
            .map(|index| Trial {
                index,
                configuration: index / k,
                fold: index % k,
            })
            .collect()
    }

    /// Runs trial `index` alone.
    ///
    /// # Errors
    /// An index out of range, a different table than planned, or the fold's error.
    pub fn run_trial(&self, data: &Dataset, index: usize) -> Result<FoldResult> {
        let trials = self.configurations.len() * self.folds.folds.len();
        if index >= trials {
            return Err(Error::option(
                "trial",
                index,
                format!("must be below {trials}, the number of trials in the plan"),
            ));
        }
        if data.fingerprint() != self.table_fingerprint {
            return Err(Error::input(
                "sweep trial",
                "the table's fingerprint differs from the one in the plan; run every trial on the same file the plan was made from",
            ));
        }
        self.check()?;
        self.folds.check(data.n_rows())?;
        self.run_trial_checked(data, index)
    }

    /// Runs trial `index` of a plan already checked against `data`.
    fn run_trial_checked(&self, data: &Dataset, index: usize) -> Result<FoldResult> {
        let k = self.folds.folds.len();
        let (configuration, fold) = (index / k, index % k);
        let (_, options) = &self.configurations[configuration];
        run_fold(data, options, &self.folds, fold)
    }

    /// Builds the table from every trial's result (`results[i]` from trial `i`).
    ///
    /// # Errors
    /// A missing or extra trial.
    pub fn merge(
        &self,
        data_rows: usize,
        class_names: &[String],
        results: Vec<FoldResult>,
    ) -> Result<SweepTable> {
        let k = self.folds.folds.len();
        if results.len() != self.configurations.len() * k {
            return Err(Error::input(
                "merging sweep trials",
                format!(
                    "expected {} trial results, found {}",
                    self.configurations.len() * k,
                    results.len()
                ),
            ));
        }
        let mut rows = Vec::with_capacity(self.configurations.len());
        let mut results = results.into_iter();
        for (index, (name, options)) in self.configurations.iter().enumerate() {
            let folds: Vec<FoldResult> = results.by_ref().take(k).collect();
            let summary = summarise_folds(&folds)?;
            let cross_validation = CrossValidation {
                options: options.clone(),
                cv: self.cv.clone(),
                n_rows: data_rows,
                table_part: None,
                class_names: class_names.to_vec(),
                folds,
                summary,
            };
            let summary = cross_validation.metric(self.metric)?.summary.clone();
            rows.push(SweepRow {
                index,
                name: name.clone(),
                summary,
                cross_validation,
            });
        }
        let metric = self.metric;
        rows.sort_by(|a, b| {
            metric
                .best_first(a.summary.mean, b.summary.mean)
                .then(a.index.cmp(&b.index))
        });
        Ok(SweepTable { metric, rows })
    }
}

/// Runs a sweep here, in parallel over all trials, and refits the best
/// configuration on all of `data`.
///
/// # Errors
/// As [`SweepPlan::new`], or any trial's error.
pub fn sweep<R: RngCore + ?Sized>(
    data: &Dataset,
    base: &FitOptions,
    search: &Search,
    cv: &CvOptions,
    metric: Metric,
    rng: &mut R,
) -> Result<Sweep> {
    let plan = SweepPlan::new(data, base, search, cv, metric, rng)?;
    sweep_plan_checked(data, plan, &base.training.observer)
}

/// Runs every trial of a plan drawn from `data` here, in parallel, every
/// round of successive halving after it, and refits the best configuration
/// on all of `data`.
pub(crate) fn sweep_plan_checked(
    data: &Dataset,
    mut plan: SweepPlan,
    observer: &crate::observe::Observer,
) -> Result<Sweep> {
    plan.folds.check(data.n_rows())?;
    loop {
        let table = run_plan_trials(data, &plan, observer)?;
        match plan.next_round(&table) {
            Some(next) => plan = next,
            None => {
                let best = plan.refit_best(data, &table)?;
                let rounds = plan.round.map(|r| r.history).unwrap_or_default();
                return Ok(Sweep {
                    table,
                    rounds,
                    best,
                });
            }
        }
    }
}

/// Runs every trial of one plan here, in parallel, and merges them.
fn run_plan_trials(
    data: &Dataset,
    plan: &SweepPlan,
    observer: &crate::observe::Observer,
) -> Result<SweepTable> {
    let trials = plan.trials().len();
    let finished = AtomicUsize::new(0);
    let results: Vec<Result<FoldResult>> = (0..trials)
        .into_par_iter()
        .map(|t| {
            let r = plan.run_trial_checked(data, t);
            let done = finished.fetch_add(1, Ordering::Relaxed) + 1;
            observer.notify(|| Event::TrialFinished {
                trial: t,
                trials,
                finished: done,
            });
            r
        })
        .collect();
    let results = results.into_iter().collect::<Result<Vec<_>>>()?;
    plan.merge(data.n_rows(), data.class_names().unwrap_or(&[]), results)
}

impl SweepPlan {
    /// The table's best configuration refitted on every row of `data`,
    /// from the plan's refit seed; its provenance says how it was chosen.
    ///
    /// # Errors
    /// As [`fit`](crate::fit::fit).
    pub fn refit_best(&self, data: &Dataset, table: &SweepTable) -> Result<Fitted> {
        let best = &table.rows[0];
        let best_options = &self.configurations[best.index].1;
        let seed = crate::rng::child_seed(&mut crate::rng::seeded_rng(self.refit_seed));
        let mut fitted =
            crate::fit::fit_checked(std::borrow::Cow::Borrowed(data), best_options, seed, None)?;
        fitted.set_selected_by(format!(
            "sweep of {} configurations{}, best by {} ({:.4} over {} folds): \"{}\"",
            self.configurations.len(),
            match &self.round {
                Some(r) if r.total > 1 => format!(
                    " (last of {} rounds of successive halving, factor {})",
                    r.total, r.halving.eta
                ),
                _ => String::new(),
            },
            table.metric,
            best.summary.mean,
            self.folds.folds.len(),
            best.name
        ));
        Ok(fitted)
    }
}
