//! Step 2 of every command: a prepared [`Job`] calls the library (options
//! were validated in step 1, so the library's checked entry points are
//! used) and returns an [`Outcome`].

use super::charts;
use super::output::{
    calibration_json, calibration_text, costs_json, costs_text, cv_json, cv_text, flags, labelled,
    loss_words, read_text, scores_json, scores_text, shown, summary_json, summary_text, table_json,
    table_text, Outcome,
};
use super::prepare::{
    CheckJob, CvJob, DemoJob, ExportOnnxJob, FitJob, ImportanceJob, InspectJob, Job, MergeJob,
    NestedJob, PredictJob, StatusJob, SweepJob, TrialJob, TrialOut, Trials,
};
use super::progress::Progress;
use crate::atomic::write_text;
use crate::data::{Dataset, Target};
use crate::error::{Error, Message, Result};
use crate::fit::{fit_checked, FitOptions, CAUTION};
use crate::model_file;
use crate::report;
use crate::rng::{child_seed, seeded_rng};
use crate::validate::sweep_files::{self, index_list, PlanFile};
use crate::validate::{
    cv, sweep as sweeps, CrossValidation, Metric, Scores, Sweep, SweepPlan, SweepTable,
};
use rayon::prelude::*;
use serde_json::json;
use std::borrow::Cow;
use std::fmt::Write as _;
use std::path::Path;

/// Runs a prepared job.
///
/// # Errors
/// Any library error, naming the file, line, column or option.
pub(crate) fn run(job: Job, progress: &Progress) -> Result<Outcome> {
    match job {
        Job::Fit(j) => fit(j, progress),
        Job::Check(j) => check(j),
        Job::Predict(j) => predict(j),
        Job::Inspect(j) => inspect(j),
        Job::Cv(j) => cross_validate(j, progress),
        Job::Sweep(j) => sweep(j, progress),
        Job::WritePlan(j, path) => write_plan(j, &path),
        Job::Nested(j) => nested(j, progress),
        Job::Importance(j) => importance(j, progress),
        Job::SweepTrial(j) => sweep_trial(j),
        Job::SweepMerge(j) => sweep_merge(j),
        Job::SweepStatus(j) => sweep_status(j),
        Job::ExportOnnx(j) => export_onnx(j),
        Job::Demo(j) => demo(j, progress),
    }
}

/// The options with the command's progress printer listening.
fn observed(options: &FitOptions, progress: &Progress) -> FitOptions {
    let mut o = options.clone();
    o.training.observer = progress.observer();
    o
}

fn inspect(j: InspectJob) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let summary = data.summary(Some(j.folds));
    let mut json = summary_json(&summary);
    json["command"] = json!("inspect");
    json["data"] = json!(j.data);
    let mut text = String::new();
    summary_text(&summary, &mut text);
    Ok(Outcome { json, text })
}

