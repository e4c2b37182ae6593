//! The scalar type metrics are written in.
//!
//! A metric component is an ordinary formula in `r` and `θ`; writing it generic over
//! [`DualScalar`] lets the same code run on `f64` (values), on first-order dual numbers
//! (gradients, Christoffel symbols) and on hyper-dual numbers (second derivatives), exactly,
//! with no finite differences. This follows num-dual's design: one generic function serves
//! every derivative order.

use num_dual::DualNum;

/// A real scalar or any dual number over `f64` that is `Copy`.
///
/// Implemented for every such type; nothing to implement by hand.
///
/// ```
/// use umbral::scalar::DualScalar;
/// use num_dual::Dual64;
///
/// fn f<D: DualScalar>(r: D) -> D {
///     (r * r - r * 2.0) / (r * r)
/// }
/// let x = Dual64::from_re(3.0).derivative();
/// let y = f(x);
/// assert!((y.re - 1.0 / 3.0).abs() < 1e-15);
/// assert!((y.eps - 2.0 / 9.0).abs() < 1e-15); // d/dr (1 − 2/r) = 2/r²
/// ```
pub trait DualScalar: DualNum<Primitive = f64> + Copy + Send + Sync {}

impl<T: DualNum<Primitive = f64> + Copy + Send + Sync> DualScalar for T {}

/// A constant of the scalar type.
#[inline(always)]
pub fn constant<D: DualScalar>(x: f64) -> D {
    D::from(x)
}

/// sin x and cos x of a scalar, from one call of the `libm` crate's `sincos` on the real part.
///
/// With x = x₀ + d, d the nilpotent part (every power of d beyond `D::NDERIV` vanishes),
/// sin x = sin x₀ cos d + cos x₀ sin d and cos x = cos x₀ cos d − sin x₀ sin d, where the
/// Taylor series of sin d and cos d end exactly at order `NDERIV`: the same numbers as
/// num-dual's chain rule to rounding, for any derivative order (the unit tests compare them).
/// It exists for speed: glibc's `sincos`, which `f64::sin_cos` compiles to on Linux, saves and
/// restores the floating-point rounding mode on every call, and in the ray tracer's hot path
/// that took about a tenth of the time (measured with `perf` on a Kerr curve); the `libm`
/// crate's port of musl's `sincos` does not.
///
/// ```
/// use num_dual::{Dual2_64, DualNum};
/// use umbral::scalar::sin_cos;
/// let x = Dual2_64::from_re(0.7).derivative();
/// let (s, c) = sin_cos(x);
/// let (s_ref, c_ref) = x.sin_cos();
/// assert!((s.re - s_ref.re).abs() < 1e-15 && (s.v1 - s_ref.v1).abs() < 1e-15);
/// assert!((c.v2 - c_ref.v2).abs() < 1e-15); // second derivative −cos 0.7
/// assert_eq!(sin_cos(0.3f64), libm::sincos(0.3));
/// ```
#[inline(always)]
pub fn sin_cos<D: DualScalar>(x: D) -> (D, D) {
    let re = x.re();
    let (s, c) = libm::sincos(re);
    if D::NDERIV == 0 {
        return (D::from(s), D::from(c));
    }
    let d = x - re;
    let (mut sin_d, mut cos_d) = (d, D::from(1.0));
    // term = d^k / k!
    let mut term = d;
    for k in 2..=D::NDERIV {
        term = term * d / k as f64;
        match k % 4 {
            0 => cos_d += term,
            1 => sin_d += term,
            2 => cos_d -= term,
            _ => sin_d -= term,
        }
    }
    (sin_d * c + cos_d * s, cos_d * c - sin_d * s)
}

#[cfg(test)]
mod tests {
    use super::sin_cos;
    use nalgebra::SVector;
    use num_dual::{
        Derivative, Dual, Dual2_64, Dual3_64, Dual64, DualNum, DualSVec64, DualVec, HyperDual64,
    };

    /// Agreement to rounding: the `libm` sincos may differ from the C library's by an ulp.
    fn close(label: &str, ours: f64, reference: f64) {
        assert!(
            (ours - reference).abs() <= 4e-15 * (1.0 + reference.abs()),
            "{label}: {ours} against {reference}"
        );
    }

    // The reference is num-dual's own `sin_cos` (its chain rule on the C library's sin and
    // cos), in every quadrant and at a large angle.
    const ANGLES: [f64; 6] = [0.3, 1.9, 3.5, 5.2, -0.7, 40.0];

    #[test]
    fn sin_cos_matches_num_dual_for_first_second_and_third_order() {
        for x in ANGLES {
            let (s, c) = sin_cos(x);
            let (rs, rc) = x.sin_cos();
            close("f64 sin", s, rs);
            close("f64 cos", c, rc);

            let d = Dual64::new(x, 0.7);
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                close("Dual64 re", ours.re, reference.re);
                close("Dual64 eps", ours.eps, reference.eps);
            }

            let d = Dual2_64::new(x, 0.7, -0.4);
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                close("Dual2 re", ours.re, reference.re);
                close("Dual2 v1", ours.v1, reference.v1);
                close("Dual2 v2", ours.v2, reference.v2);
            }

            let d = Dual3_64::new(x, 0.7, -0.4, 0.2);
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                close("Dual3 re", ours.re, reference.re);
                close("Dual3 v1", ours.v1, reference.v1);
                close("Dual3 v2", ours.v2, reference.v2);
                close("Dual3 v3", ours.v3, reference.v3);
            }

            let d = HyperDual64::new(x, 0.7, -0.4, 0.3);
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                close("HyperDual re", ours.re, reference.re);
                close("HyperDual eps1", ours.eps1, reference.eps1);
                close("HyperDual eps2", ours.eps2, reference.eps2);
                close("HyperDual eps1eps2", ours.eps1eps2, reference.eps1eps2);
            }
        }
    }

    #[test]
    fn sin_cos_matches_num_dual_for_vector_and_nested_duals() {
        for x in ANGLES {
            // The two-direction dual of the Hamiltonian gradient.
            let d: DualSVec64<2> = DualVec::new(x, Derivative::some(SVector::from([0.7, -0.4])));
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                close("DualSVec re", ours.re, reference.re);
                let parts = |d: &DualSVec64<2>| d.eps.0.map(|m| [m[0], m[1]]).unwrap();
                let (e, re) = (parts(&ours), parts(&reference));
                close("DualSVec eps 0", e[0], re[0]);
                close("DualSVec eps 1", e[1], re[1]);
            }

            // A dual of a second-order dual: third derivatives by nesting.
            let d: Dual<Dual2_64> =
                Dual::new(Dual2_64::new(x, 0.7, -0.4), Dual2_64::new(0.5, 0.1, 0.0));
            let ((s, c), (rs, rc)) = (sin_cos(d), d.sin_cos());
            for (ours, reference) in [(s, rs), (c, rc)] {
                for (part, o, r) in [
                    ("re.re", ours.re.re, reference.re.re),
                    ("re.v1", ours.re.v1, reference.re.v1),
                    ("re.v2", ours.re.v2, reference.re.v2),
                    ("eps.re", ours.eps.re, reference.eps.re),
                    ("eps.v1", ours.eps.v1, reference.eps.v1),
                    ("eps.v2", ours.eps.v2, reference.eps.v2),
                ] {
                    close(part, o, r);
                }
            }
        }
    }
}
