//! Filling missing feature cells: [`Imputer`], learnt from training rows
//! only and applied to any rows.
//!
//! ```text
//! numeric column      fill = the median of its non-missing training values
//!                     (the middle value; for an even count the mean of the two
//!                     middle values: Hyndman & Fan, "Sample quantiles in
//!                     statistical packages", The American Statistician, 1996,
//!                     definition 7 at p = 1/2)
//! one-hot column      fill = the one-hot row of its most frequent level in the
//!                     training rows (ties: the first level in sorted order;
//!                     common practice, no source)
//! missing indicator   never missing
//! ```
//! [`fit`](crate::fit::fit) learns the imputer on its training rows (so in
//! cross-validation on each fold's training rows), before the scaler, and
//! the model applies it to every row it predicts.

use super::ColumnEncoding;
use crate::error::{Error, Result};
use ndarray::{ArrayView2, ArrayViewMut2, Axis};

/// Fill values for missing (NaN) feature cells, one per feature column.
#[derive(Clone, Debug, PartialEq)]
pub struct Imputer {
    fill: Vec<f64>,
}

impl Imputer {
    /// Learns fill values from the given rows of `x` (all rows when `rows`
    /// is `None`), column by column as `columns` encode them (see the
    /// module docs).
    ///
    /// # Errors
    /// A column with no value in those rows (naming it), or a width that
    /// differs from the encodings'.
    pub fn from_rows(
        columns: &[ColumnEncoding],
        x: ArrayView2<'_, f64>,
        rows: Option<&[usize]>,
    ) -> Result<Imputer> {
        let width: usize = columns.iter().map(ColumnEncoding::width).sum();
        if width != x.ncols() {
            return Err(Error::shape("imputer inputs", (x.nrows(), width), x.dim()));
        }
        let all: Vec<usize>;
        let rows = match rows {
            Some(r) => r,
            None => {
                all = (0..x.nrows()).collect();
                &all
            }
        };
        let none = |name: &str| {
            Error::input(
                format!("imputing column \"{name}\""),
                "the column has no value in the training rows, so there is nothing to fill its missing cells from; drop it",
            )
        };
        let mut fill = vec![0.0; width];
        let mut offset = 0;
        for enc in columns {
            match enc {
                ColumnEncoding::Numeric { name } => {
                    let mut v: Vec<f64> = rows
                        .iter()
                        .map(|&r| x[[r, offset]])
                        .filter(|v| !v.is_nan())
                        .collect();
                    if v.is_empty() {
                        return Err(none(name));
                    }
                    v.sort_by(f64::total_cmp);
                    let m = v.len();
                    fill[offset] = if m % 2 == 1 {
                        v[m / 2]
                    } else {
                        let (a, b) = (v[m / 2 - 1], v[m / 2]);
                        let mid = (a + b) / 2.0;
                        if mid.is_finite() {
                            mid
                        } else {
                            a / 2.0 + b / 2.0
                        }
                    };
                }
                ColumnEncoding::OneHot { name, levels } => {
                    let k = levels.len();
                    let mut counts = vec![0usize; k];
                    for &r in rows {
                        if x[[r, offset]].is_nan() {
                            continue;
                        }
                        if let Some(j) = (0..k).find(|&j| x[[r, offset + j]] == 1.0) {
                            counts[j] += 1;
                        }
                    }
                    let best = (0..k)
                        .max_by(|&a, &b| counts[a].cmp(&counts[b]).then(b.cmp(&a)))
                        .filter(|&j| counts[j] > 0)
                        .ok_or_else(|| none(name))?;
                    fill[offset + best] = 1.0;
                }
                ColumnEncoding::MissingIndicator { .. } => {}
            }
            offset += enc.width();
        }
        Ok(Imputer { fill })
    }

    /// An imputer from stored fill values (a model file's), checked.
    ///
    /// # Errors
    /// A fill value that is not a finite number.
    pub fn from_parts(fill: Vec<f64>) -> Result<Imputer> {
        if let Some(i) = fill.iter().position(|v| !v.is_finite()) {
            return Err(Error::input(
                "imputer",
                format!("fill value {} is not a finite number", i + 1),
            ));
        }
        Ok(Imputer { fill })
    }

    /// The fill value of each feature column.
    pub fn fill_values(&self) -> &[f64] {
        &self.fill
    }

    /// Replaces every NaN of `x` with its column's fill value.
    ///
    /// # Errors
    /// When the column count differs from the fitted one.
    pub fn impute_in_place(&self, mut x: ArrayViewMut2<'_, f64>) -> Result<()> {
        if x.ncols() != self.fill.len() {
            return Err(Error::shape(
                "imputer inputs",
                (x.nrows(), self.fill.len()),
                x.dim(),
            ));
        }
        for mut row in x.axis_iter_mut(Axis(0)) {
            for (v, f) in row.iter_mut().zip(&self.fill) {
                if v.is_nan() {
                    *v = *f;
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    // Medians by the definition (Hyndman & Fan 1996, definition 7 at 1/2):
    // of 1, 3, 10 the middle value 3; of 1, 3, 10, 20 the mean 6.5 of 3 and
    // 10. The mode of levels [b, a, b] is b.
    #[test]
    fn medians_and_modes_from_the_given_rows() {
        let nan = f64::NAN;
        let columns = vec![
            ColumnEncoding::Numeric { name: "x".into() },
            ColumnEncoding::OneHot {
                name: "c".into(),
                levels: vec!["a".into(), "b".into()],
            },
        ];
        let x = array![
            [1.0, 0.0, 1.0],
            [3.0, 1.0, 0.0],
            [nan, 0.0, 1.0],
            [10.0, nan, nan],
            [20.0, 1.0, 0.0]
        ];
        let i = Imputer::from_rows(&columns, x.view(), Some(&[0, 1, 2, 3])).unwrap();
        assert_eq!(i.fill_values(), [3.0, 0.0, 1.0]);
        let i = Imputer::from_rows(&columns, x.view(), None).unwrap();
        assert_eq!(i.fill_values(), [6.5, 1.0, 0.0]);
        let mut y = x.clone();
        i.impute_in_place(y.view_mut()).unwrap();
        assert_eq!(y.row(2).to_vec(), [6.5, 0.0, 1.0]);
        assert_eq!(y.row(3).to_vec(), [10.0, 1.0, 0.0]);
        let e = Imputer::from_rows(&columns, x.view(), Some(&[3])).unwrap_err();
        assert_eq!(
            e.to_string(),
            "imputing column \"c\": the column has no value in the training rows, so there is nothing to fill its missing cells from; drop it"
        );
    }
}
