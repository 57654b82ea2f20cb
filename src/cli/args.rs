//! Command-line arguments "as typed", and their conversion into library
//! options "as validated" (every refusal names the flag).

use crate::data::{CsvOptions, Missing, Scaling};
use crate::error::{Error, Result};
use crate::fit::FitOptions;
use crate::network::{Activation, Init, Precision};
use crate::train::{EarlyStopping, Optimiser, Schedule};
use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;

/// stratanet: fit, validate and chart small neural networks on tabular data.
#[derive(Debug, Parser)]
#[command(name = "stratanet", version, about, long_about = None, disable_help_subcommand = true)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Train a network on a CSV file and save the model.
    #[command(
        after_help = "Example:\n  stratanet fit demo-data/parts.csv --target verdict --drop part_id --out parts-model.json"
    )]
    Fit(FitArgs),
    /// Score a saved model on labelled rows.
    #[command(after_help = "Example:\n  stratanet check parts-model.json demo-data/parts.csv")]
    Check(CheckArgs),
    /// Write predictions and class probabilities for new rows to CSV.
    #[command(
        after_help = "Example:\n  stratanet predict parts-model.json new-parts.csv --out predictions.csv"
    )]
    Predict(PredictArgs),
    /// Cross-validate a configuration (stratified k-fold).
    #[command(
        after_help = "Example:\n  stratanet cv demo-data/parts.csv --target verdict --drop part_id --folds 5 --hidden 12"
    )]
    Cv(CvArgs),
    /// Cross-validate a grid of configurations on shared folds.
    #[command(
        after_help = "Example:\n  stratanet sweep demo-data/parts.csv --target verdict --drop part_id --grid-hidden 4,8,8-8 --grid-learning-rate 0.01,0.03\n\nRunning trials elsewhere (an array job):\n  stratanet sweep ... --write-plan plan.json      # one JSON line per trial, folds and seeds fixed\n  stratanet sweep-trial plan.json demo-data/parts.csv --trial 7 --out trial-7.json\n  stratanet sweep-merge plan.json trial-*.json"
    )]
    Sweep(SweepArgs),
    /// Run one trial of a sweep plan (for array jobs).
    #[command(
        name = "sweep-trial",
        after_help = "Example:\n  stratanet sweep-trial plan.json demo-data/parts.csv --trial 0 --out trial-0.json"
    )]
    SweepTrial(SweepTrialArgs),
    /// Merge trial results into the sweep table.
    #[command(
        name = "sweep-merge",
        after_help = "Example:\n  stratanet sweep-merge plan.json trial-*.json"
    )]
    SweepMerge(SweepMergeArgs),
    /// The whole job on the embedded demo data: fit, cross-validate, compare, chart.
    #[command(after_help = "Example:\n  stratanet demo --out stratanet-demo")]
    Demo(DemoArgs),
}

/// Output and progress flags every subcommand takes.
#[derive(Debug, Args, Clone)]
pub struct OutputArgs {
    /// Print exactly one JSON object on stdout instead of a summary.
    #[arg(long)]
    pub json: bool,
    /// No progress lines on stderr.
    #[arg(long)]
    pub quiet: bool,
    /// Progress lines on stderr even when stderr is not a terminal.
    #[arg(long)]
    pub progress: bool,
}

/// How to read the table.
#[derive(Debug, Args, Clone)]
pub struct TableArgs {
    /// The target column.
    #[arg(long, value_name = "COL")]
    pub target: String,
    /// Columns to leave out (comma-separated).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub drop: Vec<String>,
    /// Use only these feature columns (comma-separated, in this order).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub features: Vec<String>,
    /// Treat these columns as categorical (comma-separated).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub categorical: Vec<String>,
    /// What to do with missing cells: error or drop (the row).
    #[arg(long, value_name = "error|drop", default_value = "error")]
    pub missing: String,
}

