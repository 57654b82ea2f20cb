//! The hold-out protocol: a final test set kept apart from all model
//! selection.
//!
//! [`HoldOut::split`] sets a stratified share of rows aside and hands back
//! the rest as the *development* table, which is all that cross-validation
//! and sweeps ever see. The test rows can only be reached through
//! [`HoldOut::score`], an explicit step that counts how many times it has
//! been called; the count travels with every score, so a reader can tell a
//! single, final look from a test set that was used for selection.
//!
//! On its own a [`HoldOut`] counts in memory, so a rerun of the same
//! analysis starts again at one. [`HoldOut::with_ledger`] keeps the count in
//! a file (see [`holdout_ledger`](super::holdout_ledger)), so a second look
//! is visible across runs and processes.

use super::cv::Scores;
use super::holdout_ledger::{self, SetIdentity};
use crate::data::{random_split, stratified_split, Dataset, ScoredRows, TablePart};
use crate::error::Result;
use crate::fit::Model;
use rand::RngCore;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// A held-out test set.
#[derive(Debug)]
pub struct HoldOut {
    test: Dataset,
    rows: Vec<usize>,
    times_scored: AtomicUsize,
    /// The ledger counting the looks, when there is one.
    ledger: Option<Ledger>,
}

/// A [`HoldOut`]'s ledger: the file, the set's identity in it, and whether
/// the file must be there (it was when opened, or a look was recorded):
/// a ledger that vanished is refused, never started afresh.
#[derive(Debug)]
struct Ledger {
    path: PathBuf,
    identity: SetIdentity,
    must_exist: AtomicBool,
}

/// A score on the held-out set, with how many times the set had been scored.
#[derive(Clone, Debug, PartialEq)]
pub struct HoldOutScore {
    /// The scores.
    pub scores: Scores,
    /// Rows in the test set.
    pub rows: usize,
    /// 1 for the first scoring; more means the set has been looked at before
    /// and may have steered choices. With a ledger it counts every look the
    /// ledger recorded, in any run; without one, the looks through this
    /// [`HoldOut`] value only.
    pub times_scored: usize,
    /// The ledger file that counted the look, when there was one.
    pub ledger: Option<PathBuf>,
    /// With a ledger: how many different models (by
    /// [`Model::fingerprint`]) the recorded looks scored.
    pub models_scored: Option<usize>,
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
        let ledger = self.ledger.as_deref().map(|p| {
            p.file_name().map_or_else(
                || p.display().to_string(),
                |n| n.to_string_lossy().into_owned(),
            )
        });
        match (self.times_scored, ledger) {
            (1, Some(file)) => format!(
                "first look at the held-out set (counted in the ledger {file}): an honest final estimate"
            ),
            (1, None) => "the held-out set was scored once in this run: an honest final estimate if it was never scored before (the count is kept in memory only; a ledger file keeps it across runs)".to_string(),
            (n, Some(file)) => {
                let models = match self.models_scored {
                    Some(1) => ", all of the same model".to_string(),
                    Some(m) => format!(", of {m} different models"),
                    None => String::new(),
                };
                format!(
                    "the held-out set has now been scored {n} times (counted in the ledger {file}{models}); if earlier scores steered any choice, this estimate is optimistic"
                )
            }
            (n, None) => format!(
                "the held-out set has now been scored {n} times in this run; if earlier scores steered any choice, this estimate is optimistic"
            ),
        }
    }
}

impl HoldOut {
    /// Sets `fraction` of the rows aside (stratified by class), returning the
    /// development table and the held-out set. Both tables know which part
    /// of `data` they are ([`Dataset::part`]), so their row counts are shown
    /// as parts ("480 of 600 rows: development subset; 120 held out").
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
        let of_rows = data.n_rows();
        let mut development = data.select(&split.train);
        development.part = Some(TablePart::Development { of_rows });
        let mut test = data.select(&split.test);
        test.part = Some(TablePart::HeldOut { of_rows });
        Ok((
            development,
            HoldOut {
                test,
                rows: split.test,
                times_scored: AtomicUsize::new(0),
                ledger: None,
            },
        ))
    }

    /// The same held-out set, its looks counted in the ledger file at
    /// `path` (created at the first look when absent; see
    /// [`holdout_ledger`](super::holdout_ledger) for the format). Every
    /// [`HoldOut`] given the same file and the same rows, in any run or
    /// process, adds to one count; another split starts its own.
    ///
    /// The ledger is read and checked now, so a damaged one is reported
    /// before any work is done.
    ///
    /// # Errors
    /// A ledger that cannot be read, is not a ledger, or contradicts itself
    /// (the message names the file and the way out; it is never reset).
    pub fn with_ledger(mut self, path: impl AsRef<Path>) -> Result<HoldOut> {
        let path = path.as_ref().to_path_buf();
        let identity = self.identity();
        let exists = holdout_ledger::check_ledger(&path, &identity)?;
        self.ledger = Some(Ledger {
            path,
            identity,
            must_exist: AtomicBool::new(exists),
        });
        Ok(self)
    }

    /// The held-out rows' fingerprint: the SHA-256 (hex) of their indices in
    /// the table and of their content, as the ledger names the set. Another
    /// split, or the same indices of another table, gives another one.
    pub fn fingerprint(&self) -> String {
        match &self.ledger {
            Some(ledger) => ledger.identity.held_out.clone(),
            None => self.identity().held_out,
        }
    }

    fn identity(&self) -> SetIdentity {
        SetIdentity::new(&self.rows, &self.test.fingerprint(), &self.test.source)
    }

    /// The ledger file counting the looks, when there is one.
    pub fn ledger(&self) -> Option<&Path> {
        self.ledger.as_ref().map(|l| l.path.as_path())
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

    /// How many times the set has been scored through this value (the
    /// ledger's count, across runs, is in each [`HoldOutScore`]).
    pub fn times_scored(&self) -> usize {
        self.times_scored.load(Ordering::SeqCst)
    }

    /// Scores `model` on the held-out rows and counts the look (in the
    /// ledger too, when there is one: the look is recorded only after the
    /// model was scored).
    ///
    /// # Errors
    /// When the model's features do not match the table's; with a ledger, a
    /// model that cannot be fingerprinted, or a ledger that cannot be read
    /// or written.
    pub fn score(&self, model: &Model) -> Result<HoldOutScore> {
        // The fingerprint first: a model that cannot be recorded is not
        // scored, so no look goes uncounted.
        let fingerprint = match &self.ledger {
            Some(_) => Some(model.fingerprint()?),
            None => None,
        };
        let (scores, _) = Scores::of(model, &self.test)?;
        let (times_scored, ledger, models_scored) = match (&self.ledger, fingerprint) {
            (Some(ledger), Some(fingerprint)) => {
                let recorded = holdout_ledger::record(
                    &ledger.path,
                    &ledger.identity,
                    &fingerprint,
                    ledger.must_exist.load(Ordering::SeqCst),
                )?;
                ledger.must_exist.store(true, Ordering::SeqCst);
                self.times_scored.fetch_add(1, Ordering::SeqCst);
                (
                    recorded.times_scored,
                    Some(ledger.path.clone()),
                    Some(recorded.models),
                )
            }
            _ => (
                self.times_scored.fetch_add(1, Ordering::SeqCst) + 1,
                None,
                None,
            ),
        };
        Ok(HoldOutScore {
            scores,
            rows: self.rows.len(),
            times_scored,
            ledger,
            models_scored,
        })
    }
}
