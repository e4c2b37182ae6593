//! Grid scans: the observables at every point of a 1-D or 2-D parameter grid, streamed to a
//! JSON-lines file that survives interruption.
//!
//! Each point's curve starts from the points asked for (a multiple of 4, at least 64) and is
//! doubled while the sampling error of an observable exceeds the tolerance
//! ([`crate::observables::resolved::solve_with_observables`]); a point still unresolved at
//! 1024 points is `failed`, with the estimate in its reason.
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
//! [`crate::run::JsonlCheckpoint`]; [`scan`] takes the observers and stop flag to attach, and
//! [`scan_in_memory`] runs the same points without a file.
//!
//! An axis is a metric parameter or, named [`INCLINATION_AXIS`], the observer's inclination in
//! degrees (the request's `inclination_deg` is then `None`). Its values are evenly spaced
//! ([`GridAxis::new`]) or given one by one ([`GridAxis::from_values`]).
//!
//! ```
//! use umbral::metrics::MetricSource;
//! use umbral::scan::{run_scan, GridAxis, ScanRequest};
//! let path = std::env::temp_dir().join(format!("umbral-scan-doc-{}.jsonl", std::process::id()));
//! let _ = std::fs::remove_file(&path);
//! let request = ScanRequest {
//!     metric: MetricSource::builtin("reissner-nordstrom").unwrap(),
//!     axes: vec![GridAxis::new("q", 0.0, 1.2, 4)],
//!     fixed: vec![],
//!     inclination_deg: Some(17.0),
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
pub mod refine;
pub mod shard;
pub mod table;

pub use header::FORMAT;

use crate::bounds::{allowed_margin, SizeMeasure};
use crate::error::MetricError;
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::observables::resolved::{solve_with_observables, Resolved, MIN_OBSERVABLES_POINTS};
use crate::observables::{CentreChoice, Observables, Quantity};
use crate::run::{
    Checkpoint, CheckpointError, Controls, Executor, JsonlCheckpoint, MetricHashError, ProgressFn,
    RunError, Selection, WorkList,
};
use crate::shadow::{Observer, ShadowSettings};
use lines::ScanFormat;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::Path;

/// Curve points a scan starts each curve from by default (the command line's and the Python
/// package's `points`): doubled, up to 1024, while an observable's sampling error exceeds the
/// tolerance ([`crate::observables::resolved::solve_with_observables`]). 64 is the fewest the
/// observables' error is estimated from; on the 10 × 10 Johannsen–Psaltis scan of
/// docs/performance.md it gives every length within 1e-8 M of 256 points per curve, in 15 s
/// instead of 40 s.
pub const DEFAULT_SCAN_POINTS: usize = 64;

/// The name of the axis that varies the observer's inclination, in degrees, instead of a
/// metric parameter.
pub const INCLINATION_AXIS: &str = "inclination";

/// One grid axis: `count` points from `low` to `high` inclusive, evenly spaced, or the
/// increasing `values` given one by one.
///
/// ```
/// use umbral::scan::GridAxis;
/// let even = GridAxis::new("a", 0.0, 0.9, 4);
/// assert_eq!(even.all_values(), vec![0.0, 0.3, 0.6, 0.9]);
/// let given = GridAxis::from_values("inclination", vec![0.0, 17.0, 60.0]);
/// assert_eq!((given.low, given.high, given.count), (0.0, 60.0, 3));
/// assert_eq!(given.value(1), 17.0);
/// assert!(given.is_inclination());
/// ```
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GridAxis {
    /// The metric parameter on this axis, or [`INCLINATION_AXIS`].
    pub name: String,
    /// First grid value.
    pub low: f64,
    /// Last grid value.
    pub high: f64,
    /// Number of grid values (at least 2).
    pub count: usize,
    /// The grid values one by one (`count` of them, increasing, from `low` to `high`); `None`
    /// for evenly spaced values.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub values: Option<Vec<f64>>,
}

impl GridAxis {
    /// `count` evenly spaced values from `low` to `high` inclusive.
    pub fn new(name: &str, low: f64, high: f64, count: usize) -> GridAxis {
        GridAxis {
            name: name.to_string(),
            low,
            high,
            count,
            values: None,
        }
    }

