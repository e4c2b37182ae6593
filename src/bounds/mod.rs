//! From intervals on the shadow radius to the allowed range of a deviation parameter.
//!
//! A value x of the varied parameter is allowed at a confidence level with interval [L, H] on
//! r_sh/M if some point of the nuisance box (spin, inclination, other metric parameters) puts
//! the predicted size inside [L, H] and the circularity deviation ΔC under the measured limit.
//! With s₋(x), s₊(x) the min and max of the size over the nuisance points with ΔC ≤ limit
//! (see [`nuisance`]), and assuming the size takes every value in between, x is allowed iff
//! s₋(x) ≤ H, s₊(x) ≥ L and min ΔC(x) ≤ limit. The allowed set is a union of intervals whose
//! ends are sign changes of these margins, bracketed on an adaptive grid and refined by
//! Brent's method ([`crate::numerics::brent_root_within`]).
//!
//! Allowed needs a witness, excluded the whole box. A value is therefore evaluated only as
//! far as deciding it needs ([`nuisance::decide`]): the box's corners first, then the grid
//! from coarse to fine, stopping as soon as the points evaluated put a size inside (or on
//! both sides of) every interval with ΔC under the limit; only a value not decided so gets
//! the full search of s₋ and s₊, and so does every evaluation that refines a bound end (its
//! margin's value, not only its sign, is used there). A solver failure at a nuisance point is
//! then fatal to a value only where the full search is needed. Where nearly everything is
//! allowed this skips most of the work: the Johannsen–Psaltis bound of docs/performance.md
//! solves 64 curves instead of 320. [`BoundSettings::full_extremes`] searches every value
//! in full (the predicted band a figure draws). Both decide every value they evaluate alike;
//! the full search also looks for a double crossing next to every value (a narrow excluded
//! sliver between two allowed values), which a witnessed value's sizes cannot show.
//!
//! Values are classified by whether a shadow exists. A horizonless object is evaluated like a
//! black hole when the spherical solver finds a photon sphere that bounds capture (a JNW naked
//! singularity with ν > 1/2, a Simpson–Visser wormhole): rays inside it end at the central
//! singularity or pass a throat and do not return. Such values are labelled `horizonless`.
//! Values without a shadow are never allowed or excluded: `no_horizon` (no horizon, no
//! shadow), `no_shadow` (a horizon, no shadow). [`BoundSettings::require_horizon`] restores
//! the stricter policy of evaluating black holes only.
//!
//! ```
//! use umbral::bounds::{bound, BoundRequest, BoundSettings, Inclination, ParameterRange, SizeMeasure};
//! use umbral::measurement::Measurement;
//! use umbral::metrics::MetricSource;
//! let m = Measurement::from_toml_str(r#"
//! [size.shadow_radius]
//! intervals = [ { confidence = 0.68, low = 4.9, high = 5.3 } ]
//! "#).unwrap();
//! let request = BoundRequest {
//!     metric: MetricSource::builtin("reissner-nordstrom").unwrap(),
//!     vary: ParameterRange { name: "q".into(), low: 0.0, high: 1.2 },
//!     fixed: vec![],
//!     inclination: Inclination::Fixed { degrees: 17.0 },
//!     nuisance: vec![],
//!     size_measure: SizeMeasure::Mean,
//!     radii: m.derive(None).unwrap(),
//!     circularity_max: None,
//!     settings: BoundSettings::default(),
//! };
//! let result = bound(&request).unwrap();
//! // Reissner-Nordstrom shadows shrink with charge: small charges are allowed.
//! assert_eq!(result.levels[0].allowed.len(), 1);
//! assert!(result.levels[0].allowed[0][0] == 0.0);
//! assert!(!result.no_horizon.is_empty()); // q > 1 has no horizon
//! ```

mod evaluate;
pub mod nuisance;
mod refine;

pub use evaluate::{Evaluate, Halted, Node, Parallel};

use crate::error::MetricError;
use crate::measurement::DerivedRadii;
use crate::metric::{Classification, Spacetime, Symmetry};
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::observables::resolved::{
    estimates_sampling_error, solve_resolved, Resolved, SamplingError, MAX_RESOLVED_POINTS,
};
use crate::observables::{sampling_error, CentreChoice, Observables, Quantity};
use crate::shadow::{self, Observer, ShadowSettings, SolverChoice};
use nuisance::{decide, Aggregate, Effort, Extremes, NuisanceSearch, PointModel, PointValue};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Which size of the critical curve is compared with the measured radius.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SizeMeasure {
    /// R̄, the mean distance from the area centroid.
    Mean,
    /// √(Area/π).
    Area,
}

impl SizeMeasure {
    /// Lower-case name as on the command line.
    pub fn name(&self) -> &'static str {
        match self {
            SizeMeasure::Mean => "mean",
            SizeMeasure::Area => "area",
        }
    }

    /// The observable it reads.
    pub fn quantity(&self) -> Quantity {
        match self {
            SizeMeasure::Mean => Quantity::MeanRadius,
            SizeMeasure::Area => Quantity::AreaRadius,
        }
    }
}

/// A named parameter range `[low, high]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ParameterRange {
    /// The metric parameter's name, e.g. `q`.
    pub name: String,
    /// Lower end of the range.
    pub low: f64,
    /// Upper end of the range.
    pub high: f64,
}

/// The observer's inclination: fixed or a nuisance range (degrees from the spin axis).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Inclination {
    /// One inclination.
    Fixed {
        /// The inclination, in degrees from the spin axis (0 to 180).
        degrees: f64,
    },
    /// A nuisance range searched like the other nuisance parameters.
    Range {
        /// Lower end, in degrees from the spin axis.
        low_degrees: f64,
        /// Upper end, in degrees from the spin axis.
        high_degrees: f64,
    },
}

