//! Where the ring-to-shadow factor κ comes from.
//!
//! In `[size.ring]`, `ring_to_shadow` is one of
//! - `{ value = ..., sigma = ... }`: the user's own emission modelling;
//! - `"computed"`: computed by umbral from images of its emission models (the command line
//!   runs the calibration before the bound or posterior), with a `[size.ring.calibration]`
//!   table: `inclination_deg` and `resolution_uas` (required), `metric` (default `"kerr"`),
//!   `parameters` (a table of the metric's parameters, default none), `models` (a model-list
//!   file relative to the measurement file, default the built-in list), `pixels` and
//!   `field_m`; the angular scale θ_g for the blur is the measurement's central value;
//! - a path (relative to the measurement file) to a file written by `umbral calibrate --out`.
//!
//! In both computed cases κ is the mean over the models and its sigma their standard
//! deviation (the spread between emission models stands for the modelling uncertainty; a
//! choice, stated in the printed assumptions).

use super::{Gaussian, MeasurementError};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The `format` value of a calibration file.
pub const CALIBRATION_FORMAT: &str = "umbral ring-to-shadow calibration";

/// The mean and spread of κ over a calibration's models.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct KappaSummary {
    /// Mean of κ over the models.
    pub mean: f64,
    /// Sample standard deviation of κ over the models (0 for one model).
    pub spread: f64,
    /// Smallest κ.
    pub min: f64,
    /// Largest κ.
    pub max: f64,
    /// Models that gave a κ.
    pub models: usize,
}

impl KappaSummary {
    /// The summary of `values`; `None` if there are none or any is not finite.
    ///
    /// ```
    /// use umbral::measurement::calibration::KappaSummary;
    /// let s = KappaSummary::of(&[1.0, 1.2]).unwrap();
    /// assert!((s.mean - 1.1).abs() < 1e-15);
    /// assert!((s.spread - 0.02f64.sqrt()).abs() < 1e-15);
    /// ```
    pub fn of(values: &[f64]) -> Option<KappaSummary> {
        if values.is_empty() || values.iter().any(|v| !v.is_finite()) {
            return None;
        }
        let n = values.len() as f64;
        let mean = values.iter().sum::<f64>() / n;
        let spread = if values.len() > 1 {
            (values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
        } else {
            0.0
        };
        Some(KappaSummary {
            mean,
            spread,
            min: values.iter().copied().fold(f64::INFINITY, f64::min),
            max: values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            models: values.len(),
        })
    }
}

/// What a calibration was run on: the part of a calibration file a measurement reads.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CalibrationSummary {
    /// [`CALIBRATION_FORMAT`].
    pub format: String,
    /// The umbral version that wrote it.
    pub umbral_version: String,
    /// The metric's name.
    pub metric: String,
    /// The metric's parameters.
    pub parameters: BTreeMap<String, f64>,
    /// Observer inclination, in degrees.
    pub inclination_deg: f64,
    /// Blur FWHM, in μas.
    pub resolution_uas: f64,
    /// θ_g used to convert the blur to M, in μas.
    pub theta_g_uas: f64,
    /// κ over the models.
    pub kappa: KappaSummary,
}

impl CalibrationSummary {
    /// One line saying where κ came from.
    pub fn describe(&self, origin: &str) -> String {
        let parameters = if self.parameters.is_empty() {
            String::new()
        } else {
            let list: Vec<String> = self
                .parameters
                .iter()
                .map(|(k, v)| format!("{k} = {v}"))
                .collect();
            format!(" ({})", list.join(", "))
        };
        format!(
            "kappa = {:.4} +- {:.4} computed by umbral ({origin}): the mean and standard \
             deviation over {} emission models of ring diameter / critical-curve diameter, \
             metric {}{parameters}, inclination {} deg, images blurred to {} uas FWHM at \
             theta_g = {} uas (range {:.4} to {:.4})",
            self.kappa.mean,
            self.kappa.spread,
            self.kappa.models,
            self.metric,
            self.inclination_deg,
            self.resolution_uas,
            self.theta_g_uas,
            self.kappa.min,
            self.kappa.max
        )
    }

