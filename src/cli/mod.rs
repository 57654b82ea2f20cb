//! The `stratanet` command line, as a library module so that tests and the
//! fuzzer can drive it without a process. `src/main.rs` only calls [`main`].
//!
//! Every subcommand returns one [`Outcome`]: a JSON object (printed alone on
//! stdout with `--json`) and a readable summary (printed otherwise). Errors
//! go to stderr as `stratanet: <message>` with exit code 2; a usage error
//! from the argument parser also exits 2.

// Flattened clap fields take no doc comments of their own (clap would
// show them as help text), so this module allows undocumented fields.
#[allow(missing_docs)]
pub mod args;
mod charts;
mod commands;
mod demo;

pub(crate) use commands::cv_json;

use crate::error::Error;
use args::{Cli, Command, OutputArgs};
use clap::Parser;
use std::io::{IsTerminal, Write};

/// What a subcommand produced.
#[derive(Debug)]
pub struct Outcome {
    /// The JSON object for `--json`.
    pub json: serde_json::Value,
    /// The readable summary.
    pub text: String,
}

/// Whether progress lines go to stderr: asked with `--progress`, or by
/// default when stderr is a terminal; never with `--quiet`.
pub(crate) fn progress_wanted(o: &OutputArgs) -> bool {
    !o.quiet && (o.progress || std::io::stderr().is_terminal())
}

/// Parses `args` (without the program name); a usage error carries clap's text.
fn parse<I, S>(args: I) -> Result<Cli, Error>
where
    I: IntoIterator<Item = S>,
    S: Into<std::ffi::OsString> + Clone,
{
    let argv = std::iter::once(std::ffi::OsString::from("stratanet"))
        .chain(args.into_iter().map(Into::into));
    Cli::try_parse_from(argv)
        .map_err(|e| Error::input("usage", e.to_string().trim_end().to_string()))
}

/// Parses `args` (without the program name) and runs the subcommand.
///
/// # Errors
/// Usage errors (as an option error with clap's text) and every library error.
pub fn run<I, S>(args: I) -> Result<(Outcome, bool), Error>
where
    I: IntoIterator<Item = S>,
    S: Into<std::ffi::OsString> + Clone,
{
    let cli = parse(args)?;
    let json = match &cli.command {
        Command::Fit(a) => a.output.json,
        Command::Check(a) => a.output.json,
        Command::Predict(a) => a.output.json,
        Command::Cv(a) => a.output.json,
        Command::Sweep(a) => a.output.json,
        Command::SweepTrial(a) => a.output.json,
        Command::SweepMerge(a) => a.output.json,
        Command::Demo(a) => a.output.json,
    };
    let outcome = match cli.command {
        Command::Fit(a) => commands::fit(a),
        Command::Check(a) => commands::check(a),
        Command::Predict(a) => commands::predict(a),
        Command::Cv(a) => commands::cv(a),
        Command::Sweep(a) => commands::sweep(a),
        Command::SweepTrial(a) => commands::sweep_trial(a),
        Command::SweepMerge(a) => commands::sweep_merge(a),
        Command::Demo(a) => commands::demo(a),
    }?;
    Ok((outcome, json))
}

/// Parses `args` (without the program name) and builds every option the
/// subcommand would use, reading and writing no file: the usage check that
/// the fuzzer drives (`fuzz/fuzz_targets/cli_args.rs`), and a cheap way to
/// validate a command line before a long run.
///
/// # Errors
/// The error [`run`] would give for the same arguments before it opens any
/// file: a usage error, or an option error naming the flag.
pub fn check_arguments<I, S>(args: I) -> Result<(), Error>
where
    I: IntoIterator<Item = S>,
    S: Into<std::ffi::OsString> + Clone,
{
    let cli = parse(args)?;
    match &cli.command {
        Command::Fit(a) => {
            a.table.csv_options()?;
            a.net.fit_options()?.validate()?;
        }
        Command::Check(a) => {
            args::missing(&a.missing)?;
        }
        Command::Predict(a) => {
            args::missing(&a.missing)?;
        }
        Command::Cv(a) => {
            a.table.csv_options()?;
            a.net.fit_options()?.validate()?;
            commands::cv_options(a.folds, a.repeats, false).validate()?;
        }
        Command::Sweep(a) => {
            a.table.csv_options()?;
            a.net.fit_options()?.validate()?;
            commands::grid(a)?;
            crate::validate::metrics::Metric::from_name(&a.metric)?;
            commands::cv_options(a.folds, a.repeats, false).validate()?;
        }
        Command::SweepTrial(_) | Command::SweepMerge(_) | Command::Demo(_) => {}
    }
    Ok(())
}

/// The binary's entry point: runs, prints, and returns the exit code
/// (0 on success, 2 on bad input or usage).
pub fn main() -> i32 {
    let args: Vec<std::ffi::OsString> = std::env::args_os().skip(1).collect();
    // --help and --version are successes that clap reports as errors.
    let argv = std::iter::once(std::ffi::OsString::from("stratanet")).chain(args.iter().cloned());
    if let Err(e) = Cli::try_parse_from(argv) {
        use clap::error::ErrorKind;
        if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion) {
            print!("{e}");
            return 0;
        }
        if e.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand {
            eprint!("{e}");
            return 2;
        }
    }
    match run(args) {
        Ok((outcome, json)) => {
            let mut out = std::io::stdout().lock();
            let text = if json {
                serde_json::to_string(&outcome.json).expect("JSON values serialise")
            } else {
                outcome.text
            };
            // A closed pipe (e.g. `| head`) is not an error worth a panic.
            let _ = writeln!(out, "{text}");
            0
        }
        Err(e) => {
            let msg = e.to_string();
            match msg.strip_prefix("usage: ") {
                Some(usage) => eprintln!("{usage}"),
                None => eprintln!("stratanet: {msg}"),
            }
            2
        }
    }
}
