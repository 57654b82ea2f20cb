//! Which measurements does the network rely on? Permutation importance on
//! held-out rows, with an interval across folds.
//!
//! For each fold of a cross-validation, on that fold's held-out rows only
//! (rows its model never saw), and for each source column of the table:
//!
//! ```text
//! drop = score(held-out rows) - score(held-out rows, that column's values shuffled across rows)
//!        (the other way round for a metric where lower is better, so a positive
//!         drop always means the model did worse without the column's information)
//! fold drop = mean of the drop over P independent shuffles
//! ```
//!
//! A text column's one-hot inputs are shuffled together (the same row order
//! for all of them), so a row never ends up with two levels or none. The
//! fold drops are then summarised as every cross-validated score is, with
//! the corrected resampled interval ([`Summary::for_cross_validation`]),
//! unbounded because a drop may be negative. An interval holding 0 means
//! the folds could not tell the model needs the column; it does not mean
//! the column is unrelated to the target (another correlated column can
//! stand in for it: Fisher, Rudin & Dominici 2019 discuss this).
//!
//! Sources: L. Breiman, "Random forests", Machine Learning 45 (2001) 5-32,
//! section 10 (the permutation idea); A. Fisher, C. Rudin & F. Dominici,
//! "All models are wrong, but many are useful: learning a variable's
//! importance by studying an entire class of prediction models
//! simultaneously", JMLR 20 (2019), who define model reliance as this
//! difference of scores on held-out data.
//!
//! Every shuffle draws from a seed taken, one per fold and in fold order,
//! from the generator the caller passes, so the result does not depend on
//! the number of threads.

use super::cv::CrossValidation;
use super::metrics::Metric;
use super::stats::{Range, Summary};
use super::Scores;
use crate::data::{Dataset, Target};
use crate::error::{Error, Result};
use crate::fit::Model;
use crate::rng;
use ndarray::Array2;
use rand::RngCore;
use rayon::prelude::*;

/// How to measure permutation importance.
#[derive(Clone, Debug, PartialEq)]
pub struct ImportanceOptions {
    /// The score whose drop is measured; `None` means accuracy for classes
    /// and RMSE for numbers (the result names the metric used).
    pub metric: Option<Metric>,
    /// Shuffles per column and fold (at least 1).
    pub shuffles: usize,
}

impl Default for ImportanceOptions {
    /// Accuracy or RMSE, five shuffles.
    fn default() -> Self {
        ImportanceOptions {
            metric: None,
            shuffles: 5,
        }
    }
}

/// The most shuffles per column and fold.
pub const MAX_SHUFFLES: usize = 1000;

impl ImportanceOptions {
    /// Checks the shuffle count.
    ///
    /// # Errors
    /// No shuffle, or more than [`MAX_SHUFFLES`].
    pub fn validate(&self) -> Result<()> {
        if self.shuffles == 0 || self.shuffles > MAX_SHUFFLES {
            return Err(Error::option(
                "shuffles",
                self.shuffles,
                format!("must be 1 to {MAX_SHUFFLES}; 5 is usual"),
            ));
        }
        Ok(())
    }
}

/// One source column's importance.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnImportance {
    /// The source column's name.
    pub column: String,
    /// The network inputs shuffled together (one, or a text column's one-hot inputs).
    pub inputs: Vec<String>,
    /// Each fold's mean drop, in fold order.
    pub fold_drops: Vec<f64>,
    /// Mean drop over folds with its corrected 95% interval.
    pub summary: Summary,
}

impl ColumnImportance {
    /// Does the interval lie wholly above 0 (the folds agree the model uses the column)?
    pub fn clearly_used(&self) -> bool {
        self.summary.ci_low > 0.0
    }
}

/// Permutation importance of every source column (see the [module docs](self)).
#[derive(Clone, Debug, PartialEq)]
pub struct PermutationImportance {
    /// The score whose drop is measured.
    pub metric: Metric,
    /// Shuffles per column and fold.
    pub shuffles: usize,
    /// Folds the drops come from (each on its own held-out rows).
    pub folds: usize,
    /// Mean held-out rows per fold.
    pub rows_per_fold: f64,
    /// One entry per source column, in the table's column order.
    pub columns: Vec<ColumnImportance>,
}

impl PermutationImportance {
    /// The columns, largest mean drop first (ties in table order).
    pub fn ranked(&self) -> Vec<&ColumnImportance> {
        let mut order: Vec<&ColumnImportance> = self.columns.iter().collect();
        order.sort_by(|a, b| b.summary.mean.total_cmp(&a.summary.mean));
        order
    }
}

