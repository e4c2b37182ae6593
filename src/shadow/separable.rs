//! The separable solver: spherical photon orbits R = ∂_r R = 0 mapped to the screen
//! (Bardeen 1973, in *Black Holes*, eds. DeWitt & DeWitt, p. 215).
//!
//! For a metric with separation data, null geodesics with λ = L/E and Carter's η obey
//! (dr/dσ)² = R(r; λ, η) and (dθ/dσ)² = Θ(θ; λ, η) in Mino time. The boundary of the shadow is
//! formed by spherical photon orbits, R = ∂_r R = 0, that reach the observer's latitude,
//! Θ(θ_o; λ, η) ≥ 0.
//!
//! **Solving R = R′ = 0 from the potentials alone.** Carter-separable metrics have R quadratic in
//! λ and linear in η. Two jets of R, at (r, 0, 0) and (r, 1, 0), give that quadratic exactly;
//! eliminating η from R = 0 leaves a quadratic in λ for R′ = 0, whose two roots are the two
//! candidate orbits at r. The one with the larger Θ(θ_o) is kept (for Kerr the other root,
//! P − aλ = 0, η = −(λ − a)², has Θ = −(λ − a sin²θ)²/sin²θ < 0 at every latitude). The
//! quadratic structure is verified once per solve against full evaluations of R and ∂_r R at
//! three radii; if it does not hold exactly, every root is polished by Newton's method in
//! (λ, η) with the exact Jacobian from the jet (converging from the model, or failing with
//! `NotConverged`). For Kerr the closed form λ(r) = (Δ′P − 2ΔP′)/(Δ′Q − 2ΔQ′),
//! η(r) = (P − Qλ)²/Δ − (λ − a)² is a check in the tests, not the method.
//!
//! **Admissible radii.** β²(r) = Θ(θ_o; λ(r), η(r)) is scanned on a grid outside the horizon,
//! its maximum refined by golden-section search, and the two roots around it found by Brent's
//! method: these are `photon_orbit_radii` [r_min, r_max].
//!
//! **Screen.** Distant observer: α = −λ/sin θ_o, β = ±√Θ(θ_o) (Bardeen 1973). Finite observer
//! (ZAMO at r_o): the photon p = (−1, p_r, ±√Θ(θ_o), λ) with p_r > 0 from the null condition,
//! mapped to celestial and screen coordinates by [`super::observer`]. The curve is symmetric
//! under β → −β, so only the upper half is solved.
//!
//! **Sampling.** The origin is the midpoint of the two β = 0 points on the α axis. Each polar
//! angle ψ_k = 2πk/N in [0, π] is mapped to one orbit by Brent's method on
//! ψ(s) = atan2(β(s), α(s) − α₀) − ψ_k, in the variable u with s = s̄ − h cos u (so that ψ is
//! smooth at the ends, where β ∝ √(s − s_end) ∝ u), bracketed by a 64-interval table uniform
//! in u, and stopped when the point is placed to 1% of `settings.tolerance`; every point is
//! then checked to lie within `settings.tolerance` of its ray (else `NotConverged`). The
//! lower half follows by β → −β. The curve is star-shaped when ψ(s) is monotonic on the
//! table; otherwise every crossing is reported and the outermost is used as the radius.
//!
//! **Special cases.** (i) If R depends on λ and η only through η + λ² (a = 0: a spherical
//! metric written in separable form) the orbits do not fix λ: a single photon sphere r_c at the
//! minimum of K(r), R(r; 0, K) = 0, and the curve is parametrised by λ at η = K − λ².
//! (ii) Near the axis (sin θ_o < 10⁻², 0.57°) the admissible orbits have λ in a small
//! interval about 0 of width ∝ sin θ_o, and r(λ) crowds about the polar orbit; dividing a λ(r)
//! computed from r by sin θ_o would lose digits like ε/sin θ_o (the tolerance of 1e-8 M was
//! missed from about 1e-6° to 1e-3°). There the curve is parametrised by λ itself: each orbit
//! solves R = ∂_r R = 0 for (r, η) at its λ by Newton's method from the polar orbit (λ = 0),
//! so α = −λ/sin θ_o is exact and β² = Θ(θ_o; λ, η) is accurate to rounding, down to
//! θ_o = 10⁻¹⁰⁰. The centre moves off the axis by O(θ_o) (≈ 2θ_o M for Kerr a = 0.9), which
//! this resolves. Exactly on the axis (θ_o = 0 or π) the curve is the circle of radius
//! √Θ(θ_o; 0, η*) of the polar orbit. For a degenerate metric (i) the curve below
//! sin θ_o = 3e-8 is the photon sphere's circle, exactly.
//! (iii) A metric without a horizon gives `NoShadow`: without capture the photon orbits need not
//! bound a dark region (use the raytracer).
//! (iv) γ (`exponents`, from [`separable_gamma`]) ranges over the orbits of the curve: nine
//! orbits uniform in u, each interior extremum refined by parabolic interpolation; `None` if
//! any evaluation fails.
//! For near-degenerate metrics (Kerr with |a| ≲ 1e-5) the λ(r) parametrisation loses digits
//! like ε/|a|.
//!
//! ```
//! use umbral::metrics::Kerr;
//! use umbral::shadow::{separable, Observer, ShadowSettings};
//!
//! let kerr = Kerr::new(0.0).unwrap();
//! let result = separable::solve(&kerr, &Observer::distant(1.0), &ShadowSettings::default()).unwrap();
//! // Schwarzschild: a circle of radius 3√3 (Synge 1966).
//! let curve = result.curve.unwrap();
//! assert!(curve.radii.iter().all(|r| (r - 27f64.sqrt()).abs() < 1e-10));
//! ```

use super::exponents::separable_gamma;
use super::observer::{zamo_tetrad, Observer, Tetrad};
use super::{
    structure_why, CriticalCurve, CurveOrbit, Diagnostics, RingExponents, ShadowError,
    ShadowResult, ShadowSettings, ShadowStatus, POINT_GAMMA_MAX,
};
use crate::geodesic::null_radial_momentum;
use crate::metric::{PotentialJet, Spacetime};
use crate::numerics::{brent_root, fallible_root as root, golden_max, parabolic_min};
use rayon::prelude::*;
use serde::Serialize;
use std::f64::consts::{PI, TAU};
use std::sync::atomic::Ordering;

/// Screen angles (and curve points) per parallel task of a curve. A point's Brent search
/// takes a few microseconds; a bound's or a scan's curves of 32 to 128 points are then one
/// task each (those runs are parallel over their curves already, and splitting such a curve
/// made the Kerr–Newman bound of docs/performance.md 10 % slower), while a curve of many
/// points runs on every thread.
const ANGLES_PER_TASK: usize = 64;
/// Most angles per parallel task: with fewer, larger tasks (rayon splits a range a few times
/// only, unless work is stolen), uneven costs left one thread idle for ~10 % of a long curve.
const MAX_ANGLES_PER_TASK: usize = 8 * ANGLES_PER_TASK;

