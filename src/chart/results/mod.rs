//! Charts of stratanet's own results, as methods named `..._chart` on the
//! result they draw from: `fitted.learning_curves_chart()`,
//! `model.decision_map_chart(&data, x, y)`, `cv.scores_chart(metric)`,
//! `table.scores_chart()`, `metrics.confusion_chart()`. Each turns the
//! result into the plain inputs of a chart kind in [`plot`](super::plot),
//! prepares its figure, adds what only the result knows to the subtitle
//! (the model, the rows and their count) and draws it.

mod model;
mod table;
mod validation;

use std::path::Path;

use super::compare::{self, ConfigurationScores};
use super::confusion;
use super::draw::{render, Figure};
use super::learning::{self, LearningCurveOptions, TrainingHistory};
use super::{group_digits, Chart, ChartOptions};
use crate::error::Result;
use crate::fit::{FitOptions, Fitted, Model};
use crate::train::TrainingReport;
use crate::validate::{ClassificationMetrics, Comparison, CrossValidation, Metric, SweepTable};

/// The file name of a table's source (its path's last part).
pub(crate) fn source_name(source: &str) -> &str {
    Path::new(source)
        .file_name()
        .and_then(|n| n.to_str())
        .unwrap_or(source)
}

/// One line naming a model: its layers, activation and training rows.
pub(crate) fn model_line(model: &Model) -> String {
    let net = model.network();
    let sizes: Vec<String> = net.sizes().iter().map(usize::to_string).collect();
    let p = model.provenance();
    format!(
        "model: network {} ({}), trained on {} rows of {}",
        sizes.join("-"),
        net.activation().name(),
        group_digits(p.rows_used.0),
        source_name(&p.table_source)
    )
}

/// A comparison's reading with the configurations' names in place of
/// "A" and "B".
pub(crate) fn named_reading(reading: &str, a_name: &str, b_name: &str) -> String {
    reading
        .replace("model A", &format!("\"{a_name}\""))
        .replace("model B", &format!("\"{b_name}\""))
        .replace("A - B", &format!("{a_name} − {b_name}"))
}

/// A configuration's short name: its hidden layers and activation.
pub(crate) fn configuration_name(options: &FitOptions) -> String {
    if options.hidden_layers.is_empty() {
        "no hidden layer".to_string()
    } else {
        let widths: Vec<String> = options.hidden_layers.iter().map(usize::to_string).collect();
        format!(
            "hidden {} ({})",
            widths.join("-"),
            options.activation.name()
        )
    }
}

/// "validation rows: 120 rows of parts.csv", or "120 rows of parts.csv".
pub(crate) fn rows_line(options: &ChartOptions, rows: usize, source: &str) -> String {
    match &options.rows {
        Some(name) => format!(
            "{name}: {} rows of {}",
            group_digits(rows),
            source_name(source)
        ),
        None => format!("{} rows of {}", group_digits(rows), source_name(source)),
    }
}

/// A title naming the rows: "ROC curves on the validation rows".
pub(crate) fn title_on_rows(what: &str, options: &ChartOptions) -> String {
    match &options.rows {
        Some(rows) => format!("{what} on the {rows}"),
        None => what.to_string(),
    }
}

/// The figure with `lines` put before its own subtitle lines, and its
/// title replaced by `title`, unless the options give their own.
pub(crate) fn framed(
    mut figure: Figure,
    options: &ChartOptions,
    title: String,
    lines: Vec<String>,
) -> Figure {
    if options.subtitle.is_none() {
        let own = std::mem::take(&mut figure.frame.subtitle);
        figure.frame.subtitle = lines.into_iter().chain(own).collect();
    }
    if options.title.is_none() {
        figure.frame.title = title;
    }
    figure
}

