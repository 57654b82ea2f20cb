//! Hidden-layer activations and output heads.
//!
//! ```text
//! identity     f(z) = z                               f'(z) = 1
//! sigmoid      f(z) = 1 / (1 + e^-z)                  f'(z) = f(z) (1 - f(z))
//! tanh         f(z) = (e^z - e^-z) / (e^z + e^-z)     f'(z) = 1 - f(z)^2
//! relu         f(z) = max(0, z)                       f'(z) = 1 if z > 0, else 0 (0 at the kink)
//! leaky relu   f(z) = z if z > 0, else s z            f'(z) = 1 if z > 0, else s
//! softmax      p_k = e^(z_k - m) / sum_j e^(z_j - m), m = max_j z_j (shifted for stability)
//! ```
//! Sources: the logistic unit and its derivative as used for backpropagation,
//! Rumelhart, Hinton & Williams, "Learning representations by
//! back-propagating errors", Nature 323 (1986); the rectifier, Nair & Hinton,
//! "Rectified linear units improve restricted Boltzmann machines", ICML 2010;
//! leaky rectifier, Maas, Hannun & Ng, "Rectifier nonlinearities improve
//! neural network acoustic models", ICML workshop 2013 (slope 0.01 there);
//! softmax, Bridle, "Probabilistic interpretation of feedforward
//! classification network outputs", 1990. Every derivative is computed from
//! the unit's *output* `a = f(z)`, which is what the forward pass keeps.

use super::Real;
use serde::{Deserialize, Serialize};

/// The activation of a hidden layer.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Activation {
    /// `f(z) = z`.
    Identity,
    /// The logistic sigmoid.
    Sigmoid,
    /// The hyperbolic tangent.
    Tanh,
    /// The rectifier `max(0, z)`.
    Relu,
    /// The leaky rectifier with the given negative-side slope (in `(0, 1)`).
    LeakyRelu(f64),
}

impl Activation {
    /// All plain activations (leaky ReLU with slope 0.01), for tests and sweeps.
    pub const ALL: [Activation; 5] = [
        Activation::Identity,
        Activation::Sigmoid,
        Activation::Tanh,
        Activation::Relu,
        Activation::LeakyRelu(0.01),
    ];

    /// A short name: `identity`, `sigmoid`, `tanh`, `relu`, `leaky_relu`.
    pub fn name(&self) -> &'static str {
        match self {
            Activation::Identity => "identity",
            Activation::Sigmoid => "sigmoid",
            Activation::Tanh => "tanh",
            Activation::Relu => "relu",
            Activation::LeakyRelu(_) => "leaky_relu",
        }
    }

    /// Parses a name as [`Activation::name`] gives it (`leaky_relu` gets slope 0.01).
    pub fn from_name(name: &str) -> Option<Activation> {
        Some(match name {
            "identity" | "linear" => Activation::Identity,
            "sigmoid" | "logistic" => Activation::Sigmoid,
            "tanh" => Activation::Tanh,
            "relu" => Activation::Relu,
            "leaky_relu" => Activation::LeakyRelu(0.01),
            _ => return None,
        })
    }

    /// `f(z)` for one value.
    #[inline]
    pub(crate) fn value<F: Real>(self, z: F) -> F {
        match self {
            Activation::Identity => z,
            Activation::Sigmoid => sigmoid(z),
            Activation::Tanh => z.tanh_det(),
            Activation::Relu => {
                if z > F::zero() {
                    z
                } else {
                    F::zero()
                }
            }
            Activation::LeakyRelu(s) => {
                if z > F::zero() {
                    z
                } else {
                    z * F::from_f64(s)
                }
            }
        }
    }

    /// `f'(z)` written in terms of the output `a = f(z)`.
    #[inline]
    pub(crate) fn derivative_from_output<F: Real>(self, a: F) -> F {
        match self {
            Activation::Identity => F::one(),
            Activation::Sigmoid => a * (F::one() - a),
            Activation::Tanh => F::one() - a * a,
            Activation::Relu => {
                if a > F::zero() {
                    F::one()
                } else {
                    F::zero()
                }
            }
            Activation::LeakyRelu(s) => {
                if a > F::zero() {
                    F::one()
                } else {
                    F::from_f64(s)
                }
            }
        }
    }
}

/// The logistic sigmoid, evaluated without overflow for either sign.
#[inline]
pub(crate) fn sigmoid<F: Real>(z: F) -> F {
    if z >= F::zero() {
        F::one() / (F::one() + (-z).exp_det())
    } else {
        let e = z.exp_det();
        e / (F::one() + e)
    }
}

/// The output layer: how the last layer's sums become predictions.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Head {
    /// A logistic sigmoid on each output (one output for two classes: the
    /// probability of the second class).
    Logistic,
    /// Softmax over the outputs (one per class).
    Softmax,
    /// Outputs as they are (regression).
    Identity,
}

impl Head {
    /// A short name: `logistic`, `softmax`, `identity`.
    pub fn name(&self) -> &'static str {
        match self {
            Head::Logistic => "logistic",
            Head::Softmax => "softmax",
            Head::Identity => "identity",
        }
    }

    /// Applies the head to one row of output sums in place.
    pub(crate) fn apply_row<F: Real>(self, z: &mut [F]) {
        match self {
            Head::Identity => {}
            Head::Logistic => z.iter_mut().for_each(|v| *v = sigmoid(*v)),
            Head::Softmax => {
                let m = z.iter().copied().fold(F::neg_infinity(), F::max);
                let mut sum = F::zero();
                for v in z.iter_mut() {
                    *v = (*v - m).exp_det();
                    sum = sum + *v;
                }
                z.iter_mut().for_each(|v| *v = *v / sum);
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // CS231n course notes, "Linear classification" (softmax section), Stanford
    // 2016-: softmax([1, 2, 3]) = [0.09003057, 0.24472847, 0.66524096].
    #[test]
    fn softmax_reference_values() {
        let mut z = [1.0f64, 2.0, 3.0];
        Head::Softmax.apply_row(&mut z);
        for (p, e) in z.iter().zip([0.09003057, 0.24472847, 0.66524096]) {
            assert!((p - e).abs() < 5e-9, "{p} vs {e}");
        }
    }

    #[test]
    fn sigmoid_is_stable_at_extremes() {
        assert_eq!(sigmoid(-1000.0f64), 0.0);
        assert_eq!(sigmoid(1000.0f64), 1.0);
        assert_eq!(sigmoid(0.0f64), 0.5);
    }

    #[test]
    fn names_round_trip() {
        for a in Activation::ALL {
            assert_eq!(Activation::from_name(a.name()), Some(a));
        }
    }
}
