//! [`MetricEntry`]: a metric that can be built by name, as every
//! [`declare_metric!`](crate::declare_metric) type declares it. The built-in registry
//! (the `metrics` module, a layer above) is a list of these.

use super::{MetricInfo, Spacetime};
use crate::error::MetricError;
use std::fmt;

/// A constructor from parameter values in order (checked by the metric itself).
type Builder = fn(&[f64]) -> Result<Box<dyn Spacetime>, MetricError>;

/// A metric that can be built by name: its metadata and a constructor from parameter values.
/// Every [`declare_metric!`](crate::declare_metric) type has one as its `ENTRY`.
///
/// ```
/// use umbral::metrics::{builtin_metrics, Kerr};
///
/// let kerr = Kerr::ENTRY;
/// assert_eq!(kerr.name(), "kerr");
/// let m = kerr.build(&[("a".to_string(), 0.3)]).unwrap();
/// assert_eq!(m.parameter_values(), vec![0.3]);
/// assert_eq!(builtin_metrics()[1], kerr);
/// ```
#[derive(Clone, Copy)]
pub struct MetricEntry {
    describe: fn() -> MetricInfo,
    build: Builder,
}

impl MetricEntry {
    /// An entry from the metric's metadata and its constructor from values in parameter order.
    pub const fn new(describe: fn() -> MetricInfo, build: Builder) -> MetricEntry {
        MetricEntry { describe, build }
    }

    /// Name, title, reference and parameter specifications.
    pub fn info(&self) -> MetricInfo {
        (self.describe)()
    }

    /// The metric's name, e.g. `kerr`.
    pub fn name(&self) -> String {
        self.info().name
    }

    /// The metric with the given `name=value` assignments, defaults for the rest.
    pub fn build(&self, assignments: &[(String, f64)]) -> Result<Box<dyn Spacetime>, MetricError> {
        let values = self.info().resolve(assignments)?;
        (self.build)(&values)
    }
}

impl fmt::Debug for MetricEntry {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_tuple("MetricEntry").field(&self.name()).finish()
    }
}

/// Two entries are equal when they build the metric of the same name.
impl PartialEq for MetricEntry {
    fn eq(&self, other: &Self) -> bool {
        self.name() == other.name()
    }
}
