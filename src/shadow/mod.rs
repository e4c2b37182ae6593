//! Critical curves ("shadows"): solvers behind one entry point ([`solve`]); the crate's
//! three are registered in [`solver`], where a program can add its own.
//!
//! * [`spherical`]: exact, for metrics that declare spherical symmetry: the photon sphere is
//!   the minimum of C/A outside the horizon and b_c = √(C/A) there (Synge 1966).
//! * [`separable`]: exact up to root finding, for metrics with separation data: spherical
//!   photon orbits R = R′ = 0 mapped to the screen (Bardeen 1973).
//! * [`raytrace`]: any metric: backward null geodesics and bisection on capture.
//!
//! Screen convention (Bardeen 1973): α = −λ / sin θ_o, β = ±√(η + a² cos²θ_o − λ² cot²θ_o)
//! for a distant observer at inclination θ_o, in units of M. See docs/conventions.md.

pub mod catalogue;
pub mod curve;
pub mod exponents;
pub mod observer;
pub mod raytrace;
pub mod separable;
pub mod solver;
pub mod spherical;

pub use curve::CriticalCurve;
pub use observer::Observer;
pub use raytrace::RaytraceSolver;
pub use separable::SeparableSolver;
pub use solver::{
    auto_solver, check_points, check_request, check_tolerance, find_solver, register_solver, solve,
    solve_curve, solve_with, solver_names, ShadowSolver, SolverChoice, MAX_POINTS, MIN_POINTS,
    TOLERANCE_RANGE,
};
pub use spherical::SphericalSolver;

/// The crate's solvers, in the order `auto` tries them: the most exact first, the ray tracer
/// (which applies to every metric) last. Solvers a program registers come after these.
fn builtin_solvers() -> Vec<&'static dyn ShadowSolver> {
    let raytrace: &'static RaytraceSolver = Box::leak(Box::default());
    vec![&SphericalSolver, &SeparableSolver, raytrace]
}

use crate::metric::{Classification, Spacetime};
use serde::Serialize;

/// Settings shared by the solvers.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ShadowSettings {
    /// Number of curve points, uniform in screen polar angle.
    pub points: usize,
    /// Boundary tolerance in M (raytrace bisection; separable root finding).
    pub tolerance: f64,
    /// Solver choice: `auto` or a registered solver's name.
    pub solver: SolverChoice,
}

impl Default for ShadowSettings {
    fn default() -> Self {
        ShadowSettings {
            points: 256,
            tolerance: 1e-8,
            solver: SolverChoice::AUTO,
        }
    }
}

/// Errors that make a shadow request meaningless (as opposed to "no shadow", a result).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ShadowError {
    /// The requested solver does not apply to this metric.
    #[error("solver '{solver}' does not apply to metric '{metric}': {why}")]
    SolverNotApplicable {
        /// The solver's name.
        solver: &'static str,
        /// The metric's name.
        metric: String,
        /// What the metric lacks for it.
        why: String,
    },
    /// A bad observer or setting.
    #[error("{0}")]
    BadRequest(String),
    /// A numerical step failed to converge; the result is not returned.
    #[error("{0}")]
    NotConverged(String),
}

/// Outermost radius searched for singular surfaces, in M (or the observer's radius, if
/// larger): beyond the photon region of any metric whose mass sets the scale.
pub const EXTERIOR_CHECK_RADIUS: f64 = 1.0e3;

/// `NoShadow` (from `solver`) when the metric is singular on a surface outside its outer
/// horizon, or outside the central region of a horizonless metric, between it and the
/// observer ([`crate::metric::exterior_singularity`]): the exterior is not a regular
/// spacetime, so no shadow is computed. Every solver calls this first, the crate's and a
/// program's own (the dispatch does not: the crate's solvers call it in their public entry
/// points, which are also called directly).
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::{singular_exterior, Observer};
///
/// assert!(singular_exterior(&Kerr::new(0.9).unwrap(), &Observer::distant(1.0), "mine").is_none());
/// ```
pub fn singular_exterior(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    solver: &'static str,
) -> Option<ShadowResult> {
    let r_out = EXTERIOR_CHECK_RADIUS.max(observer.radius.unwrap_or(0.0));
    let surface = crate::metric::exterior_singularity(spacetime, r_out)?;
    Some(ShadowResult {
        solver,
        status: ShadowStatus::NoShadow {
            reason: format!(
                "{surface}; the exterior is not a regular spacetime, so there is no shadow \
                 to compute"
            ),
        },
        curve: None,
        photon_orbit_radii: None,
        photon_spheres: Vec::new(),
        exponents: None,
        orbits: None,
        diagnostics: Diagnostics::default(),
    })
}