fn fit(j: FitJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let options = observed(&j.options, progress);
    // As `fit` with the generator seeded from `--seed`.
    let seed = child_seed(&mut seeded_rng(j.seed));
    let fitted = fit_checked(Cow::Borrowed(&data), &options, seed, None)?;
    let saved = match &j.costs {
        Some(c) => Cow::Owned(fitted.model().clone().with_costs(c)?),
        None => Cow::Borrowed(fitted.model()),
    };
    saved.save(&j.out)?;
    let mut written = Vec::new();
    if let Some(dir) = &j.charts {
        let filled = fitted.model().filled(&data)?;
        written = charts::fit_charts(&filled, &fitted, dir)?;
    }
    if let Some(path) = &j.report {
        let html = report::fit_report(&data, &fitted, footer(j.seed))?;
        write_text(path, &html)?;
    }
    let r = fitted.report();
    let model = fitted.model();
    let baseline = fitted.baseline();
    let validation = if fitted.split().validation.is_empty() {
        None
    } else {
        Scores::of(model, &data.select(&fitted.split().validation))
            .ok()
            .map(|(s, _)| s)
    };
    let r_squared = validation
        .as_ref()
        .and_then(|s| s.value(crate::validate::Metric::RSquared).ok());
    let scaled = model.target_scaler().is_some();
    let mut warnings: Vec<Message> = data.warnings().to_vec();
    warnings.extend(fitted.warnings().iter().cloned());
    let json = json!({
        "command": "fit",
        "model": j.out,
        "rows": data.n_rows(),
        "dropped_rows": data.dropped_rows(),
        "features": data.feature_names(),
        "target": data.target_name(),
        "task": if model.is_classifier() { "classification" } else { "regression" },
        "classes": data.class_names(),
        "ids": model.id_columns(),
        "sizes": model.network().sizes(),
        "parameters": model.network().n_parameters(),
        "loss": r.loss.name(),
        "loss_definition": loss_words(r.loss, scaled),
        "epochs_run": r.epochs_run,
        "best_epoch": r.best_epoch,
        "stopped_early": r.stopped_early,
        "best_validation_loss": r.best_validation_loss,
        "final_training_loss": r.final_training_loss,
        "validation_accuracy": validation.as_ref().and_then(|s| s.value(crate::validate::Metric::Accuracy).ok()),
        "validation_r_squared": r_squared,
        "baseline": {
            "description": baseline.description,
            "training_loss": baseline.training_loss,
            "validation_loss": baseline.validation_loss,
        },
        "seed": j.seed,
        "training_rows": fitted.split().train.len(),
        "validation_rows": fitted.split().validation.len(),
        "validation_scored_rows": crate::data::ScoredRows::Validation.name(),
        "temperature": model.temperature().map(|t| json!({
            "value": t.value,
            "rows": t.rows,
            "log_loss_before": t.log_loss_before,
            "log_loss_after": t.log_loss_after,
        })),
        "decision_rule": saved.decision_rule().map(|r| r.describe(model.target_names())),
        "table_fingerprint": model.provenance().table_fingerprint,
        "charts": written,
        "report": j.report,
        "decisions": flags(data.decisions()),
        "notes": flags(fitted.notes()),
        "warnings": flags(&warnings),
    });
    let mut text = String::new();
    read_text(&data, &j.data, &mut text);
    let (trained, held) = (fitted.split().train.len(), fitted.split().validation.len());
    let _ = writeln!(
        text,
        "fitted {:?} on {} rows of {}: {trained} training rows{}",
        model.network().sizes(),
        data.n_rows(),
        j.data.display(),
        if held == 0 {
            String::new()
        } else {
            format!(", {held} validation rows (they chose the stopping epoch and the network kept, so their scores are mildly optimistic)")
        }
    );
    let _ = writeln!(text, "  loss: {}", loss_words(r.loss, scaled));
    let _ = writeln!(
        text,
        "  epochs run {} (best {}{}), final training loss {:.5}",
        r.epochs_run,
        r.best_epoch,
        if r.stopped_early {
            ", stopped early"
        } else {
            ""
        },
        r.final_training_loss
    );
    match (r.best_validation_loss, baseline.validation_loss) {
        (Some(v), Some(b)) => {
            let _ = writeln!(
                text,
                "  best validation loss {v:.5}; baseline {b:.5}, {}",
                baseline.description
            );
        }
        (Some(v), None) => {
            let _ = writeln!(text, "  best validation loss {v:.5}");
        }
        (None, _) => {
            if let Some(b) = baseline.training_loss {
                let _ = writeln!(
                    text,
                    "  baseline training loss {b:.5}, {}",
                    baseline.description
                );
            }
        }
    }
    if let Some(a) = validation
        .as_ref()
        .and_then(|s| s.value(crate::validate::Metric::Accuracy).ok())
    {
        let _ = writeln!(
            text,
            "  validation accuracy {a:.4} (the kept network on the {held} validation rows)"
        );
    }
    // A threshold is in the fit's notes; costs were attached here.
    if let Some(rule @ crate::fit::DecisionRule::Costs(_)) = saved.decision_rule() {
        let _ = writeln!(text, "  decides by {}", rule.describe(model.target_names()));
    }
    if let Some(r2) = r_squared {
        let _ = writeln!(
            text,
            "  validation R\u{b2} {r2:.4} (in the target's own units; the training mean scores about 0)"
        );
    }
    labelled(&mut text, "note", fitted.notes());
    labelled(&mut text, "warning", fitted.warnings());
    let _ = writeln!(text, "saved the model to {}", j.out.display());
    for c in &written {
        let _ = writeln!(text, "wrote {}", c.display());
    }
    if let Some(path) = &j.report {
        let _ = writeln!(text, "wrote the report {}", path.display());
    }
    Ok(Outcome { json, text })
}

/// The footer of a report page: the one seed of the run.
fn footer(seed: u64) -> Vec<String> {
    vec![format!(
        "Seed {seed}: the same command with the same seed reproduces every number and chart of this page byte for byte, on any number of threads."
    )]
}

