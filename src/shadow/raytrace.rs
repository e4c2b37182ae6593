//! Critical curves of any metric by backward ray tracing.
//!
//! # Method
//!
//! A screen point is classified by following its photon backwards in affine parameter
//! (Hamilton's equations with the exact dual-number gradient, adaptive Dormand–Prince 5(4),
//! [`crate::geodesic`]): it is **captured** if it comes within r ≤ r₊(1 + `capture_margin`) of
//! the outer horizon (for a horizonless metric: r ≤ `horizonless_capture_radius`), it
//! **escapes** if it moves outward beyond the escape radius (the start radius D for a distant
//! observer, max(r_o, D) for a finite one), and it **fails** on step-size underflow, a
//! non-finite state or the step limit. A failure is never counted as capture or escape.
//!
//! The boundary along each radial screen line ψ_k = 2πk/N about the origin is bracketed by a
//! coarse scan (every transition between captured and escaping samples is kept) and refined
//! by bisection to `settings.tolerance`. The scan and the first bisection stage use a loose
//! relative tolerance (`coarse_rtol`, whose classification noise is ~1e-6 M) down to a bracket
//! of `coarse_width`; that bracket, widened by `coarse_width` on both sides, is confirmed with
//! the strict tolerance (else the scan bracket is, else the line fails) before the strict
//! bisection. Outgoing rays beyond `relaxed_radius` are followed with a loose tolerance until
//! they escape or turn inward again. Strict rays (rtol 1e-10) place the boundary to ~1e-9 M. The origin is the midpoint of the boundary along the
//! α axis (ψ = 0, π from the screen centre) and, unless the curve is symmetric under β → −β,
//! the midpoint of the boundary along the vertical line through it. The β mirror symmetry is
//! used when it is exact: for an equatorially symmetric metric seen edge-on, and for a
//! separable metric at any inclination (capture then depends on λ and η only, and η on β²;
//! Carter 1968). Angles run in parallel; every angle is computed on its own, so the result
//! does not depend on the number of threads.
//!
//! # Distant observer: start data with an asymptotic correction
//!
//! Screen point (α, β) at inclination θ_o (Bardeen 1973): E = −p_t = 1 and p_φ = −α sin θ_o
//! exactly. In flat space the photon runs along x(s) = d + s n, with n the direction to the
//! observer, d = α e_φ − β e_θ (unit vectors at the observer's direction), Cartesian momentum
//! p = n and angular momentum L = d × n. Starting on that line at finite radius D leaves an
//! error of order M b/D in the screen position (the bending between D and infinity). It is
//! removed to first order: p and L are conserved by the flat Hamiltonian H₀, so along the ray
//! dF/dτ = {F, H − H₀} is first order in the deviation from flatness, and its integral from D
//! to infinity, taken along the straight line, is the first-order change of F (first-order
//! perturbation theory of Hamiltonian flows; e.g. Goldstein, *Classical Mechanics*, 3rd ed.,
//! ch. 12). The rate dF/dτ is evaluated exactly from the full Hamilton equations by a
//! dual-number directional derivative of F, and the integral by Gauss–Legendre quadrature in
//! u = s_D/s ∈ (0, 1] (the integrand is smooth in u because it falls off like 1/s²). The ray
//! then starts at radius D on the straight line with the corrected p and L, and p_r is fixed by
//! H = 0 in the full metric. The residual error is second order, ~ M² b/D²; the test
//! `tests/shadow_raytrace.rs` shows the convergence in D.
//!
//! # Finite observer
//!
//! The ray leaves the zero-angular-momentum observer at (r_o, θ_o) from the celestial direction
//! of the screen point, via [`super::observer::celestial_from_screen`] and
//! [`super::observer::momentum_from_celestial`]; the screen is
//! √g_θθ(r_o, θ_o) sin Θ (cos Ψ, sin Ψ).
//!
//! ```
//! use umbral::metrics::Schwarzschild;
//! use umbral::shadow::{raytrace, Observer, ShadowSettings};
//!
//! let settings = ShadowSettings { points: 4, tolerance: 1e-6, ..Default::default() };
//! let result = raytrace::solve(&Schwarzschild, &Observer::distant(1.0), &settings).unwrap();
//! let curve = result.curve.unwrap();
//! // The Schwarzschild critical impact parameter 3√3 (Synge 1966).
//! for r in &curve.radii {
//!     assert!((r - 27f64.sqrt()).abs() < 1e-5);
//! }
//! ```

