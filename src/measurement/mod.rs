//! What an observation measured, turned into intervals on the shadow radius r_sh/M.
//!
//! A measurement file (TOML) gives exactly one size form:
//!
//! * `[size.shadow_radius]`: intervals on r_sh/M at stated confidence levels, used as given;
//!   or a value with errors (`value` and `sigma`, or `value`, `minus` and `plus`);
//! * `[size.fractional_deviation]`: δ = r_sh/(3√3) − 1 with Gaussian errors `value`,
//!   `sigma` or asymmetric ones `value`, `minus`, `plus`; the interval at level p is
//!   [value − z_p·minus, value + z_p·plus] with z_p the two-sided Gaussian multiplier
//!   (the usual reading of quoted asymmetric errors; common practice, no source), then
//!   r_sh = 3√3 (1 + δ) (a value with errors on r_sh/M is read the same way);
//! * `[size.ring]`: the chain from the image, r_sh/M = d_ring / (κ · 2θ_g) (see [`ring`]);
//! * `[size.samples]`: posterior samples of r_sh/M (`quantity = "shadow_radius"`) or of δ
//!   (`quantity = "fractional_deviation"`) from the user's own image analysis, in a text file
//!   (`path`, relative to the measurement file): one number per line, or a CSV column
//!   (`column`, a header name or a number from 1; default the first); lines starting with `#`
//!   are comments. Bounds use their equal-tailed quantile intervals (Hyndman & Fan 1996,
//!   definition 7); inference their kernel density estimate,
//!
//! and optionally `[circularity]`: `max = ...`, a hard upper limit on ΔC, or `value` and
//! `sigma`, a soft one (see [`likelihood`]). How each form enters a posterior is in
//! [`likelihood`].
//!
//! ```
//! use umbral::measurement::Measurement;
//! let m = Measurement::from_toml_str(r#"
//! label = "an invented measurement"
//! [size.fractional_deviation]
//! value = 0.0
//! minus = 0.1
//! plus = 0.1
//! "#).unwrap();
//! let derived = m.derive(None).unwrap();
//! assert_eq!(derived.intervals.len(), 2); // 0.68 and 0.95 by default
//! ```

pub mod calibration;
pub mod constants;
pub mod gaussian;
pub mod likelihood;
pub mod ring;

use crate::numfmt::Num;
use crate::observables::SCHWARZSCHILD_SHADOW_RADIUS;
use gaussian::two_sided_z;
use likelihood::{CircularityLimit, ValueErrors};
use ring::{AngularScale, RingChain, RingPropagation};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// Confidence levels used when neither the file nor the user names any.
pub const DEFAULT_LEVELS: [f64; 2] = [0.68, 0.95];

/// Why a measurement could not be read or used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MeasurementError {
    /// The file could not be read.
    #[error("cannot read measurement file '{path}': {message}")]
    Io {
        /// The path as given.
        path: String,
        /// What went wrong reading it.
        message: String,
    },
    /// The TOML is malformed or has unknown or missing keys.
    #[error("measurement file: {0}")]
    Parse(String),
    /// The values are inconsistent or out of range.
    #[error("measurement: {0}")]
    Invalid(String),
}

/// A value with a Gaussian standard deviation.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Gaussian {
    /// The central value.
    pub value: f64,
    /// The standard deviation, in the value's unit.
    pub sigma: f64,
}

/// An interval on r_sh/M at a confidence level.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RadiusInterval {
    /// The confidence level, strictly between 0 and 1 (e.g. 0.68).
    pub confidence: f64,
    /// Lower end, r_sh/M.
    pub low: f64,
    /// Upper end, r_sh/M.
    pub high: f64,
}

/// A value with errors as written: `value` with `sigma`, or with `minus` and `plus`.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileValue {
    value: Option<f64>,
    sigma: Option<f64>,
    minus: Option<f64>,
    plus: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileShadowRadius {
    intervals: Option<Vec<RadiusInterval>>,
    value: Option<f64>,
    sigma: Option<f64>,
    minus: Option<f64>,
    plus: Option<f64>,
}

