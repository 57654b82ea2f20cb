//! Confusion-matrix heat maps: counts of true class (rows) against
//! predicted class (columns), shaded by each row's share.

use super::draw::{self, fit_text, text_width, Align, Baseline, Canvas, Font, Page, Rect};
use super::theme::{self, scale_colour, size, Rgb, IRIDESCENT};
use super::{class_names, group_digits, Chart, ChartOptions};
use crate::{Error, Result};

/// The largest side of one cell, in pixels.
const MAX_CELL: f64 = 104.0;

/// Room for the colour key at the right.
const BAR_WIDTH: f64 = 60.0;

/// Draws a confusion matrix as a heat map.
///
/// `counts[t][p]` is the number of samples of true class `t` predicted as
/// class `p`; `class_names` names the classes in index order. Each cell shows
/// its count and its share of the row, and is shaded by that share on Tol's
/// sequential "iridescent" scale:
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
    let title = options.check("Confusion matrix")?;
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
    let x_label = options
        .x_label
        .clone()
        .unwrap_or_else(|| "predicted class".to_string());
    let y_label = options
        .y_label
        .clone()
        .unwrap_or_else(|| "true class".to_string());

    // Geometry that depends on the data only (text widths), not the canvas.
    let name_width = names
        .iter()
        .map(|n| text_width(n, size::TICK))
        .fold(0.0, f64::max)
        .min(140.0);
    let total_labels: Vec<String> = totals
        .iter()
        .map(|t| format!("n = {}", group_digits(*t as usize)))
        .collect();
    let totals_width = total_labels
        .iter()
        .map(|t| text_width(t, size::TICK))
        .fold(0.0, f64::max);

    let (width, height) = (options.width as f64, options.height as f64);
    let mut layout = Layout::new(width, height, &title, &notes, k, name_width, totals_width);
    if layout.count_size == 0.0 {
        notes.push("cells too small for their counts; enlarge the chart to read them".to_string());
        layout = Layout::new(width, height, &title, &notes, k, name_width, totals_width);
    }
    let Layout {
        grid,
        cell,
        turned,
        bottom_gutter,
        count_size,
        share_size,
    } = layout;

    draw::render(options.width, options.height, &title, |canvas| {
        Page::new(canvas, &title, notes.clone()).draw(canvas)?;
        for (t, row) in counts.iter().enumerate() {
            for (p, &count) in row.iter().enumerate() {
                let share = if totals[t] > 0 {
                    count as f64 / totals[t] as f64
                } else {
                    f64::NAN
                };
                let colour = scale_colour(&IRIDESCENT, if share.is_finite() { share } else { 0.0 });
                // A one-pixel white gap separates cells.
                let rect = Rect {
                    left: grid.left + p as f64 * cell + 1.0,
                    top: grid.top + t as f64 * cell + 1.0,
                    right: grid.left + (p + 1) as f64 * cell - 1.0,
                    bottom: grid.top + (t + 1) as f64 * cell - 1.0,
                };
                canvas.fill_rect(rect, colour, 1.0)?;
                if count_size > 0.0 {
                    draw_cell_text(canvas, rect, count, share, colour, count_size, share_size)?;
                }
            }
        }
        let tick = Font::new(size::TICK, theme::INK_SOFT);
        let label = Font::new(size::LABEL, theme::INK);
        for (i, name) in names.iter().enumerate() {
            let text = fit_text(name, size::TICK, name_width);
            let cy = grid.top + (i as f64 + 0.5) * cell;
            canvas.text(
                &text,
                grid.left - 8.0,
                cy,
                tick,
                Align::Right,
                Baseline::Middle,
            )?;
            let cx = grid.left + (i as f64 + 0.5) * cell;
            if turned {
                canvas.text_turned(
                    &text,
                    cx,
                    grid.bottom + 8.0,
                    tick,
                    Align::Right,
                    Baseline::Middle,
                    true,
                )?;
            } else {
                canvas.text(
                    &text,
                    cx,
                    grid.bottom + 8.0,
                    tick,
                    Align::Centre,
                    Baseline::Top,
                )?;
            }
            let muted = Font::new(size::TICK, theme::INK_MUTED);
            canvas.text(
                &total_labels[i],
                grid.right + 8.0,
                cy,
                muted,
                Align::Left,
                Baseline::Middle,
            )?;
        }
        let label_y = grid.bottom + bottom_gutter - size::LABEL - 4.0;
        let x_text = fit_text(&x_label, size::LABEL, grid.width().max(120.0));
        canvas.text(
            &x_text,
            grid.centre_x(),
            label_y,
            label,
            Align::Centre,
            Baseline::Top,
        )?;
        canvas.text_turned(
            &fit_text(&y_label, size::LABEL, grid.height().max(120.0)),
            grid.left - name_width - 16.0,
            grid.centre_y(),
            label,
            Align::Centre,
            Baseline::Bottom,
            true,
        )?;
        let bar_x = grid.right + 8.0 + totals_width + 24.0;
        draw_share_bar(canvas, bar_x, grid.top, grid.height().clamp(60.0, 160.0))
    })
}

