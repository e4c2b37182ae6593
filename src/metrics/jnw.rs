//! Janis–Newman–Winicour naked singularity (Janis, Newman & Winicour 1968, Phys. Rev. Lett.
//! 20, 878; the form of Virbhadra 1997, Int. J. Mod. Phys. A 12, 4831):
//! A = 1/B = (1 − b/r)^ν, C = r² (1 − b/r)^{1−ν}, b = 2/ν (unit ADM mass).
//!
//! `0 < ν ≤ 1`; ν = 1 is Schwarzschild. For ν < 1 the surface r = b is a curvature singularity
//! and there is no horizon. A photon sphere r = (1 + 2ν)/ν exists only for ν > 1/2.

use crate::error::MetricError;
use crate::metric::{Bound, Domain, MetricInfo, ParameterSpec, SphericalMetric};
use crate::scalar::DualScalar;

/// The Janis–Newman–Winicour metric.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Jnw {
    nu: f64,
}

impl Jnw {
    /// A JNW metric with `0 < ν ≤ 1`.
    pub fn new(nu: f64) -> Result<Self, MetricError> {
        Ok(Jnw {
            nu: Self::describe().parameters[0].check(nu)?,
        })
    }

    /// Name, reference and parameters.
    pub fn describe() -> MetricInfo {
        MetricInfo {
            name: "jnw".into(),
            title: "Janis-Newman-Winicour".into(),
            reference: "Janis, Newman & Winicour 1968, Phys. Rev. Lett. 20, 878; Virbhadra 1997, Int. J. Mod. Phys. A 12, 4831"
                .into(),
            parameters: vec![ParameterSpec::new(
                "nu",
                1.0,
                Domain {
                    lower: Bound::Exclusive(0.0),
                    upper: Bound::Inclusive(1.0),
                },
                "scalar-field parameter (nu = 1: Schwarzschild; photon sphere only for nu > 1/2)",
            )],
        }
    }

    fn base<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * (2.0 / self.nu)) + 1.0
    }
}

impl SphericalMetric for Jnw {
    fn a<D: DualScalar>(&self, r: D) -> D {
        self.base(r).powf(self.nu)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        SphericalMetric::a(self, r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r * self.base(r).powf(1.0 - self.nu)
    }
    fn info(&self) -> MetricInfo {
        Self::describe()
    }
    fn parameter_values(&self) -> Vec<f64> {
        vec![self.nu]
    }
    fn outer_horizon(&self) -> Option<f64> {
        (self.nu == 1.0).then_some(2.0)
    }
}
