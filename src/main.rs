//! The `umbral` command line. Every error is one line on stderr and exit code 2.

mod cli;

/// mimalloc instead of the system allocator: the parallel loops allocate on rayon's threads,
/// where glibc's per-thread arenas took more page faults and lock waits (docs/performance.md).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::io::Write;
use std::process::ExitCode;

fn main() -> ExitCode {
    restore_default_sigpipe();
    match cli::run(std::env::args_os()) {
        Ok(code) => code,
        Err(err) => {
            // Nothing is left to report a failure to if standard error fails too.
            let _ = if err.exit_code() == cli::INTERRUPTED {
                writeln!(std::io::stderr(), "{err}")
            } else {
                writeln!(std::io::stderr(), "error: {err}")
            };
            ExitCode::from(err.exit_code())
        }
    }
}

/// Let a closed pipe (`umbral metrics | head`) end the process quietly, as command-line tools
/// do, instead of a failed write panicking inside `println!`.
fn restore_default_sigpipe() {
    #[cfg(unix)]
    // SAFETY: setting a signal's disposition to its default at start-up, before any thread.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}
