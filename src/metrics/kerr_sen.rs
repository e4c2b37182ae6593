//! Kerr–Sen black hole of heterotic string theory (Sen 1992, Phys. Rev. Lett. 69, 1006), in
//! the Einstein frame and Boyer–Lindquist-like coordinates:
//!
//! ρ² = r(r + 2b) + a² cos²θ, Δ = r(r + 2b) − 2r + a²,
//! g_tt = −(1 − 2r/ρ²), g_tφ = −2ar sin²θ/ρ², g_rr = ρ²/Δ, g_θθ = ρ²,
//! g_φφ = [r(r + 2b) + a² + 2ra² sin²θ/ρ²] sin²θ,
//!
//! with `b = Q²/(2M) ≥ 0`. Horizons r± = 1 − b ± √((1 − b)² − a²) for |a| ≤ 1 − b. At
//! b = 1 (then a = 0) the formula gives r₊ = 0, which lies on the singular surface
//! r(r + 2b) = 0 and has zero area, 4π(r₊² + 2br₊ + a²) = 0: the extremal limit, in which the
//! horizon degenerates into the singularity (as for the dilaton black hole at q² = 2,
//! Garfinkle, Horowitz & Strominger 1991, of which a = 0 is a coordinate change,
//! r(r + 2b) = ρ(ρ − 2b)). It is not a horizon here, so b ≥ 1 has none. Separable (Kerr-like
//! with r² → r(r + 2b)).

use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, Domain, Metric, MetricComponents};
use crate::scalar::DualScalar;

declare_metric! {
    /// The Kerr–Sen metric.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct KerrSen {
        name: "kerr-sen",
        title: "Kerr–Sen",
        reference: "Sen 1992, Phys. Rev. Lett. 69, 1006",
        horizon: |m| m.outer_horizon_closed_form(),
        parameters: {
            a: { default: 0.0, domain: Domain::REAL, meaning: "spin a = J/M^2" },
            b: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "dilaton charge b = Q^2/(2M) (horizon only for |a| <= 1 - b and b < 1; at b = 1 it has zero area on the singularity)",
            },
        },
    }
}

impl KerrSen {
    /// r₊ = 1 − b + √((1 − b)² − a²), or `None`: b ≥ 1 gives r₊ ≤ 0, on or inside the singular
    /// surface r(r + 2b) = 0 (b = 1, a = 0: r₊ = 0, a zero-area horizon on the singularity;
    /// module docs).
    fn outer_horizon_closed_form(&self) -> Option<f64> {
        if self.b >= 1.0 {
            return None;
        }
        super::horizon_root((1.0 - self.b).powi(2), self.a * self.a).map(|s| 1.0 - self.b + s)
    }

    fn rho2<D: DualScalar>(&self, r: D) -> D {
        r * (r + 2.0 * self.b)
    }
}

impl Metric for KerrSen {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        kerr_like::components(self.a, self.rho2(r), r * 2.0, theta)
    }
    fn capabilities(&self) -> Capabilities {
        kerr_like::CAPABILITIES
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::radial_potential(
            self.a,
            self.rho2(r),
            r * 2.0,
            lambda,
            eta,
        ))
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
    }
}
