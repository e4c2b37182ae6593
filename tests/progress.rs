//! Progress of a long run on standard error, as a user sees it: a bar redrawn in place on a
//! terminal, plain lines off one (logs, notebooks), nothing with `--quiet`; never a change in
//! what goes to standard output. Checked on `bound`, whose work list grows as it refines.

mod common;

use common::{scratch, Invocation, LONG_BOUND};
use std::io::Read;
use std::os::fd::FromRawFd;

/// The bound, without a checkpoint, and `extra`.
fn with(extra: &[&'static str]) -> Vec<&'static str> {
    LONG_BOUND
        .iter()
        .chain(&["--no-checkpoint"])
        .chain(extra)
        .copied()
        .collect()
}

/// The count in a progress line `bound on q: N nuisance evaluations (...), MM:SS elapsed`.
fn count(line: &str) -> Option<usize> {
    line.strip_prefix("bound on q: ")?
        .split(' ')
        .next()?
        .parse()
        .ok()
}

#[test]
fn off_a_terminal_a_bound_prints_progress_lines_and_the_same_json() {
    let dir = scratch("progress", "lines");
    let quiet = Invocation::new(&dir, with(&["--quiet"])).run();
    assert_eq!(quiet.code, Some(0), "{}", quiet.describe());
    assert!(
        quiet.stderr.is_empty(),
        "--quiet prints no progress: {}",
        quiet.describe()
    );
    let lines = Invocation::new(&dir, with(&["--progress-every", "0"])).run();
    assert_eq!(lines.code, Some(0), "{}", lines.describe());
    assert!(lines.stdout == quiet.stdout, "progress changed the JSON");
    let err = lines.stderr_text();
    let counts: Vec<usize> = err.lines().map(|l| count(l).unwrap_or(0)).collect();
    assert!(
        err.lines()
            .all(|l| count(l).is_some() && l.ends_with(" elapsed")),
        "every line is a progress line: {err}"
    );
    assert!(
        counts.len() >= 10 && counts.windows(2).all(|w| w[0] <= w[1]),
        "a line per evaluation at --progress-every 0, counts never decreasing: {counts:?}"
    );
    assert!(
        err.contains("(starting grid)") && !err.contains('\r') && !err.contains('\x1b'),
        "plain lines that say the stage: {err}"
    );
    // The default (a line at most every 5 s) prints none for a run this short... or a few.
    let default = Invocation::new(&dir, with(&[])).run();
    assert_eq!(default.code, Some(0), "{}", default.describe());
    assert!(
        default.stderr_text().lines().count() <= 1 + (default.seconds / 5.0) as usize,
        "at most a line per 5 s: {}",
        default.describe()
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn on_a_terminal_a_bound_draws_a_bar_and_clears_it() {
    let dir = scratch("progress", "terminal");
    let (mut master, mut slave) = (0, 0);
    // SAFETY: openpty writes two new descriptors into the given integers; the name, terminal
    // settings and window size are left to their defaults (null pointers).
    let opened = unsafe {
        libc::openpty(
            &mut master,
            &mut slave,
            std::ptr::null_mut(),
            std::ptr::null(),
            std::ptr::null(),
        )
    };
    assert_eq!(opened, 0, "cannot open a pseudo-terminal");
    // SAFETY: both descriptors were just opened and are owned by nothing else.
    let (mut master, slave) = unsafe {
        (
            std::fs::File::from_raw_fd(master),
            std::fs::File::from_raw_fd(slave),
        )
    };
    let mut cmd = Invocation::new(&dir, with(&[])).command();
    cmd.stderr(slave);
    let child = cmd.spawn().expect("start umbral");
    drop(cmd); // our copy of the terminal's other end: reading ends when the child's closes
    let reader = std::thread::spawn(move || {
        let mut seen = Vec::new();
        let mut buf = [0u8; 4096];
        // Reading the master ends with EIO once no process holds the terminal.
        while let Ok(n) = master.read(&mut buf) {
            if n == 0 || seen.len() > 16 << 20 {
                break;
            }
            seen.extend_from_slice(&buf[..n]);
        }
        seen
    });
    let out = child.wait_with_output().expect("wait for umbral");
    let screen = String::from_utf8_lossy(&reader.join().unwrap()).into_owned();
    assert!(out.status.success(), "{screen}");
    let quiet = Invocation::new(&dir, with(&["--quiet"])).run();
    assert!(out.stdout == quiet.stdout, "progress changed the JSON");
    assert!(
        screen.contains("bound on q: ") && screen.contains("nuisance evaluations (starting grid)"),
        "the bar names the run and its stage: {screen:?}"
    );
    assert!(
        screen.matches("\r\x1b[2K").count() >= 5,
        "the bar is redrawn in place: {screen:?}"
    );
    assert!(
        screen.ends_with("\r\x1b[2K"),
        "the bar is cleared when the bound ends: {:?}",
        &screen[screen.len().saturating_sub(200)..]
    );
    let _ = std::fs::remove_dir_all(&dir);
}
