//! The subcommands. Each reads, calls the library, and returns an [`Outcome`].

use super::args::{
    self, CheckArgs, CvArgs, DemoArgs, FitArgs, PredictArgs, SweepArgs, SweepMergeArgs,
    SweepTrialArgs,
};
use super::charts;
use super::{progress_wanted, Outcome};
use crate::data::Dataset;
use crate::error::{Error, Result};
use crate::fit::CAUTION;
use crate::fit::{fit as fit_model, FitOptions};
use crate::model_file::{self, FeatureOptions, TargetColumn};
use crate::rng::seeded_rng;
use crate::validate::sweep_files;
use crate::validate::{
    cross_validate, metrics::Metric, sweep as run_sweep, CrossValidation, CvOptions, FoldResult,
    Grid, Scores, SweepPlan, SweepTable,
};
use serde_json::{json, Map, Value};
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

fn read_table(path: &Path, table: &args::TableArgs) -> Result<Dataset> {
    table.csv_options()?.read(path)
}

fn with_progress(mut options: FitOptions, progress: bool) -> FitOptions {
    if progress && options.training.progress_every == 0 {
        options.training.progress_every = 50;
    }
    options
}

fn scores_json(scores: &Scores) -> Value {
    let mut m = Map::new();
    for metric in scores.metrics() {
        if let Ok(v) = scores.value(metric) {
            m.insert(metric.name().to_string(), json!(v));
        }
    }
    Value::Object(m)
}

fn scores_text(scores: &Scores, out: &mut String) {
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
        "  {:<26} {:>8} {:>8}   95% interval (t over {} folds)",
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

pub fn fit(a: FitArgs) -> Result<Outcome> {
    let progress = progress_wanted(&a.output);
    crate::atomic::refuse_overwrite_input(&a.out, &[&a.data])?;
    let data = read_table(&a.data, &a.table)?;
    let options = with_progress(a.net.fit_options()?, progress);
    let fitted = fit_model(&data, &options, &mut seeded_rng(a.net.seed))?;
    model_file::save(&fitted.model, &a.out)?;
    let mut charts = Vec::new();
    if let Some(dir) = &a.charts {
        charts = charts::fit_charts(&data, &fitted, dir)?;
    }
    let r = &fitted.report;
    let last = r.history.last();
    let json = json!({
        "command": "fit",
        "model": a.out,
        "rows": data.n_rows(),
        "dropped_rows": data.dropped_rows,
        "features": data.feature_names,
        "target": data.target_name,
        "classes": data.class_names(),
        "sizes": fitted.model.network.sizes(),
        "parameters": fitted.model.network.n_parameters(),
        "epochs_run": r.epochs_run,
        "best_epoch": r.best_epoch,
        "stopped_early": r.stopped_early,
        "best_validation_loss": r.best_validation_loss,
        "final_training_loss": r.final_training_loss(),
        "validation_accuracy": last.and_then(|e| e.validation_accuracy),
        "seed": a.net.seed,
        "table_fingerprint": fitted.model.provenance.table_fingerprint,
        "charts": charts,
    });
    let mut text = String::new();
    let _ = writeln!(
        text,
        "fitted {:?} on {} rows of {}",
        fitted.model.network.sizes(),
        data.n_rows(),
        a.data.display()
    );
    if data.dropped_rows > 0 {
        let _ = writeln!(
            text,
            "  dropped {} rows with missing cells",
            data.dropped_rows
        );
    }
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
        r.final_training_loss()
    );
    if let Some(v) = r.best_validation_loss {
        let _ = writeln!(text, "  best validation loss {v:.5}");
    }
    let _ = writeln!(text, "saved the model to {}", a.out.display());
    for c in &charts {
        let _ = writeln!(text, "wrote {}", c.display());
    }
    Ok(Outcome { json, text })
}

