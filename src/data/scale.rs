//! Feature scaling, fitted on training rows only and applied to any rows.
//!
//! ```text
//! standardise:  x' = (x - mean) / sd        mean and population sd (divide by n) of the training rows
//! min-max:      x' = (x - min) / (max - min) onto [0, 1] over the training rows
//! ```
//! Both are common practice (no single source); the population form of the
//! standard deviation is used so that a one-row fit is defined.
//!
//! **Zero spread.** When a column is constant in the training rows (sd = 0,
//! or max = min), its scale is set to 1, so the column becomes `x - mean`
//! (or `x - min`): exactly 0 on the training rows and the raw offset on other
//! rows. Nothing is divided by zero, so no NaN or infinity can appear.

use crate::error::{Error, Result};
use ndarray::{Array2, ArrayView2, ArrayViewMut2, Axis};

/// Which scaling to fit, column by column, on the training rows:
///
/// ```text
/// standardise:  x' = (x - mean) / sd        mean and population sd (divide by n) of the training rows
/// min-max:      x' = (x - min) / (max - min) onto [0, 1] over the training rows
/// none:         x' = x
/// ```
/// Common practice, no single source; the population form of the standard
/// deviation is used so that a one-row fit is defined. A column constant in
/// the training rows gets scale 1 (see the module docs).
///
/// Text form: `standardise`, `min-max`, `none`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Scaling {
    /// Leave features as they are.
    None,
    /// z-scores: subtract the mean, divide by the standard deviation.
    #[default]
    Standardise,
    /// Map the training range onto [0, 1].
    MinMax,
}

crate::error::text_forms!(Scaling, "scaling", {
    Scaling::Standardise => "standardise",
    Scaling::MinMax => "min-max",
    Scaling::None => "none",
});

/// A scaler learnt from training rows: `x' = (x - offset) / scale`, column
/// by column (see [`Scaling`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Scaler {
    kind: Scaling,
    offset: Vec<f64>,
    scale: Vec<f64>,
}

/// The mean and population standard deviation of `n` values given by
/// `each`, in two passes (mean, then squared deviations).
fn mean_and_sd(n: usize, each: impl Fn(&mut dyn FnMut(f64))) -> (f64, f64) {
    let mut sum = 0.0;
    each(&mut |v| sum += v);
    let mean = sum / n as f64;
    let mut ss = 0.0;
    each(&mut |v| ss += (v - mean) * (v - mean));
    (mean, (ss / n as f64).sqrt())
}

impl Scaler {
    /// Learns a scaler of `kind` from the given rows of `x` (all rows when
    /// `rows` is `None`).
    ///
    /// # Errors
    /// When there are no rows to learn from, or (min-max) a range beyond f64.
    pub fn from_rows(
        kind: Scaling,
        x: ArrayView2<'_, f64>,
        rows: Option<&[usize]>,
    ) -> Result<Scaler> {
        let n = rows.map_or(x.nrows(), <[usize]>::len);
        if n == 0 {
            return Err(Error::input(
                "fitting a scaler",
                "there are no rows to fit on",
            ));
        }
        let d = x.ncols();
        let mut offset = vec![0.0; d];
        let mut scale = vec![1.0; d];
        let each_row = |f: &mut dyn FnMut(ndarray::ArrayView1<'_, f64>)| match rows {
            Some(rows) => rows.iter().for_each(|&r| f(x.row(r))),
            None => x.rows().into_iter().for_each(f),
        };
        match kind {
            Scaling::None => {}
            Scaling::Standardise => {
                // Two passes (mean, then squared deviations) for accuracy.
                let mut sum = vec![0.0; d];
                each_row(&mut |row| sum.iter_mut().zip(row).for_each(|(s, v)| *s += v));
                let mean: Vec<f64> = sum.iter().map(|s| s / n as f64).collect();
                let mut ss = vec![0.0; d];
                each_row(&mut |row| {
                    ss.iter_mut()
                        .zip(row)
                        .zip(&mean)
                        .for_each(|((s, v), m)| *s += (v - m) * (v - m))
                });
                for j in 0..d {
                    let (mut m, mut sd) = (mean[j], (ss[j] / n as f64).sqrt());
                    // Near the limits of f64 the sums overflow (values near
                    // 1e308) or the squares underflow (subnormal spreads):
                    // redo that column on values divided by its largest
                    // magnitude, which lie in [-1, 1], and scale back.
                    // Ordinary columns never take this path, so their
                    // numbers are unchanged.
                    let varies = || {
                        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
                        each_row(&mut |row| {
                            lo = lo.min(row[j]);
                            hi = hi.max(row[j]);
                        });
                        lo < hi
                    };
                    if !m.is_finite() || !sd.is_finite() || (sd == 0.0 && varies()) {
                        let mut big = 0.0f64;
                        each_row(&mut |row| big = big.max(row[j].abs()));
                        if big > 0.0 && big.is_finite() {
                            let (ms, sds) =
                                mean_and_sd(n, |f| each_row(&mut |row| f(row[j] / big)));
                            m = ms * big;
                            sd = sds * big;
                        }
                    }
                    offset[j] = m;
                    scale[j] = if sd > 0.0 && sd.is_finite() { sd } else { 1.0 };
                }
            }
            Scaling::MinMax => {
                let mut lo = vec![f64::INFINITY; d];
                let mut hi = vec![f64::NEG_INFINITY; d];
                each_row(&mut |row| {
                    for (j, &v) in row.iter().enumerate() {
                        lo[j] = lo[j].min(v);
                        hi[j] = hi[j].max(v);
                    }
                });
                for j in 0..d {
                    let range = hi[j] - lo[j];
                    if range.is_infinite() {
                        return Err(Error::input(
                            format!("min-max scaling of feature column {}", j + 1),
                            format!(
                                "its values span {:e} to {:e}, a range beyond the largest double; divide the column by a power of ten first, or use standardise",
                                lo[j], hi[j]
                            ),
                        ));
                    }
                    offset[j] = lo[j];
                    scale[j] = if range > 0.0 && range.is_finite() {
                        range
                    } else {
                        1.0
                    };
                }
            }
        }
        Ok(Scaler {
            kind,
            offset,
            scale,
        })
    }

