//! Charts as SVG (and PDF and PNG): learning curves, decision maps,
//! hidden-layer views, confusion matrices, ROC and precision-recall curves,
//! rankings of configurations, weights, regression fits, calibration,
//! importance, nested cross-validation and a table's columns.
//!
//! **One naming scheme.** Every result that can be drawn has methods named
//! for what they show, ending in `_chart`, each returning a [`Chart`]:
//!
//! | result | charts |
//! |---|---|
//! | [`Fitted`](crate::Fitted) | `learning_curves_chart()` |
//! | [`Model`](crate::Model) | `decision_map_chart(&data, x, y)`, `components_chart(&data)`, `hidden_layer_chart(&data, layer, view)`, `roc_chart(&data)`, `precision_recall_chart(&data)`, `predicted_actual_chart(&data)`, `residuals_chart(&data)`, `weights_chart()` |
//! | [`CrossValidation`](crate::validate::CrossValidation) | `scores_chart(metric)`, `learning_curves_chart()` |
//! | [`Comparison`](crate::validate::Comparison) | `scores_chart(metric, a_name, b_name)` |
//! | [`SweepTable`](crate::validate::SweepTable) | `scores_chart()` |
//! | [`ClassificationMetrics`](crate::validate::ClassificationMetrics) | `confusion_chart()` |
//!
//! Methods that draw rows of a table have a `_with` form taking
//! [`ChartOptions`], whose `rows` names the rows for the title and
//! subtitle (`model.roc_chart_with(&val, &ChartOptions::default().rows("validation rows"))`).
//! The chart kinds themselves, on plain data (vectors, `ndarray` arrays
//! and small input structs), are one module down, in [`plot`]; kinds
//! whose results other parts of the library compute on their own
//! (reliability bins, permutation importances, nested cross-validation,
//! a table's column overview) are there too. In an evcxr notebook a
//! `Chart` as the last expression of a cell shows as a picture
//! ([`Chart::evcxr_display`]); elsewhere save it with [`Chart::save`] (SVG,
//! PDF or PNG by extension) or take the text with [`Chart::as_svg`].
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
//!   distinguishable with the common colour-vision deficiencies. Signed
//!   values (two-class probability maps, weights) use Paul Tol's diverging
//!   "sunset" scheme and confusion matrices his sequential "iridescent"
//!   scheme, both from Tol (2021), *Colour Schemes*, SRON technical note
//!   ([`theme::SUNSET`], [`theme::IRIDESCENT`]).
//! - **Grey print.** Classes differ in marker shape as well as colour
//!   (circle, square, triangle, diamond, ...; [`theme::Marker`]); lines
//!   differ in dash pattern as well as colour ([`theme::Dash`]); negative
//!   weights carry a bar. Lines carry no markers: a marker is a data point.
//! - **Layout.** White background; title and a subtitle saying what is
//!   shown, from which model and which rows (with their count) at the top
//!   left; the legend as a band under them, entries flowing left to right,
//!   colour scales included, so it never sits on the data and takes no
//!   width from the plots; notes about skipped, thinned or held data at
//!   the foot. The height follows the content when it is not given.
//! - **Text.** Liberation Sans, shipped in the crate (`src/chart/fonts`,
//!   SIL Open Font License 1.1) and measured with its own advance widths,
//!   so the layout is the renderer's; the SVG names metric-compatible
//!   faces after it. The smallest text is 7.5 pt at the chart's physical
//!   size ([`ChartOptions`]).
//! - **Determinism.** The same input gives a byte-identical SVG, PDF and
//!   PNG: no random identifiers, no time stamps, no hash-map iteration, no
//!   machine fonts. Large inputs are thinned deterministically (every k-th
//!   point, or epochs averaged in blocks) above [`MAX_POINTS`] points or
//!   [`MAX_EPOCHS`] epochs, and the chart says so in a note.
//! - **No panics.** Empty or unusable input gives an [`Error`](crate::Error) of kind
//!   [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) or
//!   [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption); partly
//!   unusable input (NaN values, one class) gives a chart with a note saying
//!   what was left out.
//!
//! ## Adding a chart kind
//!
//! Write a file with a plain-data input, a `prepare` function that turns
//! it into a `draw::Figure` (title, subtitle, legend entries, notes, and
//! panels of marks in data coordinates; unit tests check this) and a
//! public function that calls `prepare` and `draw::render`. Re-export it
//! in [`plot`], and add a `*_chart` method in `results` when a result type
//! holds the data. The drawing layer (`draw/`) lays out and draws every
//! figure the same way.

