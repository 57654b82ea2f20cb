//! The hold-out protocol: a final test set kept apart from all model
//! selection.
//!
//! [`HoldOut::split`] sets a stratified share of rows aside and hands back
//! the rest as the *development* table, which is all that cross-validation
//! and sweeps ever see. The test rows can only be reached through
//! [`HoldOut::score`], an explicit step that counts how many times it has
//! been called; the count travels with every score, so a reader can tell a
//! single, final look from a test set that was used for selection.

use super::cv::Scores;
use crate::data::{random_split, stratified_split, Dataset, ScoredRows};
use crate::error::Result;
use crate::fit::Model;
use rand::RngCore;
use std::sync::atomic::{AtomicUsize, Ordering};

/// A held-out test set.
#[derive(Debug)]
pub struct HoldOut {
    test: Dataset,
    rows: Vec<usize>,
    times_scored: AtomicUsize,
}

/// A score on the held-out set, with how many times the set had been scored.
#[derive(Clone, Debug, PartialEq)]
pub struct HoldOutScore {
    /// The scores.
    pub scores: Scores,
    /// Rows in the test set.
    pub rows: usize,
    /// 1 for the first scoring; more means the set has been looked at before
    /// and may have steered choices.
    pub times_scored: usize,
}

impl HoldOutScore {
    /// The rows the score comes from: the hold-out set, with its use count.
    pub fn scored_rows(&self) -> ScoredRows {
        ScoredRows::HoldOut {
            uses: self.times_scored,
        }
    }
}

impl HoldOutScore {
    /// A one-line reading of the count.
    pub fn caution(&self) -> String {
        if self.times_scored == 1 {
            "the held-out set was scored once: an honest final estimate".to_string()
        } else {
            format!(
                "the held-out set has now been scored {} times; if earlier scores steered any choice, this estimate is optimistic",
                self.times_scored
            )
        }
    }
}

impl HoldOut {
    /// Sets `fraction` of the rows aside (stratified by class), returning the
    /// development table and the held-out set.
    ///
    /// # Errors
    /// A fraction outside `(0, 1)` or too few rows per class.
    pub fn split<R: RngCore + ?Sized>(
        data: &Dataset,
        fraction: f64,
        rng: &mut R,
    ) -> Result<(Dataset, HoldOut)> {
        if !(fraction > 0.0 && fraction < 1.0) {
            return Err(crate::Error::option(
                "test_fraction",
                fraction,
                "must be above 0 and below 1",
            ));
        }
        let split = match data.labels() {
            Some(labels) => stratified_split(labels, 0.0, fraction, rng)?,
            None => random_split(data.n_rows(), 0.0, fraction, rng)?,
        };
        let development = data.select(&split.train);
        let test = data.select(&split.test);
        Ok((
            development,
            HoldOut {
                test,
                rows: split.test,
                times_scored: AtomicUsize::new(0),
            },
        ))
    }

    /// Rows in the held-out set.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// True when the set is empty.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The held-out rows' indices in the original table.
    pub fn row_indices(&self) -> &[usize] {
        &self.rows
    }

    /// How many times the set has been scored so far.
    pub fn times_scored(&self) -> usize {
        self.times_scored.load(Ordering::SeqCst)
    }

    /// Scores `model` on the held-out rows and counts the look.
    ///
    /// # Errors
    /// When the model's features do not match the table's.
    pub fn score(&self, model: &Model) -> Result<HoldOutScore> {
        let (scores, _) = Scores::of(model, &self.test)?;
        let times_scored = self.times_scored.fetch_add(1, Ordering::SeqCst) + 1;
        Ok(HoldOutScore {
            scores,
            rows: self.rows.len(),
            times_scored,
        })
    }
}
