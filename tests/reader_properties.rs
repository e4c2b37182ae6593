//! The proptest versions of the fuzz targets (CI runs these, not the fuzzers): the metric-file,
//! measurement-file, checks-file and scan-file readers, fed arbitrary bytes and mutated copies
//! of the shipped files, return `Ok` or an error with a message; they never panic.
//!
//! Seeds are the files the fuzzers start from: `metrics/*.toml` and the file-only metric under
//! `tests/data/`, `examples/measurement_*.toml`, `examples/ci-checks.toml` and
//! `tests/checks/*.toml`, and a real scan file. Inputs a fuzzer found to crash a reader are
//! kept under `tests/data/reader-regressions/<reader>/` and replayed by
//! `crashing_inputs_found_by_fuzzing_stay_fixed`.

mod common;
#[path = "common/readers.rs"]
mod readers;

use proptest::prelude::*;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

fn repo(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(relative)
}

/// Every `*.toml` file of a repository folder whose name starts with `prefix`.
fn files(folder: &str, prefix: &str) -> Vec<Vec<u8>> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(repo(folder))
        .unwrap()
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| {
            p.extension().is_some_and(|x| x == "toml")
                && p.file_name()
                    .and_then(|n| n.to_str())
                    .is_some_and(|n| n.starts_with(prefix))
        })
        .collect();
    paths.sort();
    paths.iter().map(|p| std::fs::read(p).unwrap()).collect()
}

fn metric_seeds() -> &'static [Vec<u8>] {
    static SEEDS: OnceLock<Vec<Vec<u8>>> = OnceLock::new();
    SEEDS.get_or_init(|| {
        let mut s = files("metrics", "");
        s.extend(files("tests/data", "ayon"));
        s
    })
}

fn measurement_seeds() -> &'static [Vec<u8>] {
    static SEEDS: OnceLock<Vec<Vec<u8>>> = OnceLock::new();
    SEEDS.get_or_init(|| files("examples", "measurement"))
}

fn checks_seeds() -> &'static [Vec<u8>] {
    static SEEDS: OnceLock<Vec<Vec<u8>>> = OnceLock::new();
    SEEDS.get_or_init(|| {
        let mut s = files("examples", "ci-checks");
        s.extend(files("tests/checks", ""));
        s
    })
}

/// A complete scan file of [`readers::scan_request`], and a half-written one.
fn scan_seeds() -> &'static [Vec<u8>] {
    static SEEDS: OnceLock<Vec<Vec<u8>>> = OnceLock::new();
    SEEDS.get_or_init(|| {
        let path =
            std::env::temp_dir().join(format!("umbral-reader-seed-{}.jsonl", std::process::id()));
        let _ = std::fs::remove_file(&path);
        umbral::scan::run_scan(&readers::scan_request(), &path, &|_, _| {}).unwrap();
        let full = std::fs::read(&path).unwrap();
        let _ = std::fs::remove_file(&path);
        let half = full[..full.len() * 2 / 3].to_vec();
        vec![full, half]
    })
}

/// Byte sequences that tend to matter to these formats.
const TOKENS: &[&str] = &[
    "\n",
    "\r\n",
    "\"",
    "'",
    "=",
    "[",
    "]",
    "[[",
    "]]",
    "{",
    "}",
    ",",
    ":",
    "#",
    "(",
    ")",
    "^",
    "*",
    "/",
    "-",
    "+",
    ".",
    "e",
    "nan",
    "inf",
    "-inf",
    "1e308",
    "-1e308",
    "1e-320",
    "0",
    "-0",
    "-1",
    "99999999999999999999",
    "\u{feff}",
    "\0",
    "\u{7f}",
    "\u{ff}",
    "r",
    "theta",
    "sqrt(",
    "pow(",
    "lambda",
    "eta",
    "true",
    "null",
    "\"index\":",
    "\"status\":\"shadow\"",
    "[[case]]",
    "[[bound]]",
    "[size.ring]",
    "[line_element]",
    "[separation]",
    "metric_file = \"/dev/null\"",
];

