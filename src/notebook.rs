//! Rich display in an evcxr Jupyter notebook, without an evcxr dependency.
//!
//! evcxr shows a cell's last value by calling its inherent
//! `evcxr_display(&self)`, which prints one block
//! `EVCXR_BEGIN_CONTENT <mime>` ... `EVCXR_END_CONTENT` on stdout. Tables
//! here are `text/html`; charts are `image/svg+xml`. Nothing
//! nondeterministic (times, addresses, hash order) appears, so a rerun
//! reproduces every output byte for byte.

use crate::data::{Dataset, TableSummary, Target};
use crate::fit::{Fitted, Model};
use crate::network::Network;
use crate::train::TrainingReport;
use crate::validate::{
    ClassificationMetrics, Comparison, CrossValidation, HoldOutScore, KeyResults,
    RegressionMetrics, Reproduction, Scores, Sweep, SweepTable,
};
use std::fmt::Write as _;

/// Escapes text for HTML.
pub(crate) fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const STYLE: &str =
    "border-collapse:collapse;font-family:sans-serif;font-size:13px;margin:4px 0 10px 0";
const CELL: &str = "border-bottom:1px solid #d8d8d8;padding:3px 10px;text-align:right";
const HEAD: &str = "border-bottom:2px solid #555;padding:3px 10px;text-align:right;font-weight:600";

/// A plain HTML table: a caption, a header row and body rows (already text).
pub(crate) fn table(caption: &str, header: &[&str], rows: &[Vec<String>]) -> String {
    let mut h = format!("<table style=\"{STYLE}\"><caption style=\"text-align:left;font-weight:600;padding-bottom:4px\">{}</caption><thead><tr>", escape(caption));
    for (i, c) in header.iter().enumerate() {
        let align = if i == 0 { ";text-align:left" } else { "" };
        let _ = write!(h, "<th style=\"{HEAD}{align}\">{}</th>", escape(c));
    }
    h.push_str("</tr></thead><tbody>");
    for row in rows {
        h.push_str("<tr>");
        for (i, c) in row.iter().enumerate() {
            let align = if i == 0 { ";text-align:left" } else { "" };
            let _ = write!(h, "<td style=\"{CELL}{align}\">{}</td>", escape(c));
        }
        h.push_str("</tr>");
    }
    h.push_str("</tbody></table>");
    h
}

/// Warnings under a table, marked so they stand out.
pub(crate) fn warnings<T: std::fmt::Display>(lines: &[T]) -> String {
    if lines.is_empty() {
        return String::new();
    }
    let mut h = String::from(
        "<ul style=\"font-family:sans-serif;font-size:12px;color:#8a3b00;margin:0 0 8px 0\">",
    );
    for l in lines {
        let _ = write!(h, "<li><b>Warning:</b> {}</li>", escape(&l.to_string()));
    }
    h.push_str("</ul>");
    h
}

/// Notes under a table.
pub(crate) fn notes<T: std::fmt::Display>(lines: &[T]) -> String {
    if lines.is_empty() {
        return String::new();
    }
    let mut h = String::from(
        "<ul style=\"font-family:sans-serif;font-size:12px;color:#444;margin:0 0 8px 0\">",
    );
    for l in lines {
        let _ = write!(h, "<li>{}</li>", escape(&l.to_string()));
    }
    h.push_str("</ul>");
    h
}

/// Prints one evcxr content block.
pub(crate) fn show(mime: &str, body: &str) {
    // One print call, so the block is never interleaved with other output.
    println!("EVCXR_BEGIN_CONTENT {mime}\n{body}\nEVCXR_END_CONTENT");
}

fn f(v: f64) -> String {
    if v.is_nan() {
        "undefined".into()
    } else {
        format!("{v:.4}")
    }
}