/// δ = r_sh/(3√3) − 1 with (possibly asymmetric) Gaussian errors.
pub type FractionalDeviation = ValueErrors;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileRing {
    diameter_uas: Gaussian,
    ring_to_shadow: toml::Value,
    calibration: Option<calibration::CalibrationRequest>,
    mass_msun: Option<Gaussian>,
    theta_g_uas: Option<Gaussian>,
    distance_mpc: Option<Gaussian>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileSamples {
    path: String,
    quantity: SamplesQuantity,
    column: Option<toml::Value>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileSize {
    shadow_radius: Option<FileShadowRadius>,
    fractional_deviation: Option<FileValue>,
    ring: Option<FileRing>,
    samples: Option<FileSamples>,
}

/// What a file of samples holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SamplesQuantity {
    /// r_sh/M.
    ShadowRadius,
    /// δ = r_sh/(3√3) − 1.
    FractionalDeviation,
}

/// Posterior samples of the size from the user's image analysis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SizeSamples {
    /// The file, as the measurement file names it.
    pub path: String,
    /// What the samples are of.
    pub quantity: SamplesQuantity,
    /// The column read (its header name, or its number from 1).
    pub column: String,
    /// The samples, in file order.
    #[serde(skip)]
    pub values: Vec<f64>,
    /// How many there are.
    pub count: usize,
}

/// The fewest samples a `[size.samples]` file may hold.
pub const MIN_SIZE_SAMPLES: usize = 50;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileCircularity {
    max: Option<f64>,
    value: Option<f64>,
    sigma: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct MeasurementFile {
    #[serde(default)]
    label: String,
    size: FileSize,
    circularity: Option<FileCircularity>,
}

/// The size part of a measurement.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SizeMeasurement {
    /// Intervals on r_sh/M, used as given.
    ShadowRadius(Vec<RadiusInterval>),
    /// r_sh/M with (possibly asymmetric) Gaussian errors.
    ShadowRadiusValue(ValueErrors),
    /// δ = r_sh/(3√3) − 1 with asymmetric errors.
    FractionalDeviation(FractionalDeviation),
    /// The chain from the ring image, r_sh/M = d_ring / (κ · 2θ_g).
    Ring(RingChain),
    /// Samples of r_sh/M or δ from the user's own image analysis.
    Samples(SizeSamples),
}

/// A validated measurement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Measurement {
    /// A free-text label from the file (empty if none).
    pub label: String,
    /// The size part: exactly one of the forms.
    pub size: SizeMeasurement,
    /// The hard upper limit on the circularity deviation ΔC the interval-inclusion bound
    /// uses, if any ([`CircularityLimit::bound_cut`] of [`Measurement::circularity`]).
    pub circularity_max: Option<f64>,
    /// The circularity limit as given (hard or soft), if any.
    pub circularity: Option<CircularityLimit>,
}

/// The r_sh/M intervals a measurement implies, with how they were derived.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DerivedRadii {
    /// One interval per level, in the order asked.
    pub intervals: Vec<RadiusInterval>,
    /// The ring chain's two propagations (ring form only).
    pub ring: Option<RingPropagation>,
    /// Plain-language statements of how the intervals were obtained.
    pub assumptions: Vec<String>,
}

fn check_level(confidence: f64) -> Result<(), MeasurementError> {
    if confidence > 0.0 && confidence < 1.0 {
        Ok(())
    } else {
        Err(MeasurementError::Invalid(format!(
            "confidence levels must lie strictly between 0 and 1, got {}",
            Num(confidence)
        )))
    }
}

fn finite(what: &str, x: f64) -> Result<f64, MeasurementError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(MeasurementError::Invalid(format!(
            "{what} must be a finite number, got {}",
            Num(x)
        )))
    }
}

/// 1-based line of a byte offset, for error messages.
fn line_of(text: &str, offset: usize) -> usize {
    text[..offset.min(text.len())].matches('\n').count() + 1
}

