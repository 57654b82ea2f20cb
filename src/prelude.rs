//! The names a notebook or a script needs: `use stratanet::prelude::*;`.

pub use crate::data::{CsvOptions, Dataset, Scaling};
pub use crate::error::{Error, Result};
pub use crate::fit::{fit, FitOptions};
pub use crate::network::{Activation, Head, Init, Network};
pub use crate::rng::seeded_rng;
pub use crate::train::{train, Optimiser, TrainingOptions};