fn check(j: CheckJob) -> Result<Outcome> {
    let model = crate::fit::Model::load(&j.model)?;
    let table = j.rows.read(&model, &j.data)?;
    let decisions = table.decisions.clone();
    let data = table.into_dataset(&model)?;
    let (scores, _) = Scores::of(&model, &data)?;
    let in_sample = data.fingerprint() == model.provenance().table_fingerprint;
    let mut warnings = Vec::new();
    if in_sample {
        warnings.push(Message::new(format!(
            "these are the rows the model was fitted on (the same SHA-256 fingerprint as its training table, {} rows): the scores are in-sample and overstate how it will do on new rows",
            model.provenance().table_rows
        )));
    }
    warnings.extend(
        model
            .provenance()
            .warnings
            .iter()
            .map(|w| Message::new(format!("when fitted: {w}"))),
    );
    let mut json = json!({
        "command": "check",
        "model": j.model,
        "data": j.data,
        "rows": data.n_rows(),
        "in_sample": in_sample,
        "metrics": scores_json(&scores),
        "notes": scores.notes(),
        "decisions": flags(&decisions),
        "warnings": flags(&warnings),
    });
    if let Scores::Classification(m) = &scores {
        json["confusion"] = json!(m.confusion.counts());
        json["classes"] = json!(m.class_names);
    }
    let mut text = format!(
        "{} rows of {} scored by {}{}\n",
        data.n_rows(),
        j.data.display(),
        j.model.display(),
        if in_sample { " (in-sample)" } else { "" }
    );
    labelled(&mut text, "decided", &shown(&decisions));
    scores_text(&scores, &mut text);
    labelled(&mut text, "warning", &warnings);
    let _ = writeln!(text, "Caution: {CAUTION}");
    Ok(Outcome { json, text })
}

fn predict(j: PredictJob) -> Result<Outcome> {
    let model = crate::fit::Model::load(&j.model)?;
    let table = j.rows.read(&model, &j.data)?;
    let rows = table.n_rows();
    model_file::write_predictions(&model, &table, &j.out)?;
    let warnings: Vec<Message> = model
        .provenance()
        .warnings
        .iter()
        .map(|w| Message::new(format!("when fitted: {w}")))
        .collect();
    let json = json!({
        "command": "predict",
        "model": j.model,
        "data": j.data,
        "rows": rows,
        "out": j.out,
        "columns": model_file::prediction_columns(&model, &table),
        "decisions": flags(&table.decisions),
        "warnings": flags(&warnings),
    });
    let mut text = String::new();
    labelled(&mut text, "decided", &shown(&table.decisions));
    labelled(&mut text, "warning", &warnings);
    let _ = write!(
        text,
        "wrote predictions for {rows} rows to {}\nCaution: {CAUTION}",
        j.out.display()
    );
    Ok(Outcome { json, text })
}

fn export_onnx(j: ExportOnnxJob) -> Result<Outcome> {
    let model = crate::fit::Model::load(&j.model)?;
    let bytes = crate::export::to_onnx(&model)?;
    crate::atomic::write_file(&j.out, |w| {
        std::io::Write::write_all(w, &bytes).map_err(|e| Error::io(&j.out, "writing", e))
    })?;
    let network = model.network();
    let outputs = if model.is_classifier() {
        "probabilities, label"
    } else {
        "values"
    };
    let json = json!({
        "command": "export-onnx",
        "model": j.model,
        "out": j.out,
        "bytes": bytes.len(),
        "opset": crate::export::OPSET,
        "ir_version": crate::export::IR_VERSION,
        "inputs": model.feature_names().len(),
        "outputs": outputs,
        "precision": network.precision().to_string(),
    });
    let text = format!(
        "wrote {} ({} bytes): ONNX opset {}, input `features` ({} columns, double), outputs {outputs}, {} network\nnot in the file: any temperature or cost-based decision (the model file holds neither)",
        j.out.display(),
        bytes.len(),
        crate::export::OPSET,
        model.feature_names().len(),
        network.precision(),
    );
    Ok(Outcome { json, text })
}

fn cross_validate(j: CvJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let options = observed(&j.options, progress);
    let result = cv::cross_validate_checked(&data, &options, &j.cv, &mut seeded_rng(j.seed))?;
    let mut written = Vec::new();
    if let Some(dir) = &j.charts {
        written = charts::cv_charts(&data, &result, dir)?;
    }
    if let Some(path) = &j.report {
        let html = report::cv_report(&data, &result, footer(j.seed))?;
        write_text(path, &html)?;
    }
    let mut json = cv_json(&result);
    json["command"] = json!("cv");
    json["data"] = json!(j.data);
    json["seed"] = json!(j.seed);
    json["charts"] = json!(written);
    json["report"] = json!(j.report);
    json["decisions"] = json!(flags(data.decisions()));
    let mut warnings = data.warnings().to_vec();
    warnings.extend(result.warnings());
    json["warnings"] = json!(flags(&warnings));
    json["fit_notes"] = json!(flags(&result.fit_notes()));
    let mut text = String::new();
    read_text(&data, &j.data, &mut text);
    let _ = writeln!(
        text,
        "{}-fold cross-validation ({} repeat{}) on {} rows of {}",
        j.cv.folds,
        j.cv.repeats,
        if j.cv.repeats == 1 { "" } else { "s" },
        data.n_rows(),
        j.data.display()
    );
    cv_text(&result, &mut text);
    if data.labels().is_some() {
        let r = result.reliability(&data, j.bins)?;
        let b = result.brier_partition(&data, j.bins)?;
        json["calibration"] = calibration_json(&r, &b);
        calibration_text(&r, &b, &mut text);
    }
    if let Some(costs) = &j.costs {
        let c = result.costs(&data, costs)?;
        json["costs"] = costs_json(&c);
        costs_text(&c, &mut text);
    }
    if let Some(path) = &j.out_of_fold {
        let rows = write_out_of_fold(&data, &result, path)?;
        json["out_of_fold"] = json!({"path": path, "lines": rows});
        let _ = writeln!(
            text,
            "wrote {rows} out-of-fold predictions (every row once per repeat) to {}",
            path.display()
        );
    }
    labelled(&mut text, "note", &result.fit_notes());
    labelled(&mut text, "warning", &result.warnings());
    for c in &written {
        let _ = writeln!(text, "wrote {}", c.display());
    }
    if let Some(path) = &j.report {
        let _ = writeln!(text, "wrote the report {}", path.display());
    }
    Ok(Outcome { json, text })
}