impl Network {
    /// An HTML table of the layers (sizes, function, parameter counts).
    pub fn to_html(&self) -> String {
        let sizes = self.sizes();
        let mut rows = Vec::new();
        for (i, layer) in self.layers().iter().enumerate() {
            let last = i + 1 == self.layers().len();
            rows.push(vec![
                if last {
                    "output".to_string()
                } else {
                    format!("hidden {}", i + 1)
                },
                layer.inputs().to_string(),
                layer.outputs().to_string(),
                if last {
                    self.head().name().to_string()
                } else {
                    self.activation().name().to_string()
                },
                (layer.weights.len() + layer.biases.len()).to_string(),
            ]);
        }
        rows.push(vec![
            "total".into(),
            String::new(),
            String::new(),
            String::new(),
            self.n_parameters().to_string(),
        ]);
        let caption = format!(
            "Network {} ({} precision)",
            sizes
                .iter()
                .map(usize::to_string)
                .collect::<Vec<_>>()
                .join("-"),
            match self.precision() {
                crate::network::Precision::F64 => "f64",
                crate::network::Precision::F32 => "f32",
            }
        );
        table(
            &caption,
            &["layer", "inputs", "units", "function", "parameters"],
            &rows,
        )
    }

    /// Shows the layer table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl TrainingReport {
    /// An HTML summary of the training run.
    pub fn to_html(&self) -> String {
        let last = self.history.last();
        let mut rows = vec![
            vec![
                "loss".into(),
                match self.loss {
                    crate::train::Loss::SquaredError => "half the squared error, mean per row",
                    crate::train::Loss::CrossEntropy => "cross-entropy, mean per row",
                }
                .to_string(),
            ],
            vec!["epochs run".into(), self.epochs_run.to_string()],
            vec!["epoch kept".into(), self.best_epoch.to_string()],
            vec![
                "stopped early".into(),
                if self.stopped_early {
                    "yes".into()
                } else {
                    "no".into()
                },
            ],
            vec!["final training loss".into(), f(self.final_training_loss)],
        ];
        if let Some(v) = self.best_validation_loss {
            rows.push(vec!["best validation loss".into(), f(v)]);
        }
        if let Some(a) = last.and_then(|e| e.validation_accuracy) {
            rows.push(vec!["last validation accuracy".into(), f(a)]);
        }
        table("Training", &["", "value"], &rows)
    }

    /// Shows the summary in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Dataset {
    /// An HTML summary: rows, features, target and class counts.
    pub fn to_html(&self) -> String {
        let mut rows = vec![
            vec!["source".into(), self.source.clone()],
            vec!["rows".into(), self.rows_described()],
            vec!["features".into(), self.feature_names.join(", ")],
            vec!["target".into(), self.target_name.clone()],
        ];
        if self.dropped_rows > 0 {
            rows.push(vec![
                "rows dropped (missing cells)".into(),
                self.dropped_rows.to_string(),
            ]);
        }
        match &self.target {
            Target::Classes { names, .. } => {
                for (n, c) in names.iter().zip(self.class_counts()) {
                    rows.push(vec![format!("class {n}"), c.to_string()]);
                }
            }
            Target::Values { names, .. } => rows.push(vec!["outputs".into(), names.join(", ")]),
        }
        if self.missing_cells() > 0 {
            rows.push(vec![
                "missing cells (filled when fitting)".into(),
                self.missing_cells().to_string(),
            ]);
        }
        if let Some(ids) = self.row_ids() {
            rows.push(vec!["ID columns".into(), ids.names().join(", ")]);
        }
        let mut h = table("Table", &["", "value"], &rows);
        h.push_str(&notes(self.decisions()));
        h.push_str(&warnings(self.warnings()));
        h
    }

