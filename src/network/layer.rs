//! [`Layer`]: one layer's weights and biases.

use ndarray::{Array1, Array2};

/// One layer: `z = a W + b`, then the layer's function.
#[derive(Clone, PartialEq)]
pub struct Layer {
    /// Weights, `inputs x outputs`.
    pub weights: Array2<f64>,
    /// Biases, one per output unit.
    pub biases: Array1<f64>,
}

impl Layer {
    /// Number of input units.
    pub fn inputs(&self) -> usize {
        self.weights.nrows()
    }
    /// Number of output units.
    pub fn outputs(&self) -> usize {
        self.weights.ncols()
    }
}
