//! All-or-nothing output files: an [`OutputTransaction`] writes every file of a command to a
//! fresh temporary beside its destination and renames them into place only on
//! [`commit`](OutputTransaction::commit), when the whole command has succeeded. Dropped
//! without a commit (an error, a panic), it removes its temporaries, so a failed command
//! leaves neither a half-written file nor a temporary behind, and an existing file is kept as
//! it was.
//!
//! Temporaries are named `.NAME.XXXXXX.tmp` (unique, created exclusively by the `tempfile`
//! crate) in the destination's folder, so the final rename never crosses file systems.
//! [`remove_pending_temporaries`] deletes every live one, for an interrupt handler that ends
//! the process without running destructors.
//!
//! ```
//! use umbral::output::OutputTransaction;
//! let dir = std::env::temp_dir().join(format!("umbral-output-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let (a, b) = (dir.join("a.csv"), dir.join("b.svg"));
//! {
//!     let mut tx = OutputTransaction::new();
//!     tx.write(&a, b"1,2\n").unwrap();
//!     let _ = tx.stage(&b).unwrap();
//!     // Dropped without commit: nothing appears.
//! }
//! assert!(!a.exists() && std::fs::read_dir(&dir).unwrap().next().is_none());
//! let mut tx = OutputTransaction::new();
//! tx.write(&a, b"1,2\n").unwrap();
//! tx.commit().unwrap();
//! assert_eq!(std::fs::read_to_string(&a).unwrap(), "1,2\n");
//! std::fs::remove_dir_all(&dir).unwrap();
//! ```

use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use tempfile::{NamedTempFile, TempPath};

/// A file that could not be written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("cannot write '{path}': {message}")]
pub struct OutputError {
    /// The file that could not be written.
    pub path: String,
    /// The operating system's message.
    pub message: String,
}

/// An I/O error's text without the temporary's path that `tempfile` adds to it: the
/// operating system's message when there is one.
fn plain(e: std::io::Error) -> String {
    match e.raw_os_error() {
        Some(code) => std::io::Error::from_raw_os_error(code).to_string(),
        None => e.to_string(),
    }
}

impl OutputError {
    fn new(path: &Path, message: impl std::fmt::Display) -> Self {
        OutputError {
            path: path.display().to_string(),
            message: message.to_string(),
        }
    }
}

/// Temporaries not yet renamed or removed, for [`remove_pending_temporaries`].
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn pending() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    PENDING.lock().unwrap_or_else(|e| e.into_inner())
}

/// Delete every temporary that is neither renamed into place nor removed yet. Meant for an
/// interrupt handler about to end the process (destructors do not run then).
pub fn remove_pending_temporaries() {
    for path in pending().drain(..) {
        let _ = std::fs::remove_file(path);
    }
}

/// A temporary file that unregisters itself when renamed or removed.
pub struct Temporary {
    file: Option<NamedTempFile>,
}

impl Temporary {
    /// A new empty temporary in the folder of `dest`, readable as a normal new file would be
    /// (mode 0666 less the umask on Unix), registered for [`remove_pending_temporaries`].
    pub fn beside(dest: &Path) -> Result<Temporary, OutputError> {
        let name = dest
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .ok_or_else(|| OutputError::new(dest, "not a file name"))?;
        let dir = match dest.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        let prefix = format!(".{name}.");
        let mut builder = tempfile::Builder::new();
        builder.prefix(&prefix).suffix(".tmp");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            builder.permissions(std::fs::Permissions::from_mode(0o666));
        }
        let file = builder
            .tempfile_in(dir)
            .map_err(|e| OutputError::new(dest, plain(e)))?;
        pending().push(file.path().to_path_buf());
        Ok(Temporary { file: Some(file) })
    }

    /// Its path.
    pub fn path(&self) -> &Path {
        self.file.as_ref().map_or(Path::new(""), |f| f.path())
    }

    /// The open file.
    pub fn as_file(&self) -> Option<&std::fs::File> {
        self.file.as_ref().map(|f| f.as_file())
    }

    /// Flush to disk and rename to `dest`, returning the open file (now at `dest`).
    pub fn persist(mut self, dest: &Path) -> Result<std::fs::File, OutputError> {
        let file = self.file.take().expect("a temporary is persisted once");
        let path = file.path().to_path_buf();
        unregister(&path);
        file.as_file()
            .sync_all()
            .map_err(|e| OutputError::new(dest, e))?;
        file.persist(dest)
            .map_err(|e| OutputError::new(dest, plain(e.error)))
    }

    /// Keep the file on disk but hand its path over (removed when the `TempPath` drops).
    fn into_temp_path(mut self) -> TempPath {
        let file = self.file.take().expect("a temporary is handed over once");
        file.into_temp_path()
    }
}

