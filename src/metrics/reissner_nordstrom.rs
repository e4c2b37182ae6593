//! Reissner–Nordström (Reissner 1916; Nordström 1918): A = 1/B = 1 − 2/r + q²/r², C = r².

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The charged, static black hole; `q = Q/M`. Horizons r± = 1 ± √(1 − q²); none for |q| > 1.
    ///
    /// ```
    /// use umbral::prelude::*;
    ///
    /// // A(r) = 1 − 2/r + q²/r² (Reissner 1916; Nordström 1918), r₊ = 1 + √(1 − q²).
    /// let q = 0.6;
    /// let rn = ReissnerNordstrom::new(q).unwrap();
    /// assert!((rn.a(3.0f64) - (1.0 - 2.0 / 3.0 + q * q / 9.0)).abs() < 1e-15);
    /// assert_eq!(rn.outer_horizon(), Some(1.8));
    /// // Photon sphere from d(A/r²)/dr = 0: r = (3 + √(9 − 8q²))/2; shadow radius r/√A(r) there.
    /// let r_ph = (3.0 + (9.0 - 8.0 * q * q).sqrt()) / 2.0;
    /// let seen = shadow(&rn, &ShadowRequest::distant(1.0)).unwrap();
    /// assert!((seen.observables.unwrap().mean_radius - r_ph / rn.a(r_ph).sqrt()).abs() < 1e-10);
    /// ```
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct ReissnerNordstrom {
        name: "reissner-nordstrom",
        title: "Reissner–Nordström",
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
