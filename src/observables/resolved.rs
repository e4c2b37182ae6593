//! Curves solved with enough points for what is measured on them.
//!
//! A quantity measured on N uniform curve samples (a mean radius, an extreme from the
//! trigonometric interpolant, ΔC) converges geometrically in N for a smooth curve, but slowly
//! where the curve has a nearly straight edge (Kerr a = 0.998 seen edge-on). Its sampling
//! error is estimated from every second and fourth point ([`super::sampling_error`]); while
//! the estimate exceeds the boundary tolerance, or cannot be made, the curve is solved again
//! with twice the points, up to [`MAX_RESOLVED_POINTS`]. A quantity still unresolved there
//! is an error, never a value. Bounds and posteriors resolve the size they compare
//! (`bounds::solve_sized`), scans every observable they report
//! ([`observables_sampling_error`]).

use super::{extrapolated_error, CentreChoice, Observables, Quantity, MIN_POINTS};
use crate::metric::Spacetime;
use crate::numfmt::Num;
use crate::shadow::{self, CriticalCurve, Observer, PointShadow, ShadowResult, ShadowSettings};
use std::f64::consts::TAU;

/// Most curve points a resolved solve doubles to.
pub const MAX_RESOLVED_POINTS: usize = 1024;

/// Whether the sampling error is estimated with `points` curve points: the subsets of every
/// second and fourth point must be curves of at least 4 points, so `points` is a multiple
/// of 4, at least 16.
pub fn estimates_sampling_error(points: usize) -> bool {
    points.is_multiple_of(4) && points / 4 >= MIN_POINTS
}

/// Fewest curve points the observables' sampling error is estimated from (subsets of 32 and
/// 16 points). The extremes and the Hioki–Maeda fit come from the trigonometric interpolant,
/// which on 16 and 8 points is not yet converging geometrically near extremal spin: on Kerr
/// curves of 32 points the estimate fell below the true error by up to a factor 5 (a = 0.998
/// at 60°, the height), while from 64 points on it was never below it beyond rounding
/// (1e-11 M; tests/sampling_error.rs). A resolved solve asked for 16 to 60 points therefore
/// doubles them to at least 64; scans refuse fewer than 64.
pub const MIN_OBSERVABLES_POINTS: usize = 64;

/// A sampling error in M and the quantity it is the largest for.
#[derive(Debug, Clone, PartialEq)]
pub struct SamplingError {
    /// The estimate, in M.
    pub estimate: f64,
    /// What it is the estimate of (an observable's name, or `size`).
    pub quantity: String,
}

/// A point solved with enough points.
#[derive(Debug, Clone, PartialEq)]
pub enum Resolved<T> {
    /// No horizon, and not evaluated ([`PointShadow::NoHorizon`]).
    NoHorizon,
    /// A horizon but no shadow: the solver and its reason.
    NoShadow {
        /// The solver that found no shadow.
        solver: &'static str,
        /// Its reason.
        reason: String,
    },
    /// A shadow: the solver's result, what was measured on its curve, and how many points
    /// that took.
    Shadow {
        /// The solver's result at the final number of points.
        result: Box<ShadowResult>,
        /// Whether the object has no horizon.
        horizonless: bool,
        /// What `measure` returned on the curve.
        measured: T,
        /// The curve points it was measured on.
        points: usize,
    },
}

