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
//!
//! **Domain.** The metric is regular outside the horizon r₊ = 1 + √(1 − a²) only where its
//! denominators keep their sign for every r ≥ r₊ and θ: Σ̃ > 0 (ε3 > −r₊³, the equator being
//! the worst case), A5 > 0 (α52 > −r₊²) and √D = (r² + a²) A1 − a² A2 sin²θ > 0. √D is linear
//! in sin²θ, so it is positive at every θ iff it is on the axis, r³ + α13 > 0 (α13 > −r₊³),
//! and on the equator, P(r) = r³ √D = r⁵ + α13 r² − a² α22 r + α13 a² > 0 for r ≥ r₊; the
//! latter is checked at r₊ and at every critical point of P beyond it (roots of the quartic
//! P′). With α22 = 0 it is α13 > −r₊⁴/2, since r₊² + a² = 2 r₊ and P then increases for
//! r ≥ r₊. Johannsen 2013 states the axis-type conditions α13 > −r₊³, α52 > −r₊², ε3 > −r₊³
//! (from memory); the equatorial one is stronger for a ≠ 0 (at a = 0.9: −2.1255 against
//! −2.9605), and points between them have a curvature singularity outside the horizon
//! (a = 0.9, α13 = −2.95: on the equator at r = 1.5757).
//! [`Johannsen::exterior_singularity`] evaluates these conditions. The declared parameter
//! domains are the a-independent part, the union over |a| ≤ 1 (a = 0, r₊ = 2): α13 > −8,
//! α52 > −4, ε3 > −8; a point inside them that is singular outside its horizon is accepted
//! and every solver answers no shadow, naming the surface
//! ([`crate::metric::exterior_singularity`]). The a-dependent conditions are not enforced
//! at construction, so that a bound with a spin nuisance range leaves such points out as
//! "no shadow" instead of failing.

use super::kerr_like;
use crate::declare_metric;
use crate::metric::{Capabilities, Domain, Metric, MetricComponents};
use crate::numfmt::Num;
use crate::scalar::{sin_cos, DualScalar};
use roots::find_roots_quartic;

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
                domain: Domain::greater_than(-8.0),
                meaning: "deviation in A1 = 1 + alpha13/r^3 (regular outside the horizon only for \
                          alpha13 > -r+^3 and, at alpha22 = 0, alpha13 > -r+^4/2; beyond: no shadow)",
            },
            alpha22: {
                default: 0.0,
                domain: Domain::REAL,
                meaning: "deviation in A2 = 1 + alpha22/r^2 (with alpha13: (r^2 + a^2) A1 - a^2 A2 \
                          > 0 for r >= r+, else no shadow)",
            },
            alpha52: {
                default: 0.0,
                domain: Domain::greater_than(-4.0),
                meaning: "deviation in A5 = 1 + alpha52/r^2 (regular outside the horizon only for \
                          alpha52 > -r+^2; beyond: no shadow)",
            },
            eps3: {
                default: 0.0,
                domain: Domain::greater_than(-8.0),
                meaning: "deviation in Sigma~ = Sigma + eps3/r (regular outside the horizon only for \
                          eps3 > -r+^3; beyond: no shadow)",
            },
        },
    }
}

impl Johannsen {
    /// Where the metric is singular outside the horizon, from the closed-form conditions of
    /// the module documentation: `None` when Σ̃, A5 and √D stay positive for every r ≥ r₊
    /// and θ, else a point (r, θ) where one of them vanishes and which condition fails.
    ///
    /// ```
    /// use umbral::metrics::Johannsen;
    /// // a = 0.9, α13 = −2.95 (issue 10, item 4): √D = 0 on the equator at r = 1.5757.
    /// let (r, theta, _) = Johannsen::new(0.9, -2.95, 0.0, 0.0, 0.0).unwrap()
    ///     .exterior_singularity().unwrap();
    /// assert!((r - 1.575724640616243).abs() < 1e-12 && theta == std::f64::consts::FRAC_PI_2);
    /// assert!(Johannsen::new(0.9, -2.12, 0.0, 0.0, 0.0).unwrap().exterior_singularity().is_none());
    /// ```
    pub fn exterior_singularity(&self) -> Option<(f64, f64, String)> {
        let a2 = self.a * self.a;
        let h = 1.0 + super::horizon_root(1.0, a2).unwrap_or(0.0);
        let equator = std::f64::consts::FRAC_PI_2;
        if self.eps3 <= -h * h * h {
            let why = format!("Sigma~ = 0 (eps3 <= -r+^3 = {})", Num(-h * h * h));
            return Some(((-self.eps3).cbrt(), equator, why));
        }
        if self.alpha52 <= -h * h {
            let why = format!("A5 = 0 (alpha52 <= -r+^2 = {})", Num(-h * h));
            return Some(((-self.alpha52).sqrt(), equator, why));
        }
        if self.alpha13 <= -h * h * h {
            let why = format!(
                "A1 = 0 on the axis (alpha13 <= -r+^3 = {})",
                Num(-h * h * h)
            );
            return Some(((-self.alpha13).cbrt(), 0.0, why));
        }
        // P(r) = r⁵ + α13 r² − a² α22 r + α13 a², positive for r ≥ r₊.
        let p =
            |r: f64| ((r * r * r + self.alpha13) * r - a2 * self.alpha22) * r + self.alpha13 * a2;
        let critical = find_roots_quartic(5.0, 0.0, 0.0, 2.0 * self.alpha13, -a2 * self.alpha22);
        let lowest = critical
            .as_ref()
            .iter()
            .copied()
            .filter(|&c| c > h)
            .chain(std::iter::once(h))
            .min_by(|x, y| p(*x).total_cmp(&p(*y)))
            .unwrap_or(h);
        if p(lowest) > 0.0 {
            return None;
        }
        // The outermost zero of P beyond its lowest point.
        let mut far = 2.0 * lowest.max(1.0);
        while p(far) <= 0.0 {
            far *= 2.0;
        }
        let zero = crate::numerics::brent_root(p, lowest, far, 0.0).unwrap_or(lowest);
        let why = format!(
            "(r^2 + a^2) A1 - a^2 A2 = 0 on the equator (alpha22 = 0: alpha13 <= -r+^4/2 = {})",
            Num(-h.powi(4) / 2.0)
        );
        Some((zero, equator, why))
    }

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
        let (s, c) = sin_cos(theta);
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