use super::observer::{celestial_from_screen, momentum_from_celestial};
use super::{
    CriticalCurve, Diagnostics, Observer, ShadowError, ShadowResult, ShadowSettings, ShadowStatus,
    SolverKind,
};
use crate::geodesic::{
    hamilton_rhs, integrate_with_norm, null_radial_momentum, Control, ErrorNorm,
    IntegrationFailure, IntegratorSettings, PhaseState,
};
use crate::metric::Spacetime;
use crate::scalar::DualScalar;
use num_dual::Dual64;
use rayon::prelude::*;
use serde::Serialize;
use std::f64::consts::{FRAC_PI_2, PI, TAU};
use std::time::Instant;

/// Tunable numerical choices of the ray tracer. `Default` is what [`solve`] uses.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RaytraceOptions {
    /// Radius D (in M) where distant-observer rays start; outgoing rays beyond it escape.
    pub start_radius: f64,
    /// Apply the first-order asymptotic correction to distant-observer start data.
    pub asymptotic_correction: bool,
    /// Gauss–Legendre nodes of the asymptotic correction integral.
    pub correction_nodes: usize,
    /// A ray is captured at r ≤ r₊ (1 + capture_margin).
    pub capture_margin: f64,
    /// For a horizonless metric, a ray is captured at r ≤ this radius (in M). A convention
    /// (common practice, no source): it treats the central region as absorbing.
    pub horizonless_capture_radius: f64,
    /// Pre-scan samples per curve radius along each radial line.
    pub scan_samples: usize,
    /// While a ray moves outward beyond this radius (in M) only its escape is left to detect,
    /// and the relative tolerance is relaxed to `relaxed_rtol`; strict control resumes if it
    /// turns inward again.
    pub relaxed_radius: f64,
    /// Relative tolerance on outgoing rays beyond `relaxed_radius`.
    pub relaxed_rtol: f64,
    /// Relative tolerance of the pre-scan and of the first bisection stage, which stops at a
    /// bracket of width `coarse_width` (in M); the bracket widened by `coarse_width` on both
    /// sides is then confirmed with the strict tolerance before the final bisection.
    pub coarse_rtol: f64,
    /// See `coarse_rtol`.
    pub coarse_width: f64,
    /// Integrator tolerances and limits; the sign and size of `initial_step` are set per ray.
    pub integrator: IntegratorSettings,
}

impl Default for RaytraceOptions {
    fn default() -> Self {
        RaytraceOptions {
            start_radius: 3.0e4,
            asymptotic_correction: true,
            correction_nodes: 6,
            capture_margin: 1.0e-3,
            horizonless_capture_radius: 0.05,
            scan_samples: 8,
            relaxed_radius: 25.0,
            relaxed_rtol: 1.0e-7,
            coarse_rtol: 1.0e-7,
            coarse_width: 3.0e-5,
            integrator: IntegratorSettings {
                rtol: 1.0e-10,
                atol: 1.0e-12,
                initial_step: -1.0,
                min_step: 1.0e-14,
                max_step: f64::INFINITY,
                max_steps: 50_000,
            },
        }
    }
}

/// Why a single ray has no fate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, thiserror::Error)]
pub enum RayFailure {
    /// The integrator gave up.
    #[error("{0}")]
    Integration(IntegrationFailure),
    /// No null start momentum exists at the start point, or the screen point is off the screen.
    #[error("no null start data for screen point ({alpha}, {beta})")]
    NoStartData { alpha: f64, beta: f64 },
}

/// The fate of one backward ray.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub enum RayFate {
    /// Reached the capture radius.
    Captured,
    /// Moved outward beyond the escape radius.
    Escaped,
    /// Neither, with the reason.
    Failed(RayFailure),
}

/// One traced ray: its fate and the accepted integrator steps it took.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RayOutcome {
    pub fate: RayFate,
    pub steps: usize,
}

/// The boundary crossings along one radial screen line.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineBoundary {
    /// Screen polar angle of the line about its origin.
    pub psi: f64,
    /// Every captured/escaping transition found, in increasing distance from the origin,
    /// each refined to the tolerance; empty if the line failed.
    pub crossings: Vec<f64>,
    /// The first failure met on this line, if any: then `crossings` is not converged.
    pub failure: Option<String>,
    /// Rays traced on this line.
    pub rays: usize,
    /// Rays that failed on this line.
    pub failed_rays: usize,
    /// Accepted integrator steps on this line.
    pub steps: usize,
}

impl LineBoundary {
    /// The outermost crossing, if the line converged.
    pub fn outermost(&self) -> Option<f64> {
        if self.failure.is_some() {
            None
        } else {
            self.crossings.last().copied()
        }
    }
}

/// How a radial screen line is scanned and refined (see [`Tracer::boundary_along_line`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LineScan {
    /// Distance between pre-scan samples, in M.
    pub spacing: f64,
    /// The pre-scan covers at least [0, scan_to].
    pub scan_to: f64,
    /// Each crossing is returned within this distance (in M) of the traced boundary.
    pub tolerance: f64,
    /// Give up beyond this screen radius.
    pub max_radius: f64,
}

