//! Critical curves of any metric by backward ray tracing.
//!
//! # Method
//!
//! A screen point is classified by following its photon backwards in affine parameter
//! (Hamilton's equations with the exact dual-number gradient, [`crate::geodesic`]; the
//! eighth-order DOP853 pair by default, which at the tracer's tolerances takes about a quarter
//! of the 5(4) pair's steps; a ray it cannot finish, such as one grazing the pole many times,
//! is traced again with the Dormand–Prince 5(4) pair before it counts as failed): it is **captured** if it comes within r ≤ r₊(1 + `capture_margin`) of
//! the outer horizon; without a horizon, if it reaches the absorbing core
//! r ≤ `horizonless_capture_radius` (r ≤ 0, the other side, when the metric is regular at
//! r = 0 with a throat or a Kerr-like disk there) or the inner edge of the metric's domain (it moves
//! inward to a point beyond which, at r(1 − `domain_edge`), the metric is no longer a
//! regular Lorentzian metric: a singular surface such as r = 2/ν of Janis–Newman–Winicour).
//! It **escapes** if it moves outward beyond the escape radius (the start radius D for a
//! distant observer, max(r_o, D) for a finite one), and it **fails** on step-size underflow, a
//! non-finite state or the step limit. A failure is never counted as capture or escape.
//!
//! The radial search starts from a captured screen point: the screen centre if its ray is
//! captured, else the first captured point of a scan outward along the α axis (and, without
//! equatorial symmetry, over a square grid), so that a shadow that does not contain the
//! screen centre is still found; [`RaytraceChecks::search_start`] says which. The boundary
//! along each radial screen line ψ_k = 2πk/N about the origin is bracketed by a
//! coarse scan (every transition between captured and escaping samples is kept) and refined
//! by bisection to half of min(`settings.tolerance`, `check_width`). The scan and the first bisection
//! stage use a loose relative tolerance (`coarse_rtol`, whose classification noise is ~1e-6
//! M) down to a bracket of `coarse_width`; that bracket, widened by `coarse_width` on both
//! sides, is confirmed with the strict tolerance (else the scan bracket is, else the line
//! fails) before the strict bisection. Outgoing rays beyond `relaxed_radius` are followed with
//! a loose tolerance until they escape or turn inward again. Strict rays (rtol 1e-10) place
//! the boundary to ~1e-9 M. The origin is the midpoint of the boundary along the horizontal
//! line through the search's start point (ψ = 0, π) and, unless the curve is symmetric under
//! β → −β, the midpoint of the boundary along the vertical line through it. The β mirror
//! symmetry is used when it is exact: for an equatorially symmetric metric seen edge-on, and
//! for a separable metric at any inclination (capture then depends on λ and η only, and η on
//! β²; Carter 1968). Angles run in parallel, in the levels of the neighbour seeding below;
//! every angle depends only on the levels before it, so the result does not depend on the
//! number of threads.
//!
//! # Neighbour seeding
//!
//! Only every `anchor_every`-th angle (4 by default; with more than 64 angles, every
//! ⌈n/16⌉-th, `max_anchors`, so that the star-shape diagnostic below then rests on 16 lines)
//! is scanned as above. The others are traced afterwards, in levels of halving stride
//! (rounded down), each from the crossing that Lagrange
//! interpolation through its finished neighbours predicts, with a first bracket whose
//! half-width h is twice the interpolant's estimated error (then searched outward on the
//! crossing's side in steps of 4h, 16h and 64h). The logarithmic winding law beside the
//! crossing (section "Checks"), fitted on each side to the rays of the finished neighbours
//! on either side and interpolated linearly between them, places the seeded line's rays from
//! its first bracket on: with the neighbours' slope k fixed, two rays on one side determine
//! the crossing. Such a line is then traced with strict rays throughout (their windings
//! follow the law to ~1e-8 M from the crossing, the loose tolerance's only to ~1e-5 M:
//! measured on Kerr a = 0.9, 60°, where the loose rays' classification noise of ~1e-6 M
//! shifts their distances); without a law, strict rays are used when h is at most
//! `coarse_width`. A prediction whose estimated error is under 0.3 of the final bracket's
//! width (the last levels of a curve with many angles) has the two rays after the first
//! bracket aimed at it, ∓ the larger of three times the estimate and 0.45 of that width:
//! with an estimate under 0.15 of the width, the refinement ends there when they straddle
//! the crossing; otherwise it goes on from the bracket they leave. Their crossings are as
//! accurate as a scanned line's, and checked in the same way. A seeded line does not scan
//! for further crossings along it: one loose ray where a scan would have stopped must
//! escape, and the star-shape diagnostic
//! ([`super::Diagnostics::star_shaped`]) is made on the anchors (and on any line that falls
//! back to the scan). Seeding is used only when every anchor has exactly one crossing; a line
//! whose bracket is not found is scanned in full ([`RaytraceChecks::seeded_lines`] counts the
//! seeded angles). Measured on a 256-angle Johannsen–Psaltis curve (a = 0.5, ε₃ = 0, 60°;
//! 16 anchors): a seeded line takes 5.9 rays to place its crossing (7.0 before the aimed
//! rays), two of which the check then takes as its middle rays, a scanned one 27; on a
//! 64-angle Kerr curve (a = 0.9, 60°) 7.6 and 27 (15 before the law).
//!
//! A caller that wants the curve alone ([`solve_curve_with`]: bounds, scans, tables) does not
//! trace a curve that is certain to be refused to its end: after the first level in which a
//! finished line did not converge or, with a horizon, has a boundary not formed by photon
//! orbits (or not checked to be), no further level is started (the curve would be refused
//! whatever the other lines give). The error says how many angles were finished. Which lines
//! are finished by then does not depend on the number of threads. On the Johannsen–Psaltis
//! bound of docs/performance.md a refused curve near the horizon's edge then takes about
//! 40 % of its former time.
//!
//! # Far legs in the inverse radius
//!
//! A ray moving inward beyond `far_radius` (50 M) is integrated in u = 1/r and the parameter
//! σ with dτ = r² dσ ([`Chart::InverseRadius`]; a Sundman time transformation, Hairer,
//! Lubich & Wanner 2006, *Geometric Numerical Integration*, §VIII.2). There the ray is nearly
//! a straight line, u = sin(bσ)/b, smooth on the scale 1/b, while r(τ) needs a fixed number of
//! steps per e-fold of r: on a straight line from 3e4 M to 50 M the bare integrator takes 3
//! steps instead of 32, and ends closer to the line (`tests/far_chart.rs`: θ's error is
//! weighed in units of transverse distance, r δθ). The tracer caps a far step at 1/R in σ, so
//! one that enters the near region ends at about r ≥ R/2, and a far step's frame-dragging
//! rotation for the winding is the integral of ω ∝ r⁻ᵏ between its ends. Outgoing legs keep the affine chart (u would
//! reach zero, r = ∞, at finite σ). The refined re-tracing of the checks never uses the far
//! chart, so every curve's accuracy estimate compares it with the affine one.
//!
//! # Early end: escape at a radial turning point, capture where certified
//!
//! For a distant observer of a metric declared separable or spherically symmetric, a ray
//! that turns outward after moving inward is declared escaped at its turning point
//! ([`RayOutcome::escaped_at_turning_point`]). The radial motion of such a metric obeys
//! (dr/dσ)² = R(r) with R depending on r and the ray's constants of motion only (Carter
//! 1968, Phys. Rev. 174, 1559; for ds² = −A dt² + B dr² + C dΩ², R ∝ E²/A − L²/C): the
//! backward ray comes in from the start radius D, so R ≥ 0 on all of [r_min, D], and after
//! its turning point r_min it cannot meet another zero of R before D. This holds at any
//! turning point, inside or outside the photon region. Where it does not hold the ray is
//! followed to the escape radius as before: a metric without declared separation (its rays
//! may turn several times), and a finite observer (the range between r_o and the escape
//! radius was never crossed). The photon-orbit check and the re-traced rays end at the turning
//! point too; the winding of such a ray is then the one at its turning point (the step that
//! passes it counted up to the sign change of p_r, interpolated linearly), which depends on
//! where the steps fall only at second order (7e-4 rad at the loose tolerance, measured on
//! Schwarzschild rays; counting that whole step gave up to 6e-2 rad). Beside a photon orbit
//! it grows about half as fast as the whole ray's (the orbit is symmetric about its turning
//! point), and each side of a crossing is compared only with itself.
//!
//! A ray moving inward is declared captured where the metric certifies that it falls in
//! ([`crate::metric::CarterRadial::capture_certified_below`]). For Kerr and Kerr–Newman,
//! Carter's radial potential is R = Δ (P²/Δ − K) with K constant along the ray (Carter 1968);
//! below the smallest radius above the horizon where P²/Δ is stationary (for a ray beside
//! the critical curve, the radius of its spherical photon orbit) P²/Δ decreases outward, so
//! an inward ray there meets no radial turning point before the horizon
//! (tests/capture_certificate.rs checks the zero-free potential by brute force). It holds
//! for any observer. The step that passes that radius counts toward the winding only up to
//! it (interpolated linearly in r). Other metrics, and the rays of
//! [`Tracer::trace_measured`], are followed to the capture radius. On the 64-angle Kerr curve
//! (a = 0.9, 60°) it removes 37 % of the integrator steps. A ray beside the curve spends many
//! steps winding close to its photon orbit; it crosses that orbit's radius half-way through
//! and ends there, so, as on the escaping side, its winding grows about half as fast as the
//! whole ray's. Ending it half-way from there to the horizon instead, which keeps the whole
//! winding, removed 20 % (measured), and each side is compared only with itself anyway.
//!
//! # Checks: photon orbits and accuracy
//!
//! A captured/escaping boundary is a shadow's edge only if it is formed by photon orbits:
//! rays just beside it must wind around a photon region, the more the closer they pass. Near
//! the critical curve the number of half orbits grows like ln(1/|b − b_c|)/γ, with γ the
//! photon-ring exponent (Johnson et al. 2020, Sci. Adv. 6, eaaz1310); for Schwarzschild the
//! deflection diverges like −ln(b/b_c − 1) (Darwin 1959, Proc. R. Soc. A 249, 180; Bozza 2002,
//! Phys. Rev. D 66, 103001). The winding of a ray ([`RayOutcome::winding`]) is the angle
//! swept by its direction from the centre relative to the locally non-rotating frames, so
//! that it stays finite as a captured ray approaches a horizon. For each curve crossing,
//! rays at distances far = min(`winding_far`, crossing/2), mid and near (geometric
//! steps) on both sides must show a winding that keeps growing per e-fold of distance: by at
//! least `winding_floor`, and near the crossing by at least `winding_ratio` times its growth
//! farther out. Beside a surface that rays merely graze (the absorbing core, the outline of a
//! singularity, or the capture radius when photon orbits lie within the capture margin of
//! the horizon) the winding converges instead. Without a horizon such a boundary means no
//! shadow; with one, that the ray tracer does not resolve the curve (an error).
//!
//! The far and mid rays are those the refinement of the crossing traced, where one lies on
//! the right side within a twelfth of the ladder's span in ln(distance) of the wanted
//! distance (a factor of 3.2 by default) and was traced at a tolerance that serves there;
//! the others are traced for the check. The windows are narrow enough that the ratio test
//! still tells a grazed surface: for a captured-side winding that converges like √d, the
//! worst placement within them gives a ratio of 0.06 with near rays at 1e-8 M and 0.23 at
//! 1e-5 M, against 0.03 and 0.18 on the nominal ladder (computed here, not measured).
//!
//! Each crossing is also re-traced with refined numerics (`validation_rtol`, capture margin
//! `validation_capture_margin`, start radius `validation_start_radius`): the refined rays at
//! crossing ∓ δ, δ = min(tolerance, `check_width`) · 10^{k/2}, must be captured and escape.
//! The largest over the curve of each crossing's smallest such δ is the estimated error;
//! [`RaytraceChecks`] says whether it meets the requested tolerance, and why not when it does
//! not (a refined ray failed, for example at a degenerate horizon).
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
//! let settings = ShadowSettings { points: 8, tolerance: 1e-6, ..Default::default() };
//! let result = raytrace::solve(&Schwarzschild, &Observer::distant(1.0), &settings).unwrap();
//! let curve = result.curve.unwrap();
//! // The Schwarzschild critical impact parameter 3√3 (Synge 1966).
//! for r in &curve.radii {
//!     assert!((r - 27f64.sqrt()).abs() < 1e-5);
//! }
//! ```

use super::observer::{celestial_from_screen, momentum_from_celestial};
use super::{
    check_request, CriticalCurve, Diagnostics, Observer, ShadowError, ShadowResult, ShadowSettings,
    ShadowStatus,
};
use crate::geodesic::{
    hamilton_rhs, integrate_in_chart, null_radial_momentum, Chart, Control, ErrorNorm,
    IntegrationFailure, IntegratorSettings, PhaseState, RungeKuttaPair,
};
use crate::metric::{Spacetime, Symmetry};
use crate::scalar::{sin_cos, DualScalar};
use num_dual::Dual64;
use rayon::prelude::*;
use serde::Serialize;
use std::f64::consts::{FRAC_PI_2, PI, TAU};
use std::time::Instant;

mod seeding;

