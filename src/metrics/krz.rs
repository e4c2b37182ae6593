//! The Konoplya–Rezzolla–Zhidenko parametrization of axisymmetric black holes (Konoplya,
//! Rezzolla & Zhidenko 2016, Phys. Rev. D 93, 064015) in its lowest-order δ form (as used by
//! Ni, Jiang & Bambi 2016, JCAP 09, 014). With y = cosθ and r0 = 1 + √(1 − a²):
//!
//! ds² = −(N² − W² sin²θ)/K² dt² − 2 W r sin²θ dt dφ + K² r² sin²θ dφ²
//!       + Σ_K (B²/N² dr² + r² dθ²),  Σ_K = 1 + a² y²/r²,
//! N² = (1 − r0/r)[1 − ε0 r0/r + (k00 − ε0) r0²/r² + δ1 r0³/r³]
//!      + [a20 r0³/r³ + a21 r0⁴/r⁴ + k21 L r0³/r³] y²,
//! B = 1 + δ4 r0²/r² + δ5 r0² y²/r²,  W = [w00 r0²/r² + δ2 r0³/r³ + δ3 r0³ y²/r³]/Σ_K,
//! K² = 1 + aW/r + [k00 r0²/r² + k21 L r0³ y²/r³]/Σ_K,  L = [1 + k22(1 − r0/r)/(1 + k23(1 − r0/r))]⁻¹,
//! ε0 = (2 − r0)/r0, k00 = a²/r0², a20 = 2a²/r0³, a21 = −a⁴/r0⁴ + δ6, k21 = a⁴/r0⁴ − 2a²/r0³ − δ6,
//! k22 = −a²/r0², k23 = a²/r0², w00 = 2a/r0².
//!
//! All δ zero is Kerr. Not separable in general: shadows come from the ray tracer.

use crate::declare_metric;
use crate::metric::{Capabilities, Domain, Metric, MetricComponents};
use crate::scalar::{sin_cos, DualScalar};

declare_metric! {
    /// The KRZ metric with spin `a` and deviations δ1 … δ6.
    #[derive(Debug, Clone, Copy, PartialEq)]
    pub struct Krz {
        name: "krz",
        title: "Konoplya–Rezzolla–Zhidenko",
        reference: "Konoplya, Rezzolla & Zhidenko 2016, Phys. Rev. D 93, 064015; Ni, Jiang & Bambi 2016, JCAP 09, 014",
        parameters: {
            a: { default: 0.0, domain: Domain::closed(-1.0, 1.0), meaning: "spin a = J/M^2" },
            delta1: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation of g_tt (N^2, r0^3/r^3 term)",
            },
            delta2: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "rotational deviation of g_tphi (r0^3/r^3)",
            },
            delta3: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "rotational deviation of g_tphi (r0^3 y^2/r^3)",
            },
            delta4: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation of g_rr (r0^2/r^2)",
            },
            delta5: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation of g_rr (r0^2 y^2/r^2)",
            },
            delta6: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation of the event horizon shape",
            },
        },
    }
}

impl Metric for Krz {
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        let a = self.a;
        let [d1, d2, d3, d4, d5, d6] = [
            self.delta1,
            self.delta2,
            self.delta3,
            self.delta4,
            self.delta5,
            self.delta6,
        ];
        let r0 = 1.0 + (1.0 - a * a).sqrt();
        let (a2, a4) = (a * a, a.powi(4));
        let eps0 = (2.0 - r0) / r0;
        let k00 = a2 / (r0 * r0);
        let a20 = 2.0 * a2 / r0.powi(3);
        let a21 = -a4 / r0.powi(4) + d6;
        let k21 = a4 / r0.powi(4) - 2.0 * a2 / r0.powi(3) - d6;
        let k22 = -a2 / (r0 * r0);
        let k23 = a2 / (r0 * r0);
        let w00 = 2.0 * a / (r0 * r0);

        let (s, y) = sin_cos(theta);
        let s2 = s * s;
        let y2 = y * y;
        let u = r.recip() * r0; // r0/r
        let (u2, u3) = (u * u, u * u * u);
        let x = -u + 1.0; // 1 − r0/r
        let l = (x * k22 / (x * k23 + 1.0) + 1.0).recip();
        let sigma_k = y2 * a2 / (r * r) + 1.0;
        let n2 = x * (-(u * eps0) + 1.0 + u2 * (k00 - eps0) + u3 * d1)
            + (u3 * a20 + u2 * u2 * a21 + l * u3 * k21) * y2;
        let b = u2 * d4 + u2 * y2 * d5 + 1.0;
        let w = (u2 * w00 + u3 * d2 + u3 * y2 * d3) / sigma_k;
        let k2 = w * a / r + 1.0 + (u2 * k00 + l * u3 * y2 * k21) / sigma_k;
        MetricComponents {
            g_tt: -(n2 - w * w * s2) / k2,
            g_tphi: -(w * r * s2),
            g_rr: sigma_k * b * b / n2,
            g_thth: sigma_k * r * r,
            g_phph: k2 * r * r * s2,
        }
    }
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE.with_equatorial_symmetry()
    }
}