/// A traced screen: how to launch a ray from screen coordinates and decide its fate.
pub struct Tracer<'a> {
    spacetime: &'a dyn Spacetime,
    observer: Observer,
    options: RaytraceOptions,
    capture_radius: f64,
    escape_radius: f64,
    quadrature: Vec<(f64, f64)>,
}

/// Below this |p_φ|/E a ray is launched with p_φ = 0 exactly, so that it crosses the axis
/// through the pole instead of meeting a centrifugal barrier at θ ~ |p_φ|/b, which the
/// integrator cannot resolve below ~1e-12 (common practice, no source). The screen point moves
/// by less than 1e-12 M / sin θ_o.
const AXIS_ANGULAR_MOMENTUM: f64 = 1.0e-12;

impl<'a> Tracer<'a> {
    /// Set up the screen of `observer`; checks the observer and the options.
    pub fn new(
        spacetime: &'a dyn Spacetime,
        observer: &Observer,
        options: &RaytraceOptions,
    ) -> Result<Self, ShadowError> {
        observer.validate()?;
        let i = observer.inclination;
        if !(i > 0.0 && i < PI) {
            return Err(ShadowError::BadRequest(format!(
                "the ray tracer needs an inclination strictly between 0 and pi (the screen axes \
                 are undefined on the spin axis), got {i}"
            )));
        }
        let d = options.start_radius;
        if !(d.is_finite() && d >= 100.0) {
            return Err(ShadowError::BadRequest(format!(
                "the start radius must be at least 100 M, got {d}"
            )));
        }
        let positive = |x: f64| x.is_finite() && x > 0.0;
        if !positive(options.capture_margin)
            || !positive(options.horizonless_capture_radius)
            || !positive(options.coarse_width)
            || options.scan_samples < 2
            || options.correction_nodes < 2
        {
            return Err(ShadowError::BadRequest(
                "capture margin and radius must be positive, scan samples and correction nodes \
                 at least 2"
                    .into(),
            ));
        }
        let capture_radius = match spacetime.outer_horizon() {
            Some(r_plus) => r_plus * (1.0 + options.capture_margin),
            None => options.horizonless_capture_radius,
        };
        let escape_radius = match observer.radius {
            None => d,
            Some(r_o) => {
                if r_o <= capture_radius {
                    return Err(ShadowError::BadRequest(format!(
                        "the observer radius {r_o} lies inside the capture radius {capture_radius}"
                    )));
                }
                r_o.max(d)
            }
        };
        Ok(Tracer {
            spacetime,
            observer: *observer,
            options: *options,
            capture_radius,
            escape_radius,
            quadrature: gauss_legendre_unit(options.correction_nodes),
        })
    }

    /// The radius at which rays count as captured.
    pub fn capture_radius(&self) -> f64 {
        self.capture_radius
    }

    /// The radius beyond which outgoing rays count as escaped.
    pub fn escape_radius(&self) -> f64 {
        self.escape_radius
    }

    /// The phase-space start state of the backward ray through screen point (α, β).
    pub fn start_state(&self, alpha: f64, beta: f64) -> Result<PhaseState, RayFailure> {
        let no_data = RayFailure::NoStartData { alpha, beta };
        let state = match self.observer.radius {
            None => self.distant_start(alpha, beta),
            Some(r_o) => {
                let (theta_c, psi_c) =
                    celestial_from_screen(self.spacetime, &self.observer, alpha, beta)
                        .map_err(|_| no_data)?;
                let p = momentum_from_celestial(self.spacetime, &self.observer, theta_c, psi_c)
                    .map_err(|_| no_data)?;
                let mut p_phi = p[3];
                if p_phi.abs() < AXIS_ANGULAR_MOMENTUM * p[0].abs() {
                    p_phi = 0.0;
                }
                Some([
                    0.0,
                    r_o,
                    self.observer.inclination,
                    0.0,
                    p[0],
                    p[1],
                    p[2],
                    p_phi,
                ])
            }
        };
        state
            .filter(|y| y.iter().all(|x| x.is_finite()))
            .ok_or(no_data)
    }

