//! Posteriors on a metric's parameters from one or several measured black holes.
//!
//! The model: the metric's deviation parameters are shared by every source; each source has
//! its own spin (the metric parameter `a`, if any), inclination and, for a ring measurement,
//! its calibration κ and angular scale (mass and distance, or θ_g), all with priors
//! ([`parameters`]). For a parameter vector x the log-posterior is
//!
//! ln p(x | data) = Σ_params ln π(x_i) + Σ_sources ln L_k(r_k, ΔC_k; x) + const,
//!
//! with r_k and ΔC_k the size and circularity deviation of the critical curve of source k's
//! metric seen at its inclination (the curve-only solve, [`crate::shadow::solve_classified`]),
//! and L_k the source's likelihood ([`source`]). A point whose metric has no shadow, or no
//! horizon when one is required, has zero likelihood; a point where the solver fails is
//! counted and reported, and also given zero likelihood (never a made-up value).
//!
//! Metrics whose shadow needs the ray tracer are refused for now: a likelihood evaluated by
//! ray tracing at every sample would take hours; an interpolated table over the sampled
//! parameters, with its error estimated and reported, is the planned route.
//!
//! ```
//! use umbral::measurement::Measurement;
//! use umbral::metrics::MetricSource;
//! use umbral::posterior::{InferenceRequest, PosteriorModel};
//! use umbral::sampling::Prior;
//! let m = Measurement::from_toml_str("[size.shadow_radius]\nvalue = 5.0\nsigma = 0.2\n").unwrap();
//! let request = InferenceRequest::new(
//!     MetricSource::builtin("reissner-nordstrom").unwrap(),
//!     vec![("q".into(), Prior::parse("uniform:0:1").unwrap())],
//!     vec![m],
//! );
//! let model = PosteriorModel::new(&request).unwrap();
//! assert_eq!(model.names(), vec!["q"]);
//! // The Schwarzschild radius 3√3 = 5.196 is about one sigma above the measured 5.0.
//! let at_zero = model.evaluate(&[0.0]);
//! let at_half = model.evaluate(&[0.5]); // r_sh(0.5) = 4.968, 0.16 sigma from 5.0
//! assert!(at_half.log_posterior > at_zero.log_posterior);
//! ```

pub mod infer;
pub mod parameters;
pub mod source;

pub use infer::{
    infer_on, Evaluator, Evidence, InferRunError, InferSettings, Inference, ParallelEvaluator,
    ParameterSummary, QuadratureReport, SamplerKind,
};
pub use parameters::{Parameter, Role};
pub use source::{RingValues, SourceTerm};

use crate::bounds::SizeMeasure;
use crate::error::MetricError;
use crate::measurement::Measurement;
use crate::metric::Symmetry;
use crate::metrics::MetricSource;
use crate::sampling::Prior;
use crate::shadow::{self, Observer, PointShadow, ShadowSettings, SolverChoice};

/// What to infer: the metric, the priors given, the measured sources and how shadows are
/// computed.
#[derive(Debug, Clone)]
pub struct InferenceRequest {
    /// The metric (built-in or from a metric file).
    pub metric: MetricSource,
    /// Priors as given (`NAME` or `NAME@K`, see [`parameters`]); the rest take the defaults.
    pub priors: Vec<(String, Prior)>,
    /// The measured sources, in order (source 1 first).
    pub sources: Vec<Measurement>,
    /// The size the measurements constrain.
    pub size_measure: SizeMeasure,
    /// Points and tolerance of every critical curve (the solver is chosen automatically).
    pub shadow: ShadowSettings,
    /// Give zero likelihood to objects without a horizon even where they cast a shadow.
    pub require_horizon: bool,
}

/// Points per critical curve in a likelihood evaluation: the mean radius of a smooth curve
/// converges spectrally in the number of points, and at 64 it agrees with 256 to below 1e-9 M
/// for Kerr up to a = 0.99 (tests/posterior.rs checks this).
pub const LIKELIHOOD_POINTS: usize = 64;

impl InferenceRequest {
    /// A request with the default size measure (mean radius), [`LIKELIHOOD_POINTS`] points
    /// at 1e-8 M, and horizonless objects evaluated where they cast a shadow.
    pub fn new(
        metric: MetricSource,
        priors: Vec<(String, Prior)>,
        sources: Vec<Measurement>,
    ) -> Self {
        InferenceRequest {
            metric,
            priors,
            sources,
            size_measure: SizeMeasure::Mean,
            shadow: ShadowSettings {
                points: LIKELIHOOD_POINTS,
                tolerance: 1e-8,
                solver: SolverChoice::AUTO,
            },
            require_horizon: false,
        }
    }
}

