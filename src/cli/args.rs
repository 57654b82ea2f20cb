//! Command-line arguments as typed. Every choice parses with the library
//! type's own `FromStr` (so the valid values and the error text are the
//! library's), and every flag whose default depends on the data or on
//! another flag is an `Option` (left out means "the library decides").

use crate::data::{DecimalMark, Delimiter, Missing, Scaling, Task};
use crate::fit::{Calibration, ClassWeights};
use crate::network::{Activation, Arithmetic, Init, Precision};
use crate::train::{BatchSize, Loss, Optimiser, Schedule};
use crate::validate::metrics::Binning;
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
#[allow(clippy::large_enum_variant)] // parsed once per process
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
    /// Summarise a table as it would be read: each column's type and why, missing cells, levels, the task, warnings.
    #[command(after_help = "Example:\n  stratanet inspect demo-data/parts.csv --target verdict")]
    Inspect(InspectArgs),
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
    /// Estimate a tuned procedure honestly: a sweep inside each outer fold (nested cross-validation).
    #[command(
        after_help = "Example:\n  stratanet nested demo-data/parts.csv --target verdict --drop part_id --grid-hidden 4,12 --grid-learning-rate 0.003,0.01 --folds 5 --inner-folds 3"
    )]
    Nested(NestedArgs),
    /// Which input columns the network relies on: the drop in a score when one column is shuffled, on each fold's held-out rows (permutation importance).
    #[command(
        after_help = "Example:\n  stratanet importance demo-data/parts.csv --target verdict --id part_id --folds 5 --shuffles 5"
    )]
    Importance(ImportanceArgs),
    /// Run trials of a sweep plan (for array jobs): one, a list, or task I of N.
    #[command(
        name = "sweep-trial",
        after_help = "Example:\n  stratanet sweep-trial plan.jsonl demo-data/parts.csv --trial 0 --out trial-0.json\n  stratanet sweep-trial plan.jsonl demo-data/parts.csv --task \"$SLURM_ARRAY_TASK_ID\" --tasks 20 --out-dir trials"
    )]
    SweepTrial(SweepTrialArgs),
    /// Merge trial results into the sweep table (the same table and JSON as a local sweep).
    #[command(
        name = "sweep-merge",
        after_help = "Example:\n  stratanet sweep-merge plan.jsonl trials/\n  stratanet sweep-merge plan.jsonl trials/ --data demo-data/parts.csv --out best-model.json"
    )]
    SweepMerge(SweepMergeArgs),
    /// Say which trials of a plan are done, missing, failed or stale, and what to run again.
    #[command(
        name = "sweep-status",
        after_help = "Example:\n  stratanet sweep-status plan.jsonl trials/ --tasks 20"
    )]
    SweepStatus(SweepStatusArgs),
    /// Write a saved model as an ONNX file (opset 13) for other runtimes: input scaling and fill values as operators, probabilities and the class as outputs.
    #[command(
        name = "export-onnx",
        after_help = "Example:\n  stratanet export-onnx parts-model.json --out parts-model.onnx"
    )]
    ExportOnnx(ExportOnnxArgs),
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

/// How cells are read (every command that reads a CSV file).
#[derive(Debug, Args, Clone)]
pub(crate) struct DialectArgs {
    /// Field delimiter: auto, comma, semicolon, tab [auto: detected from the header and the first rows].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Delimiter>)]
    pub delimiter: Option<Delimiter>,
    /// Decimal mark of numbers: point (1.5) or comma (1,5) [point; predict and check: the model's].
    #[arg(long, value_name = "point|comma", value_parser = parsed::<DecimalMark>)]
    pub decimal: Option<DecimalMark>,
    /// Cells that mean "missing" (comma-separated; replaces the default set NA,N/A,NaN,nan,?,null,NULL; an empty cell is always missing).
    #[arg(long, value_name = "LIST", value_delimiter = ',')]
    pub missing_markers: Option<Vec<String>>,
}