mod columns;
mod compare;
mod components;
mod confusion;
mod contour;
mod curves;
mod decision;
mod draw;
#[cfg(feature = "export")]
mod export;
mod finished;
pub(crate) mod fonts;
mod hidden;
mod importance;
mod labels;
mod learning;
mod nested;
mod options;
mod pca;
pub mod plot;
mod regression;
mod reliability;
mod results;
mod scatter;
pub mod theme;
mod weights;

#[cfg(test)]
pub(crate) mod testing;

pub use decision::DecisionMapOptions;
pub use finished::{Chart, PNG_DPI};
pub use hidden::HiddenView;
pub use labels::{axis_label, UNIT_SUFFIXES};
pub(crate) use labels::{class_names, decision_features, group_digits, stride};
pub use learning::LearningCurveOptions;
pub use options::{ChartOptions, MAX_EPOCHS, MAX_POINTS, PX_PER_MM};
pub(crate) use reliability::wilson;
pub(crate) use results::{configuration_name, model_line, named_reading, source_name};

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
        let err = small.check_size().unwrap_err();
        assert!(err.to_string().contains("width"), "{err}");
        assert!(ChartOptions::default().height(100).check_size().is_err());
        assert_eq!(ChartOptions::default().title_or("T"), "T");
        assert_eq!(ChartOptions::titled("Mine").title_or("T"), "Mine");
        // Journal column widths (common practice, no source): 85 and 175 mm.
        assert_eq!(ChartOptions::single_column().width, 321);
        assert_eq!(ChartOptions::double_column().width, 661);
    }

    #[test]
    fn evcxr_content_is_one_block() {
        let chart = Chart::from_parts("<svg></svg>\n".into(), 720, 480, "t", Default::default());
        assert_eq!(
            chart.evcxr_content(),
            "EVCXR_BEGIN_CONTENT image/svg+xml\n<svg></svg>\nEVCXR_END_CONTENT"
        );
        let debug = format!("{chart:?}");
        assert!(
            debug.contains("720 x 480 px (190 x 127 mm)") && !debug.contains("<svg"),
            "{debug}"
        );
    }

    #[test]
    fn save_is_atomic_and_names_the_path_on_failure() {
        let dir = crate::test_dirs::fresh_dir("chart-save");
        let path = dir.join("save-test.svg");
        let chart = Chart::from_parts("<svg/>".into(), 240, 180, "t", Default::default());
        chart.save(&path).unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "<svg/>");
        // Saving again replaces the file. The folder is fresh, so it holds
        // the chart and nothing else: no temporary file of the atomic
        // writer (`.save-test.svg.tmp-PID-N`) is left beside it.
        chart.save(&path).unwrap();
        let names: Vec<String> = fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert_eq!(names, ["save-test.svg"]);
        let missing = dir.join("no-such-folder").join("chart.svg");
        let err = chart.save(&missing).unwrap_err();
        assert!(err.is_io());
        assert!(err.to_string().contains("no-such-folder"), "{err}");
        let err = chart.save(dir.join("chart.jpeg")).unwrap_err();
        assert!(err.to_string().contains(".svg, .pdf or .png"), "{err}");
    }

    #[cfg(feature = "export")]
    fn roc_column() -> Chart {
        use plot::{roc_curves, Curve};
        let curve = Curve {
            label: "fail".into(),
            points: vec![(0.0, 0.0), (0.1, 0.6), (0.3, 0.9), (1.0, 1.0)],
            summary: Some(0.87),
        };
        roc_curves(&[curve], &ChartOptions::single_column()).unwrap()
    }

    /// Reruns give the same bytes, and the files have the chart's physical
    /// size: an 85 mm wide page (240.75 pt) and a 300 dpi image (1,004 px).
    #[cfg(feature = "export")]
    #[test]
    fn png_and_pdf_are_byte_identical_and_sized() {
        let c = roc_column();
        let (png, pdf) = (c.to_png(300.0).unwrap(), c.to_pdf().unwrap());
        // svg2pdf's order of embedded fonts varies from run to run (a hash
        // map); ten runs would catch it with near certainty.
        for _ in 0..10 {
            assert!(
                pdf == roc_column().to_pdf().unwrap(),
                "PDF bytes differ between runs"
            );
        }
        assert_eq!(png, roc_column().to_png(300.0).unwrap());
        assert_eq!(&png[1..4], b"PNG");
        let width = u32::from_be_bytes(png[16..20].try_into().unwrap());
        assert_eq!(width, (321.0f64 * 300.0 / 96.0).ceil() as u32);
        assert!(png.windows(4).any(|w| w == b"pHYs"));
        let text = String::from_utf8_lossy(&pdf);
        assert!(text.starts_with("%PDF-"));
        assert!(text.contains("240.75"), "the page is 85 mm wide");
        assert!(
            !text.contains("/Font"),
            "text is drawn as outlines, no font needed"
        );
        assert!(!text.contains("CreationDate"), "no time stamp");
    }
}
