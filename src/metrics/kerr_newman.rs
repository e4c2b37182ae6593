//! Kerr–Newman (Newman et al. 1965, J. Math. Phys. 6, 918), Boyer–Lindquist coordinates.
//!
//! Σ = r² + a² cos²θ, Δ = r² − 2r + a² + q²;
//! g_tt = −(1 − (2r − q²)/Σ), g_tφ = −a sin²θ (2r − q²)/Σ, g_rr = Σ/Δ, g_θθ = Σ,
//! g_φφ = [r² + a² + (2r − q²) a² sin²θ/Σ] sin²θ. Horizons r± = 1 ± √(1 − a² − q²).
//! With q = 0 this is Kerr (1963).

use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, CarterRadial, Domain, Metric, MetricComponents};
use crate::scalar::DualScalar;

declare_metric! {
    /// The rotating, charged black hole; `a = J/M²`, `q = Q/M` (a² + q² > 1 is a naked
    /// singularity).
    ///
    /// ```
    /// use umbral::prelude::*;
    ///
    /// // r₊ = 1 + √(1 − a² − q²) (Newman et al. 1965, J. Math. Phys. 6, 918): a² + q² = 0.64.
    /// let kn = KerrNewman::new(0.48, 0.64).unwrap();
    /// assert!((kn.outer_horizon().unwrap() - 1.6).abs() < 1e-15);
    /// // q = 0 is Kerr (Kerr 1963): the same components.
    /// let (uncharged, kerr) = (KerrNewman::new(0.7, 0.0).unwrap(), Kerr::new(0.7).unwrap());
    /// assert_eq!(uncharged.components_at(5.0, 1.0), kerr.components_at(5.0, 1.0));
    /// assert_eq!(KerrNewman::new(0.8, 0.8).unwrap().classify(), Classification::Horizonless);
    /// ```
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct KerrNewman {
        name: "kerr-newman",
        title: "Kerr–Newman",
        reference: "Newman, Couch, Chinnapared, Exton, Prakash & Torrence 1965, J. Math. Phys. 6, 918",
        horizon: |m| super::horizon_root(1.0, m.a * m.a + m.q * m.q).map(|s| 1.0 + s),
        parameters: {
            a: { default: 0.0, domain: Domain::REAL, meaning: "spin a = J/M^2" },
            q: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "electric charge Q/M (a^2 + q^2 > 1: naked singularity)",
            },
        },
    }
}

impl Metric for KerrNewman {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        kerr_like::components(self.a, r * r, r * 2.0 - self.q * self.q, theta)
    }
    fn capabilities(&self) -> Capabilities {
        kerr_like::CAPABILITIES
    }
    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        let mu = r * 2.0 - self.q * self.q;
        Some(kerr_like::radial_potential(self.a, r * r, mu, lambda, eta))
    }
    fn carter_radial(&self) -> Option<CarterRadial> {
        Some(CarterRadial {
            spin: self.a,
            charge_squared: self.q * self.q,
        })
    }
    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
    }
}
