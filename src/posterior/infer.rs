//! Sampling a [`PosteriorModel`]: the affine-invariant ensemble sampler for the posterior with
//! its convergence verdict, nested sampling for the posterior and the evidence, or, with one
//! or two sampled parameters, quadrature of the posterior density (evidence, marginals and
//! independent draws without Monte Carlo error; [`crate::sampling::quadrature`]), the last
//! two with the Bayes factor against the same model with the deviation parameters at their GR
//! values; then the one-parameter summaries (median, mean, equal-tailed and highest-density
//! intervals), from the samples or, for quadrature, from the tabulated marginals.
//!
//! The model's evaluations are asked of an [`Evaluator`] in batches: [`ParallelEvaluator`] is
//! a plain parallel loop; the run layer implements it on the executor (progress, Ctrl-C).

use super::{Evaluation, Parameter, PosteriorModel, Role};
use crate::sampling::summary::{Marginal, MarginalSummary};
use crate::sampling::{
    ensemble, nested, quadrature, Convergence, EnsembleError, EnsembleRun, EnsembleSettings,
    Halted, LogDensityBatch, NestedError, NestedSettings, QuadratureError, QuadratureRun,
    QuadratureSettings, Start,
};
use rayon::prelude::*;

/// Evaluates the model at the points a sampler asks for.
pub trait Evaluator {
    /// [`PosteriorModel::evaluate`] at every point of `points`, in order; `stage` names the
    /// step of the run.
    fn evaluate(
        &mut self,
        stage: &str,
        model: &PosteriorModel,
        points: &[Vec<f64>],
    ) -> Result<Vec<Evaluation>, Halted>;
}

/// Every point evaluated in a parallel loop (rayon), outputs in order; never stops.
#[derive(Debug, Clone, Copy, Default)]
pub struct ParallelEvaluator;

impl Evaluator for ParallelEvaluator {
    fn evaluate(
        &mut self,
        _stage: &str,
        model: &PosteriorModel,
        points: &[Vec<f64>],
    ) -> Result<Vec<Evaluation>, Halted> {
        Ok(points.par_iter().map(|x| model.evaluate(x)).collect())
    }
}

/// Which sampler.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SamplerKind {
    /// The affine-invariant ensemble sampler (Goodman & Weare 2010): posterior only.
    Ensemble,
    /// Nested sampling (Skilling 2006): posterior and evidence.
    Nested,
    /// Quadrature of the posterior density, one or two sampled parameters: posterior and
    /// evidence, deterministic ([`crate::sampling::quadrature`]).
    Quadrature,
}

/// How to sample.
#[derive(Debug, Clone, PartialEq)]
pub struct InferSettings {
    /// The sampler.
    pub sampler: SamplerKind,
    /// The seed every random number derives from.
    pub seed: u64,
    /// Ensemble steps (half of them burn-in).
    pub steps: usize,
    /// Ensemble steps at most: an unconverged run is continued from its last positions,
    /// doubling its steps, until it converges or reaches this many (the first half of all
    /// steps is always the burn-in).
    pub max_steps: usize,
    /// Walkers per ensemble (even, at least twice the sampled parameters).
    pub walkers: usize,
    /// Independent ensembles (at least 4 for split-R̂).
    pub chains: usize,
    /// Nested sampling's live points.
    pub live_points: usize,
    /// Credible levels of the intervals.
    pub levels: Vec<f64>,
    /// Quadrature: the independent posterior draws to make.
    pub samples: usize,
    /// Quadrature: panels per parameter at most (the grid doubles from 4 panels of 8 nodes).
    pub max_panels: usize,
    /// Quadrature: the largest change between two grids of ln Z, and of a reported quantity
    /// in units of the prior's mass, that counts as converged.
    pub tolerance: f64,
}

