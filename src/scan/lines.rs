//! Point lines of a scan file: how they are written, and the checks every line kept from an
//! earlier run must pass before it is trusted.
//!
//! A line is the point's JSON with a `checksum` last: the first 16 hexadecimal digits of the
//! SHA-256 of the header line, a newline and the point's JSON. It ties each line to its scan
//! and shows an edited or damaged line (it is a check against accidents, not a signature).
//! A kept line must be exactly what this scan would write for its point: known fields only,
//! an index on the grid, seen once, the grid point's parameters to the bit, a known status
//! with the fields that status has, finite observables for a shadow, a matching checksum and
//! the canonical JSON text.

use super::{expected_parameters, ScanError, ScanPoint, ScanRequest};
use crate::observables::Quantity;
use serde::Deserialize;
use serde_json::Value;
use std::collections::BTreeMap;

/// The longest point line read back (a point line is about 1 KiB; error reasons are cut to
/// [`MAX_REASON_CHARS`]).
pub const MAX_LINE_BYTES: usize = 16 * 1024;

/// Reasons longer than this are cut when a point is written.
pub const MAX_REASON_CHARS: usize = 4000;

/// Hexadecimal digits of the checksum.
const CHECKSUM_DIGITS: usize = 16;

/// Observables a shadow point must carry as finite numbers (those the scan's plot and users
/// read).
const REQUIRED_OBSERVABLES: [Quantity; 4] = [
    Quantity::MeanRadius,
    Quantity::AreaRadius,
    Quantity::CircularityDeviation,
    Quantity::CentroidOffset,
];

/// A point line as stored.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct StoredPoint {
    index: Vec<usize>,
    parameters: BTreeMap<String, f64>,
    status: String,
    #[serde(default)]
    horizonless: bool,
    #[serde(default)]
    reason: Option<String>,
    #[serde(default)]
    solver: Option<String>,
    #[serde(default)]
    observables: Option<Value>,
    checksum: String,
}

fn checksum(head_text: &str, body: &str) -> String {
    let mut text = String::with_capacity(head_text.len() + body.len() + 1);
    text.push_str(head_text);
    text.push('\n');
    text.push_str(body);
    super::header::sha256_hex(text.as_bytes())[..CHECKSUM_DIGITS].to_string()
}

/// The line of a point (without the newline).
pub(crate) fn encode(head_text: &str, p: &ScanPoint) -> Result<String, ScanError> {
    let body = serde_json::to_string(p).map_err(|e| ScanError::BadRequest(e.to_string()))?;
    let open = body.strip_suffix('}').unwrap_or(&body);
    Ok(format!(
        "{open},\"checksum\":\"{}\"}}",
        checksum(head_text, &body)
    ))
}

/// What a status requires of the other fields.
fn check_status(p: &ScanPoint) -> Result<(), String> {
    let known_solver = |s: &Option<String>| match s {
        Some(s) if crate::shadow::find_solver(s).is_some() => Ok(()),
        Some(s) => Err(format!("unknown solver '{s}'")),
        None => Err(format!("status '{}' needs a solver", p.status)),
    };
    let has = |field: &str, present: bool, wanted: bool| match (present, wanted) {
        (true, false) => Err(format!("status '{}' has no {field}", p.status)),
        (false, true) => Err(format!("status '{}' needs a {field}", p.status)),
        _ => Ok(()),
    };
    let reason = p.reason.is_some();
    let observables = p.observables.is_some();
    if p.horizonless && p.status != "shadow" {
        return Err(format!(
            "status '{}' is marked horizonless (only a shadow is)",
            p.status
        ));
    }
    match p.status.as_str() {
        "shadow" => {
            known_solver(&p.solver)?;
            has("reason", reason, false)?;
            has("observables", observables, true)?;
            check_observables(p.observables.as_ref())
        }
        "no_shadow" => {
            known_solver(&p.solver)?;
            has("reason", reason, true)?;
            has("observables", observables, false)
        }
        "no_horizon" => {
            has("solver", p.solver.is_some(), false)?;
            has("reason", reason, false)?;
            has("observables", observables, false)
        }
        "failed" => {
            if p.solver.is_some() {
                known_solver(&p.solver)?;
            }
            has("reason", reason, true)?;
            has("observables", observables, false)
        }
        other => Err(format!(
            "unknown status '{other}' (known: shadow, no_shadow, no_horizon, failed)"
        )),
    }
}

