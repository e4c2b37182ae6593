//! Einstein–Maxwell–dilaton black hole (Garfinkle, Horowitz & Strominger 1991,
//! Phys. Rev. D 43, 3140) in the Einstein frame: A = 1/B = 1 − 2/r, C = r(r − q²).
//!
//! `q = Q/M`. The horizon is r = 2 while q² < 2; at q² = 2 the area of the horizon sphere
//! vanishes, and beyond it the areal radius reaches zero outside r = 2 (no horizon).

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The dilaton black hole.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Dilaton {
        name: "dilaton",
        title: "Einstein–Maxwell–dilaton (GHS)",
        reference: "Garfinkle, Horowitz & Strominger 1991, Phys. Rev. D 43, 3140",
        horizon: |m| (m.q * m.q < 2.0).then_some(2.0),
        parameters: {
            q: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "charge Q/M; areal radius^2 = r(r - q^2) (q^2 >= 2: no horizon)",
            },
        },
    }
}

impl SphericalMetric for Dilaton {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * (r - self.q * self.q)
    }
}