pub fn check(a: CheckArgs) -> Result<Outcome> {
    let model = model_file::load(&a.model)?;
    let table = FeatureOptions::default()
        .ignore_extra(a.ignore_extra)
        .missing(args::missing(&a.missing)?)
        .target(TargetColumn::Require)
        .read(&model, &a.data)?;
    let data = table.into_dataset(&model)?;
    let (scores, _) = Scores::of(&model, &data)?;
    let mut json = json!({
        "command": "check",
        "model": a.model,
        "data": a.data,
        "rows": data.n_rows(),
        "metrics": scores_json(&scores),
        "notes": scores.notes(),
    });
    if let Scores::Classification(m) = &scores {
        json["confusion"] = json!(m.confusion.counts());
        json["classes"] = json!(m.class_names);
    }
    let mut text = format!(
        "{} rows of {} scored by {}\n",
        data.n_rows(),
        a.data.display(),
        a.model.display()
    );
    scores_text(&scores, &mut text);
    let _ = writeln!(text, "Caution: {}", CAUTION);
    Ok(Outcome { json, text })
}

pub fn predict(a: PredictArgs) -> Result<Outcome> {
    crate::atomic::refuse_overwrite_input(&a.out, &[&a.data, &a.model])?;
    let model = model_file::load(&a.model)?;
    let table = FeatureOptions::default()
        .ignore_extra(a.ignore_extra)
        .missing(args::missing(&a.missing)?)
        .read(&model, &a.data)?;
    let rows = table.n_rows();
    model_file::write_predictions(&model, &table, &a.out)?;
    let json = json!({
        "command": "predict",
        "model": a.model,
        "data": a.data,
        "rows": rows,
        "out": a.out,
        "columns": model_file::prediction_columns(&model),
    });
    let text = format!(
        "wrote predictions for {rows} rows to {}\nCaution: {}",
        a.out.display(),
        CAUTION
    );
    Ok(Outcome { json, text })
}

pub fn cv(a: CvArgs) -> Result<Outcome> {
    let progress = progress_wanted(&a.output);
    let data = read_table(&a.data, &a.table)?;
    let options = a.net.fit_options()?;
    let cvo = cv_options(a.folds, a.repeats, progress);
    let result = cross_validate(&data, &options, &cvo, &mut seeded_rng(a.net.seed))?;
    let mut charts = Vec::new();
    if let Some(dir) = &a.charts {
        charts = charts::cv_charts(&data, &result, dir)?;
    }
    let mut json = cv_json(&result);
    json["command"] = json!("cv");
    json["data"] = json!(a.data);
    json["seed"] = json!(a.net.seed);
    json["charts"] = json!(charts);
    let mut text = format!(
        "{}-fold cross-validation ({} repeat{}) on {} rows of {}\n",
        a.folds,
        a.repeats,
        if a.repeats == 1 { "" } else { "s" },
        data.n_rows(),
        a.data.display()
    );
    cv_text(&result, &mut text);
    for c in &charts {
        let _ = writeln!(text, "wrote {}", c.display());
    }
    Ok(Outcome { json, text })
}

/// The cross-validation options of `cv` and `sweep`.
pub(crate) fn cv_options(folds: usize, repeats: usize, progress: bool) -> CvOptions {
    CvOptions {
        folds,
        repeats,
        progress,
        ..Default::default()
    }
}

