//! The four file readers as harnesses that take arbitrary bytes: each returns `Ok` or `Err`
//! with the reader's message, and must never panic, hang or exhaust memory. Shared by the
//! proptest versions (`tests/reader_properties.rs`, run in CI) and the cargo-fuzz targets
//! (`fuzz/fuzz_targets/*.rs`, which include this file by path).
//!
//! Each harness goes one step past parsing, into what every command does next with a file it
//! has read (instantiate the metric and evaluate it; derive the radius intervals of a
//! measurement), so that a file that parses but breaks the next step is found too.

use std::path::{Path, PathBuf};
use umbral::measurement::Measurement;
use umbral::metric::Spacetime;
use umbral::metric_file::parse_metric_file;
use umbral::scan::{read_scan_file, GridAxis, ScanRequest};
use umbral::verify::ChecksFile;

/// A reader's verdict: `Ok` with a short summary, or the error message.
pub type Verdict = Result<String, String>;

fn text(bytes: &[u8]) -> Result<&str, String> {
    std::str::from_utf8(bytes).map_err(|e| format!("not UTF-8: {e}"))
}

fn nonempty(message: String) -> String {
    assert!(!message.trim().is_empty(), "an error without a message");
    message
}

/// Metric files: parse, then build the defaults and evaluate the metric and its horizon.
pub fn metric_file(bytes: &[u8]) -> Verdict {
    let spec = parse_metric_file(text(bytes)?, "fuzz.toml").map_err(|e| nonempty(e.to_string()))?;
    let metric = spec.instantiate_defaults();
    let g = metric.components_at(6.0, 1.0);
    let horizon = metric.outer_horizon();
    Ok(format!(
        "{} with {} checks: g_tt(6, 1) = {}, horizon {horizon:?}",
        spec.info().name,
        spec.checks().len(),
        g.g_tt
    ))
}

/// Measurement files: parse and validate, then derive the r_sh/M intervals.
pub fn measurement_file(bytes: &[u8]) -> Verdict {
    let m = Measurement::from_toml_str(text(bytes)?).map_err(|e| nonempty(e.to_string()))?;
    let derived = m.derive(None).map_err(|e| nonempty(e.to_string()))?;
    Ok(format!("{} intervals", derived.intervals.len()))
}

/// Checks files: parse and validate every case (metrics are built, nothing is solved). Files
/// they name are looked up next to a checks file in a folder that does not exist.
pub fn checks_file(bytes: &[u8]) -> Verdict {
    let path = Path::new("no-such-folder-for-fuzzing").join("checks.toml");
    let checks = ChecksFile::parse(text(bytes)?, &path).map_err(|e| nonempty(e.to_string()))?;
    Ok(format!(
        "{} cases, {} bounds",
        checks.cases.len(),
        checks.bounds.len()
    ))
}

/// The scan every scan-file seed was written by: Reissner-Nordström, q on 0..0.9 in 4 steps,
/// inclination 30° (the same scan as the seeds `fuzz/build-corpus.sh` writes).
pub fn scan_request() -> ScanRequest {
    ScanRequest {
        metric: umbral::metrics::MetricSource::builtin("reissner-nordstrom").unwrap(),
        axes: vec![GridAxis::new("q", 0.0, 0.9, 4)],
        fixed: vec![],
        inclination_deg: Some(30.0),
        settings: Default::default(),
        require_horizon: false,
    }
}

/// A scratch file for this process and thread.
fn scratch_file(tag: &str) -> PathBuf {
    let thread = format!("{:?}", std::thread::current().id())
        .chars()
        .filter(char::is_ascii_digit)
        .collect::<String>();
    std::env::temp_dir().join(format!(
        "umbral-reader-{tag}-{}-{thread}.jsonl",
        std::process::id()
    ))
}

/// Scan files: the bytes as the file an earlier run of [`scan_request`] left, read and checked
/// the way a resumed scan does (nothing is computed).
pub fn scan_file(bytes: &[u8]) -> Verdict {
    let path = scratch_file("scan");
    std::fs::write(&path, bytes).map_err(|e| format!("cannot write the scratch file: {e}"))?;
    let verdict = read_scan_file(&scan_request(), &path)
        .map(|points| format!("{} points kept", points.len()))
        .map_err(|e| nonempty(e.to_string()));
    let _ = std::fs::remove_file(&path);
    verdict
}
