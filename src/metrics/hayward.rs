//! Hayward's regular black hole (Hayward 2006, Phys. Rev. Lett. 96, 031103):
//! A = 1/B = 1 − 2r²/(r³ + 2l²), C = r².
//!
//! `l ≥ 0` sets the core size. A horizon exists only for l ≤ 4/√27 ≈ 0.7698.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The static Hayward metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Hayward {
        name: "hayward",
        title: "Hayward regular black hole",
        reference: "Hayward 2006, Phys. Rev. Lett. 96, 031103",
        parameters: {
            l: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "core parameter l/M (horizon only for l <= 4/sqrt(27))",
            },
        },
    }
}

/// Hayward's mass function m(r) = r³/(r³ + 2l²).
#[inline(always)]
pub(crate) fn hayward_mass<D: DualScalar>(l: f64, r: D) -> D {
    let r3 = r * r * r;
    r3 / (r3 + 2.0 * l * l)
}


impl SphericalMetric for Hayward {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(hayward_mass(self.l, r) * 2.0 / r) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