/// The solver's name on the command line and in results.
pub const NAME: &str = "separable";

/// Whether the separable solver applies: the metric provides separation data.
pub fn applicability(spacetime: &dyn Spacetime) -> Result<(), String> {
    if spacetime.is_separable() {
        Ok(())
    } else {
        Err("the metric provides no separation data (radial and polar potentials)".into())
    }
}

/// Below this sin θ_o a degenerate (spherically symmetric) metric's curve is the circle of
/// the photon sphere, exactly.
const FACE_ON_SIN: f64 = 3e-8;
/// Below this sin θ_o (0.57°) the curve is parametrised by λ rather than by r (module docs).
const NEAR_AXIS_SIN: f64 = 1e-2;
/// Points of the β²(r) scan outside the horizon.
const SCAN_POINTS: usize = 240;
/// The scan starts this far outside the horizon (times max(r_h, 1)).
const HORIZON_OFFSET: f64 = 1e-6;
/// Points of the rescan of the first cell, uniform in ln(r − r_h) (degenerate metrics).
const NEAR_HORIZON_POINTS: usize = 240;
/// Intervals of the Chebyshev table of ψ(s) that brackets each screen angle.
const TABLE_INTERVALS: usize = 64;
/// Intervals of the first grid on which the ring exponent γ is evaluated.
const GAMMA_NODES: usize = 8;
/// Newton iterations allowed when polishing (λ, η).
const MAX_NEWTON: usize = 40;

/// A spherical photon orbit: its radius and constants of motion per unit energy.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SphericalOrbit {
    /// Radius of the orbit, in M.
    pub r: f64,
    /// λ = L/E.
    pub lambda: f64,
    /// Carter's constant over E².
    pub eta: f64,
}

/// The separable critical curve (see the module docs).
///
/// Errors: `SolverNotApplicable` for a metric without separation data; `BadRequest` for a bad
/// observer or settings, or a finite observer inside the photon region; `NotConverged` when a
/// root or Newton iteration fails. No admissible orbit gives `ShadowStatus::NoShadow`.
pub fn solve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    solve_with(spacetime, observer, settings, true)
}

/// [`solve`] without the ring exponents (`exponents: None`): the curve alone, several times
/// faster, since each γ needs a polar quadrature.
pub fn solve_curve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    solve_with(spacetime, observer, settings, false)
}

fn solve_with(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    with_exponents: bool,
) -> Result<ShadowResult, ShadowError> {
    let start = std::time::Instant::now();
    applicability(spacetime).map_err(|why| ShadowError::SolverNotApplicable {
        solver: NAME,
        metric: spacetime.info().name,
        why,
    })?;
    super::check_request(observer, settings)?;
    if let Some(result) = super::singular_exterior(spacetime, observer, NAME) {
        return Ok(result);
    }
    let problem = Problem::new(spacetime, observer, with_exponents)?;
    let mut result = problem.run(settings)?;
    result.diagnostics.wall_seconds = start.elapsed().as_secs_f64();
    Ok(result)
}

/// The screen map for one observer.
enum Screen {
    /// α = −λ/sin θ_o, β = √Θ(θ_o).
    Distant { sin_o: f64 },
    /// ZAMO at (r_o, θ_o).
    Finite {
        tetrad: Tetrad,
        r_o: f64,
        theta_o: f64,
        sqrt_g_thth: f64,
    },
}

/// How an orbit is parametrised along the curve.
#[derive(Clone, Copy)]
enum Family {
    /// By its radius s = r (the generic case).
    Radius,
    /// A single photon sphere r_c with η + λ² = K, parametrised by s = λ.
    Degenerate { r_c: f64, k: f64 },
    /// Near the axis: by s = λ, each orbit solved for (r, η) by Newton's method from the
    /// polar orbit (r₀, η₀) at λ = 0.
    Lambda { r0: f64, eta0: f64 },
}

/// Θ(θ_o; λ, η) as an exact quadratic in (λ, η) when the metric's polar potential is one.
struct PolarAtObserver {
    theta: f64,
    /// [Θ, ∂_λ, ∂_η, ∂²_λλ, ∂²_λη, ∂²_ηη] at (λ, η) = (0, 0).
    quadratic: Option<[f64; 6]>,
}

struct Problem<'a> {
    spacetime: &'a dyn Spacetime,
    polar: PolarAtObserver,
    screen: Screen,
    /// sin θ_o below [`FACE_ON_SIN`]: a degenerate (spherical) metric's curve is the circle.
    face_on: bool,
    /// sin θ_o below [`NEAR_AXIS_SIN`]: the curve is parametrised by λ (module docs).
    near_axis: bool,
    /// θ_o is 0 or π: the curve is the circle of the polar orbit.
    on_axis: bool,
    /// Set once the radial potential has been verified to be exactly quadratic in (λ, η).
    exact_quadratic: std::sync::atomic::AtomicBool,
    /// Whether to compute the γ range.
    with_exponents: bool,
}

/// R = r0 + r1 λ + r2 λ² + r3 η and ∂_r R = d0 + d1 λ + d2 λ² + d3 η at one radius.
struct RadialModel {
    r: [f64; 4],
    dr: [f64; 4],
}

impl RadialModel {
    fn at(&self, l: f64, e: f64) -> (f64, f64) {
        let f = |c: &[f64; 4]| c[0] + c[1] * l + c[2] * l * l + c[3] * e;
        (f(&self.r), f(&self.dr))
    }
}

/// The orbits whose γ range is reported.
enum GammaSource {
    /// One orbit (the face-on limit).
    Single(SphericalOrbit),
    /// The orbits s ∈ [s_lo, s_hi] of a family.
    Along {
        family: Family,
        s_lo: f64,
        s_hi: f64,
    },
}

/// A sampled upper half-curve.
struct Sampled {
    origin: [f64; 2],
    radii: Vec<f64>,
    star_shaped: bool,
    extra_crossings: Vec<(f64, Vec<f64>)>,
    /// Where γ is evaluated.
    gamma_source: GammaSource,
    /// The orbit parameter s of each curve point's photon orbit (the outer crossing's).
    orbit_s: Vec<f64>,
}

fn not_converged(what: String) -> ShadowError {
    ShadowError::NotConverged(what)
}

fn no_shadow(reason: String) -> ShadowResult {
    ShadowResult {
        solver: NAME,
        status: ShadowStatus::NoShadow { reason },
        curve: None,
        photon_orbit_radii: None,
        photon_spheres: Vec::new(),
        exponents: None,
        orbits: None,
        diagnostics: Diagnostics::default(),
    }
}

