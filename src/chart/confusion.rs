//! Confusion-matrix heat maps: counts of true class (rows) against
//! predicted class (columns), shaded by each row's share.

use super::draw::{render, Entry, Figure, Key, Panel, Tile, TilePanel, TEXT_CELL};
use super::theme::{scale_colour, IRIDESCENT};
use super::{class_names, group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// The largest side of one cell, in pixels.
const MAX_CELL: f64 = 96.0;

/// Draws a confusion matrix as a heat map.
///
/// `counts[t][p]` is the number of samples of true class `t` predicted as
/// class `p`; `class_names` names the classes in index order. Each cell shows
/// its count and its share of the row, and is shaded by that share on Tol's
/// sequential "iridescent" scale (shown in the legend):
///
/// ```text
/// share[t][p] = counts[t][p] / sum_q counts[t][q]        (recall on the diagonal)
/// accuracy    = sum_t counts[t][t] / sum_t,q counts[t][q]   (in a note)
/// ```
///
/// Text on a cell is white or near-black, whichever contrasts more with the
/// cell (WCAG contrast ratio). Row totals are shown at the right. When cells
/// are too small for text (many classes at a small size) the text is left
/// out and a note says so.
///
/// # Errors
///
/// [`ErrorKind::InvalidInput`](crate::ErrorKind::InvalidInput) when `counts`
/// is empty or there are no class names;
/// [`ErrorKind::ShapeMismatch`](crate::ErrorKind::ShapeMismatch) when it is
/// not square or its size differs from the number of names.
///
/// # Example
///
/// ```
/// use stratanet::chart::plot::confusion_matrix;
/// use stratanet::chart::ChartOptions;
///
/// let counts = vec![vec![48, 2], vec![5, 45]];
/// let chart = confusion_matrix(&counts, &["pass", "fail"], &ChartOptions::default())?;
/// assert!(chart.as_svg().contains("96.0%"));
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn confusion_matrix<S: AsRef<str>>(
    counts: &[Vec<u64>],
    class_names_given: &[S],
    options: &ChartOptions,
) -> Result<Chart> {
    let figure = prepare(counts, class_names_given, options)?;
    render(&figure, options)
}

/// What the matrix will show: tiles, totals, legend and notes.
pub(crate) fn prepare<S: AsRef<str>>(
    counts: &[Vec<u64>],
    class_names_given: &[S],
    options: &ChartOptions,
) -> Result<Figure> {
    let what = "confusion matrix";
    if counts.is_empty() {
        return Err(Error::input(
            what,
            "no counts given; pass one row per true class",
        ));
    }
    let k = counts.len();
    if let Some((row, r)) = counts.iter().enumerate().find(|(_, r)| r.len() != k) {
        return Err(Error::shape(
            format!("confusion matrix: row {row} (one count per predicted class)"),
            (k, k),
            (k, r.len()),
        ));
    }
    let names = class_names(what, class_names_given)?;
    if names.len() != k {
        return Err(Error::shape(
            "confusion matrix: one class name per row",
            (k, k),
            (names.len(), k),
        ));
    }
    let totals: Vec<u64> = counts.iter().map(|r| r.iter().sum()).collect();
    let total: u64 = totals.iter().sum();
    let correct: u64 = (0..k).map(|i| counts[i][i]).sum();
    let mut notes = Vec::new();
    if total == 0 {
        notes.push("no samples counted: every cell is 0".to_string());
    } else {
        notes.push(format!(
            "accuracy {:.1}% ({} of {}); shading and percentages: share of the true class's row",
            100.0 * correct as f64 / total as f64,
            group_digits(correct as usize),
            group_digits(total as usize)
        ));
    }
    let tiles: Vec<Vec<Tile>> = counts
        .iter()
        .enumerate()
        .map(|(t, row)| {
            row.iter()
                .map(|&count| {
                    let share = if totals[t] > 0 {
                        count as f64 / totals[t] as f64
                    } else {
                        f64::NAN
                    };
                    Tile {
                        fill: scale_colour(
                            &IRIDESCENT,
                            if share.is_finite() { share } else { 0.0 },
                        ),
                        main: group_digits(count as usize),
                        detail: if share.is_finite() {
                            format!("{:.1}%", 100.0 * share)
                        } else {
                            "–".to_string()
                        },
                    }
                })
                .collect()
        })
        .collect();
    let panel = TilePanel {
        rows: names.clone(),
        columns: names,
        row_title: options
            .y_label
            .clone()
            .unwrap_or_else(|| "true class".to_string()),
        column_title: options
            .x_label
            .clone()
            .unwrap_or_else(|| "predicted class".to_string()),
        tiles,
        row_notes: totals
            .iter()
            .map(|t| format!("n = {}", group_digits(*t as usize)))
            .collect(),
        max_cell: MAX_CELL,
    };
    if panel.cell_at(options.width as f64 - 24.0) < TEXT_CELL {
        notes.push("cells too small for their counts; widen the chart to read them".to_string());
    }
    let legend = vec![Entry::new(
        "share of the true class's row",
        Key::Scale {
            stops: IRIDESCENT.to_vec(),
            ticks: vec![
                (0.0, "0%".into()),
                (0.5, "50%".into()),
                (1.0, "100%".into()),
            ],
        },
    )];
    let frame = options.frame("Confusion matrix", Vec::new(), legend, notes);
    Ok(Figure::single(frame, Panel::Tiles(panel)))
}

#[cfg(test)]
mod tests {
    use super::super::draw::Panel;
    use super::super::testing::check;
    use super::super::theme::{self, Rgb};
    use super::*;

    fn tiles(figure: &Figure) -> &TilePanel {
        match &figure.panels[0] {
            Panel::Tiles(t) => t,
            _ => panic!("not tiles"),
        }
    }

    #[test]
    fn three_classes_show_counts_shares_and_totals() {
        let counts = vec![vec![50, 0, 0], vec![0, 47, 3], vec![0, 4, 46]];
        let names = ["setosa", "versicolor", "virginica"];
        let figure = prepare(&counts, &names, &ChartOptions::default()).unwrap();
        let t = tiles(&figure);
        assert_eq!(t.tiles[1][1].main, "47");
        assert_eq!(t.tiles[1][1].detail, "94.0%");
        assert_eq!(t.row_notes, ["n = 50", "n = 50", "n = 50"]);
        assert_eq!(
            figure.frame.notes,
            ["accuracy 95.3% (143 of 150); shading and percentages: share of the true class's row"]
        );
        // The full row is the darkest colour.
        assert_eq!(t.tiles[0][0].fill, IRIDESCENT[22]);
        let chart = render(&figure, &ChartOptions::default()).unwrap();
        let r = check(&chart, "confusion-three-class");
        assert!(r.has_text("predicted class") && r.has_text("true class"));
        assert_eq!(r.texts.iter().filter(|t| *t == "versicolor").count(), 2);
        assert!(r.count("text", &[("fill", "#FFFFFF")]) >= 2);
    }

    #[test]
    fn long_names_turn_and_many_classes_shrink() {
        let k = 12;
        let counts: Vec<Vec<u64>> = (0..k)
            .map(|t| {
                (0..k)
                    .map(|p| {
                        if t == p {
                            40
                        } else {
                            ((t * 7 + p * 3) % 5) as u64
                        }
                    })
                    .collect()
            })
            .collect();
        let names: Vec<String> = (0..k).map(|i| format!("defect type {i}")).collect();
        let chart = confusion_matrix(&counts, &names, &ChartOptions::default()).unwrap();
        let r = check(&chart, "confusion-twelve-class");
        assert_eq!(r.texts.iter().filter(|t| *t == "defect type 11").count(), 2);
        assert!(r.count("text", &[("text-anchor", "end")]) >= k);
        let small = confusion_matrix(&counts, &names, &ChartOptions::single_column()).unwrap();
        let r = check(&small, "confusion-twelve-class-column");
        assert!(r.has_text_containing("cells too small"), "{:?}", r.texts);
    }

    #[test]
    fn empty_rows_and_bad_shapes() {
        let figure = prepare(
            &[vec![0, 0], vec![3, 9]],
            &["a", "b"],
            &ChartOptions::default(),
        )
        .unwrap();
        assert_eq!(tiles(&figure).tiles[0][0].detail, "–");
        check(
            &render(&figure, &ChartOptions::default()).unwrap(),
            "confusion-empty-row",
        );
        let none = prepare(&[vec![0]], &["only"], &ChartOptions::default()).unwrap();
        assert_eq!(none.frame.notes, ["no samples counted: every cell is 0"]);
        let empty: Vec<Vec<u64>> = vec![];
        assert!(confusion_matrix(&empty, &["a"], &ChartOptions::default()).is_err());
        let err = confusion_matrix(&[vec![1, 2]], &["a"], &ChartOptions::default()).unwrap_err();
        assert!(err.to_string().contains("row 0"), "{err}");
        let err = confusion_matrix(&[vec![1, 2], vec![3, 4]], &["a"], &ChartOptions::default())
            .unwrap_err();
        assert!(err.to_string().contains("one class name per row"), "{err}");
    }

    #[test]
    fn text_contrasts_with_its_cell() {
        use super::super::draw::text_colour;
        assert_eq!(text_colour(IRIDESCENT[22]), theme::WHITE);
        assert_eq!(text_colour(IRIDESCENT[0]), theme::INK);
        let _: Rgb = theme::INK;
    }
}
