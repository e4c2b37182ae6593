//! Determinism: every command's JSON output (and every file it writes) is byte-identical with
//! one and with two worker threads (RAYON_NUM_THREADS=1 and 2) and across two runs.
//!
//! Wall-clock figures may differ between runs, so they are allowed only inside a `diagnostics`
//! object: the JSON is parsed, every key under `diagnostics` that names a time is recorded and
//! its number blanked in the raw text before the byte comparison, and any key elsewhere that
//! looks like a time (or a string that looks like a date) fails the test.

mod common;

use common::{scratch, snapshot, Invocation};
use serde_json::Value;
use std::collections::BTreeSet;
use std::path::PathBuf;
use std::time::Duration;

/// The thread counts of the three runs: 1, 2, and 2 again (a second run).
const RUNS: [&str; 3] = ["1", "2", "2"];

/// Whether a JSON key names a wall-clock figure: one of its `_`-separated words is a unit or
/// name of time (`wall_seconds`, `elapsed_ms`, `timestamp`, ...).
fn looks_like_time(key: &str) -> bool {
    key.to_ascii_lowercase().split(['_', '-']).any(|word| {
        matches!(
            word,
            "time"
                | "times"
                | "timestamp"
                | "date"
                | "seconds"
                | "second"
                | "secs"
                | "elapsed"
                | "duration"
                | "clock"
                | "wall"
                | "runtime"
                | "ms"
                | "us"
                | "ns"
                | "millis"
                | "micros"
                | "nanos"
        )
    })
}

/// A string value that looks like a date or timestamp (`2024-05-01...`).
fn looks_like_date(s: &str) -> bool {
    let b = s.as_bytes();
    b.len() >= 10
        && b[..4].iter().all(u8::is_ascii_digit)
        && b[4] == b'-'
        && b[5..7].iter().all(u8::is_ascii_digit)
        && b[7] == b'-'
        && b[8..10].iter().all(u8::is_ascii_digit)
}

/// Walk `v`: collect the time keys found under `diagnostics`, and report time-like keys or
/// date-like strings anywhere else.
fn time_keys(v: &Value, in_diagnostics: bool, path: &str, found: &mut BTreeSet<String>) {
    match v {
        Value::Object(map) => {
            for (k, x) in map {
                let here = format!("{path}/{k}");
                if looks_like_time(k) {
                    assert!(
                        in_diagnostics,
                        "{here}: a time outside `diagnostics` makes the output differ between runs"
                    );
                    assert!(x.is_number(), "{here}: a time should be a number");
                    found.insert(k.clone());
                }
                time_keys(x, in_diagnostics || k == "diagnostics", &here, found);
            }
        }
        Value::Array(items) => {
            for (i, x) in items.iter().enumerate() {
                time_keys(x, in_diagnostics, &format!("{path}/{i}"), found);
            }
        }
        Value::String(s) => assert!(
            in_diagnostics || !looks_like_date(s),
            "{path}: '{s}' looks like a date"
        ),
        _ => {}
    }
}

/// Replace the number after every `"key":` for the given keys by 0.
fn blank_numbers(text: &str, keys: &BTreeSet<String>) -> String {
    let mut out = text.to_string();
    for key in keys {
        let pattern = format!("\"{key}\":");
        let mut result = String::with_capacity(out.len());
        let mut rest = out.as_str();
        while let Some(i) = rest.find(&pattern) {
            let after = i + pattern.len();
            result.push_str(&rest[..after]);
            let tail = &rest[after..];
            let spaces = tail.len() - tail.trim_start().len();
            result.push_str(&tail[..spaces]);
            let number_len = tail[spaces..]
                .find(|c: char| !(c.is_ascii_digit() || "+-.eE".contains(c)))
                .unwrap_or(tail.len() - spaces);
            result.push('0');
            rest = &tail[spaces + number_len..];
        }
        result.push_str(rest);
        out = result;
    }
    out
}

/// The text to compare for one output: JSON (a document, or one per line) with its diagnostics
/// times blanked; anything else as it is.
fn comparable(name: &str, bytes: &[u8]) -> Vec<u8> {
    let text = String::from_utf8_lossy(bytes);
    let documents: Vec<Value> = match serde_json::from_str::<Value>(&text) {
        Ok(v) => vec![v],
        Err(_) => match text
            .lines()
            .map(serde_json::from_str::<Value>)
            .collect::<Result<Vec<_>, _>>()
        {
            Ok(lines) if !lines.is_empty() => lines,
            _ => return bytes.to_vec(),
        },
    };
    let mut keys = BTreeSet::new();
    for d in &documents {
        time_keys(d, false, name, &mut keys);
    }
    blank_numbers(&text, &keys).into_bytes()
}