    /// κ as the Gaussian the ring chain uses.
    pub fn kappa_gaussian(&self) -> Gaussian {
        Gaussian {
            value: self.kappa.mean,
            sigma: self.kappa.spread,
        }
    }

    /// Read the summary from a file written by `umbral calibrate --out`.
    pub fn read(path: &Path) -> Result<CalibrationSummary, MeasurementError> {
        let text = crate::input::read_text(path).map_err(|e| MeasurementError::Io {
            path: path.display().to_string(),
            message: e.to_string(),
        })?;
        let summary: CalibrationSummary = serde_json::from_str(&text).map_err(|e| {
            MeasurementError::Invalid(format!(
                "'{}' is not a calibration file written by umbral calibrate: {e}",
                path.display()
            ))
        })?;
        if summary.format != CALIBRATION_FORMAT {
            return Err(MeasurementError::Invalid(format!(
                "'{}' is not a calibration file (format '{}')",
                path.display(),
                summary.format
            )));
        }
        let k = summary.kappa;
        if !(k.mean.is_finite() && k.mean > 0.0 && k.spread.is_finite() && k.spread >= 0.0) {
            return Err(MeasurementError::Invalid(format!(
                "'{}' has no valid kappa (mean {}, spread {})",
                path.display(),
                k.mean,
                k.spread
            )));
        }
        Ok(summary)
    }
}

/// `[size.ring.calibration]`: how to compute κ (module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CalibrationRequest {
    /// Observer inclination, in degrees.
    pub inclination_deg: f64,
    /// Blur FWHM, in μas.
    pub resolution_uas: f64,
    /// The metric (default `kerr`).
    #[serde(default = "default_metric")]
    pub metric: String,
    /// The metric's parameters.
    #[serde(default)]
    pub parameters: BTreeMap<String, f64>,
    /// A model-list file (resolved against the measurement file's folder when read).
    pub models: Option<PathBuf>,
    /// Pixels per side of each image.
    pub pixels: Option<usize>,
    /// Field of view, in M.
    pub field_m: Option<f64>,
}

fn default_metric() -> String {
    "kerr".to_string()
}

impl CalibrationRequest {
    /// Check the numbers.
    pub fn validate(&self) -> Result<(), MeasurementError> {
        let bad = |m: String| {
            Err(MeasurementError::Invalid(format!(
                "size.ring.calibration: {m}"
            )))
        };
        if !(self.inclination_deg.is_finite() && (0.0..=180.0).contains(&self.inclination_deg)) {
            return bad(format!(
                "inclination_deg must lie in [0, 180], got {}",
                self.inclination_deg
            ));
        }
        if !(self.resolution_uas.is_finite() && self.resolution_uas > 0.0) {
            return bad(format!(
                "resolution_uas must be positive, got {}",
                self.resolution_uas
            ));
        }
        if let Some(f) = self.field_m {
            if !(f.is_finite() && f > 0.0) {
                return bad(format!("field_m must be positive, got {f}"));
            }
        }
        if self.pixels == Some(0) {
            return bad("pixels must be at least 1".into());
        }
        Ok(())
    }
}

/// Where κ comes from.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum KappaOrigin {
    /// The measurement file's `{ value, sigma }`.
    Given,
    /// A calibration file, read.
    File {
        /// The file.
        path: String,
        /// What it holds.
        summary: CalibrationSummary,
    },
    /// To be computed from images; until then the ring chain has no κ.
    Pending(CalibrationRequest),
    /// Computed from images for this run.
    Computed(CalibrationSummary),
}

impl KappaOrigin {
    /// The assumption line for κ.
    pub fn describe(&self, kappa: Gaussian) -> String {
        match self {
            KappaOrigin::Given => format!(
                "kappa = ring/shadow diameter = {} +- {} (calibration from the user's emission \
                 modelling)",
                kappa.value, kappa.sigma
            ),
            KappaOrigin::File { path, summary } => {
                summary.describe(&format!("calibration file '{path}'"))
            }
            KappaOrigin::Computed(summary) => summary.describe("computed for this run"),
            KappaOrigin::Pending(_) => "kappa not yet computed".to_string(),
        }
    }
}
