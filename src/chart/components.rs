//! The rows of a table in their first two principal components, marked
//! where a model gets them wrong, with how far each row lies from that
//! plane. No prediction is drawn on the plane itself: a model's answers
//! there would describe made-up rows at the plane, not these rows, which
//! lie off it.

use super::draw::format_value;
use super::draw::{
    finite_range, linear_ticks, pad_range, render, Arrangement, AxisSpec, Entry, Figure, Grid, Key,
    Mark, Panel, Stroke, XyPanel,
};
use super::scatter;
use super::theme::{self};
use super::{class_names, group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// Rows projected on two components, with the model's errors and each
/// row's distance from the plane.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ProjectedRows {
    /// (component 1, component 2, true class index) per row.
    pub points: Vec<(f64, f64, usize)>,
    /// Whether the model predicts another class for the row.
    pub wrong: Vec<bool>,
    /// Each row's distance from the plane of the two components, in the
    /// units of the projected data (standardised features).
    pub distance: Vec<f64>,
    /// One name per class.
    pub class_names: Vec<String>,
    /// The horizontal axis' label.
    pub x_name: String,
    /// The vertical axis' label.
    pub y_name: String,
}

const WRONG: theme::Rgb = theme::INK;

/// Draws rows in two principal components (left) coloured and shaped by
/// their true class, a ring around each row the model predicts wrongly,
/// and (right) each class's distances from the plane, so a reader sees
/// how much of the rows the plane leaves out.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) for no
/// class names, a class index without a name, or no finite point;
/// [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch) when
/// `wrong` or `distance` differ in length from `points`.
pub fn projected_rows(rows: &ProjectedRows, options: &ChartOptions) -> Result<Chart> {
    render(&prepare(rows, options)?, options)
}

pub(crate) fn prepare(rows: &ProjectedRows, options: &ChartOptions) -> Result<Figure> {
    let what = "rows in principal components";
    let names = class_names(what, &rows.class_names)?;
    for (list, len) in [
        ("wrong", rows.wrong.len()),
        ("distance", rows.distance.len()),
    ] {
        if len != rows.points.len() {
            return Err(Error::shape(
                format!("{what}: one {list} value per point"),
                (rows.points.len(), 1),
                (len, 1),
            ));
        }
    }
    let prepared = scatter::prepare(what, &rows.points, names.len())?;
    if prepared.points.is_empty() {
        return Err(Error::input(what, "no point has finite coordinates"));
    }
    let ring_points: Vec<(f64, f64)> = rows
        .points
        .iter()
        .zip(&rows.wrong)
        .filter(|(p, w)| **w && p.0.is_finite() && p.1.is_finite())
        .map(|(p, _)| (p.0, p.1))
        .collect();
    let x_range = pad_range(
        finite_range(prepared.points.iter().map(|p| p.0)).unwrap_or((0.0, 1.0)),
        0.05,
    );
    let y_range = pad_range(
        finite_range(prepared.points.iter().map(|p| p.1)).unwrap_or((0.0, 1.0)),
        0.05,
    );
    let mut left = XyPanel::new(
        AxisSpec::linear(
            x_range,
            linear_ticks(x_range.0, x_range.1, 6),
            options
                .x_label
                .clone()
                .unwrap_or_else(|| rows.x_name.clone()),
        ),
        AxisSpec::linear(
            y_range,
            linear_ticks(y_range.0, y_range.1, 6),
            options
                .y_label
                .clone()
                .unwrap_or_else(|| rows.y_name.clone()),
        ),
    );
    left.grid = Grid::Both;
    left.aspect = 0.8;
    left.marks = vec![
        scatter::class_mark(&prepared.points),
        Mark::Rings {
            points: ring_points.clone(),
            stroke: Stroke::solid(WRONG, 1.5),
            radius: theme_size() + 3.0,
        },
    ];
    // Distances, one strip per class, jittered across the strip.
    let distances: Vec<(f64, f64, usize)> = rows
        .points
        .iter()
        .zip(&rows.distance)
        .enumerate()
        .filter(|(_, (p, d))| d.is_finite() && p.2 < names.len())
        .map(|(k, (p, &d))| {
            (
                d,
                p.2 as f64 + ((k as f64 * 0.618_033_988_75).fract() - 0.5) * 0.6,
                p.2,
            )
        })
        .collect();
    let reach = finite_range(distances.iter().map(|p| p.0)).map_or(1.0, |r| r.1.max(1e-9));
    let d_range = (0.0, reach * 1.05);
    let mut right = XyPanel::new(
        AxisSpec::linear(
            d_range,
            linear_ticks(d_range.0, d_range.1, 4),
            "distance from the plane",
        ),
        AxisSpec::categories(&names),
    );
    right.grid = Grid::Vertical;
    right.marks = vec![scatter::class_mark(&distances)];
    let mut legend = scatter::class_entries(&names, &prepared.per_class);
    legend.push(Entry::new(
        format!(
            "predicted wrongly ({} of {})",
            group_digits(ring_points.len()),
            group_digits(rows.points.len())
        ),
        Key::Ring { colour: WRONG },
    ));
    let mut notes = prepared.notes.clone();
    let mut sorted: Vec<f64> = rows
        .distance
        .iter()
        .copied()
        .filter(|d| d.is_finite())
        .collect();
    sorted.sort_by(f64::total_cmp);
    if !sorted.is_empty() {
        notes.push(format!(
            "half the rows lie more than {} from this plane; no prediction is drawn on it, since it holds none of them",
            format_value(sorted[sorted.len() / 2])
        ));
    }
    let frame = options.frame(
        "Rows in their first two principal components",
        Vec::new(),
        legend,
        notes,
    );
    Ok(Figure {
        frame,
        panels: vec![Panel::Xy(left), Panel::Xy(right)],
        arrangement: Arrangement::Row(vec![0.66, 0.34]),
    })
}

fn theme_size() -> f64 {
    super::theme::size::MARKER
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    #[test]
    fn errors_are_ringed_and_distances_shown() {
        let points: Vec<(f64, f64, usize)> = (0..60)
            .map(|k| {
                (
                    (k as f64 * 0.37).sin() * 2.0,
                    (k as f64 * 0.73).cos(),
                    k % 3,
                )
            })
            .collect();
        let rows = ProjectedRows {
            wrong: (0..60).map(|k| k % 7 == 0).collect(),
            distance: (0..60).map(|k| (k % 10) as f64 * 0.3).collect(),
            points,
            class_names: vec!["accept".into(), "rework".into(), "scrap".into()],
            x_name: "component 1 (41% of variance)".into(),
            y_name: "component 2 (22% of variance)".into(),
        };
        let figure = prepare(&rows, &ChartOptions::default()).unwrap();
        assert_eq!(figure.frame.legend[3].label, "predicted wrongly (9 of 60)");
        let Mark::Rings { points, .. } = &figure.xy(0).marks[1] else {
            panic!()
        };
        assert_eq!(points.len(), 9);
        assert!(
            figure.frame.notes[0].starts_with("half the rows lie more than 1.50 from this plane"),
            "{:?}",
            figure.frame.notes
        );
        check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "components",
        );
    }
}
