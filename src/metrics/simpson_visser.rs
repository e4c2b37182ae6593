//! Simpson–Visser black bounce (Simpson & Visser 2019, JCAP 02, 042):
//! A = 1/B = 1 − 2/√(r² + l²), C = r² + l².
//!
//! `l ≥ 0`: l < 2 is a regular black hole with horizon r = √(4 − l²); l = 2 a one-way
//! wormhole with an extremal null throat; l > 2 a traversable wormhole (no horizon). The
//! photon sphere sits at r² + l² = 9, so b_c = 3√3 for every l < 3.

use crate::declare_metric;
use crate::metric::{Domain, SphericalMetric};
use crate::scalar::DualScalar;

declare_metric! {
    /// The Simpson–Visser metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct SimpsonVisser {
        name: "simpson-visser",
        title: "Simpson–Visser black bounce",
        reference: "Simpson & Visser 2019, JCAP 02, 042",
        horizon: |m| (m.l < 2.0).then(|| (4.0 - m.l * m.l).sqrt()),
        parameters: {
            l: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "bounce length l/M (l < 2 black hole, l >= 2 wormhole)",
            },
        },
    }
}

impl SphericalMetric for SimpsonVisser {
    fn a<D: DualScalar>(&self, r: D) -> D {
        -((r * r + self.l * self.l).sqrt().recip() * 2.0) + 1.0
    }
    fn b<D: DualScalar>(&self, r: D) -> D {
        self.a(r).recip()
    }
    fn c<D: DualScalar>(&self, r: D) -> D {
        r * r + self.l * self.l
    }
}
