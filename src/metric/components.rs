//! Metric components of a stationary, axisymmetric line element and their inverse.

use crate::scalar::DualScalar;
use nalgebra::Matrix4;
use serde::Serialize;

/// Covariant components of ds² = g_tt dt² + 2 g_tφ dt dφ + g_rr dr² + g_θθ dθ² + g_φφ dφ².
///
/// ```
/// use umbral::prelude::*;
///
/// // Kerr on the equator (Σ = r²), Boyer & Lindquist 1967: g_tt = −(1 − 2/r),
/// // g_tφ = −2a/r, g_rr = r²/Δ with Δ = r² − 2r + a², g_θθ = r².
/// let g = Kerr::new(0.5).unwrap().components_at(4.0, std::f64::consts::FRAC_PI_2);
/// assert!((g.g_tt + 0.5).abs() < 1e-15);
/// assert!((g.g_tphi + 0.25).abs() < 1e-15);
/// assert!((g.g_rr - 16.0 / 8.25).abs() < 1e-15);
/// assert!((g.g_thth - 16.0).abs() < 1e-15);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MetricComponents<D> {
    /// g_tt.
    pub g_tt: D,
    /// g_tφ.
    pub g_tphi: D,
    /// g_rr.
    pub g_rr: D,
    /// g_θθ.
    pub g_thth: D,
    /// g_φφ.
    pub g_phph: D,
}

/// Contravariant components g^tt, g^tφ, g^rr, g^θθ, g^φφ.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct InverseComponents<D> {
    /// g^tt.
    pub g_tt: D,
    /// g^tφ.
    pub g_tphi: D,
    /// g^rr.
    pub g_rr: D,
    /// g^θθ.
    pub g_thth: D,
    /// g^φφ.
    pub g_phph: D,
}

impl<D: DualScalar> MetricComponents<D> {
    /// The inverse: the (t, φ) block inverted in closed form, g^rr = 1/g_rr, g^θθ = 1/g_θθ.
    ///
    /// With Δ₂ = g_tt g_φφ − g_tφ²: g^tt = g_φφ/Δ₂, g^tφ = −g_tφ/Δ₂, g^φφ = g_tt/Δ₂. Near the
    /// spin axis (g_φφ < 10⁻² g_θθ, i.e. sin²θ ≲ 10⁻² for a Kerr-like metric) the θ-derivative
    /// of g_φφ/Δ₂ is a difference of two terms ~ 2 cot θ g^tt that cancel, leaving a spurious
    /// force ~ 1e-16 cot θ on rays passing close to the axis; there the block is written with
    /// k = g_tφ/g_φφ as g^tt = 1/(g_tt − k g_tφ), g^tφ = −k g^tt, g^φφ = g_tt g^tt/g_φφ (the
    /// same algebra, one reciprocal more), where the sin²θ of g_φφ never cancels. (This matters
    /// where the inverse is taken in dual numbers, as for the Hessian of H; the gradient of H
    /// inverts values only, `Spacetime::hamiltonian_gradient`.)
    #[inline]
    pub fn inverse(&self) -> InverseComponents<D> {
        let near_axis =
            self.g_phph.re() != 0.0 && self.g_phph.re().abs() < 1e-2 * self.g_thth.re().abs();
        let (g_tt, g_tphi, g_phph) = if near_axis {
            self.axis_block()
        } else {
            let inv_det = (self.g_tt * self.g_phph - self.g_tphi * self.g_tphi).recip();
            (
                self.g_phph * inv_det,
                -self.g_tphi * inv_det,
                self.g_tt * inv_det,
            )
        };
        InverseComponents {
            g_tt,
            g_tphi,
            g_rr: self.g_rr.recip(),
            g_thth: self.g_thth.recip(),
            g_phph,
        }
    }

    /// (g^tt, g^tφ, g^φφ) near the axis (see [`MetricComponents::inverse`]); kept out of line
    /// so that the common path stays as it was.
    #[cold]
    #[inline(never)]
    fn axis_block(&self) -> (D, D, D) {
        let inv_phph = self.g_phph.recip();
        let k = self.g_tphi * inv_phph;
        let g_tt = (self.g_tt - k * self.g_tphi).recip();
        (g_tt, -k * g_tt, self.g_tt * g_tt * inv_phph)
    }

    /// Apply `f` to every component.
    pub fn map<E>(&self, f: impl Fn(&D) -> E) -> MetricComponents<E> {
        MetricComponents {
            g_tt: f(&self.g_tt),
            g_tphi: f(&self.g_tphi),
            g_rr: f(&self.g_rr),
            g_thth: f(&self.g_thth),
            g_phph: f(&self.g_phph),
        }
    }
}

impl<D: DualScalar> InverseComponents<D> {
    /// Null-geodesic Hamiltonian H = ½ g^{μν} p_μ p_ν for covariant momenta (p_t, p_r, p_θ, p_φ).
    #[inline]
    pub fn hamiltonian(&self, p: &[f64; 4]) -> D {
        let [pt, pr, pth, pph] = *p;
        (self.g_tt * (pt * pt)
            + self.g_tphi * (2.0 * pt * pph)
            + self.g_phph * (pph * pph)
            + self.g_rr * (pr * pr)
            + self.g_thth * (pth * pth))
            * 0.5
    }

    /// Apply `f` to every component.
    pub fn map<E>(&self, f: impl Fn(&D) -> E) -> InverseComponents<E> {
        InverseComponents {
            g_tt: f(&self.g_tt),
            g_tphi: f(&self.g_tphi),
            g_rr: f(&self.g_rr),
            g_thth: f(&self.g_thth),
            g_phph: f(&self.g_phph),
        }
    }
}

macro_rules! impl_matrix {
    ($t:ident) => {
        impl $t<f64> {
            /// The full 4×4 matrix in index order (t, r, θ, φ).
            pub fn matrix(&self) -> Matrix4<f64> {
                let mut m = Matrix4::zeros();
                m[(0, 0)] = self.g_tt;
                m[(0, 3)] = self.g_tphi;
                m[(3, 0)] = self.g_tphi;
                m[(1, 1)] = self.g_rr;
                m[(2, 2)] = self.g_thth;
                m[(3, 3)] = self.g_phph;
                m
            }

            /// Whether every component is a finite number.
            pub fn is_finite(&self) -> bool {
                [self.g_tt, self.g_tphi, self.g_rr, self.g_thth, self.g_phph]
                    .iter()
                    .all(|x| x.is_finite())
            }
        }
    };
}
impl_matrix!(MetricComponents);
impl_matrix!(InverseComponents);
