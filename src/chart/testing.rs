//! Test support: parse a chart's SVG as XML, render it with resvg, and write
//! both under `target/chart-previews/` for a person to look at.
//!
//! Text in the PNGs needs a system font: resvg loads the fonts under
//! `/usr/share/fonts` (Debian's `fonts-dejavu-core` gives DejaVu Sans, which
//! stands in for the generic "sans-serif").

use std::path::PathBuf;
use std::sync::{Arc, OnceLock};

use resvg::tiny_skia;
use resvg::usvg;

use super::theme::Rgb;
use super::Chart;

/// `target/chart-previews/`, created on first use.
pub(crate) fn preview_dir() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target"));
    let dir = target.join("chart-previews");
    std::fs::create_dir_all(&dir).expect("create target/chart-previews");
    dir
}

fn fonts() -> Arc<usvg::fontdb::Database> {
    static FONTS: OnceLock<Arc<usvg::fontdb::Database>> = OnceLock::new();
    FONTS
        .get_or_init(|| {
            let mut db = usvg::fontdb::Database::new();
            db.load_system_fonts();
            db.set_sans_serif_family("DejaVu Sans");
            Arc::new(db)
        })
        .clone()
}

/// A chart checked as XML and rendered.
pub(crate) struct Rendered {
    pub svg: String,
    /// The content of every `<text>` element, trimmed, in document order.
    pub texts: Vec<String>,
    pub pixmap: tiny_skia::Pixmap,
}

impl Rendered {
    /// Whether some text element reads exactly `text`.
    pub fn has_text(&self, text: &str) -> bool {
        self.texts.iter().any(|t| t == text)
    }

    /// Whether some text element contains `part`.
    pub fn has_text_containing(&self, part: &str) -> bool {
        self.texts.iter().any(|t| t.contains(part))
    }

    /// Elements named `tag` whose attributes include all of `attributes`.
    pub fn count(&self, tag: &str, attributes: &[(&str, &str)]) -> usize {
        let doc = roxmltree::Document::parse(&self.svg).unwrap();
        doc.descendants()
            .filter(|n| n.has_tag_name(tag))
            .filter(|n| attributes.iter().all(|(k, v)| n.attribute(*k) == Some(*v)))
            .count()
    }

    /// Markers (filled polygons or circles) filled with `colour`.
    pub fn filled_with(&self, colour: Rgb) -> usize {
        let fill = colour.to_svg();
        self.count("polygon", &[("fill", &fill)]) + self.count("circle", &[("fill", &fill)])
    }

    /// The colour of the pixel at (x, y).
    pub fn pixel(&self, x: u32, y: u32) -> Rgb {
        let p = self
            .pixmap
            .pixel(x, y)
            .expect("pixel inside the image")
            .demultiply();
        Rgb(p.red(), p.green(), p.blue())
    }

    /// Share of pixels that are not white: a rough "something was drawn" check.
    pub fn ink_share(&self) -> f64 {
        let data = self.pixmap.data();
        let inked = data
            .chunks(4)
            .filter(|p| p[0] < 250 || p[1] < 250 || p[2] < 250)
            .count();
        inked as f64 / (data.len() / 4) as f64
    }
}

/// Parses `chart` as XML, renders it, writes `NAME.svg` and `NAME.png` to
/// the preview folder and returns what was found.
#[track_caller]
pub(crate) fn check(chart: &Chart, name: &str) -> Rendered {
    let svg = chart.as_svg().to_string();
    let doc =
        roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{name}: SVG is not XML: {e}"));
    let root = doc.root_element();
    assert!(root.has_tag_name("svg"), "{name}: root is not <svg>");
    assert_eq!(
        root.attribute("width"),
        Some(chart.width().to_string().as_str())
    );
    assert_eq!(
        root.attribute("height"),
        Some(chart.height().to_string().as_str())
    );
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect();
    assert!(
        texts.iter().any(|t| t == chart.title()),
        "{name}: title {:?} not drawn; texts: {texts:?}",
        chart.title()
    );

    let options = usvg::Options {
        fontdb: fonts(),
        ..usvg::Options::default()
    };
    let tree = usvg::Tree::from_str(&svg, &options).unwrap_or_else(|e| panic!("{name}: usvg: {e}"));
    let size = tree.size().to_int_size();
    assert_eq!(
        (size.width(), size.height()),
        (chart.width(), chart.height())
    );
    let mut pixmap = tiny_skia::Pixmap::new(size.width(), size.height()).expect("pixmap");
    pixmap.fill(tiny_skia::Color::WHITE);
    resvg::render(&tree, tiny_skia::Transform::default(), &mut pixmap.as_mut());

    let dir = preview_dir();
    std::fs::write(dir.join(format!("{name}.svg")), &svg).expect("write preview SVG");
    pixmap
        .save_png(dir.join(format!("{name}.png")))
        .expect("write preview PNG");
    Rendered { svg, texts, pixmap }
}

/// Squared distance between two colours.
pub(crate) fn distance(a: Rgb, b: Rgb) -> i32 {
    let d = |x: u8, y: u8| (x as i32 - y as i32).pow(2);
    d(a.0, b.0) + d(a.1, b.1) + d(a.2, b.2)
}