/// Writes every repeat's out-of-fold predictions as CSV: the row of the
/// table as read (from 1), the table's ID columns, the repeat and fold
/// (from 1), the true value, then the prediction (class and class
/// probabilities, or values). Returns the number of prediction lines.
fn write_out_of_fold(data: &Dataset, cv: &CrossValidation, path: &Path) -> Result<usize> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let io = |e: csv::Error| Error::csv(path, e);
    let mut header = vec!["table_row".to_string()];
    if let Some(ids) = &data.ids {
        header.extend(ids.names().iter().cloned());
    }
    header.extend(["repeat".into(), "fold".into()]);
    let names = data.target.names();
    match data.labels() {
        Some(_) => {
            header.push(format!("true_{}", data.target_name));
            header.push("predicted".into());
            header.extend(names.iter().map(|c| format!("p_{c}")));
        }
        None => {
            header.extend(names.iter().map(|c| format!("true_{c}")));
            header.extend(names.iter().map(|c| format!("predicted_{c}")));
        }
    }
    w.write_record(&header).map_err(io)?;
    let k = cv.cv.folds;
    let mut lines = 0;
    for repeat in 0..cv.repeats() {
        let oof = cv.out_of_fold(repeat)?;
        let predicted = crate::validate::metrics::most_probable_classes(oof.predictions.view());
        for row in 0..data.n_rows() {
            let mut rec = vec![(row + 1).to_string()];
            if let Some(ids) = &data.ids {
                rec.extend(ids.row(row).iter().cloned());
            }
            rec.push((repeat + 1).to_string());
            rec.push((oof.fold_of_row[row] - repeat * k + 1).to_string());
            let p = oof.predictions.row(row);
            match (data.labels(), &data.target) {
                (Some(labels), _) => {
                    rec.push(names[labels[row]].clone());
                    rec.push(names[predicted[row]].clone());
                    rec.extend(p.iter().map(|v| format!("{v}")));
                }
                (None, Target::Values { values, .. }) => {
                    rec.extend(values.row(row).iter().map(|v| format!("{v}")));
                    rec.extend(p.iter().map(|v| format!("{v}")));
                }
                (None, Target::Classes { .. }) => unreachable!("classes have labels"),
            }
            w.write_record(&rec).map_err(io)?;
            lines += 1;
        }
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::io(path, "writing", e.into_error()))?;
    crate::atomic::write_text(
        path,
        std::str::from_utf8(&bytes).expect("CSV of UTF-8 text"),
    )?;
    Ok(lines)
}

