//! The exact shadow of a static, spherically symmetric metric ds² = −A dt² + B dr² + C dΩ².
//!
//! A light ray from infinity with impact parameter b = L/E obeys B ṙ² = E²(1/A − b²/C), so it
//! reaches radius r only while b² ≤ C/A all the way in (Synge 1966, Mon. Not. R. Astron. Soc.
//! 131, 463; Perlick & Tsupko 2022, Phys. Rep. 947, 1). Photon spheres are the extrema of C/A;
//! a minimum is an unstable circular photon orbit. A ray with b² below the global minimum of
//! C/A over the region outside the horizon never turns and is captured, so the shadow edge has
//! b_c = √(min C/A), a circle of radius b_c on the screen of a distant observer at any
//! inclination. B does not enter.
//!
//! A static observer at radius r_o sees the shadow at the angular radius
//! sin α_sh = b_c √(A(r_o)/C(r_o)) from the centre direction (Synge 1966; Perlick & Tsupko 2022).
//! Its screen curve is given, by the project's convention for finite observers, as the circle
//! of radius √C(r_o) · sin α_sh = b_c √A(r_o), which tends to b_c as r_o → ∞ when A → 1.

// `!(x > 0.0)` is used on purpose: it also rejects NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use super::curve::filled;
use super::exponents::spherical_exponents;
use super::{
    structure_why, CriticalCurve, Diagnostics, Observer, PhotonSphere, ShadowError, ShadowResult,
    ShadowSettings, ShadowStatus,
};
use crate::error::MetricError;
use crate::metric::{Spacetime, Symmetry};
use crate::numerics::{bisect_predicate_steps, brent_root};
use std::time::Instant;

/// Outermost radius of the photon-sphere scan, in M.
const R_FAR: f64 = 1.0e4;
/// Innermost radius of the scan for a horizonless metric, in M.
const R_NEAR: f64 = 1.0e-6;
/// Points of the logarithmic scan.
const SCAN_POINTS: usize = 8000;
/// Grid steps crossed at once where the scan's cell cannot hold a photon sphere.
const COARSE_CELL: usize = 16;
/// The scan stops this far (relatively) outside a horizon, where C/A diverges.
const HORIZON_MARGIN: f64 = 1.0e-9;
/// The solver's name on the command line and in results.
pub const NAME: &str = "spherical";
/// Closest relative approach to the inner boundary, r_s(1 + this).
const APPROACH_NEAREST: f64 = 1.0e-14;
/// Grid points per decade of r − r_s when approaching the inner boundary.
const APPROACH_PER_DECADE: f64 = 40.0;

/// The extrema of C/A and the one that bounds capture.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotonSphereAnalysis {
    /// Every photon sphere found, outermost first.
    pub spheres: Vec<PhotonSphere>,
    /// The unstable photon sphere at the global minimum of C/A, which bounds capture; `None`
    /// when nothing is captured (see `no_shadow_reason`).
    pub capture: Option<PhotonSphere>,
    /// Why there is no shadow, when `capture` is `None`.
    pub no_shadow_reason: Option<String>,
    /// Innermost radius examined: just outside the horizon, or where A, B, C stop being
    /// positive and finite (or 1e-6) for a horizonless metric.
    pub inner_boundary: f64,
}

/// C/A and (ln C/A)′ = C′/C − A′/A at r, with whether A, B, C are positive and finite there.
/// C/A, (ln C/A)′ and (ln C/A)″ at r, where A, B, C are positive and finite.
fn potential_curvature(spacetime: &dyn Spacetime, r: f64) -> Option<(f64, f64, f64)> {
    let jet = spacetime.spherical_jet(r).ok()?;
    let [a, a1, a2] = jet.a;
    let [b, _, _] = jet.b;
    let [c, c1, c2] = jet.c;
    let ok =
        [a, a1, a2, b, c, c1, c2].iter().all(|x| x.is_finite()) && a > 0.0 && b > 0.0 && c > 0.0;
    let (ca, aa) = (c1 / c, a1 / a);
    ok.then(|| (c / a, ca - aa, c2 / c - ca * ca - a2 / a + aa * aa))
}

