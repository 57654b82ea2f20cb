//! Charts of stratanet's own results, as methods named `..._chart` on the
//! result they draw from: `fitted.learning_curves_chart()`,
//! `model.decision_map_chart(&data, x, y)`, `cv.scores_chart(metric)`,
//! `metrics.confusion_chart()`. Each turns the result into the plain inputs
//! of a chart kind in [`plot`](super::plot) and draws it with the default
//! options.

use super::compare::{cross_validation_comparison, ConfigurationScores};
use super::confusion::confusion_matrix;
use super::curves::{precision_recall_curves, roc_curves, Curve};
use super::decision::{decision_map, ClassPoints, DecisionMapOptions};
use super::figure::{Chart, ChartOptions};
use super::hidden::{hidden_layer, HiddenView};
use super::learning::{learning_curves, LearningCurveOptions, TrainingHistory};
use super::network::{network_diagram, NetworkWeights};
use super::pca::principal_components_2;
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::{Fitted, Model};
use crate::train::TrainingReport;
use crate::validate::metrics::{precision_recall_curve, roc_curve};
use crate::validate::{ClassificationMetrics, Comparison, CrossValidation, Metric};
use ndarray::{Array2, ArrayView2, Axis};

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

impl Fitted {
    /// Learning curves of every restart of the fit (a bundle with medians
    /// when there were several), the kept epoch marked.
    ///
    /// # Errors
    /// As [`plot::learning_curves`](super::plot::learning_curves).
    pub fn learning_curves_chart(&self) -> Result<Chart> {
        reports_chart(self.restarts(), &LearningCurveOptions::default())
    }
}

impl CrossValidation {
    /// Learning curves of every fold's fit.
    ///
    /// # Errors
    /// As [`plot::learning_curves`](super::plot::learning_curves).
    pub fn learning_curves_chart(&self) -> Result<Chart> {
        let reports: Vec<TrainingReport> = self.folds.iter().map(|f| f.report.clone()).collect();
        reports_chart(
            &reports,
            &LearningCurveOptions {
                chart: ChartOptions::titled(format!("Learning curves of {} folds", reports.len())),
                ..Default::default()
            },
        )
    }

    /// The per-fold scores of `metric` with their mean and 95% interval.
    ///
    /// # Errors
    /// A metric that does not apply.
    pub fn scores_chart(&self, metric: Metric) -> Result<Chart> {
        scores_chart(&[("this configuration", self)], metric)
    }
}

impl Comparison {
    /// The two configurations' per-fold scores of `metric` side by side,
    /// named `a_name` and `b_name`.
    ///
    /// # Errors
    /// A metric that does not apply.
    pub fn scores_chart(&self, metric: Metric, a_name: &str, b_name: &str) -> Result<Chart> {
        scores_chart(&[(a_name, &self.a), (b_name, &self.b)], metric)
    }
}

/// Learning curves of several training reports.
fn reports_chart(reports: &[TrainingReport], options: &LearningCurveOptions) -> Result<Chart> {
    let runs: Vec<TrainingHistory> = reports.iter().map(history).collect();
    let mut options = options.clone();
    if options.chart.title.is_none() {
        options.chart.title = Some(if runs.len() > 1 {
            format!("Learning curves of {} restarts", runs.len())
        } else {
            "Learning curves".to_string()
        });
    }
    if options.chart.y_label.is_none() {
        if let Some(r) = reports.first() {
            options.chart.y_label = Some(format!("loss ({})", r.loss.name().replace('_', " ")));
        }
    }
    learning_curves(&runs, &options)
}

fn class_points(
    model: &Model,
    data: &Dataset,
    xy: &Array2<f64>,
    x_name: &str,
    y_name: &str,
) -> Result<ClassPoints> {
    let labels = data
        .labels()
        .ok_or_else(|| Error::input("decision map", "needs a table with class labels"))?;
    let class_names = model
        .class_names()
        .ok_or_else(|| {
            Error::input(
                "decision map",
                "needs a classifier; this model predicts numbers",
            )
        })?
        .to_vec();
    Ok(ClassPoints {
        points: xy
            .rows()
            .into_iter()
            .zip(labels)
            .map(|(r, &l)| (r[0], r[1], l))
            .collect(),
        class_names,
        x_name: x_name.to_string(),
        y_name: y_name.to_string(),
    })
}

fn medians(x: ArrayView2<'_, f64>) -> Vec<f64> {
    x.axis_iter(Axis(1))
        .map(|col| {
            let mut v = col.to_vec();
            v.sort_by(f64::total_cmp);
            let n = v.len();
            if n % 2 == 1 {
                v[n / 2]
            } else {
                (v[n / 2 - 1] + v[n / 2]) / 2.0
            }
        })
        .collect()
}

impl Model {
    /// A decision map over two features of `data` (raw units), the other
    /// features held at their medians in `data` (pass the training rows).
    ///
    /// # Errors
    /// Unknown feature names (listed), a regression model, mismatched tables.
    pub fn decision_map_chart(
        &self,
        data: &Dataset,
        x_feature: &str,
        y_feature: &str,
    ) -> Result<Chart> {
        self.decision_map_chart_with(data, x_feature, y_feature, &DecisionMapOptions::default())
    }