/// `[size.shadow_radius]`: at least one interval, each with a valid level, 0 < low < high,
/// and no level twice.
fn check_shadow_radius(intervals: &[RadiusInterval]) -> Result<(), MeasurementError> {
    if intervals.is_empty() {
        return Err(MeasurementError::Invalid(
            "size.shadow_radius.intervals is empty".into(),
        ));
    }
    for (k, iv) in intervals.iter().enumerate() {
        check_level(finite("a confidence", iv.confidence)?)?;
        let (lo, hi) = (finite("low", iv.low)?, finite("high", iv.high)?);
        if !(lo > 0.0 && lo < hi) {
            return Err(MeasurementError::Invalid(format!(
                "size.shadow_radius interval {}: need 0 < low < high, got [{}, {}]",
                k + 1,
                Num(lo),
                Num(hi)
            )));
        }
        if intervals[..k].iter().any(|o| o.confidence == iv.confidence) {
            return Err(MeasurementError::Invalid(format!(
                "size.shadow_radius: confidence {} given twice",
                iv.confidence
            )));
        }
    }
    Ok(())
}

/// A value with errors (`table` names it in messages): `value` and `sigma`, or `value`,
/// `minus` and `plus`; finite, with non-negative errors.
fn value_errors(table: &str, f: FileValue) -> Result<ValueErrors, MeasurementError> {
    let (minus, plus) = match (f.sigma, f.minus, f.plus) {
        (Some(s), None, None) => (s, s),
        (None, Some(m), Some(p)) => (m, p),
        _ => {
            return Err(MeasurementError::Invalid(format!(
                "{table} needs value with sigma, or value with minus and plus"
            )))
        }
    };
    let value = f
        .value
        .ok_or_else(|| MeasurementError::Invalid(format!("{table} needs a value")))?;
    finite(&format!("{table}.value"), value)?;
    for (what, x) in [("minus or sigma", minus), ("plus or sigma", plus)] {
        if finite(&format!("{table} error"), x)? < 0.0 {
            return Err(MeasurementError::Invalid(format!(
                "{table}: {what} must not be negative, got {}",
                Num(x)
            )));
        }
    }
    Ok(ValueErrors { value, minus, plus })
}

/// `[size.shadow_radius]`: intervals, or a positive value with errors (not both).
fn shadow_radius(s: FileShadowRadius) -> Result<SizeMeasurement, MeasurementError> {
    let value = FileValue {
        value: s.value,
        sigma: s.sigma,
        minus: s.minus,
        plus: s.plus,
    };
    let has_value = value.value.is_some()
        || value.sigma.is_some()
        || value.minus.is_some()
        || value.plus.is_some();
    match (s.intervals, has_value) {
        (Some(intervals), false) => {
            check_shadow_radius(&intervals)?;
            Ok(SizeMeasurement::ShadowRadius(intervals))
        }
        (None, true) => {
            let v = value_errors("size.shadow_radius", value)?;
            if v.value <= 0.0 {
                return Err(MeasurementError::Invalid(format!(
                    "size.shadow_radius.value must be positive, got {}",
                    Num(v.value)
                )));
            }
            Ok(SizeMeasurement::ShadowRadiusValue(v))
        }
        _ => Err(MeasurementError::Invalid(
            "size.shadow_radius needs either intervals or a value with errors (not both)".into(),
        )),
    }
}

/// `[circularity]`: `max` (a hard cut) or `value` and `sigma` (a soft limit), positive.
fn circularity(c: FileCircularity) -> Result<CircularityLimit, MeasurementError> {
    let positive = |what: &str, x: f64| -> Result<f64, MeasurementError> {
        if finite(what, x)? > 0.0 {
            Ok(x)
        } else {
            Err(MeasurementError::Invalid(format!(
                "{what} must be positive, got {}",
                Num(x)
            )))
        }
    };
    match (c.max, c.value, c.sigma) {
        (Some(max), None, None) => Ok(CircularityLimit::Max(positive("circularity.max", max)?)),
        (None, Some(value), Some(sigma)) => Ok(CircularityLimit::Soft {
            value: positive("circularity.value", value)?,
            sigma: positive("circularity.sigma", sigma)?,
        }),
        _ => Err(MeasurementError::Invalid(
            "circularity needs max (a hard limit) or value and sigma (a soft limit)".into(),
        )),
    }
}

