//! A table's summary for a first look ([`Dataset::summary`]): every column
//! of the header with its role, its decided type and why, missing cells,
//! distinct values, range or levels; the target's task and class balance;
//! and every decision and warning of the reader, plus a warning when a
//! class has fewer rows than the folds asked for.

use super::dataset::{ReadReport, Task};
use super::{Dataset, Target};
use crate::error::{opt, Message};
use ndarray::Axis;
use std::collections::HashSet;

/// One header column in a [`TableSummary`].
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnSummary {
    /// The header name.
    pub name: String,
    /// `target`, `feature`, `id`, `dropped`, `not used` or
    /// `left out (looks like an identifier)`.
    pub role: String,
    /// `numeric`, `categorical`, `classes`, `values`, `text` (IDs) or
    /// `not read`.
    pub kind: String,
    /// Why it got that kind.
    pub why: Message,
    /// Missing cells (counted in every row read, dropped rows included).
    pub missing: Option<usize>,
    /// Distinct non-missing values.
    pub distinct: Option<usize>,
    /// Smallest and largest number.
    pub range: Option<(f64, f64)>,
    /// Levels or classes with their row counts (most frequent first for
    /// features, at most 20; every class for the target).
    pub levels: Vec<(String, usize)>,
}

/// A table's summary ([`Dataset::summary`]): every column of the header
/// with its role, its decided type and why, missing cells, distinct values,
/// range or levels; the target's task and class balance; and every
/// decision and warning of the reader, plus a warning when a class has
/// fewer rows than the folds asked for.
#[derive(Clone, Debug, PartialEq)]
pub struct TableSummary {
    /// Where the table came from.
    pub source: String,
    /// Rows kept.
    pub rows: usize,
    /// Rows dropped while reading.
    pub dropped_rows: usize,
    /// The task decided: `classification` or `regression`.
    pub task: String,
    /// The target column.
    pub target: String,
    /// Encoded feature columns (the network's inputs).
    pub inputs: usize,
    /// Every header column, in order.
    pub columns: Vec<ColumnSummary>,
    /// The reader's decisions.
    pub decisions: Vec<Message>,
    /// The reader's warnings and the folds check.
    pub warnings: Vec<Message>,
}

fn distinct_numbers(values: impl Iterator<Item = f64>) -> usize {
    let mut v: Vec<f64> = values.filter(|x| !x.is_nan()).collect();
    v.sort_by(f64::total_cmp);
    v.dedup();
    v.len()
}