impl PolarAtObserver {
    fn new(spacetime: &dyn Spacetime, theta: f64) -> Result<Self, ShadowError> {
        let jet = polar_jet(spacetime, theta, 0.0, 0.0)?;
        let h = jet.hessian;
        let q = [
            jet.value,
            jet.gradient[1],
            jet.gradient[2],
            h[1][1],
            h[1][2],
            h[2][2],
        ];
        let model = |l: f64, e: f64| {
            q[0] + q[1] * l + q[2] * e + 0.5 * q[3] * l * l + q[4] * l * e + 0.5 * q[5] * e * e
        };
        let mut exact = q.iter().all(|x| x.is_finite());
        for (l, e) in [(2.5, 7.0), (-4.0, 13.0), (0.7, -3.0)] {
            let v = polar_jet(spacetime, theta, l, e)?.value;
            exact &= (v - model(l, e)).abs() <= 1e-12 * (1.0 + v.abs());
        }
        Ok(PolarAtObserver {
            theta,
            quadratic: exact.then_some(q),
        })
    }

    fn value(&self, spacetime: &dyn Spacetime, l: f64, e: f64) -> Result<f64, ShadowError> {
        match self.quadratic {
            Some(q) => Ok(q[0]
                + q[1] * l
                + q[2] * e
                + 0.5 * q[3] * l * l
                + q[4] * l * e
                + 0.5 * q[5] * e * e),
            None => Ok(polar_jet(spacetime, self.theta, l, e)?.value),
        }
    }
}

fn polar_jet(
    spacetime: &dyn Spacetime,
    theta: f64,
    l: f64,
    e: f64,
) -> Result<PotentialJet, ShadowError> {
    let jet = spacetime.polar_potential_jet(theta, l, e).map_err(|e| {
        not_applicable(
            spacetime,
            &structure_why(e, "the metric provides no polar potential"),
        )
    })?;
    if !jet.value.is_finite() {
        return Err(ShadowError::BadRequest(format!(
            "the polar potential is not finite at theta = {theta}"
        )));
    }
    Ok(jet)
}

fn not_applicable(spacetime: &dyn Spacetime, why: &str) -> ShadowError {
    ShadowError::SolverNotApplicable {
        solver: "separable",
        metric: spacetime.info().name,
        why: why.into(),
    }
}

/// Real roots of A x² + B x + C = 0 (the stable form), fewest first when A vanishes.
fn quadratic_roots(a: f64, b: f64, c: f64) -> Vec<f64> {
    if a == 0.0 || a.abs() <= 1e-14 * b.abs() {
        return if b != 0.0 { vec![-c / b] } else { Vec::new() };
    }
    let disc = b * b - 4.0 * a * c;
    if disc < 0.0 {
        return Vec::new();
    }
    let q = -0.5 * (b + b.signum() * disc.sqrt());
    if q == 0.0 {
        return vec![0.0];
    }
    vec![q / a, c / q]
}

impl<'a> Problem<'a> {
    fn new(
        spacetime: &'a dyn Spacetime,
        observer: &Observer,
        with_exponents: bool,
    ) -> Result<Self, ShadowError> {
        let theta_o = observer.inclination;
        // On the axis itself the polar potential is evaluated just off it (cot θ finite).
        let theta_p = theta_o.max(1e-100);
        let sin_o = theta_p.sin();
        let face_on = sin_o < FACE_ON_SIN;
        let near_axis = sin_o < NEAR_AXIS_SIN;
        // Exactly on the axis (θ_o = 0 or π as given; sin π rounds to 1.2e-16) the curve is
        // the circle of the polar orbit.
        let on_axis = theta_o == 0.0 || theta_o == PI;
        let screen = match observer.radius {
            None => Screen::Distant { sin_o },
            Some(r_o) => {
                let tetrad = zamo_tetrad(spacetime, r_o, theta_p)?;
                let g = spacetime.components_at(r_o, theta_p);
                Screen::Finite {
                    tetrad,
                    r_o,
                    theta_o: theta_p,
                    sqrt_g_thth: g.g_thth.sqrt(),
                }
            }
        };
        Ok(Problem {
            spacetime,
            polar: PolarAtObserver::new(spacetime, theta_p)?,
            screen,
            face_on,
            near_axis,
            on_axis,
            exact_quadratic: std::sync::atomic::AtomicBool::new(false),
            with_exponents,
        })
    }

    fn radial(&self, r: f64, l: f64, e: f64) -> Result<PotentialJet, ShadowError> {
        let jet = self.spacetime.radial_potential_jet(r, l, e).map_err(|e| {
            not_applicable(
                self.spacetime,
                &structure_why(e, "the metric provides no radial potential"),
            )
        })?;
        let finite = jet.value.is_finite()
            && jet.gradient.iter().all(|x| x.is_finite())
            && jet.hessian.iter().flatten().all(|x| x.is_finite());
        if !finite {
            return Err(ShadowError::BadRequest(format!(
                "the radial potential is not finite at r = {r}"
            )));
        }
        Ok(jet)
    }

    fn beta_squared(&self, l: f64, e: f64) -> Result<f64, ShadowError> {
        self.polar.value(self.spacetime, l, e)
    }

    /// Whether R depends on (λ, η) only through η + λ² (checked at two radii, three points).
    fn is_degenerate(&self, r_lo: f64) -> Result<bool, ShadowError> {
        for r in [r_lo + 1.3, r_lo + 4.1] {
            let base = self.radial(r, 0.0, 20.0)?.value;
            for (l, e) in [(3.0, 11.0), (-2.0, 16.0)] {
                let v = self.radial(r, l, e)?.value;
                if (v - base).abs() > 1e-12 * (base.abs() + r.powi(4)) {
                    return Ok(false);
                }
            }
        }
        Ok(true)
    }

    /// Newton's method in (λ, η) on (R, ∂_r R) = 0 at fixed r, with the exact Jacobian.
    fn polish(&self, r: f64, mut l: f64, mut e: f64) -> Result<(f64, f64), ShadowError> {
        let mut last_step = f64::INFINITY;
        for _ in 0..MAX_NEWTON {
            let j = self.radial(r, l, e)?;
            let (f0, f1) = (j.value, j.gradient[0]);
            let (a11, a12) = (j.gradient[1], j.gradient[2]);
            let (a21, a22) = (j.hessian[0][1], j.hessian[0][2]);
            let det = a11 * a22 - a12 * a21;
            if !(det.abs() > 0.0 && det.is_finite()) {
                return Err(not_converged(format!(
                    "singular Jacobian solving R = R' = 0 at r = {r}"
                )));
            }
            let dl = (f0 * a22 - a12 * f1) / det;
            let de = (a11 * f1 - a21 * f0) / det;
            l -= dl;
            e -= de;
            let step = (dl.abs() / (1.0 + l.abs())).max(de.abs() / (1.0 + e.abs()));
            // Converged, or at the rounding floor (the step stopped shrinking).
            if step <= 1e-14 || (step < 1e-9 && step >= 0.5 * last_step) {
                return Ok((l, e));
            }
            last_step = step;
        }
        Err(not_converged(format!(
            "Newton's method for the spherical photon orbit at r = {r} did not converge"
        )))
    }