    /// Distant observer: the straight line through (α, β) with the asymptotic correction, at
    /// radius D (module docs).
    fn distant_start(&self, alpha: f64, beta: f64) -> Option<PhaseState> {
        let big_d = self.options.start_radius;
        let (so, co) = self.observer.inclination.sin_cos();
        let n = [so, 0.0, co];
        // d = α e_φ − β e_θ at the observer's direction (θ_o, φ = 0).
        let d = [-beta * co, alpha, beta * so];
        let b2 = dot(&d, &d);
        if b2 >= 0.01 * big_d * big_d {
            return None;
        }
        let mut p = n;
        let mut l = cross(&d, &n);
        if self.options.asymptotic_correction {
            let s_d = (big_d * big_d - b2).sqrt();
            let (dp, dl) = self.asymptotic_change(&d, &n, s_d);
            for i in 0..3 {
                p[i] -= dp[i];
                l[i] -= dl[i];
            }
        }
        // L_z = p_φ is exactly conserved; fix it to its value at infinity.
        let mut p_phi = -alpha * so;
        if p_phi.abs() < AXIS_ANGULAR_MOMENTUM {
            p_phi = 0.0;
        }
        l[2] = p_phi;
        // The line with momentum p and angular momentum L: closest point c = m × L⊥ / |p|.
        let p_norm = dot(&p, &p).sqrt();
        let m = [p[0] / p_norm, p[1] / p_norm, p[2] / p_norm];
        let lm = dot(&l, &m);
        let l_perp = [l[0] - lm * m[0], l[1] - lm * m[1], l[2] - lm * m[2]];
        let mc = cross(&m, &l_perp);
        let c = [mc[0] / p_norm, mc[1] / p_norm, mc[2] / p_norm];
        let s = (big_d * big_d - dot(&c, &c)).sqrt();
        let x = [c[0] + s * m[0], c[1] + s * m[1], c[2] + s * m[2]];
        let r = dot(&x, &x).sqrt();
        let theta = x[0].hypot(x[1]).atan2(x[2]);
        let phi = x[1].atan2(x[0]);
        let (st, ct) = theta.sin_cos();
        let (sp, cp) = phi.sin_cos();
        let p_theta = r * (p[0] * ct * cp + p[1] * ct * sp - p[2] * st);
        let p_r = null_radial_momentum(self.spacetime, r, theta, -1.0, p_theta, p_phi, 1.0)?;
        Some([0.0, r, theta, phi, -1.0, p_r, p_theta, p_phi])
    }

    /// The first-order changes (Δp, ΔL) of the Cartesian momentum and angular momentum of the
    /// distant-observer ray through (α, β) between the start radius D and infinity.
    pub fn asymptotic_correction(&self, alpha: f64, beta: f64) -> ([f64; 3], [f64; 3]) {
        let big_d = self.options.start_radius;
        let (so, co) = self.observer.inclination.sin_cos();
        let n = [so, 0.0, co];
        let d = [-beta * co, alpha, beta * so];
        let s_d = (big_d * big_d - dot(&d, &d)).sqrt();
        self.asymptotic_change(&d, &n, s_d)
    }

    /// ∫_{s_D}^∞ dF/dτ ds along x(s) = d + s n for F = (p_x, p_y, p_z) and (L_x, L_y, L_z),
    /// with s = s_D/u and Gauss–Legendre nodes in u.
    fn asymptotic_change(&self, d: &[f64; 3], n: &[f64; 3], s_d: f64) -> ([f64; 3], [f64; 3]) {
        let mut dp = [0.0; 3];
        let mut dl = [0.0; 3];
        for &(u, w) in &self.quadrature {
            let s = s_d / u;
            let x = [d[0] + s * n[0], d[1] + s * n[1], d[2] + s * n[2]];
            let y = flat_phase_point(&x, n);
            let rhs = hamilton_rhs(self.spacetime, &y);
            let rates = invariant_rates(&y, &rhs);
            let jacobian = w * s_d / (u * u);
            for i in 0..3 {
                dp[i] += jacobian * rates[i];
                dl[i] += jacobian * rates[3 + i];
            }
        }
        (dp, dl)
    }

    /// Follow the ray through (α, β) backwards until capture, escape or failure.
    pub fn trace(&self, alpha: f64, beta: f64) -> RayOutcome {
        self.trace_with(alpha, beta, self.options.integrator.rtol)
    }

