//! Built-in metrics, one file each, and the registry that builds them by name.
//!
//! Each metric is declared once with [`declare_metric!`](crate::declare_metric) in its own
//! file and registered here with one line (module and type) of the `builtins!` list below;
//! the line's place is its place in listings. [`MetricSource`] puts built-in metrics and metric files
//! side by side: it is how the command line, the checks files, bounds and scans name a metric.

mod kerr_like;
mod source;

pub(crate) use source::sha256_hex;
pub use source::{MetricSource, SourceError};

use crate::error::MetricError;
use crate::metric::{MetricInfo, Spacetime};
use std::fmt;

/// Declare the built-in metrics: `module: Type, …;` per line, in listing order. Each line
/// adds the module, re-exports its types and puts their `ENTRY` in [`builtin_metrics()`].
macro_rules! builtins {
    ($($module:ident: $($metric:ident),+;)+) => {
        $(
            mod $module;
            pub use $module::{$($metric),+};
        )+

        /// Every built-in metric, in listing order.
        static BUILTINS: &[MetricEntry] = &[$($($metric::ENTRY,)+)+];
    };
}

builtins! {
    schwarzschild: Schwarzschild;
    kerr: Kerr;
    reissner_nordstrom: ReissnerNordstrom;
    kerr_newman: KerrNewman;
    tidal_charge: TidalCharge;
    bardeen: Bardeen;
    hayward: Hayward;
    dilaton: Dilaton;
    simpson_visser: SimpsonVisser;
    jnw: Jnw;
    rezzolla_zhidenko: RezzollaZhidenko;
    johannsen_psaltis: JohannsenPsaltis;
    johannsen: Johannsen;
    krz: Krz;
    kerr_sen: KerrSen;
    rotating_regular: RotatingBardeen, RotatingHayward;
}

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

/// Every built-in metric, in listing order.
pub fn builtin_metrics() -> &'static [MetricEntry] {
    BUILTINS
}

/// The built-in metric of this name: the one lookup every front end uses (through
/// [`MetricSource::builtin`]).
pub(crate) fn find_builtin(name: &str) -> Result<MetricEntry, MetricError> {
    BUILTINS
        .iter()
        .find(|e| e.name() == name)
        .copied()
        .ok_or_else(|| MetricError::UnknownMetric {
            name: name.to_string(),
            known: BUILTINS
                .iter()
                .map(MetricEntry::name)
                .collect::<Vec<_>>()
                .join(", "),
        })
}

/// Build a built-in metric by name from `name=value` assignments: shorthand for
/// [`MetricSource::builtin`] then [`MetricSource::build`].
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
    MetricSource::builtin(name)?.build(assignments)
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
