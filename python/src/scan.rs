//! `umbral.scan`: a grid of observables, each axis given by its values.

use crate::errors::{input, Fail, OrRaise};
use crate::interrupt::interruptible;
use crate::metric::Metric;
use numpy::PyArray1;
use pyo3::prelude::*;
use pyo3::types::PyDict;
use std::collections::BTreeSet;
use std::path::PathBuf;
use umbral::observables::Quantity;
use umbral::run::{CheckpointError, Controls, LineProgress, Observe};
use umbral::scan::{
    scan as scan_to_file, scan_in_memory, GridAxis, ScanError, ScanRequest, ScanSummary,
};

/// An axis from its values: evenly spaced ones (as `umbral scan --grid` makes them, within
/// rounding: numpy's `linspace(0, 1.2, 5)` has 0.8999999999999999 where the command line's
/// grid, rounded to its own decimals, has 0.9) are recorded as the command line's grid and
/// computed at its values; any other increasing values are recorded one by one and computed at
/// exactly those values.
fn axis(name: String, values: Vec<f64>) -> GridAxis {
    let n = values.len();
    if n >= 2 {
        let even = GridAxis::new(&name, values[0], values[n - 1], n);
        if even
            .all_values()
            .iter()
            .zip(&values)
            .all(|(a, b)| (a - b).abs() <= 4.0 * f64::EPSILON * a.abs().max(b.abs()))
        {
            return even;
        }
    }
    GridAxis::from_values(&name, values)
}

/// The progress observer the `progress` argument asks for: a line on standard error at most
/// every so many seconds.
pub fn progress_lines(every: Option<f64>) -> Option<LineProgress> {
    every.map(|s| LineProgress::stderr(std::time::Duration::from_secs_f64(s.clamp(0.0, 1e6))))
}

/// The observers of a run.
pub fn observers(line: &mut Option<LineProgress>) -> Vec<&mut dyn Observe> {
    line.iter_mut().map(|l| l as &mut dyn Observe).collect()
}

/// Run the scan (to `out` when given, resumable) and return, flat in grid order (last axis
/// fastest): each observable's values (NaN where a point has none), and each point's status,
/// reason, solver and horizonless mark; with the counts of computed and kept points.
#[pyfunction]
#[pyo3(signature = (metric, axes, inclination, settings, require_horizon, out, progress))]
#[allow(clippy::too_many_arguments)]
pub fn scan<'py>(
    py: Python<'py>,
    metric: &Metric,
    axes: Vec<(String, Vec<f64>)>,
    inclination: Option<f64>,
    settings: (usize, String, f64),
    require_horizon: bool,
    out: Option<PathBuf>,
    progress: Option<f64>,
) -> PyResult<Bound<'py, PyDict>> {
    let request = ScanRequest {
        metric: metric.source.clone(),
        axes: axes.into_iter().map(|(n, v)| axis(n, v)).collect(),
        fixed: metric.assignments.clone(),
        inclination_deg: inclination,
        settings: crate::compute::shadow_settings(settings).or_raise(py)?,
        require_horizon,
    };
    let summary = interruptible(py, |stop| {
        let mut line = progress_lines(progress);
        let controls = Controls {
            observers: observers(&mut line),
            stop: Some(stop),
        };
        let result = match &out {
            Some(path) => scan_to_file(&request, path, controls),
            None => scan_in_memory(&request, controls),
        };
        result.map_err(|e| match e {
            ScanError::Interrupted { .. } | ScanError::Stopped { .. } => {
                Fail::Computation(e.to_string())
            }
            ScanError::Checkpoint(e @ CheckpointError::Io { .. }) => Fail::Input(e.to_string()),
            other => input(other),
        })
    })
    .or_raise(py)?;
    columns(py, &summary)
}

/// The summary as flat columns.
fn columns<'py>(py: Python<'py>, summary: &ScanSummary) -> PyResult<Bound<'py, PyDict>> {
    let mut keys: BTreeSet<String> = Quantity::ALL.iter().map(|q| q.to_string()).collect();
    for p in &summary.points {
        if let Some(serde_json::Value::Object(map)) = p.observables.as_ref().map(|o| o.json()) {
            for (k, v) in map {
                if v.is_number() || v.is_null() {
                    keys.insert(k.clone());
                }
            }
        }
    }
    let observables = PyDict::new(py);
    for key in &keys {
        let values: Vec<f64> = summary
            .points
            .iter()
            .map(|p| p.observable(key).unwrap_or(f64::NAN))
            .collect();
        observables.set_item(key, PyArray1::from_vec(py, values))?;
    }
    let text = |f: &dyn Fn(&umbral::scan::ScanPoint) -> String| -> Vec<String> {
        summary.points.iter().map(f).collect()
    };
    let result = PyDict::new(py);
    result.set_item("observables", observables)?;
    result.set_item("status", text(&|p| p.status.clone()))?;
    result.set_item("reason", text(&|p| p.reason.clone().unwrap_or_default()))?;
    result.set_item("solver", text(&|p| p.solver.clone().unwrap_or_default()))?;
    let horizonless: Vec<bool> = summary.points.iter().map(|p| p.horizonless).collect();
    result.set_item("horizonless", horizonless)?;
    result.set_item("computed", summary.computed)?;
    result.set_item("reused", summary.reused)?;
    Ok(result)
}
