//! Janis–Newman–Winicour naked singularity (Janis, Newman & Winicour 1968, Phys. Rev. Lett.
//! 20, 878; the form of Virbhadra 1997, Int. J. Mod. Phys. A 12, 4831):
//! A = 1/B = (1 − b/r)^ν, C = r² (1 − b/r)^{1−ν}, b = 2/ν (unit ADM mass).
//!
//! `0 < ν ≤ 1`; ν = 1 is Schwarzschild. For ν < 1 the surface r = b is a curvature singularity
//! and there is no horizon. A photon sphere r = (1 + 2ν)/ν exists only for ν > 1/2.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The Janis–Newman–Winicour metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Jnw {
        name: "jnw",
        title: "Janis–Newman–Winicour",
        reference: "Janis, Newman & Winicour 1968, Phys. Rev. Lett. 20, 878; Virbhadra 1997, Int. J. Mod. Phys. A 12, 4831",
        horizon: |m| (m.nu == 1.0).then_some(2.0),
        parameters: {
            nu: {
                default: 1.0,
                domain: Domain::left_open(0.0, 1.0),
                meaning: "scalar-field parameter (nu = 1: Schwarzschild; photon sphere only for nu > 1/2)",
            },
        },
    }
}

impl Jnw {
    fn base<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * (2.0 / self.nu)) + 1.0
    }
}

impl SphericalMetric for Jnw {
    fn a<D: DualScalar>(&self, r: D) -> D {
        self.base(r).powf(self.nu)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r * self.base(r).powf(1.0 - self.nu)
    }
}