/// The network and its training.
#[derive(Debug, Args, Clone)]
pub struct NetArgs {
    /// Hidden layer widths, e.g. 16 or 16,8 ("none" for no hidden layer).
    #[arg(long, value_name = "WIDTHS", default_value = "16")]
    pub hidden: String,
    /// Hidden activation: sigmoid, tanh, relu, leaky_relu, identity.
    #[arg(long, default_value = "tanh")]
    pub activation: String,
    /// Initialisation: auto, glorot, he, or small:RANGE.
    #[arg(long, default_value = "auto")]
    pub init: String,
    /// Feature scaling: standardise, min-max, none.
    #[arg(long, default_value = "standardise")]
    pub scaling: String,
    /// Float type: f64 or f32.
    #[arg(long, default_value = "f64")]
    pub precision: String,
    /// Maximum epochs.
    #[arg(long, default_value_t = 500)]
    pub epochs: usize,
    /// Rows per update (1: online; the row count: full batch).
    #[arg(long, default_value_t = 32)]
    pub batch_size: usize,
    /// Learning rate.
    #[arg(long, default_value_t = 0.01)]
    pub learning_rate: f64,
    /// Update rule: sgd, momentum, nesterov, adam.
    #[arg(long, default_value = "adam")]
    pub optimiser: String,
    /// Momentum coefficient for momentum and nesterov.
    #[arg(long, default_value_t = 0.9)]
    pub momentum: f64,
    /// Learning-rate schedule: constant, step:EVERY:FACTOR, exponential:GAMMA, cosine:MIN.
    #[arg(long, default_value = "constant")]
    pub schedule: String,
    /// L2 weight decay on the weights (not biases), once per update.
    #[arg(long, default_value_t = 0.0)]
    pub weight_decay: f64,
    /// L1 penalty on the weights (not biases), once per update.
    #[arg(long, default_value_t = 0.0)]
    pub l1_penalty: f64,
    /// Share of training rows held out for early stopping.
    #[arg(long, default_value_t = 0.2)]
    pub validation_fraction: f64,
    /// Early stopping: epochs without improvement before stopping.
    #[arg(long, default_value_t = 30)]
    pub patience: usize,
    /// Early stopping: the least drop in validation loss that counts.
    #[arg(long, default_value_t = 0.0)]
    pub min_improvement: f64,
    /// Train for all epochs, without early stopping.
    #[arg(long)]
    pub no_early_stopping: bool,
    /// Networks trained from different seeds; the best is kept.
    #[arg(long, default_value_t = 1)]
    pub restarts: usize,
    /// The seed of every random draw.
    #[arg(long, default_value_t = 42)]
    pub seed: u64,
}

