//! Step 2 of every command: a prepared [`Job`] calls the library (options
//! were validated in step 1, so the library's checked entry points are
//! used) and returns an [`Outcome`].

use super::charts;
use super::output::{cv_json, cv_text, scores_json, scores_text, table_json, table_text, Outcome};
use super::prepare::{
    CheckJob, CvJob, DemoJob, FitJob, Job, MergeJob, PredictJob, SweepJob, TrialJob,
};
use super::progress::Progress;
use crate::atomic::write_text;
use crate::data::{Dataset, Target};
use crate::error::{Error, Result};
use crate::fit::{fit_checked, FitOptions, CAUTION};
use crate::model_file;
use crate::report;
use crate::rng::{child_seed, seeded_rng};
use crate::validate::sweep_files::{self, TrialResult};
use crate::validate::{cv, sweep as sweeps, Metric, Scores, SweepPlan};
use serde_json::json;
use std::borrow::Cow;
use std::fmt::Write as _;

/// Runs a prepared job.
///
/// # Errors
/// Any library error, naming the file, line, column or option.
pub(crate) fn run(job: Job, progress: &Progress) -> Result<Outcome> {
    match job {
        Job::Fit(j) => fit(j, progress),
        Job::Check(j) => check(j),
        Job::Predict(j) => predict(j),
        Job::Cv(j) => cross_validate(j, progress),
        Job::Sweep(j) => sweep(j, progress),
        Job::WritePlan(j, path) => write_plan(j, &path),
        Job::SweepTrial(j) => sweep_trial(j),
        Job::SweepMerge(j) => sweep_merge(j),
        Job::Demo(j) => demo(j, progress),
    }
}

/// The options with the command's progress printer listening.
fn observed(options: &FitOptions, progress: &Progress) -> FitOptions {
    let mut o = options.clone();
    o.training.observer = progress.observer();
    o
}

