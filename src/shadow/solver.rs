//! The open solver layer: the [`ShadowSolver`] trait, the registry of solvers by name, the
//! request checks (written once, here) and the dispatch.
//!
//! A solver is a value implementing [`ShadowSolver`]. The crate registers its three solvers
//! in the order `auto` tries them (spherical, separable, raytrace); a program adds its own with
//! [`register_solver`], after which its name parses like a built-in one (command line, checks
//! files, [`SolverChoice`]). `auto` is the first registered solver that applies to the metric.
//!
//! ```
//! use umbral::prelude::*;
//! use umbral::shadow::{solver_names, Observer, ShadowSettings, SolverChoice};
//!
//! // The crate's three, in the order `auto` tries them (a new built-in solver takes its place
//! // among them; registered ones come after).
//! let names = solver_names();
//! let at = |name: &str| names.iter().position(|&s| s == name).unwrap();
//! assert!(at("spherical") < at("separable") && at("separable") < at("raytrace"));
//! let settings = ShadowSettings {
//!     solver: "spherical".parse::<SolverChoice>().unwrap(),
//!     ..ShadowSettings::default()
//! };
//! let result = umbral::shadow::solve(&Schwarzschild, &Observer::distant(1.0), &settings).unwrap();
//! assert_eq!(result.solver, "spherical");
//! ```

use super::{Observer, ShadowError, ShadowResult, ShadowSettings};
use crate::metric::Spacetime;
use crate::numfmt::Num;
use std::fmt;
use std::sync::{LazyLock, RwLock};

/// Fewest curve points a request may ask for.
pub const MIN_POINTS: usize = 8;

/// Most curve points a request may ask for (about 8 MB of radii per curve).
pub const MAX_POINTS: usize = 1 << 20;

/// The range of boundary tolerances a request may ask for, in M. Below 1e-12 M the curve
/// radii (about 5 M) are within a few thousand units in the last place of double precision,
/// where the separable solver's root finding (placing points to 1% of the tolerance) and the
/// curve's own arithmetic stop being meaningful; above 1e-3 M the boundary error would reach
/// a few parts in 10⁴ of the shadow size, the level of the deviations from Kerr the
/// observables are used to test.
pub const TOLERANCE_RANGE: [f64; 2] = [1e-12, 1e-3];

/// A critical-curve solver.
///
/// Implement it, register the value with [`register_solver`] (or call [`solve_with`] on it
/// directly) and it runs behind the same request checks and dispatch as the built-in ones.
/// The request reaching [`ShadowSolver::solve`] has passed [`check_request`] and the solver
/// applies to the metric.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::{
///     register_solver, Observer, ShadowError, ShadowResult, ShadowSettings, SphericalSolver,
/// };
///
/// /// The spherical solver under another name.
/// struct Tagged;
/// impl ShadowSolver for Tagged {
///     fn name(&self) -> &'static str {
///         "tagged-spherical"
///     }
///     fn summary(&self) -> &'static str {
///         "the spherical solver, tagged"
///     }
///     fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
///         SphericalSolver.applies_to(spacetime)
///     }
///     fn solve(
///         &self,
///         spacetime: &dyn Spacetime,
///         observer: &Observer,
///         settings: &ShadowSettings,
///     ) -> Result<ShadowResult, ShadowError> {
///         let result = SphericalSolver.solve(spacetime, observer, settings)?;
///         Ok(ShadowResult { solver: self.name(), ..result })
///     }
/// }
///
/// register_solver(Tagged).unwrap();
/// let request = ShadowRequest::distant(1.0).with_solver("tagged-spherical").unwrap();
/// let seen = shadow(&Schwarzschild, &request).unwrap();
/// assert_eq!(seen.result.solver, "tagged-spherical");
/// // b_c = 3√3 (Synge 1966).
/// assert!((seen.observables.unwrap().mean_radius - 27f64.sqrt()).abs() < 1e-12);
/// ```
pub trait ShadowSolver: Send + Sync {
    /// Its name on the command line, in checks files and in results: lower case, no spaces.
    fn name(&self) -> &'static str;

    /// One line saying what it does (help texts, the assumptions printed with a bound).
    fn summary(&self) -> &'static str;