    /// [`Tracer::trace`] with relative tolerance `rtol`.
    pub fn trace_with(&self, alpha: f64, beta: f64, rtol: f64) -> RayOutcome {
        let y0 = match self.start_state(alpha, beta) {
            Ok(y) => y,
            Err(failure) => {
                return RayOutcome {
                    fate: RayFate::Failed(failure),
                    steps: 0,
                }
            }
        };
        let (capture, escape) = (self.capture_radius, self.escape_radius);
        let relax = self.options.relaxed_radius;
        let strict_settings = IntegratorSettings {
            rtol,
            ..self.options.integrator
        };
        let relaxed_settings = IntegratorSettings {
            rtol: strict_settings.rtol.max(self.options.relaxed_rtol),
            ..strict_settings
        };
        let mut y = y0;
        let mut strict = true;
        let mut steps = 0;
        // Phases: strict error control, except while moving outward beyond the relaxed radius
        // (then only the escape is left to detect); the ray returns to strict control as soon
        // as it turns inward again.
        let fate = loop {
            let base = if strict {
                &strict_settings
            } else {
                &relaxed_settings
            };
            let first_step = 0.01 * (y[1] - capture).abs().max(0.1);
            let settings = IntegratorSettings {
                initial_step: -first_step,
                max_steps: base.max_steps.saturating_sub(steps).max(1),
                ..*base
            };
            let mut event = None;
            let end = integrate_with_norm(
                self.spacetime,
                y,
                f64::INFINITY,
                &settings,
                ErrorNorm::Dynamical,
                |old, new, _| {
                    steps += 1;
                    let outward = new[1] > old[1];
                    if new[1] <= capture {
                        event = Some(Some(RayFate::Captured));
                    } else if new[1] > escape && outward {
                        event = Some(Some(RayFate::Escaped));
                    } else if strict == (new[1] > relax && outward) {
                        // Switch between strict and relaxed control.
                        event = Some(None);
                    }
                    if event.is_some() {
                        Control::Stop
                    } else {
                        Control::Continue
                    }
                },
            );
            match (end, event) {
                (Err(failure), _) => break RayFate::Failed(RayFailure::Integration(failure)),
                (Ok(_), Some(Some(fate))) => break fate,
                (Ok(end), Some(None)) => {
                    y = end.state;
                    strict = !strict;
                    if steps >= strict_settings.max_steps {
                        break RayFate::Failed(RayFailure::Integration(
                            IntegrationFailure::TooManySteps { steps },
                        ));
                    }
                }
                // With an infinite τ range the integration only ends on an event.
                (Ok(end), None) => {
                    break RayFate::Failed(RayFailure::Integration(
                        IntegrationFailure::TooManySteps { steps: end.steps },
                    ))
                }
            }
        };
        RayOutcome { fate, steps }
    }