impl Inclination {
    /// The inclination of a bound whose request gives none, allowed only for a spherically
    /// symmetric metric: its shadow is a circle whatever the observer's inclination (its
    /// radius is b_c = √(C/A) at the photon sphere, Synge 1966, which no angle enters), so any
    /// fixed angle gives the same bound and 90° is used; the assumptions then say the
    /// inclination is irrelevant. The metric's symmetry is read from it built with `fixed`
    /// (its defaults for the other parameters).
    ///
    /// Errors: the metric's, for a parameter it refuses, and
    /// [`BoundError::InclinationNeeded`] for a metric that is not spherically symmetric.
    ///
    /// ```
    /// use umbral::bounds::{BoundError, Inclination};
    /// use umbral::metrics::MetricSource;
    ///
    /// let rn = MetricSource::builtin("reissner-nordstrom").unwrap();
    /// let fixed = [("q".to_string(), 0.5)];
    /// assert_eq!(Inclination::unspecified(&rn, &fixed), Ok(Inclination::Fixed { degrees: 90.0 }));
    /// let kerr = MetricSource::builtin("kerr").unwrap();
    /// let spin = [("a".to_string(), 0.5)];
    /// assert_eq!(Inclination::unspecified(&kerr, &spin), Err(BoundError::InclinationNeeded));
    /// ```
    pub fn unspecified(
        metric: &MetricSource,
        fixed: &[(String, f64)],
    ) -> Result<Inclination, BoundError> {
        if metric.build(fixed)?.symmetry() == Symmetry::Spherical {
            Ok(Inclination::Fixed { degrees: 90.0 })
        } else {
            Err(BoundError::InclinationNeeded)
        }
    }
}

/// Largest starting grid over the varied range (each node is a full nuisance search; the
/// default is 21).
pub const MAX_INITIAL_GRID: usize = 1000;

/// The curve points a bound starts each size from ([`solve_sized`] doubles them where the
/// size's sampling error exceeds the boundary tolerance). 32 resolve the mean radius of Kerr
/// at 60° to 5e-10 M up to a = 0.95 (the estimate, which is that of 24 points, asks for 64
/// from about a = 0.95 on); 64 cost about 1.8 times as much on a traced curve, so starting
/// from 32 makes the Johannsen–Psaltis bound of docs/performance.md 1.5 times faster with the
/// same allowed set. 16 points are off by 4e-7 M at a = 0.9 (1.2e-5 M at a = 0.95 edge-on) and double
/// too often (measured: the bound is slower from 16 than from 32).
pub const DEFAULT_BOUND_POINTS: usize = 32;

/// Numerical settings of a bound.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundSettings {
    /// Uniform starting grid over the varied range (3 to [`MAX_INITIAL_GRID`] points).
    pub initial_grid: usize,
    /// Tolerance on the ends of the allowed ranges, in the varied parameter.
    pub parameter_tolerance: f64,
    /// Tolerance on an edge where the evaluation fails on one side (a solver failure next to
    /// a value whose evaluation did not fail), as a fraction of the varied range's width
    /// (never finer than `parameter_tolerance`). Where a solver stops converging depends on
    /// the solver and its settings, not on the spacetime, so locating it to
    /// `parameter_tolerance` buys nothing physical while each bisection step is a full
    /// nuisance search. The default 1e-3 places such an edge 50 times finer than the default
    /// starting grid (spacing 1/20 of the range), finer than a figure of the bound can show,
    /// in about 6 bisection steps instead of about 23 for 1e-8 (common practice, no source).
    /// The unevaluated gap between the last value that did not fail and the first failed
    /// one is reported with each failure ([`Failure::evaluated_below`]) and is neither
    /// allowed nor excluded. Physical edges (no horizon, no shadow, horizonless) keep
    /// `parameter_tolerance`.
    pub failure_edge_relative_tolerance: f64,
    /// Rounds of grid refinement looking for crossings hidden between grid points.
    pub refinement_rounds: usize,
    /// Nuisance search.
    pub nuisance: NuisanceSearch,
    /// Shadow solver settings.
    pub shadow: ShadowSettings,
    /// Evaluate only values with a horizon. By default a horizonless object is evaluated when
    /// the spherical solver finds a photon sphere that bounds capture (module docs).
    pub require_horizon: bool,
    /// Search the nuisance extremes in full at every value (the predicted band a figure of
    /// the bound draws). By default a value is decided as soon as the nuisance points
    /// evaluated allow it at every level ([`nuisance::decide`]): only values that may be
    /// excluded, and the refinement of the bound's ends, get the full search. Every value
    /// evaluated is decided alike; double crossings between grid values are looked for only
    /// next to values searched in full. The default skips most of the work where nearly every
    /// value is allowed.
    pub full_extremes: bool,
}

impl Default for BoundSettings {
    fn default() -> Self {
        BoundSettings {
            initial_grid: 21,
            parameter_tolerance: 1e-8,
            failure_edge_relative_tolerance: 1e-3,
            refinement_rounds: 3,
            nuisance: NuisanceSearch {
                grid: 7,
                relative_tolerance: 1e-10,
            },
            shadow: ShadowSettings {
                points: DEFAULT_BOUND_POINTS,
                tolerance: 1e-8,
                solver: SolverChoice::AUTO,
            },
            require_horizon: false,
            full_extremes: false,
        }
    }
}

/// What to bound.
#[derive(Debug, Clone, PartialEq)]
pub struct BoundRequest {
    /// The metric: a built-in name or a metric file.
    pub metric: MetricSource,
    /// The varied (deviation) parameter and its range.
    pub vary: ParameterRange,
    /// Other parameters held fixed.
    pub fixed: Vec<(String, f64)>,
    /// The observer's inclination, fixed or a nuisance range.
    pub inclination: Inclination,
    /// Metric parameters treated as nuisance over a range.
    pub nuisance: Vec<ParameterRange>,
    /// Which size of the critical curve is compared with the measured radius.
    pub size_measure: SizeMeasure,
    /// The measured r_sh/M intervals (from [`crate::measurement::Measurement::derive`]).
    pub radii: DerivedRadii,
    /// Upper limit on ΔC, if any.
    pub circularity_max: Option<f64>,
    /// Numerical settings.
    pub settings: BoundSettings,
}