fn check_observables(o: Option<&Value>) -> Result<(), String> {
    let Some(Value::Object(map)) = o else {
        return Err("the observables are not a JSON object".into());
    };
    for key in REQUIRED_OBSERVABLES {
        match map.get(key.name()).and_then(Value::as_f64) {
            Some(x) if x.is_finite() => {}
            _ => {
                return Err(format!(
                    "observable '{key}' is missing or not a finite number"
                ))
            }
        }
    }
    fn finite(v: &Value) -> bool {
        match v {
            Value::Number(n) => n.as_f64().is_some_and(f64::is_finite),
            Value::Array(a) => a.iter().all(finite),
            Value::Object(m) => m.values().all(finite),
            Value::Null | Value::Bool(_) | Value::String(_) => true,
        }
    }
    match map.iter().find(|(_, v)| !finite(v)) {
        Some((k, _)) => Err(format!("observable '{k}' is not finite")),
        None => Ok(()),
    }
}

/// Check a complete point line against the scan; `seen` collects the indices so far.
pub(crate) fn decode(
    text: &str,
    head_text: &str,
    request: &ScanRequest,
    seen: &BTreeMap<Vec<usize>, (String, ScanPoint)>,
) -> Result<ScanPoint, String> {
    if text.trim().is_empty() {
        return Err("is blank".into());
    }
    if text.len() > MAX_LINE_BYTES {
        return Err(format!(
            "is longer than {MAX_LINE_BYTES} bytes, more than any point line"
        ));
    }
    let stored: StoredPoint =
        serde_json::from_str(text).map_err(|e| format!("is not a scan point: {e}"))?;
    let p = ScanPoint {
        index: stored.index,
        parameters: stored.parameters,
        status: stored.status,
        horizonless: stored.horizonless,
        reason: stored.reason,
        solver: stored.solver,
        observables: stored.observables,
    };
    let axes = &request.axes;
    if p.index.len() != axes.len() {
        return Err(format!(
            "index {:?} has {} entries, the grid has {} axes",
            p.index,
            p.index.len(),
            axes.len()
        ));
    }
    for (a, &i) in axes.iter().zip(&p.index) {
        if i >= a.count {
            return Err(format!(
                "index {:?} is off the grid (axis '{}' has {} points, numbered from 0)",
                p.index, a.name, a.count
            ));
        }
    }
    if seen.contains_key(&p.index) {
        return Err(format!(
            "index {:?} appears a second time (a point is written once)",
            p.index
        ));
    }
    let want = expected_parameters(request, &p.index);
    if p.parameters.keys().ne(want.keys()) {
        return Err(format!(
            "the parameters {:?} are not the metric's {:?}",
            p.parameters.keys().collect::<Vec<_>>(),
            want.keys().collect::<Vec<_>>()
        ));
    }
    for (name, value) in &p.parameters {
        if value.to_bits() != want[name].to_bits() {
            return Err(format!(
                "parameter '{name}' = {value:e} is not the grid point's value {:e}",
                want[name]
            ));
        }
    }
    check_status(&p)?;
    let body = serde_json::to_string(&p).map_err(|e| e.to_string())?;
    if stored.checksum != checksum(head_text, &body) {
        return Err(
            "its checksum does not match its content (the line was edited or damaged)".into(),
        );
    }
    if encode(head_text, &p).map_err(|e| e.to_string())? != text {
        return Err("is not written the way umbral writes it (the line was edited)".into());
    }
    Ok(p)
}
