//! Reports: pages that put a whole job's tables and charts together (the
//! one-call notebook analysis, [`fit_csv`]).

mod analysis;

pub use analysis::{fit_csv, Analysis};
