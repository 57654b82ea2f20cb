//! Sweep plans and trial results as files, for running trials elsewhere.
//!
//! A plan file is JSON lines: a header line holding the whole plan and the
//! CSV options it was made with, then one line per trial
//! (`{"trial": i, "configuration": c, "fold": f, "name": ...}`) so that an
//! array job can count and inspect trials with line tools. A trial file
//! holds one trial's fold result and the plan's fingerprint, so results from
//! another plan are refused when merging.

use super::{FoldResult, SweepPlan};
use crate::atomic::write_text;
use crate::data::CsvOptions;
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use serde_json::json;
use std::path::Path;

const PLAN_FORMAT: &str = "stratanet-sweep-plan";
const TRIAL_FORMAT: &str = "stratanet-sweep-trial";

#[derive(Serialize, Deserialize)]
struct PlanHeader {
    format: String,
    format_version: u32,
    plan: SweepPlan,
    table: CsvOptions,
}

#[derive(Serialize, Deserialize)]
struct TrialFile {
    format: String,
    format_version: u32,
    plan_fingerprint: String,
    trial: usize,
    rows: usize,
    classes: Vec<String>,
    result: FoldResult,
}

fn plan_fingerprint(plan: &SweepPlan) -> String {
    use sha2::{Digest, Sha256};
    let text = serde_json::to_string(plan).expect("plans serialise");
    Sha256::digest(text.as_bytes())
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Writes `plan` (made from a table read with `table`) to `path`, atomically.
///
/// # Errors
/// The file cannot be written.
pub fn write_plan(plan: &SweepPlan, table: &CsvOptions, path: &Path) -> Result<()> {
    let header = PlanHeader {
        format: PLAN_FORMAT.into(),
        format_version: 1,
        plan: plan.clone(),
        table: table.clone(),
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

/// Reads a plan file: the plan and the CSV options it was made with.
///
/// # Errors
/// A missing file, or one that is not a stratanet sweep plan.
pub fn read_plan(path: &Path) -> Result<(SweepPlan, CsvOptions)> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
    parse_plan(&text, path)
}

/// Parses and checks the text of a plan file; `path` names it in errors.
///
/// # Errors
/// Text that is not a stratanet sweep plan, or a plan that breaks a rule of
/// [`SweepPlan::check`].
pub fn parse_plan(text: &str, path: &Path) -> Result<(SweepPlan, CsvOptions)> {
    let first = text.lines().next().unwrap_or("");
    let header: PlanHeader = serde_json::from_str(first).map_err(|e| {
        Error::input(
            format!("{}: line 1", path.display()),
            format!("not a stratanet sweep plan ({e}); write one with `stratanet sweep ... --write-plan PATH`"),
        )
    })?;
    if header.format != PLAN_FORMAT || header.format_version != 1 {
        return Err(Error::input(
            format!("{}: line 1", path.display()),
            format!("format {} version {} is not a sweep plan this version reads ({PLAN_FORMAT} version 1)", header.format, header.format_version),
        ));
    }
    header
        .plan
        .check()
        .map_err(|e| Error::input(format!("{}: line 1", path.display()), e.to_string()))?;
    Ok((header.plan, header.table))
}

/// Writes one trial's result, atomically.
///
/// # Errors
/// The file cannot be written.
pub fn write_trial(
    plan: &SweepPlan,
    trial: usize,
    rows: usize,
    classes: &[String],
    result: &FoldResult,
    path: &Path,
) -> Result<()> {
    let file = TrialFile {
        format: TRIAL_FORMAT.into(),
        format_version: 1,
        plan_fingerprint: plan_fingerprint(plan),
        trial,
        rows,
        classes: classes.to_vec(),
        result: result.clone(),
    };
    let mut text = serde_json::to_string(&file).expect("trial results serialise");
    text.push('\n');
    write_text(path, &text)
}

/// Reads a trial file made for `plan`: (trial index, result, table rows, class names).
///
/// # Errors
/// A missing or foreign file, or one made for another plan.
pub fn read_trial(
    path: &Path,
    plan: &SweepPlan,
) -> Result<(usize, FoldResult, usize, Vec<String>)> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, "reading", e))?;
    parse_trial(&text, path, plan)
}

/// Parses the text of a trial file made for `plan`; `path` names it in errors.
///
/// # Errors
/// Text that is not a trial result, or one made for another plan.
pub fn parse_trial(
    text: &str,
    path: &Path,
    plan: &SweepPlan,
) -> Result<(usize, FoldResult, usize, Vec<String>)> {
    let file: TrialFile = serde_json::from_str(text).map_err(|e| {
        Error::input(
            path.display().to_string(),
            format!("not a stratanet sweep trial result ({e})"),
        )
    })?;
    if file.format != TRIAL_FORMAT || file.format_version != 1 {
        return Err(Error::input(
            path.display().to_string(),
            "not a sweep trial result this version reads",
        ));
    }
    if file.plan_fingerprint != plan_fingerprint(plan) {
        return Err(Error::input(
            path.display().to_string(),
            "this trial result was made from a different plan; merge results of one plan only",
        ));
    }
    let trials = plan
        .configurations
        .len()
        .saturating_mul(plan.folds.folds.len());
    if file.trial >= trials {
        return Err(Error::input(
            path.display().to_string(),
            format!("trial {} is not in the plan", file.trial),
        ));
    }
    Ok((file.trial, file.result, file.rows, file.classes))
}
