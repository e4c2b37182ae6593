//! A checked, compiled metric file ([`FileMetricSpec`]) and a metric built from it at one
//! parameter point ([`FileMetric`]), which implements [`Metric`] like any Rust metric.

use super::program::Program;
use super::resolve::{Node, Var};
use crate::error::MetricError;
use crate::metric::{
    check_separation, numerical_outer_horizon, Capabilities, Declared, DeclaredHorizon, Metric,
    MetricComponents, MetricInfo, SphericalFunctions, Symmetry,
};
use crate::scalar::{sin_cos, DualScalar};
use std::path::{Path, PathBuf};

/// A published value a metric file states for a regression check (parsed, not evaluated).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct CheckValue {
    /// What is checked, named as in `docs/regression-checks.md`, e.g. `photon_sphere_radius`.
    pub quantity: String,
    /// Parameter values at which it holds (by name; the rest take their defaults).
    pub parameters: Vec<(String, f64)>,
    /// Observer inclination in degrees, for quantities of a shadow (as written in the file).
    pub inclination: Option<f64>,
    /// The published value.
    pub value: f64,
    /// Allowed absolute deviation.
    pub tolerance: f64,
    /// Where the value is published.
    pub source: String,
}

/// The horizon rule of a file.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum HorizonRule {
    /// The closed form given in the file (a function of the parameters).
    ClosedForm(Node),
    /// The default numerical finder, [`numerical_outer_horizon`].
    Numerical,
}

/// A metric file, parsed, name-checked and ready to be instantiated at parameter values.
#[derive(Debug, Clone, PartialEq)]
pub struct FileMetricSpec {
    pub(crate) info: MetricInfo,
    pub(crate) path: Option<PathBuf>,
    pub(crate) symmetry: Symmetry,
    pub(crate) equatorial: bool,
    pub(crate) helper_names: Vec<String>,
    pub(crate) helpers: Vec<Node>,
    /// `[A, B, C]` (spherical) or `[g_tt, g_tφ, g_rr, g_θθ, g_φφ]` (axisymmetric).
    pub(crate) line_element: Vec<Node>,
    pub(crate) horizon: HorizonRule,
    /// Radial and polar potentials.
    pub(crate) separation: Option<[Node; 2]>,
    pub(crate) checks: Vec<CheckValue>,
}

impl FileMetricSpec {
    /// Name, title, reference and parameter specifications.
    pub fn info(&self) -> &MetricInfo {
        &self.info
    }

    /// The file it was read from, if any.
    pub fn path(&self) -> Option<&Path> {
        self.path.as_deref()
    }

    /// The declared symmetry.
    pub fn symmetry(&self) -> Symmetry {
        self.symmetry
    }

    /// Whether the file declares θ → π − θ symmetry (always true for spherical files).
    pub fn is_equatorially_symmetric(&self) -> bool {
        self.equatorial
    }

    /// Whether the file gives separation data (radial and polar potentials).
    pub fn is_separable(&self) -> bool {
        self.separation.is_some()
    }

    /// The structure the file declares: its symmetry, equatorial symmetry and whether it
    /// gives separation data; what every metric built from it declares.
    pub fn capabilities(&self) -> Capabilities {
        Capabilities {
            spherical: self.symmetry == Symmetry::Spherical,
            separable: self.separation.is_some(),
            equatorially_symmetric: self.equatorial,
        }
    }

    /// Whether the file gives a closed-form outer horizon (otherwise it is found numerically).
    pub fn has_closed_form_horizon(&self) -> bool {
        matches!(self.horizon, HorizonRule::ClosedForm(_))
    }

    /// Names of the helper expressions, in evaluation order.
    pub fn helper_names(&self) -> &[String] {
        &self.helper_names
    }

    /// The published check values stated in the file.
    pub fn checks(&self) -> &[CheckValue] {
        &self.checks
    }

    /// The metric at the given `name=value` assignments (defaults for the rest), checked by
    /// [`MetricInfo::resolve`] (names, repeats, finiteness, domains).
    pub fn instantiate(&self, assignments: &[(String, f64)]) -> Result<FileMetric, MetricError> {
        let values = self.info.resolve(assignments)?;
        let metric = self.build(values);
        if let (HorizonRule::ClosedForm(_), Some(r)) = (&self.horizon, metric.horizon) {
            // A closed-form horizon must be a positive radius where g^rr vanishes (checked
            // on the equator, where the default finder looks too).
            let g_rr_inverse = 1.0 / metric.components(r, std::f64::consts::FRAC_PI_2).g_rr;
            if !(r > 0.0 && g_rr_inverse.is_finite() && g_rr_inverse.abs() <= 1e-8) {
                return Err(MetricError::HorizonNotAZero {
                    metric: self.info.name.clone(),
                    radius: r,
                    g_rr_inverse,
                });
            }
        }
        if self.separation.is_some() {
            // Separation data that do not belong to the line element would give the
            // separable solver a shadow of another spacetime (docs/metric-files.md).
            check_separation(&metric).map_err(|e| MetricError::SeparationMismatch {
                metric: self.info.name.clone(),
                at: super::load::parameter_list(&self.info, &metric.values, " at "),
                problem: e.to_string(),
            })?;
        }
        Ok(metric)
    }