    /// All boundary crossings along the line origin + ρ (cos ψ, sin ψ), ρ > 0, given whether
    /// the ray through the origin is captured: a scan with spacing `spacing` over at least
    /// [0, `scan_to`] and on to half a curve radius (and at least three samples) beyond the
    /// outermost captured sample, then bisection of every transition to `tolerance`. Gives up
    /// (as a failure) beyond `max_radius`.
    pub fn boundary_along_line(
        &self,
        origin: [f64; 2],
        origin_captured: bool,
        psi: f64,
        scan: &LineScan,
    ) -> LineBoundary {
        let LineScan {
            spacing,
            scan_to,
            tolerance,
            max_radius,
        } = *scan;
        let (sin, cos) = psi.sin_cos();
        let mut line = LineBoundary {
            psi,
            crossings: Vec::new(),
            failure: None,
            rays: 0,
            failed_rays: 0,
            steps: 0,
        };
        let (strict, coarse) = (
            self.options.integrator.rtol,
            self.options.coarse_rtol.max(self.options.integrator.rtol),
        );
        let classify = |rho: f64, rtol: f64, line: &mut LineBoundary| -> Option<bool> {
            let out = self.trace_with(origin[0] + rho * cos, origin[1] + rho * sin, rtol);
            line.rays += 1;
            line.steps += out.steps;
            match out.fate {
                RayFate::Captured => Some(true),
                RayFate::Escaped => Some(false),
                RayFate::Failed(f) => {
                    line.failed_rays += 1;
                    if line.failure.is_none() {
                        line.failure = Some(format!(
                            "ray at screen radius {rho} along psi = {psi} failed: {f}"
                        ));
                    }
                    None
                }
            }
        };
        // Coarse scan: brackets (lo, hi, captured at lo).
        let mut brackets = Vec::new();
        let mut previous = origin_captured;
        let mut last_captured = 0.0;
        let mut j = 1usize;
        loop {
            let rho = j as f64 * spacing;
            if rho > max_radius {
                line.failure = Some(format!(
                    "no escaping ray found out to screen radius {max_radius} along psi = {psi}"
                ));
                return line;
            }
            let Some(captured) = classify(rho, coarse, &mut line) else {
                return line;
            };
            if captured != previous {
                brackets.push(((j - 1) as f64 * spacing, rho, previous));
            }
            if captured {
                last_captured = rho;
            } else if rho >= scan_to
                && rho >= last_captured + (3.0 * spacing).max(0.5 * last_captured)
            {
                break;
            }
            previous = captured;
            j += 1;
        }
        let width = self.options.coarse_width;
        for (scan_lo, scan_hi, captured_lo) in brackets {
            let (mut lo, mut hi) = (scan_lo, scan_hi);
            // Stage 1, coarse tolerance: down to the coarse width.
            while hi - lo > width {
                let mid = 0.5 * (lo + hi);
                let Some(captured) = classify(mid, coarse, &mut line) else {
                    return line;
                };
                if captured == captured_lo {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            // Stage 2: confirm a widened bracket with the strict tolerance (a coarse ray near
            // the boundary may be misclassified); fall back to the scan bracket.
            let mut confirmed = false;
            for (a, b) in [((lo - width).max(0.0), hi + width), (scan_lo, scan_hi)] {
                let Some(fate_a) = classify(a, strict, &mut line) else {
                    return line;
                };
                let Some(fate_b) = classify(b, strict, &mut line) else {
                    return line;
                };
                if fate_a == captured_lo && fate_b != captured_lo {
                    (lo, hi) = (a, b);
                    confirmed = true;
                    break;
                }
            }
            if !confirmed {
                line.failure = Some(format!(
                    "the crossing between screen radii {scan_lo} and {scan_hi} along psi = {psi} \
                     is not confirmed at the strict tolerance"
                ));
                return line;
            }
            // Stage 3, strict tolerance: stop when the midpoint is within `tolerance` of
            // every point of the bracket.
            while hi - lo > 2.0 * tolerance {
                let mid = 0.5 * (lo + hi);
                if mid <= lo || mid >= hi {
                    break;
                }
                let Some(captured) = classify(mid, strict, &mut line) else {
                    return line;
                };
                if captured == captured_lo {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            line.crossings.push(0.5 * (lo + hi));
        }
        line
    }
}

/// The full outcome of a ray-traced critical curve, including per-angle failures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RaytraceReport {
    /// The curve's origin (α, β), when the axis boundaries converged.
    pub origin: Option<[f64; 2]>,
    /// Set when there is no shadow (the ray at the screen centre escapes).
    pub no_shadow: Option<String>,
    /// The boundary along each ψ_k = 2πk/N about the origin (mirrored ones included).
    pub lines: Vec<LineBoundary>,
    /// Failures before the angles were traced (screen centre, axis lines).
    pub setup_failures: Vec<String>,
    /// Counts and timing (every ray traced, including the axis lines).
    pub diagnostics: Diagnostics,
}

impl RaytraceReport {
    /// The first failure, if any ray needed for the curve failed.
    pub fn first_failure(&self) -> Option<String> {
        self.setup_failures
            .first()
            .cloned()
            .or_else(|| self.lines.iter().find_map(|l| l.failure.clone()))
    }

    /// Convert to a [`ShadowResult`]: `NotConverged` if any needed ray failed.
    pub fn into_result(self) -> Result<ShadowResult, ShadowError> {
        let result = |status, curve| ShadowResult {
            solver: SolverKind::Raytrace,
            status,
            curve,
            photon_orbit_radii: None,
            photon_spheres: Vec::new(),
            exponents: None,
            diagnostics: self.diagnostics.clone(),
        };
        if let Some(failure) = self.first_failure() {
            let bad_angles = self.lines.iter().filter(|l| l.failure.is_some()).count();
            return Err(ShadowError::NotConverged(format!(
                "ray tracing did not converge: {} of {} rays failed, {} of {} curve angles have \
                 no converged boundary; first failure: {failure}",
                self.diagnostics.failed_rays,
                self.diagnostics.rays_traced,
                bad_angles,
                self.lines.len()
            )));
        }
        if let Some(reason) = self.no_shadow.clone() {
            return Ok(result(ShadowStatus::NoShadow { reason }, None));
        }
        let origin = self
            .origin
            .ok_or_else(|| ShadowError::NotConverged("ray tracing found no curve origin".into()))?;
        let radii = self
            .lines
            .iter()
            .map(|l| l.outermost())
            .collect::<Option<Vec<f64>>>()
            .ok_or_else(|| ShadowError::NotConverged("a curve angle has no crossing".into()))?;
        Ok(result(
            ShadowStatus::Shadow,
            Some(CriticalCurve { origin, radii }),
        ))
    }
}

/// The critical curve of any metric by backward ray tracing, with [`RaytraceOptions::default`].
///
/// Errors: `BadRequest` for a bad observer or settings, `NotConverged` if any ray needed for
/// the curve failed (the count is in the message; see [`trace_curve`] for the details).
pub fn solve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
) -> Result<ShadowResult, ShadowError> {
    solve_with(spacetime, observer, settings, &RaytraceOptions::default())
}

/// [`solve`] with explicit numerical options.
pub fn solve_with(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
) -> Result<ShadowResult, ShadowError> {
    trace_curve(spacetime, observer, settings, options)?.into_result()
}

/// Trace the critical curve and report every line, failures included.
pub fn trace_curve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
) -> Result<RaytraceReport, ShadowError> {
    let start = Instant::now();
    if settings.points < 4 {
        return Err(ShadowError::BadRequest(format!(
            "at least 4 curve points are needed, got {}",
            settings.points
        )));
    }
    let tolerance = settings.tolerance;
    if !(tolerance.is_finite() && tolerance > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "the boundary tolerance must be positive, got {tolerance}"
        )));
    }
    let tracer = Tracer::new(spacetime, observer, options)?;
    let mut report = RaytraceReport {
        origin: None,
        no_shadow: None,
        lines: Vec::new(),
        setup_failures: Vec::new(),
        diagnostics: Diagnostics {
            star_shaped: true,
            ..Default::default()
        },
    };
    let count = |report: &mut RaytraceReport, line: &LineBoundary| {
        report.diagnostics.rays_traced += line.rays;
        report.diagnostics.failed_rays += line.failed_rays;
        report.diagnostics.integrator_steps += line.steps;
    };
    let max_radius = 0.25 * tracer.escape_radius;
    let finish = |mut report: RaytraceReport| {
        report.diagnostics.wall_seconds = start.elapsed().as_secs_f64();
        Ok(report)
    };

    // The screen centre must be inside the shadow.
    let centre = tracer.trace(0.0, 0.0);
    report.diagnostics.rays_traced += 1;
    report.diagnostics.integrator_steps += centre.steps;
    match centre.fate {
        RayFate::Captured => {}
        RayFate::Escaped => {
            report.no_shadow = Some(
                "the ray through the screen centre escapes: no shadow around the centre".into(),
            );
            return finish(report);
        }
        RayFate::Failed(f) => {
            report.diagnostics.failed_rays += 1;
            report
                .setup_failures
                .push(format!("the ray through the screen centre failed: {f}"));
            return finish(report);
        }
    }

    // Origin: midpoints along the α axis and (without mirror symmetry) the vertical line.
    let axis_spacing = 0.5;
    let axis = |origin: [f64; 2], psis: &[f64]| -> Vec<LineBoundary> {
        psis.par_iter()
            .map(|&psi| {
                let scan = LineScan {
                    spacing: axis_spacing,
                    scan_to: 0.0,
                    tolerance,
                    max_radius,
                };
                tracer.boundary_along_line(origin, true, psi, &scan)
            })
            .collect()
    };
    let mut extent = Vec::new();
    let horizontal = axis([0.0, 0.0], &[0.0, PI]);
    for line in &horizontal {
        count(&mut report, line);
        if let Some(f) = &line.failure {
            report.setup_failures.push(f.clone());
        }
    }
    let (Some(right), Some(left)) = (horizontal[0].outermost(), horizontal[1].outermost()) else {
        return finish(report);
    };
    extent.extend([right, left]);
    let alpha_c = 0.5 * (right - left);
    let mirror = spacetime.is_separable()
        || (spacetime.is_equatorially_symmetric()
            && (observer.inclination - FRAC_PI_2).abs() < 1e-12);
    let mut beta_c = 0.0;
    if !mirror {
        let vertical = axis([alpha_c, 0.0], &[FRAC_PI_2, 3.0 * FRAC_PI_2]);
        for line in &vertical {
            count(&mut report, line);
            if let Some(f) = &line.failure {
                report.setup_failures.push(f.clone());
            }
        }
        let (Some(up), Some(down)) = (vertical[0].outermost(), vertical[1].outermost()) else {
            return finish(report);
        };
        extent.extend([up, down]);
        beta_c = 0.5 * (up - down);
    }
    let origin = [alpha_c, beta_c];
    let check = tracer.trace(alpha_c, beta_c);
    report.diagnostics.rays_traced += 1;
    report.diagnostics.integrator_steps += check.steps;
    match check.fate {
        RayFate::Captured => {}
        RayFate::Escaped => {
            report.setup_failures.push(format!(
                "the curve origin ({alpha_c}, {beta_c}) is not inside the shadow"
            ));
            return finish(report);
        }
        RayFate::Failed(f) => {
            report.diagnostics.failed_rays += 1;
            report
                .setup_failures
                .push(format!("the ray through the curve origin failed: {f}"));
            return finish(report);
        }
    }
    report.origin = Some(origin);

    // Every angle, each on its own.
    let n = settings.points;
    let scale = extent.iter().sum::<f64>() / extent.len() as f64;
    let scan = LineScan {
        spacing: scale / options.scan_samples as f64,
        scan_to: 0.0,
        tolerance,
        max_radius,
    };
    let traced = if mirror { n / 2 + 1 } else { n };
    let mut lines: Vec<LineBoundary> = (0..traced)
        .into_par_iter()
        .map(|k| {
            let psi = TAU * k as f64 / n as f64;
            tracer.boundary_along_line(origin, true, psi, &scan)
        })
        .collect();
    for line in &lines {
        count(&mut report, line);
    }
    if mirror {
        for k in traced..n {
            let mut image = lines[n - k].clone();
            image.psi = TAU * k as f64 / n as f64;
            image.rays = 0;
            image.failed_rays = 0;
            image.steps = 0;
            lines.push(image);
        }
    }
    for line in &lines {
        if line.failure.is_none() && line.crossings.len() > 1 {
            report.diagnostics.star_shaped = false;
            report
                .diagnostics
                .extra_crossings
                .push((line.psi, line.crossings.clone()));
        }
    }
    report.lines = lines;
    finish(report)
}

