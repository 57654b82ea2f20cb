//! Temperature scaling: one number that softens (or sharpens) a
//! classifier's probabilities, fitted on validation rows.
//!
//! C. Guo, G. Pleiss, Y. Sun & K. Q. Weinberger, "On calibration of modern
//! neural networks", ICML 2017, section 4.2. The network's output sums
//! (logits) `z` are divided by `T > 0` before the head:
//!
//! ```text
//! softmax head    p_k = exp(z_k / T) / sum_j exp(z_j / T)
//! logistic head   p   = 1 / (1 + exp(-z / T))
//! ```
//!
//! `T` minimises the mean negative log-likelihood of the validation rows.
//! With `b = 1 / T` that loss is convex in `b` (a log-sum-exp of linear
//! functions minus a linear one), and its derivative
//!
//! ```text
//! softmax    dL/db = (1 / n) sum_s ( sum_k p_k(b z_s) z_sk - z_s,y_s )
//! logistic   dL/db = (1 / n) sum_s ( p(b z_s) - y_s ) z_s
//! ```
//!
//! increases with `b`, so its single root is found by bisection on `ln b`
//! (120 halvings of [ln 1/100, ln 100]: below one unit in the last place;
//! deterministic). `T > 1` softens an over-confident network; `T < 1`
//! sharpens an under-confident one. The most probable class never changes
//! (dividing by a positive number keeps the order of the sums), nor does a
//! logistic head's `p >= 0.5`; only the probabilities do. When the root lies
//! outside [1/100, 100] the bound is used and a note says so (for example
//! when the validation rows are separated perfectly, the loss falls for
//! ever as `T` falls).

use crate::error::{Error, Result};
use crate::network::Head;
use ndarray::{Array2, ArrayView2};

/// The smallest and largest temperature fitted.
pub const TEMPERATURE_BOUNDS: (f64, f64) = (0.01, 100.0);

/// A fitted temperature and what it did on the rows it was fitted on.
#[derive(Clone, Debug, PartialEq)]
pub struct Temperature {
    /// `T`: the network's output sums are divided by it before the head.
    pub value: f64,
    /// The validation rows it was fitted on.
    pub rows: usize,
    /// Mean negative log-likelihood of those rows at `T = 1`.
    pub log_loss_before: f64,
    /// The same at the fitted `T` (never above `log_loss_before`).
    pub log_loss_after: f64,
    /// Why `T` sits on a bound, when it does.
    pub note: Option<String>,
}

/// Probabilities from output sums `logits` divided by `temperature`, one
/// column per class (a logistic head's single sum gives `1 - p`, `p`); see
/// the [module docs](self).
///
/// # Errors
/// A head that does not give probabilities, or a temperature that is not a
/// positive finite number.
pub fn probabilities_at(
    logits: ArrayView2<'_, f64>,
    head: Head,
    temperature: f64,
) -> Result<Array2<f64>> {
    if !(temperature.is_finite() && temperature > 0.0) {
        return Err(Error::option(
            "temperature",
            temperature,
            "must be a positive finite number",
        ));
    }
    let b = 1.0 / temperature;
    match (head, logits.ncols()) {
        (Head::Logistic, 1) => Ok(Array2::from_shape_fn((logits.nrows(), 2), |(s, k)| {
            let p = logistic(b * logits[[s, 0]]);
            if k == 1 {
                p
            } else {
                logistic(-b * logits[[s, 0]])
            }
        })),
        (Head::Softmax, _) => {
            let mut p = Array2::zeros(logits.dim());
            for (s, row) in logits.outer_iter().enumerate() {
                let m = row.iter().fold(f64::NEG_INFINITY, |m, &z| m.max(b * z));
                let mut sum = 0.0;
                for (k, &z) in row.iter().enumerate() {
                    let e = libm::exp(b * z - m);
                    p[[s, k]] = e;
                    sum += e;
                }
                p.row_mut(s).mapv_inplace(|v| v / sum);
            }
            Ok(p)
        }
        _ => Err(Error::input(
            "temperature scaling",
            format!(
                "the {} head with {} outputs does not give class probabilities; temperature scaling is for classifiers",
                head.name(),
                logits.ncols()
            ),
        )),
    }
}

fn logistic(z: f64) -> f64 {
    if z >= 0.0 {
        1.0 / (1.0 + libm::exp(-z))
    } else {
        let e = libm::exp(z);
        e / (1.0 + e)
    }
}

