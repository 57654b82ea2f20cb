//! Initial weights.
//!
//! ```text
//! small uniform   w, b ~ U(-r, r)                         (r = 0.5 by default)
//! Glorot uniform  w ~ U(-L, L), L = sqrt(6 / (n_in + n_out)), b = 0   Var(w) = 2 / (n_in + n_out)
//! He uniform      w ~ U(-L, L), L = sqrt(6 / n_in), b = 0              Var(w) = 2 / n_in
//! ```
//! Sources: small random starting weights to break symmetry, Rumelhart,
//! Hinton & Williams, "Learning internal representations by error
//! propagation" (1986); Glorot & Bengio, "Understanding the difficulty of
//! training deep feedforward neural networks", AISTATS 2010, eq. 16; He,
//! Zhang, Ren & Sun, "Delving deep into rectifiers", ICCV 2015 (variance
//! 2 / n_in; drawn here from a uniform law with that variance).
//!
//! Draw order (part of the value-stability contract): layer by layer from
//! the input side; within a layer all weights in row-major order (input
//! unit, then output unit), then the biases.

use super::Activation;
use serde::{Deserialize, Serialize};

/// How to draw the starting weights.
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Init {
    /// Glorot uniform for sigmoid, tanh and identity layers, He uniform for
    /// rectifier layers (the output layer counts as its hidden activation's
    /// neighbour: Glorot).
    #[default]
    Auto,
    /// Weights and biases uniform on `(-range, range)`: the classic setup.
    SmallUniform {
        /// Half-width of the interval (must be > 0).
        range: f64,
    },
    /// Glorot/Xavier uniform.
    GlorotUniform,
    /// He uniform.
    HeUniform,
}

impl Init {
    /// The weight half-width `L` and whether biases are drawn too.
    pub(crate) fn limit(
        self,
        n_in: usize,
        n_out: usize,
        activation: Option<Activation>,
    ) -> (f64, bool) {
        let glorot = (6.0 / (n_in + n_out) as f64).sqrt();
        let he = (6.0 / n_in as f64).sqrt();
        match self {
            Init::SmallUniform { range } => (range, true),
            Init::GlorotUniform => (glorot, false),
            Init::HeUniform => (he, false),
            Init::Auto => match activation {
                Some(Activation::Relu) | Some(Activation::LeakyRelu(_)) => (he, false),
                _ => (glorot, false),
            },
        }
    }
}