impl Default for InferSettings {
    fn default() -> Self {
        InferSettings {
            sampler: SamplerKind::Ensemble,
            seed: 1,
            steps: 1000,
            max_steps: 1000,
            walkers: 8,
            chains: 4,
            live_points: 400,
            levels: vec![0.68, 0.95],
            samples: 20_000,
            max_panels: 64,
            tolerance: 1e-4,
        }
    }
}

/// A credible interval.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CredibleInterval {
    /// The credible level.
    pub confidence: f64,
    /// `equal-tailed` or `highest-density`.
    pub kind: &'static str,
    /// Low end.
    pub low: f64,
    /// High end.
    pub high: f64,
}

/// One sampled parameter's summary (inclinations in degrees).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ParameterSummary {
    /// The parameter's name.
    pub name: String,
    /// Its prior, as a spec (inclinations in radians).
    pub prior: String,
    /// The posterior median.
    pub median: f64,
    /// The posterior mean.
    pub mean: f64,
    /// Equal-tailed and highest-density intervals at each level.
    pub intervals: Vec<CredibleInterval>,
    /// Split-R̂ (ensemble sampler; NaN for nested sampling and quadrature).
    pub rhat: f64,
    /// Effective sample size (for quadrature the number of independent draws).
    pub ess: f64,
}

/// The evidence of the model and of its GR limit.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Evidence {
    /// ln Z of the model.
    pub log_evidence: f64,
    /// Its error √(H/N).
    pub log_evidence_error: f64,
    /// ln Z with the shared (deviation) parameters at their GR values.
    pub log_evidence_gr: f64,
    /// Its error (0 when nothing is left to sample: Z is then the likelihood at that point).
    pub log_evidence_gr_error: f64,
    /// ln B = ln Z − ln Z_GR (positive favours the deviation).
    pub log_bayes_factor: f64,
    /// The error of ln B (the two errors in quadrature).
    pub log_bayes_factor_error: f64,
}

impl Evidence {
    /// The evidence (ln Z, error) of a model against that of its GR limit: ln B = ln Z − ln Z_GR
    /// with the errors added in quadrature.
    pub fn against_gr(model: (f64, f64), gr: (f64, f64)) -> Evidence {
        Evidence {
            log_evidence: model.0,
            log_evidence_error: model.1,
            log_evidence_gr: gr.0,
            log_evidence_gr_error: gr.1,
            log_bayes_factor: model.0 - gr.0,
            log_bayes_factor_error: model.1.hypot(gr.1),
        }
    }
}

/// The outcome of [`infer_on`].
#[derive(Debug, Clone, PartialEq)]
pub struct Inference {
    /// The sampled parameters' names (sample columns), in order.
    pub names: Vec<String>,
    /// Posterior samples (equally weighted), one row per sample, inclinations in radians.
    pub samples: Vec<Vec<f64>>,
    /// One summary per sampled parameter, in order.
    pub summaries: Vec<ParameterSummary>,
    /// The convergence verdict (the worst parameter).
    pub convergence: Convergence,
    /// The evidence, with nested sampling and quadrature.
    pub evidence: Option<Evidence>,
    /// Ensemble steps made in all (half of them burn-in; 0 for nested sampling).
    pub steps: usize,
    /// Model evaluations made.
    pub evaluations: usize,
    /// Evaluations where the shadow solver failed (given zero likelihood).
    pub failures: usize,
    /// The first failure's message.
    pub first_failure: Option<String>,
    /// How the quadrature refined, with that sampler.
    pub quadrature: Option<QuadratureReport>,
}

/// How a quadrature run refined its grid (the model's and its GR limit's).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct QuadratureReport {
    /// Panels per sampled parameter of the model's last grid.
    pub panels: usize,
    /// Gauss–Legendre nodes per panel.
    pub nodes_per_panel: usize,
    /// Grids evaluated for the model.
    pub grids: usize,
    /// The largest change of a checked quantity between the last two grids over its
    /// tolerance, the GR model's included (at most 1 when converged).
    pub change: f64,
    /// The tolerance (ln Z, and quantities in units of the prior's mass).
    pub tolerance: f64,
    /// Whether the model's refinement and the GR model's converged.
    pub converged: bool,
    /// With one sampled parameter, where the likelihood changes between zero and non-zero
    /// inside the prior (in the parameter's units, inclinations in degrees), located by
    /// bisection; the panels are split there.
    pub boundaries: Vec<f64>,
}