fn potential(spacetime: &dyn Spacetime, r: f64) -> Option<(f64, f64)> {
    let jet = spacetime.spherical_jet(r).ok()?;
    let [a, a1, _] = jet.a;
    let [b, _, _] = jet.b;
    let [c, c1, _] = jet.c;
    let ok = [a, a1, b, c, c1].iter().all(|x| x.is_finite()) && a > 0.0 && b > 0.0 && c > 0.0;
    ok.then(|| (c / a, c1 / c - a1 / a))
}

fn not_spherical(spacetime: &dyn Spacetime, e: MetricError) -> ShadowError {
    ShadowError::SolverNotApplicable {
        solver: NAME,
        metric: spacetime.info().name,
        why: structure_why(e, "the metric is not declared spherically symmetric"),
    }
}

/// Whether the spherical solver applies: the metric declares spherical symmetry. (A declared
/// structure whose hook returns nothing is the metric's error, reported by the solver.)
pub fn applicability(spacetime: &dyn Spacetime) -> Result<(), String> {
    if spacetime.symmetry() == Symmetry::Spherical {
        Ok(())
    } else {
        Err("the metric is not declared spherically symmetric".into())
    }
}

/// Walks inward over radii, recording every sign change of (ln C/A)′ as a photon sphere.
struct Scan<'a> {
    spacetime: &'a dyn Spacetime,
    spheres: Vec<PhotonSphere>,
    /// The last radius examined and (ln C/A)′ there.
    r_prev: f64,
    g_prev: f64,
    /// (ln C/A)″ at the last radius examined (NaN where not computed).
    curvature_prev: f64,
    /// (r, C/A, (ln C/A)′) at the innermost regular radius examined.
    boundary: (f64, f64, f64),
}

impl Scan<'_> {
    /// Examine `r` (inside the last radius): `Ok(false)` where A, B, C stop being positive
    /// and finite (nothing recorded), else record a sign change between `r` and the last
    /// radius, refined by Brent's method.
    fn step(&mut self, r: f64) -> Result<bool, ShadowError> {
        let Some((value, g)) = potential(self.spacetime, r) else {
            return Ok(false);
        };
        let (r_prev, g_prev) = (self.r_prev, self.g_prev);
        if (g_prev > 0.0 && g <= 0.0) || (g_prev < 0.0 && g >= 0.0) {
            let spacetime = self.spacetime;
            let slope = |x: f64| potential(spacetime, x).map_or(f64::NAN, |p| p.1);
            let root = brent_root(slope, r, r_prev, 0.0).map_err(|e| {
                ShadowError::NotConverged(format!(
                    "photon sphere between r = {r} and {r_prev}: {e}"
                ))
            })?;
            let (ratio_ca, _) = potential(spacetime, root).ok_or_else(|| {
                ShadowError::NotConverged(format!(
                    "metric not regular at the photon sphere r = {root}"
                ))
            })?;
            self.spheres.push(PhotonSphere {
                radius: root,
                impact_parameter: ratio_ca.sqrt(),
                unstable: g_prev > 0.0,
            });
        }
        self.boundary = (r, value, g);
        self.r_prev = r;
        self.g_prev = g;
        self.curvature_prev = f64::NAN;
        Ok(true)
    }

    /// Step straight to `r` (the inner end of a coarse cell) if the cell cannot hold a photon
    /// sphere: A, B, C regular at `r`, and neither (ln C/A)′ nor (ln C/A)″ changes sign over
    /// the cell. A sign change of (ln C/A)′ is a photon sphere; two of them (a close pair)
    /// need an extremum of (ln C/A)′ between them, where (ln C/A)″ changes sign. Returns
    /// whether it stepped.
    fn skip_to(&mut self, r: f64) -> bool {
        if self.curvature_prev.is_nan() {
            match potential_curvature(self.spacetime, self.r_prev) {
                Some((_, _, k)) => self.curvature_prev = k,
                None => return false,
            }
        }
        let Some((value, g, k)) = potential_curvature(self.spacetime, r) else {
            return false;
        };
        let same = |x: f64, y: f64| (x > 0.0 && y > 0.0) || (x < 0.0 && y < 0.0);
        if !(same(g, self.g_prev) && same(k, self.curvature_prev)) {
            return false;
        }
        self.boundary = (r, value, g);
        self.r_prev = r;
        self.g_prev = g;
        self.curvature_prev = k;
        true
    }

    /// Scan the gap between the last radius and an inner boundary `r_s` (a horizon or a
    /// singular surface) on a grid uniform in ln(r − r_s), down to `r_in` (> r_s) or to
    /// where the metric stops being regular. Resolves extrema of C/A arbitrarily close to
    /// r_s, which a grid in ln r misses when they fall in its last cell.
    fn approach(&mut self, r_s: f64, r_in: f64) -> Result<(), ShadowError> {
        let (far, near) = (self.r_prev - r_s, r_in - r_s);
        if !(far > near && near > 0.0) {
            return Ok(());
        }
        let decades = (far / near).log10();
        let steps = ((decades * APPROACH_PER_DECADE).ceil() as usize).max(1);
        for j in 1..=steps {
            let d = if j == steps {
                near
            } else {
                far * (near / far).powf(j as f64 / steps as f64)
            };
            if !self.step(r_s + d)? {
                break;
            }
        }
        Ok(())
    }
}

