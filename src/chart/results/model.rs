//! Chart methods on [`Model`]: what a model makes of rows of a table.

use ndarray::{Array2, ArrayView2, Axis};

use super::{framed, model_line, rows_line, title_on_rows};
use crate::chart::components::{self, ProjectedRows};
use crate::chart::curves::{self, Curve, Kind};
use crate::chart::decision::{self, ClassPoints, DecisionMapOptions};
use crate::chart::draw::{format_value, render};
use crate::chart::hidden::{self, HiddenView};
use crate::chart::pca::principal_components_2;
use crate::chart::regression::{self, PredictedActual};
use crate::chart::weights::{self, NetworkWeights};
use crate::chart::{axis_label, group_digits, Chart, ChartOptions};
use crate::data::{ColumnEncoding, Dataset, Target};
use crate::error::{Error, Result};
use crate::fit::Model;
use crate::validate::metrics::{precision_recall_curve, roc_curve};

fn median(values: &mut [f64]) -> f64 {
    values.sort_by(f64::total_cmp);
    let n = values.len();
    match n {
        0 => f64::NAN,
        _ if n % 2 == 1 => values[n / 2],
        _ => (values[n / 2 - 1] + values[n / 2]) / 2.0,
    }
}

/// The class counts of labelled rows: "accept 79, rework 23, scrap 18".
fn class_counts(data: &Dataset) -> Option<String> {
    let names = data.class_names()?;
    let counts = data.class_counts();
    Some(
        names
            .iter()
            .zip(counts)
            .map(|(n, c)| format!("{n} {}", group_digits(c)))
            .collect::<Vec<_>>()
            .join(", "),
    )
}

fn rows_with_classes(options: &ChartOptions, data: &Dataset) -> String {
    let mut line = rows_line(options, data.n_rows(), data.source());
    if let Some(counts) = class_counts(data) {
        line.push_str(&format!(" ({counts})"));
    }
    line
}

