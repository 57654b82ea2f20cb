//! Sweep plans and trial results as files, for running trials elsewhere
//! (an array job on a cluster, say).
//!
//! **Plan files** are JSON lines: a header line holding the whole plan (the
//! configurations, the folds, the seeds, how the table is read), then one
//! line per trial (`{"trial": i, "configuration": c, "fold": f, "name": ...}`)
//! so that an array job can count and inspect trials with line tools.
//!
//! **Trial files** hold one trial's outcome: the held-out rows' truth and
//! predictions (the merge scores them again, so merged scores are exactly a
//! local sweep's), and a summary of training. The per-epoch history is
//! left out unless asked for, and nothing in a trial file depends on the
//! clock, so rerunning a trial writes the same bytes.
//!
//! **Nothing a JSON tool can alter silently.** Every 64-bit seed is written
//! as a decimal string (many JSON tools read numbers as doubles and would
//! round seeds above 2^53), and the header carries a SHA-256 checksum
//! (FIPS 180-4) of the plan's canonical JSON: a plan altered after it was
//! written, a seed rounded or an option changed, is refused by name before
//! any trial runs. A trial file carries the checksum of its plan, so results
//! from another plan are refused when merging.

use super::cv::{FoldBaseline, FoldPlan, FoldResult, Scores};
use super::search::Halving;
use super::sweep::{Round, RoundSummary, SweepPlan};
use super::CvOptions;
use crate::atomic::write_text;
use crate::data::{CsvOptions, DecimalMark, Delimiter, Fold, Missing, Target, Task};
use crate::error::{Error, Result};
use crate::model_file::options_schema::OptionsV2;
use crate::train::{EpochRecord, Loss, TrainingReport};
use ndarray::Array2;
use serde::{Deserialize, Serialize};
use serde_json::json;
use std::path::Path;

const PLAN_FORMAT: &str = "stratanet-sweep-plan";
const TRIAL_FORMAT: &str = "stratanet-sweep-trial";
/// The version of plan and trial files this library writes and reads.
pub const FILE_VERSION: u32 = 2;

/// The first line of a plan file.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct PlanHeader {
    format: String,
    format_version: u32,
    /// SHA-256 (hex) of `plan` written as compact JSON.
    checksum: String,
    plan: PlanBody,
}

