//! The standard normal distribution: density, CDF and its inverse (the quantile function).
//!
//! Φ(z) = erfc(−z/√2)/2 from `libm::erfc`. The quantile Φ⁻¹(p) starts from the rational
//! approximation of Abramowitz & Stegun (1964), "Handbook of Mathematical Functions",
//! eq. 26.2.23 (absolute error below 4.5·10⁻⁴), and is refined by Newton's method on
//! ln Φ(z) − ln p, safeguarded by bisection ([`crate::numerics::safeguarded_newton`]), to a
//! few units in the last place. The lower tail is solved directly and the upper tail by
//! symmetry (1 − p is exact for p ≥ 1/2), so tiny tail probabilities keep full precision.

use crate::numerics::{safeguarded_newton, NewtonEval};
use std::f64::consts::{PI, SQRT_2};

/// The standard normal density φ(z) = exp(−z²/2)/√(2π).
///
/// ```
/// let phi0 = umbral::sampling::normal::density(0.0);
/// assert!((phi0 - 1.0 / (2.0 * std::f64::consts::PI).sqrt()).abs() < 1e-16);
/// ```
pub fn density(z: f64) -> f64 {
    (-0.5 * z * z).exp() / (2.0 * PI).sqrt()
}

/// The standard normal CDF Φ(z) = erfc(−z/√2)/2.
///
/// ```
/// assert_eq!(umbral::sampling::normal::cdf(0.0), 0.5);
/// ```
pub fn cdf(z: f64) -> f64 {
    0.5 * libm::erfc(-z / SQRT_2)
}

/// The standard normal quantile Φ⁻¹(p): −∞ at p = 0, +∞ at p = 1, NaN outside [0, 1].
///
/// ```
/// use umbral::sampling::normal::{cdf, quantile};
/// assert!((quantile(0.975) - 1.959_963_984_540_054).abs() < 1e-14);
/// let p = 1e-100;
/// assert!((cdf(quantile(p)) - p).abs() < 1e-12 * p);
/// ```
pub fn quantile(p: f64) -> f64 {
    if p.is_nan() || !(0.0..=1.0).contains(&p) {
        f64::NAN
    } else if p == 0.5 {
        0.0
    } else if p > 0.5 {
        -lower_quantile(1.0 - p)
    } else {
        lower_quantile(p)
    }
}

/// Φ⁻¹(p) for 0 ≤ p < 1/2 (a non-positive number).
fn lower_quantile(p: f64) -> f64 {
    if p == 0.0 {
        return f64::NEG_INFINITY;
    }
    // Abramowitz & Stegun 26.2.23: the upper-tail point x_p with Q(x_p) = p.
    let t = (-2.0 * p.ln()).sqrt();
    let x_p = t
        - (2.515517 + 0.802853 * t + 0.010328 * t * t)
            / (1.0 + 1.432788 * t + 0.189269 * t * t + 0.001308 * t * t * t);
    let start = (-x_p).clamp(-39.0, 0.0);
    let ln_p = p.ln();
    // ln p − ln Φ(z) decreases through the root; its slope is −φ(z)/Φ(z).
    let f = |z: f64| {
        let ln_cdf = cdf(z).ln();
        let value = ln_p - ln_cdf;
        if value == 0.0 {
            NewtonEval::Root
        } else {
            NewtonEval::Slope(
                value,
                -(-0.5 * z * z - 0.5 * (2.0 * PI).ln() - ln_cdf).exp(),
            )
        }
    };
    let settled = |a: f64, b: f64, _: f64, _: f64| (a - b).abs() <= 2.0 * f64::EPSILON * b.abs();
    // Below Φ(−38.5) no double is positive: the bracket [−40, 0] holds every root.
    safeguarded_newton(f, [-40.0, 0.0], start, 200, settled).unwrap_or(start)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantile_inverts_the_cdf_across_the_range() {
        for &p in &[
            1e-300, 1e-20, 1e-5, 0.01, 0.1, 0.3, 0.4999, 0.5001, 0.9, 0.999,
        ] {
            let z = quantile(p);
            let back = if p < 0.5 { cdf(z) } else { 1.0 - cdf(-z) };
            // Rounding z by one part in 2⁵³ moves Φ by z² parts in 2⁵³ in the tail
            // (d ln Φ/d ln|z| ≈ z²): allow four units of that.
            let tol = 4.0 * f64::EPSILON * z.mul_add(z, 1.0) * p.min(1.0 - p);
            assert!((back - p).abs() <= tol, "p {p}: {back}");
        }
        // Known values: Φ⁻¹(0.84134474606854) = 1 (Φ(1) from erfc; Abramowitz & Stegun 1964,
        // table 26.1, gives 0.8413447461).
        assert!((quantile(cdf(1.0)) - 1.0).abs() < 1e-14);
        assert_eq!(quantile(0.0), f64::NEG_INFINITY);
        assert_eq!(quantile(1.0), f64::INFINITY);
        assert!(quantile(1.5).is_nan() && quantile(f64::NAN).is_nan());
    }
}
