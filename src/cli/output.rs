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

/// A resampled test against the baseline as JSON (`null` with one fold).
fn test_json(t: Option<&crate::validate::ResampledTTest>) -> Value {
    t.map_or(Value::Null, |t| {
        json!({
            "mean_difference": t.mean_difference,
            "t": t.t,
            "degrees_of_freedom": t.degrees_of_freedom,
            "p_value": t.p_value,
            "undefined": t.undefined,
            "reading": t.reading,
        })
    })
}

fn interval_json(s: &crate::validate::Summary, values: &[f64]) -> Value {
    json!({
        "folds": values,
        "mean": s.mean,
        "std_dev": s.std_dev,
        "ci_low": s.ci_low,
        "ci_high": s.ci_high,
    })
}

/// A cross-validation's scores: each metric names the rows it was computed
/// on, with the baseline's score on the same rows beside it and the
/// corrected test between them.
pub(crate) fn cv_json(cv: &CrossValidation) -> Value {
    let rows = cv.scored_rows();
    let mut metrics = Map::new();
    for s in &cv.summary {
        let mut m = interval_json(&s.summary, &s.values);
        m["scored_rows"] = json!(rows.name());
        m["baseline"] = interval_json(&s.baseline, &s.baseline_values);
        m["against_baseline"] = test_json(s.against_baseline.as_ref());
        metrics.insert(s.metric.name().to_string(), m);
    }
    json!({
        "folds": cv.cv.folds,
        "repeats": cv.cv.repeats,
        "rows": cv.n_rows,
        "scored_rows": rows.name(),
        "scored_rows_meaning": rows.explain(),
        "baseline": baseline_words(cv),
        "metrics": metrics,
        "notes": cv.notes(),
    })
}

/// What the baseline is, in words.
fn baseline_words(cv: &CrossValidation) -> &'static str {
    if cv.class_names.is_empty() {
        "each fold's training mean predicted for every held-out row"
    } else {
        "each fold's training class shares predicted for every held-out row (its accuracy is the majority class's)"
    }
}

pub(crate) fn cv_text(cv: &CrossValidation, out: &mut String) {
    let rows = cv.scored_rows();
    let _ = writeln!(out, "  scored on {}", rows.explain());
    let _ = writeln!(out, "  baseline: {}", baseline_words(cv));
    let _ = writeln!(
        out,
        "  {:<26} {:>8} {:>8}   {:<18} {:>8}  {:>8}",
        "metric", "mean", "sd", "95% interval", "baseline", "p vs base"
    );
    for s in &cv.summary {
        let p = s
            .against_baseline
            .as_ref()
            .filter(|t| t.undefined.is_none())
            .map_or("-".to_string(), |t| format_p(t.p_value));
        let _ = writeln!(
            out,
            "  {:<26} {:>8.4} {:>8.4}   [{:.4}, {:.4}] {:>8.4}  {:>8}",
            s.metric.name(),
            s.summary.mean,
            s.summary.std_dev,
            s.summary.ci_low,
            s.summary.ci_high,
            s.baseline.mean,
            p
        );
    }
    let _ = writeln!(
        out,
        "  (intervals: {} fold scores, corrected for shared training rows; p: corrected resampled t-test of model against baseline on the same folds)",
        cv.folds.len()
    );
    for note in cv.notes() {
        let _ = writeln!(out, "  note: {note}");
    }
}

/// A p-value for a table cell: four decimals, or `<0.0001`.
fn format_p(p: f64) -> String {
    if p < 1e-4 {
        "<0.0001".to_string()
    } else {
        format!("{p:.4}")
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

/// Calibration of the pooled out-of-fold probabilities: the reliability
/// bins with the expected and maximum calibration errors, and the Brier
/// score's partition over the same bins.
pub(crate) fn calibration_json(
    r: &crate::validate::metrics::Reliability,
    b: &crate::validate::metrics::BrierPartition,
) -> Value {
    json!({
        "scored_rows": crate::data::ScoredRows::OutOfFold.name(),
        "forecast": r.forecast.describe().0,
        "binning": r.binning.to_string(),
        "rows": r.rows,
        "expected_calibration_error": r.expected_error,
        "maximum_calibration_error": r.maximum_error,
        "bins": r.bins.iter().map(|bin| json!({
            "lower": bin.lower,
            "upper": bin.upper,
            "rows": bin.rows,
            "mean_predicted": bin.mean_predicted,
            "observed": bin.observed,
        })).collect::<Vec<_>>(),
        "brier": {
            "score": b.brier,
            "reliability": b.reliability,
            "resolution": b.resolution,
            "uncertainty": b.uncertainty,
            "within_bin_variance": b.within_variance,
            "within_bin_covariance": b.within_covariance,
        },
    })
}

pub(crate) fn calibration_text(
    r: &crate::validate::metrics::Reliability,
    b: &crate::validate::metrics::BrierPartition,
    out: &mut String,
) {
    let _ = writeln!(
        out,
        "calibration of the out-of-fold probabilities ({} predictions pooled over folds and repeats; {}, bins {}):",
        r.rows,
        r.forecast.describe().0,
        r.binning
    );
    let _ = writeln!(
        out,
        "  expected calibration error {:.4}, maximum {:.4} (0 = predicted shares match observed shares)",
        r.expected_error, r.maximum_error
    );
    let _ = writeln!(
        out,
        "  Brier {:.4} = reliability {:.4} - resolution {:.4} + uncertainty {:.4} + within-bin terms {:.4} (Murphy 1973; Stephenson et al. 2008)",
        b.brier,
        b.reliability,
        b.resolution,
        b.uncertainty,
        b.within_variance - 2.0 * b.within_covariance
    );
}

/// Costs of least-expected-cost decisions on the held-out rows.
pub(crate) fn costs_json(c: &crate::validate::CostSummary) -> Value {
    json!({
        "scored_rows": crate::data::ScoredRows::OutOfFold.name(),
        "decisions": c.matrix.decisions(),
        "classes": c.matrix.classes(),
        "costs": c.matrix.costs(),
        "cost_per_row": interval_json(&c.summary, &c.fold_costs),
        "baseline": interval_json(&c.baseline, &c.baseline_costs),
        "baseline_decisions": c.baseline_decisions,
        "against_baseline": test_json(c.against_baseline.as_ref()),
        "decision_counts": c.decision_counts,
    })
}

pub(crate) fn costs_text(c: &crate::validate::CostSummary, out: &mut String) {
    let _ = writeln!(
        out,
        "costs of the least-expected-cost decisions on the out-of-fold rows:"
    );
    let _ = writeln!(
        out,
        "  cost per row {:.4} [{:.4}, {:.4}]; baseline (the best constant decision of each fold's training rows) {:.4}{}",
        c.summary.mean,
        c.summary.ci_low,
        c.summary.ci_high,
        c.baseline.mean,
        c.against_baseline
            .as_ref()
            .filter(|t| t.undefined.is_none())
            .map_or(String::new(), |t| format!("; p vs baseline {}", format_p(t.p_value)))
    );
    let counts: Vec<String> = c
        .matrix
        .decisions()
        .iter()
        .zip(&c.decision_counts)
        .map(|(d, n)| format!("{d} {n}"))
        .collect();
    let _ = writeln!(out, "  decisions made: {}", counts.join(", "));
}
