//! Braneworld black hole with tidal charge (Dadhich, Maartens, Papadopoulos & Rezania 2000,
//! Phys. Lett. B 487, 1): A = 1/B = 1 − 2/r + q2/r², C = r².
//!
//! `q2` may have either sign (negative is the physically favoured case). Horizons
//! r± = 1 ± √(1 − q2); none for q2 > 1.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The tidal-charge metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct TidalCharge {
        name: "tidal-charge",
        title: "Braneworld tidal charge",
        reference: "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1",
        horizon: |m| super::horizon_root(1.0, m.q2).map(|s| 1.0 + s),
        parameters: {
            q2: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "tidal charge in f = 1 - 2/r + q2/r^2, either sign (q2 > 1: no horizon)",
            },
        },
    }
}

impl SphericalMetric for TidalCharge {
    fn a<D: DualScalar>(&self, r: D) -> D {
        (r * r - r * 2.0 + self.q2) / (r * r)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
