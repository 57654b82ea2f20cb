//! Charts as SVG: learning curves, decision maps, hidden-layer views,
//! confusion matrices, ROC and precision-recall curves, cross-validation
//! comparisons and network diagrams.
//!
//! Every chart function takes plain data (vectors, `ndarray` arrays and the
//! small input structs defined here) and returns a [`Chart`], which holds the
//! SVG text. In an evcxr notebook a `Chart` as the last expression of a cell
//! shows as a picture ([`Chart::evcxr_display`]); elsewhere save it with
//! [`Chart::save`] or take the text with [`Chart::as_svg`].
//!
//! ```
//! use stratanet::chart::{learning_curves, LearningCurveOptions, TrainingHistory};
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
//! - **No panics.** Empty or unusable input gives an [`Error`] of kind
//!   [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) or
//!   [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption); partly
//!   unusable input (NaN values, one class) gives a chart with a note saying
//!   what was left out.

use std::fmt;
use std::path::Path;

use crate::{Error, Result};

mod compare;
mod confusion;
mod contour;
mod curves;
mod decision;
mod draw;
mod hidden;
mod learning;
mod network;
mod pca;
mod results;
mod scatter;
pub mod theme;

#[cfg(test)]
mod testing;

pub use compare::{cross_validation_comparison, ConfigurationScores};
pub use confusion::confusion_matrix;
pub use curves::{precision_recall_curves, roc_curves, Curve};
pub use decision::{decision_map, ClassPoints, DecisionMapOptions, CONTOUR_STROKE, CONTOUR_WIDTH};
pub use hidden::{hidden_layer, HiddenView};
pub use learning::{learning_curves, LearningCurveOptions, TrainingHistory, YScale};
pub use network::{network_diagram, NetworkWeights, MAX_NODES_PER_LAYER};
pub use pca::{principal_components_2, PrincipalComponents};
pub use results::{
    confusion, cv_comparison, decision_boundary, decision_boundary_principal,
    decision_boundary_with, hidden_layer_view, network, precision_recall, roc, training_curves,
    training_curves_with,
};

/// Scatter charts draw at most this many points; above it they draw every
/// k-th point (k = ceil(n / MAX_POINTS)) and say so in a note.
pub const MAX_POINTS: usize = 5_000;

/// Learning curves draw at most this many epochs per line; above it they
/// average the epochs in blocks of k (k = ceil(epochs / MAX_EPOCHS)) and say
/// so in a note.
pub const MAX_EPOCHS: usize = 2_000;

/// A finished chart: SVG text plus its size and title.
///
/// Show it in an evcxr notebook by leaving it as a cell's last expression
/// (see [`Chart::evcxr_display`]), save it with [`Chart::save`], or take the
/// text with [`Chart::as_svg`] / [`Chart::into_svg`].
#[derive(Clone, PartialEq, Eq)]
pub struct Chart {
    svg: String,
    width: u32,
    height: u32,
    title: String,
}

impl Chart {
    pub(crate) fn from_parts(svg: String, width: u32, height: u32, title: &str) -> Chart {
        Chart {
            svg,
            width,
            height,
            title: title.to_string(),
        }
    }

    /// The SVG document.
    pub fn as_svg(&self) -> &str {
        &self.svg
    }

    /// The SVG document, taking ownership.
    pub fn into_svg(self) -> String {
        self.svg
    }

    /// Width in pixels.
    pub fn width(&self) -> u32 {
        self.width
    }

    /// Height in pixels.
    pub fn height(&self) -> u32 {
        self.height
    }

    /// The title drawn at the top of the chart.
    pub fn title(&self) -> &str {
        &self.title
    }

