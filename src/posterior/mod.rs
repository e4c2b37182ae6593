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
//! For a metric whose shadow needs the ray tracer, tracing at every sample would take hours:
//! each source's size (and circularity deviation) is instead interpolated in a table over the
//! sampled parameters that determine its shadow ([`table`]), built once as a scan (the `table`
//! module of `scan`); the table's estimated interpolation error is reported, and a table whose
//! error exceeds a tenth of a measurement's sigma is refused.
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
pub mod report;
pub mod source;
pub mod table;

pub use infer::{
    infer_on, Evaluator, Evidence, InferRunError, InferSettings, Inference, ParallelEvaluator,
    ParameterSummary, QuadratureReport, SamplerKind,
};
pub use parameters::{Parameter, Role};
pub use source::{RingValues, SourceTerm};
pub use table::{ShadowTable, TableAxis, TableError};

use crate::bounds::SizeMeasure;
use crate::error::MetricError;
use crate::measurement::Measurement;
use crate::metric::Symmetry;
use crate::metrics::MetricSource;
use crate::numfmt::Num;
use crate::sampling::Prior;
use crate::shadow::{self, Observer, ShadowSettings, SolverChoice};

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
    /// Interpolate tables even when an exact solver applies (ray-traced metrics always are).
    pub tabulate: bool,
    /// Nodes per table axis.
    pub table_nodes: usize,
}

/// Nodes per table axis by default. A cubic's error falls as h⁴: over ε3 in [−1, 1] and a in
/// [0, 0.7] (Johannsen–Psaltis at 60°) the estimated size error was 1.6e-4 M with 13 nodes and
/// 4.5e-4 M with 9, far below a tenth of the sigma a ring measurement reaches (~1e-2 M), and 9
/// nodes trace half as many curves (81 in 60 s on 2 cores).
pub const TABLE_NODES: usize = 9;

/// Points per critical curve in a likelihood evaluation: the mean radius of a smooth curve
/// converges spectrally in the number of points, and at 64 it agrees with 256 to below 1e-9 M
/// for Kerr up to a = 0.99 (tests/posterior.rs checks this). Where the estimated sampling
/// error exceeds the boundary tolerance (Kerr a = 0.998 seen edge-on), the curve is solved
/// again with more points ([`crate::bounds::solve_sized`]).
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
            tabulate: false,
            table_nodes: TABLE_NODES,
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
    /// A table cannot be laid out for a source.
    #[error("table for source {number}: {problem}")]
    TableLayout {
        /// The source, from 1.
        number: usize,
        /// What is wrong.
        problem: String,
    },
    /// A table's estimated interpolation error is too large for a source's measurement.
    #[error(
        "table for source {number}: the estimated interpolation error of the {what} is {}, more \
         than a tenth of the measurement's sigma ({}); give more nodes (--table-nodes) or \
         narrower priors",
        Num(*.error),
        Num(*.limit)
    )]
    TableError {
        /// The source, from 1.
        number: usize,
        /// `size (r_sh/M)` or `circularity deviation`.
        what: &'static str,
        /// The estimated error.
        error: f64,
        /// A tenth of the sigma.
        limit: f64,
    },
    /// A table is unusable (a node without a shadow, a bad layout).
    #[error("table for source {number}: {problem}")]
    Table {
        /// The source, from 1.
        number: usize,
        /// The problem.
        problem: TableError,
    },
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
    /// Whether shadows come from tables (ray-traced metrics, or asked for).
    tabulated: bool,
    table_nodes: usize,
    /// The tables, one per source, once built ([`PosteriorModel::with_tables`]).
    tables: Vec<ShadowTable>,
    /// The tables of the GR limit ([`PosteriorModel::with_gr_tables`]).
    gr_tables: Vec<ShadowTable>,
}

/// `error <= limit`, false when either is NaN.
fn within(error: f64, limit: f64) -> bool {
    error <= limit
}

/// What one source's table spans: the scan that builds it.
#[derive(Debug, Clone, PartialEq)]
pub struct TablePlan {
    /// The source, from 0.
    pub source: usize,
    /// The axes: the model's parameter name, the metric parameter's name, the prior's
    /// support and the node count.
    pub axes: Vec<(TableAxis, String)>,
    /// The metric parameters held fixed.
    pub fixed: Vec<(String, f64)>,
    /// The observer's inclination, radians.
    pub inclination: f64,
    /// Whether the circularity deviation is tabulated too.
    pub circularity: bool,
}