    /// `Ok` if it applies to this metric, else why not (one phrase, no trailing period).
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String>;

    /// The critical curve with everything the solver computes (photon-ring exponents included).
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError>;

    /// The critical curve only: a solver may leave `exponents` at `None` and skip their cost.
    /// The curve must be the one [`ShadowSolver::solve`] returns; where `solve` fails, this
    /// fails with an error of the same kind, whose message may differ (the ray tracer stops
    /// tracing a curve once it is certain to be refused, and reports what it found by then).
    /// By default it is `solve`.
    fn solve_curve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        self.solve(spacetime, observer, settings)
    }

    /// Whether a shadow it finds without a horizon is known to be the edge of capture (a
    /// photon sphere around an absorbing centre). Only then do bounds count horizonless values.
    fn bounds_capture_without_horizon(&self) -> bool {
        false
    }

    /// How far its curve points may move under a change of its numerics, in M: the boundary
    /// tolerance for a solver that brackets each point to it (a ray tracer); 0, the default,
    /// for one exact to rounding or far better than the tolerance. A bound stops refining an
    /// end once the size is this close to the interval's end (differences below it are noise).
    fn curve_resolution(&self, settings: &ShadowSettings) -> f64 {
        let _ = settings;
        0.0
    }
}

/// The registered solvers, in the order `auto` tries them. Registered solvers live for the
/// whole program (they are leaked once, on registration).
static REGISTRY: LazyLock<RwLock<Vec<&'static dyn ShadowSolver>>> =
    LazyLock::new(|| RwLock::new(super::builtin_solvers()));

fn registry() -> std::sync::RwLockReadGuard<'static, Vec<&'static dyn ShadowSolver>> {
    // The lock is only written by `register_solver`, which cannot panic while holding it.
    REGISTRY.read().unwrap_or_else(|e| e.into_inner())
}

/// Add a solver after the registered ones; its name then parses everywhere a solver name does.
///
/// Errors (`BadRequest`) when the name is empty, `auto`, not lower-case ASCII letters, digits
/// and `-`, or already registered.
pub fn register_solver(solver: impl ShadowSolver + 'static) -> Result<(), ShadowError> {
    let name = solver.name();
    let well_formed = !name.is_empty()
        && name
            .bytes()
            .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'-');
    if !well_formed || name == AUTO {
        return Err(ShadowError::BadRequest(format!(
            "a solver name must be lower-case letters, digits and '-', and not '{AUTO}', got '{name}'"
        )));
    }
    let mut list = REGISTRY.write().unwrap_or_else(|e| e.into_inner());
    if list.iter().any(|s| s.name() == name) {
        return Err(ShadowError::BadRequest(format!(
            "a solver named '{name}' is already registered"
        )));
    }
    list.push(Box::leak(Box::new(solver)));
    Ok(())
}

/// The registered solver of this name.
pub fn find_solver(name: &str) -> Option<&'static dyn ShadowSolver> {
    registry().iter().copied().find(|s| s.name() == name)
}

/// Every registered solver's name, in registration order (`auto` not included).
pub fn solver_names() -> Vec<&'static str> {
    registry().iter().map(|s| s.name()).collect()
}

/// The solver `auto` uses for this metric: the first registered one that applies.
pub fn auto_solver(spacetime: &dyn Spacetime) -> &'static dyn ShadowSolver {
    let list = registry();
    let ray_tracer = |s: &&'static dyn ShadowSolver| s.name() == super::raytrace::NAME;
    list.iter()
        .copied()
        .find(|s| s.applies_to(spacetime).is_ok())
        // The ray tracer applies to every metric (it is always registered): a fallback only.
        .or_else(|| list.iter().copied().find(ray_tracer))
        .unwrap_or(list[0])
}

const AUTO: &str = "auto";

