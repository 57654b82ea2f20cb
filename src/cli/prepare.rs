//! Step 1 of every command: arguments as typed become a complete, checked
//! [`Job`] before any work starts (see the module docs of `cli`).

use super::args::{
    CheckArgs, Cli, Command, CvArgs, DemoArgs, DialectArgs, ExportOnnxArgs, FitArgs, FoldArgs,
    ImportanceArgs, InspectArgs, NestedArgs, NetArgs, PredictArgs, SearchArgs, SweepArgs,
    SweepMergeArgs, SweepStatusArgs, SweepTrialArgs, TableArgs,
};
use super::charts;
use super::paths::Outputs;
use crate::data::CsvOptions;
use crate::error::{Error, Result};
use crate::fit::{CostMatrix, FitOptions};
use crate::model_file::{FeatureOptions, TargetColumn};
use crate::train::EarlyStopping;
use crate::validate::metrics::Binning;
use crate::validate::{Candidates, CvOptions, Grid, Halving, Metric, RandomSearch, Search};
use std::path::PathBuf;

/// A command, checked and ready to run.
pub(crate) enum Job {
    Fit(FitJob),
    Check(CheckJob),
    Predict(PredictJob),
    Inspect(InspectJob),
    Cv(CvJob),
    Sweep(SweepJob),
    WritePlan(SweepJob, PathBuf),
    Nested(NestedJob),
    Importance(ImportanceJob),
    SweepTrial(TrialJob),
    SweepMerge(MergeJob),
    SweepStatus(StatusJob),
    ExportOnnx(ExportOnnxJob),
    Demo(DemoJob),
}

pub(crate) struct FitJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub options: FitOptions,
    pub seed: u64,
    pub out: PathBuf,
    pub charts: Option<PathBuf>,
    pub report: Option<PathBuf>,
    pub costs: Option<CostMatrix>,
}

pub(crate) struct CheckJob {
    pub model: PathBuf,
    pub data: PathBuf,
    pub rows: FeatureOptions,
}

pub(crate) struct PredictJob {
    pub model: PathBuf,
    pub data: PathBuf,
    pub rows: FeatureOptions,
    pub out: PathBuf,
}

pub(crate) struct ExportOnnxJob {
    pub model: PathBuf,
    pub out: PathBuf,
}

pub(crate) struct InspectJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub folds: usize,
}

pub(crate) struct CvJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub options: FitOptions,
    pub cv: CvOptions,
    pub seed: u64,
    pub charts: Option<PathBuf>,
    pub report: Option<PathBuf>,
    pub out_of_fold: Option<PathBuf>,
    pub costs: Option<CostMatrix>,
    pub bins: Binning,
}

pub(crate) struct SweepJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub base: FitOptions,
    pub search: Search,
    pub cv: CvOptions,
    /// `None`: accuracy for classes, root mean squared error for numbers.
    pub metric: Option<Metric>,
    pub seed: u64,
    pub out: Option<PathBuf>,
    pub report: Option<PathBuf>,
}

pub(crate) struct NestedJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub base: FitOptions,
    pub search: Search,
    pub outer: CvOptions,
    pub inner: CvOptions,
    pub metric: Option<Metric>,
    pub seed: u64,
}

/// Which trials a `sweep-trial` runs.
pub(crate) enum Trials {
    /// These indices.
    List(Vec<usize>),
    /// Task `task` of `tasks`: indices task, task + tasks, ...
    Stride { task: usize, tasks: usize },
}

/// Where `sweep-trial` writes.
pub(crate) enum TrialOut {
    /// One trial's file.
    File(PathBuf),
    /// A folder of `trial-NNNNNN.json` files.
    Folder(PathBuf),
}

pub(crate) struct TrialJob {
    pub plan: PathBuf,
    pub data: PathBuf,
    pub trials: Trials,
    pub out: TrialOut,
    pub history: bool,
}