/// One edit of a seed.
#[derive(Debug, Clone)]
enum Mutation {
    /// Overwrite the byte at a position (modulo the length).
    Set(usize, u8),
    /// Insert a token at a position.
    Insert(usize, usize),
    /// Delete up to `len` bytes at a position.
    Delete(usize, usize),
    /// Keep only the first `n` bytes (modulo the length).
    Truncate(usize),
    /// Repeat the line at a position (modulo the line count).
    DuplicateLine(usize),
    /// Swap two lines.
    SwapLines(usize, usize),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), any::<u8>()).prop_map(|(p, b)| Mutation::Set(p, b)),
        (any::<usize>(), 0..TOKENS.len()).prop_map(|(p, t)| Mutation::Insert(p, t)),
        (any::<usize>(), 1usize..64).prop_map(|(p, n)| Mutation::Delete(p, n)),
        any::<usize>().prop_map(Mutation::Truncate),
        any::<usize>().prop_map(Mutation::DuplicateLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
    ]
}

fn lines(bytes: &[u8]) -> Vec<Vec<u8>> {
    bytes
        .split_inclusive(|&b| b == b'\n')
        .map(<[u8]>::to_vec)
        .collect()
}

fn apply(seed: &[u8], mutations: &[Mutation]) -> Vec<u8> {
    let mut b = seed.to_vec();
    for m in mutations {
        let at = |p: usize, len: usize| if len == 0 { 0 } else { p % (len + 1) };
        match *m {
            Mutation::Set(p, byte) if !b.is_empty() => {
                let i = p % b.len();
                b[i] = byte;
            }
            Mutation::Set(..) => {}
            Mutation::Insert(p, t) => {
                let i = at(p, b.len());
                b.splice(i..i, TOKENS[t].bytes());
            }
            Mutation::Delete(p, n) => {
                let i = at(p, b.len());
                let end = (i + n).min(b.len());
                b.drain(i..end);
            }
            Mutation::Truncate(p) => b.truncate(at(p, b.len())),
            Mutation::DuplicateLine(p) => {
                let mut l = lines(&b);
                if !l.is_empty() {
                    let i = p % l.len();
                    l.insert(i, l[i].clone());
                }
                b = l.concat();
            }
            Mutation::SwapLines(x, y) => {
                let mut l = lines(&b);
                if !l.is_empty() {
                    let n = l.len();
                    l.swap(x % n, y % n);
                }
                b = l.concat();
            }
        }
    }
    b
}

/// A seed chosen by index, with up to eight edits.
fn mutated(seeds: fn() -> &'static [Vec<u8>]) -> impl Strategy<Value = Vec<u8>> {
    (any::<usize>(), proptest::collection::vec(mutation(), 1..8)).prop_map(move |(i, ms)| {
        let s = seeds();
        apply(&s[i % s.len()], &ms)
    })
}

fn arbitrary_bytes() -> impl Strategy<Value = Vec<u8>> {
    proptest::collection::vec(any::<u8>(), 0..512)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(common::proptest_cases(512)))]

    #[test]
    fn metric_file_reader_never_panics(bytes in prop_oneof![arbitrary_bytes(), mutated(metric_seeds)]) {
        let _ = readers::metric_file(&bytes);
    }

    #[test]
    fn measurement_reader_never_panics(bytes in prop_oneof![arbitrary_bytes(), mutated(measurement_seeds)]) {
        let _ = readers::measurement_file(&bytes);
    }

    #[test]
    fn checks_reader_never_panics(bytes in prop_oneof![arbitrary_bytes(), mutated(checks_seeds)]) {
        let _ = readers::checks_file(&bytes);
    }

    #[test]
    fn scan_reader_never_panics(bytes in prop_oneof![arbitrary_bytes(), mutated(scan_seeds)]) {
        let _ = readers::scan_file(&bytes);
    }
}

/// The seeds themselves are read successfully (so the mutations start from valid files).
#[test]
fn every_seed_is_accepted() {
    for (i, s) in metric_seeds().iter().enumerate() {
        readers::metric_file(s).unwrap_or_else(|e| panic!("metric seed {i}: {e}"));
    }
    for (i, s) in measurement_seeds().iter().enumerate() {
        // A measurement that takes κ from a calibration file by a relative path cannot find it
        // from the harness's folder: it must say so; the others must load.
        // One whose κ is computed by the command line has no intervals until then.
        let text = String::from_utf8_lossy(s);
        if text.contains("ring_to_shadow = \"calibration.json\"") {
            let e = readers::measurement_file(s).unwrap_err();
            assert!(e.contains("calibration.json"), "measurement seed {i}: {e}");
            continue;
        }
        if text.contains("ring_to_shadow = \"computed\"") {
            let e = readers::measurement_file(s).unwrap_err();
            assert!(e.contains("not been computed"), "measurement seed {i}: {e}");
            continue;
        }
        readers::measurement_file(s).unwrap_or_else(|e| panic!("measurement seed {i}: {e}"));
    }
    for (i, s) in scan_seeds().iter().enumerate() {
        let kept = readers::scan_file(s).unwrap_or_else(|e| panic!("scan seed {i}: {e}"));
        assert!(kept.ends_with("points kept"), "{kept}");
    }
    // Checks files that name metric or measurement files by a relative path cannot find them
    // from the harness's folder; the others must load.
    let loaded = checks_seeds()
        .iter()
        .filter(|s| readers::checks_file(s).is_ok())
        .count();
    assert!(loaded >= 2, "only {loaded} checks seeds load");
    assert!(
        metric_seeds().len() >= 18,
        "{} metric seeds",
        metric_seeds().len()
    );
    assert!(measurement_seeds().len() >= 3);
}

