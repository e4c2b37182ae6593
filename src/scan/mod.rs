//! Grid scans: the observables at every point of a 1-D or 2-D parameter grid, streamed to a
//! JSON-lines file that survives interruption.
//!
//! The file's first line is a header recording the arguments, the umbral version and a SHA-256
//! hash of the metric; every other line is one grid point with a checksum. Points are computed
//! in parallel and appended as each finishes. Rerun with the same arguments, a scan keeps every
//! complete line that passes every check (see [`lines`]), drops a half-written last line,
//! computes only the missing points and finally rewrites the file in grid order, so the result
//! equals an uninterrupted run's. A file from other arguments, another metric or another
//! version is refused, naming what differs; a damaged or edited line is refused, naming the
//! line and the problem. The output is locked for the whole run: a second scan on the same
//! file is refused while the first runs.
//!
//! ```
//! use umbral::metrics::MetricSource;
//! use umbral::scan::{run_scan, GridAxis, ScanRequest};
//! let path = std::env::temp_dir().join(format!("umbral-scan-doc-{}.jsonl", std::process::id()));
//! let _ = std::fs::remove_file(&path);
//! let request = ScanRequest {
//!     metric: MetricSource::builtin("reissner-nordstrom").unwrap(),
//!     axes: vec![GridAxis { name: "q".into(), low: 0.0, high: 1.2, count: 4 }],
//!     fixed: vec![],
//!     inclination_deg: 17.0,
//!     settings: Default::default(),
//!     require_horizon: false,
//! };
//! let summary = run_scan(&request, &path, &|_, _| {}).unwrap();
//! assert_eq!(summary.points.len(), 4);
//! assert_eq!(summary.points[3].status, "no_horizon"); // q = 1.2
//! std::fs::remove_file(&path).unwrap();
//! ```

mod file;
mod header;
pub mod lines;

pub use header::FORMAT;

use crate::error::MetricError;
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::observables::{CentreChoice, Observables, Quantity};
use crate::shadow::{self, Observer, PointShadow, ShadowSettings};
use file::ScanFile;
use header::Header;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::Mutex;

/// One grid axis: `count` points from `low` to `high` inclusive.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridAxis {
    pub name: String,
    pub low: f64,
    pub high: f64,
    pub count: usize,
}

impl GridAxis {
    /// The i-th grid value.
    pub fn value(&self, i: usize) -> f64 {
        if self.count <= 1 {
            self.low
        } else if i + 1 == self.count {
            self.high
        } else {
            self.low + (self.high - self.low) * i as f64 / (self.count - 1) as f64
        }
    }
}

/// What to scan.
#[derive(Debug, Clone, PartialEq)]
pub struct ScanRequest {
    /// The metric: a built-in name or a metric file.
    pub metric: MetricSource,
    /// One or two axes.
    pub axes: Vec<GridAxis>,
    pub fixed: Vec<(String, f64)>,
    pub inclination_deg: f64,
    pub settings: ShadowSettings,
    /// Record every horizonless point as `no_horizon`. By default a horizonless object whose
    /// photon sphere bounds capture by its centre is evaluated like a black hole and marked
    /// `horizonless` ([`crate::shadow::solve_classified`], as in the bound engine).
    pub require_horizon: bool,
}

/// One grid point.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScanPoint {
    /// Grid indices, one per axis.
    pub index: Vec<usize>,
    /// Every metric parameter at this point.
    pub parameters: BTreeMap<String, f64>,
    /// `shadow`, `no_shadow`, `no_horizon` or `failed`.
    pub status: String,
    /// A `shadow` of an object without a horizon (a photon sphere bounds capture by its
    /// centre, e.g. a Janis–Newman–Winicour naked singularity with ν > 1/2).
    #[serde(skip_serializing_if = "std::ops::Not::not", default)]
    pub horizonless: bool,
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub reason: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub solver: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub observables: Option<serde_json::Value>,
}

impl ScanPoint {
    /// A number from the observables (e.g. `mean_radius`), as stored in the line.
    pub fn observable(&self, key: &str) -> Option<f64> {
        self.observables.as_ref()?.get(key)?.as_f64()
    }

    /// [`ScanPoint::observable`] by [`Quantity`].
    pub fn quantity(&self, quantity: Quantity) -> Option<f64> {
        self.observable(quantity.name())
    }
}

/// The outcome of a scan.
#[derive(Debug, Clone, PartialEq)]
pub struct ScanSummary {
    /// Every point, in grid order (last axis fastest).
    pub points: Vec<ScanPoint>,
    /// Points computed by this run.
    pub computed: usize,
    /// Points kept from an earlier, interrupted run.
    pub reused: usize,
}

