//! The first line of a scan file: everything that determines the points, including a SHA-256
//! hash of the metric itself, so a resumed scan never mixes results of an edited metric file,
//! another version of umbral or other arguments.

use super::{GridAxis, ScanError, ScanRequest};
use crate::metrics::{MetricSource, SourceError};
use serde::{Deserialize, Serialize};
use serde_json::Value;
use std::collections::BTreeMap;

/// The scan-file format written by this version.
/// 3: horizonless points that cast a shadow are evaluated (`"horizonless": true`), unless the
/// header's `require_horizon` says otherwise.
pub const FORMAT: u32 = 3;

/// The header line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct Header {
    umbral_scan: u32,
    umbral_version: String,
    metric: String,
    /// SHA-256 of the metric: a metric file's bytes, or a built-in metric's name and
    /// parameter specifications (see [`metric_sha256`]).
    metric_sha256: String,
    axes: Vec<GridAxis>,
    fixed: BTreeMap<String, f64>,
    inclination_deg: f64,
    points: usize,
    tolerance: f64,
    solver: String,
    /// Horizonless points are `no_horizon` whatever their shadow (format 2's policy).
    require_horizon: bool,
}

pub(crate) use crate::metrics::sha256_hex;

/// The metric's content hash ([`MetricSource::content_sha256`]), its errors in scan terms.
pub(crate) fn metric_sha256(source: &MetricSource) -> Result<String, ScanError> {
    source.content_sha256().map_err(|e| match e {
        SourceError::Read { path, reason } => ScanError::Read {
            path,
            message: reason,
        },
        SourceError::Changed { path } => ScanError::BadRequest(format!(
            "metric file '{path}' changed while the scan was starting; run it again"
        )),
    })
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

/// The header as its line (without the newline).
pub(crate) fn text(head: &Header) -> Result<String, ScanError> {
    serde_json::to_string(head).map_err(|e| ScanError::BadRequest(e.to_string()))
}

/// A JSON value for a message: compact, and cut short when long.
fn brief(v: Option<&Value>) -> String {
    let Some(v) = v else {
        return "absent".into();
    };
    let s = v.to_string();
    if s.chars().count() > 60 {
        format!("{}...", s.chars().take(57).collect::<String>())
    } else {
        s
    }
}

/// Why the header line `line` of the file at `path` does not belong to `head`, or `None`
/// when it does.
pub(crate) fn compare(line: &str, head: &Header, path: &str) -> Option<ScanError> {
    let bad = |problem: String| {
        Some(ScanError::BadLine {
            path: path.to_string(),
            line: 1,
            problem,
        })
    };
    let found: Value = match serde_json::from_str(line) {
        Ok(v @ Value::Object(_)) => v,
        Ok(_) => return bad("is not a scan header (not a JSON object)".into()),
        Err(e) => return bad(format!("is not a scan header: {e}")),
    };
    let Some(format) = found.get("umbral_scan") else {
        return bad("is not a scan header (no 'umbral_scan' field)".into());
    };
    if format.as_u64() != Some(u64::from(FORMAT)) {
        return Some(ScanError::Mismatch {
            path: path.to_string(),
            why: format!(
                "scan format {} in the file, {FORMAT} now (written by another version of umbral)",
                brief(Some(format))
            ),
        });
    }
    let want = serde_json::to_value(head).ok()?;
    let (Value::Object(f), Value::Object(w)) = (&found, &want) else {
        return None;
    };
    let mut why = Vec::new();
    for key in f.keys().filter(|k| !w.contains_key(*k)) {
        why.push(format!("unknown field '{key}'"));
    }
    for (key, now) in w {
        if f.get(key) == Some(now) {
            continue;
        }
        if key == "metric_sha256" && f.get("metric") != w.get("metric") {
            continue; // another metric altogether: its hash differs of course
        }
        why.push(match key.as_str() {
            "metric_sha256" => {
                "metric_sha256 (the metric's content changed: an edited metric file or another \
                 definition of the built-in metric)"
                    .to_string()
            }
            _ => format!(
                "{key}: {} in the file, {} now",
                brief(f.get(key)),
                brief(Some(now))
            ),
        });
    }
    // Values that compare unequal as JSON but equal as a header (1 and 1.0) are the same.
    if why.is_empty() || serde_json::from_value::<Header>(found).ok().as_ref() == Some(head) {
        return None;
    }
    Some(ScanError::Mismatch {
        path: path.to_string(),
        why: why.join("; "),
    })
}
