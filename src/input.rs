//! Bounded reading of input files: every file umbral reads (metric files, measurement files,
//! checks files, scan files, the listing of a metrics folder) goes through here.
//!
//! A path that names something other than a regular file (a folder, a device such as
//! `/dev/zero`, a pipe) is refused before it is read, and a file larger than its cap
//! ([`MAX_INPUT_BYTES`] unless the caller states another) is refused without reading past the
//! cap, so no input can make umbral read without end or exhaust memory.
//!
//! The errors' `Display` is the reason only, without the path, like `std::io::Error`: callers
//! already name the file in their own messages.

use std::fs::File;
use std::io::Read;
use std::path::{Path, PathBuf};

/// The most bytes read from one input file (4 MiB): far more than any metric, measurement or
/// checks file needs.
pub const MAX_INPUT_BYTES: u64 = 4 * 1024 * 1024;

/// The most entries a folder listing may yield.
pub const MAX_LISTED_FILES: usize = 10_000;

/// Why an input could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum InputError {
    /// The operating system's error (not found, permission denied...).
    #[error("{0}")]
    Io(String),
    /// A folder, device, pipe or socket where a file is expected.
    #[error("not a regular file (it is {0})")]
    NotRegular(&'static str),
    /// Larger than the cap.
    #[error("larger than {}, the limit for an input file", bytes(*.0))]
    TooLarge(u64),
    /// Not UTF-8 text.
    #[error("not UTF-8 text (line {line}, byte {column} of the line)")]
    NotText {
        /// 1-based line of the first invalid byte.
        line: usize,
        /// 1-based byte position of that byte in its line.
        column: usize,
    },
    /// A folder with too many entries.
    #[error("more than {0} entries")]
    TooManyEntries(usize),
}

/// `4 MiB`, `512 KiB` or `100 bytes`.
fn bytes(n: u64) -> String {
    if n >= 1 << 20 && n.is_multiple_of(1 << 20) {
        format!("{} MiB", n >> 20)
    } else if n >= 1 << 10 && n.is_multiple_of(1 << 10) {
        format!("{} KiB", n >> 10)
    } else {
        format!("{n} bytes")
    }
}

fn io(e: std::io::Error) -> InputError {
    InputError::Io(e.to_string())
}

/// What a non-regular file is, for messages.
fn kind(t: std::fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_char_device() {
            return "a character device";
        }
        if t.is_block_device() {
            return "a block device";
        }
        if t.is_fifo() {
            return "a pipe";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if t.is_dir() {
        "a folder"
    } else {
        "not a file"
    }
}

/// Refuse anything but a regular file (symbolic links are followed).
pub fn check_regular(path: &Path) -> Result<std::fs::Metadata, InputError> {
    let meta = std::fs::metadata(path).map_err(io)?;
    if meta.is_file() {
        Ok(meta)
    } else {
        Err(InputError::NotRegular(kind(meta.file_type())))
    }
}

/// Open a regular file for reading. A pipe swapped in after the check cannot block the open
/// (`O_NONBLOCK`), and the opened file is checked again.
pub fn open_regular(path: &Path) -> Result<File, InputError> {
    check_regular(path)?;
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NONBLOCK);
    }
    let file = options.open(path).map_err(io)?;
    let meta = file.metadata().map_err(io)?;
    if !meta.is_file() {
        return Err(InputError::NotRegular(kind(meta.file_type())));
    }
    Ok(file)
}

/// Read an open file to its end, refusing more than `cap` bytes.
pub fn read_capped(file: &mut File, cap: u64) -> Result<Vec<u8>, InputError> {
    if file.metadata().map_err(io)?.len() > cap {
        return Err(InputError::TooLarge(cap));
    }
    let mut data = Vec::new();
    // The file may grow after the size check: never read more than one byte past the cap.
    file.take(cap.saturating_add(1))
        .read_to_end(&mut data)
        .map_err(io)?;
    if data.len() as u64 > cap {
        return Err(InputError::TooLarge(cap));
    }
    Ok(data)
}

/// The bytes of a regular file of at most `cap` bytes.
pub fn read_bytes_capped(path: &Path, cap: u64) -> Result<Vec<u8>, InputError> {
    read_capped(&mut open_regular(path)?, cap)
}

/// Decode UTF-8, naming the line of the first invalid byte.
pub fn utf8(data: Vec<u8>) -> Result<String, InputError> {
    String::from_utf8(data).map_err(|e| {
        let bad = e.utf8_error().valid_up_to();
        let data = e.as_bytes();
        let line_start = data[..bad]
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |i| i + 1);
        InputError::NotText {
            line: data[..bad].iter().filter(|&&b| b == b'\n').count() + 1,
            column: bad - line_start + 1,
        }
    })
}

/// The text of a regular file of at most [`MAX_INPUT_BYTES`].
pub fn read_text(path: &Path) -> Result<String, InputError> {
    utf8(read_bytes_capped(path, MAX_INPUT_BYTES)?)
}

/// The regular files (symbolic links followed) in `dir` whose extension is `extension`,
/// sorted by path; at most [`MAX_LISTED_FILES`] entries of the folder are looked at.
pub fn list_files(dir: &Path, extension: &str) -> Result<Vec<PathBuf>, InputError> {
    let mut paths = Vec::new();
    for (n, entry) in std::fs::read_dir(dir).map_err(io)?.enumerate() {
        if n >= MAX_LISTED_FILES {
            return Err(InputError::TooManyEntries(MAX_LISTED_FILES));
        }
        let path = entry.map_err(io)?.path();
        if path.is_file() && path.extension().is_some_and(|x| x == extension) {
            paths.push(path);
        }
    }
    paths.sort();
    Ok(paths)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn devices_and_folders_are_refused_before_reading() {
        let err = read_text(Path::new("/dev/zero")).unwrap_err();
        assert!(err.to_string().contains("not a regular file"));
        let dir = std::env::temp_dir();
        assert!(read_text(&dir)
            .unwrap_err()
            .to_string()
            .contains("a folder"));
        assert_eq!(MAX_INPUT_BYTES, 4 * 1024 * 1024);
    }
}