/// Why a scan could not run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScanError {
    #[error(transparent)]
    Metric(#[from] MetricError),
    #[error("{0}")]
    BadRequest(String),
    #[error("cannot write '{path}': {message}")]
    Io { path: String, message: String },
    #[error("cannot read '{path}': {message}")]
    Read { path: String, message: String },
    #[error("'{path}' was written by a scan with different arguments ({why}); refusing to mix them (use another --out or delete the file)")]
    Mismatch { path: String, why: String },
    #[error("'{path}' line {line} {problem}; refusing to resume from it ({})", remedy(*.line))]
    BadLine {
        path: String,
        line: usize,
        problem: String,
    },
    #[error("'{path}' is in use by another scan (it is locked); wait for that scan to finish or use another --out")]
    InUse { path: String },
    #[error("interrupted after {done} of {total} points; the finished points are kept in '{path}': rerun the same command to resume")]
    Interrupted {
        path: String,
        done: usize,
        total: usize,
    },
}

/// What to do about a bad line.
fn remedy(line: usize) -> &'static str {
    if line == 1 {
        "delete the file or use another --out"
    } else {
        "delete that line to have its point computed again, or use another --out"
    }
}

/// Most grid points a scan may have.
pub const MAX_SCAN_POINTS: usize = 1_000_000;

fn validate(request: &ScanRequest) -> Result<(), ScanError> {
    if request.axes.is_empty() || request.axes.len() > 2 {
        return Err(ScanError::BadRequest("give one or two grid axes".into()));
    }
    for a in &request.axes {
        if !(a.low.is_finite() && a.high.is_finite()) || a.low >= a.high || a.count < 2 {
            return Err(ScanError::BadRequest(format!(
                "--grid {}: need finite LO < HI and N >= 2, got {}:{}:{}",
                a.name,
                Num(a.low),
                Num(a.high),
                a.count
            )));
        }
    }
    let total: f64 = request.axes.iter().map(|a| a.count as f64).product();
    if total > MAX_SCAN_POINTS as f64 {
        return Err(ScanError::BadRequest(format!(
            "the grid has {} points; at most {MAX_SCAN_POINTS} are allowed",
            Num(total)
        )));
    }
    if request.axes.len() == 2 && request.axes[0].name == request.axes[1].name {
        return Err(ScanError::BadRequest(
            "the two grid axes must differ".into(),
        ));
    }
    if !(0.0..=180.0).contains(&request.inclination_deg) {
        return Err(ScanError::BadRequest(format!(
            "the inclination must lie between 0 and 180 degrees, got {}",
            Num(request.inclination_deg)
        )));
    }
    // Domains are intervals: building at both corners checks names and values.
    for pick in [false, true] {
        let mut a = request.fixed.clone();
        for axis in &request.axes {
            if a.iter().any(|(n, _)| *n == axis.name) {
                return Err(ScanError::BadRequest(format!(
                    "parameter '{}' is both fixed and on the grid",
                    axis.name
                )));
            }
            a.push((axis.name.clone(), if pick { axis.high } else { axis.low }));
        }
        request.metric.build(&a)?;
    }
    Ok(())
}

/// Every grid index, last axis fastest.
fn indices(axes: &[GridAxis]) -> Vec<Vec<usize>> {
    let mut out = vec![Vec::new()];
    for a in axes {
        out = out
            .into_iter()
            .flat_map(|p| {
                (0..a.count).map(move |i| {
                    let mut q = p.clone();
                    q.push(i);
                    q
                })
            })
            .collect();
    }
    out
}

/// A grid point's metric and its parameters as [`compute_point`] records them (every metric
/// parameter when the metric builds, else the assignments).
type GridPoint = (
    BTreeMap<String, f64>,
    Result<Box<dyn crate::metric::Spacetime>, MetricError>,
);

fn grid_point(request: &ScanRequest, index: &[usize]) -> GridPoint {
    let mut assignments = request.fixed.clone();
    for (a, &i) in request.axes.iter().zip(index) {
        assignments.push((a.name.clone(), a.value(i)));
    }
    let built = request.metric.build(&assignments);
    let parameters = match &built {
        Ok(spacetime) => spacetime
            .info()
            .parameters
            .iter()
            .map(|p| p.name.clone())
            .zip(spacetime.parameter_values())
            .collect(),
        Err(_) => assignments.iter().cloned().collect(),
    };
    (parameters, built)
}

/// The parameters a point line at `index` must carry.
pub(crate) fn expected_parameters(request: &ScanRequest, index: &[usize]) -> BTreeMap<String, f64> {
    grid_point(request, index).0
}

