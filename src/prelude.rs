//! The names a notebook or a script needs: `use stratanet::prelude::*;`.
//!
//! Kept small on purpose; everything else is one path away
//! (`stratanet::network::Init`, `stratanet::train::Optimiser`,
//! `stratanet::chart::HiddenView`, ...). Charts are methods on results
//! (`fitted.learning_curves_chart()`), so they need no import.

pub use crate::data::{CsvOptions, Dataset};
pub use crate::error::Result;
pub use crate::fit::{fit, FitOptions, Model};
pub use crate::network::Activation;
pub use crate::report::fit_csv;
pub use crate::rng::seeded_rng;
pub use crate::validate::{
    compare_configurations, cross_validate, CvOptions, HoldOut, KeyResults, Metric,
};