/// Which solver a request asks for: `auto` or a registered solver, by name.
#[derive(Clone, Copy, PartialEq, Eq, Default)]
pub struct SolverChoice(Option<&'static str>);

impl SolverChoice {
    /// The first registered solver that applies to the metric.
    pub const AUTO: SolverChoice = SolverChoice(None);

    /// The solver this choice resolves to for a metric.
    pub fn resolve(
        &self,
        spacetime: &dyn Spacetime,
    ) -> Result<&'static dyn ShadowSolver, ShadowError> {
        match self.0 {
            None => Ok(auto_solver(spacetime)),
            Some(name) => find_solver(name).ok_or_else(|| unknown_solver(name)),
        }
    }

    /// The name: `auto` or the solver's.
    pub fn name(&self) -> &'static str {
        self.0.unwrap_or(AUTO)
    }

    /// Whether this is `auto`.
    pub fn is_auto(&self) -> bool {
        self.0.is_none()
    }

    /// Every name a choice parses from: `auto`, then the registered solvers.
    pub fn names() -> Vec<&'static str> {
        std::iter::once(AUTO).chain(solver_names()).collect()
    }
}

fn unknown_solver(name: &str) -> ShadowError {
    ShadowError::BadRequest(format!(
        "unknown solver '{name}' (known: {})",
        SolverChoice::names().join(", ")
    ))
}

impl std::str::FromStr for SolverChoice {
    type Err = ShadowError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        if s == AUTO {
            return Ok(SolverChoice::AUTO);
        }
        find_solver(s)
            .map(|solver| SolverChoice(Some(solver.name())))
            .ok_or_else(|| unknown_solver(s))
    }
}

impl fmt::Display for SolverChoice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl fmt::Debug for SolverChoice {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl serde::Serialize for SolverChoice {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

/// Check a boundary tolerance against [`TOLERANCE_RANGE`].
pub fn check_tolerance(tolerance: f64) -> Result<(), ShadowError> {
    let [lo, hi] = TOLERANCE_RANGE;
    if (lo..=hi).contains(&tolerance) {
        Ok(())
    } else {
        Err(ShadowError::BadRequest(format!(
            "the boundary tolerance must lie between {} and {} M, got {}",
            Num(lo),
            Num(hi),
            Num(tolerance)
        )))
    }
}

/// Check a number of curve points against [`MIN_POINTS`] and [`MAX_POINTS`].
pub fn check_points(points: usize) -> Result<(), ShadowError> {
    if (MIN_POINTS..=MAX_POINTS).contains(&points) {
        Ok(())
    } else {
        Err(ShadowError::BadRequest(format!(
            "need between {MIN_POINTS} and {MAX_POINTS} points, got {points} points"
        )))
    }
}

/// Every check a request passes before any solver sees it: the observer (inclination in
/// [0, π], a positive finite radius), the points and the tolerance. The one place they are
/// written; every solver's public entry point calls it.
pub fn check_request(observer: &Observer, settings: &ShadowSettings) -> Result<(), ShadowError> {
    observer.validate()?;
    check_tolerance(settings.tolerance)?;
    check_points(settings.points)
}

/// Solve for the critical curve with the solver the settings name (`auto`: the first
/// registered one that applies).
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::{solve, Observer, ShadowSettings};
/// let kerr = Kerr::new(0.9).unwrap();
/// let result = solve(&kerr, &Observer::distant(60f64.to_radians()), &ShadowSettings::default())
///     .unwrap();
/// assert_eq!(result.solver, "separable");
/// ```
pub fn solve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    let solver = settings.solver.resolve(spacetime)?;
    solve_with(solver, spacetime, observer, settings)
}

/// [`solve`] for the curve only (see [`ShadowSolver::solve_curve`]): the same curve, without
/// the photon-ring exponents where skipping them saves time. For bounds and scans.
pub fn solve_curve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    let solver = settings.solver.resolve(spacetime)?;
    checked(solver, spacetime, observer, settings)?;
    solver.solve_curve(spacetime, observer, settings)
}

/// Run one solver (registered or not, e.g. the ray tracer with its own options) behind the
/// request checks; `settings.solver` is not consulted.
pub fn solve_with(
    solver: &dyn ShadowSolver,
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    checked(solver, spacetime, observer, settings)?;
    solver.solve(spacetime, observer, settings)
}

fn checked(
    solver: &dyn ShadowSolver,
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<(), ShadowError> {
    check_request(observer, settings)?;
    solver
        .applies_to(spacetime)
        .map_err(|why| ShadowError::SolverNotApplicable {
            solver: solver.name(),
            metric: spacetime.info().name,
            why,
        })
}
