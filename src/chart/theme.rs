//! The charts' visual identity: colour palettes, marker shapes, text sizes.
//!
//! Palettes are published colour-blind-safe schemes, copied exactly:
//!
//! - [`OKABE_ITO`]: the eight colours of Okabe, M. & Ito, K. (2008), *Color
//!   Universal Design (CUD): how to make figures and presentations that are
//!   friendly to colorblind people*, re-ordered so that the first classes get
//!   the most distinct pairs (blue, vermillion, bluish green, ...).
//! - [`SUNSET`]: the 11-colour diverging scheme "sunset" of Tol, P. (2021),
//!   *Colour Schemes*, SRON technical note SRON/EPS/TN/09-002, issue 3.2,
//!   used for P(class 1) in two-class decision maps.
//! - [`IRIDESCENT`]: the 23-colour sequential scheme "iridescent" from the
//!   same note, used for row shares in confusion matrices.

/// An opaque colour, red, green, blue.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl Rgb {
    /// From a `0xRRGGBB` number.
    pub const fn hex(value: u32) -> Rgb {
        Rgb((value >> 16) as u8, (value >> 8) as u8, value as u8)
    }

    /// Mixes towards `other`: `t = 0` gives `self`, `t = 1` gives `other`.
    ///
    /// ```text
    /// channel = round(self + t * (other - self)), per channel, t clamped to [0, 1]
    /// ```
    pub fn mix(self, other: Rgb, t: f64) -> Rgb {
        let t = if t.is_finite() {
            t.clamp(0.0, 1.0)
        } else {
            0.0
        };
        let channel = |a: u8, b: u8| (a as f64 + t * (b as f64 - a as f64)).round() as u8;
        Rgb(
            channel(self.0, other.0),
            channel(self.1, other.1),
            channel(self.2, other.2),
        )
    }

    /// Relative luminance, 0 (black) to 1 (white), as defined by WCAG 2.x:
    ///
    /// ```text
    /// c = channel / 255;  c_lin = c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055)^2.4
    /// L = 0.2126 R_lin + 0.7152 G_lin + 0.0722 B_lin
    /// ```
    pub fn luminance(self) -> f64 {
        let lin = |c: u8| {
            let c = c as f64 / 255.0;
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(self.0) + 0.7152 * lin(self.1) + 0.0722 * lin(self.2)
    }

    /// The SVG spelling, `#RRGGBB` in upper case.
    pub fn to_svg(self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.0, self.1, self.2)
    }
}

/// White, the background.
pub const WHITE: Rgb = Rgb(255, 255, 255);
/// Titles and axis labels.
pub const INK: Rgb = Rgb::hex(0x1F1F1F);
/// Tick labels and legend text.
pub const INK_SOFT: Rgb = Rgb::hex(0x3D3D3D);
/// Notes and secondary text.
pub const INK_MUTED: Rgb = Rgb::hex(0x666666);
/// Axis lines and tick marks.
pub const AXIS: Rgb = Rgb::hex(0x8C8C8C);
/// Grid lines.
pub const GRID: Rgb = Rgb::hex(0xE3E3E3);
/// Marker outlines, so that markers stand out on any fill.
pub const OUTLINE: Rgb = Rgb::hex(0x262626);

/// Okabe & Ito (2008) colours in the order classes and series use them.
///
/// | index | name            | hex       |
/// |-------|-----------------|-----------|
/// | 0     | blue            | `#0072B2` |
/// | 1     | vermillion      | `#D55E00` |
/// | 2     | bluish green    | `#009E73` |
/// | 3     | reddish purple  | `#CC79A7` |
/// | 4     | orange          | `#E69F00` |
/// | 5     | sky blue        | `#56B4E9` |
/// | 6     | black           | `#000000` |
/// | 7     | yellow          | `#F0E442` |
pub const OKABE_ITO: [Rgb; 8] = [
    Rgb::hex(0x0072B2),
    Rgb::hex(0xD55E00),
    Rgb::hex(0x009E73),
    Rgb::hex(0xCC79A7),
    Rgb::hex(0xE69F00),
    Rgb::hex(0x56B4E9),
    Rgb::hex(0x000000),
    Rgb::hex(0xF0E442),
];

/// Tol (2021) "sunset", diverging, from blue (low) to red (high).
pub const SUNSET: [Rgb; 11] = [
    Rgb::hex(0x364B9A),
    Rgb::hex(0x4A7BB7),
    Rgb::hex(0x6EA6CD),
    Rgb::hex(0x98CAE1),
    Rgb::hex(0xC2E4EF),
    Rgb::hex(0xEAECCC),
    Rgb::hex(0xFEDA8B),
    Rgb::hex(0xFDB366),
    Rgb::hex(0xF67E4B),
    Rgb::hex(0xDD3D2D),
    Rgb::hex(0xA50026),
];