    /// The values given one by one (checked when a scan starts: increasing and finite).
    pub fn from_values(name: &str, values: Vec<f64>) -> GridAxis {
        GridAxis {
            name: name.to_string(),
            low: values.first().copied().unwrap_or(f64::NAN),
            high: values.last().copied().unwrap_or(f64::NAN),
            count: values.len(),
            values: Some(values),
        }
    }

    /// Whether this axis is the observer's inclination ([`INCLINATION_AXIS`]).
    pub fn is_inclination(&self) -> bool {
        self.name == INCLINATION_AXIS
    }

    /// Every grid value, in order.
    pub fn all_values(&self) -> Vec<f64> {
        (0..self.count).map(|i| self.value(i)).collect()
    }

    /// The i-th grid value.
    ///
    /// ```
    /// use umbral::scan::GridAxis;
    /// assert_eq!(GridAxis::new("q", 0.0, 0.9, 10).value(3), 0.3);
    /// assert_eq!(GridAxis::new("q", 0.0, 1.0, 4).value(1), 1.0 / 3.0);
    /// ```
    pub fn value(&self, i: usize) -> f64 {
        if let Some(values) = &self.values {
            values[i]
        } else if self.count <= 1 {
            self.low
        } else if i + 1 == self.count {
            self.high
        } else {
            let x = self.low + (self.high - self.low) * i as f64 / (self.count - 1) as f64;
            // Rounded to the grid's own decimals (those of its ends and step), so that
            // 0:0.9:10 gives 0.3, not 0.30000000000000004; a step without a short decimal
            // form (0:1:4) leaves the values as computed.
            let step = (self.high - self.low) / (self.count - 1) as f64;
            let decimals = [self.low, self.high, step]
                .iter()
                .map(|v| short_decimals(*v))
                .collect::<Option<Vec<usize>>>()
                .and_then(|d| d.into_iter().max());
            match decimals {
                Some(d) if d <= 12 => format!("{x:.d$}").parse().unwrap_or(x),
                _ => x,
            }
        }
    }
}

/// The decimals of the shortest decimal form of `x` (`0.3` → 1, `2` → 0, `1e-3` → 3), or
/// `None` if it needs more than 15 significant digits (no short form).
fn short_decimals(x: f64) -> Option<usize> {
    if x == 0.0 {
        return Some(0);
    }
    let s = format!("{:e}", x.abs());
    let (mantissa, exponent) = s.split_once('e')?;
    let exponent: i32 = exponent.parse().ok()?;
    let digits = mantissa.replace('.', "").len() as i32;
    if digits > 15 {
        return None;
    }
    Some((digits - 1 - exponent).max(0) as usize)
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
    /// The observer's inclination, in degrees from the spin axis (0 to 180); `None` when an
    /// axis is the inclination ([`INCLINATION_AXIS`]).
    pub inclination_deg: Option<f64>,
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
    /// The observer's inclination in degrees, when an axis is the inclination (a scan at one
    /// inclination records it once, in its header).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub inclination_deg: Option<f64>,
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
    /// The curve points a `shadow` point's observables were measured on: the header's
    /// `points`, or a multiple of it where the sampling error asked for more.
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub points: Option<usize>,
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
    /// let axis = |name: &str| GridAxis::new(name, 0.0, 1.0, 2);
    /// let point = |i: usize, j: usize, status: &str, r: f64| ScanPoint {
    ///     index: vec![i, j],
    ///     parameters: Default::default(),
    ///     inclination_deg: None,
    ///     status: status.into(),
    ///     horizonless: false,
    ///     reason: None,
    ///     solver: None,
    ///     points: (status == "shadow").then_some(64),
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
    /// Values given one by one that are not finite and increasing.
    #[error("grid axis {name}: {problem}")]
    BadValues {
        /// The axis's parameter.
        name: String,
        /// What is wrong with them.
        problem: String,
    },
    /// The inclination is both an axis and fixed, or neither.
    #[error("{0}")]
    InclinationChoice(&'static str),
    /// An inclination axis while the metric has a parameter of that name.
    #[error("the metric has a parameter named '{INCLINATION_AXIS}': a scan's '{INCLINATION_AXIS}' axis is the observer's inclination, so this metric's parameter cannot be scanned")]
    InclinationParameter,
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
    /// Curve points a scan cannot estimate its observables' sampling error from.
    #[error(
        "a scan's curves start from a multiple of 4 curve points, at least \
         {MIN_OBSERVABLES_POINTS} (the observables' sampling error is estimated from every \
         second and fourth point), got {0}"
    )]
    CurvePoints(usize),
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
    /// A scan without a file ([`scan_in_memory`]) stopped on request; nothing is kept.
    #[error(
        "interrupted after {done} of {total} points; a scan without a file keeps none of them"
    )]
    Stopped {
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
        check_axis(a)?;
    }
    let total: f64 = request.axes.iter().map(|a| a.count as f64).product();
    if total > MAX_SCAN_POINTS as f64 {
        return Err(ScanError::TooManyPoints(total));
    }
    if request.axes.len() == 2 && request.axes[0].name == request.axes[1].name {
        return Err(ScanError::SameAxis(request.axes[0].name.clone()));
    }
    let points = request.settings.points;
    if points < MIN_OBSERVABLES_POINTS || !points.is_multiple_of(4) {
        return Err(ScanError::CurvePoints(points));
    }
    let inclination_axis = request.axes.iter().find(|a| a.is_inclination());
    let inclinations = match (inclination_axis, request.inclination_deg) {
        (Some(a), None) => [a.low, a.high],
        (None, Some(i)) => [i, i],
        (Some(_), Some(_)) => {
            return Err(ScanError::InclinationChoice(
                "the inclination is a grid axis: give no fixed inclination as well",
            ))
        }
        (None, None) => {
            return Err(ScanError::InclinationChoice(
                "give an inclination, or an 'inclination' grid axis",
            ))
        }
    };
    if let Some(&bad) = inclinations.iter().find(|i| !(0.0..=180.0).contains(*i)) {
        return Err(ScanError::Inclination(bad));
    }
    // Domains are intervals: building at both corners checks names and values.
    for pick in [false, true] {
        let mut a = request.fixed.clone();
        for axis in request.axes.iter().filter(|a| !a.is_inclination()) {
            if a.iter().any(|(n, _)| *n == axis.name) {
                return Err(ScanError::FixedAndGrid(axis.name.clone()));
            }
            a.push((axis.name.clone(), if pick { axis.high } else { axis.low }));
        }
        let built = request.metric.build(&a)?;
        let named = |p: &crate::metric::ParameterSpec| p.name == INCLINATION_AXIS;
        if inclination_axis.is_some() && built.info().parameters.iter().any(named) {
            return Err(ScanError::InclinationParameter);
        }
    }
    Ok(())
}

