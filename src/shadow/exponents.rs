//! Photon-ring exponents: how fast successive images of the photon ring shrink.
//!
//! A light ray near a bound, unstable photon orbit departs from it exponentially. The
//! demagnification exponent γ is the number of e-folds gained per half orbit: the n-th
//! photon-ring image is fainter and thinner than the (n−1)-th by a factor e^(−γ)
//! (Johnson et al. 2020, Sci. Adv. 6, eaaz1310).
//!
//! * [`spherical_exponents`]: static, spherically symmetric metrics, from A, B, C and their
//!   first two derivatives at the photon sphere.
//! * [`separable_gamma`]: metrics whose null geodesics separate, one spherical photon orbit
//!   (r, λ, η) at a time, from the radial and polar potentials in Mino time.

// `!(x > 0.0)` is used on purpose: it also rejects NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use super::{structure_why, RingExponents, ShadowError};
use crate::metric::Spacetime;
use crate::numerics::brent_root;
use std::f64::consts::PI;

/// Relative tolerance for "this radius is a circular photon orbit" (common practice, no
/// source): |C′/C − A′/A| must be below it times |C′/C| + |A′/A|.
const CIRCULAR_TOLERANCE: f64 = 1e-7;
/// Largest estimated relative rounding error of a reported spherical Lyapunov exponent.
const EXPONENT_ACCURACY: f64 = 1e-9;
/// λ² counts as zero (a marginally stable orbit) below this times the size of its terms
/// (common practice, no source).
const MARGINAL_TOLERANCE: f64 = 1e-12;
/// Relative tolerance for "R = R′ = 0 at this (r, λ, η)" (common practice, no source).
const SPHERICAL_ORBIT_TOLERANCE: f64 = 1e-7;
/// Cells of the coarse polar grid used to bracket the turning points of Θ.
const POLAR_GRID: usize = 512;
/// Relative agreement demanded between two Gauss–Chebyshev rules of different order.
const QUADRATURE_TOLERANCE: f64 = 1e-13;
/// A peak of Θ_u below this (relative to |η| + λ² + 1) is an equatorial orbit, treated by the
/// small-oscillation limit, whose relative error is of the same order (common practice, no
/// source); a peak below minus this is "no polar motion".
const DEGENERATE_BAND: f64 = 1e-10;
/// Polar bands narrower than this half-width in u = cos θ use the small-oscillation limit,
/// whose relative error ~h² is then below the rounding noise ~nε/h of the quadrature; both are
/// ≲ 1e-9 at the crossover (estimated here, common practice, no source).
const NARROW_BAND: f64 = 3e-5;

fn not_applicable(spacetime: &dyn Spacetime, solver: &'static str, why: &str) -> ShadowError {
    ShadowError::SolverNotApplicable {
        solver,
        metric: spacetime.info().name,
        why: why.to_string(),
    }
}

/// Lyapunov exponent, orbital frequency and γ of the circular photon orbit at `r_c` of a
/// static, spherically symmetric metric ds² = −A dt² + B dr² + C dΩ².
///
/// # Derivation
/// For equatorial null geodesics with E = A ṫ and L = C φ̇ (dots: affine parameter),
/// B ṙ² = W(r) := E²/A − L²/C. In coordinate time, (dr/dt)² = F(r) := A² W /(B E²).
/// A circular orbit has W = W′ = 0, i.e. L²/E² = C/A and (C/A)′ = 0. Then F(r_c) = F′(r_c) = 0
/// and a perturbation obeys d²δr/dt² = ½F″(r_c) δr, so δr ∝ e^(λt) with
///
/// λ² = ½F″ = (A²/2B) [(1/A)″ − (C/A)(1/C)″],
///
/// (1/A)″ = 2A′²/A³ − A″/A², (1/C)″ = 2C′²/C³ − C″/C², all at r_c. The orbital frequency is
/// Ω_c = dφ/dt = (L/C)(A/E) = √(A/C), and half an orbit takes π/Ω_c, so γ = π λ/Ω_c.
///
/// For A = f, B = 1/g, C = r² this is λ = √(g(2f − r²f″)/(2r²)) and Ω_c = √f/r, the formulas
/// of Cardoso et al. 2009 (Phys. Rev. D 79, 064016); Schwarzschild gives λ = 1/(3√3) and
/// γ = π.
///
/// Returns `BadRequest` if `r_c` is not a circular photon orbit (|C′/C − A′/A| > 1e-7
/// (|C′/C| + |A′/A|)) or the
/// orbit is stable (λ² ≤ 0); `SolverNotApplicable` if the metric is not spherical.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::exponents::spherical_exponents;
///
/// let e = spherical_exponents(&Schwarzschild, 3.0).unwrap();
/// assert!((e.gamma_min - std::f64::consts::PI).abs() < 1e-13);
/// assert!((e.lyapunov.unwrap() - 1.0 / 27f64.sqrt()).abs() < 1e-15);
/// ```
pub fn spherical_exponents(
    spacetime: &dyn Spacetime,
    r_c: f64,
) -> Result<RingExponents, ShadowError> {
    let (lyapunov, omega) = spherical_lyapunov_frequency(spacetime, r_c)?;
    let gamma = PI * lyapunov / omega;
    Ok(RingExponents {
        lyapunov: Some(lyapunov),
        gamma_min: gamma,
        gamma_max: gamma,
    })
}

