//! The TOML schema of a metric file, as serde structures. Unknown keys are errors
//! (`deny_unknown_fields`); expression fields keep their spans so errors can point into them.

use serde::Deserialize;
use std::collections::BTreeMap;
use toml::Spanned;

/// A whole metric file.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct FileSchema {
    /// Command-line name, e.g. `bardeen`.
    pub name: Spanned<String>,
    /// Human title.
    pub title: String,
    /// Literature reference of the line element.
    pub reference: String,
    /// `"spherical"` or `"axisymmetric"`.
    pub symmetry: Spanned<String>,
    /// Symmetry under θ → π − θ (spherical files always have it).
    #[serde(default)]
    pub equatorial_symmetry: Option<Spanned<bool>>,
    /// Parameters in order.
    #[serde(default)]
    pub parameters: Vec<ParameterSchema>,
    /// Helpers `"NAME = expression"`, evaluated in order.
    #[serde(default)]
    pub helpers: Vec<Spanned<String>>,
    /// The line element.
    pub line_element: Spanned<LineElementSchema>,
    /// Closed form of the outer horizon radius, in the parameters only.
    #[serde(default)]
    pub horizon: Option<Spanned<String>>,
    /// Separation data.
    #[serde(default)]
    pub separation: Option<Spanned<SeparationSchema>>,
    /// Published check values.
    #[serde(default)]
    pub checks: Vec<CheckSchema>,
}

/// One parameter.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ParameterSchema {
    pub name: Spanned<String>,
    pub default: Spanned<f64>,
    /// Interval notation, e.g. `"[0, 1]"`, `"(0, inf)"`; absent means every real number.
    #[serde(default)]
    pub domain: Option<Spanned<String>>,
    pub meaning: String,
}

/// The line-element functions: `A, B, C` (spherical) or the five components (axisymmetric).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct LineElementSchema {
    #[serde(rename = "A")]
    pub a: Option<Spanned<String>>,
    #[serde(rename = "B")]
    pub b: Option<Spanned<String>>,
    #[serde(rename = "C")]
    pub c: Option<Spanned<String>>,
    pub g_tt: Option<Spanned<String>>,
    pub g_tphi: Option<Spanned<String>>,
    pub g_rr: Option<Spanned<String>>,
    pub g_thth: Option<Spanned<String>>,
    pub g_phph: Option<Spanned<String>>,
}

/// Separation data: the radial and polar potentials.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SeparationSchema {
    /// R(r; λ, η).
    pub radial: Spanned<String>,
    /// Θ(θ; λ, η).
    pub polar: Spanned<String>,
}

/// A published check value.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CheckSchema {
    pub quantity: String,
    #[serde(default)]
    pub parameters: BTreeMap<String, Spanned<f64>>,
    /// Observer inclination in degrees, for quantities of a shadow.
    #[serde(default)]
    pub inclination: Option<f64>,
    pub value: f64,
    pub tolerance: f64,
    pub source: String,
}
