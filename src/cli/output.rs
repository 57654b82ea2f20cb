//! What a command prints: one JSON object for `--json`, a readable summary
//! otherwise, built from the library's results.

use super::errors::flag_name;
use crate::error::Message;
use crate::validate::{CrossValidation, Scores, SweepTable};
use serde_json::{json, Map, Value};
use std::fmt::Write as _;

/// What a command produced.
#[derive(Debug)]
pub(crate) struct Outcome {
    /// The JSON object for `--json`.
    pub json: Value,
    /// The readable summary.
    pub text: String,
}

pub(crate) fn scores_json(scores: &Scores) -> Value {
    let mut m = Map::new();
    for metric in scores.metrics() {
        if let Ok(v) = scores.value(metric) {
            m.insert(metric.name().to_string(), json!(v));
        }
    }
    Value::Object(m)
}

pub(crate) fn scores_text(scores: &Scores, out: &mut String) {
    for metric in scores.metrics() {
        if let Ok(v) = scores.value(metric) {
            let _ = writeln!(out, "  {:<26} {v:.4}", metric.name());
        }
    }
    for note in scores.notes() {
        let _ = writeln!(out, "  note: {note}");
    }
}

pub(crate) fn cv_json(cv: &CrossValidation) -> Value {
    let mut metrics = Map::new();
    for s in &cv.summary {
        metrics.insert(
            s.metric.name().to_string(),
            json!({
                "folds": s.values,
                "mean": s.summary.mean,
                "std_dev": s.summary.std_dev,
                "ci_low": s.summary.ci_low,
                "ci_high": s.summary.ci_high,
            }),
        );
    }
    json!({
        "folds": cv.cv.folds,
        "repeats": cv.cv.repeats,
        "rows": cv.n_rows,
        "metrics": metrics,
        "notes": cv.notes(),
    })
}

pub(crate) fn cv_text(cv: &CrossValidation, out: &mut String) {
    let _ = writeln!(
        out,
        "  {:<26} {:>8} {:>8}   95% interval ({} folds, corrected for shared training rows)",
        "metric",
        "mean",
        "sd",
        cv.folds.len()
    );
    for s in &cv.summary {
        let _ = writeln!(
            out,
            "  {:<26} {:>8.4} {:>8.4}   [{:.4}, {:.4}]",
            s.metric.name(),
            s.summary.mean,
            s.summary.std_dev,
            s.summary.ci_low,
            s.summary.ci_high
        );
    }
    for note in cv.notes() {
        let _ = writeln!(out, "  note: {note}");
    }
}

pub(crate) fn table_json(t: &SweepTable) -> Value {
    let rows: Vec<Value> = t
        .rows
        .iter()
        .enumerate()
        .map(|(rank, r)| {
            json!({
                "rank": rank + 1,
                "configuration": r.index,
                "name": r.name,
                "mean": r.summary.mean,
                "std_dev": r.summary.std_dev,
                "ci_low": r.summary.ci_low,
                "ci_high": r.summary.ci_high,
                "folds": r.cross_validation.metric(t.metric).map(|m| m.values.clone()).unwrap_or_default(),
            })
        })
        .collect();
    json!({ "metric": t.metric.name(), "rows": rows })
}

pub(crate) fn table_text(t: &SweepTable, out: &mut String) {
    let _ = writeln!(
        out,
        "  {:>4}  {:<36} {:>8} {:>8}   95% interval",
        "rank",
        "configuration",
        t.metric.name(),
        "sd"
    );
    for (rank, r) in t.rows.iter().enumerate() {
        let _ = writeln!(
            out,
            "  {:>4}  {:<36} {:>8.4} {:>8.4}   [{:.4}, {:.4}]",
            rank + 1,
            r.name,
            r.summary.mean,
            r.summary.std_dev,
            r.summary.ci_low,
            r.summary.ci_high
        );
    }
}

/// Messages with options named by their flags.
pub(crate) fn flags(items: &[Message]) -> Vec<String> {
    items.iter().map(|m| m.render(&flag_name)).collect()
}

/// Lines of `items`, each as `  {label}: {item}`, options named by their flags.
pub(crate) fn labelled(out: &mut String, label: &str, items: &[Message]) {
    for i in flags(items) {
        let _ = writeln!(out, "  {label}: {i}");
    }
}

