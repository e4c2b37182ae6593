//! Kerr–Newman (Newman et al. 1965, J. Math. Phys. 6, 918), Boyer–Lindquist coordinates.
//!
//! Σ = r² + a² cos²θ, Δ = r² − 2r + a² + q²;
//! g_tt = −(1 − (2r − q²)/Σ), g_tφ = −a sin²θ (2r − q²)/Σ, g_rr = Σ/Δ, g_θθ = Σ,
//! g_φφ = [r² + a² + (2r − q²) a² sin²θ/Σ] sin²θ. Horizons r± = 1 ± √(1 − a² − q²).
//! With q = 0 this is Kerr (1963).

use super::kerr_like;
use crate::error::MetricError;
use crate::metric::{Domain, Metric, MetricComponents, MetricInfo, ParameterSpec};
use crate::scalar::DualScalar;

/// The rotating, charged black hole; `a = J/M²`, `q = Q/M`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KerrNewman {
    a: f64,
    q: f64,
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
        kerr_like::components(self.a, r * r, r * 2.0 - self.q * self.q, theta)
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.a, self.q]
    }
    fn outer_horizon(&self) -> Option<f64> {
        super::horizon_root(1.0, self.a * self.a + self.q * self.q).map(|s| 1.0 + s)
    }
    fn equatorially_symmetric(&self) -> bool {
        true
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        let mu = r * 2.0 - self.q * self.q;
        Some(kerr_like::radial_potential(self.a, r * r, mu, lambda, eta))
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
    }
}
