//! What a posterior run reports, for the command line and the Python package alike: the
//! sampler's settings from the few numbers a user gives ([`Choice`]), the convergence verdict
//! ([`verdict`]), the assumptions in words ([`assumptions`]), the JSON report ([`Report`]) and
//! the sample columns ([`sample_columns`], inclinations in degrees).

use super::{Evidence, InferSettings, Inference, PosteriorModel, QuadratureReport};
use super::{SamplerKind, TableReport};
use crate::sampling::QuadratureSettings;
use serde::Serialize;
use std::collections::BTreeMap;

/// The fewest ensemble steps: split-R-hat below 1.01 needs each half of the kept steps to
/// span about 50 autocorrelation times (R-hat - 1 is about (tau - 1)/(2 n) for halves of n
/// steps), and the stretch move's tau is some tens of steps.
pub const MIN_STEPS: usize = 10_000;

/// How far an unconverged run is continued by default: this many times its first steps.
pub const MAX_STEPS_FACTOR: usize = 16;

/// Independent ensembles of the ensemble sampler.
pub const CHAINS: usize = 4;

/// Solver failures above this fraction of the evaluations make the posterior untrustworthy.
pub const MAX_FAILURE_FRACTION: f64 = 0.01;

/// The walkers of each ensemble for `dim` sampled parameters: 2 dim + 2 (at least 4). Split
/// R-hat over the ensembles depends on the number of steps, not of walkers, so few walkers and
/// many steps reach a verdict for the fewest evaluations.
pub fn walkers(dim: usize) -> usize {
    (2 * dim + 2).max(4)
}

/// What a user chooses of the sampling; the rest follows ([`Choice::settings`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Choice {
    /// The sampler.
    pub sampler: SamplerKind,
    /// The seed of every random number.
    pub seed: u64,
    /// Posterior samples to keep (ensemble: sets the steps; quadrature: independent draws).
    pub samples: usize,
    /// Ensemble steps, overriding those `samples` implies.
    pub steps: Option<usize>,
    /// Ensemble steps at most (default [`MAX_STEPS_FACTOR`] times the first steps).
    pub max_steps: Option<usize>,
    /// Live points of nested sampling.
    pub live_points: usize,
    /// Quadrature: panels per sampled parameter at most.
    pub max_panels: usize,
    /// Credible levels.
    pub levels: Vec<f64>,
}

impl Default for Choice {
    fn default() -> Self {
        Choice {
            sampler: SamplerKind::Ensemble,
            seed: 1,
            samples: 20_000,
            steps: None,
            max_steps: None,
            live_points: 400,
            max_panels: 64,
            levels: vec![0.68, 0.95],
        }
    }
}

/// A choice out of its range: the setting's name (`max_panels`) and what is wrong.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{setting}: {problem}")]
pub struct ChoiceError {
    /// The setting, named as a Python keyword (the command line's flag with `-` for `_`).
    pub setting: &'static str,
    /// What is wrong, with the value given.
    pub problem: String,
}

impl Choice {
    /// The sampler's settings for a model sampling `dim` parameters: [`walkers`] per
    /// ensemble, [`CHAINS`] ensembles, by default `2 samples / (chains walkers)` steps but at
    /// least [`MIN_STEPS`], continued up to [`MAX_STEPS_FACTOR`] times that.
    ///
    /// ```
    /// use umbral::posterior::report::{Choice, MIN_STEPS};
    /// let s = Choice::default().settings(1).unwrap();
    /// assert_eq!((s.walkers, s.chains, s.steps, s.max_steps), (4, 4, MIN_STEPS, 16 * MIN_STEPS));
    /// let e = Choice { samples: 5, ..Choice::default() }.settings(1).unwrap_err();
    /// assert_eq!(e.to_string(), "samples: give 100 to 10000000, got 5");
    /// ```
    pub fn settings(&self, dim: usize) -> Result<InferSettings, ChoiceError> {
        let bad = |setting, problem| Err(ChoiceError { setting, problem });
        if self.samples < 100 || self.samples > 10_000_000 {
            return bad(
                "samples",
                format!("give 100 to 10000000, got {}", self.samples),
            );
        }
        if !(8..=4096).contains(&self.max_panels) {
            return bad(
                "max_panels",
                format!("give 8 to 4096, got {}", self.max_panels),
            );
        }
        if !(20..=100_000).contains(&self.live_points) {
            return bad(
                "live_points",
                format!("give 20 to 100000, got {}", self.live_points),
            );
        }
        let per_step = CHAINS * walkers(dim);
        let steps = match self.steps {
            Some(n) if (10..=10_000_000).contains(&n) => n,
            Some(n) => return bad("steps", format!("give 10 to 10000000, got {n}")),
            None => (2 * self.samples.div_ceil(per_step)).max(MIN_STEPS),
        };
        let max_steps = match self.max_steps {
            Some(n) if n >= steps && n <= 100_000_000 => n,
            Some(n) => {
                return bad(
                    "max_steps",
                    format!(
                        "give at least the first steps ({steps}) and at most 100000000, got {n}"
                    ),
                )
            }
            None => steps.saturating_mul(MAX_STEPS_FACTOR),
        };
        if let Some(l) = self.levels.iter().find(|&&l| !(l > 0.0 && l < 1.0)) {
            return bad(
                "levels",
                format!("each level must lie strictly between 0 and 1, got {l}"),
            );
        }
        Ok(InferSettings {
            sampler: self.sampler,
            seed: self.seed,
            steps,
            max_steps,
            walkers: walkers(dim),
            chains: CHAINS,
            live_points: self.live_points,
            levels: self.levels.clone(),
            samples: self.samples,
            max_panels: self.max_panels,
            ..InferSettings::default()
        })
    }
}

