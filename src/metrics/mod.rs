//! Built-in metrics and the registry that builds them by name.

mod kerr;
mod kerr_newman;
mod reissner_nordstrom;
mod schwarzschild;

pub use kerr::Kerr;
pub use kerr_newman::KerrNewman;
pub use reissner_nordstrom::ReissnerNordstrom;
pub use schwarzschild::Schwarzschild;

use crate::error::MetricError;
use crate::metric::{MetricInfo, Spacetime};

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