/// `ring_to_shadow`: a Gaussian, `"computed"` (with `[size.ring.calibration]`), or a
/// calibration file's path (see [`calibration`]).
fn kappa_of(
    value: toml::Value,
    request: Option<calibration::CalibrationRequest>,
    base: &Path,
) -> Result<(Gaussian, calibration::KappaOrigin), MeasurementError> {
    use calibration::{CalibrationSummary, KappaOrigin};
    let pending = Gaussian {
        value: f64::NAN,
        sigma: f64::NAN,
    };
    match value {
        toml::Value::String(s) if s == "computed" => {
            let mut request = request.ok_or_else(|| {
                MeasurementError::Invalid(
                    "ring_to_shadow = \"computed\" needs a [size.ring.calibration] table with \
                     inclination_deg and resolution_uas"
                        .into(),
                )
            })?;
            request.validate()?;
            request.models = request.models.map(|m| base.join(m));
            Ok((pending, KappaOrigin::Pending(request)))
        }
        _ if request.is_some() => Err(MeasurementError::Invalid(
            "[size.ring.calibration] is read only with ring_to_shadow = \"computed\"".into(),
        )),
        toml::Value::String(path) => {
            let summary = CalibrationSummary::read(&base.join(&path))?;
            Ok((
                summary.kappa_gaussian(),
                KappaOrigin::File { path, summary },
            ))
        }
        other => {
            let kappa: Gaussian = other.try_into().map_err(|e: toml::de::Error| {
                MeasurementError::Parse(format!(
                    "size.ring.ring_to_shadow must be {{ value = ..., sigma = ... }}, \
                     \"computed\" or a calibration file's path: {}",
                    e.message().trim()
                ))
            })?;
            Ok((kappa, KappaOrigin::Given))
        }
    }
}

/// `[size.ring]`: the ring chain, with one angular scale (mass and distance, or θ_g).
fn ring_chain(r: FileRing, base: &Path) -> Result<RingChain, MeasurementError> {
    let scale = match (r.mass_msun, r.distance_mpc, r.theta_g_uas) {
        (Some(mass_msun), Some(distance_mpc), None) => AngularScale::MassDistance {
            mass_msun,
            distance_mpc,
        },
        (None, None, Some(theta_g_uas)) => AngularScale::ThetaG { theta_g_uas },
        _ => {
            return Err(MeasurementError::Invalid(
                "size.ring needs either mass_msun and distance_mpc, or theta_g_uas \
                 (not both)"
                    .into(),
            ))
        }
    };
    let (ring_to_shadow, kappa_origin) = kappa_of(r.ring_to_shadow, r.calibration, base)?;
    let chain = RingChain {
        diameter_uas: r.diameter_uas,
        ring_to_shadow,
        scale,
        kappa_origin,
    };
    if chain.pending_calibration().is_none() {
        chain.validate()?;
    }
    Ok(chain)
}

impl Measurement {
    /// Read and validate a measurement file.
    pub fn from_path(path: &Path) -> Result<Self, MeasurementError> {
        let text = crate::input::read_text(path).map_err(|e| MeasurementError::Io {
            path: path.display().to_string(),
            message: e.to_string(),
        })?;
        let base = path.parent().unwrap_or(Path::new("."));
        Self::from_toml_str_in(&text, base).map_err(|e| match e {
            MeasurementError::Parse(m) => {
                MeasurementError::Parse(format!("'{}': {m}", path.display()))
            }
            other => other,
        })
    }

    /// Parse and validate measurement TOML (a samples file is found from the current folder).
    pub fn from_toml_str(text: &str) -> Result<Self, MeasurementError> {
        Self::from_toml_str_in(text, Path::new("."))
    }

