//! # stratanet
//!
//! Fit, validate and chart small multi-layer perceptrons (networks of a few
//! layers trained by backpropagation) on tabular measurements, from an evcxr
//! Jupyter notebook, plain Rust, or the `stratanet` command line.
//!
//! Every random draw comes from a generator you pass in ([`seeded_rng`]), so
//! the same data, options and seed give bit-identical weights, metrics and
//! charts on any number of threads.
//!
//! ## Module map
//! - [`data`]: tables from CSV or arrays, scaling, splits and folds.
//! - [`network`]: layers, activations, output heads, initialisation, prediction.
//! - [`train`]: losses, optimisers, schedules, early stopping, gradient checks.
//! - [`model_file`]: saving and loading fitted models, reading new rows by column name.
//! - [`error`]: the [`Error`] type with file, line, column and fix.
//! - [`rng`]: the seeded ChaCha8 generator and portable draws.
#![warn(missing_docs)]
#![doc(test(attr(deny(warnings))))]

mod atomic;
pub mod chart;
pub mod cli;
pub mod data;
pub mod error;
pub mod fit;
pub mod model_file;
pub mod network;
pub mod notebook;
pub mod prelude;
mod report;
pub mod rng;
pub mod train;
pub mod validate;

pub use error::{Error, ErrorKind, Result};
pub use rng::seeded_rng;

pub use fit::{fit, fit_with_seed, FitOptions, Fitted, Model, Provenance};
pub use model_file::{load as load_model, save as save_model};
pub use ndarray;
pub use rand;
pub use report::{analyse, fit_csv, Analysis};
