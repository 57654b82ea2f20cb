//! Scales (data values to pixels) and ticks: linear, logarithmic and
//! whole-number ticks at 1-2-5 steps, and how numbers are written on
//! charts.

/// How values map to positions along an axis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum ScaleKind {
    Linear,
    Log10,
}

/// A map from data values in [lo, hi] to pixels in [start, end].
#[derive(Clone, Copy, Debug)]
pub(crate) struct Scale {
    pub kind: ScaleKind,
    pub lo: f64,
    pub hi: f64,
    pub start: f64,
    pub end: f64,
}

impl Scale {
    pub fn new(kind: ScaleKind, (lo, hi): (f64, f64), (start, end): (f64, f64)) -> Scale {
        Scale {
            kind,
            lo,
            hi,
            start,
            end,
        }
    }

    /// The fraction of the way from lo to hi.
    pub fn fraction(&self, v: f64) -> f64 {
        match self.kind {
            ScaleKind::Linear => (v - self.lo) / (self.hi - self.lo),
            ScaleKind::Log10 => (v.log10() - self.lo.log10()) / (self.hi.log10() - self.lo.log10()),
        }
    }

    pub fn map(&self, v: f64) -> f64 {
        self.start + self.fraction(v) * (self.end - self.start)
    }
}

/// A tick: its value and label.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Tick {
    pub value: f64,
    pub label: String,
}

/// Widens a degenerate or reversed range so that it can be drawn.
pub(crate) fn usable_range(lo: f64, hi: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) {
        return (0.0, 1.0);
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if hi - lo > 1e-12 * lo.abs().max(hi.abs()).max(1e-300) {
        (lo, hi)
    } else {
        let pad = if lo == 0.0 { 0.5 } else { lo.abs() * 0.1 };
        (lo - pad, hi + pad)
    }
}

/// A step of 1, 2 or 5 times a power of ten, near `range / target`.
fn nice_step(range: f64, target: usize) -> f64 {
    let raw = range / target.max(1) as f64;
    let magnitude = 10f64.powf(raw.log10().floor());
    let norm = raw / magnitude;
    let nice = if norm < 1.5 {
        1.0
    } else if norm < 3.0 {
        2.0
    } else if norm < 7.0 {
        5.0
    } else {
        10.0
    };
    nice * magnitude
}

/// Expands [lo, hi] outwards to multiples of a nice step (about `target`
/// intervals).
pub(crate) fn nice_range(lo: f64, hi: f64, target: usize) -> (f64, f64) {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target);
    // A value within rounding of a multiple of the step is that multiple
    // (so 0 stays 0, not one step below).
    (
        (lo / step + 1e-9).floor() * step,
        (hi / step - 1e-9).ceil() * step,
    )
}

/// Linear ticks at multiples of a 1-2-5 step inside [lo, hi], about `target` of them.
///
/// Labels use as many decimals as the step needs, so one axis never mixes
/// "0.5" with "1.25".
pub(crate) fn linear_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target);
    let decimals = (-(step.log10() + 1e-9).floor()).max(0.0) as usize;
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    (first..=last)
        .take(100)
        .map(|k| {
            let value = k as f64 * step;
            Tick {
                value,
                label: format_fixed(value, decimals),
            }
        })
        .collect()
}

/// A log-axis range around [lo, hi] (both > 0) ending on 1, 2 or 5 times a
/// power of ten.
pub(crate) fn log_range(lo: f64, hi: f64) -> (f64, f64) {
    let below = |v: f64| {
        let e = v.log10().floor();
        let base = 10f64.powf(e);
        let m = [5.0, 2.0, 1.0]
            .into_iter()
            .find(|m| m * base <= v * (1.0 + 1e-9))
            .unwrap_or(1.0);
        m * base
    };
    let above = |v: f64| {
        let e = v.log10().floor();
        let base = 10f64.powf(e);
        let m = [1.0, 2.0, 5.0, 10.0]
            .into_iter()
            .find(|m| m * base >= v * (1.0 - 1e-9))
            .unwrap_or(10.0);
        m * base
    };
    let (lo, hi) = (below(lo), above(hi));
    if hi > lo {
        (lo, hi)
    } else {
        (lo, lo * 10.0)
    }
}

/// Ticks at whole numbers (a 1-2-5 step of at least 1) inside [lo, hi].
pub(crate) fn integer_ticks(lo: f64, hi: f64, target: usize) -> Vec<Tick> {
    let (lo, hi) = usable_range(lo, hi);
    let step = nice_step(hi - lo, target).max(1.0);
    let first = (lo / step - 1e-9).ceil() as i64;
    let last = (hi / step + 1e-9).floor() as i64;
    (first..=last)
        .take(100)
        .map(|k| {
            let value = k as f64 * step;
            Tick {
                value,
                label: format_fixed(value, 0),
            }
        })
        .collect()
}

/// Ticks at powers of ten (and at 2 and 5 times them when the range spans
/// two decades or fewer; at every other power when it spans more than eight).
pub(crate) fn log_ticks(lo: f64, hi: f64) -> Vec<Tick> {
    let first = lo.log10().floor() as i32;
    let last = hi.log10().ceil() as i32;
    let decades = last - first;
    let multiples: &[f64] = if decades <= 2 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let every = if decades > 8 { 2 } else { 1 };
    let mut ticks = Vec::new();
    for e in first..=last {
        if (e - first) % every != 0 {
            continue;
        }
        for &m in multiples {
            let value = m * 10f64.powi(e);
            if value >= lo * (1.0 - 1e-9) && value <= hi * (1.0 + 1e-9) {
                ticks.push(Tick {
                    value,
                    label: format_power(m, e),
                });
            }
        }
    }
    ticks
}

