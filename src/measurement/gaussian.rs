//! The standard normal distribution: CDF from `libm::erfc` and its inverse by Brent's method.

use crate::numerics::brent_root;

/// Φ(z) = erfc(−z/√2)/2.
pub fn normal_cdf(z: f64) -> f64 {
    0.5 * libm::erfc(-z / std::f64::consts::SQRT_2)
}

/// The two-sided Gaussian multiplier z with Φ(z) − Φ(−z) = `confidence` (z = 1 for 68.27 %,
/// z ≈ 1.959964 for 95 %), or `None` outside (0, 1).
///
/// ```
/// let z = umbral::measurement::gaussian::two_sided_z(0.95).unwrap();
/// assert!((z - 1.959_963_984_540_054).abs() < 1e-12);
/// ```
pub fn two_sided_z(confidence: f64) -> Option<f64> {
    if !(confidence > 0.0 && confidence < 1.0) {
        return None;
    }
    // Φ(z) − Φ(−z) = erf(z/√2), increasing in z; 40 is far past any double-precision level.
    brent_root(
        |z| libm::erf(z / std::f64::consts::SQRT_2) - confidence,
        0.0,
        40.0,
        0.0,
    )
    .ok()
}