fn importance(j: ImportanceJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let options = observed(&j.options, progress);
    let mut rng = seeded_rng(j.seed);
    let result = cv::cross_validate_checked(&data, &options, &j.cv, &mut rng)?;
    let imp = result.permutation_importance(&data, &j.importance, &mut rng)?;
    let rows = result.scored_rows();
    let columns: Vec<_> = imp
        .ranked()
        .iter()
        .map(|c| {
            json!({
                "column": c.column,
                "inputs": c.inputs,
                "mean_drop": c.summary.mean,
                "ci_low": c.summary.ci_low,
                "ci_high": c.summary.ci_high,
                "fold_drops": c.fold_drops,
                "clearly_used": c.clearly_used(),
            })
        })
        .collect();
    let mut warnings = data.warnings().to_vec();
    warnings.extend(result.warnings());
    let json = json!({
        "command": "importance",
        "data": j.data,
        "seed": j.seed,
        "metric": imp.metric.name(),
        "shuffles": imp.shuffles,
        "folds": imp.folds,
        "rows_per_fold": imp.rows_per_fold,
        "scored_rows": rows.name(),
        "columns": columns,
        "decisions": flags(data.decisions()),
        "warnings": flags(&warnings),
        "fit_notes": flags(&result.fit_notes()),
    });
    let mut text = String::new();
    read_text(&data, &j.data, &mut text);
    let _ = writeln!(
        text,
        "permutation importance (Breiman 2001; Fisher, Rudin & Dominici 2019): the drop in {} when one column is shuffled ({} shuffles), on the {} of {} folds (about {:.0} rows each)",
        imp.metric.name(),
        imp.shuffles,
        rows.label(),
        imp.folds,
        imp.rows_per_fold
    );
    let _ = writeln!(
        text,
        "  {:<24} {:>10}   {:<22} inputs",
        "column", "mean drop", "95% interval"
    );
    for c in imp.ranked() {
        let _ = writeln!(
            text,
            "  {:<24} {:>10.4}   [{:>8.4}, {:>8.4}]   {}{}",
            c.column,
            c.summary.mean,
            c.summary.ci_low,
            c.summary.ci_high,
            c.inputs.len(),
            if c.clearly_used() { "  used" } else { "" }
        );
    }
    let _ = writeln!(
        text,
        "  (\"used\": the interval lies above 0. A column near 0 may still matter when another column carries the same information; shuffling one of two correlated columns shows little drop.)"
    );
    labelled(&mut text, "note", &result.fit_notes());
    labelled(&mut text, "warning", &warnings);
    Ok(Outcome { json, text })
}

/// The sorting metric: the one asked for, else accuracy for classes and
/// root mean squared error for numbers.
fn metric_for(asked: Option<Metric>, data: &Dataset) -> Metric {
    asked.unwrap_or(match data.target() {
        Target::Classes { .. } => Metric::Accuracy,
        Target::Values { .. } => Metric::RootMeanSquaredError,
    })
}

/// The plan of a sweep job, drawn from the table.
fn plan_of(j: &SweepJob, data: &Dataset) -> Result<SweepPlan> {
    let metric = metric_for(j.metric, data);
    SweepPlan::new_checked(
        data,
        &j.base,
        &j.search,
        &j.cv,
        metric,
        &mut seeded_rng(j.seed),
    )
}

/// The JSON and text of a sweep's table (the same from a local sweep and
/// from merged trial files).
fn sweep_outcome(
    table: &SweepTable,
    rounds: &[crate::validate::RoundSummary],
    best_saved: Option<&std::path::Path>,
    read: Option<(&Dataset, &std::path::Path)>,
    best_warnings: &[Message],
) -> Outcome {
    let table_warnings = read.map_or(&[][..], |(data, _)| data.warnings());
    let mut json = table_json(table);
    json["command"] = json!("sweep");
    if let Some((data, _)) = read {
        json["decisions"] = json!(flags(data.decisions()));
    }
    json["best"] = json!(table.rows[0].name);
    json["model"] = json!(best_saved);
    // A merge writes no report; the key is there so both outputs match.
    json["report"] = serde_json::Value::Null;
    let optimism = format!(
        "the best configuration's score is optimistic: it was chosen among {} on these same folds; for an honest estimate of the tuned procedure use `stratanet nested`",
        table.rows.len()
    );
    json["notes"] = json!([optimism]);
    let mut text = String::new();
    if let Some((data, path)) = read {
        read_text(data, path, &mut text);
    }
    if !rounds.is_empty() {
        json["rounds"] = json!(rounds
            .iter()
            .map(|r| json!({
                "round": r.round + 1,
                "epochs": r.epochs,
                "configurations": r.results.len(),
                "kept": r.kept,
                "results": r.results.iter().map(|(name, mean)| json!({"name": name, "mean": mean})).collect::<Vec<_>>(),
            }))
            .collect::<Vec<_>>());
        for r in rounds {
            let _ = writeln!(
                text,
                "round {}: {} configurations at {} epochs, kept the best {}",
                r.round + 1,
                r.results.len(),
                r.epochs,
                r.kept
            );
        }
    }
    let _ = writeln!(
        text,
        "sweep of {} configurations on shared folds, sorted by {}",
        table.rows.len(),
        table.metric.name()
    );
    table_text(table, &mut text);
    let mut warnings = table_warnings.to_vec();
    warnings.extend(sweep_warnings(table));
    warnings.extend(
        best_warnings
            .iter()
            .map(|w| w.prefixed("the best refitted on all rows: ")),
    );
    json["warnings"] = json!(flags(&warnings));
    labelled(&mut text, "warning", &warnings[table_warnings.len()..]);
    if table.rows.len() > 1 {
        let _ = writeln!(text, "note: {optimism}");
    }
    if let Some(out) = best_saved {
        let _ = writeln!(
            text,
            "refitted the best on all rows and saved it to {}",
            out.display()
        );
    }
    Outcome { json, text }
}

