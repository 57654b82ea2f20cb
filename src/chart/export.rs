//! PDF and PNG from a chart's SVG (crate feature `export`): usvg parses the
//! SVG once with a font database holding only the shipped faces, resvg and
//! tiny-skia rasterise it, svg2pdf writes the PDF. Nothing depends on the
//! machine's fonts, so the files are the same everywhere.

use std::sync::{Arc, OnceLock};

use resvg::tiny_skia;
use resvg::usvg;

use crate::error::{Error, Result};

use super::fonts::{BOLD, REGULAR};

/// The shipped faces, and nothing else.
pub(crate) fn fonts() -> Arc<usvg::fontdb::Database> {
    static FONTS: OnceLock<Arc<usvg::fontdb::Database>> = OnceLock::new();
    FONTS
        .get_or_init(|| {
            let mut db = usvg::fontdb::Database::new();
            db.load_font_data(REGULAR.to_vec());
            db.load_font_data(BOLD.to_vec());
            for generic in ["sans-serif", "serif", "monospace", "cursive", "fantasy"] {
                match generic {
                    "sans-serif" => db.set_sans_serif_family("Liberation Sans"),
                    "serif" => db.set_serif_family("Liberation Sans"),
                    "monospace" => db.set_monospace_family("Liberation Sans"),
                    "cursive" => db.set_cursive_family("Liberation Sans"),
                    _ => db.set_fantasy_family("Liberation Sans"),
                }
            }
            Arc::new(db)
        })
        .clone()
}

/// Parses a chart's SVG for rendering.
pub(crate) fn tree(svg: &str) -> Result<usvg::Tree> {
    let options = usvg::Options {
        fontdb: fonts(),
        font_family: "Liberation Sans".to_string(),
        ..usvg::Options::default()
    };
    usvg::Tree::from_str(svg, &options).map_err(|e| {
        Error::input(
            "exporting the chart",
            format!("the SVG does not parse: {e}"),
        )
    })
}

