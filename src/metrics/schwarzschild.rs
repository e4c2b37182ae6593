//! Schwarzschild (1916): A = 1/B = 1 − 2/r, C = r².

use crate::declare_metric;
use crate::metric::SphericalMetric;
use crate::scalar::DualScalar;

declare_metric! {
    /// The Schwarzschild black hole of unit mass. Horizon r = 2.
    #[derive(Debug, Clone, Copy, Default, PartialEq)]
    pub struct Schwarzschild {
        name: "schwarzschild",
        title: "Schwarzschild",
        reference: "Schwarzschild 1916, Sitzungsber. Preuss. Akad. Wiss. 189",
        horizon: |_m| Some(2.0),
        parameters: {},
    }
}

impl SphericalMetric for Schwarzschild {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -(r.recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r
    }
}