impl From<crate::numerics::SearchFailure> for ShadowError {
    fn from(e: crate::numerics::SearchFailure) -> Self {
        ShadowError::NotConverged(e.to_string())
    }
}

/// Why a solver cannot use a metric's declared structure: `undeclared` when the metric does
/// not declare it, otherwise the metric's own error (a declared hook that returns nothing).
pub(crate) fn structure_why(e: crate::error::MetricError, undeclared: &str) -> String {
    match e {
        crate::error::MetricError::NotDeclared { .. } => undeclared.to_string(),
        other => other.to_string(),
    }
}

/// Whether the metric casts a shadow for this observer.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "status", rename_all = "snake_case")]
pub enum ShadowStatus {
    /// A closed critical curve was found.
    Shadow,
    /// No critical curve, with the reason (e.g. no photon sphere).
    NoShadow {
        /// Why there is no critical curve.
        reason: String,
    },
}

/// A photon sphere of a spherically symmetric metric: an extremum of C/A.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PhotonSphere {
    /// Radius (in the metric's r coordinate).
    pub radius: f64,
    /// Impact parameter √(C/A) there.
    pub impact_parameter: f64,
    /// Unstable orbits (a minimum of C/A) bound capture; stable ones (a maximum) do not.
    pub unstable: bool,
}

/// Photon-ring exponents of the orbit(s) forming the curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RingExponents {
    /// Lyapunov exponent λ in coordinate time (Cardoso et al. 2009), for spherical metrics.
    pub lyapunov: Option<f64>,
    /// Demagnification exponent γ per half orbit (Johnson et al. 2020); one value for
    /// spherical metrics, and min and max along the curve for separable ones.
    pub gamma_min: f64,
    /// Largest γ along the curve (equal to `gamma_min` for spherical metrics).
    pub gamma_max: f64,
}

/// Per-run counts and timing.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Diagnostics {
    /// Geodesics integrated (raytrace only).
    pub rays_traced: usize,
    /// Rays that failed (step-size underflow, non-finite state, step limit).
    pub failed_rays: usize,
    /// Whether every radial line from the curve's origin crosses the boundary once (for the
    /// ray tracer: every line scanned along its length, i.e. the anchors of its neighbour
    /// seeding and any line that fell back to the scan).
    pub star_shaped: bool,
    /// For a curve that is not star-shaped: (screen polar angle, every crossing radius).
    pub extra_crossings: Vec<(f64, Vec<f64>)>,
    /// Integrator steps in total (raytrace only).
    pub integrator_steps: usize,
    /// Wall-clock seconds.
    pub wall_seconds: f64,
    /// Why `ShadowResult::exponents` is `None` although the solver computes photon-ring
    /// exponents: the curve is well defined but its orbit has no exponent (e.g. a marginally
    /// stable photon orbit, λ² = 0) or its evaluation failed. `None` when exponents are given
    /// or the solver does not compute them. Not serialised here: front ends print it beside the
    /// exponents.
    #[serde(skip)]
    pub exponents_undefined: Option<String>,
    /// What the ray tracer's checks found: where its search started, whether the tolerance
    /// is met (with an error estimate) and the winding growth beside the boundary (raytrace
    /// only, for a shadow).
    pub raytrace: Option<raytrace::RaytraceChecks>,
}

impl Diagnostics {
    /// Why the curve is not known to lie within the requested boundary tolerance (the ray
    /// tracer's re-traced check, [`raytrace::RaytraceChecks::accuracy_note`]); `None` when it
    /// is, and for the exact solvers.
    pub fn tolerance_shortfall(&self) -> Option<&str> {
        let checks = self.raytrace.as_ref().filter(|c| !c.tolerance_met)?;
        Some(
            checks
                .accuracy_note
                .as_deref()
                .unwrap_or("no accuracy estimate"),
        )
    }
}

