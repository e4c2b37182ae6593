//! Kerr (1963, Phys. Rev. Lett. 11, 237) in Boyer–Lindquist coordinates (Boyer & Lindquist
//! 1967, J. Math. Phys. 8, 265).
//!
//! Σ = r² + a² cos²θ, Δ = r² − 2r + a²;
//! g_tt = −(1 − 2r/Σ), g_tφ = −2ar sin²θ/Σ, g_rr = Σ/Δ, g_θθ = Σ,
//! g_φφ = (r² + a² + 2ra² sin²θ/Σ) sin²θ. Horizons r± = 1 ± √(1 − a²).

use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, CarterRadial, Domain, Metric, MetricComponents, PhaseGradient};
use crate::scalar::DualScalar;

declare_metric! {
    /// The rotating black hole of unit mass; `a = J/M²` (|a| > 1 is a naked singularity).
    ///
    /// ```
    /// use umbral::prelude::*;
    ///
    /// // r₊ = 1 + √(1 − a²) (Boyer & Lindquist 1967, J. Math. Phys. 8, 265).
    /// let kerr = Kerr::new(0.6).unwrap();
    /// assert_eq!(kerr.outer_horizon(), Some(1.8));
    /// assert_eq!(kerr.spin(), 0.6);
    /// // |a| > 1: no horizon (Kerr 1963, Phys. Rev. Lett. 11, 237).
    /// assert_eq!(Kerr::new(1.1).unwrap().classify(), Classification::Horizonless);
    /// ```
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Kerr {
        name: "kerr",
        title: "Kerr",
        reference: "Kerr 1963, Phys. Rev. Lett. 11, 237; Boyer & Lindquist 1967, J. Math. Phys. 8, 265",
        horizon: |m| super::horizon_root(1.0, m.a * m.a).map(|s| 1.0 + s),
        parameters: {
            a: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "spin a = J/M^2 (|a| > 1: naked singularity)",
            },
        },
    }
}

impl Kerr {
    /// The spin a/M.
    pub fn spin(&self) -> f64 {
        self.a
    }

    /// The Hamiltonian gradient written out by hand, as a reference for tests and benchmarks.
    ///
    /// With E = −p_t, L = p_φ, P = (r² + a²)E − aL, T = L − aE sin²θ (Carter 1968):
    /// 2ΣH = K = −P²/Δ + T²/sin²θ + Δ p_r² + p_θ², so ∂H = ∂K/(2Σ) − K ∂Σ/(2Σ²).
    pub fn analytic_hamiltonian_gradient(&self, r: f64, theta: f64, p: &[f64; 4]) -> PhaseGradient {
        let a = self.a;
        let [pt, pr, pth, pph] = *p;
        let (e, l) = (-pt, pph);
        let (s, c) = theta.sin_cos();
        let s2 = s * s;
        let sigma = r * r + a * a * c * c;
        let delta = r * r - 2.0 * r + a * a;
        let d_delta = 2.0 * r - 2.0;
        let big_p = (r * r + a * a) * e - a * l;
        let t = l - a * e * s2;
        let k = -big_p * big_p / delta + t * t / s2 + delta * pr * pr + pth * pth;
        let dk_dr = -4.0 * r * e * big_p / delta
            + big_p * big_p * d_delta / (delta * delta)
            + d_delta * pr * pr;
        let dt_dth = -2.0 * a * e * s * c;
        let dk_dth = 2.0 * t * dt_dth / s2 - 2.0 * t * t * c / (s2 * s);
        let inv2s = 0.5 / sigma;
        let dh_dr = dk_dr * inv2s - k * (2.0 * r) * inv2s / sigma;
        let dh_dth = dk_dth * inv2s - k * (-2.0 * a * a * s * c) * inv2s / sigma;
        let dk_de = -2.0 * big_p * (r * r + a * a) / delta - 2.0 * a * t;
        let dk_dl = 2.0 * big_p * a / delta + 2.0 * t / s2;
        PhaseGradient {
            h: k * inv2s,
            dh_dx: [0.0, dh_dr, dh_dth, 0.0],
            dh_dp: [
                -dk_de * inv2s,
                delta * pr / sigma,
                pth / sigma,
                dk_dl * inv2s,
            ],
        }
    }
}

impl Metric for Kerr {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        kerr_like::components(self.a, r * r, r * 2.0, theta)
    }
    fn capabilities(&self) -> Capabilities {
        kerr_like::CAPABILITIES
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::radial_potential(
            self.a,
            r * r,
            r * 2.0,
            lambda,
            eta,
        ))
    }
    fn carter_radial(&self) -> Option<CarterRadial> {
        Some(CarterRadial {
            spin: self.a,
            charge_squared: 0.0,
        })
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
    }
}
