//! The command line inside a notebook: [`run`] takes one command line as
//! text (`"cv demo-data/parts.csv --target verdict --folds 5"`), parses it
//! with the binary's own parser, prepares and runs the same job, and returns
//! a [`CommandOutput`] that an evcxr notebook shows inline as HTML tables and
//! SVG charts. Nothing is printed while it runs (progress is off, as with
//! `--quiet`); the value is shown only when it is a cell's last expression.

use super::args::{Cli, Command, OutputArgs};
use super::errors::CliError;
use super::progress::Progress;
use super::{prepare, run as runner};
use crate::error::{Error, Result};
use crate::fit::Model;
use crate::notebook::{escape, show, table};
use clap::Parser;
use serde_json::Value;
use std::fmt;
use std::fmt::Write as _;
use std::path::PathBuf;

/// A chart a command wrote: its path and its SVG text.
type Chart = (PathBuf, String);

/// What one command line produced: the JSON object `--json` prints, the
/// readable summary the binary prints, the SVG charts it wrote, and the
/// model it saved (if it saved one), loaded back for further use.
///
/// In an evcxr notebook a cell ending in a `CommandOutput` shows it:
/// the command, a table of its results, its charts, and its summary.
#[derive(Clone, Debug)]
pub struct CommandOutput {
    line: String,
    json: Value,
    text: String,
    charts: Vec<(PathBuf, String)>,
    model: Option<Model>,
}

/// A command line that did not parse, or a job the library refused: the
/// message is the binary's, word for word (options named by their flags,
/// files by name, line and column).
///
/// `Debug` shows the message too, so `stratanet::run("...")?` in a notebook
/// cell prints it as the command line would.
pub struct CommandError {
    line: String,
    message: String,
}

impl fmt::Display for CommandError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl fmt::Debug for CommandError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "stratanet {}: {}", self.line, self.message)
    }
}

impl std::error::Error for CommandError {}

impl CommandError {
    /// The message, as the command line prints it after `stratanet: `.
    pub fn message(&self) -> &str {
        &self.message
    }

    /// An HTML box with the command and its message.
    pub fn to_html(&self) -> String {
        format!(
            "<div style=\"font-family:sans-serif;font-size:13px;border-left:4px solid #b2182b;padding:4px 10px;margin:4px 0\"><div style=\"font-family:monospace;color:#444\">stratanet {}</div><pre style=\"white-space:pre-wrap;margin:4px 0 0 0\">{}</pre></div>",
            escape(&self.line),
            escape(&self.message)
        )
    }

    /// Shows the error in an evcxr notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

impl CommandOutput {
    /// The command line as given.
    pub fn line(&self) -> &str {
        &self.line
    }

    /// The JSON object the command prints with `--json` (every figure of the
    /// result: metrics, intervals, fold scores, sweep rows, ...).
    pub fn json(&self) -> &Value {
        &self.json
    }

    /// The readable summary the command prints without `--json`.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// The model the command saved (`fit`, and `sweep`/`sweep-merge` with
    /// `--out`), read back from its file; `None` for other commands.
    pub fn model(&self) -> Option<&Model> {
        self.model.as_ref()
    }

    /// The SVG charts the command wrote (with `--charts`), with their paths.
    pub fn charts(&self) -> &[(PathBuf, String)] {
        &self.charts
    }