pub(crate) struct MergeJob {
    pub plan: PathBuf,
    pub results: Vec<PathBuf>,
    /// The plan's table: read, checked against the plan's fingerprint and
    /// reported as a local sweep reports it; needed to refit.
    pub data: Option<PathBuf>,
    /// Where to save the best configuration refitted on the whole table.
    pub out: Option<PathBuf>,
    pub next_plan: Option<PathBuf>,
}

pub(crate) struct StatusJob {
    pub plan: PathBuf,
    pub dir: PathBuf,
    pub tasks: Option<usize>,
}

pub(crate) struct ImportanceJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub options: FitOptions,
    pub cv: CvOptions,
    pub importance: crate::validate::importance::ImportanceOptions,
    pub seed: u64,
}

pub(crate) struct DemoJob {
    pub out: PathBuf,
    pub seed: u64,
}

/// Turns parsed arguments into a checked job.
///
/// # Errors
/// The first option that is invalid or has no effect, and any output that
/// would overwrite an input; each names its flag.
pub(crate) fn prepare(cli: Cli) -> Result<Job> {
    Ok(match cli.command {
        Command::Fit(a) => Job::Fit(fit(a)?),
        Command::Check(a) => Job::Check(check(a)?),
        Command::Predict(a) => Job::Predict(predict(a)?),
        Command::Inspect(a) => Job::Inspect(inspect(a)?),
        Command::Cv(a) => Job::Cv(cv(a)?),
        Command::Sweep(a) => sweep(a)?,
        Command::Nested(a) => Job::Nested(nested(a)?),
        Command::Importance(a) => Job::Importance(importance(a)?),
        Command::SweepTrial(a) => Job::SweepTrial(sweep_trial(a)?),
        Command::SweepMerge(a) => Job::SweepMerge(sweep_merge(a)?),
        Command::SweepStatus(a) => Job::SweepStatus(sweep_status(a)?),
        Command::ExportOnnx(a) => Job::ExportOnnx(export_onnx(a)?),
        Command::Demo(a) => Job::Demo(demo(a)?),
    })
}

/// The table options the flags ask for, checked (an option without effect
/// is refused here, before any file is read).
fn table(t: TableArgs) -> Result<CsvOptions> {
    let mut o = CsvOptions::new(&t.target);
    o.drop = t.drop;
    o.categorical = t.categorical;
    o.ids = t.ids;
    if !t.features.is_empty() {
        o.features = Some(t.features);
    }
    o.missing = t.missing;
    o.missing_indicators = t.missing_indicators;
    if let Some(task) = t.task {
        o.task = task;
    }
    if let Some(d) = t.dialect.delimiter {
        o.delimiter = d;
    }
    if let Some(d) = t.dialect.decimal {
        o.decimal = d;
    }
    o.missing_markers = t.dialect.missing_markers;
    o.validate()?;
    Ok(o)
}

/// Rows for a model, read as the flags ask.
fn rows(
    ignore_extra: bool,
    missing: Option<crate::data::Missing>,
    d: DialectArgs,
) -> Result<FeatureOptions> {
    let mut o = FeatureOptions::default().ignore_extra(ignore_extra);
    o.missing = missing;
    if let Some(x) = d.delimiter {
        o.delimiter = x;
    }
    o.decimal = d.decimal;
    o.missing_markers = d.missing_markers;
    o.validate()?;
    Ok(o)
}

fn inspect(a: InspectArgs) -> Result<InspectJob> {
    if a.folds < 2 {
        return Err(Error::option("folds", a.folds, "must be at least 2"));
    }
    Ok(InspectJob {
        data: a.data,
        table: table(a.table)?,
        folds: a.folds,
    })
}

