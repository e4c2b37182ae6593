//! Interrupted runs: a scan and a bound killed part-way (SIGKILL, and SIGINT as Ctrl-C sends
//! it) at three points, after the first finished item, about a third and about two thirds of
//! the items are on disk, then rerun with the same arguments, must end with output
//! byte-identical to an uninterrupted run's, must keep every item that was on disk when they
//! were stopped (finished work is never lost), and must leave nothing but their output behind.
//!
//! "On disk" is counted in whatever file of the run's folder holds the most item lines: the
//! output itself or a temporary next to it for a scan, the checkpoint for a bound, so the test
//! does not depend on how a run stages its writes.
//!
//! What Ctrl-C prints for a scan (how far it got, how to resume) is checked by the item-17 row
//! of `tests/bad_inputs.rs`.
//!
//! ## `bound`
//!
//! A bound keeps each finished nuisance evaluation in its checkpoint, by default
//! `umbral-bound-HASH.jsonl` in the current folder, removed when the bound completes; its
//! output is the JSON on standard output. The reference is a run with `--checkpoint` naming a
//! kept file: the number of its lines gives the number of items, and the interrupted runs
//! (with the default checkpoint) must print the same bytes.

mod common;

use common::{point_lines_on_disk, scratch, snapshot, wait_for, Invocation, Outcome, LONG_BOUND};
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

/// A bound with the inclination as a nuisance range.
const BOUND: &[&str] = LONG_BOUND;

/// What an uninterrupted run gives.
struct Reference {
    /// The compared output: the scan's file, the bound's standard output.
    bytes: Vec<u8>,
    /// Its finished items.
    items: usize,
}

/// The scan file an uninterrupted run writes.
fn scan_reference() -> &'static Reference {
    static REFERENCE: OnceLock<Reference> = OnceLock::new();
    REFERENCE.get_or_init(|| {
        let dir = scratch("interrupted", "scan-reference");
        let out = Invocation::new(&dir, SCAN).run();
        assert_eq!(out.code, Some(0), "reference scan: {}", out.describe());
        let bytes = std::fs::read(dir.join("s.jsonl")).unwrap();
        let lines = bytes.iter().filter(|&&b| b == b'\n').count();
        assert_eq!(lines, 80 + 1, "header plus one line per point");
        let _ = std::fs::remove_dir_all(&dir);
        Reference { bytes, items: 80 }
    })
}

/// The JSON an uninterrupted bound prints, and its number of nuisance evaluations (the lines
/// of a kept checkpoint after the header).
fn bound_reference() -> &'static Reference {
    static REFERENCE: OnceLock<Reference> = OnceLock::new();
    REFERENCE.get_or_init(|| {
        let dir = scratch("interrupted", "bound-reference");
        let args: Vec<&str> = BOUND
            .iter()
            .copied()
            .chain(["--checkpoint", "kept.jsonl"])
            .collect();
        let mut run = Invocation::new(&dir, args);
        run.timeout = Duration::from_secs(120);
        let out = run.run();
        assert_eq!(out.code, Some(0), "reference bound: {}", out.describe());
        let kept = std::fs::read(dir.join("kept.jsonl")).unwrap();
        let items = kept.iter().filter(|&&b| b == b'\n').count() - 1;
        assert!(
            items >= 30,
            "the reference bound made only {items} nuisance evaluations: too few to stop at three distinct points"
        );
        let _ = std::fs::remove_dir_all(&dir);
        Reference {
            bytes: out.stdout,
            items,
        }
    })
}

/// The number before " kept" in the scan's summary line ("(N computed, M kept from an
/// earlier run)") or in the bound's resuming note ("resuming from 'F': N nuisance
/// evaluations kept").
fn kept(text: &str) -> Option<usize> {
    let before = text[..text.find(" kept")?].trim_end_matches(" nuisance evaluations");
    let digits: String = before
        .chars()
        .rev()
        .take_while(|c| c.is_ascii_digit())
        .collect();
    digits.chars().rev().collect::<String>().parse().ok()
}

/// One kind of run to interrupt.
struct Resumable {
    label: &'static str,
    args: &'static [&'static str],
    /// The compared file, or `None` for standard output.
    output: Option<&'static str>,
    reference: &'static Reference,
    /// The number of finished items the rerun says it kept.
    kept: fn(&Outcome) -> Option<usize>,
}