    /// The spherical photon orbit at radius r that best reaches the observer, if any.
    /// R and ∂_r R at r as quadratics in λ (linear in η): R = c0 + c1 λ + c2 λ² + d η with the
    /// coefficients (and their r-derivatives) from exact derivatives at (r, 0, 0).
    fn radial_model(&self, r: f64) -> Result<RadialModel, ShadowError> {
        let j = self
            .spacetime
            .radial_potential_lambda_jet(r, 0.0, 0.0)
            .map_err(|e| {
                not_applicable(
                    self.spacetime,
                    &structure_why(e, "the metric provides no radial potential"),
                )
            })?;
        let all = j.value.iter().chain(&j.d_r).chain(&j.eta);
        if !all.into_iter().all(|x| x.is_finite()) {
            return Err(ShadowError::BadRequest(format!(
                "the radial potential is not finite at r = {r}"
            )));
        }
        Ok(RadialModel {
            r: [j.value[0], j.value[1], 0.5 * j.value[2], j.eta[0]],
            dr: [j.d_r[0], j.d_r[1], 0.5 * j.d_r[2], j.eta[1]],
        })
    }

    /// Whether R is exactly quadratic in λ and linear in η with no λη term, tested against
    /// full evaluations at three radii and two points each.
    fn radial_is_quadratic(&self, r_lo: f64) -> Result<bool, ShadowError> {
        for r in [r_lo + 0.7, r_lo + 2.3, r_lo + 5.9] {
            let m = self.radial_model(r)?;
            for (l, e) in [(2.7, 5.3), (-3.1, 17.0)] {
                let j = self.radial(r, l, e)?;
                let (v, dv) = m.at(l, e);
                let scale = r.powi(4) + r * r * (l * l + e.abs()) + 1.0;
                if (v - j.value).abs() > 1e-12 * scale || (dv - j.gradient[0]).abs() > 1e-12 * scale
                {
                    return Ok(false);
                }
            }
        }
        Ok(true)
    }

    /// The spherical photon orbit at radius r that best reaches the observer, if any.
    fn orbit_at_radius(&self, r: f64) -> Result<Option<SphericalOrbit>, ShadowError> {
        let m = self.radial_model(r)?;
        let [c0, c1, c2, d] = m.r;
        let [e0, e1, e2, f] = m.dr;
        if d == 0.0 {
            return Ok(None);
        }
        // R = 0 gives η = −(c0 + c1 λ + c2 λ²)/d; then d·R′ = 0 is a quadratic in λ.
        let roots = quadratic_roots(e2 * d - f * c2, e1 * d - f * c1, e0 * d - f * c0);
        let mut best: Option<(f64, f64, f64)> = None;
        for l in roots {
            let e = -(c0 + c1 * l + c2 * l * l) / d;
            let b2 = self.beta_squared(l, e)?;
            if b2.is_finite() && best.is_none_or(|(_, _, b)| b2 > b) {
                best = Some((l, e, b2));
            }
        }
        match best {
            None => Ok(None),
            // An exact model needs no polish: its root is as accurate as Newton's.
            Some((lambda, eta, _)) if self.exact_quadratic.load(Ordering::Relaxed) => {
                Ok(Some(SphericalOrbit { r, lambda, eta }))
            }
            Some((l, e, _)) => {
                let (lambda, eta) = self.polish(r, l, e)?;
                Ok(Some(SphericalOrbit { r, lambda, eta }))
            }
        }
    }

    /// K(r) with R(r; 0, K) = 0 for a degenerate metric (Newton; R is linear in K).
    fn degenerate_k(&self, r: f64) -> Result<f64, ShadowError> {
        let mut k = 0.0;
        for _ in 0..MAX_NEWTON {
            let j = self.radial(r, 0.0, k)?;
            let step = j.value / j.gradient[2];
            if !step.is_finite() {
                return Err(not_converged(format!("no K(r) at r = {r}")));
            }
            k -= step;
            if step.abs() <= 1e-15 * (1.0 + k.abs()) {
                return Ok(k);
            }
        }
        Ok(k)
    }

    fn orbit(&self, family: Family, s: f64) -> Result<SphericalOrbit, ShadowError> {
        match family {
            Family::Radius => self.orbit_at_radius(s)?.ok_or_else(|| {
                not_converged(format!(
                    "no spherical photon orbit at r = {s} inside the admissible range"
                ))
            }),
            Family::Degenerate { r_c, k } => Ok(SphericalOrbit {
                r: r_c,
                lambda: s,
                eta: k - s * s,
            }),
            Family::Lambda { r0, eta0 } => self.orbit_at_lambda(s, r0, eta0),
        }
    }

    /// A finite observer must lie outside every orbit that forms the curve, so that each
    /// critical photon reaches it moving outwards (p_r > 0).
    fn require_observer_outside(&self, r_max: f64) -> Result<(), ShadowError> {
        match self.screen {
            Screen::Finite { r_o, .. } if r_o <= r_max => Err(ShadowError::BadRequest(format!(
                "the observer at r = {r_o} is inside the photon region (its outer edge is at r = {r_max})"
            ))),
            _ => Ok(()),
        }
    }

    /// The upper-half screen point (α, β ≥ 0) of an orbit.
    fn screen_point(&self, o: &SphericalOrbit) -> Result<(f64, f64), ShadowError> {
        let b2 = self.beta_squared(o.lambda, o.eta)?.max(0.0);
        match &self.screen {
            Screen::Distant { sin_o } => Ok((-o.lambda / sin_o, b2.sqrt())),
            Screen::Finite {
                tetrad,
                r_o,
                theta_o,
                sqrt_g_thth,
            } => {
                let p_theta = b2.sqrt();
                let p_r = null_radial_momentum(
                    self.spacetime,
                    *r_o,
                    *theta_o,
                    -1.0,
                    p_theta,
                    o.lambda,
                    1.0,
                )
                .ok_or_else(|| {
                    ShadowError::BadRequest(format!(
                        "the observer at r = {r_o} is inside the photon region: the orbit at r = {} does not reach it",
                        o.r
                    ))
                })?;
                let (theta_c, psi_c) = tetrad.celestial(&[-1.0, p_r, p_theta, o.lambda])?;
                if theta_c > 0.5 * PI {
                    return Err(ShadowError::BadRequest(format!(
                        "the shadow covers more than a hemisphere of the sky at r = {r_o}: it cannot be drawn on the screen"
                    )));
                }
                let rho = sqrt_g_thth * theta_c.sin();
                Ok((rho * psi_c.cos(), rho * psi_c.sin()))
            }
        }
    }

