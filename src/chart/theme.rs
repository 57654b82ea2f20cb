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

    /// The SVG spelling, `#RRGGBB` in upper case (as plotters writes it).
    pub fn to_svg(self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.0, self.1, self.2)
    }

    pub(crate) fn plotters(self) -> plotters::style::RGBColor {
        plotters::style::RGBColor(self.0, self.1, self.2)
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

/// Positive weights in network diagrams (Okabe & Ito blue).
pub const POSITIVE: Rgb = OKABE_ITO[0];
/// Negative weights in network diagrams (Okabe & Ito vermillion).
pub const NEGATIVE: Rgb = OKABE_ITO[1];

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

/// Text sizes in SVG pixels. All are multiples of 0.5 that survive plotters'
/// conversion exactly, so the SVG reads `font-size="12"`, not `11.999...`.
pub(crate) mod size {
    /// Chart title.
    pub const TITLE: f64 = 16.0;
    /// Axis labels and panel captions.
    pub const LABEL: f64 = 12.5;
    /// Tick labels.
    pub const TICK: f64 = 11.0;
    /// Legend entries.
    pub const LEGEND: f64 = 12.0;
    /// Notes at the foot of the chart.
    pub const NOTE: f64 = 11.0;
    /// Outer margin.
    pub const MARGIN: f64 = 16.0;
    /// Marker "radius".
    pub const MARKER: f64 = 4.5;
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