/// `stratanet fit`.
#[derive(Debug, Args)]
pub struct FitArgs {
    /// The CSV file to train on.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    /// Where to save the model (JSON).
    #[arg(long, value_name = "PATH", default_value = "model.json")]
    pub out: PathBuf,
    /// Write the charts (SVG) into this folder.
    #[arg(long, value_name = "DIR")]
    pub charts: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The saved model.
    pub model: PathBuf,
    /// Labelled rows (with the model's target column).
    pub data: PathBuf,
    /// Accept and ignore columns the model does not use.
    #[arg(long)]
    pub ignore_extra: bool,
    /// What to do with missing cells: error or drop.
    #[arg(long, value_name = "error|drop", default_value = "error")]
    pub missing: String,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet predict`.
#[derive(Debug, Args)]
pub struct PredictArgs {
    /// The saved model.
    pub model: PathBuf,
    /// Rows to predict.
    pub data: PathBuf,
    /// Where to write the predictions (CSV).
    #[arg(long, value_name = "PATH", default_value = "predictions.csv")]
    pub out: PathBuf,
    /// Accept and ignore columns the model does not use.
    #[arg(long)]
    pub ignore_extra: bool,
    /// What to do with missing cells: error or drop.
    #[arg(long, value_name = "error|drop", default_value = "error")]
    pub missing: String,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet cv`.
#[derive(Debug, Args)]
pub struct CvArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    /// Folds per repeat.
    #[arg(long, value_name = "K", default_value_t = 5)]
    pub folds: usize,
    /// Repeats of the fold plan.
    #[arg(long, default_value_t = 1)]
    pub repeats: usize,
    /// Write the charts (SVG) into this folder.
    #[arg(long, value_name = "DIR")]
    pub charts: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    /// Folds per repeat.
    #[arg(long, value_name = "K", default_value_t = 5)]
    pub folds: usize,
    /// Repeats of the fold plan.
    #[arg(long, default_value_t = 1)]
    pub repeats: usize,
    /// Hidden layouts to try, comma-separated, layers joined by '-' (e.g. 4,8,8-8; "none" for no hidden layer).
    #[arg(long, value_name = "LIST")]
    pub grid_hidden: Option<String>,
    /// Activations to try (comma-separated).
    #[arg(long, value_name = "LIST")]
    pub grid_activation: Option<String>,
    /// Learning rates to try (comma-separated).
    #[arg(long, value_name = "LIST")]
    pub grid_learning_rate: Option<String>,
    /// Batch sizes to try (comma-separated).
    #[arg(long, value_name = "LIST")]
    pub grid_batch_size: Option<String>,
    /// Weight decays to try (comma-separated).
    #[arg(long, value_name = "LIST")]
    pub grid_weight_decay: Option<String>,
    /// The metric that sorts the table.
    #[arg(long, default_value = "accuracy")]
    pub metric: String,
    /// Write the plan (one JSON line per trial after a header line) and stop.
    #[arg(long, value_name = "PATH")]
    pub write_plan: Option<PathBuf>,
    /// Save the best configuration, refitted on all rows, here.
    #[arg(long, value_name = "PATH")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep-trial`.
#[derive(Debug, Args)]
pub struct SweepTrialArgs {
    /// The plan written by `sweep --write-plan`.
    pub plan: PathBuf,
    /// The same CSV file the plan was made from.
    pub data: PathBuf,
    /// The trial index (0-based; an array job's task index).
    #[arg(long)]
    pub trial: usize,
    /// Where to write the trial's result (JSON).
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep-merge`.
#[derive(Debug, Args)]
pub struct SweepMergeArgs {
    /// The plan.
    pub plan: PathBuf,
    /// The trial result files, in any order.
    #[arg(required = true)]
    pub results: Vec<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// The folder for the model, charts and summary page.
    #[arg(long, value_name = "DIR", default_value = "stratanet-demo")]
    pub out: PathBuf,
    /// The seed of every random draw.
    #[arg(long, default_value_t = 42)]
    pub seed: u64,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Parses `error|drop`.
pub fn missing(value: &str) -> Result<Missing> {
    match value {
        "error" => Ok(Missing::Error),
        "drop" => Ok(Missing::Drop),
        other => Err(Error::option("--missing", other, "must be error or drop")),
    }
}

impl TableArgs {
    /// The CSV options these flags ask for.
    ///
    /// # Errors
    /// A bad `--missing` value.
    pub fn csv_options(&self) -> Result<CsvOptions> {
        let mut o = CsvOptions::new(&self.target);
        o.drop = self.drop.clone();
        o.categorical = self.categorical.clone();
        if !self.features.is_empty() {
            o.features = Some(self.features.clone());
        }
        o.missing = missing(&self.missing)?;
        Ok(o)
    }
}

/// Parses hidden widths: `16`, `16,8` (or `16-8`), `none`.
pub fn hidden_widths(flag: &str, value: &str) -> Result<Vec<usize>> {
    let v = value.trim();
    if v.is_empty() || v == "none" {
        return Ok(Vec::new());
    }
    v.split([',', '-'])
        .map(|w| {
            w.trim().parse::<usize>().ok().filter(|&n| n > 0).ok_or_else(|| {
                Error::option(flag, value, format!("\"{w}\" is not a layer width; give positive whole numbers such as 16 or 16,8, or none"))
            })
        })
        .collect()
}

pub(crate) fn activation(flag: &str, value: &str) -> Result<Activation> {
    Activation::from_name(value).ok_or_else(|| {
        Error::option(
            flag,
            value,
            "must be one of sigmoid, tanh, relu, leaky_relu, identity",
        )
    })
}

fn number(flag: &str, text: &str) -> Result<f64> {
    text.trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| Error::option(flag, text, "is not a number"))
}

impl NetArgs {
    /// The fit options these flags ask for (checked by the library when used).
    ///
    /// # Errors
    /// A flag value that does not parse, naming the flag.
    pub fn fit_options(&self) -> Result<FitOptions> {
        let mut o = FitOptions {
            hidden_layers: hidden_widths("--hidden", &self.hidden)?,
            activation: activation("--activation", &self.activation)?,
            ..Default::default()
        };
        o.init = match self.init.as_str() {
            "auto" => Init::Auto,
            "glorot" => Init::GlorotUniform,
            "he" => Init::HeUniform,
            s => match s.strip_prefix("small:") {
                Some(r) => Init::SmallUniform {
                    range: number("--init", r)?,
                },
                None => {
                    return Err(Error::option(
                        "--init",
                        s,
                        "must be auto, glorot, he or small:RANGE (e.g. small:0.5)",
                    ))
                }
            },
        };
        o.scaling = match self.scaling.as_str() {
            "standardise" | "standardize" => Scaling::Standardise,
            "min-max" | "minmax" => Scaling::MinMax,
            "none" => Scaling::None,
            s => {
                return Err(Error::option(
                    "--scaling",
                    s,
                    "must be standardise, min-max or none",
                ))
            }
        };
        o.precision = match self.precision.as_str() {
            "f64" => Precision::F64,
            "f32" => Precision::F32,
            s => return Err(Error::option("--precision", s, "must be f64 or f32")),
        };
        let t = &mut o.training;
        t.epochs = self.epochs;
        t.batch_size = self.batch_size;
        t.learning_rate = self.learning_rate;
        t.optimiser = match self.optimiser.as_str() {
            "sgd" => Optimiser::Sgd,
            "momentum" => Optimiser::Momentum { mu: self.momentum },
            "nesterov" => Optimiser::Nesterov { mu: self.momentum },
            "adam" => Optimiser::ADAM,
            s => {
                return Err(Error::option(
                    "--optimiser",
                    s,
                    "must be sgd, momentum, nesterov or adam",
                ))
            }
        };
        t.schedule = schedule(&self.schedule)?;
        t.weight_decay = self.weight_decay;
        t.l1_penalty = self.l1_penalty;
        t.early_stopping = (!self.no_early_stopping).then_some(EarlyStopping {
            patience: self.patience,
            min_improvement: self.min_improvement,
        });
        o.validation_fraction = if self.no_early_stopping && self.validation_fraction == 0.2 {
            // The default validation share exists for early stopping; without
            // it every row trains unless a share is asked for explicitly.
            0.0
        } else {
            self.validation_fraction
        };
        o.restarts = self.restarts;
        Ok(o)
    }
}

fn schedule(value: &str) -> Result<Schedule> {
    let parts: Vec<&str> = value.split(':').collect();
    let bad = || {
        Error::option(
            "--schedule",
            value,
            "must be constant, step:EVERY:FACTOR, exponential:GAMMA or cosine:MIN (e.g. step:50:0.5)",
        )
    };
    match parts.as_slice() {
        ["constant"] => Ok(Schedule::Constant),
        ["step", every, factor] => Ok(Schedule::Step {
            every: every.parse().map_err(|_| bad())?,
            factor: number("--schedule", factor)?,
        }),
        ["exponential", gamma] => Ok(Schedule::Exponential {
            gamma: number("--schedule", gamma)?,
        }),
        ["cosine", min] => Ok(Schedule::Cosine {
            min_rate: number("--schedule", min)?,
        }),
        _ => Err(bad()),
    }
}

/// Parses a comma-separated list with `item`.
pub(crate) fn list<T>(flag: &str, value: &str, item: impl Fn(&str) -> Result<T>) -> Result<Vec<T>> {
    let items: Vec<T> = value
        .split(',')
        .map(|s| item(s.trim()))
        .collect::<Result<_>>()?;
    if items.is_empty() {
        return Err(Error::option(flag, value, "needs at least one value"));
    }
    Ok(items)
}

pub(crate) fn numbers(flag: &str, value: &str) -> Result<Vec<f64>> {
    list(flag, value, |s| number(flag, s))
}
