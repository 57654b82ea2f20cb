//! Hidden-layer activations ([`Activation`]) and output heads ([`Head`]);
//! each documents its formula and source.

use super::Real;
use crate::error::{Error, Result};
use std::fmt;
use std::str::FromStr;

/// The activation `f` of a hidden layer, applied to each unit's sum `z`:
///
/// ```text
/// identity     f(z) = z                               f'(z) = 1
/// sigmoid      f(z) = 1 / (1 + e^-z)                  f'(z) = f(z) (1 - f(z))
/// tanh         f(z) = (e^z - e^-z) / (e^z + e^-z)     f'(z) = 1 - f(z)^2
/// relu         f(z) = max(0, z)                       f'(z) = 1 if z > 0, else 0 (0 at the kink)
/// leaky_relu   f(z) = z if z > 0, else s z            f'(z) = 1 if z > 0, else s
/// ```
/// Sources: the logistic unit and its derivative as used for
/// backpropagation, Rumelhart, Hinton & Williams, "Learning representations
/// by back-propagating errors", Nature 323 (1986); the rectifier, Nair &
/// Hinton, "Rectified linear units improve restricted Boltzmann machines",
/// ICML 2010; the leaky rectifier, Maas, Hannun & Ng, "Rectifier
/// nonlinearities improve neural network acoustic models", ICML workshop
/// 2013 (slope 0.01 there). Derivatives are computed from the unit's output
/// `a = f(z)`, which the forward pass keeps.
///
/// Text form: `identity`, `sigmoid`, `tanh`, `relu`, `leaky_relu` (slope
/// 0.01) or `leaky_relu:SLOPE`.
#[derive(Clone, Copy, Debug, PartialEq)]
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

impl fmt::Display for Activation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Activation::LeakyRelu(s) => write!(f, "leaky_relu:{s}"),
            a => f.write_str(a.name()),
        }
    }
}

impl FromStr for Activation {
    type Err = Error;

    fn from_str(text: &str) -> Result<Activation> {
        let t = text.trim();
        let activation = match t {
            "identity" => Activation::Identity,
            "sigmoid" => Activation::Sigmoid,
            "tanh" => Activation::Tanh,
            "relu" => Activation::Relu,
            "leaky_relu" => Activation::LeakyRelu(0.01),
            _ => match t.strip_prefix("leaky_relu:") {
                Some(slope) => Activation::LeakyRelu(slope.trim().parse().map_err(|_| {
                    Error::option("activation", text, "SLOPE must be a number in (0, 1)")
                })?),
                None => {
                    return Err(Error::choice(
                        "activation",
                        text,
                        "identity, sigmoid, tanh, relu, leaky_relu[:SLOPE]",
                    ))
                }
            },
        };
        activation.check()?;
        Ok(activation)
    }
}

impl Activation {
    /// Checks the leaky slope.
    pub(crate) fn check(self) -> Result<()> {
        if let Activation::LeakyRelu(s) = self {
            if !(s > 0.0 && s < 1.0) {
                return Err(Error::option(
                    "activation",
                    self,
                    "the leaky_relu slope must be between 0 and 1",
                ));
            }
        }
        Ok(())
    }
}

/// The logistic sigmoid `1 / (1 + e^-z)`, without overflow for either sign
/// and with the same bits on every machine (the network's `vecmath`
/// module documents the operations and their accuracy: within 1.5 ulp in
/// f64, 1 ulp in f32).
#[inline]
pub(crate) fn sigmoid<F: Real>(z: F) -> F {
    z.logistic()
}

/// The output layer: how the last layer's sums `z` become predictions.
///
/// ```text
/// logistic   a_k = 1 / (1 + e^-z_k)                    (each output on its own)
/// softmax    a_k = e^(z_k - m) / sum_j e^(z_j - m),  m = max_j z_j
/// identity   a_k = z_k
/// ```
/// The softmax is shifted by `m` so that no exponential overflows (the
/// value is unchanged). Source for softmax outputs as class probabilities:
/// Bridle, "Probabilistic interpretation of feedforward classification
/// network outputs, with relationships to statistical pattern
/// recognition", 1990.
///
/// Text form: `logistic`, `softmax`, `identity`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
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
    #[inline]
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

    /// [`Head::apply_row`] on every row of a row-major block with `k`
    /// outputs a row, with the exponentials of the whole block computed at
    /// once on the CPU's widest vectors: the same operations, so the same
    /// bits.
    pub(crate) fn apply_block<F: Real>(self, z: &mut [F], k: usize) {
        match self {
            Head::Identity => {}
            Head::Logistic => F::logistic_slice(z),
            Head::Softmax => {
                for row in z.chunks_exact_mut(k) {
                    let m = row.iter().copied().fold(F::neg_infinity(), F::max);
                    row.iter_mut().for_each(|v| *v = *v - m);
                }
                F::exp_slice(z);
                for row in z.chunks_exact_mut(k) {
                    let mut sum = F::zero();
                    for &v in row.iter() {
                        sum = sum + v;
                    }
                    row.iter_mut().for_each(|v| *v = *v / sum);
                }
            }
        }
    }
}

crate::error::text_forms!(Head, "head", {
    Head::Logistic => "logistic",
    Head::Softmax => "softmax",
    Head::Identity => "identity",
});

#[cfg(test)]
mod tests {
    use super::*;

    // softmax([1, 2, 3]) = e^k / (e + e^2 + e^3) by the definition (Bridle
    // 1990): [0.09003057, 0.24472847, 0.66524096] to 8 digits, values
    // recomputed from the definition (e = 2.718281828...).
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
            assert_eq!(a.to_string().parse::<Activation>().unwrap(), a);
        }
        assert_eq!(
            "leaky_relu:0.2".parse::<Activation>().unwrap(),
            Activation::LeakyRelu(0.2)
        );
        assert_eq!(
            "swish".parse::<Activation>().unwrap_err().to_string(),
            "option activation = swish: must be one of identity, sigmoid, tanh, relu, leaky_relu[:SLOPE]"
        );
        assert_eq!(
            "leaky_relu:2"
                .parse::<Activation>()
                .unwrap_err()
                .to_string(),
            "option activation = leaky_relu:2: the leaky_relu slope must be between 0 and 1"
        );
        for h in [Head::Logistic, Head::Softmax, Head::Identity] {
            assert_eq!(h.to_string().parse::<Head>().unwrap(), h);
        }
    }
}