/// The fit options the flags ask for, validated.
fn fit_options(n: &NetArgs) -> Result<FitOptions> {
    let mut o = FitOptions::default();
    if let Some(w) = &n.hidden {
        o.hidden_layers = w.0.clone();
    }
    if let Some(a) = n.activation {
        o.activation = a;
    }
    if let Some(i) = n.init {
        o.init = i;
    }
    if let Some(s) = n.scaling {
        o.scaling = s;
    }
    if let Some(s) = n.target_scaling {
        o.target_scaling = s;
    }
    if let Some(c) = n.calibration {
        o.calibration = c;
    }
    o.threshold_target = match (n.target_recall, n.target_precision) {
        (Some(r), _) => Some(crate::fit::ThresholdTarget::Recall(r)),
        (None, Some(q)) => Some(crate::fit::ThresholdTarget::Precision(q)),
        (None, None) => None,
    };
    o.positive_class = n.positive_class.clone();
    if let Some(w) = &n.class_weights {
        o.class_weights = w.clone();
    }
    if let Some(p) = n.precision {
        o.precision = p;
    }
    o.validation_share = n.validation_share;
    if let Some(r) = n.restarts {
        o.restarts = r;
    }
    let t = &mut o.training;
    if let Some(a) = n.arithmetic {
        t.arithmetic = a;
    }
    if let Some(e) = n.epochs {
        t.epochs = e;
    }
    t.batch_size = n.batch_size;
    if let Some(r) = n.learning_rate {
        t.learning_rate = r;
    }
    if let Some(opt) = n.optimiser {
        t.optimiser = opt;
    }
    if let Some(s) = n.schedule {
        t.schedule = s;
    }
    t.loss = n.loss;
    if let Some(d) = n.weight_decay {
        t.weight_decay = d;
    }
    if let Some(l) = n.l1_penalty {
        t.l1_penalty = l;
    }
    if n.no_early_stopping {
        for (given, option) in [
            (n.patience.is_some(), "patience"),
            (n.min_improvement.is_some(), "min_improvement"),
        ] {
            if given {
                return Err(Error::option(
                    option,
                    "given",
                    format!(
                        "has no effect with {}; leave one of the two out",
                        crate::error::opt("no_early_stopping")
                    ),
                ));
            }
        }
        t.early_stopping = None;
    } else {
        let defaults = EarlyStopping::default();
        t.early_stopping = Some(EarlyStopping {
            patience: n.patience.unwrap_or(defaults.patience),
            min_improvement: n.min_improvement.unwrap_or(defaults.min_improvement),
        });
    }
    o.validate()?;
    Ok(o)
}

fn fold_options(f: &FoldArgs) -> Result<CvOptions> {
    let cv = CvOptions {
        folds: f.folds,
        repeats: f.repeats,
        ..Default::default()
    };
    cv.validate()?;
    Ok(cv)
}

/// A report path: any file name ending in .html or .htm.
fn report_path(outputs: Outputs, report: &Option<PathBuf>) -> Result<Outputs> {
    let Some(path) = report else {
        return Ok(outputs);
    };
    let html = path
        .extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("html") || e.eq_ignore_ascii_case("htm"));
    if !html {
        return Err(Error::option(
            "report",
            path.display(),
            "is a web page; give a file name ending in .html",
        ));
    }
    Ok(outputs.file("report", path))
}

fn fit(a: FitArgs) -> Result<FitJob> {
    let options = fit_options(&a.net)?;
    let mut outputs = report_path(Outputs::default().file("out", &a.out), &a.report)?;
    if let Some(dir) = &a.charts {
        outputs = outputs.folder(
            "charts",
            dir,
            charts::FIT_CHART_FILES
                .iter()
                .map(|s| format!("{s}.svg"))
                .collect(),
        );
    }
    let mut inputs: Vec<&std::path::Path> = vec![&a.data];
    inputs.extend(a.costs.as_deref());
    outputs.check(&inputs)?;
    let costs = a.costs.as_deref().map(CostMatrix::read).transpose()?;
    Ok(FitJob {
        data: a.data,
        table: table(a.table)?,
        options,
        seed: a.net.seed,
        out: a.out,
        charts: a.charts,
        report: a.report,
        costs,
    })
}

fn check(a: CheckArgs) -> Result<CheckJob> {
    Ok(CheckJob {
        rows: rows(a.ignore_extra, a.missing, a.dialect)?.target(TargetColumn::Require),
        model: a.model,
        data: a.data,
    })
}

fn predict(a: PredictArgs) -> Result<PredictJob> {
    Outputs::default()
        .file("out", &a.out)
        .check(&[&a.data, &a.model])?;
    Ok(PredictJob {
        rows: rows(a.ignore_extra, a.missing, a.dialect)?,
        model: a.model,
        data: a.data,
        out: a.out,
    })
}

