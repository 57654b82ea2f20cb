//! Sweeps: a grid of configurations under the same cross-validation folds.
//!
//! A sweep is a [`SweepPlan`]: the configurations, one fold plan and one
//! seed per fold, all drawn up front. Its unit of work is a *trial*, one
//! configuration on one fold; trials are independent, so they run in
//! parallel here, or one by one anywhere else (see [`SweepPlan::run_trial`]
//! and [`SweepPlan::merge`]), and give the same table bit for bit. Every
//! configuration sees the same folds and the same fold seeds, so their fold
//! scores are paired.

use super::cv::{run_fold, summarise_folds, CrossValidation, CvOptions, FoldPlan, FoldResult};
use super::metrics::Metric;
use super::stats::Summary;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::{FitOptions, Fitted};
use crate::network::Activation;
use crate::observe::Event;
use rand::RngCore;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Values to try for each knob; an empty list keeps the base value.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Grid {
    /// Hidden layer widths to try.
    pub hidden_layers: Vec<Vec<usize>>,
    /// Hidden activations to try.
    pub activations: Vec<Activation>,
    /// Learning rates to try.
    pub learning_rates: Vec<f64>,
    /// Batch sizes to try.
    pub batch_sizes: Vec<crate::train::BatchSize>,
    /// Weight decays to try.
    pub weight_decays: Vec<f64>,
}

impl Grid {
    /// Every combination, each with a readable name, in a fixed order
    /// (hidden layers slowest, weight decay fastest).
    ///
    /// # Errors
    /// When the grid holds more than 10,000 configurations.
    pub fn configurations(&self, base: &FitOptions) -> Result<Vec<(String, FitOptions)>> {
        fn or_base<T: Clone>(values: &[T], base: T) -> (Vec<T>, bool) {
            if values.is_empty() {
                (vec![base], false)
            } else {
                (values.to_vec(), true)
            }
        }
        let (hidden, vary_h) = or_base(&self.hidden_layers, base.hidden_layers.clone());
        let (acts, vary_a) = or_base(&self.activations, base.activation);
        let (rates, vary_r) = or_base(&self.learning_rates, base.training.learning_rate);
        let (batches, vary_b) = match self.batch_sizes.is_empty() {
            true => (vec![base.training.batch_size], false),
            false => (self.batch_sizes.iter().map(|&b| Some(b)).collect(), true),
        };
        let (decays, vary_d) = or_base(&self.weight_decays, base.training.weight_decay);
        let total = hidden.len() * acts.len() * rates.len() * batches.len() * decays.len();
        if total > 10_000 {
            return Err(Error::option(
                "grid",
                total,
                "has more than 10,000 configurations; split it into smaller sweeps",
            ));
        }
        let mut out = Vec::with_capacity(total);
        for h in &hidden {
            for &a in &acts {
                for &r in &rates {
                    for &b in &batches {
                        for &d in &decays {
                            let mut o = base.clone();
                            o.hidden_layers = h.clone();
                            o.activation = a;
                            o.training.learning_rate = r;
                            o.training.batch_size = b;
                            o.training.weight_decay = d;
                            let mut parts = Vec::new();
                            if vary_h || !vary_a && !vary_r && !vary_b && !vary_d {
                                let widths: Vec<String> = h.iter().map(usize::to_string).collect();
                                parts.push(format!(
                                    "hidden {}",
                                    if widths.is_empty() {
                                        "none".into()
                                    } else {
                                        widths.join("-")
                                    }
                                ));
                            }
                            if vary_a {
                                parts.push(a.name().to_string());
                            }
                            if vary_r {
                                parts.push(format!("rate {r}"));
                            }
                            if let (true, Some(b)) = (vary_b, b) {
                                parts.push(format!("batch {b}"));
                            }
                            if vary_d {
                                parts.push(format!("decay {d}"));
                            }
                            out.push((parts.join(", "), o));
                        }
                    }
                }
            }
        }
        Ok(out)
    }
}

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

/// A sweep's outcome: the table and the best configuration refitted on all rows.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    /// The results table.
    pub table: SweepTable,
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
}

impl SweepPlan {
    /// Draws a plan: fold plan and seeds first, then the refit seed.
    ///
    /// # Errors
    /// An empty grid, a metric that does not fit the target, invalid folds.
    pub fn new<R: RngCore + ?Sized>(
        data: &Dataset,
        base: &FitOptions,
        grid: &Grid,
        cv: &CvOptions,
        metric: Metric,
        rng: &mut R,
    ) -> Result<SweepPlan> {
        let configurations = grid.configurations(base)?;
        cv.validate()?;
        for (name, o) in &configurations {
            o.validate()
                .map_err(|e| e.context(format!("sweep configuration \"{name}\"")))?;
        }
        SweepPlan::new_checked(data, configurations, cv, metric, rng)
    }

    /// [`SweepPlan::new`] with every configuration and the counts already
    /// validated.
    pub(crate) fn new_checked<R: RngCore + ?Sized>(
        data: &Dataset,
        configurations: Vec<(String, FitOptions)>,
        cv: &CvOptions,
        metric: Metric,
        rng: &mut R,
    ) -> Result<SweepPlan> {
        if configurations.is_empty() {
            return Err(Error::option(
                "grid",
                "empty",
                "needs at least one configuration",
            ));
        }
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
        Ok(SweepPlan {
            configurations,
            cv: cv.clone(),
            folds,
            metric,
            refit_seed: crate::rng::child_seed(rng),
            table_fingerprint: data.fingerprint(),
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
    grid: &Grid,
    cv: &CvOptions,
    metric: Metric,
    rng: &mut R,
) -> Result<Sweep> {
    let plan = SweepPlan::new(data, base, grid, cv, metric, rng)?;
    sweep_plan_checked(data, &plan, &base.training.observer)
}

/// Runs every trial of a plan drawn from `data` here, in parallel, and
/// refits the best configuration on all of `data`.
pub(crate) fn sweep_plan_checked(
    data: &Dataset,
    plan: &SweepPlan,
    observer: &crate::observe::Observer,
) -> Result<Sweep> {
    plan.folds.check(data.n_rows())?;
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
    let table = plan.merge(data.n_rows(), data.class_names().unwrap_or(&[]), results)?;
    let best = plan.refit_best(data, &table)?;
    Ok(Sweep { table, best })
}

impl SweepPlan {
    /// The table's best configuration refitted on every row of `data`,
    /// from the plan's refit seed.
    ///
    /// # Errors
    /// As [`fit`](crate::fit::fit).
    pub fn refit_best(&self, data: &Dataset, table: &SweepTable) -> Result<Fitted> {
        let best_options = &self.configurations[table.rows[0].index].1;
        let seed = crate::rng::child_seed(&mut crate::rng::seeded_rng(self.refit_seed));
        crate::fit::fit_checked(std::borrow::Cow::Borrowed(data), best_options, seed, None)
    }
}
