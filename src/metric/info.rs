//! Plain metadata of a metric: its name, literature reference and parameters.

use crate::error::MetricError;
use crate::numfmt::Num;
use serde::Serialize;
use std::fmt;

/// One end of a parameter's domain.
///
/// ```
/// use umbral::prelude::*;
///
/// // A spin that keeps a Kerr horizon without being extremal, 0 ≤ a < 1 (r₊ = 1 + √(1 − a²),
/// // Boyer & Lindquist 1967, J. Math. Phys. 8, 265).
/// let subextremal = Domain { lower: Bound::Inclusive(0.0), upper: Bound::Exclusive(1.0) };
/// assert!(subextremal.contains(0.0) && subextremal.contains(0.999));
/// assert!(!subextremal.contains(1.0));
/// assert_eq!(subextremal.to_string(), "[0, 1)");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", content = "value", rename_all = "snake_case")]
pub enum Bound {
    /// No limit on this side.
    Unbounded,
    /// The end value is allowed.
    Inclusive(f64),
    /// The end value is excluded.
    Exclusive(f64),
}

/// The set of allowed values of a parameter: an interval of the real line.
///
/// ```
/// use umbral::prelude::*;
///
/// // Reissner–Nordström has a horizon for |q| ≤ 1 (r± = 1 ± √(1 − q²); Reissner 1916,
/// // Nordström 1918).
/// let with_horizon = Domain::closed(-1.0, 1.0);
/// assert!(with_horizon.contains(0.998) && !with_horizon.contains(1.01));
/// assert!(!with_horizon.contains(f64::NAN));
/// assert_eq!(with_horizon.to_string(), "[-1, 1]");
/// assert_eq!(Domain::REAL.to_string(), "(-inf, inf)");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Domain {
    /// The lower end.
    pub lower: Bound,
    /// The upper end.
    pub upper: Bound,
}

impl Domain {
    /// Every finite real number.
    pub const REAL: Domain = Domain {
        lower: Bound::Unbounded,
        upper: Bound::Unbounded,
    };

    /// The closed interval `[lo, hi]`.
    pub const fn closed(lo: f64, hi: f64) -> Domain {
        Domain {
            lower: Bound::Inclusive(lo),
            upper: Bound::Inclusive(hi),
        }
    }

    /// `[lo, ∞)`.
    pub const fn at_least(lo: f64) -> Domain {
        Domain {
            lower: Bound::Inclusive(lo),
            upper: Bound::Unbounded,
        }
    }

    /// `(lo, hi]`.
    pub const fn left_open(lo: f64, hi: f64) -> Domain {
        Domain {
            lower: Bound::Exclusive(lo),
            upper: Bound::Inclusive(hi),
        }
    }

    /// `(lo, ∞)`.
    pub const fn greater_than(lo: f64) -> Domain {
        Domain {
            lower: Bound::Exclusive(lo),
            upper: Bound::Unbounded,
        }
    }

    /// Whether `x` lies in the domain (NaN never does).
    pub fn contains(&self, x: f64) -> bool {
        if !x.is_finite() {
            return false;
        }
        let above = match self.lower {
            Bound::Unbounded => true,
            Bound::Inclusive(lo) => x >= lo,
            Bound::Exclusive(lo) => x > lo,
        };
        let below = match self.upper {
            Bound::Unbounded => true,
            Bound::Inclusive(hi) => x <= hi,
            Bound::Exclusive(hi) => x < hi,
        };
        above && below
    }
}

impl fmt::Display for Domain {
    /// Interval notation, e.g. `[0, 1]`, `(0, inf)`, `(-inf, inf)`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.lower {
            Bound::Unbounded => write!(f, "(-inf, ")?,
            Bound::Inclusive(lo) => write!(f, "[{}, ", Num(lo))?,
            Bound::Exclusive(lo) => write!(f, "({}, ", Num(lo))?,
        }
        match self.upper {
            Bound::Unbounded => write!(f, "inf)"),
            Bound::Inclusive(hi) => write!(f, "{}]", Num(hi)),
            Bound::Exclusive(hi) => write!(f, "{})", Num(hi)),
        }
    }
}

/// A parameter of a metric: its command-line name, default, domain and meaning.
///
/// ```
/// use umbral::prelude::*;
///
/// let a = ParameterSpec::new("a", 0.0, Domain::closed(-1.0, 1.0), "spin a = J/M^2");
/// assert_eq!(a.check(0.9), Ok(0.9));
/// assert!(matches!(a.check(1.5), Err(MetricError::OutOfDomain { .. })));
/// assert!(matches!(a.check(f64::INFINITY), Err(MetricError::NonFinite { .. })));
/// // Reissner–Nordström defaults to q = 0, Schwarzschild.
/// let q = &ReissnerNordstrom::describe().parameters[0];
/// assert_eq!((q.name.as_str(), q.default), ("q", 0.0));
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParameterSpec {
    /// The name, as on the command line (`--set NAME=VALUE`) and in files.
    pub name: String,
    /// The value when none is given.
    pub default: f64,
    /// The allowed values.
    pub domain: Domain,
    /// What the parameter means, in a few words.
    pub meaning: String,
}

impl ParameterSpec {
    /// A parameter specification.
    pub fn new(name: &str, default: f64, domain: Domain, meaning: &str) -> Self {
        ParameterSpec {
            name: name.to_string(),
            default,
            domain,
            meaning: meaning.to_string(),
        }
    }

