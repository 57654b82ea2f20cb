//! Losses and the output layer's error signal (the formulas are on
//! [`Loss`]). Per row, the loss is computed in forms that cannot overflow:
//!
//! ```text
//! cross-entropy, logistic head:  E = sum_k max(z_k, 0) - z_k y_k + ln(1 + e^-|z_k|)
//! cross-entropy, softmax head:   E = logsumexp(z) - sum_k y_k z_k
//! squared error, logistic head:  delta = (a - y) a (1 - a)
//! squared error, softmax head:   delta_j = a_j ((a_j - y_j) - sum_k (a_k - y_k) a_k)
//! ```
//! (common practice, no source, for these stable forms).

use crate::error::{Error, Result};
use crate::network::{sigmoid, Head, Real};

/// The loss minimised in training, per row, with outputs `a = head(z)` and
/// targets `y`:
///
/// ```text
/// squared error   E = 1/2 sum_k (y_k - a_k)^2
/// cross-entropy   logistic head:  E = sum_k -[y_k ln a_k + (1 - y_k) ln(1 - a_k)]
///                 softmax head:   E = -sum_k y_k ln a_k
/// ```
/// Squared error carries the factor 1/2 (so its gradient is `a - y`):
/// every loss stratanet reports for squared error, in training reports,
/// charts and model files, is this half squared error, averaged over rows.
/// Sources: squared error with logistic units, Rumelhart, Hinton & Williams,
/// "Learning representations by back-propagating errors", Nature 1986;
/// cross-entropy with softmax, Bridle, "Probabilistic interpretation of
/// feedforward classification network outputs", 1990. The error signal at
/// the output, `delta = dE/dz`, is `a - y` for cross-entropy with its
/// matching head and for squared error with the identity head.
///
/// Text form: `squared_error`, `cross_entropy`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Loss {
    /// Half the summed squared error (the classic backpropagation setup).
    SquaredError,
    /// Cross-entropy (binary for logistic outputs, categorical for softmax).
    CrossEntropy,
}

impl Loss {
    /// A short name for displays: `half_squared_error` (the loss is half
    /// the squared error, see above) or `cross_entropy`. The text form
    /// ([`FromStr`](std::str::FromStr)) stays `squared_error`.
    pub fn name(&self) -> &'static str {
        match self {
            Loss::SquaredError => "half_squared_error",
            Loss::CrossEntropy => "cross_entropy",
        }
    }

    /// The usual loss for a head: cross-entropy for logistic and softmax
    /// heads, squared error for the identity head.
    pub fn default_for(head: Head) -> Loss {
        match head {
            Head::Identity => Loss::SquaredError,
            Head::Logistic | Head::Softmax => Loss::CrossEntropy,
        }
    }

    /// Checks that the loss fits the head: cross-entropy needs outputs that
    /// are probabilities.
    ///
    /// # Errors
    /// Cross-entropy with the identity head.
    pub fn check_head(self, head: Head) -> Result<()> {
        if self == Loss::CrossEntropy && head == Head::Identity {
            return Err(Error::option(
                "loss",
                self,
                "needs a logistic or softmax head; use squared_error for the identity head",
            ));
        }
        Ok(())
    }
}

crate::error::text_forms!(Loss, "loss", {
    Loss::SquaredError => "squared_error",
    Loss::CrossEntropy => "cross_entropy",
});

/// The mean loss of predicting the same outputs `a` (after the head) for
/// every row of `y` (the network's target encoding), each row's loss times
/// its weight in `w` when given: the loss of a baseline that ignores the
/// inputs. `None` when the loss is not defined for `a` (cross-entropy of an
/// output outside (0, 1)).
pub(crate) fn constant_loss(
    head: Head,
    loss: Loss,
    a: &[f64],
    y: ndarray::ArrayView2<'_, f64>,
    w: Option<&[f64]>,
) -> Option<f64> {
    if y.nrows() == 0 {
        return None;
    }
    let mut total = 0.0;
    for (i, row) in y.rows().into_iter().enumerate() {
        let e: f64 = match (loss, head) {
            (Loss::SquaredError, _) => {
                0.5 * row
                    .iter()
                    .zip(a)
                    .map(|(yk, ak)| (yk - ak) * (yk - ak))
                    .sum::<f64>()
            }
            (Loss::CrossEntropy, Head::Logistic) => row
                .iter()
                .zip(a)
                .map(|(yk, ak)| -(yk * libm::log(*ak) + (1.0 - yk) * libm::log(1.0 - ak)))
                .sum(),
            (Loss::CrossEntropy, _) => row
                .iter()
                .zip(a)
                .map(|(yk, ak)| {
                    if *yk == 0.0 {
                        0.0
                    } else {
                        -yk * libm::log(*ak)
                    }
                })
                .sum(),
        };
        total += w.map_or(1.0, |w| w[i]) * e;
    }
    let mean = total / y.nrows() as f64;
    mean.is_finite().then_some(mean)
}