impl Dataset {
    /// The table's summary ([`TableSummary`]); with `folds`, a warning
    /// when a class has fewer rows than that.
    pub fn summary(&self, folds: Option<usize>) -> TableSummary {
        let empty = ReadReport {
            source: self.source.clone(),
            header: Vec::new(),
            delimiter: Default::default(),
            decimal: Default::default(),
            missing: Default::default(),
            missing_markers: Vec::new(),
            task: Task::Auto,
            target: self.target_name.clone(),
            columns: Vec::new(),
            ids: Vec::new(),
            dropped: Vec::new(),
            decisions: Vec::new(),
            warnings: Vec::new(),
        };
        let report = self.report.as_deref().unwrap_or(&empty);
        let mut columns = Vec::new();
        let header: Vec<String> = if report.header.is_empty() {
            let mut h: Vec<String> = self.columns.iter().map(|c| c.name().to_string()).collect();
            h.dedup();
            h.push(self.target_name.clone());
            h
        } else {
            report.header.clone()
        };
        for name in &header {
            if *name == self.target_name {
                columns.push(self.target_summary());
                continue;
            }
            if let Some(c) = report.columns.iter().find(|c| c.name == *name) {
                let mut s = ColumnSummary {
                    name: name.clone(),
                    role: c.role.clone(),
                    kind: c.kind.clone(),
                    why: Message::new(c.why.clone()),
                    missing: Some(c.missing),
                    distinct: c.distinct,
                    range: c.min_max,
                    levels: c.levels.clone(),
                };
                if c.kind == "numeric" {
                    if let Some(j) = self.feature_names.iter().position(|f| f == name) {
                        s.distinct = Some(distinct_numbers(
                            self.features.index_axis(Axis(1), j).iter().copied(),
                        ));
                    }
                }
                columns.push(s);
                continue;
            }
            if let Some(k) = report.ids.iter().position(|i| i == name) {
                let distinct = self.ids.as_ref().map(|ids| {
                    (0..ids.len())
                        .map(|r| ids.row(r)[k].as_str())
                        .collect::<HashSet<_>>()
                        .len()
                });
                columns.push(ColumnSummary {
                    name: name.clone(),
                    role: "id".into(),
                    kind: "text".into(),
                    why: Message::new("named an ID column: carried with the rows, never a feature"),
                    missing: None,
                    distinct,
                    range: None,
                    levels: Vec::new(),
                });
                continue;
            }
            if report.header.is_empty() {
                // A table built from arrays: every column is numeric.
                if let Some(j) = self.feature_names.iter().position(|f| f == name) {
                    let col = self.features.index_axis(Axis(1), j);
                    let (lo, hi) = col
                        .iter()
                        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                            (a.min(v), b.max(v))
                        });
                    columns.push(ColumnSummary {
                        name: name.clone(),
                        role: "feature".into(),
                        kind: "numeric".into(),
                        why: Message::new("built from numbers"),
                        missing: Some(0),
                        distinct: Some(distinct_numbers(col.iter().copied())),
                        range: Some((lo, hi)),
                        levels: Vec::new(),
                    });
                }
                continue;
            }
            let dropped = report.dropped.contains(name);
            columns.push(ColumnSummary {
                name: name.clone(),
                role: if dropped { "dropped" } else { "not used" }.into(),
                kind: "not read".into(),
                why: Message::new(if dropped {
                    format!("named in {}", opt("drop"))
                } else {
                    format!("not among the {}", opt("features"))
                }),
                missing: None,
                distinct: None,
                range: None,
                levels: Vec::new(),
            });
        }
        let mut warnings = report.warnings.clone();
        if let (Some(k), Some(names)) = (folds, self.class_names()) {
            let counts = self.class_counts();
            let smallest = counts
                .iter()
                .enumerate()
                .filter(|&(_, &n)| n > 0)
                .min_by_key(|&(_, &n)| n);
            if let Some((c, &n)) = smallest {
                if n < k {
                    warnings.push(Message::new(format!(
                        "the smallest class, \"{}\", has {n} row{}, fewer than the {k} {} asked for: stratified cross-validation needs every class in every fold; use at most {n} folds",
                        names[c],
                        if n == 1 { "" } else { "s" },
                        opt("folds")
                    )));
                }
            }
        }
        if let (Some(k), Target::Values { .. }) = (folds, &self.target) {
            if self.n_rows() < k {
                warnings.push(Message::new(format!(
                    "the table has {} rows, fewer than the {k} {} asked for",
                    self.n_rows(),
                    opt("folds")
                )));
            }
        }
        TableSummary {
            source: self.source.clone(),
            rows: self.n_rows(),
            dropped_rows: self.dropped_rows,
            task: match self.target {
                Target::Classes { .. } => "classification",
                Target::Values { .. } => "regression",
            }
            .into(),
            target: self.target_name.clone(),
            inputs: self.n_features(),
            columns,
            decisions: report.decisions.clone(),
            warnings,
        }
    }

    fn target_summary(&self) -> ColumnSummary {
        let why = self
            .decisions()
            .iter()
            .find_map(|d| d.marked().strip_prefix("task: ").map(Message::new))
            .unwrap_or_else(|| Message::new("given as arrays"));
        match &self.target {
            Target::Classes { names, .. } => ColumnSummary {
                name: self.target_name.clone(),
                role: "target".into(),
                kind: "classes".into(),
                why,
                missing: None,
                distinct: Some(names.len()),
                range: None,
                levels: names.iter().cloned().zip(self.class_counts()).collect(),
            },
            Target::Values { values, .. } => {
                let (lo, hi) = values
                    .iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                        (a.min(v), b.max(v))
                    });
                ColumnSummary {
                    name: self.target_name.clone(),
                    role: "target".into(),
                    kind: "values".into(),
                    why,
                    missing: None,
                    distinct: Some(distinct_numbers(values.iter().copied())),
                    range: Some((lo, hi)),
                    levels: Vec::new(),
                }
            }
        }
    }
}
