//! Test support: check a chart as a person would see it. Parse its SVG as
//! XML, check the layout's own boxes (every text inside the canvas and at
//! least the smallest size, the legend over no data mark), render it with
//! resvg and the shipped font, check that the renderer's text boxes stay
//! inside the canvas too and are no wider than the layout measured, and
//! write both under `target/chart-previews/` for a person to look at.

use std::path::PathBuf;

use super::draw::Rect;
use super::theme::{size, Rgb};
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

/// A chart checked as XML and rendered.
pub(crate) struct Rendered {
    pub svg: String,
    /// The content of every `<text>` element, trimmed, in document order.
    pub texts: Vec<String>,
    #[cfg(feature = "export")]
    pub pixmap: resvg::tiny_skia::Pixmap,
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

    /// The colour of the pixel at (x, y) (CSS pixels; rendered at 96 dpi).
    #[cfg(feature = "export")]
    pub fn pixel(&self, x: u32, y: u32) -> Rgb {
        let p = self
            .pixmap
            .pixel(x, y)
            .expect("pixel inside the image")
            .demultiply();
        Rgb(p.red(), p.green(), p.blue())
    }
}

/// The layout checks a reviewer would make by eye, on the layout's own
/// boxes: text inside the canvas and no smaller than the smallest size;
/// the legend over no data mark and no plot.
#[track_caller]
pub(crate) fn check_layout(chart: &Chart, name: &str) {
    let b = chart.boxes();
    let canvas = Rect::new(0.0, 0.0, chart.width() as f64, chart.height() as f64);
    for t in &b.texts {
        assert!(
            canvas.contains(&t.rect),
            "{name}: text {:?} at {:?} leaves the {}x{} canvas",
            t.text,
            t.rect,
            chart.width(),
            chart.height()
        );
        assert!(
            t.size >= size::SMALLEST,
            "{name}: text {:?} is {} px, under {} px",
            t.text,
            t.size,
            size::SMALLEST
        );
    }
    if let Some(legend) = b.legend {
        assert!(
            canvas.contains(&legend),
            "{name}: legend {legend:?} leaves the canvas"
        );
        for m in &b.marks {
            assert!(
                !legend.overlaps(m),
                "{name}: the legend {legend:?} covers a data mark at {m:?}"
            );
        }
        for p in &b.plots {
            assert!(
                !legend.overlaps(p),
                "{name}: the legend {legend:?} covers a plot at {p:?}"
            );
        }
    }
    // Text never sits on data marks (labels over cells are the cells' own
    // numbers, drawn inside them, and are not checked).
    for t in b
        .texts
        .iter()
        .filter(|t| !b.plots.iter().any(|p| p.contains(&t.rect)))
    {
        for m in &b.marks {
            assert!(
                !t.rect.overlaps(m),
                "{name}: text {:?} at {:?} covers a data mark at {m:?}",
                t.text,
                t.rect
            );
        }
    }
}

/// Parses `chart` as XML, checks its layout, renders it, writes `NAME.svg`
/// and `NAME.png` to the preview folder and returns what was found.
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
    let first_title_line = texts.first().cloned().unwrap_or_default();
    assert!(
        chart
            .title()
            .starts_with(first_title_line.trim_end_matches('…')),
        "{name}: title {:?} not drawn first; texts: {texts:?}",
        chart.title()
    );
    check_layout(chart, name);
    let dir = preview_dir();
    std::fs::write(dir.join(format!("{name}.svg")), &svg).expect("write preview SVG");
    #[cfg(feature = "export")]
    {
        let pixmap = render_and_measure(chart, name);
        pixmap
            .save_png(dir.join(format!("{name}.png")))
            .expect("write preview PNG");
        Rendered { svg, texts, pixmap }
    }
    #[cfg(not(feature = "export"))]
    Rendered { svg, texts }
}

/// Renders at 96 dpi and checks the renderer's own text boxes: inside the
/// canvas, and each no wider than the layout's measure of it (plus half a
/// pixel for rounding).
#[cfg(feature = "export")]
#[track_caller]
fn render_and_measure(chart: &Chart, name: &str) -> resvg::tiny_skia::Pixmap {
    use resvg::usvg::{Group, Node};
    let tree = super::export::tree(chart.as_svg()).unwrap();
    let size = tree.size().to_int_size();
    assert_eq!(
        (size.width(), size.height()),
        (chart.width(), chart.height())
    );
    fn texts(g: &Group, out: &mut Vec<(String, resvg::usvg::Rect)>) {
        for n in g.children() {
            match n {
                Node::Group(g) => texts(g, out),
                Node::Text(t) => {
                    let s: String = t.chunks().iter().map(|c| c.text()).collect();
                    out.push((s, t.abs_bounding_box()));
                }
                _ => {}
            }
        }
    }
    let mut found = Vec::new();
    texts(tree.root(), &mut found);
    let placed = &chart.boxes().texts;
    assert_eq!(
        found.len(),
        placed.len(),
        "{name}: every text laid out is rendered"
    );
    let (w, h) = (chart.width() as f32, chart.height() as f32);
    for ((text, r), p) in found.iter().zip(placed) {
        assert!(
            r.left() >= -0.5 && r.top() >= -0.5 && r.right() <= w + 0.5 && r.bottom() <= h + 0.5,
            "{name}: the renderer puts {text:?} at {r:?}, outside the {w}x{h} canvas"
        );
        let (long, drawn) = if p.turned {
            (p.rect.height(), r.height() as f64)
        } else {
            (p.rect.width(), r.width() as f64)
        };
        assert!(
            drawn <= long + 0.5,
            "{name}: {text:?} renders {drawn} px long, measured {long}"
        );
    }
    super::export::pixmap(chart.as_svg(), 96.0).unwrap()
}

/// Squared distance between two colours.
#[cfg(feature = "export")]
pub(crate) fn distance(a: Rgb, b: Rgb) -> i32 {
    let d = |x: u8, y: u8| (x as i32 - y as i32).pow(2);
    d(a.0, b.0) + d(a.1, b.1) + d(a.2, b.2)
}
