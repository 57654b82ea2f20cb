//! Seeded splits and folds.
//!
//! Stratified splitting and folding work class by class: the rows of each
//! class are shuffled (Fisher-Yates from the caller's generator, classes in
//! index order) and then dealt out. Folds are dealt round-robin, continuing
//! the dealer's position from one class to the next, so every fold receives
//! either `floor(n_c / k)` or `ceil(n_c / k)` rows of class `c` and the fold
//! sizes differ by at most one (common practice, no source). Index lists
//! are returned sorted ascending, so the result does not depend on how the
//! caller later iterates.

use crate::error::{Error, Result};
use crate::rng;
use rand::RngCore;

/// A train / validation / test partition of row indices (each sorted).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Split {
    /// Rows to fit on.
    pub train: Vec<usize>,
    /// Rows for early stopping and model selection.
    pub validation: Vec<usize>,
    /// Rows kept apart for the final score.
    pub test: Vec<usize>,
}

/// One cross-validation fold: the rows to fit on and the rows to score.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Fold {
    /// Rows to fit on (sorted).
    pub train: Vec<usize>,
    /// Rows held out (sorted).
    pub test: Vec<usize>,
}

/// Which part of a larger table a table is, when it is one: the
/// development subset or the held-out set that
/// [`HoldOut::split`](crate::validate::HoldOut::split) made. A count of rows
/// on its own ("480 rows") would hide that the file had more; this says how
/// many more and where they went.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TablePart {
    /// The rows left for fitting and every choice after a hold-out split.
    Development {
        /// Rows in the whole table the split was made from.
        of_rows: usize,
    },
    /// The rows set aside for one final score.
    HeldOut {
        /// Rows in the whole table the split was made from.
        of_rows: usize,
    },
}

impl TablePart {
    /// Rows in the whole table the part was taken from.
    pub fn of_rows(&self) -> usize {
        match *self {
            TablePart::Development { of_rows } | TablePart::HeldOut { of_rows } => of_rows,
        }
    }

    /// One line for a part of `rows` rows, for example "480 of 600 rows:
    /// development subset; 120 held out".
    pub fn describe(&self, rows: usize) -> String {
        let rest = self.of_rows().saturating_sub(rows);
        match self {
            TablePart::Development { of_rows } => {
                format!("{rows} of {of_rows} rows: development subset; {rest} held out")
            }
            TablePart::HeldOut { of_rows } => {
                format!("{rows} of {of_rows} rows: held-out set; the other {rest} are the development subset")
            }
        }
    }
}

fn check_share(name: &str, f: f64) -> Result<()> {
    if !(0.0..1.0).contains(&f) || !f.is_finite() {
        return Err(Error::option(name, f, "must be at least 0 and below 1"));
    }
    Ok(())
}

fn rows_by_class(labels: &[usize]) -> Vec<Vec<usize>> {
    let n_classes = labels.iter().max().map_or(0, |m| m + 1);
    let mut by_class = vec![Vec::new(); n_classes];
    for (i, &l) in labels.iter().enumerate() {
        by_class[l].push(i);
    }
    by_class
}

/// Splits rows into train, validation and test sets, keeping each class's
/// share (`round(n_c * share)` rows of class `c` go to each held-out set).
///
/// # Errors
/// Fractions outside `[0, 1)` or adding up to 1 or more, or a split that
/// would leave a class with no training rows.
pub fn stratified_split<R: RngCore + ?Sized>(
    labels: &[usize],
    validation_share: f64,
    test_share: f64,
    rng: &mut R,
) -> Result<Split> {
    check_share("validation_share", validation_share)?;
    check_share("test_share", test_share)?;
    if validation_share + test_share >= 1.0 {
        return Err(Error::option(
            "validation_share + test_share",
            validation_share + test_share,
            "must be below 1 so that rows remain for training",
        ));
    }
    let mut split = Split {
        train: Vec::new(),
        validation: Vec::new(),
        test: Vec::new(),
    };
    for (class, mut rows) in rows_by_class(labels).into_iter().enumerate() {
        if rows.is_empty() {
            continue;
        }
        rng::shuffle(rng, &mut rows);
        let n = rows.len() as f64;
        let n_test = (n * test_share).round() as usize;
        let n_val = (n * validation_share).round() as usize;
        if n_test + n_val >= rows.len() {
            return Err(Error::input(
                "stratified split",
                format!(
                    "class {class} has only {} rows, too few to give the validation and test sets a share and keep one for training; lower the shares or collect more rows",
                    rows.len()
                ),
            ));
        }
        split.test.extend_from_slice(&rows[..n_test]);
        split
            .validation
            .extend_from_slice(&rows[n_test..n_test + n_val]);
        split.train.extend_from_slice(&rows[n_test + n_val..]);
    }
    split.train.sort_unstable();
    split.validation.sort_unstable();
    split.test.sort_unstable();
    Ok(split)
}

