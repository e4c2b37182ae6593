//! Static, spherically symmetric metrics: ds² = −A(r) dt² + B(r) dr² + C(r) dΩ².
//!
//! Implement [`SphericalMetric`] (three short functions) and the metric gets [`Metric`],
//! declared spherical, and so [`Spacetime`](super::Spacetime), for free. Its name, parameters
//! and horizon rule come from [`Declared`], as for every metric.

use super::{Capabilities, Declared, Metric, MetricComponents};
use crate::scalar::{sin_cos, DualScalar};

/// The functions A, B, C of a spherically symmetric line element at one radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SphericalFunctions<D> {
    /// A(r) = −g_tt.
    pub a: D,
    /// B(r) = g_rr.
    pub b: D,
    /// C(r) = g_θθ.
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
/// impl Declared for Tidal {} // unnamed, numerical horizon finder
/// impl SphericalMetric for Tidal {
///     fn a<D: DualScalar>(&self, r: D) -> D { (r * r - r * 2.0 + self.q2) / (r * r) }
///     fn b<D: DualScalar>(&self, r: D) -> D { self.a(r).recip() }
///     fn c<D: DualScalar>(&self, r: D) -> D { r * r }
/// }
///
/// let m = Tidal { q2: -0.5 };
/// // r₊ = 1 + √(1 − q2), found by the default horizon finder.
/// assert!((m.outer_horizon().unwrap() - (1.0 + 1.5f64.sqrt())).abs() < 1e-12);
/// assert_eq!(m.symmetry(), Symmetry::Spherical);
/// ```
pub trait SphericalMetric: Declared + Send + Sync {
    /// A(r) = −g_tt.
    fn a<D: DualScalar>(&self, r: D) -> D;
    /// B(r) = g_rr.
    fn b<D: DualScalar>(&self, r: D) -> D;
    /// C(r) = g_θθ, the areal radius squared.
    fn c<D: DualScalar>(&self, r: D) -> D;
}

impl<S: SphericalMetric> Metric for S {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let c = self.c(r);
        let s = sin_cos(theta).0;
        MetricComponents {
            g_tt: -self.a(r),
            g_tphi: D::from(0.0),
            g_rr: self.b(r),
            g_thth: c,
            g_phph: c * s * s,
        }
    }

    fn capabilities(&self) -> Capabilities {
        Capabilities::SPHERICAL
    }

    fn spherical_functions<D: DualScalar>(&self, r: D) -> Option<SphericalFunctions<D>> {
        Some(SphericalFunctions {
            a: self.a(r),
            b: self.b(r),
            c: self.c(r),
        })
    }
}