    /// HTML: the command, a table of its scalar results and of its metrics,
    /// its charts inline, and its readable summary.
    pub fn to_html(&self) -> String {
        let mut h = format!(
            "<div style=\"font-family:monospace;color:#444;margin:4px 0\">stratanet {}</div>",
            escape(&self.line)
        );
        if let Value::Object(map) = &self.json {
            let rows: Vec<Vec<String>> = map
                .iter()
                .filter_map(|(k, v)| scalar(v).map(|s| vec![k.clone(), s]))
                .collect();
            if !rows.is_empty() {
                h.push_str(&table("result", &["field", "value"], &rows));
            }
            for (k, v) in map {
                if let Value::Object(inner) = v {
                    let rows: Vec<Vec<String>> = inner
                        .iter()
                        .filter_map(|(name, v)| scalar(v).map(|s| vec![name.clone(), s]))
                        .collect();
                    if !rows.is_empty() {
                        h.push_str(&table(k, &["name", "value"], &rows));
                    }
                    h.push_str(&nested_table(k, inner));
                }
            }
        }
        for (path, svg) in &self.charts {
            let _ = write!(
                h,
                "<figure style=\"margin:6px 0\">{svg}<figcaption style=\"font-family:sans-serif;font-size:12px;color:#444\">{}</figcaption></figure>",
                escape(&path.display().to_string())
            );
        }
        let _ = write!(
            h,
            "<pre style=\"font-size:12px;white-space:pre-wrap\">{}</pre>",
            escape(&self.text)
        );
        h
    }

