//! Writing outputs safely: to a temporary file in the same folder, then renamed, so
//! that an interrupted or failed run leaves earlier files as they were.

use crate::error::Error;
use std::io::Write;
use std::path::{Path, PathBuf};

fn output_error(path: &Path, e: &std::io::Error) -> Error {
    Error::Output {
        path: path.display().to_string(),
        reason: e.to_string(),
    }
}

/// Refuse to write `out` over any of `inputs`.
pub fn refuse_overwriting_inputs(out: &Path, inputs: &[&Path]) -> Result<(), Error> {
    let canon = |p: &Path| std::fs::canonicalize(p).ok();
    if let Some(o) = canon(out) {
        for i in inputs {
            if canon(i).as_ref() == Some(&o) {
                return Err(Error::Usage(format!(
                    "--out {}: that is an input file; refusing to overwrite it",
                    out.display()
                )));
            }
        }
    }
    Ok(())
}

/// The folder `path` will be written in.
fn folder_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Refuse, before anything is written, an output path [`write_atomic`] cannot or must
/// not replace: with `create_new` an existing one; one whose folder is missing or is
/// not a folder; one that is not a regular file (a folder, a device such as
/// `/dev/full`, a pipe), which the rename would replace instead of writing to.
pub fn check_target(path: &Path, create_new: bool) -> Result<(), Error> {
    if create_new && path.exists() {
        return Err(Error::Usage(format!(
            "{}: the file exists; refusing to overwrite it (choose another name or remove it first)",
            path.display()
        )));
    }
    let dir = folder_of(path);
    if !dir.is_dir() {
        let what = if dir.exists() {
            format!("{} is not a folder; choose another path", dir.display())
        } else {
            format!(
                "the folder {} does not exist; create it first or choose another path",
                dir.display()
            )
        };
        return Err(Error::Usage(format!("{}: {what}", path.display())));
    }
    if let Ok(m) = std::fs::metadata(path)
        && !m.is_file()
    {
        return Err(Error::Usage(format!(
            "{}: not a regular file (a folder, device or pipe); refusing to replace it, choose a file path",
            path.display()
        )));
    }
    Ok(())
}

/// Write `bytes` to `path` atomically; with `create_new`, refuse an existing file.
pub fn write_atomic(path: &Path, bytes: &[u8], create_new: bool) -> Result<(), Error> {
    check_target(path, create_new)?;
    let dir = folder_of(path);
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = (|| {
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    result.map_err(|e| {
        let _ = std::fs::remove_file(&tmp);
        output_error(path, &e)
    })
}