/// The allowed set at one confidence level.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelBound {
    /// The confidence level of the measured interval, e.g. 0.68.
    pub confidence: f64,
    /// The r_sh/M interval [low, high] at this level.
    pub radius_interval: [f64; 2],
    /// Allowed ranges of the varied parameter, in increasing order.
    pub allowed: Vec<[f64; 2]>,
    /// True when the allowed set is nothing but ends of the varied range (single points): no
    /// value inside the range is allowed, and the set may continue beyond it.
    pub only_range_ends: bool,
}

/// A range of the varied parameter where the solver failed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Failure {
    /// Lower end of the range (equal to `high` for a failure at one grid node).
    pub low: f64,
    /// Upper end of the range.
    pub high: f64,
    /// The solver's message.
    pub error: String,
    /// The nearest value at or below `low` whose evaluation did not fail (allowed or
    /// excluded, no horizon or no shadow), `None` when failures reach the low end of the
    /// varied range. Everything strictly between it and `low` is neither allowed nor
    /// excluded: not evaluated, or other failures (with other messages, listed separately).
    /// An unevaluated gap next to a value that did not fail is at most the failure-edge
    /// tolerance wide ([`BoundSettings::failure_edge_relative_tolerance`]) where the edge was
    /// bisected. For a failure met inside a cell while a bound end was refined it is `low`
    /// itself.
    pub evaluated_below: Option<f64>,
    /// The nearest value at or above `high` whose evaluation did not fail, `None` when
    /// failures reach the high end of the varied range; as [`Self::evaluated_below`] above
    /// the failure.
    pub evaluated_above: Option<f64>,
}

impl Failure {
    /// The stretch of the varied range around this failure that is neither allowed nor
    /// excluded: from the last value below it whose evaluation did not fail to the first such
    /// value above it (the range's ends where there is none).
    ///
    /// ```
    /// use umbral::bounds::{Failure, ParameterRange};
    /// let range = ParameterRange { name: "k".into(), low: -1.0, high: 1.0 };
    /// let f = Failure {
    ///     low: 0.7328125,
    ///     high: 1.0,
    ///     error: "the solver failed".into(),
    ///     evaluated_below: Some(0.73125),
    ///     evaluated_above: None,
    /// };
    /// assert_eq!(f.unknown(&range), [0.73125, 1.0]);
    /// ```
    pub fn unknown(&self, range: &ParameterRange) -> [f64; 2] {
        [
            self.evaluated_below.unwrap_or(range.low),
            self.evaluated_above.unwrap_or(range.high),
        ]
    }
}

/// The prediction at one grid node of the varied parameter.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PredictedPoint {
    /// The varied parameter's value at this node.
    pub value: f64,
    /// `ok`, `no_horizon`, `no_shadow` or `failed`.
    pub status: &'static str,
    /// Whether an `ok` node's prediction includes horizonless objects.
    pub horizonless: bool,
    /// Min of the predicted size (r_sh/M, by the request's size measure) over the points of
    /// the (feasible) nuisance box with ΔC under the limit; `None` unless `ok` and searched
    /// (not `witnessed`).
    pub size_min: Option<f64>,
    /// Max of the predicted size over the same points; `None` unless `ok` and searched.
    pub size_max: Option<f64>,
    /// Min of the circularity deviation ΔC over the nuisance box; `None` unless `ok` and
    /// searched.
    pub circularity_min: Option<f64>,
    /// Whether the value was decided allowed at every level by the nuisance points evaluated
    /// first, without the full search of its extremes ([`BoundSettings::full_extremes`]).
    pub witnessed: bool,
    /// For a witnessed value, the smallest and largest size among the points evaluated (the
    /// true min is at most the first, the true max at least the second).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub witnessed_sizes: Option<[f64; 2]>,
    /// For a witnessed value, a solver failure at one of its nuisance grid points that the
    /// witnesses made irrelevant.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub failure_passed_over: Option<String>,
}

/// A bound, ready to serialise.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoundResult {
    /// The metric's name (from its [`crate::metric::MetricInfo`]).
    pub metric: String,
    /// The varied parameter and its range, as requested.
    pub vary: ParameterRange,
    /// The parameters held fixed, by name.
    pub fixed: BTreeMap<String, f64>,
    /// The nuisance parameter ranges, as requested.
    pub nuisance: Vec<ParameterRange>,
    /// The inclination, as requested.
    pub inclination: Inclination,
    /// The size measure compared with the measured radius.
    pub size_measure: SizeMeasure,
    /// The allowed set at each confidence level, in the order of the measured intervals.
    pub levels: Vec<LevelBound>,
    /// The upper limit on ΔC used, if any.
    pub circularity_max: Option<f64>,
    /// Whether only values with a horizon were evaluated.
    pub require_horizon: bool,
    /// Ranges of the varied parameter where no nuisance point has a horizon and none was
    /// evaluated (no shadow either, or a horizon was required).
    pub no_horizon: Vec<[f64; 2]>,
    /// Ranges evaluated although (some of) their nuisance points have no horizon: horizonless
    /// objects whose photon sphere bounds capture by the centre. They may be allowed.
    pub horizonless: Vec<[f64; 2]>,
    /// Ranges where there is a horizon but no shadow.
    pub no_shadow: Vec<[f64; 2]>,
    /// Ranges where the solver failed (neither allowed nor excluded).
    pub failures: Vec<Failure>,
    /// Values of the varied parameter where a solver failure stopped the nuisance refinement:
    /// the size extremes there (and bound ends near them) are less precise.
    pub refinement_cut: Vec<f64>,
    /// What the bound assumes, in words: the measured intervals, the nuisance box, and any
    /// shortcut the search had to take.
    pub assumptions: Vec<String>,
    /// Every evaluated node, in increasing order of the varied parameter.
    pub predicted: Vec<PredictedPoint>,
}

/// An end of a range: exactly when it is a short decimal (a range edge as given, or a horizon
/// edge moved onto its exact value), else to `digits` decimals; never a negative zero.
pub fn end_value(x: f64, digits: usize) -> String {
    let short = crate::numfmt::short(x, 8);
    if short.parse::<f64>() == Ok(x) {
        short
    } else {
        let s = format!("{x:.digits$}");
        match s.strip_prefix('-') {
            Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
            _ => s,
        }
    }
}