    /// Shows the output in an evcxr notebook.
    pub fn evcxr_display(&self) {
        show("text/html", &self.to_html());
    }
}

/// A table of the entries of `map` that are objects themselves (one row per
/// entry, one column per scalar field, in first-seen order): the metrics of
/// a cross-validation, with their mean and interval. Empty when none is.
fn nested_table(caption: &str, map: &serde_json::Map<String, Value>) -> String {
    let mut columns: Vec<&str> = Vec::new();
    for v in map.values() {
        if let Value::Object(o) = v {
            for (c, x) in o {
                if scalar(x).is_some() && !columns.contains(&c.as_str()) {
                    columns.push(c);
                }
            }
        }
    }
    let rows: Vec<Vec<String>> = map
        .iter()
        .filter_map(|(name, v)| match v {
            Value::Object(o) => Some(
                std::iter::once(name.clone())
                    .chain(
                        columns
                            .iter()
                            .map(|c| o.get(*c).and_then(scalar).unwrap_or_default()),
                    )
                    .collect(),
            ),
            _ => None,
        })
        .collect();
    if rows.is_empty() || columns.is_empty() {
        return String::new();
    }
    let header: Vec<&str> = std::iter::once("name").chain(columns).collect();
    table(caption, &header, &rows)
}

/// A JSON value as one table cell, when it is one (numbers in Rust's
/// shortest round-trip form, as `--json` writes them).
fn scalar(v: &Value) -> Option<String> {
    match v {
        Value::String(s) => Some(s.clone()),
        Value::Number(n) => Some(n.to_string()),
        Value::Bool(b) => Some(b.to_string()),
        Value::Null => Some("none".into()),
        Value::Array(items) if items.iter().all(|i| !i.is_object() && !i.is_array()) => Some(
            items
                .iter()
                .map(|i| scalar(i).unwrap_or_default())
                .collect::<Vec<_>>()
                .join(", "),
        ),
        _ => None,
    }
}

/// Splits a command line into words as a POSIX shell does for plain words,
/// single quotes and double quotes (IEEE Std 1003.1-2017, Shell Command
/// Language, 2.2 Quoting): no variables, globs or escapes beyond `\` before
/// a character outside single quotes.
///
/// # Errors
/// An unterminated quote.
fn words(line: &str) -> std::result::Result<Vec<String>, String> {
    let mut out = Vec::new();
    let mut word = String::new();
    let mut in_word = false;
    let mut chars = line.chars();
    while let Some(c) = chars.next() {
        match c {
            c if c.is_whitespace() => {
                if in_word {
                    out.push(std::mem::take(&mut word));
                    in_word = false;
                }
            }
            '\'' => {
                in_word = true;
                loop {
                    match chars.next() {
                        Some('\'') => break,
                        Some(c) => word.push(c),
                        None => return Err("a single quote (') is not closed; close it".into()),
                    }
                }
            }
            '"' => {
                in_word = true;
                loop {
                    match chars.next() {
                        Some('"') => break,
                        Some('\\') => match chars.next() {
                            Some(c) => word.push(c),
                            None => {
                                return Err("a double quote (\") is not closed; close it".into())
                            }
                        },
                        Some(c) => word.push(c),
                        None => return Err("a double quote (\") is not closed; close it".into()),
                    }
                }
            }
            '\\' => {
                in_word = true;
                if let Some(c) = chars.next() {
                    word.push(c);
                }
            }
            c => {
                in_word = true;
                word.push(c);
            }
        }
    }
    if in_word {
        out.push(word);
    }
    Ok(out)
}

/// The model file a command saves, if any.
fn saved_model(command: &Command) -> Option<PathBuf> {
    match command {
        Command::Fit(a) => Some(a.out.clone()),
        Command::Sweep(a) => a.out.clone(),
        Command::SweepMerge(a) => a.out.clone(),
        _ => None,
    }
}

/// Runs one command line, as the binary would, and returns what it produced
/// (see [`CommandOutput`]). A leading `stratanet` is optional. Paths are
/// relative to the working folder (a notebook's own folder).
///
/// ```
/// let out = stratanet::run("inspect demo-data/parts.csv --target verdict").unwrap();
/// assert_eq!(out.json()["command"], "inspect");
/// let e = stratanet::run("cv demo-data/parts.csv --target verdict --folds 1").unwrap_err();
/// assert!(e.message().contains("--folds"));
/// ```
///
/// # Errors
/// A [`CommandError`] with the binary's message: a line that does not
/// parse (an unknown flag, a bad value, help asked for), a refused option,
/// or a failure while running.
pub fn run(line: &str) -> std::result::Result<CommandOutput, CommandError> {
    let fail = |message: String| CommandError {
        line: line.trim().to_string(),
        message,
    };
    let mut args = words(line).map_err(fail)?;
    if args.first().map(String::as_str) == Some("stratanet") {
        args.remove(0);
    }
    let argv = std::iter::once("stratanet".to_string()).chain(args);
    let cli = Cli::try_parse_from(argv).map_err(|e| fail(CliError::Usage(e).message()))?;
    let model_path = saved_model(&cli.command);
    let job = prepare::prepare(cli).map_err(|e| fail(CliError::Failed(e).message()))?;
    let quiet = Progress::new(&OutputArgs {
        json: false,
        quiet: true,
        progress: false,
    });
    let outcome = runner::run(job, &quiet).map_err(|e| fail(CliError::Failed(e).message()))?;
    let read_back = || -> Result<(Option<Model>, Vec<Chart>)> {
        let model = match &model_path {
            Some(p) if p.is_file() => Some(Model::load(p)?),
            _ => None,
        };
        let mut charts = Vec::new();
        if let Some(Value::Array(paths)) = outcome.json.get("charts") {
            for p in paths.iter().filter_map(Value::as_str) {
                let path = PathBuf::from(p);
                if path.extension().is_some_and(|e| e == "svg") {
                    let svg = std::fs::read_to_string(&path)
                        .map_err(|e| Error::io(&path, "reading", e))?;
                    charts.push((path, svg));
                }
            }
        }
        Ok((model, charts))
    };
    let (model, charts) = read_back().map_err(|e| fail(CliError::Failed(e).message()))?;
    Ok(CommandOutput {
        line: line.trim().to_string(),
        json: outcome.json,
        text: outcome.text,
        charts,
        model,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_follow_shell_quoting() {
        assert_eq!(
            words(r#"cv 'my data.csv' --target "a b" x\ y  z"#).unwrap(),
            ["cv", "my data.csv", "--target", "a b", "x y", "z"]
        );
        assert_eq!(words("  ").unwrap(), Vec::<String>::new());
        assert_eq!(words("''").unwrap(), [""]);
        assert!(words("fit 'open").unwrap_err().contains("not closed"));
    }
}
