//! The one writer of output files (`--out`, the `--chart` folder, the log of `log
//! add`, the file of `init`).
//!
//! - Every target is checked before any work ([`check_target`], [`check_chart_folder`],
//!   [`check_log`]): a bad one is a usage error (exit 2).
//! - `-` as an output path means standard output ([`is_stdout`]).
//! - A symlink is written through: the real file gets the bytes and the link stays.
//! - Bytes go to a temporary file from the `tempfile` crate in the target's folder,
//!   given the target's final permissions, synced, then renamed over the target; on
//!   Linux the file has no name until it is complete (`O_TMPFILE`), so a run killed
//!   while writing leaves nothing behind. On failure the temporary file is removed.
//!   Naming and renaming happen under [`commit_guard`], which the binary's handler
//!   of SIGINT and SIGTERM takes before it ends the process, so a run interrupted
//!   then finishes its renames first (SIGKILL cannot be caught: it can leave a
//!   named temporary file only in the few system calls between link and rename).
//! - A set of charts is staged whole before the first one replaces an old file.

use crate::error::Error;
use std::fs::Permissions;
use std::io::Write;
use std::path::{Path, PathBuf};
use tempfile::NamedTempFile;

/// Held while temporary files have names, from naming to renaming.
static COMMIT: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Wait until no temporary file has a name, and keep it so while the guard lives
/// (a signal handler takes it before the process ends).
pub fn commit_guard() -> std::sync::MutexGuard<'static, ()> {
    COMMIT
        .lock()
        .unwrap_or_else(std::sync::PoisonError::into_inner)
}

/// Whether `path` is `-`, standard output.
pub fn is_stdout(path: &Path) -> bool {
    path.as_os_str() == "-"
}

fn output_error(path: &Path, e: &std::io::Error) -> Error {
    Error::Output {
        path: path.display().to_string(),
        reason: e.to_string(),
    }
}

