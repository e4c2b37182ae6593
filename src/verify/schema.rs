//! The checks file: its TOML schema, and loading it into validated [`Case`]s.
//!
//! The format is documented in `docs/regression-checks.md`. Every key is checked: unknown
//! keys, missing keys and out-of-range settings are errors naming the file and the problem.

use super::bound_case::{BoundCase, RawBound};
use super::quantity::CheckQuantity;
use super::VerifyError;
use crate::metric::Spacetime;
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::observables::CentreChoice;
use crate::shadow::{Observer, ShadowSettings, SolverChoice};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    description: Option<String>,
    #[serde(default)]
    case: Vec<RawCase>,
    #[serde(default)]
    bound: Vec<RawBound>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCase {
    name: String,
    #[serde(default)]
    metric: Option<String>,
    #[serde(default)]
    metric_file: Option<String>,
    #[serde(default)]
    parameters: BTreeMap<String, f64>,
    inclination: f64,
    #[serde(default)]
    observer_radius: Option<f64>,
    #[serde(default)]
    solver: Option<String>,
    #[serde(default)]
    points: Option<usize>,
    #[serde(default)]
    boundary_tolerance: Option<f64>,
    #[serde(default)]
    centre: Option<CentreName>,
    #[serde(default)]
    expect: Vec<RawExpectation>,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
enum CentreName {
    Centroid,
    Midpoint,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawExpectation {
    quantity: String,
    #[serde(default)]
    confidence: Option<f64>,
    #[serde(default)]
    value: Option<f64>,
    #[serde(default)]
    abs: Option<f64>,
    #[serde(default)]
    rel: Option<f64>,
    #[serde(default)]
    min: Option<f64>,
    #[serde(default)]
    max: Option<f64>,
    source: String,
}

/// How far a computed value may lie from the expected one.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Tolerance {
    /// |got − expected| ≤ abs.
    Absolute(f64),
    /// |got − expected| ≤ rel · |expected|.
    Relative(f64),
}

impl Tolerance {
    /// The tolerance in the quantity's own units for this expected value.
    pub fn absolute_for(&self, expected: f64) -> f64 {
        match *self {
            Tolerance::Absolute(t) => t,
            Tolerance::Relative(t) => t * expected.abs(),
        }
    }
}

/// What a quantity is expected to be.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Expected {
    /// A value with a tolerance.
    Value {
        /// The expected value.
        value: f64,
        /// How far the computed value may lie from it.
        tolerance: Tolerance,
    },
    /// A range: `min ≤ got ≤ max`, either end optional (an upper or lower bound).
    Range {
        /// The lower end, if any.
        min: Option<f64>,
        /// The upper end, if any.
        max: Option<f64>,
    },
}

/// One expectation of a case: of a [`CheckQuantity`] in a `[[case]]`, of a bound quantity
/// named by a string (see [`super::BOUND_QUANTITIES`]) in a `[[bound]]`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Expectation<Q = String> {
    /// The quantity.
    pub quantity: Q,
    /// The value or range expected.
    pub expected: Expected,
    /// Where the expected number comes from (paper, generator script, or
    /// "common practice, no source").
    pub source: String,
    /// The confidence level (bound expectations only).
    pub confidence: Option<f64>,
}

/// One validated case: a metric, an observer, solver settings and its expectations.
pub struct Case {
    /// The case's name, unique in its file.
    pub name: String,
    /// The metric, built-in or from a metric file.
    pub metric_source: MetricSource,
    /// The metric's parameters as written (the rest take their defaults).
    pub parameters: Vec<(String, f64)>,
    /// The metric, built when the file was loaded.
    pub metric: Box<dyn Spacetime>,
    /// Inclination in degrees, as written.
    pub inclination_deg: f64,
    /// The observer (distant, or static at `observer_radius`).
    pub observer: Observer,
    /// Curve points, boundary tolerance and solver.
    pub settings: ShadowSettings,
    /// The centre of the radius observables.
    pub centre: CentreChoice,
    /// What the case is expected to give.
    pub expectations: Vec<Expectation<CheckQuantity>>,
}

/// A loaded and validated checks file.
pub struct ChecksFile {
    /// The file, as given.
    pub path: PathBuf,
    /// Its free-text description, if any.
    pub description: Option<String>,
    /// `[[case]]` cases.
    pub cases: Vec<Case>,
    /// `[[bound]]` cases.
    pub bounds: Vec<BoundCase>,
}

/// The 1-based line of a byte offset.
fn line_of(text: &str, offset: usize) -> usize {
    text[..offset.min(text.len())].matches('\n').count() + 1
}