    /// Shows the summary in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl TableSummary {
    /// HTML tables: every column with its role, type and why, missing
    /// cells, distinct values, range or levels; then decisions and warnings.
    pub fn to_html(&self) -> String {
        let rows: Vec<Vec<String>> = self
            .columns
            .iter()
            .map(|c| {
                let values = match (&c.range, c.levels.is_empty()) {
                    (Some((lo, hi)), _) => format!("{lo} to {hi}"),
                    (None, false) => {
                        let mut l: Vec<String> = c
                            .levels
                            .iter()
                            .take(10)
                            .map(|(n, k)| format!("{n} ({k})"))
                            .collect();
                        if c.levels.len() > 10 {
                            l.push("...".into());
                        }
                        l.join(", ")
                    }
                    (None, true) => String::new(),
                };
                vec![
                    c.name.clone(),
                    c.role.clone(),
                    c.kind.clone(),
                    c.why.to_string(),
                    c.missing.map_or(String::new(), |m| m.to_string()),
                    c.distinct.map_or(String::new(), |d| d.to_string()),
                    values,
                ]
            })
            .collect();
        let caption = format!(
            "{}: {} rows{}, {} (target {}), {} network inputs",
            self.source,
            self.rows,
            if self.dropped_rows > 0 {
                format!(" ({} dropped)", self.dropped_rows)
            } else {
                String::new()
            },
            self.task,
            self.target,
            self.inputs
        );
        let mut h = table(
            &caption,
            &[
                "column",
                "role",
                "type",
                "why",
                "missing",
                "distinct",
                "range or levels (rows)",
            ],
            &rows,
        );
        h.push_str(&notes(&self.decisions));
        h.push_str(&warnings(&self.warnings));
        h
    }

    /// Shows the summary in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl ClassificationMetrics {
    /// HTML tables: headline metrics, per-class scores, confusion matrix.
    pub fn to_html(&self) -> String {
        let mut rows = vec![
            vec!["accuracy".into(), f(self.accuracy)],
            vec!["balanced accuracy".into(), f(self.balanced_accuracy)],
            vec!["macro F1".into(), f(self.macro_f1)],
            vec!["weighted F1".into(), f(self.weighted_f1)],
            vec!["Matthews correlation".into(), f(self.mcc)],
            vec!["Cohen's kappa".into(), f(self.kappa)],
        ];
        for (name, v) in [
            ("log-loss", self.log_loss),
            ("Brier score", self.brier),
            ("ROC AUC", self.auc),
        ] {
            if let Some(v) = v {
                rows.push(vec![name.into(), f(v)]);
            }
        }
        let mut h = table(
            &format!("Scores on {} rows", self.n_samples),
            &["metric", "value"],
            &rows,
        );
        let per: Vec<Vec<String>> = self
            .per_class
            .iter()
            .map(|c| {
                vec![
                    c.name.clone(),
                    f(c.precision),
                    f(c.recall),
                    f(c.f1),
                    c.support.to_string(),
                ]
            })
            .collect();
        h.push_str(&table(
            "Per class",
            &["class", "precision", "recall", "F1", "rows"],
            &per,
        ));
        let shares = self.confusion.row_normalised();
        let mut header: Vec<String> = vec!["true \\ predicted".into()];
        header.extend(self.class_names.iter().cloned());
        let header_refs: Vec<&str> = header.iter().map(String::as_str).collect();
        let conf: Vec<Vec<String>> = self
            .confusion
            .counts()
            .iter()
            .enumerate()
            .map(|(i, row)| {
                let mut r = vec![self
                    .class_names
                    .get(i)
                    .cloned()
                    .unwrap_or_else(|| i.to_string())];
                r.extend(
                    row.iter()
                        .zip(&shares[i])
                        .map(|(c, s)| format!("{c} ({:.0}%)", 100.0 * s)),
                );
                r
            })
            .collect();
        h.push_str(&table(
            "Confusion matrix (counts, share of the true class)",
            &header_refs,
            &conf,
        ));
        h.push_str(&notes(&self.note_lines()));
        h
    }

    /// Shows the tables in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl RegressionMetrics {
    /// An HTML table of the regression metrics.
    pub fn to_html(&self) -> String {
        let rows = vec![
            vec!["mean squared error".into(), f(self.mean_squared_error)],
            vec![
                "root mean squared error".into(),
                f(self.root_mean_squared_error),
            ],
            vec!["mean absolute error".into(), f(self.mean_absolute_error)],
            vec!["R squared".into(), f(self.r_squared)],
        ];
        let mut h = table(
            &format!("Scores on {} rows", self.n_samples),
            &["metric", "value"],
            &rows,
        );
        h.push_str(&notes(
            &self.notes.iter().map(|n| n.to_string()).collect::<Vec<_>>(),
        ));
        h
    }

