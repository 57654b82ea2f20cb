//! Command-line arguments as typed. Every choice parses with the library
//! type's own `FromStr` (so the valid values and the error text are the
//! library's), and every flag whose default depends on the data or on
//! another flag is an `Option` (left out means "the library decides").

use crate::data::{Missing, Scaling};
use crate::network::{Activation, Arithmetic, Init, Precision};
use crate::train::{BatchSize, Loss, Optimiser, Schedule};
use crate::validate::Metric;
use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;

/// stratanet: fit, validate and chart small neural networks on tabular data.
#[derive(Debug, Parser)]
#[command(name = "stratanet", version, about, long_about = None, disable_help_subcommand = true)]
pub(crate) struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub(crate) enum Command {
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
        after_help = "Example:\n  stratanet sweep demo-data/parts.csv --target verdict --drop part_id --grid-hidden 4,8,8-8 --grid-learning-rate 0.01,0.03\n\nRunning trials elsewhere (an array job):\n  stratanet sweep ... --write-plan plan.jsonl     # one JSON line per trial, folds and seeds fixed\n  stratanet sweep-trial plan.jsonl demo-data/parts.csv --trial 7 --out trial-7.json\n  stratanet sweep-merge plan.jsonl trial-*.json"
    )]
    Sweep(SweepArgs),
    /// Run one trial of a sweep plan (for array jobs).
    #[command(
        name = "sweep-trial",
        after_help = "Example:\n  stratanet sweep-trial plan.jsonl demo-data/parts.csv --trial 0 --out trial-0.json"
    )]
    SweepTrial(SweepTrialArgs),
    /// Merge trial results into the sweep table.
    #[command(
        name = "sweep-merge",
        after_help = "Example:\n  stratanet sweep-merge plan.jsonl trial-*.json"
    )]
    SweepMerge(SweepMergeArgs),
    /// The whole job on the embedded demo data: fit, cross-validate, compare, chart.
    #[command(after_help = "Example:\n  stratanet demo --out stratanet-demo")]
    Demo(DemoArgs),
}

/// Output and progress flags every subcommand takes.
#[derive(Debug, Args, Clone)]
pub(crate) struct OutputArgs {
    /// Print exactly one JSON object on stdout instead of a summary.
    #[arg(long)]
    pub json: bool,
    /// No progress lines on stderr.
    #[arg(long, conflicts_with = "progress")]
    pub quiet: bool,
    /// Progress lines on stderr even when stderr is not a terminal.
    #[arg(long)]
    pub progress: bool,
}

/// How to read the table.
#[derive(Debug, Args, Clone)]
pub(crate) struct TableArgs {
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
    /// What to do with a row that has a missing cell: error or drop.
    #[arg(long, value_name = "error|drop", default_value = "error", value_parser = parsed::<Missing>)]
    pub missing: Missing,
}

