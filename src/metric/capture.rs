//! Certified capture for Carter's radial potential with a quadratic Δ (Kerr, Kerr–Newman).
//!
//! For unit energy, R(r) = P(r)² − Δ(r) K with P = r² + a² − aλ, Δ = r² − 2r + a² + q² and
//! K = η + (λ − a)² ≥ 0 (Carter 1968, Phys. Rev. 174, 1559; (Σ dr/dτ)² = R). Outside the
//! outer horizon r₊ (Δ > 0), R = Δ (F − K) with F = P²/Δ, and
//! F′ = −P h / Δ² with h(r) = P Δ′ − 4r Δ
//!    = −2r³ + 6r² + (2(a² − aλ) − 4(a² + q²)) r − 2(a² − aλ).
//! (h = 0 is the spherical photon orbit condition; for Kerr, λ(r) of Bardeen, Press &
//! Teukolsky 1972 solves it.) Where P > 0 and h > 0 on (r₊, r_c], F decreases outward
//! there, so a ray moving inward at r ≤ r_c, where R ≥ 0 (F ≥ K), has F > K and R > 0 at
//! every smaller radius down to the horizon: it has no radial turning point left and is
//! captured. P increases with r, so P > 0 on the interval iff P(r₊) > 0. The certificate
//! checks h > 0 at r₊, at the end r_c and at every critical point of the cubic between them
//! (the minimum of h over the interval is at one of those), each with a relative margin for
//! rounding; otherwise it gives none and the ray is followed as before.

use roots::{find_roots_cubic, Roots};

/// Carter's radial potential of the Kerr–Newman family in units M = 1: spin `a` and charge
/// squared `q²` (Kerr: `q² = 0`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CarterRadial {
    /// The spin a = J/M.
    pub spin: f64,
    /// The charge squared q² (zero for Kerr).
    pub charge_squared: f64,
}

/// Relative margin on h: a value is positive for the certificate only above this fraction of
/// the sum of the magnitudes of the cubic's terms (rounding of a cubic evaluated in double
/// precision is far below).
const H_MARGIN: f64 = 1e-9;

impl CarterRadial {
    /// The outer horizon r₊ = 1 + √(1 − a² − q²); `None` for an extremal or horizonless
    /// configuration (there h(r₊) = P Δ′(r₊) = 0 and nothing is certified).
    pub fn outer_horizon(&self) -> Option<f64> {
        let disc = 1.0 - self.spin * self.spin - self.charge_squared;
        (disc > 0.0).then(|| 1.0 + disc.sqrt())
    }

    /// h(r) = P Δ′ − 4r Δ for impact parameter λ (module docs).
    pub fn h(&self, lambda: f64, r: f64) -> f64 {
        let a = self.spin;
        let p = r * r + a * a - a * lambda;
        let delta = r * r - 2.0 * r + a * a + self.charge_squared;
        p * (2.0 * r - 2.0) - 4.0 * r * delta
    }

