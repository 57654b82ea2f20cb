//! Prediction tables: a model's predictions for the rows of a
//! [`FeatureTable`] as CSV: the file line, the model's ID columns (when
//! the file has them), then the predicted class and each class's
//! probability (calibrated when the model has a temperature), with the
//! decision (and its expected cost under a cost matrix) when the model has
//! a decision rule; or the predicted values in the target's own units.

use super::FeatureTable;
use crate::atomic::write_text;
use crate::error::{Error, Result};
use crate::fit::Model;
use std::path::Path;

/// The prediction table's column names for a model and the rows read for
/// it: the line, the ID columns found, then the predictions.
pub(crate) fn prediction_columns(model: &Model, table: &FeatureTable) -> Vec<String> {
    let mut cols = vec!["line".to_string()];
    if let Some(ids) = &table.ids {
        cols.extend(ids.names().iter().cloned());
    }
    if model.is_classifier {
        cols.push("predicted".into());
        cols.extend(model.target_names.iter().map(|c| format!("p_{c}")));
        match &model.decision {
            Some(crate::fit::DecisionRule::Costs(_)) => {
                cols.extend(["decision".to_string(), "expected_cost".to_string()]);
            }
            Some(crate::fit::DecisionRule::Threshold { .. }) => cols.push("decision".into()),
            None => {}
        }
    } else {
        cols.extend(model.target_names.iter().map(|c| format!("predicted_{c}")));
    }
    cols
}

/// Writes predictions (and class probabilities) for the rows of `table` as CSV.
///
/// # Errors
/// Prediction or writing fails.
pub(crate) fn write_predictions(model: &Model, table: &FeatureTable, out: &Path) -> Result<()> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let io = |e: csv::Error| Error::csv(out, e);
    w.write_record(prediction_columns(model, table))
        .map_err(io)?;
    let ids = |i: usize| -> Vec<String> {
        table
            .ids
            .as_ref()
            .map(|ids| ids.row(i).to_vec())
            .unwrap_or_default()
    };
    if model.is_classifier {
        // One forward pass gives both the classes and the probabilities.
        let out = model.predict(table.x())?;
        let head = model.network.head();
        let classes = crate::network::classes_from_outputs(out.view(), head)?;
        let p = crate::network::probabilities_from_outputs(out, head)?;
        let decisions = model
            .decision
            .as_ref()
            .map(|rule| rule.decide(p.view(), &model.target_names))
            .transpose()?;
        for (i, row) in p.rows().into_iter().enumerate() {
            let mut rec = vec![table.lines[i].to_string()];
            rec.extend(ids(i));
            rec.push(model.target_names[classes[i]].clone());
            rec.extend(row.iter().map(|v| format!("{v}")));
            if let Some(d) = &decisions {
                rec.push(d.names[d.chosen[i]].clone());
                if let Some(cost) = &d.expected_cost {
                    rec.push(format!("{}", cost[i]));
                }
            }
            w.write_record(rec).map_err(io)?;
        }
    } else {
        let out_values = model.predict(table.x())?;
        for (i, row) in out_values.rows().into_iter().enumerate() {
            let mut rec = vec![table.lines[i].to_string()];
            rec.extend(ids(i));
            rec.extend(row.iter().map(|v| format!("{v}")));
            w.write_record(rec).map_err(io)?;
        }
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::io(out, "writing", e.into_error()))?;
    write_text(out, std::str::from_utf8(&bytes).expect("CSV of UTF-8 text"))
}