/// The network and its training. Flags left out take the library's
/// defaults.
#[derive(Debug, Args, Clone)]
pub(crate) struct NetArgs {
    /// Hidden layer widths, e.g. 16 or 16,8 ("none" for no hidden layer) [16].
    #[arg(long, value_name = "WIDTHS", value_parser = widths)]
    pub hidden: Option<Widths>,
    /// Hidden activation: identity, sigmoid, tanh, relu, leaky_relu[:SLOPE] [tanh].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Activation>)]
    pub activation: Option<Activation>,
    /// Initialisation: auto, glorot, he, small:RANGE [auto].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Init>)]
    pub init: Option<Init>,
    /// Feature scaling: standardise, min-max, none [standardise].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Scaling>)]
    pub scaling: Option<Scaling>,
    /// Float type: f64 or f32 [f64].
    #[arg(long, value_name = "f64|f32", value_parser = parsed::<Precision>)]
    pub precision: Option<Precision>,
    /// How sums are computed: fast (this CPU's kernels) or portable [fast].
    #[arg(long, value_name = "fast|portable", value_parser = parsed::<Arithmetic>)]
    pub arithmetic: Option<Arithmetic>,
    /// Most epochs [500].
    #[arg(long, value_name = "N")]
    pub epochs: Option<usize>,
    /// Rows per update, or "full" for every training row [32, or fewer rows].
    #[arg(long, value_name = "N|full", value_parser = parsed::<BatchSize>)]
    pub batch_size: Option<BatchSize>,
    /// Learning rate [0.01].
    #[arg(long, value_name = "RATE")]
    pub learning_rate: Option<f64>,
    /// Update rule: sgd, momentum[:MU], nesterov[:MU], adam[:B1:B2:EPS] [adam].
    #[arg(long, value_name = "RULE", value_parser = parsed::<Optimiser>)]
    pub optimiser: Option<Optimiser>,
    /// Learning-rate schedule: constant, step:EVERY:FACTOR, exponential:GAMMA, cosine:MIN [constant].
    #[arg(long, value_name = "SCHEDULE", value_parser = parsed::<Schedule>)]
    pub schedule: Option<Schedule>,
    /// Loss: squared_error or cross_entropy [cross_entropy for classes, squared_error for numbers].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Loss>)]
    pub loss: Option<Loss>,
    /// L2 weight decay on the weights (not biases), once per update [0].
    #[arg(long, value_name = "LAMBDA")]
    pub weight_decay: Option<f64>,
    /// L1 penalty on the weights (not biases), once per update [0].
    #[arg(long, value_name = "LAMBDA")]
    pub l1_penalty: Option<f64>,
    /// Share of rows held out for early stopping and choosing restarts [0.2 with early stopping, else 0].
    #[arg(long, value_name = "SHARE")]
    pub validation_share: Option<f64>,
    /// Early stopping: epochs without improvement before stopping [30].
    #[arg(long, value_name = "N")]
    pub patience: Option<usize>,
    /// Early stopping: the least drop in validation loss that counts [0].
    #[arg(long, value_name = "DELTA")]
    pub min_improvement: Option<f64>,
    /// Train for every epoch, without early stopping (and, unless a validation share is given, on every row).
    #[arg(long)]
    pub no_early_stopping: bool,
    /// Networks trained from different seeds; the best is kept [1].
    #[arg(long, value_name = "N")]
    pub restarts: Option<usize>,
    /// The seed of every random draw.
    #[arg(long, default_value_t = 42)]
    pub seed: u64,
}

/// Parses a flag's value with the library type's own `FromStr`, keeping
/// only the reason of a refusal (clap names the flag and the value).
fn parsed<T: std::str::FromStr<Err = crate::Error>>(text: &str) -> Result<T, String> {
    text.parse::<T>().map_err(|e| super::errors::reason(&e))
}

/// Hidden-layer widths as typed (`16`, `16,8`, `16-8`, `none`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Widths(pub Vec<usize>);

/// Parses hidden widths: `16`, `16,8` (or `16-8`), `none`.
pub(crate) fn widths(value: &str) -> Result<Widths, String> {
    let v = value.trim();
    if v.is_empty() || v == "none" {
        return Ok(Widths(Vec::new()));
    }
    v.split([',', '-'])
        .map(|w| {
            w.trim().parse::<usize>().ok().filter(|&n| n > 0).ok_or_else(|| {
                format!("\"{w}\" is not a layer width; give positive whole numbers such as 16 or 16,8, or none")
            })
        })
        .collect::<Result<Vec<_>, _>>()
        .map(Widths)
}

/// Parses a grid's list of layouts: `4,8,8-8,none` (layers joined by `-`).
fn layouts(value: &str) -> Result<Layouts, String> {
    value
        .split(',')
        .map(|s| {
            let s = s.trim();
            if s == "none" {
                return Ok(Vec::new());
            }
            s.split('-')
                .map(|w| {
                    w.trim().parse::<usize>().ok().filter(|&n| n > 0).ok_or_else(|| {
                        format!("\"{w}\" is not a layer width; give layouts such as 4,8,8-8 or none")
                    })
                })
                .collect()
        })
        .collect::<Result<Vec<_>, _>>()
        .map(Layouts)
}

/// A grid's hidden layouts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Layouts(pub Vec<Vec<usize>>);