/// The spherical phase point (p_t = −1) of the flat-space ray at Cartesian `x` with unit
/// direction `n`: p_r = n·e_r, p_θ = r n·e_θ, p_φ = (x × n)_z.
fn flat_phase_point(x: &[f64; 3], n: &[f64; 3]) -> PhaseState {
    let r = dot(x, x).sqrt();
    let theta = x[0].hypot(x[1]).atan2(x[2]);
    let phi = x[1].atan2(x[0]);
    let (st, ct) = theta.sin_cos();
    let (sp, cp) = phi.sin_cos();
    let p_r = n[0] * st * cp + n[1] * st * sp + n[2] * ct;
    let p_theta = r * (n[0] * ct * cp + n[1] * ct * sp - n[2] * st);
    let p_phi = x[0] * n[1] - x[1] * n[0];
    [0.0, r, theta, phi, -1.0, p_r, p_theta, p_phi]
}

/// Cartesian momentum p = p_r e_r + (p_θ/r) e_θ + p_φ/(r sin θ) e_φ and angular momentum
/// L = p_θ e_φ − (p_φ/sin θ) e_θ as functions of the spherical canonical variables; both are
/// conserved by the flat Hamiltonian.
fn cartesian_invariants<D: DualScalar>(
    r: D,
    theta: D,
    phi: D,
    p_r: D,
    p_theta: D,
    p_phi: D,
) -> [D; 6] {
    let (st, ct) = theta.sin_cos();
    let (sp, cp) = phi.sin_cos();
    let a = p_theta / r;
    let b = p_phi / (r * st);
    let q = p_phi / st;
    [
        p_r * st * cp + a * ct * cp - b * sp,
        p_r * st * sp + a * ct * sp + b * cp,
        p_r * ct - a * st,
        -p_theta * sp - q * ct * cp,
        p_theta * cp - q * ct * sp,
        p_phi,
    ]
}

