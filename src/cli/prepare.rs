//! Step 1 of every command: arguments as typed become a complete, checked
//! [`Job`] before any work starts (see the module docs of `cli`).

use super::args::{
    CheckArgs, Cli, Command, CvArgs, DemoArgs, FitArgs, FoldArgs, NetArgs, PredictArgs, SweepArgs,
    SweepMergeArgs, SweepTrialArgs, TableArgs,
};
use super::charts;
use super::paths::Outputs;
use crate::data::CsvOptions;
use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::model_file::{FeatureOptions, TargetColumn};
use crate::train::EarlyStopping;
use crate::validate::{CvOptions, Grid, Metric};
use std::path::PathBuf;

/// A command, checked and ready to run.
pub(crate) enum Job {
    Fit(FitJob),
    Check(CheckJob),
    Predict(PredictJob),
    Cv(CvJob),
    Sweep(SweepJob),
    WritePlan(SweepJob, PathBuf),
    SweepTrial(TrialJob),
    SweepMerge(MergeJob),
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

pub(crate) struct CvJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub options: FitOptions,
    pub cv: CvOptions,
    pub seed: u64,
    pub charts: Option<PathBuf>,
    pub report: Option<PathBuf>,
}

pub(crate) struct SweepJob {
    pub data: PathBuf,
    pub table: CsvOptions,
    pub base: FitOptions,
    pub grid: Grid,
    pub cv: CvOptions,
    /// `None`: accuracy for classes, root mean squared error for numbers.
    pub metric: Option<Metric>,
    pub seed: u64,
    pub out: Option<PathBuf>,
    pub report: Option<PathBuf>,
}

pub(crate) struct TrialJob {
    pub plan: PathBuf,
    pub data: PathBuf,
    pub trial: usize,
    pub out: PathBuf,
    pub history: bool,
}

pub(crate) struct MergeJob {
    pub plan: PathBuf,
    pub results: Vec<PathBuf>,
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
        Command::Cv(a) => Job::Cv(cv(a)?),
        Command::Sweep(a) => sweep(a)?,
        Command::SweepTrial(a) => Job::SweepTrial(sweep_trial(a)?),
        Command::SweepMerge(a) => Job::SweepMerge(sweep_merge(a)?),
        Command::Demo(a) => Job::Demo(demo(a)?),
    })
}

fn table(t: TableArgs) -> CsvOptions {
    let mut o = CsvOptions::new(&t.target);
    o.drop = t.drop;
    o.categorical = t.categorical;
    if !t.features.is_empty() {
        o.features = Some(t.features);
    }
    o.missing = t.missing;
    o
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
    outputs.check(&[&a.data])?;
    Ok(FitJob {
        data: a.data,
        table: table(a.table),
        options,
        seed: a.net.seed,
        out: a.out,
        charts: a.charts,
        report: a.report,
    })
}

fn check(a: CheckArgs) -> Result<CheckJob> {
    Ok(CheckJob {
        rows: FeatureOptions::default()
            .ignore_extra(a.ignore_extra)
            .missing(a.missing)
            .target(TargetColumn::Require),
        model: a.model,
        data: a.data,
    })
}

fn predict(a: PredictArgs) -> Result<PredictJob> {
    Outputs::default()
        .file("out", &a.out)
        .check(&[&a.data, &a.model])?;
    Ok(PredictJob {
        rows: FeatureOptions::default()
            .ignore_extra(a.ignore_extra)
            .missing(a.missing),
        model: a.model,
        data: a.data,
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
    outputs.check(&[&a.data])?;
    Ok(CvJob {
        data: a.data,
        table: table(a.table),
        options,
        cv,
        seed: a.net.seed,
        charts: a.charts,
        report: a.report,
    })
}

fn grid(a: &SweepArgs) -> Result<Grid> {
    let mut g = Grid::default();
    if let Some(l) = &a.grid_hidden {
        g.hidden_layers = l.0.clone();
    }
    g.activations = a.grid_activation.clone();
    g.learning_rates = a.grid_learning_rate.clone();
    g.batch_sizes = a.grid_batch_size.clone();
    g.weight_decays = a.grid_weight_decay.clone();
    Ok(g)
}

fn sweep(a: SweepArgs) -> Result<Job> {
    let base = fit_options(&a.net)?;
    let grid = grid(&a)?;
    for (name, o) in grid.configurations(&base)? {
        o.validate()
            .map_err(|e| e.context(format!("sweep configuration \"{name}\"")))?;
    }
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
        table: table(a.table),
        base,
        grid,
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

fn sweep_trial(a: SweepTrialArgs) -> Result<TrialJob> {
    Outputs::default()
        .file("out", &a.out)
        .check(&[&a.plan, &a.data])?;
    Ok(TrialJob {
        plan: a.plan,
        data: a.data,
        trial: a.trial,
        out: a.out,
        history: a.history,
    })
}

fn sweep_merge(a: SweepMergeArgs) -> Result<MergeJob> {
    Ok(MergeJob {
        plan: a.plan,
        results: a.results,
    })
}

fn demo(a: DemoArgs) -> Result<DemoJob> {
    super::demo::check_folder(&a.out)?;
    Ok(DemoJob {
        out: a.out,
        seed: a.seed,
    })
}