/// The coordinate-time Lyapunov exponent λ and orbital frequency Ω_c = √(A/C) of the circular
/// photon orbit at `r_c` (see [`spherical_exponents`] for the formulas and their source).
pub fn spherical_lyapunov_frequency(
    spacetime: &dyn Spacetime,
    r_c: f64,
) -> Result<(f64, f64), ShadowError> {
    // r_c = 0 is allowed: the regular throat of a wormhole even in r (see spherical.rs).
    if !(r_c.is_finite() && r_c >= 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "photon-orbit radius must be a non-negative finite number, got {r_c}"
        )));
    }
    let jet = spacetime.spherical_jet(r_c).map_err(|e| {
        not_applicable(
            spacetime,
            "spherical",
            &structure_why(e, "the metric is not declared spherical"),
        )
    })?;
    let [a, a1, a2] = jet.a;
    let [b, _, _] = jet.b;
    let [c, c1, c2] = jet.c;
    let values = [a, a1, a2, b, c, c1, c2];
    if values.iter().any(|x| !x.is_finite()) || !(a > 0.0 && b > 0.0 && c > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "A, B, C must be positive and finite at r = {r_c} (A = {a}, B = {b}, C = {c})"
        )));
    }
    // (ln C/A)′ = C′/C − A′/A vanishes on a circular orbit: relative to the size of its two
    // terms, so that an orbit next to a singularity, where both are large and the rounding of
    // their difference grows with them (JNW with ν near 1/2), is still recognised.
    let log_slope = c1 / c - a1 / a;
    let terms = (c1 / c).abs() + (a1 / a).abs();
    if log_slope.abs() > CIRCULAR_TOLERANCE * terms {
        return Err(ShadowError::BadRequest(format!(
            "r = {r_c} is not a circular photon orbit: (ln C/A)' = {log_slope:e}, relative \
             to its terms {:e}",
            log_slope / terms
        )));
    }
    let inv_a2 = 2.0 * a1 * a1 / (a * a * a) - a2 / (a * a);
    let inv_c2 = 2.0 * c1 * c1 / (c * c * c) - c2 / (c * c);
    let lyapunov_sq = a * a / (2.0 * b) * (inv_a2 - c / a * inv_c2);
    // λ² = 0 to rounding (its two terms cancel): a marginally stable orbit, such as the
    // throat of Simpson–Visser at l = 3 where the photon sphere r² + l² = 9 meets r = 0.
    let marginal = a * a / (2.0 * b) * (inv_a2.abs() + (c / a * inv_c2).abs()) * MARGINAL_TOLERANCE;
    if lyapunov_sq.abs() <= marginal {
        return Err(ShadowError::BadRequest(format!(
            "the photon orbit at r = {r_c} is marginally stable (lambda^2 = {lyapunov_sq:e}, \
             zero to rounding): nearby rays depart from it as a power of time, not \
             exponentially, so the Lyapunov and photon-ring exponents are undefined"
        )));
    }
    if !(lyapunov_sq > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "the photon orbit at r = {r_c} is stable (lambda^2 = {lyapunov_sq:e}): no photon-ring exponent"
        )));
    }
    // Sensitivity to the last bits of r_c (which is located only to a few units in the last
    // place, and next to a singular surface much less well): the spread of λ² over the
    // neighbouring radii r_c(1 ± 8kε), k = 1, 2, must stay below the accuracy promised. Away
    // from singularities it is ~1e-14; it grows like ε/(1 − b/r) next to one (JNW, ν → 1/2).
    let spread = [-2.0, -1.0, 1.0, 2.0]
        .iter()
        .filter_map(|k| lyapunov_squared(spacetime, r_c * (1.0 + 8.0 * k * f64::EPSILON)))
        .map(|l2| (l2 - lyapunov_sq).abs() / lyapunov_sq)
        .fold(0.0, f64::max);
    if spread > EXPONENT_ACCURACY {
        return Err(ShadowError::NotConverged(format!(
            "the Lyapunov exponent at r = {r_c} is ill-conditioned: it changes by {spread:.1e} \
             (relative, in lambda^2) between neighbouring doubles of the orbit radius, more \
             than {EXPONENT_ACCURACY:e} (the orbit lies next to a singular surface)"
        )));
    }
    Ok((lyapunov_sq.sqrt(), (a / c).sqrt()))
}