/// What the sampler did, in words.
fn sampler_assumption(s: &InferSettings, i: &Inference) -> String {
    let steps = i.steps;
    match s.sampler {
        SamplerKind::Ensemble => format!(
            "sampler: affine-invariant ensemble (Goodman & Weare 2010), {} independent ensembles \
             of {} walkers, {} steps (first {}, continued up to {} until converged) of which \
             the first half is burn-in, seed {}; converged \
             means split R-hat < 1.01 over the independent ensembles (each one's walker-mean \
             trajectory; Vehtari et al. 2021) and bulk ESS >= 400",
            s.chains, s.walkers, steps, s.steps, s.max_steps, s.seed
        ),
        SamplerKind::Nested => format!(
            "sampler: nested sampling (Skilling 2006), {} live points, seed {}; the GR model \
             holds the shared parameters at the metric's defaults; posterior samples are the \
             equal-weight resampling of the dead and live points",
            s.live_points, s.seed
        ),
        SamplerKind::Quadrature => {
            let (panels, nodes, grids) = i
                .quadrature
                .as_ref()
                .map_or((0, 0, 0), |q| (q.panels, q.nodes_per_panel, q.grids));
            let boundaries = match (&i.quadrature, i.names.first()) {
                (Some(q), Some(name)) if !q.boundaries.is_empty() => {
                    let at: Vec<String> = q.boundaries.iter().map(|b| format!("{b:.9}")).collect();
                    format!(
                        "; the likelihood changes between zero and non-zero inside the prior at \
                         {name} = {} (located by bisection; the panels are split there)",
                        at.join(", ")
                    )
                }
                _ => String::new(),
            };
            format!(
                "sampler: quadrature of the posterior density in the priors' cumulative \
                 probabilities (composite Gauss-Legendre, {nodes} nodes per panel), the panels \
                 doubled from {} up to {} per parameter until ln Z, the 0.16/0.5/0.84 quantiles \
                 and the intervals changed by at most {:e} (quantities in units of the prior's \
                 mass, and at most 1% of the 68% width): {grids} grids, {panels} panels per \
                 parameter at the end; the GR model holds the shared parameters at the \
                 metric's defaults, its evidence by the same quadrature (or, with nothing left to \
                 sample, its likelihood at that point); posterior samples are \
                 {} independent draws by inverse CDF, seed {}{boundaries}",
                QuadratureSettings::default().initial_panels,
                s.max_panels,
                s.tolerance,
                i.samples.len(),
                s.seed
            )
        }
    }
}

/// Everything a posterior assumed: the model's priors and likelihoods, the sampler, and the
/// solver failures given zero likelihood.
pub fn assumptions(
    model: &PosteriorModel,
    settings: &InferSettings,
    inference: &Inference,
) -> Vec<String> {
    let mut assumptions = model.assumptions();
    assumptions.push(sampler_assumption(settings, inference));
    if inference.failures > 0 {
        assumptions.push(format!(
            "{} of {} model evaluations failed in the shadow solver and were given zero \
             likelihood (first: {})",
            inference.failures,
            inference.evaluations,
            inference.first_failure.as_deref().unwrap_or("no message")
        ));
    }
    assumptions
}

/// Whether the inference is nested sampling's: the only sampler with an evidence and no
/// quadrature report.
pub fn is_nested(i: &Inference) -> bool {
    i.evidence.is_some() && i.quadrature.is_none()
}

