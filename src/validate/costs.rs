//! What the decisions would have cost: a cost matrix applied to every
//! fold's held-out probabilities, with an interval across folds and the
//! baseline beside it.
//!
//! In each fold, every held-out row gets the decision with the least
//! expected cost under its predicted probabilities
//! ([`CostMatrix::decide`], Elkan 2001), and the fold's cost per row is the
//! mean of `C[decision][true class]` over those rows. The baseline takes, for
//! every row, the one decision with the least expected cost under the
//! fold's training class shares. Both are summarised over folds with the
//! corrected resampled interval, and compared on the same folds
//! (Nadeau & Bengio 2003).

use super::cv::CrossValidation;
use super::stats::{Range, ResampledTTest, Summary};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::CostMatrix;
use ndarray::Array2;

/// Cost per row under cross-validation (see the module docs).
#[derive(Clone, Debug, PartialEq)]
pub struct CostSummary {
    /// The matrix, its columns in the table's class order.
    pub matrix: CostMatrix,
    /// Each fold's mean cost per held-out row, in fold order.
    pub fold_costs: Vec<f64>,
    /// Mean cost per row with its 95% interval.
    pub summary: Summary,
    /// Each fold's cost per row when every row gets the baseline's decision.
    pub baseline_costs: Vec<f64>,
    /// The baseline's mean and interval.
    pub baseline: Summary,
    /// The decision the baseline takes in each fold.
    pub baseline_decisions: Vec<String>,
    /// The test of model against baseline on the same folds (differences
    /// model - baseline; negative means the model costs less). `None` with one fold.
    pub against_baseline: Option<ResampledTTest>,
    /// How often each decision was taken over all held-out rows, in the matrix's decision order.
    pub decision_counts: Vec<usize>,
}

impl CrossValidation {
    /// Applies `costs` to every fold's held-out probabilities (see
    /// [`CostSummary`]); `data` is the table cross-validated.
    ///
    /// # Errors
    /// A regression, a matrix whose classes are not the table's, or not the
    /// table cross-validated.
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// use stratanet::fit::CostMatrix;
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let cv = cross_validate(&data, &FitOptions::default().epochs(20),
    ///     &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
    /// let costs = CostMatrix::from_csv_str(
    ///     "decision,accept,rework,scrap\naccept,0,40,300\nrework,15,10,120\nscrap,60,50,20\n",
    ///     "costs.csv")?;
    /// let summary = cv.costs(&data, &costs)?;
    /// assert!(summary.summary.mean <= summary.baseline.mean);
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn costs(&self, data: &Dataset, costs: &CostMatrix) -> Result<CostSummary> {
        let what = || format!("{}: costs", data.source());
        let (Some(labels), Some(classes)) = (data.labels(), data.class_names()) else {
            return Err(Error::input(
                what(),
                "the target holds numbers; a cost matrix applies to classes",
            ));
        };
        if data.n_rows() != self.n_rows {
            return Err(Error::input(
                what(),
                format!(
                    "the table has {} rows but the cross-validation ran on {}; pass the table it ran on",
                    data.n_rows(),
                    self.n_rows
                ),
            ));
        }
        let matrix = costs.for_classes(classes)?;
        let mut decision_counts = vec![0; matrix.decisions().len()];
        let (mut fold_costs, mut baseline_costs, mut baseline_decisions) =
            (Vec::new(), Vec::new(), Vec::new());
        for fold in &self.folds {
            let truth: Vec<usize> = fold.test_rows.iter().map(|&r| labels[r]).collect();
            let decisions = matrix.decide(fold.predictions.view())?;
            decisions.iter().for_each(|&d| decision_counts[d] += 1);
            fold_costs.push(matrix.mean_cost(&decisions, &truth)?);
            let shares = Array2::from_shape_vec(
                (1, fold.baseline.prediction.len()),
                fold.baseline.prediction.clone(),
            )
            .expect("one row");
            let constant = matrix.decide(shares.view())?[0];
            baseline_decisions.push(matrix.decisions()[constant].clone());
            baseline_costs.push(matrix.mean_cost(&vec![constant; truth.len()], &truth)?);
        }
        let (n_train, n_test) = self.mean_rows();
        let range = if matrix.is_non_negative() {
            Range::NonNegative
        } else {
            Range::Unbounded
        };
        let against_baseline = super::cv::against_baseline(
            &fold_costs,
            &baseline_costs,
            (n_train, n_test),
            ("the model's decisions", "the baseline's"),
        )?;
        Ok(CostSummary {
            summary: Summary::for_cross_validation(&fold_costs, n_train, n_test, range)?,
            baseline: Summary::for_cross_validation(&baseline_costs, n_train, n_test, range)?,
            matrix,
            fold_costs,
            baseline_costs,
            baseline_decisions,
            against_baseline,
            decision_counts,
        })
    }
}
