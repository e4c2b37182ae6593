//! The Johannsen metric (Johannsen 2013, Phys. Rev. D 88, 044002), lowest-order deviations:
//!
//! Σ̃ = Σ + f(r), f = ε3/r, A1 = 1 + α13/r³, A2 = 1 + α22/r², A5 = 1 + α52/r²,
//! D = [(r² + a²) A1 − a² A2 sin²θ]²,
//! g_tt = −Σ̃ [Δ − a² A2² sin²θ]/D, g_tφ = −a [(r² + a²) A1 A2 − Δ] Σ̃ sin²θ/D,
//! g_rr = Σ̃/(Δ A5), g_θθ = Σ̃, g_φφ = Σ̃ sin²θ [(r² + a²)² A1² − a² Δ sin²θ]/D,
//!
//! with the Kerr Σ and Δ. All deviations zero is Kerr; the horizon stays at Δ = 0. Null
//! geodesics separate: Σ̃ g^{μν}p_μp_ν = −[P E − Q L]²/Δ + Δ A5 p_r² + p_θ² +
//! (L − aE sin²θ)²/sin²θ with P = (r² + a²) A1, Q = a A2, so the shadow depends on α13 and
//! α22 only.

use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, Domain, Metric, MetricComponents};
use crate::scalar::DualScalar;

declare_metric! {
    /// The Johannsen metric with (a, α13, α22, α52, ε3).
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Johannsen {
        name: "johannsen",
        title: "Johannsen",
        reference: "Johannsen 2013, Phys. Rev. D 88, 044002",
        horizon: |m| super::horizon_root(1.0, m.a * m.a).map(|s| 1.0 + s),
        parameters: {
            a: { default: 0.0, domain: Domain::closed(-1.0, 1.0), meaning: "spin a = J/M^2" },
            alpha13: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation in A1 = 1 + alpha13/r^3",
            },
            alpha22: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation in A2 = 1 + alpha22/r^2",
            },
            alpha52: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation in A5 = 1 + alpha52/r^2",
            },
            eps3: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation in Sigma~ = Sigma + eps3/r",
            },
        },
    }
}

impl Johannsen {
    /// The deformation functions (A1, A2, A5) at r.
    fn deformations<D: DualScalar>(&self, r: D) -> (D, D, D) {
        let inv_r2 = (r * r).recip();
        (
            inv_r2 * r.recip() * self.alpha13 + 1.0,
            inv_r2 * self.alpha22 + 1.0,
            inv_r2 * self.alpha52 + 1.0,
        )
    }

    fn delta<D: DualScalar>(&self, r: D) -> D {
        r * r - r * 2.0 + self.a * self.a
    }
}

impl Metric for Johannsen {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let a = self.a;
        let (s, c) = theta.sin_cos();
        let s2 = s * s;
        let r2a2 = r * r + a * a;
        let sigma_t = r * r + c * c * (a * a) + r.recip() * self.eps3;
        let delta = self.delta(r);
        let (a1, a2, a5) = self.deformations(r);
        let root_d = r2a2 * a1 - a2 * s2 * (a * a);
        let big_d = root_d * root_d;
        MetricComponents {
            g_tt: -(sigma_t * (delta - a2 * a2 * s2 * (a * a))) / big_d,
            g_tphi: -(sigma_t * s2 * (r2a2 * a1 * a2 - delta) * a) / big_d,
            g_rr: sigma_t / (delta * a5),
            g_thth: sigma_t,
            g_phph: sigma_t * s2 * (r2a2 * r2a2 * a1 * a1 - delta * s2 * (a * a)) / big_d,
        }
    }
    fn capabilities(&self) -> Capabilities {
        kerr_like::CAPABILITIES
    }
    /// (Σ̃ dr/dτ)² = A5 [(P − Qλ)² − Δ(η + (λ − a)²)], P = (r² + a²) A1, Q = a A2.
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        let (a1, a2, a5) = self.deformations(r);
        let pq = (r * r + self.a * self.a) * a1 - a2 * lambda * self.a;
        let l_minus_a = lambda - self.a;
        Some(a5 * (pq * pq - self.delta(r) * (eta + l_minus_a * l_minus_a)))
    }
    /// (Σ̃ dθ/dτ)² = η + a² cos²θ − λ² cot²θ, as in Kerr.
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
    }
}