    /// Scan radii from just outside the outer horizon r_h to max(12, 4 r_h).
    fn scan_grid(r_h: f64) -> (f64, Vec<f64>) {
        let r_lo = r_h + HORIZON_OFFSET * r_h.max(1.0);
        let r_hi = (4.0 * r_lo).max(12.0);
        let grid = (0..SCAN_POINTS)
            .map(|i| r_lo + (r_hi - r_lo) * i as f64 / (SCAN_POINTS - 1) as f64)
            .collect();
        (r_lo, grid)
    }

    // Long: the solver's sequence (horizon, degenerate case, β² peak, photon-region ends, sampling) over the closures β²(r) and the grid; each step needs the results before it.
    fn run(&self, settings: &ShadowSettings) -> Result<ShadowResult, ShadowError> {
        let horizon = self
            .spacetime
            .outer_horizon()
            .filter(|r| r.is_finite() && *r > 0.0);
        let Some(r_h) = horizon else {
            return Ok(no_shadow(
                "the metric has no horizon: the separable solver bounds the shadow by photon orbits outside an outer horizon (use the raytracer)"
                    .into(),
            ));
        };
        let (r_lo, grid) = Self::scan_grid(r_h);
        let exact = self.radial_is_quadratic(r_lo)?;
        self.exact_quadratic.store(exact, Ordering::Relaxed);
        if self.is_degenerate(r_lo)? {
            return self.run_degenerate(&grid, r_h, settings);
        }
        // β²(r), with −∞ where no spherical orbit exists.
        let beta2_at = |r: f64| -> Result<f64, ShadowError> {
            match self.orbit_at_radius(r)? {
                Some(o) => self.beta_squared(o.lambda, o.eta),
                None => Ok(f64::NEG_INFINITY),
            }
        };
        if self.near_axis {
            return self.run_near_axis(&grid, settings);
        }
        let mut values = Vec::with_capacity(grid.len());
        for &r in &grid {
            values.push(beta2_at(r)?);
        }
        let i_max = (0..grid.len())
            .max_by(|&i, &j| values[i].total_cmp(&values[j]))
            .unwrap_or(0);
        // Refine the maximum (narrow ranges at small inclination fall between grid points).
        let (lo, hi) = (
            grid[i_max.saturating_sub(1)],
            grid[(i_max + 1).min(grid.len() - 1)],
        );
        let (r_peak, peak) = golden_max(&beta2_at, lo, hi)?;
        let (r_peak, peak) = if peak >= values[i_max] {
            (r_peak, peak)
        } else {
            (grid[i_max], values[i_max])
        };
        if peak.is_nan() || peak <= 0.0 {
            return Ok(no_shadow(format!(
                "no spherical photon orbit reaches the observer's latitude (max Theta(theta_o) = {peak:e})"
            )));
        }
        let runs = values
            .windows(2)
            .filter(|w| w[0] <= 0.0 && w[1] > 0.0)
            .count()
            + usize::from(values[0] > 0.0);
        if runs > 1 {
            return Err(not_converged(
                "several disjoint ranges of admissible photon orbits: not supported by the separable solver"
                    .into(),
            ));
        }
        let left = (0..i_max)
            .rev()
            .find(|&i| values[i] < 0.0 && grid[i] < r_peak);
        let right = (i_max..grid.len()).find(|&i| values[i] < 0.0 && grid[i] > r_peak);
        let (Some(left), Some(right)) = (left, right) else {
            // Not a physical "no shadow": at extremal spin the prograde photon orbits reach
            // the horizon and the curve gains a straight segment this solver does not follow.
            return Err(not_converged(format!(
                "the admissible photon orbits reach the edge of the scanned range [{}, {}] \
                 (e.g. at extremal spin, where they touch the horizon): not supported by the \
                 separable solver; use the ray-tracing solver (raytrace) or a spin just below extremal",
                grid[0],
                grid[grid.len() - 1]
            )));
        };
        let r_min = root(
            &beta2_at,
            grid[left],
            r_peak,
            "the inner end of the photon region",
        )?;
        let r_max = root(
            &beta2_at,
            r_peak,
            grid[right],
            "the outer end of the photon region",
        )?;
        self.require_observer_outside(r_max)?;
        let sampled = self.sample(Family::Radius, r_min, r_max, settings)?;
        self.finish(sampled, [r_min, r_max])
    }

    // Long: the degenerate solver's sequence (K minimum, rescan of the first cell, λ range, sampling) over the `minimum` closure and the grid; each step needs the results before it.
    fn run_degenerate(
        &self,
        grid: &[f64],
        r_h: f64,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        // The photon sphere is the minimum of K(r) = η + λ² over r (Synge 1966).
        let minimum = |grid: &[f64]| -> Result<Option<usize>, ShadowError> {
            let mut ks = Vec::with_capacity(grid.len());
            for &r in grid {
                ks.push(self.degenerate_k(r)?);
            }
            Ok((0..grid.len())
                .filter(|&i| ks[i] > 0.0)
                .min_by(|&i, &j| ks[i].total_cmp(&ks[j])))
        };
        let mut i_min = minimum(grid)?;
        let fine;
        let mut grid = grid;
        if i_min == Some(0) {
            // The minimum lies in the first cell, next to the horizon (e.g. Kerr–Sen with b
            // near 1, whose photon sphere approaches the horizon like √(1 − b)): rescan that
            // cell on a grid uniform in ln(r − r_h), from 1e-12 of the radius.
            let (near, far) = (1e-12 * r_h.max(1.0), grid[1] - r_h);
            fine = (0..=NEAR_HORIZON_POINTS)
                .map(|j| r_h + near * (far / near).powf(j as f64 / NEAR_HORIZON_POINTS as f64))
                .collect::<Vec<f64>>();
            grid = &fine;
            i_min = minimum(grid)?;
        }
        let Some(i_min) = i_min.filter(|&i| i > 0 && i + 1 < grid.len()) else {
            return Ok(no_shadow(
                "K(r) = eta + lambda^2 has no minimum outside the horizon: no photon sphere".into(),
            ));
        };
        let slope = |r: f64| -> Result<f64, ShadowError> {
            let k = self.degenerate_k(r)?;
            Ok(self.radial(r, 0.0, k)?.gradient[0])
        };
        let r_c = root(
            &slope,
            grid[i_min - 1],
            grid[i_min + 1],
            "the photon sphere",
        )?;
        let k = self.degenerate_k(r_c)?;
        self.require_observer_outside(r_c)?;
        if self.face_on {
            let orbit = SphericalOrbit {
                r: r_c,
                lambda: 0.0,
                eta: k,
            };
            return self.face_on_circle(orbit, [r_c, r_c], settings);
        }
        // λ range where Θ(θ_o; λ, K − λ²) ≥ 0, about λ = 0.
        let b2 = |l: f64| self.beta_squared(l, k - l * l);
        let centre = b2(0.0)?;
        if centre.is_nan() || centre <= 0.0 {
            return Ok(no_shadow(
                "no photon on the photon sphere reaches the observer".into(),
            ));
        }
        let mut ends = [0.0; 2];
        for (end, sign) in ends.iter_mut().zip([-1.0, 1.0]) {
            let mut step = 1e-3 * k.abs().sqrt().max(1.0);
            let mut inner = 0.0;
            let mut outer = sign * step;
            while b2(outer)? > 0.0 {
                inner = outer;
                step *= 2.0;
                outer = sign * step;
                if step > 1e8 {
                    return Err(not_converged(
                        "unbounded range of lambda on the photon sphere".into(),
                    ));
                }
            }
            *end = root(&b2, inner, outer, "the end of the lambda range")?;
        }
        let sampled = self.sample(Family::Degenerate { r_c, k }, ends[0], ends[1], settings)?;
        self.finish(sampled, [r_c, r_c])
    }

