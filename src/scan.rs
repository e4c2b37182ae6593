//! Grid scans: the observables at every point of a 1-D or 2-D parameter grid, streamed to a
//! JSON-lines file that survives interruption.
//!
//! The file's first line is a header recording the arguments; every other line is one grid
//! point. Points are computed in parallel and appended (and flushed) as each finishes. Rerun
//! with the same arguments, a scan keeps every complete line, drops a half-written last line,
//! computes only the missing points and finally rewrites the file in grid order, so the result
//! equals an uninterrupted run's. A file from different arguments is refused.
//!
//! ```
//! use umbral::scan::{run_scan, GridAxis, ScanRequest};
//! let path = std::env::temp_dir().join(format!("umbral-scan-doc-{}.jsonl", std::process::id()));
//! let _ = std::fs::remove_file(&path);
//! let request = ScanRequest {
//!     metric: "reissner-nordstrom".into(),
//!     axes: vec![GridAxis { name: "q".into(), low: 0.0, high: 1.2, count: 4 }],
//!     fixed: vec![],
//!     inclination_deg: 17.0,
//!     settings: Default::default(),
//! };
//! let summary = run_scan(&request, &path, &|_, _| {}).unwrap();
//! assert_eq!(summary.points.len(), 4);
//! assert_eq!(summary.points[3].status, "no_horizon"); // q = 1.2
//! std::fs::remove_file(&path).unwrap();
//! ```

use crate::error::MetricError;
use crate::metric::Classification;
use crate::metrics::MetricSource;
use crate::observables::{CentreChoice, Observables};
use crate::shadow::{self, Observer, ShadowSettings, ShadowStatus};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::io::Write;
use std::path::Path;
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
}

/// The header line: everything that determines the points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
struct Header {
    umbral_scan: u32,
    metric: String,
    axes: Vec<GridAxis>,
    fixed: BTreeMap<String, f64>,
    inclination_deg: f64,
    points: usize,
    tolerance: f64,
    solver: String,
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
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub reason: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub solver: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub observables: Option<serde_json::Value>,
}

impl ScanPoint {
    /// A number from the observables (e.g. `mean_radius`).
    pub fn observable(&self, key: &str) -> Option<f64> {
        self.observables.as_ref()?.get(key)?.as_f64()
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
    #[error("'{path}' was written by a scan with different arguments; refusing to mix them (use another --out or delete the file)")]
    Mismatch { path: String },
}

fn io(path: &Path, e: impl std::fmt::Display) -> ScanError {
    ScanError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    }
}

