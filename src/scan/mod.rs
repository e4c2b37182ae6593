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
//! The grid points are the work items of a [`crate::run::Executor`] and the file is its
//! [`crate::run::JsonlCheckpoint`]; [`scan`] takes the observers and stop flag to attach.
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

mod header;
mod lines;
pub mod shard;
pub mod table;

pub use header::FORMAT;

use crate::bounds::{allowed_margin, SizeMeasure};
use crate::error::MetricError;
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::observables::{CentreChoice, Observables, Quantity};
use crate::run::{
    CheckpointError, Controls, Executor, JsonlCheckpoint, MetricHashError, ProgressFn, RunError,
    Selection, WorkList,
};
use crate::shadow::{self, Observer, PointShadow, ShadowSettings};
use lines::ScanFormat;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;

/// One grid axis: `count` points from `low` to `high` inclusive.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridAxis {
    /// The metric parameter on this axis.
    pub name: String,
    /// First grid value.
    pub low: f64,
    /// Last grid value.
    pub high: f64,
    /// Number of grid values (at least 2).
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
    /// Other parameters held fixed, by name.
    pub fixed: Vec<(String, f64)>,
    /// The observer's inclination, in degrees from the spin axis (0 to 180).
    pub inclination_deg: f64,
    /// Shadow solver settings.
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
    /// Why there is no shadow, or what failed (`no_shadow` and `failed` points).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub reason: Option<String>,
    /// The solver that ran, once the metric was built.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub solver: Option<String>,
    /// The [`Observables`] of a `shadow` point.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub observables: Option<PointObservables>,
}

impl ScanPoint {
    /// A number from the observables by its field name in the line, e.g. `mean_radius`, or
    /// `horizon_radius` (a field that is not a [`Quantity`]); [`ScanPoint::quantity`] reads a
    /// [`Quantity`].
    pub fn observable(&self, key: &str) -> Option<f64> {
        match key.parse::<Quantity>() {
            Ok(quantity) => self.quantity(quantity),
            Err(_) => self.observables.as_ref()?.json().get(key)?.as_f64(),
        }
    }

    /// A finite observable by [`Quantity`], if the point has it.
    pub fn quantity(&self, quantity: Quantity) -> Option<f64> {
        self.observables.as_ref()?.get(quantity)
    }
}

/// The observables of a `shadow` point: the JSON object its line stores, written back
/// unchanged, and its finite numbers by [`Quantity`] for lookups.
///
/// ```
/// use umbral::observables::Quantity;
/// use umbral::scan::PointObservables;
///
/// let o = PointObservables::from_json(serde_json::json!({ "mean_radius": 5.2, "area": null }));
/// assert_eq!(o.get(Quantity::MeanRadius), Some(5.2));
/// assert_eq!(o.get(Quantity::Area), None);
/// assert_eq!(serde_json::to_string(&o).unwrap(), r#"{"area":null,"mean_radius":5.2}"#);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct PointObservables {
    json: serde_json::Value,
    values: BTreeMap<Quantity, f64>,
}

impl PointObservables {
    /// The observables of a computed curve (a non-finite number is stored as JSON `null`
    /// and has no value).
    pub fn new(observables: &Observables) -> PointObservables {
        let values = Quantity::ALL
            .iter()
            .map(|&q| (q, observables.get(q)))
            .filter(|(_, v)| v.is_finite())
            .collect();
        PointObservables {
            json: serde_json::to_value(observables).unwrap_or(serde_json::Value::Null),
            values,
        }
    }

    /// The observables as a line stores them; the numbers under the name of a [`Quantity`]
    /// are its values.
    pub fn from_json(json: serde_json::Value) -> PointObservables {
        let values = match &json {
            serde_json::Value::Object(map) => map
                .iter()
                .filter_map(|(k, v)| Some((k.parse::<Quantity>().ok()?, v.as_f64()?)))
                .filter(|(_, v)| v.is_finite())
                .collect(),
            _ => BTreeMap::new(),
        };
        PointObservables { json, values }
    }

    /// The value of a quantity, if it is a finite number here.
    pub fn get(&self, quantity: Quantity) -> Option<f64> {
        self.values.get(&quantity).copied()
    }

    /// The JSON the line stores.
    pub fn json(&self) -> &serde_json::Value {
        &self.json
    }
}

impl Serialize for PointObservables {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        self.json.serialize(s)
    }
}