/// The plan itself: everything a trial needs.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct PlanBody {
    table: TableV2,
    table_fingerprint: String,
    metric: String,
    folds_per_repeat: usize,
    repeats: usize,
    refit_seed: String,
    configurations: Vec<ConfigurationV2>,
    folds: Vec<FoldV2>,
    /// With successive halving: this plan's round and the rounds before.
    halving: Option<HalvingV2>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct HalvingV2 {
    eta: usize,
    round: usize,
    rounds: usize,
    full_epochs: usize,
    history: Vec<RoundV2>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct RoundV2 {
    round: usize,
    epochs: usize,
    kept: usize,
    results: Vec<ResultV2>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct ResultV2 {
    name: String,
    mean: f64,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct ConfigurationV2 {
    name: String,
    options: OptionsV2,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct FoldV2 {
    seed: String,
    train: Vec<usize>,
    test: Vec<usize>,
}

/// How the table is read (the CSV options), as plan files write it.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct TableV2 {
    target: String,
    features: Option<Vec<String>>,
    drop: Vec<String>,
    categorical: Vec<String>,
    ids: Vec<String>,
    missing: String,
    missing_indicators: bool,
    missing_markers: Option<Vec<String>>,
    task: String,
    class_order: Option<Vec<String>>,
    delimiter: String,
    decimal: String,
}

impl TableV2 {
    fn from_options(o: &CsvOptions) -> TableV2 {
        TableV2 {
            target: o.target.clone(),
            features: o.features.clone(),
            drop: o.drop.clone(),
            categorical: o.categorical.clone(),
            ids: o.ids.clone(),
            missing: o.missing.to_string(),
            missing_indicators: o.missing_indicators,
            missing_markers: o.missing_markers.clone(),
            task: o.task.to_string(),
            class_order: o.class_order.clone(),
            delimiter: o.delimiter.to_string(),
            decimal: o.decimal.to_string(),
        }
    }

    fn into_options(self) -> Result<CsvOptions> {
        let mut o = CsvOptions::new(&self.target);
        o.features = self.features;
        o.drop = self.drop;
        o.categorical = self.categorical;
        o.ids = self.ids;
        o.missing = self.missing.parse::<Missing>()?;
        o.missing_indicators = self.missing_indicators;
        o.missing_markers = self.missing_markers;
        o.task = self.task.parse::<Task>()?;
        o.class_order = self.class_order;
        o.delimiter = self.delimiter.parse::<Delimiter>()?;
        o.decimal = self.decimal.parse::<DecimalMark>()?;
        o.validate()?;
        Ok(o)
    }
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn seed_text(seed: u64) -> String {
    seed.to_string()
}

fn read_seed(text: &str, what: &str) -> std::result::Result<u64, String> {
    text.parse::<u64>().map_err(|_| {
        format!("{what} \"{text}\" is not a whole number from 0 to 18446744073709551615")
    })
}

impl PlanBody {
    fn from_plan(plan: &SweepPlan, table: &CsvOptions) -> PlanBody {
        PlanBody {
            table: TableV2::from_options(table),
            table_fingerprint: plan.table_fingerprint.clone(),
            metric: plan.metric.to_string(),
            folds_per_repeat: plan.cv.folds,
            repeats: plan.cv.repeats,
            refit_seed: seed_text(plan.refit_seed),
            configurations: plan
                .configurations
                .iter()
                .map(|(name, o)| ConfigurationV2 {
                    name: name.clone(),
                    options: OptionsV2::from_options(o),
                })
                .collect(),
            folds: plan
                .folds
                .folds
                .iter()
                .zip(&plan.folds.seeds)
                .map(|(f, &s)| FoldV2 {
                    seed: seed_text(s),
                    train: f.train.clone(),
                    test: f.test.clone(),
                })
                .collect(),
            halving: plan.round.as_ref().map(|r| HalvingV2 {
                eta: r.halving.eta,
                round: r.index,
                rounds: r.total,
                full_epochs: r.full_epochs,
                history: r
                    .history
                    .iter()
                    .map(|h| RoundV2 {
                        round: h.round,
                        epochs: h.epochs,
                        kept: h.kept,
                        results: h
                            .results
                            .iter()
                            .map(|(name, mean)| ResultV2 {
                                name: name.clone(),
                                mean: *mean,
                            })
                            .collect(),
                    })
                    .collect(),
            }),
        }
    }

    fn checksum(&self) -> String {
        sha256_hex(
            serde_json::to_string(self)
                .expect("plans serialise")
                .as_bytes(),
        )
    }

    fn into_plan(self) -> std::result::Result<(SweepPlan, CsvOptions), String> {
        let table = self.table.into_options().map_err(|e| e.to_string())?;
        let mut configurations = Vec::with_capacity(self.configurations.len());
        for c in self.configurations {
            let options = c
                .options
                .into_options()
                .map_err(|e| format!("configuration \"{}\": {e}", c.name))?;
            configurations.push((c.name, options));
        }
        let mut folds = Vec::with_capacity(self.folds.len());
        let mut seeds = Vec::with_capacity(self.folds.len());
        for (i, f) in self.folds.into_iter().enumerate() {
            seeds.push(read_seed(&f.seed, &format!("fold {} seed", i + 1))?);
            folds.push(Fold {
                train: f.train,
                test: f.test,
            });
        }
        let plan = SweepPlan {
            configurations,
            cv: CvOptions {
                folds: self.folds_per_repeat,
                repeats: self.repeats,
                ..Default::default()
            },
            folds: FoldPlan { folds, seeds },
            metric: self.metric.parse().map_err(|e: Error| e.to_string())?,
            refit_seed: read_seed(&self.refit_seed, "refit seed")?,
            table_fingerprint: self.table_fingerprint,
            round: match self.halving {
                None => None,
                Some(h) => {
                    let halving = Halving { eta: h.eta };
                    halving.validate().map_err(|e| e.to_string())?;
                    if h.rounds == 0 || h.round >= h.rounds || h.history.len() != h.round {
                        return Err(format!(
                            "\"halving\": round {} of {} with {} earlier rounds recorded does not add up",
                            h.round,
                            h.rounds,
                            h.history.len()
                        ));
                    }
                    Some(Round {
                        index: h.round,
                        total: h.rounds,
                        halving,
                        full_epochs: h.full_epochs,
                        history: h
                            .history
                            .into_iter()
                            .map(|r| RoundSummary {
                                round: r.round,
                                epochs: r.epochs,
                                kept: r.kept,
                                results: r.results.into_iter().map(|x| (x.name, x.mean)).collect(),
                            })
                            .collect(),
                    })
                }
            },
        };
        Ok((plan, table))
    }
}

/// The checksum a plan file made from `plan` and `table` carries: what trial
/// files name their plan by.
pub fn plan_checksum(plan: &SweepPlan, table: &CsvOptions) -> String {
    PlanBody::from_plan(plan, table).checksum()
}

/// Writes `plan` (made from a table read with `table`) to `path`, atomically.
///
/// # Errors
/// The file cannot be written.
pub fn write_plan(plan: &SweepPlan, table: &CsvOptions, path: &Path) -> Result<()> {
    let body = PlanBody::from_plan(plan, table);
    let header = PlanHeader {
        format: PLAN_FORMAT.into(),
        format_version: FILE_VERSION,
        checksum: body.checksum(),
        plan: body,
    };
    let mut text = serde_json::to_string(&header).expect("plans serialise");
    text.push('\n');
    for t in plan.trials() {
        let (name, _) = &plan.configurations[t.configuration];
        text.push_str(&json!({"trial": t.index, "configuration": t.configuration, "fold": t.fold, "name": name}).to_string());
        text.push('\n');
    }
    write_text(path, &text)
}

/// A plan read from a file, with what the file says about it.
#[derive(Clone, Debug)]
pub struct PlanFile {
    /// The plan.
    pub plan: SweepPlan,
    /// How the table is read.
    pub table: CsvOptions,
    /// The checksum the file carries (and that its content matches).
    pub checksum: String,
}

/// Reads a plan file.
///
/// # Errors
/// A missing file, or one that is not a stratanet sweep plan.
pub fn read_plan(path: &Path) -> Result<PlanFile> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
    parse_plan(&text, path)
}

/// Parses and checks the text of a plan file; `path` names it in errors.
///
/// # Errors
/// Text that is not a stratanet sweep plan, a plan whose content no longer
/// matches its checksum, or a plan that breaks a rule of
/// [`SweepPlan::check`].
pub fn parse_plan(text: &str, path: &Path) -> Result<PlanFile> {
    let first = text.lines().next().unwrap_or("");
    let at = || format!("{}: line 1", path.display());
    let probe: serde_json::Value = serde_json::from_str(first).map_err(|e| {
        Error::json(
            path,
            "a stratanet sweep plan",
            e,
            "write the plan again from the table",
        )
    })?;
    if probe.get("format").and_then(|f| f.as_str()) != Some(PLAN_FORMAT)
        || probe.get("format_version").and_then(|v| v.as_u64()) != Some(u64::from(FILE_VERSION))
    {
        return Err(Error::input(
            at(),
            format!(
                "not a sweep plan this version reads ({PLAN_FORMAT} version {FILE_VERSION}); write the plan again with this version"
            ),
        ));
    }
    let header: PlanHeader = serde_json::from_str(first).map_err(|e| {
        Error::json(
            path,
            "a stratanet sweep plan",
            e,
            "write the plan again from the table",
        )
    })?;
    let checksum = header.plan.checksum();
    if checksum != header.checksum {
        return Err(Error::input(
            at(),
            "the plan's content does not match its checksum: it was changed after it was written (a JSON tool may have rounded a number); write the plan again instead of editing it",
        ));
    }
    let (plan, table) = header
        .plan
        .into_plan()
        .map_err(|reason| Error::input(at(), reason))?;
    plan.check().map_err(|e| e.context(at()))?;
    Ok(PlanFile {
        plan,
        table,
        checksum,
    })
}

/// One trial's outcome as trial files write it.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct TrialFile {
    format: String,
    format_version: u32,
    plan_checksum: String,
    trial: usize,
    rows: usize,
    classes: Vec<String>,
    seed: String,
    train_rows: usize,
    test_rows: Vec<usize>,
    /// Class labels of the held-out rows, or their target values.
    truth: TruthV2,
    /// Class probabilities or predicted values, one row per held-out row.
    predictions: Vec<Vec<f64>>,
    /// The baseline's constant prediction (the fold's training class
    /// shares or means).
    baseline: Vec<f64>,
    training: TrainingV2,
}

#[derive(Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
enum TruthV2 {
    Labels(Vec<usize>),
    Values(Vec<Vec<f64>>),
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct TrainingV2 {
    loss: String,
    epochs_run: usize,
    best_epoch: usize,
    best_validation_loss: Option<f64>,
    stopped_early: bool,
    final_training_loss: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    history: Option<Vec<EpochV2>>,
    /// What the fold's fit learnt from its rows: fill values, and the
    /// target scaler's kind, offsets and scales.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    fill_values: Option<Vec<f64>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    target_scaler: Option<(String, Vec<f64>, Vec<f64>)>,
    /// What the fold's fit noted and flagged.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    notes: Vec<String>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    warnings: Vec<String>,
}

#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct EpochV2 {
    epoch: usize,
    training_loss: f64,
    validation_loss: Option<f64>,
    validation_accuracy: Option<f64>,
    learning_rate: f64,
}

/// A trial that could not finish (training diverged, say), as trial files
/// record it, so that a status report and a merge can name it and why.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct FailedTrialFile {
    format: String,
    format_version: u32,
    plan_checksum: String,
    trial: usize,
    failed: String,
}

/// A trial's outcome read from a trial file.
#[derive(Clone, Debug)]
pub struct TrialResult {
    /// The trial's index in the plan.
    pub trial: usize,
    /// The fold's result, scored again from the stored predictions.
    pub result: FoldResult,
    /// Rows in the table the trial ran on.
    pub rows: usize,
    /// Its class names (empty for regression).
    pub classes: Vec<String>,
}

fn rows_of(a: &Array2<f64>) -> Vec<Vec<f64>> {
    a.rows().into_iter().map(|r| r.to_vec()).collect()
}

fn matrix(rows: Vec<Vec<f64>>, what: &str) -> std::result::Result<Array2<f64>, String> {
    let n = rows.len();
    let k = rows.first().map_or(0, Vec::len);
    if rows.iter().any(|r| r.len() != k) {
        return Err(format!("\"{what}\" has rows of different lengths"));
    }
    Array2::from_shape_vec((n, k), rows.into_iter().flatten().collect())
        .map_err(|_| format!("\"{what}\" is not a table of numbers"))
}

/// Writes one trial's result, atomically; `truth` is the target of the
/// trial's held-out rows, and `history` keeps the per-epoch losses.
///
/// # Errors
/// The file cannot be written.
#[allow(clippy::too_many_arguments)]
pub fn write_trial(
    plan_checksum: &str,
    trial: usize,
    rows: usize,
    classes: &[String],
    truth: &Target,
    result: &FoldResult,
    history: bool,
    path: &Path,
) -> Result<()> {
    let r = &result.report;
    let file = TrialFile {
        format: TRIAL_FORMAT.into(),
        format_version: FILE_VERSION,
        plan_checksum: plan_checksum.to_string(),
        trial,
        rows,
        classes: classes.to_vec(),
        seed: seed_text(result.seed),
        train_rows: result.train_rows,
        test_rows: result.test_rows.clone(),
        truth: match truth {
            Target::Classes { labels, .. } => TruthV2::Labels(labels.clone()),
            Target::Values { values, .. } => TruthV2::Values(rows_of(values)),
        },
        predictions: rows_of(&result.predictions),
        baseline: result.baseline.prediction.clone(),
        training: TrainingV2 {
            loss: r.loss.to_string(),
            epochs_run: r.epochs_run,
            best_epoch: r.best_epoch,
            best_validation_loss: r.best_validation_loss,
            stopped_early: r.stopped_early,
            final_training_loss: r.final_training_loss,
            history: history.then(|| {
                r.history
                    .iter()
                    .map(|e| EpochV2 {
                        epoch: e.epoch,
                        training_loss: e.training_loss,
                        validation_loss: e.validation_loss,
                        validation_accuracy: e.validation_accuracy,
                        learning_rate: e.learning_rate,
                    })
                    .collect()
            }),
            fill_values: result.imputer.as_ref().map(|i| i.fill_values().to_vec()),
            target_scaler: result.target_scaler.as_ref().map(|t| {
                (
                    t.kind().to_string(),
                    t.offsets().to_vec(),
                    t.scales().to_vec(),
                )
            }),
            // Kept with their options marked, so a merge shows them as the
            // reader names options (flags on the command line).
            notes: result
                .notes
                .iter()
                .map(|m| m.marked().to_string())
                .collect(),
            warnings: result
                .warnings
                .iter()
                .map(|m| m.marked().to_string())
                .collect(),
        },
    };
    let mut text = serde_json::to_string(&file).expect("trial results serialise");
    text.push('\n');
    write_text(path, &text)
}

/// The name of trial `index`'s file in an output folder: `trial-000007.json`.
pub fn trial_file_name(index: usize) -> String {
    format!("trial-{index:06}.json")
}

/// Writes a record that trial `trial` failed, with the reason, atomically.
///
/// # Errors
/// The file cannot be written.
pub fn write_failed_trial(
    plan_checksum: &str,
    trial: usize,
    reason: &str,
    path: &Path,
) -> Result<()> {
    let file = FailedTrialFile {
        format: TRIAL_FORMAT.into(),
        format_version: FILE_VERSION,
        plan_checksum: plan_checksum.to_string(),
        trial,
        failed: reason.to_string(),
    };
    let mut text = serde_json::to_string(&file).expect("trial records serialise");
    text.push('\n');
    write_text(path, &text)
}

/// What a trial file says.
#[derive(Clone, Debug)]
pub enum TrialOutcome {
    /// The trial ran; its result.
    Done(Box<TrialResult>),
    /// The trial failed; its index and the reason.
    Failed(usize, String),
}

/// Reads a trial file made for the plan with checksum `plan_checksum` and
/// `trials` trials.
///
/// # Errors
/// A missing or foreign file, or one made for another plan.
pub fn read_trial(path: &Path, plan_checksum: &str, trials: usize) -> Result<TrialOutcome> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
    if let Ok(failed) = serde_json::from_str::<FailedTrialFile>(&text) {
        if failed.format == TRIAL_FORMAT
            && failed.format_version == FILE_VERSION
            && failed.plan_checksum == plan_checksum
            && failed.trial < trials
        {
            return Ok(TrialOutcome::Failed(failed.trial, failed.failed));
        }
    }
    parse_trial(&text, path, plan_checksum, trials).map(|r| TrialOutcome::Done(Box::new(r)))
}