pub(crate) fn grid(a: &SweepArgs) -> Result<Grid> {
    let mut g = Grid::default();
    if let Some(v) = &a.grid_hidden {
        g.hidden_layers = args::list("--grid-hidden", v, |s| {
            args::hidden_widths("--grid-hidden", s)
        })?;
    }
    if let Some(v) = &a.grid_activation {
        g.activations = args::list("--grid-activation", v, |s| {
            args::activation("--grid-activation", s)
        })?;
    }
    if let Some(v) = &a.grid_learning_rate {
        g.learning_rates = args::numbers("--grid-learning-rate", v)?;
    }
    if let Some(v) = &a.grid_batch_size {
        g.batch_sizes = args::list("--grid-batch-size", v, |s| {
            s.parse::<usize>()
                .map_err(|_| Error::option("--grid-batch-size", s, "is not a whole number"))
        })?;
    }
    if let Some(v) = &a.grid_weight_decay {
        g.weight_decays = args::numbers("--grid-weight-decay", v)?;
    }
    Ok(g)
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

pub fn sweep(a: SweepArgs) -> Result<Outcome> {
    let progress = progress_wanted(&a.output);
    let data = read_table(&a.data, &a.table)?;
    let base = a.net.fit_options()?;
    let g = grid(&a)?;
    let metric = Metric::from_name(&a.metric)?;
    let cvo = cv_options(a.folds, a.repeats, progress);
    let mut rng = seeded_rng(a.net.seed);
    if let Some(path) = &a.write_plan {
        let plan = SweepPlan::new(&data, &base, &g, &cvo, metric, &mut rng)?;
        sweep_files::write_plan(&plan, &a.table.csv_options()?, path)?;
        let trials = plan.trials().len();
        let json = json!({"command": "sweep", "plan": path, "trials": trials, "configurations": plan.configurations.len()});
        let text = format!(
            "wrote a plan of {trials} trials ({} configurations x {} folds) to {}\nrun each with: stratanet sweep-trial {} {} --trial INDEX --out trial-INDEX.json",
            plan.configurations.len(),
            plan.folds.folds.len(),
            path.display(),
            path.display(),
            a.data.display()
        );
        return Ok(Outcome { json, text });
    }
    let result = run_sweep(&data, &base, &g, &cvo, metric, &mut rng)?;
    if let Some(out) = &a.out {
        crate::atomic::refuse_overwrite_input(out, &[&a.data])?;
        model_file::save(&result.best.model, out)?;
    }
    let mut json = table_json(&result.table);
    json["command"] = json!("sweep");
    json["best"] = json!(result.table.rows[0].name);
    json["model"] = json!(a.out);
    let mut text = format!(
        "sweep of {} configurations on shared folds, sorted by {}\n",
        result.table.rows.len(),
        metric.name()
    );
    table_text(&result.table, &mut text);
    if let Some(out) = &a.out {
        let _ = writeln!(
            text,
            "refitted the best on all rows and saved it to {}",
            out.display()
        );
    }
    Ok(Outcome { json, text })
}

pub fn sweep_trial(a: SweepTrialArgs) -> Result<Outcome> {
    let (plan, table) = sweep_files::read_plan(&a.plan)?;
    crate::atomic::refuse_overwrite_input(&a.out, &[&a.data, &a.plan])?;
    let data = table.read(&a.data)?;
    let result = plan.run_trial(&data, a.trial)?;
    sweep_files::write_trial(
        &plan,
        a.trial,
        data.n_rows(),
        data.class_names().unwrap_or(&[]),
        &result,
        &a.out,
    )?;
    let json = json!({"command": "sweep-trial", "trial": a.trial, "out": a.out});
    Ok(Outcome {
        json,
        text: format!("trial {} done; wrote {}", a.trial, a.out.display()),
    })
}

pub fn sweep_merge(a: SweepMergeArgs) -> Result<Outcome> {
    let (plan, _) = sweep_files::read_plan(&a.plan)?;
    let mut results: Vec<Option<FoldResult>> = vec![None; plan.trials().len()];
    let mut rows = 0;
    let mut classes = Vec::new();
    for path in &a.results {
        let (index, r, n, c) = sweep_files::read_trial(path, &plan)?;
        if results[index].is_some() {
            return Err(Error::input(
                path.display().to_string(),
                format!("trial {index} appears twice"),
            ));
        }
        results[index] = Some(r);
        rows = n;
        classes = c;
    }
    let missing: Vec<String> = results
        .iter()
        .enumerate()
        .filter(|(_, r)| r.is_none())
        .map(|(i, _)| i.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Error::input(
            "merging sweep trials",
            format!("no results for trials {}", missing.join(", ")),
        ));
    }
    let table = plan.merge(
        rows,
        &classes,
        results.into_iter().map(|r| r.expect("checked")).collect(),
    )?;
    let mut json = table_json(&table);
    json["command"] = json!("sweep-merge");
    let mut text = format!("merged {} trials\n", a.results.len());
    table_text(&table, &mut text);
    Ok(Outcome { json, text })
}

pub fn demo(a: DemoArgs) -> Result<Outcome> {
    let progress = progress_wanted(&a.output);
    let out: PathBuf = a.out.clone();
    let summary = super::demo::demo(&out, a.seed, progress)?;
    Ok(summary)
}
