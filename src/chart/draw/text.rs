//! Measuring text with the shipped font's own advance widths, so that a
//! layout computed here is the layout the renderers draw: fitting with an
//! ellipsis, wrapping at spaces, and where a baseline goes.

use super::font_widths::{ASCENDER, BOLD, CAP_HEIGHT, DESCENDER, REGULAR, UNITS_PER_EM};

/// The advance of one character in em: from the table, else 0.6 em for
/// other Latin-like characters and 1 em for wide scripts (a generous
/// guess, so that layouts leave room rather than overlap).
fn advance(c: char, bold: bool) -> f64 {
    let table = if bold { BOLD } else { REGULAR };
    match table.binary_search_by_key(&c, |&(k, _)| k) {
        Ok(i) => table[i].1 as f64 / UNITS_PER_EM,
        Err(_) if (c as u32) < 0x2E80 => 0.6,
        Err(_) => 1.0,
    }
}

/// The width of `text` in pixels at `size` (no kerning: kerned text is a
/// little narrower, never wider, in this face).
pub(crate) fn text_width(text: &str, size: f64, bold: bool) -> f64 {
    text.chars().map(|c| advance(c, bold)).sum::<f64>() * size
}

/// Height above the baseline of the face's tallest glyphs, in pixels.
pub(crate) fn ascent(size: f64) -> f64 {
    ASCENDER / UNITS_PER_EM * size
}

/// Depth below the baseline of the face's deepest glyphs, in pixels.
pub(crate) fn descent(size: f64) -> f64 {
    DESCENDER / UNITS_PER_EM * size
}

/// Height of capital letters, in pixels (centring text on a point puts
/// the baseline half of this below it).
pub(crate) fn cap_height(size: f64) -> f64 {
    CAP_HEIGHT / UNITS_PER_EM * size
}

/// `text`, shortened with an ellipsis until it fits `max` pixels.
pub(crate) fn fit_text(text: &str, size: f64, bold: bool, max: f64) -> String {
    if text_width(text, size, bold) <= max {
        return text.to_string();
    }
    let ellipsis = text_width("…", size, bold);
    let mut out = String::new();
    let mut used = 0.0;
    for c in text.chars() {
        let w = advance(c, bold) * size;
        if used + w + ellipsis > max {
            break;
        }
        out.push(c);
        used += w;
    }
    let mut out = out.trim_end().to_string();
    out.push('…');
    out
}

/// `text` broken at spaces into lines no wider than `max` pixels; a word
/// wider than a line on its own is shortened with an ellipsis.
pub(crate) fn wrap(text: &str, size: f64, bold: bool, max: f64) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        let candidate = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if text_width(&candidate, size, bold) <= max || line.is_empty() {
            line = candidate;
        } else {
            lines.push(std::mem::take(&mut line));
            line = word.to_string();
        }
    }
    if !line.is_empty() || lines.is_empty() {
        lines.push(line);
    }
    lines
        .into_iter()
        .map(|l| fit_text(&l, size, bold, max))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every width in the table is the font file's own (hmtx advance), and
    /// the vertical metrics match hhea and OS/2. Reference: the font files
    /// themselves, read by the ttf-parser crate.
    #[test]
    fn the_width_table_is_the_fonts() {
        for (table, file) in [
            (
                REGULAR,
                &include_bytes!("../fonts/LiberationSans-Regular.ttf")[..],
            ),
            (
                BOLD,
                &include_bytes!("../fonts/LiberationSans-Bold.ttf")[..],
            ),
        ] {
            let face = ttf_parser::Face::parse(file, 0).unwrap();
            assert_eq!(face.units_per_em() as f64, UNITS_PER_EM);
            assert_eq!(face.ascender() as f64, ASCENDER);
            assert_eq!(-face.descender() as f64, DESCENDER);
            assert_eq!(face.capital_height().map(f64::from), Some(CAP_HEIGHT));
            for &(c, width) in table {
                let glyph = face.glyph_index(c).unwrap();
                assert_eq!(face.glyph_hor_advance(glyph), Some(width), "{c:?}");
            }
            assert!(table.windows(2).all(|w| w[0].0 < w[1].0), "sorted");
        }
    }

    #[test]
    fn widths_add_up() {
        // "M" is 1,706 units in Liberation Sans Regular.
        assert!((text_width("MM", 2048.0, false) - 2.0 * 1706.0).abs() < 1e-9);
        assert!(text_width("bold", 12.0, true) > text_width("bold", 12.0, false));
    }

    #[test]
    fn text_is_fitted_and_wrapped() {
        assert_eq!(fit_text("short", 12.0, false, 200.0), "short");
        let fitted = fit_text("a rather long legend label indeed", 12.0, false, 80.0);
        assert!(fitted.ends_with('…') && text_width(&fitted, 12.0, false) <= 80.0);
        let lines = wrap("one two three four five six", 12.0, false, 60.0);
        assert!(lines.len() > 1);
        assert!(lines.iter().all(|l| text_width(l, 12.0, false) <= 60.0));
        assert_eq!(lines.join(" "), "one two three four five six");
        assert_eq!(wrap("", 12.0, false, 60.0), vec![String::new()]);
    }
}
