//! What an observation measured, turned into intervals on the shadow radius r_sh/M.
//!
//! A measurement file (TOML) gives exactly one size form:
//!
//! * `[size.shadow_radius]`: intervals on r_sh/M at stated confidence levels, used as given;
//! * `[size.fractional_deviation]`: δ = r_sh/(3√3) − 1 with asymmetric Gaussian errors
//!   `value`, `minus`, `plus`; the interval at level p is
//!   [value − z_p·minus, value + z_p·plus] with z_p the two-sided Gaussian multiplier
//!   (the usual reading of quoted asymmetric errors; common practice, no source), then
//!   r_sh = 3√3 (1 + δ);
//! * `[size.ring]`: the chain from the image, r_sh/M = d_ring / (κ · 2θ_g) (see [`ring`]),
//!
//! and optionally `[circularity] max = ...`, an upper limit on ΔC.
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

pub mod constants;
pub mod gaussian;
pub mod ring;

use crate::numfmt::Num;
use crate::observables::SCHWARZSCHILD_SHADOW_RADIUS;
use gaussian::two_sided_z;
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

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileShadowRadius {
    intervals: Vec<RadiusInterval>,
}

/// δ = r_sh/(3√3) − 1 with asymmetric Gaussian errors.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FractionalDeviation {
    /// The central value of δ.
    pub value: f64,
    /// The error below the value (one standard deviation, not negative).
    pub minus: f64,
    /// The error above the value (one standard deviation, not negative).
    pub plus: f64,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileRing {
    diameter_uas: Gaussian,
    ring_to_shadow: Gaussian,
    mass_msun: Option<Gaussian>,
    theta_g_uas: Option<Gaussian>,
    distance_mpc: Option<Gaussian>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileSize {
    shadow_radius: Option<FileShadowRadius>,
    fractional_deviation: Option<FractionalDeviation>,
    ring: Option<FileRing>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileCircularity {
    max: f64,
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
    /// δ = r_sh/(3√3) − 1 with asymmetric errors.
    FractionalDeviation(FractionalDeviation),
    /// The chain from the ring image, r_sh/M = d_ring / (κ · 2θ_g).
    Ring(RingChain),
}

/// A validated measurement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Measurement {
    /// A free-text label from the file (empty if none).
    pub label: String,
    /// The size part: exactly one of the three forms.
    pub size: SizeMeasurement,
    /// Upper limit on the circularity deviation ΔC, if any.
    pub circularity_max: Option<f64>,
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
fn check_shadow_radius(s: &FileShadowRadius) -> Result<(), MeasurementError> {
    if s.intervals.is_empty() {
        return Err(MeasurementError::Invalid(
            "size.shadow_radius.intervals is empty".into(),
        ));
    }
    for (k, iv) in s.intervals.iter().enumerate() {
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
        if s.intervals[..k]
            .iter()
            .any(|o| o.confidence == iv.confidence)
        {
            return Err(MeasurementError::Invalid(format!(
                "size.shadow_radius: confidence {} given twice",
                iv.confidence
            )));
        }
    }
    Ok(())
}

/// `[size.fractional_deviation]`: finite, with non-negative errors.
fn check_fractional_deviation(f: &FractionalDeviation) -> Result<(), MeasurementError> {
    finite("size.fractional_deviation.value", f.value)?;
    for (what, x) in [("minus", f.minus), ("plus", f.plus)] {
        if finite(&format!("size.fractional_deviation.{what}"), x)? < 0.0 {
            return Err(MeasurementError::Invalid(format!(
                "size.fractional_deviation.{what} must not be negative, got {}",
                Num(x)
            )));
        }
    }
    Ok(())
}

/// `[size.ring]`: the ring chain, with one angular scale (mass and distance, or θ_g).
fn ring_chain(r: FileRing) -> Result<RingChain, MeasurementError> {
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
    let chain = RingChain {
        diameter_uas: r.diameter_uas,
        ring_to_shadow: r.ring_to_shadow,
        scale,
    };
    chain.validate()?;
    Ok(chain)
}

impl Measurement {
    /// Read and validate a measurement file.
    pub fn from_path(path: &Path) -> Result<Self, MeasurementError> {
        let text = crate::input::read_text(path).map_err(|e| MeasurementError::Io {
            path: path.display().to_string(),
            message: e.to_string(),
        })?;
        Self::from_toml_str(&text).map_err(|e| match e {
            MeasurementError::Parse(m) => {
                MeasurementError::Parse(format!("'{}': {m}", path.display()))
            }
            other => other,
        })
    }

    /// Parse and validate measurement TOML.
    pub fn from_toml_str(text: &str) -> Result<Self, MeasurementError> {
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
        ];
        let count = forms.iter().filter(|&&b| b).count();
        if count != 1 {
            return Err(MeasurementError::Invalid(format!(
                "give exactly one size form ([size.shadow_radius], [size.fractional_deviation] \
                 or [size.ring]), found {count}"
            )));
        }
        let size = if let Some(s) = file.size.shadow_radius {
            check_shadow_radius(&s)?;
            SizeMeasurement::ShadowRadius(s.intervals)
        } else if let Some(f) = file.size.fractional_deviation {
            check_fractional_deviation(&f)?;
            SizeMeasurement::FractionalDeviation(f)
        } else if let Some(r) = file.size.ring {
            SizeMeasurement::Ring(ring_chain(r)?)
        } else {
            unreachable!("exactly one size form was checked above")
        };
        let circularity_max = match file.circularity {
            Some(c) => {
                let max = finite("circularity.max", c.max)?;
                if max <= 0.0 {
                    return Err(MeasurementError::Invalid(format!(
                        "circularity.max must be positive, got {}",
                        Num(max)
                    )));
                }
                Some(max)
            }
            None => None,
        };
        Ok(Measurement {
            label: file.label,
            size,
            circularity_max,
        })
    }

    /// The r_sh/M intervals at `levels` (default: the file's levels for the shadow-radius
    /// form, [`DEFAULT_LEVELS`] otherwise).
    ///
    /// Every derived interval must be finite with 0 < low ≤ high (the ring chain's linear
    /// cross-check too), and intervals at higher confidence must contain those at lower
    /// confidence; anything else is an error, not a bound.
    pub fn derive(&self, levels: Option<&[f64]>) -> Result<DerivedRadii, MeasurementError> {
        let derived = self.derive_intervals(levels)?;
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
            SizeMeasurement::FractionalDeviation(f) => fractional_intervals(f, levels),
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

/// Shadow-radius intervals 3√3 (1 + δ) from a fractional deviation δ at `levels`.
fn fractional_intervals(
    f: &FractionalDeviation,
    levels: Option<&[f64]>,
) -> Result<DerivedRadii, MeasurementError> {
    let mut assumptions = Vec::new();
    let ls = levels.unwrap_or(&DEFAULT_LEVELS);
    let mut intervals = Vec::new();
    for &confidence in ls {
        let z = two_sided_z(confidence)
            .ok_or_else(|| MeasurementError::Invalid(format!("bad confidence {confidence}")))?;
        let (dlo, dhi) = (f.value - z * f.minus, f.value + z * f.plus);
        let low = SCHWARZSCHILD_SHADOW_RADIUS * (1.0 + dlo);
        let high = SCHWARZSCHILD_SHADOW_RADIUS * (1.0 + dhi);
        if !(low > 0.0 && low < high) {
            return Err(MeasurementError::Invalid(format!(
                "fractional deviation {} -{} +{} gives no positive shadow-radius \
                 interval at confidence {confidence} ([{low}, {high}])",
                f.value, f.minus, f.plus
            )));
        }
        assumptions.push(format!(
            "size: delta = {} -{} +{} read as [value - z minus, value + z plus] \
             with z = {z:.6} at confidence {confidence}: delta in [{dlo:.6}, \
             {dhi:.6}], r_sh/M = 3 sqrt(3) (1 + delta) in [{low:.6}, {high:.6}]",
            f.value, f.minus, f.plus
        ));
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
        "size: r_sh/M = d_ring / (kappa 2 theta_g) with d_ring = {} +- {} uas, \
         kappa = ring/shadow diameter = {} +- {} (calibration from the user's \
         emission modelling), {scale}",
        chain.diameter_uas.value,
        chain.diameter_uas.sigma,
        chain.ring_to_shadow.value,
        chain.ring_to_shadow.sigma
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