/// λ² of the formula of [`spherical_exponents`] at r, when A, B, C are regular there.
fn lyapunov_squared(spacetime: &dyn Spacetime, r: f64) -> Option<f64> {
    let jet = spacetime.spherical_jet(r).ok()?;
    let ([a, a1, a2], [b, _, _], [c, c1, c2]) = (jet.a, jet.b, jet.c);
    let ok = [a, a1, a2, b, c, c1, c2].iter().all(|x| x.is_finite()) && a > 0.0 && c > 0.0;
    let inv_a2 = 2.0 * a1 * a1 / (a * a * a) - a2 / (a * a);
    let inv_c2 = 2.0 * c1 * c1 / (c * c * c) - c2 / (c * c);
    ok.then(|| a * a / (2.0 * b) * (inv_a2 - c / a * inv_c2))
}

/// Demagnification exponent γ of the spherical photon orbit (r, λ, η) of a separable metric.
///
/// With Mino time σ (dσ = dτ/Σ̃), the project's separable form is (dr/dσ)² = R(r),
/// (dθ/dσ)² = Θ(θ). On a spherical photon orbit R = R′ = 0, so a radial perturbation obeys
/// d²δr/dσ² = ½R″ δr and grows as e^(√(R″/2) σ). One half polar oscillation, between the two
/// turning points of Θ, takes the Mino time G_θ = ∫ dθ/√Θ, so (Johnson et al. 2020, Sci. Adv. 6,
/// eaaz1310; Gralla & Lupsasca 2020)
///
/// γ = √(R″(r)/2) · G_θ.
///
/// G_θ is computed in u = cos θ, where dθ/√Θ = du/√Θ_u with Θ_u = (1 − u²)Θ; the two roots
/// u₋ < u₊ of Θ_u about its maximum are bracketed on a grid and refined by Brent's method (for
/// an orbit that passes over a pole, Θ_u vanishes at u = ±1 instead). The substitution
/// u = ū − h cos φ (ū, h the centre and half-width of [u₋, u₊]) turns the inverse-square-root
/// endpoint singularities into a smooth, even, periodic integrand on φ ∈ [0, π], integrated by
/// the midpoint (Gauss–Chebyshev) rule, which converges spectrally; two orders must agree to
/// 1e-13. An equatorial or nearly equatorial orbit (a band of half-width below 3e-5 in u)
/// takes the limit G_θ = π √(2/(−Θ_u″)) of a harmonic polar oscillation. Because Θ is given
/// as a function of θ, whose rounding near π/2 is ~1e-16 absolute, such narrow bands are
/// accurate to ~1e-9 relative only; wider ones to ~1e-12.
///
/// Schwarzschild (a = 0, any λ² + η = 27, r = 3): γ = π.
///
/// ```
/// use umbral::prelude::*;
/// use umbral::shadow::exponents::separable_gamma;
///
/// // A polar spherical photon orbit of Schwarzschild (Kerr with a = 0): r = 3, λ = 0, η = 27.
/// let kerr = Kerr::new(0.0).unwrap();
/// let gamma = separable_gamma(&kerr, 3.0, 0.0, 27.0).unwrap();
/// assert!((gamma - std::f64::consts::PI).abs() < 1e-12);
/// ```
pub fn separable_gamma(
    spacetime: &dyn Spacetime,
    r: f64,
    lambda: f64,
    eta: f64,
) -> Result<f64, ShadowError> {
    if !(r.is_finite() && lambda.is_finite() && eta.is_finite() && r > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "spherical photon orbit needs finite r > 0, lambda, eta; got r = {r}, lambda = {lambda}, eta = {eta}"
        )));
    }
    let radial = spacetime
        .radial_potential_jet(r, lambda, eta)
        .map_err(|e| {
            not_applicable(
                spacetime,
                "separable",
                &structure_why(e, "the metric provides no radial potential"),
            )
        })?;
    let scale = r.powi(4) + r * r * (eta.abs() + lambda * lambda) + eta.abs() + lambda * lambda;
    let (value, slope, curvature) = (radial.value, radial.gradient[0], radial.hessian[0][0]);
    if !(value.is_finite() && slope.is_finite() && curvature.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "the radial potential is not finite at r = {r}"
        )));
    }
    if value.abs() > SPHERICAL_ORBIT_TOLERANCE * scale
        || (slope * r).abs() > SPHERICAL_ORBIT_TOLERANCE * scale
    {
        return Err(ShadowError::BadRequest(format!(
            "(r, lambda, eta) = ({r}, {lambda}, {eta}) is not a spherical photon orbit: R = {value:e}, R' = {slope:e}"
        )));
    }
    if !(curvature > 0.0) {
        return Err(ShadowError::BadRequest(format!(
            "the spherical photon orbit at r = {r} is not unstable (R'' = {curvature:e})"
        )));
    }
    let mino_half_period = polar_mino_half_period(spacetime, lambda, eta)?;
    Ok((0.5 * curvature).sqrt() * mino_half_period)
}