    /// Parse and validate measurement TOML whose relative paths start at `base`.
    pub fn from_toml_str_in(text: &str, base: &Path) -> Result<Self, MeasurementError> {
        let file: MeasurementFile = toml::from_str(text).map_err(|e| {
            let at = e
                .span()
                .map(|s| format!("line {}: ", line_of(text, s.start)))
                .unwrap_or_default();
            MeasurementError::Parse(format!("{at}{}", e.message().trim()))
        })?;
        let forms = [
            file.size.shadow_radius.is_some(),
            file.size.fractional_deviation.is_some(),
            file.size.ring.is_some(),
            file.size.samples.is_some(),
        ];
        let count = forms.iter().filter(|&&b| b).count();
        if count != 1 {
            return Err(MeasurementError::Invalid(format!(
                "give exactly one size form ([size.shadow_radius], [size.fractional_deviation], \
                 [size.ring] or [size.samples]), found {count}"
            )));
        }
        let size = if let Some(s) = file.size.shadow_radius {
            shadow_radius(s)?
        } else if let Some(f) = file.size.fractional_deviation {
            SizeMeasurement::FractionalDeviation(value_errors("size.fractional_deviation", f)?)
        } else if let Some(r) = file.size.ring {
            SizeMeasurement::Ring(ring_chain(r, base)?)
        } else if let Some(samples) = file.size.samples {
            SizeMeasurement::Samples(read_samples(samples, base)?)
        } else {
            unreachable!("exactly one size form was checked above")
        };
        let circularity = file.circularity.map(circularity).transpose()?;
        Ok(Measurement {
            label: file.label,
            size,
            circularity_max: circularity.map(|c| c.bound_cut()),
            circularity,
        })
    }

    /// The κ calibration this measurement still needs (`ring_to_shadow = "computed"`).
    pub fn pending_calibration(&self) -> Option<&calibration::CalibrationRequest> {
        match &self.size {
            SizeMeasurement::Ring(chain) => chain.pending_calibration(),
            _ => None,
        }
    }

    /// Give a pending calibration its computed result (κ = its mean ± spread).
    pub fn resolve_calibration(
        &mut self,
        summary: calibration::CalibrationSummary,
    ) -> Result<(), MeasurementError> {
        match &mut self.size {
            SizeMeasurement::Ring(chain) if chain.pending_calibration().is_some() => {
                chain.ring_to_shadow = summary.kappa_gaussian();
                chain.kappa_origin = calibration::KappaOrigin::Computed(summary);
                chain.validate()
            }
            _ => Err(MeasurementError::Invalid(
                "this measurement has no pending ring-to-shadow calibration".into(),
            )),
        }
    }

    /// The r_sh/M intervals at `levels` (default: the file's levels for the shadow-radius
    /// form, [`DEFAULT_LEVELS`] otherwise).
    ///
    /// Every derived interval must be finite with 0 < low ≤ high (the ring chain's linear
    /// cross-check too), and intervals at higher confidence must contain those at lower
    /// confidence; anything else is an error, not a bound.
    pub fn derive(&self, levels: Option<&[f64]>) -> Result<DerivedRadii, MeasurementError> {
        let mut derived = self.derive_intervals(levels)?;
        if let Some(CircularityLimit::Soft { value, sigma }) = self.circularity {
            derived.assumptions.push(format!(
                "circularity: the soft upper limit {value} (sigma {sigma}) enters this \
                 interval-inclusion bound as the hard cut value + 2 sigma = {}",
                value + 2.0 * sigma
            ));
        }
        let linear = derived
            .ring
            .iter()
            .flat_map(|r| r.linear.iter().chain(&r.monte_carlo));
        for iv in derived.intervals.iter().chain(linear) {
            if !(iv.low.is_finite() && iv.high.is_finite() && iv.low > 0.0 && iv.low <= iv.high) {
                return Err(MeasurementError::Invalid(format!(
                    "the derived r_sh/M interval at confidence {} is [{}, {}]: not a finite \
                     positive interval (check the measurement's values and errors)",
                    iv.confidence, iv.low, iv.high
                )));
            }
        }
        let mut by_level: Vec<&RadiusInterval> = derived.intervals.iter().collect();
        by_level.sort_by(|a, b| a.confidence.total_cmp(&b.confidence));
        for pair in by_level.windows(2) {
            let (inner, outer) = (pair[0], pair[1]);
            if outer.low > inner.low || outer.high < inner.high {
                return Err(MeasurementError::Invalid(format!(
                    "the r_sh/M interval at confidence {} [{}, {}] does not contain the one at \
                     confidence {} [{}, {}]",
                    outer.confidence,
                    outer.low,
                    outer.high,
                    inner.confidence,
                    inner.low,
                    inner.high
                )));
            }
        }
        Ok(derived)
    }