fn export_onnx(a: ExportOnnxArgs) -> Result<ExportOnnxJob> {
    Outputs::default().file("out", &a.out).check(&[&a.model])?;
    Ok(ExportOnnxJob {
        model: a.model,
        out: a.out,
    })
}

fn cv(a: CvArgs) -> Result<CvJob> {
    let options = fit_options(&a.net)?;
    let cv = fold_options(&a.folds)?;
    let mut outputs = report_path(Outputs::default(), &a.report)?;
    if let Some(dir) = &a.charts {
        outputs = outputs.folder(
            "charts",
            dir,
            charts::CV_CHART_FILES
                .iter()
                .map(|s| format!("{s}.svg"))
                .collect(),
        );
    }
    if let Some(path) = &a.out_of_fold {
        outputs = outputs.file("out_of_fold", path);
    }
    let mut inputs: Vec<&std::path::Path> = vec![&a.data];
    inputs.extend(a.costs.as_deref());
    outputs.check(&inputs)?;
    let costs = a.costs.as_deref().map(CostMatrix::read).transpose()?;
    Ok(CvJob {
        data: a.data,
        table: table(a.table)?,
        options,
        cv,
        seed: a.net.seed,
        charts: a.charts,
        report: a.report,
        out_of_fold: a.out_of_fold,
        costs,
        bins: a.bins,
    })
}

fn importance(a: ImportanceArgs) -> Result<ImportanceJob> {
    let importance = crate::validate::importance::ImportanceOptions {
        metric: a.metric,
        shuffles: a.shuffles,
    };
    importance.validate()?;
    Ok(ImportanceJob {
        options: fit_options(&a.net)?,
        cv: fold_options(&a.folds)?,
        table: table(a.table)?,
        data: a.data,
        importance,
        seed: a.net.seed,
    })
}

fn search(a: &SearchArgs) -> Result<Search> {
    let candidates = match a.random {
        Some(n) => Candidates::Random(RandomSearch {
            configurations: n,
            learning_rate: a.range_learning_rate,
            weight_decay: a.range_weight_decay,
            l1_penalty: a.range_l1_penalty,
            hidden_width: a.range_hidden,
            batch_size: a.range_batch_size,
        }),
        None => {
            let mut g = Grid::default();
            if let Some(l) = &a.grid_hidden {
                g.hidden_layers = l.0.clone();
            }
            g.activations = a.grid_activation.clone();
            g.learning_rates = a.grid_learning_rate.clone();
            g.batch_sizes = a.grid_batch_size.clone();
            g.weight_decays = a.grid_weight_decay.clone();
            Candidates::Grid(g)
        }
    };
    let search = Search {
        candidates,
        halving: a.halving.map(|eta| Halving { eta }),
    };
    search.validate()?;
    Ok(search)
}

fn sweep(a: SweepArgs) -> Result<Job> {
    let base = fit_options(&a.net)?;
    let search = search(&a.search)?;
    check_grid(&search, &base)?;
    let cv = fold_options(&a.folds)?;
    let mut outputs = Outputs::default();
    if let Some(p) = &a.write_plan {
        outputs = outputs.file("write_plan", p);
    }
    if let Some(p) = &a.out {
        outputs = outputs.file("out", p);
    }
    outputs = report_path(outputs, &a.report)?;
    outputs.check(&[&a.data])?;
    let job = SweepJob {
        data: a.data,
        table: table(a.table)?,
        base,
        search,
        cv,
        metric: a.metric,
        seed: a.net.seed,
        out: a.out,
        report: a.report,
    };
    Ok(match a.write_plan {
        Some(p) => Job::WritePlan(job, p),
        None => Job::Sweep(job),
    })
}

/// Every grid configuration's options, validated (named by configuration).
fn check_grid(search: &Search, base: &FitOptions) -> Result<()> {
    if let Candidates::Grid(grid) = &search.candidates {
        for (name, o) in grid.configurations(base)? {
            o.validate()
                .map_err(|e| e.context(format!("sweep configuration \"{name}\"")))?;
        }
    }
    Ok(())
}