fn header(request: &ScanRequest) -> Header {
    Header {
        umbral_scan: 1,
        metric: request.metric.label(),
        axes: request.axes.clone(),
        fixed: request.fixed.iter().cloned().collect(),
        inclination_deg: request.inclination_deg,
        points: request.settings.points,
        tolerance: request.settings.tolerance,
        solver: format!("{:?}", request.settings.solver).to_lowercase(),
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
                a.name, a.low, a.high, a.count
            )));
        }
    }
    let total: f64 = request.axes.iter().map(|a| a.count as f64).product();
    if total > MAX_SCAN_POINTS as f64 {
        return Err(ScanError::BadRequest(format!(
            "the grid has {total} points; at most {MAX_SCAN_POINTS} are allowed"
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
            request.inclination_deg
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

/// Compute one grid point.
pub fn compute_point(request: &ScanRequest, index: &[usize]) -> ScanPoint {
    let mut assignments = request.fixed.clone();
    for (a, &i) in request.axes.iter().zip(index) {
        assignments.push((a.name.clone(), a.value(i)));
    }
    let mut point = ScanPoint {
        index: index.to_vec(),
        parameters: assignments.iter().cloned().collect(),
        status: "failed".into(),
        reason: None,
        solver: None,
        observables: None,
    };
    let spacetime = match request.metric.build(&assignments) {
        Ok(s) => s,
        Err(e) => {
            point.reason = Some(e.to_string());
            return point;
        }
    };
    let info = spacetime.info();
    point.parameters = info
        .parameters
        .iter()
        .map(|p| p.name.clone())
        .zip(spacetime.parameter_values())
        .collect();
    if let Classification::Horizonless = spacetime.classify() {
        point.status = "no_horizon".into();
        return point;
    }
    let observer = Observer::distant(request.inclination_deg.to_radians());
    match shadow::solve(spacetime.as_ref(), &observer, &request.settings) {
        Err(e) => point.reason = Some(e.to_string()),
        Ok(r) => {
            point.solver = Some(r.solver.name().to_string());
            match (&r.status, &r.curve) {
                (ShadowStatus::NoShadow { reason }, _) => {
                    point.status = "no_shadow".into();
                    point.reason = Some(reason.clone());
                }
                (ShadowStatus::Shadow, None) => {
                    point.reason = Some("the solver reported a shadow without a curve".into())
                }
                (ShadowStatus::Shadow, Some(curve)) => match Observables::from_curve(
                    curve,
                    CentreChoice::Centroid,
                    spacetime.outer_horizon(),
                    r.photon_orbit_radii,
                ) {
                    Ok(o) => {
                        point.status = "shadow".into();
                        point.observables = serde_json::to_value(&o).ok();
                    }
                    Err(e) => point.reason = Some(e.to_string()),
                },
            }
        }
    }
    point
}

/// Read the points an earlier run of the same request left in `path` (none if the file does
/// not exist or holds no complete header).
fn read_existing(
    path: &Path,
    head: &Header,
    all: &[Vec<usize>],
) -> Result<BTreeMap<Vec<usize>, (String, ScanPoint)>, ScanError> {
    let text = match std::fs::read_to_string(path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(BTreeMap::new()),
        Err(e) => return Err(io(path, e)),
    };
    let mut lines = text.split_inclusive('\n');
    let Some(first) = lines.next() else {
        return Ok(BTreeMap::new());
    };
    if !first.ends_with('\n') {
        // A header cut off mid-write: nothing was computed yet. Anything else is refused.
        return if head_text(head)?.starts_with(first) {
            Ok(BTreeMap::new())
        } else {
            Err(ScanError::Mismatch {
                path: path.display().to_string(),
            })
        };
    }
    match serde_json::from_str::<Header>(first.trim_end()) {
        Ok(h) if h == *head => {}
        _ => {
            return Err(ScanError::Mismatch {
                path: path.display().to_string(),
            })
        }
    }
    let mut found = BTreeMap::new();
    for line in lines {
        if !line.ends_with('\n') {
            break; // half-written last line
        }
        match serde_json::from_str::<ScanPoint>(line.trim_end()) {
            Ok(p) if all.binary_search(&p.index).is_ok() => {
                // Kept verbatim: re-serialising parsed floats need not reproduce the text.
                found.insert(p.index.clone(), (line.trim_end().to_string(), p));
            }
            _ => {
                return Err(ScanError::Mismatch {
                    path: path.display().to_string(),
                })
            }
        }
    }
    Ok(found)
}

fn head_text(head: &Header) -> Result<String, ScanError> {
    serde_json::to_string(head).map_err(|e| ScanError::BadRequest(e.to_string()))
}

fn point_text(p: &ScanPoint) -> Result<String, ScanError> {
    serde_json::to_string(p).map_err(|e| ScanError::BadRequest(e.to_string()))
}

/// Write header and point lines (in grid order) to `path` through a temporary file and a
/// rename.
fn write_sorted(path: &Path, head: &Header, lines: &[&str]) -> Result<(), ScanError> {
    let mut text = head_text(head)?;
    text.push('\n');
    for line in lines {
        text.push_str(line);
        text.push('\n');
    }
    let tmp = path.with_extension("jsonl.partial");
    std::fs::write(&tmp, text).map_err(|e| io(&tmp, e))?;
    std::fs::rename(&tmp, path).map_err(|e| io(path, e))
}

/// Run (or resume) a scan writing to `path`; `progress(done, total)` is called after every
/// point.
pub fn run_scan(
    request: &ScanRequest,
    path: &Path,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<ScanSummary, ScanError> {
    validate(request)?;
    let head = header(request);
    let all = indices(&request.axes);
    let existing = read_existing(path, &head, &all)?;
    let reused = existing.len();
    // Rewrite what was kept (drops a half-written line), then append as points finish.
    let kept: Vec<&str> = existing.values().map(|(l, _)| l.as_str()).collect();
    write_sorted(path, &head, &kept)?;
    let file = std::fs::OpenOptions::new()
        .append(true)
        .open(path)
        .map_err(|e| io(path, e))?;
    let file = Mutex::new(file);
    let missing: Vec<&Vec<usize>> = all.iter().filter(|i| !existing.contains_key(*i)).collect();
    let done = std::sync::atomic::AtomicUsize::new(reused);
    let total = all.len();
    progress(reused, total);
    let computed: Vec<(String, ScanPoint)> = missing
        .par_iter()
        .map(|index| -> Result<(String, ScanPoint), ScanError> {
            let p = compute_point(request, index);
            let line = point_text(&p)?;
            {
                let mut f = file.lock().unwrap_or_else(|e| e.into_inner());
                f.write_all(format!("{line}\n").as_bytes())
                    .map_err(|e| io(path, e))?;
                f.flush().map_err(|e| io(path, e))?;
            }
            let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            progress(n, total);
            Ok((line, p))
        })
        .collect::<Result<_, _>>()?;
    drop(file);
    let count = computed.len();
    let mut points = existing;
    for (line, p) in computed {
        points.insert(p.index.clone(), (line, p));
    }
    let ordered: Vec<(String, ScanPoint)> = all.iter().filter_map(|i| points.remove(i)).collect();
    let lines: Vec<&str> = ordered.iter().map(|(l, _)| l.as_str()).collect();
    write_sorted(path, &head, &lines)?;
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
    let kept = read_existing(path, &header(request), &indices(&request.axes))?;
    Ok(kept.into_values().map(|(_, p)| p).collect())
}
