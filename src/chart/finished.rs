//! [`Chart`]: a finished chart, its SVG and the boxes of its layout, and
//! saving it as SVG, PDF or PNG.

use super::draw::Boxes;
use super::options::PX_PER_MM;
use crate::error::{Error, Result};
use std::fmt;
use std::path::Path;

/// A finished chart: SVG text, its physical size and its title.
///
/// Show it in an evcxr notebook by leaving it as a cell's last expression
/// (see [`Chart::evcxr_display`]), save it with [`Chart::save`] (SVG, PDF
/// or PNG by the file's extension), or take the text with
/// [`Chart::as_svg`] / [`Chart::into_svg`].
#[derive(Clone)]
pub struct Chart {
    svg: String,
    width: u32,
    height: u32,
    title: String,
    /// The layout's boxes, for the tests that check it as a reader would.
    #[cfg_attr(not(test), allow(dead_code))]
    boxes: Boxes,
}

impl PartialEq for Chart {
    fn eq(&self, other: &Chart) -> bool {
        self.svg == other.svg
    }
}

impl Eq for Chart {}

/// PNG files are rendered at this many dots per inch by [`Chart::save`].
pub const PNG_DPI: f64 = 300.0;

impl Chart {
    pub(crate) fn from_parts(
        svg: String,
        width: u32,
        height: u32,
        title: &str,
        boxes: Boxes,
    ) -> Chart {
        Chart {
            svg,
            width,
            height,
            title: title.to_string(),
            boxes,
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

    /// Width in CSS pixels (1/96 inch).
    pub fn width(&self) -> u32 {
        self.width
    }

    /// Height in CSS pixels (1/96 inch).
    pub fn height(&self) -> u32 {
        self.height
    }

    /// Width in millimetres.
    pub fn width_mm(&self) -> f64 {
        self.width as f64 / PX_PER_MM
    }

    /// Height in millimetres.
    pub fn height_mm(&self) -> f64 {
        self.height as f64 / PX_PER_MM
    }

    /// The title drawn at the top of the chart.
    pub fn title(&self) -> &str {
        &self.title
    }

    /// Where the layout put every text, the legend, the plots and the data
    /// marks.
    #[cfg_attr(not(test), allow(dead_code))]
    pub(crate) fn boxes(&self) -> &Boxes {
        &self.boxes
    }

    /// Writes the chart to `path` in the format its extension names, at
    /// the chart's physical size ([`Chart::width_mm`]):
    ///
    /// - `.svg`: the SVG text;
    /// - `.pdf`: one page of exactly that size, vector throughout, the text
    ///   drawn as outlines of the shipped Liberation Sans (svg2pdf; outlines
    ///   rather than an embedded font keep reruns byte-identical, so the
    ///   text cannot be selected);
    /// - `.png`: rendered at [`PNG_DPI`] (300) dots per inch (resvg), with
    ///   the resolution recorded in the file.
    ///
    /// PDF and PNG are rendered from the same SVG with the font shipped in
    /// the crate, never the machine's, so they are the same on every
    /// machine; reruns give byte-identical files. Both need the crate
    /// feature `export` (on by default).
    ///
    /// The file is written atomically: to a temporary file in the same
    /// folder, then renamed over `path`, so a reader never sees half a file.
    ///
    /// # Errors
    ///
    /// [`ErrorKind::InvalidOption`](crate::ErrorKind::InvalidOption) for
    /// another extension, or PDF and PNG without the `export` feature;
    /// [`ErrorKind::Io`](crate::ErrorKind::Io) naming `path` when the
    /// folder does not exist or cannot be written.
    ///
    /// # Example
    ///
    /// ```no_run
    /// # use stratanet::chart::plot::confusion_matrix;
    /// # use stratanet::chart::ChartOptions;
    /// let chart = confusion_matrix(&[vec![5, 1], vec![2, 7]], &["pass", "fail"], &ChartOptions::single_column())?;
    /// chart.save("confusion.pdf")?;
    /// chart.save("confusion.png")?;
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn save(&self, path: impl AsRef<Path>) -> Result<()> {
        let path = path.as_ref();
        let extension = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .unwrap_or_default();
        let bytes: Vec<u8> = match extension.as_str() {
            "svg" => self.svg.as_bytes().to_vec(),
            "pdf" => self
                .to_pdf()
                .map_err(|e| e.context(path.display().to_string()))?,
            "png" => self
                .to_png(PNG_DPI)
                .map_err(|e| e.context(path.display().to_string()))?,
            _ => {
                return Err(Error::option(
                    "path",
                    path.display(),
                    "needs the extension .svg, .pdf or .png (the format is chosen by it)",
                ))
            }
        };
        // The crate's one atomic writer: a temporary file in the same
        // folder, synced, then renamed over `path`.
        crate::atomic::write_file(path, |w| {
            w.write_all(&bytes)
                .map_err(|e| Error::io(path, "writing the chart", e))
        })
    }

    /// The chart as a PNG file's bytes, rendered at `dpi` dots per inch
    /// (96 gives one pixel per CSS pixel), with the shipped font.
    ///
    /// # Errors
    /// A `dpi` outside 24 to 1200, or the crate built without the `export`
    /// feature.
    pub fn to_png(&self, dpi: f64) -> Result<Vec<u8>> {
        if !(24.0..=1200.0).contains(&dpi) {
            return Err(Error::option("dpi", dpi, "must be between 24 and 1200"));
        }
        #[cfg(feature = "export")]
        {
            super::export::png(&self.svg, dpi)
        }
        #[cfg(not(feature = "export"))]
        {
            Err(no_export("PNG"))
        }
    }

    /// The chart as a one-page PDF file's bytes, the page the chart's
    /// physical size, text as outlines of the shipped font.
    ///
    /// # Errors
    /// The crate built without the `export` feature.
    pub fn to_pdf(&self) -> Result<Vec<u8>> {
        #[cfg(feature = "export")]
        {
            super::export::pdf(&self.svg)
        }
        #[cfg(not(feature = "export"))]
        {
            Err(no_export("PDF"))
        }
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

#[cfg(not(feature = "export"))]
fn no_export(format: &str) -> Error {
    Error::option(
        "path",
        format,
        "saving PDF and PNG needs the crate feature \"export\" (on by default); build with it, or save as .svg",
    )
}

impl fmt::Debug for Chart {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "Chart {{ title: {:?}, {} x {} px ({:.0} x {:.0} mm), {} bytes of SVG }}",
            self.title,
            self.width,
            self.height,
            self.width_mm(),
            self.height_mm(),
            self.svg.len()
        )
    }
}
