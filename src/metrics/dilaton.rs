//! Einstein–Maxwell–dilaton black hole (Garfinkle, Horowitz & Strominger 1991,
//! Phys. Rev. D 43, 3140) in the Einstein frame: A = 1/B = 1 − 2/r, C = r(r − q²).
//!
//! `q = Q/M`. The horizon is r = 2 while q² < 2; at q² = 2 the area of the horizon sphere
//! vanishes, and beyond it the areal radius reaches zero outside r = 2 (no horizon).

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The dilaton black hole.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dilaton {
    q: f64,
}

impl Dilaton {
    /// A dilaton black hole with charge `q` (any finite value; q² ≥ 2 has no horizon).
    pub fn new(q: f64) -> Result<Self, MetricError> {
        Ok(Dilaton {
            q: Self::describe().parameters[0].check(q)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "dilaton".into(),
            title: "Einstein-Maxwell-dilaton (GHS)".into(),
            reference: "Garfinkle, Horowitz & Strominger 1991, Phys. Rev. D 43, 3140".into(),
            parameters: vec![ParameterSpec::new(
                "q",
                0.0,
                Domain::REAL,
                "charge Q/M; areal radius^2 = r(r - q^2) (q^2 >= 2: no horizon)",
            )],
        }
    }
}

impl SphericalMetric for Dilaton {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        SphericalMetric::a(self, r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * (r - self.q * self.q)
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.q]
    }
    fn outer_horizon(&self) -> Option<f64> {
        (self.q * self.q < 2.0).then_some(2.0)
    }
}