    fn derive_intervals(&self, levels: Option<&[f64]>) -> Result<DerivedRadii, MeasurementError> {
        if let Some(ls) = levels {
            if ls.is_empty() {
                return Err(MeasurementError::Invalid(
                    "no confidence levels given".into(),
                ));
            }
            for &l in ls {
                check_level(l)?;
            }
        }
        match &self.size {
            SizeMeasurement::ShadowRadius(given) => given_intervals(given, levels),
            SizeMeasurement::FractionalDeviation(f) => {
                value_intervals(f, levels, ValueOf::Deviation)
            }
            SizeMeasurement::ShadowRadiusValue(v) => value_intervals(v, levels, ValueOf::Radius),
            SizeMeasurement::Samples(samples) => sample_intervals(samples, levels),
            SizeMeasurement::Ring(chain) => ring_intervals(chain, levels),
        }
    }
}

/// The file's shadow-radius intervals at `levels` (all of them if `None`), used as given.
fn given_intervals(
    given: &[RadiusInterval],
    levels: Option<&[f64]>,
) -> Result<DerivedRadii, MeasurementError> {
    let mut assumptions = Vec::new();
    let intervals: Vec<RadiusInterval> = match levels {
        None => given.to_vec(),
        Some(ls) => ls
            .iter()
            .map(|&l| {
                given
                    .iter()
                    .find(|g| (g.confidence - l).abs() <= 1e-12)
                    .copied()
                    .ok_or_else(|| {
                        MeasurementError::Invalid(format!(
                            "the file gives no shadow-radius interval at \
                             confidence {l}"
                        ))
                    })
            })
            .collect::<Result<_, _>>()?,
    };
    assumptions
        .push("size: the shadow-radius intervals of the measurement file, used as given".into());
    Ok(DerivedRadii {
        intervals,
        ring: None,
        assumptions,
    })
}

/// What a value with errors is of.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum ValueOf {
    /// r_sh/M itself.
    Radius,
    /// δ, with r_sh/M = 3√3 (1 + δ).
    Deviation,
}