fn sweep(j: SweepJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let plan = plan_of(&j, &data)?;
    let result = sweeps::sweep_plan_checked(&data, plan, &progress.observer())?;
    if let Some(out) = &j.out {
        result.best.model().save(out)?;
    }
    if let Some(path) = &j.report {
        let html = report::sweep_report(&data, &result, footer(j.seed))?;
        write_text(path, &html)?;
    }
    let Sweep {
        table,
        rounds,
        best,
    } = &result;
    let mut outcome = sweep_outcome(
        table,
        rounds,
        j.out.as_deref(),
        Some((&data, &j.data)),
        best.warnings(),
    );
    outcome.json["report"] = json!(j.report);
    if let Some(path) = &j.report {
        let _ = writeln!(outcome.text, "wrote the report {}", path.display());
    }
    Ok(outcome)
}

fn nested(j: NestedJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let metric = metric_for(j.metric, &data);
    let mut base = j.base.clone();
    base.training.observer = progress.observer();
    let nested = crate::validate::nested::nested_cross_validate_checked(
        &data,
        &base,
        &j.search,
        &j.outer,
        &j.inner,
        metric,
        &mut seeded_rng(j.seed),
    )?;
    let mut json = cv_json(&nested.outer);
    json["command"] = json!("nested");
    json["data"] = json!(j.data);
    json["seed"] = json!(j.seed);
    json["metric"] = json!(metric.name());
    json["inner_folds"] = json!(j.inner.folds);
    json["configurations"] = json!(nested.configurations);
    json["choices"] = json!(nested
        .choices
        .iter()
        .map(|c| json!({"fold": c.fold + 1, "configuration": c.configuration, "inner_score": c.inner_score}))
        .collect::<Vec<_>>());
    json["wins"] = json!(nested
        .win_counts()
        .iter()
        .map(|(name, count)| json!({"configuration": name, "count": count}))
        .collect::<Vec<_>>());
    let mut text = format!(
        "nested cross-validation on {} rows of {}: {}-fold outer ({} repeat{}) around a sweep of {} configurations with {} inner folds, chosen by {}\n",
        data.n_rows(),
        j.data.display(),
        j.outer.folds,
        j.outer.repeats,
        if j.outer.repeats == 1 { "" } else { "s" },
        nested.configurations,
        j.inner.folds,
        metric.name()
    );
    let _ = writeln!(
        text,
        "the tuned procedure (sweep, then refit the winner), scored on outer held-out rows:"
    );
    cv_text(&nested.outer, &mut text);
    let _ = writeln!(text, "winners of the inner sweeps:");
    for (name, count) in nested.win_counts() {
        let _ = writeln!(text, "  {count} of {}  {name}", nested.choices.len());
    }
    let _ = write!(
        text,
        "(each winner's own inner score is optimistic; the outer scores above are not)"
    );
    Ok(Outcome { json, text })
}

fn write_plan(j: SweepJob, path: &std::path::Path) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let plan = plan_of(&j, &data)?;
    sweep_files::write_plan(&plan, &j.table, path)?;
    let mut outcome = plan_outcome(&plan, path, &j.data);
    outcome.json["decisions"] = json!(flags(data.decisions()));
    outcome.json["warnings"] = json!(flags(data.warnings()));
    let mut text = String::new();
    read_text(&data, &j.data, &mut text);
    outcome.text = text + &outcome.text;
    Ok(outcome)
}

/// What writing a plan prints: how many trials, and how to run them.
fn plan_outcome(plan: &SweepPlan, path: &std::path::Path, data: &std::path::Path) -> Outcome {
    let trials = plan.trials().len();
    let mut json = json!({"command": "sweep", "plan": path, "trials": trials, "configurations": plan.configurations.len()});
    let mut text = String::new();
    if let Some(r) = &plan.round {
        json["round"] = json!(r.index + 1);
        json["rounds"] = json!(r.total);
        json["epochs"] = json!(plan.configurations[0].1.training.epochs);
        let _ = writeln!(
            text,
            "successive halving, round {} of {}: {} configurations at {} epochs",
            r.index + 1,
            r.total,
            plan.configurations.len(),
            plan.configurations[0].1.training.epochs
        );
    }
    let _ = write!(
        text,
        "wrote a plan of {trials} trials ({} configurations x {} folds) to {}\nrun them, e.g. as {trials} tasks: stratanet sweep-trial {} {} --trial INDEX --out-dir trials\nor in N tasks: stratanet sweep-trial {} {} --task I --tasks N --out-dir trials",
        plan.configurations.len(),
        plan.folds.folds.len(),
        path.display(),
        path.display(),
        data.display(),
        path.display(),
        data.display()
    );
    Outcome { json, text }
}

