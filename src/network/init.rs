//! Initial weights: [`Init`].

use super::Activation;
use crate::error::{Error, Result};
use std::fmt;
use std::str::FromStr;

/// How to draw the starting weights.
///
/// ```text
/// small uniform   w, b ~ U(-r, r)
/// Glorot uniform  w ~ U(-L, L), L = sqrt(6 / (n_in + n_out)), b = 0   Var(w) = 2 / (n_in + n_out)
/// He uniform      w ~ U(-L, L), L = sqrt(6 / n_in), b = 0              Var(w) = 2 / n_in
/// ```
/// Sources: small random starting weights to break symmetry, Rumelhart,
/// Hinton & Williams, "Learning internal representations by error
/// propagation", in Parallel Distributed Processing, vol. 1, 1986; Glorot &
/// Bengio, "Understanding the difficulty of training deep feedforward
/// neural networks", AISTATS 2010, eq. 16; He, Zhang, Ren & Sun, "Delving
/// deep into rectifiers", ICCV 2015 (variance 2 / n_in; drawn here from a
/// uniform law with that variance).
///
/// Draw order (part of the value-stability contract): layer by layer from
/// the input side; within a layer all weights in row-major order (input
/// unit, then output unit), then the biases (small uniform only).
///
/// Text form: `auto`, `glorot`, `he`, `small:RANGE` (for example `small:0.5`).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
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

impl fmt::Display for Init {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Init::Auto => f.write_str("auto"),
            Init::SmallUniform { range } => write!(f, "small:{range}"),
            Init::GlorotUniform => f.write_str("glorot"),
            Init::HeUniform => f.write_str("he"),
        }
    }
}

impl FromStr for Init {
    type Err = Error;

    fn from_str(text: &str) -> Result<Init> {
        let t = text.trim();
        let init = match t {
            "auto" => Init::Auto,
            "glorot" => Init::GlorotUniform,
            "he" => Init::HeUniform,
            _ => match t.strip_prefix("small:") {
                Some(r) => Init::SmallUniform {
                    range: r.trim().parse().map_err(|_| {
                        Error::option("init", text, "RANGE must be a number greater than 0")
                    })?,
                },
                None => {
                    return Err(Error::choice(
                        "init",
                        text,
                        "auto, glorot, he, small:RANGE (e.g. small:0.5)",
                    ))
                }
            },
        };
        init.check()?;
        Ok(init)
    }
}

impl Init {
    /// Checks the small-uniform range.
    pub(crate) fn check(self) -> Result<()> {
        if let Init::SmallUniform { range } = self {
            if !(range > 0.0 && range.is_finite()) {
                return Err(Error::option(
                    "init",
                    self,
                    "RANGE must be a finite number greater than 0",
                ));
            }
        }
        Ok(())
    }

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
