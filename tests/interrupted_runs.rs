//! Interrupted runs: a scan killed part-way (SIGKILL, and SIGINT as Ctrl-C sends it) at three
//! points, after the first point line, about a third and about two thirds of the grid are on
//! disk, then rerun with the same arguments, must end with a file byte-identical to an
//! uninterrupted run's, must keep every point that was on disk when it was stopped (finished
//! work is never lost), and must leave nothing but its output behind.
//!
//! "On disk" is counted in whatever file of the run's folder holds the most point lines: the
//! output itself or a temporary next to it, so the test does not depend on how the scan
//! stages its writes.
//!
//! What Ctrl-C prints (how far the scan got, how to resume) is checked by the item-17 row of
//! `tests/bad_inputs.rs`.
//!
//! ## `bound` checkpoints
//!
//! `bound` keeps no state between runs today, so there is nothing to resume and no test here.
//! When it gains a checkpoint (planned with the architecture refactor), add
//! `bound_resumes_byte_identical_after_sigkill` and `..._after_sigint` below, calling
//! [`interrupt_and_resume`] with the `bound --json` arguments and its checkpoint file in the
//! run's folder, exactly as the scan tests do.

mod common;

use common::{point_lines_on_disk, scratch, snapshot, wait_for, Invocation};
use std::sync::OnceLock;
use std::time::Duration;

/// 10 × 8 = 80 grid points: long enough (most of a second on two cores) to stop at three
/// distinct points, short enough to run seven times.
const SCAN: &[&str] = &[
    "scan",
    "--metric",
    "kerr-newman",
    "--grid",
    "a=0:0.9:10",
    "--grid",
    "q=0:0.5:8",
    "--inclination",
    "60",
    "--out",
    "s.jsonl",
];
const POINTS: usize = 80;

/// The file an uninterrupted run writes.
fn reference() -> &'static [u8] {
    static REFERENCE: OnceLock<Vec<u8>> = OnceLock::new();
    REFERENCE.get_or_init(|| {
        let dir = scratch("interrupted", "reference");
        let out = Invocation::new(&dir, SCAN).run();
        assert_eq!(out.code, Some(0), "reference scan: {}", out.describe());
        let bytes = std::fs::read(dir.join("s.jsonl")).unwrap();
        let lines = bytes.iter().filter(|&&b| b == b'\n').count();
        assert_eq!(lines, POINTS + 1, "header plus one line per point");
        let _ = std::fs::remove_dir_all(&dir);
        bytes
    })
}

/// The number before " kept" in the summary line ("(N computed, M kept from an earlier run)").
fn kept(stdout: &str) -> Option<usize> {
    let before = &stdout[..stdout.find(" kept")?];
    let digits: String = before
        .chars()
        .rev()
        .take_while(|c| c.is_ascii_digit())
        .collect();
    digits.chars().rev().collect::<String>().parse().ok()
}

/// Start `args` in a fresh folder, send `signal` once `at_lines` point lines are on disk, then
/// rerun `args` to the end and compare `output` with `reference`. Returns the point lines on
/// disk when the signal was sent.
fn interrupt_and_resume(
    name: &str,
    args: &[&str],
    output: &str,
    reference: &[u8],
    signal: i32,
    at_lines: usize,
) -> usize {
    let dir = scratch("interrupted", name);
    let mut run = Invocation::new(&dir, args);
    run.timeout = Duration::from_secs(120);
    let mut first = run.spawn();
    let reached = wait_for(
        || point_lines_on_disk(&dir) >= at_lines || first.has_exited(),
        Duration::from_secs(120),
    );
    let on_disk = point_lines_on_disk(&dir);
    first.signal(signal);
    let stopped = first.finish();
    assert!(
        reached && on_disk >= at_lines && on_disk < POINTS,
        "{name}: could not stop the run with {at_lines} of {POINTS} lines on disk (had {on_disk}): {}",
        stopped.describe()
    );
    assert_ne!(
        stopped.code,
        Some(0),
        "{name}: the run ended normally before the signal"
    );
    let resumed = Invocation::new(&dir, args).run();
    assert_eq!(resumed.code, Some(0), "{name}: {}", resumed.describe());
    let bytes = std::fs::read(dir.join(output)).unwrap();
    assert!(
        bytes == reference,
        "{name}: the resumed file differs from an uninterrupted run's"
    );
    let kept = kept(&resumed.stdout_text());
    assert!(
        kept.is_some_and(|k| k >= on_disk),
        "{name}: {on_disk} points were on disk when the run was stopped but the rerun kept {kept:?}: finished work was lost"
    );
    let left: Vec<String> = snapshot(&dir)
        .into_iter()
        .map(|(p, _)| p.display().to_string())
        .filter(|p| p != output)
        .collect();
    assert!(left.is_empty(), "{name}: left behind {left:?}");
    let _ = std::fs::remove_dir_all(&dir);
    on_disk
}

/// The three stopping points: the first line, about a third, about two thirds.
const STOPS: [(&str, usize); 3] = [
    ("first", 1),
    ("third", POINTS / 3),
    ("two-thirds", 2 * POINTS / 3),
];

fn interrupted_scans(signal: i32, label: &str) {
    let reference = reference();
    let mut stopped_at = Vec::new();
    for (stop, lines) in STOPS {
        let name = format!("{label}-{stop}");
        stopped_at.push(interrupt_and_resume(
            &name, SCAN, "s.jsonl", reference, signal, lines,
        ));
    }
    eprintln!("{label}: stopped with {stopped_at:?} of {POINTS} point lines on disk");
    assert!(
        stopped_at.windows(2).all(|w| w[0] < w[1]),
        "the three stops must be distinct: {stopped_at:?}"
    );
}

#[test]
fn scan_killed_with_sigkill_resumes_byte_identical() {
    interrupted_scans(libc::SIGKILL, "sigkill");
}

#[test]
fn scan_interrupted_with_sigint_resumes_byte_identical() {
    interrupted_scans(libc::SIGINT, "sigint");
}

#[test]
fn the_summary_line_is_read() {
    let line = "scan of kerr: 12 points in 's.jsonl' (7 computed, 5 kept from an earlier run)";
    assert_eq!(kept(line), Some(5));
    assert_eq!(kept("no summary"), None);
}