    /// Near the axis (sin θ_o < 10⁻², including θ_o = 0 and π): the curve parametrised by λ.
    ///
    /// The polar orbit r₀ (λ = 0) is a root of the constant term d·e0 − f·c0 of the quadratic
    /// of [`Self::orbit_at_radius`] (a smooth function of r, free of the choice between its two
    /// roots). The admissible λ form a small interval about 0 (of width ∝ sin θ_o), found by
    /// stepping outwards in λ until β² = Θ(θ_o; λ, η(λ)) < 0 and refined by Brent's method;
    /// each orbit solves R = ∂_r R = 0 for (r, η) at its λ. So α = −λ/sin θ_o carries no
    /// rounding from λ, where the radius parametrisation loses digits like ε/sin θ_o.
    fn run_near_axis(
        &self,
        grid: &[f64],
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        let constant_term = |r: f64| -> Result<f64, ShadowError> {
            let m = self.radial_model(r)?;
            Ok(m.dr[0] * m.r[3] - m.dr[3] * m.r[0])
        };
        let mut values = Vec::with_capacity(grid.len());
        for &r in grid {
            values.push(constant_term(r)?);
        }
        let mut candidates = Vec::new();
        for i in 0..grid.len() - 1 {
            if values[i] * values[i + 1] <= 0.0 {
                let r = root(
                    &constant_term,
                    grid[i],
                    grid[i + 1],
                    "the polar photon orbit",
                )?;
                let orbit = self.polar_orbit(r)?;
                let polar = self.beta_squared(0.0, orbit.eta)?;
                if polar > 0.0 {
                    candidates.push(orbit);
                }
            }
        }
        let polar =
            match candidates.as_slice() {
                [] => return Ok(no_shadow(
                    "no spherical photon orbit with lambda = 0 reaches the observer near the axis"
                        .into(),
                )),
                [orbit] => *orbit,
                _ => {
                    return Err(not_converged(
                        "several polar photon orbits: not supported by the separable solver".into(),
                    ))
                }
            };
        if self.on_axis {
            self.require_observer_outside(polar.r)?;
            return self.face_on_circle(polar, [polar.r, polar.r], settings);
        }
        let family = Family::Lambda {
            r0: polar.r,
            eta0: polar.eta,
        };
        let b2 = |l: f64| -> Result<f64, ShadowError> {
            let o = self.orbit(family, l)?;
            self.beta_squared(o.lambda, o.eta)
        };
        let centre = b2(0.0)?;
        // α = −λ/sin θ_o is of the size of the curve: start well inside it.
        let sin_o = self.polar.theta.sin();
        let first_step = 1e-3 * centre.sqrt() * sin_o;
        let mut ends = [0.0; 2];
        for (end, sign) in ends.iter_mut().zip([-1.0, 1.0]) {
            let (mut inner, mut step) = (0.0, first_step);
            while b2(sign * step)? > 0.0 {
                inner = sign * step;
                step *= 2.0;
                if step > 1e3 * (centre.sqrt() + 1.0) {
                    return Err(not_converged(
                        "unbounded range of lambda near the axis".into(),
                    ));
                }
            }
            *end = root(&b2, inner, sign * step, "the end of the lambda range")?;
        }
        let (lo, hi) = (self.orbit(family, ends[0])?, self.orbit(family, ends[1])?);
        let radii = [lo.r.min(hi.r).min(polar.r), lo.r.max(hi.r).max(polar.r)];
        self.require_observer_outside(radii[1])?;
        let sampled = self.sample(family, ends[0], ends[1], settings)?;
        self.finish(sampled, radii)
    }

    /// The λ = 0 spherical orbit near r: see [`Self::orbit_at_lambda`].
    fn polar_orbit(&self, r0: f64) -> Result<SphericalOrbit, ShadowError> {
        let m = self.radial_model(r0)?;
        self.orbit_at_lambda(0.0, r0, -m.r[0] / m.r[3])
    }

    /// The spherical orbit with this λ near (r₀, η₀): Newton's method in (r, η) on
    /// R = ∂_r R = 0 with the exact Jacobian from the radial potential's jet.
    fn orbit_at_lambda(
        &self,
        lambda: f64,
        r0: f64,
        eta0: f64,
    ) -> Result<SphericalOrbit, ShadowError> {
        let (mut r, mut eta) = (r0, eta0);
        let mut last_step = f64::INFINITY;
        for _ in 0..MAX_NEWTON {
            let j = self.radial(r, lambda, eta)?;
            let (f0, f1) = (j.value, j.gradient[0]);
            let (a11, a12) = (j.gradient[0], j.gradient[2]);
            let (a21, a22) = (j.hessian[0][0], j.hessian[0][2]);
            let det = a11 * a22 - a12 * a21;
            if det == 0.0 || !det.is_finite() {
                return Err(not_converged(format!(
                    "singular Jacobian for the spherical photon orbit with lambda = {lambda} near r = {r}"
                )));
            }
            let dr = (f0 * a22 - a12 * f1) / det;
            let de = (a11 * f1 - a21 * f0) / det;
            r -= dr;
            eta -= de;
            let step = (dr.abs() / r).max(de.abs() / (1.0 + eta.abs()));
            // Converged, or at the rounding floor (the step stopped shrinking).
            let done = step <= 1e-15 || (step < 1e-9 && step >= 0.5 * last_step);
            last_step = step;
            if done {
                return Ok(SphericalOrbit { r, lambda, eta });
            }
        }
        Err(not_converged(format!(
            "Newton's method for the spherical photon orbit with lambda = {lambda} near r = {r0} did not converge"
        )))
    }