fn nested(a: NestedArgs) -> Result<NestedJob> {
    let base = fit_options(&a.net)?;
    let search = search(&a.search)?;
    check_grid(&search, &base)?;
    let outer = fold_options(&a.folds)?;
    let inner = CvOptions {
        folds: a.inner_folds,
        ..Default::default()
    };
    inner.validate().map_err(|e| match e.kind() {
        crate::error::ErrorKind::InvalidOption { value, reason, .. } => {
            Error::option("inner_folds", value, reason.clone())
        }
        _ => e,
    })?;
    Ok(NestedJob {
        data: a.data,
        table: table(a.table)?,
        base,
        search,
        outer,
        inner,
        metric: a.metric,
        seed: a.net.seed,
    })
}

fn sweep_trial(a: SweepTrialArgs) -> Result<TrialJob> {
    let c = a.choice;
    let trials = match (c.trial, c.trials, c.task, c.tasks) {
        (Some(t), _, _, _) => Trials::List(vec![t]),
        (None, Some(list), _, _) => Trials::List(list.0),
        (None, None, Some(task), Some(tasks)) => {
            if tasks == 0 || task >= tasks {
                return Err(Error::option(
                    "task",
                    task,
                    format!(
                        "must be below {} ({}), counting from 0",
                        crate::error::opt("tasks"),
                        tasks
                    ),
                ));
            }
            Trials::Stride { task, tasks }
        }
        _ => unreachable!("clap requires one of --trial, --trials, --task with --tasks"),
    };
    let single = matches!(&trials, Trials::List(l) if l.len() == 1);
    let out = match (a.out, a.out_dir) {
        (Some(file), None) if single => TrialOut::File(file),
        (Some(_), None) => {
            return Err(Error::option(
                "out",
                "one file",
                format!(
                    "holds one trial, but several are asked for; give {} for one file per trial",
                    crate::error::opt("out_dir")
                ),
            ))
        }
        (None, Some(dir)) => TrialOut::Folder(dir),
        _ => {
            return Err(Error::option(
                "out_dir",
                "missing",
                format!(
                    "say where the results go: {} for a folder (or {} for a single trial)",
                    crate::error::opt("out_dir"),
                    crate::error::opt("out")
                ),
            ))
        }
    };
    match &out {
        TrialOut::File(f) => Outputs::default().file("out", f),
        TrialOut::Folder(d) => Outputs::default().folder("out_dir", d, Vec::new()),
    }
    .check(&[&a.plan, &a.data])?;
    Ok(TrialJob {
        plan: a.plan,
        data: a.data,
        trials,
        out,
        history: a.history,
    })
}

fn sweep_merge(a: SweepMergeArgs) -> Result<MergeJob> {
    let mut inputs: Vec<&std::path::Path> = vec![&a.plan];
    inputs.extend(a.results.iter().map(PathBuf::as_path));
    if let Some(d) = &a.data {
        inputs.push(d);
    }
    let mut outputs = Outputs::default();
    if let Some(p) = &a.out {
        outputs = outputs.file("out", p);
    }
    if let Some(p) = &a.next_plan {
        outputs = outputs.file("next_plan", p);
    }
    outputs.check(&inputs)?;
    Ok(MergeJob {
        plan: a.plan,
        results: a.results,
        data: a.data,
        out: a.out,
        next_plan: a.next_plan,
    })
}

fn sweep_status(a: SweepStatusArgs) -> Result<StatusJob> {
    if a.tasks == Some(0) {
        return Err(Error::option("tasks", 0, "must be at least 1"));
    }
    Ok(StatusJob {
        plan: a.plan,
        dir: a.dir,
        tasks: a.tasks,
    })
}

fn demo(a: DemoArgs) -> Result<DemoJob> {
    super::demo::check_folder(&a.out)?;
    Ok(DemoJob {
        out: a.out,
        seed: a.seed,
    })
}

#[cfg(test)]
#[path = "options_table_tests.rs"]
mod options_table_tests;