/// Mean negative log-likelihood at `b = 1 / T` and its derivative in `b`.
fn loss_and_slope(logits: ArrayView2<'_, f64>, labels: &[usize], head: Head, b: f64) -> (f64, f64) {
    let n = labels.len() as f64;
    let (mut loss, mut slope) = (0.0, 0.0);
    for (row, &y) in logits.outer_iter().zip(labels) {
        if head == Head::Logistic {
            let z = row[0];
            let signed = if y == 1 { b * z } else { -b * z };
            // -ln sigma(t) = ln(1 + e^-t), computed without overflow.
            loss += if signed > 0.0 {
                libm::log1p(libm::exp(-signed))
            } else {
                -signed + libm::log1p(libm::exp(signed))
            };
            slope += (logistic(b * z) - y as f64) * z;
        } else {
            let m = row.iter().fold(f64::NEG_INFINITY, |m, &z| m.max(b * z));
            let (mut sum, mut weighted) = (0.0, 0.0);
            for &z in row {
                let e = libm::exp(b * z - m);
                sum += e;
                weighted += e * z;
            }
            loss += m + libm::log(sum) - b * row[y];
            slope += weighted / sum - row[y];
        }
    }
    (loss / n, slope / n)
}

/// Fits the temperature on validation rows: their output sums `logits`
/// (before the head) and true classes `labels` (see the [module docs](self)).
///
/// # Errors
/// No rows, rows and labels that disagree, a label beyond the classes, a
/// non-finite sum, or a head that does not give probabilities.
///
/// # Example
/// ```
/// use stratanet::fit::fit_temperature;
/// use stratanet::ndarray::array;
/// use stratanet::network::Head;
/// // Sums four times too large for what happened: T comes out above 1.
/// let logits = array![[4.0], [4.0], [4.0], [4.0], [-4.0], [-4.0], [-4.0], [-4.0]];
/// let t = fit_temperature(logits.view(), &[1, 1, 1, 0, 0, 0, 0, 1], Head::Logistic)?;
/// assert!(t.value > 1.0 && t.log_loss_after < t.log_loss_before);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn fit_temperature(
    logits: ArrayView2<'_, f64>,
    labels: &[usize],
    head: Head,
) -> Result<Temperature> {
    const WHAT: &str = "temperature scaling";
    if labels.is_empty() || labels.len() != logits.nrows() {
        return Err(Error::input(
            WHAT,
            format!(
                "needs validation rows: {} output rows and {} labels were given; set validation_share above 0",
                logits.nrows(),
                labels.len()
            ),
        ));
    }
    // The head must give probabilities (checked on the first row).
    probabilities_at(logits.slice(ndarray::s![..1, ..]), head, 1.0)?;
    let classes = if head == Head::Logistic {
        2
    } else {
        logits.ncols()
    };
    if let Some(&l) = labels.iter().find(|&&l| l >= classes) {
        return Err(Error::input(
            WHAT,
            format!("label {l} is not one of the {classes} classes"),
        ));
    }
    if logits.iter().any(|v| !v.is_finite()) {
        return Err(Error::input(WHAT, "an output sum is not a finite number"));
    }
    let (low, high) = (1.0 / TEMPERATURE_BOUNDS.1, 1.0 / TEMPERATURE_BOUNDS.0);
    let slope = |b: f64| loss_and_slope(logits, labels, head, b).1;
    let (b, note) = if slope(low) >= 0.0 {
        (
            low,
            Some(format!(
                "the validation loss is lowest at the largest temperature allowed ({}): the network's probabilities carry almost no information on these rows",
                TEMPERATURE_BOUNDS.1
            )),
        )
    } else if slope(high) <= 0.0 {
        (
            high,
            Some(format!(
                "the validation loss still falls at the smallest temperature allowed ({}): the validation rows are separated perfectly, so they cannot say how sure the network should be",
                TEMPERATURE_BOUNDS.0
            )),
        )
    } else {
        let (mut lo, mut hi) = (libm::log(low), libm::log(high));
        for _ in 0..120 {
            let mid = 0.5 * (lo + hi);
            if slope(libm::exp(mid)) < 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        (libm::exp(0.5 * (lo + hi)), None)
    };
    let before = loss_and_slope(logits, labels, head, 1.0).0;
    let after = loss_and_slope(logits, labels, head, b).0;
    Ok(Temperature {
        value: 1.0 / b,
        rows: labels.len(),
        log_loss_before: before,
        log_loss_after: after.min(before),
        note,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::{seeded_rng, uniform01};
    use ndarray::Array2;

    /// Rows drawn so that the true probability is logistic(z / 3): sums
    /// three times too large. The fitted T recovers 3 (Guo et al. 2017's
    /// setting, simulated; common practice, no source, for the check).
    #[test]
    fn recovers_the_temperature_the_rows_were_drawn_with() {
        let mut rng = seeded_rng(2);
        let n = 20_000;
        let z: Vec<f64> = (0..n).map(|_| 12.0 * uniform01(&mut rng) - 6.0).collect();
        let labels: Vec<usize> = z
            .iter()
            .map(|&z| usize::from(uniform01(&mut rng) < logistic(z / 3.0)))
            .collect();
        let logits = Array2::from_shape_fn((n, 1), |(s, _)| z[s]);
        let t = fit_temperature(logits.view(), &labels, Head::Logistic).unwrap();
        assert!((t.value - 3.0).abs() < 0.15, "{t:?}");
        assert!(t.log_loss_after < t.log_loss_before);
        assert!(t.note.is_none());
        // The same rows as two softmax sums (z, 0) give the same T.
        let two = Array2::from_shape_fn((n, 2), |(s, k)| if k == 1 { z[s] } else { 0.0 });
        let soft = fit_temperature(two.view(), &labels, Head::Softmax).unwrap();
        assert!(
            (soft.value - t.value).abs() < 1e-9 * t.value,
            "{} {}",
            soft.value,
            t.value
        );
        // Calibrated rows give T near 1.
        let calibrated: Vec<usize> = z
            .iter()
            .map(|&z| usize::from(uniform01(&mut rng) < logistic(z)))
            .collect();
        let t = fit_temperature(logits.view(), &calibrated, Head::Logistic).unwrap();
        assert!((t.value - 1.0).abs() < 0.05, "{t:?}");
    }

    /// At the fitted T the derivative of the loss in 1/T is zero, and the
    /// loss is lower there than a little either side (the definition of the
    /// minimiser).
    #[test]
    fn the_fitted_temperature_minimises_the_validation_loss() {
        let mut rng = seeded_rng(5);
        let (n, k) = (300, 4);
        let logits = Array2::from_shape_fn((n, k), |_| 8.0 * uniform01(&mut rng) - 4.0);
        let labels: Vec<usize> = (0..n)
            .map(|_| (uniform01(&mut rng) * k as f64) as usize)
            .collect();
        let t = fit_temperature(logits.view(), &labels, Head::Softmax).unwrap();
        let b = 1.0 / t.value;
        let (at, slope) = loss_and_slope(logits.view(), &labels, Head::Softmax, b);
        assert!(slope.abs() < 1e-9, "{slope}");
        for step in [0.99, 1.01] {
            assert!(loss_and_slope(logits.view(), &labels, Head::Softmax, b * step).0 > at);
        }
        // Random labels: the sums carry nothing, so T is large.
        assert!(t.value > 3.0, "{t:?}");
        // Probabilities at T keep each row's order and sum to 1.
        let p = probabilities_at(logits.view(), Head::Softmax, t.value).unwrap();
        for (row, z) in p.outer_iter().zip(logits.outer_iter()) {
            assert!((row.sum() - 1.0).abs() < 1e-12);
            assert_eq!(
                crate::network::argmax(row.as_slice().unwrap()),
                crate::network::argmax(z.as_slice().unwrap())
            );
        }
    }

    #[test]
    fn separated_rows_and_bad_inputs_are_named() {
        let logits = ndarray::array![[5.0], [-5.0]];
        let t = fit_temperature(logits.view(), &[1, 0], Head::Logistic).unwrap();
        assert_eq!(t.value, TEMPERATURE_BOUNDS.0);
        assert!(t.note.unwrap().contains("separated perfectly"));
        let e = fit_temperature(logits.view(), &[], Head::Logistic)
            .unwrap_err()
            .to_string();
        assert!(e.contains("validation_share"), "{e}");
        let e = fit_temperature(logits.view(), &[1, 2], Head::Logistic)
            .unwrap_err()
            .to_string();
        assert!(e.contains("label 2"), "{e}");
        let e = fit_temperature(logits.view(), &[1, 0], Head::Identity)
            .unwrap_err()
            .to_string();
        assert!(e.contains("classifiers"), "{e}");
        let e = probabilities_at(logits.view(), Head::Logistic, 0.0)
            .unwrap_err()
            .to_string();
        assert!(e.contains("temperature"), "{e}");
    }
}