/// For one row: turns output sums `z` into outputs (in place), writes
/// `delta = scale * dE/dz` and returns the row's loss `E`.
#[inline]
pub(crate) fn row_loss_delta<F: Real>(
    head: Head,
    loss: Loss,
    z: &mut [F],
    y: &[F],
    delta: Option<&mut [F]>,
    scale: F,
) -> F {
    let half = F::from_f64(0.5);
    match (loss, head) {
        (Loss::CrossEntropy, Head::Logistic) => {
            let mut e = F::zero();
            for (zk, &yk) in z.iter_mut().zip(y) {
                let v = *zk;
                e = e + v.max(F::zero()) - v * yk + (-v.abs()).exp_det().ln_1p_det();
                *zk = sigmoid(v);
            }
            if let Some(d) = delta {
                for ((dk, &ak), &yk) in d.iter_mut().zip(z.iter()).zip(y) {
                    *dk = (ak - yk) * scale;
                }
            }
            e
        }
        (Loss::CrossEntropy, Head::Softmax) => {
            let m = z.iter().copied().fold(F::neg_infinity(), F::max);
            let mut sum = F::zero();
            let mut yz = F::zero();
            let mut ysum = F::zero();
            // One exponential per output: kept in `z`, then normalised.
            for (zk, &yk) in z.iter_mut().zip(y) {
                yz = yz + yk * *zk;
                ysum = ysum + yk;
                *zk = (*zk - m).exp_det();
                sum = sum + *zk;
            }
            let lse = m + sum.ln_det();
            for zk in z.iter_mut() {
                *zk = *zk / sum;
            }
            if let Some(d) = delta {
                for ((dk, &ak), &yk) in d.iter_mut().zip(z.iter()).zip(y) {
                    *dk = (ak - yk) * scale;
                }
            }
            ysum * lse - yz
        }
        (Loss::SquaredError, _) => {
            head.apply_row(z);
            let mut e = F::zero();
            for (&ak, &yk) in z.iter().zip(y) {
                e = e + (ak - yk) * (ak - yk);
            }
            if let Some(d) = delta {
                match head {
                    Head::Identity => {
                        for ((dk, &ak), &yk) in d.iter_mut().zip(z.iter()).zip(y) {
                            *dk = (ak - yk) * scale;
                        }
                    }
                    Head::Logistic => {
                        for ((dk, &ak), &yk) in d.iter_mut().zip(z.iter()).zip(y) {
                            *dk = (ak - yk) * ak * (F::one() - ak) * scale;
                        }
                    }
                    Head::Softmax => {
                        let mut s = F::zero();
                        for (&ak, &yk) in z.iter().zip(y) {
                            s = s + (ak - yk) * ak;
                        }
                        for ((dk, &ak), &yk) in d.iter_mut().zip(z.iter()).zip(y) {
                            *dk = ak * ((ak - yk) - s) * scale;
                        }
                    }
                }
            }
            e * half
        }
        (Loss::CrossEntropy, Head::Identity) => {
            unreachable!("options validation refuses cross-entropy with the identity head")
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // An illustration recomputed from the definitions (softmax and
    // cross-entropy as in Bridle 1990; dE/dz = p - y): scores
    // [-2.85, 0.86, 0.28], true class 2: loss 1.04019057,
    // p = [0.01544932, 0.63116335, 0.35338733], dE/dz = p - y =
    // [0.01544932, 0.63116335, -0.64661267] (values recomputed in double
    // precision from the definitions).
    #[test]
    fn softmax_cross_entropy_reference() {
        let mut z = [-2.85f64, 0.86, 0.28];
        let y = [0.0, 0.0, 1.0];
        let mut d = [0.0; 3];
        let e = row_loss_delta(
            Head::Softmax,
            Loss::CrossEntropy,
            &mut z,
            &y,
            Some(&mut d),
            1.0,
        );
        assert!((e - 1.04019057).abs() < 5e-9, "{e}");
        assert!((e - 1.04).abs() < 5e-3);
        for (p, r) in z.iter().zip([0.01544932, 0.63116335, 0.35338733]) {
            assert!((p - r).abs() < 5e-9);
        }
        for (g, r) in d.iter().zip([0.01544932, 0.63116335, -0.64661267]) {
            assert!((g - r).abs() < 5e-9);
        }
    }

    #[test]
    fn logistic_cross_entropy_is_finite_at_extremes() {
        let mut z = [800.0f64];
        let e = row_loss_delta(
            Head::Logistic,
            Loss::CrossEntropy,
            &mut z,
            &[0.0],
            None,
            1.0,
        );
        assert_eq!(e, 800.0);
        let mut z = [0.0f64];
        let e = row_loss_delta(
            Head::Logistic,
            Loss::CrossEntropy,
            &mut z,
            &[1.0],
            None,
            1.0,
        );
        assert!((e - std::f64::consts::LN_2).abs() < 1e-15);
    }
}