/// How to read the table.
#[derive(Debug, Args, Clone)]
pub(crate) struct TableArgs {
    /// The target column.
    #[arg(long, value_name = "COL")]
    pub target: String,
    /// classification, regression, or auto (decided from the target and printed) [auto].
    #[arg(long, value_name = "TASK", value_parser = parsed::<Task>)]
    pub task: Option<Task>,
    /// Columns to leave out (comma-separated).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub drop: Vec<String>,
    /// Use only these feature columns (comma-separated, in this order).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub features: Vec<String>,
    /// Treat these columns as categorical (comma-separated; each must be a feature).
    #[arg(long, value_name = "COLS", value_delimiter = ',')]
    pub categorical: Vec<String>,
    /// An identifier column: carried into predictions, never a feature (repeatable, or comma-separated).
    #[arg(long = "id", value_name = "COL", value_delimiter = ',', action = clap::ArgAction::Append)]
    pub ids: Vec<String>,
    /// What to do with a row that has a missing cell: error, drop, or impute (fill from the training rows) [error].
    #[arg(long, value_name = "error|drop|impute", default_value = "error", value_parser = parsed::<Missing>)]
    pub missing: Missing,
    /// With --missing impute: add a 0/1 column NAME:missing after each column with a missing cell.
    #[arg(long)]
    pub missing_indicators: bool,
    #[command(flatten)]
    pub dialect: DialectArgs,
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
    /// Scaling of a numeric target, undone in predictions: standardise, min-max, none [standardise].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Scaling>)]
    pub target_scaling: Option<Scaling>,
    /// Class weights in the loss: none, balanced (n / (k n_c)), or CLASS=W,CLASS=W [none].
    #[arg(long, value_name = "WEIGHTS", value_parser = parsed::<ClassWeights>)]
    pub class_weights: Option<ClassWeights>,
    /// Calibrate a classifier's probabilities on the validation rows: none or temperature [none].
    #[arg(long, value_name = "none|temperature", value_parser = parsed::<Calibration>)]
    pub calibration: Option<Calibration>,
    /// Two classes: choose the decision threshold on the validation rows so that at least this share of the positive rows is found.
    #[arg(long, value_name = "SHARE", conflicts_with = "target_precision")]
    pub target_recall: Option<f64>,
    /// Two classes: choose the decision threshold on the validation rows so that at least this share of the rows called positive is right.
    #[arg(long, value_name = "SHARE")]
    pub target_precision: Option<f64>,
    /// The class a target recall or precision refers to [the second of the sorted classes, said in a note].
    #[arg(long, value_name = "CLASS")]
    pub positive_class: Option<String>,
    /// Float type: f64 or f32 [f64].
    #[arg(long, value_name = "f64|f32", value_parser = parsed::<Precision>)]
    pub precision: Option<Precision>,
    /// How sums are computed: portable (the same bits on any CPU) or fast [portable].
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

/// Parses `LOW:HIGH` of numbers.
fn float_range(value: &str) -> Result<(f64, f64), String> {
    let (lo, hi) = value
        .split_once(':')
        .ok_or_else(|| "give LOW:HIGH, e.g. 0.0001:0.1".to_string())?;
    let n = |t: &str| {
        t.trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| format!("\"{t}\" is not a number; give LOW:HIGH, e.g. 0.0001:0.1"))
    };
    Ok((n(lo)?, n(hi)?))
}

/// Parses `LOW:HIGH` of whole numbers.
fn whole_range(value: &str) -> Result<(usize, usize), String> {
    let (lo, hi) = value
        .split_once(':')
        .ok_or_else(|| "give LOW:HIGH, e.g. 4:64".to_string())?;
    let n = |t: &str| {
        t.trim()
            .parse::<usize>()
            .map_err(|_| format!("\"{t}\" is not a whole number; give LOW:HIGH, e.g. 4:64"))
    };
    Ok((n(lo)?, n(hi)?))
}

/// Trial indices as typed (`0-99,150`), sorted and distinct.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Indices(pub Vec<usize>);