/// Why sampling did not give a posterior.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum InferRunError {
    /// The ensemble sampler could not run.
    #[error(transparent)]
    Ensemble(#[from] EnsembleError),
    /// Nested sampling could not run.
    #[error(transparent)]
    Nested(#[from] NestedError),
    /// The quadrature could not run.
    #[error(transparent)]
    Quadrature(#[from] QuadratureError),
    /// The settings cannot give a verdict.
    #[error("{0}")]
    Settings(String),
    /// The samples could not be summarised.
    #[error("summarising the samples: {0}")]
    Summary(String),
}

/// The model as a log-density for the samplers: the log-posterior or the log-likelihood,
/// counting solver failures.
struct Density<'a> {
    model: &'a PosteriorModel,
    evaluator: &'a mut dyn Evaluator,
    likelihood: bool,
    evaluations: usize,
    failures: usize,
    first_failure: Option<String>,
}

impl LogDensityBatch for Density<'_> {
    fn log_densities(&mut self, stage: &str, points: &[Vec<f64>]) -> Result<Vec<f64>, Halted> {
        let evaluations = self.evaluator.evaluate(stage, self.model, points)?;
        self.evaluations += evaluations.len();
        Ok(evaluations
            .into_iter()
            .map(|e| {
                if let Some(f) = e.failure {
                    self.failures += 1;
                    self.first_failure.get_or_insert(f);
                }
                if self.likelihood {
                    e.log_likelihood
                } else {
                    e.log_posterior
                }
            })
            .collect())
    }
}

impl InferSettings {
    /// What [`infer_on`] checks before any evaluation, for a model sampling the parameters
    /// `names`: the levels, the ensemble's chains, and at most two parameters for
    /// quadrature.
    ///
    /// ```
    /// use umbral::posterior::{InferSettings, SamplerKind};
    /// let s = InferSettings { sampler: SamplerKind::Quadrature, ..Default::default() };
    /// assert!(s.check(&["q", "a@1"]).is_ok());
    /// let e = s.check(&["q", "a@1", "inclination@1"]).unwrap_err().to_string();
    /// assert!(e.contains("samples 3 (q, a@1, inclination@1)"));
    /// ```
    pub fn check(&self, names: &[&str]) -> Result<(), InferRunError> {
        if self.levels.iter().any(|&l| !(l > 0.0 && l < 1.0)) {
            return Err(InferRunError::Settings(
                "credible levels must lie strictly between 0 and 1".into(),
            ));
        }
        if self.sampler == SamplerKind::Ensemble && self.chains < 4 {
            return Err(InferRunError::Settings(format!(
                "split-R-hat needs at least 4 independent chains, got {}",
                self.chains
            )));
        }
        if self.sampler == SamplerKind::Quadrature && names.len() > 2 {
            return Err(InferRunError::Settings(format!(
                "quadrature integrates one or two sampled parameters; this model samples {} \
                 ({}): use the ensemble sampler or nested sampling",
                names.len(),
                names.join(", ")
            )));
        }
        if self.sampler == SamplerKind::Quadrature {
            // Before any evaluation (or table) is made.
            crate::sampling::quadrature::check_settings(&self.quadrature_settings(), names.len())?;
        }
        Ok(())
    }

    /// The quadrature's settings these settings imply.
    fn quadrature_settings(&self) -> QuadratureSettings {
        QuadratureSettings {
            max_panels: self.max_panels,
            tolerance: self.tolerance,
            levels: self.levels.clone(),
            samples: self.samples,
            seed: self.seed,
            ..Default::default()
        }
    }
}