/// The boundary between regular radii (`valid`) and irregular ones (`invalid < valid`), by
/// bisection to adjacent doubles: (last irregular, first regular).
fn regular_edge(spacetime: &dyn Spacetime, invalid: f64, valid: f64) -> (f64, f64) {
    let (valid, invalid) = bisect_predicate_steps(
        |r| potential(spacetime, r).is_some(),
        valid,
        invalid,
        0.0,
        200,
    );
    (invalid, valid)
}

/// Find every photon sphere (root of (C/A)′ = 0) outside the horizon or inner boundary, and
/// the one that bounds capture.
///
/// (ln C/A)′ = C′/C − A′/A is evaluated exactly (dual numbers, via
/// [`Spacetime::spherical_jet`]) on a logarithmic grid of 8000 radii from 10⁴ inward to just
/// outside the horizon, r_h(1 + 10⁻⁹) (or, without a horizon, to where A, B, C stop being
/// positive and finite, at most to 10⁻⁶). The gap between the last grid radius and the inner
/// boundary r_s (the horizon, or the singular surface located by bisection) is then scanned on
/// a grid uniform in ln(r − r_s), down to r_s + 10⁻¹⁴ r_s, so that a photon sphere right next
/// to a singularity (JNW with ν just above 1/2) or to a horizon is not missed. Every sign
/// change is refined by Brent's method to full double precision. A change from negative
/// (inside) to positive (outside) is a minimum of C/A: an unstable photon sphere. Two extrema
/// closer together than one grid cell (0.3% in r, or 1/40 of a decade in r − r_s near the
/// boundary) are not resolved. Runs of 16 grid cells over which neither (ln C/A)′ nor
/// (ln C/A)″ changes sign are crossed in one step: they hold no photon sphere, and a pair of
/// photon spheres needs an extremum of (ln C/A)′, where (ln C/A)″ changes sign, between them
/// (only a pair with two such extrema inside one run, a few percent in r, would be missed).
/// The other runs are scanned cell by cell, so the photon spheres found are those of the
/// full grid.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::spherical::photon_sphere_analysis;
///
/// let rn = ReissnerNordstrom::new(0.5).unwrap();
/// let found = photon_sphere_analysis(&rn).unwrap();
/// let r = (3.0 + (9.0f64 - 8.0 * 0.25).sqrt()) / 2.0; // (3 + √(9 − 8q²))/2
/// assert!((found.capture.unwrap().radius - r).abs() < 1e-13);
/// ```
// Long: one scan from far to near (the grid, the last cell down to the boundary, the throat case, the choice of the capturing sphere) over the running state of the scan; its parts are already helpers.
pub fn photon_sphere_analysis(
    spacetime: &dyn Spacetime,
) -> Result<PhotonSphereAnalysis, ShadowError> {
    // Declared spherical, with the hook that gives A, B, C (after this, a radius where the
    // jet is missing is one where the metric is not regular).
    spacetime
        .spherical_jet(R_FAR)
        .map_err(|e| not_spherical(spacetime, e))?;
    let horizon = spacetime
        .outer_horizon()
        .filter(|h| h.is_finite() && *h > 0.0);
    let r_stop = match horizon {
        Some(h) => h * (1.0 + HORIZON_MARGIN),
        None => R_NEAR,
    };
    if !(r_stop < R_FAR) {
        return Err(ShadowError::BadRequest(format!(
            "the horizon r = {r_stop} lies beyond the photon-sphere scan (r <= {R_FAR})"
        )));
    }
    let (far_value, far_slope) = potential(spacetime, R_FAR).ok_or_else(|| {
        ShadowError::BadRequest(format!(
            "A, B, C are not positive and finite at r = {R_FAR}"
        ))
    })?;
    if !(far_slope > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "C/A does not grow outward at r = {R_FAR} (C/A = {far_value:e}): not asymptotically flat"
        )));
    }
    let ratio = (r_stop / R_FAR).powf(1.0 / (SCAN_POINTS - 1) as f64);
    let mut scan = Scan {
        spacetime,
        spheres: Vec::new(),
        r_prev: R_FAR,
        g_prev: far_slope,
        curvature_prev: f64::NAN,
        boundary: (R_FAR, far_value, far_slope),
    };
    let mut irregular = None;
    // The geometric grid by repeated multiplication (a power per point costs more than the
    // scan step itself); the grid only brackets, the roots are refined to full precision.
    // Cells of COARSE_CELL grid steps that cannot hold a photon sphere are crossed in one
    // step (Scan::skip_to); the others are scanned point by point, on the same grid.
    let mut r_grid = R_FAR;
    let mut i = 1;
    // A cell that could not be crossed is scanned point by point to its end.
    let mut fine_until = 0;
    while i < SCAN_POINTS {
        if i >= fine_until && i + COARSE_CELL < SCAN_POINTS {
            let mut r_end = r_grid;
            for _ in 0..COARSE_CELL {
                r_end *= ratio;
            }
            if scan.skip_to(r_end) {
                r_grid = r_end;
                i += COARSE_CELL;
                continue;
            }
            fine_until = i + COARSE_CELL;
        }
        r_grid *= ratio;
        let r = if i == SCAN_POINTS - 1 { r_stop } else { r_grid };
        if !scan.step(r)? {
            irregular = Some(r); // inner boundary of a horizonless metric
            break;
        }
        i += 1;
    }
    // The last cell, down to the horizon or the singular surface.
    match (horizon, irregular) {
        (Some(h), _) => scan.approach(h, h * (1.0 + APPROACH_NEAREST))?,
        (None, Some(r_bad)) => {
            let (r_s, first_regular) = regular_edge(spacetime, r_bad, scan.r_prev);
            scan.approach(r_s, first_regular.max(r_s * (1.0 + APPROACH_NEAREST)))?;
        }
        (None, None) => {}
    }
    let reached_floor = horizon.is_none() && irregular.is_none();
    let spheres = scan.spheres;
    let (inner_boundary, boundary_value, boundary_slope) = scan.boundary;
    // A regular throat at r = 0 of a metric even in r (a wormhole such as Simpson–Visser with
    // l > 2): (C/A)′(0) = 0 exactly, so when C/A still falls towards it the throat is the
    // minimum of C/A, and rays that pass it go through to the other side and do not return.
    let mut spheres = spheres;
    if reached_floor && boundary_slope > 0.0 {
        if let Some((throat_value, throat_slope)) = potential(spacetime, 0.0) {
            if throat_slope == 0.0 && throat_value < boundary_value {
                spheres.push(PhotonSphere {
                    radius: 0.0,
                    impact_parameter: throat_value.sqrt(),
                    unstable: true,
                });
            }
        }
    }
    let lowest = spheres
        .iter()
        .filter(|s| s.unstable)
        .min_by(|x, y| x.impact_parameter.total_cmp(&y.impact_parameter))
        .copied();
    let (capture, no_shadow_reason) = match lowest {
        None => (
            None,
            Some(format!(
                "no photon sphere: C/A decreases monotonically from r = {R_FAR} to the inner boundary r = {inner_boundary:e}"
            )),
        ),
        Some(s) if boundary_slope > 0.0 && boundary_value < s.impact_parameter.powi(2) => (
            None,
            Some(format!(
                "photon sphere at r = {} (b = {}), but C/A falls below b^2 towards the inner boundary r = {inner_boundary:e}: rays inside it are turned back, none is captured",
                s.radius, s.impact_parameter
            )),
        ),
        Some(s) => (Some(s), None),
    };
    Ok(PhotonSphereAnalysis {
        spheres,
        capture,
        no_shadow_reason,
        inner_boundary,
    })
}

