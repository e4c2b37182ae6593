//! Simpson–Visser black bounce (Simpson & Visser 2019, JCAP 02, 042):
//! A = 1/B = 1 − 2/√(r² + l²), C = r² + l².
//!
//! `l ≥ 0`: l < 2 is a regular black hole with horizon r = √(4 − l²); l = 2 a one-way
//! wormhole with an extremal null throat; l > 2 a traversable wormhole (no horizon). The
//! photon sphere sits at r² + l² = 9, so b_c = 3√3 for every l < 3.

use crate::error::MetricError;
use crate::metric::{Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The Simpson–Visser metric.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SimpsonVisser {
    l: f64,
}

impl SimpsonVisser {
    /// A Simpson–Visser metric with bounce parameter `l ≥ 0`.
    pub fn new(l: f64) -> Result<Self, MetricError> {
        Ok(SimpsonVisser {
            l: Self::describe().parameters[0].check(l)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "simpson-visser".into(),
            title: "Simpson-Visser black bounce".into(),
            reference: "Simpson & Visser 2019, JCAP 02, 042".into(),
            parameters: vec![ParameterSpec::new(
                "l",
                0.0,
                Domain::at_least(0.0),
                "bounce length l/M (l < 2 black hole, l >= 2 wormhole)",
            )],
        }
    }
}

impl SphericalMetric for SimpsonVisser {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -((r * r + self.l * self.l).sqrt().recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        SphericalMetric::a(self, r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r + self.l * self.l
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.l]
    }
    fn outer_horizon(&self) -> Option<f64> {
        (self.l < 2.0).then(|| (4.0 - self.l * self.l).sqrt())
    }
}