    /// The metric at the defaults.
    pub fn instantiate_defaults(&self) -> FileMetric {
        self.build(self.info.parameters.iter().map(|p| p.default).collect())
    }

    /// Compile every expression at `values` (already checked).
    pub(crate) fn build(&self, values: Vec<f64>) -> FileMetric {
        let line_inputs: &[Var] = match self.symmetry {
            Symmetry::Spherical => &[Var::R],
            Symmetry::StationaryAxisymmetric => &[Var::R, Var::Theta],
        };
        let outputs: Vec<&Node> = self.line_element.iter().collect();
        let line = Program::compile(line_inputs, &outputs, &values, &self.helpers);
        let separation = self.separation.as_ref().map(|[radial, polar]| {
            [
                Program::compile(
                    &[Var::R, Var::Lambda, Var::Eta],
                    &[radial],
                    &values,
                    &self.helpers,
                ),
                Program::compile(
                    &[Var::Theta, Var::Lambda, Var::Eta],
                    &[polar],
                    &values,
                    &self.helpers,
                ),
            ]
        });
        let mut metric = FileMetric {
            info: self.info.clone(),
            values,
            symmetry: self.symmetry,
            capabilities: self.capabilities(),
            line,
            separation,
            horizon: None,
        };
        metric.horizon = match &self.horizon {
            HorizonRule::ClosedForm(node) => {
                let p = Program::compile(&[], &[node], &metric.values, &self.helpers);
                let [r]: [f64; 1] = p.run::<f64, 0, 1>([]);
                r.is_finite().then_some(r)
            }
            HorizonRule::Numerical => numerical_outer_horizon(&metric),
        };
        metric
    }
}

/// A metric defined by a file, at one parameter point. Implements [`Metric`], so it is a
/// [`Spacetime`](crate::metric::Spacetime) with Christoffel symbols, horizons and every
/// solver, with exact dual-number derivatives of the file's formulas.
#[derive(Debug, Clone, PartialEq)]
pub struct FileMetric {
    info: MetricInfo,
    values: Vec<f64>,
    symmetry: Symmetry,
    capabilities: Capabilities,
    line: Program,
    separation: Option<[Program; 2]>,
    horizon: Option<f64>,
}

impl FileMetric {
    /// Registers used by the compiled line element (for diagnostics and benchmarks).
    pub fn line_element_registers(&self) -> usize {
        self.line.registers()
    }

    /// Instructions of the compiled line element.
    pub fn line_element_instructions(&self) -> usize {
        self.line.len()
    }
}

impl Declared for FileMetric {
    fn declared_info(&self) -> MetricInfo {
        self.info.clone()
    }

    fn declared_values(&self) -> Vec<f64> {
        self.values.clone()
    }

    /// Computed once when the metric was built: the file's closed form, or the numerical
    /// finder.
    fn declared_horizon(&self) -> DeclaredHorizon {
        DeclaredHorizon::Known(self.horizon)
    }
}

impl Metric for FileMetric {
    #[inline]
    fn components<D: DualScalar>(&self, r: D, theta: D) -> MetricComponents<D> {
        match self.symmetry {
            Symmetry::Spherical => {
                let [a, b, c] = self.line.run::<D, 1, 3>([r]);
                let s = sin_cos(theta).0;
                MetricComponents {
                    g_tt: -a,
                    g_tphi: D::from(0.0),
                    g_rr: b,
                    g_thth: c,
                    g_phph: c * s * s,
                }
            }
            Symmetry::StationaryAxisymmetric => {
                let [g_tt, g_tphi, g_rr, g_thth, g_phph] = self.line.run::<D, 2, 5>([r, theta]);
                MetricComponents {
                    g_tt,
                    g_tphi,
                    g_rr,
                    g_thth,
                    g_phph,
                }
            }
        }
    }

    fn capabilities(&self) -> Capabilities {
        self.capabilities
    }

    fn spherical_functions<D: DualScalar>(&self, r: D) -> Option<SphericalFunctions<D>> {
        if self.symmetry != Symmetry::Spherical {
            return None;
        }
        let [a, b, c] = self.line.run::<D, 1, 3>([r]);
        Some(SphericalFunctions { a, b, c })
    }

    fn radial_potential<D: DualScalar>(&self, r: D, lambda: D, eta: D) -> Option<D> {
        let [radial, _] = self.separation.as_ref()?;
        let [v] = radial.run::<D, 3, 1>([r, lambda, eta]);
        Some(v)
    }

    fn polar_potential<D: DualScalar>(&self, theta: D, lambda: D, eta: D) -> Option<D> {
        let [_, polar] = self.separation.as_ref()?;
        let [v] = polar.run::<D, 3, 1>([theta, lambda, eta]);
        Some(v)
    }
}