    /// Shows the table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Scores {
    /// The HTML of the classification or regression metrics.
    pub fn to_html(&self) -> String {
        match self {
            Scores::Classification(m) => m.to_html(),
            Scores::Regression(m) => m.to_html(),
        }
    }

    /// Shows the tables in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl HoldOutScore {
    /// The scores with the count of looks at the held-out set.
    pub fn to_html(&self) -> String {
        let mut h = self.scores.to_html();
        h.push_str(&notes(&[self.caution()]));
        h
    }

    /// Shows the tables in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl KeyResults {
    /// An HTML table of the entries, with the checksum a saved file carries.
    pub fn to_html(&self) -> String {
        let rows: Vec<Vec<String>> = self
            .results
            .iter()
            .map(|r| vec![r.name.clone(), r.value.to_string()])
            .collect();
        let mut h = table(
            &format!("Key results of {}", self.analysis),
            &["result", "value"],
            &rows,
        );
        h.push_str(&notes(&[match self.checksum() {
            Ok(c) => format!("Checksum of these results (SHA-256): {c}."),
            Err(e) => format!("These results cannot be saved: {e}."),
        }]));
        h
    }

    /// Shows the table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Reproduction {
    /// The verdict as a headline ("reproduced: same" or "reproduced:
    /// differs", in words and colour), then every entry side by side.
    pub fn to_html(&self) -> String {
        let (colour, border) = if self.is_same() {
            ("#1b5e20", "#2e7d32")
        } else {
            ("#8a1c00", "#c62828")
        };
        let mut h = format!(
            "<p style=\"font-family:sans-serif;font-size:15px;color:{colour};border-left:5px solid {border};padding:4px 10px;margin:4px 0 8px 0\"><b>{}</b></p>",
            escape(&self.verdict())
        );
        let rows: Vec<Vec<String>> = self
            .rows
            .iter()
            .map(|r| {
                let side = |v: &Option<crate::validate::KeyValue>| {
                    v.as_ref().map_or("(none)".to_string(), ToString::to_string)
                };
                vec![
                    r.name.clone(),
                    side(&r.expected),
                    side(&r.got),
                    if r.is_same() {
                        "same".to_string()
                    } else {
                        "DIFFERS".to_string()
                    },
                ]
            })
            .collect();
        h.push_str(&table(
            &format!(
                "{} against the author's results of {}",
                self.rerun, self.analysis
            ),
            &["result", "author's", "rerun's", ""],
            &rows,
        ));
        let mut n = vec![
            "Compared exactly: fingerprints character for character, numbers bit for bit (numbers are shown in their shortest exact form)."
                .to_string(),
        ];
        if let Some(c) = &self.results_checksum {
            n.push(format!("The author's results checksum (SHA-256): {c}."));
        }
        h.push_str(&notes(&n));
        h
    }

    /// Shows the verdict in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl CrossValidation {
    /// An HTML table: each metric's mean, spread, interval and fold values.
    pub fn to_html(&self) -> String {
        let rows: Vec<Vec<String>> = self
            .summary
            .iter()
            .map(|s| {
                vec![
                    s.metric.name().to_string(),
                    f(s.summary.mean),
                    f(s.summary.std_dev),
                    format!("[{}, {}]", f(s.summary.ci_low), f(s.summary.ci_high)),
                    s.values
                        .iter()
                        .map(|v| format!("{v:.3}"))
                        .collect::<Vec<_>>()
                        .join(" "),
                ]
            })
            .collect();
        let caption = format!(
            "{}-fold cross-validation{} on {}",
            self.cv.folds,
            if self.cv.repeats > 1 {
                format!(", {} repeats", self.cv.repeats)
            } else {
                String::new()
            },
            match self.table_part {
                Some(part) => part.describe(self.n_rows),
                None => format!("{} rows", self.n_rows),
            }
        );
        let mut h = table(
            &caption,
            &["metric", "mean", "sd", "95% interval", "per fold"],
            &rows,
        );
        let mut n = vec![
            "The interval allows for the folds sharing training rows (corrected resampled variance, Nadeau & Bengio 2003) and stays within each metric's range."
                .to_string(),
        ];
        n.extend(self.notes());
        n.extend(self.fit_notes().iter().map(ToString::to_string));
        h.push_str(&notes(&n));
        h.push_str(&warnings(&self.warnings()));
        h
    }

