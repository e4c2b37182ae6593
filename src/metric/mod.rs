//! The metric layer: one trait to implement ([`Metric`]), what a metric declares about itself
//! ([`Declared`], [`Capabilities`], written once with [`declare_metric!`](crate::declare_metric)),
//! one object-safe view that every implementor gets for free ([`Spacetime`]), and the plain
//! metadata that describes a metric.
//!
//! The traits never share a method name, so every call on a concrete metric is plain:
//!
//! ```
//! use umbral::prelude::*;
//!
//! let kerr = Kerr::new(0.6).unwrap();
//! assert_eq!(kerr.outer_horizon(), Some(1.8)); // r₊ = 1 + √(1 − a²)
//! assert_eq!(kerr.info().name, "kerr");
//! assert_eq!(kerr.parameter_values(), vec![0.6]);
//! assert!(kerr.is_separable() && kerr.is_equatorially_symmetric());
//! assert_eq!(kerr.classify(), Classification::BlackHole { outer_horizon: 1.8 });
//! let schwarzschild = Schwarzschild;
//! assert_eq!(schwarzschild.outer_horizon(), Some(2.0));
//! assert_eq!(schwarzschild.symmetry(), Symmetry::Spherical);
//! ```
//!
//! A stationary, axisymmetric metric in Boyer–Lindquist-like coordinates `(t, r, θ, φ)` has
//! the line element
//!
//! ds² = g_tt dt² + 2 g_tφ dt dφ + g_rr dr² + g_θθ dθ² + g_φφ dφ²,
//!
//! with all five components functions of `(r, θ)` alone. That is all a user writes.

mod capture;
mod components;
mod declared;
mod entry;
mod exterior;
mod horizon;
mod info;
mod regularity;
mod separation;
mod spacetime;
mod spherical;

pub use capture::CarterRadial;
pub use components::{InverseComponents, MetricComponents};
pub use declared::{Capabilities, Declared, DeclaredHorizon};
pub use entry::MetricEntry;
pub use exterior::{exterior_singularity, relative_sensitivity, SingularSurface};
pub use horizon::numerical_outer_horizon;
pub use info::{Bound, Domain, MetricInfo, ParameterSpec, Symmetry};
pub use regularity::{check_point, PointProblem, POINT_SENSITIVITY_LIMIT};
pub use separation::{
    check_separation, separation_residual, SeparationError, SeparationReport, SeparationResidual,
    SEPARATION_TOLERANCE,
};
pub use spacetime::{
    parameter_map, Christoffel, Classification, PhaseGradient, PotentialJet, RadialLambdaJet,
    Spacetime, SphericalJet,
};
pub use spherical::{SphericalFunctions, SphericalMetric};

use crate::scalar::DualScalar;

/// A stationary, axisymmetric spacetime, written once.
///
/// Implement [`Metric::components`] generic over the scalar type; every derivative the solvers
/// need is then taken exactly by dual numbers. Optional structure (spherical functions,
/// separation data, equatorial symmetry) is declared by [`Metric::capabilities`] and provided
/// by the hooks it names; the name, parameters and horizon rule come from [`Declared`].
///
/// # Example: Kerr in twelve lines
/// ```
/// use umbral::prelude::*;
///
/// struct MyKerr { a: f64 }
///
/// impl Declared for MyKerr {} // unnamed, numerical horizon; see declare_metric! for more
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
/// // The default horizon finder locates r₊ = 1 + √(1 − a²) = 1.8 numerically (Boyer &
/// // Lindquist 1967, J. Math. Phys. 8, 265).
/// assert!((m.outer_horizon().unwrap() - 1.8).abs() < 1e-12);
/// // Any implementor is usable as a trait object, e.g. chosen by name at run time.
/// let dynamic: Box<dyn Spacetime> = Box::new(m);
/// let gamma = dynamic.christoffel(5.0, 0.7);
/// assert_eq!(gamma[1][2][1], gamma[1][1][2]);
/// ```
pub trait Metric: Declared + Send + Sync {
    /// The five covariant components `g_tt, g_tφ, g_rr, g_θθ, g_φφ` at `(r, θ)`.
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D>;

    /// The optional structure this metric provides. Default: [`Capabilities::NONE`].
    fn capabilities(&self) -> Capabilities {
        Capabilities::NONE
    }

    /// For a metric declared spherical ([`Capabilities::spherical`]), the functions of
    /// ds² = −A dt² + B dr² + C dΩ². Default: `None`.
    fn spherical_functions<D: DualScalar>(&self, _r: D) -> Option<SphericalFunctions<D>> {
        None
    }

    /// Separation data, radial part, for a metric declared separable
    /// ([`Capabilities::separable`]): the radial potential `R(r; λ, η)` with
    /// `(Σ̃ dr/dτ)² = R` per unit energy squared, where `λ = L/E` and `η` is Carter's constant
    /// over `E²`. Default: `None`.
    fn radial_potential<D: DualScalar>(&self, _r: D, _lambda: D, _eta: D) -> Option<D> {
        None
    }

    /// Separation data, polar part: `Θ(θ; λ, η)` with `(Σ̃ dθ/dτ)² = Θ`. Default: `None`.
    fn polar_potential<D: DualScalar>(&self, _theta: D, _lambda: D, _eta: D) -> Option<D> {
        None
    }

    /// For a metric whose radial potential is Carter's with Δ = r² − 2r + a² + q² (Kerr,
    /// Kerr–Newman), its spin and charge: rays that certainly fall in can then be ended early
    /// ([`CarterRadial::capture_certified_below`]). It must agree with
    /// [`Metric::radial_potential`] (tests/capture_certificate.rs checks the built-in ones).
    /// Default: `None`.
    fn carter_radial(&self) -> Option<CarterRadial> {
        None
    }
}
