//! The tables a posterior interpolates ([`crate::posterior::table`]), built as scans.
//!
//! Each source's [`TablePlan`] becomes a scan over its axes (the nodes of a table axis are the
//! scan's grid values), with the model's shadow settings. The scan file is the table's file:
//! named `umbral-table-HASH.jsonl` in a folder of the caller's choice, HASH being the first 12
//! hexadecimal digits of the SHA-256 of the scan's header, so a later run with the same metric,
//! axes, inclination and settings reads the table instead of tracing again, and an interrupted
//! build resumes from the nodes already in the file (everything a scan file guarantees).
//!
//! ```no_run
//! use umbral::measurement::Measurement;
//! use umbral::metrics::MetricSource;
//! use umbral::posterior::{InferenceRequest, PosteriorModel};
//! use umbral::run::Controls;
//! use umbral::sampling::Prior;
//! let m = Measurement::from_toml_str("[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n").unwrap();
//! let request = InferenceRequest::new(
//!     MetricSource::builtin("johannsen-psaltis").unwrap(),
//!     vec![
//!         ("eps3".into(), Prior::parse("uniform:-1:1").unwrap()),
//!         ("a".into(), Prior::parse("uniform:0:0.5").unwrap()),
//!         ("inclination".into(), Prior::parse("fixed:60").unwrap()), // degrees
//!     ],
//!     vec![m],
//! );
//! let model = PosteriorModel::new(&request).unwrap();
//! let controls = Controls { observers: vec![], stop: None };
//! let tables = umbral::scan::table::build_tables(&model, std::path::Path::new("."), controls).unwrap();
//! let model = model.with_tables(tables).unwrap();
//! ```

use super::{scan, GridAxis, ScanError, ScanRequest};
use crate::posterior::{InferError, PosteriorModel, ShadowTable, TableError, TablePlan};
use crate::run::{sha256_hex, Controls};
use std::path::{Path, PathBuf};

/// Why the tables could not be built.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TableBuildError {
    /// The model cannot be tabulated.
    #[error(transparent)]
    Layout(#[from] InferError),
    /// A table's scan failed or was stopped (the finished nodes are kept in its file).
    #[error("table for source {number}: {error}")]
    Scan {
        /// The source, from 1.
        number: usize,
        /// The scan's error.
        error: ScanError,
    },
}

/// The scan that builds a plan's table.
pub fn table_scan(model: &PosteriorModel, plan: &TablePlan) -> ScanRequest {
    ScanRequest {
        metric: model.metric().clone(),
        axes: plan
            .axes
            .iter()
            .map(|(a, metric_name)| GridAxis::new(metric_name, a.low, a.high, a.count))
            .collect(),
        fixed: plan.fixed.clone(),
        inclination_deg: Some(plan.inclination.to_degrees()),
        settings: model.shadow_settings(),
        require_horizon: model.require_horizon(),
    }
}

/// The file a scan request's table lives in, inside `dir`.
pub fn table_path(request: &ScanRequest, dir: &Path) -> Result<PathBuf, ScanError> {
    let head = serde_json::to_string(&super::header::header(request)?).unwrap_or_default();
    let hash = sha256_hex(head.as_bytes());
    Ok(dir.join(format!("umbral-table-{}.jsonl", &hash[..12])))
}

/// Build (or read) every source's table with the executor of [`scan`], in order, sharing
/// `controls`' observers and stop flag; the files go to `dir`.
pub fn build_tables(
    model: &PosteriorModel,
    dir: &Path,
    mut controls: Controls<'_>,
) -> Result<Vec<ShadowTable>, TableBuildError> {
    let mut tables = Vec::new();
    for plan in model.table_plans()? {
        let number = plan.source + 1;
        let request = table_scan(model, &plan);
        let points = if request.axes.is_empty() {
            vec![super::compute_point(&request, &[])]
        } else {
            let path = table_path(&request, dir)
                .map_err(|error| TableBuildError::Scan { number, error })?;
            scan(&request, &path, controls.reborrow())
                .map_err(|error| TableBuildError::Scan { number, error })?
                .points
        };
        let quantity = model.size_measure().quantity();
        let mut size = Vec::with_capacity(points.len());
        let mut circularity = Vec::with_capacity(points.len());
        for p in &points {
            let values = (p.status == "shadow")
                .then(|| p.quantity(quantity))
                .flatten()
                .zip(if plan.circularity {
                    p.quantity(crate::observables::Quantity::CircularityDeviation)
                } else {
                    Some(f64::NAN)
                });
            let Some((s, c)) = values else {
                let at: Vec<String> = plan
                    .axes
                    .iter()
                    .zip(&p.index)
                    .map(|((a, _), &i)| format!("{}={}", a.name, crate::numfmt::Num(a.value(i))))
                    .collect();
                let what = match (&p.status[..], &p.reason) {
                    ("shadow", _) => "the size is not a finite number".to_string(),
                    ("no_horizon", _) => "no horizon".to_string(),
                    (status, Some(reason)) => format!("{} ({reason})", status.replace('_', " ")),
                    (status, None) => status.replace('_', " "),
                };
                return Err(InferError::Table {
                    number,
                    problem: TableError::Node {
                        at: at.join(", "),
                        what: format!(
                            "{what}; every node needs a shadow to interpolate: narrow the priors"
                        ),
                    },
                }
                .into());
            };
            size.push(s);
            circularity.push(c);
        }
        let axes = plan.axes.iter().map(|(a, _)| a.clone()).collect();
        let table = ShadowTable::new(
            plan.source,
            axes,
            size,
            plan.circularity.then_some(circularity),
        )
        .map_err(|problem| InferError::Table { number, problem })?;
        tables.push(table);
    }
    Ok(tables)
}

/// Why a model could not be given its tables.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TabulateError {
    /// A table could not be built (or its scan was stopped).
    #[error(transparent)]
    Build(#[from] TableBuildError),
    /// The model refused its tables.
    #[error(transparent)]
    Model(InferError),
    /// The GR limit refused its tables.
    #[error("the GR limit's {0}")]
    GrModel(InferError),
}

/// `model` with its tables built (or read) in `dir` by [`build_tables`], and with
/// `gr_limit` (nested sampling and quadrature, whose Bayes factor needs the GR limit, which
/// holds the shared parameters elsewhere) the GR limit's own tables too.
pub fn tabulated(
    model: PosteriorModel,
    dir: &Path,
    gr_limit: bool,
    mut controls: Controls<'_>,
) -> Result<PosteriorModel, TabulateError> {
    let tables = build_tables(&model, dir, controls.reborrow())?;
    let model = model.with_tables(tables).map_err(TabulateError::Model)?;
    if !gr_limit {
        return Ok(model);
    }
    let gr_tables = build_tables(&model.gr_model(), dir, controls)?;
    model
        .with_gr_tables(gr_tables)
        .map_err(TabulateError::GrModel)
}