impl BoundResult {
    /// What an end `x` of an allowed range stands on, when it is not a crossing of the measured
    /// interval: `range edge` (the end of the varied range: the bound may go further),
    /// `horizon edge` or `no-shadow edge` (where the black hole or its shadow stops existing;
    /// the edge between an evaluated horizonless object and one without a shadow is a
    /// no-shadow edge), `solver-failure edge` (the last value evaluated beside a solver
    /// failure: the allowed range may go further, into the unevaluated gap and the failure).
    pub fn end_kind(&self, x: f64) -> Option<&'static str> {
        let near = |y: f64| (x - y).abs() <= 1e-6 * (1.0 + y.abs());
        let horizonless_end = self.horizonless.iter().flatten().any(|&y| near(y));
        if near(self.vary.low) || near(self.vary.high) {
            Some("range edge")
        } else if self.no_horizon.iter().flatten().any(|&y| near(y)) && horizonless_end {
            Some("no-shadow edge")
        } else if self.no_horizon.iter().flatten().any(|&y| near(y)) {
            Some("horizon edge")
        } else if self.no_shadow.iter().flatten().any(|&y| near(y)) {
            Some("no-shadow edge")
        } else if self
            .failures
            .iter()
            .flat_map(|f| [f.evaluated_below, f.evaluated_above])
            .flatten()
            .any(near)
        {
            Some("solver-failure edge")
        } else {
            None
        }
    }

    /// The allowed ranges at one level as text, each end marked with [`Self::end_kind`], each
    /// range that contains horizonless objects marked so, and a set made only of range ends
    /// said to be one.
    pub fn describe_allowed(&self, allowed: &[[f64; 2]], digits: usize) -> String {
        if allowed.is_empty() {
            return "none".into();
        }
        let end = |x: f64| match self.end_kind(x) {
            Some(kind) => format!("{} ({kind})", end_value(x, digits)),
            None => end_value(x, digits),
        };
        let text = allowed
            .iter()
            .map(|&[a, b]| {
                let range = format!("[{}, {}]", end(a), end(b));
                match self.horizonless_part(a, b) {
                    Some([c, d]) => {
                        format!("{range} (horizonless on [{c:.digits$}, {d:.digits$}])")
                    }
                    None => range,
                }
            })
            .collect::<Vec<_>>()
            .join(" U ");
        if self.only_range_ends(allowed) {
            format!(
                "{text}: only the end of the varied range, no value inside it is allowed \
                 (the allowed set may continue beyond the range)"
            )
        } else {
            text
        }
    }

    /// Whether `allowed` is non-empty and made only of single points at the ends of the
    /// varied range.
    pub fn only_range_ends(&self, allowed: &[[f64; 2]]) -> bool {
        !allowed.is_empty()
            && allowed
                .iter()
                .all(|&[a, b]| a == b && self.end_kind(a) == Some("range edge"))
    }

    /// The part of [a, b] covered by horizonless ranges (their hull), if any of positive
    /// length or a single evaluated point.
    fn horizonless_part(&self, a: f64, b: f64) -> Option<[f64; 2]> {
        let parts: Vec<[f64; 2]> = self
            .horizonless
            .iter()
            .filter_map(|&[c, d]| (c.max(a) <= d.min(b)).then_some([c.max(a), d.min(b)]))
            .collect();
        Some([parts.first()?[0], parts.last()?[1]])
    }
}

/// Why a bound could not be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum BoundError {
    /// A parameter name or value the metric refuses.
    #[error(transparent)]
    Metric(#[from] MetricError),
    /// Numerical settings out of their ranges.
    #[error("need an initial grid of 3 to {MAX_INITIAL_GRID} points (got {initial_grid}), 2 nuisance grid points and a positive tolerance")]
    BadSettings {
        /// The initial grid size given.
        initial_grid: usize,
    },
    /// A range whose ends are not finite.
    #[error("{what}: the range must be finite, got {}:{}", Num(*.low), Num(*.high))]
    RangeNotFinite {
        /// Which range, e.g. "the inclination range".
        what: String,
        /// Its low end as given.
        low: f64,
        /// Its high end as given.
        high: f64,
    },
    /// A range whose low end is not below its high end.
    #[error("{what}: the low end must be below the high end, got {}:{}", Num(*.low), Num(*.high))]
    RangeEmpty {
        /// Which range, e.g. "the inclination range".
        what: String,
        /// Its low end as given.
        low: f64,
        /// Its high end as given.
        high: f64,
    },
    /// A fixed parameter value that is not finite.
    #[error("parameter '{name}' must be finite, got {}", Num(*.value))]
    NotFinite {
        /// The parameter.
        name: String,
        /// The value given.
        value: f64,
    },
    /// No inclination given for a metric that is not spherically symmetric
    /// ([`Inclination::unspecified`]).
    #[error(
        "give an inclination or an inclination range (the metric is not spherically symmetric)"
    )]
    InclinationNeeded,
    /// The inclination among the nuisance parameters.
    #[error("give the inclination range as an inclination range, not a nuisance parameter")]
    InclinationAsNuisance,
    /// A parameter named twice.
    #[error("parameter '{0}' is given more than once")]
    Repeated(String),
    /// No measured interval.
    #[error("no radius intervals to bound with")]
    NoIntervals,
    /// A fixed inclination outside [0, 180] degrees.
    #[error("the inclination must lie between 0 and 180 degrees, got {}", Num(*.0))]
    Inclination(f64),
    /// An inclination range outside [0, 180] degrees.
    #[error("the inclination range must lie within 0 to 180 degrees, got {low}:{high}")]
    InclinationRange {
        /// Low end as given, in degrees.
        low: f64,
        /// High end as given, in degrees.
        high: f64,
    },
    /// More nuisance dimensions than the search supports.
    #[error("at most 3 nuisance dimensions are supported, got {0}")]
    TooManyNuisance(usize),
    /// A bound end that could not be refined.
    #[error("{0}")]
    NotConverged(String),
    /// The evaluator stopped the search (it knows why).
    #[error(transparent)]
    Halted(#[from] Halted),
}