/// Renders onto a white pixmap at `dpi`.
pub(crate) fn pixmap(svg: &str, dpi: f64) -> Result<tiny_skia::Pixmap> {
    let tree = tree(svg)?;
    let scale = (dpi / 96.0) as f32;
    let size = tree.size();
    let (w, h) = (
        (size.width() * scale).ceil() as u32,
        (size.height() * scale).ceil() as u32,
    );
    let mut pixmap = tiny_skia::Pixmap::new(w.max(1), h.max(1)).ok_or_else(|| {
        Error::input(
            "exporting the chart",
            format!("cannot make a {w} x {h} image"),
        )
    })?;
    pixmap.fill(tiny_skia::Color::WHITE);
    resvg::render(
        &tree,
        tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    Ok(pixmap)
}

/// A PNG file at `dpi`, its resolution recorded in a `pHYs` chunk.
pub(crate) fn png(svg: &str, dpi: f64) -> Result<Vec<u8>> {
    let bytes = pixmap(svg, dpi)?
        .encode_png()
        .map_err(|e| Error::input("exporting the chart", format!("PNG encoding failed: {e}")))?;
    Ok(with_resolution(bytes, dpi))
}

/// A one-page PDF of the chart's physical size (96 CSS pixels per inch).
///
/// The text is drawn as the shipped font's outlines rather than embedded
/// as a font: svg2pdf 0.13 writes embedded fonts' objects in hash-map
/// order, numbered as it goes, so two runs with two faces (regular and
/// bold) would differ in object order and numbers. Outlines look the same,
/// need no font in the reader, and make reruns byte-identical; the cost is
/// that the PDF's text cannot be selected or searched.
pub(crate) fn pdf(svg: &str) -> Result<Vec<u8>> {
    let tree = tree(svg)?;
    let options = svg2pdf::ConversionOptions {
        embed_text: false,
        ..svg2pdf::ConversionOptions::default()
    };
    svg2pdf::to_pdf(&tree, options, svg2pdf::PageOptions { dpi: 96.0 })
        .map(sorted_resources)
        .map_err(|e| Error::input("exporting the chart", format!("PDF conversion failed: {e}")))
}

/// svg2pdf 0.13 lists a page's resources (fonts, graphics states, ...) in
/// hash-map order, which changes from run to run. Sorting the entries of
/// each resource dictionary makes the file the same on every run; the
/// dictionary keeps its length, so the cross-reference offsets stay right.
/// Only dictionaries whose every line is `/Name N 0 R` are touched.
fn sorted_resources(mut pdf: Vec<u8>) -> Vec<u8> {
    const KINDS: [&[u8]; 6] = [
        b"/Font <<\n",
        b"/ExtGState <<\n",
        b"/XObject <<\n",
        b"/Pattern <<\n",
        b"/Shading <<\n",
        b"/ColorSpace <<\n",
    ];
    let is_reference = |line: &[u8]| {
        let text = match std::str::from_utf8(line) {
            Ok(t) => t.trim(),
            Err(_) => return false,
        };
        let parts: Vec<&str> = text.split(' ').collect();
        parts.len() == 4
            && parts[0].starts_with('/')
            && parts[1].bytes().all(|b| b.is_ascii_digit())
            && parts[2] == "0"
            && parts[3] == "R"
    };
    for kind in KINDS {
        let mut from = 0;
        while let Some(at) = find(&pdf[from..], kind).map(|i| i + from) {
            let start = at + kind.len();
            let Some(end) = find(&pdf[start..], b">>").map(|i| i + start) else {
                break;
            };
            // The entries run up to the indentation before ">>".
            let body_end = pdf[start..end]
                .iter()
                .rposition(|&b| b == b'\n')
                .map_or(start, |i| start + i + 1);
            let mut lines: Vec<Vec<u8>> = pdf[start..body_end]
                .split_inclusive(|&b| b == b'\n')
                .map(<[u8]>::to_vec)
                .collect();
            if !lines.is_empty() && lines.iter().all(|l| is_reference(l)) {
                lines.sort();
                let sorted = lines.concat();
                pdf[start..body_end].copy_from_slice(&sorted);
            }
            from = end;
        }
    }
    pdf
}

fn find(haystack: &[u8], needle: &[u8]) -> Option<usize> {
    haystack.windows(needle.len()).position(|w| w == needle)
}

/// Inserts a `pHYs` chunk (pixels per metre, both axes) after the `IHDR`
/// chunk of a PNG file, as the PNG specification (ISO/IEC 15948:2003,
/// 11.3.5.3) defines it.
fn with_resolution(png: Vec<u8>, dpi: f64) -> Vec<u8> {
    // Signature (8 bytes), then IHDR: length (4), type (4), 13 bytes, CRC (4).
    const AFTER_IHDR: usize = 8 + 4 + 4 + 13 + 4;
    if png.len() < AFTER_IHDR || &png[12..16] != b"IHDR" {
        return png;
    }
    let per_metre = (dpi / 0.0254).round() as u32;
    let mut data = Vec::with_capacity(13);
    data.extend_from_slice(b"pHYs");
    data.extend_from_slice(&per_metre.to_be_bytes());
    data.extend_from_slice(&per_metre.to_be_bytes());
    data.push(1); // unit: the metre
    let mut chunk = Vec::with_capacity(21);
    chunk.extend_from_slice(&9u32.to_be_bytes());
    chunk.extend_from_slice(&data);
    chunk.extend_from_slice(&crc32(&data).to_be_bytes());
    let mut out = Vec::with_capacity(png.len() + chunk.len());
    out.extend_from_slice(&png[..AFTER_IHDR]);
    out.extend_from_slice(&chunk);
    out.extend_from_slice(&png[AFTER_IHDR..]);
    out
}

/// CRC-32 as the PNG specification defines it (ISO/IEC 15948:2003, annex
/// D: polynomial 0xEDB88320, reflected, initial and final value all ones).
fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = 0xFFFF_FFFFu32;
    for &b in bytes {
        crc ^= b as u32;
        for _ in 0..8 {
            crc = if crc & 1 == 1 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resource_dictionaries_are_sorted_in_place() {
        let pdf = b"<<\n  /Resources <<\n    /Font <<\n      /fo1 2 0 R\n      /fo0 1 0 R\n    >>\n  >>\n".to_vec();
        let sorted = sorted_resources(pdf.clone());
        assert_eq!(sorted.len(), pdf.len());
        let text = String::from_utf8(sorted).unwrap();
        assert!(
            text.find("/fo0").unwrap() < text.find("/fo1").unwrap(),
            "{text}"
        );
        // Anything else is left alone.
        let other = b"/Font <<\n /Type /Font\n>>".to_vec();
        assert_eq!(sorted_resources(other.clone()), other);
    }

    /// The CRC of "IEND" (an empty IEND chunk's CRC, AE 42 60 82, printed
    /// at the end of every PNG file; ISO/IEC 15948:2003).
    #[test]
    fn crc_matches_the_png_specification() {
        assert_eq!(crc32(b"IEND"), 0xAE42_6082);
        // The standard check value of CRC-32 over "123456789".
        assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
    }
}
