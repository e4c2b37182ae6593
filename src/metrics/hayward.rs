//! Hayward's regular black hole (Hayward 2006, Phys. Rev. Lett. 96, 031103):
//! A = 1/B = 1 − 2r²/(r³ + 2l²), C = r².
//!
//! `l ≥ 0` sets the core size. A horizon exists only for l ≤ 4/√27 ≈ 0.7698.

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The static Hayward metric.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hayward {
    l: f64,
}

/// Hayward's mass function m(r) = r³/(r³ + 2l²).
#[inline(always)]
pub(crate) fn hayward_mass<D: DualScalar>(l: f64, r: D) -> D {
    let r3 = r * r * r;
    r3 / (r3 + 2.0 * l * l)
}

impl Hayward {
    /// A Hayward metric with core parameter `l ≥ 0`.
    pub fn new(l: f64) -> Result<Self, MetricError> {
        Ok(Hayward {
            l: Self::describe().parameters[0].check(l)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "hayward".into(),
            title: "Hayward regular black hole".into(),
            reference: "Hayward 2006, Phys. Rev. Lett. 96, 031103".into(),
            parameters: vec![ParameterSpec::new(
                "l",
                0.0,
                Domain::at_least(0.0),
                "core parameter l/M (horizon only for l <= 4/sqrt(27))",
            )],
        }
    }
}

impl SphericalMetric for Hayward {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(hayward_mass(self.l, r) * 2.0 / r) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        SphericalMetric::a(self, r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.l]
    }
}
