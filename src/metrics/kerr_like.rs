//! The Kerr-like family shared by Kerr, Kerr–Newman, Kerr–Sen and the rotating regular black
//! holes: Boyer–Lindquist form with a radial function ρ²(r) in place of r² and a mass
//! function μ(r) in place of 2Mr.
//!
//! Σ = ρ² + a² cos²θ, Δ = ρ² + a² − μ;
//! g_tt = −(1 − μ/Σ), g_tφ = −a sin²θ μ/Σ, g_rr = Σ/Δ, g_θθ = Σ,
//! g_φφ = (ρ² + a² + a² sin²θ μ/Σ) sin²θ.
//!
//! Kerr (1963): ρ² = r², μ = 2r. Kerr–Newman (Newman et al. 1965): μ = 2r − q². Kerr–Sen
//! (Sen 1992): ρ² = r(r + 2b), μ = 2r. Rotating regular black holes (Bambi & Modesto 2013):
//! μ = 2 m(r) r. Null geodesics separate (Carter 1968) with the potentials below.

use crate::metric::{Capabilities, MetricComponents};
use crate::scalar::{sin_cos, DualScalar};

/// What every metric of the family declares (and Johannsen's, which shares Θ): separation
/// data (the potentials below) and θ → π − θ symmetry (Σ and Θ depend on θ through cos²θ).
pub(crate) const CAPABILITIES: Capabilities = Capabilities::NONE
    .with_separation()
    .with_equatorial_symmetry();

/// Components of the Kerr-like line element for spin `a`, ρ²(r) = `rho2`, μ(r) = `mu`.
#[inline(always)]
pub(crate) fn components<D: DualScalar>(a: f64, rho2: D, mu: D, theta: D) -> MetricComponents<D> {
    let (s, c) = sin_cos(theta);
    let s2 = s * s;
    let sigma = rho2 + c * c * (a * a);
    let delta = rho2 + a * a - mu;
    let mass_term = mu / sigma;
    MetricComponents {
        g_tt: mass_term - 1.0,
        g_tphi: -(mass_term * s2) * a,
        g_rr: sigma / delta,
        g_thth: sigma,
        g_phph: (rho2 + a * a + mass_term * s2 * (a * a)) * s2,
    }
}

/// Carter's radial potential R = (ρ² + a² − aλ)² − Δ[η + (λ − a)²] (Carter 1968,
/// Phys. Rev. 174, 1559), with Δ = ρ² + a² − μ; (Σ dr/dτ)² = R for unit energy.
#[inline(always)]
pub(crate) fn radial_potential<D: DualScalar>(a: f64, rho2: D, mu: D, lambda: D, eta: D) -> D {
    let delta = rho2 + a * a - mu;
    let p = rho2 + a * a - lambda * a;
    let l_minus_a = lambda - a;
    p * p - delta * (eta + l_minus_a * l_minus_a)
}

/// Carter's polar potential Θ = η + a² cos²θ − λ² cot²θ; (Σ dθ/dτ)² = Θ.
#[inline(always)]
pub(crate) fn polar_potential<D: DualScalar>(a: f64, theta: D, lambda: D, eta: D) -> D {
    let (s, c) = sin_cos(theta);
    let cot = c / s;
    eta + c * c * (a * a) - lambda * lambda * cot * cot
}