    /// A scaler from stored parts (a model file's), checked: as many scales
    /// as offsets, every number finite, every scale non-zero.
    ///
    /// # Errors
    /// The first part that breaks a rule, named.
    pub fn from_parts(kind: Scaling, offset: Vec<f64>, scale: Vec<f64>) -> Result<Scaler> {
        if offset.len() != scale.len() {
            return Err(Error::shape("scaler", (1, offset.len()), (1, scale.len())));
        }
        if let Some(i) = offset.iter().position(|v| !v.is_finite()) {
            return Err(Error::input(
                "scaler",
                format!("offset {} is not a finite number", i + 1),
            ));
        }
        if let Some(i) = scale.iter().position(|v| !v.is_finite() || *v == 0.0) {
            return Err(Error::input(
                "scaler",
                format!("scale {} is 0 or not a finite number", i + 1),
            ));
        }
        Ok(Scaler {
            kind,
            offset,
            scale,
        })
    }

    /// The kind of scaling.
    pub fn kind(&self) -> Scaling {
        self.kind
    }

    /// What is subtracted from each column.
    pub fn offsets(&self) -> &[f64] {
        &self.offset
    }

    /// What each column is divided by (never 0).
    pub fn scales(&self) -> &[f64] {
        &self.scale
    }

    /// Number of columns.
    pub fn n_columns(&self) -> usize {
        self.offset.len()
    }

    /// Scales `x` in place: `x = (x - offset) / scale`.
    ///
    /// # Errors
    /// When the column count differs from the fitted one.
    pub fn scale_in_place(&self, mut x: ArrayViewMut2<'_, f64>) -> Result<()> {
        self.check(x.ncols())?;
        if self.kind == Scaling::None {
            return Ok(());
        }
        for mut row in x.axis_iter_mut(Axis(0)) {
            for ((v, o), s) in row.iter_mut().zip(&self.offset).zip(&self.scale) {
                let scaled = (*v - o) / s;
                // `v - o` overflows only for values near the limits of f64;
                // dividing first keeps them finite.
                *v = if scaled.is_finite() {
                    scaled
                } else {
                    *v / s - o / s
                };
            }
        }
        Ok(())
    }

    /// A scaled copy of `x`.
    ///
    /// # Errors
    /// When the column count differs from the fitted one.
    pub fn scaled(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        let mut out = x.to_owned();
        self.scale_in_place(out.view_mut())?;
        Ok(out)
    }

    /// Undoes the scaling in place: `x = x' * scale + offset`.
    ///
    /// # Errors
    /// When the column count differs from the fitted one.
    pub fn unscale_in_place(&self, mut x: ArrayViewMut2<'_, f64>) -> Result<()> {
        self.check(x.ncols())?;
        if self.kind == Scaling::None {
            return Ok(());
        }
        for mut row in x.axis_iter_mut(Axis(0)) {
            for ((v, o), s) in row.iter_mut().zip(&self.offset).zip(&self.scale) {
                *v = *v * s + o;
            }
        }
        Ok(())
    }

    fn check(&self, cols: usize) -> Result<()> {
        if cols != self.n_columns() {
            return Err(Error::input(
                "scaling",
                format!(
                    "the scaler was fitted on {} columns, but the data has {cols}",
                    self.n_columns()
                ),
            ));
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::array;

    #[test]
    fn standardise_uses_training_rows_only() {
        let x = array![[1.0, 5.0], [3.0, 5.0], [100.0, 7.0]];
        let s = Scaler::from_rows(Scaling::Standardise, x.view(), Some(&[0, 1])).unwrap();
        assert_eq!(s.offset, vec![2.0, 5.0]);
        assert_eq!(s.scale, vec![1.0, 1.0]); // sd of [1,3] is 1; second column constant -> 1
        let t = s.scaled(x.view()).unwrap();
        assert_eq!(t, array![[-1.0, 0.0], [1.0, 0.0], [98.0, 2.0]]);
        assert!(t.iter().all(|v| v.is_finite()));
    }

    #[test]
    fn min_max_round_trip() {
        let x = array![[1.0, -2.0], [3.0, 2.0]];
        let s = Scaler::from_rows(Scaling::MinMax, x.view(), None).unwrap();
        let mut t = s.scaled(x.view()).unwrap();
        assert_eq!(t, array![[0.0, 0.0], [1.0, 1.0]]);
        s.unscale_in_place(t.view_mut()).unwrap();
        assert_eq!(t, x);
    }

    // The population sd of 2, 4, 4, 4, 5, 5, 7, 9 is exactly 2 (the standard
    // textbook example; common practice, no source).
    #[test]
    fn population_standard_deviation() {
        let x = array![[2.0], [4.0], [4.0], [4.0], [5.0], [5.0], [7.0], [9.0]];
        let s = Scaler::from_rows(Scaling::Standardise, x.view(), None).unwrap();
        assert_eq!(s.offset, vec![5.0]);
        assert_eq!(s.scale, vec![2.0]);
    }
}