impl CrossValidation {
    /// Permutation importance of every source column of `data` (the table
    /// this cross-validation ran on), measured on each fold's held-out rows
    /// with that fold's model (see the [module docs](crate::validate::importance)).
    ///
    /// # Errors
    /// Invalid options; a metric that does not apply to the model; a table
    /// that is not the one cross-validated (row count or features differ).
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// use stratanet::validate::importance::ImportanceOptions;
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let options = FitOptions::default().hidden(&[6]).epochs(30);
    /// let cv = cross_validate(&data, &options, &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
    /// let importance = cv.permutation_importance(&data, &ImportanceOptions::default(), &mut seeded_rng(2))?;
    /// assert_eq!(importance.columns.len(), data.columns().len());
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn permutation_importance<R: RngCore + ?Sized>(
        &self,
        data: &Dataset,
        options: &ImportanceOptions,
        rng: &mut R,
    ) -> Result<PermutationImportance> {
        options.validate()?;
        if data.n_rows() != self.n_rows {
            return Err(Error::input(
                format!("{}: permutation importance", data.source()),
                format!(
                    "the table has {} rows but the cross-validation ran on {}; pass the table it ran on",
                    data.n_rows(),
                    self.n_rows
                ),
            ));
        }
        let Some(first) = self.folds.first() else {
            return Err(Error::input("permutation importance", "there are no folds"));
        };
        let models = self
            .folds
            .iter()
            .map(|f| {
                f.model.as_ref().ok_or_else(|| {
                    Error::input(
                        "permutation importance",
                        "the folds' models were not kept (results read back from trial files hold predictions only); cross-validate in one run to measure importance",
                    )
                })
            })
            .collect::<Result<Vec<_>>>()?;
        models[0].check_features(data)?;
        let metric = match options.metric {
            Some(m) => m,
            None if data.labels().is_some() => Metric::Accuracy,
            None => Metric::RootMeanSquaredError,
        };
        first.scores.value(metric)?;
        let groups = column_groups(data);
        let how = Shuffling {
            groups: &groups,
            metric,
            shuffles: options.shuffles,
        };
        let seeds: Vec<u64> = self.folds.iter().map(|_| rng::child_seed(rng)).collect();
        let per_fold: Vec<Vec<f64>> = (0..self.folds.len())
            .into_par_iter()
            .map(|k| fold_drops(models[k], data, &self.folds[k].test_rows, &how, seeds[k]))
            .collect::<Result<_>>()?;
        let (n_train, n_test) = self.mean_rows();
        let columns = groups
            .iter()
            .enumerate()
            .map(|(g, (column, inputs))| {
                let fold_drops: Vec<f64> = per_fold.iter().map(|d| d[g]).collect();
                Ok(ColumnImportance {
                    column: column.clone(),
                    inputs: inputs
                        .iter()
                        .map(|&j| data.feature_names()[j].clone())
                        .collect(),
                    summary: Summary::for_cross_validation(
                        &fold_drops,
                        n_train,
                        n_test,
                        Range::Unbounded,
                    )?,
                    fold_drops,
                })
            })
            .collect::<Result<_>>()?;
        Ok(PermutationImportance {
            metric,
            shuffles: options.shuffles,
            folds: self.folds.len(),
            rows_per_fold: n_test,
            columns,
        })
    }
}

/// Each source column's name and the feature columns it became.
fn column_groups(data: &Dataset) -> Vec<(String, Vec<usize>)> {
    let mut start = 0;
    data.columns()
        .iter()
        .map(|c| {
            let inputs = (start..start + c.width()).collect();
            start += c.width();
            (c.name().to_string(), inputs)
        })
        .collect()
}

/// What to shuffle and how to score it.
struct Shuffling<'a> {
    groups: &'a [(String, Vec<usize>)],
    metric: Metric,
    shuffles: usize,
}

/// One fold's mean drop for every column group, on its held-out rows.
fn fold_drops(
    model: &Model,
    data: &Dataset,
    test_rows: &[usize],
    how: &Shuffling<'_>,
    seed: u64,
) -> Result<Vec<f64>> {
    let (groups, metric, shuffles) = (how.groups, how.metric, how.shuffles);
    let test = data.select(test_rows);
    let x = test.x().to_owned();
    let target: &Target = test.target();
    let score = |x: &Array2<f64>| -> Result<f64> {
        let predictions = if target.labels().is_some() {
            model.predict_probabilities(x.view())?
        } else {
            model.predict(x.view())?
        };
        Scores::from_predictions(target, predictions.view())?.value(metric)
    };
    let base = score(&x)?;
    let mut rng = rng::seeded_rng(seed);
    let mut drops = Vec::with_capacity(groups.len());
    for (_, inputs) in groups {
        let mut total = 0.0;
        for _ in 0..shuffles {
            let mut order: Vec<usize> = (0..x.nrows()).collect();
            rng::shuffle(&mut rng, &mut order);
            let mut shuffled = x.clone();
            for &j in inputs {
                for (row, &from) in order.iter().enumerate() {
                    shuffled[[row, j]] = x[[from, j]];
                }
            }
            let permuted = score(&shuffled)?;
            total += if metric.higher_is_better() {
                base - permuted
            } else {
                permuted - base
            };
        }
        drops.push(total / shuffles as f64);
    }
    Ok(drops)
}
