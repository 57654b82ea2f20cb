//! Out-of-fold predictions: each row of the table predicted by the fold
//! model that never saw it, for studying errors row by row and for judging
//! calibration on rows no fit used.

use super::cv::CrossValidation;
use super::metrics::{brier_partition_binned, reliability, Binning, BrierPartition, Reliability};
use crate::data::Dataset;
use crate::error::{Error, Result};
use ndarray::Array2;

/// One repeat's out-of-fold predictions (see the [module docs](self)).
#[derive(Clone, Debug, PartialEq)]
pub struct OutOfFold {
    /// The repeat (from 0) whose folds made the predictions.
    pub repeat: usize,
    /// For each table row, the fold (index into [`CrossValidation::folds`])
    /// that held it out.
    pub fold_of_row: Vec<usize>,
    /// For each table row, in table order: class probabilities (one column
    /// per class) or predicted values.
    pub predictions: Array2<f64>,
}

impl CrossValidation {
    /// The number of repeats (each a partition of the rows into folds).
    pub fn repeats(&self) -> usize {
        self.cv.repeats
    }

    /// Repeat `repeat`'s out-of-fold predictions: every row, predicted by
    /// the model of the fold that held it out.
    ///
    /// # Errors
    /// A repeat beyond the cross-validation's, or folds that do not cover
    /// every row once (results put together by hand).
    ///
    /// # Example
    /// ```
    /// use stratanet::prelude::*;
    /// let data = stratanet::data::CsvOptions::new("verdict").drop(&["part_id"])
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let cv = cross_validate(&data, &FitOptions::default().epochs(20),
    ///     &CvOptions { folds: 3, ..Default::default() }, &mut seeded_rng(1))?;
    /// let oof = cv.out_of_fold(0)?;
    /// assert_eq!(oof.predictions.nrows(), data.n_rows());
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn out_of_fold(&self, repeat: usize) -> Result<OutOfFold> {
        let k = self.cv.folds;
        if repeat >= self.cv.repeats {
            return Err(Error::option(
                "repeat",
                repeat,
                format!("must be below {} (the repeats run)", self.cv.repeats),
            ));
        }
        let folds = &self.folds[repeat * k..(repeat + 1) * k];
        let width = folds[0].predictions.ncols();
        let mut predictions = Array2::from_elem((self.n_rows, width), f64::NAN);
        let mut fold_of_row = vec![usize::MAX; self.n_rows];
        for fold in folds {
            for (i, &row) in fold.test_rows.iter().enumerate() {
                if row >= self.n_rows || fold_of_row[row] != usize::MAX {
                    return Err(Error::input(
                        "out-of-fold predictions",
                        format!("row {row} is held out twice or lies beyond the table in repeat {repeat}"),
                    ));
                }
                fold_of_row[row] = fold.index;
                predictions.row_mut(row).assign(&fold.predictions.row(i));
            }
        }
        if let Some(row) = fold_of_row.iter().position(|&f| f == usize::MAX) {
            return Err(Error::input(
                "out-of-fold predictions",
                format!("row {row} is held out by no fold of repeat {repeat}"),
            ));
        }
        Ok(OutOfFold {
            repeat,
            fold_of_row,
            predictions,
        })
    }

    /// Every fold's held-out class probabilities with their true classes,
    /// pooled over all folds and repeats (a row appears once per repeat).
    fn pooled(&self, data: &Dataset) -> Result<(Vec<usize>, Array2<f64>)> {
        let labels = data.labels().ok_or_else(|| {
            Error::input(
                format!("{}: calibration", data.source()),
                "the target holds numbers; calibration is for class probabilities",
            )
        })?;
        if data.n_rows() != self.n_rows {
            return Err(Error::input(
                format!("{}: calibration", data.source()),
                format!(
                    "the table has {} rows but the cross-validation ran on {}; pass the table it ran on",
                    data.n_rows(),
                    self.n_rows
                ),
            ));
        }
        let rows: usize = self.folds.iter().map(|f| f.test_rows.len()).sum();
        let width = self.folds[0].predictions.ncols();
        let mut truth = Vec::with_capacity(rows);
        let mut p = Array2::zeros((rows, width));
        let mut at = 0;
        for fold in &self.folds {
            for (i, &row) in fold.test_rows.iter().enumerate() {
                truth.push(labels[row]);
                p.row_mut(at).assign(&fold.predictions.row(i));
                at += 1;
            }
        }
        Ok((truth, p))
    }

    /// Reliability-diagram data and calibration errors of the out-of-fold
    /// probabilities, pooled over folds and repeats (`rows` counts each
    /// row once per repeat).
    ///
    /// # Errors
    /// A regression table, or not the table cross-validated.
    pub fn reliability(&self, data: &Dataset, binning: Binning) -> Result<Reliability> {
        let (truth, p) = self.pooled(data)?;
        reliability(&truth, p.view(), binning)
    }

    /// The Brier score's partition over the same pooled out-of-fold
    /// probabilities and bins as [`CrossValidation::reliability`].
    ///
    /// # Errors
    /// As [`CrossValidation::reliability`].
    pub fn brier_partition(&self, data: &Dataset, binning: Binning) -> Result<BrierPartition> {
        let (truth, p) = self.pooled(data)?;
        brier_partition_binned(&truth, p.view(), binning)
    }
}