    /// Shows the table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Comparison {
    /// An HTML table of the two configurations and the test.
    pub fn to_html(&self) -> String {
        self.to_html_named("A", "B")
    }

    /// [`Comparison::to_html`] with the configurations named, so a page
    /// can use the names its charts use.
    pub fn to_html_named(&self, a_name: &str, b_name: &str) -> String {
        let a = self.a.metric(self.metric).map(|m| m.summary.clone());
        let b = self.b.metric(self.metric).map(|m| m.summary.clone());
        let mut rows = Vec::new();
        for (name, s) in [(a_name, a), (b_name, b)] {
            if let Ok(s) = s {
                rows.push(vec![
                    name.to_string(),
                    f(s.mean),
                    f(s.std_dev),
                    format!("[{}, {}]", f(s.ci_low), f(s.ci_high)),
                ]);
            }
        }
        let mut h = table(
            &format!("{} over shared folds", self.metric.name()),
            &["configuration", "mean", "sd", "95% interval"],
            &rows,
        );
        let t = &self.test;
        let trows = vec![
            vec![
                format!("mean difference {a_name} − {b_name}"),
                f(t.mean_difference),
            ],
            vec!["corrected t".into(), f(t.t)],
            vec![
                "degrees of freedom".into(),
                format!("{}", t.degrees_of_freedom),
            ],
            vec!["p (two-sided)".into(), format!("{:.4}", t.p_value)],
            vec!["naive paired t (for contrast)".into(), f(t.naive_t)],
            vec!["naive p".into(), format!("{:.4}", t.naive_p_value)],
        ];
        h.push_str(&table(
            "Corrected resampled t-test (Nadeau & Bengio 2003)",
            &["", "value"],
            &trows,
        ));
        let mut n = vec![crate::chart::named_reading(&t.reading, a_name, b_name)];
        n.extend(t.undefined.clone());
        h.push_str(&notes(&n));
        h
    }

    /// Shows the tables in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl SweepTable {
    /// The results table, best first.
    pub fn to_html(&self) -> String {
        let rows: Vec<Vec<String>> = self
            .rows
            .iter()
            .enumerate()
            .map(|(rank, r)| {
                vec![
                    (rank + 1).to_string(),
                    r.name.clone(),
                    f(r.summary.mean),
                    f(r.summary.std_dev),
                    format!("[{}, {}]", f(r.summary.ci_low), f(r.summary.ci_high)),
                ]
            })
            .collect();
        let mut table_html = table(
            &format!("Sweep sorted by {}", self.metric.name()),
            &["rank", "configuration", "mean", "sd", "95% interval"],
            &rows,
        );
        // Left-align the configuration column's text as well.
        table_html = table_html.replace("<th style=\"border-bottom:2px solid #555;padding:3px 10px;text-align:right;font-weight:600\">configuration", "<th style=\"border-bottom:2px solid #555;padding:3px 10px;text-align:left;font-weight:600\">configuration");
        table_html
    }

    /// Shows the table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Sweep {
    /// The results table and the refitted best configuration.
    pub fn to_html(&self) -> String {
        let mut h = self.table.to_html();
        h.push_str(&notes(&[format!(
            "Best: {}, refitted on all {} rows given to the sweep.",
            self.table.rows[0].name,
            self.best.model().provenance.table_rows
        )]));
        let mut w: Vec<String> = Vec::new();
        for r in &self.table.rows {
            w.extend(
                r.cross_validation
                    .warnings()
                    .iter()
                    .map(|m| format!("configuration \"{}\", {m}", r.name)),
            );
        }
        w.extend(
            self.best
                .warnings()
                .iter()
                .map(|m| format!("the best refitted on all rows: {m}")),
        );
        h.push_str(&warnings(&w));
        h
    }