    /// [`Model::decision_map_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::decision_map_chart`].
    pub fn decision_map_chart_with(
        &self,
        data: &Dataset,
        x_feature: &str,
        y_feature: &str,
        options: &DecisionMapOptions,
    ) -> Result<Chart> {
        decision_boundary_with(self, data, x_feature, y_feature, options)
    }

    /// A decision map over the first two principal components of the
    /// standardised features of `data` (for tables with more than two
    /// features).
    ///
    /// # Errors
    /// A regression model, fewer than two features, mismatched tables.
    pub fn decision_map_components_chart(&self, data: &Dataset) -> Result<Chart> {
        decision_boundary_principal(self, data)
    }

    /// What hidden layer `layer` (from 1) makes of the rows of `data`,
    /// coloured by class.
    ///
    /// # Errors
    /// No such layer, a table without classes, mismatched tables.
    pub fn hidden_layer_chart(
        &self,
        data: &Dataset,
        layer: usize,
        view: HiddenView,
    ) -> Result<Chart> {
        hidden_layer_view(self, data, layer, view)
    }

    /// ROC curves on `data` (one per class for several classes,
    /// one-vs-rest), AUC in the legend.
    ///
    /// # Errors
    /// A regression model or a table without classes.
    pub fn roc_chart(&self, data: &Dataset) -> Result<Chart> {
        roc(self, data)
    }

    /// Precision-recall curves on `data`, average precision in the legend.
    ///
    /// # Errors
    /// A regression model or a table without classes.
    pub fn precision_recall_chart(&self, data: &Dataset) -> Result<Chart> {
        precision_recall(self, data)
    }

    /// The network as a diagram, inputs and outputs named.
    ///
    /// # Errors
    /// As [`plot::network_diagram`](super::plot::network_diagram).
    pub fn network_chart(&self) -> Result<Chart> {
        network(self)
    }
}

impl ClassificationMetrics {
    /// The confusion matrix as a heat map.
    ///
    /// # Errors
    /// As [`plot::confusion_matrix`](super::plot::confusion_matrix).
    pub fn confusion_chart(&self) -> Result<Chart> {
        confusion(self)
    }
}

fn decision_boundary_with(
    model: &Model,
    data: &Dataset,
    x_feature: &str,
    y_feature: &str,
    options: &DecisionMapOptions,
) -> Result<Chart> {
    model.check_features(data)?;
    let (i, j) = (
        data.feature_index(x_feature)?,
        data.feature_index(y_feature)?,
    );
    if i == j {
        return Err(Error::option(
            "decision map features",
            x_feature,
            "the two features must differ",
        ));
    }
    let base = medians(data.x());
    let xy = data.features.select(Axis(1), &[i, j]);
    let points = class_points(model, data, &xy, x_feature, y_feature)?;
    let predict = |grid: ArrayView2<'_, f64>| -> Result<Array2<f64>> {
        let mut rows = Array2::from_shape_fn((grid.nrows(), base.len()), |(_, c)| base[c]);
        for (r, g) in grid.rows().into_iter().enumerate() {
            rows[[r, i]] = g[0];
            rows[[r, j]] = g[1];
        }
        model.predict_probabilities(rows.view())
    };
    let mut options = options.clone();
    if options.chart.title.is_none() {
        options.chart.title = Some(format!("Decision map over {x_feature} and {y_feature}"));
    }
    if base.len() > 2 {
        options.notes.push(format!(
            "the other {} features are held at their medians",
            base.len() - 2
        ));
    }
    decision_map(&predict, &points, &options)
}

/// A decision-boundary map over the first two principal components of the
/// standardised features of `data` (for tables with more than two features).
///
/// # Errors
/// A regression model, fewer than two features, mismatched tables.
fn decision_boundary_principal(model: &Model, data: &Dataset) -> Result<Chart> {
    model.check_features(data)?;
    let scaled = model.scaler().scaled(data.x())?;
    let pcs = principal_components_2(scaled.view())?;
    let share = |k: usize| 100.0 * pcs.variances[k] / pcs.total_variance.max(f64::MIN_POSITIVE);
    let x_name = format!("component 1 ({:.0}% of variance)", share(0));
    let y_name = format!("component 2 ({:.0}% of variance)", share(1));
    let points = class_points(model, data, &pcs.projection, &x_name, &y_name)?;
    let predict = |grid: ArrayView2<'_, f64>| -> Result<Array2<f64>> {
        // Back from the plane to the scaled feature space: mean + u c1 + v c2.
        let mut rows = Array2::zeros((grid.nrows(), pcs.means.len()));
        for (r, g) in grid.rows().into_iter().enumerate() {
            for c in 0..pcs.means.len() {
                rows[[r, c]] =
                    pcs.means[c] + g[0] * pcs.components[[0, c]] + g[1] * pcs.components[[1, c]];
            }
        }
        model.network().predict_probabilities(rows.view())
    };
    let options = DecisionMapOptions {
        chart: ChartOptions::titled("Decision map over the first two principal components"),
        notes: vec!["the plane passes through the mean of the standardised features".to_string()],
        ..Default::default()
    };
    decision_map(&predict, &points, &options)
}

