//! What a metric declares about itself, as opposed to what it computes: its name and parameters
//! ([`Declared`], written once with [`declare_metric!`](crate::declare_metric)), and the
//! optional structure it provides ([`Capabilities`]). Nothing here is found by probing a
//! metric at sample points.

use super::{numerical_outer_horizon, Metric, MetricInfo, Symmetry};
use serde::Serialize;

/// How a metric's outer horizon is obtained.
///
/// ```
/// use umbral::prelude::*;
///
/// // Kerr: r₊ = 1 + √(1 − a²) = 1.8 at a = 0.6 (Boyer & Lindquist 1967, J. Math. Phys. 8, 265).
/// let kerr = Kerr::new(0.6).unwrap();
/// assert_eq!(DeclaredHorizon::Known(Some(1.8)).radius(&kerr), Some(1.8));
/// let found = DeclaredHorizon::Numerical.radius(&kerr).unwrap();
/// assert!((found - 1.8).abs() < 1e-12);
/// // |a| > 1: no root of g^rr = 0, a naked singularity.
/// assert_eq!(DeclaredHorizon::Numerical.radius(&Kerr::new(1.1).unwrap()), None);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DeclaredHorizon {
    /// Found by [`numerical_outer_horizon`]: the outermost root of g^rr = 0 on the equator.
    Numerical,
    /// Known to the metric (a closed form, or computed once when the metric was built):
    /// `Some(r₊)`, or `None` for a horizonless spacetime.
    Known(Option<f64>),
}

impl DeclaredHorizon {
    /// The outer horizon radius of `metric` under this rule.
    pub fn radius<M: Metric + ?Sized>(self, metric: &M) -> Option<f64> {
        match self {
            DeclaredHorizon::Numerical => numerical_outer_horizon(metric),
            DeclaredHorizon::Known(r) => r,
        }
    }
}

/// A metric's name, parameters and outer-horizon rule: everything it says about itself.
///
/// Built-in metrics get this from [`declare_metric!`](crate::declare_metric), which writes the
/// struct, its metadata, its parameter values, its constructor and its registry entry from one
/// declaration. Every method has a default, so a quick metric of one's own may take them all:
///
/// ```
/// use umbral::prelude::*;
///
/// struct Flat;
/// impl Declared for Flat {} // unnamed, no parameters, numerical horizon finder
/// impl Metric for Flat {
///     fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
///         let s = theta.sin();
///         MetricComponents {
///             g_tt: D::from(-1.0),
///             g_tphi: D::from(0.0),
///             g_rr: D::from(1.0),
///             g_thth: r * r,
///             g_phph: r * r * s * s,
///         }
///     }
/// }
/// assert_eq!(Flat.info().name, "Flat");
/// assert_eq!(Flat.outer_horizon(), None);
/// ```
///
/// The methods are hooks: call the [`Spacetime`](super::Spacetime) view's `info`,
/// `parameter_values` and `outer_horizon` instead, which have names of their own.
pub trait Declared {
    /// Name, title, reference and parameter specifications. Default: the Rust type's name,
    /// no reference, no parameters.
    fn declared_info(&self) -> MetricInfo {
        MetricInfo::unnamed(std::any::type_name::<Self>())
    }

    /// Current parameter values, in the order of [`MetricInfo::parameters`]. Default: none.
    fn declared_values(&self) -> Vec<f64> {
        Vec::new()
    }

    /// How the outer horizon is obtained. Default: [`DeclaredHorizon::Numerical`]; declare a
    /// closed form where one exists.
    fn declared_horizon(&self) -> DeclaredHorizon {
        DeclaredHorizon::Numerical
    }
}