/// The readers by the names of their fuzz targets.
fn reader(name: &str) -> fn(&[u8]) -> readers::Verdict {
    match name {
        "metric_file" => readers::metric_file,
        "measurement_file" => readers::measurement_file,
        "checks_file" => readers::checks_file,
        "scan_file" => readers::scan_file,
        other => panic!("no reader '{other}'"),
    }
}

/// Set by [`crashing_inputs_found_by_fuzzing_stay_fixed`] for the child it starts:
/// `READER:PATH`.
const REPLAY: &str = "UMBRAL_REPLAY_INPUT";

/// The child's side of [`crashing_inputs_found_by_fuzzing_stay_fixed`]: feed the one file named
/// in the environment to its reader. Without that variable (an ordinary test run) there is
/// nothing to replay.
#[test]
fn replay_one_input() {
    let Ok(spec) = std::env::var(REPLAY) else {
        return;
    };
    let (name, path) = spec.split_once(':').expect("READER:PATH");
    let bytes = std::fs::read(path).expect("the input file");
    let verdict = reader(name)(&bytes);
    eprintln!("{name} {path}: {verdict:?}");
}

/// Every input that crashed a reader (found by a fuzzer, or reported in the reliability issue)
/// is kept under `tests/data/reader-regressions/<reader>/` and replayed, each in a child process
/// under the same memory limit and kill-timeout as the command-line tests, so that a crash that
/// is not a panic (a stack overflow, an abort, running out of memory) is caught too.
#[test]
fn crashing_inputs_found_by_fuzzing_stay_fixed() {
    let root = repo("tests/data/reader-regressions");
    let exe = std::env::current_exe().unwrap();
    let mut failures = Vec::new();
    let mut replayed = 0;
    for name in [
        "metric_file",
        "measurement_file",
        "checks_file",
        "scan_file",
    ] {
        let Ok(entries) = std::fs::read_dir(root.join(name)) else {
            continue;
        };
        let mut paths: Vec<PathBuf> = entries.filter_map(|e| e.ok().map(|e| e.path())).collect();
        paths.sort();
        for path in paths.iter().filter(|p| p.is_file()) {
            let mut child = common::Invocation::new(
                &root,
                [
                    "replay_one_input",
                    "--exact",
                    "--test-threads=1",
                    "--nocapture",
                ],
            )
            .env(REPLAY, &format!("{name}:{}", path.display()));
            child.program = exe.clone();
            let out = child.run();
            replayed += 1;
            if out.code != Some(0) {
                failures.push(format!("{}: {}", path.display(), out.describe()));
            }
        }
    }
    eprintln!("replayed {replayed} crashing inputs");
    assert!(
        replayed > 0,
        "no regression inputs found under {}",
        root.display()
    );
    assert!(
        failures.is_empty(),
        "inputs that still crash a reader:\n{}",
        failures.join("\n")
    );
}

#[test]
fn mutations_edit_as_described() {
    let seed = b"a = 1\nb = 2\n";
    assert_eq!(apply(seed, &[Mutation::Truncate(5)]), b"a = 1");
    assert_eq!(apply(seed, &[Mutation::SwapLines(0, 1)]), b"b = 2\na = 1\n");
    assert_eq!(
        apply(seed, &[Mutation::DuplicateLine(1)]),
        b"a = 1\nb = 2\nb = 2\n"
    );
    assert_eq!(apply(seed, &[Mutation::Delete(0, 4)]), b"1\nb = 2\n");
    assert_eq!(apply(seed, &[Mutation::Insert(0, 2)]), b"\"a = 1\nb = 2\n");
    assert_eq!(apply(seed, &[Mutation::Set(0, b'c')]), b"c = 1\nb = 2\n");
}
