//! Rectangles in SVG pixels (y grows downwards).

/// A rectangle: left, top, right, bottom.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Rect {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl Rect {
    pub const fn new(left: f64, top: f64, right: f64, bottom: f64) -> Rect {
        Rect {
            left,
            top,
            right,
            bottom,
        }
    }

    pub fn width(&self) -> f64 {
        self.right - self.left
    }

    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }

    pub fn centre_x(&self) -> f64 {
        (self.left + self.right) / 2.0
    }

    pub fn centre_y(&self) -> f64 {
        (self.top + self.bottom) / 2.0
    }

    /// Whether the two rectangles share more than a hair of area.
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn overlaps(&self, other: &Rect) -> bool {
        const HAIR: f64 = 0.01;
        self.left < other.right - HAIR
            && other.left < self.right - HAIR
            && self.top < other.bottom - HAIR
            && other.top < self.bottom - HAIR
    }

    /// Whether `other` lies inside this rectangle (to within a hair).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn contains(&self, other: &Rect) -> bool {
        const HAIR: f64 = 0.01;
        other.left >= self.left - HAIR
            && other.right <= self.right + HAIR
            && other.top >= self.top - HAIR
            && other.bottom <= self.bottom + HAIR
    }

    /// The smallest rectangle holding both.
    pub fn union(&self, other: &Rect) -> Rect {
        Rect::new(
            self.left.min(other.left),
            self.top.min(other.top),
            self.right.max(other.right),
            self.bottom.max(other.bottom),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overlap_and_containment() {
        let a = Rect::new(0.0, 0.0, 10.0, 10.0);
        assert!(a.overlaps(&Rect::new(5.0, 5.0, 15.0, 15.0)));
        assert!(
            !a.overlaps(&Rect::new(10.0, 0.0, 20.0, 10.0)),
            "touching edges"
        );
        assert!(a.contains(&Rect::new(1.0, 1.0, 9.0, 9.0)));
        assert!(!a.contains(&Rect::new(1.0, 1.0, 11.0, 9.0)));
        assert_eq!(
            a.union(&Rect::new(-1.0, 2.0, 3.0, 12.0)),
            Rect::new(-1.0, 0.0, 10.0, 12.0)
        );
    }
}