/// Tol (2021) "iridescent", sequential, from pale cream (low) to dark plum (high).
pub const IRIDESCENT: [Rgb; 23] = [
    Rgb::hex(0xFEFBE9),
    Rgb::hex(0xFCF7D5),
    Rgb::hex(0xF5F3C1),
    Rgb::hex(0xEAF0B5),
    Rgb::hex(0xDDECBF),
    Rgb::hex(0xD0E7CA),
    Rgb::hex(0xC2E3D2),
    Rgb::hex(0xB5DDD8),
    Rgb::hex(0xA8D8DC),
    Rgb::hex(0x9BD2E1),
    Rgb::hex(0x8DCBE4),
    Rgb::hex(0x81C4E7),
    Rgb::hex(0x7BBCE7),
    Rgb::hex(0x7EB2E4),
    Rgb::hex(0x88A5DD),
    Rgb::hex(0x9398D2),
    Rgb::hex(0x9B8AC4),
    Rgb::hex(0x9D7DB2),
    Rgb::hex(0x9A709E),
    Rgb::hex(0x906388),
    Rgb::hex(0x805770),
    Rgb::hex(0x684957),
    Rgb::hex(0x46353A),
];

/// Cells with no value (no prediction, no count).
pub const EMPTY: Rgb = Rgb::hex(0xD9D9D9);

/// The colour of class (or series) `index`; cycles after eight.
pub fn class_colour(index: usize) -> Rgb {
    OKABE_ITO[index % OKABE_ITO.len()]
}

/// The marker of class (or series) `index`; cycles after seven, so that
/// colour and shape together stay unique for 56 classes.
pub fn class_marker(index: usize) -> Marker {
    Marker::ALL[index % Marker::ALL.len()]
}

/// A colour on a scale at position `t` in [0, 1], interpolating linearly
/// between neighbouring stops (NaN gives the first stop).
pub fn scale_colour(stops: &[Rgb], t: f64) -> Rgb {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let last = stops.len() - 1;
    let position = t * last as f64;
    let i = (position.floor() as usize).min(last.saturating_sub(1));
    if last == 0 {
        return stops[0];
    }
    stops[i].mix(stops[i + 1], position - i as f64)
}

/// The line pattern of series `index`: solid, dashed, dotted, dash-dot,
/// long dash, cycling; with the colour it keeps series apart in grey print.
pub fn series_dash(index: usize) -> Dash {
    Dash::ALL[index % Dash::ALL.len()]
}

/// Line patterns.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Dash {
    /// An unbroken line.
    Solid,
    /// Short dashes ([`Dash::pattern`] gives the lengths).
    Dashed,
    /// Round-looking dots.
    Dotted,
    /// Dash, dot, dash.
    DashDot,
    /// Long dashes.
    LongDash,
}

impl Dash {
    /// Every pattern, in series order.
    pub const ALL: [Dash; 5] = [
        Dash::Solid,
        Dash::Dashed,
        Dash::Dotted,
        Dash::DashDot,
        Dash::LongDash,
    ];

    /// The SVG `stroke-dasharray` for a line `width` pixels wide (dash and
    /// gap lengths grow with the width, so thick lines keep their rhythm),
    /// or `None` for a solid line.
    pub fn pattern(self, width: f64) -> Option<String> {
        let w = width.max(1.0);
        let lengths: &[f64] = match self {
            Dash::Solid => return None,
            Dash::Dashed => &[4.0, 2.5],
            Dash::Dotted => &[1.2, 1.8],
            Dash::DashDot => &[5.0, 2.0, 1.2, 2.0],
            Dash::LongDash => &[8.0, 3.0],
        };
        Some(
            lengths
                .iter()
                .map(|l| {
                    // Two decimals at most, trailing zeros trimmed.
                    let text = format!("{:.2}", l * w.sqrt() * 1.6);
                    text.trim_end_matches('0').trim_end_matches('.').to_string()
                })
                .collect::<Vec<_>>()
                .join(" "),
        )
    }
}

/// Marker shapes; class `i` uses [`class_marker`]`(i)`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Marker {
    /// A filled circle.
    Circle,
    /// A filled square.
    Square,
    /// A triangle pointing up.
    Triangle,
    /// A diamond (a square on its corner).
    Diamond,
    /// A triangle pointing down.
    TriangleDown,
    /// A thick diagonal cross (×).
    Cross,
    /// A thick upright cross (+).
    Plus,
}

impl Marker {
    /// Every marker, in class order.
    pub const ALL: [Marker; 7] = [
        Marker::Circle,
        Marker::Square,
        Marker::Triangle,
        Marker::Diamond,
        Marker::TriangleDown,
        Marker::Cross,
        Marker::Plus,
    ];