/// Compute one grid point.
pub fn compute_point(request: &ScanRequest, index: &[usize]) -> ScanPoint {
    let mut point = solve_point(request, index);
    if let Some(r) = &mut point.reason {
        if r.chars().count() > lines::MAX_REASON_CHARS {
            *r = r.chars().take(lines::MAX_REASON_CHARS).collect::<String>() + "...";
        }
    }
    point
}

fn solve_point(request: &ScanRequest, index: &[usize]) -> ScanPoint {
    let (parameters, built) = grid_point(request, index);
    let mut point = ScanPoint {
        index: index.to_vec(),
        parameters,
        status: "failed".into(),
        horizonless: false,
        reason: None,
        solver: None,
        observables: None,
    };
    let spacetime = match built {
        Ok(s) => s,
        Err(e) => {
            point.reason = Some(e.to_string());
            return point;
        }
    };
    let observer = Observer::distant(request.inclination_deg.to_radians());
    let classified = shadow::solve_classified(
        spacetime.as_ref(),
        &observer,
        &request.settings,
        request.require_horizon,
    );
    let (result, horizonless) = match classified {
        Err(e) => {
            point.reason = Some(e.to_string());
            return point;
        }
        Ok(PointShadow::NoHorizon) => {
            point.status = "no_horizon".into();
            return point;
        }
        Ok(PointShadow::NoShadow { solver, reason }) => {
            point.solver = Some(solver.into());
            point.status = "no_shadow".into();
            point.reason = Some(reason);
            return point;
        }
        Ok(PointShadow::Shadow {
            result,
            horizonless,
        }) => (result, horizonless),
    };
    point.solver = Some(result.solver.into());
    let Some(curve) = &result.curve else {
        point.reason = Some("the solver reported a shadow without a curve".into());
        return point;
    };
    match Observables::from_curve(
        curve,
        CentreChoice::Centroid,
        spacetime.outer_horizon(),
        result.photon_orbit_radii,
    ) {
        Ok(o) => {
            point.status = "shadow".into();
            point.horizonless = horizonless;
            point.observables = serde_json::to_value(&o).ok();
        }
        Err(e) => point.reason = Some(e.to_string()),
    }
    point
}

/// Most bytes a scan file of `total` points may have.
fn file_cap(total: usize) -> u64 {
    64 * 1024 + total as u64 * lines::MAX_LINE_BYTES as u64
}

/// Kept lines by grid index: the line's text and its point.
type Kept = BTreeMap<Vec<usize>, (String, ScanPoint)>;

/// The points an earlier run of the same request left in the file (none if it is empty or
/// holds no complete header), every line checked.
fn read_existing(
    data: &[u8],
    path: &Path,
    head: &Header,
    head_text: &str,
    request: &ScanRequest,
) -> Result<Kept, ScanError> {
    let shown = path.display().to_string();
    let bad = |line: usize, problem: String| ScanError::BadLine {
        path: shown.clone(),
        line,
        problem,
    };
    let mut found = BTreeMap::new();
    if data.is_empty() {
        return Ok(found);
    }
    if data.starts_with(b"\xEF\xBB\xBF") {
        return Err(bad(
            1,
            "starts with a byte-order mark (U+FEFF), which umbral never writes".into(),
        ));
    }
    let mut rest = data;
    let mut number = 0;
    while !rest.is_empty() {
        number += 1;
        let (raw, complete) = match rest.iter().position(|&b| b == b'\n') {
            Some(i) => {
                let raw = &rest[..i];
                rest = &rest[i + 1..];
                (raw, true)
            }
            None => (std::mem::take(&mut rest), false),
        };
        if let Some(at) = raw.iter().position(|&b| b < 0x20 && b != b'\t') {
            return Err(bad(
                number,
                format!(
                    "holds binary data (byte {} is a control character; is this a scan file?)",
                    at + 1
                ),
            ));
        }
        let text = std::str::from_utf8(raw).map_err(|e| {
            bad(
                number,
                format!(
                    "is not UTF-8 text (byte {} of the line; is this a scan file?)",
                    e.valid_up_to() + 1
                ),
            )
        })?;
        if number == 1 {
            if !complete {
                // A header cut off mid-write: nothing was computed yet.
                return if head_text.starts_with(text) {
                    Ok(found)
                } else {
                    Err(bad(
                        1,
                        "is cut off (no newline) and does not begin this scan's header".into(),
                    ))
                };
            }
            if let Some(e) = header::compare(text, head, &shown) {
                return Err(e);
            }
            continue;
        }
        if !complete {
            break; // a half-written last line: its point is computed again
        }
        let p = lines::decode(text, head_text, request, &found)
            .map_err(|problem| bad(number, problem))?;
        // Kept verbatim: the checks above made sure it is the canonical text.
        found.insert(p.index.clone(), (text.to_string(), p));
    }
    Ok(found)
}

