//! Schwarzschild (1916): A = 1/B = 1 − 2/r, C = r².

use crate::metric::{MetricInfo, SphericalMetric};
use crate::scalar::DualScalar;

/// The Schwarzschild black hole of unit mass. Horizon r = 2.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Schwarzschild;

impl Schwarzschild {
    /// Name, reference and (no) parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "schwarzschild".into(),
            title: "Schwarzschild".into(),
            reference: "Schwarzschild 1916, Sitzungsber. Preuss. Akad. Wiss. 189".into(),
            parameters: vec![],
        }
    }
}

impl SphericalMetric for Schwarzschild {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0
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
    fn outer_horizon(&self) -> Option<f64> {
        Some(2.0)
    }
}