/// Shadow-radius intervals from a value with errors at `levels`: [value − z·minus,
/// value + z·plus] in r_sh/M, or in δ and then r_sh/M = 3√3 (1 + δ).
fn value_intervals(
    v: &ValueErrors,
    levels: Option<&[f64]>,
    of: ValueOf,
) -> Result<DerivedRadii, MeasurementError> {
    let mut assumptions = Vec::new();
    let mut intervals = Vec::new();
    for &confidence in levels.unwrap_or(&DEFAULT_LEVELS) {
        let z = two_sided_z(confidence)
            .ok_or_else(|| MeasurementError::Invalid(format!("bad confidence {confidence}")))?;
        let (lo, hi) = (v.value - z * v.minus, v.value + z * v.plus);
        let (low, high) = match of {
            ValueOf::Radius => (lo, hi),
            ValueOf::Deviation => (
                SCHWARZSCHILD_SHADOW_RADIUS * (1.0 + lo),
                SCHWARZSCHILD_SHADOW_RADIUS * (1.0 + hi),
            ),
        };
        let (value, minus, plus) = (v.value, v.minus, v.plus);
        if !(low > 0.0 && low < high) {
            return Err(MeasurementError::Invalid(match of {
                ValueOf::Radius => format!(
                    "shadow radius {value} -{minus} +{plus} gives no positive interval at \
                     confidence {confidence} ([{low}, {high}])"
                ),
                ValueOf::Deviation => format!(
                    "fractional deviation {value} -{minus} +{plus} gives no positive \
                     shadow-radius interval at confidence {confidence} ([{low}, {high}])"
                ),
            }));
        }
        assumptions.push(match of {
            ValueOf::Radius => format!(
                "size: r_sh/M = {value} -{minus} +{plus} read as [value - z minus, value + z \
                 plus] with z = {z:.6} at confidence {confidence}: [{low:.6}, {high:.6}]"
            ),
            ValueOf::Deviation => format!(
                "size: delta = {value} -{minus} +{plus} read as [value - z minus, value + z \
                 plus] with z = {z:.6} at confidence {confidence}: delta in [{lo:.6}, \
                 {hi:.6}], r_sh/M = 3 sqrt(3) (1 + delta) in [{low:.6}, {high:.6}]"
            ),
        });
        intervals.push(RadiusInterval {
            confidence,
            low,
            high,
        });
    }
    Ok(DerivedRadii {
        intervals,
        ring: None,
        assumptions,
    })
}

/// Equal-tailed quantile intervals of the samples (as r_sh/M).
fn sample_intervals(
    samples: &SizeSamples,
    levels: Option<&[f64]>,
) -> Result<DerivedRadii, MeasurementError> {
    let mut radii: Vec<f64> = samples
        .values
        .iter()
        .map(|&v| match samples.quantity {
            SamplesQuantity::ShadowRadius => v,
            SamplesQuantity::FractionalDeviation => SCHWARZSCHILD_SHADOW_RADIUS * (1.0 + v),
        })
        .collect();
    radii.sort_by(f64::total_cmp);
    let ls = levels.unwrap_or(&DEFAULT_LEVELS);
    let intervals: Vec<RadiusInterval> = ls
        .iter()
        .map(|&confidence| RadiusInterval {
            confidence,
            low: ring::quantile(&radii, 0.5 * (1.0 - confidence)),
            high: ring::quantile(&radii, 0.5 * (1.0 + confidence)),
        })
        .collect();
    let assumptions = vec![format!(
        "size: the equal-tailed quantile intervals (Hyndman & Fan 1996, definition 7) of {} \
         samples of {} from '{}' (column {})",
        samples.count,
        match samples.quantity {
            SamplesQuantity::ShadowRadius => "r_sh/M",
            SamplesQuantity::FractionalDeviation => "delta, r_sh/M = 3 sqrt(3) (1 + delta)",
        },
        samples.path,
        samples.column
    )];
    Ok(DerivedRadii {
        intervals,
        ring: None,
        assumptions,
    })
}