impl Drop for Temporary {
    fn drop(&mut self) {
        if let Some(f) = &self.file {
            unregister(f.path());
        }
    }
}

fn unregister(path: &Path) {
    let mut p = pending();
    if let Some(i) = p.iter().position(|q| q == path) {
        p.swap_remove(i);
    }
}

/// Where to write for `dest`: the target of a symbolic link, refusing folders and devices.
pub(crate) fn destination(dest: &Path) -> Result<PathBuf, OutputError> {
    match std::fs::symlink_metadata(dest) {
        Err(_) => Ok(dest.to_path_buf()),
        Ok(meta) => {
            let target = if meta.file_type().is_symlink() {
                std::fs::canonicalize(dest).unwrap_or_else(|_| dest.to_path_buf())
            } else {
                dest.to_path_buf()
            };
            match crate::input::check_regular(&target) {
                Ok(_) => Ok(target),
                Err(crate::input::InputError::Io(_)) => Ok(target), // a dangling link
                Err(e) => Err(OutputError::new(dest, e)),
            }
        }
    }
}

/// `dest` with its folder made absolute, so two spellings of one file compare equal.
fn key(dest: &Path) -> PathBuf {
    let dir = match dest.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    match (std::fs::canonicalize(dir), dest.file_name()) {
        (Ok(d), Some(name)) => d.join(name),
        _ => dest.to_path_buf(),
    }
}

/// A temporary staged for a destination.
struct Staged {
    temp: TempPath,
    dest: PathBuf,
    shown: PathBuf,
}

/// Files written all-or-nothing (see the module documentation).
#[derive(Default)]
pub struct OutputTransaction {
    staged: Vec<Staged>,
}

impl OutputTransaction {
    /// An empty transaction.
    pub fn new() -> Self {
        Self::default()
    }

    /// A fresh empty temporary beside `dest` for the caller to write; it becomes `dest` on
    /// commit. Fails at once when `dest` cannot be written (no such folder, a folder or device
    /// in its place, the same destination staged twice), before any work is done for it.
    pub fn stage(&mut self, dest: &Path) -> Result<PathBuf, OutputError> {
        let target = destination(dest)?;
        if self.staged.iter().any(|s| key(&s.dest) == key(&target)) {
            return Err(OutputError::new(
                dest,
                "the same file is named twice as an output",
            ));
        }
        // Stays registered for the interrupt handler until the commit renames it.
        let temp = Temporary::beside(&target)?;
        let path = temp.path().to_path_buf();
        self.staged.push(Staged {
            temp: temp.into_temp_path(),
            dest: target,
            shown: dest.to_path_buf(),
        });
        Ok(path)
    }

    /// Write `bytes` as the content of `dest` (staged now unless [`stage`](Self::stage)d
    /// before).
    pub fn write(&mut self, dest: &Path, bytes: &[u8]) -> Result<(), OutputError> {
        let target = destination(dest)?;
        let path = match self.staged.iter().find(|s| key(&s.dest) == key(&target)) {
            Some(s) => s.temp.to_path_buf(),
            None => self.stage(dest)?,
        };
        let mut file = std::fs::OpenOptions::new()
            .write(true)
            .truncate(true)
            .open(&path)
            .map_err(|e| OutputError::new(dest, e))?;
        file.write_all(bytes)
            .and_then(|_| file.flush())
            .map_err(|e| OutputError::new(dest, e))
    }

    /// Rename every staged file into place, in the order staged; returns the destinations
    /// as given.
    pub fn commit(mut self) -> Result<Vec<PathBuf>, OutputError> {
        let mut done = Ok(Vec::new());
        for Staged { temp, dest, shown } in std::mem::take(&mut self.staged) {
            unregister(&temp);
            let Ok(list) = &mut done else {
                continue; // an earlier rename failed: the rest are removed as they drop
            };
            // Flush to disk before the rename, so a crash cannot leave an empty file in place.
            let synced = std::fs::File::open(&temp).and_then(|f| f.sync_all());
            match synced.and_then(|_| temp.persist(&dest).map_err(|e| e.error)) {
                Ok(()) => list.push(shown),
                Err(e) => done = Err(OutputError::new(&shown, plain(e))),
            }
        }
        done
    }
}

impl Drop for OutputTransaction {
    fn drop(&mut self) {
        for s in &self.staged {
            unregister(&s.temp);
        }
        // Each `TempPath` removes its file as it drops.
    }
}
