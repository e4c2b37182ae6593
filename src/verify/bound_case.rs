//! Bound cases (`[[bound]]`): the ends of the allowed range of a deviation parameter from a
//! measured shadow-radius interval ([`crate::bounds::bound`]), pinned like any other number.
//!
//! Quantities: `lower_end` (low end of the first allowed range), `upper_end` (high end of the
//! last allowed range) and `allowed_ranges` (how many disjoint ranges), each at the
//! `confidence` level the expectation names, which must be a level of the measurement.

use super::report::CheckRow;
use super::schema::{build, expectation, known_name, metric_source, Expectation, RawExpectation};
use crate::bounds::{
    bound, BoundRequest, BoundResult, BoundSettings, Inclination, ParameterRange, SizeMeasure,
    MAX_INITIAL_GRID,
};
use crate::measurement::{DerivedRadii, Measurement};
use crate::numfmt::Num;
use crate::run::bound::{bound_with, BoundRunError};
use crate::run::Controls;
use crate::shadow::MAX_POINTS;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::Path;

/// Quantities a bound expectation can pin.
pub const BOUND_QUANTITIES: &[&str] = &["lower_end", "upper_end", "allowed_ranges"];

/// Two confidence levels closer than this are the same level.
const LEVEL_MATCH: f64 = 1e-9;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawRange {
    name: String,
    low: f64,
    high: f64,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum SizeName {
    Mean,
    Area,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawBound {
    name: String,
    #[serde(default)]
    metric: Option<String>,
    #[serde(default)]
    metric_file: Option<String>,
    #[serde(default)]
    parameters: BTreeMap<String, f64>,
    vary: RawRange,
    #[serde(default)]
    nuisance: Vec<RawRange>,
    #[serde(default)]
    inclination: Option<f64>,
    #[serde(default)]
    inclination_range: Option<[f64; 2]>,
    measurement: toml::Value,
    #[serde(default)]
    size_measure: Option<SizeName>,
    #[serde(default)]
    circularity_max: Option<f64>,
    #[serde(default)]
    points: Option<usize>,
    #[serde(default)]
    boundary_tolerance: Option<f64>,
    #[serde(default)]
    initial_grid: Option<usize>,
    #[serde(default)]
    parameter_tolerance: Option<f64>,
    #[serde(default)]
    expect: Vec<RawExpectation>,
}

/// One validated bound case.
pub struct BoundCase {
    /// The case's name, unique in its file.
    pub name: String,
    /// What to bound: the metric (built-in or from a metric file), ranges and measurement.
    pub request: BoundRequest,
    /// What the bound is expected to give.
    pub expectations: Vec<Expectation>,
}

fn range(r: RawRange, what: &str) -> Result<ParameterRange, String> {
    if !(r.low.is_finite() && r.high.is_finite() && r.low < r.high) {
        return Err(format!(
            "{what} '{}' needs finite low < high, got [{}, {}]",
            r.name, r.low, r.high
        ));
    }
    Ok(ParameterRange {
        name: r.name.trim().to_string(),
        low: r.low,
        high: r.high,
    })
}

fn measurement(value: toml::Value, base_dir: &Path) -> Result<DerivedRadii, String> {
    let m = match value {
        toml::Value::String(p) => {
            let path = base_dir.join(p.trim());
            Measurement::from_path(&path)
                .map_err(|e| format!("measurement {}: {e}", path.display()))?
        }
        toml::Value::Table(t) => {
            let text = toml::to_string(&t).map_err(|e| format!("measurement: {e}"))?;
            Measurement::from_toml_str(&text).map_err(|e| format!("measurement: {e}"))?
        }
        other => {
            return Err(format!(
                "measurement must be a file path or an inline table, got a {}",
                other.type_str()
            ))
        }
    };
    m.derive(None).map_err(|e| format!("measurement: {e}"))
}

/// The observer's inclination: one angle or a range, in degrees within [0, 180].
fn inclination(fixed: Option<f64>, range: Option<[f64; 2]>) -> Result<Inclination, String> {
    match (fixed, range) {
        (Some(d), None) if (0.0..=180.0).contains(&d) => Ok(Inclination::Fixed { degrees: d }),
        (None, Some([lo, hi])) if 0.0 <= lo && lo < hi && hi <= 180.0 => Ok(Inclination::Range {
            low_degrees: lo,
            high_degrees: hi,
        }),
        _ => Err(INCLINATION_NEEDED.into()),
    }
}

/// What a bound case without a usable inclination is told.
const INCLINATION_NEEDED: &str =
    "give inclination (degrees, 0 to 180) or inclination_range = [low, high] (a spherically \
     symmetric metric may omit both)";

/// The bound's settings: the defaults with the case's points, initial grid and tolerances.
fn settings(
    [points, initial_grid]: [Option<usize>; 2],
    [boundary_tolerance, parameter_tolerance]: [Option<f64>; 2],
) -> Result<BoundSettings, String> {
    let mut settings = BoundSettings::default();
    if let Some(p) = points {
        settings.shadow.points = p;
    }
    if let Some(t) = boundary_tolerance {
        settings.shadow.tolerance = t;
    }
    if let Some(g) = initial_grid {
        settings.initial_grid = g;
    }
    if let Some(t) = parameter_tolerance {
        settings.parameter_tolerance = t;
    }
    let points_ok = (8..=MAX_POINTS).contains(&settings.shadow.points);
    let grid_ok = (3..=MAX_INITIAL_GRID).contains(&settings.initial_grid);
    crate::shadow::check_tolerance(settings.shadow.tolerance).map_err(|e| format!("{e}"))?;
    let positive = |t: f64| t > 0.0 && t.is_finite();
    let tolerances_ok = positive(settings.parameter_tolerance);
    if !(points_ok && grid_ok && tolerances_ok) {
        return Err(format!(
            "need points from 8 to {MAX_POINTS}, initial_grid from 3 to {MAX_INITIAL_GRID} \
             and positive finite tolerances (got points = {}, initial_grid = {})",
            settings.shadow.points, settings.initial_grid
        ));
    }
    Ok(settings)
}

/// The case's expectations, each at a confidence level of the measurement.
fn expectations(
    raw: Vec<RawExpectation>,
    radii: &DerivedRadii,
) -> Result<Vec<Expectation>, String> {
    let mut expectations = Vec::new();
    for e in raw {
        let e = expectation(e, |q| known_name(q, BOUND_QUANTITIES))?;
        let c = e
            .confidence
            .ok_or_else(|| format!("expectation '{}' needs a confidence level", e.quantity))?;
        if !radii
            .intervals
            .iter()
            .any(|i| (i.confidence - c).abs() <= LEVEL_MATCH)
        {
            let levels: Vec<String> = radii
                .intervals
                .iter()
                .map(|i| i.confidence.to_string())
                .collect();
            return Err(format!(
                "confidence {c} is not a level of the measurement (levels: {})",
                levels.join(", ")
            ));
        }
        expectations.push(e);
    }
    Ok(expectations)
}

impl BoundCase {
    /// Validate a raw `[[bound]]` table; paths are relative to `base_dir`.
    pub(super) fn from_raw(raw: RawBound, base_dir: &Path) -> Result<BoundCase, String> {
        let name = raw.name.trim().to_string();
        if name.is_empty() {
            return Err("a bound has an empty name".into());
        }
        let label = |m: String| format!("bound '{name}': {m}");
        let fixed: Vec<(String, f64)> = raw.parameters.into_iter().collect();
        let vary = range(raw.vary, "vary").map_err(label)?;
        let nuisance = raw
            .nuisance
            .into_iter()
            .map(|r| range(r, "nuisance"))
            .collect::<Result<Vec<_>, _>>()
            .map_err(label)?;
        let source = metric_source(raw.metric, raw.metric_file, base_dir).map_err(label)?;
        // Names and domains are checked now, at the low end of every range.
        let mut probe = fixed.clone();
        probe.push((vary.name.clone(), vary.low));
        probe.extend(nuisance.iter().map(|r| (r.name.clone(), r.low)));
        build(&source, &probe).map_err(label)?;
        // Without an inclination a spherically symmetric metric is bound at 90° (its shadow does
        // not depend on it: bounds::Inclination::unspecified); any other metric needs one.
        let inclination = match (raw.inclination, raw.inclination_range) {
            (None, None) => Inclination::unspecified(&source, &probe)
                .map_err(|_| label(INCLINATION_NEEDED.into()))?,
            (fixed, range) => inclination(fixed, range).map_err(label)?,
        };
        let radii = measurement(raw.measurement, base_dir).map_err(label)?;
        let settings = settings(
            [raw.points, raw.initial_grid],
            [raw.boundary_tolerance, raw.parameter_tolerance],
        )
        .map_err(label)?;
        if let Some(c) = raw.circularity_max {
            if !(c.is_finite() && c > 0.0) {
                return Err(label(format!(
                    "circularity_max must be positive, got {}",
                    Num(c)
                )));
            }
        }
        if raw.expect.is_empty() {
            return Err(label("no expectations ([[bound.expect]])".into()));
        }
        let expectations = expectations(raw.expect, &radii).map_err(label)?;
        Ok(BoundCase {
            name,
            request: BoundRequest {
                metric: source,
                vary,
                fixed,
                inclination,
                nuisance,
                size_measure: match raw.size_measure.unwrap_or(SizeName::Mean) {
                    SizeName::Mean => SizeMeasure::Mean,
                    SizeName::Area => SizeMeasure::Area,
                },
                radii,
                circularity_max: raw.circularity_max,
                settings,
            },
            expectations,
        })
    }

    /// Compute the bound and judge each expectation; failures become rows with the reason.
    pub fn run(&self, file: &str, index: usize) -> Vec<CheckRow> {
        self.judge(file, index, bound(&self.request).map_err(|e| e.to_string()))
    }

    /// [`BoundCase::run`] on the run executor with `controls`' observers and stop flag;
    /// `None` if a stop request ended the bound before it finished.
    pub fn run_with(
        &self,
        file: &str,
        index: usize,
        controls: Controls<'_>,
    ) -> Option<Vec<CheckRow>> {
        let result = match bound_with(&self.request, controls, None) {
            Err(BoundRunError::Interrupted { .. }) => return None,
            r => r.map_err(|e| e.to_string()),
        };
        Some(self.judge(file, index, result))
    }

    /// One row per expectation from the bound's result (or why it failed).
    fn judge(
        &self,
        file: &str,
        index: usize,
        result: Result<BoundResult, String>,
    ) -> Vec<CheckRow> {
        let result = result.map_err(|e| format!("the bound failed: {e}"));
        self.expectations
            .iter()
            .enumerate()
            .map(|(j, e)| {
                let got = result
                    .as_ref()
                    .map_err(Clone::clone)
                    .and_then(|r| bound_quantity(r, &e.quantity, e.confidence.unwrap_or(f64::NAN)));
                let mut row = CheckRow::judge(
                    file.to_string(),
                    (index, &self.name),
                    j,
                    &e.quantity,
                    e.expected,
                    &e.source,
                    got,
                );
                row.section = "bound";
                row.confidence = e.confidence;
                row
            })
            .collect()
    }
}

/// A bound end (or count) at one confidence level, refusing results with solver failures.
fn bound_quantity(r: &BoundResult, name: &str, confidence: f64) -> Result<f64, String> {
    if !r.failures.is_empty() {
        let ranges: Vec<String> = r
            .failures
            .iter()
            .map(|f| format!("[{}, {}]: {}", f.low, f.high, f.error))
            .collect();
        return Err(format!("the solver failed on {}", ranges.join("; ")));
    }
    let level = r
        .levels
        .iter()
        .find(|l| (l.confidence - confidence).abs() <= LEVEL_MATCH)
        .ok_or_else(|| format!("no level at confidence {confidence}"))?;
    match name {
        "allowed_ranges" => Ok(level.allowed.len() as f64),
        "lower_end" | "upper_end" => {
            let (first, last) = match (level.allowed.first(), level.allowed.last()) {
                (Some(f), Some(l)) => (f, l),
                _ => return Err(format!("nothing is allowed at confidence {confidence}")),
            };
            Ok(if name == "lower_end" {
                first[0]
            } else {
                last[1]
            })
        }
        _ => Err(format!("unknown bound quantity '{name}'")),
    }
}
