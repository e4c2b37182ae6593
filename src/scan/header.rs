//! The first line of a scan file: everything that determines the points, including a SHA-256
//! hash of the metric itself, so a resumed scan never mixes results of an edited metric file,
//! another version of umbral or other arguments.

use super::{GridAxis, ScanError, ScanRequest};
use crate::run::metric_sha256;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The scan-file format written by this version.
/// 3: horizonless points that cast a shadow are evaluated (`"horizonless": true`), unless the
/// header's `require_horizon` says otherwise.
/// 4: `points` is where each curve starts: the points are doubled, up to 1024, while the
/// sampling error of an observable exceeds the tolerance
/// ([`crate::observables::resolved::solve_with_observables`]); before, every curve had
/// exactly `points`.
pub const FORMAT: u32 = 4;

/// The header line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct Header {
    umbral_scan: u32,
    umbral_version: String,
    metric: String,
    /// SHA-256 of the metric: a metric file's bytes, or a built-in metric's name and
    /// parameter specifications (see [`crate::run::metric_sha256`]).
    metric_sha256: String,
    axes: Vec<GridAxis>,
    fixed: BTreeMap<String, f64>,
    /// `null` when an axis is the inclination.
    inclination_deg: Option<f64>,
    points: usize,
    tolerance: f64,
    solver: String,
    /// Horizonless points are `no_horizon` whatever their shadow (format 2's policy).
    require_horizon: bool,
}

/// The header of a request.
pub(crate) fn header(request: &ScanRequest) -> Result<Header, ScanError> {
    Ok(Header {
        umbral_scan: FORMAT,
        umbral_version: env!("CARGO_PKG_VERSION").to_string(),
        metric: request.metric.label(),
        metric_sha256: metric_sha256(&request.metric)?,
        axes: request.axes.clone(),
        fixed: request.fixed.iter().cloned().collect(),
        inclination_deg: request.inclination_deg,
        points: request.settings.points,
        tolerance: request.settings.tolerance,
        solver: format!("{:?}", request.settings.solver).to_lowercase(),
        require_horizon: request.require_horizon,
    })
}
