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
