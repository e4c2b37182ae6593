//! Braneworld black hole with tidal charge (Dadhich, Maartens, Papadopoulos & Rezania 2000,
//! Phys. Lett. B 487, 1): A = 1/B = 1 − 2/r + q2/r², C = r².
//!
//! `q2` may have either sign (negative is the physically favoured case). Horizons
//! r± = 1 ± √(1 − q2); none for q2 > 1.

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The tidal-charge metric.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TidalCharge {
    q2: f64,
}

impl TidalCharge {
    /// A tidal-charge metric with `q2` (any finite value).
    pub fn new(q2: f64) -> Result<Self, MetricError> {
        Ok(TidalCharge {
            q2: Self::describe().parameters[0].check(q2)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "tidal-charge".into(),
            title: "Braneworld tidal charge".into(),
            reference: "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1"
                .into(),
            parameters: vec![ParameterSpec::new(
                "q2",
                0.0,
                Domain::REAL,
                "tidal charge in f = 1 - 2/r + q2/r^2, either sign (q2 > 1: no horizon)",
            )],
        }
    }
}

impl SphericalMetric for TidalCharge {
    fn a<D: DualScalar>(&self, r: D) -> D {
        (r * r - r * 2.0 + self.q2) / (r * r)
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
        vec![self.q2]
    }
    fn outer_horizon(&self) -> Option<f64> {
        super::horizon_root(1.0, self.q2).map(|s| 1.0 + s)
    }
}