/// The solver's name on the command line and in results.
pub const NAME: &str = "raytrace";

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
    /// (common practice, no source): it treats the central region as absorbing. A boundary
    /// drawn by this core, and not by photon orbits, is rejected by the photon-orbit check.
    /// A metric that is regular at r = 0 with g_θθ > 0 there (a throat, such as a
    /// Simpson–Visser wormhole, or the disk of a Kerr-like metric) captures at r ≤ 0 instead:
    /// rays that cross r = 0 pass to the other side and do not return.
    pub horizonless_capture_radius: f64,
    /// For a horizonless metric, a ray that cannot be continued while moving inward, at a
    /// point where the metric is regular but stops being a regular Lorentzian metric at
    /// r (1 − domain_edge), has reached the inner edge of the metric's domain (a singular
    /// surface such as r = 2/ν of Janis–Newman–Winicour) and is absorbed there.
    pub domain_edge: f64,
    /// Pre-scan samples per curve radius along each radial line.
    pub scan_samples: usize,
    /// Every `anchor_every`-th curve angle is scanned in full; the others are bracketed from
    /// the crossing their finished neighbours predict (module docs, "Neighbour seeding").
    /// 1 scans every angle.
    pub anchor_every: usize,
    /// With more than `anchor_every` · `max_anchors` curve angles, the anchors are spread
    /// to at most `max_anchors` around the curve instead (every ⌈n/`max_anchors`⌉-th angle):
    /// a seeded line costs about a quarter of an anchor's rays, and with more angles the
    /// seeded levels predict their crossings better. The anchors also carry the star-shape
    /// diagnostic (a seeded line does not scan for further crossings), so with many angles it
    /// rests on `max_anchors` lines. At least 4 (seeding needs four anchors around the curve);
    /// ignored when `anchor_every` is 1.
    pub max_anchors: usize,
    /// While a ray moves outward beyond this radius (in M) only its escape is left to detect,
    /// and the relative tolerance is relaxed to `relaxed_rtol`; strict control resumes if it
    /// turns inward again.
    pub relaxed_radius: f64,
    /// Relative tolerance on outgoing rays beyond `relaxed_radius`.
    pub relaxed_rtol: f64,
    /// Beyond this radius (in M) a ray moving inward is integrated in u = 1/r and the
    /// parameter σ with dτ = r² dσ ([`Chart::InverseRadius`]), where the nearly straight
    /// incoming leg takes a few steps instead of a fixed number per e-fold of r (the
    /// integrator's step limits are then in σ). The refined re-tracing of the checks never
    /// uses it (its `far_radius` is infinite), so every curve's accuracy estimate compares
    /// the two. Infinite: never.
    pub far_radius: f64,
    /// Relative tolerance of the pre-scan and of the first bisection stage, which stops at a
    /// bracket of width `coarse_width` (in M); the bracket widened by `coarse_width` on both
    /// sides is then confirmed with the strict tolerance before the final bisection.
    pub coarse_rtol: f64,
    /// See `coarse_rtol`.
    pub coarse_width: f64,
    /// Curve crossings are bisected to half of min(tolerance, check_width) (in M), so that
    /// the photon-orbit check has rays close enough to the boundary.
    pub check_width: f64,
    /// Re-tracing of every crossing (the accuracy estimate): relative tolerance, capture
    /// margin and start radius of the refined rays.
    pub validation_rtol: f64,
    /// See `validation_rtol`.
    pub validation_capture_margin: f64,
    /// See `validation_rtol`.
    pub validation_start_radius: f64,
    /// Farthest distance (in M) from a crossing of the rays whose winding is compared (at
    /// most half the crossing's distance from the curve origin).
    pub winding_far: f64,
    /// Below this growth of the winding per e-fold of distance to the boundary (in radians),
    /// rays are not winding around a photon region. The default, 0.03 rad over the ~6
    /// e-folds between the mid and near rays, is a few times the winding's numerical noise
    /// (~1e-3 rad); the growth measured beside Kerr and KRZ curves is 0.03 to 4 (common
    /// practice, no source).
    pub winding_floor: f64,
    /// The winding's growth near the boundary must be at least this fraction of its growth
    /// farther out. Beside a photon orbit the two are equal up to the plunge's phase (seen
    /// from 0.5 to 2); beside a capture surface touched tangentially the growth falls by the
    /// square root (captured side) or all (escaping side) of the distance ratio, 1/18 and
    /// 1/316 over the default ladder (common practice, no source), and at most about 1/16 on
    /// the captured side where the check takes the refinement's rays (module docs,
    /// "Checks").
    pub winding_ratio: f64,
    /// When the screen centre escapes: spacing and half-length (in M) of the scan along the
    /// α axis (and, without equatorial symmetry, of a square grid) for an interior point.
    pub interior_scan_spacing: f64,
    /// See `interior_scan_spacing`.
    pub interior_scan_extent: f64,
    /// Pointing offset (α₀, β₀) in M: the screen point (α, β) is the photon of Bardeen's
    /// screen point (α + α₀, β + β₀), as for a camera pointed off the centre. The curve and
    /// every screen point the tracer reports are in the offset screen's coordinates. Zero by
    /// default; with it the screen centre need not lie inside the shadow, which exercises the
    /// interior search on curves known exactly (tests/raytrace_photon_orbits.rs).
    pub screen_offset: [f64; 2],
    /// Integrator tolerances and limits; the sign and size of `initial_step` are set per ray.
    /// Each ray uses an absolute tolerance of min(`atol`, its relative tolerance), so the
    /// validation rays (`validation_rtol`) stay stricter than the others. The absolute term
    /// matters only where a controlled component passes through zero: p_r and p_θ at turning
    /// points (θ and r stay away from zero). Those momenta are of order one in units
    /// G = c = M = E = 1, so atol = rtol there asks for the same accuracy as elsewhere along
    /// the ray; an atol far below rtol (1e-12 before) asked for a hundred times more on the
    /// few steps around every sign change. Measured on a Kerr curve: 12 % fewer steps with the
    /// default 1e-10, and its agreement with the separable solver unchanged within 1e-9 M. In
    /// the far chart ([`RaytraceOptions::far_radius`]) atol alone sets the scale of u = 1/r
    /// (at most 0.02 there): an error in r along the nearly radial far leg moves the ray
    /// along itself, and θ's scale is weighed by u.
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
            anchor_every: 4,
            max_anchors: 16,
            relaxed_radius: 25.0,
            relaxed_rtol: 1.0e-7,
            far_radius: 50.0,
            coarse_rtol: 1.0e-7,
            coarse_width: 3.0e-5,
            domain_edge: 1.0e-6,
            check_width: 1.0e-6,
            validation_rtol: 1.0e-11,
            validation_capture_margin: 1.0e-5,
            validation_start_radius: 1.0e5,
            winding_far: 1.0e-2,
            winding_floor: 0.005,
            winding_ratio: 0.25,
            interior_scan_spacing: 0.05,
            interior_scan_extent: 15.0,
            screen_offset: [0.0, 0.0],
            integrator: IntegratorSettings {
                rtol: 1.0e-10,
                atol: 1.0e-10,
                initial_step: -1.0,
                min_step: 1.0e-14,
                max_step: f64::INFINITY,
                max_steps: 50_000,
                pair: RungeKuttaPair::DormandPrince853,
            },
        }
    }
}

/// How a ray is integrated on one leg ([`Tracer::trace_ray_with`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Phase {
    /// Strict relative tolerance (else `relaxed_rtol`).
    strict: bool,
    /// In the far chart ([`Chart::InverseRadius`]).
    far: bool,
}

/// Why a single ray has no fate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, thiserror::Error)]
pub enum RayFailure {
    /// The integrator gave up.
    #[error("{0}")]
    Integration(IntegrationFailure),
    /// No null start momentum exists at the start point, or the screen point is off the screen.
    #[error("no null start data for screen point ({alpha}, {beta})")]
    NoStartData {
        /// Screen coordinate α, in M.
        alpha: f64,
        /// Screen coordinate β, in M.
        beta: f64,
    },
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

/// One traced ray: its fate, the accepted integrator steps it took, how far it wound around
/// the centre and how close it came.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct RayOutcome {
    /// Captured, escaped or failed.
    pub fate: RayFate,
    /// Accepted integrator steps.
    pub steps: usize,
    /// The angle (radians) swept by the ray's direction from the centre, (sin θ cos φ,
    /// sin θ sin φ, cos θ), relative to the locally non-rotating frames (each step's change
    /// of φ less ω Δt, ω = −g_tφ/g_φφ), summed while r exceeds the tracer's capture radius;
    /// 0 unless measured ([`Tracer::trace_measured`]); for a ray that ends at its radial
    /// turning point, the winding there, and for a ray captured at a certified radius, the
    /// winding down to that radius (module docs, "Early end"). For a planar orbit of a
    /// static metric it is the angle swept in the orbital plane. Measured relative to those frames it stays
    /// finite near a horizon, where φ itself winds without bound.
    pub winding: f64,
    /// The smallest radius reached before the ray ended (for a ray captured at a certified
    /// radius, about that radius).
    pub min_radius: f64,
    /// The ray was declared escaped at its radial turning point (module docs, "Early end"),
    /// not followed out to the escape radius.
    pub escaped_at_turning_point: bool,
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
    /// Rays that failed on this line, including those of an abandoned seeded attempt (whose
    /// message is not kept when the scan that replaced it converged).
    pub failed_rays: usize,
    /// Accepted integrator steps on this line.
    pub steps: usize,
    /// The photon-orbit check and accuracy estimate of the outermost crossing (curve lines
    /// only, see [`Tracer::check_crossing`]).
    pub check: Option<LineCheck>,
    /// Whether the crossing was bracketed from the neighbouring lines' prediction, without
    /// a scan for further crossings along this line (module docs, "Neighbour seeding").
    pub seeded: bool,
    /// The logarithmic winding law beside the outermost crossing, fitted to this line's rays
    /// on its captured and escaping sides; guides the refinement of the neighbouring lines
    /// (module docs, "Neighbour seeding"). Not part of any result.
    #[serde(skip)]
    pub(crate) law: Option<SideLaws>,
    /// The rays that refined the outermost crossing, for its winding check (which takes
    /// them where they lie at the distances it needs). Not part of any result.
    #[serde(skip)]
    pub(crate) nearby: Vec<NearbyRay>,
}

/// A ray traced while a crossing was refined, kept for the crossing's winding check.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct NearbyRay {
    /// Its distance from the line's origin, in M.
    pub rho: f64,
    /// Its winding ([`RayOutcome::winding`]).
    pub winding: f64,
    /// Captured (else escaped).
    pub captured: bool,
    /// Traced at the strict tolerance (else the coarse one).
    pub strict: bool,
}

/// The winding law w = c − k ln|ρ − ρ_c| beside a crossing ([`winding_law`]): (k, c) on the
/// captured side, then on the escaping side.
pub(crate) type SideLaws = [(f64, f64); 2];

/// The photon-orbit check and the accuracy estimate of one crossing (module docs).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LineCheck {
    /// The crossing checked, in M from the line's origin.
    pub crossing: f64,
    /// The crossing lies within this distance (in M) of the boundary re-traced with refined
    /// numerics: the refined rays at crossing ∓ this distance are captured and escape.
    /// `None` if not within the largest distance tried or if a refined ray failed (`note`).
    pub validated_within: Option<f64>,
    /// Distances (far, mid, near) from the crossing of the rays whose winding is compared,
    /// on the captured side; this and the windings and growths below are NaN where not
    /// measured (`winding_note`).
    pub distances: [f64; 3],
    /// The same on the escaping side. The far and mid rays are the refinement's own where
    /// it traced rays near those distances (module docs, "Checks"), so the two sides' may
    /// differ.
    pub distances_outside: [f64; 3],
    /// Their winding ([`RayOutcome::winding`]) on the captured side of the crossing.
    pub winding_inside: [f64; 3],
    /// Their winding on the escaping side.
    pub winding_outside: [f64; 3],
    /// Growth of the winding per e-fold of distance, [far segment, near segment], inside.
    pub growth_inside: [f64; 2],
    /// The same outside.
    pub growth_outside: [f64; 2],
    /// `Some(true)`: on both sides the winding keeps growing logarithmically as the distance
    /// shrinks, as beside a photon orbit; `Some(false)`: it does not; `None`: not checkable
    /// (`winding_note` says why).
    pub photon_orbit: Option<bool>,
    /// Why the crossing could not be validated (`validated_within` is `None`).
    pub validation_note: Option<String>,
    /// Why the winding could not be compared (`photon_orbit` is `None`).
    pub winding_note: Option<String>,
}

/// Below this distance (in M) from a crossing the strict rays' fates are not trusted for the
/// winding comparison: they place the boundary to ~1e-9 M (module docs).
const WINDING_NEAR_MIN: f64 = 1.0e-8;

impl LineBoundary {
    /// A line at screen angle `psi` with nothing traced yet.
    fn empty(psi: f64, seeded: bool) -> Self {
        LineBoundary {
            psi,
            crossings: Vec::new(),
            failure: None,
            rays: 0,
            failed_rays: 0,
            steps: 0,
            check: None,
            seeded,
            law: None,
            nearby: Vec::new(),
        }
    }

    /// Count the rays of an abandoned attempt at this line (its crossings and failure are not
    /// kept).
    fn add_rays_of(&mut self, attempt: &LineBoundary) {
        self.rays += attempt.rays;
        self.failed_rays += attempt.failed_rays;
        self.steps += attempt.steps;
    }

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
pub(crate) struct LineScan {
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
    /// No horizon: the absorbing core and the domain edge capture.
    horizonless: bool,
    /// The winding is summed only while r exceeds this radius, so that rays traced with
    /// different capture margins compare.
    winding_radius: f64,
    /// A ray that turns outward after moving inward escapes (module docs, "Early end"):
    /// set for a distant observer of a metric declared separable or spherically symmetric.
    turning_point_escapes: bool,
    /// The metric's Kerr–Newman form of the radial potential, which certifies capture
    /// (module docs, "Early end").
    carter_radial: Option<crate::metric::CarterRadial>,
    quadrature: Vec<(f64, f64)>,
}

/// What a ray's path left behind: steps, winding, closest approach, last state.
struct PathRecord {
    steps: usize,
    winding: f64,
    min_radius: f64,
    last: PhaseState,
    inward: bool,
    /// An inward step has been taken.
    moved_inward: bool,
    /// An outward step has followed an inward one: the ray passed a radial turning point.
    turned: bool,
    /// The direction from the centre and the frame-dragging rate ω at the last point, when
    /// the winding is measured.
    direction: Option<([f64; 3], f64)>,
    winding_radius: f64,
    /// The ray ends at its radial turning point: its winding is then the one at the turning
    /// point, `winding_at_turn`.
    ends_at_turn: bool,
    /// The winding at the first sign change of p_r (∝ dr/dτ), the radial turning point,
    /// with the step that passes it counted up to it (interpolated linearly in p_r).
    winding_at_turn: Option<f64>,
    /// Moving inward below this radius the ray is captured (a certificate, module docs
    /// "Early end"; −∞ without one): the step that passes it counts up to it.
    captured_below: f64,
}

impl PathRecord {
    fn new(
        y0: &PhaseState,
        measure: bool,
        winding_radius: f64,
        ends_at_turn: bool,
        captured_below: f64,
    ) -> Self {
        PathRecord {
            steps: 0,
            winding: 0.0,
            min_radius: y0[1],
            last: *y0,
            inward: false,
            moved_inward: false,
            turned: false,
            direction: measure.then(|| (direction(y0), 0.0)),
            winding_radius,
            ends_at_turn,
            winding_at_turn: None,
            captured_below,
        }
    }

