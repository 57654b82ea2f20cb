//! [`ChartOptions`]: the physical size, headings, axis labels and the
//! rows a chart shows, shared by every chart kind.

use super::labels::axis_label;
use crate::error::{Error, Result};

/// Scatter charts draw at most this many points; above it they draw every
/// k-th point (k = ceil(n / MAX_POINTS)) and say so in a note.
pub const MAX_POINTS: usize = 5_000;

/// Learning curves draw at most this many epochs per line; above it they
/// average the epochs in blocks of k (k = ceil(epochs / MAX_EPOCHS)) and say
/// so in a note.
pub const MAX_EPOCHS: usize = 2_000;

/// CSS pixels per millimetre (96 per inch, 25.4 mm per inch).
pub const PX_PER_MM: f64 = 96.0 / 25.4;

/// Size, headings and axis labels shared by every chart kind.
///
/// **Sizes are physical.** `width` and `height` are CSS pixels, 1/96 inch
/// each, and text has the same size at every chart size (the smallest is
/// 10 px, 7.5 pt), as in print. A chart made at
/// [`ChartOptions::single_column`] (85 mm) or
/// [`ChartOptions::double_column`] (175 mm), the common journal column
/// widths (common practice, no source), keeps its text at least 7.5 pt
/// when printed at that width; saved as PDF it has exactly that size, and
/// as PNG it is rendered at 300 dots per inch ([`Chart::save`](super::Chart::save)).
///
/// Fields left as `None` are chosen by the chart: the title from what it
/// shows, the subtitle from the model and the rows, the height from the
/// content (rows of a ranking, a square ROC plot, a staircase of weights),
/// axis labels from column names through [`axis_label`](super::axis_label).
#[derive(Clone, Debug, PartialEq)]
pub struct ChartOptions {
    /// Width in CSS pixels (1/96 inch), 240 to 4096. Default 720 (190.5 mm).
    pub width: u32,
    /// Height in CSS pixels, 160 to 4096; `None` (the default) lets the
    /// chart choose the height its content needs at this width.
    pub height: Option<u32>,
    /// The title at the top left.
    pub title: Option<String>,
    /// The line under the title (default: the model and the rows shown).
    pub subtitle: Option<String>,
    /// Which rows the chart shows, for the subtitle ("validation rows",
    /// "held-out test rows"); the count is added. Default: "rows of" the
    /// table's source.
    pub rows: Option<String>,
    /// Label under the horizontal axis.
    pub x_label: Option<String>,
    /// Label beside the vertical axis.
    pub y_label: Option<String>,
    /// Draw the title and subtitle (default `true`); `false` for a figure
    /// whose caption is written in the paper.
    pub headings: bool,
}

impl Default for ChartOptions {
    fn default() -> ChartOptions {
        ChartOptions {
            width: 720,
            height: None,
            title: None,
            subtitle: None,
            rows: None,
            x_label: None,
            y_label: None,
            headings: true,
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

    /// One journal column wide: 85 mm (321 px).
    pub fn single_column() -> ChartOptions {
        ChartOptions {
            width: (85.0 * PX_PER_MM).round() as u32,
            ..ChartOptions::default()
        }
    }

    /// Two journal columns wide: 175 mm (661 px).
    pub fn double_column() -> ChartOptions {
        ChartOptions {
            width: (175.0 * PX_PER_MM).round() as u32,
            ..ChartOptions::default()
        }
    }

    /// These options naming the rows shown (e.g. "validation rows").
    pub fn rows(mut self, rows: impl Into<String>) -> ChartOptions {
        self.rows = Some(rows.into());
        self
    }

    /// These options naming the rows shown by what they are
    /// ([`ScoredRows::label`](crate::data::ScoredRows::label): "validation
    /// rows", "out-of-fold rows", "hold-out rows, use 1").
    pub fn scored(self, rows: crate::data::ScoredRows) -> ChartOptions {
        self.rows(rows.label())
    }

    /// These options with a fixed height in CSS pixels.
    pub fn height(mut self, height: u32) -> ChartOptions {
        self.height = Some(height);
        self
    }

    /// Checks the size.
    pub(crate) fn check_size(&self) -> Result<()> {
        if !(240..=4096).contains(&self.width) {
            return Err(Error::option(
                "width",
                self.width,
                "must be between 240 and 4096 pixels (63.5 to 1,083.7 mm)",
            ));
        }
        if let Some(h) = self.height {
            if !(160..=4096).contains(&h) {
                return Err(Error::option(
                    "height",
                    h,
                    "must be between 160 and 4096 pixels, or left out for the chart to choose",
                ));
            }
        }
        Ok(())
    }

    /// The title to draw: the options' or `default`.
    pub(crate) fn title_or(&self, default: impl Into<String>) -> String {
        self.title.clone().unwrap_or_else(|| default.into())
    }

    /// The subtitle lines: the options' or `default`.
    pub(crate) fn subtitle_or(&self, default: Vec<String>) -> Vec<String> {
        match &self.subtitle {
            Some(s) => vec![s.clone()],
            None => default,
        }
    }

    pub(crate) fn x_label_or(&self, name: &str) -> String {
        self.x_label.clone().unwrap_or_else(|| axis_label(name))
    }

    pub(crate) fn y_label_or(&self, name: &str) -> String {
        self.y_label.clone().unwrap_or_else(|| axis_label(name))
    }

    /// The page frame of a figure: title, subtitle, legend and notes.
    pub(crate) fn frame(
        &self,
        title: impl Into<String>,
        subtitle: Vec<String>,
        legend: Vec<super::draw::Entry>,
        notes: Vec<String>,
    ) -> super::draw::Frame {
        super::draw::Frame {
            title: self.title_or(title),
            subtitle: self.subtitle_or(subtitle),
            legend,
            notes,
            headings: self.headings,
        }
    }
}