fn finite(x: f64, what: &str) -> Result<f64, String> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(format!("{what} must be a finite number, got {}", Num(x)))
    }
}

/// The name, if it is one of `known` (the bound quantities).
pub(super) fn known_name(name: &str, known: &[&str]) -> Result<String, String> {
    if known.contains(&name) {
        Ok(name.to_string())
    } else {
        Err(format!(
            "unknown quantity '{name}' (known: {})",
            known.join(", ")
        ))
    }
}

/// Validate one expectation; `parse` reads its quantity's name (trimmed) or says why not.
pub(super) fn expectation<Q>(
    raw: RawExpectation,
    parse: impl Fn(&str) -> Result<Q, String>,
) -> Result<Expectation<Q>, String> {
    let q = raw.quantity.trim().to_string();
    let quantity = parse(&q)?;
    if let Some(c) = raw.confidence {
        if !(c > 0.0 && c < 1.0) {
            return Err(format!(
                "expectation '{q}': confidence must lie strictly between 0 and 1, got {}",
                Num(c)
            ));
        }
    }
    let source = raw.source.trim().to_string();
    if source.is_empty() {
        return Err(format!(
            "expectation '{q}': source is empty (name a paper, a script, or write \"common practice, no source\")"
        ));
    }
    let label = |m: String| format!("expectation '{q}': {m}");
    let expected = match (raw.value, raw.abs, raw.rel, raw.min, raw.max) {
        (Some(value), abs, rel, None, None) => {
            let value = finite(value, "value").map_err(label)?;
            let tolerance = match (abs, rel) {
                (Some(t), None) => Tolerance::Absolute(t),
                (None, Some(t)) => Tolerance::Relative(t),
                (Some(_), Some(_)) => return Err(label("give one of abs or rel, not both".into())),
                (None, None) => return Err(label("a value needs a tolerance: abs or rel".into())),
            };
            let t = match tolerance {
                Tolerance::Absolute(t) | Tolerance::Relative(t) => t,
            };
            if !(t.is_finite() && t >= 0.0) {
                return Err(label(format!(
                    "tolerance must be a finite number >= 0, got {}",
                    Num(t)
                )));
            }
            Expected::Value { value, tolerance }
        }
        (None, None, None, min, max) if min.is_some() || max.is_some() => {
            if let Some(m) = min {
                finite(m, "min").map_err(label)?;
            }
            if let Some(m) = max {
                finite(m, "max").map_err(label)?;
            }
            if let (Some(lo), Some(hi)) = (min, max) {
                if lo > hi {
                    return Err(label(format!("min {lo} is greater than max {hi}")));
                }
            }
            Expected::Range { min, max }
        }
        (None, _, _, None, None) => {
            return Err(label(
                "give value with abs or rel, or min and/or max".into(),
            ))
        }
        _ => {
            return Err(label(
                "value (with abs or rel) and min/max cannot be mixed".into(),
            ))
        }
    };
    Ok(Expectation {
        quantity,
        expected,
        source,
        confidence: raw.confidence,
    })
}

/// The metric a case or a bound names: `metric = "NAME"` (a built-in metric) or
/// `metric_file = "PATH"` (relative to the checks file), never both.
pub(super) fn metric_source(
    metric: Option<String>,
    metric_file: Option<String>,
    base_dir: &Path,
) -> Result<MetricSource, String> {
    match (metric, metric_file) {
        (Some(name), None) => MetricSource::builtin(name.trim()).map_err(|e| e.to_string()),
        (None, Some(file)) => {
            let path = base_dir.join(file.trim());
            MetricSource::load(&path)
                .map_err(|e| format!("metric file {}: {}", path.display(), e.summary()))
        }
        (Some(_), Some(_)) => Err("give metric or metric_file, not both".into()),
        (None, None) => {
            Err("missing metric (a built-in metric name) or metric_file (a metric file)".into())
        }
    }
}

/// The metric at these parameters; an error names a metric file by its path.
pub(super) fn build(
    source: &MetricSource,
    parameters: &[(String, f64)],
) -> Result<Box<dyn Spacetime>, String> {
    source.build(parameters).map_err(|e| match source.path() {
        Some(path) => format!("metric file {}: {e}", path.display()),
        None => e.to_string(),
    })
}