/// Solve a point ([`shadow::solve_classified`]) and measure `what` on its curve, doubling the
/// points while `estimate_error` (the sampling error in M) exceeds `settings.tolerance` or is `None`, up to
/// [`MAX_RESOLVED_POINTS`]. With fewer than 16 points, or a number that is not a multiple
/// of 4, nothing is estimated and the curve is measured as asked. A solver failure, a failed
/// measurement and a quantity not resolved at the most points are errors (one line each).
///
/// ```
/// use umbral::metrics::Kerr;
/// use umbral::observables::resolved::{solve_resolved, Resolved, SamplingError};
/// use umbral::observables::{centroid_size, sampling_error};
/// use umbral::shadow::{Observer, ShadowSettings};
/// let settings = ShadowSettings { points: 64, ..ShadowSettings::default() };
/// let kerr = Kerr::new(0.998).unwrap();
/// let size = |c: &umbral::shadow::CriticalCurve| centroid_size(c).map(|s| s.0);
/// let point = solve_resolved(
///     &kerr,
///     &Observer::distant(90f64.to_radians()),
///     &settings,
///     false,
///     "size",
///     |result| Ok(size(result.curve.as_ref().unwrap()).unwrap()),
///     |result, _| sampling_error(result.curve.as_ref().unwrap(), size)
///         .map(|estimate| SamplingError { estimate, quantity: "size".into() }),
/// ).unwrap();
/// // Near-extremal Kerr seen edge-on: 64 points leave the mean radius 1.2e-7 M off.
/// let Resolved::Shadow { points, .. } = point else { panic!() };
/// assert_eq!(points, 128);
/// ```
pub fn solve_resolved<T>(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    require_horizon: bool,
    what: &str,
    measure: impl Fn(&ShadowResult) -> Result<T, String>,
    estimate_error: impl Fn(&ShadowResult, &T) -> Option<SamplingError>,
) -> Result<Resolved<T>, String> {
    let mut settings = *settings;
    loop {
        let (result, horizonless) =
            match shadow::solve_classified(spacetime, observer, &settings, require_horizon)
                .map_err(|e| e.to_string())?
            {
                PointShadow::NoHorizon => return Ok(Resolved::NoHorizon),
                PointShadow::NoShadow { solver, reason } => {
                    return Ok(Resolved::NoShadow { solver, reason })
                }
                PointShadow::Shadow {
                    result,
                    horizonless,
                } => (result, horizonless),
            };
        if result.curve.is_none() {
            return Err("the solver reported a shadow without a curve".to_string());
        }
        let measured = measure(&result)?;
        let error =
            estimates_sampling_error(settings.points).then(|| estimate_error(&result, &measured));
        let tolerance = settings.tolerance;
        let resolved = match &error {
            None => true,
            Some(e) => e.as_ref().is_some_and(|e| e.estimate <= tolerance),
        };
        if resolved {
            return Ok(Resolved::Shadow {
                result,
                horizonless,
                measured,
                points: settings.points,
            });
        }
        if 2 * settings.points > MAX_RESOLVED_POINTS {
            let estimate = match error.flatten() {
                Some(e) => format!(
                    "the {} sampling error is estimated at {:.1e} M",
                    possessive(&e.quantity),
                    e.estimate
                ),
                None => format!(
                    "the {} sampling error cannot be estimated (a subset of the points is not \
                     a curve that can be measured, or a quantity is not finite on it)",
                    possessive(what)
                ),
            };
            return Err(format!(
                "{estimate} with {} curve points (tolerance {} M), and the points are not \
                 doubled beyond {MAX_RESOLVED_POINTS}",
                settings.points,
                Num(tolerance)
            ));
        }
        settings.points *= 2;
    }
}

fn possessive(name: &str) -> String {
    if name.ends_with('s') {
        format!("{name}'")
    } else {
        format!("{name}'s")
    }
}