/// Run `args` three times (fresh folder each), and compare stdout and every file written.
fn assert_deterministic(label: &str, args: &[&str]) {
    assert_deterministic_at(label, args, &RUNS, common::DEFAULT_TIMEOUT);
}

/// Run `args` once per thread count in `threads`, each killed after `timeout`, and compare.
fn assert_deterministic_at(label: &str, args: &[&str], thread_counts: &[&str], timeout: Duration) {
    let mut runs: Vec<Vec<(PathBuf, Vec<u8>)>> = Vec::new();
    for (i, threads) in thread_counts.iter().enumerate() {
        let dir = scratch("determinism", &format!("{label}-{i}"));
        let args: Vec<String> = args
            .iter()
            .map(|a| a.replace("{repo}", env!("CARGO_MANIFEST_DIR")))
            .collect();
        let mut invocation = Invocation::new(&dir, &args).env("RAYON_NUM_THREADS", threads);
        invocation.timeout = timeout;
        let out = invocation.run();
        assert_eq!(
            out.code,
            Some(0),
            "{label} (threads {threads}): {}",
            out.describe()
        );
        let mut outputs = vec![(
            PathBuf::from("<stdout>"),
            comparable("<stdout>", &out.stdout),
        )];
        for (path, bytes) in snapshot(&dir) {
            if let Some(bytes) = bytes {
                let shown = path.display().to_string();
                outputs.push((path, comparable(&shown, &bytes)));
            }
        }
        runs.push(outputs);
        let _ = std::fs::remove_dir_all(&dir);
    }
    let names = |r: &[(PathBuf, Vec<u8>)]| r.iter().map(|(p, _)| p.clone()).collect::<Vec<_>>();
    for (i, run) in runs.iter().enumerate().skip(1) {
        assert_eq!(
            names(run),
            names(&runs[0]),
            "{label}: run {i} wrote other files"
        );
        for ((path, a), (_, b)) in runs[0].iter().zip(run) {
            if a != b {
                let at = a.iter().zip(b).position(|(x, y)| x != y).unwrap_or(0);
                let context = |t: &[u8]| {
                    String::from_utf8_lossy(&t[at.saturating_sub(80)..(at + 80).min(t.len())])
                        .into_owned()
                };
                panic!(
                    "{label}: {} differs between RAYON_NUM_THREADS={} and {} (run {i}) at byte {at}:\n{}\nvs\n{}",
                    path.display(),
                    thread_counts[0],
                    thread_counts[i],
                    context(a),
                    context(b)
                );
            }
        }
    }
}

#[test]
fn shadow_json_with_each_solver() {
    let base = ["shadow", "--json"];
    let cases: [(&str, &[&str]); 7] = [
        // Long curves take the split transforms, sums and tasks of `shadow::curve` and the
        // separable solver (20 000 points: more than 16 384).
        (
            "spherical-long",
            &[
                "--metric",
                "reissner-nordstrom",
                "--set",
                "q=0.5",
                "--inclination",
                "30",
                "--points",
                "20000",
            ],
        ),
        (
            "separable-long",
            &[
                "--metric",
                "kerr",
                "--set",
                "a=0.9",
                "--inclination",
                "60",
                "--points",
                "20000",
            ],
        ),
        (
            "spherical",
            &[
                "--metric",
                "reissner-nordstrom",
                "--set",
                "q=0.5",
                "--inclination",
                "30",
                "--points",
                "64",
            ],
        ),
        (
            "separable",
            &[
                "--metric",
                "kerr",
                "--set",
                "a=0.9",
                "--inclination",
                "60",
                "--points",
                "64",
            ],
        ),
        (
            "raytrace",
            &[
                "--metric",
                "kerr",
                "--set",
                "a=0.5",
                "--inclination",
                "60",
                "--solver",
                "raytrace",
                "--tolerance",
                "1e-6",
                "--points",
                "32",
            ],
        ),
        (
            "auto-raytrace-family",
            &[
                "--metric",
                "johannsen-psaltis",
                "--set",
                "a=0.5",
                "--set",
                "eps3=0,1",
                "--inclination",
                "60",
                "--tolerance",
                "1e-6",
                "--points",
                "16",
            ],
        ),
        (
            "finite-observer-file",
            &[
                "--metric-file",
                "{repo}/metrics/kerr.toml",
                "--set",
                "a=0.7",
                "--inclination",
                "17",
                "--observer-radius",
                "50",
                "--points",
                "64",
                "--csv",
                "c.csv",
                "--plot",
                "p.svg",
            ],
        ),
    ];
    for (label, extra) in cases {
        let args: Vec<&str> = base.iter().chain(extra).copied().collect();
        assert_deterministic(&format!("shadow-{label}"), &args);
    }
}