/// A built table as the output reports it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TableReport {
    /// Which table (`table for source 1`, `the GR limit's table for source 1`).
    pub table: String,
    /// The source, from 1.
    pub source: usize,
    /// The axes as `name in [low, high] (N nodes)`.
    pub axes: Vec<String>,
    /// Nodes in all.
    pub nodes: usize,
    /// The leave-one-out estimate of the size's interpolation error, r_sh/M.
    pub size_error: f64,
    /// A tenth of the size measurement's sigma, r_sh/M (the most allowed).
    pub size_limit: f64,
    /// The estimate for the circularity deviation (null if not tabulated).
    pub circularity_error: Option<f64>,
    /// A tenth of the circularity limit's sigma (null for a hard cut or none).
    pub circularity_limit: Option<f64>,
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
        let traced = shadow::auto_solver(probe.as_ref()).name() == "raytrace";
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
            tabulated: traced || request.tabulate,
            table_nodes: request.table_nodes,
            tables: Vec::new(),
            gr_tables: Vec::new(),
        })
    }

    /// Whether the shadows come from tables, which [`PosteriorModel::with_tables`] must be
    /// given before the model is evaluated.
    pub fn needs_tables(&self) -> bool {
        self.tabulated
    }

    /// The metric.
    pub fn metric(&self) -> &MetricSource {
        &self.metric
    }

    /// Points and tolerance of every critical curve.
    pub fn shadow_settings(&self) -> ShadowSettings {
        self.shadow
    }

    /// The size the measurements constrain.
    pub fn size_measure(&self) -> SizeMeasure {
        self.size_measure
    }

    /// Whether horizonless objects have zero likelihood.
    pub fn require_horizon(&self) -> bool {
        self.require_horizon
    }

    /// What each source's table spans: the sampled shared metric parameters and the source's
    /// spin over their priors' supports, the rest fixed. A table needs a fixed inclination,
    /// bounded priors on its axes and at most two axes (the scans that build tables are 1-D
    /// or 2-D).
    pub fn table_plans(&self) -> Result<Vec<TablePlan>, InferError> {
        let mut plans = Vec::new();
        for (k, term) in self.terms.iter().enumerate() {
            let layout = |problem: String| InferError::TableLayout {
                number: k + 1,
                problem,
            };
            let mut plan = TablePlan {
                source: k,
                axes: Vec::new(),
                fixed: Vec::new(),
                inclination: std::f64::consts::FRAC_PI_2,
                circularity: term.needs_circularity(),
            };
            for p in &self.parameters {
                let metric_name = match &p.role {
                    Role::Shared(name) => name.clone(),
                    Role::Spin { source } if *source == k => parameters::SPIN.to_string(),
                    Role::Inclination { source } if *source == k => {
                        match p.prior {
                            Prior::Fixed(v) => plan.inclination = v,
                            _ => {
                                return Err(layout(format!(
                                    "{} is sampled, and tables over the inclination are not \
                                     available: fix it (--prior {}=fixed:DEG)",
                                    p.name, p.name
                                )))
                            }
                        }
                        continue;
                    }
                    _ => continue,
                };
                match p.prior {
                    Prior::Fixed(v) => plan.fixed.push((metric_name, v)),
                    prior => {
                        let (low, high) = prior.support();
                        if !(low.is_finite() && high.is_finite()) {
                            return Err(layout(format!(
                                "{} has the unbounded prior {prior}: a table needs a bounded \
                                 one (uniform, log-uniform)",
                                p.name
                            )));
                        }
                        let axis = TableAxis {
                            name: p.name.clone(),
                            low,
                            high,
                            count: self.table_nodes,
                        };
                        plan.axes.push((axis, metric_name));
                    }
                }
            }
            if plan.axes.len() > 2 {
                let names: Vec<&str> = plan.axes.iter().map(|(a, _)| a.name.as_str()).collect();
                return Err(layout(format!(
                    "{} sampled parameters determine its shadow ({}), and tables have at most \
                     two axes: fix the others",
                    names.len(),
                    names.join(", ")
                )));
            }
            plans.push(plan);
        }
        Ok(plans)
    }

    /// The model with its tables (one per source, in order): each table's estimated error
    /// must stay within a tenth of its source's sigma (size, in r_sh/M; circularity, for a
    /// soft limit).
    pub fn with_tables(mut self, tables: Vec<ShadowTable>) -> Result<PosteriorModel, InferError> {
        for (k, (term, table)) in self.terms.iter().zip(&tables).enumerate() {
            let number = k + 1;
            let size_limit = 0.1 * term.size_sigma(table.smallest_size());
            if !within(table.size_error(), size_limit) {
                return Err(InferError::TableError {
                    number,
                    what: "size (r_sh/M)",
                    error: table.size_error(),
                    limit: size_limit,
                });
            }
            if let Some(sigma) = term.circularity_sigma() {
                if table.has_circularity() && !within(table.circularity_error(), 0.1 * sigma) {
                    return Err(InferError::TableError {
                        number,
                        what: "circularity deviation",
                        error: table.circularity_error(),
                        limit: 0.1 * sigma,
                    });
                }
            }
        }
        self.tables = tables;
        Ok(self)
    }

    /// The built tables as the output reports them (none for direct shadows).
    pub fn table_reports(&self) -> Vec<TableReport> {
        self.reports(&self.tables, "")
    }

    /// The GR limit's tables as the output reports them (none unless built).
    pub fn gr_table_reports(&self) -> Vec<TableReport> {
        self.reports(&self.gr_tables, "the GR limit's ")
    }

    fn reports(&self, tables: &[ShadowTable], of: &str) -> Vec<TableReport> {
        self.terms
            .iter()
            .zip(tables)
            .enumerate()
            .map(|(k, (term, t))| TableReport {
                table: format!("{of}table for source {}", k + 1),
                source: k + 1,
                axes: t
                    .axes()
                    .iter()
                    .map(|a| {
                        format!(
                            "{} in [{}, {}] ({} nodes)",
                            a.name,
                            Num(a.low),
                            Num(a.high),
                            a.count
                        )
                    })
                    .collect(),
                nodes: t.nodes(),
                size_error: t.size_error(),
                size_limit: 0.1 * term.size_sigma(t.smallest_size()),
                circularity_error: t.has_circularity().then(|| t.circularity_error()),
                circularity_limit: term.circularity_sigma().map(|s| 0.1 * s),
            })
            .collect()
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
        // Tables hold the shared parameters where this model samples or fixes them: they do
        // not serve the new values (a tabulated model held this way needs its own tables).
        m.tables = Vec::new();
        m.gr_tables = Vec::new();
        m
    }

    /// The GR limit for a Bayes factor: every shared metric parameter held at the metric's
    /// default (its GR value), the spins and nuisances as in this model. A tabulated model's
    /// GR limit interpolates the GR tables ([`PosteriorModel::with_gr_tables`]); without them
    /// it has none, and evaluates to a failure.
    pub fn gr_model(&self) -> PosteriorModel {
        let defaults = self.metric.info().parameters;
        let gr_value = |name: &str| {
            defaults
                .iter()
                .find(|p| p.name == name)
                .map_or(0.0, |p| p.default)
        };
        let mut gr = self.with_shared_fixed(gr_value);
        gr.tables = self.gr_tables.clone();
        gr
    }

    /// Whether a tabulated model's GR limit has its tables.
    pub fn has_gr_tables(&self) -> bool {
        !self.tabulated || !self.gr_tables.is_empty()
    }

    /// The model with the tables of its GR limit (built from [`PosteriorModel::gr_model`]'s
    /// plans), checked like [`PosteriorModel::with_tables`].
    pub fn with_gr_tables(
        mut self,
        tables: Vec<ShadowTable>,
    ) -> Result<PosteriorModel, InferError> {
        let checked = self.gr_model().with_tables(tables)?;
        self.gr_tables = checked.tables;
        Ok(self)
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
                (Role::Inclination { .. }, Prior::Fixed(v)) => {
                    format!("fixed:{} (deg)", crate::sampling::prior::degrees(v))
                }
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
             {}",
            match self.size_measure {
                SizeMeasure::Mean => "mean radius",
                SizeMeasure::Area => "area radius sqrt(Area/pi)",
            },
            self.shadow.points,
            self.shadow.tolerance,
            if self.tabulated {
                "solver chosen automatically, interpolated (piecewise cubic) in a table per source \
                 whose nodes are scan points (the points doubled, up to 1024, where the sampling \
                 error of any observable exceeds the tolerance)"
                    .to_string()
            } else {
                format!(
                    "curve-only solve at every sample ({}), solver chosen automatically",
                    crate::bounds::sampling_note(self.shadow.points)
                )
            }
        ));
        for r in self
            .table_reports()
            .into_iter()
            .chain(self.gr_table_reports())
        {
            out.push(format!(
                "{}: {} nodes over {}; leave-one-out interpolation error of the \
                 size {:.2e} r_sh/M (at most a tenth of the measurement's sigma, {:.2e}){}",
                r.table,
                r.nodes,
                if r.axes.is_empty() {
                    "no sampled parameter".to_string()
                } else {
                    r.axes.join(", ")
                },
                r.size_error,
                r.size_limit,
                match r.circularity_error {
                    Some(e) => format!("; of the circularity deviation {e:.2e}"),
                    None => String::new(),
                }
            ));
        }
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
        if self.tabulated {
            let Some(table) = self.tables.get(k) else {
                return Err(format!("source {}: no table was built", k + 1));
            };
            let x: Vec<f64> = table
                .axes()
                .iter()
                .map(|a| {
                    let i = self.parameters.iter().position(|p| p.name == a.name);
                    i.map_or(f64::NAN, |i| values[i])
                })
                .collect();
            if !table.contains(&x) {
                return Err(format!(
                    "source {}: the point lies outside its table (no extrapolation)",
                    k + 1
                ));
            }
            return Ok(term.log_likelihood(table.size(&x), table.circularity(&x), &ring));
        }
        // Outside the metric's domain (a prior wider than the domain) there is no metric.
        let Ok(spacetime) = self.metric.build(&assignments) else {
            return Ok(f64::NEG_INFINITY);
        };
        let observer = Observer::distant(inclination);
        let sized = crate::bounds::solve_sized(
            spacetime.as_ref(),
            &observer,
            &self.shadow,
            self.require_horizon,
            self.size_measure,
            term.needs_circularity(),
        )
        .map_err(|e| format!("source {}: {e}", k + 1))?;
        let crate::bounds::SizedPoint::Shadow {
            size, circularity, ..
        } = sized
        else {
            return Ok(f64::NEG_INFINITY);
        };
        Ok(term.log_likelihood(size, circularity, &ring))
    }
}
