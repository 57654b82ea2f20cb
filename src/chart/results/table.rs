//! The column overview of a table's summary, as a method on the summary.

use crate::chart::columns::{self, ColumnSummary};
use crate::chart::draw::render;
use crate::chart::{source_name, Chart, ChartOptions};
use crate::data::TableSummary;
use crate::error::Result;

impl TableSummary {
    /// Every header column that was read, but the target, one row each:
    /// its role (or its decided type, for an input), the share of the rows
    /// read whose cell is missing, and its distinct values. Columns dropped
    /// before reading are left out: nothing was counted in them.
    ///
    /// # Errors
    /// A table with no column besides the target.
    ///
    /// # Example
    /// ```
    /// let data = stratanet::data::CsvOptions::new("verdict")
    ///     .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))?;
    /// let chart = data.summary(None).columns_chart()?;
    /// assert!(chart.as_svg().contains("Columns of parts.csv"));
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn columns_chart(&self) -> Result<Chart> {
        self.columns_chart_with(&ChartOptions::default())
    }

    /// [`TableSummary::columns_chart`] with options.
    ///
    /// # Errors
    /// As [`TableSummary::columns_chart`].
    pub fn columns_chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let (columns, rows) = self.overview();
        let mut options = options.clone();
        if options.title.is_none() {
            options.title = Some(format!("Columns of {}", source_name(&self.source)));
        }
        render(&columns::prepare(&columns, rows, &options)?, &options)
    }

    /// The columns as the overview draws them, and the rows read.
    pub(crate) fn overview(&self) -> (Vec<ColumnSummary>, usize) {
        let columns = self
            .columns
            .iter()
            // A column dropped before reading has no counts to draw.
            .filter(|c| c.role != "target" && c.distinct.is_some())
            .map(|c| ColumnSummary {
                name: c.name.clone(),
                kind: match c.role.as_str() {
                    "feature" => c.kind.clone(),
                    "id" => "identifier".to_string(),
                    // "left out (looks like an identifier)": short enough
                    // for a row label; the table beside it says why.
                    role if role.starts_with("left out") => "identifier, left out".to_string(),
                    role => role.to_string(),
                },
                missing: c.missing.unwrap_or(0),
                distinct: c.distinct.unwrap_or(0),
            })
            .collect();
        (columns, self.rows + self.dropped_rows)
    }
}