/// Sample `model` as `settings` ask, its evaluations made by `evaluator`.
pub fn infer_on(
    model: &PosteriorModel,
    settings: &InferSettings,
    evaluator: &mut dyn Evaluator,
) -> Result<Inference, InferRunError> {
    settings.check(&model.names())?;
    let mut density = Density {
        model,
        evaluator,
        likelihood: settings.sampler != SamplerKind::Ensemble,
        evaluations: 0,
        failures: 0,
        first_failure: None,
    };
    let mut steps = 0;
    let (samples, rhat, ess, convergence, evidence) = match settings.sampler {
        SamplerKind::Ensemble => {
            let (run, rhat, ess, convergence) =
                ensemble_until_converged(&mut density, model, settings)?;
            steps = 2 * run.chains[0].draws.len();
            (run.samples, rhat, ess, convergence, None)
        }
        SamplerKind::Quadrature => return infer_by_quadrature(density, model, settings),
        SamplerKind::Nested => {
            let nested_settings = NestedSettings {
                live_points: settings.live_points,
                seed: settings.seed,
                ..Default::default()
            };
            let run = nested(&mut density, &model.priors(), &nested_settings)?;
            let (gr, _) = gr_evidence(model, &GrMethod::Nested(&nested_settings), &mut density)?;
            let kish = run.equal_weight.len() as f64;
            let evidence = Evidence::against_gr((run.log_evidence, run.log_evidence_error), gr);
            let dims = model.names().len();
            (
                run.equal_weight,
                vec![f64::NAN; dims],
                vec![kish; dims],
                // Nested sampling has no chains to compare: its verdict is the effective
                // sample size of its weights and its walk's acceptance.
                Convergence::new(1.0, kish, run.acceptance),
                Some(evidence),
            )
        }
    };
    let summaries = summarise(&model.sampled(), &samples, &rhat, &ess, &settings.levels)?;
    Ok(Inference {
        names: model.names().iter().map(|s| s.to_string()).collect(),
        samples,
        summaries,
        convergence,
        evidence,
        steps,
        evaluations: density.evaluations,
        failures: density.failures,
        first_failure: density.first_failure,
        quadrature: None,
    })
}

/// [`infer_on`] by quadrature: the model's posterior and evidence, the GR model's evidence,
/// the summaries from the tabulated marginals.
fn infer_by_quadrature(
    mut density: Density<'_>,
    model: &PosteriorModel,
    settings: &InferSettings,
) -> Result<Inference, InferRunError> {
    let quadrature_settings = settings.quadrature_settings();
    let run = quadrature(&mut density, &model.priors(), &quadrature_settings)?;
    // The GR model's evidence alone: no draws.
    let gr_settings = QuadratureSettings {
        samples: 0,
        ..quadrature_settings
    };
    let (gr, gr_run) = gr_evidence(model, &GrMethod::Quadrature(&gr_settings), &mut density)?;
    let evidence = Evidence::against_gr((run.log_evidence, run.log_evidence_error), gr);
    let report = QuadratureReport {
        panels: run.panels,
        nodes_per_panel: run.nodes,
        grids: run.grids,
        change: gr_run
            .as_ref()
            .map_or(run.change, |g| run.change.max(g.change)),
        tolerance: settings.tolerance,
        converged: run.converged && gr_run.as_ref().is_none_or(|g| g.converged),
        boundaries: match model.sampled().first() {
            Some(p) => run
                .boundaries
                .iter()
                .map(|b| b * display_scale(p))
                .collect(),
            None => Vec::new(),
        },
    };
    let draws = run.samples.len() as f64;
    let summaries = tabulated_summaries(&model.sampled(), &run, draws, &settings.levels)?;
    Ok(Inference {
        names: model.names().iter().map(|s| s.to_string()).collect(),
        samples: run.samples,
        summaries,
        // Nothing is sampled by a Markov chain: no R-hat, no acceptance; every draw is
        // independent; the verdict is the refinement's.
        convergence: Convergence {
            rhat: f64::NAN,
            ess: draws,
            acceptance: f64::NAN,
            converged: report.converged,
        },
        evidence: Some(evidence),
        steps: 0,
        evaluations: density.evaluations,
        failures: density.failures,
        first_failure: density.first_failure,
        quadrature: Some(report),
    })
}