    /// Shows the table in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Model {
    /// An HTML summary of the model and its provenance.
    pub fn to_html(&self) -> String {
        let p = &self.provenance;
        let mut rows = vec![
            vec!["features".into(), self.feature_names.join(", ")],
            vec!["target".into(), self.target_name.clone()],
            vec![
                if self.is_classifier {
                    "classes"
                } else {
                    "outputs"
                }
                .into(),
                self.target_names.join(", "),
            ],
            vec!["seed".into(), self.seed.to_string()],
            vec![
                "table".into(),
                format!("{} ({})", p.table_source, p.table_rows_described()),
            ],
            vec![
                "table fingerprint (SHA-256)".into(),
                p.table_fingerprint.clone(),
            ],
            vec![
                "rows trained / validated".into(),
                format!("{} / {}", p.rows_used.0, p.rows_used.1),
            ],
            vec![
                "epochs run (kept)".into(),
                format!("{} ({})", p.epochs_run, p.best_epoch),
            ],
            vec!["library".into(), format!("stratanet {}", p.library_version)],
            vec![
                "model file (SHA-256)".into(),
                self.fingerprint()
                    .unwrap_or_else(|e| format!("none: the model cannot be stored ({e})")),
            ],
        ];
        if let Some(v) = p.best_validation_loss {
            rows.push(vec!["best validation loss".into(), f(v)]);
        }
        if let Some(v) = p.baseline_validation_loss {
            rows.push(vec!["baseline validation loss".into(), f(v)]);
        }
        if !self.ids.is_empty() {
            rows.push(vec!["ID columns".into(), self.ids.join(", ")]);
        }
        if self.imputer.is_some() {
            rows.push(vec![
                "missing cells".into(),
                "filled with values learnt from the training rows".into(),
            ]);
        }
        if let Some(t) = &self.target_scaler {
            rows.push(vec![
                "target scaling".into(),
                format!(
                    "{} (offset {}, scale {}); predictions in the target's own units",
                    t.kind(),
                    t.offsets()
                        .iter()
                        .map(|v| format!("{v:.6}"))
                        .collect::<Vec<_>>()
                        .join(", "),
                    t.scales()
                        .iter()
                        .map(|v| format!("{v:.6}"))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            ]);
        }
        let mut h = table("Model", &["", "value"], &rows);
        h.push_str(&warnings(&p.warnings));
        h.push_str(&self.network.to_html());
        h
    }

    /// Shows the summary in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl Fitted {
    /// The model, the training summary, the baseline, notes, warnings and
    /// the network table.
    pub fn to_html(&self) -> String {
        let mut h = self.report().to_html();
        let b = self.baseline();
        let mut rows = Vec::new();
        if let Some(v) = b.training_loss {
            rows.push(vec!["training loss".into(), f(v)]);
        }
        if let Some(v) = b.validation_loss {
            rows.push(vec!["validation loss".into(), f(v)]);
        }
        if !rows.is_empty() {
            h.push_str(&table(
                &format!("Baseline: {}", b.description),
                &["", "value"],
                &rows,
            ));
        }
        h.push_str(&notes(self.notes()));
        h.push_str(&warnings(self.warnings()));
        if self.restarts().len() > 1 {
            h.push_str(&notes(&[format!(
                "Kept restart {} of {} (lowest validation loss).",
                self.chosen_restart() + 1,
                self.restarts().len()
            )]));
        }
        h.push_str(&self.model().to_html());
        h
    }

    /// Shows the summary in a notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup() {
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
        let t = table("T", &["x", "y"], &[vec!["<1>".into(), "2".into()]]);
        assert!(t.contains("&lt;1&gt;"));
    }
}