/// The decisions worth printing in text: all but a detected comma
/// delimiter (the usual case, certain when it is the only delimiter that
/// splits the header); JSON carries every one.
pub(crate) fn shown(decisions: &[Message]) -> Vec<Message> {
    decisions
        .iter()
        .filter(|d| !d.starts_with("delimiter ','"))
        .cloned()
        .collect()
}

/// What reading a table decided and flagged, for a command's text.
pub(crate) fn read_text(data: &crate::data::Dataset, path: &std::path::Path, out: &mut String) {
    let columns = data.report().map_or(0, |r| {
        r.columns.iter().filter(|c| c.role == "feature").count()
    });
    let _ = writeln!(
        out,
        "read {}: {} rows, {} feature column{} -> {} inputs",
        path.display(),
        data.n_rows(),
        columns,
        if columns == 1 { "" } else { "s" },
        data.n_features()
    );
    labelled(out, "decided", &shown(data.decisions()));
    labelled(out, "warning", data.warnings());
}

/// How a loss is defined, in words, for displays.
pub(crate) fn loss_words(loss: crate::train::Loss, scaled_target: bool) -> &'static str {
    match (loss, scaled_target) {
        (crate::train::Loss::SquaredError, true) => {
            "half the squared error of the scaled target, mean per row"
        }
        (crate::train::Loss::SquaredError, false) => "half the squared error, mean per row",
        (crate::train::Loss::CrossEntropy, _) => "cross-entropy, mean per row",
    }
}

/// A table summary (`inspect`) as JSON.
pub(crate) fn summary_json(s: &crate::data::TableSummary) -> Value {
    let columns: Vec<Value> = s
        .columns
        .iter()
        .map(|c| {
            json!({
                "name": c.name,
                "role": c.role,
                "type": c.kind,
                "why": c.why.render(&flag_name),
                "missing": c.missing,
                "distinct": c.distinct,
                "min": c.range.map(|r| r.0),
                "max": c.range.map(|r| r.1),
                "levels": c.levels.iter().map(|(l, n)| json!({"level": l, "rows": n})).collect::<Vec<_>>(),
            })
        })
        .collect();
    json!({
        "source": s.source,
        "rows": s.rows,
        "dropped_rows": s.dropped_rows,
        "task": s.task,
        "target": s.target,
        "inputs": s.inputs,
        "columns": columns,
        "decisions": flags(&s.decisions),
        "warnings": flags(&s.warnings),
    })
}

/// A table summary (`inspect`) as text.
pub(crate) fn summary_text(s: &crate::data::TableSummary, out: &mut String) {
    let _ = writeln!(
        out,
        "{}: {} rows{}, task {} (target \"{}\"), {} network inputs",
        s.source,
        s.rows,
        if s.dropped_rows > 0 {
            format!(" ({} dropped)", s.dropped_rows)
        } else {
            String::new()
        },
        s.task,
        s.target,
        s.inputs
    );
    for c in &s.columns {
        let mut detail = Vec::new();
        if let Some(m) = c.missing {
            detail.push(format!("missing {m}"));
        }
        if let Some(d) = c.distinct {
            detail.push(format!("distinct {d}"));
        }
        if let Some((lo, hi)) = c.range {
            detail.push(format!("range {lo} to {hi}"));
        }
        let _ = writeln!(
            out,
            "  {:<20} {:<12} {:<12} {}",
            c.name,
            c.role,
            c.kind,
            detail.join(", ")
        );
        let _ = writeln!(out, "  {:<20} why: {}", "", c.why.render(&flag_name));
        if !c.levels.is_empty() {
            let shown: Vec<String> = c
                .levels
                .iter()
                .take(10)
                .map(|(l, n)| format!("{l} ({n})"))
                .collect();
            let more = if c.levels.len() > 10 { ", ..." } else { "" };
            let _ = writeln!(
                out,
                "  {:<20} {}: {}{more}",
                "",
                if c.role == "target" {
                    "classes"
                } else {
                    "levels"
                },
                shown.join(", ")
            );
        }
    }
    labelled(out, "decided", &s.decisions);
    labelled(out, "warning", &s.warnings);
}