fn sweep_trial(j: TrialJob) -> Result<Outcome> {
    let file = sweep_files::read_plan(&j.plan)?;
    let all = file.plan.trials().len();
    let indices: Vec<usize> = match &j.trials {
        Trials::List(list) => {
            if let Some(&bad) = list.iter().find(|&&t| t >= all) {
                return Err(Error::option(
                    "trial",
                    bad,
                    format!("must be below {all}, the number of trials in the plan"),
                ));
            }
            list.clone()
        }
        Trials::Stride { task, tasks } => (*task..all).step_by(*tasks).collect(),
    };
    let data = file.table.read(&j.data)?;
    if data.fingerprint() != file.plan.table_fingerprint {
        return Err(Error::input(
            j.data.display().to_string(),
            "is not the table the plan was made from (its fingerprint differs); run every trial on that same file",
        ));
    }
    file.plan.check()?;
    file.plan.folds.check(data.n_rows())?;
    if let TrialOut::Folder(dir) = &j.out {
        std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, "creating the folder", e))?;
    }
    let path_of = |t: usize| match &j.out {
        TrialOut::File(f) => f.clone(),
        TrialOut::Folder(d) => d.join(sweep_files::trial_file_name(t)),
    };
    // Trials of one task run in parallel; each depends on its own seed only.
    type TrialDone = std::result::Result<Vec<Message>, String>;
    let outcomes: Vec<Result<TrialDone>> = indices
        .par_iter()
        .map(|&t| {
            let path = path_of(t);
            match file.plan.run_trial(&data, t) {
                Ok(result) => {
                    let test = data.select(&result.test_rows);
                    sweep_files::write_trial(
                        &file.checksum,
                        t,
                        data.n_rows(),
                        data.class_names().unwrap_or(&[]),
                        test.target(),
                        &result,
                        j.history,
                        &path,
                    )?;
                    Ok(Ok(result
                        .warnings
                        .iter()
                        .map(|w| w.prefixed(&format!("trial {t}: ")))
                        .collect()))
                }
                Err(e) if !e.is_io() => {
                    let reason = e.to_string();
                    sweep_files::write_failed_trial(&file.checksum, t, &reason, &path)?;
                    Ok(Err(format!("trial {t}: {reason}")))
                }
                Err(e) => Err(e),
            }
        })
        .collect();
    let (mut failed, mut warnings) = (Vec::new(), Vec::new());
    for o in outcomes {
        match o? {
            Ok(w) => warnings.extend(w),
            Err(f) => failed.push(f),
        }
    }
    if !failed.is_empty() {
        return Err(Error::input(
            "sweep-trial",
            format!(
                "{} of {} trials failed and were recorded as failed ({})",
                failed.len(),
                indices.len(),
                failed.join("; ")
            ),
        ));
    }
    let where_ = match &j.out {
        TrialOut::File(f) => f.display().to_string(),
        TrialOut::Folder(d) => d.display().to_string(),
    };
    let json = json!({"command": "sweep-trial", "trials": indices, "out": where_, "warnings": flags(&warnings)});
    let mut text = format!(
        "{} trial{} done ({}); wrote {}\n",
        indices.len(),
        if indices.len() == 1 { "" } else { "s" },
        index_list(&indices),
        where_
    );
    labelled(&mut text, "warning", &warnings);
    Ok(Outcome {
        json,
        text: text.trim_end().to_string(),
    })
}

/// Every trial file named directly or found in a named folder.
fn trial_files(results: &[std::path::PathBuf]) -> Result<Vec<std::path::PathBuf>> {
    let mut files = Vec::new();
    for r in results {
        if r.is_dir() {
            files.extend(sweep_files::json_files(r)?);
        } else {
            files.push(r.clone());
        }
    }
    Ok(files)
}

