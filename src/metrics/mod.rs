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

pub use crate::metric::MetricEntry;

use crate::error::MetricError;
use crate::metric::Spacetime;

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

/// Every built-in metric, in listing order.
///
/// ```
/// use umbral::prelude::*;
///
/// let names: Vec<String> = builtin_metrics().iter().map(|e| e.name()).collect();
/// assert_eq!(names[..2], ["schwarzschild", "kerr"]);
/// for entry in builtin_metrics() {
///     assert_eq!(entry.build(&[]).unwrap().info().name, entry.name()); // builds at its defaults
/// }
/// // Kerr: r₊ = 1 + √(1 − a²) (Boyer & Lindquist 1967, J. Math. Phys. 8, 265).
/// let kerr = builtin_metrics()[1].build(&[("a".to_string(), 0.6)]).unwrap();
/// assert_eq!(kerr.outer_horizon(), Some(1.8));
/// ```
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