#[test]
fn bound_json() {
    assert_deterministic(
        "bound",
        &[
            "bound",
            "--metric",
            "reissner-nordstrom",
            "--vary",
            "q=0:1.2",
            "--measurement",
            "{repo}/examples/measurement_ring.toml",
            "--json",
            "--plot",
            "b.svg",
        ],
    );
}

/// A bound whose nuisance extremes (the inclination over a range) are computed in parallel,
/// with its checkpoint kept: the JSON and the completed checkpoint (rewritten in order of the
/// varied parameter) repeat at every thread count.
#[test]
fn bound_json_with_nuisance_and_checkpoint() {
    let args: Vec<&str> = common::LONG_BOUND
        .iter()
        .copied()
        .chain(["--checkpoint", "c.jsonl"])
        .collect();
    assert_deterministic("bound-nuisance", &args);
}

#[test]
fn scan_file() {
    assert_deterministic(
        "scan",
        &[
            "scan",
            "--metric",
            "kerr-newman",
            "--grid",
            "a=0:0.9:6",
            "--grid",
            "q=0:0.8:5",
            "--inclination",
            "60",
            "--out",
            "s.jsonl",
            "--measurement",
            "{repo}/examples/measurement_radius.toml",
            "--plot",
            "map.svg",
        ],
    );
}

/// `infer` by quadrature: the JSON, the samples (drawn from the seed on the calling thread)
/// and the corner plot repeat at every thread count.
#[test]
fn infer_by_quadrature_files() {
    assert_deterministic(
        "infer-quadrature",
        &[
            "infer",
            "--metric",
            "reissner-nordstrom",
            "--prior",
            "q=uniform:0:1.2",
            "--measurement",
            "{repo}/examples/measurement_deviation.toml",
            "--sampler",
            "quadrature",
            "--samples",
            "2000",
            "--json",
            "--out",
            "out",
            "--plot",
            "corner.svg",
        ],
    );
}

#[test]
fn verify_json() {
    assert_deterministic(
        "verify",
        &[
            "verify",
            "--json",
            "{repo}/examples/ci-checks.toml",
            "{repo}/tests/checks/bounds.toml",
        ],
    );
}

#[test]
fn metrics_and_geometry_json() {
    assert_deterministic(
        "metrics",
        &["metrics", "--json", "--metrics-dir", "{repo}/metrics"],
    );
    assert_deterministic(
        "geometry",
        &[
            "geometry", "--metric", "kerr-sen", "--set", "a=0.4", "--set", "b=0.2", "--r", "5",
            "--theta", "1.1", "--json",
        ],
    );
}

/// The demo runs the whole chain (shadows, two bounds with a spin nuisance, a posterior, a
/// scan, checks): its results.json, report, posterior files, scan file and figures must all
/// repeat. It is the slowest command (its posterior takes some 640 000 model evaluations,
/// about half a minute on one core), so it runs twice, not three times: at 1 and at 2 threads
/// (two separate runs), each given five minutes before it is killed as hung.
#[test]
fn demo_outputs() {
    assert_deterministic_at(
        "demo",
        &["demo", "--out", "out"],
        &["1", "2"],
        Duration::from_secs(300),
    );
}

#[test]
fn masking_blanks_only_diagnostics_times() {
    let text = r#"{"a": 1.5, "diagnostics": {"wall_seconds": 0.0123, "rays_traced": 4}}"#;
    let masked = String::from_utf8(comparable("t", text.as_bytes())).unwrap();
    assert_eq!(
        masked,
        r#"{"a": 1.5, "diagnostics": {"wall_seconds": 0, "rays_traced": 4}}"#
    );
    let outside = std::panic::catch_unwind(|| comparable("t", br#"{"elapsed_seconds": 2.0}"#));
    assert!(outside.is_err(), "a time outside diagnostics must fail");
    let dated = std::panic::catch_unwind(|| comparable("t", br#"{"made": "2024-05-01T10:00"}"#));
    assert!(dated.is_err(), "a date outside diagnostics must fail");
    assert!(!looks_like_time("mean_radius") && !looks_like_time("updated_files"));
    assert!(looks_like_time("wall_seconds") && looks_like_time("elapsed_ms"));
}
