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
/// num-dual's chain rule, for any derivative order. It exists for speed: the C library's
/// `sincos` that `f64::sin_cos` compiles to saves and restores the floating-point rounding mode
/// on every call, and in the ray tracer's hot path that took about a tenth of the time
/// (measured with `perf` on a Kerr curve); the `libm` crate's port of musl's `sincos` does not.
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