/// Header and point lines (in grid order) as the file's text.
fn sorted_text(head_text: &str, lines: &[&str]) -> String {
    let mut text = String::with_capacity(
        head_text.len() + 1 + lines.iter().map(|l| l.len() + 1).sum::<usize>(),
    );
    text.push_str(head_text);
    text.push('\n');
    for line in lines {
        text.push_str(line);
        text.push('\n');
    }
    text
}

/// Run (or resume) a scan writing to `path`; `progress(done, total)` is called after every
/// point.
pub fn run_scan(
    request: &ScanRequest,
    path: &Path,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<ScanSummary, ScanError> {
    run_scan_until(request, path, progress, &AtomicBool::new(false))
}

/// [`run_scan`] that stops when `stop` is set: the points being computed are finished and
/// written, no new one is started, and the result is [`ScanError::Interrupted`] with the
/// count kept in the file. Rerunning the same request resumes.
pub fn run_scan_until(
    request: &ScanRequest,
    path: &Path,
    progress: &(dyn Fn(usize, usize) + Sync),
    stop: &AtomicBool,
) -> Result<ScanSummary, ScanError> {
    validate(request)?;
    let head = header::header(request)?;
    let head_text = header::text(&head)?;
    let all = indices(&request.axes);
    let mut file = ScanFile::open(path)?;
    let start = file
        .read(file_cap(all.len()))
        .and_then(|data| read_existing(&data, path, &head, &head_text, request))
        .and_then(|existing| {
            // Rewrite what was kept (drops a half-written line), then append as points finish.
            let kept: Vec<&str> = existing.values().map(|(l, _)| l.as_str()).collect();
            file.replace(&sorted_text(&head_text, &kept))?;
            Ok(existing)
        });
    let existing = match start {
        Ok(e) => e,
        Err(e) => {
            file.abandon();
            return Err(e);
        }
    };
    let reused = existing.len();
    let missing: Vec<&Vec<usize>> = all.iter().filter(|i| !existing.contains_key(*i)).collect();
    let done = AtomicUsize::new(reused);
    let total = all.len();
    progress(reused, total);
    let shared = Mutex::new(&mut file);
    let computed: Vec<Option<(String, ScanPoint)>> = missing
        .par_iter()
        .map(|index| -> Result<Option<(String, ScanPoint)>, ScanError> {
            if stop.load(Ordering::Relaxed) {
                return Ok(None);
            }
            let p = compute_point(request, index);
            let line = lines::encode(&head_text, &p)?;
            shared
                .lock()
                .unwrap_or_else(|e| e.into_inner())
                .append(&line)?;
            let n = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress(n, total);
            Ok(Some((line, p)))
        })
        .collect::<Result<_, _>>()?;
    if computed.iter().any(Option::is_none) {
        return Err(ScanError::Interrupted {
            path: path.display().to_string(),
            done: done.load(Ordering::Relaxed),
            total,
        });
    }
    let count = computed.len();
    let mut points = existing;
    for (line, p) in computed.into_iter().flatten() {
        points.insert(p.index.clone(), (line, p));
    }
    let ordered: Vec<(String, ScanPoint)> = all.iter().filter_map(|i| points.remove(i)).collect();
    let lines: Vec<&str> = ordered.iter().map(|(l, _)| l.as_str()).collect();
    file.replace(&sorted_text(&head_text, &lines))?;
    let points: Vec<ScanPoint> = ordered.into_iter().map(|(_, p)| p).collect();
    Ok(ScanSummary {
        points,
        computed: count,
        reused,
    })
}

/// Read and check the points an earlier run of `request` left in `path`, computing nothing:
/// the scan-file reader on its own, for tests and fuzzing. `Ok` holds the kept points in grid
/// order (none when the file does not exist); `Err` is what [`run_scan`] would refuse the file
/// with.
pub fn read_scan_file(request: &ScanRequest, path: &Path) -> Result<Vec<ScanPoint>, ScanError> {
    validate(request)?;
    let head = header::header(request)?;
    let head_text = header::text(&head)?;
    if !path.exists() {
        return Ok(Vec::new());
    }
    let cap = file_cap(indices(&request.axes).len());
    let data = crate::input::read_bytes_capped(path, cap).map_err(|e| ScanError::Read {
        path: path.display().to_string(),
        message: e.to_string(),
    })?;
    let kept = read_existing(&data, path, &head, &head_text, request)?;
    Ok(kept.into_values().map(|(_, p)| p).collect())
}
