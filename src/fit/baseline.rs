//! What a fit is compared with: [`Baseline`], the loss of predicting the
//! same thing for every row, whatever its inputs.
//!
//! ```text
//! classes   every row gets the training rows' class shares p_c = n_c / n
//!           (a logistic head: p of the second class)
//! numbers   every row gets the training mean (0 in standardised units;
//!           its R^2 on the training rows is 0 by definition)
//! ```
//! Its losses are computed with the fit's own loss, in the units the
//! network learns (scaled targets), with the same class weights, on the
//! same training and validation rows, so they compare directly with the
//! fit's (common practice, no source).

use crate::data::Target;
use crate::network::Head;
use crate::train::{constant_loss, Loss};
use ndarray::{Array2, ArrayView2};

/// The loss of predicting without the inputs:
///
/// ```text
/// classes   every row gets the training rows' class shares p_c = n_c / n
/// numbers   every row gets the training mean (R^2 0 on the training rows)
/// ```
/// computed with the fit's own loss, in the units the network learns, with
/// the same class weights, on the same training and validation rows
/// (common practice, no source).
#[derive(Clone, Debug, PartialEq)]
pub struct Baseline {
    /// What it predicts, in words ("the training class shares").
    pub description: String,
    /// Its mean loss on the training rows (`None` where the loss is not
    /// defined for it).
    pub training_loss: Option<f64>,
    /// Its mean loss on the validation rows, when there are some.
    pub validation_loss: Option<f64>,
}

/// A target in the network's encoding (as [`crate::train`] encodes it).
fn encoded(target: &Target, head: Head) -> Array2<f64> {
    match target {
        Target::Classes { labels, names } => {
            if head == Head::Logistic && names.len() == 2 {
                Array2::from_shape_fn((labels.len(), 1), |(i, _)| labels[i] as f64)
            } else {
                let mut y = Array2::zeros((labels.len(), names.len()));
                for (i, &l) in labels.iter().enumerate() {
                    y[[i, l]] = 1.0;
                }
                y
            }
        }
        Target::Values { values, .. } => values.clone(),
    }
}

/// Column means of `y`.
fn means(y: ArrayView2<'_, f64>) -> Vec<f64> {
    let n = y.nrows().max(1) as f64;
    (0..y.ncols())
        .map(|j| y.column(j).iter().sum::<f64>() / n)
        .collect()
}

impl Baseline {
    /// The baseline of a fit whose network learns `train` (and is validated
    /// on `validation`) through `head` and `loss`, rows weighted as given.
    pub(crate) fn of(
        head: Head,
        loss: Loss,
        train: &Target,
        validation: Option<&Target>,
        train_weights: Option<&[f64]>,
        validation_weights: Option<&[f64]>,
        scaled: bool,
    ) -> Baseline {
        let y = encoded(train, head);
        let outputs = means(y.view());
        let description = match train {
            Target::Classes { .. } => "predicting the training class shares for every row".into(),
            Target::Values { .. } if scaled => {
                "predicting the training mean for every row (R\u{b2} 0 on the training rows)".into()
            }
            Target::Values { .. } => "predicting the training mean for every row".into(),
        };
        Baseline {
            description,
            training_loss: constant_loss(head, loss, &outputs, y.view(), train_weights),
            validation_loss: validation.and_then(|v| {
                constant_loss(
                    head,
                    loss,
                    &outputs,
                    encoded(v, head).view(),
                    validation_weights,
                )
            }),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Two classes in shares 3/4 and 1/4: the binary cross-entropy of the
    // shares is the entropy -(3/4 ln 3/4 + 1/4 ln 1/4) = 0.5623351446
    // (Shannon's entropy in nats; recomputed from the definition).
    #[test]
    fn class_shares_cost_their_entropy() {
        let t = Target::Classes {
            labels: vec![0, 0, 0, 1],
            names: vec!["a".into(), "b".into()],
        };
        let b = Baseline::of(
            Head::Logistic,
            Loss::CrossEntropy,
            &t,
            None,
            None,
            None,
            false,
        );
        let h = -(0.75f64 * 0.75f64.ln() + 0.25 * 0.25f64.ln());
        assert!((b.training_loss.unwrap() - h).abs() < 1e-15);
        let s = Baseline::of(
            Head::Softmax,
            Loss::CrossEntropy,
            &t,
            Some(&t),
            None,
            None,
            false,
        );
        assert!((s.validation_loss.unwrap() - h).abs() < 1e-15);
    }

    // The mean of standardised values is 0 and their population variance
    // 1, so the mean's half squared error is 1/2.
    #[test]
    fn the_mean_of_standardised_values_costs_one_half() {
        let t = Target::Values {
            values: ndarray::array![[-1.0], [1.0]],
            names: vec!["y".into()],
        };
        let b = Baseline::of(
            Head::Identity,
            Loss::SquaredError,
            &t,
            None,
            None,
            None,
            true,
        );
        assert_eq!(b.training_loss, Some(0.5));
    }
}