/// An axis's ends and count, and values given one by one: finite and increasing.
fn check_axis(a: &GridAxis) -> Result<(), ScanError> {
    if let Some(values) = &a.values {
        let bad = |problem: String| ScanError::BadValues {
            name: a.name.clone(),
            problem,
        };
        if values.len() < 2 {
            return Err(bad(format!("need at least 2 values, got {}", values.len())));
        }
        if let Some(v) = values.iter().find(|v| !v.is_finite()) {
            return Err(bad(format!("the values must be finite, got {v}")));
        }
        if let Some(w) = values.windows(2).find(|w| w[0] >= w[1]) {
            return Err(bad(format!(
                "the values must increase, got {} then {}",
                Num(w[0]),
                Num(w[1])
            )));
        }
        let ends = [values[0], values[values.len() - 1]];
        if values.len() != a.count || ends != [a.low, a.high] {
            return Err(bad(format!(
                "the ends and count {}:{}:{} are not those of its {} values",
                Num(a.low),
                Num(a.high),
                a.count,
                values.len()
            )));
        }
        return Ok(());
    }
    if !(a.low.is_finite() && a.high.is_finite()) || a.low >= a.high || a.count < 2 {
        return Err(ScanError::BadAxis {
            name: a.name.clone(),
            low: a.low,
            high: a.high,
            count: a.count,
        });
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
        if !a.is_inclination() {
            assignments.push((a.name.clone(), a.value(i)));
        }
    }
    let built = request.metric.build(&assignments);
    let parameters = match &built {
        Ok(spacetime) => crate::metric::parameter_map(spacetime.as_ref()),
        Err(_) => assignments.iter().cloned().collect(),
    };
    (parameters, built)
}

/// The parameters a point line at `index` must carry.
pub(crate) fn expected_parameters(request: &ScanRequest, index: &[usize]) -> BTreeMap<String, f64> {
    grid_point(request, index).0
}

