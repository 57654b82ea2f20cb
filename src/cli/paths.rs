//! An output is never an input: the check every command's preparation
//! runs on all its paths at once, before any work.

use crate::atomic::refuse_overwrite_input;
use crate::error::{Error, Result};
use std::path::{Component, Path, PathBuf};

/// What a command writes: single files, and folders with the names of the
/// files it may write into them.
#[derive(Default)]
pub(crate) struct Outputs {
    files: Vec<(&'static str, PathBuf)>,
    folders: Vec<(&'static str, PathBuf, Vec<String>)>,
}

impl Outputs {
    /// A file written for option `option` (the library's name of the flag).
    pub fn file(mut self, option: &'static str, path: &Path) -> Outputs {
        self.files.push((option, path.to_path_buf()));
        self
    }

    /// A folder written for `option`, which may receive files named `names`.
    pub fn folder(mut self, option: &'static str, path: &Path, names: Vec<String>) -> Outputs {
        self.folders.push((option, path.to_path_buf(), names));
        self
    }

    /// Refuses, naming the option, any output that is one of `inputs` (the
    /// same file under any spelling or hard link), two outputs that are the
    /// same file, a file whose folder does not exist, and a folder that is a
    /// file.
    pub fn check(&self, inputs: &[&Path]) -> Result<()> {
        let mut every: Vec<(&'static str, PathBuf)> = self.files.clone();
        for (option, dir, names) in &self.folders {
            if dir.is_file() {
                return Err(Error::option(
                    *option,
                    dir.display(),
                    "is a file; give a folder (it is created if absent)",
                ));
            }
            every.extend(names.iter().map(|n| (*option, dir.join(n))));
        }
        for (option, path) in &every {
            refuse_overwrite_input(path, inputs).map_err(|e| {
                Error::option(
                    *option,
                    path.display(),
                    e.to_string()
                        .split_once(": ")
                        .map_or(e.to_string(), |(_, why)| why.to_string()),
                )
            })?;
            // An output that does not exist yet cannot be found by file
            // identity; compare spellings too.
            if let Some(input) = inputs.iter().find(|i| same_spelling(path, i)) {
                return Err(Error::option(
                    *option,
                    path.display(),
                    format!(
                        "is the input {}, which writing would destroy; choose another output path",
                        input.display()
                    ),
                ));
            }
        }
        for (i, (a_option, a)) in every.iter().enumerate() {
            for (b_option, b) in &every[i + 1..] {
                if same_spelling(a, b) || refuse_overwrite_input(a, &[b]).is_err() {
                    return Err(Error::option(
                        *b_option,
                        b.display(),
                        format!(
                            "is also written for {}; give each output its own path",
                            crate::error::opt(a_option)
                        ),
                    ));
                }
            }
        }
        for (option, path) in &self.files {
            let folder = match path.parent() {
                Some(p) if !p.as_os_str().is_empty() => p,
                _ => Path::new("."),
            };
            if !folder.is_dir() {
                return Err(Error::option(
                    *option,
                    path.display(),
                    format!(
                        "its folder {} does not exist; create it first",
                        folder.display()
                    ),
                ));
            }
            if path.is_dir() {
                return Err(Error::option(
                    *option,
                    path.display(),
                    "is a folder; give a file path",
                ));
            }
        }
        Ok(())
    }
}

/// Two paths that name the same place once `.` and `..` are resolved
/// against the working folder (without touching the file system).
fn same_spelling(a: &Path, b: &Path) -> bool {
    normalise(a) == normalise(b)
}

fn normalise(p: &Path) -> PathBuf {
    let base = if p.is_absolute() {
        PathBuf::new()
    } else {
        std::env::current_dir().unwrap_or_default()
    };
    let mut out = base;
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                out.pop();
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_output_spelled_like_an_input_is_refused_before_it_exists() {
        let e = Outputs::default()
            .file("write_plan", Path::new("./nowhere/../table.csv"))
            .check(&[Path::new("table.csv")])
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "option write_plan = ./nowhere/../table.csv: is the input table.csv, which writing would destroy; choose another output path"
        );
    }

    #[test]
    fn two_outputs_on_one_path_are_refused() {
        let e = Outputs::default()
            .file("out", Path::new("a.json"))
            .file("write_plan", Path::new("./a.json"))
            .check(&[])
            .unwrap_err();
        assert_eq!(
            e.to_string(),
            "option write_plan = ./a.json: is also written for out; give each output its own path"
        );
    }
}