/// Every `.json` file in `dir`, sorted by name.
///
/// # Errors
/// The folder cannot be read.
pub fn json_files(dir: &Path) -> Result<Vec<std::path::PathBuf>> {
    let entries = std::fs::read_dir(dir).map_err(|e| Error::io(dir, "reading the folder", e))?;
    let mut files: Vec<std::path::PathBuf> = entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.is_file() && p.extension().is_some_and(|x| x == "json"))
        .collect();
    files.sort();
    Ok(files)
}

/// Where each trial of a plan stands, from a set of trial files.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TrialStatus {
    /// Trials with a result for this plan.
    pub done: Vec<usize>,
    /// Trials recorded as failed, with the reason.
    pub failed: Vec<(usize, String)>,
    /// Trials with no file at all.
    pub missing: Vec<usize>,
    /// Files made for another plan (or another version): left out.
    pub stale: Vec<std::path::PathBuf>,
    /// Files that are not readable trial results, with the reason.
    pub unreadable: Vec<(std::path::PathBuf, String)>,
}

impl TrialStatus {
    /// The trials to run again: missing and failed, sorted.
    pub fn to_rerun(&self) -> Vec<usize> {
        let mut v: Vec<usize> = self
            .missing
            .iter()
            .copied()
            .chain(self.failed.iter().map(|(t, _)| *t))
            .collect();
        v.sort_unstable();
        v.dedup();
        v
    }
}