/// One nuisance dimension.
#[derive(Debug, Clone, PartialEq)]
enum Dimension {
    Parameter(String),
    /// Inclination in radians.
    Inclination,
}

/// The model at one value of the varied parameter.
struct Model<'a> {
    request: &'a BoundRequest,
    x: f64,
    dims: &'a [Dimension],
    /// The nuisance box, one range per dimension.
    ranges: &'a [(f64, f64)],
    fixed_inclination: f64,
    want_circularity: bool,
}

impl Model<'_> {
    fn build(&self, n: &[f64]) -> Result<(Box<dyn Spacetime>, f64), MetricError> {
        let mut assignments = self.request.fixed.clone();
        assignments.push((self.request.vary.name.clone(), self.x));
        let mut inclination = self.fixed_inclination;
        for (d, &v) in self.dims.iter().zip(n) {
            match d {
                Dimension::Parameter(name) => assignments.push((name.clone(), v)),
                Dimension::Inclination => inclination = v,
            }
        }
        Ok((self.request.metric.build(&assignments)?, inclination))
    }
}

/// The size measure (and ΔC) of a critical curve's samples. A curve with equal radii about
/// the screen origin is a circle: R̄ = √(Area/π) = R and ΔC = 0 exactly.
fn measure_curve(
    curve: &shadow::CriticalCurve,
    photon_orbit_radii: Option<[f64; 2]>,
    spacetime: &dyn Spacetime,
    measure: SizeMeasure,
    want_circularity: bool,
) -> Result<(f64, f64), String> {
    let (lo, hi) = curve
        .radii
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &r| {
            (a.min(r), b.max(r))
        });
    if curve.origin == [0.0, 0.0] && lo == hi && lo.is_finite() && lo > 0.0 {
        return Ok((lo, 0.0));
    }
    if measure == SizeMeasure::Mean {
        // The same mean radius and circularity as the observables', from the samples alone.
        if let Some(size) = crate::observables::centroid_size(curve) {
            return Ok(size);
        }
    }
    if measure == SizeMeasure::Area && !want_circularity {
        // Area = ½∮R(ψ)² dψ by the periodic trapezoid rule, as in `Observables`.
        let n = curve.radii.len() as f64;
        let area = 0.5 * std::f64::consts::TAU / n * curve.radii.iter().map(|r| r * r).sum::<f64>();
        return Ok(((area / std::f64::consts::PI).sqrt(), f64::NAN));
    }
    let o = Observables::from_curve(
        curve,
        CentreChoice::Centroid,
        spacetime.outer_horizon(),
        photon_orbit_radii,
    )
    .map_err(|e| e.to_string())?;
    Ok((o.get(measure.quantity()), o.circularity_deviation))
}

/// What [`solve_sized`] does about the size's sampling error with `points` curve points, for
/// the assumptions printed with a result.
pub(crate) fn sampling_note(points: usize) -> String {
    if estimates_sampling_error(points) {
        format!(
            "points doubled, up to {MAX_SIZE_POINTS}, where the sampling error of the size (and \
             of ΔC times the size, when ΔC is constrained), estimated from every second and \
             fourth point, exceeds the boundary tolerance"
        )
    } else {
        "the size's sampling error is not estimated: that needs a multiple of 4 points, at \
         least 16"
            .to_string()
    }
}

/// Most curve points [`solve_sized`] doubles to.
pub const MAX_SIZE_POINTS: usize = MAX_RESOLVED_POINTS;

/// A point's shadow reduced to its size measure.
#[derive(Debug, Clone, PartialEq)]
pub enum SizedPoint {
    /// No horizon, and not evaluated (see [`PointShadow::NoHorizon`]).
    NoHorizon,
    /// A horizon but no shadow; the solver's reason.
    NoShadow(String),
    /// The size (r_sh/M) and ΔC (NaN unless wanted), and whether the point has no horizon.
    Shadow {
        /// The size measure, r_sh/M.
        size: f64,
        /// ΔC, NaN unless wanted.
        circularity: f64,
        /// Whether the point has no horizon.
        horizonless: bool,
        /// The curve points it was measured on.
        points: usize,
    },
}

/// Solve a point ([`shadow::solve_classified`]) and measure its curve,
/// with the size's sampling error within the boundary tolerance: while the error estimated
/// from every second and fourth point ([`crate::observables::sampling_error`]) exceeds
/// `settings.tolerance` (or ΔC's, when wanted, the tolerance over the size: ΔC R̄ is the
/// curve's rms deviation in M), or cannot be estimated on those subsets, the curve is solved
/// again with twice the points, up to [`MAX_SIZE_POINTS`]. A size still not known within the
/// tolerance there is an error, never a value. With fewer than 16 points, or a number that
/// is not a multiple of 4, nothing is estimated ([`sampling_note`] says so). With 64 points
/// the mean radius of Kerr at 90° is off by 1.2e-7 M at a = 0.998 and 3e-6 M at a = 0.9999
/// (128 and 256 points bring both under 1e-9 M); below a = 0.99 no doubling is needed.
///
/// ```
/// use umbral::bounds::{solve_sized, SizeMeasure, SizedPoint};
/// use umbral::metrics::Kerr;
/// use umbral::shadow::{Observer, ShadowSettings};
/// let kerr = Kerr::new(0.5).unwrap();
/// let point = solve_sized(&kerr, &Observer::distant(1.0), &ShadowSettings::default(), false,
///     SizeMeasure::Mean, false).unwrap();
/// let SizedPoint::Shadow { size, points, .. } = point else { panic!() };
/// // Near 3√3 for any spin (Bardeen 1973), and resolved by the 256 points asked for.
/// assert!((size - 27f64.sqrt()).abs() < 0.1);
/// assert_eq!(points, 256);
/// ```
pub fn solve_sized(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &shadow::ShadowSettings,
    require_horizon: bool,
    measure: SizeMeasure,
    want_circularity: bool,
) -> Result<SizedPoint, String> {
    let measured = |curve: &shadow::CriticalCurve, result: &shadow::ShadowResult| {
        measure_curve(
            curve,
            result.photon_orbit_radii,
            spacetime,
            measure,
            want_circularity,
        )
    };
    let resolved = solve_resolved(
        spacetime,
        observer,
        settings,
        require_horizon,
        "size",
        |result| measured(result.curve.as_ref().ok_or("no curve")?, result),
        |result, &(size, _)| {
            let curve = result.curve.as_ref()?;
            let error_of = |pick: fn((f64, f64)) -> f64| {
                sampling_error(curve, |c| measured(c, result).ok().map(pick))
            };
            let size_error = error_of(|m| m.0)?;
            // ΔC's in M: R̄ ΔC is the curve's rms deviation.
            let estimate = if want_circularity {
                size_error.max(error_of(|m| m.1)? * size)
            } else {
                size_error
            };
            Some(SamplingError {
                estimate,
                quantity: "size".to_string(),
            })
        },
    )?;
    Ok(match resolved {
        Resolved::NoHorizon => SizedPoint::NoHorizon,
        Resolved::NoShadow { reason, .. } => SizedPoint::NoShadow(reason),
        Resolved::Shadow {
            horizonless,
            measured: (size, circularity),
            points,
            ..
        } => SizedPoint::Shadow {
            size,
            circularity,
            horizonless,
            points,
        },
    })
}

