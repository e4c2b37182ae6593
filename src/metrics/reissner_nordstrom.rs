//! Reissner–Nordström (Reissner 1916; Nordström 1918): A = 1/B = 1 − 2/r + q²/r², C = r².

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The charged, static black hole; `q = Q/M`. Horizons r± = 1 ± √(1 − q²); none for |q| > 1.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct ReissnerNordstrom {
        name: "reissner-nordstrom",
        title: "Reissner-Nordstrom",
        reference: "Reissner 1916, Ann. Phys. 355, 106; Nordstrom 1918, Proc. KNAW 20, 1238",
        horizon: |m| super::horizon_root(1.0, m.q * m.q).map(|s| 1.0 + s),
        parameters: {
            q: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "electric charge Q/M (|q| > 1: naked singularity)",
            },
        },
    }
}

impl SphericalMetric for ReissnerNordstrom {
    fn a<D: DualScalar>(&self, r: D) -> D {
        (r * r - r * 2.0 + self.q * self.q) / (r * r)
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