/// Classifies every trial of `plan` from the trial files `files` (a file
/// for another plan is stale; a trial with two files counts once).
pub fn trial_status(plan: &PlanFile, files: &[std::path::PathBuf]) -> TrialStatus {
    let trials = plan.plan.trials().len();
    let mut seen = vec![false; trials];
    let mut status = TrialStatus::default();
    for path in files {
        match read_trial(path, &plan.checksum, trials) {
            Ok(TrialOutcome::Done(r)) => {
                if !seen[r.trial] {
                    seen[r.trial] = true;
                    status.done.push(r.trial);
                }
            }
            Ok(TrialOutcome::Failed(t, why)) => {
                if !seen[t] {
                    seen[t] = true;
                    status.failed.push((t, why));
                }
            }
            Err(e) => {
                let text = std::fs::read_to_string(path).unwrap_or_default();
                let other_plan = serde_json::from_str::<serde_json::Value>(&text)
                    .ok()
                    .filter(|v| v.get("format").and_then(|f| f.as_str()) == Some(TRIAL_FORMAT))
                    .is_some_and(|v| {
                        v.get("plan_checksum").and_then(|c| c.as_str()) != Some(&plan.checksum)
                            || v.get("format_version").and_then(|x| x.as_u64())
                                != Some(u64::from(FILE_VERSION))
                    });
                if other_plan {
                    status.stale.push(path.clone());
                } else {
                    status.unreadable.push((path.clone(), e.to_string()));
                }
            }
        }
    }
    status.done.sort_unstable();
    status.failed.sort_by_key(|(t, _)| *t);
    status.missing = (0..trials).filter(|&t| !seen[t]).collect();
    status
}