    /// Writes the SVG to `path`, atomically: the text goes to a temporary
    /// file in the same folder, which is then renamed over `path`, so a reader
    /// never sees half a file.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::Io`](crate::ErrorKind::Io) naming `path` when the folder
    /// does not exist or cannot be written.
    ///
    /// # Example
    ///
    /// ```no_run
    /// # use stratanet::chart::{confusion_matrix, ChartOptions};
    /// let chart = confusion_matrix(&[vec![5, 1], vec![2, 7]], &["pass", "fail"], &ChartOptions::default())?;
    /// chart.save("confusion.svg")?;
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn save(&self, path: impl AsRef<Path>) -> Result<()> {
        // The crate's one atomic writer: a temporary file in the same
        // folder, synced, then renamed over `path`.
        let path = path.as_ref();
        crate::atomic::write_file(path, |w| {
            w.write_all(self.svg.as_bytes())
                .map_err(|e| Error::io(path, "writing the chart", e))
        })
    }

    /// Shows the chart in an evcxr Jupyter notebook: prints the SVG between
    /// evcxr's `EVCXR_BEGIN_CONTENT image/svg+xml` and `EVCXR_END_CONTENT`
    /// markers in one write. evcxr calls this for a cell's last expression,
    /// so no import and no evcxr dependency is needed.
    pub fn evcxr_display(&self) {
        println!("{}", self.evcxr_content());
    }

    fn evcxr_content(&self) -> String {
        format!(
            "EVCXR_BEGIN_CONTENT image/svg+xml\n{}\nEVCXR_END_CONTENT",
            self.svg.trim_end()
        )
    }
}

impl fmt::Debug for Chart {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "Chart {{ title: {:?}, {} x {} px, {} bytes of SVG }}",
            self.title,
            self.width,
            self.height,
            self.svg.len()
        )
    }
}

/// Size, title and axis labels shared by every chart kind.
///
/// Fields left as `None` get a default chosen by the chart (the chart kind as
/// title, column names through [`axis_label`] as axis labels). Charts
/// without such an axis ignore the label: the network diagram both, the
/// cross-validation comparison `y_label` (its rows are named). In learning
/// curves `y_label` names the loss panel.
#[derive(Clone, Debug, PartialEq)]
pub struct ChartOptions {
    /// Width in pixels, 240 to 4096. Default 720.
    pub width: u32,
    /// Height in pixels, 180 to 4096. Default 480.
    pub height: u32,
    /// Title drawn at the top left.
    pub title: Option<String>,
    /// Label under the horizontal axis.
    pub x_label: Option<String>,
    /// Label beside the vertical axis.
    pub y_label: Option<String>,
}

impl Default for ChartOptions {
    fn default() -> ChartOptions {
        ChartOptions {
            width: 720,
            height: 480,
            title: None,
            x_label: None,
            y_label: None,
        }
    }
}

impl ChartOptions {
    /// The default options with a title.
    pub fn titled(title: impl Into<String>) -> ChartOptions {
        ChartOptions {
            title: Some(title.into()),
            ..ChartOptions::default()
        }
    }

    /// Checks the size and returns the title to use.
    pub(crate) fn check(&self, default_title: &str) -> Result<String> {
        if !(240..=4096).contains(&self.width) {
            return Err(Error::option(
                "width",
                self.width,
                "must be between 240 and 4096 pixels",
            ));
        }
        if !(180..=4096).contains(&self.height) {
            return Err(Error::option(
                "height",
                self.height,
                "must be between 180 and 4096 pixels",
            ));
        }
        Ok(match &self.title {
            Some(title) => title.clone(),
            None => default_title.to_string(),
        })
    }

    pub(crate) fn x_label_or(&self, name: &str) -> String {
        self.x_label.clone().unwrap_or_else(|| axis_label(name))
    }

    pub(crate) fn y_label_or(&self, name: &str) -> String {
        self.y_label.clone().unwrap_or_else(|| axis_label(name))
    }
}

