//! Multi-layer perceptrons: layers, activations, output heads, prediction.
//!
//! A [`Network`] maps a row of inputs `x` through layers
//!
//! ```text
//! a_0 = x,   z_l = a_{l-1} W_l + b_l,   a_l = f_l(z_l)   (l = 1..L)
//! ```
//! where `W_l` has one row per input unit and one column per output unit,
//! `b_l` holds one bias per output unit (biases are explicit parameters),
//! `f_l` is the hidden activation for `l < L` and the [`Head`] for `l = L`.
//! Rows are processed as a matrix (one sample a row), so each layer is one
//! matrix product.

mod activation;
mod forward;
mod init;
#[cfg(test)]
mod kernel_value_tests;
pub(crate) mod kernels;
mod layer;
mod perceptron;
mod real;
mod vecmath;

pub(crate) use activation::sigmoid;
pub use activation::{Activation, Head};
pub(crate) use forward::{Forward, Params, EVAL_CHUNK};
pub use init::Init;
pub use kernels::{fast_mode_fuses, kernel_name, Arithmetic};
#[doc(hidden)]
pub use kernels::{matrix_product_f32, matrix_product_f64};
pub use layer::Layer;
pub(crate) use perceptron::{argmax, classes_from_outputs, probabilities_from_outputs};
pub use perceptron::{Network, Precision, MAX_PARAMETERS};
pub(crate) use real::Real;
