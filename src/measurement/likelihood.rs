//! How a measurement enters a likelihood (for `umbral infer`): the size as a density of the
//! predicted shadow radius, the circularity as a hard cut or a soft upper limit.
//!
//! * A value with errors `value`, `minus`, `plus` is a split normal (two half-Gaussians joined
//!   at the mode, σ₋ below and σ₊ above, normalised; equal errors give a Gaussian): the
//!   common reading of quoted asymmetric errors (common practice, no source; the split normal
//!   itself: John 1982, Commun. Stat. Theory Methods 11, 879, "from memory").
//! * A ring diameter is a Gaussian in the predicted diameter d = κ · 2 r_sh · θ_g, with κ and
//!   θ_g (or mass and distance) sampled as parameters of the model with their Gaussian priors.
//! * A soft circularity limit `value`, `sigma` is flat for ΔC ≤ value and falls off as a
//!   half-Gaussian of width σ above it: an upper limit with a smooth edge (common practice, no
//!   source); `max` is the hard cut (ΔC > max has zero likelihood).

use super::Gaussian;
use serde::Serialize;

/// ln √(2π).
const LN_SQRT_2PI: f64 = 0.918_938_533_204_672_7;

/// A value with asymmetric one-standard-deviation errors, read as a split normal.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ValueErrors {
    /// The central value (the mode of the split normal).
    pub value: f64,
    /// The error below the value (one standard deviation, not negative).
    pub minus: f64,
    /// The error above the value (one standard deviation, not negative).
    pub plus: f64,
}

impl ValueErrors {
    /// The split-normal log density at `x`:
    /// ln p = ln(2 / (√(2π) (σ₋ + σ₊))) − (x − μ)² / (2σ²), σ = σ₋ below μ and σ₊ above.
    /// Zero errors on a side make that side impossible (−∞), except at the value itself.
    ///
    /// ```
    /// use umbral::measurement::likelihood::ValueErrors;
    /// let g = ValueErrors { value: 1.0, minus: 0.5, plus: 0.5 };
    /// // Equal errors: the Gaussian density, 1/(σ√(2π)) at the mode.
    /// let peak = 1.0 / (0.5 * (2.0 * std::f64::consts::PI).sqrt());
    /// assert!((g.log_density(1.0) - peak.ln()).abs() < 1e-15);
    /// ```
    pub fn log_density(&self, x: f64) -> f64 {
        let sigma = if x < self.value {
            self.minus
        } else {
            self.plus
        };
        let d = x - self.value;
        if sigma <= 0.0 {
            return if d == 0.0 {
                f64::INFINITY
            } else {
                f64::NEG_INFINITY
            };
        }
        (2.0 / (self.minus + self.plus)).ln() - LN_SQRT_2PI - 0.5 * (d / sigma).powi(2)
    }
}

/// The Gaussian log density ln N(x; value, sigma).
///
/// ```
/// use umbral::measurement::{likelihood::gaussian_log_density, Gaussian};
/// let g = Gaussian { value: 2.0, sigma: 1.0 };
/// assert!((gaussian_log_density(&g, 3.0) - (-0.5 - 0.918_938_533_204_672_7)).abs() < 1e-15);
/// ```
pub fn gaussian_log_density(g: &Gaussian, x: f64) -> f64 {
    let z = (x - g.value) / g.sigma;
    -0.5 * z * z - g.sigma.ln() - LN_SQRT_2PI
}

/// How the circularity deviation ΔC enters.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CircularityLimit {
    /// A hard cut: ΔC ≤ max.
    Max(f64),
    /// A soft upper limit: flat below `value`, a half-Gaussian of width `sigma` above it.
    Soft {
        /// Where the limit starts to bite.
        value: f64,
        /// The width of the fall-off above `value`.
        sigma: f64,
    },
}

impl CircularityLimit {
    /// The log-likelihood of a predicted ΔC (0 where allowed, −∞ past a hard cut, −z²/2
    /// above a soft limit's value). Unnormalised: constant in the model's parameters.
    ///
    /// ```
    /// use umbral::measurement::likelihood::CircularityLimit;
    /// let soft = CircularityLimit::Soft { value: 0.1, sigma: 0.05 };
    /// assert_eq!(soft.log_likelihood(0.05), 0.0);
    /// assert!((soft.log_likelihood(0.2) + 2.0).abs() < 1e-12);
    /// assert_eq!(CircularityLimit::Max(0.1).log_likelihood(0.2), f64::NEG_INFINITY);
    /// ```
    pub fn log_likelihood(&self, delta_c: f64) -> f64 {
        match *self {
            CircularityLimit::Max(max) if delta_c <= max => 0.0,
            CircularityLimit::Max(_) => f64::NEG_INFINITY,
            CircularityLimit::Soft { value, .. } if delta_c <= value => 0.0,
            CircularityLimit::Soft { value, sigma } => -0.5 * ((delta_c - value) / sigma).powi(2),
        }
    }

    /// The hard cut the interval-inclusion bound uses: `max`, or `value + 2 sigma` for a soft
    /// limit (its 95 % one-sided edge for a half-Gaussian; stated in the bound's assumptions).
    pub fn bound_cut(&self) -> f64 {
        match *self {
            CircularityLimit::Max(max) => max,
            CircularityLimit::Soft { value, sigma } => value + 2.0 * sigma,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The split normal integrates to one (trapezoid rule on a wide grid).
    #[test]
    fn split_normal_is_normalised() {
        let s = ValueErrors {
            value: 0.3,
            minus: 0.1,
            plus: 0.4,
        };
        let (lo, hi, n) = (-2.0, 4.0, 600_000);
        let h = (hi - lo) / n as f64;
        let sum: f64 = (0..=n)
            .map(|i| {
                let w = if i == 0 || i == n { 0.5 } else { 1.0 };
                w * s.log_density(lo + i as f64 * h).exp()
            })
            .sum::<f64>()
            * h;
        assert!((sum - 1.0).abs() < 1e-9, "{sum}");
    }
}
