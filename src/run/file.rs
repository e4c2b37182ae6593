//! A checkpoint file, held under an exclusive lock for the whole run.
//!
//! The lock (`flock` through `std::fs::File::try_lock`) is taken on the file itself, so a
//! second run on the same file is refused at once. Rewrites go to a unique temporary in the
//! same folder that is locked before it is renamed over the file: the path always names a
//! locked file while a run holds it. A run that opened the old file just before the rename
//! sees, once it holds that lock, that the path names another file now, and opens it again.

use super::checkpoint::CheckpointError;
use crate::output::Temporary;
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};

/// How often, and how far apart, a busy lock is tried again before the file is reported in use.
const LOCK_TRIES: u32 = 25;
const LOCK_RETRY: std::time::Duration = std::time::Duration::from_millis(20);

/// The locked file.
pub(crate) struct LockedFile {
    path: PathBuf,
    handle: File,
    /// Created by this run (removed again if the run fails before writing to it).
    created: bool,
    written: bool,
}

fn io(path: &Path, e: impl std::fmt::Display) -> CheckpointError {
    CheckpointError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    }
}

/// Whether `handle` is the file `path` names now.
fn is_current(handle: &File, path: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        match (handle.metadata(), std::fs::metadata(path)) {
            (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = (handle, path);
        true
    }
}

impl LockedFile {
    /// Open `path` (creating it empty when absent) and lock it; `kind` names the run in the
    /// message when another run holds the lock.
    pub(crate) fn open(path: &Path, kind: &'static str) -> Result<LockedFile, CheckpointError> {
        let shown = path;
        let path = crate::output::destination(path).map_err(|e| io(shown, e.message))?;
        for _ in 0..16 {
            let (handle, created) = match std::fs::OpenOptions::new()
                .read(true)
                .write(true)
                .create_new(true)
                .open(&path)
            {
                Ok(f) => (f, true),
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                    crate::input::check_regular(&path).map_err(|e| io(shown, e))?;
                    let mut options = std::fs::OpenOptions::new();
                    options.read(true).write(true);
                    #[cfg(unix)]
                    {
                        use std::os::unix::fs::OpenOptionsExt;
                        options.custom_flags(libc::O_NONBLOCK);
                    }
                    match options.open(&path) {
                        Ok(f) => (f, false),
                        Err(e) if e.kind() == std::io::ErrorKind::NotFound => continue,
                        Err(e) => return Err(io(shown, e)),
                    }
                }
                Err(e) => return Err(io(shown, e)),
            };
            // A lock can be held for a moment by a process forked from its holder (the copy
            // of the descriptor closes at exec): look again for half a second before saying
            // the file is in use. Another run holds it for its whole length.
            let mut tries = 0;
            loop {
                match handle.try_lock() {
                    Ok(()) => break,
                    Err(std::fs::TryLockError::WouldBlock) if tries < LOCK_TRIES => {
                        tries += 1;
                        std::thread::sleep(LOCK_RETRY);
                    }
                    Err(std::fs::TryLockError::WouldBlock) => {
                        return Err(CheckpointError::InUse {
                            path: shown.display().to_string(),
                            kind,
                        })
                    }
                    Err(std::fs::TryLockError::Error(e)) => return Err(io(shown, e)),
                }
            }
            if is_current(&handle, &path) {
                return Ok(LockedFile {
                    path,
                    handle,
                    created,
                    written: false,
                });
            }
            // Replaced by another run's rename between our open and our lock: again.
        }
        Err(io(
            shown,
            "the file keeps being replaced by another process",
        ))
    }

    /// The whole file, refusing more than `cap` bytes; `too_large` says why that is the most
    /// the file can hold.
    pub(crate) fn read(&mut self, cap: u64, too_large: &str) -> Result<Vec<u8>, CheckpointError> {
        crate::input::read_capped(&mut self.handle, cap).map_err(|e| CheckpointError::Read {
            path: self.path.display().to_string(),
            message: match e {
                crate::input::InputError::TooLarge(cap) => {
                    format!("larger than {cap} bytes, {too_large}")
                }
                other => other.to_string(),
            },
        })
    }

    /// Replace the file's content by `text` through a locked temporary and a rename; later
    /// appends go to the new file.
    pub(crate) fn replace(&mut self, text: &str) -> Result<(), CheckpointError> {
        let temp = Temporary::beside(&self.path).map_err(|e| io(&self.path, e.message))?;
        if let Some(f) = temp.as_file() {
            f.try_lock().map_err(|e| io(temp.path(), e))?;
            let mut w: &File = f;
            w.write_all(text.as_bytes())
                .map_err(|e| io(temp.path(), e))?;
        }
        // The old handle (and its lock) is released only after the rename.
        self.handle = temp
            .persist(&self.path)
            .map_err(|e| io(&self.path, e.message))?;
        self.written = true;
        Ok(())
    }

    /// Append one line and its newline.
    pub(crate) fn append(&mut self, line: &str) -> Result<(), CheckpointError> {
        let mut bytes = Vec::with_capacity(line.len() + 1);
        bytes.extend_from_slice(line.as_bytes());
        bytes.push(b'\n');
        self.handle.write_all(&bytes).map_err(|e| io(&self.path, e))
    }

    /// Give up after a failure: a file this run created and never wrote is removed.
    pub(crate) fn abandon(self) {
        if self.created && !self.written {
            let _ = std::fs::remove_file(&self.path);
        }
    }

    /// Remove the file (still holding its lock, so no other run has opened it meanwhile).
    pub(crate) fn remove(self) -> Result<(), CheckpointError> {
        std::fs::remove_file(&self.path).map_err(|e| io(&self.path, e))
    }
}