/// Read a `[size.samples]` file: one number per line, or a CSV column; `#` starts a comment
/// line. At least [`MIN_SIZE_SAMPLES`] finite numbers.
fn read_samples(f: FileSamples, base: &Path) -> Result<SizeSamples, MeasurementError> {
    let path = base.join(&f.path);
    let bad = |m: String| MeasurementError::Invalid(format!("size.samples '{}': {m}", f.path));
    let text = crate::input::read_text(&path).map_err(|e| bad(e.to_string()))?;
    let mut lines = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let split = |l: &str| -> Vec<String> { l.split(',').map(|c| c.trim().to_string()).collect() };
    let first = lines.next().ok_or_else(|| bad("no samples".into()))?;
    let header = split(first.1);
    let has_header = header.iter().any(|c| c.parse::<f64>().is_err());
    let index = match &f.column {
        None => 0,
        Some(toml::Value::Integer(n)) if *n >= 1 => (*n - 1) as usize,
        Some(toml::Value::String(name)) if has_header => {
            header.iter().position(|h| h == name).ok_or_else(|| {
                bad(format!(
                    "no column named '{name}' (header: {})",
                    header.join(", ")
                ))
            })?
        }
        Some(other) => {
            return Err(bad(format!(
                "column must be a header name (the file needs a header line) or a number from \
                 1, got {other}"
            )))
        }
    };
    let column = match &f.column {
        Some(toml::Value::String(name)) => name.clone(),
        _ if has_header => header.get(index).cloned().unwrap_or_default(),
        _ => (index + 1).to_string(),
    };
    let rows = std::iter::once(first).filter(|_| !has_header).chain(lines);
    let mut values = Vec::new();
    for (i, line) in rows {
        let cells = split(line);
        let cell = cells
            .get(index)
            .ok_or_else(|| bad(format!("line {} has no column {}", i + 1, index + 1)))?;
        let v: f64 = cell
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite())
            .ok_or_else(|| bad(format!("line {}: '{cell}' is not a finite number", i + 1)))?;
        values.push(v);
    }
    if values.len() < MIN_SIZE_SAMPLES {
        return Err(bad(format!(
            "{} samples; at least {MIN_SIZE_SAMPLES} are needed",
            values.len()
        )));
    }
    if f.quantity == SamplesQuantity::ShadowRadius && values.iter().any(|&v| v <= 0.0) {
        return Err(bad("a shadow radius sample is not positive".into()));
    }
    if f.quantity == SamplesQuantity::FractionalDeviation && values.iter().any(|&v| v <= -1.0) {
        return Err(bad("a fractional deviation sample is at or below -1".into()));
    }
    Ok(SizeSamples {
        path: f.path,
        quantity: f.quantity,
        column,
        count: values.len(),
        values,
    })
}

/// Shadow-radius intervals from a ring diameter, propagated through the ring chain.
fn ring_intervals(
    chain: &RingChain,
    levels: Option<&[f64]>,
) -> Result<DerivedRadii, MeasurementError> {
    let mut assumptions = Vec::new();
    let ls = levels.unwrap_or(&DEFAULT_LEVELS);
    let prop = chain.propagate(ls)?;
    let scale = match chain.scale {
        AngularScale::MassDistance {
            mass_msun,
            distance_mpc,
        } => format!(
            "theta_g = GM/(c^2 D) from M = {} +- {} Msun and D = {} +- {} Mpc \
             (IAU 2015 nominal GM_sun, exact c, IAU 2012 au, parsec = au/tan(1 arcsec))",
            mass_msun.value, mass_msun.sigma, distance_mpc.value, distance_mpc.sigma
        ),
        AngularScale::ThetaG { theta_g_uas } => format!(
            "theta_g = {} +- {} uas as given",
            theta_g_uas.value, theta_g_uas.sigma
        ),
    };
    assumptions.push(format!(
        "size: r_sh/M = d_ring / (kappa 2 theta_g) with d_ring = {} +- {} uas, {}, {scale}",
        chain.diameter_uas.value,
        chain.diameter_uas.sigma,
        chain.kappa_origin.describe(chain.ring_to_shadow),
    ));
    assumptions.push(format!(
        "priors: independent Gaussians truncated to positive values (draws <= 0 \
         redrawn: {:?}); Monte Carlo with {} ChaCha8 draws, seed {:#x}; equal-tail \
         intervals",
        prop.redrawn, prop.samples, prop.seed
    ));
    for (mc, lin) in prop.monte_carlo.iter().zip(&prop.linear) {
        assumptions.push(format!(
            "ring chain at confidence {}: Monte Carlo [{:.6}, {:.6}], first-order \
             propagation [{:.6}, {:.6}] (central value {:.6})",
            mc.confidence, mc.low, mc.high, lin.low, lin.high, prop.central_value
        ));
    }
    Ok(DerivedRadii {
        intervals: prop.monte_carlo.clone(),
        ring: Some(prop),
        assumptions,
    })
}