impl<'de> Deserialize<'de> for PointObservables {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        serde_json::Value::deserialize(d).map(PointObservables::from_json)
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

impl ScanSummary {
    /// The bound's allowed margin ([`allowed_margin`]) at every point of a two-axis scan over
    /// `axes`, for one measured interval `[low, high]` of the size `measure` and the optional
    /// circularity limit: row-major with the first axis fastest (the order a contour grid
    /// wants; the points themselves have the last axis fastest). Non-negative means allowed;
    /// a point without a shadow or without the size is −1 (outside). Needs two axes whose
    /// counts multiply to the number of points.
    ///
    /// ```
    /// use umbral::bounds::SizeMeasure;
    /// use umbral::scan::{GridAxis, PointObservables, ScanPoint, ScanSummary};
    /// let axis = |name: &str| GridAxis { name: name.into(), low: 0.0, high: 1.0, count: 2 };
    /// let point = |i: usize, j: usize, status: &str, r: f64| ScanPoint {
    ///     index: vec![i, j],
    ///     parameters: Default::default(),
    ///     status: status.into(),
    ///     horizonless: false,
    ///     reason: None,
    ///     solver: None,
    ///     observables: Some(PointObservables::from_json(serde_json::json!({ "mean_radius": r }))),
    /// };
    /// // Grid order: the second axis fastest.
    /// let summary = ScanSummary {
    ///     points: vec![
    ///         point(0, 0, "shadow", 5.0),
    ///         point(0, 1, "shadow", 5.3),
    ///         point(1, 0, "no_horizon", 5.0),
    ///         point(1, 1, "shadow", 4.9),
    ///     ],
    ///     computed: 4,
    ///     reused: 0,
    /// };
    /// let (x, y) = (axis("a"), axis("b"));
    /// let m = summary.allowed_margins([&x, &y], SizeMeasure::Mean, [4.8, 5.2], None);
    /// // First axis fastest: (0,0), (1,0), (0,1), (1,1).
    /// let want = [0.2, -1.0, -0.1, 0.1];
    /// for (got, want) in m.iter().zip(want) {
    ///     assert!((got - want).abs() < 1e-12, "{m:?}");
    /// }
    /// ```
    pub fn allowed_margins(
        &self,
        axes: [&GridAxis; 2],
        measure: SizeMeasure,
        interval: [f64; 2],
        circularity_max: Option<f64>,
    ) -> Vec<f64> {
        let [ax, ay] = axes;
        let mut values = vec![0.0; ax.count * ay.count];
        for j in 0..ay.count {
            for i in 0..ax.count {
                let p = &self.points[i * ay.count + j];
                values[j * ax.count + i] = match p.quantity(measure.quantity()) {
                    Some(s) if p.status == "shadow" => allowed_margin(
                        s,
                        p.quantity(Quantity::CircularityDeviation),
                        interval,
                        circularity_max,
                    ),
                    _ => -1.0,
                };
            }
        }
        values
    }
}

/// Why a scan could not run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScanError {
    /// A parameter name or value the metric refuses.
    #[error(transparent)]
    Metric(#[from] MetricError),
    /// Not one or two axes.
    #[error("give one or two grid axes, not {0}")]
    AxisCount(usize),
    /// An axis without finite ends in increasing order or with fewer than 2 points.
    #[error("grid axis {name}: need finite ends, the low below the high, and at least 2 points, got {}:{}:{count}", Num(*.low), Num(*.high))]
    BadAxis {
        /// The axis's parameter.
        name: String,
        /// Its low end as given.
        low: f64,
        /// Its high end as given.
        high: f64,
        /// Its point count as given.
        count: usize,
    },
    /// More grid points than [`MAX_SCAN_POINTS`].
    #[error("the grid has {} points; at most {MAX_SCAN_POINTS} are allowed", Num(*.0))]
    TooManyPoints(f64),
    /// The two axes name the same parameter.
    #[error("the two grid axes must differ (both are '{0}')")]
    SameAxis(String),
    /// A parameter both on the grid and fixed.
    #[error("parameter '{0}' is both fixed and on the grid")]
    FixedAndGrid(String),
    /// An inclination outside [0, 180] degrees.
    #[error("the inclination must lie between 0 and 180 degrees, got {}", Num(*.0))]
    Inclination(f64),
    /// The metric's content hash could not be made.
    #[error(transparent)]
    MetricHash(#[from] MetricHashError),
    /// The scan file could not be used.
    #[error(transparent)]
    Checkpoint(#[from] CheckpointError),
    /// Stopped on request; the finished points are in the file.
    #[error("interrupted after {done} of {total} points; the finished points are kept in '{path}': rerun the same command to resume")]
    Interrupted {
        /// The scan file.
        path: String,
        /// Points finished.
        done: usize,
        /// Points in the grid.
        total: usize,
    },
}

/// Most grid points a scan may have.
pub const MAX_SCAN_POINTS: usize = 1_000_000;

fn validate(request: &ScanRequest) -> Result<(), ScanError> {
    if request.axes.is_empty() || request.axes.len() > 2 {
        return Err(ScanError::AxisCount(request.axes.len()));
    }
    for a in &request.axes {
        if !(a.low.is_finite() && a.high.is_finite()) || a.low >= a.high || a.count < 2 {
            return Err(ScanError::BadAxis {
                name: a.name.clone(),
                low: a.low,
                high: a.high,
                count: a.count,
            });
        }
    }
    let total: f64 = request.axes.iter().map(|a| a.count as f64).product();
    if total > MAX_SCAN_POINTS as f64 {
        return Err(ScanError::TooManyPoints(total));
    }
    if request.axes.len() == 2 && request.axes[0].name == request.axes[1].name {
        return Err(ScanError::SameAxis(request.axes[0].name.clone()));
    }
    if !(0.0..=180.0).contains(&request.inclination_deg) {
        return Err(ScanError::Inclination(request.inclination_deg));
    }
    // Domains are intervals: building at both corners checks names and values.
    for pick in [false, true] {
        let mut a = request.fixed.clone();
        for axis in &request.axes {
            if a.iter().any(|(n, _)| *n == axis.name) {
                return Err(ScanError::FixedAndGrid(axis.name.clone()));
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
            point.observables = Some(PointObservables::new(&o));
        }
        Err(e) => point.reason = Some(e.to_string()),
    }
    point
}

/// The grid points of a request as a work list (grid order, last axis fastest; the key of a
/// point is its index, `[1,2]`).
struct Grid<'r> {
    request: &'r ScanRequest,
    indices: Vec<Vec<usize>>,
}

impl WorkList for Grid<'_> {
    type Output = ScanPoint;

    fn len(&self) -> usize {
        self.indices.len()
    }

    fn key(&self, index: usize) -> String {
        lines::key(&self.indices[index])
    }

    fn run(&self, index: usize) -> ScanPoint {
        compute_point(self.request, &self.indices[index])
    }

    fn wire(&self) -> Option<&dyn crate::run::Wire<ScanPoint>> {
        Some(self) // shard.rs
    }
}

/// Run (or resume) a scan writing to `path`; `progress(done, total)` is called at the start
/// and after every point.
pub fn run_scan(
    request: &ScanRequest,
    path: &Path,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<ScanSummary, ScanError> {
    let mut progress = ProgressFn(progress);
    let controls = Controls {
        observers: vec![&mut progress],
        stop: None,
    };
    scan(request, path, controls)
}

/// Run (or resume) a scan writing to `path`, with the observers and stop flag of `controls`
/// attached to its executor. A stop request finishes and writes the points being computed,
/// starts no new one and ends with [`ScanError::Interrupted`] with the count kept in the file;
/// rerunning the same request resumes.
pub fn scan(
    request: &ScanRequest,
    path: &Path,
    controls: Controls<'_>,
) -> Result<ScanSummary, ScanError> {
    validate(request)?;
    let head = header::header(request)?;
    let grid = Grid {
        request,
        indices: indices(&request.axes),
    };
    let mut file = JsonlCheckpoint::open(path, ScanFormat { request }, &head)?;
    let run = Executor::new("scan", "points")
        .with(controls)
        .checkpoint(&mut file)
        .run(&grid, &Selection::All);
    match run {
        Ok(batch) => Ok(ScanSummary {
            points: batch.outputs,
            computed: batch.computed,
            reused: batch.kept,
        }),
        Err(RunError::Interrupted { done, .. }) => Err(ScanError::Interrupted {
            path: path.display().to_string(),
            done,
            total: grid.len(),
        }),
        Err(RunError::Checkpoint(e)) => Err(e.into()),
    }
}

/// Read and check the points an earlier run of `request` left in `path`, computing nothing:
/// the scan-file reader on its own, for tests and fuzzing. `Ok` holds the kept points in grid
/// order (none when the file does not exist); `Err` is what [`run_scan`] would refuse the file
/// with.
pub fn read_scan_file(request: &ScanRequest, path: &Path) -> Result<Vec<ScanPoint>, ScanError> {
    validate(request)?;
    let head = header::header(request)?;
    Ok(JsonlCheckpoint::read(path, &ScanFormat { request }, &head)?)
}