/// Angular radius α_sh (radians) of the shadow seen by a static observer at `r_o`:
/// sin α_sh = b_c √(A(r_o)/C(r_o)) (Synge 1966; Perlick & Tsupko 2022). `r_o` must lie outside
/// every photon sphere.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::spherical::shadow_angular_radius;
///
/// // Schwarzschild: sin α = 3√3 √(1 − 2/r_o)/r_o (Synge 1966).
/// let alpha = shadow_angular_radius(&Schwarzschild, 10.0).unwrap();
/// assert!((alpha.sin() - 27f64.sqrt() * 0.8f64.sqrt() / 10.0).abs() < 1e-14);
/// ```
pub fn shadow_angular_radius(spacetime: &dyn Spacetime, r_o: f64) -> Result<f64, ShadowError> {
    let analysis = photon_sphere_analysis(spacetime)?;
    let capture = analysis.capture.ok_or_else(|| {
        ShadowError::BadRequest(analysis.no_shadow_reason.clone().unwrap_or_default())
    })?;
    Ok(observer_view(spacetime, &analysis, capture.impact_parameter, r_o)?.0)
}

/// (α_sh, √A(r_o)) for an observer at r_o, after checking r_o.
fn observer_view(
    spacetime: &dyn Spacetime,
    analysis: &PhotonSphereAnalysis,
    b_c: f64,
    r_o: f64,
) -> Result<(f64, f64), ShadowError> {
    let outermost = analysis
        .spheres
        .iter()
        .map(|s| s.radius)
        .fold(0.0, f64::max);
    if !(r_o.is_finite() && r_o > outermost && r_o > analysis.inner_boundary) {
        return Err(ShadowError::BadRequest(format!(
            "observer radius must be finite and outside every photon sphere (r > {outermost}), got {r_o}"
        )));
    }
    let jet = spacetime
        .spherical_jet(r_o)
        .map_err(|e| not_spherical(spacetime, e))?;
    let (a, c) = (jet.a[0], jet.c[0]);
    if !(a.is_finite() && c.is_finite() && a > 0.0 && c > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "A and C must be positive and finite at the observer, r = {r_o}"
        )));
    }
    let sine = b_c * (a / c).sqrt();
    if !(sine <= 1.0 + 1e-12) {
        return Err(ShadowError::NotConverged(format!(
            "sin(alpha_sh) = {sine} > 1 at r = {r_o}: inconsistent photon-sphere minimum"
        )));
    }
    Ok((sine.min(1.0).asin(), a.sqrt()))
}