/// The optional structure a metric declares, beyond its line element: which hooks of
/// [`Metric`] it provides and which symmetries hold. Solvers choose by it; nothing is probed.
///
/// A metric that declares a structure must provide its hooks: asking the
/// [`Spacetime`](super::Spacetime) view for a hook that returns nothing is the typed error
/// [`MetricError::MissingHook`](crate::error::MetricError::MissingHook).
///
/// ```
/// use umbral::metric::{Capabilities, Symmetry};
///
/// let kerr_like = Capabilities::NONE.with_separation().with_equatorial_symmetry();
/// assert!(kerr_like.separable && kerr_like.equatorially_symmetric);
/// assert_eq!(kerr_like.symmetry(), Symmetry::StationaryAxisymmetric);
/// assert_eq!(Capabilities::SPHERICAL.symmetry(), Symmetry::Spherical);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
pub struct Capabilities {
    /// ds² = −A dt² + B dr² + C dΩ²: [`Metric::spherical_functions`] gives A, B, C.
    pub spherical: bool,
    /// Null geodesics separate: [`Metric::radial_potential`] and [`Metric::polar_potential`]
    /// give R and Θ.
    pub separable: bool,
    /// Symmetry under θ → π − θ.
    pub equatorially_symmetric: bool,
}

impl Capabilities {
    /// Nothing declared beyond the line element (the default).
    pub const NONE: Capabilities = Capabilities {
        spherical: false,
        separable: false,
        equatorially_symmetric: false,
    };

    /// Spherical symmetry, which includes the equatorial one (what every
    /// [`SphericalMetric`](super::SphericalMetric) declares).
    pub const SPHERICAL: Capabilities = Capabilities {
        spherical: true,
        separable: false,
        equatorially_symmetric: true,
    };

    /// The same, with separation data declared.
    pub const fn with_separation(self) -> Capabilities {
        Capabilities {
            separable: true,
            ..self
        }
    }

    /// The same, with θ → π − θ symmetry declared.
    pub const fn with_equatorial_symmetry(self) -> Capabilities {
        Capabilities {
            equatorially_symmetric: true,
            ..self
        }
    }

    /// The symmetry class: spherical, or the general stationary, axisymmetric case.
    pub fn symmetry(&self) -> Symmetry {
        if self.spherical {
            Symmetry::Spherical
        } else {
            Symmetry::StationaryAxisymmetric
        }
    }
}