    fn face_on_circle(
        &self,
        orbit: SphericalOrbit,
        radii: [f64; 2],
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        let polar = self.beta_squared(0.0, orbit.eta)?;
        if polar.is_nan() || polar <= 0.0 {
            return Ok(no_shadow(
                "the polar photon orbit does not reach the observer".into(),
            ));
        }
        let (_, rho) = self.screen_point(&orbit)?;
        let points = settings.points;
        let sampled = Sampled {
            origin: [0.0, 0.0],
            radii: vec![rho; points],
            star_shaped: true,
            extra_crossings: Vec::new(),
            gamma_source: GammaSource::Single(orbit),
            orbit_s: Vec::new(),
        };
        self.finish(sampled, radii)
    }

    /// Sample the curve uniformly in screen polar angle (module docs).
    // Long: the table of curve points and the Brent search of each screen angle share the closures s(u) and ψ(point), the table and the memo of orbits; splitting would pass them all around.
    fn sample(
        &self,
        family: Family,
        s_lo: f64,
        s_hi: f64,
        settings: &ShadowSettings,
    ) -> Result<Sampled, ShadowError> {
        let n = settings.points;
        let (mid, half) = (0.5 * (s_lo + s_hi), 0.5 * (s_hi - s_lo));
        // s = mid − half cos u: near the ends β ∝ √(s − s_end) ∝ u, so ψ(u) is smooth there.
        let s_of = |u: f64| match u {
            u if u <= 0.0 => s_lo,
            u if u >= PI => s_hi,
            u => mid - half * u.cos(),
        };
        let angle = |j: usize| PI * j as f64 / TABLE_INTERVALS as f64;
        // The table's orbits, then the screen angles, in parallel; results in order, and the
        // first failure in that order is the one reported, at any thread count. The table is
        // split only for a curve whose angles are (the rest costs more than the table then).
        let table_task = if n / 2 + 1 > ANGLES_PER_TASK {
            1
        } else {
            TABLE_INTERVALS + 1
        };
        let table: Vec<Result<(f64, f64), ShadowError>> = (0..TABLE_INTERVALS + 1)
            .into_par_iter()
            .with_min_len(table_task)
            .map(|j| {
                let s = s_of(angle(j));
                let o = self.orbit(family, s)?;
                let (x, mut y) = self.screen_point(&o)?;
                if j == 0 || j == TABLE_INTERVALS {
                    y = 0.0; // the ends lie on the α axis (Θ = 0 there up to rounding)
                }
                if !(x.is_finite() && y.is_finite()) {
                    return Err(not_converged(format!("non-finite screen point at s = {s}")));
                }
                Ok((x, y))
            })
            .collect();
        let points: Vec<(f64, f64)> = table.into_iter().collect::<Result<_, _>>()?;
        let x0 = 0.5 * (points[0].0 + points[TABLE_INTERVALS].0);
        let psi_of = |(x, y): (f64, f64)| y.atan2(x - x0);
        let psis: Vec<f64> = points.iter().map(|&p| psi_of(p)).collect();
        let increasing = psis.windows(2).all(|w| w[1] > w[0]);
        let decreasing = psis.windows(2).all(|w| w[1] < w[0]);
        let star_shaped = increasing || decreasing;
        let radius_of = |(x, y): (f64, f64)| (x - x0).hypot(y);

        // Every crossing of the ray at screen angle `target` with the sampled curve: (radius,
        // orbit parameter s).
        let crossings_at = |target: f64| -> Result<Vec<(f64, f64)>, ShadowError> {
            let mut crossings = Vec::new();
            for (j, &psi) in psis.iter().enumerate() {
                if psi == target {
                    crossings.push((radius_of(points[j]), s_of(angle(j))));
                }
            }
            for j in 0..TABLE_INTERVALS {
                let (p0, p1) = (psis[j] - target, psis[j + 1] - target);
                if p0 * p1 >= 0.0 {
                    continue;
                }
                let mut failure = None;
                // Remember the last few points, starting with the table nodes (known, so not
                // solved again), so that the point at the root is recovered afterwards.
                let mut memo = [
                    (s_of(angle(j)), points[j]),
                    (s_of(angle(j + 1)), points[j + 1]),
                    (f64::NAN, (0.0, 0.0)),
                    (f64::NAN, (0.0, 0.0)),
                ];
                let mut slot = 2;
                let mut psi_minus_target = |s: f64| {
                    if let Some((_, p)) = memo.iter().find(|(m, _)| *m == s) {
                        return psi_of(*p) - target;
                    }
                    match self.orbit(family, s).and_then(|o| self.screen_point(&o)) {
                        Ok(p) => {
                            memo[slot % memo.len()] = (s, p);
                            slot += 1;
                            psi_of(p) - target
                        }
                        Err(e) => {
                            failure.get_or_insert(e);
                            0.0
                        }
                    }
                };
                // Stop when the point is placed to 1% of the tolerance along the curve.
                let chord = (points[j + 1].0 - points[j].0).hypot(points[j + 1].1 - points[j].1);
                let xtol = 0.01 * settings.tolerance * (angle(j + 1) - angle(j)) / chord;
                let u = brent_root(|u| psi_minus_target(s_of(u)), angle(j), angle(j + 1), xtol)
                    .map_err(|e| not_converged(format!("screen angle {target}: {e}")))?;
                let s = s_of(u);
                if let Some(e) = failure {
                    return Err(e);
                }
                let p = match memo.iter().find(|(m, _)| *m == s) {
                    Some((_, p)) => *p,
                    None => self.screen_point(&self.orbit(family, s)?)?,
                };
                let r = radius_of(p);
                let miss = (psi_of(p) - target).abs() * r;
                if miss.is_nan() || miss > settings.tolerance {
                    return Err(not_converged(format!(
                        "the curve point at screen angle {target} is off by {miss:e} M (tolerance {})",
                        settings.tolerance
                    )));
                }
                crossings.push((r, s));
            }
            Ok(crossings)
        };
        // Per angle: the outermost crossing (radius, s), and every crossing's radius where
        // there are several (reduced in the parallel loop: the sequential one only copies).
        type AtAngle = ((f64, f64), Option<Vec<f64>>);
        let per_angle: Vec<Result<AtAngle, ShadowError>> = (0..n / 2 + 1)
            .into_par_iter()
            .with_min_len(ANGLES_PER_TASK)
            .with_max_len(MAX_ANGLES_PER_TASK)
            .map(|k| {
                let target = TAU * k as f64 / n as f64;
                let crossings = crossings_at(target)?;
                let Some(outer) = crossings
                    .iter()
                    .copied()
                    .reduce(|a, b| if b.0 > a.0 { b } else { a })
                else {
                    return Err(not_converged(format!(
                        "no curve point at screen angle {target}: the origin lies outside the curve"
                    )));
                };
                let several =
                    (crossings.len() > 1).then(|| crossings.iter().map(|c| c.0).collect());
                Ok((outer, several))
            })
            .collect();
        let mut radii = vec![0.0; n];
        let mut orbit_s = vec![f64::NAN; n];
        let mut extra_crossings = Vec::new();
        for (k, at_angle) in per_angle.into_iter().enumerate() {
            let ((outer, outer_s), several) = at_angle?;
            radii[k] = outer;
            orbit_s[k] = outer_s;
            if let Some(all) = several {
                extra_crossings.push((TAU * k as f64 / n as f64, all));
            }
        }
        for k in n / 2 + 1..n {
            radii[k] = radii[n - k];
            orbit_s[k] = orbit_s[n - k];
        }
        Ok(Sampled {
            origin: [x0, 0.0],
            radii,
            star_shaped: star_shaped && extra_crossings.is_empty(),
            extra_crossings,
            gamma_source: GammaSource::Along { family, s_lo, s_hi },
            orbit_s,
        })
    }

