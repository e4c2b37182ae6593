//! Built-in metrics and the registry that builds them by name.

mod bardeen;
mod dilaton;
mod hayward;
mod jnw;
mod johannsen;
mod johannsen_psaltis;
mod kerr;
mod kerr_like;
mod kerr_newman;
mod kerr_sen;
mod krz;
mod reissner_nordstrom;
mod rezzolla_zhidenko;
mod rotating_regular;
mod schwarzschild;
mod simpson_visser;
mod tidal_charge;

pub use bardeen::Bardeen;
pub use dilaton::Dilaton;
pub use hayward::Hayward;
pub use jnw::Jnw;
pub use johannsen::Johannsen;
pub use johannsen_psaltis::JohannsenPsaltis;
pub use kerr::Kerr;
pub use kerr_newman::KerrNewman;
pub use kerr_sen::KerrSen;
pub use krz::Krz;
pub use reissner_nordstrom::ReissnerNordstrom;
pub use rezzolla_zhidenko::RezzollaZhidenko;
pub use rotating_regular::{RegularCore, RotatingRegular};
pub use schwarzschild::Schwarzschild;
pub use simpson_visser::SimpsonVisser;
pub use tidal_charge::TidalCharge;

use crate::error::MetricError;
use crate::metric::{MetricInfo, Spacetime};
use crate::metric_file::FileMetricSpec;
use std::sync::Arc;

/// Where a metric comes from: a built-in name, or a loaded declarative metric file.
///
/// ```
/// use umbral::metrics::MetricSource;
/// let source: MetricSource = "kerr".into();
/// let m = source.build(&[("a".to_string(), 0.3)]).unwrap();
/// assert_eq!(m.parameter_values(), vec![0.3]);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum MetricSource {
    /// A built-in metric by name (see [`builtin_metrics`]).
    Builtin(String),
    /// A metric file (see docs/metric-files.md).
    File(Arc<FileMetricSpec>),
}

impl MetricSource {
    /// The metric at these `name=value` assignments, defaults for the rest.
    pub fn build(&self, assignments: &[(String, f64)]) -> Result<Box<dyn Spacetime>, MetricError> {
        match self {
            MetricSource::Builtin(name) => build_metric(name, assignments),
            MetricSource::File(spec) => Ok(Box::new(spec.instantiate(assignments)?)),
        }
    }

    /// The metric's name (a file's declared name).
    pub fn name(&self) -> String {
        match self {
            MetricSource::Builtin(name) => name.clone(),
            MetricSource::File(spec) => spec.info().name.clone(),
        }
    }

    /// A label that tells built-in and file metrics apart: `kerr` or `file:PATH`.
    pub fn label(&self) -> String {
        match self {
            MetricSource::Builtin(name) => name.clone(),
            MetricSource::File(spec) => match spec.path() {
                Some(path) => format!("file:{}", path.display()),
                None => format!("file:{}", spec.info().name),
            },
        }
    }
}

impl From<&str> for MetricSource {
    fn from(name: &str) -> Self {
        MetricSource::Builtin(name.to_string())
    }
}

impl From<String> for MetricSource {
    fn from(name: String) -> Self {
        MetricSource::Builtin(name)
    }
}

/// A constructor from parameter values in order.
type Builder = fn(&[f64]) -> Result<Box<dyn Spacetime>, MetricError>;

/// A built-in metric: its metadata and a constructor from checked parameter values.
pub struct MetricEntry {
    /// Name, reference and parameter specifications.
    pub describe: fn() -> MetricInfo,
    /// Build from values in parameter order (already checked against their domains).
    build: Builder,
}

impl MetricEntry {
    /// The metric with the given `name=value` assignments, defaults for the rest.
    pub fn build(&self, assignments: &[(String, f64)]) -> Result<Box<dyn Spacetime>, MetricError> {
        let values = (self.describe)().resolve(assignments)?;
        (self.build)(&values)
    }
}

/// √(x − y) for a horizon discriminant x − y, or `None` when it is negative. Differences within
/// a few units in the last place of x count as zero, so that exactly extremal parameters whose
/// squares round (e.g. a = 0.8, q = 0.6) keep their degenerate horizon.
pub(crate) fn horizon_root(x: f64, y: f64) -> Option<f64> {
    let disc = x - y;
    if disc >= 0.0 {
        Some(disc.sqrt())
    } else if disc >= -4.0 * f64::EPSILON * x.abs() {
        Some(0.0)
    } else {
        None
    }
}

