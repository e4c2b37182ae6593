//! Helpers shared by the tests that run the built `umbral` binary as a user would: every child
//! runs under an address-space limit and a kill-timeout, in its own scratch folder, and its
//! output is checked for the things that must never appear (panic text, NaN, raw control
//! characters).
//!
//! Each test file that uses this module compiles its own copy, so not every helper is used by
//! every file.
#![allow(dead_code)]

use std::io::Read;
use std::os::unix::process::{CommandExt, ExitStatusExt};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// Address-space limit of every child (RLIMIT_AS). The largest legitimate run of these tests
/// needs well under 200 MB; an unbounded read or allocation fails at this limit instead of
/// exhausting the machine.
pub const MEMORY_LIMIT_BYTES: u64 = 1 << 30;

/// Default kill-timeout. Every case here finishes in well under a second when umbral behaves;
/// the timeout only catches hangs and runaway work, it is not a speed requirement.
pub const DEFAULT_TIMEOUT: Duration = Duration::from_secs(10);

/// Most bytes kept from a child's stdout or stderr (the rest is drained and dropped), so that a
/// runaway child cannot exhaust the test's own memory.
pub const OUTPUT_CAP: usize = 16 << 20;

/// A bound of about a second on two cores, about 40 nuisance evaluations (Kerr–Newman with
/// a = 0.5, the inclination a nuisance over 30°–80°), for tests that watch or interrupt a run.
pub const LONG_BOUND: &[&str] = &[
    "bound",
    "--metric",
    "kerr-newman",
    "--vary",
    "q=0:1",
    "--set",
    "a=0.5",
    "--inclination-range",
    "30:80",
    "--measurement",
    concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/examples/measurement_ring.toml"
    ),
    "--json",
];

/// How to run one child.
#[derive(Debug, Clone)]
pub struct Invocation {
    /// The program: the built `umbral` unless set otherwise.
    pub program: PathBuf,
    pub args: Vec<String>,
    /// Working directory (relative paths in `args` are relative to it).
    pub dir: PathBuf,
    pub env: Vec<(String, String)>,
    /// Send stdout to this file (e.g. `/dev/full`) instead of capturing it.
    pub stdout_to: Option<PathBuf>,
    pub timeout: Duration,
}

impl Invocation {
    pub fn new<S: AsRef<str>>(dir: &Path, args: impl IntoIterator<Item = S>) -> Self {
        Invocation {
            program: PathBuf::from(env!("CARGO_BIN_EXE_umbral")),
            args: args.into_iter().map(|s| s.as_ref().to_string()).collect(),
            dir: dir.to_path_buf(),
            env: Vec::new(),
            stdout_to: None,
            timeout: DEFAULT_TIMEOUT,
        }
    }

    pub fn env(mut self, key: &str, value: &str) -> Self {
        self.env.push((key.to_string(), value.to_string()));
        self
    }

    /// The command, with the resource limits installed in the child before `exec`.
    pub fn command(&self) -> Command {
        let mut cmd = Command::new(&self.program);
        cmd.args(&self.args)
            .current_dir(&self.dir)
            .stdin(Stdio::null())
            .stderr(Stdio::piped())
            .env_remove("RUST_BACKTRACE")
            .env_remove("RUST_LIB_BACKTRACE")
            .env("RAYON_NUM_THREADS", "2");
        for (k, v) in &self.env {
            cmd.env(k, v);
        }
        match &self.stdout_to {
            Some(path) => {
                let file = std::fs::OpenOptions::new()
                    .write(true)
                    .open(path)
                    .unwrap_or_else(|e| panic!("cannot open {}: {e}", path.display()));
                cmd.stdout(file);
            }
            None => {
                cmd.stdout(Stdio::piped());
            }
        }
        // SAFETY: only async-signal-safe calls (setrlimit) between fork and exec.
        unsafe {
            cmd.pre_exec(|| {
                let limit = |resource, bytes: u64| {
                    let l = libc::rlimit {
                        rlim_cur: bytes as libc::rlim_t,
                        rlim_max: bytes as libc::rlim_t,
                    };
                    if libc::setrlimit(resource, &l) != 0 {
                        return Err(std::io::Error::last_os_error());
                    }
                    Ok(())
                };
                limit(libc::RLIMIT_AS, MEMORY_LIMIT_BYTES)?;
                limit(libc::RLIMIT_CORE, 0)
            });
        }
        cmd
    }