/// Start the run in a fresh folder, send `signal` once `at_lines` item lines are on disk, then
/// rerun it to the end and compare its output with the reference. Returns the item lines on
/// disk when the signal was sent.
fn interrupt_and_resume(run: &Resumable, name: &str, signal: i32, at_lines: usize) -> usize {
    let items = run.reference.items;
    let dir = scratch("interrupted", name);
    let mut invocation = Invocation::new(&dir, run.args);
    invocation.timeout = Duration::from_secs(120);
    let mut first = invocation.spawn();
    let reached = wait_for(
        || point_lines_on_disk(&dir) >= at_lines || first.has_exited(),
        Duration::from_secs(120),
    );
    let on_disk = point_lines_on_disk(&dir);
    first.signal(signal);
    let stopped = first.finish();
    assert!(
        reached && on_disk >= at_lines && on_disk < items,
        "{name}: could not stop the run with {at_lines} of {items} lines on disk (had {on_disk}): {}",
        stopped.describe()
    );
    assert_ne!(
        stopped.code,
        Some(0),
        "{name}: the run ended normally before the signal"
    );
    if signal == libc::SIGINT {
        // Ctrl-C: a clean stop (exit 130, as shells report it) that says how to resume.
        let err = stopped.stderr_text();
        assert!(
            stopped.code == Some(130) && err.contains("interrupted after") && err.contains("resume"),
            "{name}: Ctrl-C should end with exit 130 and say how far the run got and how to resume: {}",
            stopped.describe()
        );
    }
    let resumed = invocation.run();
    assert_eq!(resumed.code, Some(0), "{name}: {}", resumed.describe());
    let bytes = match run.output {
        Some(file) => std::fs::read(dir.join(file)).unwrap(),
        None => resumed.stdout.clone(),
    };
    assert!(
        bytes == run.reference.bytes,
        "{name}: the resumed output differs from an uninterrupted run's"
    );
    let kept = (run.kept)(&resumed);
    assert!(
        kept.is_some_and(|k| k >= on_disk),
        "{name}: {on_disk} items were on disk when the run was stopped but the rerun kept {kept:?}: finished work was lost ({})",
        resumed.describe()
    );
    let left: Vec<String> = snapshot(&dir)
        .into_iter()
        .map(|(p, _)| p.display().to_string())
        .filter(|p| Some(p.as_str()) != run.output)
        .collect();
    assert!(left.is_empty(), "{name}: left behind {left:?}");
    let _ = std::fs::remove_dir_all(&dir);
    on_disk
}

/// Stop `run` at three points (the first item, about a third, about two thirds) and resume.
fn interrupted(run: &Resumable, signal: i32, signal_name: &str) {
    let items = run.reference.items;
    let stops = [
        ("first", 1),
        ("third", items / 3),
        ("two-thirds", 2 * items / 3),
    ];
    let mut stopped_at = Vec::new();
    for (stop, lines) in stops {
        let name = format!("{}-{signal_name}-{stop}", run.label);
        stopped_at.push(interrupt_and_resume(run, &name, signal, lines));
    }
    eprintln!(
        "{} {signal_name}: stopped with {stopped_at:?} of {items} item lines on disk",
        run.label
    );
    assert!(
        stopped_at.windows(2).all(|w| w[0] < w[1]),
        "the three stops must be distinct: {stopped_at:?}"
    );
}

fn scan() -> Resumable {
    Resumable {
        label: "scan",
        args: SCAN,
        output: Some("s.jsonl"),
        reference: scan_reference(),
        kept: |out| kept(&out.stdout_text()),
    }
}

fn bound() -> Resumable {
    Resumable {
        label: "bound",
        args: BOUND,
        output: None,
        reference: bound_reference(),
        kept: |out| kept(&out.stderr_text()),
    }
}

#[test]
fn scan_killed_with_sigkill_resumes_byte_identical() {
    interrupted(&scan(), libc::SIGKILL, "sigkill");
}

#[test]
fn scan_interrupted_with_sigint_resumes_byte_identical() {
    interrupted(&scan(), libc::SIGINT, "sigint");
}

#[test]
fn bound_killed_with_sigkill_resumes_byte_identical() {
    interrupted(&bound(), libc::SIGKILL, "sigkill");
}

#[test]
fn bound_interrupted_with_sigint_resumes_byte_identical() {
    interrupted(&bound(), libc::SIGINT, "sigint");
}

#[test]
fn the_summary_line_is_read() {
    let line = "scan of kerr: 12 points in 's.jsonl' (7 computed, 5 kept from an earlier run)";
    assert_eq!(kept(line), Some(5));
    let note = "bound: resuming from 'umbral-bound-0a1b.jsonl': 17 nuisance evaluations kept";
    assert_eq!(kept(note), Some(17));
    assert_eq!(kept("no summary"), None);
}

