//! Long calls off the GIL, stopped by Ctrl-C.

use crate::errors::Fail;
use pyo3::prelude::*;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// How often the calling thread checks for Python signals.
const POLL: Duration = Duration::from_millis(100);

/// Run `work` with a stop flag on a worker thread while the calling thread, without the GIL,
/// waits for it in [`POLL`] slices, taking the GIL back after each to check for signals. On
/// Ctrl-C (`KeyboardInterrupt`, or any exception a signal handler raises) the flag is set, the
/// work is waited for (the library finishes the items in progress and stops) and the
/// exception is raised, whatever the work returned. A panic in the work is a
/// `ComputationError`.
pub fn interruptible<T, F>(py: Python<'_>, work: F) -> Result<T, Fail>
where
    T: Send,
    F: FnOnce(&AtomicBool) -> Result<T, Fail> + Send,
{
    let stop = AtomicBool::new(false);
    std::thread::scope(|scope| {
        let handle = scope.spawn(|| work(&stop));
        let mut signal = None;
        while !handle.is_finished() {
            py.detach(|| {
                let start = Instant::now();
                while !handle.is_finished() && start.elapsed() < POLL {
                    std::thread::sleep(Duration::from_millis(2));
                }
            });
            if signal.is_none() {
                if let Err(e) = py.check_signals() {
                    stop.store(true, Ordering::SeqCst);
                    signal = Some(e);
                }
            }
        }
        let outcome = handle.join();
        if let Some(e) = signal {
            return Err(Fail::Interrupted(e));
        }
        match outcome {
            Ok(result) => result,
            Err(panic) => {
                let what = panic
                    .downcast_ref::<&str>()
                    .map(|s| s.to_string())
                    .or_else(|| panic.downcast_ref::<String>().cloned())
                    .unwrap_or_else(|| "no message".into());
                Err(Fail::Computation(format!(
                    "internal error (a panic): {what}"
                )))
            }
        }
    })
}
