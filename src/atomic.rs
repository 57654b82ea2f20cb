//! Writing output files safely (crate-internal; model files, charts,
//! predictions and reports share it).
//!
//! [`write_file`] writes to a temporary file in the target's folder, flushes
//! and syncs it, then renames it over the target. A reader therefore sees
//! either the old file or the complete new one, never a half-written file;
//! on any failure the temporary file is removed and a previous file is left
//! as it was. (Rename within one folder replaces the target in one step on
//! POSIX systems, `rename(2)`, and on Windows, where `std::fs::rename` asks
//! for replacement.)
//!
//! Two consequences worth knowing: the new file gets default permissions (it
//! is a new file, not the old one rewritten), and when the target is a
//! symbolic link the link itself is replaced.

use crate::error::{Error, Result};
use std::ffi::OsString;
use std::fs::{self, File, OpenOptions};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporary files of one process (threads may save at once).
static COUNTER: AtomicU64 = AtomicU64::new(0);

/// The temporary file used while writing `path`: `.{name}.tmp-{pid}-{n}` in
/// the same folder.
fn temporary_path(path: &Path) -> Result<PathBuf> {
    let name = path.file_name().ok_or_else(|| {
        Error::input(
            format!("writing {}", path.display()),
            "the path does not name a file (it ends in `..` or is a root); give a file name",
        )
    })?;
    let mut tmp = OsString::from(".");
    tmp.push(name);
    tmp.push(format!(
        ".tmp-{}-{}",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::Relaxed)
    ));
    Ok(path.with_file_name(tmp))
}

/// Writes `path` atomically: `write` fills a buffered temporary file, which
/// is then flushed, synced and renamed over `path`.
///
/// Errors from `write` are returned as they are (they should name the path);
/// failures of the file system are [`ErrorKind::Io`](crate::ErrorKind::Io)
/// errors naming `path`. Either way the temporary file is removed and any
/// previous file at `path` is untouched.
pub(crate) fn write_file<F>(path: &Path, write: F) -> Result<()>
where
    F: FnOnce(&mut dyn Write) -> Result<()>,
{
    let tmp = temporary_path(path)?;
    let file = OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&tmp)
        .map_err(|e| Error::io(path, "writing", e))?;
    let result = fill_and_replace(file, &tmp, path, write);
    if result.is_err() {
        // Best effort: the error being returned is the one that matters.
        let _ = fs::remove_file(&tmp);
    }
    result
}

fn fill_and_replace<F>(file: File, tmp: &Path, path: &Path, write: F) -> Result<()>
where
    F: FnOnce(&mut dyn Write) -> Result<()>,
{
    let mut out = BufWriter::with_capacity(1 << 16, file);
    write(&mut out)?;
    let file = out
        .into_inner()
        .map_err(|e| Error::io(path, "writing", e.into_error()))?;
    file.sync_all().map_err(|e| Error::io(path, "writing", e))?;
    drop(file);
    fs::rename(tmp, path).map_err(|e| Error::io(path, "replacing", e))?;
    sync_folder(path);
    Ok(())
}

/// Makes the rename itself durable where the platform allows it (POSIX:
/// fsync the folder). Failure is not an error: the file is complete either way.
fn sync_folder(path: &Path) {
    #[cfg(unix)]
    {
        let folder = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        if let Ok(dir) = File::open(folder) {
            let _ = dir.sync_all();
        }
    }
    #[cfg(not(unix))]
    let _ = path;
}

/// Writes text to `path` atomically.
pub(crate) fn write_text(path: &Path, text: &str) -> Result<()> {
    write_file(path, |w| {
        w.write_all(text.as_bytes())
            .map_err(|e| Error::io(path, "writing", e))
    })
}

/// Refuses to write `output` when it is the same file as one of `inputs`
/// (compared by canonical path, and on Unix also by device and inode, so
/// that hard links are caught). Inputs that do not exist are skipped; an
/// output that does not exist yet cannot be an input.
#[allow(dead_code)] // for predictions and reports written next to their inputs
pub(crate) fn refuse_overwrite_input(output: &Path, inputs: &[&Path]) -> Result<()> {
    let Ok(out_meta) = fs::metadata(output) else {
        return Ok(());
    };
    let out_canonical = fs::canonicalize(output).ok();
    for input in inputs {
        let Ok(in_meta) = fs::metadata(input) else {
            continue;
        };
        let same_path = out_canonical.is_some() && fs::canonicalize(input).ok() == out_canonical;
        if same_path || same_inode(&out_meta, &in_meta) {
            return Err(Error::input(
                format!("writing {}", output.display()),
                format!(
                    "it is the same file as the input {}, which writing would destroy; choose another output path",
                    input.display()
                ),
            ));
        }
    }
    Ok(())
}