fn sweep_merge(j: MergeJob) -> Result<Outcome> {
    let file: PlanFile = sweep_files::read_plan(&j.plan)?;
    let files = trial_files(&j.results)?;
    let (table, _, _) = sweep_files::merge_trial_files(&file, &files)?;
    if let Some(next) = file.plan.next_round(&table) {
        let Some(path) = &j.next_plan else {
            let r = next.round.as_ref().expect("a next round has one");
            return Err(Error::option(
                "next_plan",
                "missing",
                format!(
                    "this plan is round {} of {} of successive halving; give the path for round {}'s plan",
                    r.index,
                    r.total,
                    r.index + 1
                ),
            ));
        };
        if j.out.is_some() {
            return Err(Error::option(
                "out",
                "given",
                "the best configuration is known only after the last round of successive halving; refit when merging that round",
            ));
        }
        sweep_files::write_plan(&next, &file.table, path)?;
        let mut outcome = plan_outcome(&next, path, std::path::Path::new("DATA"));
        let mut text = String::new();
        table_text(&table, &mut text);
        outcome.text = format!(
            "round {} merged:\n{text}{}",
            next.round.as_ref().map_or(0, |r| r.index),
            outcome.text
        );
        outcome.json["merged"] = table_json(&table);
        return Ok(outcome);
    }
    if j.next_plan.is_some() {
        return Err(Error::option(
            "next_plan",
            "given",
            "this plan is the last (or only) round; there is no next plan to write",
        ));
    }
    let rounds = file
        .plan
        .round
        .as_ref()
        .map(|r| r.history.clone())
        .unwrap_or_default();
    let data = match &j.data {
        Some(path) => {
            let data = file.table.read(path)?;
            if data.fingerprint() != file.plan.table_fingerprint {
                return Err(Error::input(
                    path.display().to_string(),
                    "is not the table the plan was made from (its fingerprint differs)",
                ));
            }
            Some(data)
        }
        None => None,
    };
    let mut best_warnings = Vec::new();
    // The best is refitted whenever the table is given, as a local sweep
    // does, so the merged report carries the refit's warnings too.
    if let Some(data) = &data {
        let mut best = file.plan.refit_best(data, &table)?;
        let how = best
            .model()
            .provenance()
            .selected_by
            .clone()
            .unwrap_or_default();
        best.set_selected_by(format!(
            "{how}; plan {} (SHA-256 {})",
            j.plan.display(),
            file.checksum
        ));
        if let Some(out) = &j.out {
            best.model().save(out)?;
        }
        best_warnings = best.warnings().to_vec();
    }
    let read = data.as_ref().zip(j.data.as_deref());
    Ok(sweep_outcome(
        &table,
        &rounds,
        j.out.as_deref(),
        read,
        &best_warnings,
    ))
}

fn sweep_status(j: StatusJob) -> Result<Outcome> {
    let file = sweep_files::read_plan(&j.plan)?;
    let files = sweep_files::json_files(&j.dir)?;
    let status = sweep_files::trial_status(&file, &files);
    let rerun = status.to_rerun();
    let tasks: Option<Vec<usize>> = j.tasks.map(|n| {
        let mut t: Vec<usize> = rerun.iter().map(|&i| i % n).collect();
        t.sort_unstable();
        t.dedup();
        t
    });
    let trials = file.plan.trials().len();
    let json = json!({
        "command": "sweep-status",
        "plan": j.plan,
        "trials": trials,
        "done": status.done.len(),
        "missing": status.missing,
        "failed": status.failed.iter().map(|(t, why)| json!({"trial": t, "reason": why})).collect::<Vec<_>>(),
        "stale": status.stale,
        "unreadable": status.unreadable.iter().map(|(p, why)| json!({"file": p, "reason": why})).collect::<Vec<_>>(),
        "rerun_trials": index_list(&rerun),
        "rerun_tasks": tasks.as_ref().map(|t| index_list(t)),
    });
    let mut text = format!(
        "{} of {trials} trials done, {} missing, {} failed",
        status.done.len(),
        status.missing.len(),
        status.failed.len()
    );
    if !status.stale.is_empty() {
        let _ = write!(
            text,
            ", {} stale file{} (made for another plan: {})",
            status.stale.len(),
            if status.stale.len() == 1 { "" } else { "s" },
            status
                .stale
                .iter()
                .map(|p| p.display().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    text.push('\n');
    for (t, why) in &status.failed {
        let _ = writeln!(text, "  trial {t} failed: {why}");
    }
    for (p, why) in &status.unreadable {
        let _ = writeln!(text, "  {} is not a trial result: {why}", p.display());
    }
    if rerun.is_empty() {
        let _ = write!(
            text,
            "every trial is done; merge with: stratanet sweep-merge {} {}",
            j.plan.display(),
            j.dir.display()
        );
    } else {
        match &tasks {
            Some(t) => {
                let _ = write!(
                    text,
                    "resubmit array tasks: --array={} (each reruns its trials with --tasks {})",
                    index_list(t),
                    j.tasks.unwrap_or(1)
                );
            }
            None => {
                let _ = write!(
                    text,
                    "run again: --trials {} (or as array tasks: --array={})",
                    index_list(&rerun),
                    index_list(&rerun)
                );
            }
        }
    }
    Ok(Outcome { json, text })
}

/// Every configuration's fold warnings, named.
fn sweep_warnings(table: &crate::validate::SweepTable) -> Vec<Message> {
    let mut rows: Vec<&crate::validate::SweepRow> = table.rows.iter().collect();
    rows.sort_by_key(|r| r.index);
    rows.iter()
        .flat_map(|r| {
            r.cross_validation
                .warnings()
                .into_iter()
                .map(move |w| w.prefixed(&format!("configuration \"{}\", ", r.name)))
        })
        .collect()
}

fn demo(j: DemoJob, progress: &Progress) -> Result<Outcome> {
    super::demo::demo(&j.out, j.seed, progress)
}
