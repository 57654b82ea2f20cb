//! Class-labelled points, shared by the decision map and the hidden-layer
//! view: checking, thinning, ranges, drawing and legend entries.

use super::draw::{Entry, Key, Mark};
use super::theme::{self, class_colour, class_marker, size};
use super::{group_digits, stride, MAX_POINTS};
use crate::{Error, Result};

/// Points ready to draw, with the notes their cleaning produced.
pub(crate) struct Prepared {
    pub points: Vec<(f64, f64, usize)>,
    pub notes: Vec<String>,
    /// How many points of each class are drawn.
    pub per_class: Vec<usize>,
}

/// Checks class indices, drops non-finite points and thins to
/// [`MAX_POINTS`] (every k-th point), noting each step.
pub(crate) fn prepare(
    what: &str,
    points: &[(f64, f64, usize)],
    classes: usize,
) -> Result<Prepared> {
    if let Some((k, p)) = points.iter().enumerate().find(|(_, p)| p.2 >= classes) {
        return Err(Error::input(
            what,
            format!(
                "point {k} has class index {} but there are {classes} class names; pass one name per class",
                p.2
            ),
        ));
    }
    let mut notes = Vec::new();
    let finite: Vec<(f64, f64, usize)> = points
        .iter()
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    let dropped = points.len() - finite.len();
    if dropped > 0 {
        notes.push(format!(
            "skipped {} point{} with a non-finite coordinate",
            group_digits(dropped),
            if dropped == 1 { "" } else { "s" }
        ));
    }
    let k = stride(finite.len(), MAX_POINTS);
    let shown: Vec<(f64, f64, usize)> = finite.iter().copied().step_by(k).collect();
    if k > 1 {
        notes.push(format!(
            "showing {} of {} points (every {})",
            group_digits(shown.len()),
            group_digits(finite.len()),
            ordinal(k)
        ));
    }
    let mut per_class = vec![0; classes];
    for p in &shown {
        per_class[p.2] += 1;
    }
    Ok(Prepared {
        points: shown,
        notes,
        per_class,
    })
}

/// 2 -> "2nd", 11 -> "11th", 23 -> "23rd".
pub(crate) fn ordinal(n: usize) -> String {
    let suffix = match (n % 10, n % 100) {
        (_, 11..=13) => "th",
        (1, _) => "st",
        (2, _) => "nd",
        (3, _) => "rd",
        _ => "th",
    };
    format!("{n}{suffix}")
}

/// Legend entries, one per class: marker and name (with the drawn count).
pub(crate) fn class_entries(names: &[String], per_class: &[usize]) -> Vec<Entry> {
    names
        .iter()
        .enumerate()
        .map(|(i, name)| {
            Entry::new(
                format!(
                    "{name} ({})",
                    group_digits(per_class.get(i).copied().unwrap_or(0))
                ),
                Key::Marker {
                    shape: class_marker(i),
                    colour: class_colour(i),
                    outline: theme::OUTLINE,
                },
            )
        })
        .collect()
}

/// A note when the points hold fewer than two classes.
pub(crate) fn class_note(names: &[String], per_class: &[usize]) -> Option<String> {
    let present: Vec<&str> = per_class
        .iter()
        .enumerate()
        .filter(|(_, n)| **n > 0)
        .map(|(i, _)| names[i].as_str())
        .collect();
    match present.as_slice() {
        [] => Some("no points to show".to_string()),
        [one] if names.len() > 1 => Some(format!("the points hold only one class, \"{one}\"")),
        _ => None,
    }
}

/// The points as one mark, in the order given (no class is always on top),
/// coloured and shaped by class and outlined for contrast; smaller
/// markers, without outlines, for clouds of more than 1,500 points.
pub(crate) fn class_mark(points: &[(f64, f64, usize)]) -> Mark {
    // Dense clouds: smaller markers without outlines, which also shortens
    // the SVG.
    let (radius, outline) = if points.len() > 1500 {
        (size::MARKER - 1.5, None)
    } else {
        (size::MARKER, Some(theme::OUTLINE))
    };
    Mark::Classes {
        points: points.to_vec(),
        outline,
        radius,
    }
}