/// dF/dτ of the Cartesian invariants along the flow `rhs` at `y`: a directional derivative by
/// one dual-number evaluation.
fn invariant_rates(y: &PhaseState, rhs: &PhaseState) -> [f64; 6] {
    let v = |i: usize| Dual64::new(y[i], rhs[i]);
    cartesian_invariants(v(1), v(2), v(3), v(5), v(6), v(7)).map(|f| f.eps)
}

/// Gauss–Legendre nodes and weights on (0, 1): Newton's method on P_n from the Chebyshev-like
/// first guess cos(π(i − ¼)/(n + ½)), P_n by the three-term recurrence, weights
/// 2/((1 − x²) P_n′(x)²) on (−1, 1) (Abramowitz & Stegun 1964, 25.4.29), halved for (0, 1).
pub fn gauss_legendre_unit(n: usize) -> Vec<(f64, f64)> {
    let legendre = |x: f64| {
        let (mut p0, mut p1) = (1.0, x);
        for k in 1..n {
            let k = k as f64;
            let p2 = ((2.0 * k + 1.0) * x * p1 - k * p0) / (k + 1.0);
            p0 = p1;
            p1 = p2;
        }
        let dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
        (p1, dp)
    };
    (1..=n)
        .map(|i| {
            let mut x = (PI * (i as f64 - 0.25) / (n as f64 + 0.5)).cos();
            for _ in 0..100 {
                let (p, dp) = legendre(x);
                let dx = p / dp;
                x -= dx;
                if dx.abs() < 1e-16 {
                    break;
                }
            }
            let (_, dp) = legendre(x);
            let w = 2.0 / ((1.0 - x * x) * dp * dp);
            (0.5 * (1.0 - x), 0.5 * w)
        })
        .collect()
}

fn dot(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: &[f64; 3], b: &[f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