/// A quick bound (Reissner–Nordström, no nuisance) for the checkpoint's checks.
fn quick_bound<'a>(metric: &'a [&'a str], extra: &'a [&'a str]) -> Vec<&'a str> {
    let mut args = vec!["bound"];
    args.extend_from_slice(metric);
    args.extend_from_slice(&[
        "--vary",
        "q=0:1.2",
        "--measurement",
        concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/examples/measurement_ring.toml"
        ),
        "--json",
        "--checkpoint",
        "c.jsonl",
    ]);
    args.extend_from_slice(extra);
    args
}

/// A bound's checkpoint, like a scan's file, serves only the run it was written for: other
/// arguments, an edited metric file, another format or an edited line are refused with exit
/// code 2, naming what differs, and the file is left as it was; a rerun that only changes
/// which values are evaluated (the range) reuses it and prints what a fresh run prints.
#[test]
fn a_bound_checkpoint_is_refused_by_another_run() {
    let dir = scratch("interrupted", "bound-checkpoint");
    let metric_file = dir.join("rn.toml");
    std::fs::write(
        &metric_file,
        common::repo_file("metrics/reissner-nordstrom.toml"),
    )
    .unwrap();
    let by_file: &[&str] = &["--metric-file", "rn.toml"];
    let first = Invocation::new(&dir, quick_bound(by_file, &[])).run();
    assert_eq!(first.code, Some(0), "{}", first.describe());
    let written = std::fs::read_to_string(dir.join("c.jsonl")).unwrap();
    assert!(
        written.starts_with("{\"umbral_bound\":2,") && written.contains("\"metric_sha256\":\""),
        "the header names its format and the metric's hash: {}",
        written.lines().next().unwrap_or("")
    );
    let refused = |name: &str, args: Vec<&str>, expect: &[&str]| {
        let before = std::fs::read(dir.join("c.jsonl")).unwrap();
        let out = Invocation::new(&dir, args).run();
        let err = out.stderr_text();
        assert_eq!(out.code, Some(2), "{name}: {}", out.describe());
        for e in expect {
            assert!(err.contains(e), "{name}: expected '{e}' in: {err}");
        }
        assert_eq!(err.trim_end().lines().count(), 1, "{name}: one line: {err}");
        assert_eq!(
            std::fs::read(dir.join("c.jsonl")).unwrap(),
            before,
            "{name}: a refused checkpoint is left as it was"
        );
    };
    refused(
        "another fixed inclination",
        quick_bound(by_file, &["--inclination", "30"]),
        &[
            "'c.jsonl' was written by a bound with different arguments",
            "inclination",
        ],
    );
    refused(
        "the built-in metric instead of the file",
        quick_bound(&["--metric", "reissner-nordstrom"], &[]),
        &["different arguments", "metric"],
    );
    let edited_metric = format!(
        "{}\n# edited\n",
        common::repo_file("metrics/reissner-nordstrom.toml")
    );
    std::fs::write(&metric_file, edited_metric).unwrap();
    refused(
        "an edited metric file",
        quick_bound(by_file, &[]),
        &["different arguments", "metric_sha256"],
    );
    std::fs::write(
        &metric_file,
        common::repo_file("metrics/reissner-nordstrom.toml"),
    )
    .unwrap();
    let other_format = written.replacen("{\"umbral_bound\":2,", "{\"umbral_bound\":1,", 1);
    std::fs::write(dir.join("c.jsonl"), &other_format).unwrap();
    refused(
        "another checkpoint format",
        quick_bound(by_file, &[]),
        &["different arguments", "bound format 1 in the file, 2 now"],
    );
    // An edited size on the third line (the second evaluation).
    let mut lines: Vec<String> = written.lines().map(String::from).collect();
    let size = lines[2]
        .find("\"size_max\":")
        .expect("an evaluation with sizes")
        + 11;
    lines[2].insert(size, '1');
    std::fs::write(dir.join("c.jsonl"), lines.join("\n") + "\n").unwrap();
    refused(
        "an edited evaluation",
        quick_bound(by_file, &[]),
        &["'c.jsonl' line 3", "refusing to resume from it"],
    );
    std::fs::write(dir.join("c.jsonl"), &written).unwrap();
    // Another range of the varied parameter evaluates other values: the kept ones serve.
    let narrower = quick_bound(by_file, &[]);
    let narrower: Vec<&str> = narrower
        .into_iter()
        .map(|a| if a == "q=0:1.2" { "q=0.2:1" } else { a })
        .collect();
    let reused = Invocation::new(&dir, &narrower).run();
    assert_eq!(reused.code, Some(0), "{}", reused.describe());
    assert!(
        kept(&reused.stderr_text()).is_some_and(|k| k > 0),
        "the evaluations of the wider range are kept: {}",
        reused.describe()
    );
    let fresh_dir = scratch("interrupted", "bound-checkpoint-fresh");
    std::fs::copy(&metric_file, fresh_dir.join("rn.toml")).unwrap();
    let fresh = Invocation::new(&fresh_dir, &narrower).run();
    assert_eq!(fresh.code, Some(0), "{}", fresh.describe());
    assert!(
        reused.stdout == fresh.stdout,
        "a bound resumed from another range's evaluations differs from a fresh one"
    );
    let _ = std::fs::remove_dir_all(&dir);
    let _ = std::fs::remove_dir_all(&fresh_dir);
}
