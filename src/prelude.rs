//! The names a notebook or a script needs: `use stratanet::prelude::*;`.
//!
//! Kept small on purpose; everything else is one path away
//! (`stratanet::network::Init`, `stratanet::train::Optimiser`, ...).

pub use crate::chart;
pub use crate::data::{CsvOptions, Dataset};
pub use crate::error::Result;
pub use crate::fit::{fit, FitOptions, Model};
pub use crate::network::Activation;
pub use crate::report::fit_csv;
pub use crate::rng::seeded_rng;
pub use crate::validate::{
    compare_configurations, cross_validate, sweep, CvOptions, Grid, HoldOut, Metric,
};
