//! Reports: pages that put a whole job's tables and charts together. The
//! one-call notebook analysis ([`fit_csv`]), the page `--report` writes for
//! `fit`, `cv` and `sweep`, and the demo's summary are all built from the
//! same sections (`sections.rs`) on the same self-contained page
//! (`page.rs`: charts inline, the font embedded, no network needed).

mod analysis;
mod exhibits;
mod page;
mod sections;

pub use analysis::{fit_csv, Analysis};
pub(crate) use exhibits::{cv_charts, fit_charts};
pub(crate) use page::Page;
pub(crate) use sections::{
    comparison_section, cv_report, fit_report, fit_sections, holdout_section, sweep_report,
    table_section,
};