fn case(raw: RawCase, base_dir: &Path) -> Result<Case, String> {
    let name = raw.name.trim().to_string();
    if name.is_empty() {
        return Err("a case has an empty name".into());
    }
    let label = |m: String| format!("case '{name}': {m}");
    let parameters: Vec<(String, f64)> = raw.parameters.into_iter().collect();
    for (p, v) in &parameters {
        finite(*v, &format!("parameter '{p}'")).map_err(label)?;
    }
    let metric_source = metric_source(raw.metric, raw.metric_file, base_dir).map_err(label)?;
    let metric = build(&metric_source, &parameters).map_err(label)?;
    let inclination = finite(raw.inclination, "inclination").map_err(label)?;
    if !(0.0..=180.0).contains(&inclination) {
        return Err(label(format!(
            "inclination must lie between 0 and 180 degrees, got {}",
            Num(inclination)
        )));
    }
    let observer = match raw.observer_radius {
        None => Observer::distant(inclination.to_radians()),
        Some(r) => {
            if !(r.is_finite() && r > 0.0) {
                return Err(label(format!(
                    "observer_radius must be a positive finite number, got {}",
                    Num(r)
                )));
            }
            Observer::at_radius(inclination.to_radians(), r)
        }
    };
    let defaults = ShadowSettings::default();
    let points = raw.points.unwrap_or(defaults.points);
    crate::shadow::check_points(points).map_err(|e| label(format!("points: {e}")))?;
    let tolerance = raw.boundary_tolerance.unwrap_or(defaults.tolerance);
    crate::shadow::check_tolerance(tolerance).map_err(|e| label(format!("{e}")))?;
    let solver = match raw.solver.as_deref() {
        None => SolverChoice::AUTO,
        Some(name) => name
            .parse::<SolverChoice>()
            .map_err(|e| label(e.to_string()))?,
    };
    let centre = match raw.centre.unwrap_or(CentreName::Centroid) {
        CentreName::Centroid => CentreChoice::Centroid,
        CentreName::Midpoint => CentreChoice::Midpoint,
    };
    if raw.expect.is_empty() {
        return Err(label("no expectations ([[case.expect]])".into()));
    }
    let expectations = raw
        .expect
        .into_iter()
        .map(|e| expectation(e, str::parse::<CheckQuantity>))
        .collect::<Result<Vec<_>, _>>()
        .map_err(label)?;
    if let Some(e) = expectations.iter().find(|e| e.confidence.is_some()) {
        return Err(label(format!(
            "expectation '{}': confidence belongs to [[bound]] expectations only",
            e.quantity
        )));
    }
    Ok(Case {
        name,
        metric_source,
        parameters,
        metric,
        inclination_deg: inclination,
        observer,
        settings: ShadowSettings {
            points,
            tolerance,
            solver,
        },
        centre,
        expectations,
    })
}

impl ChecksFile {
    /// Read and validate a checks file from TOML text; `path` is used in messages.
    pub fn parse(text: &str, path: &Path) -> Result<ChecksFile, VerifyError> {
        let invalid = |message: String| VerifyError::Invalid {
            path: path.to_path_buf(),
            message,
        };
        let raw: RawFile = toml::from_str(text).map_err(|e| {
            let line = e
                .span()
                .map(|s| format!("line {}: ", line_of(text, s.start)))
                .unwrap_or_default();
            invalid(format!("{line}{}", e.message().trim()))
        })?;
        // Metric files are named relative to the checks file.
        let base_dir = path.parent().unwrap_or(Path::new("."));
        if raw.case.is_empty() && raw.bound.is_empty() {
            return Err(invalid("no cases ([[case]] or [[bound]])".into()));
        }
        let mut cases: Vec<Case> = Vec::with_capacity(raw.case.len());
        for raw_case in raw.case {
            let c = case(raw_case, base_dir).map_err(&invalid)?;
            if cases.iter().any(|other| other.name == c.name) {
                return Err(invalid(format!("two cases are named '{}'", c.name)));
            }
            cases.push(c);
        }
        let mut bounds: Vec<BoundCase> = Vec::with_capacity(raw.bound.len());
        for raw_bound in raw.bound {
            let b = BoundCase::from_raw(raw_bound, base_dir).map_err(&invalid)?;
            let taken = cases.iter().any(|c| c.name == b.name)
                || bounds.iter().any(|other| other.name == b.name);
            if taken {
                return Err(invalid(format!("two cases are named '{}'", b.name)));
            }
            bounds.push(b);
        }
        Ok(ChecksFile {
            path: path.to_path_buf(),
            description: raw.description,
            cases,
            bounds,
        })
    }

    /// Read and validate a checks file.
    pub fn load(path: impl AsRef<Path>) -> Result<ChecksFile, VerifyError> {
        let path = path.as_ref();
        let text = crate::input::read_text(path).map_err(|e| VerifyError::Invalid {
            path: path.to_path_buf(),
            message: format!("cannot read: {e}"),
        })?;
        ChecksFile::parse(&text, path)
    }
}