/// `stratanet fit`.
#[derive(Debug, Args)]
pub(crate) struct FitArgs {
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
    /// Write a self-contained HTML page (no network needed) with the table, scores, baselines and every chart, captioned.
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet check`.
#[derive(Debug, Args)]
pub(crate) struct CheckArgs {
    /// The saved model.
    pub model: PathBuf,
    /// Labelled rows (with the model's target column).
    pub data: PathBuf,
    /// Accept and ignore columns the model does not use.
    #[arg(long)]
    pub ignore_extra: bool,
    /// What to do with a row that has a missing cell: error or drop.
    #[arg(long, value_name = "error|drop", default_value = "error", value_parser = parsed::<Missing>)]
    pub missing: Missing,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet predict`.
#[derive(Debug, Args)]
pub(crate) struct PredictArgs {
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
    /// What to do with a row that has a missing cell: error or drop.
    #[arg(long, value_name = "error|drop", default_value = "error", value_parser = parsed::<Missing>)]
    pub missing: Missing,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Fold counts for `cv` and `sweep`.
#[derive(Debug, Args, Clone)]
pub(crate) struct FoldArgs {
    /// Folds per repeat.
    #[arg(long, value_name = "K", default_value_t = 5)]
    pub folds: usize,
    /// Repeats of the fold plan.
    #[arg(long, value_name = "R", default_value_t = 1)]
    pub repeats: usize,
}

/// `stratanet cv`.
#[derive(Debug, Args)]
pub(crate) struct CvArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    #[command(flatten)]
    pub folds: FoldArgs,
    /// Write the charts (SVG) into this folder.
    #[arg(long, value_name = "DIR")]
    pub charts: Option<PathBuf>,
    /// Write a self-contained HTML page (no network needed) with the table, scores, baselines and every chart, captioned.
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep`.
#[derive(Debug, Args)]
pub(crate) struct SweepArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    #[command(flatten)]
    pub folds: FoldArgs,
    /// Hidden layouts to try, comma-separated, layers joined by '-' (e.g. 4,8,8-8; "none" for no hidden layer).
    #[arg(long, value_name = "LIST", value_parser = layouts)]
    pub grid_hidden: Option<Layouts>,
    /// Activations to try (comma-separated).
    #[arg(long, value_name = "LIST", value_delimiter = ',', value_parser = parsed::<Activation>)]
    pub grid_activation: Vec<Activation>,
    /// Learning rates to try (comma-separated).
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    pub grid_learning_rate: Vec<f64>,
    /// Batch sizes to try (comma-separated; "full" for every training row).
    #[arg(long, value_name = "LIST", value_delimiter = ',', value_parser = parsed::<BatchSize>)]
    pub grid_batch_size: Vec<BatchSize>,
    /// Weight decays to try (comma-separated).
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    pub grid_weight_decay: Vec<f64>,
    /// The metric that sorts the table [accuracy for classes, root_mean_squared_error for numbers].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Metric>)]
    pub metric: Option<Metric>,
    /// Write the plan (one JSON line per trial after a header line) and stop.
    #[arg(long, value_name = "PATH", conflicts_with = "out")]
    pub write_plan: Option<PathBuf>,
    /// Save the best configuration, refitted on all rows, here.
    #[arg(long, value_name = "PATH")]
    pub out: Option<PathBuf>,
    /// Write a self-contained HTML page (no network needed) with the table, scores, baselines and every chart, captioned.
    #[arg(long, value_name = "FILE.html", conflicts_with = "write_plan")]
    pub report: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep-trial`.
#[derive(Debug, Args)]
pub(crate) struct SweepTrialArgs {
    /// The plan written by `sweep --write-plan`.
    pub plan: PathBuf,
    /// The same CSV file the plan was made from.
    pub data: PathBuf,
    /// The trial index (0-based; an array job's task index).
    #[arg(long, value_name = "INDEX")]
    pub trial: usize,
    /// Where to write the trial's result (JSON).
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    /// Keep the per-epoch losses in the result file.
    #[arg(long)]
    pub history: bool,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep-merge`.
#[derive(Debug, Args)]
pub(crate) struct SweepMergeArgs {
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
pub(crate) struct DemoArgs {
    /// The folder for the model, charts and summary page.
    #[arg(long, value_name = "DIR", default_value = "stratanet-demo")]
    pub out: PathBuf,
    /// The seed of every random draw.
    #[arg(long, default_value_t = 42)]
    pub seed: u64,
    #[command(flatten)]
    pub output: OutputArgs,
}

impl Command {
    /// The output flags of any subcommand.
    pub fn output(&self) -> &OutputArgs {
        match self {
            Command::Fit(a) => &a.output,
            Command::Check(a) => &a.output,
            Command::Predict(a) => &a.output,
            Command::Cv(a) => &a.output,
            Command::Sweep(a) => &a.output,
            Command::SweepTrial(a) => &a.output,
            Command::SweepMerge(a) => &a.output,
            Command::Demo(a) => &a.output,
        }
    }
}
