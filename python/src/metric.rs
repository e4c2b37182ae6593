//! `umbral.Metric` and `umbral.metrics()`.

use crate::errors::{input, Fail, OrRaise};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use std::path::PathBuf;
use umbral::metric::Spacetime;
use umbral::metric_file::parse_metric_file;
use umbral::metrics::MetricSource;
use umbral::shadow::catalogue::{builtin_catalogue, CatalogueEntry};

/// Every built-in metric as `umbral metrics --json` lists it, as JSON.
#[pyfunction]
pub fn metrics_json(py: Python<'_>) -> PyResult<String> {
    let listing = builtin_catalogue().map_err(input).or_raise(py)?;
    Ok(serde_json::to_string(&listing).unwrap_or_default())
}

/// A metric with its parameter values.
///
/// Metric(name, **params): a built-in metric by name (see umbral.metrics()) with parameter
/// values by name; the others keep their defaults. Metric.from_file(path, **params) reads a
/// declarative metric file, Metric.from_toml(text, **params) the same format from a string.
///
/// Attributes: name; parameters (every value, in the metric's order); assignments (the values
/// given: what a scan or bound holds fixed); path (the metric file, or None).
/// Methods: with_parameters(**params), outer_horizon(), info().
///
/// >>> umbral.Metric("kerr", a=0.5).parameters
/// {'a': 0.5}
#[pyclass(module = "umbral", frozen)]
pub struct Metric {
    pub source: MetricSource,
    /// The values given, in order.
    pub assignments: Vec<(String, f64)>,
    pub built: Box<dyn Spacetime>,
}

impl Metric {
    fn with(source: MetricSource, assignments: Vec<(String, f64)>) -> Result<Metric, Fail> {
        let built = source.build(&assignments).map_err(input)?;
        Ok(Metric {
            source,
            assignments,
            built,
        })
    }
}

/// `NAME=VALUE` pairs from keyword arguments, in order.
fn assignments(params: Option<&Bound<'_, PyDict>>) -> PyResult<Vec<(String, f64)>> {
    let mut out = Vec::new();
    if let Some(params) = params {
        for (k, v) in params.iter() {
            out.push((k.extract::<String>()?, v.extract::<f64>()?));
        }
    }
    Ok(out)
}

#[pymethods]
impl Metric {
    #[new]
    #[pyo3(signature = (name, **params))]
    fn new(py: Python<'_>, name: &str, params: Option<&Bound<'_, PyDict>>) -> PyResult<Metric> {
        let values = assignments(params)?;
        let source = MetricSource::builtin(name).map_err(input).or_raise(py)?;
        Metric::with(source, values).or_raise(py)
    }

    #[staticmethod]
    #[pyo3(signature = (path, **params))]
    fn from_file(
        py: Python<'_>,
        path: PathBuf,
        params: Option<&Bound<'_, PyDict>>,
    ) -> PyResult<Metric> {
        let values = assignments(params)?;
        let source = MetricSource::load(&path)
            .map_err(|e| Fail::Input(e.to_string().trim_end().to_string()))
            .or_raise(py)?;
        Metric::with(source, values).or_raise(py)
    }

    #[staticmethod]
    #[pyo3(signature = (text, **params))]
    fn from_toml(
        py: Python<'_>,
        text: &str,
        params: Option<&Bound<'_, PyDict>>,
    ) -> PyResult<Metric> {
        let values = assignments(params)?;
        let spec = parse_metric_file(text, "<text>")
            .map_err(|e| Fail::Input(e.to_string().trim_end().to_string()))
            .or_raise(py)?;
        Metric::with(MetricSource::from(spec), values).or_raise(py)
    }

    /// The same metric with these parameter values changed (or added).
    #[pyo3(signature = (**params))]
    fn with_parameters(
        &self,
        py: Python<'_>,
        params: Option<&Bound<'_, PyDict>>,
    ) -> PyResult<Metric> {
        let mut values = self.assignments.clone();
        for (name, value) in assignments(params)? {
            match values.iter_mut().find(|(n, _)| *n == name) {
                Some(slot) => slot.1 = value,
                None => values.push((name, value)),
            }
        }
        Metric::with(self.source.clone(), values).or_raise(py)
    }

    #[getter]
    fn name(&self) -> String {
        self.built.info().name.clone()
    }

    /// Every parameter's value (the defaults of those not given), in the metric's order.
    #[getter]
    fn parameters<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        ordered(py, &self.values())
    }

    /// The values given, in order.
    #[getter]
    fn assignments<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        ordered(py, &self.assignments)
    }

    /// The metric file it was read from, if any.
    #[getter]
    fn path(&self) -> Option<PathBuf> {
        self.source.path().map(|p| p.to_path_buf())
    }

    /// The outer horizon radius in M, or `None` without a horizon.
    fn outer_horizon(&self) -> Option<f64> {
        self.built.outer_horizon()
    }

    /// The metric as a call that makes it.
    fn __repr__(&self) -> String {
        let (call, first) = match self.source.path() {
            Some(p) => ("Metric.from_file", format!("{:?}", p.display().to_string())),
            None => ("Metric", format!("{:?}", self.name())),
        };
        let parts: Vec<String> = std::iter::once(first)
            .chain(
                self.values()
                    .iter()
                    .map(|(k, v)| format!("{k}={}", Float(*v))),
            )
            .collect();
        format!("{call}({})", parts.join(", "))
    }

    /// What umbral.metrics() lists for this metric (its auto solver for these values).
    fn info<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        py.import("json")?
            .call_method1("loads", (self.describe_json(),))
    }
}

impl Metric {
    /// Every parameter's name and value.
    fn values(&self) -> Vec<(String, f64)> {
        let info = self.built.info();
        let names = info.parameters.iter().map(|p| p.name.clone());
        names.zip(self.built.parameter_values()).collect()
    }

    /// The catalogue entry as JSON.
    fn describe_json(&self) -> String {
        let source = match self.source.path() {
            Some(p) => p.display().to_string(),
            None if matches!(self.source, MetricSource::File(_)) => "text".to_string(),
            None => "builtin".to_string(),
        };
        let entry = CatalogueEntry::describe(source, self.built.as_ref());
        serde_json::to_string(&entry).unwrap_or_default()
    }
}

/// A dict with the pairs in order.
fn ordered<'py>(py: Python<'py>, pairs: &[(String, f64)]) -> PyResult<Bound<'py, PyDict>> {
    let dict = PyDict::new(py);
    for (k, v) in pairs {
        dict.set_item(k, v)?;
    }
    Ok(dict)
}

/// A float as Python writes it (`0.5`, `1.0`, `1e-08`).
struct Float(f64);

impl std::fmt::Display for Float {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let x = self.0;
        if x.is_finite() && x == x.trunc() && x.abs() < 1e16 {
            write!(f, "{x:.1}")
        } else {
            write!(f, "{x}")
        }
    }
}