impl PointModel for Model<'_> {
    fn value(&self, n: &[f64]) -> PointValue {
        let (spacetime, inclination) = match self.build(n) {
            Ok(s) => s,
            Err(e) => return PointValue::Failed(e.to_string()),
        };
        let observer = Observer::distant(inclination);
        let settings = &self.request.settings;
        match solve_sized(
            spacetime.as_ref(),
            &observer,
            &settings.shadow,
            settings.require_horizon,
            self.request.size_measure,
            self.want_circularity,
        ) {
            Err(e) => PointValue::Failed(e),
            Ok(SizedPoint::NoHorizon) => PointValue::NoHorizon,
            Ok(SizedPoint::NoShadow(reason)) => PointValue::NoShadow(reason),
            Ok(SizedPoint::Shadow {
                size,
                circularity,
                horizonless,
                ..
            }) => PointValue::Valid {
                size,
                circularity,
                horizon: !horizonless,
            },
        }
    }

    fn passes_horizon_test(&self, n: &[f64]) -> bool {
        let Ok((spacetime, _)) = self.build(n) else {
            return false;
        };
        self.counts_horizonless_of(spacetime.as_ref())
            || matches!(spacetime.classify(), Classification::BlackHole { .. })
    }

    fn counts_horizonless(&self) -> bool {
        let low: Vec<f64> = self.ranges.iter().map(|r| r.0).collect();
        let corner = self.build(&low).map(|(s, _)| s);
        // The solver is chosen by the metric's declared symmetry, the same at every point
        // (the box's corner stands for all of it; a metric that cannot be built there counts).
        corner.map_or(true, |s| self.counts_horizonless_of(s.as_ref()))
    }
}

impl Model<'_> {
    /// Whether a horizonless point of `spacetime` can count: only through the spherical
    /// solver (elsewhere the horizon still bounds what can be evaluated), and unless a horizon
    /// is required.
    fn counts_horizonless_of(&self, spacetime: &dyn Spacetime) -> bool {
        let capture = self
            .request
            .settings
            .shadow
            .solver
            .resolve(spacetime)
            .is_ok_and(|s| s.bounds_capture_without_horizon());
        capture && !self.request.settings.require_horizon
    }
}

/// Everything fixed about a request once it is checked.
struct Prepared<'a> {
    request: &'a BoundRequest,
    dims: Vec<Dimension>,
    ranges: Vec<(f64, f64)>,
    fixed_inclination: f64,
    spherical: bool,
    /// How close to an interval's end a size is indistinguishable from it, in M (the
    /// solver's [`shadow::ShadowSolver::curve_resolution`]; 0 for exact solvers).
    size_resolution: f64,
}

impl Prepared<'_> {
    /// The tolerance on an edge with a failed evaluation on one side, in the varied
    /// parameter: [`BoundSettings::failure_edge_relative_tolerance`] of the range's width,
    /// never finer than the parameter tolerance.
    fn failure_edge_tolerance(&self) -> f64 {
        let r = self.request;
        let s = &r.settings;
        (s.failure_edge_relative_tolerance * (r.vary.high - r.vary.low)).max(s.parameter_tolerance)
    }

    /// The prediction at `x`: with `full` (or [`BoundSettings::full_extremes`]) the full
    /// search of the nuisance extremes, else as far as deciding `x` at every level needs
    /// ([`nuisance::decide`]).
    fn evaluate(&self, x: f64, full: bool) -> Aggregate {
        let model = Model {
            request: self.request,
            x,
            dims: &self.dims,
            ranges: &self.ranges,
            fixed_inclination: self.fixed_inclination,
            want_circularity: self.request.circularity_max.is_some(),
        };
        let r = self.request;
        let levels: Vec<[f64; 2]> = r
            .radii
            .intervals
            .iter()
            .map(|iv| [iv.low, iv.high])
            .collect();
        let effort = if full || r.settings.full_extremes {
            Effort::FullSearch
        } else {
            Effort::Decide
        };
        decide(
            &model,
            &self.ranges,
            &levels,
            r.circularity_max,
            &r.settings.nuisance,
            effort,
        )
    }
}

fn check_range(what: &str, low: f64, high: f64) -> Result<(), BoundError> {
    let what = what.to_string();
    if !(low.is_finite() && high.is_finite()) {
        return Err(BoundError::RangeNotFinite { what, low, high });
    }
    if low >= high {
        return Err(BoundError::RangeEmpty { what, low, high });
    }
    Ok(())
}

/// Fixed values finite, nuisance ranges valid and not the inclination, no name twice.
fn check_names(request: &BoundRequest) -> Result<(), BoundError> {
    let mut names = vec![request.vary.name.clone()];
    for (n, v) in &request.fixed {
        if !v.is_finite() {
            return Err(BoundError::NotFinite {
                name: n.clone(),
                value: *v,
            });
        }
        names.push(n.clone());
    }
    for p in &request.nuisance {
        if p.name == "inclination" {
            return Err(BoundError::InclinationAsNuisance);
        }
        check_range(&format!("the nuisance range of {}", p.name), p.low, p.high)?;
        names.push(p.name.clone());
    }
    for (i, n) in names.iter().enumerate() {
        if names[..i].contains(n) {
            return Err(BoundError::Repeated(n.clone()));
        }
    }
    Ok(())
}

