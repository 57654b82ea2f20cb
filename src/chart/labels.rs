//! Text on charts: axis labels from column names, grouped digits, class
//! names checked for a legend.

use crate::error::{Error, Result};

/// Unit suffixes that [`axis_label`] recognises, as (suffix, unit shown).
pub const UNIT_SUFFIXES: &[(&str, &str)] = &[
    ("nm", "nm"),
    ("um", "µm"),
    ("mm", "mm"),
    ("cm", "cm"),
    ("m", "m"),
    ("km", "km"),
    ("mg", "mg"),
    ("g", "g"),
    ("kg", "kg"),
    ("ms", "ms"),
    ("s", "s"),
    ("min", "min"),
    ("h", "h"),
    ("hz", "Hz"),
    ("khz", "kHz"),
    ("c", "°C"),
    ("degc", "°C"),
    ("pa", "Pa"),
    ("kpa", "kPa"),
    ("mpa", "MPa"),
    ("bar", "bar"),
    ("v", "V"),
    ("mv", "mV"),
    ("ma", "mA"),
    ("w", "W"),
    ("kw", "kW"),
    ("nm2", "nm²"),
    ("mm2", "mm²"),
    ("deg", "°"),
    ("rad", "rad"),
    ("rpm", "rpm"),
    ("ml", "mL"),
    ("pct", "%"),
    ("percent", "%"),
    ("ppm", "ppm"),
];

/// Turns a column name into an axis label, showing its unit.
///
/// The rule:
///
/// ```text
/// name already holding "(", "[" or a space   -> unchanged      "diameter [mm]" -> "diameter [mm]"
/// stem_unit, unit a known suffix             -> "stem (unit)"  "bore_um"       -> "bore (µm)"
///                                                             "inlet_temp_c"  -> "inlet temp (°C)"
/// anything else                              -> underscores become spaces      "wall_thickness" -> "wall thickness"
/// ```
///
/// The unit is the text after the last underscore, matched without regard to
/// case against [`UNIT_SUFFIXES`] (`_mm`, `_um` (µm), `_c` (°C), `_kpa`,
/// `_s`, `_pct` (%), ...). Single letters that usually are not units (`_a`,
/// `_n`) are not in the list. A name that is only a unit (`"mm"`) is left
/// alone.
///
/// # Example
///
/// ```
/// use stratanet::chart::axis_label;
/// assert_eq!(axis_label("bore_um"), "bore (µm)");
/// assert_eq!(axis_label("pressure_kPa"), "pressure (kPa)");
/// assert_eq!(axis_label("diameter [mm]"), "diameter [mm]");
/// assert_eq!(axis_label("batch_id"), "batch id");
/// ```
pub fn axis_label(name: &str) -> String {
    let name = name.trim();
    if name.contains(['(', '[', ' ']) {
        return name.to_string();
    }
    if let Some((stem, suffix)) = name.rsplit_once('_') {
        let stem = stem.trim_matches('_');
        let unit = UNIT_SUFFIXES
            .iter()
            .find(|(known, _)| known.eq_ignore_ascii_case(suffix));
        if let (Some((_, unit)), false) = (unit, stem.is_empty()) {
            return format!("{} ({unit})", stem.replace('_', " "));
        }
    }
    name.replace('_', " ").trim().to_string()
}

/// Writes `n` with a comma between groups of three digits: 100000 -> "100,000".
pub(crate) fn group_digits(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The stride that keeps at most `max` of `n` items: ceil(n / max), at least 1.
pub(crate) fn stride(n: usize, max: usize) -> usize {
    n.div_ceil(max.max(1)).max(1)
}

/// Checks class names: at least one, and none empty after trimming.
pub(crate) fn class_names<S: AsRef<str>>(what: &str, names: &[S]) -> Result<Vec<String>> {
    if names.is_empty() {
        return Err(Error::input(
            what,
            "no class names given; pass one name per class, in class-index order",
        ));
    }
    Ok(names.iter().map(|n| n.as_ref().to_string()).collect())
}

/// The two features a decision map shows by default: the first two numeric
/// source columns of the table.
pub(crate) fn decision_features(data: &crate::data::Dataset) -> Option<(String, String)> {
    let numeric: Vec<&str> = data
        .columns
        .iter()
        .filter_map(|c| match c {
            crate::data::ColumnEncoding::Numeric { name } => Some(name.as_str()),
            _ => None,
        })
        .collect();
    (numeric.len() >= 2).then(|| (numeric[0].to_string(), numeric[1].to_string()))
}