    /// Start the child; stdout and stderr are drained by background threads.
    pub fn spawn(&self) -> Running {
        let mut child = self
            .command()
            .spawn()
            .unwrap_or_else(|e| panic!("cannot start umbral {:?}: {e}", self.args));
        let stdout = child.stdout.take().map(drain);
        let stderr = child.stderr.take().map(drain);
        Running {
            child,
            stdout,
            stderr,
            started: Instant::now(),
            timeout: self.timeout,
        }
    }

    /// Run to completion (or to the kill-timeout).
    pub fn run(&self) -> Outcome {
        self.spawn().finish()
    }
}

fn drain(mut pipe: impl Read + Send + 'static) -> JoinHandle<Vec<u8>> {
    std::thread::spawn(move || {
        let mut kept = Vec::new();
        let mut buf = [0u8; 1 << 16];
        loop {
            match pipe.read(&mut buf) {
                Ok(0) | Err(_) => break,
                Ok(n) => {
                    let room = OUTPUT_CAP.saturating_sub(kept.len());
                    kept.extend_from_slice(&buf[..n.min(room)]);
                }
            }
        }
        kept
    })
}

/// A child that is running.
pub struct Running {
    pub child: Child,
    stdout: Option<JoinHandle<Vec<u8>>>,
    stderr: Option<JoinHandle<Vec<u8>>>,
    started: Instant,
    timeout: Duration,
}

impl Running {
    pub fn pid(&self) -> i32 {
        self.child.id() as i32
    }

    /// Whether the child has ended (without reaping its output).
    pub fn has_exited(&mut self) -> bool {
        matches!(self.child.try_wait(), Ok(Some(_)))
    }

    /// Send a signal to this child (and only to it).
    pub fn signal(&self, signal: i32) {
        // SAFETY: kill(2) on the pid of our own, not yet reaped, child.
        unsafe {
            libc::kill(self.pid(), signal);
        }
    }

    /// Wait for the end, killing the child at its timeout.
    pub fn finish(mut self) -> Outcome {
        let deadline = self.started + self.timeout;
        let mut timed_out = false;
        let status = loop {
            match self.child.try_wait() {
                Ok(Some(status)) => break status,
                Ok(None) if Instant::now() >= deadline => {
                    timed_out = true;
                    let _ = self.child.kill();
                    break self.child.wait().expect("wait for the killed child");
                }
                Ok(None) => std::thread::sleep(Duration::from_millis(2)),
                Err(e) => panic!("cannot wait for umbral: {e}"),
            }
        };
        let join = |h: Option<JoinHandle<Vec<u8>>>| h.map(|h| h.join().unwrap_or_default());
        Outcome {
            code: status.code(),
            signal: status.signal(),
            stdout: join(self.stdout.take()).unwrap_or_default(),
            stderr: join(self.stderr.take()).unwrap_or_default(),
            timed_out,
            seconds: self.started.elapsed().as_secs_f64(),
        }
    }
}

/// How a child ended.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Exit code, `None` when a signal ended the child.
    pub code: Option<i32>,
    pub signal: Option<i32>,
    pub stdout: Vec<u8>,
    pub stderr: Vec<u8>,
    pub timed_out: bool,
    pub seconds: f64,
}

impl Outcome {
    pub fn stdout_text(&self) -> String {
        String::from_utf8_lossy(&self.stdout).into_owned()
    }

    pub fn stderr_text(&self) -> String {
        String::from_utf8_lossy(&self.stderr).into_owned()
    }

    /// Assert a usage error: exit code 2 and one line on standard error that contains
    /// `needle`.
    #[track_caller]
    pub fn assert_usage_error(&self, needle: &str) {
        assert_eq!(self.code, Some(2), "{}", self.describe());
        let err = self.stderr_text();
        assert!(
            err.contains(needle) && err.trim().lines().count() == 1,
            "{}",
            self.describe()
        );
    }

    /// A short description for failure messages.
    pub fn describe(&self) -> String {
        let how = match (self.timed_out, self.code, self.signal) {
            (true, _, _) => format!("killed at the timeout after {:.1} s", self.seconds),
            (false, Some(c), _) => format!("exit {c}"),
            (false, None, Some(s)) => format!("killed by signal {s}"),
            _ => "ended in an unknown way".into(),
        };
        format!(
            "{how}; stderr: {}; stdout: {}",
            clip(&self.stderr_text(), 400),
            clip(&self.stdout_text(), 200)
        )
    }