/// The largest sampling error of the observables of `curve` (as
/// [`Observables::from_curve`] with the same arguments), in M: a length's own, a pure
/// number's times the mean radius (for ΔC, R̄ ΔC is the curve's rms deviation in M), the
/// area's over 2π times the area radius (dA = 2πR dR). `None` if a subset of every second or
/// fourth point cannot be measured, or the count is not a multiple of 4 or is below
/// [`MIN_OBSERVABLES_POINTS`].
///
/// ```
/// use umbral::observables::resolved::observables_sampling_error;
/// use umbral::observables::{CentreChoice, Observables};
/// use umbral::shadow::CriticalCurve;
/// // An ellipse with semi-axes 5 and 2 about its centre, on 64 and 128 points.
/// let ellipse = |n| CriticalCurve::from_polar([0.0, 0.0], n, |p: f64| {
///     10.0 / (4.0 * p.cos().powi(2) + 25.0 * p.sin().powi(2)).sqrt()
/// });
/// let coarse = observables_sampling_error(&ellipse(64), CentreChoice::Centroid, None, None);
/// let fine = observables_sampling_error(&ellipse(128), CentreChoice::Centroid, None, None);
/// assert!(fine.unwrap().estimate < 1e-3 * coarse.unwrap().estimate);
/// ```
pub fn observables_sampling_error(
    curve: &CriticalCurve,
    centre: CentreChoice,
    horizon_radius: Option<f64>,
    photon_orbit_radii: Option<[f64; 2]>,
) -> Option<SamplingError> {
    let full = Observables::from_curve(curve, centre, horizon_radius, photon_orbit_radii).ok()?;
    error_of_observables(curve, &full, centre, horizon_radius, photon_orbit_radii)
}

/// [`observables_sampling_error`] with the full curve's observables already measured.
fn error_of_observables(
    curve: &CriticalCurve,
    full: &Observables,
    centre: CentreChoice,
    horizon_radius: Option<f64>,
    photon_orbit_radii: Option<[f64; 2]>,
) -> Option<SamplingError> {
    let n = curve.len();
    if n < MIN_OBSERVABLES_POINTS || !n.is_multiple_of(4) {
        return None;
    }
    let measure = |k: usize| {
        let subset = CriticalCurve {
            origin: curve.origin,
            radii: curve.radii.iter().step_by(k).copied().collect(),
        };
        Observables::from_curve(&subset, centre, horizon_radius, photon_orbit_radii).ok()
    };
    let (half, quarter) = (measure(2)?, measure(4)?);
    // The Hioki–Maeda circle passes through the α-extreme of the less flattened side; where
    // the subsets pick the other side the two sides are about equally flattened, and the fit
    // jumps with the choice rather than converging. Its values are then left out: they are
    // the full curve's choice, which no number of points makes more certain.
    let side = &full.hioki_maeda_reference_side;
    let same_side =
        *side == half.hioki_maeda_reference_side && *side == quarter.hioki_maeda_reference_side;
    let mut worst: Option<SamplingError> = None;
    for &q in Quantity::ALL {
        let hioki_maeda = matches!(
            q,
            Quantity::HiokiMaedaRadius | Quantity::HiokiMaedaDistortion
        );
        if hioki_maeda && !same_side {
            continue;
        }
        let values = [q.of(full), q.of(&half), q.of(&quarter)];
        if values.iter().all(|v| !v.is_finite()) {
            // Undefined on this curve at every resolution.
            continue;
        }
        let scale = match q.unit() {
            "M" => 1.0,
            "M^2" => 1.0 / (TAU * full.area_radius),
            _ => full.mean_radius,
        };
        let estimate = extrapolated_error(values[0], values[1], values[2]) * scale;
        if !estimate.is_finite() {
            return None;
        }
        if worst.as_ref().is_none_or(|w| estimate > w.estimate) {
            worst = Some(SamplingError {
                estimate,
                quantity: q.name().to_string(),
            });
        }
    }
    worst
}

/// [`solve_resolved`] for every observable: the curve's [`Observables`] about `centre`,
/// with the largest sampling error among them within the tolerance.
pub fn solve_with_observables(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    require_horizon: bool,
    centre: CentreChoice,
) -> Result<Resolved<Observables>, String> {
    let horizon = spacetime.outer_horizon();
    solve_resolved(
        spacetime,
        observer,
        settings,
        require_horizon,
        "observables",
        |result| {
            let curve = result.curve.as_ref().ok_or("no curve")?;
            Observables::from_curve(curve, centre, horizon, result.photon_orbit_radii)
                .map_err(|e| e.to_string())
        },
        |result, full| {
            let curve = result.curve.as_ref()?;
            error_of_observables(curve, full, centre, horizon, result.photon_orbit_radii)
        },
    )
}