/// What hidden layer `layer` (from 1) makes of the rows of `data`, coloured
/// by class.
///
/// # Errors
/// No such layer, a table without classes, mismatched tables.
fn hidden_layer_view(
    model: &Model,
    data: &Dataset,
    layer: usize,
    view: HiddenView,
) -> Result<Chart> {
    model.check_features(data)?;
    let labels = data.labels().ok_or_else(|| {
        Error::input(
            "hidden-layer view",
            "needs a table with class labels to colour the rows",
        )
    })?;
    let names = data.class_names().unwrap_or(&[]).to_vec();
    let a = model.hidden_activations(data.x(), layer)?;
    let options = ChartOptions::titled(format!(
        "Hidden layer {layer} ({} units, {})",
        a.ncols(),
        model.network().activation().name()
    ));
    hidden_layer(a.view(), labels, &names, view, &options)
}

/// The confusion matrix of classification metrics as a heat map.
///
/// # Errors
/// As [`confusion_matrix`].
fn confusion(metrics: &ClassificationMetrics) -> Result<Chart> {
    confusion_matrix(
        metrics.confusion.counts(),
        &metrics.class_names,
        &ChartOptions::titled("Confusion matrix"),
    )
}

fn class_curves(
    model: &Model,
    data: &Dataset,
    mut curve: impl FnMut(&[f64], &[bool]) -> Result<(Vec<(f64, f64)>, f64)>,
) -> Result<Vec<Curve>> {
    model.check_features(data)?;
    let labels = data.labels().ok_or_else(|| {
        Error::input(
            "ROC and precision-recall curves",
            "need a table with class labels",
        )
    })?;
    let names = data.class_names().unwrap_or(&[]).to_vec();
    let p = model.predict_probabilities(data.x())?;
    let classes: Vec<usize> = if names.len() == 2 {
        vec![1]
    } else {
        (0..names.len()).collect()
    };
    classes
        .into_iter()
        .map(|k| {
            let scores = p.column(k).to_vec();
            let truth: Vec<bool> = labels.iter().map(|&l| l == k).collect();
            let (points, summary) = curve(&scores, &truth)?;
            Ok(Curve {
                label: if names.len() == 2 {
                    format!("{} vs {}", names[1], names[0])
                } else {
                    format!("{} vs rest", names[k])
                },
                points,
                summary: Some(summary),
            })
        })
        .collect()
}

/// ROC curves of a classifier on `data` (one per class for several classes,
/// one-vs-rest), AUC in the legend.
///
/// # Errors
/// A regression model or a table without classes.
fn roc(model: &Model, data: &Dataset) -> Result<Chart> {
    let curves = class_curves(model, data, |s, t| {
        let c = roc_curve(s, t)?;
        Ok((
            c.points
                .iter()
                .map(|p| (p.false_positive_rate, p.true_positive_rate))
                .collect(),
            c.auc,
        ))
    })?;
    roc_curves(&curves, &ChartOptions::titled("ROC curves"))
}

/// Precision-recall curves of a classifier on `data`, average precision in
/// the legend.
///
/// # Errors
/// A regression model or a table without classes.
fn precision_recall(model: &Model, data: &Dataset) -> Result<Chart> {
    let curves = class_curves(model, data, |s, t| {
        let c = precision_recall_curve(s, t)?;
        Ok((
            c.points.iter().map(|p| (p.recall, p.precision)).collect(),
            c.average_precision,
        ))
    })?;
    precision_recall_curves(&curves, &ChartOptions::titled("Precision-recall curves"))
}

/// Per-fold scores of several cross-validated configurations, with means and
/// 95% intervals, best first.
///
/// # Errors
/// A metric that does not apply, or no configurations.
fn scores_chart(configurations: &[(&str, &CrossValidation)], metric: Metric) -> Result<Chart> {
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
    cross_validation_comparison(
        &scores,
        metric.name(),
        metric.higher_is_better(),
        &ChartOptions::titled(format!(
            "Cross-validated {}",
            metric.name().replace('_', " ")
        )),
    )
}

/// The network of a model as a diagram, inputs and outputs named.
///
/// # Errors
/// As [`network_diagram`].
fn network(model: &Model) -> Result<Chart> {
    let net = model.network();
    let names = model.target_names();
    let weights = NetworkWeights {
        layer_sizes: net.sizes(),
        weights: net.layers().iter().map(|l| l.weights.clone()).collect(),
        input_names: Some(model.feature_names().to_vec()),
        output_names: Some(if model.is_classifier() && net.n_outputs() == 1 {
            vec![format!("P({})", names[1])]
        } else {
            names.to_vec()
        }),
    };
    network_diagram(&weights, &ChartOptions::titled("Network"))
}
