//! Static, spherically symmetric metrics: ds² = −A(r) dt² + B(r) dr² + C(r) dΩ².
//!
//! Implement [`SphericalMetric`] (three short functions) and the metric gets [`Metric`],
//! and so [`Spacetime`](super::Spacetime), for free.

use super::{numerical_outer_horizon, Metric, MetricComponents, MetricInfo};
use crate::scalar::DualScalar;

/// The functions A, B, C of a spherically symmetric line element at one radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SphericalFunctions<D> {
    pub a: D,
    pub b: D,
    pub c: D,
}

/// A static, spherically symmetric metric ds² = −A dt² + B dr² + C (dθ² + sin²θ dφ²).
///
/// ```
/// use umbral::prelude::*;
///
/// /// Braneworld tidal charge (Dadhich et al. 2000): A = 1/B = 1 − 2/r + q2/r², C = r².
/// struct Tidal { q2: f64 }
///
/// impl SphericalMetric for Tidal {
///     fn a<D: DualScalar>(&self, r: D) -> D { (r * r - r * 2.0 + self.q2) / (r * r) }
///     fn b<D: DualScalar>(&self, r: D) -> D { self.a(r).recip() }
///     fn c<D: DualScalar>(&self, r: D) -> D { r * r }
/// }
///
/// let m = Tidal { q2: -0.5 };
/// // r₊ = 1 + √(1 − q2), found by the default horizon finder.
/// assert!((Spacetime::outer_horizon(&m).unwrap() - (1.0 + 1.5f64.sqrt())).abs() < 1e-12);
/// ```
pub trait SphericalMetric: Send + Sync {
    /// A(r) = −g_tt.
    fn a<D: DualScalar>(&self, r: D) -> D;
    /// B(r) = g_rr.
    fn b<D: DualScalar>(&self, r: D) -> D;
    /// C(r) = g_θθ, the areal radius squared.
    fn c<D: DualScalar>(&self, r: D) -> D;

    /// Name, reference and parameters. The default names the Rust type.
    fn info(&self) -> MetricInfo {
        MetricInfo::unnamed(std::any::type_name::<Self>())
    }
    /// Current parameter values, in the order of [`MetricInfo::parameters`].
    fn parameter_values(&self) -> Vec<f64> {
        Vec::new()
    }
    /// Outer horizon radius. Default: the outermost root of 1/B = 0, found numerically.
    fn outer_horizon(&self) -> Option<f64>
    where
        Self: Sized,
    {
        numerical_outer_horizon(self)
    }
}

impl<S: SphericalMetric> Metric for S {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let c = self.c(r);
        let s = theta.sin();
        MetricComponents {
            g_tt: -self.a(r),
            g_tphi: D::from(0.0),
            g_rr: self.b(r),
            g_thth: c,
            g_phph: c * s * s,
        }
    }

    fn info(&self) -> MetricInfo {
        SphericalMetric::info(self)
    }

    fn parameter_values(&self) -> Vec<f64> {
        SphericalMetric::parameter_values(self)
    }

    fn outer_horizon(&self) -> Option<f64> {
        SphericalMetric::outer_horizon(self)
    }

    fn spherical_functions<D: DualScalar>(&self, r: D) -> Option<super::SphericalFunctions<D>> {
        Some(SphericalFunctions {
            a: self.a(r),
            b: self.b(r),
            c: self.c(r),
        })
    }

    fn equatorially_symmetric(&self) -> bool {
        true
    }
}