fn format_power(m: f64, e: i32) -> String {
    if (-4..=4).contains(&e) {
        let value = m * 10f64.powi(e);
        format_fixed(value, (-e).max(0) as usize)
    } else if m == 1.0 {
        minus(format!("1e{e}"))
    } else {
        minus(format!("{m}e{e}"))
    }
}

/// `value` with `decimals` decimals, never "-0", digits grouped above 9,999
/// and exponent form for huge values; negative numbers carry a true minus
/// sign (U+2212), as typeset text does.
pub(crate) fn format_fixed(value: f64, decimals: usize) -> String {
    minus(plain_fixed(value, decimals))
}

fn minus(text: String) -> String {
    text.replace('-', "\u{2212}")
}

fn plain_fixed(value: f64, decimals: usize) -> String {
    if value.abs() >= 1e9 {
        return format!("{value:.2e}");
    }
    let mut text = format!("{value:.decimals$}");
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        text = text.trim_start_matches('-').to_string();
    }
    if decimals == 0 && value.abs() >= 10_000.0 {
        let negative = text.starts_with('-');
        let digits: usize = text.trim_start_matches('-').parse().unwrap_or(0);
        text = crate::chart::labels::group_digits(digits);
        if negative {
            text.insert(0, '-');
        }
    }
    text
}

/// A short, fixed-width-ish rendering of any number: 3 significant digits.
pub(crate) fn format_value(value: f64) -> String {
    if !value.is_finite() {
        return "n/a".to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let magnitude = value.abs().log10().floor() as i32;
    if !(-4..6).contains(&magnitude) {
        return minus(format!("{value:.2e}"));
    }
    let decimals = (2 - magnitude).max(0) as usize;
    format_fixed(value, decimals)
}

/// A finite range of values, or `None` when no value is finite.
pub(crate) fn finite_range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let mut range: Option<(f64, f64)> = None;
    for v in values.filter(|v| v.is_finite()) {
        range = Some(match range {
            None => (v, v),
            Some((lo, hi)) => (lo.min(v), hi.max(v)),
        });
    }
    range
}

/// Pads a range by `share` of its width on both sides.
pub(crate) fn pad_range((lo, hi): (f64, f64), share: f64) -> (f64, f64) {
    let (lo, hi) = usable_range(lo, hi);
    let pad = (hi - lo) * share;
    (lo - pad, hi + pad)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_ticks_are_round() {
        let labels: Vec<String> = linear_ticks(0.0, 1.0, 5)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
        let labels: Vec<String> = linear_ticks(1.0, 300.0, 6)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["50", "100", "150", "200", "250", "300"]);
        let labels: Vec<String> = linear_ticks(-0.3, 0.3, 6)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["−0.3", "−0.2", "−0.1", "0.0", "0.1", "0.2", "0.3"]);
        assert!(!linear_ticks(5.0, 5.0, 5).is_empty());
        assert!(!linear_ticks(f64::NAN, 1.0, 5).is_empty());
    }

    #[test]
    fn nice_ranges_keep_round_ends() {
        assert_eq!(nice_range(0.0, 90.0, 3), (0.0, 100.0));
        assert_eq!(nice_range(0.2, 1.0, 4), (0.2, 1.0));
        assert_eq!(nice_range(-0.03, 0.97, 5), (-0.2, 1.0));
    }

    #[test]
    fn log_ranges_end_on_round_values() {
        assert_eq!(log_range(0.09, 0.9), (0.05, 1.0));
        assert_eq!(log_range(0.3, 0.45), (0.2, 0.5));
        assert_eq!(log_range(1.0, 1.0), (1.0, 10.0));
    }

    #[test]
    fn log_ticks_are_powers() {
        let labels: Vec<String> = log_ticks(0.001, 10.0)
            .into_iter()
            .map(|t| t.label)
            .collect();
        assert_eq!(labels, ["0.001", "0.01", "0.1", "1", "10"]);
        let labels: Vec<String> = log_ticks(0.2, 3.0).into_iter().map(|t| t.label).collect();
        assert_eq!(labels, ["0.2", "0.5", "1", "2"]);
        let labels: Vec<String> = log_ticks(1e-7, 1.0).into_iter().map(|t| t.label).collect();
        assert_eq!(
            labels,
            ["1e−7", "1e−6", "1e−5", "0.0001", "0.001", "0.01", "0.1", "1"]
        );
    }

    #[test]
    fn numbers_format_plainly() {
        assert_eq!(format_fixed(-0.0001, 2), "0.00");
        assert_eq!(format_fixed(25_000.0, 0), "25,000");
        assert_eq!(format_value(0.91234), "0.912");
        assert_eq!(format_value(12.345), "12.3");
        assert_eq!(format_value(f64::NAN), "n/a");
        assert_eq!(format_value(-0.5), "\u{2212}0.500");
    }

    #[test]
    fn scales_map_both_ways() {
        let s = Scale::new(ScaleKind::Log10, (0.01, 1.0), (100.0, 0.0));
        assert!((s.map(0.1) - 50.0).abs() < 1e-9);
        let s = Scale::new(ScaleKind::Linear, (0.0, 10.0), (0.0, 200.0));
        assert!((s.map(2.5) - 50.0).abs() < 1e-9);
    }
}