    fn measuring(&self) -> bool {
        self.direction.is_some()
    }

    /// Record an accepted step; `omega` is the frame-dragging rate at `new` (used only when
    /// the winding is measured), and `far` says the step was taken in the far chart.
    fn step(&mut self, old: &PhaseState, new: &PhaseState, omega: f64, far: bool) {
        self.steps += 1;
        self.min_radius = self.min_radius.min(new[1]);
        self.last = *new;
        self.inward = new[1] < old[1];
        self.moved_inward |= self.inward;
        self.turned |= self.moved_inward && new[1] > old[1];
        if let Some((previous, previous_omega)) = self.direction {
            // The direction relative to the locally non-rotating frames: rotated back about
            // the axis by the mean ω times the step in t.
            let turn = -frame_rotation(old, new, previous_omega, omega, far);
            let (st, ct) = sin_cos(new[2]);
            let (sp, cp) = sin_cos(new[3] + turn);
            let current = [st * cp, st * sp, ct];
            // The part of the step above the winding radius (on an inward step, also above
            // the certified capture radius, where the ray ends), interpolated linearly in r,
            // so that the winding does not depend on where the steps happen to fall.
            let (hi, lo) = (old[1].max(new[1]), old[1].min(new[1]));
            let floor = if self.inward {
                self.winding_radius.max(self.captured_below)
            } else {
                self.winding_radius
            };
            let above = if lo > floor {
                1.0
            } else if hi > floor {
                (hi - floor) / (hi - lo)
            } else {
                0.0
            };
            let mut sweep = 0.0;
            if above > 0.0 {
                let c = cross(&previous, &current);
                sweep = above * dot(&c, &c).sqrt().atan2(dot(&previous, &current));
            }
            let sign_change = old[5] != 0.0 && old[5] * new[5] <= 0.0;
            if self.ends_at_turn && self.winding_at_turn.is_none() && sign_change {
                let before = old[5] / (old[5] - new[5]);
                self.winding_at_turn = Some(self.winding + before * sweep);
            }
            self.winding += sweep;
            // direction(new), with the polar sine and cosine computed above.
            let (sp, cp) = sin_cos(new[3]);
            self.direction = Some(([st * cp, st * sp, ct], omega));
        }
    }
}

/// ∫ω dt over an accepted step from `old` to `new`, with ω = `omega_old`, `omega_new` at its
/// ends: the trapezoidal rule, except on a step of the far chart (`far`). Such a step spans
/// a range of r over which ω changes by orders of magnitude (ω = 2J/r³ + O(r⁻⁴) for an
/// asymptotically flat metric; Bardeen, Press & Teukolsky 1972), where the trapezoid would
/// be wrong by more than the whole rotation. There ω ∝ r⁻ᵏ is taken between the ends (k from
/// their ratio; exact for the asymptotic law), and t linear in r across the step:
/// ∫ω dt = (Δt/Δr) (ω_old r_old − ω_new r_new)/(k − 1). A far step that passes a radial
/// turning point (t is then not a function of r) keeps the trapezoid.
fn frame_rotation(
    old: &PhaseState,
    new: &PhaseState,
    omega_old: f64,
    omega_new: f64,
    far: bool,
) -> f64 {
    let trapezoid = 0.5 * (omega_old + omega_new) * (new[0] - old[0]);
    // Only a step that moves inward without a radial turning point has t monotone in r.
    let monotone = new[1] < old[1] && old[5] * new[5] > 0.0;
    if !far || !monotone || omega_old * omega_new <= 0.0 {
        return trapezoid;
    }
    let log_ratio = (old[1] / new[1]).ln();
    let k = (omega_new / omega_old).ln() / log_ratio;
    if !k.is_finite() {
        return trapezoid;
    }
    // ∫ω dr from r_old to r_new; its limit at k = 1 is −ω_old r_old ln(r_old/r_new).
    let over_r = if (k - 1.0).abs() < 1e-6 {
        -omega_old * old[1] * log_ratio
    } else {
        (omega_old * old[1] - omega_new * new[1]) / (k - 1.0)
    };
    (new[0] - old[0]) / (new[1] - old[1]) * over_r
}

/// Whether the metric is a regular Lorentzian metric at (r, θ): finite components,
/// g_rr, g_θθ > 0 and a (t, φ) block of negative determinant.
fn regular_at(spacetime: &dyn Spacetime, r: f64, theta: f64) -> bool {
    let g = spacetime.components_at(r, theta);
    let finite = [g.g_tt, g.g_tphi, g.g_rr, g.g_thth, g.g_phph]
        .iter()
        .all(|x| x.is_finite());
    finite && g.g_rr > 0.0 && g.g_thth > 0.0 && g.g_tt * g.g_phph - g.g_tphi * g.g_tphi < 0.0
}

/// The unit vector (sin θ cos φ, sin θ sin φ, cos θ) of a phase point.
fn direction(y: &PhaseState) -> [f64; 3] {
    let (st, ct) = sin_cos(y[2]);
    let (sp, cp) = sin_cos(y[3]);
    [st * cp, st * sp, ct]
}

/// Refuse options the tracer cannot use: a start radius below 100 M, non-positive lengths,
/// widths and tolerances, a validation start radius inside the start radius, too few scan
/// samples or correction nodes, a far radius below 10 M, a non-finite screen offset.
fn check_options(options: &RaytraceOptions) -> Result<(), ShadowError> {
    let d = options.start_radius;
    if !(d.is_finite() && d >= 100.0) {
        return Err(ShadowError::BadRequest(format!(
            "the start radius must be at least 100 M, got {d}"
        )));
    }
    let positive = |x: f64| x.is_finite() && x > 0.0;
    let lengths = [
        options.capture_margin,
        options.horizonless_capture_radius,
        options.domain_edge,
        options.coarse_width,
        options.check_width,
        options.validation_rtol,
        options.validation_capture_margin,
        options.winding_far,
        options.winding_floor,
        options.winding_ratio,
        options.interior_scan_spacing,
        options.interior_scan_extent,
    ];
    if !lengths.into_iter().all(positive)
        || options.validation_start_radius < d
        || options.scan_samples < 2
        || options.correction_nodes < 2
        || options.anchor_every < 1
        || options.max_anchors < 4
    {
        return Err(ShadowError::BadRequest(
            "capture margins and radii, widths, tolerances and scan lengths must be \
             positive, the validation start radius at least the start radius, scan \
             samples and correction nodes at least 2, the anchor spacing at least 1 and the \
             most anchors at least 4"
                .into(),
        ));
    }
    // The far chart's step bound assumes |dr/dτ| ≤ 1, as far out in any asymptotically flat
    // metric (E = 1); infinite turns the chart off.
    if options.far_radius.is_nan() || options.far_radius < 10.0 {
        return Err(ShadowError::BadRequest(format!(
            "the far radius must be at least 10 M (or infinite), got {}",
            options.far_radius
        )));
    }
    if !options.screen_offset.iter().all(|x| x.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "the screen offset must be finite, got {:?}",
            options.screen_offset
        )));
    }
    Ok(())
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
        Tracer::build(spacetime, observer, options)
    }

    /// [`Tracer::new`] for images: a distant observer may also sit on the spin axis
    /// (θ_o = 0 or π, face-on), where every ray has p_φ = 0 and the screen axes are those
    /// of φ = 0.
    pub(crate) fn for_images(
        spacetime: &'a dyn Spacetime,
        observer: &Observer,
        options: &RaytraceOptions,
    ) -> Result<Self, ShadowError> {
        if observer.radius.is_some() {
            return Tracer::new(spacetime, observer, options);
        }
        observer.validate()?;
        Tracer::build(spacetime, observer, options)
    }

    fn build(
        spacetime: &'a dyn Spacetime,
        observer: &Observer,
        options: &RaytraceOptions,
    ) -> Result<Self, ShadowError> {
        check_options(options)?;
        let d = options.start_radius;
        let horizon = spacetime.outer_horizon();
        // Without a horizon: a metric regular at r = 0 with g_θθ > 0 there has a throat (or,
        // Kerr-like, a disk) at r = 0, through which rays pass to r < 0 and do not return:
        // they are captured once r ≤ 0, so that a photon orbit at the throat stays visible.
        let capture_radius = match horizon {
            Some(r_plus) => r_plus * (1.0 + options.capture_margin),
            None if regular_at(spacetime, 0.0, 1.0) => 0.0,
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
            horizonless: horizon.is_none(),
            winding_radius: capture_radius,
            turning_point_escapes: observer.radius.is_none()
                && (spacetime.is_separable() || spacetime.symmetry() == Symmetry::Spherical),
            carter_radial: spacetime.carter_radial(),
            quadrature: crate::numerics::gauss_legendre_unit(options.correction_nodes),
        })
    }

    /// The tracer that re-traces crossings with refined numerics (tighter tolerance, smaller
    /// capture margin, larger start radius); it sums the winding above this tracer's capture
    /// radius, so that windings compare.
    pub(crate) fn validator(&self) -> Result<Tracer<'a>, ShadowError> {
        let o = &self.options;
        let refined = RaytraceOptions {
            start_radius: o.validation_start_radius,
            capture_margin: o.validation_capture_margin,
            far_radius: f64::INFINITY,
            integrator: IntegratorSettings {
                rtol: o.validation_rtol,
                ..o.integrator
            },
            ..*o
        };
        let mut validator = Tracer::new(self.spacetime, &self.observer, &refined)?;
        validator.winding_radius = self.capture_radius;
        Ok(validator)
    }

    /// The phase-space start state of the backward ray through screen point (α, β).
    pub(crate) fn start_state(&self, alpha: f64, beta: f64) -> Result<PhaseState, RayFailure> {
        let no_data = RayFailure::NoStartData { alpha, beta };
        let [alpha0, beta0] = self.options.screen_offset;
        let (alpha, beta) = (alpha + alpha0, beta + beta0);
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

    /// Follow the ray through (α, β) backwards until capture, escape or failure; where the
    /// metric and observer allow it, an escaping ray ends at its radial turning point (module
    /// docs, "Early end").
    pub fn trace(&self, alpha: f64, beta: f64) -> RayOutcome {
        self.trace_ray(alpha, beta, self.options.integrator.rtol, false, true)
    }

    /// [`Tracer::trace`] with relative tolerance `rtol`, the winding measured when `measure`
    /// (up to where the ray ends, its turning point for an early escape).
    pub(crate) fn trace_with(&self, alpha: f64, beta: f64, rtol: f64, measure: bool) -> RayOutcome {
        self.trace_ray(alpha, beta, rtol, measure, true)
    }

    /// [`Tracer::trace`] with the winding measured (see [`RayOutcome::winding`]), every ray
    /// followed to the capture or escape radius (no early end).
    pub fn trace_measured(&self, alpha: f64, beta: f64) -> RayOutcome {
        self.trace_ray(alpha, beta, self.options.integrator.rtol, true, false)
    }

    /// One ray with the options' integrator pair; a ray that the pair cannot finish (step
    /// limit or step-size underflow, as for rays grazing the pole of a near-polar orbit with
    /// the eighth-order pair) is traced again with the Dormand–Prince 5(4) pair, and its steps
    /// are added. Only a ray that fails both ways is a failed ray.
    fn trace_ray(
        &self,
        alpha: f64,
        beta: f64,
        rtol: f64,
        measure: bool,
        early: bool,
    ) -> RayOutcome {
        let pair = self.options.integrator.pair;
        let first = self.trace_ray_with(alpha, beta, rtol, measure, early, pair);
        let gave_up = matches!(
            first.fate,
            RayFate::Failed(RayFailure::Integration(
                IntegrationFailure::TooManySteps { .. }
                    | IntegrationFailure::StepSizeUnderflow { .. }
            ))
        );
        if !gave_up || pair == RungeKuttaPair::DormandPrince54 {
            return first;
        }
        let mut again = self.trace_ray_with(
            alpha,
            beta,
            rtol,
            measure,
            early,
            RungeKuttaPair::DormandPrince54,
        );
        again.steps += first.steps;
        again
    }

    // Long: one loop over the strict and relaxed phases of a ray, sharing the path record, the event and the integrator call; the ray tracer's hot path, kept whole for speed.
    fn trace_ray_with(
        &self,
        alpha: f64,
        beta: f64,
        rtol: f64,
        measure: bool,
        early: bool,
        pair: RungeKuttaPair,
    ) -> RayOutcome {
        let y0 = match self.start_state(alpha, beta) {
            Ok(y) => y,
            Err(failure) => {
                return RayOutcome {
                    fate: RayFate::Failed(failure),
                    steps: 0,
                    winding: 0.0,
                    min_radius: f64::INFINITY,
                    escaped_at_turning_point: false,
                }
            }
        };
        let capture = self.capture_radius;
        // Inward below this radius the ray certainly falls in (module docs, "Early end").
        let captured_below = self
            .carter_radial
            .filter(|_| early)
            .and_then(|c| c.capture_certified_below(y0[7] / -y0[4]))
            .unwrap_or(f64::NEG_INFINITY);
        let early = early && self.turning_point_escapes;
        // The absolute tolerance is at most the relative one (see `RaytraceOptions::integrator`).
        let strict_settings = IntegratorSettings {
            rtol,
            atol: self.options.integrator.atol.min(rtol),
            pair,
            ..self.options.integrator
        };
        let relaxed_settings = IntegratorSettings {
            rtol: strict_settings.rtol.max(self.options.relaxed_rtol),
            ..strict_settings
        };
        let mut y = y0;
        // Strict from the start; in the far chart if moving inward. The ray is traced
        // backward (negative steps) and g^rr > 0 there, so r grows along the integration
        // where p_r < 0.
        let mut phase = Phase {
            strict: true,
            far: self.phase_after(&y0, y0[5] < 0.0).far,
        };
        let mut path = PathRecord::new(&y0, measure, self.winding_radius, early, captured_below);
        // Phases ([`Phase`]): strict error control, except while moving outward beyond the
        // relaxed radius (then only the escape is left to detect), and the far chart beyond
        // the far radius; the ray returns to strict control as soon as it turns inward again.
        let fate = loop {
            let base = if phase.strict {
                &strict_settings
            } else {
                &relaxed_settings
            };
            let first_step = 0.01 * (y[1] - capture).abs().max(0.1);
            // In the far chart (dσ = dτ/r²; the step limits are in σ there), no step longer
            // than 1/R in σ: u grows by at most |dr/dτ| Δσ ≤ (1 + O(M/R))/R (|dr/dτ| ≤ 1
            // for E = 1 in flat space), so a step that enters the near region ends at about
            // r ≥ R/2. The far leg spans Δσ = ψ/b ≈ 1/R from far away (the angle ψ = b/R
            // it sweeps, over b), so the first trial step is a tenth of that; the τ-chart's
            // first step (1 % of r), in σ = τ/r², would need a dozen steps of growth.
            let (chart, first_step, max_step) = if phase.far {
                let cap = 1.0 / self.options.far_radius;
                (Chart::InverseRadius, 0.1 * cap, base.max_step.min(cap))
            } else {
                (Chart::Affine, first_step, base.max_step)
            };
            let settings = IntegratorSettings {
                initial_step: -first_step,
                max_step,
                max_steps: base.max_steps.saturating_sub(path.steps).max(1),
                ..*base
            };
            let mut event = None;
            let mut next = phase;
            let end = integrate_in_chart(
                self.spacetime,
                y,
                f64::INFINITY,
                &settings,
                ErrorNorm::Dynamical,
                chart,
                |old, new, _| {
                    let omega = if path.measuring() {
                        self.frame_dragging(new)
                    } else {
                        0.0
                    };
                    path.step(old, new, omega, phase.far);
                    next = self.phase_after(new, new[1] > old[1]);
                    event = if early && path.turned {
                        Some(Some(RayFate::Escaped))
                    } else if new[1] < captured_below && new[1] < old[1] {
                        Some(Some(RayFate::Captured))
                    } else {
                        self.step_event(old, new, phase != next)
                    };
                    if event.is_some() {
                        Control::Stop
                    } else {
                        Control::Continue
                    }
                },
            );
            match (end, event) {
                (Err(_), _) if path.inward && self.at_domain_edge(&path.last) => {
                    break RayFate::Captured
                }
                (Err(failure), _) => break RayFate::Failed(RayFailure::Integration(failure)),
                (Ok(_), Some(Some(fate))) => break fate,
                (Ok(end), Some(None)) => {
                    y = end.state;
                    phase = next;
                    if path.steps >= strict_settings.max_steps {
                        break RayFate::Failed(RayFailure::Integration(
                            IntegrationFailure::TooManySteps { steps: path.steps },
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
        let escaped_at_turning_point = early && path.turned && fate == RayFate::Escaped;
        RayOutcome {
            fate,
            steps: path.steps,
            winding: match path.winding_at_turn {
                Some(winding) if escaped_at_turning_point => winding,
                _ => path.winding,
            },
            min_radius: path.min_radius,
            escaped_at_turning_point,
        }
    }

    /// What an accepted step from `old` to `new` ends in: `Some(Some(fate))` for capture or
    /// escape, `Some(None)` when the ray belongs in another [`Phase`] from here (`switch`,
    /// from [`Tracer::phase_after`]), `None` to go on.
    fn step_event(
        &self,
        old: &PhaseState,
        new: &PhaseState,
        switch: bool,
    ) -> Option<Option<RayFate>> {
        let outward = new[1] > old[1];
        let small_inward_step = !outward && old[1] - new[1] < self.options.domain_edge * new[1];
        if new[1] <= self.capture_radius {
            Some(Some(RayFate::Captured))
        } else if new[1] > self.escape_radius && outward {
            Some(Some(RayFate::Escaped))
        } else if self.horizonless && small_inward_step && self.at_domain_edge(new) {
            // Small inward steps: the domain edge may be near.
            Some(Some(RayFate::Captured))
        } else if switch {
            Some(None)
        } else {
            None
        }
    }

    /// The phase a ray at `y` moving outward or not belongs in. The far chart is for inward
    /// legs only: outward, u = 1/r falls to zero at finite σ (r = ∞), and a step that passed
    /// it would leave the escape radius behind by an arbitrary angle.
    fn phase_after(&self, y: &PhaseState, outward: bool) -> Phase {
        Phase {
            strict: !(outward && y[1] > self.options.relaxed_radius),
            far: !outward && y[1] > self.options.far_radius,
        }
    }

    /// The angular velocity ω = −g_tφ/g_φφ of the locally non-rotating frames at `y`
    /// (Bardeen, Press & Teukolsky 1972); 0 where g_φφ vanishes.
    fn frame_dragging(&self, y: &PhaseState) -> f64 {
        let g = self.spacetime.components_at(y[1], y[2]);
        if g.g_phph != 0.0 && g.g_tphi.is_finite() {
            -g.g_tphi / g.g_phph
        } else {
            0.0
        }
    }

    /// A ray is captured at r ≤ this radius (in M).
    pub(crate) fn capture_radius(&self) -> f64 {
        self.capture_radius
    }

    /// An outgoing ray escapes beyond this radius (in M).
    pub(crate) fn escape_radius(&self) -> f64 {
        self.escape_radius
    }

    /// See [`Tracer::at_domain_edge`].
    pub(crate) fn reached_domain_edge(&self, y: &PhaseState) -> bool {
        self.at_domain_edge(y)
    }

    /// Whether a ray of a horizonless metric, moving inward, has reached the inner edge of the
    /// metric's domain at `y`: the metric is regular there and not at r (1 − `domain_edge`)
    /// (see [`RaytraceOptions::domain_edge`]). Asked when the integration fails or its inward
    /// steps in r shrink below that distance.
    fn at_domain_edge(&self, y: &PhaseState) -> bool {
        let [_, r, theta, ..] = *y;
        let regular = |r: f64| regular_at(self.spacetime, r, theta);
        self.horizonless && regular(r) && !regular(r * (1.0 - self.options.domain_edge))
    }

    /// Check the outermost crossing of a converged `line` about `origin` and store the result
    /// in `line.check` (module docs, "Checks"): re-trace it with `validator` at distances
    /// δ = `width` · 10^{k/2} until the refined rays bracket it, then compare the winding of
    /// rays at three distances (far, mid, near) on both sides. The crossing should be
    /// bisected to well below `width` (the ray tracer uses half).
    pub(crate) fn check_crossing(
        &self,
        validator: &Tracer,
        origin: [f64; 2],
        line: &mut LineBoundary,
        width: f64,
    ) {
        let nearby = std::mem::take(&mut line.nearby);
        let Some(crossing) = line.outermost() else {
            return;
        };
        let (sin, cos) = line.psi.sin_cos();
        // The ray `offset` M from the crossing along the line (inside for offset < 0), its
        // winding measured up to where it ends.
        let trace = |tracer: &Tracer, offset: f64, rtol: f64| {
            let rho = crossing + offset;
            tracer.trace_with(origin[0] + rho * cos, origin[1] + rho * sin, rtol, true)
        };
        let count = |out: &RayOutcome, line: &mut LineBoundary| {
            line.rays += 1;
            line.steps += out.steps;
            line.failed_rays += usize::from(matches!(out.fate, RayFate::Failed(_)));
        };
        let ray = |tracer: &Tracer, offset: f64, rtol: f64, line: &mut LineBoundary| {
            let out = trace(tracer, offset, rtol);
            count(&out, line);
            out
        };
        let (far, _) = self.ladder_distances(crossing, width);
        let mut check = LineCheck {
            crossing,
            validated_within: None,
            distances: [far, f64::NAN, f64::NAN],
            distances_outside: [far, f64::NAN, f64::NAN],
            winding_inside: [f64::NAN; 3],
            winding_outside: [f64::NAN; 3],
            growth_inside: [f64::NAN; 2],
            growth_outside: [f64::NAN; 2],
            photon_orbit: None,
            validation_note: None,
            winding_note: None,
        };
        // Accuracy: the refined rays must bracket the crossing.
        let mut near = None;
        let mut delta = width;
        while delta <= 0.01 * far {
            let rtol = validator.options.integrator.rtol;
            // The two rays side by side: the last level's checks are few per thread.
            let (inside, outside) = rayon::join(
                || trace(validator, -delta, rtol),
                || trace(validator, delta, rtol),
            );
            count(&inside, line);
            count(&outside, line);
            match (inside.fate, outside.fate) {
                (RayFate::Captured, RayFate::Escaped) => {
                    check.validated_within = Some(delta);
                    near = (delta >= WINDING_NEAR_MIN).then_some((delta, [inside, outside]));
                    break;
                }
                (RayFate::Failed(f), _) | (_, RayFate::Failed(f)) => {
                    check.validation_note = Some(format!(
                        "a re-traced ray {delta:.1e} M from the crossing failed: {f}"
                    ));
                    break;
                }
                _ => delta *= 10f64.sqrt(),
            }
        }
        if check.validated_within.is_none() && check.validation_note.is_none() {
            check.validation_note = Some(format!(
                "the boundary re-traced with refined numerics is more than {:.1e} M from the \
                 crossing",
                delta / 10f64.sqrt()
            ));
        }
        let ladder =
            |offset: f64, rtol: f64, line: &mut LineBoundary| ray(self, offset, rtol, line);
        self.winding_ladder(&mut check, near, width, &nearby, ladder, line);
        line.check = Some(check);
    }

    /// The distances from a crossing `crossing` M from the curve origin of the winding
    /// check's far and middle rays, when its near rays are `near` M from it: far =
    /// min(`winding_far`, crossing/2), middle = √(far · near) (module docs, "Checks").
    fn ladder_distances(&self, crossing: f64, near: f64) -> (f64, f64) {
        let far = self.options.winding_far.min(0.5 * crossing);
        (far, (far * near).sqrt())
    }

    /// The winding comparison of [`Tracer::check_crossing`]: rays at the far distance (loose
    /// tolerance when it is at least 1e-3 M), the mid one and the near one (strict, unless the
    /// validation supplied it) on both sides; the
    /// winding must keep growing per e-fold of distance near the crossing, by at least
    /// `winding_floor` and at least `winding_ratio` times its growth farther out. A far or
    /// mid ray is taken from `nearby` (the refinement's rays) where one lies on its side within
    /// a twelfth of the ladder's span in ln(distance) of where it is wanted (module docs,
    /// "Checks"), was traced at a tolerance that serves there, and lies at least 20 `width`
    /// from the crossing (so that its distance is known to 5 %).
    fn winding_ladder(
        &self,
        check: &mut LineCheck,
        near: Option<(f64, [RayOutcome; 2])>,
        width: f64,
        nearby: &[NearbyRay],
        mut ray: impl FnMut(f64, f64, &mut LineBoundary) -> RayOutcome,
        line: &mut LineBoundary,
    ) {
        let far = check.distances[0];
        let bracketing = |o: &[RayOutcome; 2]| {
            matches!(
                (o[0].fate, o[1].fate),
                (RayFate::Captured, RayFate::Escaped)
            )
        };
        // Without validated rays to reuse, strict rays as near as WINDING_NEAR_MIN, moved out
        // tenfold (twice at most) until they bracket the crossing.
        let strict = self.options.integrator.rtol;
        let near = near.or_else(|| {
            (0..3).find_map(|k| {
                let d = width.max(WINDING_NEAR_MIN) * 10f64.powi(k);
                let rays = [-d, d].map(|offset| ray(offset, strict, line));
                bracketing(&rays).then_some((d, rays))
            })
        });
        let Some(near) = near else {
            check.winding_note = Some(format!(
                "the strict rays up to {:.1e} M on either side of the crossing do not bracket it \
                 (a failed ray, or the boundary is not sharp there)",
                width.max(WINDING_NEAR_MIN) * 100.0
            ));
            return;
        };
        if far < 100.0 * near.0 {
            check.winding_note = Some(format!(
                "the crossing at {} M is too close to the curve origin for the winding check",
                check.crossing
            ));
            return;
        }
        // Rays at least 1e-3 M from the crossing are classified reliably with the loose
        // tolerance, in about a quarter of the steps. (Its noise is ~1e-6 M for most rays but
        // more for rays that run close to the axis: at 179.99° rays 1e-5 M from the crossing
        // were misclassified.)
        let (_, mid) = self.ladder_distances(check.crossing, near.0);
        let loose_from = 1e-3;
        let rtol = |d: f64| {
            if d >= loose_from {
                self.options.coarse_rtol.max(strict)
            } else {
                strict
            }
        };
        let window = ((far / near.0).ln() / 12.0).exp();
        let crossing = check.crossing;
        // (distance, winding, on its side of the crossing) of the ray wanted at distance d on
        // one side: a nearby ray within [lo, hi], else a new one.
        let mut rung = |d: f64, lo: f64, hi: f64, inside: bool, line: &mut LineBoundary| {
            let reused = nearby
                .iter()
                .filter(|r| r.captured == inside && (r.rho < crossing) == inside)
                .filter(|r| r.winding.is_finite())
                .map(|r| ((r.rho - crossing).abs(), r))
                .filter(|&(dist, r)| {
                    dist >= lo.max(20.0 * width) && dist <= hi && (r.strict || dist >= loose_from)
                })
                .min_by(|p, q| (p.0 / d).ln().abs().total_cmp(&(q.0 / d).ln().abs()));
            match reused {
                Some((dist, r)) => (dist, r.winding, true),
                None => {
                    let out = ray(if inside { -d } else { d }, rtol(d), line);
                    let expected = if inside {
                        RayFate::Captured
                    } else {
                        RayFate::Escaped
                    };
                    (d, out.winding, out.fate == expected)
                }
            }
        };
        let sides = [true, false].map(|inside| {
            [
                rung(far, far / window, far, inside, line),
                rung(mid, mid / window, mid * window, inside, line),
            ]
        });
        if let Some(k) = sides.iter().flatten().position(|r| !r.2) {
            let d = [far, mid][k % 2];
            check.winding_note = Some(format!(
                "the rays {d:.1e} M on either side of the crossing do not bracket it (another \
                 crossing nearby, or a failed ray)"
            ));
            return;
        }
        let ladder = |side: usize| {
            let [f, m] = sides[side];
            let distances = [f.0, m.0, near.0];
            let windings = [f.1, m.1, near.1[side].winding];
            let growth = [
                (windings[1] - windings[0]) / (distances[0] / distances[1]).ln(),
                (windings[2] - windings[1]) / (distances[1] / distances[2]).ln(),
            ];
            (distances, windings, growth)
        };
        let (d_in, w_in, g_in) = ladder(0);
        let (d_out, w_out, g_out) = ladder(1);
        check.distances = d_in;
        check.distances_outside = d_out;
        check.winding_inside = w_in;
        check.winding_outside = w_out;
        check.growth_inside = g_in;
        check.growth_outside = g_out;
        let (floor, ratio) = (self.options.winding_floor, self.options.winding_ratio);
        let winds = |g: [f64; 2]| g[1] >= floor && g[1] >= ratio * g[0];
        check.photon_orbit = Some(winds(g_in) && winds(g_out));
    }

    /// All boundary crossings along the line origin + ρ (cos ψ, sin ψ), ρ > 0, given whether
    /// the ray through the origin is captured: a scan with spacing `spacing` over at least
    /// [0, `scan_to`] and on to half a curve radius (and at least three samples) beyond the
    /// outermost captured sample, then bisection of every transition to `tolerance`. Gives up
    /// (as a failure) beyond `max_radius`.
    ///
    /// If a crossing found with the loose tolerance is not confirmed with the strict one (rays
    /// that pass close to a singularity can be misclassified by the loose tolerance), the line
    /// is scanned again with the strict tolerance throughout.
    pub(crate) fn boundary_along_line(
        &self,
        origin: [f64; 2],
        origin_captured: bool,
        psi: f64,
        scan: &LineScan,
    ) -> LineBoundary {
        let strict = self.options.integrator.rtol;
        let coarse = self.options.coarse_rtol.max(strict);
        let (line, unconfirmed) = self.scan_line(origin, origin_captured, psi, scan, coarse);
        if !unconfirmed || coarse == strict {
            return line;
        }
        let (mut again, _) = self.scan_line(origin, origin_captured, psi, scan, strict);
        again.add_rays_of(&line);
        again
    }

    /// The crossing along the line origin + ρ (cos ψ, sin ψ) near the one `seed` predicts
    /// (module docs, "Neighbour seeding"): a bracket of the seed's half-width h about the
    /// guess, searched outward on the crossing's side in steps of 4h, 16h and 64h, and refined
    /// with strict rays throughout, guided by the seed's winding law, when the seed has one or
    /// h is at most `coarse_width` (else as a scan bracket is); then one loose ray where a
    /// scan would stop, at ρ + max(3 spacings, ρ/2), must escape. A line whose bracket is not found or not confirmed, whose outer ray
    /// is captured, or one with a failed ray, is scanned in full
    /// ([`Tracer::boundary_along_line`]); its rays count on the line.
    pub(crate) fn boundary_near(
        &self,
        origin: [f64; 2],
        psi: f64,
        seed: seeding::Seed,
        scan: &LineScan,
    ) -> LineBoundary {
        let mut seed = seed;
        let width = 2.0 * scan.tolerance;
        // A prediction known to a small fraction of the final bracket: its rays go there
        // first (module docs, "Neighbour seeding").
        let aim = (seed.error <= AIM_ERROR_FRACTION * width)
            .then_some((seed.guess, (AIM_ERRORS * seed.error).max(0.45 * width)));
        if seed.law.is_some() {
            // The check's middle rays, from the bracket (module docs, "Neighbour seeding").
            let (_, mid) = self.ladder_distances(seed.guess, width.max(WINDING_NEAR_MIN));
            seed.half_width = seed.half_width.max(mid);
        }
        let coarse = self.options.coarse_rtol.max(self.options.integrator.rtol);
        let mut line = LineBoundary::empty(psi, true);
        let probe = LineProbe::new(self, origin, psi);
        let strict = self.options.integrator.rtol;
        let crossing = if seed.half_width <= self.options.coarse_width || seed.law.is_some() {
            // Within the coarse stage's final width, or guided by the neighbours' law from
            // the start: strict rays throughout.
            probe
                .seeded_bracket(seed, strict, &mut line)
                .and_then(|b| probe.strict_crossing(b, scan.tolerance, seed.law, aim, &mut line))
        } else {
            probe
                .seeded_bracket(seed, coarse, &mut line)
                .and_then(|b| probe.crossing(b, scan.tolerance, coarse, &mut line).ok())
        };
        if let (Some(rho), None) = (crossing, &line.failure) {
            // No captured ray where the scan would have ended (an outer captured region).
            let outer = rho + (3.0 * scan.spacing).max(0.5 * rho);
            if matches!(probe.classify(outer, coarse, &mut line), Some((false, _))) {
                line.crossings.push(rho);
                return line;
            }
        }
        let mut full = self.boundary_along_line(origin, true, psi, scan);
        full.add_rays_of(&line);
        full
    }

    /// [`Tracer::boundary_along_line`] with the scan and first bisection stage at relative
    /// tolerance `coarse`; also says whether a crossing was not confirmed at the strict one.
    fn scan_line(
        &self,
        origin: [f64; 2],
        origin_captured: bool,
        psi: f64,
        scan: &LineScan,
        coarse: f64,
    ) -> (LineBoundary, bool) {
        let mut line = LineBoundary::empty(psi, false);
        let probe = LineProbe::new(self, origin, psi);
        let Some(brackets) = probe.brackets(origin_captured, scan, coarse, &mut line) else {
            return (line, false);
        };
        for bracket in brackets {
            match probe.crossing(bracket, scan.tolerance, coarse, &mut line) {
                Ok(rho) => line.crossings.push(rho),
                Err(unconfirmed) => return (line, unconfirmed),
            }
        }
        (line, false)
    }
}

/// A bracket of the scan along a line: ρ_lo < ρ_hi, whether the ray at ρ_lo is captured,
/// and the windings of the two rays.
#[derive(Debug, Clone, Copy)]
struct LineBracket {
    lo: f64,
    hi: f64,
    captured_lo: bool,
    winding: [f64; 2],
}

/// A bracket being refined: `a` is on the side of the line's inner end (the side of
/// [`LineBracket::captured_lo`]), `b` on the other; `wa`, `wb` are their rays' windings.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Bracket {
    a: f64,
    wa: f64,
    b: f64,
    wb: f64,
}

impl Bracket {
    fn width(&self) -> f64 {
        (self.b - self.a).abs()
    }

    /// Move the end on the side of a new ray at ρ (`a`'s if `side_a`) there.
    fn replace_end(&mut self, rho: f64, winding: f64, side_a: bool) {
        if side_a {
            self.a = rho;
            self.wa = winding;
        } else {
            self.b = rho;
            self.wb = winding;
        }
    }
}

/// A classified ray of a bracket's refinement: (ρ, winding, on the side of `a`).
type Probed = (f64, f64, bool);

/// The logarithmic law of the winding on one side of a crossing near `centre`,
/// w = c − k ln|ρ − ρ_c| (module docs, "Checks"): k by least squares over the rays of that
/// side between `near` and `far` from `centre` (where the distance is known to a few per
/// cent and the law holds), c from the two of them nearest the crossing (the law's
/// corrections shrink with the distance); `None` without two such rays an e-fold apart or
/// for an implausible slope.
fn winding_law(
    probed: &[Probed],
    side: bool,
    centre: f64,
    near: f64,
    far: f64,
) -> Option<(f64, f64)> {
    let mut points: Vec<(f64, f64)> = probed
        .iter()
        .filter(|p| p.2 == side)
        .map(|p| ((p.0 - centre).abs(), p.1))
        .filter(|&(d, w)| d >= near && d <= far && w.is_finite())
        .map(|(d, w)| (d.ln(), w))
        .collect();
    if points.len() < 2 {
        return None;
    }
    let n = points.len() as f64;
    let mx = points.iter().map(|p| p.0).sum::<f64>() / n;
    let my = points.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = points.iter().map(|p| (p.0 - mx) * (p.0 - mx)).sum();
    let sxy: f64 = points.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let (lo, hi) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.0), hi.max(p.0))
        });
    let k = -sxy / sxx;
    points.sort_by(|p, q| p.0.total_cmp(&q.0));
    let c = 0.5 * (points[0].1 + points[1].1 + k * (points[0].0 + points[1].0));
    (hi - lo >= 1.0 && k.is_finite() && (1e-3..=1e3).contains(&k)).then_some((k, c))
}

/// The crossing ρ_c in the open bracket that best fits the law w = c_s − k_s ln|ρ − ρ_c| to
/// the windings on both sides at once (module docs, "Checks"): ρ_c shared, (c_s, k_s) per
/// side by linear least squares for each trial ρ_c, ρ_c minimising the summed squared
/// residuals. The fit uses up to four rays per side, the nearest to the bracket that lie on
/// their own side of it and within `far` of its centre; it needs three on one side (with that
/// side's two constants they determine ρ_c; a side of two rays fits any ρ_c exactly and adds
/// nothing) and a positive slope on every side with two or more. Where `slopes` gives a
/// side's k_s (the neighbouring lines' law, side of `a` first) and that side has fewer than
/// three rays, only c_s is fitted there, and two rays on that side suffice.
/// Because ρ_c is fitted, the rays nearest the crossing, whose distances are known only to
/// the bracket's width, take part; the law's constants are not extrapolated over decades of
/// distance from far rays. `None` without enough rays or when no trial point fits.
fn fitted_crossing(
    probed: &[Probed],
    bracket: &Bracket,
    far: f64,
    slopes: Option<[f64; 2]>,
) -> Option<f64> {
    let dir = (bracket.b - bracket.a).signum();
    let centre = 0.5 * (bracket.a + bracket.b);
    let side_rays = |side: bool| -> Vec<(f64, f64)> {
        let end = if side { bracket.a } else { bracket.b };
        let outward = if side { -dir } else { dir };
        let mut rays: Vec<(f64, f64)> = probed
            .iter()
            .filter(|p| p.2 == side && p.1.is_finite())
            .filter(|p| outward * (p.0 - end) >= 0.0 && (p.0 - centre).abs() <= far)
            .map(|p| (p.0, p.1))
            .collect();
        rays.sort_by(|p, q| (p.0 - end).abs().total_cmp(&(q.0 - end).abs()));
        rays.dedup_by(|p, q| p.0 == q.0);
        rays.truncate(4);
        rays
    };
    let sides = [side_rays(true), side_rays(false)];
    // The neighbours' slope serves only a side without three rays of its own.
    let slope = |side: usize| slopes.filter(|_| sides[side].len() < 3).map(|k| k[side]);
    let determines = |side: usize| sides[side].len() >= if slope(side).is_some() { 2 } else { 3 };
    if !determines(0) && !determines(1) {
        return None;
    }
    // Residual of the fit with the crossing at ρ_c, or None for a non-positive slope.
    let residual = |rho_c: f64| -> Option<f64> {
        let mut total = 0.0;
        for (side, rays) in sides.iter().enumerate().filter(|(_, r)| r.len() >= 2) {
            let n = rays.len() as f64;
            let xs: Vec<f64> = rays.iter().map(|p| (p.0 - rho_c).abs().ln()).collect();
            let mx = xs.iter().sum::<f64>() / n;
            let my = rays.iter().map(|p| p.1).sum::<f64>() / n;
            let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
            for (x, p) in xs.iter().zip(rays) {
                sxx += (x - mx) * (x - mx);
                sxy += (x - mx) * (p.1 - my);
                syy += (p.1 - my) * (p.1 - my);
            }
            total += match slope(side) {
                // Residuals of w + k ln d about their mean, the fitted c.
                Some(k) => (syy + 2.0 * k * sxy + k * k * sxx).max(0.0),
                // The winding grows towards the crossing: slope −k = sxy/sxx < 0.
                None if sxx > 0.0 && sxy < 0.0 => (syy - sxy * sxy / sxx).max(0.0),
                None => return None,
            };
        }
        Some(total)
    };
    // The crossing is often far closer to one end than the bracket is wide: trial points at
    // distances w·10^(−j/3) (down to 1e-8 w) from either end, then golden-section search
    // (Press et al., Numerical Recipes, 3rd ed., §10.2) between the best trial point's
    // neighbours (to about 1e-3 of their spacing); the best point evaluated is returned.
    let w = bracket.width();
    let mut trials: Vec<f64> = (1..=24)
        .flat_map(|j| {
            let d = w * 10f64.powf(-(j as f64) / 3.0);
            [bracket.a + dir * d, bracket.b - dir * d]
        })
        .collect();
    trials.push(centre);
    trials.sort_by(f64::total_cmp);
    trials.dedup();
    let scored: Vec<(f64, f64)> = trials
        .iter()
        .filter_map(|&t| residual(t).map(|r| (t, r)))
        .collect();
    let best = (0..scored.len()).min_by(|&i, &j| scored[i].1.total_cmp(&scored[j].1))?;
    let lo = if best > 0 {
        scored[best - 1].0
    } else {
        bracket.a.min(bracket.b)
    };
    let hi = scored
        .get(best + 1)
        .map_or(bracket.a.max(bracket.b), |p| p.0);
    let (mut x0, mut x1) = (lo, hi);
    let mut best = scored[best];
    let golden = 0.5 * (5f64.sqrt() - 1.0);
    for _ in 0..16 {
        let (m0, m1) = (x1 - golden * (x1 - x0), x0 + golden * (x1 - x0));
        let (Some(r0), Some(r1)) = (residual(m0), residual(m1)) else {
            break;
        };
        for candidate in [(m0, r0), (m1, r1)] {
            if candidate.1 < best.1 {
                best = candidate;
            }
        }
        if r0 <= r1 {
            x1 = m1;
        } else {
            x0 = m0;
        }
    }
    let rho_c = best.0;
    (rho_c > bracket.a.min(bracket.b) && rho_c < bracket.a.max(bracket.b)).then_some(rho_c)
}

/// The winding law on either side of a crossing at `rho_c` bisected to `tolerance`, fitted
/// ([`winding_law`]) to the rays farther than 20 `tolerance` from it (whose distances are
/// then known to 5 %) and within 5 % of the crossing's distance from the origin: the strict
/// ones (from index `first_strict` of `probed` on) and the loose ones at least 1e-3 M away;
/// (k, c) on the side of `a`, then of `b`. `None` unless both sides fit.
fn fitted_laws(
    probed: &[Probed],
    first_strict: usize,
    rho_c: f64,
    tolerance: f64,
) -> Option<SideLaws> {
    let (near, far) = (20.0 * tolerance, 0.05 * rho_c.abs().max(1.0));
    // Loose rays only where their windings are reliable (module docs, "Neighbour seeding").
    let reliable: Vec<Probed> = probed
        .iter()
        .enumerate()
        .filter(|&(i, p)| i >= first_strict || (p.0 - rho_c).abs() >= 1e-3)
        .map(|(_, &p)| p)
        .collect();
    Some([
        winding_law(&reliable, true, rho_c, near, far)?,
        winding_law(&reliable, false, rho_c, near, far)?,
    ])
}

/// The rays of a refinement for the crossing's winding check: those from index `first_strict`
/// on were traced at the strict tolerance; a ray on the side of `a` is captured when the
/// ray at `a` is.
fn nearby_rays(probed: &[Probed], captured_a: bool, first_strict: usize) -> Vec<NearbyRay> {
    probed
        .iter()
        .enumerate()
        .map(|(i, &(rho, winding, side_a))| NearbyRay {
            rho,
            winding,
            captured: side_a == captured_a,
            strict: i >= first_strict,
        })
        .collect()
}

/// Swap a pair of side laws between (captured, escaping) and (side of `a`, side of `b`) order:
/// the two agree when the ray at `a` is captured.
fn by_side(laws: SideLaws, captured_a: bool) -> SideLaws {
    if captured_a {
        laws
    } else {
        [laws[1], laws[0]]
    }
}

/// A seeded line whose predicted crossing has an estimated error of at most this fraction
/// of the final bracket's width aims its first two rays at it ([`guided_refine`]), ∓
/// [`AIM_ERRORS`] times the estimate or ∓0.45 of that width, whichever is more: below 0.15
/// of the width the two rays make the final bracket when they straddle the crossing, that
/// is, when the error is less than three times its estimate (at most 1.5 times in the
/// prediction's measurements, docs/performance.md). Aiming at less precise predictions
/// took more rays than the winding law's guidance (measured).
const AIM_ERROR_FRACTION: f64 = 0.3;

/// See [`AIM_ERROR_FRACTION`].
const AIM_ERRORS: f64 = 3.0;

/// Refine `bracket` until it is at most `width` wide, guided by the winding. Beside a photon
/// orbit the winding grows like w = c − k ln|ρ − ρ_c| on each side of the crossing ρ_c
/// (module docs, "Checks"), so the windings say where the crossing is: ρ_c fitted jointly
/// with both sides' (k, c) once one side has three rays, or two with `prior`'s slope
/// ([`fitted_crossing`]); before that,
/// |ρ − ρ_c| = exp((c − w)/k) from the nearer end, with (k, c) fitted per side to the rays
/// farther out ([`winding_law`]), or else `prior` ((k, c) on the side of `a`, then of `b`:
/// the law interpolated from the neighbouring lines). The next ray goes just beyond the predicted crossing, on the
/// far side from the nearer end, by a margin ε times the predicted distance (ε starts at 0.1,
/// shrinks threefold after each ray on the expected side and grows threefold after a
/// surprise), so each ray cuts the bracket by about ε where bisection halves it. Safeguards: bisection while no law is
/// fitted and after any two rays that did not halve the bracket, and every ray inside the
/// bracket at least min(0.45 `width`, a quarter of the bracket) from its ends. The bracket
/// always holds a change of fate, so the windings choose the rays but never weaken the
/// result's guarantee. `probe(ρ)` classifies a ray (on the side of `a`?) and gives its
/// winding; its error ends the refinement. Rays go into `probed`.
///
/// With `aim` = (ρ̂, h), a predicted crossing and a half-width, the first two rays go at
/// ρ̂ ∓ h (the side of `a` first, each only if inside the bracket): when they fall on either
/// side, the bracket is 2h wide. A ray on the unexpected side ends this, and the refinement
/// goes on as above from the bracket it leaves.
fn guided_refine<E>(
    mut bracket: Bracket,
    width: f64,
    prior: Option<SideLaws>,
    aim: Option<(f64, f64)>,
    probed: &mut Vec<Probed>,
    mut probe: impl FnMut(f64) -> Result<(bool, f64), E>,
) -> Result<Bracket, E> {
    if let Some((centre, half)) = aim {
        let dir = (bracket.b - bracket.a).signum();
        for (rho, expect_a) in [(centre - dir * half, true), (centre + dir * half, false)] {
            let inside = (rho - bracket.a) * dir > 0.0 && (bracket.b - rho) * dir > 0.0;
            if bracket.width() <= width || !inside {
                break;
            }
            let (side_a, winding) = probe(rho)?;
            probed.push((rho, winding, side_a));
            bracket.replace_end(rho, winding, side_a);
            if side_a != expect_a {
                break;
            }
        }
    }
    // The width two rays ago, for the bisection safeguard.
    let mut widths = [f64::INFINITY; 2];
    let mut eps: f64 = 0.1;
    while bracket.width() > width {
        let w = bracket.width();
        let dir = (bracket.b - bracket.a).signum();
        let centre = 0.5 * (bracket.a + bracket.b);
        let (near, far) = (10.0 * w, 0.05 * centre.abs().max(1.0));
        let distance = |side: bool, winding: f64| {
            winding_law(probed, side, centre, near, far)
                .or_else(|| prior.map(|laws| laws[usize::from(!side)]))
                .map(|(k, c)| ((c - winding) / k).exp())
                .filter(|d| d.is_finite() && *d < w)
        };
        // The crossing predicted from the nearer end, and the side the ray beyond it should
        // fall on; none when the two ends disagree.
        let slopes = prior.map(|laws| [laws[0].0, laws[1].0]);
        let from_fit = fitted_crossing(probed, &bracket, far, slopes).map(|rc| {
            let (da, db) = ((rc - bracket.a).abs(), (bracket.b - rc).abs());
            if da <= db {
                (rc, da, false)
            } else {
                (rc, db, true)
            }
        });
        let guess =
            from_fit.or_else(
                || match (distance(true, bracket.wa), distance(false, bracket.wb)) {
                    (Some(da), Some(db)) if (da + db - w).abs() > 0.3 * w => None,
                    (Some(da), Some(db)) if da <= db => Some((bracket.a + dir * da, da, false)),
                    (Some(da), None) => Some((bracket.a + dir * da, da, false)),
                    (_, Some(db)) => Some((bracket.b - dir * db, db, true)),
                    (None, None) => None,
                },
            );
        let guess = guess.filter(|_| widths[0] >= 2.0 * w);
        let rho = match guess {
            Some((estimate, d, beyond_a)) => {
                let step = (eps * d).max(0.45 * width);
                estimate + if beyond_a { -dir * step } else { dir * step }
            }
            None => centre,
        };
        let margin = (0.45 * width).min(0.25 * w);
        let rho = rho.clamp(
            bracket.a.min(bracket.b) + margin,
            bracket.a.max(bracket.b) - margin,
        );
        let (side_a, winding) = probe(rho)?;
        probed.push((rho, winding, side_a));
        if let Some((_, _, expected)) = guess {
            eps = if side_a == expected {
                (eps / 3.0).max(1e-3)
            } else {
                (eps * 3.0).min(0.3)
            };
        }
        widths = [widths[1], w];
        bracket.replace_end(rho, winding, side_a);
    }
    Ok(bracket)
}

/// Rays along one screen line origin + ρ (cos ψ, sin ψ) ([`Tracer::scan_line`]).
struct LineProbe<'t, 'a> {
    tracer: &'t Tracer<'a>,
    origin: [f64; 2],
    psi: f64,
    sin: f64,
    cos: f64,
}

impl<'t, 'a> LineProbe<'t, 'a> {
    /// The line origin + ρ (cos ψ, sin ψ) of `tracer`'s screen.
    fn new(tracer: &'t Tracer<'a>, origin: [f64; 2], psi: f64) -> Self {
        let (sin, cos) = psi.sin_cos();
        LineProbe {
            tracer,
            origin,
            psi,
            sin,
            cos,
        }
    }

    /// Whether the ray at ρ is captured (at relative tolerance `rtol`), counted in `line`;
    /// `None` for a failed ray, whose message `line` keeps (the first one).
    fn classify(&self, rho: f64, rtol: f64, line: &mut LineBoundary) -> Option<(bool, f64)> {
        let (origin, psi) = (self.origin, self.psi);
        let out = self.tracer.trace_with(
            origin[0] + rho * self.cos,
            origin[1] + rho * self.sin,
            rtol,
            true,
        );
        line.rays += 1;
        line.steps += out.steps;
        match out.fate {
            RayFate::Captured => Some((true, out.winding)),
            RayFate::Escaped => Some((false, out.winding)),
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
    }

    /// The coarse scan at spacing `scan.spacing`: every bracket of a change of fate. `None`
    /// (with the reason in `line`) for a failed ray or no escaping ray within
    /// `scan.max_radius`.
    fn brackets(
        &self,
        origin_captured: bool,
        scan: &LineScan,
        coarse: f64,
        line: &mut LineBoundary,
    ) -> Option<Vec<LineBracket>> {
        let LineScan {
            spacing,
            scan_to,
            max_radius,
            ..
        } = *scan;
        let mut brackets = Vec::new();
        let mut previous = (origin_captured, f64::NAN);
        let mut last_captured = 0.0;
        let mut j = 1usize;
        loop {
            let rho = j as f64 * spacing;
            if rho > max_radius {
                line.failure = Some(format!(
                    "no escaping ray found out to screen radius {max_radius} along psi = {}",
                    self.psi
                ));
                return None;
            }
            let (captured, winding) = self.classify(rho, coarse, line)?;
            if captured != previous.0 {
                brackets.push(LineBracket {
                    lo: (j - 1) as f64 * spacing,
                    hi: rho,
                    captured_lo: previous.0,
                    winding: [previous.1, winding],
                });
            }
            if captured {
                last_captured = rho;
            } else if rho >= scan_to
                && rho >= last_captured + (3.0 * spacing).max(0.5 * last_captured)
            {
                return Some(brackets);
            }
            previous = (captured, winding);
            j += 1;
        }
    }

    /// A bracket of the seeded crossing (captured inside, escaping outside) at relative
    /// tolerance `coarse`, starting from guess ∓ h (the seed's half-width) and searching
    /// outward on the crossing's side in steps of 4h, 16h and 64h; `None` if none is found
    /// within the line's captured origin side (ρ > 0), the rays disagree with a single
    /// crossing, or a ray failed.
    fn seeded_bracket(
        &self,
        seed: seeding::Seed,
        coarse: f64,
        line: &mut LineBoundary,
    ) -> Option<LineBracket> {
        let mut width = seed.half_width;
        let (mut lo, mut hi) = (seed.guess - width, seed.guess + width);
        if lo <= 0.0 {
            return None;
        }
        let mut at_lo = self.classify(lo, coarse, line)?;
        let mut at_hi = self.classify(hi, coarse, line)?;
        for _ in 0..3 {
            match (at_lo.0, at_hi.0) {
                (true, false) => break,
                (true, true) => {
                    // The crossing lies beyond hi.
                    width *= 4.0;
                    (lo, at_lo) = (hi, at_hi);
                    hi = lo + width;
                    at_hi = self.classify(hi, coarse, line)?;
                }
                (false, false) => {
                    // The crossing lies before lo.
                    width *= 4.0;
                    (hi, at_hi) = (lo, at_lo);
                    lo = hi - width;
                    if lo <= 0.0 {
                        return None;
                    }
                    at_lo = self.classify(lo, coarse, line)?;
                }
                (false, true) => return None,
            }
        }
        (at_lo.0 && !at_hi.0).then_some(LineBracket {
            lo,
            hi,
            captured_lo: true,
            winding: [at_lo.1, at_hi.1],
        })
    }

    /// The crossing in a bracket whose rays were traced at the strict tolerance, refined to
    /// `tolerance` by [`guided_refine`] (its first rays beside `aim`, if given); `None` for a
    /// failed ray.
    fn strict_crossing(
        &self,
        bracket: LineBracket,
        tolerance: f64,
        prior: Option<SideLaws>,
        aim: Option<(f64, f64)>,
        line: &mut LineBoundary,
    ) -> Option<f64> {
        let strict = self.tracer.options.integrator.rtol;
        let captured_lo = bracket.captured_lo;
        let mut probed: Vec<Probed> = vec![
            (bracket.lo, bracket.winding[0], true),
            (bracket.hi, bracket.winding[1], false),
        ];
        let start = Bracket {
            a: bracket.lo,
            wa: bracket.winding[0],
            b: bracket.hi,
            wb: bracket.winding[1],
        };
        let prior = prior.map(|laws| by_side(laws, captured_lo));
        let refined = guided_refine(start, 2.0 * tolerance, prior, aim, &mut probed, |rho| {
            self.classify(rho, strict, line)
                .map(|(captured, w)| (captured == captured_lo, w))
                .ok_or(())
        })
        .ok()?;
        let rho = 0.5 * (refined.a + refined.b);
        line.law = fitted_laws(&probed, 0, rho, tolerance).map(|laws| by_side(laws, captured_lo));
        line.nearby = nearby_rays(&probed, captured_lo, 0);
        Some(rho)
    }

    /// The crossing in one scan bracket, in three stages (coarse tolerance down to the coarse
    /// width; the bracket confirmed at the strict tolerance; strict refinement to
    /// `tolerance`), each refinement by [`guided_refine`]. `Err(false)` for a failed ray,
    /// `Err(true)` if the strict tolerance does not confirm the bracket (the reason is in
    /// `line`).
    fn crossing(
        &self,
        scan_bracket: LineBracket,
        tolerance: f64,
        coarse: f64,
        line: &mut LineBoundary,
    ) -> Result<f64, bool> {
        let strict = self.tracer.options.integrator.rtol;
        let width = self.tracer.options.coarse_width;
        let LineBracket {
            lo: scan_lo,
            hi: scan_hi,
            captured_lo,
            winding,
        } = scan_bracket;
        let mut same_as_lo = |rho: f64, rtol: f64| {
            self.classify(rho, rtol, line)
                .map(|(captured, w)| (captured == captured_lo, w))
                .ok_or(false)
        };
        let mut probed: Vec<Probed> =
            vec![(scan_lo, winding[0], true), (scan_hi, winding[1], false)];
        // Stage 1, coarse tolerance: down to the coarse width.
        let start = Bracket {
            a: scan_lo,
            wa: winding[0],
            b: scan_hi,
            wb: winding[1],
        };
        let coarse_bracket = guided_refine(start, width, None, None, &mut probed, |rho| {
            same_as_lo(rho, coarse)
        })?;
        let (lo, hi) = (coarse_bracket.a, coarse_bracket.b);
        let coarse_rays = probed.len();
        // Stage 2: confirm a widened bracket with the strict tolerance (a coarse ray near
        // the boundary may be misclassified); fall back to the scan bracket.
        let mut confirmed = None;
        for (a, b) in [((lo - width).max(0.0), hi + width), (scan_lo, scan_hi)] {
            let (inside_a, wa) = same_as_lo(a, strict)?;
            let (inside_b, wb) = same_as_lo(b, strict)?;
            probed.extend([(a, wa, inside_a), (b, wb, inside_b)]);
            if inside_a && !inside_b {
                confirmed = Some(Bracket { a, wa, b, wb });
                break;
            }
        }
        let Some(bracket) = confirmed else {
            line.failure = Some(format!(
                "the crossing between screen radii {scan_lo} and {scan_hi} along psi = {} is \
                 not confirmed at the strict tolerance",
                self.psi
            ));
            return Err(true);
        };
        // Stage 3, strict tolerance: stop when the midpoint is within `tolerance` of every
        // point of the bracket.
        let bracket = guided_refine(bracket, 2.0 * tolerance, None, None, &mut probed, |rho| {
            same_as_lo(rho, strict)
        })?;
        let rho = 0.5 * (bracket.a + bracket.b);
        line.law = fitted_laws(&probed, coarse_rays, rho, tolerance)
            .map(|laws| by_side(laws, captured_lo));
        line.nearby = nearby_rays(&probed, captured_lo, coarse_rays);
        Ok(rho)
    }
}

/// What the ray tracer's checks found for a curve (in [`Diagnostics::raytrace`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RaytraceChecks {
    /// The captured screen point (α, β) the radial search started from.
    pub search_point: [f64; 2],
    /// How it was found: the screen centre, or a scan when the centre escapes.
    pub search_start: String,
    /// Whether every curve point is known to lie within the requested tolerance of the
    /// boundary re-traced with refined numerics (tighter integration, smaller capture margin,
    /// larger start radius).
    pub tolerance_met: bool,
    /// The largest distance (in M) between a curve point and that re-traced boundary, as
    /// bracketed by the refined rays; `None` when a refined ray failed or the distance
    /// exceeds 1% of the farthest winding distance.
    pub estimated_error: Option<f64>,
    /// Why the tolerance is not met (`None` when it is).
    pub accuracy_note: Option<String>,
    /// Smallest and largest growth of the winding per e-fold of distance next to the
    /// boundary on its captured side, over all curve angles, in radians (π/γ for a spherical
    /// photon sphere with ring exponent γ; 1 for Schwarzschild). Where captured rays end at a
    /// certified radius (Kerr and Kerr–Newman; module docs "Early end") it is about half that,
    /// as on the escaping side where rays end at their turning point: the same spacetime
    /// gives about 1 as the metric `schwarzschild`, which declares no certificate, and about
    /// 1/2 as `kerr` with a = 0 (0.47–0.56 at 60° and 64 angles, docs/performance.md).
    pub winding_growth: [f64; 2],
    /// Curve angles whose crossing was bracketed from their neighbours' prediction and not
    /// scanned for further crossings (module docs, "Neighbour seeding"); mirror images count.
    pub seeded_lines: usize,
}

/// The full outcome of a ray-traced critical curve, including per-angle failures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RaytraceReport {
    /// The curve's origin (α, β), when the axis boundaries converged.
    pub origin: Option<[f64; 2]>,
    /// The captured screen point the radial search started from, and how it was found.
    pub search_start: Option<([f64; 2], String)>,
    /// Set when there is no shadow (no captured ray was found).
    pub no_shadow: Option<String>,
    /// The boundary along each ψ_k = 2πk/N about the origin (mirrored ones included).
    pub lines: Vec<LineBoundary>,
    /// Failures before the angles were traced (screen centre, axis lines).
    pub setup_failures: Vec<String>,
    /// The requested boundary tolerance, in M.
    pub tolerance: f64,
    /// The capture radius, in M.
    pub capture_radius: f64,
    /// Whether the metric has no horizon (the capture radius is the absorbing core's).
    pub horizonless: bool,
    /// `Some(n)` when tracing stopped once a line refused the curve, before all n curve
    /// angles were traced ([`solve_curve_with`], which turns the report into its error):
    /// `lines` then holds only the angles finished by then, mirror images not added, and the
    /// diagnostics count their rays only. Never set in a report [`trace_curve`] returns.
    pub(crate) stopped_early: Option<usize>,
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

    /// Convert to a [`ShadowResult`]: `NotConverged` if any needed ray failed or the
    /// photon-orbit check could not be made; `NoShadow` if there is no captured region or
    /// (without a horizon) its boundary is not formed by photon orbits.
    pub fn into_result(self) -> Result<ShadowResult, ShadowError> {
        let result = |status, curve, diagnostics| ShadowResult {
            solver: NAME,
            status,
            curve,
            photon_orbit_radii: None,
            photon_spheres: Vec::new(),
            exponents: None,
            orbits: None,
            diagnostics,
        };
        if let Some(failure) = self.first_failure() {
            let bad_angles = self.lines.iter().filter(|l| l.failure.is_some()).count();
            let start = match &self.search_start {
                Some((p, _)) if *p != [0.0, 0.0] => format!(
                    " (the screen-centre ray escapes; the search started from the captured \
                     point ({}, {}))",
                    p[0], p[1]
                ),
                _ => String::new(),
            };
            return Err(ShadowError::NotConverged(format!(
                "ray tracing did not converge: {} of {} rays failed, {} of {} curve angles have \
                 no converged boundary{}; first failure: {failure}{start}",
                self.diagnostics.failed_rays,
                self.diagnostics.rays_traced,
                bad_angles,
                self.lines.len(),
                self.stopped_note()
            )));
        }
        if self.stopped_early.is_some() {
            // Tracing stops only at a line that makes the full curve fail: a line that did
            // not converge (above) or, with a horizon, one whose boundary is not, or could not
            // be checked to be, formed by photon orbits (an error below). Never a result.
            self.not_photon_orbits()?;
            return Err(ShadowError::NotConverged(format!(
                "ray tracing stopped after {} curve angles{}",
                self.lines.len(),
                self.stopped_note()
            )));
        }
        if let Some(reason) = self.no_shadow.clone() {
            let status = ShadowStatus::NoShadow { reason };
            return Ok(result(status, None, self.diagnostics.clone()));
        }
        if let Some(reason) = self.not_photon_orbits()? {
            let status = ShadowStatus::NoShadow { reason };
            return Ok(result(status, None, self.diagnostics.clone()));
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
        let mut diagnostics = self.diagnostics.clone();
        diagnostics.raytrace = Some(self.checks_summary());
        Ok(result(
            ShadowStatus::Shadow,
            Some(CriticalCurve { origin, radii }),
            diagnostics,
        ))
    }

    /// What a message adds when tracing stopped early: how many angles were traced.
    fn stopped_note(&self) -> String {
        match self.stopped_early {
            Some(n) => format!(
                " (only the angles finished before tracing stopped, after the level of lines \
                 in which one refused the curve; {n} were asked for)"
            ),
            None => String::new(),
        }
    }

    /// The photon-orbit verdict: `Ok(Some(reason))` when, without a horizon, the boundary is
    /// not formed by photon orbits (no shadow); an error when it is not so with a horizon (the
    /// capture margin's outline) or could not be checked; `Ok(None)` when every line passed.
    fn not_photon_orbits(&self) -> Result<Option<String>, ShadowError> {
        let n = self.lines.len();
        let check = |l: &LineBoundary| l.check.as_ref().and_then(|c| c.photon_orbit);
        let failing: Vec<&LineCheck> = self
            .lines
            .iter()
            .filter(|l| check(l) == Some(false))
            .filter_map(|l| l.check.as_ref())
            .collect();
        // One angle whose boundary is certainly not formed by photon orbits decides; an angle
        // that could not be checked leaves the curve unconfirmed.
        let Some(first) = failing.first() else {
            if let Some(l) = self.lines.iter().find(|l| check(l).is_none()) {
                let note = l.check.as_ref().and_then(|c| c.winding_note.clone());
                return Err(ShadowError::NotConverged(format!(
                    "could not check that the boundary along psi = {} is formed by photon \
                     orbits: {}",
                    l.psi,
                    note.unwrap_or_else(|| "no check was made".into())
                )));
            }
            return Ok(None);
        };
        let what = format!(
            "the boundary is not formed by photon orbits along {} of {n} curve angles{}: rays \
             beside it stop winding around the centre as they approach it (e.g. the winding \
             grows by {:.3} then {:.3} rad per e-fold of distance on the captured side and by \
             {:.3} then {:.3} on the escaping side, from {:.0e} M to {:.0e} M away on the \
             captured side)",
            failing.len(),
            self.stopped_note(),
            first.growth_inside[0],
            first.growth_inside[1],
            first.growth_outside[0],
            first.growth_outside[1],
            first.distances[0],
            first.distances[2],
        );
        if self.horizonless {
            let core = if self.capture_radius == 0.0 {
                "rays crossing the disk or throat r = 0".to_string()
            } else {
                format!("the absorbing core r <= {} M", self.capture_radius)
            };
            Ok(Some(format!(
                "{what}; it is the outline of the central singularity ({core}, or the inner \
                 edge of the metric's domain), not a photon orbit"
            )))
        } else {
            Err(ShadowError::NotConverged(format!(
                "{what}; it is the outline of the capture surface r = {} M just outside the \
                 horizon: photon orbits lie within the capture margin, and the ray tracer does \
                 not resolve this curve",
                self.capture_radius
            )))
        }
    }

    /// Accuracy and winding summary over the curve lines.
    fn checks_summary(&self) -> RaytraceChecks {
        let checks: Vec<&LineCheck> = self.lines.iter().filter_map(|l| l.check.as_ref()).collect();
        let estimated_error = checks
            .iter()
            .map(|c| c.validated_within)
            .try_fold(0.0f64, |worst, v| v.map(|v| worst.max(v)));
        let tolerance_met = estimated_error.is_some_and(|e| e <= self.tolerance);
        let accuracy_note = (!tolerance_met).then(|| {
            checks
                .iter()
                .find_map(|c| c.validation_note.clone())
                .unwrap_or_else(|| {
                    format!(
                        "a curve point lies up to {:.1e} M from the boundary re-traced with \
                         refined numerics (tolerance {:e} M)",
                        estimated_error.unwrap_or(f64::NAN),
                        self.tolerance
                    )
                })
        });
        let growth = checks.iter().map(|c| c.growth_inside[1]);
        let winding_growth = growth.fold([f64::INFINITY, f64::NEG_INFINITY], |[lo, hi], g| {
            [lo.min(g), hi.max(g)]
        });
        let (search_point, search_start) = self
            .search_start
            .clone()
            .unwrap_or(([0.0, 0.0], "the screen centre".into()));
        RaytraceChecks {
            search_point,
            search_start,
            tolerance_met,
            estimated_error,
            accuracy_note,
            winding_growth,
            seeded_lines: self.lines.iter().filter(|l| l.seeded).count(),
        }
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
    solve_lines(spacetime, observer, settings, options, false)
}

/// [`solve_with`] for a caller that needs the curve alone (bounds, scans, tables; the
/// solver's [`super::ShadowSolver::solve_curve`]): the same curve, or the same kind of error,
/// but a curve that is certain to be refused is not traced to the end. Tracing stops after
/// the first level of lines (module docs, "Neighbour seeding") in which a line did not
/// converge or, with a horizon, has a boundary not formed by photon orbits (or not checked to
/// be); the error's counts are then those of the angles finished by then, and it says so.
pub fn solve_curve_with(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
) -> Result<ShadowResult, ShadowError> {
    solve_lines(spacetime, observer, settings, options, true)
}

/// [`solve_with`], or with `stop_when_refused` [`solve_curve_with`].
fn solve_lines(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
    stop_when_refused: bool,
) -> Result<ShadowResult, ShadowError> {
    check_request(observer, settings)?;
    if let Some(result) = super::singular_exterior(spacetime, observer, NAME) {
        return Ok(result);
    }
    trace_lines(spacetime, observer, settings, options, stop_when_refused)?.into_result()
}

/// Trace the critical curve and report every line, failures included.
pub fn trace_curve(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
) -> Result<RaytraceReport, ShadowError> {
    trace_lines(spacetime, observer, settings, options, false)
}

/// [`trace_curve`]; with `stop_when_refused`, the lines stop after the first level in which a
/// finished line refuses the curve (a line that did not converge, or, with a horizon, one
/// whose boundary is not, or could not be checked to be, formed by photon orbits:
/// [`RaytraceReport::into_result`] then fails whatever the other lines give), and the report
/// holds the lines of that level and the ones before (`RaytraceReport::stopped_early`).
fn trace_lines(
    spacetime: &dyn Spacetime,
    observer: &Observer,
    settings: &ShadowSettings,
    options: &RaytraceOptions,
    stop_when_refused: bool,
) -> Result<RaytraceReport, ShadowError> {
    let start = Instant::now();
    check_request(observer, settings)?;
    let tracer = Tracer::new(spacetime, observer, options)?;
    let validator = tracer.validator()?;
    let mut report = RaytraceReport {
        origin: None,
        search_start: None,
        no_shadow: None,
        lines: Vec::new(),
        setup_failures: Vec::new(),
        tolerance: settings.tolerance,
        capture_radius: tracer.capture_radius,
        horizonless: tracer.horizonless,
        stopped_early: None,
        diagnostics: Diagnostics {
            star_shaped: true,
            ..Default::default()
        },
    };
    let finish = |mut report: RaytraceReport| {
        report.diagnostics.wall_seconds = start.elapsed().as_secs_f64();
        Ok(report)
    };
    let Some(interior) = find_interior(&tracer, &mut report) else {
        return finish(report);
    };
    // The mirror line is β = 0 of Bardeen's screen: β = −β₀ here, used only when β₀ = 0.
    let mirror = options.screen_offset[1] == 0.0
        && (spacetime.is_separable()
            || (spacetime.is_equatorially_symmetric()
                && (observer.inclination - FRAC_PI_2).abs() < 1e-12));
    let Some((origin, scale)) = find_origin(&tracer, &mut report, interior, mirror, settings)
    else {
        return finish(report);
    };
    report.origin = Some(origin);

    // Every angle, each on its own, bisected and checked.
    let n = settings.points;
    // Crossings are bisected to half the target, so that the re-traced rays at the target
    // distance have room for the strict rays' own ~1e-9 M.
    let target = settings.tolerance.min(options.check_width);
    let scan = LineScan {
        spacing: scale / options.scan_samples as f64,
        scan_to: 0.0,
        tolerance: 0.5 * target,
        max_radius: 0.25 * tracer.escape_radius,
    };
    let traced = if mirror { n / 2 + 1 } else { n };
    let horizonless = tracer.horizonless;
    // The lines that make `into_result` fail whatever the others give: one that did not
    // converge, and, with a horizon, one whose boundary is not, or could not be checked to
    // be, formed by photon orbits (without a horizon that is no shadow, a result).
    let refuses = move |line: &LineBoundary| {
        line.failure.is_some()
            || (!horizonless && line.check.as_ref().and_then(|c| c.photon_orbit) != Some(true))
    };
    let layout = seeding::Layout {
        n,
        traced,
        mirror,
        every: seeding::anchor_stride(n, options.anchor_every, options.max_anchors),
        min_half_width: target,
    };
    let levels = seeding::trace_in_levels(
        layout,
        |k, seed| {
            let psi = TAU * k as f64 / n as f64;
            match seed {
                Some(seed) => tracer.boundary_near(origin, psi, seed, &scan),
                None => tracer.boundary_along_line(origin, true, psi, &scan),
            }
        },
        |line| tracer.check_crossing(&validator, origin, line, target),
        stop_when_refused.then_some(&refuses as &(dyn Fn(&LineBoundary) -> bool + Sync)),
    );
    if levels.complete {
        report.add_lines(levels.lines, n, mirror);
    } else {
        for line in &levels.lines {
            report.count(line);
        }
        report.lines = levels.lines;
        report.stopped_early = Some(n);
    }
    finish(report)
}

impl RaytraceReport {
    /// Take the traced lines (the first `lines.len()` of `n` angles): count their rays, add
    /// the mirror images of the rest when `mirror` (uncounted: no rays were traced for
    /// them), and note every line with more than one crossing.
    fn add_lines(&mut self, mut lines: Vec<LineBoundary>, n: usize, mirror: bool) {
        let traced = lines.len();
        for line in &lines {
            self.count(line);
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
                self.diagnostics.star_shaped = false;
                self.diagnostics
                    .extra_crossings
                    .push((line.psi, line.crossings.clone()));
            }
        }
        self.lines = lines;
    }

    /// Add a line's rays and steps to the diagnostics.
    fn count(&mut self, line: &LineBoundary) {
        self.diagnostics.rays_traced += line.rays;
        self.diagnostics.failed_rays += line.failed_rays;
        self.diagnostics.integrator_steps += line.steps;
    }

    /// Add one ray to the diagnostics.
    fn count_ray(&mut self, out: &RayOutcome) {
        self.diagnostics.rays_traced += 1;
        self.diagnostics.integrator_steps += out.steps;
        self.diagnostics.failed_rays += usize::from(matches!(out.fate, RayFate::Failed(_)));
    }
}

/// A captured screen point to start the radial search from: the screen centre if its ray is
/// captured, else the first captured point of a scan along the α axis outward from the
/// centre (and, for a metric without equatorial symmetry, of a square grid ordered by
/// distance from the centre). Sets `no_shadow` when none is found, a setup failure when a
/// ray fails before a captured one is found, and `search_start` otherwise.
fn find_interior(tracer: &Tracer, report: &mut RaytraceReport) -> Option<[f64; 2]> {
    let centre = tracer.trace(0.0, 0.0);
    report.count_ray(&centre);
    match centre.fate {
        RayFate::Captured => {
            report.search_start = Some(([0.0, 0.0], "the screen centre (captured)".into()));
            return Some([0.0, 0.0]);
        }
        RayFate::Failed(f) => {
            report
                .setup_failures
                .push(format!("the ray through the screen centre failed: {f}"));
            return None;
        }
        RayFate::Escaped => {}
    }
    let spacetime = tracer.spacetime;
    if spacetime.symmetry() == Symmetry::Spherical && tracer.options.screen_offset == [0.0, 0.0] {
        report.no_shadow = Some(
            "the ray through the screen centre escapes, and the shadow of a spherically \
             symmetric metric is centred there: no shadow"
                .into(),
        );
        return None;
    }
    let (h, extent) = (
        tracer.options.interior_scan_spacing,
        tracer.options.interior_scan_extent,
    );
    let grid = !spacetime.is_equatorially_symmetric();
    let candidates = interior_candidates(h, extent, grid);
    for batch in candidates.chunks(64) {
        let outcomes: Vec<RayOutcome> =
            batch.par_iter().map(|p| tracer.trace(p[0], p[1])).collect();
        for (p, out) in batch.iter().zip(&outcomes) {
            report.count_ray(out);
            match out.fate {
                RayFate::Escaped => {}
                RayFate::Captured => {
                    report.search_start = Some((
                        *p,
                        format!(
                            "the first captured point ({}, {}) of a scan outward from the \
                             screen centre, whose ray escapes",
                            p[0], p[1]
                        ),
                    ));
                    return Some(*p);
                }
                RayFate::Failed(f) => {
                    report.setup_failures.push(format!(
                        "the ray at ({}, {}) failed while scanning for an interior point: {f}",
                        p[0], p[1]
                    ));
                    return None;
                }
            }
        }
    }
    report.no_shadow = Some(format!(
        "no captured ray at the screen centre nor along the alpha axis (|alpha| <= {extent} M, \
         spacing {h} M){}: no shadow found",
        if grid {
            format!(" nor on a square grid of spacing {} M", 10.0 * h)
        } else {
            String::new()
        }
    ));
    None
}

/// Screen points for the interior scan: ±kh on the α axis for kh ≤ `extent`, nearest
/// first (+ before −); with `grid`, then the points of a square grid of spacing 10h in
/// |α|, |β| ≤ `extent` off the α axis, nearest first.
fn interior_candidates(h: f64, extent: f64, grid: bool) -> Vec<[f64; 2]> {
    let n = (extent / h).floor() as i64;
    let mut points: Vec<[f64; 2]> = (1..=n)
        .flat_map(|k| [[k as f64 * h, 0.0], [-(k as f64) * h, 0.0]])
        .collect();
    if grid {
        let g = 10.0 * h;
        let m = (extent / g).floor() as i64;
        let mut cells: Vec<(i64, i64)> = (-m..=m)
            .flat_map(|i| (-m..=m).map(move |j| (i, j)))
            .filter(|&(_, j)| j != 0)
            .collect();
        cells.sort_by_key(|&(i, j)| (i * i + j * j, i, j));
        points.extend(cells.iter().map(|&(i, j)| [i as f64 * g, j as f64 * g]));
    }
    points
}

/// The curve origin: the midpoint of the boundary along the horizontal line through the
/// interior point and, unless `mirror`, of the vertical line through that midpoint; checked
/// to be captured. Returns it with the mean of the axis extents (the curve's scale).
fn find_origin(
    tracer: &Tracer,
    report: &mut RaytraceReport,
    interior: [f64; 2],
    mirror: bool,
    settings: &ShadowSettings,
) -> Option<([f64; 2], f64)> {
    let axis = |origin: [f64; 2], psis: [f64; 2], report: &mut RaytraceReport| {
        let scan = LineScan {
            spacing: 0.5,
            scan_to: 0.0,
            tolerance: settings.tolerance,
            max_radius: 0.25 * tracer.escape_radius,
        };
        let lines: Vec<LineBoundary> = psis
            .par_iter()
            .map(|&psi| tracer.boundary_along_line(origin, true, psi, &scan))
            .collect();
        for line in &lines {
            report.count(line);
            if let Some(f) = &line.failure {
                report.setup_failures.push(f.clone());
            }
        }
        match (lines[0].outermost(), lines[1].outermost()) {
            (Some(plus), Some(minus)) => Some((plus, minus)),
            _ => None,
        }
    };
    let (right, left) = axis(interior, [0.0, PI], report)?;
    let alpha_c = interior[0] + 0.5 * (right - left);
    let mut extent = vec![right, left];
    let mut beta_c = interior[1];
    if !mirror {
        let (up, down) = axis([alpha_c, interior[1]], [FRAC_PI_2, 3.0 * FRAC_PI_2], report)?;
        extent.extend([up, down]);
        beta_c = interior[1] + 0.5 * (up - down);
    }
    let check = tracer.trace(alpha_c, beta_c);
    report.count_ray(&check);
    match check.fate {
        RayFate::Captured => {}
        RayFate::Escaped => {
            report.setup_failures.push(format!(
                "the curve origin ({alpha_c}, {beta_c}) is not inside the shadow"
            ));
            return None;
        }
        RayFate::Failed(f) => {
            report
                .setup_failures
                .push(format!("the ray through the curve origin failed: {f}"));
            return None;
        }
    }
    let scale = extent.iter().sum::<f64>() / extent.len() as f64;
    Some(([alpha_c, beta_c], scale))
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

/// The ray tracer (this module) with its numerical options: any metric.
#[derive(Debug, Clone, Default)]
pub struct RaytraceSolver {
    /// Start radius, integrator and check settings.
    pub options: RaytraceOptions,
}

impl super::ShadowSolver for RaytraceSolver {
    fn name(&self) -> &'static str {
        NAME
    }
    fn summary(&self) -> &'static str {
        "any metric: backward null geodesics and bisection on capture"
    }
    fn applies_to(&self, _: &dyn Spacetime) -> Result<(), String> {
        Ok(())
    }
    fn solve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        solve_with(spacetime, observer, settings, &self.options)
    }
    /// A curve certain to be refused is not traced to the end ([`solve_curve_with`]).
    fn solve_curve(
        &self,
        spacetime: &dyn Spacetime,
        observer: &Observer,
        settings: &ShadowSettings,
    ) -> Result<ShadowResult, ShadowError> {
        solve_curve_with(spacetime, observer, settings, &self.options)
    }
    /// Each point is bracketed to the boundary tolerance, and no better.
    fn curve_resolution(&self, settings: &ShadowSettings) -> f64 {
        settings.tolerance
    }
}

#[cfg(test)]
mod tests;