/// The registry passed the wrong number of values (a programming error, reported not panicked).
fn arity() -> MetricError {
    MetricError::BadPoint {
        what: "internal: wrong number of parameter values".into(),
    }
}

/// Every built-in metric, in listing order.
pub fn builtin_metrics() -> Vec<MetricEntry> {
    vec![
        MetricEntry {
            describe: Schwarzschild::describe,
            build: |_| Ok(Box::new(Schwarzschild)),
        },
        MetricEntry {
            describe: Kerr::describe,
            build: |v| Ok(Box::new(Kerr::new(v[0])?)),
        },
        MetricEntry {
            describe: ReissnerNordstrom::describe,
            build: |v| Ok(Box::new(ReissnerNordstrom::new(v[0])?)),
        },
        MetricEntry {
            describe: KerrNewman::describe,
            build: |v| Ok(Box::new(KerrNewman::new(v[0], v[1])?)),
        },
        MetricEntry {
            describe: TidalCharge::describe,
            build: |v| Ok(Box::new(TidalCharge::new(v[0])?)),
        },
        MetricEntry {
            describe: Bardeen::describe,
            build: |v| Ok(Box::new(Bardeen::new(v[0])?)),
        },
        MetricEntry {
            describe: Hayward::describe,
            build: |v| Ok(Box::new(Hayward::new(v[0])?)),
        },
        MetricEntry {
            describe: Dilaton::describe,
            build: |v| Ok(Box::new(Dilaton::new(v[0])?)),
        },
        MetricEntry {
            describe: SimpsonVisser::describe,
            build: |v| Ok(Box::new(SimpsonVisser::new(v[0])?)),
        },
        MetricEntry {
            describe: Jnw::describe,
            build: |v| Ok(Box::new(Jnw::new(v[0])?)),
        },
        MetricEntry {
            describe: RezzollaZhidenko::describe,
            build: |v| {
                Ok(Box::new(RezzollaZhidenko::new(
                    v.try_into().map_err(|_| arity())?,
                )?))
            },
        },
        MetricEntry {
            describe: JohannsenPsaltis::describe,
            build: |v| Ok(Box::new(JohannsenPsaltis::new(v[0], v[1])?)),
        },
        MetricEntry {
            describe: Johannsen::describe,
            build: |v| {
                Ok(Box::new(Johannsen::new(
                    v.try_into().map_err(|_| arity())?,
                )?))
            },
        },
        MetricEntry {
            describe: Krz::describe,
            build: |v| Ok(Box::new(Krz::new(v.try_into().map_err(|_| arity())?)?)),
        },
        MetricEntry {
            describe: KerrSen::describe,
            build: |v| Ok(Box::new(KerrSen::new(v[0], v[1])?)),
        },
        MetricEntry {
            describe: || RotatingRegular::describe(RegularCore::Bardeen),
            build: |v| {
                Ok(Box::new(RotatingRegular::new(
                    RegularCore::Bardeen,
                    v[0],
                    v[1],
                )?))
            },
        },
        MetricEntry {
            describe: || RotatingRegular::describe(RegularCore::Hayward),
            build: |v| {
                Ok(Box::new(RotatingRegular::new(
                    RegularCore::Hayward,
                    v[0],
                    v[1],
                )?))
            },
        },
    ]
}

/// Build a built-in metric by name from `name=value` assignments.
///
/// ```
/// use umbral::prelude::*;
/// let m = build_metric("kerr", &[("a".to_string(), 0.5)]).unwrap();
/// assert_eq!(m.parameter_values(), vec![0.5]);
/// let err = build_metric("kerr", &[("spin".to_string(), 0.5)]).err().unwrap();
/// assert!(err.to_string().contains("no parameter 'spin'"));
/// ```
pub fn build_metric(
    name: &str,
    assignments: &[(String, f64)],
) -> Result<Box<dyn Spacetime>, MetricError> {
    let entries = builtin_metrics();
    let entry = entries
        .iter()
        .find(|e| (e.describe)().name == name)
        .ok_or_else(|| MetricError::UnknownMetric {
            name: name.to_string(),
            known: entries
                .iter()
                .map(|e| (e.describe)().name)
                .collect::<Vec<_>>()
                .join(", "),
        })?;
    entry.build(assignments)
}