/// The nuisance dimensions and their ranges (the parameters, then the inclination when it
/// ranges over an interval and the metric is not spherical) and the inclination used when it
/// is not a dimension (radians).
#[allow(clippy::type_complexity)]
fn nuisance_dimensions(
    request: &BoundRequest,
    spherical: bool,
) -> Result<(Vec<Dimension>, Vec<(f64, f64)>, f64), BoundError> {
    let degrees_ok = |d: f64| d.is_finite() && (0.0..=180.0).contains(&d);
    let mut dims: Vec<Dimension> = request
        .nuisance
        .iter()
        .map(|p| Dimension::Parameter(p.name.clone()))
        .collect();
    let mut ranges: Vec<(f64, f64)> = request.nuisance.iter().map(|p| (p.low, p.high)).collect();
    let fixed_inclination = match request.inclination {
        Inclination::Fixed { degrees } => {
            if !degrees_ok(degrees) {
                return Err(BoundError::Inclination(degrees));
            }
            degrees.to_radians()
        }
        Inclination::Range {
            low_degrees,
            high_degrees,
        } => {
            if !(degrees_ok(low_degrees) && degrees_ok(high_degrees)) {
                return Err(BoundError::InclinationRange {
                    low: low_degrees,
                    high: high_degrees,
                });
            }
            check_range("the inclination range", low_degrees, high_degrees)?;
            if !spherical {
                dims.push(Dimension::Inclination);
                ranges.push((low_degrees.to_radians(), high_degrees.to_radians()));
            }
            (0.5 * (low_degrees + high_degrees)).to_radians()
        }
    };
    if dims.len() > 3 {
        return Err(BoundError::TooManyNuisance(dims.len()));
    }
    Ok((dims, ranges, fixed_inclination))
}

fn prepare(request: &BoundRequest) -> Result<Prepared<'_>, BoundError> {
    let s = &request.settings;
    let positive = |t: f64| t.is_finite() && t > 0.0;
    let positive_tolerance =
        positive(s.parameter_tolerance) && positive(s.failure_edge_relative_tolerance);
    if !(3..=MAX_INITIAL_GRID).contains(&s.initial_grid)
        || !positive_tolerance
        || s.nuisance.grid < 2
    {
        return Err(BoundError::BadSettings {
            initial_grid: s.initial_grid,
        });
    }
    check_range(
        &format!("the range of {}", request.vary.name),
        request.vary.low,
        request.vary.high,
    )?;
    check_names(request)?;
    if request.radii.intervals.is_empty() {
        return Err(BoundError::NoIntervals);
    }
    // Domains are intervals: building at the corners checks every name and value.
    let corner = |pick_high: bool| -> Vec<(String, f64)> {
        let mut a = request.fixed.clone();
        a.push((
            request.vary.name.clone(),
            if pick_high {
                request.vary.high
            } else {
                request.vary.low
            },
        ));
        for p in &request.nuisance {
            a.push((p.name.clone(), if pick_high { p.high } else { p.low }));
        }
        a
    };
    let low_metric = request.metric.build(&corner(false))?;
    request.metric.build(&corner(true))?;
    let spherical = low_metric.symmetry() == Symmetry::Spherical;
    let (dims, ranges, fixed_inclination) = nuisance_dimensions(request, spherical)?;
    let size_resolution = request
        .settings
        .shadow
        .solver
        .resolve(low_metric.as_ref())
        .map_or(0.0, |solver| {
            solver.curve_resolution(&request.settings.shadow)
        });
    Ok(Prepared {
        request,
        dims,
        ranges,
        fixed_inclination,
        spherical,
        size_resolution,
    })
}

/// Compute the allowed ranges of the varied parameter at each level, the nuisance
/// evaluations in a parallel loop ([`Parallel`]).
pub fn bound(request: &BoundRequest) -> Result<BoundResult, BoundError> {
    bound_on(request, &mut Parallel)
}

/// Check `request` as [`bound`] does, without evaluating anything.
pub fn check_request(request: &BoundRequest) -> Result<(), BoundError> {
    prepare(request).map(|_| ())
}

/// [`bound`] with the nuisance evaluations done by `evaluator` (the run layer's executor
/// adds progress, a checkpoint and Ctrl-C); an evaluator that stops ends the bound with
/// [`BoundError::Halted`].
pub fn bound_on(
    request: &BoundRequest,
    evaluator: &mut dyn Evaluate,
) -> Result<BoundResult, BoundError> {
    let prep = prepare(request)?;
    let mut search = refine::Search {
        prep: &prep,
        evaluator,
        levels: request
            .radii
            .intervals
            .iter()
            .map(|iv| [iv.low, iv.high])
            .collect(),
        cmax: request.circularity_max,
    };
    let nodes = search.refined_nodes()?;
    let cells = search.bound_ends(&nodes)?;
    search.evaluator.finish()?;
    Ok(refine::result(
        &prep,
        &nodes,
        cells,
        &search.levels,
        search.cmax,
    ))
}