fn history(r: &TrainingReport) -> TrainingHistory {
    let val: Vec<f64> = r.history.iter().filter_map(|e| e.validation_loss).collect();
    let acc: Vec<f64> = r
        .history
        .iter()
        .filter_map(|e| e.validation_accuracy)
        .collect();
    TrainingHistory {
        training_loss: r.training_losses(),
        validation_loss: (!val.is_empty()).then_some(val),
        validation_accuracy: (!acc.is_empty()).then_some(acc),
        best_epoch: r.best_validation_loss.map(|_| r.best_epoch),
    }
}

/// Learning curves of several training reports.
fn reports_chart(
    reports: &[TrainingReport],
    run_name: &str,
    title: String,
    lines: Vec<String>,
    chart: &ChartOptions,
) -> Result<Chart> {
    let runs: Vec<TrainingHistory> = reports.iter().map(history).collect();
    let mut options = LearningCurveOptions {
        chart: chart.clone(),
        run_name: run_name.to_string(),
        ..Default::default()
    };
    if options.chart.y_label.is_none() {
        if let Some(r) = reports.first() {
            options.chart.y_label = Some(format!("loss ({})", r.loss.name().replace('_', " ")));
        }
    }
    let figure = learning::prepare(&runs, &options)?;
    render(&framed(figure, chart, title, lines), chart)
}

impl Fitted {
    /// Learning curves of every restart of the fit (a bundle with medians
    /// when there were several), the epoch kept marked.
    ///
    /// # Errors
    /// As [`plot::learning_curves`](super::plot::learning_curves).
    pub fn learning_curves_chart(&self) -> Result<Chart> {
        self.learning_curves_chart_with(&ChartOptions::default())
    }

    /// [`Fitted::learning_curves_chart`] with options.
    ///
    /// # Errors
    /// As [`Fitted::learning_curves_chart`].
    pub fn learning_curves_chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let n = self.restarts().len();
        let title = if n > 1 {
            format!("Learning curves of {n} restarts")
        } else {
            "Learning curves".to_string()
        };
        let split = self.split();
        let mut line = model_line(self.model());
        if !split.validation.is_empty() {
            line.push_str(&format!(
                "; validation loss on {} rows held out from training",
                group_digits(split.validation.len())
            ));
        }
        reports_chart(self.restarts(), "restart", title, vec![line], options)
    }
}

impl CrossValidation {
    /// Learning curves of every fold's fit.
    ///
    /// # Errors
    /// As [`plot::learning_curves`](super::plot::learning_curves).
    pub fn learning_curves_chart(&self) -> Result<Chart> {
        let reports: Vec<TrainingReport> = self.folds.iter().map(|f| f.report.clone()).collect();
        let line = format!(
            "{}: {} fits of {}-fold cross-validation{} on {} rows",
            configuration_name(&self.options),
            reports.len(),
            self.cv.folds,
            if self.cv.repeats > 1 {
                format!(" repeated {} times", self.cv.repeats)
            } else {
                String::new()
            },
            group_digits(self.n_rows)
        );
        let title = format!("Learning curves of {} folds", reports.len());
        reports_chart(
            &reports,
            "fold",
            title,
            vec![line],
            &ChartOptions::default(),
        )
    }

    /// The per-fold scores of `metric` with their mean and 95% interval,
    /// the row named for the configuration.
    ///
    /// # Errors
    /// A metric that does not apply.
    pub fn scores_chart(&self, metric: Metric) -> Result<Chart> {
        let name = configuration_name(&self.options);
        scores_chart(&[(name.as_str(), self)], metric, None)
    }
}

impl Comparison {
    /// The two configurations' per-fold scores of `metric` side by side,
    /// named `a_name` and `b_name`, with the paired test's reading.
    ///
    /// # Errors
    /// A metric that does not apply.
    pub fn scores_chart(&self, metric: Metric, a_name: &str, b_name: &str) -> Result<Chart> {
        let reading = named_reading(&self.test.reading, a_name, b_name);
        scores_chart(
            &[(a_name, &self.a), (b_name, &self.b)],
            metric,
            Some(reading),
        )
    }
}

