//! The faces every chart is measured, rendered and shown in: Liberation
//! Sans Regular and Bold 2.1.5, unmodified, under the SIL Open Font
//! License 1.1 (the `LICENSE` file here; not the crate's licence).

/// Liberation Sans Regular 2.1.5.
pub(crate) const REGULAR: &[u8] = include_bytes!("LiberationSans-Regular.ttf");
/// Liberation Sans Bold 2.1.5.
pub(crate) const BOLD: &[u8] = include_bytes!("LiberationSans-Bold.ttf");