/// The ensembles, continued from their last positions (doubling the steps) until they
/// converge or reach `settings.max_steps`; the kept draws are the last half of all steps.
/// Returns the run, each coordinate's R-hat and ESS, and the verdict.
fn ensemble_until_converged(
    density: &mut Density<'_>,
    model: &PosteriorModel,
    settings: &InferSettings,
) -> Result<(EnsembleRun, Vec<f64>, Vec<f64>, Convergence), InferRunError> {
    let base = EnsembleSettings {
        steps: settings.steps,
        walkers: Some(settings.walkers),
        chains: settings.chains,
        seed: settings.seed,
        ..Default::default()
    };
    let mut run = ensemble(density, &Start::Priors(model.priors()), &base)?;
    let mut total = settings.steps;
    let mut round = 0u64;
    loop {
        let (rhat, ess, convergence) = verdict(&run);
        if convergence.converged || total >= settings.max_steps {
            return Ok((run, rhat, ess, convergence));
        }
        round += 1;
        let extra = total.min(settings.max_steps - total);
        let start = Start::Points(
            run.chains
                .iter()
                .map(|c| c.draws.last().cloned().unwrap_or_default())
                .collect(),
        );
        let more = ensemble(
            density,
            &start,
            &EnsembleSettings {
                steps: extra,
                burn_in: Some(0),
                // Every continuation draws from its own random streams.
                seed: settings.seed ^ round.rotate_left(40),
                ..base
            },
        )?;
        let keep = (total + extra) / 2;
        let mut chains = run.chains;
        for (c, m) in chains.iter_mut().zip(more.chains) {
            for (a, b) in c.acceptance.iter_mut().zip(&m.acceptance) {
                *a = (*a * total as f64 + b * extra as f64) / (total + extra) as f64;
            }
            c.draws.extend(m.draws);
            c.log_densities.extend(m.log_densities);
            let drop = c.draws.len().saturating_sub(keep);
            c.draws.drain(..drop);
            c.log_densities.drain(..drop);
        }
        total += extra;
        run = EnsembleRun::from_chains(chains, run.walkers, total - keep)?;
    }
}

/// Each coordinate's R-hat over the independent ensembles (each walker-mean trajectory is a
/// function of one Markov chain, as Vehtari et al. 2021 define R-hat over chains) and ESS,
/// and the verdict over the sampled coordinates.
fn verdict(run: &EnsembleRun) -> (Vec<f64>, Vec<f64>, Convergence) {
    let rhat: Vec<f64> = run
        .coordinates
        .iter()
        .map(|c| c.map_or(f64::NAN, |c| c.ensemble_rhat))
        .collect();
    let ess: Vec<f64> = run
        .coordinates
        .iter()
        .map(|c| c.map_or(f64::NAN, |c| c.ess))
        .collect();
    let worst_rhat = rhat.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let least_ess = ess.iter().copied().fold(f64::INFINITY, f64::min);
    (
        rhat,
        ess,
        Convergence::new(worst_rhat, least_ess, run.acceptance),
    )
}

