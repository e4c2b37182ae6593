//! The Johannsen–Psaltis metric (Johannsen & Psaltis 2011, Phys. Rev. D 83, 124015) with the
//! lowest free deviation, h = ε3 r/Σ²:
//!
//! g_tt = −(1 + h)(1 − 2r/Σ), g_tφ = −2ar sin²θ (1 + h)/Σ, g_rr = Σ(1 + h)/(Δ + a² h sin²θ),
//! g_θθ = Σ, g_φφ = sin²θ [r² + a² + 2a²r sin²θ/Σ] + h a²(Σ + 2r) sin⁴θ/Σ,
//!
//! with the Kerr Σ and Δ. ε3 = 0 is Kerr. Null geodesics do not separate for a ≠ 0, so its
//! shadows come from the ray tracer. The surface g^rr = 0 depends on θ for a ≠ 0; the outer
//! horizon reported is its largest radius over θ.

use crate::declare_metric;
use crate::metric::{numerical_outer_horizon, Capabilities, Domain, Metric, MetricComponents};
use crate::numerics::brent_root;
use crate::scalar::{sin_cos, DualScalar};

declare_metric! {
    /// The Johannsen–Psaltis metric with spin `a` and deviation `eps3`.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct JohannsenPsaltis {
        name: "johannsen-psaltis",
        title: "Johannsen–Psaltis",
        reference: "Johannsen & Psaltis 2011, Phys. Rev. D 83, 124015",
        horizon: |m| m.outer_horizon_over_theta(),
        parameters: {
            a: { default: 0.0, domain: Domain::closed(-1.0, 1.0), meaning: "spin a = J/M^2" },
            eps3: { default: 0.0, domain: Domain::REAL, meaning: "deviation h = eps3 r/Sigma^2" },
        },
    }
}

impl JohannsenPsaltis {
    /// Δ + a² h sin²θ at (r, θ), whose outermost zero is the horizon at that θ.
    fn horizon_function(&self, r: f64, theta: f64) -> f64 {
        let a = self.a;
        let s2 = theta.sin().powi(2);
        let sigma = r * r + a * a * theta.cos().powi(2);
        let h = self.eps3 * r / (sigma * sigma);
        r * r - 2.0 * r + a * a + a * a * h * s2
    }

    /// The equatorial horizon from the default finder, then the largest root of
    /// Δ + a² h sin²θ over a grid of θ from the pole (where it is the Kerr radius
    /// 1 + √(1 − a²), the largest for ε3 > 0) to the equator, each refined by Brent's method.
    fn outer_horizon_over_theta(&self) -> Option<f64> {
        let equatorial = numerical_outer_horizon(self)?;
        let mut outer = equatorial;
        for k in 0..=32 {
            let theta = std::f64::consts::FRAC_PI_2 * k as f64 / 32.0;
            let f = |r: f64| self.horizon_function(r, theta);
            let hi = 4.0 * equatorial.max(2.0);
            if f(hi) > 0.0 && f(outer) < 0.0 {
                if let Ok(r) = brent_root(f, outer, hi, 0.0) {
                    outer = outer.max(r);
                }
            }
        }
        Some(outer)
    }
}

impl Metric for JohannsenPsaltis {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let a = self.a;
        let (s, c) = sin_cos(theta);
        let s2 = s * s;
        let sigma = r * r + c * c * (a * a);
        let delta = r * r - r * 2.0 + a * a;
        let h = r * self.eps3 / (sigma * sigma);
        let one_h = h + 1.0;
        MetricComponents {
            g_tt: -(one_h * (-(r * 2.0 / sigma) + 1.0)),
            g_tphi: -(r * s2 * one_h * (2.0 * a) / sigma),
            g_rr: sigma * one_h / (delta + h * s2 * (a * a)),
            g_thth: sigma,
            g_phph: s2 * (r * r + a * a + r * s2 * (2.0 * a * a) / sigma)
                + h * (sigma + r * 2.0) * s2 * s2 * (a * a) / sigma,
        }
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE.with_equatorial_symmetry()
    }
}
