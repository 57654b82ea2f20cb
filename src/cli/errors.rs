//! Why a command line did not run, and how its messages name options.

use crate::error::Error;

/// Why a command line did not run.
#[derive(Debug)]
pub(crate) enum CliError {
    /// The arguments do not parse: clap's message (exit code 2), or a
    /// request for help or the version (exit code 0, printed on stdout).
    Usage(clap::Error),
    /// The library refused the job or failed while doing it.
    Failed(Error),
}

impl From<Error> for CliError {
    fn from(e: Error) -> CliError {
        CliError::Failed(e)
    }
}

impl CliError {
    /// The message, options named by their flags.
    pub(crate) fn message(&self) -> String {
        match self {
            CliError::Usage(e) => e.render().to_string().trim_end().to_string(),
            CliError::Failed(e) => e.render(&flag_name),
        }
    }

    /// Is this help or version text (a success)?
    pub(crate) fn is_help(&self) -> bool {
        use clap::error::ErrorKind;
        matches!(self, CliError::Usage(e) if matches!(e.kind(), ErrorKind::DisplayHelp | ErrorKind::DisplayVersion))
    }
}

/// The flag of a library option: `batch_size` is `--batch-size`, and with
/// a value `--missing drop`.
pub(crate) fn flag_name(name: &str, value: Option<&str>) -> String {
    let flag = match name {
        "hidden_layers" => "--hidden".to_string(),
        "ids" => "--id".to_string(),
        n => format!("--{}", n.replace('_', "-")),
    };
    match value {
        Some(v) => format!("{flag} {v}"),
        None => flag,
    }
}

/// The reason of an error, options named by their flags (for clap's value
/// parsers, which name the flag themselves).
pub(crate) fn reason(e: &Error) -> String {
    e.reason_with(&flag_name)
}