/// What the inputs not mapped are held at: one value per feature column,
/// and a line saying so.
fn held_values(
    data: &Dataset,
    mapped: [&str; 2],
    hold: &[(String, String)],
) -> Result<(Vec<f64>, Option<String>)> {
    for (name, _) in hold {
        if !data.columns().iter().any(|c| c.name() == name) {
            return Err(Error::option(
                "hold",
                name,
                format!(
                    "is not a column of the table; the columns are {}",
                    data.columns()
                        .iter()
                        .map(|c| c.name())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            ));
        }
        if mapped.contains(&name.as_str()) {
            return Err(Error::option(
                "hold",
                name,
                "is one of the two columns mapped; hold only the others",
            ));
        }
    }
    let x = data.x();
    let mut base = vec![0.0; x.ncols()];
    let mut said = Vec::new();
    let mut offset = 0;
    for column in data.columns() {
        let width = column.width();
        let given = hold
            .iter()
            .find(|(n, _)| n == column.name())
            .map(|(_, v)| v.as_str());
        if !mapped.contains(&column.name()) {
            match column {
                ColumnEncoding::Numeric { name } => {
                    let value = match given {
                        Some(text) => text
                            .trim()
                            .parse::<f64>()
                            .ok()
                            .filter(|v| v.is_finite())
                            .ok_or_else(|| {
                                Error::option(
                                    "hold",
                                    format!("{name} = {text}"),
                                    "a numeric column is held at a number",
                                )
                            })?,
                        None => median(&mut x.column(offset).to_vec()),
                    };
                    base[offset] = value;
                    said.push(format!(
                        "{} = {} ({})",
                        axis_label(name),
                        format_value(value),
                        if given.is_some() { "chosen" } else { "median" }
                    ));
                }
                ColumnEncoding::OneHot { name, levels } => {
                    let level = match given {
                        Some(text) => levels.iter().position(|l| l == text).ok_or_else(|| {
                            Error::option(
                                "hold",
                                format!("{name} = {text}"),
                                format!(
                                    "is not a level of {name}; its levels are {}",
                                    levels.join(", ")
                                ),
                            )
                        })?,
                        None => {
                            // The most frequent level; the first in order on ties.
                            let counts: Vec<f64> =
                                (0..width).map(|k| x.column(offset + k).sum()).collect();
                            let mut best = 0;
                            for (k, &c) in counts.iter().enumerate() {
                                if c > counts[best] {
                                    best = k;
                                }
                            }
                            best
                        }
                    };
                    base[offset + level] = 1.0;
                    said.push(format!(
                        "{} = {} ({})",
                        axis_label(name),
                        levels[level],
                        if given.is_some() {
                            "chosen"
                        } else {
                            "most frequent"
                        }
                    ));
                }
                ColumnEncoding::MissingIndicator { name } => {
                    // Held as a row whose cell is present (the indicator
                    // is 0); the numeric column beside it holds the value.
                    base[offset] = 0.0;
                    said.push(format!("{} present (not missing)", axis_label(name)));
                }
            }
        }
        offset += width;
    }
    let line = (!said.is_empty()).then(|| format!("other inputs held at: {}", said.join(", ")));
    Ok((base, line))
}

/// The source column a feature column belongs to, for a mapped axis: it
/// must be numeric.
fn numeric_column(data: &Dataset, feature: &str) -> Result<usize> {
    let index = data.feature_index(feature)?;
    let mut offset = 0;
    for column in data.columns() {
        if index < offset + column.width() {
            if let ColumnEncoding::OneHot { name, .. } = column {
                return Err(Error::option(
                    "decision map features",
                    feature,
                    format!(
                        "is one level of the text column {name}; a decision map sweeps numeric inputs (hold {name} at a level with DecisionMapOptions::hold instead)"
                    ),
                ));
            }
            return Ok(index);
        }
        offset += column.width();
    }
    Ok(index)
}

fn class_points(
    model: &Model,
    data: &Dataset,
    xy: ArrayView2<'_, f64>,
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

fn curves_of(
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

fn outputs(model: &Model, data: &Dataset) -> Result<Vec<PredictedActual>> {
    model.check_features(data)?;
    let Target::Values { values, names } = data.target() else {
        return Err(Error::input(
            "regression charts",
            "need a table with numeric targets; this one holds classes (use roc_chart or confusion_chart)",
        ));
    };
    if model.is_classifier() {
        return Err(Error::input(
            "regression charts",
            "need a model that predicts numbers; this one predicts classes",
        ));
    }
    let predicted = model.predict(data.x())?;
    Ok(names
        .iter()
        .enumerate()
        .map(|(j, name)| PredictedActual {
            name: name.clone(),
            actual: values.column(j).to_vec(),
            predicted: predicted.column(j).to_vec(),
        })
        .collect())
}

impl Model {
    /// A decision map over two numeric inputs of `data` (raw units): every
    /// other input held at one real value, its most frequent level (text
    /// columns) or its median (numbers) in `data` (pass the training rows);
    /// the subtitle says which.
    ///
    /// # Errors
    /// Unknown feature names (listed), a level of a text column as an axis,
    /// a regression model, mismatched tables.
    pub fn decision_map_chart(
        &self,
        data: &Dataset,
        x_feature: &str,
        y_feature: &str,
    ) -> Result<Chart> {
        self.decision_map_chart_with(data, x_feature, y_feature, &DecisionMapOptions::default())
    }

    /// [`Model::decision_map_chart`] with options, including the values
    /// to hold the other inputs at ([`DecisionMapOptions::hold`]).
    ///
    /// # Errors
    /// As [`Model::decision_map_chart`], and a held column or value that
    /// the table does not have (the error lists what it has).
    pub fn decision_map_chart_with(
        &self,
        data: &Dataset,
        x_feature: &str,
        y_feature: &str,
        options: &DecisionMapOptions,
    ) -> Result<Chart> {
        self.check_features(data)?;
        let (i, j) = (
            numeric_column(data, x_feature)?,
            numeric_column(data, y_feature)?,
        );
        if i == j {
            return Err(Error::option(
                "decision map features",
                x_feature,
                "the two features must differ",
            ));
        }
        let (base, held) = held_values(data, [x_feature, y_feature], &options.hold)?;
        let xy = data.features.select(Axis(1), &[i, j]);
        let points = class_points(self, data, xy.view(), x_feature, y_feature)?;
        let predict = |grid: ArrayView2<'_, f64>| -> Result<Array2<f64>> {
            let mut rows = Array2::from_shape_fn((grid.nrows(), base.len()), |(_, c)| base[c]);
            for (r, g) in grid.rows().into_iter().enumerate() {
                rows[[r, i]] = g[0];
                rows[[r, j]] = g[1];
            }
            self.predict_probabilities(rows.view())
        };
        let figure = decision::prepare(&predict, &points, options)?;
        let mut lines = vec![
            model_line(self),
            format!("points: {}", rows_with_classes(&options.chart, data)),
        ];
        lines.extend(held);
        let title = format!(
            "Decision map over {} and {}",
            axis_label(x_feature),
            axis_label(y_feature)
        );
        render(
            &framed(figure, &options.chart, title, lines),
            &options.chart,
        )
    }

    /// The rows of `data` in the first two principal components of the
    /// model's standardised inputs, ringed where the model predicts the
    /// wrong class, with each class's distance from that plane. (No
    /// decision map is drawn on the plane: the rows lie off it, so what
    /// the model predicts there would describe other rows.)
    ///
    /// # Errors
    /// A regression model, fewer than two features, a table without
    /// classes, mismatched tables.
    pub fn components_chart(&self, data: &Dataset) -> Result<Chart> {
        self.components_chart_with(data, &ChartOptions::default())
    }

    /// [`Model::components_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::components_chart`].
    pub fn components_chart_with(&self, data: &Dataset, options: &ChartOptions) -> Result<Chart> {
        self.check_features(data)?;
        let labels = data.labels().ok_or_else(|| {
            Error::input(
                "principal components chart",
                "needs a table with class labels",
            )
        })?;
        let scaled = self.scaler().scaled(data.x())?;
        let pcs = principal_components_2(scaled.view())?;
        let predicted = self.predict_classes(data.x())?;
        let distance: Vec<f64> = scaled
            .rows()
            .into_iter()
            .zip(pcs.projection.rows())
            .map(|(row, proj)| {
                let squared: f64 = row
                    .iter()
                    .zip(pcs.means.iter())
                    .map(|(v, m)| (v - m) * (v - m))
                    .sum();
                (squared - proj[0] * proj[0] - proj[1] * proj[1])
                    .max(0.0)
                    .sqrt()
            })
            .collect();
        let share = |k: usize| 100.0 * pcs.variances[k] / pcs.total_variance.max(f64::MIN_POSITIVE);
        let rows = ProjectedRows {
            points: pcs
                .projection
                .rows()
                .into_iter()
                .zip(labels)
                .map(|(p, &l)| (p[0], p[1], l))
                .collect(),
            wrong: predicted.iter().zip(labels).map(|(p, l)| p != l).collect(),
            distance,
            class_names: data.class_names().unwrap_or(&[]).to_vec(),
            x_name: format!("component 1 ({:.0}% of variance)", share(0)),
            y_name: format!("component 2 ({:.0}% of variance)", share(1)),
        };
        let figure = components::prepare(&rows, options)?;
        let lines = vec![
            model_line(self),
            rows_with_classes(options, data),
            format!(
                "the plane of the first two components holds {:.0}% of the variance of the standardised inputs",
                share(0) + share(1)
            ),
        ];
        let title = title_on_rows("Rows in their first two principal components", options);
        render(&framed(figure, options, title, lines), options)
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
        self.hidden_layer_chart_with(data, layer, view, &ChartOptions::default())
    }

    /// [`Model::hidden_layer_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::hidden_layer_chart`].
    pub fn hidden_layer_chart_with(
        &self,
        data: &Dataset,
        layer: usize,
        view: HiddenView,
        options: &ChartOptions,
    ) -> Result<Chart> {
        self.check_features(data)?;
        let labels = data.labels().ok_or_else(|| {
            Error::input(
                "hidden-layer view",
                "needs a table with class labels to colour the rows",
            )
        })?;
        let names = data.class_names().unwrap_or(&[]).to_vec();
        let a = self.hidden_activations(data.x(), layer)?;
        let figure = hidden::prepare(a.view(), labels, &names, view, options)?;
        let title = format!(
            "Hidden layer {layer} ({} units, {})",
            a.ncols(),
            self.network().activation().name()
        );
        let lines = vec![model_line(self), rows_with_classes(options, data)];
        render(&framed(figure, options, title, lines), options)
    }

    /// ROC curves on `data` (one per class for several classes,
    /// one-vs-rest), AUC in the legend.
    ///
    /// # Errors
    /// A regression model or a table without classes.
    pub fn roc_chart(&self, data: &Dataset) -> Result<Chart> {
        self.roc_chart_with(data, &ChartOptions::default())
    }

    /// [`Model::roc_chart`] with options; `rows` names the rows scored in
    /// the title ("ROC curves on the validation rows").
    ///
    /// # Errors
    /// As [`Model::roc_chart`].
    pub fn roc_chart_with(&self, data: &Dataset, options: &ChartOptions) -> Result<Chart> {
        let list = curves_of(self, data, |s, t| {
            let c = roc_curve(s, t)?;
            Ok((
                c.points
                    .iter()
                    .map(|p| (p.false_positive_rate, p.true_positive_rate))
                    .collect(),
                c.auc,
            ))
        })?;
        let figure = curves::prepare(&list, options, Kind::Roc)?;
        let lines = vec![model_line(self), rows_with_classes(options, data)];
        render(
            &framed(figure, options, title_on_rows("ROC curves", options), lines),
            options,
        )
    }

    /// Precision-recall curves on `data`, average precision in the legend.
    ///
    /// # Errors
    /// A regression model or a table without classes.
    pub fn precision_recall_chart(&self, data: &Dataset) -> Result<Chart> {
        self.precision_recall_chart_with(data, &ChartOptions::default())
    }

    /// [`Model::precision_recall_chart`] with options; `rows` names the
    /// rows scored in the title.
    ///
    /// # Errors
    /// As [`Model::precision_recall_chart`].
    pub fn precision_recall_chart_with(
        &self,
        data: &Dataset,
        options: &ChartOptions,
    ) -> Result<Chart> {
        let list = curves_of(self, data, |s, t| {
            let c = precision_recall_curve(s, t)?;
            Ok((
                c.points.iter().map(|p| (p.recall, p.precision)).collect(),
                c.average_precision,
            ))
        })?;
        let figure = curves::prepare(&list, options, Kind::PrecisionRecall)?;
        let lines = vec![model_line(self), rows_with_classes(options, data)];
        let title = title_on_rows("Precision-recall curves", options);
        render(&framed(figure, options, title, lines), options)
    }

    /// Predicted against actual values of a regression model on `data`,
    /// one panel per output, R² and RMSE in each caption.
    ///
    /// # Errors
    /// A classifier, a table with classes, mismatched tables.
    pub fn predicted_actual_chart(&self, data: &Dataset) -> Result<Chart> {
        self.predicted_actual_chart_with(data, &ChartOptions::default())
    }

    /// [`Model::predicted_actual_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::predicted_actual_chart`].
    pub fn predicted_actual_chart_with(
        &self,
        data: &Dataset,
        options: &ChartOptions,
    ) -> Result<Chart> {
        let outputs = outputs(self, data)?;
        let figure = regression::prepare_predicted_actual(&outputs, options)?;
        let lines = vec![
            model_line(self),
            rows_line(options, data.n_rows(), data.source()),
        ];
        let title = title_on_rows("Predicted against actual values", options);
        render(&framed(figure, options, title, lines), options)
    }

    /// Residuals (actual minus predicted) against predicted values of a
    /// regression model on `data`.
    ///
    /// # Errors
    /// As [`Model::predicted_actual_chart`].
    pub fn residuals_chart(&self, data: &Dataset) -> Result<Chart> {
        self.residuals_chart_with(data, &ChartOptions::default())
    }

    /// [`Model::residuals_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::predicted_actual_chart`].
    pub fn residuals_chart_with(&self, data: &Dataset, options: &ChartOptions) -> Result<Chart> {
        let outputs = outputs(self, data)?;
        let figure = regression::prepare_residuals(&outputs, options)?;
        let lines = vec![
            model_line(self),
            rows_line(options, data.n_rows(), data.source()),
        ];
        let title = title_on_rows("Residuals against predicted values", options);
        render(&framed(figure, options, title, lines), options)
    }

    /// Every weight and bias of the network as a square in a staircase of
    /// heat maps ([`plot::weight_maps`](crate::chart::plot::weight_maps)),
    /// inputs and outputs named.
    ///
    /// # Errors
    /// As [`plot::weight_maps`](crate::chart::plot::weight_maps).
    pub fn weights_chart(&self) -> Result<Chart> {
        self.weights_chart_with(&ChartOptions::default())
    }

    /// [`Model::weights_chart`] with options.
    ///
    /// # Errors
    /// As [`Model::weights_chart`].
    pub fn weights_chart_with(&self, options: &ChartOptions) -> Result<Chart> {
        let net = self.network();
        let names = self.target_names();
        let network = NetworkWeights {
            layer_sizes: net.sizes(),
            weights: net.layers().iter().map(|l| l.weights.clone()).collect(),
            biases: Some(net.layers().iter().map(|l| l.biases.to_vec()).collect()),
            input_names: Some(self.feature_names().to_vec()),
            output_names: Some(if self.is_classifier() && net.n_outputs() == 1 {
                vec![format!("P({})", names[1])]
            } else {
                names.to_vec()
            }),
        };
        let figure = weights::prepare(&network, options)?;
        let title = figure.frame.title.clone();
        render(
            &framed(figure, options, title, vec![model_line(self)]),
            options,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::CsvOptions;
    use crate::fit::{fit, FitOptions};
    use crate::rng::seeded_rng;

    fn parts() -> Dataset {
        CsvOptions::new("verdict")
            .drop(&["part_id"])
            .read_str(include_str!("../../../demo-data/parts.csv"), "parts.csv")
            .unwrap()
    }

    fn subtitle(chart: &Chart) -> String {
        chart
            .boxes()
            .texts
            .iter()
            .map(|t| t.text.clone())
            .collect::<Vec<_>>()
            .join(" | ")
    }

    /// Text inputs are held at a real level (never the all-zeros row no
    /// part has), numbers at their median, and the subtitle says which.
    #[test]
    fn decision_maps_hold_other_inputs_at_real_values() {
        let data = parts();
        let model = fit(
            &data,
            &FitOptions::default().hidden(&[4]).epochs(20),
            &mut seeded_rng(1),
        )
        .unwrap()
        .into_model();
        let (base, line) = held_values(&data, ["bore_dev_um", "roundness_um"], &[]).unwrap();
        // The most frequent spindle, counted here from the table itself.
        let text = include_str!("../../../demo-data/parts.csv");
        let mut counts = std::collections::BTreeMap::new();
        for row in text.lines().skip(1) {
            *counts
                .entry(row.split(',').nth(4).unwrap().to_string())
                .or_insert(0) += 1;
        }
        let most = counts
            .iter()
            .max_by_key(|(level, n)| (**n, std::cmp::Reverse((*level).clone())))
            .unwrap()
            .0
            .clone();
        let line = line.unwrap();
        assert!(
            line.contains(&format!("spindle = {most} (most frequent)")),
            "{line}"
        );
        assert!(
            line.contains("roughness ra (µm) = ") && line.contains("(median)"),
            "{line}"
        );
        // Exactly one spindle column is 1.
        let spindle: Vec<f64> = data
            .feature_names()
            .iter()
            .zip(&base)
            .filter(|(n, _)| n.starts_with("spindle="))
            .map(|(_, v)| *v)
            .collect();
        assert_eq!(spindle.iter().sum::<f64>(), 1.0);
        let chart = model
            .decision_map_chart(&data, "bore_dev_um", "roundness_um")
            .unwrap();
        assert!(subtitle(&chart).contains(&format!("spindle = {most} (most frequent)")));

        let picked = DecisionMapOptions {
            hold: vec![
                ("spindle".into(), "north".into()),
                ("roughness_ra_um".into(), "0.8".into()),
            ],
            resolution: 20,
            ..Default::default()
        };
        let chart = model
            .decision_map_chart_with(&data, "bore_dev_um", "roundness_um", &picked)
            .unwrap();
        let all = subtitle(&chart);
        assert!(
            all.contains("spindle = north (chosen)")
                && all.contains("roughness ra (µm) = 0.800 (chosen)"),
            "{all}"
        );

        let bad = DecisionMapOptions {
            hold: vec![("spindle".into(), "west".into())],
            ..Default::default()
        };
        let err = model
            .decision_map_chart_with(&data, "bore_dev_um", "roundness_um", &bad)
            .unwrap_err();
        assert_eq!(
            err.to_string(),
            "option hold = spindle = west: is not a level of spindle; its levels are east, north, south"
        );
        let err = model
            .decision_map_chart(&data, "spindle=east", "roundness_um")
            .unwrap_err();
        assert!(
            err.to_string()
                .contains("is one level of the text column spindle"),
            "{err}"
        );
    }
}