/// How far one predicted size (and circularity deviation ΔC) lies inside the allowed region
/// of one level, r_sh/M in `[low, high]` with ΔC at most `circularity_max`: the smallest of
/// the margins `high − size`, `size − low` and `circularity_max − ΔC` that [`bound`] decides
/// by. Non-negative means allowed.
///
/// ```
/// use umbral::bounds::allowed_margin;
/// // The circularity limit (0.1 − 0.02) is nearer than the interval's upper end (5.1 − 5.0).
/// let m = allowed_margin(5.0, Some(0.02), [4.8, 5.1], Some(0.1));
/// assert!((m - 0.08).abs() < 1e-12);
/// // Without a circularity deviation only the size counts.
/// assert!((allowed_margin(5.0, None, [4.8, 5.1], Some(0.1)) - 0.1).abs() < 1e-12);
/// assert!(allowed_margin(5.2, None, [4.8, 5.1], None) < 0.0);
/// ```
pub fn allowed_margin(
    size: f64,
    circularity: Option<f64>,
    [low, high]: [f64; 2],
    circularity_max: Option<f64>,
) -> f64 {
    let point = Extremes {
        size_min: size,
        size_max: size,
        circularity_min: circularity.unwrap_or(f64::NEG_INFINITY),
        partial: false,
        horizonless: false,
        wall_backoff: 0.0,
        refinement_cut: None,
        witnessed: false,
        failure_passed_over: None,
    };
    refine::margins(
        &point,
        &[[low, high]],
        circularity_max.filter(|_| circularity.is_some()),
    )
    .into_iter()
    .fold(f64::INFINITY, f64::min)
}

/// The assumptions about the nuisance box: its ranges, how its extremes are found, and
/// what counts as allowed.
fn nuisance_assumptions(prep: &Prepared, partial: bool) -> Vec<String> {
    let r = prep.request;
    let s = &r.settings;
    let mut a = Vec::new();
    for p in &r.nuisance {
        a.push(format!("nuisance: {} over [{}, {}]", p.name, p.low, p.high));
    }
    if !prep.dims.is_empty() {
        a.push(format!(
            "nuisance extremes: a grid of {} points per dimension, refined by Brent \
             minimisation (coordinate sweeps) to {:e} of each range; horizon boundaries inside \
             the box located by bisection; an extreme at a box edge or horizon boundary is \
             accepted when the adjacent grid value is less extreme",
            s.nuisance.grid, s.nuisance.relative_tolerance
        ));
        a.push(
            "allowed at a level: some nuisance point has its predicted size inside the interval \
             (the size is assumed to take every value between its min and max over the \
             feasible nuisance points)"
                .to_string(),
        );
    }
    if partial {
        a.push(
            "some nuisance points had no horizon or no shadow; they are left out of the \
             extremes"
                .to_string(),
        );
    }
    if let Some(c) = r.circularity_max {
        a.push(format!(
            "circularity: a nuisance point counts only if its circularity deviation (about the \
             area centroid) is at most {c}"
        ));
    }
    a
}

/// The assumptions of a bound: the request's, the nuisance box's, and (`failure_edges`)
/// whether some edge between a failed evaluation and one that did not fail was located, at
/// the coarser failure-edge tolerance.
fn describe(prep: &Prepared, partial: bool, node_count: usize, failure_edges: bool) -> Vec<String> {
    let r = prep.request;
    let s = &r.settings;
    let mut a = r.radii.assumptions.clone();
    for iv in &r.radii.intervals {
        a.push(format!(
            "r_sh/M interval at confidence {}: [{:.6}, {:.6}]",
            iv.confidence, iv.low, iv.high
        ));
    }
    a.push(match r.size_measure {
        SizeMeasure::Mean => "size measure: mean radius of the critical curve about its area \
                              centroid"
            .to_string(),
        SizeMeasure::Area => {
            "size measure: area radius sqrt(Area/pi) of the critical curve".to_string()
        }
    });
    a.push(match (r.inclination, prep.spherical) {
        (_, true) => "inclination: irrelevant for a spherically symmetric metric".to_string(),
        (Inclination::Fixed { degrees }, false) => format!("inclination: fixed at {degrees} deg"),
        (
            Inclination::Range {
                low_degrees,
                high_degrees,
            },
            false,
        ) => format!("inclination: nuisance over [{low_degrees}, {high_degrees}] deg"),
    });
    a.extend(nuisance_assumptions(prep, partial));
    // Without a failure edge the categories located are the physical ones (and the text is
    // what it always was).
    let categories = if failure_edges {
        "no horizon, no shadow"
    } else {
        "no horizon, no shadow, failure"
    };
    // Exact solvers: the end is located to the parameter tolerance (and the text is what it
    // always was).
    let end_stop = if prep.size_resolution > 0.0 {
        format!(
            " or until the size is within {:e} M of the interval's end (the curves' \
             resolution: the end is then known to about that over the size's slope)",
            prep.size_resolution
        )
    } else {
        String::new()
    };
    a.push(format!(
        "varied parameter: {} over [{}, {}], uniform starting grid of {} points ({} nodes \
         after refinement), category changes ({categories}) located by \
         bisection and bound ends by Brent's method to {:e}{end_stop}; values with no shadow \
         (or, when a horizon is required, no horizon) are reported as such, never as allowed \
         or excluded",
        r.vary.name, r.vary.low, r.vary.high, s.initial_grid, node_count, s.parameter_tolerance
    ));
    if failure_edges {
        a.push(format!(
            "solver-failure edges (a failed evaluation next to one that did not fail) located \
             by bisection only to {:e} ({:e} of the range of {}): where the solver stops \
             converging is no property of the spacetime; the gap between the last value \
             evaluated and the first failed one is listed with each failure and is neither \
             allowed nor excluded",
            prep.failure_edge_tolerance(),
            s.failure_edge_relative_tolerance,
            r.vary.name
        ));
    }
    a.push(if s.require_horizon {
        "horizon required: only values with a horizon are evaluated; horizonless objects are \
         listed as no horizon, whatever their shadow"
            .to_string()
    } else {
        "horizonless objects: evaluated like black holes where the spherical solver finds a \
         photon sphere that bounds capture (rays inside it end at the central singularity or \
         pass a wormhole throat) and listed as horizonless; without a horizon and without such \
         a shadow a value is listed as no horizon (the separable solver and the ray tracer do \
         not count a horizonless shadow)"
            .to_string()
    });
    let solver = if s.shadow.solver.is_auto() {
        "auto (spherical, separable or raytrace by the metric's symmetry)"
    } else {
        s.shadow.solver.name()
    };
    a.push(format!(
        "solver: {solver} shadow solver, {} curve points ({}), boundary tolerance {:e} M",
        s.shadow.points,
        sampling_note(s.shadow.points),
        s.shadow.tolerance
    ));
    a
}