/// What a solver returns.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShadowResult {
    /// The name of the solver that produced it.
    pub solver: &'static str,
    /// Whether there is a shadow, and if not, why.
    pub status: ShadowStatus,
    /// The critical curve, when there is a shadow.
    pub curve: Option<CriticalCurve>,
    /// Min and max radius of the bound photon orbits that form the curve.
    pub photon_orbit_radii: Option<[f64; 2]>,
    /// Every photon sphere found (spherical solver only).
    pub photon_spheres: Vec<PhotonSphere>,
    /// Photon-ring exponents; `None` when the solver does not compute them or they are
    /// undefined for this curve (the reason is in `diagnostics.exponents_undefined`).
    pub exponents: Option<RingExponents>,
    /// Each curve point's photon orbit, in the order of the curve's points, when the solver
    /// knows it (the spherical and separable solvers; a ray tracer does not).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub orbits: Option<Vec<CurveOrbit>>,
    /// Counts, timing and checks of the run.
    pub diagnostics: Diagnostics,
}

/// The bound photon orbit behind one curve point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CurveOrbit {
    /// Its Boyer–Lindquist-like radius r, in M.
    pub radius: f64,
    /// Its demagnification exponent γ per half orbit (Johnson et al. 2020), when computed
    /// (left out, not null, when it is not).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gamma: Option<f64>,
}

/// Curves with at most this many points get γ at every point (beyond, only γ's range: one
/// evaluation per point would dominate the cost of long curves).
pub const POINT_GAMMA_MAX: usize = 4096;

/// A parameter point classified by whether it casts a shadow (issue 10, item 7): what the
/// bound engine and scans record for it.
#[derive(Debug, Clone, PartialEq)]
pub enum PointShadow {
    /// No horizon, and no shadow that counts (or a horizon was required).
    NoHorizon,
    /// A horizon but no shadow: the solver's reason.
    NoShadow {
        /// The name of the solver that found no shadow.
        solver: &'static str,
        /// Its reason.
        reason: String,
    },
    /// A shadow; `horizonless` when the object has no horizon and the spherical solver found
    /// a photon sphere that bounds capture by its centre.
    Shadow {
        /// The solver's result (its status is `Shadow`).
        result: Box<ShadowResult>,
        /// Whether the object has no horizon.
        horizonless: bool,
    },
}

/// Solve and classify a point by whether a shadow exists. A horizonless object counts (as
/// `Shadow { horizonless: true }`) when the spherical solver finds a photon sphere bounding an
/// absorbed centre: rays inside it end at the central singularity or pass a throat and do not
/// return. The separable solver returns no shadow without a horizon, and the ray tracer's
/// boundary is not counted then (only a solver whose
/// [`ShadowSolver::bounds_capture_without_horizon`] holds, the spherical one, establishes that
/// the curve is the edge of capture). With `require_horizon`, every horizonless point is
/// `NoHorizon` without being solved.
///
/// For bounds, scans and posteriors, which need the curve only: it runs [`solve_curve`], so
/// the photon-ring exponents may be absent. A curve that is not known to lie within the
/// requested boundary tolerance ([`Diagnostics::tolerance_shortfall`]) is an error
/// ([`ShadowError::NotConverged`]), never a value.
///
/// ```
/// use umbral::metrics::Jnw;
/// use umbral::shadow::{solve_classified, Observer, PointShadow, ShadowSettings};
/// let jnw = Jnw::new(0.7).unwrap();
/// let observer = Observer::distant(1.0);
/// let settings = ShadowSettings::default();
/// let counted = solve_classified(&jnw, &observer, &settings, false).unwrap();
/// assert!(matches!(counted, PointShadow::Shadow { horizonless: true, .. }));
/// let required = solve_classified(&jnw, &observer, &settings, true).unwrap();
/// assert_eq!(required, PointShadow::NoHorizon);
/// ```
pub fn solve_classified(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    require_horizon: bool,
) -> Result<PointShadow, ShadowError> {
    let horizon = matches!(spacetime.classify(), Classification::BlackHole { .. });
    if !horizon && require_horizon {
        return Ok(PointShadow::NoHorizon);
    }
    let solver = settings.solver.resolve(spacetime)?;
    let result = solve_curve(spacetime, observer, settings)?;
    if let Some(why) = result.diagnostics.tolerance_shortfall() {
        return Err(ShadowError::NotConverged(format!(
            "the curve is not known to lie within the boundary tolerance: {why}"
        )));
    }
    Ok(match &result.status {
        ShadowStatus::NoShadow { .. } if !horizon => PointShadow::NoHorizon,
        ShadowStatus::NoShadow { reason } => PointShadow::NoShadow {
            solver: result.solver,
            reason: reason.clone(),
        },
        ShadowStatus::Shadow if !horizon && !solver.bounds_capture_without_horizon() => {
            PointShadow::NoHorizon
        }
        ShadowStatus::Shadow => PointShadow::Shadow {
            result: Box::new(result),
            horizonless: !horizon,
        },
    })
}