/// Θ_u(u) = (1 − u²) Θ(arccos u) and its first two u-derivatives.
fn polar_u(
    spacetime: &dyn Spacetime,
    u: f64,
    lambda: f64,
    eta: f64,
) -> Result<[f64; 3], ShadowError> {
    let theta = u.clamp(-1.0, 1.0).acos();
    let jet = spacetime
        .polar_potential_jet(theta, lambda, eta)
        .map_err(|e| {
            not_applicable(
                spacetime,
                "separable",
                &structure_why(e, "the metric provides no polar potential"),
            )
        })?;
    let (t0, t1, t2) = (jet.value, jet.gradient[0], jet.hessian[0][0]);
    let one_minus = (1.0 - u) * (1.0 + u);
    let s = one_minus.sqrt(); // sin θ
                              // dθ/du = −1/sin θ, d²θ/du² = −u/sin³θ.
    let th_u = -1.0 / s;
    let th_uu = -u / (s * s * s);
    let d1 = t1 * th_u;
    let d2 = t2 * th_u * th_u + t1 * th_uu;
    Ok([
        one_minus * t0,
        -2.0 * u * t0 + one_minus * d1,
        -2.0 * t0 - 4.0 * u * d1 + one_minus * d2,
    ])
}

/// Mino time of half a polar oscillation, G_θ = ∫_{u₋}^{u₊} du/√Θ_u (see [`separable_gamma`]).
// Long: one computation of ∫du/√Θ_u: grid, peak refinement, turning points and the doubling quadrature share Θ_u, the peak and the band.
fn polar_mino_half_period(
    spacetime: &dyn Spacetime,
    lambda: f64,
    eta: f64,
) -> Result<f64, ShadowError> {
    let theta_u = |u: f64| polar_u(spacetime, u, lambda, eta).map(|v| v[0]);
    // Coarse grid uniform in θ (denser in u near the poles), interior points only.
    let grid: Vec<f64> = (0..POLAR_GRID)
        .map(|j| (PI * (j as f64 + 0.5) / POLAR_GRID as f64).cos())
        .collect();
    let mut values = Vec::with_capacity(grid.len());
    for &u in &grid {
        values.push(theta_u(u)?);
    }
    if values.iter().any(|v| !v.is_finite()) {
        return Err(ShadowError::BadRequest(format!(
            "the polar potential is not finite for lambda = {lambda}, eta = {eta}"
        )));
    }
    let j_peak = (0..grid.len())
        .max_by(|&i, &j| values[i].total_cmp(&values[j]))
        .unwrap_or(0);
    // Refine the maximum of Θ_u by a root of Θ_u′ next to the grid peak.
    let slope = |u: f64| {
        polar_u(spacetime, u, lambda, eta)
            .map(|v| v[1])
            .unwrap_or(f64::NAN)
    };
    let (lo, hi) = (
        grid[(j_peak + 1).min(grid.len() - 1)],
        grid[j_peak.saturating_sub(1)],
    );
    let u_peak = if lo < hi && slope(lo) * slope(hi) < 0.0 {
        brent_root(slope, lo, hi, 0.0).map_err(|e| {
            ShadowError::NotConverged(format!(
                "the peak of the polar potential for lambda = {lambda}, eta = {eta}: {e}"
            ))
        })?
    } else {
        grid[j_peak]
    };
    let [peak, _, peak_curvature] = polar_u(spacetime, u_peak, lambda, eta)?;
    let scale = eta.abs() + lambda * lambda + 1.0;
    // Half-width of the band in u if Θ_u were a parabola about its peak.
    let band_estimate = (2.0 * peak / -peak_curvature).sqrt();
    if !(peak > DEGENERATE_BAND * scale) || band_estimate < NARROW_BAND {
        if peak < -DEGENERATE_BAND * scale {
            return Err(ShadowError::BadRequest(format!(
                "no polar motion for lambda = {lambda}, eta = {eta}: Theta < 0 at every latitude"
            )));
        }
        // Equatorial (or other degenerate) orbit: the small-oscillation limit.
        if !(peak_curvature < 0.0) {
            return Err(ShadowError::BadRequest(format!(
                "degenerate polar motion for lambda = {lambda}, eta = {eta}: Theta_u'' = {peak_curvature:e}"
            )));
        }
        return Ok(PI * (2.0 / -peak_curvature).sqrt());
    }
    let upper = turning_point(&theta_u, u_peak, &grid, true)?;
    let lower = turning_point(&theta_u, u_peak, &grid, false)?;
    let centre = 0.5 * (upper + lower);
    let half_width = 0.5 * (upper - lower);
    let rule = |n: usize| -> Result<f64, ShadowError> {
        let mut sum = 0.0;
        for j in 0..n {
            let phi = PI * (j as f64 + 0.5) / n as f64;
            let u = centre - half_width * phi.cos();
            let v = theta_u(u)?;
            if !(v > 0.0) {
                return Err(ShadowError::NotConverged(format!(
                    "polar potential not positive inside its band at u = {u} (lambda = {lambda}, eta = {eta})"
                )));
            }
            sum += half_width * phi.sin() / v.sqrt();
        }
        Ok(sum * PI / n as f64)
    };
    // Θ is a function of θ, and θ near π/2 carries an absolute rounding error ~ε, so in a band
    // of half-width h in u = cos θ the n-point rule picks up a relative noise ~nε/(2h): the
    // demanded agreement is relaxed to that floor for nearly equatorial orbits.
    let tolerance = |n: usize| QUADRATURE_TOLERANCE.max(0.5 * n as f64 * f64::EPSILON / half_width);
    let mut n = 64;
    let mut previous = rule(n)?;
    while n < 8192 {
        n *= 2;
        let current = rule(n)?;
        if (current - previous).abs() <= tolerance(n) * current.abs() {
            return Ok(current);
        }
        previous = current;
    }
    Err(ShadowError::NotConverged(format!(
        "polar Mino-time integral did not converge for lambda = {lambda}, eta = {eta}"
    )))
}

