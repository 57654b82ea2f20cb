//! The column overview of a table: for each column, its decided type, its
//! missing cells and its distinct values.

use super::draw::{
    linear_ticks, log_ticks, render, Arrangement, AxisSpec, Entry, Figure, Grid, Key, Mark, Panel,
    XyPanel,
};
use super::theme::{self, Rgb};
use super::{group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// One column of a table, as an inspection found it.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ColumnSummary {
    /// The column's name.
    pub name: String,
    /// Its decided type, in words ("numeric", "text", "identifier", ...).
    pub kind: String,
    /// Cells with no value.
    pub missing: usize,
    /// Distinct values among the others.
    pub distinct: usize,
}

/// The colour of the `i`-th type named (in order of first appearance).
fn kind_colour(i: usize) -> Rgb {
    theme::class_colour(i)
}

/// Draws a table's columns, one row each in table order: the share of its
/// `rows` cells that are missing (left) and how many distinct values it
/// holds (right, on a log scale from 1 to the row count, so an identifier
/// reaches the end and a constant stays at 1). Bars are coloured by the
/// decided type (legend); the counts are written beside them.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when there
/// are no columns or no rows, or a count exceeds the rows.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::{column_overview, ColumnSummary};
/// use stratanet::chart::ChartOptions;
///
/// let c = |n: &str, k: &str, m: usize, d: usize| ColumnSummary { name: n.into(), kind: k.into(), missing: m, distinct: d };
/// let chart = column_overview(&[c("part_id", "identifier", 0, 600), c("bore_dev_um", "numeric", 3, 587), c("spindle", "text", 0, 3)], 600, &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("identifier"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn column_overview(
    columns: &[ColumnSummary],
    rows: usize,
    options: &ChartOptions,
) -> Result<Chart> {
    render(&prepare(columns, rows, options)?, options)
}

pub(crate) fn prepare(
    columns: &[ColumnSummary],
    rows: usize,
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "column overview";
    if columns.is_empty() || rows == 0 {
        return Err(Error::input(
            what,
            format!(
                "{} columns and {rows} rows; there is nothing to show",
                columns.len()
            ),
        ));
    }
    if let Some(c) = columns
        .iter()
        .find(|c| c.missing > rows || c.distinct > rows)
    {
        return Err(Error::input(
            what,
            format!(
                "column {}: {} missing and {} distinct in {rows} rows; counts cannot exceed the rows",
                c.name, c.missing, c.distinct
            ),
        ));
    }
    let mut kinds: Vec<&str> = Vec::new();
    for c in columns {
        if !kinds.contains(&c.kind.as_str()) {
            kinds.push(&c.kind);
        }
    }
    let colour =
        |c: &ColumnSummary| kind_colour(kinds.iter().position(|k| *k == c.kind).unwrap_or(0));
    let names: Vec<String> = columns
        .iter()
        .map(|c| format!("{} ({})", c.name, c.kind))
        .collect();
    let half = 0.32;
    let missing_share = |c: &ColumnSummary| c.missing as f64 / rows as f64;
    let top = columns.iter().map(missing_share).fold(0.0, f64::max);
    let missing_hi = if top <= 0.0 {
        0.1
    } else {
        (top * 1.1).clamp(0.05, 1.0)
    };
    let missing_bars = columns
        .iter()
        .enumerate()
        .filter(|(_, c)| c.missing > 0)
        .map(|(i, c)| {
            (
                0.0,
                missing_share(c),
                i as f64 - half,
                i as f64 + half,
                colour(c),
            )
        })
        .collect();
    let pct_ticks: Vec<_> = linear_ticks(0.0, missing_hi, 4)
        .into_iter()
        .map(|mut t| {
            let decimals = t
                .label
                .split_once('.')
                .map_or(0, |(_, d)| d.len())
                .saturating_sub(2);
            t.label = format!("{}%", super::draw::format_fixed(t.value * 100.0, decimals));
            t
        })
        .collect();
    let mut left = XyPanel::new(
        AxisSpec::linear(
            (0.0, missing_hi),
            pct_ticks,
            "missing cells (share of rows)",
        ),
        AxisSpec::categories(&names),
    );
    left.grid = Grid::Vertical;
    left.marks = vec![Mark::Cells {
        cells: missing_bars,
        opacity: 1.0,
    }];
    left.right = columns
        .iter()
        .enumerate()
        .map(|(i, c)| (i as f64, group_digits(c.missing)))
        .collect();
    left.row_height = Some(20.0);
    let distinct_hi = (rows as f64).max(10.0);
    let distinct_bars = columns
        .iter()
        .enumerate()
        .filter(|(_, c)| c.distinct > 1)
        .map(|(i, c)| {
            (
                1.0,
                c.distinct as f64,
                i as f64 - half,
                i as f64 + half,
                colour(c),
            )
        })
        .collect();
    let mut right = XyPanel::new(
        AxisSpec::log(
            (1.0, distinct_hi),
            log_ticks(1.0, distinct_hi),
            "distinct values (log scale)",
        ),
        AxisSpec::categories(&names).unlabelled(),
    );
    right.grid = Grid::Vertical;
    right.marks = vec![Mark::Cells {
        cells: distinct_bars,
        opacity: 1.0,
    }];
    right.right = columns
        .iter()
        .enumerate()
        .map(|(i, c)| (i as f64, group_digits(c.distinct)))
        .collect();
    right.row_height = Some(20.0);
    let legend = kinds
        .iter()
        .enumerate()
        .map(|(i, k)| {
            Entry::new(
                *k,
                Key::Swatch {
                    colour: kind_colour(i),
                    opacity: 1.0,
                },
            )
        })
        .collect();
    let subtitle = vec![format!(
        "{} columns, {} rows",
        columns.len(),
        group_digits(rows)
    )];
    let frame = options.frame("Columns of the table", subtitle, legend, Vec::new());
    Ok(Figure {
        frame,
        panels: vec![Panel::Xy(left), Panel::Xy(right)],
        arrangement: Arrangement::Row(vec![0.55, 0.45]),
    })
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    fn c(n: &str, k: &str, m: usize, d: usize) -> ColumnSummary {
        ColumnSummary {
            name: n.into(),
            kind: k.into(),
            missing: m,
            distinct: d,
        }
    }

    #[test]
    fn columns_show_missing_and_distinct_counts() {
        let columns = [
            c("part_id", "identifier", 0, 600),
            c("bore_dev_um", "numeric", 12, 587),
            c("spindle", "text", 0, 3),
            c("operator", "text", 150, 7),
            c("batch", "numeric", 0, 1),
        ];
        let figure = prepare(&columns, 600, &ChartOptions::default()).unwrap();
        let labels: Vec<&str> = figure
            .frame
            .legend
            .iter()
            .map(|e| e.label.as_str())
            .collect();
        assert_eq!(labels, ["identifier", "numeric", "text"]);
        let Mark::Cells { cells, .. } = &figure.xy(0).marks[0] else {
            panic!()
        };
        assert_eq!(cells.len(), 2, "only columns with missing cells get a bar");
        assert!((cells[1].1 - 0.25).abs() < 1e-12);
        let r = check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "columns",
        );
        assert!(r.has_text("part_id (identifier)") && r.has_text("587"));
        assert!(column_overview(&[c("x", "numeric", 5, 1)], 3, &ChartOptions::default()).is_err());
        assert!(column_overview(&[], 3, &ChartOptions::default()).is_err());
    }
}