    /// Min and max of γ over the orbits: γ on `GAMMA_NODES` + 1 orbits uniform in u
    /// (s = s̄ − h cos u), then each interior extremum refined by safeguarded parabolic
    /// interpolation in u (to 1e-7 in u; at an extremum γ is then off by O(1e-14)).
    fn gamma_range(&self, source: &GammaSource) -> Result<(f64, f64), ShadowError> {
        let (family, s_lo, s_hi) = match *source {
            GammaSource::Single(o) => {
                let g = separable_gamma(self.spacetime, o.r, o.lambda, o.eta)?;
                return Ok((g, g));
            }
            GammaSource::Along { family, s_lo, s_hi } => (family, s_lo, s_hi),
        };
        let (mid, half) = (0.5 * (s_lo + s_hi), 0.5 * (s_hi - s_lo));
        let gamma = |u: f64| -> Result<f64, ShadowError> {
            let s = match u {
                u if u <= 0.0 => s_lo,
                u if u >= PI => s_hi,
                u => mid - half * u.cos(),
            };
            let o = self.orbit(family, s)?;
            separable_gamma(self.spacetime, o.r, o.lambda, o.eta)
        };
        let nodes: Vec<f64> = (0..=GAMMA_NODES)
            .map(|j| PI * j as f64 / GAMMA_NODES as f64)
            .collect();
        // The nodes in parallel (the first failure in node order is the one reported), then
        // the minimum and the maximum refined at once.
        let values: Vec<Result<f64, ShadowError>> = nodes.par_iter().map(|&u| gamma(u)).collect();
        let values: Vec<f64> = values.into_iter().collect::<Result<_, _>>()?;
        let extremum = |sign: f64| -> Result<f64, ShadowError> {
            // Minimise sign·γ.
            let i = (0..nodes.len())
                .min_by(|&i, &j| (sign * values[i]).total_cmp(&(sign * values[j])))
                .unwrap_or(0);
            if i == 0 || i == GAMMA_NODES {
                return Ok(values[i]);
            }
            let f = |u: f64| gamma(u).map(|g| sign * g);
            let bracket = [
                (nodes[i - 1], sign * values[i - 1]),
                (nodes[i], sign * values[i]),
                (nodes[i + 1], sign * values[i + 1]),
            ];
            Ok(sign * parabolic_min(&f, bracket)?)
        };
        let (min, max) = rayon::join(|| extremum(1.0), || extremum(-1.0));
        Ok((min?, max?))
    }

    /// Each curve point's photon orbit: its radius, and its γ when the exponents are wanted
    /// and the curve has at most [`POINT_GAMMA_MAX`] points (beyond, only γ's range). `None`
    /// if any orbit cannot be re-solved (the curve itself stands).
    fn point_orbits(&self, sampled: &Sampled, with_gamma: bool) -> Option<Vec<CurveOrbit>> {
        let n = sampled.radii.len();
        let with_gamma = with_gamma && n <= POINT_GAMMA_MAX;
        let orbit_at = |s: f64| -> Result<SphericalOrbit, ShadowError> {
            match sampled.gamma_source {
                GammaSource::Single(o) => Ok(o),
                GammaSource::Along { family, .. } => self.orbit(family, s),
            }
        };
        (0..n)
            .into_par_iter()
            .with_min_len(ANGLES_PER_TASK)
            .with_max_len(MAX_ANGLES_PER_TASK)
            .map(|k| {
                let s = sampled.orbit_s.get(k).copied().unwrap_or(f64::NAN);
                let o = orbit_at(s).ok()?;
                let gamma = if with_gamma {
                    separable_gamma(self.spacetime, o.r, o.lambda, o.eta).ok()
                } else {
                    None
                };
                Some(CurveOrbit { radius: o.r, gamma })
            })
            .collect()
    }

    fn finish(&self, sampled: Sampled, radii: [f64; 2]) -> Result<ShadowResult, ShadowError> {
        // γ's range and the points' orbits at once. The curve does not depend on γ: the range
        // is `None`, with the reason, if any evaluation fails, and each point's γ is kept only
        // if the range is defined.
        let (gamma_range, mut orbits) = rayon::join(
            || {
                self.with_exponents
                    .then(|| self.gamma_range(&sampled.gamma_source))
            },
            || self.point_orbits(&sampled, self.with_exponents),
        );
        let (range, undefined) = match gamma_range {
            None => (None, None),
            Some(Ok(r)) => (Some(r), None),
            Some(Err(e)) => (None, Some(format!("photon-ring exponent undefined: {e}"))),
        };
        if range.is_none() {
            for o in orbits.iter_mut().flatten() {
                o.gamma = None;
            }
        }
        let exponents = range.map(|(lo, hi)| RingExponents {
            lyapunov: None,
            gamma_min: lo,
            gamma_max: hi,
        });
        Ok(ShadowResult {
            solver: NAME,
            status: ShadowStatus::Shadow,
            curve: Some(CriticalCurve {
                origin: sampled.origin,
                radii: sampled.radii,
            }),
            photon_orbit_radii: Some(radii),
            photon_spheres: Vec::new(),
            exponents,
            orbits,
            diagnostics: Diagnostics {
                star_shaped: sampled.star_shaped,
                extra_crossings: sampled.extra_crossings,
                exponents_undefined: undefined,
                ..Diagnostics::default()
            },
        })
    }
}

/// The separable solver (this module): spherical photon orbits mapped to the screen
/// (Bardeen 1973).
#[derive(Debug, Clone, Copy, Default)]
pub struct SeparableSolver;

impl super::ShadowSolver for SeparableSolver {
    fn name(&self) -> &'static str {
        NAME
    }
    fn summary(&self) -> &'static str {
        "exact up to root finding, for metrics with separation data (spherical photon orbits)"
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
    fn solve_curve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        solve_curve(spacetime, observer, settings)
    }
}