/// How the GR model's evidence is computed when something is left to sample.
enum GrMethod<'a> {
    Nested(&'a NestedSettings),
    Quadrature(&'a QuadratureSettings),
}

/// ln Z and its error for the model with its shared parameters at their GR values (the
/// metric's defaults): nested sampling or quadrature when something is left to sample (with
/// the quadrature's run, for its verdict), else the likelihood at the one point (exact).
fn gr_evidence(
    model: &PosteriorModel,
    method: &GrMethod<'_>,
    density: &mut Density<'_>,
) -> Result<((f64, f64), Option<QuadratureRun>), InferRunError> {
    if !model.has_gr_tables() {
        return Err(InferRunError::Settings(
            "the evidence of the GR limit needs its own shadow tables, which were not built".into(),
        ));
    }
    let gr = model.gr_model();
    if gr.names().is_empty() {
        // Nothing left to sample: Z is the likelihood at the one point.
        let e = gr.evaluate(&[]);
        if let Some(f) = e.failure {
            density.failures += 1;
            density.first_failure.get_or_insert(f);
        }
        density.evaluations += 1;
        return Ok(((e.log_likelihood, 0.0), None));
    }
    let mut gr_density = Density {
        model: &gr,
        evaluator: &mut *density.evaluator,
        likelihood: true,
        evaluations: 0,
        failures: 0,
        first_failure: None,
    };
    let (evidence, run) = match method {
        GrMethod::Nested(settings) => {
            let run = nested(&mut gr_density, &gr.priors(), settings)?;
            ((run.log_evidence, run.log_evidence_error), None)
        }
        GrMethod::Quadrature(settings) => {
            let run = quadrature(&mut gr_density, &gr.priors(), settings)?;
            ((run.log_evidence, run.log_evidence_error), Some(run))
        }
    };
    density.evaluations += gr_density.evaluations;
    density.failures += gr_density.failures;
    if let Some(f) = gr_density.first_failure {
        density.first_failure.get_or_insert(f);
    }
    Ok((evidence, run))
}

/// The scale of a parameter's summaries: degrees for an inclination.
fn display_scale(p: &Parameter) -> f64 {
    if matches!(p.role, Role::Inclination { .. }) {
        180.0 / std::f64::consts::PI
    } else {
        1.0
    }
}

/// Median, mean and intervals of each sampled parameter from the quadrature's tabulated
/// marginals (inclinations in degrees); R-hat NaN, ESS the number of independent draws.
fn tabulated_summaries(
    params: &[&Parameter],
    run: &QuadratureRun,
    draws: f64,
    levels: &[f64],
) -> Result<Vec<ParameterSummary>, InferRunError> {
    params
        .iter()
        .zip(&run.marginals)
        .map(|(p, m)| parameter_summary(p, m, display_scale(p), levels, f64::NAN, draws))
        .collect()
}

/// Median, mean and intervals of each sampled parameter (inclinations in degrees).
fn summarise(
    params: &[&Parameter],
    samples: &[Vec<f64>],
    rhat: &[f64],
    ess: &[f64],
    levels: &[f64],
) -> Result<Vec<ParameterSummary>, InferRunError> {
    params
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let scale = display_scale(p);
            let column: Vec<f64> = samples.iter().map(|s| s[i] * scale).collect();
            let m = Marginal::new(&column).map_err(summary_error)?;
            parameter_summary(p, &m, 1.0, levels, rhat[i], ess[i])
        })
        .collect()
}

fn summary_error(e: crate::sampling::summary::SummaryError) -> InferRunError {
    InferRunError::Summary(e.to_string())
}

/// One parameter's summary from its marginal, every number times `scale`.
fn parameter_summary(
    p: &Parameter,
    m: &impl MarginalSummary,
    scale: f64,
    levels: &[f64],
    rhat: f64,
    ess: f64,
) -> Result<ParameterSummary, InferRunError> {
    let mut intervals = Vec::new();
    for &level in levels {
        for (kind, [low, high]) in [
            (
                "equal-tailed",
                m.equal_tailed(level).map_err(summary_error)?,
            ),
            (
                "highest-density",
                m.highest_density(level).map_err(summary_error)?,
            ),
        ] {
            intervals.push(CredibleInterval {
                confidence: level,
                kind,
                low: low * scale,
                high: high * scale,
            });
        }
    }
    Ok(ParameterSummary {
        name: p.name.clone(),
        prior: p.prior.to_string(),
        median: m.median() * scale,
        mean: m.mean() * scale,
        intervals,
        rhat,
        ess,
    })
}