/// Declare a metric once: its struct (one `f64` field per parameter, named as on the command
/// line), name, title, reference, parameters with defaults, domains and meanings, and
/// optionally a closed-form outer horizon. Everything else follows from this one declaration:
///
/// * [`Declared`] (metadata, parameter values in order, the horizon rule);
/// * `describe() -> MetricInfo`, the metadata without an instance;
/// * `new(p1, p2, …)` and `from_values(&[f64])`, which check every value against its domain;
/// * `ENTRY`, the [`MetricEntry`](super::MetricEntry) that builds the metric by name
///   (register it with one line in `src/metrics/mod.rs`, or use it in a program of your own).
///
/// The metric's formulas then go in an `impl Metric` (or `impl SphericalMetric`) of their own.
///
/// ```
/// use umbral::prelude::*;
///
/// umbral::declare_metric! {
///     /// Braneworld tidal charge (Dadhich et al. 2000): A = 1/B = 1 − 2/r + q2/r², C = r².
///     #[derive(Debug, Clone, Copy, PartialEq)]
///     pub struct Tidal {
///         name: "tidal",
///         title: "Braneworld tidal charge",
///         reference: "Dadhich, Maartens, Papadopoulos & Rezania 2000, Phys. Lett. B 487, 1",
///         horizon: |m| (m.q2 <= 1.0).then(|| 1.0 + (1.0 - m.q2).sqrt()),
///         parameters: {
///             q2: { default: 0.0, domain: Domain::REAL, meaning: "tidal charge" },
///         },
///     }
/// }
///
/// impl SphericalMetric for Tidal {
///     fn a<D: DualScalar>(&self, r: D) -> D { (r * r - r * 2.0 + self.q2) / (r * r) }
///     fn b<D: DualScalar>(&self, r: D) -> D { self.a(r).recip() }
///     fn c<D: DualScalar>(&self, r: D) -> D { r * r }
/// }
///
/// let m = Tidal::new(-0.5).unwrap();
/// assert_eq!(m.parameter_values(), vec![-0.5]);
/// assert_eq!(m.outer_horizon(), Some(1.0 + 1.5f64.sqrt()));
/// assert_eq!(Tidal::describe().parameters[0].name, "q2");
/// // Built by name and values, domains checked, like every built-in metric.
/// let boxed = Tidal::ENTRY.build(&[("q2".to_string(), 0.3)]).unwrap();
/// assert_eq!(boxed.info().title, "Braneworld tidal charge");
/// assert!(Tidal::new(f64::NAN).is_err());
/// ```
#[macro_export]
macro_rules! declare_metric {
    // A metric without parameters: a unit struct.
    (
        $(#[$attr:meta])*
        $vis:vis struct $name:ident {
            name: $cli:literal,
            title: $title:literal,
            reference: $reference:expr,
            $(horizon: |$m:ident| $horizon:expr,)?
            parameters: {},
        }
    ) => {
        $(#[$attr])*
        $vis struct $name;

        impl $name {
            $crate::declare_metric!(@describe $cli, $title, $reference, []);

            /// The metric from its (no) parameter values.
            pub fn from_values(values: &[f64]) -> ::std::result::Result<Self, $crate::error::MetricError> {
                Self::describe().check_values(values)?;
                Ok($name)
            }
        }

        $crate::declare_metric!(@declared $name, [], $(|$m| $horizon)?);
    };
    (
        $(#[$attr:meta])*
        $vis:vis struct $name:ident {
            name: $cli:literal,
            title: $title:literal,
            reference: $reference:expr,
            $(horizon: |$m:ident| $horizon:expr,)?
            parameters: {
                $($field:ident: { default: $default:expr, domain: $domain:expr, meaning: $meaning:expr $(,)? }),+ $(,)?
            },
        }
    ) => {
        $(#[$attr])*
        $vis struct $name {
            $($field: f64,)+
        }

        impl $name {
            $crate::declare_metric!(
                @describe $cli, $title, $reference,
                [$(($field, $default, $domain, $meaning)),+]
            );

            /// The metric at these parameter values, in declaration order; each must be finite
            /// and inside its domain.
            #[allow(clippy::too_many_arguments)]
            pub fn new($($field: f64),+) -> ::std::result::Result<Self, $crate::error::MetricError> {
                Self::from_values(&[$($field),+])
            }

            /// The metric from its parameter values in declaration order (counted and checked
            /// against their domains).
            pub fn from_values(values: &[f64]) -> ::std::result::Result<Self, $crate::error::MetricError> {
                let info = Self::describe();
                info.check_values(values)?;
                match *values {
                    [$($field),+] => Ok($name { $($field),+ }),
                    _ => Err(info.count_error(values.len())),
                }
            }
        }

        $crate::declare_metric!(@declared $name, [$($field),+], $(|$m| $horizon)?);
    };
    // `describe()` and `ENTRY`, inside the type's `impl` block (`from_values` is the arm's own).
    (@describe $cli:literal, $title:literal, $reference:expr,
        [$(($field:ident, $default:expr, $domain:expr, $meaning:expr)),*]) => {
        /// Name, title, reference and parameters (with defaults, domains and meanings).
        pub fn describe() -> $crate::metric::MetricInfo {
            $crate::metric::MetricInfo {
                name: $cli.into(),
                title: $title.into(),
                reference: $reference.into(),
                parameters: ::std::vec![$(
                    $crate::metric::ParameterSpec::new(stringify!($field), $default, $domain, $meaning)
                ),*],
            }
        }

        /// The registry entry: builds this metric by name and `name=value` assignments.
        pub const ENTRY: $crate::metric::MetricEntry = $crate::metric::MetricEntry::new(
            Self::describe,
            |values| Ok(::std::boxed::Box::new(Self::from_values(values)?)),
        );
    };
    (@declared $name:ident, [$($field:ident),*], $(|$m:ident| $horizon:expr)?) => {
        impl $crate::metric::Declared for $name {
            fn declared_info(&self) -> $crate::metric::MetricInfo {
                Self::describe()
            }
            fn declared_values(&self) -> ::std::vec::Vec<f64> {
                ::std::vec![$(self.$field),*]
            }
            $(
                fn declared_horizon(&self) -> $crate::metric::DeclaredHorizon {
                    let closed_form = |$m: &Self| -> ::std::option::Option<f64> { $horizon };
                    $crate::metric::DeclaredHorizon::Known(closed_form(self))
                }
            )?
        }
    };
}
