//! The metric layer: one trait to implement ([`Metric`]), one object-safe view that every
//! implementor gets for free ([`Spacetime`]), and the plain metadata that describes a metric.
//!
//! A stationary, axisymmetric metric in Boyer–Lindquist-like coordinates `(t, r, θ, φ)` has
//! the line element
//!
//! ds² = g_tt dt² + 2 g_tφ dt dφ + g_rr dr² + g_θθ dθ² + g_φφ dφ²,
//!
//! with all five components functions of `(r, θ)` alone. That is all a user writes.

mod components;
mod exterior;
mod horizon;
mod info;
mod regularity;
mod separation;
mod spacetime;
mod spherical;

pub use components::{InverseComponents, MetricComponents};
pub use exterior::{exterior_singularity, relative_sensitivity, SingularSurface};
pub use horizon::numerical_outer_horizon;
pub use info::{Bound, Domain, MetricInfo, ParameterSpec, Symmetry};
pub use regularity::{check_point, PointProblem, POINT_SENSITIVITY_LIMIT};
pub use separation::{
    check_separation, separation_residual, SeparationError, SeparationReport, SeparationResidual,
    SEPARATION_TOLERANCE,
};
pub use spacetime::{
    Christoffel, Classification, PhaseGradient, PotentialJet, Spacetime, SphericalJet,
};
pub use spherical::{SphericalFunctions, SphericalMetric};

use crate::scalar::DualScalar;

/// A stationary, axisymmetric spacetime, written once.
///
/// Implement [`Metric::components`] generic over the scalar type; every derivative the solvers
/// need is then taken exactly by dual numbers. The other methods have working defaults.
///
/// # Example: Kerr in twelve lines
/// ```
/// use umbral::prelude::*;
///
/// struct MyKerr { a: f64 }
///
/// impl Metric for MyKerr {
///     fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
///         let a = self.a;
///         let (s, c) = theta.sin_cos();
///         let sigma = r * r + c * c * (a * a);
///         let delta = r * r - r * 2.0 + a * a;
///         let s2 = s * s;
///         MetricComponents {
///             g_tt: r * 2.0 / sigma - 1.0,
///             g_tphi: -(r * (2.0 * a)) * s2 / sigma,
///             g_rr: sigma / delta,
///             g_thth: sigma,
///             g_phph: (r * r + a * a + r * (2.0 * a * a) * s2 / sigma) * s2,
///         }
///     }
/// }
///
/// let m = MyKerr { a: 0.6 };
/// // The default horizon finder locates r₊ = 1 + √(1 − a²) = 1.8 numerically.
/// assert!((Spacetime::outer_horizon(&m).unwrap() - 1.8).abs() < 1e-12);
/// // Any implementor is usable as a trait object, e.g. chosen by name at run time.
/// let dynamic: Box<dyn Spacetime> = Box::new(m);
/// let gamma = dynamic.christoffel(5.0, 0.7);
/// assert_eq!(gamma[1][2][1], gamma[1][1][2]);
/// ```
pub trait Metric: Send + Sync {
    /// The five covariant components `g_tt, g_tφ, g_rr, g_θθ, g_φφ` at `(r, θ)`.
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D>;

    /// Name, title, reference and parameter specifications. The default names the Rust type.
    fn info(&self) -> MetricInfo {
        MetricInfo::unnamed(std::any::type_name::<Self>())
    }

    /// Current parameter values, in the order of [`MetricInfo::parameters`].
    fn parameter_values(&self) -> Vec<f64> {
        Vec::new()
    }

    /// Outer horizon radius, or `None` for a horizonless spacetime.
    ///
    /// Default: [`numerical_outer_horizon`], the outermost root of `g^rr = 0` on the equator
    /// outside which the metric is regular. Override it with a closed form where one exists.
    fn outer_horizon(&self) -> Option<f64> {
        numerical_outer_horizon(self)
    }

    /// For a spherically symmetric metric, the functions of
    /// ds² = −A dt² + B dr² + C dΩ². Default: `None` (not declared spherical).
    fn spherical_functions<D: DualScalar>(&self, _r: D) -> Option<SphericalFunctions<D>> {
        None
    }

    /// Whether the metric is symmetric under θ → π − θ. Default: `false` (not declared).
    fn equatorially_symmetric(&self) -> bool {
        false
    }

    /// Separation data, radial part: for a metric whose null geodesics separate, the radial
    /// potential `R(r; λ, η)` with `(Σ̃ dr/dτ)² = R` per unit energy squared, where `λ = L/E`
    /// and `η` is Carter's constant over `E²`. Default: `None` (not separable).
    fn radial_potential<D: DualScalar>(&self, _r: D, _lambda: D, _eta: D) -> Option<D> {
        None
    }

    /// Separation data, polar part: `Θ(θ; λ, η)` with `(Σ̃ dθ/dτ)² = Θ`. Default: `None`.
    fn polar_potential<D: DualScalar>(&self, _theta: D, _lambda: D, _eta: D) -> Option<D> {
        None
    }
}
