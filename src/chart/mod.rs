//! Charts as SVG: learning curves, decision maps, hidden-layer views,
//! confusion matrices, ROC and precision-recall curves, cross-validation
//! comparisons and network diagrams.
//!
//! **One naming scheme.** Every result that can be drawn has methods named
//! for what they show, ending in `_chart`, each returning a [`Chart`]:
//!
//! | result | charts |
//! |---|---|
//! | [`Fitted`](crate::Fitted) | `learning_curves_chart()` |
//! | [`Model`](crate::Model) | `decision_map_chart(&data, x, y)`, `decision_map_components_chart(&data)`, `hidden_layer_chart(&data, layer, view)`, `roc_chart(&data)`, `precision_recall_chart(&data)`, `network_chart()` |
//! | [`CrossValidation`](crate::validate::CrossValidation) | `scores_chart(metric)`, `learning_curves_chart()` |
//! | [`Comparison`](crate::validate::Comparison) | `scores_chart(metric, a_name, b_name)` |
//! | [`ClassificationMetrics`](crate::validate::ClassificationMetrics) | `confusion_chart()` |
//!
//! The chart kinds themselves, on plain data (vectors, `ndarray` arrays and
//! small input structs), are one module down, in [`plot`]. In an evcxr
//! notebook a `Chart` as the last expression of a cell shows as a picture
//! ([`Chart::evcxr_display`]); elsewhere save it with [`Chart::save`] or
//! take the text with [`Chart::as_svg`].
//!
//! ```
//! use stratanet::chart::plot::{learning_curves, TrainingHistory};
//! use stratanet::chart::LearningCurveOptions;
//!
//! let run = TrainingHistory::new(vec![0.9, 0.6, 0.45, 0.40, 0.38]);
//! let chart = learning_curves(&[run], &LearningCurveOptions::default())?;
//! assert!(chart.as_svg().starts_with("<svg"));
//! # Ok::<(), stratanet::Error>(())
//! ```
//!
//! ## Design
//!
//! - **Colours.** Classes and series use the qualitative palette of Okabe &
//!   Ito (2008), *Color Universal Design* ([`theme::OKABE_ITO`]), which stays
//!   distinguishable with the common colour-vision deficiencies. Two-class
//!   probability maps use Paul Tol's diverging "sunset" scheme and confusion
//!   matrices his sequential "iridescent" scheme, both from Tol (2021),
//!   *Colour Schemes*, SRON technical note ([`theme::SUNSET`],
//!   [`theme::IRIDESCENT`]).
//! - **Grey print.** Classes differ in marker shape as well as colour
//!   (circle, square, triangle, diamond, ...; [`theme::Marker`]), and line
//!   series carry sparse markers, so a chart still reads in black and white.
//! - **Layout.** White background, title at the top left, a legend column at
//!   the right of the plot (never over the data), light horizontal grid lines,
//!   and notes about skipped or thinned data at the bottom left.
//! - **Text.** One generic family, `sans-serif`, in a few fixed sizes. The
//!   layout estimates text widths (plotters' naive estimator is not used for
//!   layout; no font library is needed).
//! - **Determinism.** The same input gives a byte-identical SVG: no random
//!   identifiers, no time stamps, no hash-map iteration. Large inputs are
//!   thinned deterministically (every k-th point, or epochs averaged in
//!   blocks) above [`MAX_POINTS`] points or [`MAX_EPOCHS`] epochs, and the
//!   chart says so in a note.
//! - **No panics.** Empty or unusable input gives an [`Error`](crate::Error) of kind
//!   [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) or
//!   [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption); partly
//!   unusable input (NaN values, one class) gives a chart with a note saying
//!   what was left out.

mod compare;
mod confusion;
mod contour;
mod curves;
mod decision;
mod draw;
mod figure;
mod hidden;
mod labels;
mod learning;
mod network;
mod pca;
pub mod plot;
mod results;
mod scatter;
pub mod theme;

#[cfg(test)]
mod testing;

pub use decision::DecisionMapOptions;
pub use figure::{Chart, ChartOptions, MAX_EPOCHS, MAX_POINTS};
pub use hidden::HiddenView;
pub use labels::{axis_label, UNIT_SUFFIXES};
pub(crate) use labels::{class_names, decision_features, group_digits, stride};
pub use learning::LearningCurveOptions;

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    #[test]
    fn axis_labels_show_units() {
        assert_eq!(axis_label("bore_um"), "bore (µm)");
        assert_eq!(axis_label("roughness_UM"), "roughness (µm)");
        assert_eq!(axis_label("inlet_temp_c"), "inlet temp (°C)");
        assert_eq!(axis_label("pressure_kpa"), "pressure (kPa)");
        assert_eq!(axis_label("cycle_time_s"), "cycle time (s)");
        assert_eq!(axis_label("length_mm"), "length (mm)");
        assert_eq!(axis_label("diameter [mm]"), "diameter [mm]");
        assert_eq!(axis_label("bore (µm)"), "bore (µm)");
        assert_eq!(axis_label("wall_thickness"), "wall thickness");
        assert_eq!(axis_label("mm"), "mm");
        assert_eq!(axis_label("_mm"), "mm");
        assert_eq!(axis_label("class_a"), "class a");
        assert_eq!(axis_label("x"), "x");
    }

    #[test]
    fn digits_are_grouped() {
        assert_eq!(group_digits(0), "0");
        assert_eq!(group_digits(999), "999");
        assert_eq!(group_digits(5000), "5,000");
        assert_eq!(group_digits(100000), "100,000");
        assert_eq!(group_digits(1234567), "1,234,567");
    }

    #[test]
    fn stride_keeps_at_most_max() {
        assert_eq!(stride(10, 5000), 1);
        assert_eq!(stride(5000, 5000), 1);
        assert_eq!(stride(5001, 5000), 2);
        assert_eq!(stride(100_000, 5000), 20);
        assert_eq!(stride(0, 5000), 1);
    }

    #[test]
    fn options_are_checked() {
        let small = ChartOptions {
            width: 10,
            ..ChartOptions::default()
        };
        let err = small.check("x").unwrap_err();
        assert!(err.to_string().contains("width"), "{err}");
        assert_eq!(ChartOptions::default().check("T").unwrap(), "T");
        assert_eq!(ChartOptions::titled("Mine").check("T").unwrap(), "Mine");
    }

    #[test]
    fn evcxr_content_is_one_block() {
        let chart = Chart::from_parts("<svg></svg>\n".into(), 720, 480, "t");
        assert_eq!(
            chart.evcxr_content(),
            "EVCXR_BEGIN_CONTENT image/svg+xml\n<svg></svg>\nEVCXR_END_CONTENT"
        );
        let debug = format!("{chart:?}");
        assert!(
            debug.contains("720 x 480") && !debug.contains("<svg"),
            "{debug}"
        );
    }

    #[test]
    fn save_is_atomic_and_names_the_path_on_failure() {
        let dir = testing::preview_dir();
        let path = dir.join("save-test.svg");
        let chart = Chart::from_parts("<svg/>".into(), 240, 180, "t");
        chart.save(&path).unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "<svg/>");
        let leftovers: Vec<_> = fs::read_dir(&dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
            .collect();
        assert!(leftovers.is_empty());
        let missing = dir.join("no-such-folder").join("chart.svg");
        let err = chart.save(&missing).unwrap_err();
        assert!(err.is_io());
        assert!(err.to_string().contains("no-such-folder"), "{err}");
    }
}
