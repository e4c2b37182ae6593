//! Kerr–Newman (Newman et al. 1965, J. Math. Phys. 6, 918), Boyer–Lindquist coordinates.
//!
//! Σ = r² + a² cos²θ, Δ = r² − 2r + a² + q²;
//! g_tt = −(1 − (2r − q²)/Σ), g_tφ = −a sin²θ (2r − q²)/Σ, g_rr = Σ/Δ, g_θθ = Σ,
//! g_φφ = [r² + a² + (2r − q²) a² sin²θ/Σ] sin²θ. Horizons r± = 1 ± √(1 − a² − q²).
//! With q = 0 this is Kerr (1963).

use crate::error::MetricError;
use crate::metric::{Domain, Metric, MetricComponents, MetricInfo, ParameterSpec};
use crate::scalar::DualScalar;

/// The rotating, charged black hole; `a = J/M²`, `q = Q/M`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KerrNewman {
    a: f64,
    q: f64,
}

/// Kerr–Newman components, shared with [`super::Kerr`] (q = 0).
#[inline(always)]
pub(crate) fn kerr_newman_components<D: DualScalar>(
    a: f64,
    q2: f64,
    r: D,
    theta: D,
) -> MetricComponents<D> {
    let (s, c) = theta.sin_cos();
    let s2 = s * s;
    let sigma = r * r + c * c * (a * a);
    let delta = r * r - r * 2.0 + (a * a + q2);
    let mass_term = (r * 2.0 - q2) / sigma; // (2r − q²)/Σ
    MetricComponents {
        g_tt: mass_term - 1.0,
        g_tphi: -(mass_term * s2) * a,
        g_rr: sigma / delta,
        g_thth: sigma,
        g_phph: (r * r + a * a + mass_term * s2 * (a * a)) * s2,
    }
}

/// Carter's radial potential R = (r² + a² − aλ)² − Δ[η + (λ − a)²] (Carter 1968,
/// Phys. Rev. 174, 1559), with Δ = r² − 2r + a² + q².
#[inline(always)]
pub(crate) fn kerr_newman_radial<D: DualScalar>(a: f64, q2: f64, r: D, lambda: D, eta: D) -> D {
    let delta = r * r - r * 2.0 + (a * a + q2);
    let p = r * r + a * a - lambda * a;
    let l_minus_a = lambda - a;
    p * p - delta * (eta + l_minus_a * l_minus_a)
}

/// Carter's polar potential Θ = η + a² cos²θ − λ² cot²θ.
#[inline(always)]
pub(crate) fn kerr_newman_polar<D: DualScalar>(a: f64, theta: D, lambda: D, eta: D) -> D {
    let (s, c) = theta.sin_cos();
    let cot = c / s;
    eta + c * c * (a * a) - lambda * lambda * cot * cot
}

impl KerrNewman {
    /// A Kerr–Newman metric (any finite a, q; a² + q² > 1 is a naked singularity).
    pub fn new(a: f64, q: f64) -> Result<Self, MetricError> {
        let spec = Self::describe().parameters;
        Ok(KerrNewman {
            a: spec[0].check(a)?,
            q: spec[1].check(q)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "kerr-newman".into(),
            title: "Kerr-Newman".into(),
            reference:
                "Newman, Couch, Chinnapared, Exton, Prakash & Torrence 1965, J. Math. Phys. 6, 918"
                    .into(),
            parameters: vec![
                ParameterSpec::new("a", 0.0, Domain::REAL, "spin a = J/M^2"),
                ParameterSpec::new(
                    "q",
                    0.0,
                    Domain::REAL,
                    "electric charge Q/M (a^2 + q^2 > 1: naked singularity)",
                ),
            ],
        }
    }
}

impl Metric for KerrNewman {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        kerr_newman_components(self.a, self.q * self.q, r, theta)
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.a, self.q]
    }
    fn outer_horizon(&self) -> Option<f64> {
        let disc = 1.0 - self.a * self.a - self.q * self.q;
        (disc >= 0.0).then(|| 1.0 + disc.sqrt())
    }
    fn equatorially_symmetric(&self) -> bool {
        true
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_newman_radial(self.a, self.q * self.q, r, lambda, eta))
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_newman_polar(self.a, theta, lambda, eta))
    }
}
