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
//! ## Quick start in a notebook
//!
//! ```text
//! :dep stratanet = { path = ".." }
//! use stratanet::prelude::*;
//! let data = CsvOptions::new("verdict").drop(&["part_id"]).read("../demo-data/parts.csv")?;
//! let fitted = fit(&data, &FitOptions::default().hidden(&[12]), &mut seeded_rng(42))?;
//! fitted.learning_curves_chart()?      // a chart as the cell's value shows inline
//! ```
//! Every result (a table, a fit, a cross-validation, a model) shows as an
//! HTML table when it is a cell's last value, and every chart as SVG.
//!
//! ## Quick start in plain Rust
//!
//! ```
//! use stratanet::prelude::*;
//!
//! let path = concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv");
//! let data = CsvOptions::new("verdict").drop(&["part_id"]).read(path)?;
//! let options = FitOptions::default().hidden(&[6]).epochs(40);
//! let cv = cross_validate(&data, &options, &CvOptions::default(), &mut seeded_rng(42))?;
//! let accuracy = cv.metric(Metric::Accuracy)?;
//! println!("accuracy {:.3} over {} folds", accuracy.summary.mean, accuracy.values.len());
//! let fitted = fit(&data, &options, &mut seeded_rng(42))?;
//! let chart = fitted.model().decision_map_chart(&data, "bore_dev_um", "roundness_um")?;
//! assert!(chart.as_svg().starts_with("<svg"));
//! # Ok::<(), stratanet::Error>(())
//! ```
//!
//! ## Module map
//!
//! - [`prelude`]: the dozen names a notebook or a script needs.
//! - [`data`]: tables from CSV or arrays ([`Dataset`](data::Dataset)),
//!   scaling, splits and folds.
//! - [`network`]: layers, activations, output heads, initialisation,
//!   arithmetic modes, prediction.
//! - [`train`]: training one network: losses, optimisers, schedules,
//!   penalties, early stopping, gradient checks.
//! - [`fit`](mod@fit): one call from a table to a [`Model`] ([`fit()`]), with its
//!   options and provenance.
//! - [`model_file`]: the versioned model file behind [`Model::save`] and
//!   [`Model::load`], and reading new rows for a model by column name.
//! - [`validate`]: metrics, statistics, cross-validation, sweeps and their
//!   plan files, comparisons, the counted hold-out set.
//! - [`chart`]: charts as SVG (methods on results, the chart kinds on plain
//!   data in [`chart::plot`]).
//! - [`observe`]: progress events from long runs; the library never prints.
//! - [`error`]: the [`Error`] type with file, line, column, option and fix.
//! - [`rng`]: the seeded ChaCha8 generator and portable draws.
//!
//! The command line (`stratanet --help`) is the same library behind
//! [`command_line_main`]; [`check_command_line`] checks a command line
//! without running it.
//!
//! ## Features
//!
//! - `cli` (on by default): the command line, the `stratanet` binary,
//!   [`command_line_main`] and [`check_command_line`], and the argument
//!   parser they need. A notebook compiles less without it:
//!
//!   ```text
//!   :dep stratanet = { path = "..", default-features = false, features = ["export"] }
//!   ```
//! - `export` (on by default): saving charts as PDF and PNG
//!   ([`chart::Chart::save`] by extension), through resvg and svg2pdf. Off
//!   (`default-features = false`), the crate builds without them and SVG
//!   is the only chart format; the charts, model files, reports and command
//!   line are always built.
#![warn(missing_docs)]
// Without the command line, some crate-private helpers it alone calls are
// unused; that is expected, not a warning.
#![cfg_attr(not(feature = "cli"), allow(dead_code, unused_imports))]
#![doc(test(attr(deny(warnings))))]

mod atomic;
pub mod chart;
#[cfg(feature = "cli")]
mod cli;
pub mod data;
pub mod error;
pub mod export;
pub mod fit;
pub mod model_file;
pub mod network;
mod notebook;
pub mod observe;
pub mod prelude;
mod report;
pub mod rng;
#[cfg(test)]
mod test_dirs;
pub mod train;
pub mod validate;

#[cfg(feature = "cli")]
pub use cli::magic::{run, CommandError, CommandOutput};
pub use error::{Error, ErrorKind, Result};
pub use fit::{fit, FitOptions, Fitted, Model};
pub use ndarray;
pub use rand;
pub use report::{fit_csv, Analysis};
pub use rng::seeded_rng;

/// The `stratanet` binary's entry point: reads the process's arguments,
/// prepares and runs the command, prints its result (text, or one JSON
/// object with `--json`) and returns the exit code: 0 on success, 2 on bad
/// input or usage, with a message on stderr naming the file, line, column or
/// flag.
#[cfg(feature = "cli")]
pub fn command_line_main() -> i32 {
    cli::main()
}

/// Checks a command line (without the program name) as the `stratanet`
/// binary would before doing any work: the arguments parse, every option is
/// valid, and no output path is an input. Nothing is read for its content or
/// written.
///
/// # Errors
/// The message the binary would print (a usage message, or an option error
/// naming the flag).
///
/// ```
/// assert!(stratanet::check_command_line(["cv", "t.csv", "--target", "y", "--folds", "1"])
///     .unwrap_err()
///     .contains("--folds"));
/// ```
#[cfg(feature = "cli")]
pub fn check_command_line<I, S>(args: I) -> std::result::Result<(), String>
where
    I: IntoIterator<Item = S>,
    S: Into<std::ffi::OsString> + Clone,
{
    cli::check(args).map_err(|e| e.message())
}
