//! # umbral
//!
//! Black-hole shadows for tests of general relativity. A metric is written once, as the five
//! covariant components of a stationary, axisymmetric line element in Boyer–Lindquist-like
//! coordinates `(t, r, θ, φ)`, generic over a dual-number scalar; everything else (inverse metric,
//! Christoffel symbols, the null-geodesic Hamiltonian and its exact gradient, horizons) follows
//! from that one method with no hand-written derivative.
//!
//! Conventions: `G = c = M = 1`, signature `(−,+,+,+)`, angles in radians inside the library.
//! See `docs/conventions.md`.
//!
//! ```
//! use umbral::prelude::*;
//!
//! let kerr = Kerr::new(0.9).unwrap();
//! // Christoffel symbols at a point, from dual-number derivatives of the metric components.
//! let gamma = kerr.christoffel(6.0, 1.0);
//! assert!(gamma[1][0][0] > 0.0); // Γ^r_tt > 0: gravity pulls inward
//! // The outer horizon r₊ = 1 + √(1 − a²) (Boyer & Lindquist 1967, J. Math. Phys. 8, 265).
//! let r_plus = kerr.outer_horizon().unwrap();
//! assert!((r_plus - (1.0 + (1.0f64 - 0.81).sqrt())).abs() < 1e-14);
//! ```

#![warn(missing_docs)]

pub mod bounds;
pub mod error;
pub mod geodesic;
pub mod image;
pub(crate) mod input;
pub mod measurement;
pub mod metric;
pub mod metric_file;
pub mod metrics;
pub(crate) mod numerics;
pub mod numfmt;
pub mod observables;
pub mod output;
pub mod posterior;
pub mod run;
pub mod sampling;
pub mod scalar;
pub mod scan;
pub mod shadow;
pub mod verify;

/// The names most programs need. No two of its traits share a method name, so every method
/// is called plainly on a concrete metric:
///
/// ```
/// use umbral::prelude::*;
///
/// let kerr = Kerr::new(0.8).unwrap();
/// let r_plus = kerr.outer_horizon().unwrap(); // Spacetime, no `Spacetime::` needed
/// assert!((r_plus - 1.6).abs() < 1e-15);
/// assert_eq!(kerr.info().parameters[0].name, "a");
/// assert_eq!(kerr.parameter_values(), vec![0.8]);
/// assert_eq!(kerr.classify(), Classification::BlackHole { outer_horizon: r_plus });
/// assert!(kerr.capabilities().separable); // Metric's declaration
/// assert_eq!(kerr.declared_values(), vec![0.8]); // Declared's hook, by a name of its own
/// let rn = ReissnerNordstrom::new(0.6).unwrap(); // a SphericalMetric
/// assert_eq!(rn.outer_horizon(), Some(1.8));
/// assert_eq!(rn.a(2.0), 0.09); // A(r) = 1 − 2/r + q²/r² (Reissner 1916; Nordström 1918)
/// assert_eq!(rn.symmetry(), Symmetry::Spherical);
/// ```
pub mod prelude {
    pub use crate::declare_metric;
    pub use crate::error::MetricError;
    pub use crate::metric::{
        Bound, Capabilities, Classification, Declared, DeclaredHorizon, Domain, Metric,
        MetricComponents, MetricInfo, ParameterSpec, Spacetime, SphericalMetric, Symmetry,
    };
    pub use crate::metrics::{
        build_metric, builtin_metrics, Kerr, KerrNewman, MetricSource, ReissnerNordstrom,
        Schwarzschild,
    };
    pub use crate::observables::{shadow, Observables, Quantity, Shadow, ShadowRequest};
    pub use crate::scalar::DualScalar;
    pub use crate::shadow::ShadowSolver;
}

/// The project's conventions (docs/conventions.md); its Rust example is compiled as a doctest.
#[doc = include_str!("../docs/conventions.md")]
pub mod conventions {}
