//! What a listing of metrics says about each one (`umbral metrics`, the Python package's
//! `umbral.metrics()`): its metadata, symmetry, separability and the solver `auto` picks.

use super::auto_solver;
use crate::error::MetricError;
use crate::metric::{ParameterSpec, Spacetime, Symmetry};
use crate::metrics::builtin_metrics;
use serde::Serialize;

/// One parameter in a listing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CatalogueParameter {
    /// Its name (as in `--set NAME=VALUE`).
    pub name: String,
    /// Its default value.
    pub default: f64,
    /// Its domain, in words.
    pub domain: String,
    /// What it means.
    pub meaning: String,
}

impl From<&ParameterSpec> for CatalogueParameter {
    fn from(p: &ParameterSpec) -> Self {
        CatalogueParameter {
            name: p.name.clone(),
            default: p.default,
            domain: p.domain.to_string(),
            meaning: p.meaning.clone(),
        }
    }
}

/// One metric in a listing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CatalogueEntry {
    /// `builtin`, or the metric file it was read from.
    pub source: String,
    /// Its name.
    pub name: String,
    /// Its title.
    pub title: String,
    /// Its symmetry.
    pub symmetry: Symmetry,
    /// Whether its null geodesics separate.
    pub separable: bool,
    /// The solver `auto` picks for its default instance.
    pub auto_solver: &'static str,
    /// Its reference.
    pub reference: String,
    /// Its parameters, in order.
    pub parameters: Vec<CatalogueParameter>,
}

impl CatalogueEntry {
    /// The entry of `metric` (an instance, e.g. with its defaults) from `source`.
    pub fn describe(source: String, metric: &dyn Spacetime) -> CatalogueEntry {
        let info = metric.info();
        CatalogueEntry {
            source,
            name: info.name.clone(),
            title: info.title.clone(),
            symmetry: metric.symmetry(),
            separable: metric.is_separable(),
            auto_solver: auto_solver(metric).name(),
            reference: info.reference.clone(),
            parameters: info
                .parameters
                .iter()
                .map(CatalogueParameter::from)
                .collect(),
        }
    }
}

/// Every built-in metric, described by its default instance, in registry order.
///
/// ```
/// let listing = umbral::shadow::catalogue::builtin_catalogue().unwrap();
/// assert_eq!(listing[0].name, "schwarzschild");
/// let kerr = listing.iter().find(|m| m.name == "kerr").unwrap();
/// assert_eq!((kerr.auto_solver, kerr.parameters[0].name.as_str()), ("separable", "a"));
/// ```
pub fn builtin_catalogue() -> Result<Vec<CatalogueEntry>, MetricError> {
    builtin_metrics()
        .iter()
        .map(|entry| {
            let metric = entry.build(&[])?;
            Ok(CatalogueEntry::describe("builtin".into(), metric.as_ref()))
        })
        .collect()
}
