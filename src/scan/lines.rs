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

use super::{axis_inclination, expected_parameters, PointObservables, ScanPoint, ScanRequest};
use crate::observables::Quantity;
use crate::run::RecordFormat;
use serde::Deserialize;
use serde_json::Value;
use std::cmp::Ordering;
use std::collections::BTreeMap;

/// The longest point line read back (a point line is about 1 KiB; error reasons are cut to
/// [`MAX_REASON_CHARS`]).
pub const MAX_LINE_BYTES: usize = 16 * 1024;

/// Reasons longer than this are cut when a point is written.
pub const MAX_REASON_CHARS: usize = 4000;

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
    #[serde(default)]
    inclination_deg: Option<f64>,
    status: String,
    #[serde(default)]
    horizonless: bool,
    #[serde(default)]
    reason: Option<String>,
    #[serde(default)]
    solver: Option<String>,
    #[serde(default)]
    points: Option<usize>,
    #[serde(default)]
    observables: Option<PointObservables>,
    checksum: String,
}

/// What a status requires of the other fields; `start` is the header's curve points.
fn check_status(p: &ScanPoint, start: usize) -> Result<(), String> {
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
    }?;
    // A shadow's curve points: the header's, or doubled from them.
    has("points", p.points.is_some(), p.status == "shadow")?;
    if let Some(points) = p.points {
        let doubled = start > 0 && points % start == 0 && (points / start).is_power_of_two();
        if !doubled {
            return Err(format!(
                "{points} curve points are not the header's {start} doubled"
            ));
        }
    }
    Ok(())
}

fn check_observables(o: Option<&PointObservables>) -> Result<(), String> {
    let Some((Value::Object(map), o)) = o.map(|o| (o.json(), o)) else {
        return Err("the observables are not a JSON object".into());
    };
    for key in REQUIRED_OBSERVABLES {
        match o.get(key) {
            Some(_) => {}
            None => {
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

/// The grid index of a point as its work-item key (`[1,2]`).
pub(crate) fn key(index: &[usize]) -> String {
    let parts: Vec<String> = index.iter().map(usize::to_string).collect();
    format!("[{}]", parts.join(","))
}

/// The point lines of one scan request.
pub(crate) struct ScanFormat<'r> {
    pub(crate) request: &'r ScanRequest,
}

impl RecordFormat for ScanFormat<'_> {
    type Record = ScanPoint;
    const KIND: &'static str = "scan";
    const ITEM: &'static str = "point";
    const AN_ITEM: &'static str = "a point";

    fn key(&self, p: &ScanPoint) -> String {
        key(&p.index)
    }

    fn describe(&self, p: &ScanPoint) -> String {
        format!("index {:?}", p.index)
    }

    fn body(&self, p: &ScanPoint) -> Result<String, String> {
        serde_json::to_string(p).map_err(|e| e.to_string())
    }

    fn parse(&self, text: &str) -> Result<(ScanPoint, String), String> {
        let stored: StoredPoint =
            serde_json::from_str(text).map_err(|e| format!("is not a scan point: {e}"))?;
        let p = ScanPoint {
            index: stored.index,
            parameters: stored.parameters,
            inclination_deg: stored.inclination_deg,
            status: stored.status,
            horizonless: stored.horizonless,
            reason: stored.reason,
            solver: stored.solver,
            points: stored.points,
            observables: stored.observables,
        };
        let axes = &self.request.axes;
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
        Ok((p, stored.checksum))
    }

    fn check(&self, p: &ScanPoint) -> Result<(), String> {
        let want = expected_parameters(self.request, &p.index);
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
        match (p.inclination_deg, axis_inclination(self.request, &p.index)) {
            (None, None) => {}
            (Some(got), Some(want)) if got.to_bits() == want.to_bits() => {}
            (Some(got), Some(want)) => {
                return Err(format!(
                    "inclination_deg = {got:e} is not the grid point's value {want:e}"
                ))
            }
            (None, Some(_)) => return Err("the inclination axis needs an inclination_deg".into()),
            (Some(_), None) => return Err("an inclination_deg without an inclination axis".into()),
        }
        check_status(p, self.request.settings.points)
    }

    /// Grid order, last axis fastest.
    fn order(&self, a: &ScanPoint, b: &ScanPoint) -> Ordering {
        a.index.cmp(&b.index)
    }

    fn max_line_bytes(&self) -> usize {
        MAX_LINE_BYTES
    }

    fn max_file(&self) -> (u64, String) {
        let total: u64 = self.request.axes.iter().map(|a| a.count as u64).product();
        (
            64 * 1024 + total * MAX_LINE_BYTES as u64,
            "the most a scan file of this grid holds (64 KiB + 16 KiB per point)".into(),
        )
    }
}