/// Parses a list of indices: `0-99,150`.
fn index_list(value: &str) -> Result<Indices, String> {
    let mut out = Vec::new();
    for part in value.split(',') {
        let part = part.trim();
        let bad = || format!("\"{part}\" is not an index or a range; give e.g. 0-99,150");
        match part.split_once('-') {
            Some((a, b)) => {
                let (a, b) = (
                    a.trim().parse::<usize>().map_err(|_| bad())?,
                    b.trim().parse::<usize>().map_err(|_| bad())?,
                );
                if b < a || b - a > 10_000_000 {
                    return Err(bad());
                }
                out.extend(a..=b);
            }
            None => out.push(part.parse::<usize>().map_err(|_| bad())?),
        }
    }
    out.sort_unstable();
    out.dedup();
    Ok(Indices(out))
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
    /// A cost matrix CSV (a header of true classes, one line per decision): the model decides by the least expected cost, and predict writes each row's decision and its expected cost.
    #[arg(long, value_name = "PATH", conflicts_with_all = ["target_recall", "target_precision"])]
    pub costs: Option<PathBuf>,
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
    /// What to do with a row that has a missing cell: error, drop, or impute with the model's fill values [impute if the model was fitted so, else error].
    #[arg(long, value_name = "error|drop|impute", value_parser = parsed::<Missing>)]
    pub missing: Option<Missing>,
    #[command(flatten)]
    pub dialect: DialectArgs,
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
    /// What to do with a row that has a missing cell: error, drop, or impute with the model's fill values [impute if the model was fitted so, else error].
    #[arg(long, value_name = "error|drop|impute", value_parser = parsed::<Missing>)]
    pub missing: Option<Missing>,
    #[command(flatten)]
    pub dialect: DialectArgs,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet export-onnx`.
#[derive(Debug, Args)]
pub(crate) struct ExportOnnxArgs {
    /// The saved model.
    pub model: PathBuf,
    /// Where to write the ONNX file.
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet inspect`.
#[derive(Debug, Args)]
pub(crate) struct InspectArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    /// Warn when a class has fewer rows than this many folds.
    #[arg(long, value_name = "K", default_value_t = 5)]
    pub folds: usize,
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
    /// Write every row's out-of-fold prediction (one line per row and repeat, with the table's ID columns) to this CSV file.
    #[arg(long, value_name = "PATH")]
    pub out_of_fold: Option<PathBuf>,
    /// A cost matrix CSV (a header of true classes, one line per decision): report the cost per row of the least-expected-cost decisions on the held-out rows.
    #[arg(long, value_name = "PATH")]
    pub costs: Option<PathBuf>,
    /// How calibration bins the held-out probabilities: count:B (equal rows per bin) or width:B (equal widths) [count:10].
    #[arg(long, value_name = "RULE", value_parser = parsed::<Binning>, default_value = "count:10")]
    pub bins: Binning,
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
    #[command(flatten)]
    pub search: SearchArgs,
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

/// Which trials a `sweep-trial` runs.
#[derive(Debug, Args)]
#[group(required = true, multiple = true)]
pub(crate) struct TrialChoice {
    /// One trial index (0-based).
    #[arg(long, value_name = "INDEX", conflicts_with_all = ["trials", "task"])]
    pub trial: Option<usize>,
    /// A list of trial indices, e.g. 0-99,150.
    #[arg(long, value_name = "LIST", value_parser = index_list, conflicts_with = "task")]
    pub trials: Option<Indices>,
    /// Task I of --tasks N runs trials I, I+N, I+2N, ... (an array job's task index).
    #[arg(long, value_name = "I", requires = "tasks")]
    pub task: Option<usize>,
    /// How many tasks share the plan (keep it fixed when you rerun a task).
    #[arg(long, value_name = "N", requires = "task")]
    pub tasks: Option<usize>,
}

/// What a sweep (or a nested cross-validation's sweeps) tries.
#[derive(Debug, Args)]
pub(crate) struct SearchArgs {
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
    /// Random search: draw this many configurations from the --range-* options instead of a grid.
    #[arg(long, value_name = "N", conflicts_with_all = ["grid_hidden", "grid_activation", "grid_learning_rate", "grid_batch_size", "grid_weight_decay"])]
    pub random: Option<usize>,
    /// Random search: learning rates drawn log-uniformly from LOW:HIGH.
    #[arg(long, value_name = "LOW:HIGH", value_parser = float_range, requires = "random")]
    pub range_learning_rate: Option<(f64, f64)>,
    /// Random search: weight decays drawn log-uniformly from LOW:HIGH.
    #[arg(long, value_name = "LOW:HIGH", value_parser = float_range, requires = "random")]
    pub range_weight_decay: Option<(f64, f64)>,
    /// Random search: L1 penalties drawn log-uniformly from LOW:HIGH.
    #[arg(long, value_name = "LOW:HIGH", value_parser = float_range, requires = "random")]
    pub range_l1_penalty: Option<(f64, f64)>,
    /// Random search: hidden-layer widths drawn log-uniformly from LOW:HIGH (whole numbers).
    #[arg(long, value_name = "LOW:HIGH", value_parser = whole_range, requires = "random")]
    pub range_hidden: Option<(usize, usize)>,
    /// Random search: batch sizes drawn log-uniformly from LOW:HIGH (whole numbers).
    #[arg(long, value_name = "LOW:HIGH", value_parser = whole_range, requires = "random")]
    pub range_batch_size: Option<(usize, usize)>,
    /// Successive halving with this factor: every configuration gets a share of --epochs, the best 1/ETA go on with ETA times as many.
    #[arg(long, value_name = "ETA")]
    pub halving: Option<usize>,
}

/// `stratanet nested`.
#[derive(Debug, Args)]
pub(crate) struct NestedArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    /// Outer folds (and --repeats of them).
    #[command(flatten)]
    pub folds: FoldArgs,
    /// Folds of the sweep inside each outer training set.
    #[arg(long, value_name = "J", default_value_t = 3)]
    pub inner_folds: usize,
    #[command(flatten)]
    pub search: SearchArgs,
    /// The metric the inner sweeps choose by [accuracy for classes, root_mean_squared_error for numbers].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Metric>)]
    pub metric: Option<Metric>,
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
    #[command(flatten)]
    pub choice: TrialChoice,
    /// Where to write the result of the one trial (JSON).
    #[arg(long, value_name = "PATH", conflicts_with = "out_dir")]
    pub out: Option<PathBuf>,
    /// The folder for the results, one file per trial (trial-000007.json).
    #[arg(long, value_name = "DIR")]
    pub out_dir: Option<PathBuf>,
    /// Keep the per-epoch losses in the result files.
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
    /// The trial result files, or folders of them, in any order.
    #[arg(required = true)]
    pub results: Vec<PathBuf>,
    /// The CSV file the plan was made from: read, checked against the plan,
    /// reported as a local sweep reports it (needed by --out).
    #[arg(long, value_name = "PATH")]
    pub data: Option<PathBuf>,
    /// Save the best configuration, refitted on all rows of --data, here.
    #[arg(long, value_name = "PATH", requires = "data")]
    pub out: Option<PathBuf>,
    /// Successive halving: write the next round's plan here.
    #[arg(long, value_name = "PATH")]
    pub next_plan: Option<PathBuf>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet sweep-status`.
#[derive(Debug, Args)]
pub(crate) struct SweepStatusArgs {
    /// The plan.
    pub plan: PathBuf,
    /// The folder of trial results.
    pub dir: PathBuf,
    /// The number of array tasks the trials were spread over (--tasks of sweep-trial), to list tasks to resubmit.
    #[arg(long, value_name = "N")]
    pub tasks: Option<usize>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `stratanet importance`.
#[derive(Debug, Args)]
pub(crate) struct ImportanceArgs {
    /// The CSV file.
    pub data: PathBuf,
    #[command(flatten)]
    pub table: TableArgs,
    #[command(flatten)]
    pub net: NetArgs,
    #[command(flatten)]
    pub folds: FoldArgs,
    /// The score whose drop is measured [accuracy for classes, root_mean_squared_error for numbers].
    #[arg(long, value_name = "NAME", value_parser = parsed::<Metric>)]
    pub metric: Option<Metric>,
    /// Shuffles of each column on each fold's held-out rows.
    #[arg(long, value_name = "N", default_value_t = 5)]
    pub shuffles: usize,
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
            Command::Inspect(a) => &a.output,
            Command::Cv(a) => &a.output,
            Command::Sweep(a) => &a.output,
            Command::Nested(a) => &a.output,
            Command::Importance(a) => &a.output,
            Command::SweepTrial(a) => &a.output,
            Command::SweepMerge(a) => &a.output,
            Command::SweepStatus(a) => &a.output,
            Command::ExportOnnx(a) => &a.output,
            Command::Demo(a) => &a.output,
        }
    }
}