    /// The polygon outline of the marker centred on (x, y) with "radius" r,
    /// or `None` for the circle.
    pub(crate) fn polygon(self, x: f64, y: f64, r: f64) -> Option<Vec<(f64, f64)>> {
        // Sizes are tuned so that all shapes look about as heavy as the circle.
        let points: Vec<(f64, f64)> = match self {
            Marker::Circle => return None,
            Marker::Square => {
                let s = r * 0.88;
                vec![(-s, -s), (s, -s), (s, s), (-s, s)]
            }
            Marker::Triangle => {
                let s = r * 1.2;
                vec![(0.0, -s), (s * 0.95, s * 0.65), (-s * 0.95, s * 0.65)]
            }
            Marker::TriangleDown => {
                let s = r * 1.2;
                vec![(0.0, s), (-s * 0.95, -s * 0.65), (s * 0.95, -s * 0.65)]
            }
            Marker::Diamond => {
                let s = r * 1.2;
                vec![(0.0, -s), (s, 0.0), (0.0, s), (-s, 0.0)]
            }
            Marker::Plus => {
                let (a, w) = (r * 1.15, r * 0.38);
                vec![
                    (-w, -a),
                    (w, -a),
                    (w, -w),
                    (a, -w),
                    (a, w),
                    (w, w),
                    (w, a),
                    (-w, a),
                    (-w, w),
                    (-a, w),
                    (-a, -w),
                    (-w, -w),
                ]
            }
            Marker::Cross => {
                // The plus turned by 45 degrees.
                let c = std::f64::consts::FRAC_1_SQRT_2;
                return Marker::Plus.polygon(0.0, 0.0, r).map(|points| {
                    points
                        .into_iter()
                        .map(|(px, py)| (x + c * (px - py), y + c * (px + py)))
                        .collect()
                });
            }
        };
        Some(
            points
                .into_iter()
                .map(|(px, py)| (x + px, y + py))
                .collect(),
        )
    }
}

/// Text sizes and spacing in CSS pixels (1/96 inch; 1 pt = 4/3 px). The
/// same at every chart size, as in print: the smallest text is 10 px,
/// 7.5 pt, at the chart's physical size ([`ChartOptions::width`]).
///
/// [`ChartOptions::width`]: super::ChartOptions::width
pub(crate) mod size {
    /// Chart title (bold).
    pub const TITLE: f64 = 14.5;
    /// Subtitle lines under the title.
    pub const SUBTITLE: f64 = 11.0;
    /// Axis labels and panel captions.
    pub const LABEL: f64 = 11.5;
    /// Tick labels and numbers beside rows.
    pub const TICK: f64 = 10.5;
    /// Legend entries.
    pub const LEGEND: f64 = 11.0;
    /// Notes at the foot of the chart.
    pub const NOTE: f64 = 10.0;
    /// The smallest text any chart draws (7.5 pt).
    pub const SMALLEST: f64 = 10.0;
    /// Outer margin.
    pub const MARGIN: f64 = 12.0;
    /// Marker "radius".
    pub const MARKER: f64 = 4.0;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colours_mix_and_measure() {
        assert_eq!(WHITE.mix(Rgb(0, 0, 0), 0.5), Rgb(128, 128, 128));
        assert_eq!(OKABE_ITO[0].to_svg(), "#0072B2");
        assert!(WHITE.luminance() > 0.99 && Rgb(0, 0, 0).luminance() < 0.01);
        assert_eq!(scale_colour(&SUNSET, 0.0), SUNSET[0]);
        assert_eq!(scale_colour(&SUNSET, 1.0), SUNSET[10]);
        assert_eq!(scale_colour(&SUNSET, f64::NAN), SUNSET[0]);
        assert_eq!(scale_colour(&SUNSET, 0.5), SUNSET[5]);
    }

    #[test]
    fn dashes_scale_with_width() {
        assert_eq!(Dash::Solid.pattern(2.0), None);
        assert_eq!(Dash::Dashed.pattern(1.0).unwrap(), "6.4 4");
        assert_eq!(series_dash(1), Dash::Dashed);
        assert_eq!(series_dash(5), Dash::Solid);
    }

    #[test]
    fn classes_get_distinct_colour_and_shape_pairs() {
        let pairs: std::collections::BTreeSet<(Rgb, usize)> = (0..56)
            .map(|i| {
                let shape = Marker::ALL
                    .iter()
                    .position(|m| *m == class_marker(i))
                    .unwrap();
                (class_colour(i), shape)
            })
            .collect();
        assert_eq!(pairs.len(), 56);
    }
}
