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
//! // The outer horizon r₊ = 1 + √(1 − a²).
//! let r_plus = Spacetime::outer_horizon(&kerr).unwrap();
//! assert!((r_plus - (1.0 + (1.0f64 - 0.81).sqrt())).abs() < 1e-14);
//! ```

pub mod bounds;
pub mod error;
pub mod geodesic;
pub mod input;
pub mod measurement;
pub mod metric;
pub mod metric_file;
pub mod metrics;
pub mod numerics;
pub mod numfmt;
pub mod observables;
pub mod output;
pub mod scalar;
pub mod scan;
pub mod shadow;
pub mod verify;

/// The names most programs need.
pub mod prelude {
    pub use crate::error::MetricError;
    pub use crate::metric::{
        Bound, Classification, Domain, Metric, MetricComponents, MetricInfo, ParameterSpec,
        Spacetime, SphericalMetric,
    };
    pub use crate::metrics::{
        build_metric, builtin_metrics, Kerr, KerrNewman, ReissnerNordstrom, Schwarzschild,
    };
    pub use crate::observables::{shadow, Observables, Quantity, Shadow, ShadowRequest};
    pub use crate::scalar::DualScalar;
    pub use crate::shadow::ShadowSolver;
}

/// The project's conventions (docs/conventions.md); its Rust example is compiled as a doctest.
#[doc = include_str!("../docs/conventions.md")]
pub mod conventions {}
