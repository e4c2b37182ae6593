//! Bardeen's regular black hole (Bardeen 1968, Proc. GR5, Tbilisi, p. 174; in the form of
//! Ayón-Beato & García 2000, Phys. Lett. B 493, 149): A = 1/B = 1 − 2r²/(r² + g²)^{3/2}, C = r².
//!
//! `g ≥ 0` is the magnetic monopole charge of the nonlinear-electrodynamics source. A horizon
//! exists only for g ≤ 4/√27 ≈ 0.7698; above that the object is horizonless and regular.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The static Bardeen metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Bardeen {
        name: "bardeen",
        title: "Bardeen regular black hole",
        reference: "Bardeen 1968, Proc. GR5 (Tbilisi) p. 174; Ayon-Beato & Garcia 2000, Phys. Lett. B 493, 149",
        parameters: {
            g: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "magnetic charge g/M (horizon only for g <= 4/sqrt(27))",
            },
        },
    }
}

/// Bardeen's mass function m(r) = r³/(r² + g²)^{3/2}.
#[inline(always)]
pub(crate) fn bardeen_mass<D: DualScalar>(g: f64, r: D) -> D {
    let r2 = r * r;
    r2 * r / (r2 + g * g).powf(1.5)
}


impl SphericalMetric for Bardeen {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(bardeen_mass(self.g, r) * 2.0 / r) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
