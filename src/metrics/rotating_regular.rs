//! Rotating regular black holes (Bambi & Modesto 2013, Phys. Lett. B 721, 329): Kerr in
//! Boyer–Lindquist form with the mass replaced by a mass function, M → m(r):
//!
//! Σ = r² + a² cos²θ, Δ = r² − 2 m(r) r + a², g_tt = −(1 − 2 m r/Σ), g_tφ = −2 a m r sin²θ/Σ,
//! g_rr = Σ/Δ, g_θθ = Σ, g_φφ = (r² + a² + 2 m r a² sin²θ/Σ) sin²θ.
//!
//! Bardeen: m = r³/(r² + g²)^{3/2}; Hayward: m = r³/(r³ + 2l²). Null geodesics separate as in
//! Kerr (Carter's potentials with this Δ). Horizons (roots of Δ) are found numerically.

use super::bardeen::bardeen_mass;
use super::hayward::hayward_mass;
use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, Domain, Metric, MetricComponents};
use crate::scalar::DualScalar;

declare_metric! {
    /// A rotating Bardeen black hole: spin `a` and magnetic charge `g`, with
    /// m = r³/(r² + g²)^{3/2}.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct RotatingBardeen {
        name: "rotating-bardeen",
        title: "Rotating Bardeen (Bambi–Modesto)",
        reference: "Bambi & Modesto 2013, Phys. Lett. B 721, 329",
        parameters: {
            a: { default: 0.0, domain: Domain::REAL, meaning: "spin a = J/M^2" },
            g: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "magnetic charge g/M of the Bardeen core",
            },
        },
    }
}

declare_metric! {
    /// A rotating Hayward black hole: spin `a` and core parameter `l`, with
    /// m = r³/(r³ + 2l²).
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct RotatingHayward {
        name: "rotating-hayward",
        title: "Rotating Hayward (Bambi–Modesto)",
        reference: "Bambi & Modesto 2013, Phys. Lett. B 721, 329",
        parameters: {
            a: { default: 0.0, domain: Domain::REAL, meaning: "spin a = J/M^2" },
            l: {
                default: 0.0,
                domain: Domain::at_least(0.0),
                meaning: "core parameter l/M of the Hayward core",
            },
        },
    }
}

impl RotatingBardeen {
    /// μ(r) = 2 m(r) r.
    fn mu<D: DualScalar>(&self, r: D) -> D {
        bardeen_mass(self.g, r) * r * 2.0
    }
}

impl RotatingHayward {
    /// μ(r) = 2 m(r) r.
    fn mu<D: DualScalar>(&self, r: D) -> D {
        hayward_mass(self.l, r) * r * 2.0
    }
}

/// The Kerr-like line element and Carter's potentials with μ(r) = 2 m(r) r: the same for both
/// cores, written once.
macro_rules! rotating_regular_metric {
    ($metric:ident) => {
        impl Metric for $metric {
            #[inline]
            fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
                kerr_like::components(self.a, r * r, self.mu(r), theta)
            }
            fn capabilities(&self) -> Capabilities {
                kerr_like::CAPABILITIES
            }
            fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
                Some(kerr_like::radial_potential(
                    self.a,
                    r * r,
                    self.mu(r),
                    lambda,
                    eta,
                ))
            }
            fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
                Some(kerr_like::polar_potential(self.a, theta, lambda, eta))
            }
        }
    };
}

rotating_regular_metric!(RotatingBardeen);
rotating_regular_metric!(RotatingHayward);