/// Merges the trial files of `plan` into its table, checking that every
/// trial is there once, none failed, and each held out the plan's rows.
/// Returns the table, the table's row count and its class names.
///
/// # Errors
/// A missing, failed or repeated trial (all named), a file for another
/// plan, or one whose held-out rows differ from the plan's.
pub fn merge_trial_files(
    plan: &PlanFile,
    files: &[std::path::PathBuf],
) -> Result<(super::SweepTable, usize, Vec<String>)> {
    let p = &plan.plan;
    let trials = p.trials().len();
    let k = p.folds.folds.len();
    let mut results: Vec<Option<Box<TrialResult>>> = vec![None; trials];
    let mut failed = Vec::new();
    for path in files {
        match read_trial(path, &plan.checksum, trials)? {
            TrialOutcome::Failed(t, why) => failed.push(format!("trial {t}: {why}")),
            TrialOutcome::Done(mut r) => {
                let fold = r.trial % k;
                if r.result.test_rows != p.folds.folds[fold].test {
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
                        format!("trial {index} appears twice; merge one file per trial"),
                    ));
                }
                results[index] = Some(r);
            }
        }
    }
    if !failed.is_empty() {
        return Err(Error::input(
            "merging sweep trials",
            format!(
                "{} failed ({}); fix the cause and run them again",
                if failed.len() == 1 {
                    "a trial"
                } else {
                    "trials"
                },
                failed.join("; ")
            ),
        ));
    }
    let missing: Vec<usize> = (0..trials).filter(|&t| results[t].is_none()).collect();
    if !missing.is_empty() {
        return Err(Error::input(
            "merging sweep trials",
            format!(
                "no results for trials {}; run them (sweep-trial --trials {}) and merge again",
                index_list(&missing),
                index_list(&missing)
            ),
        ));
    }
    let results: Vec<TrialResult> = results.into_iter().map(|r| *r.expect("checked")).collect();
    let rows = results[0].rows;
    let classes = results[0].classes.clone();
    let table = p.merge(
        rows,
        &classes,
        results.into_iter().map(|r| r.result).collect(),
    )?;
    Ok((table, rows, classes))
}