/// Why the run is not a posterior to report (`None`: it is).
pub fn verdict(i: &Inference) -> Option<String> {
    let c = &i.convergence;
    let mut why = Vec::new();
    if let (Some(q), false) = (&i.quadrature, c.converged) {
        why.push(format!(
            "the quadrature did not converge: at {} panels of {} nodes per parameter the \
             reported quantities still changed by {:.3} times their tolerance",
            q.panels, q.nodes_per_panel, q.change
        ));
    } else if !c.converged && is_nested(i) {
        why.push(format!(
            "the effective sample size of the nested-sampling weights is {:.0} (needs >= 400)",
            c.ess
        ));
    } else if !c.converged {
        why.push(format!(
            "split R-hat {:.4} (needs < 1.01) and effective sample size {:.0} (needs >= 400)",
            c.rhat, c.ess
        ));
    }
    if i.failures as f64 > MAX_FAILURE_FRACTION * i.evaluations as f64 {
        why.push(format!(
            "{} of {} evaluations failed in the shadow solver (more than {}%)",
            i.failures,
            i.evaluations,
            100.0 * MAX_FAILURE_FRACTION
        ));
    }
    (!why.is_empty()).then(|| why.join("; "))
}

/// A credible interval in the report.
#[derive(Debug, Clone, Serialize)]
pub struct ReportInterval {
    confidence: f64,
    kind: &'static str,
    low: f64,
    high: f64,
}

/// A parameter's summary in the report.
#[derive(Debug, Clone, Serialize)]
pub struct ReportParameter {
    median: f64,
    mean: f64,
    intervals: Vec<ReportInterval>,
}

/// The diagnostics in the report.
#[derive(Debug, Clone, Serialize)]
pub struct ReportDiagnostics {
    rhat: BTreeMap<String, Option<f64>>,
    ess: BTreeMap<String, f64>,
    acceptance: Option<f64>,
    converged: bool,
    evaluations: usize,
    solver_failures: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    quadrature: Option<QuadratureReport>,
}

/// The report of a run (`umbral infer --json`): the summaries only when it converged, the
/// diagnostics and the assumptions always.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    metric: String,
    priors: BTreeMap<String, String>,
    measurements: Vec<String>,
    parameters: Option<BTreeMap<String, ReportParameter>>,
    evidence: Option<Evidence>,
    diagnostics: ReportDiagnostics,
    /// The interpolation tables (ray-traced metrics or tabulated), with their errors.
    tables: Vec<TableReport>,
    assumptions: Vec<String>,
}

impl Report {
    /// The report of inference `i` of `model` from the measurement files `measurements` (as
    /// named); `converged` as [`verdict`] says.
    pub fn new(
        measurements: &[String],
        model: &PosteriorModel,
        i: &Inference,
        assumptions: &[String],
        converged: bool,
    ) -> Report {
        let parameters = converged.then(|| {
            i.summaries
                .iter()
                .map(|s| {
                    let p = ReportParameter {
                        median: s.median,
                        mean: s.mean,
                        intervals: s
                            .intervals
                            .iter()
                            .map(|iv| ReportInterval {
                                confidence: iv.confidence,
                                kind: iv.kind,
                                low: iv.low,
                                high: iv.high,
                            })
                            .collect(),
                    };
                    (s.name.clone(), p)
                })
                .collect()
        });
        Report {
            metric: model.metric_info().name,
            priors: model
                .parameters()
                .iter()
                .map(|p| (p.name.clone(), p.prior.to_string()))
                .collect(),
            measurements: measurements.to_vec(),
            parameters,
            evidence: if converged { i.evidence } else { None },
            diagnostics: ReportDiagnostics {
                rhat: i
                    .summaries
                    .iter()
                    .map(|s| (s.name.clone(), s.rhat.is_finite().then_some(s.rhat)))
                    .collect(),
                ess: i
                    .summaries
                    .iter()
                    .map(|s| (s.name.clone(), s.ess))
                    .collect(),
                acceptance: i
                    .convergence
                    .acceptance
                    .is_finite()
                    .then_some(i.convergence.acceptance),
                converged,
                evaluations: i.evaluations,
                solver_failures: i.failures,
                quadrature: i.quadrature.clone(),
            },
            tables: model
                .table_reports()
                .into_iter()
                .chain(model.gr_table_reports())
                .collect(),
            assumptions: assumptions.to_vec(),
        }
    }
}

/// The sample columns: each sampled parameter's name, with `_deg` after an inclination, whose
/// samples are then given in degrees (`true`).
pub fn sample_columns(i: &Inference) -> Vec<(String, bool)> {
    i.names
        .iter()
        .map(|n| match n.starts_with(super::parameters::INCLINATION) {
            true => (format!("{n}_deg"), true),
            false => (n.clone(), false),
        })
        .collect()
}