fn fit(j: FitJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let options = observed(&j.options, progress);
    // As `fit` with the generator seeded from `--seed`.
    let seed = child_seed(&mut seeded_rng(j.seed));
    let fitted = fit_checked(Cow::Borrowed(&data), &options, seed, None)?;
    fitted.model().save(&j.out)?;
    let mut written = Vec::new();
    if let Some(dir) = &j.charts {
        written = charts::fit_charts(&data, &fitted, dir)?;
    }
    if let Some(path) = &j.report {
        let html = report::fit_report(&data, &fitted, footer(j.seed))?;
        write_text(path, &html)?;
    }
    let r = fitted.report();
    let model = fitted.model();
    let last = r.history.last();
    let json = json!({
        "command": "fit",
        "model": j.out,
        "rows": data.n_rows(),
        "dropped_rows": data.dropped_rows(),
        "features": data.feature_names(),
        "target": data.target_name(),
        "classes": data.class_names(),
        "sizes": model.network().sizes(),
        "parameters": model.network().n_parameters(),
        "epochs_run": r.epochs_run,
        "best_epoch": r.best_epoch,
        "stopped_early": r.stopped_early,
        "best_validation_loss": r.best_validation_loss,
        "final_training_loss": r.final_training_loss,
        "validation_accuracy": last.and_then(|e| e.validation_accuracy),
        "seed": j.seed,
        "table_fingerprint": model.provenance().table_fingerprint,
        "charts": written,
        "report": j.report,
    });
    let mut text = String::new();
    let _ = writeln!(
        text,
        "fitted {:?} on {} rows of {}",
        model.network().sizes(),
        data.n_rows(),
        j.data.display()
    );
    if data.dropped_rows() > 0 {
        let _ = writeln!(
            text,
            "  dropped {} rows with missing cells",
            data.dropped_rows()
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
        r.final_training_loss
    );
    if let Some(v) = r.best_validation_loss {
        let _ = writeln!(text, "  best validation loss {v:.5}");
    }
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
    let data = table.into_dataset(&model)?;
    let (scores, _) = Scores::of(&model, &data)?;
    let mut json = json!({
        "command": "check",
        "model": j.model,
        "data": j.data,
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
        j.data.display(),
        j.model.display()
    );
    scores_text(&scores, &mut text);
    let _ = writeln!(text, "Caution: {CAUTION}");
    Ok(Outcome { json, text })
}

fn predict(j: PredictJob) -> Result<Outcome> {
    let model = crate::fit::Model::load(&j.model)?;
    let table = j.rows.read(&model, &j.data)?;
    let rows = table.n_rows();
    model_file::write_predictions(&model, &table, &j.out)?;
    let json = json!({
        "command": "predict",
        "model": j.model,
        "data": j.data,
        "rows": rows,
        "out": j.out,
        "columns": model_file::prediction_columns(&model),
    });
    let text = format!(
        "wrote predictions for {rows} rows to {}\nCaution: {CAUTION}",
        j.out.display()
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
    let mut text = format!(
        "{}-fold cross-validation ({} repeat{}) on {} rows of {}\n",
        j.cv.folds,
        j.cv.repeats,
        if j.cv.repeats == 1 { "" } else { "s" },
        data.n_rows(),
        j.data.display()
    );
    cv_text(&result, &mut text);
    for c in &written {
        let _ = writeln!(text, "wrote {}", c.display());
    }
    if let Some(path) = &j.report {
        let _ = writeln!(text, "wrote the report {}", path.display());
    }
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
    let configurations = j.grid.configurations(&j.base)?;
    SweepPlan::new_checked(data, configurations, &j.cv, metric, &mut seeded_rng(j.seed))
}

fn sweep(j: SweepJob, progress: &Progress) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let plan = plan_of(&j, &data)?;
    let result = sweeps::sweep_plan_checked(&data, &plan, &progress.observer())?;
    if let Some(out) = &j.out {
        result.best.model().save(out)?;
    }
    if let Some(path) = &j.report {
        let html = report::sweep_report(&data, &result, footer(j.seed))?;
        write_text(path, &html)?;
    }
    let mut json = table_json(&result.table);
    json["command"] = json!("sweep");
    json["best"] = json!(result.table.rows[0].name);
    json["model"] = json!(j.out);
    json["report"] = json!(j.report);
    let mut text = format!(
        "sweep of {} configurations on shared folds, sorted by {}\n",
        result.table.rows.len(),
        plan.metric.name()
    );
    table_text(&result.table, &mut text);
    if let Some(out) = &j.out {
        let _ = writeln!(
            text,
            "refitted the best on all rows and saved it to {}",
            out.display()
        );
    }
    if let Some(path) = &j.report {
        let _ = writeln!(text, "wrote the report {}", path.display());
    }
    Ok(Outcome { json, text })
}

fn write_plan(j: SweepJob, path: &std::path::Path) -> Result<Outcome> {
    let data = j.table.read(&j.data)?;
    let plan = plan_of(&j, &data)?;
    sweep_files::write_plan(&plan, &j.table, path)?;
    let trials = plan.trials().len();
    let json = json!({"command": "sweep", "plan": path, "trials": trials, "configurations": plan.configurations.len()});
    let text = format!(
        "wrote a plan of {trials} trials ({} configurations x {} folds) to {}\nrun each with: stratanet sweep-trial {} {} --trial INDEX --out trial-INDEX.json",
        plan.configurations.len(),
        plan.folds.folds.len(),
        path.display(),
        path.display(),
        j.data.display()
    );
    Ok(Outcome { json, text })
}

fn sweep_trial(j: TrialJob) -> Result<Outcome> {
    let file = sweep_files::read_plan(&j.plan)?;
    let data = file.table.read(&j.data)?;
    let result = file.plan.run_trial(&data, j.trial)?;
    let test = data.select(&result.test_rows);
    sweep_files::write_trial(
        &file.checksum,
        j.trial,
        data.n_rows(),
        data.class_names().unwrap_or(&[]),
        test.target(),
        &result,
        j.history,
        &j.out,
    )?;
    let json = json!({"command": "sweep-trial", "trial": j.trial, "out": j.out});
    Ok(Outcome {
        json,
        text: format!("trial {} done; wrote {}", j.trial, j.out.display()),
    })
}

fn sweep_merge(j: MergeJob) -> Result<Outcome> {
    let file = sweep_files::read_plan(&j.plan)?;
    let plan = &file.plan;
    let trials = plan.trials().len();
    let k = plan.folds.folds.len();
    let mut results: Vec<Option<TrialResult>> = vec![None; trials];
    for path in &j.results {
        let mut r = sweep_files::read_trial(path, &file.checksum, trials)?;
        let fold = r.trial % k;
        if r.result.test_rows != plan.folds.folds[fold].test {
            return Err(Error::input(
                path.display().to_string(),
                format!(
                    "trial {} holds other held-out rows than the plan's fold {}; run the trial again",
                    r.trial,
                    fold + 1
                ),
            ));
        }
        r.result.index = fold;
        let index = r.trial;
        if results[index].is_some() {
            return Err(Error::input(
                path.display().to_string(),
                format!("trial {index} appears twice"),
            ));
        }
        results[index] = Some(r);
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
    let results: Vec<TrialResult> = results.into_iter().map(|r| r.expect("checked")).collect();
    let rows = results[0].rows;
    let classes = results[0].classes.clone();
    let table = plan.merge(
        rows,
        &classes,
        results.into_iter().map(|r| r.result).collect(),
    )?;
    let mut json = table_json(&table);
    json["command"] = json!("sweep-merge");
    let mut text = format!("merged {} trials\n", j.results.len());
    table_text(&table, &mut text);
    Ok(Outcome { json, text })
}

fn demo(j: DemoJob, progress: &Progress) -> Result<Outcome> {
    super::demo::demo(&j.out, j.seed, progress)
}