/// The first root of Θ_u going from `u_peak` towards u = +1 (`upwards`) or u = −1; the pole
/// itself when Θ_u stays positive up to it (the orbit passes over the pole).
fn turning_point(
    theta_u: &dyn Fn(f64) -> Result<f64, ShadowError>,
    u_peak: f64,
    grid: &[f64],
    upwards: bool,
) -> Result<f64, ShadowError> {
    let pole = if upwards { 1.0 } else { -1.0 };
    // Grid points beyond the peak in the chosen direction, nearest first, then the pole.
    let mut beyond: Vec<f64> = grid
        .iter()
        .copied()
        .filter(|&u| if upwards { u > u_peak } else { u < u_peak })
        .collect();
    beyond.sort_by(|x, y| (x - u_peak).abs().total_cmp(&(y - u_peak).abs()));
    beyond.push(pole * (1.0 - 4.0 * f64::EPSILON));
    let mut inside = u_peak;
    for u in beyond {
        let v = theta_u(u)?;
        if !(v > 0.0) {
            let f = |x: f64| theta_u(x).unwrap_or(f64::NAN);
            let (lo, hi) = if upwards { (inside, u) } else { (u, inside) };
            return brent_root(f, lo, hi, 0.0).map_err(|e| {
                ShadowError::NotConverged(format!("turning point of the polar potential: {e}"))
            });
        }
        inside = u;
    }
    Ok(pole)
}