/// A random (unstratified) split of `n` rows, for regression.
///
/// # Errors
/// As [`stratified_split`].
pub fn random_split<R: RngCore + ?Sized>(
    n: usize,
    validation_share: f64,
    test_share: f64,
    rng: &mut R,
) -> Result<Split> {
    stratified_split(&vec![0; n], validation_share, test_share, rng)
}

fn deal(groups: Vec<Vec<usize>>, n: usize, k: usize) -> Vec<Fold> {
    let mut tests = vec![Vec::new(); k];
    let mut dealer = 0;
    for rows in groups {
        for r in rows {
            tests[dealer].push(r);
            dealer = (dealer + 1) % k;
        }
    }
    tests
        .into_iter()
        .map(|mut test| {
            test.sort_unstable();
            let mut in_test = vec![false; n];
            test.iter().for_each(|&r| in_test[r] = true);
            let train = (0..n).filter(|&r| !in_test[r]).collect();
            Fold { train, test }
        })
        .collect()
}

/// Stratified k-fold index sets.
///
/// # Errors
/// `k < 2`, or `k` larger than the smallest class (every fold's training part
/// and test part must be able to see every class).
pub fn stratified_folds<R: RngCore + ?Sized>(
    labels: &[usize],
    k: usize,
    rng: &mut R,
) -> Result<Vec<Fold>> {
    let mut groups = rows_by_class(labels);
    groups.retain(|g| !g.is_empty());
    let smallest = groups.iter().map(Vec::len).min().unwrap_or(0);
    if k < 2 {
        return Err(Error::option("folds", k, "must be at least 2"));
    }
    if k > smallest {
        return Err(Error::option(
            "folds",
            k,
            format!(
                "must be at most {smallest}, the row count of the smallest class, so that every fold holds every class"
            ),
        ));
    }
    for g in groups.iter_mut() {
        rng::shuffle(rng, g);
    }
    Ok(deal(groups, labels.len(), k))
}

/// Repeated stratified k-fold: `repeats` independent shufflings, `k * repeats` folds.
///
/// # Errors
/// As [`stratified_folds`], and `repeats == 0`.
pub fn repeated_stratified_folds<R: RngCore + ?Sized>(
    labels: &[usize],
    k: usize,
    repeats: usize,
    rng: &mut R,
) -> Result<Vec<Fold>> {
    if repeats == 0 {
        return Err(Error::option("repeats", 0, "must be at least 1"));
    }
    let mut all = Vec::with_capacity(k * repeats);
    for _ in 0..repeats {
        all.extend(stratified_folds(labels, k, rng)?);
    }
    Ok(all)
}

/// Plain k-fold over `n` rows (for regression).
///
/// # Errors
/// `k < 2` or `k > n`.
pub fn kfold<R: RngCore + ?Sized>(n: usize, k: usize, rng: &mut R) -> Result<Vec<Fold>> {
    if k < 2 || k > n {
        return Err(Error::option(
            "folds",
            k,
            format!("must be between 2 and the number of rows ({n})"),
        ));
    }
    let mut rows: Vec<usize> = (0..n).collect();
    rng::shuffle(rng, &mut rows);
    Ok(deal(vec![rows], n, k))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::seeded_rng;

    #[test]
    fn folds_partition_and_stratify() {
        let labels: Vec<usize> = (0..53).map(|i| if i % 5 == 0 { 1 } else { 0 }).collect();
        let folds = stratified_folds(&labels, 5, &mut seeded_rng(3)).unwrap();
        let mut all: Vec<usize> = folds.iter().flat_map(|f| f.test.clone()).collect();
        all.sort();
        assert_eq!(all, (0..53).collect::<Vec<_>>());
        for f in &folds {
            assert_eq!(f.train.len() + f.test.len(), 53);
            let ones = f.test.iter().filter(|&&r| labels[r] == 1).count();
            assert!(ones == 2 || ones == 3, "{ones}");
        }
    }

    #[test]
    fn too_many_folds_is_refused() {
        let labels = vec![0, 0, 0, 1, 1];
        let e = stratified_folds(&labels, 3, &mut seeded_rng(1)).unwrap_err();
        assert_eq!(
            e.to_string(),
            "option folds = 3: must be at most 2, the row count of the smallest class, so that every fold holds every class"
        );
    }

    #[test]
    fn split_keeps_shares() {
        let labels: Vec<usize> = (0..100).map(|i| usize::from(i < 30)).collect();
        let s = stratified_split(&labels, 0.2, 0.1, &mut seeded_rng(9)).unwrap();
        assert_eq!(s.test.len(), 10);
        assert_eq!(s.validation.len(), 20);
        assert_eq!(s.test.iter().filter(|&&r| labels[r] == 1).count(), 3);
        let s2 = stratified_split(&labels, 0.2, 0.1, &mut seeded_rng(9)).unwrap();
        assert_eq!(s, s2);
    }
}