/// Refuse to write `out` over any of `inputs`.
pub fn refuse_overwriting_inputs(out: &Path, inputs: &[&Path]) -> Result<(), Error> {
    if is_stdout(out) {
        return Ok(());
    }
    let canon = |p: &Path| std::fs::canonicalize(p).ok();
    if let Some(o) = canon(out) {
        for i in inputs {
            if canon(i).as_ref() == Some(&o) {
                return Err(Error::Usage(format!(
                    "{}: that is an input file; refusing to overwrite it",
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

/// The file `path` finally names: symlinks followed, a dangling one included (its
/// target is then created).
pub fn resolve(path: &Path) -> PathBuf {
    let mut p = path.to_path_buf();
    for _ in 0..40 {
        match std::fs::symlink_metadata(&p) {
            Ok(m) if m.file_type().is_symlink() => match std::fs::read_link(&p) {
                Ok(t) if t.is_absolute() => p = t,
                Ok(t) => p = folder_of(&p).join(t),
                Err(_) => break,
            },
            _ => break,
        }
    }
    p
}

/// Refuse, before any work, an output path that cannot or must not be written: with
/// `create_new` an existing one; one whose folder is missing or is not a folder; one
/// that is not a regular file (a folder, a device such as `/dev/full`, a pipe), which
/// the rename would replace instead of writing to. `-` (standard output) passes.
pub fn check_target(path: &Path, create_new: bool) -> Result<(), Error> {
    if is_stdout(path) {
        return Ok(());
    }
    if create_new && std::fs::symlink_metadata(path).is_ok() {
        return Err(Error::Usage(format!(
            "{}: the file exists; refusing to overwrite it (choose another name or remove it first)",
            path.display()
        )));
    }
    let real = resolve(path);
    let dir = folder_of(&real);
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
    if let Ok(m) = std::fs::metadata(&real)
        && !m.is_file()
    {
        return Err(Error::Usage(format!(
            "{}: not a regular file (a folder, device or pipe); refusing to replace it, choose a file path",
            path.display()
        )));
    }
    Ok(())
}

/// Refuse, before any work, a log that `log add` cannot append to: as
/// [`check_target`], and standard output, and a file whose permission bits forbid
/// writing (decided by the bits, not by `access(2)`, which lets the superuser write
/// anything).
pub fn check_log(path: &Path) -> Result<(), Error> {
    if is_stdout(path) {
        return Err(Error::Usage(
            "-: a log is a file that keeps its rows; give the path of its CSV file".to_string(),
        ));
    }
    check_target(path, false)?;
    if let Ok(m) = std::fs::metadata(path)
        && !writable_by_bits(&m)
    {
        return Err(Error::Usage(format!(
            "{}: the file is read-only; refusing to add a row to it (make it writable first, e.g. chmod u+w)",
            path.display()
        )));
    }
    Ok(())
}

/// How many times [`lock_folder_of`] tries for the lock, [`LOCK_PAUSE`] apart:
/// about 10 s in all, far longer than one `log add` holds it (milliseconds).
pub const LOCK_ATTEMPTS: u32 = 2000;
/// The pause between two tries for the lock.
pub const LOCK_PAUSE: std::time::Duration = std::time::Duration::from_millis(5);

/// An exclusive advisory lock on a folder, held until dropped.
#[derive(Debug)]
pub struct FolderLock {
    _folder: std::fs::File,
}

/// Take an exclusive advisory lock (`flock(2)`) on the folder of `path`, waiting
/// while another process holds it. `log add` holds it from reading the log until
/// the new log is renamed into place, so adds to a log serialise instead of one
/// replacing the log with a copy that misses the other's row. The folder, not the
/// log, is locked: the log is replaced by a rename (a lock on the old file would
/// not stop a writer that opened the new one) and may not exist yet. A folder that
/// stays locked for [`LOCK_ATTEMPTS`] tries, or a file system without locks, is an
/// error (exit 2) with nothing written.
#[cfg(unix)]
pub fn lock_folder_of(path: &Path) -> Result<FolderLock, Error> {
    use rustix::fs::{FlockOperation, flock};
    use rustix::io::Errno;
    // A log reached through a symbolic link is written in its target's folder
    // (`write_atomic`): lock that one, whichever link a writer came through. The
    // lock is on the folder's inode, however the path to it is spelled.
    let folder = folder_of(&resolve(path));
    let folder = folder.as_path();
    let refuse =
        |why: String| Error::Usage(format!("{}: {why}; nothing was written", path.display()));
    let dir = std::fs::File::open(folder).map_err(|e| {
        refuse(format!(
            "cannot open its folder {} to lock it against other writers: {e}",
            folder.display()
        ))
    })?;
    for _ in 0..LOCK_ATTEMPTS {
        match flock(&dir, FlockOperation::NonBlockingLockExclusive) {
            Ok(()) => return Ok(FolderLock { _folder: dir }),
            Err(Errno::WOULDBLOCK | Errno::INTR) => std::thread::sleep(LOCK_PAUSE),
            Err(e) => {
                return Err(refuse(format!(
                    "its folder {} cannot be locked against other writers ({e}); keep the log on a local disk, or record in a register (docs/register.md)",
                    folder.display()
                )));
            }
        }
    }
    Err(refuse(format!(
        "another writer has held the lock on its folder {} for more than {} s; try again",
        folder.display(),
        (LOCK_PAUSE * LOCK_ATTEMPTS).as_secs()
    )))
}

/// Without `flock(2)` there is no lock: adds to one log must not overlap.
#[cfg(not(unix))]
pub fn lock_folder_of(_path: &Path) -> Result<FolderLock, Error> {
    Err(Error::Usage(
        "log add needs a file lock, which this system does not offer here; record in a register (docs/register.md)".to_string(),
    ))
}

/// Whether the permission bits let this process's user write the file.
#[cfg(unix)]
fn writable_by_bits(m: &std::fs::Metadata) -> bool {
    use std::os::unix::fs::MetadataExt;
    let mode = m.mode();
    if m.uid() == rustix::process::geteuid().as_raw() {
        mode & 0o200 != 0
    } else if m.gid() == rustix::process::getegid().as_raw() {
        mode & 0o020 != 0
    } else {
        mode & 0o002 != 0
    }
}

#[cfg(not(unix))]
fn writable_by_bits(m: &std::fs::Metadata) -> bool {
    !m.permissions().readonly()
}

/// Refuse, before any work, a `--chart` folder that cannot be made: one that exists
/// but is not a folder, or whose nearest existing ancestor is not a folder.
pub fn check_chart_folder(dir: &Path) -> Result<(), Error> {
    let mut at = Some(dir);
    while let Some(d) = at {
        let d = if d.as_os_str().is_empty() {
            Path::new(".")
        } else {
            d
        };
        match std::fs::metadata(d) {
            Ok(m) if m.is_dir() => return Ok(()),
            Ok(_) => {
                let what = if d == dir {
                    "it is not a folder".to_string()
                } else {
                    format!("{} is not a folder", d.display())
                };
                return Err(Error::Usage(format!(
                    "{}: {what}; choose a folder for the charts",
                    dir.display()
                )));
            }
            Err(_) => at = d.parent(),
        }
    }
    Ok(())
}

/// The permissions a new file gets: 0666 less the process's umask.
#[cfg(unix)]
fn new_file_permissions() -> Permissions {
    use std::os::unix::fs::PermissionsExt;
    // Read, not set, the umask (setting it to read it would race with other threads).
    let umask = std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find_map(|l| l.strip_prefix("Umask:"))
                .and_then(|v| u32::from_str_radix(v.trim(), 8).ok())
        })
        .unwrap_or(0o022);
    Permissions::from_mode(0o666 & !umask)
}

#[cfg(not(unix))]
fn new_file_permissions() -> Permissions {
    tempfile::tempfile()
        .and_then(|f| f.metadata())
        .map(|m| m.permissions())
        .expect("a temporary file")
}

/// A complete temporary file in the target's folder, not yet renamed over it: on
/// Linux first without a name ([`Staged::name`] links it into the folder), else named
/// from the start.
struct Staged<'a> {
    /// The unnamed file, complete, until it is linked.
    unnamed: Option<std::fs::File>,
    /// The named temporary file.
    file: Option<NamedTempFile<()>>,
    /// The bytes (to write again under a name when linking is not possible).
    bytes: &'a [u8],
    /// The permissions the file gets before it is named.
    permissions: Permissions,
    /// The real target (symlinks followed).
    target: PathBuf,
    /// The path as the user named it.
    shown: PathBuf,
}

/// Give the unnamed temporary file `f` the name `p` (Linux: through `/proc`).
#[cfg(target_os = "linux")]
fn link_unnamed(f: &std::fs::File, p: &Path) -> std::io::Result<()> {
    use std::os::fd::AsRawFd;
    let proc_path = format!("/proc/self/fd/{}", f.as_raw_fd());
    rustix::fs::linkat(
        rustix::fs::CWD,
        proc_path.as_str(),
        rustix::fs::CWD,
        p,
        rustix::fs::AtFlags::SYMLINK_FOLLOW,
    )
    .map_err(std::io::Error::from)
}

/// The temporary file's name prefix for a target named `name`.
fn prefix(target: &Path) -> String {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    format!(".{name}.")
}

/// Write `bytes`, the permissions and a sync into `f`.
fn fill(f: &mut std::fs::File, bytes: &[u8], permissions: &Permissions) -> std::io::Result<()> {
    f.write_all(bytes)?;
    f.set_permissions(permissions.clone())?;
    f.sync_all()
}

/// Write `bytes` into a complete temporary file beside `shown`'s real target, with
/// the target's permissions (a new file's when there is none).
fn stage<'a>(shown: &Path, bytes: &'a [u8]) -> Result<Staged<'a>, Error> {
    let target = resolve(shown);
    let permissions = std::fs::metadata(&target)
        .map(|m| m.permissions())
        .unwrap_or_else(|_| new_file_permissions());
    let mut staged = Staged {
        unnamed: None,
        file: None,
        bytes,
        permissions,
        target,
        shown: shown.to_path_buf(),
    };
    #[cfg(target_os = "linux")]
    {
        // Unnamed while written and synced, so a killed run leaves nothing behind.
        let dir = folder_of(&staged.target);
        if let Ok(mut f) = tempfile::tempfile_in(&dir)
            && fill(&mut f, bytes, &staged.permissions).is_ok()
        {
            staged.unnamed = Some(f);
            return Ok(staged);
        }
    }
    staged.name()?;
    Ok(staged)
}

impl Staged<'_> {
    /// Give the complete file a temporary name in the target's folder (no work is
    /// left between this and [`Staged::commit`] but the rename).
    fn name(&mut self) -> Result<(), Error> {
        if self.file.is_some() {
            return Ok(());
        }
        let dir = folder_of(&self.target);
        let prefix = prefix(&self.target);
        let mut builder = tempfile::Builder::new();
        builder.prefix(&prefix).suffix(".tmp");
        #[cfg(target_os = "linux")]
        if let Some(f) = self.unnamed.take()
            && let Ok(file) = builder.make_in(&dir, |p| link_unnamed(&f, p))
        {
            self.file = Some(file);
            return Ok(());
        }
        // No unnamed file, or it cannot be linked (no /proc): a named one.
        let file = builder
            .tempfile_in(&dir)
            .and_then(|t| {
                let (mut f, path) = t.into_parts();
                fill(&mut f, self.bytes, &self.permissions)?;
                Ok(NamedTempFile::from_parts((), path))
            })
            .map_err(|e| output_error(&self.shown, &e))?;
        self.file = Some(file);
        Ok(())
    }

    /// Rename the named temporary file over the target.
    fn commit(mut self) -> Result<(), Error> {
        self.name()?;
        let shown = self.shown;
        match self.file {
            Some(file) => file
                .persist(&self.target)
                .map(|_| ())
                .map_err(|e| output_error(&shown, &e.error)),
            None => Err(Error::Internal(format!(
                "{}: the temporary file has no name",
                shown.display()
            ))),
        }
    }
}

/// Write `bytes` to `path` atomically (through a symlink to its target); with
/// `create_new`, refuse an existing file.
pub fn write_atomic(path: &Path, bytes: &[u8], create_new: bool) -> Result<(), Error> {
    check_target(path, create_new)?;
    let staged = stage(path, bytes)?;
    let _guard = commit_guard();
    staged.commit()
}

/// Write each `(name, svg)` to `dir/stem-NAME.svg` (creating `dir` if missing), all
/// or nothing: every file is written in full to a temporary file first, and only
/// then do they replace the old charts. Returns the paths in chart order.
pub fn write_charts(
    dir: &Path,
    stem: &str,
    charts: &[(&str, String)],
) -> Result<Vec<PathBuf>, Error> {
    let files: Vec<(String, &str)> = charts
        .iter()
        .map(|(name, svg)| (format!("{stem}-{name}.svg"), svg.as_str()))
        .collect();
    write_files(dir, &files)
}

/// Write each `(file name, text)` into `dir` (creating `dir` if missing), all or
/// nothing, as [`write_charts`] does. Returns the paths in the order given.
pub fn write_files(dir: &Path, files: &[(String, &str)]) -> Result<Vec<PathBuf>, Error> {
    check_chart_folder(dir)?;
    std::fs::create_dir_all(dir).map_err(|e| output_error(dir, &e))?;
    let paths: Vec<PathBuf> = files.iter().map(|(name, _)| dir.join(name)).collect();
    for p in &paths {
        check_target(p, false)?;
    }
    // Write and sync every file unnamed, then name them all, then rename them all:
    // a failure before the renames leaves every old file in place.
    let mut staged = paths
        .iter()
        .zip(files)
        .map(|(p, (_, text))| stage(p, text.as_bytes()))
        .collect::<Result<Vec<_>, Error>>()?;
    let _guard = commit_guard();
    for s in &mut staged {
        s.name()?;
    }
    for s in staged {
        s.commit()?;
    }
    Ok(paths)
}