    /// The radius below which a ray with impact parameter λ = L/E, moving inward, is
    /// certified captured (module docs); `None` when no interval is certified.
    ///
    /// ```
    /// use umbral::metric::CarterRadial;
    /// // Schwarzschild: h = −2r²(r − 3), so every inward ray inside the photon sphere r = 3
    /// // is captured (Synge 1966).
    /// let schwarzschild = CarterRadial { spin: 0.0, charge_squared: 0.0 };
    /// let r_c = schwarzschild.capture_certified_below(4.0).unwrap();
    /// assert!(r_c < 3.0 && r_c > 3.0 - 1e-5);
    /// ```
    pub fn capture_certified_below(&self, lambda: f64) -> Option<f64> {
        let r_plus = self.outer_horizon()?;
        let a = self.spin;
        let c_p = a * a - a * lambda;
        let p_at_horizon = r_plus * r_plus + c_p;
        if p_at_horizon.is_nan() || p_at_horizon <= 0.0 {
            return None;
        }
        let d0 = a * a + self.charge_squared;
        // h = −2r³ + 6r² + (2c_P − 4d0) r − 2c_P.
        let (k1, k0) = (2.0 * c_p - 4.0 * d0, -2.0 * c_p);
        let end = match find_roots_cubic(-2.0, 6.0, k1, k0) {
            Roots::One(r) => r.to_vec(),
            Roots::Two(r) => r.to_vec(),
            Roots::Three(r) => r.to_vec(),
            _ => Vec::new(),
        }
        .into_iter()
        .filter(|&r| r > r_plus)
        .fold(f64::INFINITY, f64::min);
        if !end.is_finite() {
            return None;
        }
        let end = end * (1.0 - 1e-6);
        let scale = |r: f64| 2.0 * r.powi(3) + 6.0 * r * r + k1.abs() * r + k0.abs();
        let positive = |r: f64| self.h(lambda, r) > H_MARGIN * scale(r);
        // Critical points of h: −6r² + 12r + k1 = 0.
        let disc = 144.0 + 24.0 * k1;
        let critical: Vec<f64> = if disc >= 0.0 {
            let s = disc.sqrt();
            vec![(12.0 - s) / 12.0, (12.0 + s) / 12.0]
        } else {
            Vec::new()
        };
        let certified = end > r_plus
            && positive(r_plus)
            && positive(end)
            && critical
                .iter()
                .filter(|&&r| r > r_plus && r < end)
                .all(|&r| positive(r));
        certified.then_some(end)
    }
}

#[cfg(test)]
mod tests {
    use super::CarterRadial;

    /// For Kerr, the spherical photon orbit at radius r has
    /// λ(r) = −(r³ − 3r² + a²r + a²)/(a(r − 1)) (Bardeen, Press & Teukolsky 1972, ApJ 178,
    /// 347; Teo 2003, Gen. Rel. Grav. 35, 1909), and h vanishes there: the certified radius
    /// is that orbit's, for orbits across the photon region of a = 0.9.
    #[test]
    fn kerr_certified_radius_is_the_rays_spherical_photon_orbit() {
        let a = 0.9f64;
        let kerr = CarterRadial {
            spin: a,
            charge_squared: 0.0,
        };
        // Photon region of a = 0.9: r from 2(1 + cos(2/3 arccos(∓a))) (Bardeen et al. 1972).
        let r_pro = 2.0 * (1.0 + ((2.0 / 3.0) * (-a).acos()).cos());
        let r_retro = 2.0 * (1.0 + ((2.0 / 3.0) * a.acos()).cos());
        for k in 1..10 {
            let r = r_pro + (r_retro - r_pro) * k as f64 / 10.0;
            let lambda = -(r.powi(3) - 3.0 * r * r + a * a * r + a * a) / (a * (r - 1.0));
            if r * r + a * a - a * lambda <= 0.0 {
                continue;
            }
            let end = kerr.capture_certified_below(lambda).expect("certified");
            assert!((end - r).abs() < 2e-6 * r, "r = {r}: certified below {end}");
        }
    }

    /// Past the horizon there is nothing to certify, and an extremal hole gets no certificate.
    #[test]
    fn no_certificate_without_a_non_extremal_horizon() {
        let extremal = CarterRadial {
            spin: 1.0,
            charge_squared: 0.0,
        };
        assert_eq!(extremal.capture_certified_below(1.0), None);
        let naked = CarterRadial {
            spin: 0.6,
            charge_squared: 0.8,
        };
        assert_eq!(naked.capture_certified_below(0.0), None);
    }

    /// A large prograde λ makes P(r₊) = r₊² + a² − aλ negative: no certificate.
    #[test]
    fn no_certificate_where_p_changes_sign() {
        let kerr = CarterRadial {
            spin: 0.9,
            charge_squared: 0.0,
        };
        let r_plus = kerr.outer_horizon().unwrap();
        let lambda = (r_plus * r_plus + 0.81) / 0.9 + 0.1;
        assert_eq!(kerr.capture_certified_below(lambda), None);
    }
}
