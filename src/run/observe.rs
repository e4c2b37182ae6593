//! Observers of a run: progress displays, logs, anything that watches the executor's loop
//! without taking part in the work.

use std::io::Write;
use std::time::{Duration, Instant};

/// Where a run stands, as observers see it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Status {
    /// What runs (`scan`, `bound`).
    pub name: String,
    /// What one item is, plural (`points`, `nuisance evaluations`).
    pub unit: String,
    /// Finished items, including those kept from an earlier run.
    pub done: usize,
    /// Items kept from an earlier run (through a checkpoint) instead of computed.
    pub kept: usize,
    /// How many items the run has, when that is known in advance (a work list that grows as
    /// the run refines has none).
    pub total: Option<usize>,
    /// The current stage of a run made of several batches (`initial grid`).
    pub stage: Option<String>,
}

/// How a run ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    /// Every item is done.
    Completed,
    /// Stopped on request; finished items are kept.
    Interrupted,
}

/// An observer: three hooks, each optional, called by the executor one at a time (never
/// concurrently) from whichever thread finished the work.
pub trait Observe: Send {
    /// The run starts (items kept from an earlier run are already counted as done).
    fn started(&mut self, _status: &Status) {}
    /// An item finished.
    fn item_done(&mut self, _status: &Status) {}
    /// The run ended. Not called when it fails (its error says what happened).
    fn finished(&mut self, _status: &Status, _outcome: Outcome) {}
}

/// A duration as `MM:SS`, or `H:MM:SS` from an hour on.
///
/// ```
/// use std::time::Duration;
/// assert_eq!(umbral::run::clock(Duration::from_secs(42)), "00:42");
/// assert_eq!(umbral::run::clock(Duration::from_secs(3725)), "1:02:05");
/// ```
pub fn clock(elapsed: Duration) -> String {
    let s = elapsed.as_secs();
    if s >= 3600 {
        format!("{}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
    } else {
        format!("{:02}:{:02}", s / 60, s % 60)
    }
}

impl Status {
    /// One line for a log: `scan: 120/400 points (30%), 00:42 elapsed`; a run without a known
    /// total gives its count and stage (`bound: 35 nuisance evaluations (bound ends), ...`);
    /// items kept from an earlier run are counted and said.
    ///
    /// ```
    /// use std::time::Duration;
    /// let status = umbral::run::Status {
    ///     name: "scan".into(),
    ///     unit: "points".into(),
    ///     done: 120,
    ///     kept: 0,
    ///     total: Some(400),
    ///     stage: None,
    /// };
    /// assert_eq!(status.line(Duration::from_secs(42)), "scan: 120/400 points (30%), 00:42 elapsed");
    /// ```
    pub fn line(&self, elapsed: Duration) -> String {
        let mut notes = Vec::new();
        if let Some(total) = self.total {
            let percent = match total {
                0 => 100,
                t => (self.done as u128 * 100 / t as u128) as usize,
            };
            notes.push(format!("{percent}%"));
        }
        if let Some(stage) = &self.stage {
            notes.push(stage.clone());
        }
        if self.kept > 0 {
            notes.push(format!("{} kept from an earlier run", self.kept));
        }
        let count = match self.total {
            Some(total) => format!("{}/{total} {}", self.done, self.unit),
            None => format!("{} {}", self.done, self.unit),
        };
        let notes = match notes.is_empty() {
            true => String::new(),
            false => format!(" ({})", notes.join("; ")),
        };
        format!("{}: {count}{notes}, {} elapsed", self.name, clock(elapsed))
    }
}

/// Progress as plain lines on a stream (standard error by default), for logs and notebooks
/// where no progress bar can be drawn: one line when at least `every` has passed since the
/// last, and a last line at the end of a run that printed any. A run shorter than `every`
/// prints nothing.
///
/// ```
/// use std::time::Duration;
/// use umbral::run::{LineProgress, Observe, Outcome, Status};
/// let log = std::sync::Arc::new(std::sync::Mutex::new(Vec::<u8>::new()));
/// struct Shared(std::sync::Arc<std::sync::Mutex<Vec<u8>>>);
/// impl std::io::Write for Shared {
///     fn write(&mut self, b: &[u8]) -> std::io::Result<usize> { self.0.lock().unwrap().write(b) }
///     fn flush(&mut self) -> std::io::Result<()> { Ok(()) }
/// }
/// let mut progress = LineProgress::to(Box::new(Shared(log.clone())), Duration::ZERO);
/// let mut status = umbral::run::Status {
///     name: "scan".into(), unit: "points".into(), done: 0, kept: 0, total: Some(2), stage: None,
/// };
/// progress.started(&status);
/// status.done = 2;
/// progress.item_done(&status);
/// progress.finished(&status, Outcome::Completed);
/// let text = String::from_utf8(log.lock().unwrap().clone()).unwrap();
/// assert_eq!(text.lines().count(), 2);
/// assert!(text.starts_with("scan: 2/2 points (100%), 00:00 elapsed"));
/// ```
pub struct LineProgress {
    out: Box<dyn Write + Send>,
    every: Duration,
    prefix: Option<String>,
    run_start: Instant,
    last: Instant,
    printed: bool,
}

impl LineProgress {
    /// Lines on standard error, at most one per `every`.
    pub fn stderr(every: Duration) -> Self {
        LineProgress::to(Box::new(std::io::stderr()), every)
    }

    /// Lines on `out`, at most one per `every`.
    pub fn to(out: Box<dyn Write + Send>, every: Duration) -> Self {
        let now = Instant::now();
        LineProgress {
            out,
            every,
            prefix: None,
            run_start: now,
            last: now,
            printed: false,
        }
    }

    /// Begin every line with `prefix: ` (a program that runs several runs, such as the demo).
    pub fn with_prefix(mut self, prefix: &str) -> Self {
        self.prefix = Some(prefix.to_string());
        self
    }

    fn print(&mut self, status: &Status) {
        let line = status.line(self.run_start.elapsed());
        let line = match &self.prefix {
            Some(p) => format!("{p}: {line}"),
            None => line,
        };
        // A log that cannot be written is no reason to stop the work.
        let _ = writeln!(self.out, "{line}");
        self.last = Instant::now();
        self.printed = true;
    }
}

impl Observe for LineProgress {
    fn started(&mut self, _status: &Status) {
        self.run_start = Instant::now();
        self.last = self.run_start;
        self.printed = false;
    }

    fn item_done(&mut self, status: &Status) {
        if self.last.elapsed() >= self.every {
            self.print(status);
        }
    }

    fn finished(&mut self, status: &Status, outcome: Outcome) {
        // An interrupted run's own message says how far it got.
        if outcome == Outcome::Completed && self.printed {
            self.print(status);
        }
    }
}

/// A progress callback `f(done, total)` as an observer (called at the start and after every
/// item; `total` is the done count while it is unknown).
pub struct ProgressFn<'f>(pub &'f (dyn Fn(usize, usize) + Sync));

impl Observe for ProgressFn<'_> {
    fn started(&mut self, status: &Status) {
        (self.0)(status.done, status.total.unwrap_or(status.done));
    }

    fn item_done(&mut self, status: &Status) {
        (self.0)(status.done, status.total.unwrap_or(status.done));
    }
}