/// The spherical solver: photon spheres, b_c, the circular curve and the ring exponents.
///
/// Distant observer: a circle of radius b_c about the origin. Finite observer at r_o (outside
/// every photon sphere): a circle of radius √C(r_o) sin α_sh = b_c √A(r_o). No minimum of C/A
/// (or none that captures) gives `ShadowStatus::NoShadow` with the reason and no curve.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::{spherical, Observer, ShadowSettings};
///
/// let result = spherical::solve(&Schwarzschild, &Observer::distant(1.0), &ShadowSettings::default())
///     .unwrap();
/// let curve = result.curve.unwrap();
/// assert!((curve.radii[0] - 27f64.sqrt()).abs() < 1e-14); // b_c = 3√3 (Synge 1966)
/// ```
pub fn solve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    let start = Instant::now();
    super::check_request(observer, settings)?;
    spacetime
        .spherical_jet(R_FAR)
        .map_err(|e| not_spherical(spacetime, e))?;
    if let Some(result) = super::singular_exterior(spacetime, observer, NAME) {
        return Ok(result);
    }
    let analysis = photon_sphere_analysis(spacetime)?;
    let diagnostics = |start: Instant| Diagnostics {
        star_shaped: true,
        wall_seconds: start.elapsed().as_secs_f64(),
        ..Diagnostics::default()
    };
    let Some(capture) = analysis.capture else {
        return Ok(ShadowResult {
            solver: NAME,
            status: ShadowStatus::NoShadow {
                reason: analysis.no_shadow_reason.clone().unwrap_or_default(),
            },
            curve: None,
            photon_orbit_radii: None,
            photon_spheres: analysis.spheres,
            exponents: None,
            orbits: None,
            diagnostics: diagnostics(start),
        });
    };
    let b_c = capture.impact_parameter;
    let screen_radius = match observer.radius {
        None => b_c,
        Some(r_o) => b_c * observer_view(spacetime, &analysis, b_c, r_o)?.1,
    };
    // The curve does not depend on the exponents: an orbit without one (e.g. marginally
    // stable) still casts this shadow, and the exponent is reported as undefined.
    let (exponents, undefined) = match spherical_exponents(spacetime, capture.radius) {
        Ok(e) => (Some(e), None),
        Err(e) => (
            None,
            Some(format!(
                "photon-ring exponents undefined at r = {}: {e}",
                capture.radius
            )),
        ),
    };
    Ok(ShadowResult {
        solver: NAME,
        status: ShadowStatus::Shadow,
        curve: Some(CriticalCurve::circle(
            [0.0, 0.0],
            screen_radius,
            settings.points,
        )),
        photon_orbit_radii: Some([capture.radius, capture.radius]),
        photon_spheres: analysis.spheres,
        // Every point of the circle comes from the photon sphere that bounds capture.
        orbits: Some(filled(
            super::CurveOrbit {
                radius: capture.radius,
                gamma: exponents.as_ref().map(|e| e.gamma_min),
            },
            settings.points,
        )),
        exponents,
        diagnostics: Diagnostics {
            exponents_undefined: undefined,
            ..diagnostics(start)
        },
    })
}

/// The exact spherical solver (this module): photon spheres of C/A (Synge 1966).
#[derive(Debug, Clone, Copy, Default)]
pub struct SphericalSolver;

impl super::ShadowSolver for SphericalSolver {
    fn name(&self) -> &'static str {
        NAME
    }
    fn summary(&self) -> &'static str {
        "exact, for metrics declared spherically symmetric (photon spheres of C/A)"
    }
    fn applies_to(&self, spacetime: &dyn Spacetime) -> Result<(), String> {
        applicability(spacetime)
    }
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        solve(spacetime, observer, settings)
    }
    fn bounds_capture_without_horizon(&self) -> bool {
        true
    }
}