/// The inclination of the point at `index`, in degrees, when an axis is the inclination.
pub(crate) fn axis_inclination(request: &ScanRequest, index: &[usize]) -> Option<f64> {
    request
        .axes
        .iter()
        .zip(index)
        .find(|(a, _)| a.is_inclination())
        .map(|(a, &i)| a.value(i))
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
    let inclination_deg = axis_inclination(request, index);
    let mut point = ScanPoint {
        index: index.to_vec(),
        parameters,
        inclination_deg,
        status: "failed".into(),
        horizonless: false,
        reason: None,
        solver: None,
        points: None,
        observables: None,
    };
    let spacetime = match built {
        Ok(s) => s,
        Err(e) => {
            point.reason = Some(e.to_string());
            return point;
        }
    };
    // `validate` made sure that one of the two is there.
    let degrees = inclination_deg
        .or(request.inclination_deg)
        .unwrap_or(f64::NAN);
    let observer = Observer::distant(degrees.to_radians());
    let resolved = solve_with_observables(
        spacetime.as_ref(),
        &observer,
        &request.settings,
        request.require_horizon,
        CentreChoice::Centroid,
    );
    match resolved {
        Err(e) => point.reason = Some(e),
        Ok(Resolved::NoHorizon) => point.status = "no_horizon".into(),
        Ok(Resolved::NoShadow { solver, reason }) => {
            point.solver = Some(solver.into());
            point.status = "no_shadow".into();
            point.reason = Some(reason);
        }
        Ok(Resolved::Shadow {
            result,
            horizonless,
            measured,
            points,
        }) => {
            point.solver = Some(result.solver.into());
            point.status = "shadow".into();
            point.horizonless = horizonless;
            point.points = Some(points);
            point.observables = Some(PointObservables::new(&measured));
        }
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
    let mut file = JsonlCheckpoint::open(path, ScanFormat { request }, &head)?;
    run_grid(request, controls, Some(&mut file), |done, total| {
        ScanError::Interrupted {
            path: path.display().to_string(),
            done,
            total,
        }
    })
}

/// Run the grid of a checked request on an executor carrying `controls` and, when given, the
/// scan file; `stopped(done, total)` is the error of a stopped run.
fn run_grid(
    request: &ScanRequest,
    controls: Controls<'_>,
    file: Option<&mut dyn Checkpoint<ScanPoint>>,
    stopped: impl FnOnce(usize, usize) -> ScanError,
) -> Result<ScanSummary, ScanError> {
    let grid = Grid {
        request,
        indices: indices(&request.axes),
    };
    let mut exec = Executor::new("scan", "points").with(controls);
    if let Some(file) = file {
        exec = exec.checkpoint(file);
    }
    match exec.run(&grid, &Selection::All) {
        Ok(batch) => Ok(ScanSummary {
            points: batch.outputs,
            computed: batch.computed,
            reused: batch.kept,
        }),
        Err(RunError::Interrupted { done, .. }) => Err(stopped(done, grid.len())),
        Err(RunError::Checkpoint(e)) => Err(e.into()),
    }
}

/// Run a scan without a file (nothing to resume from), with the observers and stop flag of
/// `controls`: the same points, computed the same way, as [`scan`]'s. A stop request ends it
/// with [`ScanError::Stopped`] once the points in progress finish.
///
/// ```
/// use umbral::metrics::MetricSource;
/// use umbral::scan::{scan_in_memory, GridAxis, ScanRequest};
/// let request = ScanRequest {
///     metric: MetricSource::builtin("schwarzschild").unwrap(),
///     axes: vec![GridAxis::from_values("inclination", vec![0.0, 45.0, 90.0])],
///     fixed: vec![],
///     inclination_deg: None,
///     settings: Default::default(),
///     require_horizon: false,
/// };
/// let summary = scan_in_memory(&request, Default::default()).unwrap();
/// assert_eq!(summary.points[1].inclination_deg, Some(45.0));
/// // Spherical symmetry: the same shadow, 3√3 M (Synge 1966), at every inclination.
/// for p in &summary.points {
///     let r = p.observable("mean_radius").unwrap();
///     assert!((r - 27f64.sqrt()).abs() < 1e-6, "{r}");
/// }
/// ```
pub fn scan_in_memory(
    request: &ScanRequest,
    controls: Controls<'_>,
) -> Result<ScanSummary, ScanError> {
    validate(request)?;
    run_grid(request, controls, None, |done, total| ScanError::Stopped {
        done,
        total,
    })
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
