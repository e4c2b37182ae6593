//! Ctrl-C. While a long run (a scan, a bound, the demo) runs, the first Ctrl-C asks its
//! executor to stop after the items in progress (it then says how far it got and how to
//! resume); otherwise, or at a second Ctrl-C, the process ends at once after clearing its
//! progress bars and removing its temporary files (finished items are already in the run's
//! checkpoint).

use std::io::Write;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Mutex, Once};

static STOP: AtomicBool = AtomicBool::new(false);
static GRACEFUL: AtomicBool = AtomicBool::new(false);
/// What the items of the graceful run are (`points`), for the note.
static UNIT: Mutex<&'static str> = Mutex::new("items");
static BARS: Mutex<Vec<indicatif::ProgressBar>> = Mutex::new(Vec::new());

/// Install the handler (once per process).
pub fn install() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // Without a handler Ctrl-C still ends the process, only less tidily.
        let _ = ctrlc::set_handler(on_interrupt);
    });
}

fn bars() -> std::sync::MutexGuard<'static, Vec<indicatif::ProgressBar>> {
    BARS.lock().unwrap_or_else(|e| e.into_inner())
}

fn on_interrupt() {
    if GRACEFUL.load(Ordering::SeqCst) && !STOP.swap(true, Ordering::SeqCst) {
        let unit = *UNIT.lock().unwrap_or_else(|e| e.into_inner());
        let note = format!("stopping after the {unit} in progress (Ctrl-C again to stop at once)");
        let say = || {
            let _ = writeln!(std::io::stderr(), "{note}");
        };
        match bars().last() {
            Some(bar) => bar.suspend(say),
            None => say(),
        }
        return;
    }
    for bar in bars().iter() {
        bar.finish_and_clear();
    }
    umbral::output::remove_pending_temporaries();
    terminate();
}

/// End the process as SIGINT would (the shell sees the signal), or with code 130.
fn terminate() -> ! {
    #[cfg(unix)]
    // SAFETY: resetting SIGINT to its default and raising it; async-signal-safe calls made
    // from the handler thread, not from a signal handler.
    unsafe {
        libc::signal(libc::SIGINT, libc::SIG_DFL);
        libc::raise(libc::SIGINT);
    }
    std::process::exit(130)
}

/// While alive, Ctrl-C sets [`stop_flag`] instead of ending the process.
pub struct Graceful(());

impl Graceful {
    /// A run of `unit` (`points`) that stops gracefully.
    pub fn enter(unit: &'static str) -> Self {
        *UNIT.lock().unwrap_or_else(|e| e.into_inner()) = unit;
        STOP.store(false, Ordering::SeqCst);
        GRACEFUL.store(true, Ordering::SeqCst);
        Graceful(())
    }
}

impl Drop for Graceful {
    fn drop(&mut self) {
        GRACEFUL.store(false, Ordering::SeqCst);
    }
}

/// Set by the first Ctrl-C inside [`Graceful`].
pub fn stop_flag() -> &'static AtomicBool {
    &STOP
}

/// A progress bar cleared from the screen when Ctrl-C ends the process.
pub struct Bar(pub indicatif::ProgressBar);

impl Bar {
    pub fn new(bar: indicatif::ProgressBar) -> Self {
        bars().push(bar.clone());
        Bar(bar)
    }
}

impl Drop for Bar {
    fn drop(&mut self) {
        self.0.finish_and_clear();
        bars().pop();
    }
}