impl SweepTable {
    /// Every configuration of the sweep ranked by the table's metric, each
    /// with its fold scores, mean and 95% interval.
    ///
    /// # Errors
    /// An empty table.
    pub fn scores_chart(&self) -> Result<Chart> {
        let metric = self.metric;
        let scores: Vec<ConfigurationScores> = self
            .rows
            .iter()
            .map(|row| {
                let values = row
                    .cross_validation
                    .metric(metric)
                    .map(|m| m.values.clone())
                    .unwrap_or_default();
                ConfigurationScores {
                    name: row.name.clone(),
                    fold_scores: values,
                    mean: row.summary.mean,
                    interval: (row.summary.ci_low, row.summary.ci_high),
                }
            })
            .collect();
        let options = ChartOptions::default();
        let mut figure =
            compare::prepare(&scores, metric.name(), metric.higher_is_better(), &options)?;
        if let Some(first) = self.rows.first() {
            figure.frame.subtitle = vec![format!(
                "{}: {} configurations on the same {} folds of {} rows",
                first.cross_validation.scored_rows().label(),
                self.rows.len(),
                first.cross_validation.folds.len(),
                group_digits(first.cross_validation.n_rows)
            )];
            figure.frame.notes.push(
                "the best row's score is optimistic: it was chosen on these same folds; nested cross-validation scores the choice itself"
                    .to_string(),
            );
        }
        figure.frame.title = format!(
            "Sweep of {} configurations, ranked by {}",
            self.rows.len(),
            metric.name().replace('_', " ")
        );
        render(&figure, &options)
    }
}

/// Per-fold scores of several cross-validated configurations, with means and
/// 95% intervals, best first.
fn scores_chart(
    configurations: &[(&str, &CrossValidation)],
    metric: Metric,
    reading: Option<String>,
) -> Result<Chart> {
    let scores = configurations
        .iter()
        .map(|(name, cv)| {
            let m = cv.metric(metric)?;
            Ok(ConfigurationScores {
                name: name.to_string(),
                fold_scores: m.values.clone(),
                mean: m.summary.mean,
                interval: (m.summary.ci_low, m.summary.ci_high),
            })
        })
        .collect::<Result<Vec<_>>>()?;
    let options = ChartOptions::default();
    let figure = compare::prepare(&scores, metric.name(), metric.higher_is_better(), &options)?;
    let cv = configurations[0].1;
    let mut lines = vec![format!(
        "{}: each dot one fold's held-out rows; {}-fold cross-validation{} of {} rows",
        cv.scored_rows().label(),
        cv.cv.folds,
        if cv.cv.repeats > 1 {
            format!(" repeated {} times", cv.cv.repeats)
        } else {
            String::new()
        },
        group_digits(cv.n_rows)
    )];
    lines.extend(reading);
    let what = super::axis_label(metric.name());
    let mut chars = what.chars();
    let title = format!(
        "{}{} on the {}",
        chars
            .next()
            .map(|c| c.to_uppercase().to_string())
            .unwrap_or_default(),
        chars.as_str(),
        cv.scored_rows().label()
    );
    render(&framed(figure, &options, title, lines), &options)
}

impl ClassificationMetrics {
    /// The confusion matrix as a heat map.
    ///
    /// # Errors
    /// As [`plot::confusion_matrix`](super::plot::confusion_matrix).
    pub fn confusion_chart(&self) -> Result<Chart> {
        self.confusion_chart_with(&ChartOptions::default())
    }

    /// [`ClassificationMetrics::confusion_chart`] with options; `rows`
    /// names the rows scored in the title.
    ///
    /// # Errors
    /// As [`plot::confusion_matrix`](super::plot::confusion_matrix).
    pub fn confusion_chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let figure = confusion::prepare(self.confusion.counts(), &self.class_names, options)?;
        let line = match &options.rows {
            Some(rows) => format!("{}: {} rows", rows, group_digits(self.n_samples)),
            None => format!("{} rows", group_digits(self.n_samples)),
        };
        let title = title_on_rows("Confusion matrix", options);
        render(&framed(figure, options, title, vec![line]), options)
    }
}