/// Why a model could not be set up.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum InferError {
    /// No source was given.
    #[error("give at least one measurement")]
    NoSources,
    /// A prior names no parameter, or does not suit it.
    #[error("--prior {name}: {problem}")]
    Prior {
        /// The name as given.
        name: String,
        /// What is wrong.
        problem: String,
    },
    /// A measurement defines no usable likelihood.
    #[error("measurement {number}: {problem}")]
    Measurement {
        /// The source, from 1.
        number: usize,
        /// What is wrong.
        problem: String,
    },
    /// The metric cannot be built at a prior's point.
    #[error("the metric: {0}")]
    Metric(#[from] MetricError),
    /// The metric's shadow needs the ray tracer.
    #[error(
        "{0}: its shadow needs the ray tracer, and inference from ray-traced shadows (through an \
         interpolated table) is not available yet; use `umbral bound` or `umbral scan`"
    )]
    RayTraced(String),
    /// Nothing is sampled.
    #[error("every parameter is fixed: give a prior that is not fixed:V to at least one")]
    NothingToSample,
}

/// One evaluation of the log-posterior.
#[derive(Debug, Clone, PartialEq)]
pub struct Evaluation {
    /// ln prior + ln likelihood (−∞ outside the prior, for no shadow, or for a failure).
    pub log_posterior: f64,
    /// ln likelihood alone (−∞ likewise; NaN outside the prior, where it is not computed).
    pub log_likelihood: f64,
    /// Why the solver failed, if it did.
    pub failure: Option<String>,
}

/// The posterior of an [`InferenceRequest`], ready to evaluate.
#[derive(Debug, Clone)]
pub struct PosteriorModel {
    metric: MetricSource,
    parameters: Vec<Parameter>,
    /// Indices into `parameters` of the sampled (not fixed) ones, in order.
    sampled: Vec<usize>,
    terms: Vec<SourceTerm>,
    size_measure: SizeMeasure,
    shadow: ShadowSettings,
    require_horizon: bool,
}

impl PosteriorModel {
    /// Check the request and lay out its parameters.
    pub fn new(request: &InferenceRequest) -> Result<PosteriorModel, InferError> {
        if request.sources.is_empty() {
            return Err(InferError::NoSources);
        }
        let info = request.metric.info();
        let defaults: Vec<(String, f64)> = Vec::new();
        let probe = request.metric.build(&defaults)?;
        let spherical = probe.symmetry() == Symmetry::Spherical;
        let solver = shadow::auto_solver(probe.as_ref());
        if solver.name() == "raytrace" {
            return Err(InferError::RayTraced(request.metric.label()));
        }
        let parameters =
            parameters::parameters(&info, spherical, &request.sources, &request.priors)?;
        let sampled: Vec<usize> = (0..parameters.len())
            .filter(|&i| !parameters[i].prior.is_fixed())
            .collect();
        if sampled.is_empty() {
            return Err(InferError::NothingToSample);
        }
        let terms = request
            .sources
            .iter()
            .enumerate()
            .map(|(k, m)| SourceTerm::new(m, k))
            .collect::<Result<Vec<_>, _>>()?;
        Ok(PosteriorModel {
            metric: request.metric.clone(),
            parameters,
            sampled,
            terms,
            size_measure: request.size_measure,
            shadow: request.shadow,
            require_horizon: request.require_horizon,
        })
    }

    /// Every parameter (fixed ones included), in model order.
    pub fn parameters(&self) -> &[Parameter] {
        &self.parameters
    }

    /// The sampled parameters, in the order of a point's coordinates.
    pub fn sampled(&self) -> Vec<&Parameter> {
        self.sampled.iter().map(|&i| &self.parameters[i]).collect()
    }

    /// The sampled parameters' names, in the order of a point's coordinates.
    pub fn names(&self) -> Vec<&str> {
        self.sampled().iter().map(|p| p.name.as_str()).collect()
    }

    /// The priors of the sampled parameters, in order.
    pub fn priors(&self) -> Vec<Prior> {
        self.sampled().iter().map(|p| p.prior).collect()
    }

    /// The number of sources.
    pub fn sources(&self) -> usize {
        self.terms.len()
    }

    /// The same model with every shared metric parameter (not the spins) held at
    /// `value_of(name)`: the GR limit, for a Bayes factor. It may have nothing left to sample.
    pub fn with_shared_fixed(&self, value_of: impl Fn(&str) -> f64) -> PosteriorModel {
        let mut m = self.clone();
        for p in &mut m.parameters {
            if let Role::Shared(name) = &p.role {
                p.prior = Prior::Fixed(value_of(name));
            }
        }
        m.sampled = (0..m.parameters.len())
            .filter(|&i| !m.parameters[i].prior.is_fixed())
            .collect();
        m
    }