#[cfg(unix)]
fn same_inode(a: &fs::Metadata, b: &fs::Metadata) -> bool {
    use std::os::unix::fs::MetadataExt;
    a.dev() == b.dev() && a.ino() == b.ino()
}

#[cfg(not(unix))]
fn same_inode(_: &fs::Metadata, _: &fs::Metadata) -> bool {
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        crate::test_dirs::fresh_dir(&format!("atomic-{name}"))
    }

    fn entries(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    #[test]
    fn writes_and_replaces() {
        let dir = scratch("replace");
        let path = dir.join("out.txt");
        write_file(&path, |w| {
            w.write_all(b"first").unwrap();
            Ok(())
        })
        .unwrap();
        write_file(&path, |w| {
            w.write_all(b"second").unwrap();
            Ok(())
        })
        .unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "second");
        assert_eq!(entries(&dir), ["out.txt"]);
    }

    #[test]
    fn a_failure_midway_keeps_the_old_file_and_leaves_no_temporary() {
        let dir = scratch("midway");
        let path = dir.join("out.txt");
        fs::write(&path, "previous").unwrap();
        // More than the buffer, so part of it reaches the temporary file.
        let err = write_file(&path, |w| {
            w.write_all(&vec![b'x'; 200_000]).unwrap();
            Err(Error::input("writing out.txt", "injected failure"))
        })
        .unwrap_err();
        assert_eq!(err.to_string(), "writing out.txt: injected failure");
        assert_eq!(fs::read_to_string(&path).unwrap(), "previous");
        assert_eq!(entries(&dir), ["out.txt"]);
    }

    #[test]
    fn a_failed_rename_leaves_no_temporary() {
        let dir = scratch("rename");
        let target = dir.join("taken");
        fs::create_dir(&target).unwrap();
        fs::write(target.join("inside.txt"), "keep").unwrap();
        let err = write_file(&target, |w| {
            w.write_all(b"data").unwrap();
            Ok(())
        })
        .unwrap_err();
        assert!(err.is_io(), "{err}");
        assert!(
            err.to_string()
                .starts_with(&format!("{}: replacing failed: ", target.display())),
            "{err}"
        );
        assert_eq!(entries(&dir), ["taken"]);
        assert_eq!(
            fs::read_to_string(target.join("inside.txt")).unwrap(),
            "keep"
        );
    }

    #[test]
    fn a_missing_folder_names_the_target() {
        let dir = scratch("nofolder");
        let path = dir.join("absent").join("out.txt");
        let err = write_file(&path, |_| Ok(())).unwrap_err();
        assert!(
            err.to_string()
                .starts_with(&format!("{}: writing failed: ", path.display())),
            "{err}"
        );
    }

    #[test]
    fn temporary_names_are_hidden_and_unique() {
        let a = temporary_path(Path::new("dir/model.json")).unwrap();
        let b = temporary_path(Path::new("dir/model.json")).unwrap();
        assert_ne!(a, b);
        assert_eq!(a.parent(), Some(Path::new("dir")));
        let name = a.file_name().unwrap().to_string_lossy().into_owned();
        assert!(
            name.starts_with(&format!(".model.json.tmp-{}-", std::process::id())),
            "{name}"
        );
        assert!(temporary_path(Path::new("..")).is_err());
    }

    #[test]
    fn refuses_to_overwrite_an_input() {
        let dir = scratch("input");
        let input = dir.join("data.csv");
        fs::write(&input, "a,y\n1,2\n").unwrap();
        let other = dir.join("out.csv");
        refuse_overwrite_input(&other, &[&input]).unwrap();
        fs::write(&other, "").unwrap();
        refuse_overwrite_input(&other, &[&input]).unwrap();
        // The same file under another spelling.
        let spelled = dir.join(".").join("data.csv");
        let err = refuse_overwrite_input(&spelled, &[&input]).unwrap_err();
        assert_eq!(
            err.to_string(),
            format!(
                "writing {}: it is the same file as the input {}, which writing would destroy; choose another output path",
                spelled.display(),
                input.display()
            )
        );
        #[cfg(unix)]
        {
            let link = dir.join("hard-link.csv");
            fs::hard_link(&input, &link).unwrap();
            assert!(refuse_overwrite_input(&link, &[&other, &input]).is_err());
        }
    }
}