/// Unit suffixes that [`axis_label`] recognises, as (suffix, unit shown).
pub const UNIT_SUFFIXES: &[(&str, &str)] = &[
    ("nm", "nm"),
    ("um", "µm"),
    ("mm", "mm"),
    ("cm", "cm"),
    ("m", "m"),
    ("km", "km"),
    ("mg", "mg"),
    ("g", "g"),
    ("kg", "kg"),
    ("ms", "ms"),
    ("s", "s"),
    ("min", "min"),
    ("h", "h"),
    ("hz", "Hz"),
    ("khz", "kHz"),
    ("c", "°C"),
    ("degc", "°C"),
    ("pa", "Pa"),
    ("kpa", "kPa"),
    ("mpa", "MPa"),
    ("bar", "bar"),
    ("v", "V"),
    ("mv", "mV"),
    ("ma", "mA"),
    ("w", "W"),
    ("kw", "kW"),
    ("nm2", "nm²"),
    ("mm2", "mm²"),
    ("deg", "°"),
    ("rad", "rad"),
    ("rpm", "rpm"),
    ("ml", "mL"),
    ("pct", "%"),
    ("percent", "%"),
    ("ppm", "ppm"),
];

/// Turns a column name into an axis label, showing its unit.
///
/// The rule:
///
/// ```text
/// name already holding "(", "[" or a space   -> unchanged      "diameter [mm]" -> "diameter [mm]"
/// stem_unit, unit a known suffix             -> "stem (unit)"  "bore_um"       -> "bore (µm)"
///                                                             "inlet_temp_c"  -> "inlet temp (°C)"
/// anything else                              -> underscores become spaces      "wall_thickness" -> "wall thickness"
/// ```
///
/// The unit is the text after the last underscore, matched without regard to
/// case against [`UNIT_SUFFIXES`] (`_mm`, `_um` (µm), `_c` (°C), `_kpa`,
/// `_s`, `_pct` (%), ...). Single letters that usually are not units (`_a`,
/// `_n`) are not in the list. A name that is only a unit (`"mm"`) is left
/// alone.
///
/// # Example
///
/// ```
/// use stratanet::chart::axis_label;
/// assert_eq!(axis_label("bore_um"), "bore (µm)");
/// assert_eq!(axis_label("pressure_kPa"), "pressure (kPa)");
/// assert_eq!(axis_label("diameter [mm]"), "diameter [mm]");
/// assert_eq!(axis_label("batch_id"), "batch id");
/// ```
pub fn axis_label(name: &str) -> String {
    let name = name.trim();
    if name.contains(['(', '[', ' ']) {
        return name.to_string();
    }
    if let Some((stem, suffix)) = name.rsplit_once('_') {
        let stem = stem.trim_matches('_');
        let unit = UNIT_SUFFIXES
            .iter()
            .find(|(known, _)| known.eq_ignore_ascii_case(suffix));
        if let (Some((_, unit)), false) = (unit, stem.is_empty()) {
            return format!("{} ({unit})", stem.replace('_', " "));
        }
    }
    name.replace('_', " ").trim().to_string()
}

/// Writes `n` with a comma between groups of three digits: 100000 -> "100,000".
pub(crate) fn group_digits(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The stride that keeps at most `max` of `n` items: ceil(n / max), at least 1.
pub(crate) fn stride(n: usize, max: usize) -> usize {
    n.div_ceil(max.max(1)).max(1)
}

/// Checks class names: at least one, and none empty after trimming.
pub(crate) fn class_names<S: AsRef<str>>(what: &str, names: &[S]) -> Result<Vec<String>> {
    if names.is_empty() {
        return Err(Error::input(
            what,
            "no class names given; pass one name per class, in class-index order",
        ));
    }
    Ok(names.iter().map(|n| n.as_ref().to_string()).collect())
}

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

/// The two features a decision map shows by default: the first two numeric
/// source columns of the table.
pub(crate) fn decision_features(data: &crate::data::Dataset) -> Option<(String, String)> {
    let numeric: Vec<&str> = data
        .columns
        .iter()
        .filter_map(|c| match c {
            crate::data::ColumnEncoding::Numeric { name } => Some(name.as_str()),
            _ => None,
        })
        .collect();
    (numeric.len() >= 2).then(|| (numeric[0].to_string(), numeric[1].to_string()))
}