/// Where the matrix goes on the page and how big its text is.
struct Layout {
    grid: Rect,
    cell: f64,
    /// Column names turned to read upwards (too wide for a cell).
    turned: bool,
    bottom_gutter: f64,
    /// 0 when the cells are too small for text.
    count_size: f64,
    /// 0 when the cells only have room for the count.
    share_size: f64,
}

impl Layout {
    fn new(
        width: f64,
        height: f64,
        title: &str,
        notes: &[String],
        k: usize,
        name_width: f64,
        totals_width: f64,
    ) -> Layout {
        let content = Page::sized(width, height, title, notes.to_vec()).content;
        let left_gutter = size::LABEL + 12.0 + name_width + 8.0;
        let right_gutter = 8.0 + totals_width + 24.0 + BAR_WIDTH;
        let available_w = content.width() - left_gutter - right_gutter;
        let cell_guess = (available_w / k as f64).min(MAX_CELL);
        let turned = name_width > cell_guess - 4.0;
        let bottom_gutter =
            8.0 + if turned { name_width } else { size::TICK } + 10.0 + size::LABEL + 4.0;
        let available_h = content.height() - bottom_gutter - 4.0;
        let cell = (available_w.min(available_h) / k as f64)
            .min(MAX_CELL)
            .floor()
            .max(2.0);
        let grid = Rect {
            left: content.left + left_gutter,
            top: content.top + 4.0,
            right: content.left + left_gutter + cell * k as f64,
            bottom: content.top + 4.0 + cell * k as f64,
        };
        let (count_size, share_size) = if cell >= 46.0 {
            (13.0, 10.5)
        } else if cell >= 30.0 {
            (11.0, 0.0)
        } else if cell >= 18.0 {
            (9.0, 0.0)
        } else {
            (0.0, 0.0)
        };
        Layout {
            grid,
            cell,
            turned,
            bottom_gutter,
            count_size,
            share_size,
        }
    }
}

/// The count (bold) and, when there is room, the row share below it.
fn draw_cell_text(
    canvas: &Canvas,
    rect: Rect,
    count: u64,
    share: f64,
    fill: Rgb,
    count_size: f64,
    share_size: f64,
) -> Result<()> {
    let ink = text_colour(fill);
    let count_text = group_digits(count as usize);
    let count_font = Font::new(count_size, ink).bold();
    let room = rect.width() - 4.0;
    if share_size > 0.0 && text_width(&count_text, count_size) < room {
        let share_text = if share.is_finite() {
            format!("{:.1}%", 100.0 * share)
        } else {
            "–".to_string()
        };
        let (cx, cy) = (rect.centre_x(), rect.centre_y());
        canvas.text(
            &count_text,
            cx,
            cy - 1.0,
            count_font,
            Align::Centre,
            Baseline::Bottom,
        )?;
        canvas.text(
            &share_text,
            cx,
            cy + 3.0,
            Font::new(share_size, ink),
            Align::Centre,
            Baseline::Top,
        )
    } else {
        let text = fit_text(&count_text, count_size, room);
        canvas.text(
            &text,
            rect.centre_x(),
            rect.centre_y(),
            count_font,
            Align::Centre,
            Baseline::Middle,
        )
    }
}