    /// Problems that no run may show, whatever its exit code: a timeout, death by a signal
    /// (abort, stack overflow, out of memory), panic text, raw control characters, NaN or
    /// infinity printed as a number on stdout (stderr may quote a user's `nan` back), or an
    /// absurdly long run of digits (a number printed in full instead of in scientific notation).
    pub fn universal_problems(&self) -> Vec<String> {
        let mut problems = Vec::new();
        if self.timed_out {
            problems.push(format!(
                "did not finish within the kill-timeout ({:.1} s)",
                self.seconds
            ));
        } else if self.code.is_none() {
            problems.push(format!("ended by signal {:?}", self.signal));
        }
        for (name, bytes) in [("stderr", &self.stderr), ("stdout", &self.stdout)] {
            let text = String::from_utf8_lossy(bytes);
            for marker in [
                "panicked",
                "RUST_BACKTRACE",
                "stack overflow",
                "memory allocation of",
                "Aborted",
            ] {
                if text.contains(marker) {
                    problems.push(format!("{name} contains '{marker}'"));
                }
            }
            if let Some(c) = text.chars().find(|c| c.is_control() && *c != '\n') {
                problems.push(format!("{name} contains the control character {c:?}"));
            }
            if let Some(token) = non_finite_token(&text).filter(|_| name == "stdout") {
                problems.push(format!("{name} prints a non-finite number '{token}'"));
            }
            if let Some(run) = longest_digit_run(&text).filter(|n| *n > 40) {
                problems.push(format!(
                    "{name} prints a number with a run of {run} digits (use a short scientific form)"
                ));
            }
        }
        problems
    }
}

/// The first token that is NaN or infinity written as a number (`NaN`, `inf`, `-inf`,
/// `infinity`), if any. Interval notation such as `(-inf, inf)` in a domain is not a number
/// and is allowed: a token directly after `(` / `[` or before `)` / `]` is skipped.
pub fn non_finite_token(text: &str) -> Option<String> {
    let bytes = text.as_bytes();
    let is_word = |c: u8| c.is_ascii_alphanumeric() || c == b'_' || c == b'.' || c == b'-';
    let mut i = 0;
    while i < bytes.len() {
        if !is_word(bytes[i]) {
            i += 1;
            continue;
        }
        let start = i;
        while i < bytes.len() && is_word(bytes[i]) {
            i += 1;
        }
        let token = &text[start..i];
        let bare = token.trim_start_matches(['-', '+']).to_ascii_lowercase();
        if matches!(bare.as_str(), "nan" | "inf" | "infinity") {
            let before = text[..start].trim_end().chars().last();
            let after = text[i..].trim_start().chars().next();
            let interval_end = matches!(before, Some('(' | '['))
                || matches!(after, Some(')' | ']'))
                || (matches!(after, Some(',')) && matches!(before, Some('(' | '[')));
            if !interval_end {
                return Some(token.to_string());
            }
        }
    }
    None
}

/// The longest run of consecutive ASCII digits.
pub fn longest_digit_run(text: &str) -> Option<usize> {
    text.as_bytes()
        .split(|b| !b.is_ascii_digit())
        .map(|run| run.len())
        .max()
}

pub fn clip(text: &str, max: usize) -> String {
    let t = text.trim_end();
    if t.len() <= max {
        return t.to_string();
    }
    let mut end = max;
    while !t.is_char_boundary(end) {
        end -= 1;
    }
    format!("{}... ({} bytes)", &t[..end], t.len())
}

/// An empty scratch folder for one test, under the system temporary folder.
///
/// Each call gets a folder of its own (a per-process counter is appended), so that tests running
/// in parallel in one process never remove each other's folders.
pub fn scratch(test: &str, name: &str) -> PathBuf {
    static CALLS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let call = CALLS.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let dir = std::env::temp_dir()
        .join(format!("umbral-{test}-{}", std::process::id()))
        .join(format!("{name}-{call}"));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
    dir
}

/// A file of the repository (e.g. `metrics/kerr.toml`).
pub fn repo_file(relative: &str) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(relative);
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// `text` with each `(from, to)` replaced once; panics when `from` is absent, so that an edit
/// of a repository file cannot silently stop applying when the file changes.
pub fn edited(text: &str, edits: &[(&str, &str)]) -> String {
    let mut out = text.to_string();
    for (from, to) in edits {
        assert!(
            out.contains(from),
            "the edit source '{from}' is not in the file"
        );
        out = out.replacen(from, to, 1);
    }
    out
}