/// Indices as a compact list: `0-3,7,9-10`.
pub fn index_list(indices: &[usize]) -> String {
    let mut parts = Vec::new();
    let mut i = 0;
    while i < indices.len() {
        let start = indices[i];
        let mut end = start;
        while i + 1 < indices.len() && indices[i + 1] == end + 1 {
            i += 1;
            end = indices[i];
        }
        parts.push(if start == end {
            start.to_string()
        } else {
            format!("{start}-{end}")
        });
        i += 1;
    }
    parts.join(",")
}

/// Parses the text of a trial file (see [`read_trial`]).
///
/// # Errors
/// Text that is not a trial result, or one made for another plan.
pub fn parse_trial(
    text: &str,
    path: &Path,
    plan_checksum: &str,
    trials: usize,
) -> Result<TrialResult> {
    let file: TrialFile = serde_json::from_str(text).map_err(|e| {
        Error::json(
            path,
            "a stratanet sweep trial result",
            e,
            "run the trial again; a result file is written whole or not at all",
        )
    })?;
    let bad = |reason: String| Error::input(path.display().to_string(), reason);
    if file.format != TRIAL_FORMAT || file.format_version != FILE_VERSION {
        return Err(bad(format!(
            "not a sweep trial result this version reads ({TRIAL_FORMAT} version {FILE_VERSION})"
        )));
    }
    if file.plan_checksum != plan_checksum {
        return Err(bad(
            "this trial result was made from a different plan; merge results of one plan only"
                .into(),
        ));
    }
    if file.trial >= trials {
        return Err(bad(format!("trial {} is not in the plan", file.trial)));
    }
    let predictions = matrix(file.predictions, "predictions").map_err(bad)?;
    let target = match file.truth {
        TruthV2::Labels(labels) => {
            if labels.iter().any(|&l| l >= file.classes.len()) {
                return Err(bad("a class label is beyond the class names".into()));
            }
            Target::Classes {
                labels,
                names: file.classes.clone(),
            }
        }
        TruthV2::Values(values) => Target::Values {
            names: (0..values.first().map_or(0, Vec::len))
                .map(|i| format!("y{i}"))
                .collect(),
            values: matrix(values, "truth").map_err(bad)?,
        },
    };
    if target.len() != file.test_rows.len() || predictions.nrows() != file.test_rows.len() {
        return Err(bad(format!(
            "it holds {} held-out rows but {} truths and {} predictions",
            file.test_rows.len(),
            target.len(),
            predictions.nrows()
        )));
    }
    let scores = Scores::from_predictions(&target, predictions.view())
        .map_err(|e| e.context(path.display().to_string()))?;
    if file.baseline.len() != predictions.ncols() || file.baseline.iter().any(|v| !v.is_finite()) {
        return Err(bad(format!(
            "its baseline holds {} values for {} prediction columns (or a value that is not a finite number)",
            file.baseline.len(),
            predictions.ncols()
        )));
    }
    let baseline = FoldBaseline::scored(file.baseline, &target)
        .map_err(|e| e.context(path.display().to_string()))?;
    let mut t = file.training;
    let history = t
        .history
        .take()
        .unwrap_or_default()
        .into_iter()
        .map(|e| EpochRecord {
            epoch: e.epoch,
            training_loss: e.training_loss,
            validation_loss: e.validation_loss,
            validation_accuracy: e.validation_accuracy,
            learning_rate: e.learning_rate,
            elapsed_seconds: 0.0,
        })
        .collect();
    let report = TrainingReport {
        history,
        epochs_run: t.epochs_run,
        best_epoch: t.best_epoch,
        best_validation_loss: t.best_validation_loss,
        stopped_early: t.stopped_early,
        loss: t.loss.parse::<Loss>().map_err(|e| bad(e.to_string()))?,
        final_training_loss: t.final_training_loss,
    };
    let seed = read_seed(&file.seed, "seed").map_err(bad)?;
    Ok(TrialResult {
        trial: file.trial,
        result: FoldResult {
            baseline,
            index: 0,
            seed,
            train_rows: file.train_rows,
            test_rows: file.test_rows,
            scores,
            predictions,
            report,
            model: None,
            imputer: t
                .fill_values
                .map(crate::data::Imputer::from_parts)
                .transpose()
                .map_err(|e| bad(e.to_string()))?,
            target_scaler: match t.target_scaler {
                None => None,
                Some((kind, offset, scale)) => Some(
                    crate::data::Scaler::from_parts(
                        kind.parse().map_err(|e: Error| bad(e.to_string()))?,
                        offset,
                        scale,
                    )
                    .map_err(|e| bad(e.to_string()))?,
                ),
            },
            notes: t
                .notes
                .into_iter()
                .map(crate::error::Message::new)
                .collect(),
            warnings: t
                .warnings
                .into_iter()
                .map(crate::error::Message::new)
                .collect(),
        },
        rows: file.rows,
        classes: file.classes,
    })
}