/// White or near-black, whichever has the higher WCAG contrast ratio on `fill`:
///
/// ```text
/// contrast(a, b) = (L_lighter + 0.05) / (L_darker + 0.05)
/// ```
fn text_colour(fill: Rgb) -> Rgb {
    let l = fill.luminance();
    let on_white = 1.05 / (l + 0.05);
    let on_ink = (l + 0.05) / (theme::INK.luminance() + 0.05);
    if on_white > on_ink {
        theme::WHITE
    } else {
        theme::INK
    }
}

/// The colour key: the share scale from 0% (bottom) to 100% (top).
fn draw_share_bar(canvas: &Canvas, x: f64, y: f64, height: f64) -> Result<()> {
    let font = Font::new(size::LEGEND, theme::INK_SOFT);
    canvas.text("row share", x, y, font.bold(), Align::Left, Baseline::Top)?;
    let top = y + size::LEGEND + 8.0;
    let steps = IRIDESCENT.len();
    let band = (height / steps as f64).max(3.0);
    for (i, colour) in IRIDESCENT.iter().enumerate() {
        let rect = Rect {
            left: x + 2.0,
            right: x + 16.0,
            top: top + (steps - 1 - i) as f64 * band,
            bottom: top + (steps - i) as f64 * band,
        };
        canvas.fill_rect(rect, *colour, 1.0)?;
    }
    let whole = Rect {
        left: x + 2.0,
        right: x + 16.0,
        top,
        bottom: top + steps as f64 * band,
    };
    canvas.stroke_rect(whole, theme::AXIS)?;
    let tick = Font::new(size::TICK, theme::INK_SOFT);
    for (value, label) in [(1.0, "100%"), (0.5, "50%"), (0.0, "0%")] {
        let py = whole.bottom - value * whole.height();
        canvas.line(&[(x + 16.0, py), (x + 20.0, py)], theme::AXIS, 1.0, 1.0)?;
        canvas.text(label, x + 23.0, py, tick, Align::Left, Baseline::Middle)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::testing::check;
    use super::*;

    #[test]
    fn three_classes_show_counts_shares_and_totals() {
        let counts = vec![vec![50, 0, 0], vec![0, 47, 3], vec![0, 4, 46]];
        let chart = confusion_matrix(
            &counts,
            &["setosa", "versicolor", "virginica"],
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "confusion-three-class");
        assert!(r.has_text("Confusion matrix"));
        assert!(r.has_text("predicted class") && r.has_text("true class"));
        assert!(r.has_text("47") && r.has_text("94.0%") && r.has_text("100.0%"));
        assert_eq!(r.texts.iter().filter(|t| *t == "versicolor").count(), 2);
        assert_eq!(r.texts.iter().filter(|t| *t == "n = 50").count(), 3);
        assert!(r.has_text(
            "accuracy 95.3% (143 of 150); shading and percentages: share of the true class's row"
        ));
        // The full-row cell is the darkest colour, with white text.
        assert_eq!(
            r.count("rect", &[("fill", &IRIDESCENT[22].to_svg())]),
            1 + 1
        );
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
        let turned = r.count("text", &[("text-anchor", "end")]);
        assert!(turned >= k, "{turned}");
    }

    #[test]
    fn empty_rows_and_bad_shapes() {
        let chart = confusion_matrix(
            &[vec![0, 0], vec![3, 9]],
            &["a", "b"],
            &ChartOptions::default(),
        )
        .unwrap();
        let r = check(&chart, "confusion-empty-row");
        assert!(r.has_text("–") && r.has_text("n = 0"));
        let none = confusion_matrix(&[vec![0]], &["only"], &ChartOptions::default()).unwrap();
        let r = check(&none, "confusion-one-class-nothing-counted");
        assert!(r.has_text("no samples counted: every cell is 0"));
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
        assert_eq!(text_colour(IRIDESCENT[22]), theme::WHITE);
        assert_eq!(text_colour(IRIDESCENT[0]), theme::INK);
    }

    #[test]
    fn output_is_byte_identical() {
        let counts = vec![vec![5, 1], vec![2, 7]];
        let a = confusion_matrix(&counts, &["x", "y"], &ChartOptions::default()).unwrap();
        let b = confusion_matrix(&counts, &["x", "y"], &ChartOptions::default()).unwrap();
        assert_eq!(a.as_svg(), b.as_svg());
    }
}