    /// Check a value against this parameter: finite and inside the domain.
    pub fn check(&self, value: f64) -> Result<f64, MetricError> {
        if !value.is_finite() {
            return Err(MetricError::NonFinite {
                name: self.name.clone(),
                value,
            });
        }
        if !self.domain.contains(value) {
            return Err(MetricError::OutOfDomain {
                name: self.name.clone(),
                value,
                domain: self.domain.to_string(),
            });
        }
        Ok(value)
    }
}

/// The symmetry a metric declares.
///
/// ```
/// use umbral::prelude::*;
///
/// assert_eq!(Schwarzschild.symmetry(), Symmetry::Spherical);
/// // Declared, not probed: Kerr at a = 0 is Schwarzschild's geometry (Kerr 1963), but the
/// // Kerr family declares the general case.
/// assert_eq!(Kerr::new(0.0).unwrap().symmetry(), Symmetry::StationaryAxisymmetric);
/// assert_eq!(Symmetry::Spherical.to_string(), "spherical");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Symmetry {
    /// ds² = −A dt² + B dr² + C dΩ².
    Spherical,
    /// Stationary and axisymmetric (the general case).
    StationaryAxisymmetric,
}

impl fmt::Display for Symmetry {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Symmetry::Spherical => "spherical",
            Symmetry::StationaryAxisymmetric => "stationary axisymmetric",
        })
    }
}

/// What a metric says about itself.
///
/// ```
/// use umbral::prelude::*;
///
/// let info = Kerr::describe();
/// assert_eq!((info.name.as_str(), info.title.as_str()), ("kerr", "Kerr"));
/// assert!(info.reference.contains("Boyer & Lindquist 1967"));
/// assert_eq!(info.parameter_names(), "a");
/// assert_eq!(KerrNewman::new(0.5, 0.3).unwrap().info().parameter_names(), "a, q");
/// assert_eq!(Schwarzschild.info().parameter_names(), "none");
/// ```
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MetricInfo {
    /// Command-line name, e.g. `kerr`.
    pub name: String,
    /// Human title, e.g. `Kerr`.
    pub title: String,
    /// Literature reference of the line element.
    pub reference: String,
    /// Parameters in a fixed order.
    pub parameters: Vec<ParameterSpec>,
}

impl MetricInfo {
    /// Metadata for a metric that did not describe itself.
    pub(crate) fn unnamed(type_name: &str) -> Self {
        let short = type_name.rsplit("::").next().unwrap_or(type_name);
        MetricInfo {
            name: short.to_string(),
            title: short.to_string(),
            reference: "not given".to_string(),
            parameters: Vec::new(),
        }
    }

    /// Comma-separated parameter names, or `none`.
    pub fn parameter_names(&self) -> String {
        if self.parameters.is_empty() {
            "none".to_string()
        } else {
            self.parameters
                .iter()
                .map(|p| p.name.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        }
    }

    /// The error for `got` values where the parameters ask for one each.
    pub fn count_error(&self, got: usize) -> MetricError {
        MetricError::ParameterCount {
            metric: self.name.clone(),
            expected: self.parameters.len(),
            names: self.parameter_names(),
            got,
        }
    }

    /// Check values given in parameter order: one per parameter, each finite and inside its
    /// domain.
    pub fn check_values(&self, values: &[f64]) -> Result<(), MetricError> {
        if values.len() != self.parameters.len() {
            return Err(self.count_error(values.len()));
        }
        for (spec, value) in self.parameters.iter().zip(values) {
            spec.check(*value)?;
        }
        Ok(())
    }

    /// Resolve `name=value` assignments against the defaults, checking names, repeats,
    /// finiteness and domains. Returns the values in parameter order.
    pub fn resolve(&self, assignments: &[(String, f64)]) -> Result<Vec<f64>, MetricError> {
        let mut values: Vec<f64> = self.parameters.iter().map(|p| p.default).collect();
        let mut seen = vec![false; values.len()];
        for (name, value) in assignments {
            let index = self
                .parameters
                .iter()
                .position(|p| &p.name == name)
                .ok_or_else(|| MetricError::UnknownParameter {
                    metric: self.name.clone(),
                    name: name.clone(),
                    known: self.parameter_names(),
                })?;
            if seen[index] {
                return Err(MetricError::RepeatedParameter {
                    metric: self.name.clone(),
                    name: name.clone(),
                });
            }
            seen[index] = true;
            values[index] = self.parameters[index].check(*value)?;
        }
        Ok(values)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn out_of_domain_and_non_finite_values_name_the_parameter() {
        let info = MetricInfo {
            name: "toy".into(),
            title: "Toy".into(),
            reference: "none".into(),
            parameters: vec![ParameterSpec::new(
                "g",
                0.2,
                Domain::closed(0.0, 0.7698),
                "charge",
            )],
        };
        let err = info.resolve(&[("g".into(), 0.9)]).unwrap_err();
        assert_eq!(
            err.to_string(),
            "parameter 'g' = 0.9 is outside its domain [0, 0.7698]"
        );
        let err = info.resolve(&[("g".into(), f64::NAN)]).unwrap_err();
        assert!(err.to_string().contains("must be a finite number"));
        assert_eq!(info.resolve(&[]).unwrap(), vec![0.2]);
        assert!(
            Domain::greater_than(0.5).contains(0.6) && !Domain::greater_than(0.5).contains(0.5)
        );
        assert_eq!(Domain::REAL.to_string(), "(-inf, inf)");
    }
}
