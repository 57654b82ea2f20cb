//! What a command prints: one JSON object for `--json`, a readable summary
//! otherwise, built from the library's results.

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
