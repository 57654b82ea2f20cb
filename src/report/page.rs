//! A self-contained HTML page: headings, paragraphs, tables and charts
//! with numbered captions, the charts inline as SVG and the shipped font
//! embedded, so the page needs no network and no installed font.

use crate::chart::Chart;
use crate::notebook::escape;
use std::fmt::Write as _;

/// A page being written.
pub(crate) struct Page {
    title: String,
    body: String,
    sections: usize,
    figures: usize,
}

/// Base64 (RFC 4648, section 4: the standard alphabet, with padding).
pub(crate) fn base64(bytes: &[u8]) -> String {
    const ALPHABET: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = (b[0] as u32) << 16 | (b[1] as u32) << 8 | b[2] as u32;
        for i in 0..4 {
            if i <= chunk.len() {
                out.push(ALPHABET[(n >> (18 - 6 * i) & 63) as usize] as char);
            } else {
                out.push('=');
            }
        }
    }
    out
}

const STYLE: &str = "body{font-family:'Liberation Sans',Arial,Helvetica,sans-serif;max-width:980px;margin:24px auto;padding:0 16px;color:#1F1F1F;line-height:1.45}\
h1{font-size:22px;margin:0 0 6px 0}h2{font-size:17px;margin:28px 0 8px 0;border-bottom:1px solid #d8d8d8;padding-bottom:3px}\
p{font-size:14px;margin:6px 0}.lede{color:#3D3D3D}\
.caution{background:#fff4e0;border-left:4px solid #c77700;padding:8px 12px}\
figure{margin:14px 0 20px 0}figure svg{max-width:100%;height:auto;display:block}\
figcaption{font-size:13px;color:#3D3D3D;max-width:760px;margin-top:4px}figcaption b{color:#1F1F1F}\
footer{font-size:12px;color:#666;border-top:1px solid #d8d8d8;margin-top:28px;padding-top:8px}";

impl Page {
    pub fn new(title: impl Into<String>) -> Page {
        Page {
            title: title.into(),
            body: String::new(),
            sections: 0,
            figures: 0,
        }
    }

    /// A numbered section heading.
    pub fn section(&mut self, heading: &str) {
        self.sections += 1;
        let _ = writeln!(self.body, "<h2>{}. {}</h2>", self.sections, escape(heading));
    }

    /// A paragraph of plain text.
    pub fn paragraph(&mut self, text: &str) {
        let _ = writeln!(self.body, "<p>{}</p>", escape(text));
    }

    /// A highlighted caution.
    pub fn caution(&mut self, text: &str) {
        let _ = writeln!(
            self.body,
            "<p class=\"caution\"><b>Caution.</b> {}</p>",
            escape(text)
        );
    }

    /// Markup made elsewhere (a table).
    pub fn html(&mut self, html: &str) {
        self.body.push_str(html);
        self.body.push('\n');
    }

    /// A chart with a numbered caption saying what it shows, and a link to
    /// its file when it was saved.
    pub fn figure(&mut self, chart: &Chart, caption: &str, file: Option<&str>) {
        self.figures += 1;
        let link = file.map_or(String::new(), |f| {
            format!(" <a href=\"{}\">{}</a>", escape(f), escape(f))
        });
        let mut chars = caption.chars();
        let caption: String = chars
            .next()
            .map(|c| c.to_uppercase().chain(chars).collect())
            .unwrap_or_default();
        let _ = writeln!(
            self.body,
            "<figure>{}<figcaption><b>Figure {}.</b> {}{}</figcaption></figure>",
            chart.as_svg().trim_end(),
            self.figures,
            escape(&caption),
            link
        );
    }

    /// The body alone (for a notebook cell, which has its own page).
    pub fn fragment(self) -> String {
        self.body
    }

    /// The whole document: the embedded font, the title, a lede, the body
    /// and a footer.
    pub fn finish(self, lede: &str, footer: &[String]) -> String {
        let mut h = String::with_capacity(self.body.len() + 1_200_000);
        h.push_str("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n");
        h.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
        let _ = writeln!(h, "<title>{}</title>", escape(&self.title));
        h.push_str("<style>");
        for (bytes, weight) in [
            (crate::chart::fonts::REGULAR, 400),
            (crate::chart::fonts::BOLD, 700),
        ] {
            let _ = write!(
                h,
                "@font-face{{font-family:'Liberation Sans';font-style:normal;font-weight:{weight};src:url(data:font/ttf;base64,{}) format('truetype')}}",
                base64(bytes)
            );
        }
        h.push_str(STYLE);
        h.push_str("</style></head>\n<body>\n");
        let _ = writeln!(h, "<h1>{}</h1>", escape(&self.title));
        if !lede.is_empty() {
            let _ = writeln!(h, "<p class=\"lede\">{}</p>", escape(lede));
        }
        h.push_str(&self.body);
        h.push_str("<footer>");
        for line in footer {
            let _ = write!(h, "<p>{}</p>", escape(line));
        }
        h.push_str("<p>Fonts: Liberation Sans (SIL Open Font License 1.1), embedded.</p></footer>\n</body></html>\n");
        h
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The test vectors of RFC 4648, section 10.
    #[test]
    fn base64_matches_rfc_4648() {
        for (input, output) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(input.as_bytes()), output);
        }
    }
}