/// Every file below `dir` (relative paths, sorted), with its bytes (folders and special files
/// are listed with no bytes).
pub fn snapshot(dir: &Path) -> Vec<(PathBuf, Option<Vec<u8>>)> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<(PathBuf, Option<Vec<u8>>)>) {
        let Ok(entries) = std::fs::read_dir(dir) else {
            return;
        };
        for entry in entries.flatten() {
            let path = entry.path();
            let rel = path.strip_prefix(root).unwrap_or(&path).to_path_buf();
            let Ok(meta) = std::fs::symlink_metadata(&path) else {
                continue;
            };
            if meta.is_dir() {
                out.push((rel, None));
                walk(root, &path, out);
            } else if meta.is_file() {
                out.push((rel, std::fs::read(&path).ok()));
            } else {
                out.push((rel, None));
            }
        }
    }
    let mut out = Vec::new();
    walk(dir, dir, &mut out);
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

/// Poll until `ready()` or the timeout; whether it became ready.
pub fn wait_for(mut ready: impl FnMut() -> bool, timeout: Duration) -> bool {
    let end = Instant::now() + timeout;
    while Instant::now() < end {
        if ready() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(2));
    }
    ready()
}

/// Complete point lines (not the header) in the fullest file of `dir`: the output or a
/// temporary next to it.
pub fn point_lines_on_disk(dir: &Path) -> usize {
    snapshot(dir)
        .into_iter()
        .filter_map(|(_, bytes)| bytes)
        .map(|b| b.iter().filter(|&&c| c == b'\n').count().saturating_sub(1))
        .max()
        .unwrap_or(0)
}

/// The number of proptest cases: `default`, or `PROPTEST_CASES` from the environment for a
/// longer run (proptest's own reading of that variable is overridden once a test sets a count).
pub fn proptest_cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// A root of `f` in `[lo, hi]` by Brent's method from the general-purpose `roots` crate
/// (Brent 1973, "Algorithms for Minimization without Derivatives", ch. 4), called directly so
/// that reference values do not go through umbral's own root finding.
pub fn brent_root(
    f: impl FnMut(f64) -> f64,
    lo: f64,
    hi: f64,
    xtol: f64,
) -> Result<f64, roots::SearchError> {
    let mut conv = roots::SimpleConvergency {
        eps: xtol.max(1e-15),
        max_iter: 500,
    };
    roots::find_root_brent(lo, hi, f, &mut conv)
}

/// The central 99 % band [lo, hi] of Binomial(n, p): P(X < lo) ≤ 0.005 and P(X > hi) ≤ 0.005,
/// from the probabilities P(X = k + 1) = P(X = k) (n − k) p/((k + 1)(1 − p)).
pub fn binomial_band(n: usize, p: f64) -> (usize, usize) {
    let mut pmf = vec![(1.0 - p).powi(n as i32)];
    for k in 0..n {
        let next = pmf[k] * (n - k) as f64 * p / ((k + 1) as f64 * (1.0 - p));
        pmf.push(next);
    }
    let (mut below, mut lo) = (0.0, 0);
    while below + pmf[lo] <= 0.005 {
        below += pmf[lo];
        lo += 1;
    }
    let (mut above, mut hi) = (0.0, n);
    while above + pmf[hi] <= 0.005 {
        above += pmf[hi];
        hi -= 1;
    }
    (lo, hi)
}

/// Every entry of `dir`, sorted by name (temporaries would show here).
pub fn listing(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

/// Largest screen distance of the points of `points` from the curve `reference`, measured
/// radially from the reference's origin through its spectral interpolant.
pub fn max_distance(
    points: &umbral::shadow::CriticalCurve,
    reference: &umbral::shadow::CriticalCurve,
) -> f64 {
    let interp = reference.interpolant();
    let o = reference.origin;
    let (alpha, beta) = points.alpha_beta();
    alpha
        .iter()
        .zip(&beta)
        .map(|(a, b)| {
            let (dx, dy) = (a - o[0], b - o[1]);
            ((dx * dx + dy * dy).sqrt() - interp.radius(dy.atan2(dx))).abs()
        })
        .fold(0.0, f64::max)
}