    /// What the model assumes, in words: the parameters and their priors, each source's
    /// likelihood, how shadows are computed.
    pub fn assumptions(&self) -> Vec<String> {
        let mut out = vec![format!(
            "metric: {}; its deviation parameters are shared by every source, the spin (a) and \
             inclination are each source's own",
            self.metric.label()
        )];
        for p in &self.parameters {
            let spec = match (&p.role, p.prior) {
                (Role::Inclination { .. }, Prior::Fixed(v)) => format!("fixed:{}", v.to_degrees()),
                (Role::Inclination { .. }, Prior::Isotropic { low, high }) => {
                    format!("isotropic:{}:{} (deg)", low.to_degrees(), high.to_degrees())
                }
                (Role::Inclination { .. }, prior) => format!("{prior} (rad)"),
                (_, prior) => prior.to_string(),
            };
            out.push(format!("prior {}: {spec}, from {}", p.name, p.origin));
        }
        for (k, t) in self.terms.iter().enumerate() {
            out.extend(t.describe(k));
        }
        out.push(format!(
            "shadows: {} of the critical curve about its area centroid, {} points at {:e} M, \
             curve-only solve, solver chosen automatically",
            match self.size_measure {
                SizeMeasure::Mean => "mean radius",
                SizeMeasure::Area => "area radius sqrt(Area/pi)",
            },
            self.shadow.points,
            self.shadow.tolerance
        ));
        out.push(if self.require_horizon {
            "points without a horizon or without a shadow have zero likelihood".into()
        } else {
            "points without a shadow have zero likelihood; a horizonless object counts where a \
             photon sphere bounds capture by its centre"
                .into()
        });
        out
    }

    /// The metric's description (names, defaults, reference).
    pub fn metric_info(&self) -> crate::metric::MetricInfo {
        self.metric.info()
    }

    /// The value of every parameter at a sampled point.
    fn full(&self, x: &[f64]) -> Vec<f64> {
        let mut values: Vec<f64> = self
            .parameters
            .iter()
            .map(|p| match p.prior {
                Prior::Fixed(v) => v,
                _ => f64::NAN,
            })
            .collect();
        for (&i, &v) in self.sampled.iter().zip(x) {
            values[i] = v;
        }
        values
    }

    /// ln prior of a sampled point.
    pub fn log_prior(&self, x: &[f64]) -> f64 {
        self.sampled
            .iter()
            .zip(x)
            .map(|(&i, &v)| self.parameters[i].prior.log_density(v))
            .sum()
    }

    /// The log-posterior (and its parts) at a sampled point.
    pub fn evaluate(&self, x: &[f64]) -> Evaluation {
        let log_prior = self.log_prior(x);
        if !log_prior.is_finite() {
            return Evaluation {
                log_posterior: f64::NEG_INFINITY,
                log_likelihood: f64::NAN,
                failure: None,
            };
        }
        let values = self.full(x);
        let mut total = 0.0;
        for (k, term) in self.terms.iter().enumerate() {
            match self.source_log_likelihood(k, term, &values) {
                Ok(l) => total += l,
                Err(failure) => {
                    return Evaluation {
                        log_posterior: f64::NEG_INFINITY,
                        log_likelihood: f64::NEG_INFINITY,
                        failure: Some(failure),
                    }
                }
            }
            if total == f64::NEG_INFINITY {
                break;
            }
        }
        Evaluation {
            log_posterior: log_prior + total,
            log_likelihood: total,
            failure: None,
        }
    }

    /// What source `k` sees at the full parameter values: its metric's assignments, its
    /// inclination and its ring nuisances.
    fn source_point(&self, k: usize, values: &[f64]) -> (Vec<(String, f64)>, f64, RingValues) {
        let mut assignments = Vec::new();
        let mut inclination = std::f64::consts::FRAC_PI_2;
        let mut ring = RingValues::default();
        for (p, &v) in self.parameters.iter().zip(values) {
            match &p.role {
                Role::Shared(name) => assignments.push((name.clone(), v)),
                Role::Spin { source } if *source == k => {
                    assignments.push((parameters::SPIN.to_string(), v))
                }
                Role::Inclination { source } if *source == k => inclination = v,
                Role::Ring { source, what } if *source == k => match *what {
                    parameters::KAPPA => ring.kappa = v,
                    parameters::MASS => ring.mass_msun = v,
                    parameters::DISTANCE => ring.distance_mpc = v,
                    _ => ring.theta_g_uas = v,
                },
                _ => {}
            }
        }
        (assignments, inclination, ring)
    }

    /// Source `k`'s ln L at the full parameter values; `Err` names a solver failure.
    fn source_log_likelihood(
        &self,
        k: usize,
        term: &SourceTerm,
        values: &[f64],
    ) -> Result<f64, String> {
        let (assignments, inclination, ring) = self.source_point(k, values);
        // Outside the metric's domain (a prior wider than the domain) there is no metric.
        let Ok(spacetime) = self.metric.build(&assignments) else {
            return Ok(f64::NEG_INFINITY);
        };
        let observer = Observer::distant(inclination);
        let classified = shadow::solve_classified(
            spacetime.as_ref(),
            &observer,
            &self.shadow,
            self.require_horizon,
        )
        .map_err(|e| format!("source {}: {e}", k + 1))?;
        let PointShadow::Shadow { result, .. } = classified else {
            return Ok(f64::NEG_INFINITY);
        };
        let (size, delta_c) = crate::bounds::measure_curve(
            &result,
            spacetime.as_ref(),
            self.size_measure,
            term.needs_circularity(),
        )
        .map_err(|e| format!("source {}: {e}", k + 1))?;
        Ok(term.log_likelihood(size, delta_c, &ring))
    }
}
