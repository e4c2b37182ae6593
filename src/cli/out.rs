//! Standard output that reports a failed write (a full disk, a closed file) as an error like
//! any other, instead of panicking inside `println!`.

use super::CliError;
use std::io::Write;

/// Write to standard output like `println!`, returning `Result<(), CliError>`.
macro_rules! outln {
    () => {
        $crate::cli::out::write_line(format_args!(""))
    };
    ($($arg:tt)*) => {
        $crate::cli::out::write_line(format_args!($($arg)*))
    };
}

fn failed(e: std::io::Error) -> CliError {
    CliError::usage(format!("cannot write to standard output: {e}"))
}

/// One line on standard output.
pub fn write_line(args: std::fmt::Arguments<'_>) -> Result<(), CliError> {
    let mut out = std::io::stdout().lock();
    out.write_fmt(args)
        .and_then(|_| out.write_all(b"\n"))
        .map_err(failed)
}

/// Text on standard output as it is.
pub fn write_text(text: &str) -> Result<(), CliError> {
    std::io::stdout()
        .lock()
        .write_all(text.as_bytes())
        .map_err(failed)
}

/// Flush standard output (a buffered line's write error shows only here).
pub fn flush() -> Result<(), CliError> {
    std::io::stdout().lock().flush().map_err(failed)
}
