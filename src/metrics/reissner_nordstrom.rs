//! Reissner–Nordström (Reissner 1916; Nordström 1918): A = 1/B = 1 − 2/r + q²/r², C = r².

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The charged, static black hole; `q = Q/M`. Horizons r± = 1 ± √(1 − q²); none for |q| > 1.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReissnerNordstrom {
    q: f64,
}

impl ReissnerNordstrom {
    /// A Reissner–Nordström metric with charge `q` (any finite value; |q| > 1 is a naked
    /// singularity).
    pub fn new(q: f64) -> Result<Self, MetricError> {
        let q = Self::describe().parameters[0].check(q)?;
        Ok(ReissnerNordstrom { q })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "reissner-nordstrom".into(),
            title: "Reissner-Nordstrom".into(),
            reference: "Reissner 1916, Ann. Phys. 355, 106; Nordstrom 1918, Proc. KNAW 20, 1238"
                .into(),
            parameters: vec![ParameterSpec::new(
                "q",
                0.0,
                Domain::REAL,
                "electric charge Q/M (|q| > 1: naked singularity)",
            )],
        }
    }
}

impl SphericalMetric for ReissnerNordstrom {
    fn a<D: DualScalar>(&self, r: D) -> D {
        (r * r - r * 2.0 + self.q * self.q) / (r * r)
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
        vec![self.q]
    }
    fn outer_horizon(&self) -> Option<f64> {
        super::horizon_root(1.0, self.q * self.q).map(|s| 1.0 + s)
    }
}
