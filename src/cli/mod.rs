//! The `stratanet` command line (crate-internal; `src/main.rs` calls
//! [`main`], the crate root offers [`run_command_line`](crate::run_command_line)
//! and [`check_command_line`](crate::check_command_line)).
//!
//! Every command runs in two steps:
//!
//! 1. **prepare** ([`prepare::prepare`]): the arguments, parsed once, become
//!    a complete, checked [`Job`](prepare::Job): every library option built
//!    and validated (errors name the flag), every output path checked
//!    against every input path and against the other outputs, and every
//!    output folder's existence, all before any file is read for its
//!    content or any work starts;
//! 2. **run** ([`run::run`]): the job calls the library and returns an
//!    [`Outcome`]: one JSON object (printed alone on stdout with `--json`)
//!    and a readable summary (printed otherwise).
//!
//! Errors go to stderr as `stratanet: <message>` with exit code 2, options
//! named by their flags; usage errors (unknown flags, bad values) are
//! clap's, also exit code 2. Progress lines go to stderr. A closed pipe on
//! either stream ends the program quietly with the exit code it would have
//! had (0 after success, 2 after an error), never a panic.

mod args;
mod charts;
mod demo;
mod errors;
pub(crate) mod magic;
mod output;
mod paths;
mod prepare;
mod progress;
mod run;

use args::Cli;
use clap::Parser;
pub(crate) use errors::CliError;
use std::ffi::OsString;
use std::io::Write;

pub(crate) use output::Outcome;

/// Parses `args` (without the program name).
fn parse<I, S>(args: I) -> Result<Cli, CliError>
where
    I: IntoIterator<Item = S>,
    S: Into<OsString> + Clone,
{
    let argv = std::iter::once(OsString::from("stratanet")).chain(args.into_iter().map(Into::into));
    Cli::try_parse_from(argv).map_err(CliError::Usage)
}

/// Parses `args` (without the program name), prepares the job and runs it;
/// returns what it produced and whether `--json` was asked for.
pub(crate) fn run<I, S>(args: I) -> Result<(Outcome, bool), CliError>
where
    I: IntoIterator<Item = S>,
    S: Into<OsString> + Clone,
{
    let cli = parse(args)?;
    let output = cli.command.output().clone();
    let job = prepare::prepare(cli)?;
    let progress = progress::Progress::new(&output);
    let outcome = run::run(job, &progress)?;
    Ok((outcome, output.json))
}

/// Parses and prepares a command line without running it: every option is
/// built and checked and every output path checked against the inputs;
/// no file is read for its content or written.
pub(crate) fn check<I, S>(args: I) -> Result<(), CliError>
where
    I: IntoIterator<Item = S>,
    S: Into<OsString> + Clone,
{
    prepare::prepare(parse(args)?)?;
    Ok(())
}

/// Writes `text` and a line end to a stream, ignoring failures: a closed
/// pipe (`stratanet ... | head -1`) must end the program quietly.
fn say(stream: &mut dyn Write, text: &str) {
    let _ = writeln!(stream, "{text}");
    let _ = stream.flush();
}

/// The binary's entry point: runs, prints, and returns the exit code (0 on
/// success, 2 on bad input or usage).
pub(crate) fn main() -> i32 {
    let args: Vec<OsString> = std::env::args_os().skip(1).collect();
    match run(args) {
        Ok((outcome, json)) => {
            let text = if json {
                serde_json::to_string(&outcome.json).expect("JSON values serialise")
            } else {
                outcome.text
            };
            say(&mut std::io::stdout().lock(), &text);
            0
        }
        Err(e) if e.is_help() => {
            say(&mut std::io::stdout().lock(), &e.message());
            0
        }
        Err(e @ CliError::Usage(_)) => {
            say(&mut std::io::stderr().lock(), &e.message());
            2
        }
        Err(e) => {
            say(
                &mut std::io::stderr().lock(),
                &format!("stratanet: {}", e.message()),
            );
            2
        }
    }
}

#[cfg(test)]
mod tests {
    use super::errors::flag_name;
    use super::*;
    use crate::error::Error;

    #[test]
    fn library_options_show_as_flags() {
        let e = Error::option("batch_size", 64, "must be at most 10");
        assert_eq!(
            CliError::Failed(e).message(),
            "option --batch-size = 64: must be at most 10"
        );
        assert_eq!(flag_name("missing", Some("drop")), "--missing drop");
        assert_eq!(flag_name("hidden_layers", None), "--hidden");
    }

    #[test]
    fn usage_errors_are_typed() {
        match parse(["fit", "--bogus"]) {
            Err(CliError::Usage(e)) => {
                assert_eq!(e.kind(), clap::error::ErrorKind::UnknownArgument)
            }
            other => panic!("expected a usage error, got {other:?}"),
        }
        assert!(parse(["--help"]).unwrap_err().is_help());
    }
}
