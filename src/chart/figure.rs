//! [`Chart`], a finished chart, and [`ChartOptions`], the size, title and
//! axis labels shared by every chart kind.

use super::labels::axis_label;
use crate::error::{Error, Result};
use std::fmt;
use std::path::Path;

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
    /// # use stratanet::chart::plot::confusion_matrix;
    /// # use stratanet::chart::ChartOptions;
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

    pub(crate) fn evcxr_content(&self) -> String {
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
/// title, column names through [`axis_label`](super::axis_label) as axis labels). Charts
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
